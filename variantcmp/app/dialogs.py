"""Dialogs: a catalogue's problems, export a table, confirm an overwrite (opening one: `open_dialog`)."""

from __future__ import annotations

from pathlib import Path

import polars as pl
from rich.table import Table
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Label, Static

from variantcmp.catalogue import Catalogue, Problem
from variantcmp.export import FORMATS, write_table

from .keys import HoldsKeys, focus_now
from .widgets import FittingFooter, PathSuggester, TextEntry, shown_path

EXPORT_FORMATS = FORMATS


class ProblemsScreen(HoldsKeys, ModalScreen[None]):
    """The problems of a catalogue that did not load, and how to go on."""

    BINDINGS = [
        Binding("l", "reload", "Reload"),
        Binding("o", "open", "Open another"),
        Binding("escape", "close", "Keep last good"),
    ]

    def __init__(self, path: Path, problems: list[Problem], last_good: Catalogue | None) -> None:
        super().__init__()
        self.path = path
        self.problems = problems
        self.last_good = last_good

    def compose(self) -> ComposeResult:
        count = len(self.problems)
        with Vertical(classes="dialog", id="problems-dialog") as box:
            box.border_title = f"{self.path.name}: {count} problem{'s' if count != 1 else ''}"
            yield Static(f"✗ The catalogue {shown_path(self.path)} did not load.", id="problems-head")
            with VerticalScroll(id="problems"):
                yield Static(self._problems_table(), id="problems-list")
            kept = (f"the table keeps showing “{self.last_good.title}”"
                    if self.last_good else "no catalogue is loaded yet")
            yield Static(f"Fix the file and press l to reload, or o to open another; {kept}.",
                         classes="dialog-hint")
        yield FittingFooter()

    def _problems_table(self) -> Table:
        table = Table(box=None, padding=(0, 1), expand=True, show_edge=False)
        table.add_column("Where", style="bold", ratio=2, overflow="fold")
        table.add_column("Problem (what is expected)", ratio=5)
        for problem in self.problems:
            where = problem.key or "(whole file)"
            if problem.file and Path(problem.file).name != self.path.name:
                where = f"{problem.file}: {where}"
            table.add_row(Text(where), Text(problem.message))
        return table

    def on_mount(self) -> None:
        focus_now(self.query_one("#problems"))

    def action_reload(self) -> None:
        self.dismiss(None)
        self.app.reload_catalogue()

    def action_open(self) -> None:
        self.dismiss(None)
        self.app.ask_open()

    def action_close(self) -> None:
        self.dismiss(None)


class ConfirmDialog(HoldsKeys, ModalScreen[bool]):
    """A yes/no question; the safe answer (no) has the focus."""

    BINDINGS = [
        Binding("y", "answer(True)", "Yes"),
        Binding("n,escape", "answer(False)", "No"),
    ]

    def __init__(self, question: str, yes: str = "Yes", no: str = "No") -> None:
        super().__init__()
        self.question, self.yes, self.no = question, yes, no

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="confirm-dialog") as box:
            box.border_title = "Please confirm"
            yield Static(self.question, id="question")
            with Horizontal(classes="buttons"):
                yield Button(f"{self.yes} (y)", id="yes", variant="warning")
                yield Button(f"{self.no} (n)", id="no", variant="primary")
        yield FittingFooter()

    def on_mount(self) -> None:
        focus_now(self.query_one("#no", Button))

    @on(Button.Pressed)
    def pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id == "yes")

    def action_answer(self, answer: bool) -> None:
        self.dismiss(answer)


class ExportDialog(HoldsKeys, ModalScreen[str | None]):
    """Export a table; the format follows the file name; never overwrites unasked."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, df: pl.DataFrame, initial: str) -> None:
        super().__init__()
        self.df = df
        self.initial = initial

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="export-dialog") as box:
            box.border_title = f"Export {self.df.height} rows"
            yield Label("File name: .csv, .parquet or .json chooses the format.")
            yield TextEntry(self.initial, id="path", suggester=PathSuggester())
            yield Static("", classes="dialog-error", id="export-error")
            yield Static("enter write · esc cancel", classes="dialog-hint")
        yield FittingFooter()

    def _error(self, message: str) -> None:
        self.query_one("#export-error", Static).update(message)

    def field_entered(self, field: TextEntry) -> None:
        text = field.value.strip()
        if not text:
            self._error("✗ Type a file name.")
            return
        path = Path(text).expanduser()
        if path.suffix.lower() not in EXPORT_FORMATS:
            self._error(f"✗ {path.name}: end the name with .csv, .parquet or .json.")
            return
        if path.is_dir():
            self._error(f"✗ {path} is a folder.")
            return
        if not path.parent.is_dir():
            self._error(f"✗ {path.parent}: no such folder.")
            return
        if path.exists():
            def answer(overwrite: bool | None) -> None:
                if overwrite:
                    self.write(path)
                else:
                    self._error(f"Not written: {path.name} already exists. Choose another name.")

            self.app.push_screen(ConfirmDialog(f"{path} already exists. Overwrite it?",
                                               yes="Overwrite", no="Keep it"), answer)
            return
        self.write(path)

    def write(self, path: Path) -> None:
        try:
            write_table(self.df, path)  # whole or not at all
        except Exception as error:  # permissions, full disk: say so here, keep the dialog
            self._error(f"✗ Could not write {path}: {error}")
            return
        self.dismiss(f"Wrote {self.df.height} rows to {path} ({EXPORT_FORMATS[path.suffix.lower()]}).")

    def action_cancel(self) -> None:
        self.dismiss(None)
