"""The way back to the compare screen, shared by the views opened from it."""

from __future__ import annotations


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
