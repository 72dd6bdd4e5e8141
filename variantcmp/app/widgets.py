"""The app's own small widgets: a text entry field, file-name completion, the caution banner, a
footer that fits."""

from __future__ import annotations

from pathlib import Path

from rich.text import Text
from textual.suggester import Suggester
from textual.widget import Widget
from textual.widgets import Footer, Input, Label

from variantcmp.caution import CAUTION, CAUTION_SHORT

# The caution in one line, for short terminals, longest first: the banner shows the longest that
# fits; each keeps the meaning (not approved data, the flight manual governs); F1 shows it in full.
CAUTION_LINES = (
    CAUTION_SHORT,
    "Caution: screening tool, not approved flight-planning data; the flight manual governs",
    "Caution: not approved flight data; flight manual governs",
)
# Below this many terminal rows the banner takes one line (the app's `compact_rows`).
COMPACT_BELOW_ROWS = 20


def shown_path(path: Path | str) -> str:
    """A path as shown to the user: under the home folder written from ``~``."""
    path = Path(path)
    try:
        return str(Path("~") / path.resolve().relative_to(Path.home().resolve()))
    except (ValueError, OSError, RuntimeError):
        return str(path)


class TextEntry(Input):
    """A text field that shows the start of its text when not being edited, and whose enter acts
    before the next key: it calls the screen's ``field_entered(field)`` at once (a posted
    `Input.Submitted` would be handled only after the keys typed since, which would land here)."""

    def on_mount(self) -> None:
        self.cursor_position = 0

    def _on_blur(self, event) -> None:
        super()._on_blur(event)
        self.cursor_position = 0  # a long value shows its start, not "00%mtow"

    async def action_submit(self) -> None:
        entered = getattr(self.screen, "field_entered", None)
        if entered is None:
            await super().action_submit()
        else:
            entered(self)


class PathSuggester(Suggester):
    """Completes a typed path (from ``base``, else the working folder) with the first matching file
    or folder name."""

    def __init__(self, suffixes: tuple[str, ...] = (), base: Path | None = None) -> None:
        super().__init__(use_cache=False, case_sensitive=True)
        self.suffixes = suffixes
        self.base = base

    async def get_suggestion(self, value: str) -> str | None:
        if not value:
            return None
        typed = Path(value).expanduser()
        if self.base is not None and not typed.is_absolute():
            typed = self.base / typed
        folder, stem = (typed, "") if value.endswith("/") else (typed.parent, typed.name)
        try:
            names = sorted(p for p in folder.iterdir() if p.name.startswith(stem) and not p.name.startswith("."))
        except OSError:
            return None
        for candidate in names:
            if candidate.is_dir() or not self.suffixes or candidate.suffix in self.suffixes:
                rest = candidate.name[len(stem):] + ("/" if candidate.is_dir() else "")
                return value + rest if rest else None
        return None


class CautionBanner(Widget):
    """The safety caution, always on screen: in full where the terminal has room, else on one line
    (the app's ``compact_rows``, true below `COMPACT_BELOW_ROWS` rows): the longest of
    `CAUTION_LINES` that fits the width, the last cut with an ellipsis only where none fits."""

    DEFAULT_CSS = """
    CautionBanner { height: auto; }
    CautionBanner.-compact { height: 1; }
    """

    def on_mount(self) -> None:
        self.watch(self.app, "compact_rows", self._compact_changed, init=True)

    def _compact_changed(self, compact: bool) -> None:
        self.set_class(compact, "-compact")
        self.refresh(layout=True)

    @property
    def compact(self) -> bool:
        return self.has_class("-compact")

    @property
    def plain(self) -> str:
        """The caution as shown now."""
        return self.render().plain

    def render(self) -> Text:
        if not self.compact:
            return Text(CAUTION)
        width = self.content_size.width
        for line in CAUTION_LINES:
            if len(line) <= width:
                return Text(line, no_wrap=True)
        return Text(CAUTION_LINES[-1], no_wrap=True, overflow="ellipsis")


class FittingFooter(Footer):
    """A footer that leaves out the keys that do not fit, whole, rather than cutting or overdrawing
    them: the command palette's key (docked right) always shows, and the palette and help list
    every key."""

    async def recompose(self) -> None:
        await super().recompose()
        self.call_after_refresh(self._fit)

    def on_resize(self) -> None:
        for child in self.children:
            child.display = True
        self.call_after_refresh(self._fit)

    def _fit(self) -> None:
        palette = [child for child in self.children if child.has_class("-command-palette")]
        # Keys end where the palette's key begins (it is docked right, with the footer's own edge
        # after it: the footer's width less the palette's overstates the room by that edge).
        right = min((child.region.x for child in palette), default=self.region.right)
        keys = [child for child in self.children if child not in palette]
        first_out = next((i for i, child in enumerate(keys) if child.region.right > right), len(keys))
        if 0 < first_out < len(keys) and isinstance(keys[first_out], Label):
            first_out -= 1  # a group's keys go with the group's label (a Label), or not at all
        for child in keys[first_out:]:
            child.display = False
