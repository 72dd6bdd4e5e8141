"""Open a catalogue: a path typed from the working folder, or one of the bundled fleets by name."""

from __future__ import annotations

from pathlib import Path

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Input, Label, OptionList, Static
from textual.widgets.option_list import Option

from variantcmp.catalogue import demo_catalogue_paths

from .keys import HoldsKeys, focus_now
from .widgets import FittingFooter, PathSuggester, TextEntry, shown_path


def catalogue_choices(folder: Path) -> list[tuple[str, Path, str]]:
    """(name to show, path, what it is): the bundled fleets by name, then the .toml files of ``folder``."""
    choices = [(path.stem, path, "bundled demo fleet") for path in demo_catalogue_paths()]
    try:
        files = sorted(p for p in folder.iterdir() if p.suffix.lower() == ".toml" and p.is_file())
    except OSError:
        files = []
    return choices + [(path.name, path, "in this folder") for path in files]


def resolve_choice(text: str, folder: Path) -> Path:
    """What a typed name means: a bundled fleet's name (with or without .toml), else a path from ``folder``."""
    for name, path, kind in catalogue_choices(folder):
        if kind == "bundled demo fleet" and text in (name, f"{name}.toml"):
            return path
    return folder / Path(text).expanduser()


class OpenDialog(HoldsKeys, ModalScreen[str | None]):
    """Ask for a catalogue: type a path, or pick a bundled fleet or a file of the working folder."""

    BINDINGS = [
        Binding("escape", "cancel", "Cancel"),
        Binding("down", "to_list", "Choose from the list", show=False),
    ]

    def __init__(self, folder: Path | None = None) -> None:
        super().__init__()
        self.folder = folder or Path.cwd()
        self.choices = catalogue_choices(self.folder)

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="open-dialog") as box:
            box.border_title = "Open a catalogue"
            yield Label(Text(f"In {shown_path(self.folder)}", no_wrap=True, overflow="ellipsis"), id="open-folder")
            yield TextEntry("", id="path", placeholder="e.g. my-fleet.toml, or a name from the list",
                            suggester=PathSuggester((".toml",), self.folder))
            yield Static("", classes="dialog-error", id="open-error")
            yield OptionList(id="open-choices")
            yield Static("", classes="dialog-hint", id="open-matches")
            yield Static("enter open · ↓ the list · tab completes a file name · esc cancel", classes="dialog-hint")
        yield FittingFooter()

    def on_mount(self) -> None:
        self.show_choices("")

    def show_choices(self, typed: str) -> None:
        """The choices whose name contains what is typed (any case); say so when none does."""
        words = typed.strip().lower()
        shown = [c for c in self.choices if words in c[0].lower()] if words else list(self.choices)
        options = self.query_one("#open-choices", OptionList)
        options.clear_options()
        options.add_options([Option(Text.assemble((name, "bold"), f"  {kind}"), id=str(path))
                             for name, path, kind in shown])
        options.display = bool(shown)
        matches = self.query_one("#open-matches", Static)
        if shown:
            matches.update(f"{len(shown)} of {len(self.choices)}: bundled fleets and .toml files in this folder")
        else:
            matches.update(f"No bundled fleet or .toml file here matches “{typed.strip()}”; "
                           "enter opens it as a path.")

    @on(Input.Changed, "#path")
    def typed(self, event: Input.Changed) -> None:
        self.show_choices(event.value)

    def field_entered(self, field: TextEntry) -> None:
        text = field.value.strip()
        error = self.query_one("#open-error", Static)
        if not text:
            error.update("✗ Type the path of a catalogue file, or pick one from the list (↓).")
            return
        path = resolve_choice(text, self.folder)
        if not path.is_file():
            error.update(f"✗ {path}: no such file." if not path.exists() else f"✗ {path} is not a file.")
            return
        self.dismiss(str(path))

    @on(OptionList.OptionSelected, "#open-choices")
    def picked(self, event: OptionList.OptionSelected) -> None:
        self.dismiss(event.option.id)

    def action_to_list(self) -> None:
        options = self.query_one("#open-choices", OptionList)
        if options.display and options.option_count:
            focus_now(options)
            if options.highlighted is None:
                options.highlighted = 0

    def action_cancel(self) -> None:
        self.dismiss(None)
