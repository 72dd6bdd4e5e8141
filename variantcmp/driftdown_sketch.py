"""Character drawing of a drift-down profile: pressure altitude against still-air distance, the
gross and the net path, their ceilings, and the obstacle and its clearance when a terrain is
given (presentation: the numbers come from :class:`variantcmp.table.engine_out.DriftProfile`).

Drawn on :class:`variantcmp.sketch_canvas.Plot` as the other sketches are, in the same three ways
(braille dots by default, ``mono`` one character per line, ``ascii`` for dumb terminals): every
line has its own dash pattern, its own character and a letter on it, explained in the legend, so
the drawing reads without colour.
"""

from __future__ import annotations

import numpy as np

from .sketch import LEGEND_SAMPLE_CELLS, MARKED_MARK, MARKED_MARK_ASCII, NO_ALTITUDE_MARK
from .sketch_canvas import DASHED, DOTTED, LONG_DASH, SHORT_GAP, SOLID, SPARSE, LineStyle, Plot, sample
from .units import format_flight_level, format_isa_dev

STYLES = {
    "gross": LineStyle("gross path (best gradient, one engine out)", SOLID, "*", "G", "cyan"),
    "net": LineStyle("net path (gross less the decrement)", DASHED, "+", "N", "yellow"),
    "gross_ceiling": LineStyle("gross ceiling", DOTTED, ":", "g", "cyan"),
    "net_ceiling": LineStyle("net ceiling", SPARSE, ".", "n", "yellow"),
    "terrain": LineStyle("obstacle", LONG_DASH, "#", "T", "red"),
    "required": LineStyle("obstacle + clearance", SHORT_GAP, "=", "C", "magenta"),
}
#: The x axis runs this far past the longest path, so that the level-off mark is not on the frame.
X_PAD = 1.08
#: Where nothing descends (a start at or below the ceilings), the axis spans this many nm.
FLAT_SPAN_NM = 100.0


def _title(row) -> str:
    return (f"Drift-down {row['variant']} / {row['engine']}  {row['weight_kg'] / 1000:.1f} t  "
            f"{format_isa_dev(row['isa_dev_c'])}  one engine out, still air")


def draw_driftdown(profile, width: int = 80, height: int = 24, ascii: bool = False, mono: bool = False,
                   note: bool = True):
    """Draw a :class:`~variantcmp.table.engine_out.DriftProfile` (see the module docstring);
    ``note``: the row's note under the drawing too (the app leaves it to its table)."""
    fine, unicode = not (ascii or mono), not ascii
    row, paths = profile.row, profile.paths
    gross = paths.filter(paths["path"] == "gross")
    net = paths.filter(paths["path"] == "net")
    levels = [v for v in (row["start_altitude_ft"], row["gross_ceiling_ft"], row["net_ceiling_ft"],
                          profile.terrain_pa_ft, profile.required_pa_ft) if v is not None]
    if not levels:
        levels = [0.0, 10_000.0]
    lo, hi = min(levels), max(levels)
    span = max(hi - lo, 2000.0)
    y_range = (lo - 0.08 * span, hi + 0.06 * span)
    longest = max([0.0] + [float(p["distance_nm"].max()) for p in (gross, net) if p.height])
    x_range = (0.0, longest * X_PAD if longest > 0.0 else FLAT_SPAN_NM)
    mark = MARKED_MARK if unicode else MARKED_MARK_ASCII
    legend = [f"{sample(STYLES['gross'], LEGEND_SAMPLE_CELLS, fine)} G gross path",
              f"{sample(STYLES['net'], LEGEND_SAMPLE_CELLS, fine)} N net path",
              f"{sample(STYLES['gross_ceiling'], LEGEND_SAMPLE_CELLS, fine)} g gross ceiling",
              f"{sample(STYLES['net_ceiling'], LEGEND_SAMPLE_CELLS, fine)} n net ceiling"]
    if profile.terrain_pa_ft is not None:
        legend += [f"{sample(STYLES['terrain'], LEGEND_SAMPLE_CELLS, fine)} T obstacle",
                   f"{sample(STYLES['required'], LEGEND_SAMPLE_CELLS, fine)} C obstacle + clearance"]
    notes = [_summary(row, mark)]
    if profile.terrain_pa_ft is not None:
        notes.append(_terrain_note(row))
    if note and row["note"]:
        notes.append(row["note"])
    plot = Plot(width, height, x_range, y_range, _title(row), "distance nm", lambda v: f"{v:.0f}", legend, notes, fine,
                unicode=unicode)
    ends = [plot.x0, plot.x1]
    for key, value in (("gross_ceiling", row["gross_ceiling_ft"]), ("net_ceiling", row["net_ceiling_ft"]),
                       ("terrain", profile.terrain_pa_ft), ("required", profile.required_pa_ft)):
        if value is not None:
            plot.line(ends, [value, value], STYLES[key])
    for key, part in (("net", net), ("gross", gross)):
        if part.height:
            x, y = part["distance_nm"].to_numpy(), part["altitude_ft"].to_numpy()
            if x[-1] < plot.x1:  # levelled off: it flies on at that altitude
                x, y = np.append(x, plot.x1), np.append(y, y[-1])
            plot.line(x, y, STYLES[key])
    for key, part in (("gross", gross), ("net", net)):
        if part.height:
            plot.tag(part["distance_nm"].to_numpy(), part["altitude_ft"].to_numpy(), STYLES[key],
                     prefer=(0.15, 0.3, 0.05, 0.5, 0.7))
    for key, value in (("gross_ceiling", row["gross_ceiling_ft"]), ("net_ceiling", row["net_ceiling_ft"]),
                       ("terrain", profile.terrain_pa_ft), ("required", profile.required_pa_ft)):
        if value is not None:
            plot.tag([plot.x0 + 0.85 * (plot.x1 - plot.x0), plot.x1], [value, value], STYLES[key], prefer=(0.0, 0.5))
    if gross.height and row["driftdown_distance_nm"] is not None:
        plot.mark(row["driftdown_distance_nm"], row["level_off_ft"], mark, format_flight_level(row["level_off_ft"]),
                  label_left=True)
    crossing = row.get("net_crossing_nm")
    if crossing is not None and profile.required_pa_ft is not None:
        plot.mark(crossing, profile.required_pa_ft, NO_ALTITUDE_MARK, "", "bold")
    return plot.render()


def _summary(row, mark: str) -> str:
    start, gross, net = (format_flight_level(row[k]) for k in ("start_altitude_ft", "gross_ceiling_ft",
                                                               "net_ceiling_ft"))
    if row["driftdown_distance_nm"] is None:
        return f"from {start}: no drift-down (see the note) · gross ceiling {gross} · net {net}"
    if row["driftdown_distance_nm"] == 0.0:
        return f"holds {start} with one engine out · gross ceiling {gross} · net {net}"
    return (f"{mark} level-off {format_flight_level(row['level_off_ft'])} after {row['driftdown_distance_nm']:,.0f} nm, "
            f"{row['driftdown_time_min']:.0f} min from {start} (100 ft above the gross ceiling) · net ceiling {net}")


def _terrain_note(row) -> str:
    if row["net_clears"] is None:
        return "terrain: no net path to check"
    margin, needed = row["net_clearance_ft"], row["clearance_ft"]
    if row["net_clears"]:
        return f"net path clears the obstacle by {margin:,.0f} ft ({needed:,.0f} ft needed)"
    where = "from the start" if row["net_crossing_nm"] == 0.0 else f"at {NO_ALTITUDE_MARK} {row['net_crossing_nm']:,.0f} nm"
    lowest = f"{margin:,.0f} ft above" if margin >= 0 else f"{-margin:,.0f} ft below"
    return f"NET PATH DOES NOT CLEAR: below obstacle + {needed:,.0f} ft {where}, lowest {lowest} the obstacle"
