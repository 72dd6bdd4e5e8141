"""How the planner's table is shown: its columns and cell text (reshaping only, no physics).

The rows are `variantcmp.table.planner_table`'s: the ceilings grid at the conditions, each row with
the heaviest weight for the target on its day and the warmest day for it at its weight. Weights,
days and margins are rounded down like altitudes, so that a cell never promises more than the
export says.
"""

from __future__ import annotations

import math

from variantcmp.units import format_flight_level, format_isa_dev

from .view import LIMIT_GLYPHS, MAKES_IT, NONE, OVER_MTOW_MARK, SHORT_OF_IT, Cell, Column

#: The planner's columns (``kind`` says how its cells are written: :func:`planner_cell`).
PLANNER_COLUMNS: tuple[Column, ...] = (
    Column("variant", "Variant", "variant", "text"),
    Column("engine", "Engine", "engine", "text"),
    Column("makes", "Makes?", "margin_ft", "verdict", high_first=True),
    Column("fl", "Max FL", "max_altitude_ft", "fl", high_first=True),
    Column("heaviest", "Max W t", "max_weight_kg", "t", high_first=True),  # the heaviest weight, as "W t" on compare
    Column("heaviest_pct", "%MTOW", "max_weight_pct_mtow", "pct", high_first=True),
    Column("spare_t", "Spare t", "weight_margin_kg", "spare_t", high_first=True),
    Column("weight_limit", "W limit", "weight_limit", "limit_or_why"),
    Column("warmest", "Warmest", "max_isa_dev_c", "day_or_why", high_first=True),
    Column("spare_c", "Spare °C", "isa_margin_c", "spare_c", high_first=True),
    Column("weight", "W t", "weight_kg", "tonnes"),
    Column("isa", "ISA", "isa_dev_c", "isa"),
    Column("climb", "Climb", "climb_fpm", "fpm"),
    Column("note", "Note", "planner_note", "text"),
)
PLANNER_BY_KEY = {column.key: column for column in PLANNER_COLUMNS}
#: Where a column is empty, the table column that says why, and words for some reasons. (The
#: warmest day's limit is thrust wherever there is one: only thrust depends on the day.)
WHY = {"weight_limit": "weight_reason", "max_isa_dev_c": "isa_reason"}
DAY_WORDS = {"thrust": f"{SHORT_OF_IT} fails -40", "holds_on_warmest_day": f"{LIMIT_GLYPHS['none']} holds +50"}
WHY_WORDS = {"holds_on_warmest_day": f"{LIMIT_GLYPHS['none']} holds to ISA+50",
             "empty_weight": f"{SHORT_OF_IT} below empty weight", "thrust_table_top": f"{SHORT_OF_IT} above thrust data",
             "thrust_table_floor": f"{SHORT_OF_IT} below thrust data", "thrust_data": f"{SHORT_OF_IT} no thrust data", "propeller_data": f"{SHORT_OF_IT} no propeller data",
             "buffet_data": f"{SHORT_OF_IT} no buffet data"}
#: Shown only when the conditions give several of them.
SEVERAL = {"weight": "weights", "isa": "isa_devs_c", "climb": "climb_fpm"}
DEFAULT_SORT = "spare_t"


def visible_planner_columns(conditions) -> list[Column]:
    """The columns for these conditions: weight, ISA and climb only where there are several."""
    return [c for c in PLANNER_COLUMNS if c.key not in SEVERAL or len(getattr(conditions, SEVERAL[c.key])) > 1]


def _down(value: float, step: float) -> float:
    """Rounded down to ``step`` after the export's rounding (two decimals of the step's unit)."""
    return math.floor(round(value, 2) / step + 1e-9) * step


def planner_cell(column: Column, row: dict) -> Cell:
    value = row.get(column.source)
    kind = column.kind
    if kind == "verdict":
        if value is None or (isinstance(value, float) and math.isnan(value)):
            return Cell(f"{SHORT_OF_IT} no altitude")
        return Cell(f"{MAKES_IT} yes" if row.get("reaches_target") else f"{SHORT_OF_IT} no")
    if kind == "text":
        return Cell("" if value is None else str(value))
    if kind in ("limit_or_why", "day_or_why"):  # the value, else why there is none (the table's reason)
        if value is None or (isinstance(value, float) and math.isnan(value)):
            why = row.get(WHY[column.source])
            words = DAY_WORDS.get(why) if kind == "day_or_why" else None
            words = words or WHY_WORDS.get(why) or (None if why is None else f"{SHORT_OF_IT} {why.replace('_', ' ')}")
            return Cell(words or NONE, right=kind == "day_or_why")
        kind = "limit" if kind == "limit_or_why" else "day"
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return Cell(NONE, right=kind != "limit")
    if kind == "fl":
        return Cell(format_flight_level(value), right=True)
    if kind == "t":
        return Cell(f"{_down(value, 100.0) / 1000.0:,.1f}", right=True)
    if kind == "pct":
        return Cell(f"{math.floor(round(value, 2)):d}" + (OVER_MTOW_MARK if value > 100.0 + 1e-9 else ""), right=True)
    if kind == "spare_t":
        return Cell(f"{_down(value, 100.0) / 1000.0:+,.1f}", right=True)
    if kind == "day":
        tenths = _down(value, 0.1)
        return Cell("ISA" if abs(tenths) < 0.05 else f"ISA{tenths:+.1f}", right=True)
    if kind == "spare_c":
        return Cell(f"{_down(value, 0.1):+.1f}", right=True)
    if kind == "limit":
        return Cell(f"{LIMIT_GLYPHS.get(value, '?')} {value}")
    if kind == "tonnes":
        return Cell(f"{value / 1000.0:.1f}", right=True)
    if kind == "isa":
        return Cell(format_isa_dev(value).removeprefix("ISA") or "0", right=True)
    if kind == "fpm":
        return Cell(f"{value:,.0f}", right=True)
    return Cell(str(value))


def planner_note(row: dict) -> str:
    """The row's notes in one text: the ceilings' note, then the two answers' own, labelled."""
    parts = [row.get("note") or ""]
    for label, key in (("heaviest", "weight_note"), ("warmest", "isa_note")):
        if row.get(key):
            parts.append(f"{label}: {row[key]}")
    return "; ".join(p for p in parts if p)
