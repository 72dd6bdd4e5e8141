"""``variantcmp oei``: one engine inoperative: gross and net ceilings, the drift-down, the terrain check."""

from __future__ import annotations

from variantcmp.caution import ENGINE_OUT_CAUTION
from variantcmp.units import (
    CLEARANCE_RANGE_FT, TERRAIN_RANGE_FT, OptionError, format_flight_level, format_isa_dev, format_mach,
    parse_flight_level, parse_height_ft,
)

from . import options, output
from .output import Column, TextTable, float_or_none

EPILOG = """\
examples:
  variantcmp oei --weight 100%mtow --isa=0,20
  variantcmp oei fernholt-regional --variant v88 --weight 90%mtow,mtow --from FL370 --terrain 12500
  variantcmp oei --isa ISA+15 --terrain 3800m --clearance 2000 --format csv

The drift-down starts at the all-engines maximum altitude at --mach and --climb (each variant's
cruise Mach, 300 ft/min by default), or at --from; --terrain is the highest obstacle in ft above
mean sea level (QNH 1013.25 hPa assumed), --clearance the margin the net path must keep above it.
"""

# Columns dropped, in this order, when the table is wider than the terminal.
DROP_FOR_WIDTH = ("net_mach", "level_off", "pct_mtow", "time", "mach")


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "oei",
        help="one engine inoperative: gross and net ceilings, drift-down distance and time, terrain check",
        description="With one engine out and maximum continuous thrust on the others: the gross ceiling (where the "
                    "best climb gradient reaches zero), the net ceiling (where it equals the net flight path's "
                    "decrement), the still-air distance and time of the drift-down from the start altitude at the "
                    "speed of best gradient, and whether the net path clears an obstacle.",
        epilog=EPILOG)
    options.add_catalogue_argument(p)
    options.add_selection(p)
    options.add_conditions(p, mach_help="speed of the all-engines maximum altitude the drift-down starts from: "
                                        "cruise (each variant's cruise Mach; default), best or a Mach")
    p.add_argument("--from", dest="start", action=options.Once, metavar="FL",
                   help="start the drift-down here (FL370, 37000ft) instead of the all-engines maximum altitude")
    p.add_argument("--terrain", action=options.Once, metavar="FT",
                   help="highest obstacle under the route, ft above mean sea level (12500, 3800m): adds the terrain columns")
    p.add_argument("--clearance", action=options.Once, metavar="FT",
                   help="margin the net path must keep above the obstacle (default: 2,000 ft, from memory of en-route practice)")
    options.add_format(p)
    p.set_defaults(run=run)


def engine_out_options(args):
    """--from, --terrain and --clearance as :class:`variantcmp.table.engine_out.EngineOutOptions`."""
    from variantcmp.table.engine_out import DEFAULT_CLEARANCE_FT, EngineOutOptions

    start = parse_flight_level(args.start, "--from") if args.start is not None else None
    terrain = parse_height_ft(args.terrain, "--terrain", TERRAIN_RANGE_FT) if args.terrain is not None else None
    clearance = (parse_height_ft(args.clearance, "--clearance", CLEARANCE_RANGE_FT) if args.clearance is not None
                 else DEFAULT_CLEARANCE_FT)
    if args.clearance is not None and terrain is None:
        raise OptionError("--clearance: give --terrain too (the clearance is kept above that obstacle)")
    return EngineOutOptions(start, terrain, clearance)


def run(args) -> int:
    from variantcmp.table.engine_out import engine_out_table

    conditions, climb_labels = options.conditions_from_args(args)  # bad options first: cheapest to fix
    if len(conditions.climb_fpm) > 1:
        raise OptionError("--climb: the drift-down starts from one all-engines maximum altitude: give one criterion")
    oei_options = engine_out_options(args)
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    frame = engine_out_table(catalogue, conditions, oei_options)
    if args.format in ("csv", "json"):
        output.write_data(frame, args.format)
    else:
        print_engine_out(catalogue, conditions, climb_labels, oei_options, frame)
    return options.EXIT_OK


def _levels(values) -> list[str]:
    return [format_flight_level(float_or_none(v)) for v in values]


def _numbers(values, fmt: str) -> list[str]:
    return ["—" if float_or_none(v) is None else format(v, fmt) for v in values]


def engine_out_text_table(frame) -> TextTable:
    """The readable engine-out table: every cell formatted once, column by column."""
    get = frame.get_column
    columns = [Column("variant", "Variant", "left"), Column("engine", "Engine", "left"),
               Column("weight", "Weight\nkg"), Column("pct_mtow", "%\nMTOW"), Column("isa", "ISA"),
               Column("gross", "Gross\nFL", bold=True), Column("mach", "Mach"), Column("net", "Net\nFL", bold=True),
               Column("net_mach", "Net\nMach"), Column("limit", "Limit\nat net", "left"),
               Column("start", "Start\nFL"), Column("distance", "Drift\nnm", bold=True), Column("time", "Drift\nmin"),
               Column("level_off", "Level\noff FL")]
    cells = {
        "variant": get("variant").to_list(), "engine": get("engine").to_list(),
        "weight": _numbers(get("weight_kg").to_list(), ",.0f"),
        "pct_mtow": _numbers(get("weight_pct_mtow").to_list(), ".0f"),
        "isa": [format_isa_dev(d) for d in get("isa_dev_c").to_list()],
        "gross": _levels(get("gross_ceiling_ft").to_list()),
        "mach": [format_mach(float_or_none(m)) for m in get("mach").to_list()],
        "net": _levels(get("net_ceiling_ft").to_list()),
        "net_mach": [format_mach(float_or_none(m)) for m in get("net_mach").to_list()],
        "limit": [lim or "—" for lim in get("limit").to_list()],
        "start": _levels(get("start_altitude_ft").to_list()),
        "distance": _numbers(get("driftdown_distance_nm").to_list(), ",.0f"),
        "time": _numbers(get("driftdown_time_min").to_list(), ".0f"),
        "level_off": _levels(get("level_off_ft").to_list()),
    }
    if "net_clears" in frame.columns:
        columns += [Column("clears", "Net\nclears", "left", bold=True), Column("margin", "Above\nobst. ft"),
                    Column("crossing", "Below\nat nm")]
        cells["clears"] = ["—" if c is None else ("yes" if c else "NO") for c in get("net_clears").to_list()]
        cells["margin"] = [("—" if float_or_none(m) is None else f"{m:+,.0f}") for m in get("net_clearance_ft").to_list()]
        cells["crossing"] = _numbers(get("net_crossing_nm").to_list(), ",.0f")
    notes = [n or "" for n in get("note").to_list()]
    if any(notes):
        columns.append(Column("note", "Note", "left", wraps=True))
        cells["note"] = notes
    variants = cells["variant"]
    flagged = [bool(o) or bool(b) for o, b in zip(get("over_mtow").to_list(), get("below_empty_weight").to_list())]
    if "net_clears" in frame.columns:
        styles = ["red" if c is False else ("yellow" if f else None) for c, f in zip(get("net_clears").to_list(), flagged)]
    else:
        styles = ["yellow" if f else None for f in flagged]
    return TextTable(columns, cells, styles, [i + 1 == len(variants) or variants[i + 1] != v for i, v in enumerate(variants)])


def caption(conditions, climb_labels, oei_options) -> list[str]:
    from variantcmp.solver.driftdown import LEVEL_OFF_MARGIN_FT

    if oei_options.start_ft is None:
        speed = ("best Mach" if conditions.mach == "best" else "each variant's cruise Mach" if conditions.mach == "cruise"
                 else format_mach(conditions.mach))
        label, fpm = climb_labels[0], conditions.climb_fpm[0]
        climb = label if label.endswith("ft/min") else f"{label} ({fpm:g} ft/min)"
        start = f"start: all-engines maximum altitude at {speed}, climb {climb}"
    else:
        start = f"start: {format_flight_level(oei_options.start_ft)}"
    lines = [
        f"one engine out, maximum continuous thrust on the others | {start} | buffet margin {conditions.g_margin:g} g",
        "Gross: best gradient zero; net: best gradient = the net decrement (1.1 % twins, 1.4 % three, 1.6 % four "
        "engines unless the catalogue says). Drift: still-air distance and time at the speed of best gradient to "
        f"level-off, {LEVEL_OFF_MARGIN_FT:g} ft above the gross ceiling. Pressure altitudes, rounded down; — = no value "
        "(see the note).",
    ]
    if oei_options.terrain_ft is not None:
        lines.append(f"Terrain {oei_options.terrain_ft:,.0f} ft above mean sea level, clearance "
                     f"{oei_options.clearance_ft:,.0f} ft: the net path's lowest height on the day (QNH 1013.25) above "
                     "the obstacle; 'below at' is the still-air distance from the failure where the net path passes "
                     "terrain + clearance.")
    lines.append(ENGINE_OUT_CAUTION)
    return lines


def print_engine_out(catalogue, conditions, climb_labels, oei_options, frame) -> None:
    output.print_table(engine_out_text_table(frame), f"{catalogue.title}: one engine inoperative",
                       caption(conditions, climb_labels, oei_options), DROP_FOR_WIDTH)
    output.print_caution(stderr=False)
