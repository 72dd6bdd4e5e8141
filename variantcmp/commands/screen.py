"""``variantcmp screen``: every engine option of each variant against a baseline option over the
weight x ISA grid, and a summary per option."""

from __future__ import annotations

from variantcmp.units import format_flight_level, format_isa_dev

from . import options, output
from .case_rows import case_columns, case_table, flight_levels, note_column, percent, signed
from .ceilings import NOT_AVAILABLE, caption
from .heaviest import tonnes
from .output import Column, TextTable

EPILOG = """\
examples:
  variantcmp screen --baseline ossel-86
  variantcmp screen --baseline ossel-78 --variant v88 --weight 85%mtow,95%mtow --isa=0,10,20 --mach best
  variantcmp screen --baseline ossel-86 --format csv > screening.csv
  variantcmp screen --baseline ossel-86 --target FL370 --mach best

Without --weight (or with one weight) the grid's weights are 80-100 %MTOW in steps of 5; without
--isa (or with one deviation) its days are ISA to ISA+30 in steps of 5.
delta_ft = the option's maximum altitude - the baseline's, at the same variant, weight, ISA
deviation and climb. An option gains or loses where the difference is 1 ft or more (or where only
one of the two has a maximum altitude); else it ties.
--target FL: also the heaviest weight that reaches the level on each day, the option's and the
baseline's (as `variantcmp heaviest` gives it), and target_weight_delta_kg = option - baseline.
"""

DROP_FOR_WIDTH = ("pct_mtow", "mach", "base_limit", "base_weight")
LIMIT_CHANGED = "≠"


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "screen",
        help="every engine option against a baseline option over the weight x ISA grid",
        description="For every variant offering the baseline engine option, every other option against the "
                    "baseline over the weight x ISA deviation grid: the difference in maximum altitude, both "
                    "binding limits and where the limit flips (more thrust buys nothing once buffet binds), "
                    "with a summary per option.",
        epilog=EPILOG)
    options.add_catalogue_argument(p)
    p.add_argument("--baseline", action=options.Once, required=True, metavar="ENGINE",
                   help="the engine option the others are compared with (an [[engine]] id)")
    p.add_argument("--variant", action="append", metavar="ID",
                   help="variant id to include (repeat or comma list; default: every variant offering the baseline)")
    p.add_argument("--weight", action="append", metavar="LIST",
                   help="weights of the grid: 62000,64.5t,140000lb,90%%mtow (default: 80-100%%mtow in steps of 5)")
    p.add_argument("--isa", action="append", metavar="LIST",
                   help="ISA deviations of the grid in degrees C: -10,0,15 (default: ISA to ISA+30 in steps of 5)")
    options.add_conditions(p, weights=False, isa=False)
    p.add_argument("--target", action=options.Once, metavar="FL",
                   help="flight level: adds the heaviest weight that reaches it, the option's and the baseline's, "
                        "and their difference")
    options.add_format(p)
    p.set_defaults(run=run, engine=None)


def run(args) -> int:
    from variantcmp.table.screening import screened_variants, screening_grid, screening_summary, screening_table

    conditions, climb_labels = options.conditions_from_args(args)
    catalogue = options.load(args.catalogue)
    conditions = screening_grid(options.selected(catalogue, conditions))
    baseline, _, left_out = screened_variants(catalogue, conditions, args.baseline)
    frame = screening_table(catalogue, conditions, baseline)
    if args.format in ("csv", "json"):
        output.write_data(frame, args.format)
        return options.EXIT_OK
    columns, cells = case_columns(conditions, frame)
    columns += [Column("base_fl", "Base\nFL"), Column("base_limit", "Base\nlimit", "left"),
                Column("delta", "Δ\nft", bold=True), Column("changed", "", "left")]
    cells["base_fl"] = flight_levels(frame["baseline_ft"].to_list())
    cells["base_limit"] = [lim or "—" for lim in frame["baseline_limit"].to_list()]
    cells["delta"] = [signed(d) for d in frame["delta_ft"].to_list()]
    cells["changed"] = [LIMIT_CHANGED if c else "" for c in frame["limit_changed"].to_list()]
    if conditions.target_fl_ft is not None:
        level = format_flight_level(conditions.target_fl_ft)
        columns += [Column("weight_for", f"{level}\nmax t"), Column("base_weight", "Base\nmax t"),
                    Column("weight_delta", "ΔW\nkg", bold=True)]
        cells["weight_for"] = _weights(frame, "target_weight_kg", "target_weight_reason")
        cells["base_weight"] = _weights(frame, "baseline_target_weight_kg", "baseline_target_weight_reason")
        cells["weight_delta"] = [signed(d) for d in frame["target_weight_delta_kg"].to_list()]
    note_column(columns, cells, frame["note"].to_list())
    words = (f"Δ = option − baseline ({baseline}) at the same variant, weight, ISA deviation and climb; "
             f"{LIMIT_CHANGED} the binding limit differs from the baseline's.")
    if conditions.target_fl_ft is not None:
        words += (f" max t: the heaviest weight that reaches {level} on the day (rounded down; * above MTOW: "
                  f"the level is reached at every weight up to MTOW; — why not); ΔW = option − baseline.")
    footer = [caption(conditions, climb_labels), words] + ([f"Left out: {'; '.join(left_out)}."] if left_out else [])
    output.print_table(case_table(frame, columns, cells), f"{catalogue.title}: engine options against {baseline}",
                       footer + [NOT_AVAILABLE], DROP_FOR_WIDTH)
    print()
    print_summary(screening_summary(frame), conditions, baseline)
    output.print_caution(stderr=False)
    return options.EXIT_OK


def _weights(frame, column: str, reason: str) -> list[str]:
    """A heaviest weight in t (rounded down; * above MTOW), or "— why" where there is none."""
    pct = frame[column.replace("_kg", "_pct_mtow")].to_list()
    return [(t + ("*" if p is not None and p > 100.0 + 1e-9 else "")) if t != "—" else f"— {why}" if why else t
            for t, p, why in zip(tonnes(frame[column].to_list()), pct, frame[reason].to_list())]


def print_summary(summary, conditions, baseline: str) -> None:
    columns = [Column("variant", "Variant", "left"), Column("engine", "Engine", "left"), Column("points", "Grid\npoints"),
               Column("mean", "Mean Δ\nft", bold=True), Column("worst", "Worst Δ\nft"), Column("best", "Best Δ\nft"),
               Column("gains", "Gains\n%", bold=True), Column("ties", "Ties\n%"), Column("loses", "Loses\n%"),
               Column("flips", "Limit flips (baseline's → option's)", "left", wraps=True)]
    get = summary.get_column
    cells = {
        "variant": get("variant").to_list(), "engine": get("engine").to_list(),
        "points": [f"{p}" for p in get("points").to_list()],
        "mean": [signed(v) for v in get("mean_delta_ft").to_list()],
        "worst": [signed(v) for v in get("worst_delta_ft").to_list()],
        "best": [signed(v) for v in get("best_delta_ft").to_list()],
        "gains": [percent(v) for v in get("gains_pct").to_list()],
        "ties": [percent(v) for v in get("ties_pct").to_list()],
        "loses": [percent(v) for v in get("loses_pct").to_list()],
        "flips": [text or "none" for text in get("limit_flips").to_list()],
    }
    if "mean_target_weight_delta_kg" in summary.columns:
        columns.insert(-1, Column("weight", f"Mean ΔW\n{format_flight_level(conditions.target_fl_ft)} kg", bold=True))
        cells["weight"] = [signed(v) for v in get("mean_target_weight_delta_kg").to_list()]
    days = ", ".join(format_isa_dev(d) for d in conditions.isa_devs_c)
    weights = ", ".join(str(w) for w in conditions.weights)
    output.print_table(TextTable(columns, cells, [None] * summary.height, [False] * summary.height),
                       f"Summary per option against {baseline}",
                       [f"grid: {weights} x {days}",
                        "gains / ties / loses: share of grid points where the option is higher by 1 ft or more / "
                        "within 1 ft / lower (or where only one of the two has a maximum altitude)"])
