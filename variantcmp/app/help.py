"""Help: every key (read from the screens' own bindings, so it cannot go stale), the fields, the signs."""

from __future__ import annotations

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Static

from variantcmp.caution import CAUTION

from .form import FIELDS
from .view import BASELINE_MARK, LIMIT_GLYPHS, LIMIT_MEANINGS, MAKES_IT, NONE, SHORT_OF_IT

TABLE_KEYS = [
    ("↑ ↓ pgup pgdn home end", "move in a table"),
    ("← →", "scroll a wide table sideways"),
    ("enter", "open the variant of the row (tables)"),
    ("tab / shift+tab", "next / previous field"),
    ("click a column header", "sort by it; click again to reverse"),
]


def _bindings(cls) -> list[tuple[str, str]]:
    rows = []
    for binding in cls.BINDINGS:
        if not isinstance(binding, Binding):
            binding = Binding(*binding)
        keys = [key.strip() for key in binding.key.split(",")]
        shown = " / ".join(_key_display(key, binding) for key in keys)
        rows.append((shown, binding.description or binding.action))
    return rows


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
    from .dialogs import ConfirmDialog, ExportDialog, OpenDialog, ProblemsScreen
    from .hotday import HotDayScreen
    from .main import VariantCmpApp
    from .variant_info import VariantScreen

    parts = [Text(CAUTION, style="bold"), Text("")]
    for title, cls in (
        ("Everywhere", VariantCmpApp), ("Compare screen", CompareScreen),
        ("Hot-day check", HotDayScreen), ("Variant screen", VariantScreen),
        ("Catalogue problems", ProblemsScreen), ("Open dialog", OpenDialog),
        ("Export dialog", ExportDialog), ("Overwrite question", ConfirmDialog),
    ):
        parts += [_keys_table(title, _bindings(cls)), Text("")]
    parts += [_keys_table("Tables and fields", TABLE_KEYS), Text("")]
    fields = _keys_table("Conditions (any change recomputes at once)",
                         [(f.label, f.help) for f in FIELDS])
    parts += [fields, Text("")]
    signs = [(f"{LIMIT_GLYPHS[name]} {name}", LIMIT_MEANINGS[name]) for name in LIMIT_GLYPHS]
    signs += [
        (BASELINE_MARK, "the pinned baseline row; Δ columns show other rows minus it"),
        (f"{MAKES_IT} / {SHORT_OF_IT}", "reaches / does not reach the target flight level"),
        ("*", "weight above the variant's MTOW (computed, and flagged)"),
        (NONE, "no value: the model cannot give one (see the note)"),
        ("Max FL", "flight level of the maximum altitude, rounded down"),
    ]
    parts += [_keys_table("Signs in the tables", signs)]
    return Group(*parts)


class HelpScreen(Screen):
    BINDINGS = [Binding("escape,f1,question_mark", "close", "Close help")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="help-body") as body:
            body.border_title = "variantcmp help"
            yield Static(help_renderable(), id="help-text")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one(VerticalScroll).focus()

    def action_close(self) -> None:
        self.dismiss()
