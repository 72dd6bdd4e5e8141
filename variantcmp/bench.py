"""Benchmark: the vectorised ceiling solver on synthetic fleet grids, against a scalar loop; and the
cruise solvers (:mod:`variantcmp.bench_cruise`).

The synthetic fleets are invented and seeded (reproducible): jets (variants with and without
compressibility and buffet data, engines of every jet thrust model) and turboprops (propeller
engines with a constant efficiency or one against Mach, flat rated or not), each with its own
fixed-Mach and best-speed workloads. The scalar reference is written independently of the
vectorised code, in plain Python floats with ``math`` and one ``scipy.optimize.brentq`` per case,
and checks a sample of each fleet's fixed-Mach cases, so the largest difference between the two
doubles as a correctness check.
"""

from __future__ import annotations

import dataclasses
import math
import resource
import time
from pathlib import Path

import numpy as np

from .catalogue import Catalogue, Engine, Variant, demo_catalogue_path, load_catalogue
from .atmosphere import P0_PA, isa_pressure_pa
from .cases import FPM, FT, build_cases
from .bench_cruise import CRUISE_CASES, run_cruise_benchmark
from .solver import solve_ceilings, solve_heaviest, solve_hottest
from .solver.level import CLIMBS_ABOVE
from .solver.engine_out import engine_out_ceilings, engine_out_terms
from .table import Conditions, ceilings_table
from .units import WeightSpec

SEED = 20261201
_TABLE_ALT_FT = (-2000.0, 0.0, 10000.0, 20000.0, 30000.0, 40000.0, 50000.0, 60000.0)
_TABLE_MACH = (0.0, 0.3, 0.5, 0.7, 0.9)
# An invented propeller efficiency curve (best near M0.45, lower in the slow climb).
_ETA_MACH = (0.15, 0.2, 0.25, 0.3, 0.35, 0.4, 0.45, 0.5, 0.55, 0.6, 0.65)
_ETA = (0.6, 0.7, 0.77, 0.82, 0.85, 0.865, 0.87, 0.86, 0.83, 0.78, 0.7)


def synthetic_fleet(seed: int = SEED) -> Catalogue:
    """An invented fleet: 6 variants x 3 engine options, every thrust model, mixed data, and fuel
data of every jet kind (the TSFC formula, a TSFC table)."""
    rng = np.random.default_rng(seed)
    # Table engine: total-pressure ratio with a Mach loss (invented shape, turbofan-like).
    fraction = tuple(tuple(float(max(isa_pressure_pa(a * FT) / P0_PA * (1 + 0.2 * m * m) ** 3.5
                                     * (1.0 - 0.49 * math.sqrt(m)), 0.02)) for m in _TABLE_MACH)
                     for a in _TABLE_ALT_FT)
    # Invented TSFC table at ISA, mg/(N s): rising with Mach, falling a little with altitude.
    tsfc = tuple(tuple(round(11.5 + 8.0 * m - 0.02 * a / 1000.0, 3) for m in _TABLE_MACH) for a in _TABLE_ALT_FT)
    engines = {
        "syn-dl": Engine("syn-dl", "synthetic density lapse", "density-lapse", 70.0, 0.95,
                         flat_rate_isa_dev_c=15.0, hot_day_loss_per_c=0.008, lapse_exponent=1.1,
                         lapse_exponent_above_tropopause=1.0, tsfc_mg_per_ns=10.5, tsfc_mach_slope=9.0,
                         mct_thrust_ratio=0.95),
        "syn-tf": Engine("syn-tf", "synthetic turbofan", "turbofan", 80.0, 0.93, throttle_ratio=1.05,
                         tsfc_mg_per_ns=9.6, tsfc_mach_slope=10.8, mct_thrust_ratio=0.94),
        "syn-tb": Engine("syn-tb", "synthetic table", "table", 75.0, 0.95, flat_rate_isa_dev_c=15.0,
                         hot_day_loss_per_c=0.007, table_altitude_ft=_TABLE_ALT_FT, table_mach=_TABLE_MACH,
                         table_thrust_fraction=fraction, tsfc_table_altitude_ft=_TABLE_ALT_FT,
                         tsfc_table_mach=_TABLE_MACH, tsfc_table_mg_per_ns=tsfc, mct_thrust_ratio=0.96),
    }
    variants = _synthetic_variants(
        "syn-", "synthetic", engines, rng, 6, wing_m2=(70, 110), aspect=(8, 10), oswald=(0.76, 0.84), cd0=(0.019, 0.024),
        cl_max=(1.35, 1.6), loading_kg_m2=(480, 560), cruise_mach=0.76,
        certified_ft=lambda i: float(rng.choice([39000.0, 41000.0])), mmo=0.82, vmo_kt=320.0,
        buffet=((0.4, 0.6, 0.7, 0.76, 0.8, 0.84), (1.15, 1.0, 0.85, 0.72, 0.63, 0.52)), wave=(26.0, 0.115, 0.93),
        cabin_dp_kpa=56.0)
    return Catalogue(Path("<synthetic>"), "synthetic benchmark fleet", "invented, seeded", engines, variants)


def synthetic_turboprop_fleet(seed: int = SEED) -> Catalogue:
    """An invented turboprop fleet: 4 variants x 3 propeller engine options, mixed data."""
    rng = np.random.default_rng(seed + 3)
    engines = {
        "syn-tp-c": Engine("syn-tp-c", "synthetic turboprop, constant efficiency", "turboprop", shaft_power_kw=2100.0,
                           lapse_exponent=0.8, propeller_efficiency=0.83, psfc_kg_per_kwh=0.29),
        "syn-tp-t": Engine("syn-tp-t", "synthetic turboprop, efficiency table", "turboprop", shaft_power_kw=1900.0,
                           lapse_exponent=0.75, flat_rate_isa_dev_c=18.0, hot_day_loss_per_c=0.008,
                           propeller_efficiency_mach=_ETA_MACH, propeller_efficiency_table=_ETA,
                           psfc_kg_per_kwh=0.28),
        "syn-tp-h": Engine("syn-tp-h", "synthetic turboprop, hot and high", "turboprop", shaft_power_kw=2400.0,
                           lapse_exponent=0.7, lapse_exponent_above_tropopause=1.0, flat_rate_isa_dev_c=25.0,
                           hot_day_loss_per_c=0.008, propeller_efficiency_mach=_ETA_MACH,
                           propeller_efficiency_table=tuple(e - 0.01 for e in _ETA), psfc_kg_per_kwh=0.30),
    }
    variants = _synthetic_variants(
        "syn-tp-", "synthetic turboprop", engines, rng, 4, wing_m2=(52, 68), aspect=(11, 13), oswald=(0.78, 0.84),
        cd0=(0.023, 0.027), cl_max=(1.5, 1.7), loading_kg_m2=(340, 390), cruise_mach=0.42,
        certified_ft=lambda i: 25000.0 if i % 2 else None, mmo=0.55, vmo_kt=250.0,
        buffet=((0.25, 0.35, 0.45, 0.5, 0.55, 0.6), (1.35, 1.28, 1.18, 1.1, 1.0, 0.88)), wave=(3.0, 0.16, 0.87),
        cabin_dp_kpa=40.0)
    return Catalogue(Path("<synthetic turboprops>"), "synthetic turboprop benchmark fleet", "invented, seeded", engines,
                     variants)


def _synthetic_variants(prefix, label, engines, rng, count, *, wing_m2, aspect, oswald, cd0, cl_max, loading_kg_m2,
                        cruise_mach, certified_ft, mmo, vmo_kt, buffet, wave, cabin_dp_kpa) -> dict[str, Variant]:
    """``count`` twins offering every engine of ``engines``, their airframes drawn from the ranges
    given (uniform, in this order); buffet data on every other one, wave drag (sweep, thickness,
    Korn factor) on two in three, a cabin limit on the odd ones."""
    variants = {}
    for i in range(count):
        wing = float(rng.uniform(*wing_m2))
        with_buffet, with_wave = i % 2 == 0, i % 3 != 2
        variants[f"{prefix}{i}"] = Variant(
            f"{prefix}{i}", f"{label} {i}", tuple(engines), 2, wing, float(rng.uniform(*aspect)),
            float(rng.uniform(*oswald)), None, float(rng.uniform(*cd0)), float(rng.uniform(*cl_max)),
            float(wing * rng.uniform(*loading_kg_m2)), cruise_mach, max_altitude_ft=certified_ft(i), mmo=mmo,
            vmo_kt=vmo_kt, buffet_mach=buffet[0] if with_buffet else (), buffet_cl=buffet[1] if with_buffet else (),
            sweep_deg=wave[0] if with_wave else None, thickness_ratio=wave[1] if with_wave else None,
            korn_factor=wave[2] if with_wave else None,
            max_cabin_dp_kpa=cabin_dp_kpa if i % 2 else None, cabin_altitude_ft=8000.0 if i % 2 else None)
    return variants


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
# propeller thrust eta P / V, Korn/Lock, the total-energy climb equation), without numpy, one case at a time.

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


def _scalar_power_lapse(e, p, t_isa, dev):
    """(rho/rho0)^m, m2 above the tropopause's density (thrust of a density-lapse jet, shaft
    power of a turboprop); a flat-rated engine sees the ISA day."""
    seen = 0.0 if e.flat_rate_isa_dev_c is not None else dev  # flat rated: ISA thrust (power) held
    rho = p / (_R * (t_isa + seen))
    rho11 = 22632.0401 / (_R * (216.65 + seen))
    m2 = e.lapse_exponent_above_tropopause or e.lapse_exponent
    return (rho / 1.225) ** e.lapse_exponent if rho >= rho11 else (rho11 / 1.225) ** e.lapse_exponent * (rho / rho11) ** m2


def _scalar_efficiency(e, mach):
    """Propeller efficiency: the constant, or linear between the catalogue's points (NaN outside)."""
    if e.propeller_efficiency is not None:
        return e.propeller_efficiency
    xs, ys = e.propeller_efficiency_mach, e.propeller_efficiency_table
    for x0, x1, y0, y1 in zip(xs, xs[1:], ys, ys[1:]):
        if x0 <= mach <= x1:
            return y0 + (y1 - y0) * (mach - x0) / (x1 - x0)
    return math.nan


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
        frac = _scalar_power_lapse(e, p, t_isa, dev)
    elif e.model == "turbofan":
        ram = 1 + 0.2 * mach * mach
        seen = t_isa if e.flat_rate_isa_dev_c is not None else t  # flat rated: ISA temperature
        th0, d0 = seen / 288.15 * ram, p / 101325 * ram**3.5
        frac = max(d0 * (1 - 0.49 * math.sqrt(mach) - 3 * max(th0 - e.throttle_ratio, 0) / (1.5 + mach)), 0.0)
        frac /= 1 - 2 * max(1 - e.throttle_ratio, 0)  # static thrust is the thrust at sea level, ISA
    elif e.model == "turboprop":
        frac = _scalar_power_lapse(e, p, t_isa, dev)  # shaft power / its sea-level value
    else:
        frac = _scalar_table(e, h / FT, mach)
    hot = 1.0
    if e.flat_rate_isa_dev_c is not None:
        hot = max(1 - e.hot_day_loss_per_c * max(dev - e.flat_rate_isa_dev_c, 0), 0)
    vel = mach * math.sqrt(_GAM * _R * t)
    if e.model == "turboprop":  # T = eta P / V, V the true airspeed on the day
        thrust = _scalar_efficiency(e, mach) * v.engine_count * e.shaft_power_kw * 1000 * frac * hot / vel
    else:
        thrust = v.engine_count * e.static_thrust_kn * 1000 * e.rating_fraction * frac * hot
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


def _scalar_check(cat: Catalogue, fixed, res, scalar_cases: int) -> dict:
    """The scalar reference on a sample of fixed-Mach cases: its rate, the largest difference from
    the vectorised answers (ft) and the cases where only one of the two finds an altitude."""
    rng = np.random.default_rng(SEED + 2)
    pick = np.sort(rng.choice(len(fixed), size=min(scalar_cases, len(fixed)), replace=False))
    variants, engines = list(cat.variants.values()), list(cat.engines.values())
    t0 = time.perf_counter()
    scalar = [scalar_max_altitude_m(variants[fixed.variant_index[i]], engines[fixed.engine_index[i]],
                                    float(fixed.weight_kg[i]), float(fixed.isa_dev_c[i]), float(fixed.mach[i]),
                                    float(fixed.climb_ms[i]), 1.3) for i in pick]
    seconds = time.perf_counter() - t0
    ref_thrust = np.array([s[0] for s in scalar])
    ref_max = np.array([s[1] for s in scalar])
    vec_thrust, vec_max = res.thrust_m[pick], res.max_altitude_m[pick]
    # Compare where both give an altitude; count disagreements on whether there is one at all.
    both = np.isfinite(ref_thrust) & np.isfinite(vec_thrust)
    diff_ft = np.abs(np.concatenate([(ref_thrust - vec_thrust)[both],
                                     (ref_max - vec_max)[np.isfinite(ref_max) & np.isfinite(vec_max)]])) / FT
    return {"cases": len(pick), "cases_per_s": len(pick) / seconds,
            "max_abs_diff_ft": float(diff_ft.max()) if diff_ft.size else None,
            "mismatched_cases": int(np.sum(np.isfinite(ref_thrust) != np.isfinite(vec_thrust)))}


def _timed_solve(cases):
    t0 = time.perf_counter()
    res = solve_ceilings(cases)
    return res, time.perf_counter() - t0


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


def _timed_engine_out(cat: Catalogue, n: int) -> float:
    best = synthetic_cases(cat, n, mach="best")
    terms = engine_out_terms(cat, best)
    t0 = time.perf_counter()
    engine_out_ceilings(best, terms)
    return time.perf_counter() - t0


def run_benchmark(cases: int = 1_000_000, scalar_cases: int = 2_000, best_cases: int = 100_000,
                  cruise_cases: int | None = None, spread_samples: int = 1_000) -> dict:
    """Time the workloads (jets and turboprops: fixed Mach and best speed; one engine out; the demo
    grid; the demo fleet's spread; the cruise solvers on ``cruise_cases``, by default --cases up to
    CRUISE_CASES) and compare vectorised with scalar answers on each fleet; returns the figures."""
    cat, props = synthetic_fleet(), synthetic_turboprop_fleet()
    solve_ceilings(synthetic_cases(cat, 2_000))  # warm-up: imports, first allocations
    solve_ceilings(synthetic_cases(props, 2_000))

    fixed = synthetic_cases(cat, cases)
    res, fixed_s = _timed_solve(fixed)
    best_s = _timed_solve(synthetic_cases(cat, best_cases, mach="best"))[1]
    prop_fixed = synthetic_cases(props, cases)
    prop_res, prop_fixed_s = _timed_solve(prop_fixed)
    prop_best_s = _timed_solve(synthetic_cases(props, best_cases, mach="best"))[1]

    # One engine out: the gross and net ceilings of the best-speed cases (two best-speed solves each).
    oei_s, prop_oei_s = (_timed_engine_out(fleet, best_cases) for fleet in (cat, props))

    jets = _scalar_check(cat, fixed, res, scalar_cases)
    turboprops = _scalar_check(props, prop_fixed, prop_res, scalar_cases)

    demo = load_catalogue(demo_catalogue_path())
    grid = Conditions(weights=tuple(WeightSpec(p, "%mtow") for p in np.linspace(60, 100, 9)),
                      isa_devs_c=(-10.0, 0.0, 10.0, 15.0, 20.0, 25.0, 30.0), climb_fpm=(0.0, 100.0, 300.0))
    ceilings_table(demo, grid)  # warm-up
    t0 = time.perf_counter()
    frame = ceilings_table(demo, grid)
    grid_s = time.perf_counter() - t0

    spread_cases, spread_s = spread_demo(spread_samples)

    fixed_rate = cases / fixed_s
    inverse = inverse_workloads(cat, cases, best_cases)
    n_cruise = min(cases, CRUISE_CASES) if cruise_cases is None else cruise_cases
    cruise = run_cruise_benchmark(cat, synthetic_cases(cat, n_cruise), props, synthetic_cases(props, n_cruise))
    return inverse | cruise | {
        "cases": cases,
        "seconds": fixed_s,
        "cases_per_s": fixed_rate,
        "best_speed_cases": best_cases,
        "best_speed_seconds": best_s,
        "best_speed_cases_per_s": best_cases / best_s,
        "oei_cases": best_cases,
        "oei_seconds": oei_s,
        "oei_cases_per_s": best_cases / oei_s,
        "turboprop_oei_cases": best_cases,
        "turboprop_oei_seconds": prop_oei_s,
        "turboprop_oei_cases_per_s": best_cases / prop_oei_s,
        "turboprop_cases": cases,
        "turboprop_seconds": prop_fixed_s,
        "turboprop_cases_per_s": cases / prop_fixed_s,
        "turboprop_best_cases": best_cases,
        "turboprop_best_seconds": prop_best_s,
        "turboprop_best_cases_per_s": best_cases / prop_best_s,
        "scalar_cases": jets["cases"],
        "scalar_cases_per_s": jets["cases_per_s"],
        "speedup": fixed_rate / jets["cases_per_s"],
        "max_abs_diff_ft": jets["max_abs_diff_ft"],
        "scalar_mismatched_cases": jets["mismatched_cases"],
        "turboprop_scalar_cases": turboprops["cases"],
        "turboprop_scalar_cases_per_s": turboprops["cases_per_s"],
        "turboprop_max_abs_diff_ft": turboprops["max_abs_diff_ft"],
        "turboprop_scalar_mismatched_cases": turboprops["mismatched_cases"],
        "grid_cases": frame.height,
        "grid_ms": grid_s * 1000.0,
        "spread_demo_cases": spread_cases,
        "spread_demo_samples": spread_samples,
        "spread_demo_s": spread_s,
        "peak_rss_mb": _peak_rss_mb(),
        "peak_rss_worker_mb": _peak_rss_mb(resource.RUSAGE_CHILDREN),
        "climb_fpm": 300.0 if fixed.climb_ms.size == 0 else float(fixed.climb_ms[0] / FPM),
    }


def inverse_workloads(cat: Catalogue, cases: int, best_cases: int) -> dict:
    """The inverse answers on the synthetic fleet, each case asking about a seeded level from
    FL250 to FL410: the heaviest weight and the warmest day at a fixed Mach (``cases`` each),
    at the best speed (``best_cases``, the warmest day a tenth of them), and a round trip of a
    sample through ``solve_ceilings`` (the heaviest weight put back gives the level: the largest
    difference in ft, a correctness check)."""
    rng = np.random.default_rng(SEED + 3)
    figures = {}
    for name, solve, n, mach in (("heaviest", solve_heaviest, cases, "cruise"), ("hottest", solve_hottest, cases, "cruise"),
                                 ("heaviest_best", solve_heaviest, best_cases, "best"),
                                 ("hottest_best", solve_hottest, max(1, best_cases // 10), "best")):
        work = synthetic_cases(cat, n, mach=mach)
        level_m = rng.uniform(25_000.0, 41_000.0, len(work)) * FT
        solve(work.take(slice(0, 500)), level_m[:500])  # warm-up
        t0 = time.perf_counter()
        res = solve(work, level_m)
        seconds = time.perf_counter() - t0
        figures |= {f"{name}_cases": n, f"{name}_seconds": seconds, f"{name}_cases_per_s": n / seconds}
        if name == "heaviest":  # (where it still climbs above the level, its ceiling is higher: not checked)
            found = np.flatnonzero(np.isfinite(res.weight_kg) & ~(res.flags & CLIMBS_ABOVE).astype(bool))[:2_000]
            back = solve_ceilings(dataclasses.replace(work.take(found), weight_kg=res.weight_kg[found]))
            diff = np.abs(back.max_altitude_m - level_m[found]) / FT
            figures["heaviest_round_trip_max_ft"] = float(np.max(diff)) if diff.size else None
    return figures

