"""The screening view: every engine option of each variant against a baseline option over the
weight x ISA grid, one matrix per option, sortable, the baseline picked with a key.

The ceilings of the grid are solved once per catalogue and conditions (in a worker), with the
heaviest weight for the compare screen's target level on each day where it has one; a new
baseline or sort order is a polars join and a redraw on the UI thread (no solver call).
"""

from __future__ import annotations

from dataclasses import replace
from functools import partial
from time import perf_counter

import polars as pl
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import ProgressBar, Static

from variantcmp.table import ceilings_table, heaviest_table
from variantcmp.table.screening import (baseline_candidates, compare_heaviest, compare_options, screening_grid,
                                        screening_summary)
from variantcmp.units import OptionError, format_isa_dev

from .jobs import LatestJob
from .keys import HoldsKeys, focus_now
from .navigation import BackToCompare
from .screening_view import SORTS, SORTS_BY_KEY, block, legend, sorted_options
from .sorting import SortCycle
from .widgets import CautionBanner, FittingFooter


def grid_ceilings(catalogue, conditions, target_ft: float | None):
    """The ceilings of the screening grid and, with a target, the heaviest weights for it (in the
    worker): (table, heaviest table or None, error message, ms)."""
    started = perf_counter()
    try:
        heaviest = None if target_ft is None else heaviest_table(catalogue, conditions, (target_ft,))
        return ceilings_table(catalogue, conditions), heaviest, None, (perf_counter() - started) * 1000.0
    except OptionError as exc:
        return None, None, str(exc), 0.0
    except Exception as exc:  # the app must not die: say what went wrong in place
        return None, None, f"could not compute the screening grid ({type(exc).__name__}: {exc})", 0.0


class ScreeningScreen(SortCycle, BackToCompare, HoldsKeys, Screen):
    PICTURE_NAME = "screening"  # in the name of a saved SVG (f2)
    BINDINGS = [
        Binding("escape", "compare", "Back", tooltip="to the compare screen"),
        Binding("b", "baseline(1)", "Baseline", tooltip="the next engine option as the baseline"),
        Binding("B", "baseline(-1)", "Previous baseline", show=False),
        Binding("s", "sort_next", "Sort", tooltip="options by mean, worst or best difference, share of grid points "
                "gained, or catalogue order, in turn"),
        Binding("S", "sort_previous", "Sort back", show=False),
        Binding("r", "reverse_sort", "Reverse sort", show=False),
        Binding("c", "conditions", "Conditions", tooltip="to the compare screen's condition fields (a comma list "
                "of weights or ISA deviations gives the grid)"),
        Binding("e", "export", "Export", show=False, tooltip="the screening rows: CSV, Parquet or JSON"),
    ]

    FIRST_SORT = SORTS[0].key  # the mean difference

    def __init__(self) -> None:
        super().__init__()
        self.baseline: str | None = None
        self.sort_key, self.descending = self.FIRST_SORT, True  # mean difference, best first
        self.ceilings: pl.DataFrame | None = None  # the grid's ceilings table
        self.heaviest: pl.DataFrame | None = None  # the heaviest weights for the target, where one is set
        self.rows: pl.DataFrame | None = None  # the screening rows against the baseline
        self.conditions = None  # of the grid on show
        self.error: str | None = None
        self._key = None  # (catalogue, grid conditions) computed or on its way
        self._generation = 0
        self._job = LatestJob(self, "screening")
        self.compute_ms = 0.0
        self.render_ms = 0.0  # the last redraw: join, summary, text, ms
        self.redraw_ms = 0.0  # the last redraw from its key to the screen painted, ms

    def compose(self) -> ComposeResult:
        yield CautionBanner(id="caution")
        with Horizontal(id="screen-status-row"):
            yield Static("", id="screen-status")
            yield ProgressBar(total=None, show_eta=False, show_percentage=False, id="screen-busy")
        yield Static(legend(), id="screen-legend")
        with VerticalScroll(id="screen-body"):
            yield Static("", id="matrix")
        yield FittingFooter()

    def on_mount(self) -> None:
        self.app.results_signal.subscribe(self, lambda _: self.update_view())
        self.update_view()
        focus_now(self.query_one(VerticalScroll))

    def on_screen_resume(self) -> None:
        if self.is_mounted:
            self.update_view()

    # --- compute ---------------------------------------------------------------------

    def update_view(self) -> None:
        """Solve the grid when the catalogue or the conditions changed, else just redraw."""
        app = self.app
        if app.catalogue is None or app.conditions is None:
            self.show_message("No catalogue loaded: open one on the compare screen (esc, then o).")
            return
        target = app.conditions.target_fl_ft
        grid = replace(screening_grid(app.conditions), engines=(), target_fl_ft=None)
        key = (id(app.catalogue), grid, target)
        if key == self._key:
            if self.ceilings is not None and self.adopt_baseline():
                self.render_matrix()
            return
        self._key = key
        self._generation += 1
        self.query_one("#screen-busy", ProgressBar).set_class(True, "-shown")
        self.set_status("solving the grid …")
        self._job.request(partial(grid_ceilings, app.catalogue, grid, target),
                          partial(self._deliver, self._generation, app.catalogue, grid))

    def _deliver(self, generation: int, catalogue, grid, outcome) -> None:
        if generation != self._generation or not self.is_attached:
            return
        frame, heaviest, error, ms = outcome
        self.query_one("#screen-busy", ProgressBar).set_class(False, "-shown")
        if error is not None:
            self._key = None
            self.show_message(f"✗ {error}")
            return
        self.ceilings, self.heaviest, self.conditions, self.compute_ms = frame, heaviest, grid, ms
        self.adopt_baseline()
        self.render_matrix()

    def adopt_baseline(self) -> bool:
        """Take the compare screen's pinned engine option as the baseline (once, when it hands one
        over), else keep the one on show, else the first candidate; whether it changed."""
        candidates, before = self.candidates(), self.baseline
        handed, self.app.screening_baseline = self.app.screening_baseline, None
        if handed in candidates:
            self.baseline = handed
        elif self.baseline not in candidates:
            self.baseline = candidates[0] if candidates else None
        return self.baseline != before

    def candidates(self) -> list[str]:
        return baseline_candidates(self.app.catalogue, self.conditions.variants) if self.conditions else []

    # --- draw ------------------------------------------------------------------------

    def render_matrix(self) -> None:
        """Join the grid's ceilings against the baseline, sort the options, draw them."""
        if self.ceilings is None:
            return
        started = perf_counter()
        if self.baseline is None:
            self.show_message("No variant offers two engine options: nothing to compare.")
            return
        self.rows = compare_options(self.ceilings, self.baseline)
        if self.heaviest is not None:
            self.rows = compare_heaviest(self.rows, self.heaviest, self.baseline)
        summary = screening_summary(self.rows)
        options = sorted_options(self.rows, summary, self.sort_key, self.descending)
        by_pct = not all(w.unit == "kg" for w in self.conditions.weights)
        text = Text()
        for option in options:
            text.append_text(block(option, by_pct, colour=not self.app.no_color))
            text.append("\n")
        self.query_one("#matrix", Static).update(text)
        self.render_ms = (perf_counter() - started) * 1000.0
        self.call_after_refresh(self._painted, started)
        words = "catalogue order" if self.sort_key is None else SORTS_BY_KEY[self.sort_key].words
        order = "" if self.sort_key is None else (" ▼" if self.descending else " ▲")
        c = self.conditions
        speed = "cruise Mach" if c.mach == "cruise" else "best Mach" if c.mach == "best" else f"M{c.mach:.2f}"
        weights = [w.value for w in c.weights]
        unit = "%MTOW" if by_pct else "kg"
        self.set_status(f"◆ {self.baseline} baseline (b/B: {len(self.candidates())}) · {len(options)} options · "
                        f"by {words}{order} · solved {self.compute_ms:.0f} ms, drawn {self.render_ms:.0f} ms · "
                        f"{min(weights):g}-{max(weights):g} {unit} x {format_isa_dev(min(c.isa_devs_c))} to "
                        f"{format_isa_dev(max(c.isa_devs_c))} · {speed}, climb {c.climb_fpm[0]:g} ft/min")

    def _painted(self, started: float) -> None:
        self.redraw_ms = (perf_counter() - started) * 1000.0

    def show_message(self, text: str) -> None:
        self.query_one("#matrix", Static).update(text)
        self.set_status(text)

    def set_status(self, text: str) -> None:
        self.query_one("#screen-status", Static).update(Text(text, no_wrap=True, overflow="ellipsis"))

    # --- actions ---------------------------------------------------------------------

    def action_baseline(self, step: int) -> None:
        candidates = self.candidates()
        if not candidates or self.ceilings is None:
            return
        at = candidates.index(self.baseline) if self.baseline in candidates else -step
        self.baseline = candidates[(at + step) % len(candidates)]
        self.render_matrix()

    def sort_columns(self) -> tuple:
        return SORTS if self.ceilings is not None else ()

    def sort_column(self, key: str):
        return SORTS_BY_KEY[key]

    def render_sorted(self) -> None:
        self.render_matrix()

    def action_export(self) -> None:
        if self.rows is not None:
            self.app.export_table(self.rows, f"variantcmp-screening-{self.baseline}")
