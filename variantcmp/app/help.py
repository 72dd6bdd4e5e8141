"""Help: every key (read from the screens' own bindings, so it cannot go stale), the fields, the signs."""

from __future__ import annotations

from collections.abc import Iterable
from functools import partial

from rich.console import Group
from rich.markup import escape
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult, SystemCommand
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Static

from variantcmp.caution import CAUTION

from .keys import HoldsKeys, focus_now
from .form import FIELDS
from variantcmp.sketch import (
    LIMIT_LETTERS, MARKED_MARK, MARKED_MARK_ASCII, NO_ALTITUDE_MARK, TOP_MARK, TOP_MARK_ASCII,
)

from .view import (
    BASELINE_MARK, BELOW_EMPTY_MARK, LIMIT_GLYPHS, LIMIT_MEANINGS, MAKES_IT, MAX_MARKED, NONE, OVER_MTOW_MARK,
    SHORT_OF_IT, mark_sign,
)
from .screening_view import ONLY_BASELINE, ONLY_OPTION, SHADES, TIE_MARK
from .spread_bars import GLYPHS
from .widgets import FittingFooter

TABLE_KEYS = [
    ("↑ ↓ pgup pgdn home end", "move in a table"),
    ("← →", "scroll a wide table sideways"),
    ("enter", "open the variant of the row (tables)"),
    ("tab / shift+tab", "next / previous field"),
    ("click a column header", "sort by it; click again to reverse"),
    ("ctrl+p", "command palette: find any key of the screen on show by its name, and run it"),
    ("ctrl+c", "copy the selected text in a field (q quits)"),
]


#: The keys of the whole app (VariantCmpApp.BINDINGS), kept here so that the help screen lists
#: them without importing the app.
APP_BINDINGS = [
    Binding("f1,question_mark", "help", "Help"),
    Binding("t", "toggle_theme", "Theme", show=False),
    Binding("f2,ctrl+s", "save_picture", "Save SVG", show=False,
            tooltip="save the view on screen as an SVG picture in the working folder, for a report"),
    # The footer keeps its room for the screen's keys; q is in help and the palette, and ctrl+c says it.
    Binding("q", "quit", "Quit", show=False),
]


def _bindings(cls) -> list[tuple[str, str]]:
    rows = []
    for binding in (cls if isinstance(cls, list) else cls.BINDINGS):
        if not isinstance(binding, Binding):
            binding = Binding(*binding)
        keys = [key.strip() for key in binding.key.split(",")]
        shown = " / ".join(_key_display(key, binding) for key in keys)
        does = binding.description or binding.action
        if binding.group is not None:  # shown together in the footer under the group's name
            does = f"{binding.group.description}: {does}"
        if binding.tooltip:  # the footer's word is short; say what it does
            does = f"{does} ({binding.tooltip})"
        rows.append((shown, does))
    return rows


def key_commands(app, screen) -> Iterable[SystemCommand]:
    """Every key of ``screen`` and of the app as a command-palette entry that does what the key does."""
    for node in (screen, app):
        for binding in type(node).BINDINGS:
            if not isinstance(binding, Binding):
                binding = Binding(*binding)
            keys = " / ".join(_key_display(key.strip(), binding) for key in binding.key.split(","))
            title = binding.description or binding.action
            if binding.group is not None:
                title = f"{binding.group.description}: {title}"
            # The palette reads its text as markup: a key such as "[" must not open a tag.
            yield SystemCommand(escape(f"{title}  ({keys})"), escape(binding.tooltip or f"key {keys}"),
                                partial(app.run_action, binding.action, node))


def _key_display(key: str, binding: Binding) -> str:
    if binding.key_display:
        return binding.key_display
    names = {"slash": "/", "question_mark": "?", "escape": "esc", "full_stop": "."}
    return names.get(key, key)


def _keys_table(title: str, rows: list[tuple[str, str]]) -> Table:
    table = Table(title=title, title_justify="left", show_header=False, box=None, padding=(0, 1))
    table.add_column("key", style="bold", no_wrap=True, min_width=10)
    table.add_column("does")
    for row in rows:
        table.add_row(*row)
    return table


def help_renderable() -> Group:
    from .compare import CompareScreen
    from .cruise_screen import CruiseScreen
    from .dialogs import ConfirmDialog, ExportDialog, ProblemsScreen
    from .engine_out_screen import OEI_FIELDS, EngineOutScreen
    from .envelope_screen import EnvelopeScreen
    from .hotday import PlannerScreen
    from .open_dialog import OpenDialog
    from .screening_screen import ScreeningScreen
    from .sweep_screen import SweepScreen
    from .variant_info import VariantScreen

    parts = [Text(CAUTION, style="bold"), Text("")]
    for title, cls in (
        ("Everywhere", APP_BINDINGS), ("Compare screen", CompareScreen),
        ("Planner", PlannerScreen), ("Cruise levels", CruiseScreen), ("Engine-out view", EngineOutScreen),
        ("Screening view", ScreeningScreen), ("Envelope view", EnvelopeScreen), ("Sweep views", SweepScreen),
        ("Variant screen", VariantScreen),
        ("Catalogue problems", ProblemsScreen), ("Open dialog", OpenDialog),
        ("Export dialog", ExportDialog), ("Overwrite?", ConfirmDialog),
    ):
        parts += [_keys_table(title, _bindings(cls)), Text("")]
    parts += [_keys_table("Tables and fields", TABLE_KEYS), Text("")]
    fields = _keys_table("Conditions (any change recomputes at once)",
                         [(f.label, f.help) for f in FIELDS])
    parts += [fields, Text("")]
    parts += [_keys_table("Engine-out view's fields", [(f.label, f.help) for f in OEI_FIELDS]), Text("")]
    signs = [(f"{LIMIT_GLYPHS[name]} {name}", LIMIT_MEANINGS[name]) for name in LIMIT_GLYPHS]
    signs += [
        (BASELINE_MARK, "rows of the baseline variant x engine option (b); Δ columns show each other row minus "
                        "the baseline at the same weight (%MTOW or kg, B switches), ISA deviation and climb"),
        (" ".join(mark_sign(i + 1) for i in range(MAX_MARKED)),
         "rows marked for the envelope overlay (m); the number tags the row's curve"),
        (f"{MAKES_IT} / {SHORT_OF_IT}", "reaches / does not reach the target flight level"),
        (OVER_MTOW_MARK, "weight above the variant's MTOW (computed, and flagged)"),
        (BELOW_EMPTY_MARK, "weight below the variant's operating empty weight (or 30 % of MTOW where none is "
                           "given): computed, and flagged; likely a unit slip"),
        (NONE, "no value: the model cannot give one (see the note)"),
        ("Max FL", "flight level of the maximum altitude, rounded down"),
        (" ".join(glyph for _, glyph in SHADES), "screening view (d): the size of an option's difference from the "
         "baseline, under " + ", ".join(f"{bound:,.0f}" for bound, _ in SHADES[:-1]) + f" ft and more; {TIE_MARK} "
         f"within 1 ft; a limit glyph after it: the option's binding limit where it differs from the baseline's; "
         f"{ONLY_OPTION} / {ONLY_BASELINE} only the option / only the baseline has a maximum altitude"),
        (" ".join(GLYPHS[False][:3]), "P10, P50 and P90 of a row's maximum altitude under uncertain data (u), on one "
         "scale for all rows"),
    ]
    parts += [_keys_table("Signs in the tables", signs), Text("")]
    letters = " ".join(LIMIT_LETTERS.values())
    drawings = [
        (f"{TOP_MARK} / {TOP_MARK_ASCII}", "top of the envelope, where the feasible speed band closes"),
        (f"{MARKED_MARK} / {MARKED_MARK_ASCII}", "highest altitude on the marked Mach line (cruise Mach or the "
                                                  "Speed field's Mach)"),
        (letters, "binding limit along a sweep curve: "
                  + ", ".join(f"{letter} {name}" for name, letter in LIMIT_LETTERS.items())),
        (NO_ALTITUDE_MARK, "no altitude at that point of a sweep"),
        ("line styles", "each boundary or curve has its own dash pattern, character and letter (without "
                        "colour, NO_COLOR, each line is drawn in its own character); the legend under the "
                        "drawing explains them and says where two curves coincide, so colour is never needed"),
    ]
    parts += [_keys_table("Signs in the drawings", drawings)]
    return Group(*parts)


class HelpScreen(HoldsKeys, Screen):
    PICTURE_NAME = "help"  # in the name of a saved SVG (f2)
    BINDINGS = [Binding("escape,f1,question_mark", "close", "Close help")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="help-body") as body:
            body.border_title = "variantcmp help"
            yield Static(help_renderable(), id="help-text")
        yield FittingFooter()

    def on_mount(self) -> None:
        focus_now(self.query_one(VerticalScroll))

    def action_close(self) -> None:
        self.dismiss()
