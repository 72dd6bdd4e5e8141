"""``variantcmp bench``: time the ceiling solver (presentation of :mod:`variantcmp.bench` figures)."""

from __future__ import annotations

import argparse
import json
import sys

from . import options, output
from .output import Column, TextTable


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
        subparsers, "bench", help="time the ceiling solver on a synthetic fleet grid",
        description="Time the vectorised ceiling solver on a seeded synthetic fleet: fixed-Mach and best-speed "
                    "maximum altitudes, a scalar one-case-at-a-time reference on a subsample (also a "
                    "correctness check), and the demo fleet's interactive grid.")
    p.add_argument("--cases", action=options.Once, type=_positive_int, default=1_000_000,
                   help="fixed-Mach cases (default 1,000,000)")
    p.add_argument("--best-cases", action=options.Once, type=_positive_int, default=100_000,
                   help="best-speed cases (default 100,000)")
    p.add_argument("--scalar-cases", action=options.Once, type=_positive_int, default=2_000,
                   help="cases solved one by one by the scalar reference (default 2,000)")
    p.add_argument("--spread-samples", action=options.Once, type=_positive_int, default=1_000,
                   help="Monte Carlo samples per case of the demo fleet's spread (default 1,000)")
    options.add_format(p, ("table", "json"), "table", "table (default) or json (the figures as one object)")
    p.set_defaults(run=run)


def run(args) -> int:
    from variantcmp.bench import run_benchmark

    f = run_benchmark(args.cases, args.scalar_cases, args.best_cases, args.spread_samples)
    if args.format == "json":
        sys.stdout.write(json.dumps(f) + "\n")
        return options.EXIT_OK
    rows = [
        ("fixed Mach (thrust 300 ft/min, buffet 1.3 g, stall, certified)", f["cases"], f["seconds"], f["cases_per_s"]),
        ("best speed", f["best_speed_cases"], f["best_speed_seconds"], f["best_speed_cases_per_s"]),
        ("scalar reference (floats, math, brentq per case)", f["scalar_cases"],
         f["scalar_cases"] / f["scalar_cases_per_s"], f["scalar_cases_per_s"]),
        ("demo fleet interactive grid (9 weights x 7 days x 3 climbs)", f["grid_cases"], f["grid_ms"] / 1000,
         f["grid_cases"] / f["grid_ms"] * 1000),
        (f"demo fleet spread, best speed ({f['spread_demo_cases']:,} cases x {f['spread_demo_samples']:,} samples)",
         f["spread_demo_cases"] * (f["spread_demo_samples"] + 1), f["spread_demo_s"],
         f["spread_demo_cases"] * (f["spread_demo_samples"] + 1) / f["spread_demo_s"]),
    ]
    columns = [Column("work", "Workload", "left"), Column("cases", "Cases"), Column("s", "Seconds"),
               Column("rate", "Cases/s")]
    cells = {"work": [r[0] for r in rows], "cases": [f"{r[1]:,}" for r in rows],
             "s": [f"{r[2]:.3f}" for r in rows], "rate": [f"{r[3]:,.0f}" for r in rows]}
    diff = "n/a" if f["max_abs_diff_ft"] is None else f"{f['max_abs_diff_ft']:.4f} ft"
    output.print_table(TextTable(columns, cells, [None] * len(rows), [False] * len(rows)),
                       "variantcmp bench (synthetic seeded fleet)", [
        f"speed-up of the vectorised solver over the scalar loop: {f['speedup']:,.0f}x per case",
        f"largest vectorised - scalar difference: {diff}; cases where only one finds an altitude: "
        f"{f['scalar_mismatched_cases']}",
        f"demo grid: {f['grid_ms']:.1f} ms; peak memory {f['peak_rss_mb']:,.0f} MB "
        f"(largest worker process {f['peak_rss_worker_mb']:,.0f} MB)"])
    output.print_caution(stderr=False)
    return options.EXIT_OK
