"""The variantcmp terminal app: shared state (catalogue, conditions, results) and app-wide keys."""

from __future__ import annotations

from collections.abc import Iterable
from functools import partial
from pathlib import Path
from time import perf_counter

import polars as pl
from textual import events
from textual.app import App, SystemCommand
from textual.screen import ModalScreen
from textual.reactive import var
from textual.signal import Signal

from variantcmp.catalogue import Catalogue, CatalogueError, Problem, demo_catalogue_path, load_catalogue
from variantcmp.sketch import terminal_wants_ascii

from .compare import CompareScreen
from .cruise_screen import CruiseScreen
from .dialogs import ExportDialog, ProblemsScreen
from .form import DEFAULT_TEXTS, conditions_from_texts
from .help import APP_BINDINGS, HelpScreen, key_commands
from .engine_out_screen import EngineOutScreen
from .envelope_screen import EnvelopeScreen
from .hotday import PlannerScreen
from .jobs import LatestJob
from .keys import KeyHold
from .open_dialog import OpenDialog
from .picture import save_view
from .results import Results, compute
from .screening_screen import ScreeningScreen
from .sweep_screen import SweepScreen
from .variant_info import VariantScreen
from .widgets import COMPACT_BELOW_ROWS, shown_path

WARNING_SECONDS = 15  # how long a catalogue's warnings stay on screen after it loads
DARK_THEME = "textual-dark"
LIGHT_THEME = "textual-light"


class VariantCmpApp(KeyHold, App[int]):
    """Compare a fleet's ceilings. State lives here so every screen follows the same conditions."""

    CSS_PATH = "variantcmp.tcss"
    TITLE = "variantcmp"
    # ctrl+p: every key of the screen on show (and of the app), found by name and run (help.key_commands).
    ENABLE_COMMAND_PALETTE = True
    # Top-level views, each keeping its own state while the user switches between them.
    MODES = {"compare": CompareScreen, "planner": PlannerScreen, "envelope": EnvelopeScreen, "sweep": SweepScreen,
             "cruise": CruiseScreen, "engineout": EngineOutScreen, "screening": ScreeningScreen}
    DEFAULT_MODE = "compare"
    compact_rows = var(False)  # a short terminal: one-line caution (widgets.CautionBanner)
    BINDINGS = APP_BINDINGS

    def __init__(self, catalogue_path: str | Path | None = None) -> None:
        super().__init__()
        self.theme = DARK_THEME
        self.catalogue: Catalogue | None = None  # the last catalogue that loaded
        self.catalogue_path: Path = Path(catalogue_path) if catalogue_path else demo_catalogue_path()
        self.problems: list[Problem] = []  # problems of the file last tried; empty when it loaded
        self.texts: dict[str, str] = dict(DEFAULT_TEXTS)
        self.conditions, self.field_errors = conditions_from_texts(self.texts)
        self.results: Results | None = None
        self.results_signal: Signal[Results] = Signal(self, "results")
        self.catalogue_signal: Signal[Catalogue | None] = Signal(self, "catalogue")
        self.busy_signal: Signal[bool] = Signal(self, "busy")
        self._generation = 0
        self._table_job = LatestJob(self, "compare")
        self.requested_at = perf_counter()
        self.last_export: str | None = None
        self.last_picture: Path | None = None  # the last view saved as SVG
        # What the compare screen hands to the drawing views (row keys of the shared table).
        self.focus_key: str | None = None  # the row under the compare cursor
        self.shown_keys: list[str] = []  # rows the compare screen shows, in its order
        self.marked_keys: list[str] = []  # rows marked for the envelope overlay, in mark order
        self.screening_baseline: str | None = None  # the engine option pinned on the compare screen, handed over by d
        self.sketch_ascii = terminal_wants_ascii()  # plain-ASCII drawings for dumb terminals (a toggles)

    def on_mount(self) -> None:
        self.compact_rows = self.size.height < COMPACT_BELOW_ROWS
        self.open_catalogue(self.catalogue_path)

    def on_resize(self, event: events.Resize) -> None:
        self.compact_rows = event.size.height < COMPACT_BELOW_ROWS

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        # Dialogs own the keyboard: app-wide keys other than quit wait until they close.
        if isinstance(self.screen, ModalScreen) and action in {"help", "toggle_theme"}:
            return False
        return True

    # --- catalogue ----------------------------------------------------------------

    def open_catalogue(self, path: str | Path) -> bool:
        """Load a catalogue; on problems keep the last good one and show the list."""
        self.catalogue_path = Path(path).expanduser()
        try:
            catalogue = load_catalogue(self.catalogue_path)
        except CatalogueError as error:
            self.problems = list(error.problems) or [Problem(str(self.catalogue_path), "", str(error))]
        except Exception as error:  # an unreadable file must not end the session
            self.problems = [Problem(str(self.catalogue_path), "", f"cannot read: {error}")]
        else:
            self.problems = []
            self.catalogue = catalogue
            if catalogue.warnings:  # valid but doubtful: said once, for long enough to read
                self.notify("\n".join(f"{w.key}: {w.message.removeprefix('warning: ')}" for w in catalogue.warnings),
                            title=f"Catalogue warnings ({shown_path(self.catalogue_path)})", severity="warning",
                            timeout=WARNING_SECONDS)
        self.catalogue_signal.publish(self.catalogue)
        if self.problems:
            self.push_screen(ProblemsScreen(self.catalogue_path, self.problems, self.catalogue))
            return False
        self.recompute()
        return True

    def reload_catalogue(self) -> bool:
        return self.open_catalogue(self.catalogue_path)

    def ask_open(self) -> None:
        def chosen(path: str | None) -> None:
            if path:
                self.open_catalogue(path)

        self.push_screen(OpenDialog(), chosen)

    # --- conditions and results ----------------------------------------------------

    def set_condition_text(self, key: str, text: str) -> dict[str, str]:
        """Take one typed field; recompute when all fields read and something changed."""
        self.texts[key] = text
        conditions, self.field_errors = conditions_from_texts(self.texts, self.conditions)
        if conditions is not None and conditions != self.conditions:
            self.conditions = conditions
            self.recompute()
        return self.field_errors

    def recompute(self) -> None:
        if self.catalogue is None or self.conditions is None:
            return
        self._generation += 1
        self.requested_at = perf_counter()
        self.busy_signal.publish(True)
        self._table_job.request(partial(compute, self.catalogue, self.conditions),
                                partial(self._deliver, self._generation))

    def _deliver(self, generation: int, results: Results) -> None:
        if generation != self._generation:
            return  # a newer request is on its way
        self.busy_signal.publish(False)
        if results.df is not None:
            self.results = results
            self.results_signal.publish(results)
        else:
            # Keep the last table; tell the screens what went wrong.
            self.results_signal.publish(Results(
                results.catalogue, results.conditions, None, results.error, results.compute_ms))

    # --- screens ------------------------------------------------------------------

    def inspect_variant(self, variant_id: str) -> None:
        if self.catalogue is not None and variant_id in self.catalogue.variants:
            self.push_screen(VariantScreen(variant_id))

    def export_table(self, df: pl.DataFrame, stem: str) -> None:
        def written(message: str | None) -> None:
            if message:
                self.last_export = message
                self.notify(message, title="Export")

        self.push_screen(ExportDialog(df, f"{stem}.csv"), written)

    def action_help(self) -> None:
        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen())

    def get_system_commands(self, screen) -> Iterable[SystemCommand]:
        yield from key_commands(self, screen)

    def action_save_picture(self) -> None:
        folder = Path.cwd()
        try:
            path = save_view(self, folder)
        except OSError as error:
            self.notify(f"Could not save a picture in {folder}: {error}", title="Save SVG", severity="error")
            return
        self.last_picture = path
        self.notify(f"Saved this view as {shown_path(path)}", title="Save SVG")

    def action_toggle_theme(self) -> None:
        self.theme = LIGHT_THEME if self.current_theme.dark else DARK_THEME
