"""What the drawing screens share: a widget that redraws a computed sketch at its own size, and a
screen base that computes in a worker and follows the shared conditions.

The physics runs once per request (in `variantcmp.envelope`, in a worker thread); a resize, a new
speed axis or the ASCII toggle only calls the drawing function of `variantcmp.sketch` again.
"""

from __future__ import annotations

from collections.abc import Callable, Hashable
from dataclasses import dataclass
from functools import partial
from time import perf_counter

import polars as pl
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widget import Widget
from textual.widgets import ProgressBar, Static

from variantcmp.sketch import MIN_HEIGHT, MIN_WIDTH, Drawing
from variantcmp.units import OptionError

from .jobs import LatestJob
from .keys import HoldsKeys
from .navigation import BackToCompare
from .widgets import CautionBanner, FittingFooter
from .results import Results
from .view import ROW_KEY

# The drawing's colours are a second cue only; on a light background these few would vanish.
_ON_LIGHT = {"white": "black", "yellow": "dark_goldenrod", "bright_green": "green4", "cyan": "dark_cyan"}
# How many computed envelopes or sweeps a screen keeps, so stepping back and forth is instant.
CACHE_SIZE = 8
NO_TABLE = "No table yet: open a catalogue on the compare screen (esc, then o)."


def drawing_text(drawing: Drawing, dark: bool) -> Text:
    """The drawing as rich Text; on a light theme the colours that would vanish are darkened."""
    if dark:
        return drawing.text()
    light = Drawing(drawing.lines, [[(a, b, _ON_LIGHT.get(style, style)) for a, b, style in row]
                                    for row in drawing.spans])
    return light.text()


class SketchView(Widget):
    """Shows one drawing at whatever size the widget has; redraws (never recomputes) on resize."""

    DEFAULT_CSS = """
    SketchView { height: 1fr; width: 1fr; }
    """

    def __init__(self, *, id: str | None = None) -> None:
        super().__init__(id=id)
        self._draw: Callable[[int, int], Drawing] | None = None
        self._message = ""
        self._key: tuple | None = None
        self._text: Text = Text("")
        self.drawing: Drawing | None = None  # the last drawing shown
        self.draw_count = 0  # how many times a drawing was made (tests: resize redraws)
        self.draw_ms = 0.0  # the last one, ms

    def show(self, draw: Callable[[int, int], Drawing] | None, message: str = "") -> None:
        """Draw with ``draw(width, height)`` from now on, or show ``message`` when it is None."""
        self._draw, self._message, self._key = draw, message, None
        self.refresh()

    def redraw(self) -> None:
        """Draw again at the same size (new speed axis, ASCII toggle)."""
        self._key = None
        self.refresh()

    @property
    def plain(self) -> str:
        """What the widget shows, as plain text."""
        return self._text.plain

    def render(self) -> Text:
        width, height = self.content_size.width, self.content_size.height
        dark = self.app.current_theme.dark
        key = (width, height, dark, self._draw is None, self._message)
        if key == self._key:
            return self._text
        self._key = key
        if self._draw is None:
            self._text = Text(self._message)
        elif width < MIN_WIDTH or height < MIN_HEIGHT:
            self._text = Text(f"The drawing needs at least {MIN_WIDTH}x{MIN_HEIGHT} characters; "
                              f"this space is {width}x{height}. Enlarge the terminal.")
        else:
            started = perf_counter()
            self.drawing = self._draw(width, height)
            self._text = drawing_text(self.drawing, dark)
            self.draw_ms = (perf_counter() - started) * 1000.0
            self.draw_count += 1
        return self._text


@dataclass(frozen=True)
class Request:
    """What a drawing screen wants to show: ``key`` identifies it (catalogue, conditions, rows)."""

    key: Hashable
    job: Callable[[], object]  # runs in the worker: the solver calls, nothing else
    what: str  # "the envelope of v70/ossel-78", for the status line


class DrawingScreen(BackToCompare, HoldsKeys, Screen):
    """Caution, a status line with a busy bar, the drawing, the footer.

    Subclasses say what to compute (`request`), how to draw it (`drawer`) and what the status line
    says about it (`describe`). A change of the shared results recomputes when the screen is on
    show, or when it comes back on show.
    """

    BINDINGS = [
        Binding("escape", "compare", "Back", tooltip="to the compare screen"),
        Binding("c", "conditions", "Conditions", tooltip="to the compare screen's condition fields"),
        Binding("a", "toggle_ascii", "ASCII", tooltip="plain ASCII drawings for dumb terminals, on or off"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self._generation = 0
        self._pending: Hashable | None = None  # key being computed
        self._shown: Hashable | None = None  # key of what is drawn
        self._stale = False  # the shared results changed while this screen was hidden
        self._cache: dict[Hashable, object] = {}
        self._job = LatestJob(self, "drawing")
        self.result: object | None = None  # the computed Envelope or Sweep on show
        self.error: str | None = None
        self.computations = 0  # solver runs (tests: a resize must not add one)
        self.compute_ms = 0.0  # the last one, ms
        self.busy = False

    def compose(self) -> ComposeResult:
        yield CautionBanner(id="caution")
        with Horizontal(id="sketch-status-row"):
            yield Static("", id="sketch-status")
            yield ProgressBar(total=None, show_eta=False, show_percentage=False, id="sketch-busy")
        yield SketchView(id="sketch")
        yield FittingFooter()

    @property
    def sketch(self) -> SketchView:
        return self.query_one(SketchView)

    def on_mount(self) -> None:
        self.app.results_signal.subscribe(self, self.results_changed)
        self.update_view()

    def on_screen_resume(self) -> None:
        if self.is_mounted:
            self.sketch.redraw()  # the ASCII toggle may have changed on another drawing screen
            self.update_view()

    def results_changed(self, results: Results) -> None:
        if results.df is None:  # the compare screen says what went wrong; keep the last drawing
            self.set_status(f"✗ {results.error} (drawing the last conditions that could be computed)")
            return
        # New results (conditions, a reloaded catalogue): nothing drawn or on its way is current.
        self._cache.clear()
        self._shown = self._pending = None
        self._generation += 1  # a worker still running computes for the old results
        if self.is_active:
            self.update_view()
        else:
            self._stale = True

    def table_results(self) -> Results | None:
        """The shared results when there is a table to draw from."""
        results = self.app.results
        if self.app.catalogue is None or results is None or results.df is None:
            return None
        return results

    def chosen_rows(self, unmarked_keys: list) -> tuple[list[dict], bool]:
        """Table rows to draw: the marked ones (in mark order), else those of ``unmarked_keys``;
        and whether they came from marks."""
        app = self.app
        marked = bool(app.marked_keys)
        keys = [k for k in (list(app.marked_keys) if marked else unmarked_keys) if k]
        found = {row[ROW_KEY]: row for row in app.results.df.filter(pl.col(ROW_KEY).is_in(keys)).to_dicts()}
        return [found[k] for k in keys if k in found], marked

    # --- what subclasses give ---------------------------------------------------------

    def request(self) -> Request | str:
        """What to compute now, or a message saying why there is nothing to draw."""
        raise NotImplementedError

    def drawer(self, result) -> Callable[[int, int], Drawing]:
        raise NotImplementedError

    def describe(self, result) -> str:
        """The status line for a drawn result."""
        raise NotImplementedError

    # --- compute and show --------------------------------------------------------------

    def update_view(self) -> None:
        """Draw what is wanted now: at once when known, else computed in a worker."""
        self._stale = False
        wanted = self.request()
        if isinstance(wanted, str):
            self._generation += 1  # anything still running is no longer wanted
            self._pending = self._shown = None
            self.result = None
            self.set_busy(False)
            self.sketch.show(None, wanted)
            self.set_status(wanted)
            return
        if wanted.key == self._pending:
            return  # on its way
        if wanted.key == self._shown:
            return
        if wanted.key in self._cache:
            self._generation += 1
            self._pending = None
            self.set_busy(False)
            self._show(wanted.key, self._cache[wanted.key])
            return
        self._generation += 1
        self._pending = wanted.key
        self.set_busy(True)
        self.set_status(f"computing {wanted.what} …")
        if self.result is None:
            self.sketch.show(None, f"Computing {wanted.what} …")
        self._job.request(partial(self._solve, wanted), partial(self._deliver, self._generation, wanted))

    @staticmethod
    def _solve(wanted: Request) -> tuple[object, str | None, float]:
        """Run the request's solver calls (in the worker thread): (result, error message, ms)."""
        started = perf_counter()
        result, error = None, None
        try:
            result = wanted.job()
        except OptionError as exc:
            error = str(exc)
        except Exception as exc:  # the app must not die: say what went wrong in place
            error = f"could not compute {wanted.what} ({type(exc).__name__}: {exc})"
        return result, error, (perf_counter() - started) * 1000.0

    def _deliver(self, generation: int, wanted: Request, outcome: tuple[object, str | None, float]) -> None:
        result, error, elapsed_ms = outcome
        if generation != self._generation or not self.is_attached:
            return  # a newer request is on its way
        self._pending = None
        self.set_busy(False)
        self.computations += 1
        self.compute_ms = elapsed_ms
        if error is not None:
            self.error = error
            self._shown, self.result = None, None
            self.sketch.show(None, f"✗ {error}")
            self.set_status(f"✗ {error}")
            return
        while len(self._cache) >= CACHE_SIZE:
            self._cache.pop(next(iter(self._cache)))
        self._cache[wanted.key] = result
        self._show(wanted.key, result)

    def _show(self, key: Hashable, result) -> None:
        self.error = None
        self._shown, self.result = key, result
        self.sketch.show(self.drawer(result))
        self.set_status(self.describe(result))

    def set_status(self, text: str) -> None:
        self.query_one("#sketch-status", Static).update(Text(text, no_wrap=True, overflow="ellipsis"))

    def set_busy(self, busy: bool) -> None:
        self.busy = busy
        self.query_one("#sketch-busy", ProgressBar).set_class(busy, "-shown")
        self.sketch.set_class(busy and self.result is not None, "-stale")

    # --- actions -------------------------------------------------------------------------

    def action_toggle_ascii(self) -> None:
        self.app.sketch_ascii = not self.app.sketch_ascii
        if self.result is not None:
            self.sketch.redraw()
            self.set_status(self.describe(self.result))
