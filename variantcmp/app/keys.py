"""Keys reach what the user sees, in the order typed, however fast.

Three races lose or misroute fast typing in a Textual app, each handled here:

- Textual hands a key to the focused widget first and runs a screen's or the app's binding only
  once the key has bubbled back up, after the keys typed since have already gone to the focused
  widget: typing after `c` or Tab put the text in the old field. `KeyHold` runs a key's binding
  (as `Screen.active_bindings` names it: the focused widget's own, then the screen's, then the
  app's, keys the widget types excepted) as soon as the key arrives.
- `Widget.focus()` takes effect only after the messages already queued; `focus_now` moves the
  focus at once, so the next key goes to the new place.
- A screen just pushed or switched to for the first time has no focus until it has mounted:
  `KeyHold` holds keys while the active screen is a `HoldsKeys` screen that is not ready (mounted
  and resumed) and replays them in order once it is.
"""

from __future__ import annotations

from textual import events
from textual.message import Message
from textual.widget import Widget

# Longest wait for a screen to say it is ready before held keys go on anyway, s: a screen that
# failed to mount must not swallow the keyboard.
HOLD_LIMIT_S = 1.0


def focus_now(widget: Widget) -> None:
    """Give ``widget`` the focus before the next key is handled (unlike ``widget.focus()``)."""
    widget.screen.set_focus(widget)


class HoldsKeys:
    """Mixin for the app's screens: keys typed before the screen is ready wait for it."""

    keys_ready = False
    _mounted_once = False
    _resumed_once = False

    def on_mount(self) -> None:  # runs after the screen's own on_mount (Textual walks the MRO)
        self._mounted_once = True
        self._maybe_ready()

    def on_screen_resume(self) -> None:
        self._resumed_once = True
        self._maybe_ready()

    def _maybe_ready(self) -> None:
        if not self.keys_ready and self._mounted_once and self._resumed_once:
            self.keys_ready = True
            self.app.post_message(ReplayKeys())


class ReplayKeys(Message):
    """The active screen became ready: hand it the keys held for it."""


class KeyHold:
    """Mixin for the App: bindings run when their key arrives; keys for a screen not ready wait."""

    _hold_timer = None

    @property
    def held_keys(self) -> list[events.Key]:
        return self.__dict__.setdefault("_held_keys", [])

    def _screen_ready(self) -> bool:
        screen = self.screen
        return not isinstance(screen, HoldsKeys) or screen.keys_ready

    async def on_event(self, event: events.Event) -> None:
        if isinstance(event, events.Key) and not event.is_forwarded and isinstance(self.screen, HoldsKeys):
            if self.held_keys or not self._screen_ready():  # behind held keys, a key waits its turn
                self.held_keys.append(event)
                if self._hold_timer is None:
                    self._hold_timer = self.set_timer(HOLD_LIMIT_S, self._replay_anyway)
                return
            if await self._run_binding(event):
                return
        await super().on_event(event)

    async def _run_binding(self, event: events.Key) -> bool:
        """Run the key's binding now, as Textual would once the key had bubbled up unhandled."""
        active = self.screen.active_bindings.get(event.key)
        if active is None or not active.enabled:
            return False
        return await self.run_action(active.binding.action, active.node)

    async def on_replay_keys(self, message: ReplayKeys) -> None:
        await self._replay(force=False)

    async def _replay_anyway(self) -> None:
        await self._replay(force=True)

    async def _replay(self, force: bool) -> None:
        if self._hold_timer is not None:
            self._hold_timer.stop()
            self._hold_timer = None
        held = self.held_keys
        while held and (force or self._screen_ready()):
            event = held.pop(0)
            if not (isinstance(self.screen, HoldsKeys) and await self._run_binding(event)):
                await super().on_event(event)
            force = False  # a key that opened another screen waits for that one
        if held:
            self._hold_timer = self.set_timer(HOLD_LIMIT_S, self._replay_anyway)
