"""The app's own small widgets: a text entry field and the caution banner."""

from __future__ import annotations

from rich.text import Text
from textual.widget import Widget
from textual.widgets import Input

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
