"""``variantcmp heaviest``: the heaviest weight at which each target level is within every limit."""

from __future__ import annotations

import math

from variantcmp.units import format_flight_level, format_isa_dev, format_mach

from . import options, output
from .output import Column, TextTable, float_or_none

EPILOG = """\
examples:
  variantcmp heaviest --target FL370 --isa 0,15
  variantcmp heaviest fernholt-regional --target FL350,FL370,FL390 --isa ISA+15 --mach best
  variantcmp heaviest --target 37000ft --variant v88 --climb service,cruise --format csv

targets: flight levels or pressure altitudes, comma separated: FL350,FL370 or 37000ft.
The weight is not capped at MTOW: above it, the level is reached at every weight up to MTOW.
--mach best: the best speed at that weight (the one that allows the most weight).
"""
DROP_FOR_WIDTH = ("stall", "buffet", "thrust", "mach", "pct")
FOOTER = ("Weights in t, rounded down; — = no weight reaches the level (see the note). * above MTOW: the "
          "level is reached at every weight up to MTOW. Thrust, Buffet, Stall: the weight each limit allows "
          "at the Mach shown.")


def add(subparsers) -> None:
    add_level_command(
        subparsers, "heaviest", run,
        help="heaviest weight that reaches each target level, per variant x engine x ISA deviation",
        description="Compute the heaviest weight at which each target level is within every limit (thrust at the "
                    "required residual rate of climb, buffet margin, stall, certified ceiling, cabin pressure, "
                    "VMO and MMO) and the limit that binds there, for every variant x engine option x ISA "
                    "deviation x climb criterion.",
        epilog=EPILOG, target_help="target levels: FL370, FL350,FL370 or 37000ft (required)", weights=False,
        best="the speed that allows the most weight")


def run(args) -> int:
    from variantcmp.table import heaviest_table

    return run_level_command(args, heaviest_table, heaviest_text_table, "heaviest weight for each level",
                             "the one that allows the most weight", FOOTER, DROP_FOR_WIDTH)


def add_level_command(subparsers, name: str, run, help: str, description: str, epilog: str, target_help: str,
                      best: str, weights: bool = True, isa: bool = True) -> None:
    """A command that asks about target levels (``heaviest``, ``hottest``): the catalogue, --target,
    the selection, the conditions and --format."""
    p = options.add_command(subparsers, name, help=help, description=description, epilog=epilog)
    options.add_catalogue_argument(p)
    options.add_targets(p, target_help)
    options.add_selection(p)
    options.add_conditions(p, weights=weights, isa=isa,
                           mach_help=f"fixed Mach, best ({best}) or cruise (each variant's cruise Mach; default)")
    options.add_format(p)
    p.set_defaults(run=run)


def run_level_command(args, table, text_table, title: str, best_words: str, footer: str, drop_for_width,
                      check=None) -> int:
    """Parse (the other options first: the cheapest to fix), load, solve with ``table(catalogue,
    conditions, targets)`` and print: csv/json data, or ``text_table(conditions, frame)`` with the
    caption, ``footer`` and the caution. ``check(args)`` runs after the options parse."""
    conditions, climb_labels = options.conditions_from_args(args)
    if check is not None:
        check(args)
    targets = options.targets_from_args(args)
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    frame = table(catalogue, conditions, targets)
    if args.format in ("csv", "json"):
        output.write_data(frame, args.format)
        return options.EXIT_OK
    output.print_table(text_table(conditions, frame), f"{catalogue.title}: {title}",
                       [level_caption(conditions, climb_labels, targets, best_words), footer], drop_for_width)
    output.print_caution(stderr=False)
    return options.EXIT_OK


def level_caption(conditions, climb_labels, targets, best_words: str) -> str:
    """The conditions under an inverse answer's table: speed, residual climb, buffet margin, targets."""
    if conditions.mach == "best":
        speed = f"best speed ({best_words})"
    elif conditions.mach == "cruise":
        speed = "each variant's cruise Mach"
    else:
        speed = format_mach(conditions.mach)
    climbs = ", ".join(f"{label} ({fpm:g} ft/min)" if not label.endswith("ft/min") else label
                       for fpm, label in zip(conditions.climb_fpm, climb_labels))
    return " | ".join([f"speed: {speed}", f"residual climb: {climbs}", f"buffet margin: {conditions.g_margin:g} g",
                       "targets: " + ", ".join(format_flight_level(t) for t in targets)])


def tonnes(values) -> list[str]:
    """kg -> t with one decimal, rounded down after rounding to the export's 0.1 kg (a heaviest
    weight is never overstated, and reads as its export does); — for none."""
    return ["—" if v is None or not math.isfinite(v) else f"{math.floor(round(v, 1) / 100.0) / 10.0:,.1f}"
            for v in values]


def heaviest_text_table(conditions, frame) -> TextTable:
    """The readable table: every cell formatted once, column by column."""
    get = frame.get_column
    columns = [Column("variant", "Variant", "left"), Column("engine", "Engine", "left"), Column("isa", "ISA")]
    if len(conditions.climb_fpm) > 1:
        columns.append(Column("climb", "Climb\nft/min"))
    columns += [Column("target", "Target\nFL", bold=True), Column("mach", "Mach"),
                Column("weight", "Heaviest\nt", bold=True), Column("pct", "%\nMTOW"),
                Column("limit", "Limit", "left", bold=True),
                Column("thrust", "Thrust\nt"), Column("buffet", "Buffet\nt"), Column("stall", "Stall\nt")]
    over = get("over_mtow").to_list()
    cells = {
        "variant": get("variant").to_list(), "engine": get("engine").to_list(),
        "isa": [format_isa_dev(d) for d in get("isa_dev_c").to_list()],
        "climb": [f"{c:g}" for c in get("climb_fpm").to_list()],
        "target": [format_flight_level(t) for t in get("target_ft").to_list()],
        "mach": [format_mach(float_or_none(m)) for m in get("mach").to_list()],
        "weight": tonnes(get("max_weight_kg").to_list()),
        "pct": ["—" if p is None else f"{math.floor(p):d}" + ("*" if o else "")
                for p, o in zip(get("max_weight_pct_mtow").to_list(), over)],
        "limit": [lim or "—" for lim in get("limit").to_list()],
        "thrust": tonnes(get("thrust_weight_kg").to_list()),
        "buffet": tonnes(get("buffet_weight_kg").to_list()),
        "stall": tonnes(get("stall_weight_kg").to_list()),
    }
    return output.fleet_table(columns, cells, frame, flag_weights=False)
