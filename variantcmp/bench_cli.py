"""``variantcmp bench``: time the ceiling solver (presentation of variantcmp.bench figures)."""

from __future__ import annotations

import json
import sys


def _positive_int(text: str) -> int:
    import argparse

    try:
        value = int(text.replace("_", "").replace(",", ""))
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number of cases, got {text!r}") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected at least 1 case, got {text!r}")
    return value


def add_bench_command(subparsers) -> None:
    p = subparsers.add_parser(
        "bench", help="time the ceiling solver on a synthetic fleet grid",
        description="Time the vectorised ceiling solver on a seeded synthetic fleet: fixed-Mach and "
                    "best-speed maximum altitudes, a scalar one-case-at-a-time reference on a "
                    "subsample (also a correctness check), and the demo fleet's interactive grid.")
    p.add_argument("--cases", type=_positive_int, default=1_000_000, help="fixed-Mach cases (default 1,000,000)")
    p.add_argument("--best-cases", type=_positive_int, default=100_000, help="best-speed cases (default 100,000)")
    p.add_argument("--scalar-cases", type=_positive_int, default=2_000,
                   help="cases solved one by one by the scalar reference (default 2,000)")
    p.add_argument("--format", choices=("table", "json"), default="table")
    p.set_defaults(run=_run)


def _run(args) -> int:
    from variantcmp.bench import run_benchmark
    from variantcmp.caution import CAUTION

    figures = run_benchmark(args.cases, args.scalar_cases, args.best_cases)
    if args.format == "json":
        sys.stdout.write(json.dumps(figures) + "\n")
        return 0
    from rich.console import Console
    from rich.table import Table

    t = Table(title="variantcmp bench (synthetic seeded fleet)", title_justify="left")
    t.add_column("workload")
    t.add_column("cases", justify="right")
    t.add_column("seconds", justify="right")
    t.add_column("cases/s", justify="right")
    f = figures
    t.add_row("fixed Mach (thrust 300 ft/min, buffet 1.3 g, stall, certified)", f"{f['cases']:,}",
              f"{f['seconds']:.3f}", f"{f['cases_per_s']:,.0f}")
    t.add_row("best speed", f"{f['best_speed_cases']:,}", f"{f['best_speed_seconds']:.3f}",
              f"{f['best_speed_cases_per_s']:,.0f}")
    t.add_row("scalar reference (floats, math, brentq per case)", f"{f['scalar_cases']:,}",
              f"{f['scalar_cases'] / f['scalar_cases_per_s']:.3f}", f"{f['scalar_cases_per_s']:,.0f}")
    t.add_row("demo fleet interactive grid (9 weights x 7 days x 3 climbs)", f"{f['grid_cases']:,}",
              f"{f['grid_ms'] / 1000:.3f}", f"{f['grid_cases'] / f['grid_ms'] * 1000:,.0f}")
    console = Console()
    console.print(t)
    diff = "n/a" if f["max_abs_diff_ft"] is None else f"{f['max_abs_diff_ft']:.4f} ft"
    console.print(f"speed-up of the vectorised solver over the scalar loop: {f['speedup']:,.0f}x per case")
    console.print(f"largest vectorised - scalar difference: {diff}; cases where only one finds an altitude: "
                  f"{f['scalar_mismatched_cases']}")
    console.print(f"demo grid: {f['grid_ms']:.1f} ms; peak memory {f['peak_rss_mb']:,.0f} MB "
                  f"(largest worker process {f['peak_rss_worker_mb']:,.0f} MB)")
    console.print(f"[yellow]{CAUTION}[/]")
    return 0
