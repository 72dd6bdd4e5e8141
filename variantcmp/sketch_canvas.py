"""The character canvas and plot frame the sketches are drawn on (presentation, no physics).

A :class:`Drawing` is a list of lines of exactly ``width`` characters with optional colour spans.
A :class:`Canvas` draws lines in dots: braille cells (U+2800 block, 2 x 4 dots per character) when
``fine``, else one glyph character per cell (each line style has its own). A :class:`Plot` frames a
canvas with a title, flight-level ticks on y, ticks on x, a legend and notes; its frame is drawn in
box-drawing characters, or in plain ASCII when ``unicode`` is False.
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass, field

import numpy as np

from .units import format_flight_level

BRAILLE_BASE = 0x2800
# Braille dot bits by [row 0..3][column 0..1] (Unicode braille patterns, dots 1-8).
_BRAILLE_BITS = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))
MIN_WIDTH, MIN_HEIGHT = 40, 12


@dataclass(frozen=True)
class LineStyle:
    """How one kind of line is drawn: dash pattern in dots, ASCII glyph, tag letter, colour."""

    label: str
    pattern: tuple[int, ...]
    glyph: str
    tag: str
    colour: str = ""


SOLID = (1,)
DASHED = (1, 1, 1, 1, 0, 0)
DOTTED = (1, 0)
DASH_DOT = (1, 1, 1, 1, 0, 0, 1, 0, 0)
LONG_DASH = (1, 1, 1, 1, 1, 1, 1, 1, 0, 0, 0)
DASH_DOT_DOT = (1, 1, 1, 1, 0, 0, 1, 0, 0, 1, 0, 0)
SPARSE = (1, 0, 0, 0)
SHORT_GAP = (1, 1, 0, 0, 0)
THIRDS = (1, 0, 0)

@dataclass
class Drawing:
    """Lines of text, each exactly as wide as asked, with colour spans (start, end, style) per line."""

    lines: list[str]
    spans: list[list[tuple[int, int, str]]] = field(default_factory=list)

    def __str__(self) -> str:
        return "\n".join(self.lines)

    def text(self):
        """The drawing as a rich Text (for Textual's Static or a rich Console)."""
        from rich.text import Text

        out = Text(no_wrap=True, overflow="crop")
        for i, line in enumerate(self.lines):
            if i:
                out.append("\n")
            t = Text(line)
            for start, end, style in (self.spans[i] if i < len(self.spans) else []):
                t.stylize(style, start, end)
            out.append_text(t)
        return out


class Canvas:
    """A grid of character cells; lines are drawn in dots (2 x 4 per cell in braille, else 1 x 1)."""

    def __init__(self, cols: int, rows: int, fine: bool):
        self.cols, self.rows, self.fine = cols, rows, fine
        self.sx, self.sy = (2, 4) if fine else (1, 1)
        self.bits = [[0] * cols for _ in range(rows)]
        self.chars: list[list[str | None]] = [[None] * cols for _ in range(rows)]
        self.styles: list[list[str]] = [[""] * cols for _ in range(rows)]
        self.fixed = [[False] * cols for _ in range(rows)]  # tags, marks and labels: not overdrawn

    @property
    def width_dots(self) -> int:
        return self.cols * self.sx

    @property
    def height_dots(self) -> int:
        return self.rows * self.sy

    def dot(self, x: int, y: int, style: LineStyle) -> None:
        if not (0 <= x < self.width_dots and 0 <= y < self.height_dots):
            return
        c, r = x // self.sx, y // self.sy
        if self.fixed[r][c]:
            return
        if self.fine:
            self.bits[r][c] |= _BRAILLE_BITS[y % 4][x % 2]
        else:
            self.chars[r][c] = style.glyph
        self.styles[r][c] = style.colour

    def put(self, col: int, row: int, text: str, colour: str = "") -> None:
        """Write text into cells (clipped), marking them fixed."""
        for k, ch in enumerate(text):
            c = col + k
            if 0 <= c < self.cols and 0 <= row < self.rows:
                self.chars[row][c], self.styles[row][c], self.fixed[row][c] = ch, colour, True

    def free(self, col: int, row: int, length: int = 1) -> bool:
        return (0 <= row < self.rows and 0 <= col and col + length <= self.cols
                and not any(self.fixed[row][col:col + length]))

    def polyline(self, xs, ys, style: LineStyle) -> None:
        """Draw through dot coordinates (floats; NaN breaks the line), dashing along the path."""
        step = 0
        last = None
        prev = None
        for x, y in zip(xs, ys):
            if not (math.isfinite(x) and math.isfinite(y)):
                prev = None
                continue
            if prev is None:
                points = [(x, y)]
            else:
                n = max(1, int(math.ceil(max(abs(x - prev[0]), abs(y - prev[1])))))
                n = min(n, 4 * (self.width_dots + self.height_dots))
                points = [(prev[0] + (x - prev[0]) * k / n, prev[1] + (y - prev[1]) * k / n) for k in range(1, n + 1)]
            for px, py in points:
                cell = (int(round(px)), int(round(py)))
                if cell == last:
                    continue
                last = cell
                if style.pattern[step % len(style.pattern)]:
                    self.dot(cell[0], cell[1], style)
                step += 1
            prev = (x, y)

    def row_text(self, r: int) -> tuple[str, list[str]]:
        chars, styles = [], []
        for c in range(self.cols):
            ch = self.chars[r][c]
            if ch is None:
                ch = chr(BRAILLE_BASE + self.bits[r][c]) if self.bits[r][c] else " "
            chars.append(ch)
            styles.append(self.styles[r][c])
        return "".join(chars), styles


def nice_ticks(lo: float, hi: float, target: int, steps=(1.0, 2.0, 2.5, 5.0)) -> np.ndarray:
    """Round tick values inside [lo, hi], about ``target`` of them."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return np.array([lo])
    raw = (hi - lo) / max(target, 1)
    mag = 10.0 ** math.floor(math.log10(raw))
    step = next((m * mag for m in steps + (10.0,) if m * mag >= raw * (1 - 1e-9)), 10 * mag)
    first = math.ceil(lo / step - 1e-9) * step
    return np.arange(first, hi + step * 1e-6, step)


def sample(style: LineStyle, cells: int, fine: bool) -> str:
    """A short horizontal stretch of a line style, for the legend."""
    canvas = Canvas(cells, 1, fine)
    y = 1 if fine else 0
    canvas.polyline([0.0, canvas.width_dots - 1.0], [y, y], style)
    return canvas.row_text(0)[0]


class Plot:
    """A framed plot: title, y-axis in flight levels, x-axis with ticks, legend and notes below."""

    def __init__(self, width, height, x_range, y_range_ft, title, x_name, x_format, legend, notes, fine,
                 x_ticks=None, unicode=None):
        if width < MIN_WIDTH or height < MIN_HEIGHT:
            raise ValueError(f"a drawing needs at least {MIN_WIDTH}x{MIN_HEIGHT} characters, got {width}x{height}")
        self.width, self.height, self.fine = width, height, fine
        self.unicode = fine if unicode is None else unicode  # box-drawing frame (else ASCII)
        self.title, self.x_name, self.x_format = title, x_name, x_format
        self.legend_lines = self._pack(legend, width)
        # Notes wrap rather than clip: a cut-off note could hide the limit or "above MTOW".
        self.notes = [line for n in notes for line in (textwrap.wrap(n, width, subsequent_indent="  ") or [""])]
        ph = height - 3 - len(self.legend_lines) - len(self.notes)
        while ph < 5 and self.notes:  # keep the plot readable: drop notes first, then legend lines
            self.notes.pop()
            ph += 1
        while ph < 5 and len(self.legend_lines) > 1:
            self.legend_lines.pop()
            ph += 1
        self.ph = ph
        self.y0, self.y1 = y_range_ft
        ticks = nice_ticks(self.y0 / 100.0, self.y1 / 100.0, max(2, ph // 3), steps=(1.0, 2.0, 5.0))
        self.y_ticks = [t for t in ticks if t >= 0 or self.y0 < 0]
        labels = [format_flight_level(t * 100.0 + 1e-6) for t in self.y_ticks]
        self.gutter = max(len(s) for s in labels) + 1 if labels else 6
        self.y_labels = labels
        self.pw = width - self.gutter - 1
        self.x0, self.x1 = x_range
        self.canvas = Canvas(self.pw, ph, fine)
        self.x_ticks = x_ticks if x_ticks is not None else nice_ticks(self.x0, self.x1, max(2, self.pw // 12))

    @staticmethod
    def _pack(entries, width):
        """Legend entries ("sample text") packed into as few lines as fit the width."""
        lines, current = [], ""
        for entry in entries:
            entry = entry[:width]
            if current and len(current) + 3 + len(entry) > width:
                lines.append(current)
                current = entry
            else:
                current = f"{current}   {entry}" if current else entry
        if current:
            lines.append(current)
        return lines

    def to_dots(self, x, y_ft):
        """Data (x, altitude ft) -> canvas dot coordinates (floats)."""
        cw, ch = self.canvas.width_dots - 1, self.canvas.height_dots - 1
        x = np.asarray(x, dtype=float)
        y = np.asarray(y_ft, dtype=float)
        with np.errstate(invalid="ignore"):
            return (x - self.x0) / (self.x1 - self.x0) * cw, ch - (y - self.y0) / (self.y1 - self.y0) * ch

    def to_cell(self, x, y_ft):
        dx, dy = self.to_dots([x], [y_ft])
        return int(round(dx[0])) // self.canvas.sx, int(round(dy[0])) // self.canvas.sy

    def line(self, x, y_ft, style: LineStyle) -> None:
        dx, dy = self.to_dots(x, y_ft)
        self.canvas.polyline(dx.tolist(), dy.tolist(), style)

    def tag(self, x, y_ft, style: LineStyle, prefer=(0.3, 0.5, 0.2, 0.7, 0.4, 0.6, 0.1, 0.8, 0.9, 0.05)) -> None:
        """Write the style's tag letter on the line, at the first free spot along it."""
        if not style.tag:
            return
        x, y = np.asarray(x, dtype=float), np.asarray(y_ft, dtype=float)
        ok = np.flatnonzero(np.isfinite(x) & np.isfinite(y))
        if not ok.size:
            return
        for f in prefer:
            i = ok[min(int(f * ok.size), ok.size - 1)]
            c, r = self.to_cell(x[i], y[i])
            if 0 <= c < self.pw and 0 <= r < self.ph and self.canvas.free(c, r):
                self.canvas.put(c, r, style.tag, style.colour)
                return

    def mark(self, x, y_ft, symbol: str, label: str, colour: str = "bold", label_left=False) -> None:
        c, r = self.to_cell(x, y_ft)
        c = min(max(c, 0), self.pw - 1)
        r = min(max(r, 0), self.ph - 1)
        self.canvas.put(c, r, symbol, colour)
        if label:
            start = c - len(label) - 1 if label_left else c + 2
            if start < 0:
                start = c + 2
            if start + len(label) > self.pw:
                start = max(0, c - len(label) - 1)
            self.canvas.put(start, r, label, colour)

    def render(self) -> Drawing:
        w = self.width
        lines, spans = [self.title[:w].ljust(w)], [[(0, min(len(self.title), w), "bold")]]
        tick_rows = {}
        for t, label in zip(self.y_ticks, self.y_labels):
            _, r = self.to_cell(self.x0, t * 100.0)
            if 0 <= r < self.ph:
                tick_rows[r] = label
        v_axis, v_tick, h_axis, corner, x_tick = ("│", "┤", "─", "└", "┬") if self.unicode else ("|", "+", "-", "+", "+")
        for r in range(self.ph):
            body, styles = self.canvas.row_text(r)
            label = tick_rows.get(r)
            prefix = (label.rjust(self.gutter - 1) + v_tick) if label else (" " * (self.gutter - 1) + v_axis)
            line = (prefix + body + " ")[:w].ljust(w)
            lines.append(line)
            row_spans, start = [], None
            for k, st in enumerate(styles + [""]):
                if start is not None and (k == len(styles) or st != styles[start]):
                    row_spans.append((self.gutter + start, self.gutter + k, styles[start]))
                    start = None
                if start is None and k < len(styles) and st:
                    start = k
            spans.append(row_spans)
        axis = list(" " * (self.gutter - 1) + corner + h_axis * self.pw + " ")
        labels = [" "] * w
        for t in self.x_ticks:
            c, _ = self.to_cell(t, self.y0)
            if not 0 <= c < self.pw:
                continue
            col = self.gutter + c
            axis[col] = x_tick
            text = self.x_format(t)
            start = max(0, min(col - len(text) // 2, w - len(text)))
            if all(ch == " " for ch in labels[max(0, start - 1):start + len(text) + 1]):
                labels[start:start + len(text)] = list(text)
        name = f" {self.x_name}"
        cut = w - len(name)
        while cut > 0 and labels[cut - 1] != " ":  # drop a tick label the axis name would cut
            cut -= 1
        labels[cut:] = [" "] * (w - cut)
        labels[w - len(name):] = list(name)
        lines.append("".join(axis)[:w].ljust(w))
        lines.append("".join(labels)[:w].ljust(w))
        spans += [[], []]
        for text in self.legend_lines + self.notes:
            lines.append(text[:w].ljust(w))
            spans.append([])
        return Drawing(lines, spans)
