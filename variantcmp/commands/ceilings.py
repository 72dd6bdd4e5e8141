"""``variantcmp ceilings``: maximum altitudes of every variant x engine x weight x ISA deviation."""

from __future__ import annotations

import math

from variantcmp.units import format_altitude_ft, format_flight_level, format_isa_dev, format_mach

from . import options, output
from .output import Column, TextTable, float_or_none

EPILOG = """\
examples:
  variantcmp ceilings --weight 100%mtow --isa=0,15
  variantcmp ceilings fernholt-regional --variant v88 --weight 42000,44.5t --isa=-10,0,15
  variantcmp ceilings --weight 90%mtow --isa ISA+20 --mach best --climb service --format csv

weights: kg (a bare number of 1000 or more), t, lb or %mtow, comma separated; "mtow" = 100%mtow.
ISA deviations: degrees C, comma separated: -10,0,15 or ISA+15,ISA-5.
climb: absolute (0 ft/min), service (100), cruise (300) or a rate in ft/min; a comma list gives one row each.
--mach best: the limit columns are each limit's own best over speed, not the values at the
reported Mach (which is the speed of the maximum altitude).
"""

LIMIT_COLUMNS = (
    ("thrust_ceiling_ft", "Thrust"),
    ("buffet_ceiling_ft", "Buffet"),
    ("stall_ceiling_ft", "Stall"),
    ("certified_ceiling_ft", "Certified"),
    ("cabin_ceiling_ft", "Cabin"),
)
# Columns dropped, in this order, when the table is wider than the terminal.
DROP_FOR_WIDTH = ("cabin_ceiling_ft", "certified_ceiling_ft", "stall_ceiling_ft", "pct_mtow", "max_ft", "mach")
NOT_AVAILABLE = ("— = not available: the catalogue gives no data for that limit, or see the note. "
                 "Pressure altitudes; flight levels and feet are rounded down.")


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "ceilings",
        help="maximum altitudes of every variant x engine x weight x ISA deviation",
        description="Compute the highest pressure altitude each limit allows (thrust at the required residual "
                    "rate of climb, buffet margin, stall, certified ceiling, cabin pressure), the maximum "
                    "altitude where all hold at once, and the limit that binds.",
        epilog=EPILOG)
    options.add_catalogue_argument(p)
    options.add_selection(p)
    options.add_conditions(p)
    p.add_argument("--target", action=options.Once, metavar="FL",
                   help="flight level to compare with, e.g. FL350: adds margin columns")
    options.add_format(p)
    p.set_defaults(run=run)


def run(args) -> int:
    from variantcmp.table import ceilings_table

    conditions, climb_labels = options.conditions_from_args(args)  # bad options first: cheapest to fix
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    frame = ceilings_table(catalogue, conditions)
    if args.format in ("csv", "json"):
        output.write_data(frame, args.format)
    else:
        print_ceilings(catalogue, conditions, climb_labels, frame)
    return options.EXIT_OK


def caption(conditions, climb_labels: list[str]) -> str:
    if conditions.mach == "best":
        speed = "best Mach (highest altitude; limit columns: each limit's own best over speed)"
    elif conditions.mach == "cruise":
        speed = "each variant's cruise Mach"
    else:
        speed = format_mach(conditions.mach)
    parts = [
        f"speed: {speed}",
        "residual climb: " + ", ".join(
            f"{label} ({fpm:g} ft/min)" if not label.endswith("ft/min") else label
            for fpm, label in zip(conditions.climb_fpm, climb_labels)),
        f"buffet margin: {conditions.g_margin:g} g",
    ]
    if conditions.target_fl_ft is not None:
        parts.append(f"target: {format_flight_level(conditions.target_fl_ft)}")
    return " | ".join(parts)


def _altitudes(values) -> list[str]:
    return [format_altitude_ft(float_or_none(v)) for v in values]


def ceilings_text_table(conditions, frame) -> TextTable:
    """The readable ceilings table: every cell formatted once, column by column."""
    columns = [Column("variant", "Variant", "left"), Column("engine", "Engine", "left"),
               Column("weight", "Weight\nkg"), Column("pct_mtow", "%\nMTOW"), Column("isa", "ISA")]
    if len(conditions.climb_fpm) > 1:
        columns.append(Column("climb", "Climb\nft/min"))
    columns += [Column("mach", "Mach"), Column("max_fl", "Max\nFL", bold=True), Column("max_ft", "Max\nft"),
                Column("limit", "Limit", "left", bold=True)]
    columns += [Column(col, f"{header}\nft") for col, header in LIMIT_COLUMNS]
    get = frame.get_column
    cells = {
        "variant": get("variant").to_list(), "engine": get("engine").to_list(),
        "weight": ["—" if w is None else f"{w:,.0f}" for w in get("weight_kg").to_list()],
        "pct_mtow": ["—" if p is None else f"{p:.0f}" for p in get("weight_pct_mtow").to_list()],
        "isa": [format_isa_dev(d) for d in get("isa_dev_c").to_list()],
        "climb": [f"{c:g}" for c in get("climb_fpm").to_list()],
        "mach": [format_mach(float_or_none(m)) for m in get("mach").to_list()],
        "max_fl": [format_flight_level(float_or_none(a)) for a in get("max_altitude_ft").to_list()],
        "max_ft": _altitudes(get("max_altitude_ft").to_list()),
        "limit": [lim or "—" for lim in get("limit").to_list()],
    }
    for col, _ in LIMIT_COLUMNS:
        cells[col] = _altitudes(get(col).to_list())
    if "margin_ft" in frame.columns:
        columns.append(Column("margin", "Margin\nft"))
        # Rounded down like the altitudes, so a margin is never overstated.
        cells["margin"] = ["—" if m is None or not math.isfinite(m) else f"{math.floor(m):+,d}"
                           for m in get("margin_ft").to_list()]
    return output.fleet_table(columns, cells, frame)


def print_ceilings(catalogue, conditions, climb_labels, frame) -> None:
    table = ceilings_text_table(conditions, frame)
    output.print_table(table, f"{catalogue.title}: maximum altitudes",
                       [caption(conditions, climb_labels), NOT_AVAILABLE], DROP_FOR_WIDTH)
    output.print_caution(stderr=False)
