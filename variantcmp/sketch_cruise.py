"""Character drawing of a cruise level: specific range against altitude at a Mach, with the
maximum altitude, the levels of the scheme, the optimum and the chosen level (presentation).

Altitude runs up the side as in the envelope drawings; specific range (NM per 1,000 kg) along the
bottom. Colour is only a second cue: the curve and the maximum-altitude line each have their own
dash pattern, glyph and tag letter, the marks have their own characters, and the legend says what
each is (see :mod:`variantcmp.sketch`). Nothing here computes physics: the numbers come from
:func:`variantcmp.table.cruise.cruise_view`.
"""

from __future__ import annotations

import numpy as np

from .sketch import LEGEND_SAMPLE_CELLS, MARKED_MARK, MARKED_MARK_ASCII, TOP_MARK, TOP_MARK_ASCII
from .sketch_canvas import SOLID, SPARSE, LineStyle, Plot, sample
from .units import format_flight_level, format_isa_dev

CURVE = LineStyle("specific range at M{mach:.2f}", SOLID, "o", "R", "cyan")
MAX_LINE = LineStyle("maximum altitude ({limit})", SPARSE, "=", "X", "red")
LEVEL_MARK, LEVEL_MARK_ASCII = "•", "+"


def _modes(ascii: bool, mono: bool) -> tuple[bool, bool]:
    """(fine, unicode): braille unless ASCII or monochrome; Unicode marks unless ASCII."""
    return not (ascii or mono), not ascii


def draw_cruise_levels(row: dict, altitude_ft, specific_range, levels_ft, width: int = 80, height: int = 24,
                       ascii: bool = False, mono: bool = False):
    """Draw one row of the cruise table (a dict of its columns): its specific range against
    altitude (``altitude_ft``, ``specific_range`` in NM/t, arrays), the maximum altitude, the
    scheme's levels at or below it (``levels_ft``), the optimum and the cruise level."""
    fine, unicode = _modes(ascii, mono)
    alt = np.asarray(altitude_ft, dtype=float)
    sr = np.asarray(specific_range, dtype=float)
    top_mark, level_mark = (TOP_MARK, LEVEL_MARK) if unicode else (TOP_MARK_ASCII, LEVEL_MARK_ASCII)
    chosen_mark = MARKED_MARK if unicode else MARKED_MARK_ASCII
    finite = np.isfinite(sr)
    lo, hi = (float(np.min(sr[finite])), float(np.max(sr[finite]))) if finite.any() else (0.0, 1.0)
    span = (hi - lo) or max(abs(hi), 1.0) * 0.1
    x_range = (lo - 0.06 * span, hi + 0.06 * span)
    y_range = (float(alt[0]), float(alt[-1])) if alt.size > 1 else (0.0, 45_000.0)
    mach, max_ft, opt_ft, level = row.get("mach"), row.get("max_altitude_ft"), row.get("optimum_altitude_ft"), row.get("cruise_fl")
    title = (f"Specific range  {row['variant']} / {row['engine']}  {row['weight_kg'] / 1000:.1f} t  "
             f"{format_isa_dev(row['isa_dev_c'])}  M{mach:.2f}  {row['climb_fpm']:g} ft/min")
    legend = [f"{sample(CURVE, LEGEND_SAMPLE_CELLS, fine)} {CURVE.tag} " + CURVE.label.format(mach=mach)]
    if max_ft is not None:
        legend.append(f"{sample(MAX_LINE, LEGEND_SAMPLE_CELLS, fine)} {MAX_LINE.tag} "
                      + MAX_LINE.label.format(limit=row.get("limit") or "—"))
    legend.append(f"{level_mark} levels of the scheme at or below it")
    notes = [_summary(row, top_mark, chosen_mark)]
    # The row's note, less what the summary line says already (the optimum above the maximum).
    rest = [part for part in (row.get("note") or "").split("; ") if part and not part.startswith("optimum FL")]
    if rest:
        notes.append("; ".join(rest))
    plot = Plot(width, height, x_range, y_range, title, "SR NM/t", lambda v: f"{v:,.0f}", legend, notes, fine,
                unicode=unicode)
    if max_ft is not None and y_range[0] <= max_ft <= y_range[1]:
        plot.line([plot.x0, plot.x1], [max_ft, max_ft], MAX_LINE)
        plot.tag([plot.x0, plot.x1], [max_ft, max_ft], MAX_LINE, prefer=(0.02,))
    plot.line(sr, alt, CURVE)
    plot.tag(sr, alt, CURVE, prefer=(0.15, 0.3, 0.1, 0.45, 0.05))
    for level_ft in levels_ft:
        if y_range[0] <= level_ft <= y_range[1] and (max_ft is None or level_ft <= max_ft + 1e-6):
            x = float(np.interp(level_ft, alt, sr))
            if np.isfinite(x):
                c, r = plot.to_cell(x, level_ft)
                if plot.canvas.free(c, r):
                    plot.canvas.put(c, r, level_mark, "bold")
    if opt_ft is not None and y_range[0] <= opt_ft <= y_range[1]:
        x = float(np.interp(opt_ft, alt, sr))
        plot.mark(x, opt_ft, top_mark, f"opt {format_flight_level(opt_ft)}", "bold", label_left=True)
    if level is not None:
        at = level * 100.0
        x = row.get("specific_range_nm_per_t")
        if x is not None:
            plot.mark(x, at, chosen_mark, f"FL{level:03d}", "bold")
    return plot.render()


def _summary(row: dict, top_mark: str, chosen_mark: str) -> str:
    opt = row.get("optimum_altitude_ft")
    parts = [f"{top_mark} optimum {format_flight_level(opt)}" + (
        f" ({row['optimum_specific_range_nm_per_t']:,.1f} NM/t)" if row.get("optimum_specific_range_nm_per_t") else "")]
    parts.append(f"max {format_flight_level(row.get('max_altitude_ft'))}")
    level = row.get("cruise_fl")
    if level is None:
        parts.append(f"{chosen_mark} no cruise level")
    else:
        loss = row.get("specific_range_loss_pct")
        parts.append(f"{chosen_mark} cruise FL{level:03d}: {row['specific_range_nm_per_t']:,.1f} NM/t, "
                     f"{row['fuel_flow_kg_h']:,.0f} kg/h" + (f", {loss:.1f} % below the optimum" if loss else ""))
    return "   ".join(parts)
