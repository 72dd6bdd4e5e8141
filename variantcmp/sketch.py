"""Character drawings of speed-altitude envelopes and maximum-altitude sweeps (presentation).

One renderer for the command line and the terminal app: a :class:`Drawing` is a list of lines of
exactly ``width`` characters (``str(drawing)``) with optional colour spans (``drawing.text()``, a
rich Text that Textual shows as is). Colour is only a second cue: every line has its own dash
pattern (and, in the ASCII fallback, its own glyph) and a letter tag on the curve, explained in the
legend, so the picture reads on a monochrome or dumb terminal. Fine mode draws with braille cells
(U+2800 block, 2 x 4 dots per character); ``ascii=True`` uses one printable ASCII character per cell.

Nothing here computes physics: the numbers come from :mod:`variantcmp.envelope`.
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass, field

import numpy as np

from .units import format_flight_level, format_isa_dev

BRAILLE_BASE = 0x2800
# Braille dot bits by [row 0..3][column 0..1] (Unicode braille patterns, dots 1-8).
_BRAILLE_BITS = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))
MIN_WIDTH, MIN_HEIGHT = 40, 12
SPEED_AXES = {"mach": ("_mach", "Mach"), "tas": ("_tas_kt", "TAS kt"), "cas": ("_cas_kt", "CAS kt")}


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

#: Single-envelope line styles, by boundary (both buffet branches of a load factor share one).
BOUNDARY_STYLES: dict[str, LineStyle] = {
    "thrust": LineStyle("thrust: min/max speed at the residual climb", SOLID, "*", "T", "red"),
    "stall": LineStyle("stall, CL max at 1 g", DASH_DOT, "#", "S", "magenta"),
    "buffet_margin": LineStyle("buffet onset at {g:g} g", DASHED, "%", "B", "yellow"),
    "buffet_1g": LineStyle("buffet onset at 1.0 g", DOTTED, ":", "b", "dark_orange"),
    "mmo": LineStyle("MMO", LONG_DASH, "|", "M", "cyan"),
    "vmo": LineStyle("VMO {vmo:.0f} kt CAS", DASH_DOT_DOT, "/", "V", "blue"),
    "certified": LineStyle("certified ceiling", SPARSE, "=", "C", "green"),
    "cabin": LineStyle("cabin pressure limit", SHORT_GAP, "~", "P", "bright_green"),
    "marked": LineStyle("M{mach:.2f} line", THIRDS, ".", "", "white"),
}
_BOUNDARY_KIND = {"stall_1g": "stall", "buffet_low_1g": "buffet_1g", "buffet_high_1g": "buffet_1g",
                  "buffet_low_margin": "buffet_margin", "buffet_high_margin": "buffet_margin",
                  "thrust_min": "thrust", "thrust_max": "thrust", "vmo": "vmo", "mmo": "mmo"}
#: Overlaid cases and sweep series: one style each, tagged by number.
SERIES_STYLES = (
    LineStyle("", SOLID, "o", "1", "cyan"), LineStyle("", DASHED, "+", "2", "yellow"),
    LineStyle("", DOTTED, "~", "3", "magenta"), LineStyle("", DASH_DOT, "#", "4", "green"),
    LineStyle("", LONG_DASH, "%", "5", "red"), LineStyle("", SPARSE, ":", "6", "blue"),
)
MAX_SWEEP_SERIES = len(SERIES_STYLES)
#: Binding limit letters along sweep curves.
LIMIT_LETTERS = {"thrust": "T", "buffet": "B", "stall": "S", "certified": "C", "cabin": "P", "none": "N"}
TOP_MARK, TOP_MARK_ASCII = "▲", "^"
MARKED_MARK, MARKED_MARK_ASCII = "◆", "@"
NO_ALTITUDE_MARK = "x"
LEGEND_SAMPLE_CELLS = 5


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
                 x_ticks=None):
        if width < MIN_WIDTH or height < MIN_HEIGHT:
            raise ValueError(f"a drawing needs at least {MIN_WIDTH}x{MIN_HEIGHT} characters, got {width}x{height}")
        self.width, self.height, self.fine = width, height, fine
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
        v_axis, v_tick, h_axis, corner, x_tick = ("│", "┤", "─", "└", "┬") if self.fine else ("|", "+", "-", "+", "+")
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


def _legend_entry(style: LineStyle, label: str, fine: bool) -> str:
    tag = f"{style.tag} " if style.tag else ""
    return f"{sample(style, LEGEND_SAMPLE_CELLS, fine)} {tag}{label}"


def _range(values, pad=0.03):
    finite = np.concatenate([np.asarray(v, dtype=float).ravel() for v in values]) if values else np.empty(0)
    finite = finite[np.isfinite(finite)]
    if not finite.size:
        return 0.0, 1.0
    lo, hi = float(finite.min()), float(finite.max())
    span = hi - lo or max(abs(hi), 1.0) * 0.1
    return lo - pad * span, hi + pad * span


def _speed_format(speed):
    return (lambda v: f"{v:.2f}") if speed == "mach" else (lambda v: f"{v:.0f}")


def _case_title(row) -> str:
    return (f"{row['variant']} / {row['engine']}  {row['weight_kg'] / 1000:.1f} t  {format_isa_dev(row['isa_dev_c'])}"
            f"  {row['climb_fpm']:g} ft/min")


def _top_text(row, speed_fmt, speed_col) -> str:
    if row["top_ft"] is None:
        return "no feasible band"
    value = row["top" + speed_col]
    at = f"M{value:.3f}" if speed_col == "_mach" else f"{value:.0f} kt {speed_col[1:4].upper()}"
    return f"top {format_flight_level(row['top_ft'])} ({math.floor(row['top_ft']):,d} ft) at {at} ({row['top_limit']})"


def _marked_text(row) -> str:
    if row["marked_top_ft"] is None:
        return f"M{row['marked_mach']:.2f}: no altitude"
    return f"M{row['marked_mach']:.2f} max {format_flight_level(row['marked_top_ft'])} ({row['marked_limit']})"


def draw_envelope(env, width: int = 80, height: int = 24, speed: str = "mach", ascii: bool = False) -> Drawing:
    """Draw the envelopes of :func:`variantcmp.envelope.compute_envelopes` (one case in full, or
    up to three overlaid as their feasible bands), ``speed`` on x: "mach", "tas" or "cas"."""
    if speed not in SPEED_AXES:
        raise ValueError(f"speed axis must be one of {', '.join(SPEED_AXES)}")
    suffix, x_name = SPEED_AXES[speed]
    fine = not ascii
    table, summary = env.table, env.summary
    cases = summary.to_dicts()
    fmt = _speed_format(speed)
    top_mark, marked_mark = (TOP_MARK, MARKED_MARK) if fine else (TOP_MARK_ASCII, MARKED_MARK_ASCII)
    y_range = (float(table["altitude_ft"].min()), float(table["altitude_ft"].max()))
    single = len(cases) == 1
    from .envelope import BOUNDARIES  # names only

    per_case = [table.filter(table["case"] == c["case"]) for c in cases]
    if single:
        names = [b for b in BOUNDARIES if per_case[0][b + suffix].drop_nulls().len()]
        x_values = [per_case[0][n + suffix].to_numpy() for n in names] + [per_case[0]["marked" + suffix].to_numpy()]
    else:
        x_values = [t[n + suffix].to_numpy() for t in per_case for n in ("band_low", "band_high", "marked")]
    x_range = _range(x_values)
    # VMO as a Mach runs far right above the VMO/MMO crossover: keep the axis where the band is.
    band_hi = np.nanmax(np.concatenate([t["band_high" + suffix].to_numpy() for t in per_case]
                                       + [t["mmo" + suffix].to_numpy() for t in per_case]))
    if np.isfinite(band_hi):
        x_range = (x_range[0], min(x_range[1], x_range[0] + (band_hi - x_range[0]) * 1.15))
    notes = []
    row0 = cases[0]
    if single:
        title = f"Envelope {_case_title(row0)}  buffet margin {row0['g_margin']:g} g"
        kinds = list(dict.fromkeys(_BOUNDARY_KIND[n] for n in names))
    else:
        title = (f"Envelopes: feasible band of {len(cases)} cases  buffet margin {row0['g_margin']:g} g  "
                 f"{top_mark} top  {marked_mark} highest on the M line")
        kinds = []
    plot_legend = []
    for kind in kinds:
        st = BOUNDARY_STYLES[kind]
        plot_legend.append(_legend_entry(st, st.label.format(g=row0["g_margin"], vmo=row0["vmo_kt"] or 0), fine))
    for kind, key in (("certified", "certified_ft"), ("cabin", "cabin_ft")):
        if single and row0[key] is not None and y_range[0] <= row0[key] <= y_range[1]:
            plot_legend.append(_legend_entry(BOUNDARY_STYLES[kind], BOUNDARY_STYLES[kind].label, fine))
    marked_style = BOUNDARY_STYLES["marked"]
    plot_legend.append(f"{sample(marked_style, LEGEND_SAMPLE_CELLS, fine)} " + marked_style.label.format(mach=row0["marked_mach"])
                       + (" (cruise)" if single else ""))
    if single:
        notes.append(f"{top_mark} {_top_text(row0, fmt, suffix)}   {marked_mark} {_marked_text(row0)}")
        if row0["note"]:
            notes.append(row0["note"])
    else:
        for i, row in enumerate(cases):
            st = SERIES_STYLES[i]
            top = (f"{top_mark} {format_flight_level(row['top_ft'])} M{row['top_mach']:.2f} {row['top_limit']}"
                   if row["top_ft"] is not None else f"{top_mark} no feasible band")
            notes.append(f"{sample(st, 3, fine)} {st.tag} {row['variant']}/{row['engine']} {row['weight_kg'] / 1000:.1f}t "
                         f"{format_isa_dev(row['isa_dev_c'])} {row['climb_fpm']:g}fpm: {top}  {marked_mark} "
                         f"{_marked_text(row)}" + (f"  [{row['note']}]" if row["note"] else ""))
    plot = Plot(width, height, x_range, y_range, title, x_name, fmt, plot_legend, notes, fine)
    alt = [t["altitude_ft"].to_numpy() for t in per_case]
    # Horizontal ceilings and the marked Mach line first, boundaries over them, marks last.
    for i, row in enumerate(cases):
        if single:
            for kind, key in (("certified", "certified_ft"), ("cabin", "cabin_ft")):
                if row[key] is not None and y_range[0] <= row[key] <= y_range[1]:
                    plot.line([plot.x0, plot.x1], [row[key], row[key]], BOUNDARY_STYLES[kind])
        plot.line(per_case[i]["marked" + suffix].to_numpy(), alt[i], marked_style)
    if single:
        for n in names:
            plot.line(per_case[0][n + suffix].to_numpy(), alt[0], BOUNDARY_STYLES[_BOUNDARY_KIND[n]])
        done = set()
        for n in names:
            kind = _BOUNDARY_KIND[n]
            if kind not in done:
                plot.tag(per_case[0][n + suffix].to_numpy(), alt[0], BOUNDARY_STYLES[kind])
                done.add(kind)
        for kind, key in (("certified", "certified_ft"), ("cabin", "cabin_ft")):
            if row0[key] is not None and y_range[0] <= row0[key] <= y_range[1]:
                plot.tag([plot.x0, plot.x0 + 0.02 * (plot.x1 - plot.x0)], [row0[key]] * 2, BOUNDARY_STYLES[kind],
                         prefer=(0.0,))
    else:
        for i in range(len(cases)):
            st = SERIES_STYLES[i]
            for edge in ("band_low", "band_high"):
                plot.line(per_case[i][edge + suffix].to_numpy(), alt[i], st)
            plot.tag(per_case[i]["band_low" + suffix].to_numpy(), alt[i], st)
    for i, row in enumerate(cases):
        tag = "" if single else SERIES_STYLES[i].tag
        if row["marked_top_ft"] is not None:
            x_marked = _marked_speed(per_case[i], suffix, row["marked_top_ft"])
            plot.mark(x_marked, row["marked_top_ft"], marked_mark, "", "bold")
        if row["top_ft"] is not None:
            left = row["marked_top_ft"] is not None and row["top" + suffix] < _marked_speed(per_case[i], suffix,
                                                                                           row["marked_top_ft"])
            plot.mark(row["top" + suffix], row["top_ft"], top_mark,
                      f"{tag}{' ' if tag else ''}{format_flight_level(row['top_ft'])}", "bold", label_left=left)
    return plot.render()


def _marked_speed(case_table, suffix, altitude_ft) -> float:
    """The marked Mach line's speed at an altitude (interpolated in the table's own values)."""
    alt = case_table["altitude_ft"].to_numpy()
    x = case_table["marked" + suffix].to_numpy()
    return float(np.interp(altitude_ft, alt, x))


_SWEEP_AXES = {
    "weight": ("weight t", lambda v: v / 1000.0, lambda v: f"{v:g}"),
    "isa": ("ISA dev °C", lambda v: v, lambda v: f"{v:+g}" if v else "0"),
    "mach": ("Mach", lambda v: v, lambda v: f"{v:.2f}"),
}


def draw_sweep(sw, width: int = 80, height: int = 24, ascii: bool = False) -> Drawing:
    """Draw a :class:`variantcmp.envelope.Sweep`: maximum altitude against the swept quantity, one
    curve per series (at most six drawn), the binding limit written along each curve."""
    fine = not ascii
    frame = sw.frame
    x_name, to_x, fmt = _SWEEP_AXES[sw.over]
    if sw.over == "isa" and ascii:
        x_name = "ISA dev C"
    series = list(dict.fromkeys(frame["series"].to_list()))
    shown, hidden = series[:MAX_SWEEP_SERIES], series[MAX_SWEEP_SERIES:]
    parts = [frame.filter(frame["series"] == name) for name in shown]
    xs = [to_x(p[sw.x_column].to_numpy().astype(float)) for p in parts]
    ys = [p["max_altitude_ft"].to_numpy().astype(float) for p in parts]
    x_range = _range(xs, pad=0.02)
    y_lo, y_hi = _range(ys, pad=0.08)
    y_range = (y_lo, y_hi) if y_hi > y_lo else (0.0, 45_000.0)
    cond = sw.conditions
    what = {"weight": "weight", "isa": "ISA deviation", "mach": "Mach"}[sw.over]
    speed = ("best Mach" if cond.mach == "best" else "cruise Mach" if cond.mach == "cruise" else f"M{cond.mach:.2f}")
    title = f"Max altitude vs {what}" + ("" if sw.over == "mach" else f"  {speed}")
    if sw.over != "weight" and len(cond.weights) == 1:
        title += f"  {cond.weights[0]}"
    if sw.over != "isa" and len(cond.isa_devs_c) == 1:
        title += f"  {format_isa_dev(cond.isa_devs_c[0])}"
    if len(cond.climb_fpm) == 1:
        title += f"  {cond.climb_fpm[0]:g} ft/min"
    title += f"  buffet {cond.g_margin:g} g"
    legend = [f"{sample(SERIES_STYLES[i], LEGEND_SAMPLE_CELLS, fine)} {SERIES_STYLES[i].tag} {name}" for i, name in enumerate(shown)]
    present = {lim for p in parts for lim in p["limit"].drop_nulls().to_list()}
    letters = "  ".join(f"{LIMIT_LETTERS[k]} {k}" for k in LIMIT_LETTERS if k in present)
    notes = [f"limit along the curves: {letters}" + (f"   {NO_ALTITUDE_MARK} no altitude" if any(
        np.isnan(y).any() for y in ys) else "")]
    if hidden:
        notes.append(f"{len(hidden)} more not drawn ({', '.join(hidden)}): narrow with --variant/--engine")
    plot = Plot(width, height, x_range, y_range, title, x_name, fmt, legend, notes, fine)
    for i, (x, y) in enumerate(zip(xs, ys)):
        plot.line(x, y, SERIES_STYLES[i])
    for i, (p, x, y) in enumerate(zip(parts, xs, ys)):
        limits = p["limit"].to_list()
        st = SERIES_STYLES[i]
        # One letter in the middle of each run of points with the same binding limit.
        start = 0
        for k in range(1, len(limits) + 1):
            if k == len(limits) or limits[k] != limits[start]:
                if limits[start] is not None and np.isfinite(y[start]):
                    mid = (start + k - 1) // 2
                    c, r = plot.to_cell(x[mid], y[mid])
                    for dc in (0, 1, -1, 2, -2):
                        if plot.canvas.free(c + dc, r) and 0 <= c + dc < plot.pw:
                            plot.canvas.put(c + dc, r, LIMIT_LETTERS.get(limits[start], "?"), st.colour)
                            break
                start = k
        for k in np.flatnonzero(~np.isfinite(y)):
            c, _ = plot.to_cell(x[k], y_range[0])
            if plot.canvas.free(c, plot.ph - 1):
                plot.canvas.put(c, plot.ph - 1, NO_ALTITUDE_MARK, st.colour)
        finite = np.flatnonzero(np.isfinite(y))
        if finite.size:  # series number at the right end of its curve
            c, r = plot.to_cell(x[finite[-1]], y[finite[-1]])
            for dc in (1, 2, 0, -1):
                if plot.canvas.free(c + dc, r) and 0 <= c + dc < plot.pw:
                    plot.canvas.put(c + dc, r, st.tag, st.colour)
                    break
    return plot.render()


# --- for the terminal app -------------------------------------------------------------------------

def envelope_view(catalogue, rows, width: int, height: int, g_margin: float = 1.3, mach="cruise",
                  speed: str = "mach", ascii: bool = False):
    """Rich Text of the envelope(s) for up to three rows of a ceilings table (dicts)."""
    from .envelope import envelopes_for_rows

    return draw_envelope(envelopes_for_rows(catalogue, rows, g_margin, mach), width, height, speed, ascii).text()


def sweep_view(catalogue, conditions, over: str, width: int, height: int, ascii: bool = False):
    """Rich Text of a sweep over "weight", "isa" or "mach" for the shared conditions."""
    from .envelope import sweep

    return draw_sweep(sweep(catalogue, conditions, over), width, height, ascii).text()
