"""``variantcmp bench``: time the ceiling and cruise solvers (presentation of :mod:`variantcmp.bench` figures)."""

from __future__ import annotations

import argparse
import json
import sys

from . import options, output
from .output import Column, TextTable


INVERSE_ROWS = (("heaviest", "heaviest weight for a level, fixed Mach"), ("hottest", "warmest day for a level, fixed Mach"),
                ("heaviest_best", "heaviest weight for a level, best speed"),
                ("hottest_best", "warmest day for a level, best speed"))


def _positive_int(text: str) -> int:
    try:
        value = int(text.replace("_", "").replace(",", ""))
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number of cases, got {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected at least 1 case, got {text!r}")
    return value


def add(subparsers) -> None:
    p = options.add_command(
        subparsers, "bench", help="time the ceiling and cruise solvers on synthetic fleet grids",
        description="Time the vectorised ceiling solver on seeded synthetic fleets of jets and of turboprops: "
                    "fixed-Mach and best-speed maximum altitudes, a scalar one-case-at-a-time reference on a "
                    "subsample of each (also a correctness check), one-engine-out gross and net ceilings of "
                    "each, the demo fleet's interactive grid, the heaviest weight and the warmest day for a "
                    "level at a fixed Mach and at the best speed, and the cruise solvers (optimum altitude at a "
                    "fixed Mach, MRC and LRC at a level).")
    p.add_argument("--cases", action=options.Once, type=_positive_int, default=1_000_000,
                   help="fixed-Mach cases of each fleet (default 1,000,000)")
    p.add_argument("--best-cases", action=options.Once, type=_positive_int, default=100_000,
                   help="best-speed cases of each fleet, and engine-out cases (default 100,000)")
    p.add_argument("--scalar-cases", action=options.Once, type=_positive_int, default=2_000,
                   help="cases of each fleet solved one by one by the scalar reference (default 2,000)")
    p.add_argument("--cruise-cases", action=options.Once, type=_positive_int, default=None,
                   help="cases of each fleet for the cruise workloads: optimum altitude, MRC and LRC (default: "
                        "--cases, at most 500,000)")
    p.add_argument("--spread-samples", action=options.Once, type=_positive_int, default=1_000,
                   help="Monte Carlo samples per case of the demo fleet's spread (default 1,000)")
    options.add_format(p, ("table", "json"), "table", "table (default) or json (the figures as one object)")
    p.set_defaults(run=run)


def run(args) -> int:
    from variantcmp.bench import run_benchmark

    f = run_benchmark(args.cases, args.scalar_cases, args.best_cases, args.cruise_cases, args.spread_samples)
    if args.format == "json":
        sys.stdout.write(json.dumps(f) + "\n")
        return options.EXIT_OK
    rows = [
        ("jets: fixed Mach (thrust 300 ft/min, buffet 1.3 g, stall, certified)", f["cases"], f["seconds"],
         f["cases_per_s"]),
        ("jets: best speed", f["best_speed_cases"], f["best_speed_seconds"], f["best_speed_cases_per_s"]),
        ("jets: one engine out (gross + net ceilings, best speed)", f["oei_cases"], f["oei_seconds"],
         f["oei_cases_per_s"]),
        ("turboprops: fixed Mach", f["turboprop_cases"], f["turboprop_seconds"], f["turboprop_cases_per_s"]),
        ("turboprops: best speed", f["turboprop_best_cases"], f["turboprop_best_seconds"],
         f["turboprop_best_cases_per_s"]),
        ("jets: scalar reference (floats, math, brentq per case)", f["scalar_cases"],
         f["scalar_cases"] / f["scalar_cases_per_s"], f["scalar_cases_per_s"]),
        ("turboprops: one engine out", f["turboprop_oei_cases"], f["turboprop_oei_seconds"],
         f["turboprop_oei_cases_per_s"]),
        ("turboprops: scalar reference", f["turboprop_scalar_cases"],
         f["turboprop_scalar_cases"] / f["turboprop_scalar_cases_per_s"], f["turboprop_scalar_cases_per_s"]),
        ("demo fleet interactive grid (9 weights x 7 days x 3 climbs)", f["grid_cases"], f["grid_ms"] / 1000,
         f["grid_cases"] / f["grid_ms"] * 1000),
        ("jets: cruise optimum altitude at the cruise Mach", f["cruise_cases"], f["cruise_seconds"],
         f["cruise_cases_per_s"]),
        ("jets: cruise MRC and LRC at a level (FL290-FL390)", f["mrc_cases"], f["mrc_seconds"], f["mrc_cases_per_s"]),
        ("turboprops: cruise optimum altitude", f["cruise_cases"], f["cruise_cases"] / f["turboprop_cruise_cases_per_s"],
         f["turboprop_cruise_cases_per_s"]),
        ("turboprops: cruise MRC and LRC (FL170-FL250)", f["mrc_cases"], f["mrc_cases"] / f["turboprop_mrc_cases_per_s"],
         f["turboprop_mrc_cases_per_s"]),
        (f"demo fleet spread, best speed ({f['spread_demo_cases']:,} cases x {f['spread_demo_samples']:,} samples)",
         f["spread_demo_cases"] * (f["spread_demo_samples"] + 1), f["spread_demo_s"],
         f["spread_demo_cases"] * (f["spread_demo_samples"] + 1) / f["spread_demo_s"]),
    ] + [(words, f[f"{key}_cases"], f[f"{key}_seconds"], f[f"{key}_cases_per_s"]) for key, words in INVERSE_ROWS]
    columns = [Column("work", "Workload", "left"), Column("cases", "Cases"), Column("s", "Seconds"),
               Column("rate", "Cases/s")]
    cells = {"work": [r[0] for r in rows], "cases": [f"{r[1]:,}" for r in rows],
             "s": [f"{r[2]:.3f}" for r in rows], "rate": [f"{r[3]:,.0f}" for r in rows]}
    diff = {k: "n/a" if f[k] is None else f"{f[k]:.4f} ft" for k in ("max_abs_diff_ft", "turboprop_max_abs_diff_ft")}
    output.print_table(TextTable(columns, cells, [None] * len(rows), [False] * len(rows)),
                       "variantcmp bench (synthetic seeded fleets)", [
        f"speed-up of the vectorised solver over the scalar loop: {f['speedup']:,.0f}x per case (jets)",
        f"largest vectorised - scalar difference: jets {diff['max_abs_diff_ft']}, turboprops "
        f"{diff['turboprop_max_abs_diff_ft']}; cases where only one finds an altitude: jets "
        f"{f['scalar_mismatched_cases']}, turboprops {f['turboprop_scalar_mismatched_cases']}",
        "heaviest weight put back into the ceilings solver: largest difference from the level "
        + ("n/a" if f["heaviest_round_trip_max_ft"] is None else f"{f['heaviest_round_trip_max_ft']:.4f} ft"),
        f"demo grid: {f['grid_ms']:.1f} ms; peak memory {f['peak_rss_mb']:,.0f} MB "
        f"(largest worker process {f['peak_rss_worker_mb']:,.0f} MB)"])
    output.print_caution(stderr=False)
    return options.EXIT_OK
