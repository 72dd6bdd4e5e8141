"""``variantcmp cruise``: which level to cruise at (optimum altitude, cruise level of a scheme, fuel
flow, specific range), the best-range speeds at a level, and step climbs."""

from __future__ import annotations

from variantcmp.units import (OptionError, format_flight_level, format_isa_dev, format_mach, parse_flight_level,
                              parse_weight, shown)

from . import options, output
from .ceilings import caption
from .output import Column, TextTable, float_or_none

SCHEME_WORDS = ("1000", "2000", "4000", "2000-east", "2000-west", "4000-east", "4000-west")
SPEED_WORDS = ("mrc", "lrc")

EPILOG = """\
examples:
  variantcmp cruise --weight 90%mtow --isa=0,15
  variantcmp cruise --variant v88 --weight 42t --level FL350,FL370 --mach lrc
  variantcmp cruise --variant v104 --from-weight 51.5t --to-weight 36t --levels 4000 --format csv

level schemes (--levels; common practice, the semicircular cruising levels of one direction):
  1000       every 1,000 ft
  2000       = 2000-east: odd thousands to FL410, then FL450, 490, ... (2000-west: even thousands to
             FL400, then FL430, 470, ...): 1,000 ft vertical separation to FL410
  4000       = 4000-east: odd thousands to FL290, then FL330, 370, ... (4000-west: even thousands to
             FL280, then FL310, 350, ...): 2,000 ft separation above FL290
  east: magnetic tracks 000-179 under the ICAO table; local rules may differ.
--mach mrc|lrc needs --level: MRC is the Mach of maximum specific range at the level, LRC the
faster Mach at 99 % of it (common practice), both within stall, the buffet margin, MMO, VMO and
the speeds at which thrust holds the level.
Step climbs (--from-weight/--to-weight): step up to the next level of the scheme once it is within
the maximum altitude at the climb criterion and gives a better specific range; distance and time
at each level integrate specific range and 1/fuel flow over the weight burnt (dW/dx = -1/SR).
"""
NOT_AVAILABLE = ("— = not available (see the note). Pressure altitudes; flight levels rounded down. Specific range "
                 "in still air, NM per 1,000 kg of fuel.")


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "cruise",
        help="which level to cruise at: optimum altitude, cruise level, fuel flow, specific range, step climbs",
        description="Fuel flow and specific range in steady level flight: the optimum altitude of maximum specific "
                    "range at a Mach, the level of a level scheme at or below the maximum altitude with the best "
                    "specific range; with --level, the best-range speeds (MRC, LRC) there; with --from-weight and "
                    "--to-weight, the step-climb schedule.",
        epilog=EPILOG)
    options.add_catalogue_argument(p)
    options.add_selection(p)
    options.add_conditions(p, mach_help="cruise (each variant's cruise Mach; default), a Mach, or with --level: "
                                        "mrc or lrc")
    p.add_argument("--levels", action=options.Once, type=options.keyword(*SCHEME_WORDS), default="2000",
                   metavar="SCHEME", help="level scheme: 1000, 2000 (default), 4000, or with -east / -west")
    p.add_argument("--level", action=options.Once, metavar="FL",
                   help="flight level(s) for the speeds and fuel there, e.g. FL350 or FL330,FL370")
    p.add_argument("--from-weight", action=options.Once, metavar="W", help="step climbs: the starting weight")
    p.add_argument("--to-weight", action=options.Once, metavar="W", help="step climbs: the final weight")
    options.add_format(p)
    p.set_defaults(run=run)


def _speed(args) -> str | None:
    """mrc/lrc from --mach (then the conditions use the cruise Mach), else None."""
    word = (args.mach or "").strip().lower()
    if word in SPEED_WORDS:
        if not args.level:
            raise OptionError(f"--mach {word}: the best-range speeds are at a level: give --level FL (e.g. FL350)")
        args.mach = "cruise"
        return word
    return None


def _levels(text: str) -> list[float]:
    items = [t for t in text.split(",")]
    if any(not t.strip() for t in items):
        raise OptionError(f"--level: empty item in {shown(text)}: expected flight levels such as FL350,FL370")
    levels = [parse_flight_level(t, "--level") for t in items]
    if any(level <= 0.0 for level in levels):
        raise OptionError(f"--level: cannot use {shown(text)}: expected levels above FL000")
    return list(dict.fromkeys(levels))


def run(args) -> int:
    from variantcmp.table.cruise import cruise_table, fixed_mach_only, speed_table
    from variantcmp.table.step_climb import step_climb_table

    speed = _speed(args)
    stepping = args.from_weight is not None or args.to_weight is not None
    if stepping:
        if args.from_weight is None or args.to_weight is None:
            raise OptionError("--from-weight/--to-weight: give both, e.g. --from-weight 72t --to-weight 55t")
        if args.weight:
            raise OptionError("--weight: not with --from-weight/--to-weight (the step climb runs from one to the other)")
        if args.level:
            raise OptionError("--level: not with --from-weight/--to-weight (the step climb picks its levels)")
        heavy, light = parse_weight(args.from_weight, "--from-weight"), parse_weight(args.to_weight, "--to-weight")
    levels = _levels(args.level) if args.level else None
    conditions, climb_labels = options.conditions_from_args(args)
    fixed_mach_only(conditions)
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    if stepping:
        frame = step_climb_table(catalogue, conditions, heavy, light, args.levels)
        printer = print_steps
    elif levels is not None:
        frame = speed_table(catalogue, conditions, levels, speed)
        printer = print_speeds
    else:
        frame = cruise_table(catalogue, conditions, args.levels)
        printer = print_cruise
    if args.format in ("csv", "json"):
        output.write_data(frame, args.format)
    else:
        printer(catalogue, conditions, climb_labels, frame, args.levels, speed)
    return options.EXIT_OK


# --- readable tables -------------------------------------------------------------------------------

def _numbers(values, fmt: str) -> list[str]:
    return ["—" if float_or_none(v) is None else format(v, fmt) for v in values]


def _common(frame, conditions, with_weight=True):
    get = frame.get_column
    columns = [Column("variant", "Variant", "left"), Column("engine", "Engine", "left")]
    cells = {"variant": get("variant").to_list(), "engine": get("engine").to_list()}
    if with_weight:
        columns += [Column("weight", "Weight\nkg"), Column("pct_mtow", "%\nMTOW")]
        cells["weight"] = _numbers(get("weight_kg").to_list(), ",.0f")
        cells["pct_mtow"] = _numbers(get("weight_pct_mtow").to_list(), ".0f")
    columns.append(Column("isa", "ISA"))
    cells["isa"] = [format_isa_dev(d) for d in get("isa_dev_c").to_list()]
    if len(conditions.climb_fpm) > 1:
        columns.append(Column("climb", "Climb\nft/min"))
        cells["climb"] = [f"{c:g}" for c in get("climb_fpm").to_list()]
    return columns, cells


def _sections(variants: list[str]) -> list[bool]:
    return [i + 1 == len(variants) or variants[i + 1] != v for i, v in enumerate(variants)]


def _with_notes(columns, cells, frame) -> None:
    notes = [n or "" for n in frame.get_column("note").to_list()]
    if any(notes):
        columns.append(Column("note", "Note", "left", wraps=True))
        cells["note"] = notes


def _levels_caption(scheme: str) -> str:
    from variantcmp.solver.cruise import LEVEL_SCHEMES, SCHEME_ALIASES

    name = SCHEME_ALIASES.get(scheme, scheme)
    return f"levels: {name} ({LEVEL_SCHEMES[name][0]}, common practice)"


def print_cruise(catalogue, conditions, climb_labels, frame, scheme, _speed) -> None:
    columns, cells = _common(frame, conditions)
    get = frame.get_column
    columns += [Column("mach", "Mach"), Column("opt", "Opt\nFL"), Column("max", "Max\nFL"),
                Column("limit", "Limit", "left"), Column("level", "Cruise\nFL", bold=True),
                Column("loss", "SR below\nopt %"), Column("flow", "Fuel\nkg/h"), Column("sr", "SR\nNM/t", bold=True)]
    cells["mach"] = [format_mach(float_or_none(m)) for m in get("mach").to_list()]
    cells["opt"] = [format_flight_level(float_or_none(a)) for a in get("optimum_altitude_ft").to_list()]
    cells["max"] = [format_flight_level(float_or_none(a)) for a in get("max_altitude_ft").to_list()]
    cells["limit"] = [lim or "—" for lim in get("limit").to_list()]
    cells["level"] = ["—" if fl is None else f"FL{fl:03d}" for fl in get("cruise_fl").to_list()]
    cells["loss"] = _numbers(get("specific_range_loss_pct").to_list(), ".1f")
    cells["flow"] = _numbers(get("fuel_flow_kg_h").to_list(), ",.0f")
    cells["sr"] = _numbers(get("specific_range_nm_per_t").to_list(), ",.1f")
    _with_notes(columns, cells, frame)
    table = TextTable(columns, cells, [None] * frame.height, _sections(cells["variant"]))
    output.print_table(table, f"{catalogue.title}: cruise levels", [
        caption(conditions, climb_labels) + " | " + _levels_caption(scheme),
        "Opt FL: optimum altitude (maximum specific range at that Mach, unconstrained); Max FL and Limit: the maximum "
        "altitude at the climb criterion, as ceilings gives it; Cruise FL: the scheme's level at or below it with the "
        "best specific range (SR), where fuel flow and SR are given.", NOT_AVAILABLE],
        ("pct_mtow", "loss", "mach", "limit"))
    output.print_caution(stderr=False)


def print_speeds(catalogue, conditions, climb_labels, frame, _scheme, speed) -> None:
    columns, cells = _common(frame, conditions)
    get = frame.get_column
    columns.append(Column("fl", "FL"))
    if speed is None:  # a Mach asked for: shown beside MRC and LRC
        columns.append(Column("mach", "Mach", bold=True))
    columns += [Column("mrc", "MRC", bold=speed == "mrc"), Column("lrc", "LRC", bold=speed == "lrc"),
                Column("flow", "Fuel\nkg/h"), Column("sr", "SR\nNM/t", bold=True), Column("held", "Held\nby", "left"),
                Column("max", "Max FL\nat Mach")]
    cells["fl"] = [f"FL{fl:03d}" for fl in get("flight_level").to_list()]
    for key, col in (("mach", "mach"), ("mrc", "mrc_mach"), ("lrc", "lrc_mach")):
        cells[key] = ["—" if float_or_none(m) is None else f"M{m:.3f}" for m in get(col).to_list()]
    cells["flow"] = _numbers(get("fuel_flow_kg_h").to_list(), ",.0f")
    cells["sr"] = _numbers(get("specific_range_nm_per_t").to_list(), ",.1f")
    cells["held"] = [h or "" for h in get("speed_limit").to_list()]
    cells["max"] = [format_flight_level(float_or_none(a)) for a in get("max_altitude_ft").to_list()]
    _with_notes(columns, cells, frame)
    table = TextTable(columns, cells, [None] * frame.height, _sections(cells["variant"]))
    speed_words = {"mrc": "MRC (maximum specific range)", "lrc": "LRC (the faster Mach at 99 % of the maximum "
                   "specific range, common practice)"}
    what = speed_words.get(speed) or caption(conditions, climb_labels).split(" | ")[0].removeprefix("speed: ")
    output.print_table(table, f"{catalogue.title}: cruise speeds at a level", [
        f"fuel flow and SR at {what} | residual climb for Max FL: "
        + ", ".join(f"{c:g} ft/min" for c in conditions.climb_fpm) + f" | buffet margin: {conditions.g_margin:g} g",
        "MRC and LRC lie within stall, the buffet margin, MMO, VMO, the data's speeds and the speeds at which thrust "
        "holds the level; Held by: what holds the speed where it sits on a bound. Max FL at Mach: the maximum altitude "
        "at that Mach and the climb criterion.", NOT_AVAILABLE], ("pct_mtow", "max", "lrc", "mrc"))
    output.print_caution(stderr=False)


def _hours(minutes) -> str:
    value = float_or_none(minutes)
    if value is None:
        return "—"
    total = int(round(value))
    return f"{total // 60}:{total % 60:02d}"


def print_steps(catalogue, conditions, climb_labels, frame, scheme, _speed) -> None:
    columns, cells = _common(frame, conditions, with_weight=False)
    get = frame.get_column
    columns += [Column("mach", "Mach"), Column("seg", "Step"), Column("fl", "FL", bold=True),
                Column("start", "From\nkg", bold=True), Column("end", "To\nkg"), Column("fuel", "Fuel\nkg"),
                Column("dist", "Dist\nNM"), Column("time", "Time\nh:mm"), Column("sr0", "SR start\nNM/t"),
                Column("sr1", "SR end\nNM/t")]
    cells["mach"] = [format_mach(float_or_none(m)) for m in get("mach").to_list()]
    cells["seg"] = ["—" if s is None else str(s) for s in get("segment").to_list()]
    cells["fl"] = ["—" if fl is None else f"FL{fl:03d}" for fl in get("flight_level").to_list()]
    cells["start"] = _numbers(get("start_weight_kg").to_list(), ",.0f")
    cells["end"] = _numbers(get("end_weight_kg").to_list(), ",.0f")
    cells["fuel"] = _numbers(get("fuel_kg").to_list(), ",.0f")
    cells["dist"] = _numbers(get("distance_nm").to_list(), ",.0f")
    cells["time"] = [_hours(m) for m in get("time_min").to_list()]
    cells["sr0"] = _numbers(get("specific_range_start_nm_per_t").to_list(), ",.1f")
    cells["sr1"] = _numbers(get("specific_range_end_nm_per_t").to_list(), ",.1f")
    _with_notes(columns, cells, frame)
    keys = list(zip(cells["variant"], cells["engine"], cells["isa"], get("climb_fpm").to_list()))
    ends = [i + 1 == len(keys) or keys[i + 1] != k for i, k in enumerate(keys)]
    table = TextTable(columns, cells, [None] * frame.height, ends)
    output.print_table(table, f"{catalogue.title}: step climbs", [
        caption(conditions, climb_labels).split(" | buffet")[0] + " | " + _levels_caption(scheme),
        "Step up once the next level is within the maximum altitude at the climb criterion and gives a better "
        "specific range. Distance (still air) and time at each level: specific range and 1 / fuel flow integrated "
        "over the weight burnt (dW/dx = -1/SR; Gauss-Legendre, 8 nodes).", NOT_AVAILABLE],
        ("sr0", "sr1", "time", "mach"))
    output.print_caution(stderr=False)

