"""The leading columns of the per-case readable tables of ``sensitivity``, ``spread`` and
``screen`` (variant, engine, weight, %MTOW, ISA, climb, Mach, maximum FL, limit), their row styles
and sections, and the number formats those tables share."""

from __future__ import annotations

import math

from variantcmp.units import format_flight_level, format_isa_dev, format_mach

from .output import Column, TextTable, float_or_none


def signed(value) -> str:
    """A signed whole number (ft, kg): "+208", "-104", "0"; "—" for none."""
    value = float_or_none(value)
    if value is None:
        return "—"
    return "0" if abs(value) < 0.5 else f"{value:+,.0f}"


def flight_levels(values) -> list[str]:
    return [format_flight_level(float_or_none(v)) for v in values]


def case_columns(conditions, frame, mach: bool = True, level: bool = True) -> tuple[list[Column], dict[str, list]]:
    """Columns and cells of the case: variant, engine, weight (kg, %MTOW), ISA, climb where several
    are asked, Mach, and the maximum altitude's flight level and limit (``level``)."""
    get = frame.get_column
    columns = [Column("variant", "Variant", "left"), Column("engine", "Engine", "left"),
               Column("weight", "Weight\nkg"), Column("pct_mtow", "%\nMTOW"), Column("isa", "ISA")]
    cells = {
        "variant": get("variant").to_list(), "engine": get("engine").to_list(),
        "weight": ["—" if w is None else f"{w:,.0f}" for w in get("weight_kg").to_list()],
        "pct_mtow": ["—" if p is None else f"{p:.0f}" for p in get("weight_pct_mtow").to_list()],
        "isa": [format_isa_dev(d) for d in get("isa_dev_c").to_list()],
    }
    if len(conditions.climb_fpm) > 1:
        columns.append(Column("climb", "Climb\nft/min"))
        cells["climb"] = [f"{c:g}" for c in get("climb_fpm").to_list()]
    if mach:
        columns.append(Column("mach", "Mach"))
        cells["mach"] = [format_mach(float_or_none(m)) for m in get("mach").to_list()]
    if level:
        columns += [Column("max_fl", "Max\nFL", bold=True), Column("limit", "Limit", "left")]
        cells["max_fl"] = flight_levels(get("max_altitude_ft").to_list())
        cells["limit"] = [lim or "—" for lim in get("limit").to_list()]
    return columns, cells


def note_column(columns: list[Column], cells: dict[str, list], notes) -> None:
    """Add the wrapping note column where some row has a note."""
    notes = [n or "" for n in notes]
    if any(notes):
        columns.append(Column("note", "Note", "left", wraps=True))
        cells["note"] = notes


def case_table(frame, columns: list[Column], cells: dict[str, list]) -> TextTable:
    """The table with rows above MTOW or below the empty weight in yellow and a blank line
    between variants."""
    variants = frame["variant"].to_list()
    flagged = [bool(o) or bool(b) for o, b in zip(frame["over_mtow"].to_list(), frame["below_empty_weight"].to_list())]
    return TextTable(columns, cells, ["yellow" if f else None for f in flagged],
                     [i + 1 == len(variants) or variants[i + 1] != v for i, v in enumerate(variants)])


def percent(value) -> str:
    value = float_or_none(value)
    return "—" if value is None else f"{value:.0f}" if value == math.floor(value) else f"{value:.1f}"
