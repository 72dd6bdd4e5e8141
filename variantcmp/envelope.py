"""Speed-altitude envelopes and maximum-altitude sweeps (solver and result-table layer; no printing).

An envelope is, for one case (variant x engine x weight x ISA deviation x residual climb x buffet
margin), the speed range the aircraft can fly at each pressure altitude and the boundary that sets
each edge:

- low-speed side: 1 g stall (``CL = cl_max``), buffet onset at 1.0 g and at the margin load factor
  (low-Mach branch of ``n W = (gamma/2) p M^2 S CL_buffet(M)``), and the thrust-limited minimum
  speed (back side of the drag curve) at the required residual climb;
- high-speed side: MMO, VMO as a Mach (compressible pitot relations), buffet onset at 1.0 g and at
  the margin (high-Mach branch) and the thrust-limited maximum speed.

The feasible band at an altitude lies between the highest low-side boundary at the margin and the
lowest high-side one, inside the speed range the data cover (``CaseSet.mach_low/mach_high``, as the
best-speed solver uses); the certified and cabin ceilings cap it. Its top, where the band closes,
is the best-speed maximum altitude of :mod:`variantcmp.solver`; on a fixed Mach line (the cruise
Mach by default) the highest feasible altitude is that Mach's maximum altitude. The physics is not
repeated here: climb from :class:`variantcmp.solver.ClimbPhysics`, buffet CL from
:func:`variantcmp.solver.buffet_cl_at`, lift from :func:`variantcmp.aero.lift_coefficient`, VMO
from :mod:`variantcmp.airspeed`. Everything is vectorised over cases and altitudes; loops run over
solver iterations only.

Sweeps of the maximum altitude against weight, ISA deviation or Mach live in
:mod:`variantcmp.sweeps` (their names are given here too).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import polars as pl

from . import solver as s
from .aero import lift_coefficient
from .airspeed import cas_to_mach, mach_to_cas, pressure_for_cas_at_mach_pa
from .atmosphere import G0, MODEL_TOP_M, isa_state, pressure_altitude_m, speed_of_sound_ms
from .cases import FT, KT, build_cases
from .sweeps import DEFAULT_ISA_RANGE_C, DEFAULT_LOW_WEIGHT_PCT_MTOW, SWEEP_COLUMNS, SWEEP_OVER, Sweep, sweep
from .table import Conditions, check_selection, selected_pairs
from .units import OptionError, flight_level_number

__all__ = [  # the envelopes, and the sweeps' names (from variantcmp.sweeps) for the callers of this module
    "BOUNDARIES", "BOUNDARY_LIMIT", "EXTRA_LINES", "MAX_ENVELOPE_CASES", "Envelope", "EnvelopeCase",
    "compute_envelopes", "envelopes_for_conditions", "envelopes_for_rows",
    "DEFAULT_ISA_RANGE_C", "DEFAULT_LOW_WEIGHT_PCT_MTOW", "SWEEP_COLUMNS", "SWEEP_OVER", "Sweep", "sweep",
]

#: Speed boundaries: name -> side of the band it can set ("low", "high") or "info" (drawn, not binding).
BOUNDARIES: dict[str, str] = {
    "stall_1g": "low",
    "buffet_low_1g": "info",
    "buffet_low_margin": "low",
    "thrust_min": "low",
    "thrust_max": "high",
    "buffet_high_margin": "high",
    "buffet_high_1g": "info",
    "vmo": "high",
    "mmo": "high",
}
#: Pseudo-boundaries in the table: the feasible band's edges and the marked (cruise) Mach line.
EXTRA_LINES = ("band_low", "band_high", "marked")
#: The limit each boundary stands for, in the ceilings table's vocabulary (speed limits by name).
BOUNDARY_LIMIT = {"stall_1g": "stall", "buffet_low_margin": "buffet", "buffet_high_margin": "buffet",
                  "thrust_min": "thrust", "thrust_max": "thrust", "vmo": "VMO", "mmo": "MMO",
                  "range_low": "speed range", "range_high": "speed range"}
MAX_ENVELOPE_CASES = 3

THRUST_MACH_GRID = 40
THRUST_SCAN_LOW = 0.05
THRUST_SCAN_HIGH = 0.98
ROOT_ITERATIONS = 30  # bisection in Mach: 0.93 / 2^30, about 1e-9
# The excess climb rate is flat at its peak: a Mach error of 1e-4 changes it by ~1e-6 m/s.
THRUST_PEAK_ITERATIONS = 14
TOP_TOL_M = 0.005  # bisection in altitude down to 5 mm
EXACT_LIMIT_M = 0.05  # a top this close to the certified or cabin ceiling is that ceiling
DISPLAY_LEVELS = 100
REFINE_LEVELS = 8  # extra levels in each grid interval where the band's binding boundary changes
TOP_LEVELS = 16  # extra levels in the last 8 % below the top, where the band closes


# --- the boundaries at given points --------------------------------------------------------------

def _bisect(func, lo, hi, rising, iterations=ROOT_ITERATIONS):
    return s.bisect_root(func, lo, hi, rising, iterations)


def _finite(values):
    return np.where(np.isnan(values), -np.inf, values)


def _buffet_branches(cs, cl_needed_at_mach1):
    """Low- and high-Mach buffet-onset Mach where n W = (gamma/2) p M^2 S CL_b(M), per point.

    ``cl_needed_at_mach1`` = n W / ((gamma/2) p S), the CL the load needs at Mach 1; the buffet-free
    speeds are where M^2 CL_b(M) >= it. Returns (low, high, clear): NaN where a branch lies outside
    the buffet data's Mach range or where no speed is buffet-free; ``clear`` is False only where no
    speed in the data is free of buffet (always True without buffet data).
    """
    n = cs.buffet_id.shape[0]
    has = cs.buffet_id >= 0
    low, high, clear = np.full(n, np.nan), np.full(n, np.nan), np.ones(n, dtype=bool)
    if not has.any():
        return low, high, clear
    safe = np.where(has, cs.buffet_id, 0)
    m_lo, m_hi = cs.buffet_low[safe], cs.buffet_high[safe]
    one = lambda m: m * m * s.buffet_cl_at(cs, m)  # noqa: E731  (M^2 CL_b(M))
    peak_m = s.buffet_peak_mach(cs, m_lo, m_hi)
    peak = _finite(one(peak_m))
    need = cl_needed_at_mach1
    clear = ~has | (peak >= need)
    gap = lambda m: one(m) - need  # noqa: E731
    with np.errstate(invalid="ignore"):
        low_ok = has & clear & (one(m_lo) < need)
        high_ok = has & clear & (one(m_hi) < need)
    low = np.where(low_ok, _bisect(gap, m_lo, peak_m, rising=True), np.nan)
    high = np.where(high_ok, _bisect(gap, peak_m, m_hi, rising=False), np.nan)
    return low, high, clear


def _thrust_scan_range(cs):
    """Mach range the thrust model covers per case (a table engine stops at its grid, a propeller
    engine at its efficiency table)."""
    lo, hi = np.full(len(cs), THRUST_SCAN_LOW), np.full(len(cs), THRUST_SCAN_HIGH)
    for ids, data in ((cs.table_id, cs.tables), (cs.propeller_id, cs.propellers)):
        if data:
            d_lo = np.array([d.mach[0] if d.mach.size else 0.0 for d in data])
            d_hi = np.array([d.mach[-1] if d.mach.size else 1.0 for d in data])
            has = ids >= 0
            which = np.where(has, ids, 0)
            lo = np.where(has, np.maximum(lo, d_lo[which]), lo)
            hi = np.where(has, np.minimum(hi, d_hi[which]), hi)
    return lo, hi


def _thrust_peak(phys, h):
    """Mach of the largest excess climb rate at each point, and that excess (NaN: no thrust data)."""
    cs = phys.cases
    lo, hi = _thrust_scan_range(cs)
    frac = np.linspace(0.0, 1.0, THRUST_MACH_GRID)
    grid = lo[:, None] + (hi - lo)[:, None] * frac[None, :]
    rep = s.ClimbPhysics(cs.repeat(THRUST_MACH_GRID))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        e = rep.excess(np.repeat(h, THRUST_MACH_GRID), grid.ravel()).reshape(grid.shape)
    e_obj = _finite(e)
    j = np.argmax(e_obj, axis=1)
    rows = np.arange(len(cs))

    def excess(m):
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            return _finite(phys.excess(h, m))

    peak_m, peak = s.golden_max(excess, grid[rows, np.maximum(j - 1, 0)],
                                 grid[rows, np.minimum(j + 1, THRUST_MACH_GRID - 1)], THRUST_PEAK_ITERATIONS)
    better = e_obj[rows, j] > peak
    peak_m, peak = np.where(better, grid[rows, j], peak_m), np.where(better, e_obj[rows, j], peak)
    return peak_m, peak, grid, e


def _thrust_branches(phys, h, peak_m, peak, grid, e):
    """Thrust-limited minimum and maximum Mach: excess climb rate = 0 on each side of the peak.

    NaN where the aircraft cannot climb at the required rate at any speed, or where the side's root
    lies beyond the Mach range the thrust model covers.
    """
    climbs = peak >= 0.0

    def excess(m):
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            return phys.excess(h, m)

    with np.errstate(invalid="ignore"):
        low_ok = climbs & (e[:, 0] < 0.0)
        high_ok = climbs & (e[:, -1] < 0.0)
    low = np.where(low_ok, _bisect(excess, grid[:, 0], peak_m, rising=True), np.nan)
    high = np.where(high_ok, _bisect(excess, peak_m, grid[:, -1], rising=False), np.nan)
    return low, high


def _nanmax(*arrays):
    return np.fmax.reduce(np.stack(np.broadcast_arrays(*arrays)), axis=0)


def _nanmin(*arrays):
    return np.fmin.reduce(np.stack(np.broadcast_arrays(*arrays)), axis=0)


def _evaluate(cs, h, thrust_roots=True):
    """Every boundary (Mach, NaN where absent), the band and whether it is open, at flat points.

    ``cs`` holds one case per point (``h`` aligned with it). Returns a dict of arrays. With
    ``thrust_roots`` False only what decides whether the band is open is computed (the top search).
    """
    phys = s.ClimbPhysics(cs)
    _, p, _ = isa_state(h)
    w = cs.weight_kg * G0
    cl_m1 = lift_coefficient(w, p, 1.0, cs.wing_area_m2)  # CL at Mach 1; CL(M) = cl_m1 / M^2
    out = {}
    with np.errstate(invalid="ignore", divide="ignore"):
        stall = np.sqrt(cl_m1 / cs.cl_max)
    out["stall_1g"] = np.where(stall < 1.0, stall, np.nan)
    if thrust_roots:
        out["buffet_low_1g"], out["buffet_high_1g"], _ = _buffet_branches(cs, cl_m1)
    out["buffet_low_margin"], out["buffet_high_margin"], clear = _buffet_branches(cs, cs.g_margin * cl_m1)
    out["mmo"] = cs.mmo.copy()
    with np.errstate(invalid="ignore"):
        vmo = cas_to_mach(cs.vmo_ms, p)
    out["vmo"] = np.where(vmo < 1.0, vmo, np.nan)
    peak_m, peak, grid, e = _thrust_peak(phys, h)
    if thrust_roots:
        out["thrust_min"], out["thrust_max"] = _thrust_branches(phys, h, peak_m, peak, grid, e)

    # The band without thrust: an absent boundary (NaN) does not constrain, except stall above Mach 1.
    low_nt = _nanmax(stall, out["buffet_low_margin"], cs.mach_low)
    high_nt = _nanmin(cs.mmo, vmo, out["buffet_high_margin"], cs.mach_high)
    m_test = np.clip(peak_m, low_nt, np.maximum(low_nt, high_nt))  # excess is unimodal in Mach
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        climbs = phys.excess(h, m_test) >= 0.0
    _, _, cabin, _ = s.closed_form_ceilings_m(cs, np.full(len(cs), 0.5))  # cabin ceiling needs no Mach
    with np.errstate(invalid="ignore"):
        is_open = (low_nt <= high_nt) & clear & climbs & (h <= cs.certified_m) & (h <= cabin)
    out["open"] = is_open
    if thrust_roots:
        band_low = _nanmax(low_nt, out["thrust_min"])
        band_high = _nanmin(high_nt, out["thrust_max"])
        out["band_low"] = np.where(is_open, band_low, np.nan)
        out["band_high"] = np.where(is_open, np.maximum(band_high, band_low), np.nan)
        out["band_low_by"] = _binding(out, ("stall_1g", "buffet_low_margin", "thrust_min"), cs.mach_low,
                                      "range_low", band_low, is_open)
        out["band_high_by"] = _binding(out, ("mmo", "vmo", "buffet_high_margin", "thrust_max"), cs.mach_high,
                                       "range_high", band_high, is_open)
    return out


def _binding(out, names, clip, clip_name, edge, is_open):
    """Name of the boundary that sets a band edge at each point ("" where the band is closed)."""
    values = np.stack([out[n] for n in names] + [clip])
    labels = np.array(list(names) + [clip_name], dtype=object)
    dist = np.abs(np.where(np.isnan(values), np.inf, values) - edge[None, :])
    return np.where(is_open, labels[np.argmin(dist, axis=0)], "")


def _limit_terms(cs, h, mach):
    """What the point-by-point limit checks need at (h, Mach): physics, p, CL, buffet CL, cabin ceiling."""
    _, p, _ = isa_state(h)
    cl = lift_coefficient(cs.weight_kg * G0, p, mach, cs.wing_area_m2)
    _, _, cabin, _ = s.closed_form_ceilings_m(cs, mach)
    return s.ClimbPhysics(cs), p, cl, s.buffet_cl_at(cs, mach), cabin


def _feasible_at_mach(cs, h, mach):
    """Whether every limit holds at a fixed Mach (the defining equations, point by point)."""
    phys, p, cl, cl_b, cabin = _limit_terms(cs, h, mach)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        ok = (cl <= cs.cl_max) & (np.isnan(cl_b) | (cs.g_margin * cl <= cl_b))
        ok &= phys.excess(h, mach) >= 0.0
        ok &= np.isnan(cs.mmo) | (mach <= cs.mmo + 1e-9)
        ok &= np.isnan(cs.vmo_ms) | (mach_to_cas(mach, p) <= cs.vmo_ms * (1.0 + 1e-9))
        ok &= (h <= cs.certified_m) & (h <= cabin)
    return ok


def _highest(cs, test):
    """Highest pressure altitude (m) where ``test(cases, h)`` holds: scan, then bisect the last step.

    NaN: nowhere on the scan; +inf: still true at the top of the model (or of the thrust data).
    """
    n = len(cs)
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    levels = np.clip(s.SCAN_LEVELS_M[None, :], cs.floor_m[:, None], top[:, None])
    k = levels.shape[1]
    rep = cs.repeat(k)
    ok = test(rep, levels.ravel()).reshape(n, k)
    any_ok = ok.any(axis=1)
    j = k - 1 - np.argmax(ok[:, ::-1], axis=1)
    result = np.full(n, np.nan)
    at_top = any_ok & (j == k - 1)
    result[at_top] = np.inf
    go = np.flatnonzero(any_ok & ~at_top)
    if go.size:
        sub = cs.take(go)
        lo, hi = levels[go, j[go]], levels[go, j[go] + 1]
        while np.max(hi - lo) > TOP_TOL_M:
            mid = 0.5 * (lo + hi)
            up = test(sub, mid)
            lo, hi = np.where(up, mid, lo), np.where(up, hi, mid)
        result[go] = lo
    return result


# --- the envelope -----------------------------------------------------------------------------

@dataclass(frozen=True)
class EnvelopeCase:
    """One envelope to compute: what a row of the ceilings table stands for."""

    variant: str
    engine: str
    weight_kg: float
    isa_dev_c: float = 0.0
    climb_fpm: float = 300.0
    g_margin: float = 1.3


@dataclass(frozen=True)
class Envelope:
    """Envelopes of up to three cases.

    ``table``: one row per case x altitude (``case`` indexes ``summary``) with ``altitude_ft``,
    ``flight_level``, ``open`` and, per boundary in :data:`BOUNDARIES` and :data:`EXTRA_LINES`,
    ``<name>_mach``, ``<name>_tas_kt``, ``<name>_cas_kt`` (null where it does not exist there).
    ``summary``: one row per case with the top of the envelope (``top_ft``, ``top_mach``, its speeds
    and ``top_limit``), the marked Mach's maximum altitude (``marked_top_ft``, ``marked_limit``),
    the VMO/MMO crossover, the certified and cabin ceilings and a ``note``.
    """

    table: pl.DataFrame
    summary: pl.DataFrame


def _case_set(catalogue, specs, mach):
    """A CaseSet with one case per spec, in order (built by crossing, then picking)."""
    pairs = list(dict.fromkeys((c.variant, c.engine) for c in specs))
    weights = list(dict.fromkeys(float(c.weight_kg) for c in specs))
    devs = list(dict.fromkeys(float(c.isa_dev_c) for c in specs))
    climbs = list(dict.fromkeys(float(c.climb_fpm) for c in specs))
    margins = list(dict.fromkeys(float(c.g_margin) for c in specs))
    if len(margins) > 1:
        raise OptionError("envelopes drawn together must share one buffet margin")
    mach_arg = "cruise" if mach in (None, "best", "cruise") else float(mach)
    cases, _ = build_cases(catalogue, pairs, lambda _v: weights, devs, climbs, mach_arg, margins[0])
    nw, nd, nc = len(weights), len(devs), len(climbs)
    pick = [((pairs.index((c.variant, c.engine)) * nw + weights.index(float(c.weight_kg))) * nd
             + devs.index(float(c.isa_dev_c))) * nc + climbs.index(float(c.climb_fpm)) for c in specs]
    return cases.take(np.array(pick, dtype=int))


def _display_levels(cs, top_m, marked_m):
    """Base altitude grid per case (flat case index, altitude), from 0 ft to a little above the top."""
    base = np.maximum(cs.floor_m, 0.0)
    # Above the top by 10 % (at least 3,000 ft) so the closing band and the limits beyond it show.
    ref = np.where(np.isfinite(top_m), top_m, np.where(np.isfinite(marked_m), marked_m, 45_000 * FT))
    upper = np.minimum(np.maximum(ref * 1.10, ref + 3000 * FT), np.minimum(cs.top_m, MODEL_TOP_M))
    frac = np.linspace(0.0, 1.0, DISPLAY_LEVELS)
    levels = base[:, None] + (upper - base)[:, None] * frac[None, :]
    near = np.where(np.isfinite(top_m), top_m, np.nan)[:, None] * (0.92 + 0.08 * np.linspace(0, 1, TOP_LEVELS))[None, :]
    extra = np.concatenate([near, top_m[:, None], marked_m[:, None]], axis=1)
    extra = np.where((extra >= base[:, None]) & (extra <= upper[:, None]), extra, np.nan)
    return np.concatenate([levels, extra], axis=1)


def _flatten(levels):
    idx, col = np.nonzero(np.isfinite(levels))
    return idx, levels[idx, col]


def compute_envelopes(catalogue, specs: list[EnvelopeCase], mach="cruise") -> Envelope:
    """Speed-altitude envelopes of up to three cases; ``mach`` marks a Mach line ("cruise" or a Mach)."""
    if not specs:
        raise OptionError("envelope: no case selected")
    if len(specs) > MAX_ENVELOPE_CASES:
        raise OptionError(f"envelope: at most {MAX_ENVELOPE_CASES} cases can be overlaid, got {len(specs)}; "
                          "narrow the selection with --engine, --weight or --isa")
    cs = _case_set(catalogue, specs, mach)
    top_m = _highest(cs, lambda c, h: _evaluate(c, h, thrust_roots=False)["open"])
    marked_m = _highest(cs, lambda c, h: _feasible_at_mach(c, h, c.mach))

    levels = _display_levels(cs, top_m, marked_m)
    idx, h = _flatten(levels)
    first = _evaluate(cs.take(idx), h)
    # Refine where the band's binding boundary changes between neighbouring levels.
    order = np.lexsort((h, idx))
    idx, h = idx[order], h[order]
    first = {k: v[order] for k, v in first.items()}
    same_case = idx[1:] == idx[:-1]
    change = same_case & ((first["band_low_by"][1:] != first["band_low_by"][:-1])
                          | (first["band_high_by"][1:] != first["band_high_by"][:-1]))
    k = np.flatnonzero(change)
    if k.size:
        frac = np.linspace(0.0, 1.0, REFINE_LEVELS + 2)[1:-1]
        new_h = (h[k, None] + (h[k + 1] - h[k])[:, None] * frac[None, :]).ravel()
        new_idx = np.repeat(idx[k], REFINE_LEVELS)
        more = _evaluate(cs.take(new_idx), new_h)
        idx = np.concatenate([idx, new_idx])
        h = np.concatenate([h, new_h])
        first = {key: np.concatenate([first[key], more[key]]) for key in first}
        order = np.lexsort((h, idx))
        idx, h = idx[order], h[order]
        first = {key: v[order] for key, v in first.items()}
    point_cases = cs.take(idx)
    first["marked"] = point_cases.mach.copy()

    t_isa, p, _ = isa_state(h)
    a = speed_of_sound_ms(t_isa + point_cases.isa_dev_c)
    alt_ft = h / FT
    columns = {
        "case": idx,
        "variant": [specs[i].variant for i in idx],
        "engine": [specs[i].engine for i in idx],
        "altitude_ft": alt_ft,
        "flight_level": flight_level_number(alt_ft),
        "open": first["open"],
    }
    for name in list(BOUNDARIES) + list(EXTRA_LINES):
        m = first[name]
        with np.errstate(invalid="ignore"):
            columns[f"{name}_mach"] = m
            columns[f"{name}_tas_kt"] = m * a / KT
            columns[f"{name}_cas_kt"] = mach_to_cas(m, p) / KT
    columns["band_low_by"] = [BOUNDARY_LIMIT.get(b, None) if b else None for b in first["band_low_by"]]
    columns["band_high_by"] = [BOUNDARY_LIMIT.get(b, None) if b else None for b in first["band_high_by"]]
    table = pl.DataFrame(columns, nan_to_null=True).with_columns(pl.col("flight_level").cast(pl.Int64))
    summary = _summary(cs, specs, top_m, marked_m)
    return Envelope(table=table, summary=summary)


def _summary(cs, specs, top_m, marked_m) -> pl.DataFrame:
    n = len(cs)
    finite = np.isfinite(top_m)
    h_top = np.where(finite, top_m, 0.0)
    at = _evaluate(cs, h_top)
    top_mach = np.where(finite, 0.5 * (at["band_low"] + at["band_high"]), np.nan)
    t_isa, p, _ = isa_state(h_top)
    a = speed_of_sound_ms(t_isa + cs.isa_dev_c)
    _, _, cabin, _ = s.closed_form_ceilings_m(cs, cs.mach)
    # A top on the certified or cabin ceiling is that ceiling, exactly (the bisection stops a few
    # millimetres short): the same number and flight level as the ceilings answer gives.
    on_certified = np.abs(top_m - cs.certified_m) < EXACT_LIMIT_M
    on_cabin = ~on_certified & (np.abs(top_m - cabin) < EXACT_LIMIT_M)
    top_m = np.where(on_certified, cs.certified_m, np.where(on_cabin, cabin, top_m))
    for fixed in (cs.certified_m, cabin):
        marked_m = np.where(np.abs(marked_m - fixed) < EXACT_LIMIT_M, fixed, marked_m)
    limits = []
    for i in range(n):  # names only: the numbers are computed above, vectorised
        if not finite[i]:
            limits.append(None)
        elif on_certified[i]:
            limits.append("certified")
        elif on_cabin[i]:
            limits.append("cabin")
        else:
            lo, hi = BOUNDARY_LIMIT.get(at["band_low_by"][i]), BOUNDARY_LIMIT.get(at["band_high_by"][i])
            limits.append(lo if lo == hi else f"{lo} / {hi}")
    marked_finite = np.isfinite(marked_m)
    above = np.where(marked_finite, marked_m + 0.5, 0.0)
    marked_limit = _failing_limit(cs, above, cs.mach)
    marked_limit = [m if marked_finite[i] else None for i, m in enumerate(marked_limit)]
    with np.errstate(invalid="ignore", divide="ignore"):
        crossover = pressure_altitude_m(pressure_for_cas_at_mach_pa(cs.vmo_ms, cs.mmo))
    notes = []
    for i in range(n):
        parts = []
        if np.isnan(top_m[i]):
            parts.append(f"no altitude meets every limit at {specs[i].climb_fpm:g} ft/min at any speed")
        elif np.isposinf(top_m[i]):
            parts.append("the band is still open at the top of the model or of the thrust data")
        if np.isnan(marked_m[i]):
            parts.append(f"M{cs.mach[i]:.2f} meets the limits at no altitude")
        if cs.over_mtow[i]:
            parts.append("above MTOW")
        notes.append("; ".join(parts))

    def ft(values):
        out = np.asarray(values, dtype=float) / FT
        return np.where(np.isfinite(out), out, np.nan)

    frame = pl.DataFrame({
        "case": np.arange(n),
        "variant": [c.variant for c in specs],
        "engine": [c.engine for c in specs],
        "weight_kg": cs.weight_kg,
        "isa_dev_c": cs.isa_dev_c,
        "climb_fpm": [float(c.climb_fpm) for c in specs],
        "g_margin": cs.g_margin,
        "top_ft": ft(top_m),
        "top_flight_level": flight_level_number(ft(top_m)),
        "top_mach": top_mach,
        "top_tas_kt": top_mach * a / KT,
        "top_cas_kt": mach_to_cas(top_mach, p) / KT,
        "top_limit": pl.Series(limits, dtype=pl.String),
        "marked_mach": cs.mach,
        "marked_top_ft": ft(marked_m),
        "marked_flight_level": flight_level_number(ft(marked_m)),
        "marked_limit": pl.Series(marked_limit, dtype=pl.String),
        "vmo_mmo_crossover_ft": ft(crossover),
        "certified_ft": ft(cs.certified_m),
        "cabin_ft": ft(cabin),
        "mmo": cs.mmo,
        "vmo_kt": cs.vmo_ms / KT,
        "note": notes,
    }, nan_to_null=True).with_columns(pl.col("top_flight_level", "marked_flight_level").cast(pl.Int64))
    return frame


def _failing_limit(cs, h, mach) -> list[str]:
    """The limit that fails first just above a fixed-Mach maximum altitude (names for the summary)."""
    phys, p, cl, cl_b, cabin = _limit_terms(cs, h, mach)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        fails = {
            "certified": h > cs.certified_m,
            "cabin": h > cabin,
            "buffet": ~np.isnan(cl_b) & (cs.g_margin * cl > cl_b),
            "stall": cl > cs.cl_max,
            "thrust": ~(phys.excess(h, mach) >= 0.0),
        }
    names = []
    for i in range(len(cs)):
        names.append(next((k for k, v in fails.items() if v[i]), "none"))
    return names


def envelopes_for_conditions(catalogue, conditions: Conditions) -> Envelope:
    """Envelopes of every case the conditions select (at most three), marking their Mach line."""
    check_selection(catalogue, conditions)
    specs = [EnvelopeCase(vid, eid, w.resolve_kg(catalogue.variants[vid].mtow_kg), dev, climb, conditions.g_margin)
             for vid, eid in selected_pairs(catalogue, conditions)
             for w in conditions.weights for dev in conditions.isa_devs_c for climb in conditions.climb_fpm]
    return compute_envelopes(catalogue, specs, conditions.mach)


def envelopes_for_rows(catalogue, rows, g_margin: float = 1.3, mach="cruise") -> Envelope:
    """Envelopes for rows of a ceilings table (dicts with variant, engine, weight_kg, isa_dev_c, climb_fpm)."""
    specs = [EnvelopeCase(r["variant"], r["engine"], float(r["weight_kg"]), float(r["isa_dev_c"]),
                          float(r["climb_fpm"]), g_margin) for r in rows]
    return compute_envelopes(catalogue, specs, mach)
