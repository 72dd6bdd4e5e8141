"""Benchmark: the vectorised ceiling solver on a synthetic fleet grid, against a scalar loop.

The synthetic fleet is invented and seeded (reproducible): variants with and without
compressibility and buffet data, engines of every thrust model. The scalar reference is written
independently of the vectorised code, in plain Python floats with ``math`` and one
``scipy.optimize.brentq`` per case, so the largest difference between the two doubles as a
correctness check.
"""

from __future__ import annotations

import math
import resource
import time
from pathlib import Path

import numpy as np

from .catalogue import Catalogue, Engine, Variant, demo_catalogue_path, load_catalogue
from .atmosphere import P0_PA, isa_pressure_pa
from .cases import FPM, FT, build_cases
from .solver import solve_ceilings
from .table import Conditions, ceilings_table
from .units import WeightSpec

SEED = 20261201
_TABLE_ALT_FT = (-2000.0, 0.0, 10000.0, 20000.0, 30000.0, 40000.0, 50000.0, 60000.0)
_TABLE_MACH = (0.0, 0.3, 0.5, 0.7, 0.9)


def synthetic_fleet(seed: int = SEED) -> Catalogue:
    """An invented fleet: 6 variants x 3 engine options, every thrust model, mixed data."""
    rng = np.random.default_rng(seed)
    # Table engine: total-pressure ratio with a Mach loss (invented shape, turbofan-like).
    fraction = tuple(tuple(float(max(isa_pressure_pa(a * FT) / P0_PA * (1 + 0.2 * m * m) ** 3.5
                                     * (1.0 - 0.49 * math.sqrt(m)), 0.02)) for m in _TABLE_MACH)
                     for a in _TABLE_ALT_FT)
    engines = {
        "syn-dl": Engine("syn-dl", "synthetic density lapse", "density-lapse", 70.0, 0.95,
                         flat_rate_isa_dev_c=15.0, hot_day_loss_per_c=0.008, lapse_exponent=1.1,
                         lapse_exponent_above_tropopause=1.0),
        "syn-tf": Engine("syn-tf", "synthetic turbofan", "turbofan", 80.0, 0.93, throttle_ratio=1.05),
        "syn-tb": Engine("syn-tb", "synthetic table", "table", 75.0, 0.95, flat_rate_isa_dev_c=15.0,
                         hot_day_loss_per_c=0.007, table_altitude_ft=_TABLE_ALT_FT, table_mach=_TABLE_MACH,
                         table_thrust_fraction=fraction),
    }
    variants = {}
    for i in range(6):
        wing = float(rng.uniform(70, 110))
        with_buffet, with_wave = i % 2 == 0, i % 3 != 2
        variants[f"syn-{i}"] = Variant(
            f"syn-{i}", f"synthetic {i}", tuple(engines), 2, wing, float(rng.uniform(8, 10)),
            float(rng.uniform(0.76, 0.84)), None, float(rng.uniform(0.019, 0.024)), float(rng.uniform(1.35, 1.6)),
            float(wing * rng.uniform(480, 560)), 0.76, max_altitude_ft=float(rng.choice([39000.0, 41000.0])),
            mmo=0.82, vmo_kt=320.0,
            buffet_mach=(0.4, 0.6, 0.7, 0.76, 0.8, 0.84) if with_buffet else (),
            buffet_cl=(1.15, 1.0, 0.85, 0.72, 0.63, 0.52) if with_buffet else (),
            sweep_deg=26.0 if with_wave else None, thickness_ratio=0.115 if with_wave else None,
            korn_factor=0.93 if with_wave else None,
            max_cabin_dp_kpa=56.0 if i % 2 else None, cabin_altitude_ft=8000.0 if i % 2 else None)
    return Catalogue(Path("<synthetic>"), "synthetic benchmark fleet", "invented, seeded", engines, variants)


def synthetic_cases(catalogue: Catalogue, n: int, mach="cruise", seed: int = SEED):
    """About n cases: every pair x random weights (55-105 % MTOW) x random deviations (-15..+35 C)."""
    rng = np.random.default_rng(seed + 1)
    pairs = [(v.id, e) for v in catalogue.variants.values() for e in v.engine_options]
    per_pair = max(1, math.ceil(n / len(pairs)))
    n_dev = max(1, int(math.sqrt(per_pair)))
    n_w = max(1, math.ceil(per_pair / n_dev))
    devs = rng.uniform(-15.0, 35.0, n_dev)
    fractions = rng.uniform(0.55, 1.05, n_w)
    cases, _ = build_cases(catalogue, pairs, lambda v: fractions * v.mtow_kg, devs, [300.0], mach, 1.3)
    return cases.take(slice(0, n))


# ----------------------------------------------------------------------------- scalar reference
# Plain floats and math, written from the same published formulas (ISO 2533, the Mattingly et al. turbofan lapse,
# Korn/Lock, the total-energy climb equation), without numpy, one case at a time.

_G, _R, _GAM = 9.80665, 287.05287, 1.4
_LAYERS = ((0.0, 288.15, -0.0065), (11000.0, 216.65, 0.0), (20000.0, 216.65, 0.001), (32000.0, 228.65, 0.0028),
           (47000.0, 270.65, 0.0), (51000.0, 270.65, -0.0028), (71000.0, 214.65, -0.002))


def _scalar_isa(h):
    """(T_ISA, p, dT/dh) at geopotential pressure altitude h, layer by layer (ISO 2533)."""
    p = 101325.0
    for i, (hb, tb, lapse) in enumerate(_LAYERS):
        last = i + 1 == len(_LAYERS)
        dh = h - hb if last or h < _LAYERS[i + 1][0] else _LAYERS[i + 1][0] - hb
        if lapse == 0.0:
            p_end = p * math.exp(-_G * dh / (_R * tb))
        else:
            p_end = p * ((tb + lapse * dh) / tb) ** (-_G / (_R * lapse))
        if last or h < _LAYERS[i + 1][0]:
            return tb + lapse * dh, p_end, lapse
        p = p_end
    raise AssertionError("unreachable")


def _scalar_table(engine, alt_ft, mach):
    xs, ys, z = engine.table_altitude_ft, engine.table_mach, engine.table_thrust_fraction
    if not (xs[0] <= alt_ft <= xs[-1] and ys[0] <= mach <= ys[-1]):
        return math.nan
    i = max(j for j in range(len(xs) - 1) if xs[j] <= alt_ft) if alt_ft < xs[-1] else len(xs) - 2
    k = max(j for j in range(len(ys) - 1) if ys[j] <= mach) if mach < ys[-1] else len(ys) - 2
    tx, ty = (alt_ft - xs[i]) / (xs[i + 1] - xs[i]), (mach - ys[k]) / (ys[k + 1] - ys[k])
    return ((1 - tx) * (1 - ty) * z[i][k] + tx * (1 - ty) * z[i + 1][k] + (1 - tx) * ty * z[i][k + 1]
            + tx * ty * z[i + 1][k + 1])


def _scalar_excess(v, e, mass, dev, mach, climb_ms, h):
    t_isa, p, lapse = _scalar_isa(h)
    t = t_isa + dev
    w = mass * _G
    qs = 0.5 * _GAM * p * mach * mach * v.wing_area_m2
    cl = w / qs
    cd = v.cd0 + v.k * cl * cl
    if v.korn_factor is not None:
        c = math.cos(math.radians(v.sweep_deg))
        mcrit = v.korn_factor / c - v.thickness_ratio / c**2 - cl / (10 * c**3) - (0.1 / 80) ** (1 / 3)
        if mach > mcrit:
            cd += 20 * (mach - mcrit) ** 4
    if e.model == "density-lapse":
        seen = 0.0 if e.flat_rate_isa_dev_c is not None else dev  # flat rated: ISA thrust held
        rho = p / (_R * (t_isa + seen))
        rho11 = 22632.0401 / (_R * (216.65 + seen))
        m2 = e.lapse_exponent_above_tropopause or e.lapse_exponent
        frac = (rho / 1.225) ** e.lapse_exponent if rho >= rho11 else (rho11 / 1.225) ** e.lapse_exponent * (rho / rho11) ** m2
    elif e.model == "turbofan":
        ram = 1 + 0.2 * mach * mach
        seen = t_isa if e.flat_rate_isa_dev_c is not None else t  # flat rated: ISA temperature
        th0, d0 = seen / 288.15 * ram, p / 101325 * ram**3.5
        frac = max(d0 * (1 - 0.49 * math.sqrt(mach) - 3 * max(th0 - e.throttle_ratio, 0) / (1.5 + mach)), 0.0)
        frac /= 1 - 2 * max(1 - e.throttle_ratio, 0)  # static thrust is the thrust at sea level, ISA
    else:
        frac = _scalar_table(e, h / FT, mach)
    hot = 1.0
    if e.flat_rate_isa_dev_c is not None:
        hot = max(1 - e.hot_day_loss_per_c * max(dev - e.flat_rate_isa_dev_c, 0), 0)
    thrust = v.engine_count * e.static_thrust_kn * 1000 * e.rating_fraction * frac * hot
    vel = mach * math.sqrt(_GAM * _R * t)
    f = 1 / (1 + _GAM * _R * lapse / (2 * _G) * mach * mach * t_isa / t)
    return (thrust - qs * cd) * vel / w * (t_isa / t) * f - climb_ms


def _scalar_pressure_altitude(p):
    from scipy.optimize import brentq

    return brentq(lambda h: _scalar_isa(h)[1] - p, -5000.0, 84000.0, xtol=1e-6)


def scalar_max_altitude_m(v, e, mass, dev, mach, climb_ms, g_margin):
    """One case, fixed Mach: thrust ceiling by a top-down scan + brentq, closed forms, minimum."""
    from scipy.optimize import brentq

    top = e.table_altitude_ft[-1] * FT if e.model == "table" else 30000.0
    floor = max(-2000 * FT, e.table_altitude_ft[0] * FT) if e.model == "table" else -2000 * FT
    f = lambda h: _scalar_excess(v, e, mass, dev, mach, climb_ms, h)  # noqa: E731
    step, h = 500.0, top
    thrust = math.nan
    if f(top) < 0:
        while h - step >= floor:
            if f(h - step) >= 0:
                thrust = brentq(f, h - step, h, xtol=1e-4)
                break
            h -= step
    w = mass * _G
    qs_per_p = 0.5 * _GAM * mach * mach * v.wing_area_m2
    limits = [thrust, _scalar_pressure_altitude(w / (qs_per_p * v.cl_max))]
    if v.buffet_mach and v.buffet_mach[0] <= mach <= v.buffet_mach[-1]:
        j = max(i for i in range(len(v.buffet_mach) - 1) if v.buffet_mach[i] <= mach) if mach < v.buffet_mach[-1] \
            else len(v.buffet_mach) - 2
        x0, x1, y0, y1 = v.buffet_mach[j], v.buffet_mach[j + 1], v.buffet_cl[j], v.buffet_cl[j + 1]
        cl_b = y0 + (y1 - y0) * (mach - x0) / (x1 - x0)
        limits.append(_scalar_pressure_altitude(g_margin * w / (qs_per_p * cl_b)))
    if v.max_altitude_ft is not None:
        limits.append(v.max_altitude_ft * FT)
    if v.max_cabin_dp_kpa is not None:
        limits.append(_scalar_pressure_altitude(_scalar_isa(v.cabin_altitude_ft * FT)[1] - v.max_cabin_dp_kpa * 1000))
    best = min(limits)
    if v.vmo_kt is not None and not math.isnan(best):
        # Calibrated airspeed at that altitude (subsonic pitot relations) must not exceed VMO.
        p = _scalar_isa(best)[1]
        qc = p * ((1 + 0.2 * mach * mach) ** 3.5 - 1)
        cas_kt = 340.294 * math.sqrt(5 * ((qc / 101325 + 1) ** (2 / 7) - 1)) * 3600 / 1852
        if cas_kt > v.vmo_kt + 1e-6:
            best = math.nan
    if v.mmo is not None and mach > v.mmo:
        best = math.nan
    return thrust, best


# ----------------------------------------------------------------------------- the run


def _peak_rss_mb(who=resource.RUSAGE_SELF) -> float:
    return resource.getrusage(who).ru_maxrss / 1024.0  # KiB on Linux


def spread_demo(samples: int = 1_000) -> tuple[int, float]:
    """The Monte Carlo spread of the demo fleet over the screening grid's default weights and days
    at the best speed, with the default uncertain data: (cases, seconds)."""
    from .table.perturbations import DEFAULT_VARY, spread_table
    from .table.screening import DEFAULT_ISA_DEVS_C, DEFAULT_WEIGHTS

    demo = load_catalogue(demo_catalogue_path())
    grid = Conditions(weights=DEFAULT_WEIGHTS, isa_devs_c=DEFAULT_ISA_DEVS_C, mach="best")
    t0 = time.perf_counter()
    frame = spread_table(demo, grid, DEFAULT_VARY, samples, seed=1)
    return frame.height, time.perf_counter() - t0


def run_benchmark(cases: int = 1_000_000, scalar_cases: int = 2_000, best_cases: int = 100_000,
                  spread_samples: int = 1_000) -> dict:
    """Time the five workloads and compare vectorised with scalar answers; returns the figures."""
    cat = synthetic_fleet()
    solve_ceilings(synthetic_cases(cat, 2_000))  # warm-up: imports, first allocations

    fixed = synthetic_cases(cat, cases)
    t0 = time.perf_counter()
    res = solve_ceilings(fixed)
    fixed_s = time.perf_counter() - t0

    best = synthetic_cases(cat, best_cases, mach="best")
    t0 = time.perf_counter()
    solve_ceilings(best)
    best_s = time.perf_counter() - t0

    rng = np.random.default_rng(SEED + 2)
    pick = np.sort(rng.choice(len(fixed), size=min(scalar_cases, len(fixed)), replace=False))
    variants, engines = list(cat.variants.values()), list(cat.engines.values())
    t0 = time.perf_counter()
    scalar = [scalar_max_altitude_m(variants[fixed.variant_index[i]], engines[fixed.engine_index[i]],
                                    float(fixed.weight_kg[i]), float(fixed.isa_dev_c[i]), float(fixed.mach[i]),
                                    float(fixed.climb_ms[i]), 1.3) for i in pick]
    scalar_s = time.perf_counter() - t0
    ref_thrust = np.array([s[0] for s in scalar])
    ref_max = np.array([s[1] for s in scalar])
    vec_thrust, vec_max = res.thrust_m[pick], res.max_altitude_m[pick]
    # Compare where both give an altitude; count disagreements on whether there is one at all.
    both = np.isfinite(ref_thrust) & np.isfinite(vec_thrust)
    diff_ft = np.abs(np.concatenate([(ref_thrust - vec_thrust)[both],
                                     (ref_max - vec_max)[np.isfinite(ref_max) & np.isfinite(vec_max)]])) / FT
    mismatched = int(np.sum(np.isfinite(ref_thrust) != np.isfinite(vec_thrust)))

    demo = load_catalogue(demo_catalogue_path())
    grid = Conditions(weights=tuple(WeightSpec(p, "%mtow") for p in np.linspace(60, 100, 9)),
                      isa_devs_c=(-10.0, 0.0, 10.0, 15.0, 20.0, 25.0, 30.0), climb_fpm=(0.0, 100.0, 300.0))
    ceilings_table(demo, grid)  # warm-up
    t0 = time.perf_counter()
    frame = ceilings_table(demo, grid)
    grid_s = time.perf_counter() - t0

    spread_cases, spread_s = spread_demo(spread_samples)

    fixed_rate = cases / fixed_s
    scalar_rate = len(pick) / scalar_s
    return {
        "cases": cases,
        "seconds": fixed_s,
        "cases_per_s": fixed_rate,
        "best_speed_cases": best_cases,
        "best_speed_seconds": best_s,
        "best_speed_cases_per_s": best_cases / best_s,
        "scalar_cases": len(pick),
        "scalar_cases_per_s": scalar_rate,
        "speedup": fixed_rate / scalar_rate,
        "max_abs_diff_ft": float(diff_ft.max()) if diff_ft.size else None,
        "scalar_mismatched_cases": mismatched,
        "grid_cases": frame.height,
        "grid_ms": grid_s * 1000.0,
        "spread_demo_cases": spread_cases,
        "spread_demo_samples": spread_samples,
        "spread_demo_s": spread_s,
        "peak_rss_mb": _peak_rss_mb(),
        "peak_rss_worker_mb": _peak_rss_mb(resource.RUSAGE_CHILDREN),
        "climb_fpm": 300.0 if fixed.climb_ms.size == 0 else float(fixed.climb_ms[0] / FPM),
    }
