"""``variantcmp hottest``: the warmest day at which each target level is within every limit."""

from __future__ import annotations

import math

from variantcmp.units import OptionError, format_flight_level, format_mach

from . import output
from .heaviest import add_level_command, run_level_command
from .output import Column, TextTable, float_or_none

EPILOG = """\
examples:
  variantcmp hottest --target FL350 --weight 100%mtow
  variantcmp hottest fernholt-regional --target FL350,FL370 --weight 44t,48t --mach best
  variantcmp hottest --target 37000ft --weight 90%mtow --climb service --format csv

The warmest ISA deviation is searched from ISA-40 to ISA+50: where the level holds even on the
warmest day, or fails even on the coldest, no number is given and the note says which.
weights: kg (a bare number of 1000 or more), t, lb or %mtow, comma separated.
"""
DROP_FOR_WIDTH = ("oat", "mach", "pct")
FOOTER = ("Warmest day: the highest ISA deviation (deg C, rounded down) at which the level is within every limit; "
          "OAT: the outside air temperature at the level on that day; — = see the note.")


def add(subparsers) -> None:
    add_level_command(
        subparsers, "hottest", run,
        help="warmest day (ISA deviation) that still reaches each target level, per variant x engine x weight",
        description="Compute the warmest ISA deviation (searched from -40 to +50 deg C) at which each target level "
                    "is within every limit (thrust at the required residual rate of climb, buffet margin, stall, "
                    "certified ceiling, cabin pressure, VMO and MMO), for every variant x engine option x weight x "
                    "climb criterion.",
        epilog=EPILOG, target_help="target levels: FL350, FL350,FL370 or 37000ft (required)", isa=False,
        best="the speed that allows the warmest day")


def run(args) -> int:
    from variantcmp.table import hottest_table

    return run_level_command(args, hottest_table, hottest_text_table, "warmest day for each level",
                             "the one that allows the warmest day", FOOTER, DROP_FOR_WIDTH, check=_weights_given)


def _weights_given(args) -> None:
    if not args.weight:
        raise OptionError("--weight: give the weight(s) to ask about, e.g. --weight 100%mtow or --weight 44t,48t")


def warmest(values) -> list[str]:
    """deg C -> "ISA+23.4", rounded down (a warmest day is never overstated); — for none."""
    out = []
    for v in values:
        if v is None or not math.isfinite(v):
            out.append("—")
            continue
        tenths = math.floor(round(v, 2) * 10.0) / 10.0  # after the export's 0.01 deg C, as altitudes
        out.append("ISA" if tenths == 0 else f"ISA{tenths:+.1f}")
    return out


def hottest_text_table(conditions, frame) -> TextTable:
    """The readable table: every cell formatted once, column by column."""
    get = frame.get_column
    columns = [Column("variant", "Variant", "left"), Column("engine", "Engine", "left"),
               Column("weight", "Weight\nt"), Column("pct", "%\nMTOW")]
    if len(conditions.climb_fpm) > 1:
        columns.append(Column("climb", "Climb\nft/min"))
    columns += [Column("target", "Target\nFL", bold=True), Column("mach", "Mach"),
                Column("warmest", "Warmest\nday", bold=True), Column("oat", "OAT\n°C"),
                Column("limit", "Limit", "left", bold=True)]
    cells = {
        "variant": get("variant").to_list(), "engine": get("engine").to_list(),
        "weight": [f"{w / 1000.0:,.1f}" for w in get("weight_kg").to_list()],
        "pct": [f"{p:.0f}" for p in get("weight_pct_mtow").to_list()],
        "climb": [f"{c:g}" for c in get("climb_fpm").to_list()],
        "target": [format_flight_level(t) for t in get("target_ft").to_list()],
        "mach": [format_mach(float_or_none(m)) for m in get("mach").to_list()],
        "warmest": warmest(get("max_isa_dev_c").to_list()),
        "oat": ["—" if t is None else f"{math.floor(round(t, 2) * 10.0) / 10.0:+.1f}" for t in get("level_oat_c").to_list()],
        "limit": [lim or "—" for lim in get("limit").to_list()],
    }
    return output.fleet_table(columns, cells, frame)
