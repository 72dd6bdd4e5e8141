"""The way back to the compare screen, shared by the views opened from it."""

from __future__ import annotations

from textual.widgets import DataTable, Input

from .keys import focus_now


class BackToCompare:
    """Mixin for a screen opened from the compare screen: ``compare`` goes back to it,
    ``conditions`` to its condition fields (bind them to keys in the screen's BINDINGS)."""

    def action_compare(self) -> None:
        self.app.switch_mode("compare")

    def action_conditions(self) -> None:
        self.app.switch_mode("compare")
        focus = getattr(self.app.screen, "action_focus_conditions", None)
        if focus is not None:
            focus()


class BackFromFields(BackToCompare):
    """Mixin for a view with its own entry fields above a table: ``compare`` in a field leaves the
    field for the table first (escape ends the typing), and only then goes back."""

    def action_compare(self) -> None:
        if isinstance(self.focused, Input):
            focus_now(self.query_one(DataTable))
        else:
            super().action_compare()
