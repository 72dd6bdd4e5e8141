"""Character drawings of speed-altitude envelopes and maximum-altitude sweeps (presentation).

One renderer for the command line and the terminal app: a :class:`Drawing` is a list of lines of
exactly ``width`` characters (``str(drawing)``) with optional colour spans (``drawing.text()``, a
rich Text that Textual shows as is). Colour is only a second cue: every line has its own dash
pattern and its own glyph, and a letter tag on the curve, explained in the legend, so the picture
reads on a monochrome or dumb terminal. Three ways to draw (the canvas is in
:mod:`variantcmp.sketch_canvas`):

- fine (the default): lines in braille dots (U+2800 block, 2 x 4 dots per character), each with
  its dash pattern; box-drawing frame;
- ``mono=True``, for terminals without colour: each line in its own glyph character, one per cell,
  so the series can be told apart without colour (dash patterns in braille look alike); Unicode frame;
- ``ascii=True``, for dumb terminals: glyph lines and a plain ASCII frame and marks.

:func:`terminal_wants_ascii` and :func:`terminal_wants_monochrome` say which a terminal asks for.
Nothing here computes physics: the numbers come from :mod:`variantcmp.envelope`.
"""

from __future__ import annotations

import math
import os
from collections.abc import Mapping

import numpy as np

from .sketch_canvas import (  # noqa: F401  (MIN_WIDTH, MIN_HEIGHT, Drawing: part of this module's interface)
    DASH_DOT, DASH_DOT_DOT, DASHED, DOTTED, LONG_DASH, MIN_HEIGHT, MIN_WIDTH, SHORT_GAP, SOLID, SPARSE, THIRDS,
    Drawing, LineStyle, Plot, sample,
)
from .units import format_flight_level, format_isa_dev

# Characters a fine drawing needs besides ASCII: a braille cell and the frame's box drawing.
_FINE_CHARS = "\u28ff\u2502\u2524\u2500\u2514\u252c\u25b2\u25c6"


def terminal_wants_ascii(environ: Mapping[str, str] | None = None, encoding: str | None = None) -> bool:
    """Whether drawings for this terminal should be plain ASCII.

    True for ``TERM=dumb`` (a terminal that promises no more than printing characters, by the
    terminfo convention), and where ``encoding`` (the output stream's, when given) cannot write
    braille or box-drawing characters (e.g. ``ascii`` or ``latin-1``).
    """
    env = os.environ if environ is None else environ
    if env.get("TERM", "").strip().lower() == "dumb":
        return True
    if encoding:
        try:
            _FINE_CHARS.encode(encoding)
        except (UnicodeEncodeError, LookupError):
            return True
    return False


def terminal_wants_monochrome(environ: Mapping[str, str] | None = None) -> bool:
    """Whether drawings should not rely on colour: ``NO_COLOR`` set and not empty (the no-color.org
    convention), or a dumb terminal. Such drawings give each line its own character (``mono``)."""
    env = os.environ if environ is None else environ
    return bool(env.get("NO_COLOR", "")) or terminal_wants_ascii(env)


def _modes(ascii: bool, mono: bool) -> tuple[bool, bool]:
    """(fine, unicode): braille dots unless ASCII or monochrome; Unicode frame and marks unless ASCII."""
    return not (ascii or mono), not ascii


SPEED_AXES = {"mach": ("_mach", "Mach"), "tas": ("_tas_kt", "TAS kt"), "cas": ("_cas_kt", "CAS kt")}

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


def draw_envelope(env, width: int = 80, height: int = 24, speed: str = "mach", ascii: bool = False,
                  mono: bool = False) -> Drawing:
    """Draw the envelopes of :func:`variantcmp.envelope.compute_envelopes` (one case in full, or
    up to three overlaid as their feasible bands), ``speed`` on x: "mach", "tas" or "cas";
    ``ascii`` and ``mono`` as in the module's docstring."""
    if speed not in SPEED_AXES:
        raise ValueError(f"speed axis must be one of {', '.join(SPEED_AXES)}")
    suffix, x_name = SPEED_AXES[speed]
    fine, unicode = _modes(ascii, mono)
    table, summary = env.table, env.summary
    cases = summary.to_dicts()
    fmt = _speed_format(speed)
    top_mark, marked_mark = (TOP_MARK, MARKED_MARK) if unicode else (TOP_MARK_ASCII, MARKED_MARK_ASCII)
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
        same = _same_as([np.concatenate([t["altitude_ft"].to_numpy(), t["band_low" + suffix].to_numpy(),
                                         t["band_high" + suffix].to_numpy()]) for t in per_case])
        for i, row in enumerate(cases):
            st = SERIES_STYLES[i]
            top = (f"{top_mark} {format_flight_level(row['top_ft'])} M{row['top_mach']:.2f} {row['top_limit']}"
                   if row["top_ft"] is not None else f"{top_mark} no feasible band")
            twin = f" (same band as {SERIES_STYLES[same[i]].tag})" if same[i] is not None else ""
            notes.append(f"{sample(st, 3, fine)} {st.tag} {row['variant']}/{row['engine']} {row['weight_kg'] / 1000:.1f}t "
                         f"{format_isa_dev(row['isa_dev_c'])} {row['climb_fpm']:g}fpm{twin}: {top}  {marked_mark} "
                         f"{_marked_text(row)}" + (f"  [{row['note']}]" if row["note"] else ""))
    plot = Plot(width, height, x_range, y_range, title, x_name, fmt, plot_legend, notes, fine, unicode=unicode)
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


def sweep_series_labels(sw) -> dict[str, str]:
    """Legend label of each series of a sweep, by its ``series`` value: variant/engine, then the
    conditions that tell the series apart (weight in t, ``ISA``/``ISA+15``/``ISA-10``, climb)."""
    cond = sw.conditions
    firsts = sw.frame.unique("series", keep="first", maintain_order=True).to_dicts()
    labels = {}
    for row in firsts:
        parts = [f"{row['variant']}/{row['engine']}"]
        if sw.over != "weight" and len(cond.weights) > 1:
            parts.append(f"{row['weight_kg'] / 1000:.1f} t")
        if sw.over != "isa" and len(cond.isa_devs_c) > 1:
            parts.append(format_isa_dev(row["isa_dev_c"]))
        if len(cond.climb_fpm) > 1:
            parts.append(f"{row['climb_fpm']:g} ft/min")
        labels[row["series"]] = " ".join(parts)
    return labels


def _same_as(curves: list[np.ndarray], tol: float = 1.0) -> list[int | None]:
    """For each curve, the index of an earlier one it would be drawn exactly over (same points,
    gaps in the same places, values within ``tol``), else None."""
    same: list[int | None] = []
    for i, curve in enumerate(curves):
        match = None
        for j in range(i):
            other = curves[j]
            if other.shape == curve.shape and np.array_equal(np.isnan(other), np.isnan(curve)) and np.allclose(
                    np.nan_to_num(other), np.nan_to_num(curve), rtol=0.0, atol=tol):
                match = same[j] if same[j] is not None else j
                break
        same.append(match)
    return same


def draw_sweep(sw, width: int = 80, height: int = 24, ascii: bool = False, mono: bool = False) -> Drawing:
    """Draw a :class:`variantcmp.envelope.Sweep`: maximum altitude against the swept quantity, one
    curve per series (at most six drawn), the binding limit written along each curve; ``ascii`` and
    ``mono`` as in the module's docstring. Curves that coincide are said so in the legend."""
    fine, unicode = _modes(ascii, mono)
    frame = sw.frame
    x_name, to_x, fmt = _SWEEP_AXES[sw.over]
    if sw.over == "isa" and ascii:
        x_name = "ISA dev C"
    labels = sweep_series_labels(sw)
    series = list(labels)
    shown, hidden = series[:MAX_SWEEP_SERIES], [labels[name] for name in series[MAX_SWEEP_SERIES:]]
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
    same = _same_as([np.concatenate([x, y]) for x, y in zip(xs, ys)])
    legend = [f"{sample(SERIES_STYLES[i], LEGEND_SAMPLE_CELLS, fine)} {SERIES_STYLES[i].tag} {labels[name]}"
              + (f" (same curve as {SERIES_STYLES[same[i]].tag})" if same[i] is not None else "")
              for i, name in enumerate(shown)]
    present = {lim for p in parts for lim in p["limit"].drop_nulls().to_list()}
    letters = "  ".join(f"{LIMIT_LETTERS[k]} {k}" for k in LIMIT_LETTERS if k in present)
    notes = [f"limit along the curves: {letters}" + (f"   {NO_ALTITUDE_MARK} no altitude" if any(
        np.isnan(y).any() for y in ys) else "")]
    if hidden:
        notes.append(f"{len(hidden)} more not drawn ({', '.join(hidden)}): narrow with --variant/--engine")
    plot = Plot(width, height, x_range, y_range, title, x_name, fmt, legend, notes, fine, unicode=unicode)
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
