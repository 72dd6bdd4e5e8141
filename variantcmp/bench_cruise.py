"""Benchmark workloads of the cruise solvers (part of ``variantcmp bench``): the optimum altitude
at each case's cruise Mach, and MRC with LRC at a level per case, on the seeded synthetic fleets
of :mod:`variantcmp.bench` (jets with the TSFC formula and a TSFC table; turboprops with PSFC)."""

from __future__ import annotations

import time

import numpy as np

from .cases import FT
from .solver.cruise import optimum_altitude
from .solver.cruise_speed import cruise_speeds
from .solver.fuel_flow import CruisePhysics

CRUISE_CASES = 500_000  # the cruise workloads' default case count (at most the bench's --cases)
MRC_LEVELS_FT = np.arange(29_000.0, 39_001.0, 2_000.0)  # jets: a level per case, seeded
TURBOPROP_LEVELS_FT = np.arange(17_000.0, 25_001.0, 2_000.0)  # turboprops: a level per case, seeded
LEVEL_SEED = 20261204


def _timed(catalogue, cases, levels_ft) -> dict:
    warm = cases.take(slice(0, 2_000))
    optimum_altitude(CruisePhysics.of(catalogue, warm), warm.mach)  # warm-up
    cruise = CruisePhysics.of(catalogue, cases)
    t0 = time.perf_counter()
    optimum_m, _, _ = optimum_altitude(cruise, cases.mach)
    optimum_s = time.perf_counter() - t0
    levels_m = np.random.default_rng(LEVEL_SEED).choice(levels_ft, size=len(cases)) * FT
    t0 = time.perf_counter()
    speeds = cruise_speeds(cruise, levels_m)
    mrc_s = time.perf_counter() - t0
    return {"cases": len(cases), "optimum_s": optimum_s, "found": float(np.mean(np.isfinite(optimum_m))),
            "mrc_s": mrc_s, "mrc_found": float(np.mean(np.isfinite(speeds.mrc_mach)))}


def run_cruise_benchmark(jets, jet_cases, turboprops, turboprop_cases) -> dict:
    """Time both workloads on each fleet's cases; the figures, keyed as ``variantcmp bench`` prints
    them (``cruise_cases_per_s``, ``mrc_cases_per_s`` on the jets; ``turboprop_`` ones too)."""
    jet = _timed(jets, jet_cases, MRC_LEVELS_FT)
    prop = _timed(turboprops, turboprop_cases, TURBOPROP_LEVELS_FT)
    return {
        "cruise_cases": jet["cases"],
        "cruise_seconds": jet["optimum_s"],
        "cruise_cases_per_s": jet["cases"] / jet["optimum_s"],
        "cruise_found_share": jet["found"],
        "mrc_cases": jet["cases"],
        "mrc_seconds": jet["mrc_s"],
        "mrc_cases_per_s": jet["cases"] / jet["mrc_s"],
        "mrc_found_share": jet["mrc_found"],
        "turboprop_cruise_cases_per_s": prop["cases"] / prop["optimum_s"],
        "turboprop_mrc_cases_per_s": prop["cases"] / prop["mrc_s"],
        "turboprop_mrc_found_share": prop["mrc_found"],
    }
