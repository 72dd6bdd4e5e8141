"""``variantcmp spread``: the spread of each case's maximum altitude under uncertain data (seeded
Monte Carlo): P10, P50, P90 and the chance of reaching a target flight level."""

from __future__ import annotations

from variantcmp.table.perturbations import DEFAULT_VARY as DEFAULT_SDS
from variantcmp.table.perturbations import spread_table
from variantcmp.units import format_flight_level, format_variations, parse_samples, parse_seed, parse_variations

from . import options, output
from .case_rows import case_columns, case_table, flight_levels, note_column, percent
from .ceilings import caption
from .output import Column

#: --vary when not given (the result layer's default, stated under every table).
DEFAULT_VARY = ",".join(f"{name}={100 * sd:g}%" for name, sd in DEFAULT_SDS.items())
DEFAULT_SAMPLES = "1000"
DEFAULT_SEED = "1"

EPILOG = f"""\
examples:
  variantcmp spread --weight 95%mtow --isa ISA+15 --target FL370
  variantcmp spread --vary cd0=3%,thrust=2% --samples 4000 --seed 7 --mach best --format csv

--vary: name=standard deviation, comma separated: cd0, k (induced-drag factor), thrust and weight
relative (with %), isa in degrees C (isa=2). Each sample draws every value once, normal about the
catalogue's value, and applies it to every case alike. Default: {DEFAULT_VARY}.
P10/P50/P90: 10th, 50th and 90th percentiles of the maximum altitude over the samples. Samples with
no maximum altitude count as below every altitude (the no-altitude column gives their share); a
percentile among them has no value.
"""

DROP_FOR_WIDTH = ("pct_mtow", "mach", "p50")


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "spread",
        help="P10/P50/P90 of each maximum altitude under uncertain data (seeded Monte Carlo)",
        description="Seeded Monte Carlo over uncertain data: each of CD0, K, thrust and weight (and the ISA "
                    "deviation) drawn from a normal distribution about the catalogue's value, the whole grid "
                    "solved for every sample at once; per case the 10th, 50th and 90th percentiles of the "
                    "maximum altitude and, with --target, the chance of reaching it. The same seed gives the "
                    "same numbers.",
        epilog=EPILOG)
    options.add_catalogue_argument(p)
    options.add_selection(p)
    options.add_conditions(p)
    p.add_argument("--vary", action=options.Once, default=DEFAULT_VARY, metavar="LIST",
                   help=f"standard deviations, e.g. {DEFAULT_VARY},isa=2 (default: {DEFAULT_VARY})".replace("%", "%%"))
    p.add_argument("--samples", action=options.Once, default=DEFAULT_SAMPLES, metavar="N",
                   help=f"Monte Carlo samples per case (default {DEFAULT_SAMPLES})")
    p.add_argument("--seed", action=options.Once, default=DEFAULT_SEED, metavar="S",
                   help=f"random seed (default {DEFAULT_SEED}; the same seed gives the same numbers)")
    p.add_argument("--target", action=options.Once, metavar="FL",
                   help="flight level: adds the chance of reaching it (p_reach_target)")
    options.add_format(p)
    p.set_defaults(run=run)


def run(args) -> int:
    conditions, climb_labels = options.conditions_from_args(args)
    vary = parse_variations(args.vary, "--vary")
    samples, seed = parse_samples(args.samples, "--samples"), parse_seed(args.seed, "--seed")
    catalogue = options.load(args.catalogue)
    conditions = options.selected(catalogue, conditions)
    frame = spread_table(catalogue, conditions, vary, samples, seed, conditions.target_fl_ft)
    if args.format in ("csv", "json"):
        output.write_data(frame, args.format)
        return options.EXIT_OK
    columns, cells = case_columns(conditions, frame)
    columns += [Column("p10", "P10\nFL", bold=True), Column("p50", "P50\nFL"), Column("p90", "P90\nFL", bold=True),
                Column("width", "P90-P10\nft"), Column("none", "No alt.\n%")]
    cells["p10"], cells["p50"], cells["p90"] = (flight_levels(frame[c].to_list()) for c in ("p10_ft", "p50_ft", "p90_ft"))
    cells["width"] = ["—" if a is None or b is None else f"{b - a:,.0f}"
                      for a, b in zip(frame["p10_ft"].to_list(), frame["p90_ft"].to_list())]
    cells["none"] = [percent(v) for v in frame["no_altitude_pct"].to_list()]
    if conditions.target_fl_ft is not None:
        columns.append(Column("chance", f"Reaches\n{format_flight_level(conditions.target_fl_ft)} %", bold=True))
        cells["chance"] = [percent(None if p is None else 100.0 * p) for p in frame["p_reach_target"].to_list()]
    note_column(columns, cells, frame["note"].to_list())
    footer = [caption(conditions, climb_labels),
              f"uncertain data (standard deviations): {format_variations(vary)} | {samples:,} samples, seed {seed}",
              "P10 / P90: 10 % / 90 % of samples reach a lower maximum altitude; samples with no maximum altitude "
              "count as below every altitude. — = no value."]
    output.print_table(case_table(frame, columns, cells),
                       f"{catalogue.title}: spread of the maximum altitude under uncertain data", footer, DROP_FOR_WIDTH)
    output.print_caution(stderr=False)
    return options.EXIT_OK

