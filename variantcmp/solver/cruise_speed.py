"""Cruise speeds at a level: the Mach of maximum specific range (MRC) and the long-range cruise
Mach (LRC), within the speeds the aircraft may fly there.

Stages, each vectorised over the cases (loops over iterations only):

- :func:`speed_bounds`: the Mach range allowed at the level, and what bounds it at each end: the
  1 g stall, the buffet margin (the Machs where n W <= q S CL_buffet(M), around the buffet
  boundary's peak of M^2 CL_buffet), MMO, VMO (as a Mach at that pressure), the speed range of the
  thrust, buffet and fuel data.
- :func:`max_range_mach`: the maximum of specific range over that range (a scan of
  :data:`MRC_SCAN` Machs, then golden section between the best one's neighbours).
- :func:`long_range_mach`: the faster Mach where specific range falls to :data:`LRC_SHARE` of its
  maximum (a regula-falsi root between MRC and the top of the range), or the top of the range
  where specific range is still above that share there.
- :func:`thrust_band`: where thrust is below drag at an answer, the speeds at which thrust holds
  the level (F >= D); the answers are solved again within them.

:func:`cruise_speeds` runs them in this order.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..airspeed import cas_to_mach
from ..atmosphere import G0, GAMMA, isa_pressure_pa
from .cruise import CANNOT_HOLD_LEVEL, FUEL_DATA_MACH, NO_FUEL_DATA, NO_SPEED, NO_SPEED_IN_BUFFET_MARGIN
from .finders import edge_root, golden_max, illinois_root, nan_as_lowest
from .fuel_flow import NO_FUEL, CruisePhysics, in_chunks
from .limits import buffet_cl_at, buffet_peak_mach

#: Long-range cruise: the faster Mach at 99 % of the maximum specific range (common practice, no
#: source).
LRC_SHARE = 0.99
#: What bounds the speed range at a level, by code.
SPEED_LIMITS = ("speed range", "stall", "buffet", "MMO", "VMO", "fuel data", "thrust")
RANGE, STALL, BUFFET, MMO, VMO, FUEL, THRUST = range(len(SPEED_LIMITS))
MRC_SCAN = 9  # Machs scanned over the range before the golden section
MRC_STEPS = 20  # golden-section steps: two scan steps (at most 0.125) x 0.618^20, about 8e-6 in Mach
ROOT_TOL_MACH = 1e-8  # the edges of the buffet margin's and thrust's speed bands
THRUST_PEAK_STEPS = 12  # golden section for a speed inside the thrust band (only needs to be inside)
LRC_TOL = 1e-8  # Mach
AT_BOUND = 1e-12  # an answer on an end of the range (Mach) is held there


@dataclass
class CruiseSpeeds:
    """Per case at a level: MRC and LRC Machs with their specific ranges (m/kg), the speed range,
    the code (:data:`SPEED_LIMITS`) of what holds each answer (-1: none, a free maximum or root)."""

    mrc_mach: np.ndarray
    mrc_sr: np.ndarray
    lrc_mach: np.ndarray
    lrc_sr: np.ndarray
    low: np.ndarray
    high: np.ndarray
    mrc_bound: np.ndarray
    lrc_bound: np.ndarray
    flags: np.ndarray


def buffet_mach_band(cases, pressure_pa):
    """Machs at which the buffet margin holds at a pressure: n W <= (gamma/2) p M^2 S CL_b(M)
    (Anderson, *Introduction to Flight*, eq. 4.83), the band around the boundary's peak of
    M^2 CL_b(M) (:func:`~variantcmp.solver.limits.buffet_peak_mach`), by regula falsi on each side.
    (low, high); -inf, +inf without buffet data; NaN where the margin holds at no speed."""
    n = len(cases)
    low, high = np.full(n, -np.inf), np.full(n, np.inf)
    has = np.flatnonzero(cases.buffet_id >= 0)
    if not has.size:
        return low, high
    sub = cases.take(has)
    data_lo, data_hi = sub.buffet_low[sub.buffet_id], sub.buffet_high[sub.buffet_id]
    need = sub.g_margin * sub.weight_kg * G0 / (0.5 * GAMMA * sub.wing_area_m2 * np.asarray(pressure_pa)[has])

    capacity = _BuffetRoom(sub, need)
    peak = buffet_peak_mach(sub, data_lo, data_hi)
    at_peak = capacity(peak)
    holds = at_peak >= 0.0
    lo = edge_root(capacity, peak, at_peak, data_lo, ROOT_TOL_MACH)
    hi = edge_root(capacity, peak, at_peak, data_hi, ROOT_TOL_MACH)
    low[has], high[has] = np.where(holds, lo, np.nan), np.where(holds, hi, np.nan)
    return low, high


class _BuffetRoom:
    """M^2 CL_b(M) less what the buffet margin needs, per case, as a function of Mach (a family)."""

    __slots__ = ("cases", "need")

    def __init__(self, cases, need):
        self.cases, self.need = cases, need

    def __call__(self, mach):
        return mach * mach * buffet_cl_at(self.cases, mach) - self.need

    def subset(self, keep):
        return _BuffetRoom(self.cases.take(keep), self.need[keep])


def speed_bounds(cruise: CruisePhysics, pressure_pa):
    """The allowed Mach range at a pressure per case: (low, high, low code, high code, flags).

    Guarantees: every Mach in [low, high] is within the speed range of the data, at or above the
    1 g stall, within the buffet margin, MMO and VMO; the codes name the bound at each end (the
    tightest one). Where no speed is left the range is NaN and flagged.
    """
    cases, fuel = cruise.phys.cases, cruise.fuel
    p = np.asarray(pressure_pa, dtype=float)
    n = len(cruise)
    flags = np.zeros(n, dtype=np.int32)
    flags[fuel.code == NO_FUEL] |= NO_FUEL_DATA
    stall = np.sqrt(cases.weight_kg * G0 / (0.5 * GAMMA * cases.wing_area_m2 * p * cases.cl_max))
    buffet_lo, buffet_hi = buffet_mach_band(cases, p)
    flags[np.isnan(buffet_lo)] |= NO_SPEED_IN_BUFFET_MARGIN
    with np.errstate(invalid="ignore"):
        vmo = np.where(np.isnan(cases.vmo_ms), np.inf, cas_to_mach(cases.vmo_ms, p))
    fuel_lo, fuel_hi = fuel.mach_range()
    range_hi_code = np.where(np.isfinite(cases.mmo) & (cases.mach_high >= cases.mmo - 1e-12), MMO, RANGE)
    lows = np.stack([cases.mach_low, stall, np.nan_to_num(buffet_lo, nan=np.inf), fuel_lo])
    low_codes = np.array([RANGE, STALL, BUFFET, FUEL])
    highs = np.stack([cases.mach_high, np.nan_to_num(buffet_hi, nan=-np.inf), vmo, fuel_hi])
    i_lo, i_hi = np.argmax(lows, axis=0), np.argmin(highs, axis=0)
    rows = np.arange(n)
    low, high = lows[i_lo, rows], highs[i_hi, rows]
    high_code = np.where(i_hi == 0, range_hi_code, np.array([RANGE, BUFFET, VMO, FUEL])[i_hi])
    empty = ~(low <= high)
    fuel_gap = empty & ((fuel_lo > cases.mach_high) | (fuel_hi < cases.mach_low)) & (fuel.code != NO_FUEL)
    flags[fuel_gap] |= FUEL_DATA_MACH
    flags[empty & ~(flags & (NO_SPEED_IN_BUFFET_MARGIN | FUEL_DATA_MACH)).astype(bool)] |= NO_SPEED
    return (np.where(empty, np.nan, low), np.where(empty, np.nan, high), low_codes[i_lo],
            high_code, flags)


def max_range_mach(cruise: CruisePhysics, pressure_pa, altitude_m, low, high):
    """MRC per case: the Mach in [low, high] of maximum specific range at the level, and that
    specific range (m/kg).

    Guarantees: the best of MRC_SCAN evenly spaced Machs refined by golden section to about 1e-5
    (a single-peaked specific range's maximum; a kinked one, from a TSFC table or a propeller
    efficiency against Mach, its best local peak near the best scan point, on the kink exactly where
    the peak is one); an end of the range exactly where specific range is best there.
    """
    n = len(cruise)

    def sr(m):
        return nan_as_lowest(cruise.specific_range_m_per_kg(pressure_pa, m, altitude_m))

    frac = np.linspace(0.0, 1.0, MRC_SCAN)
    grid = low[:, None] + (high - low)[:, None] * frac[None, :]
    values = np.stack([sr(grid[:, j]) for j in range(MRC_SCAN)], axis=1)  # a Mach per call: no gathers
    best = np.argmax(values, axis=1)
    rows = np.arange(n)
    a, b = grid[rows, np.maximum(best - 1, 0)], grid[rows, np.minimum(best + 1, MRC_SCAN - 1)]
    mach, value = golden_max(sr, a, b, MRC_STEPS)
    # A maximum on an end of the range: the end itself (the scan evaluated it), not a point near it.
    for end in (0, MRC_SCAN - 1):
        on_end = values[:, end] >= value
        mach, value = np.where(on_end, grid[:, end], mach), np.where(on_end, values[:, end], value)
    return _on_data_nodes(cruise, pressure_pa, altitude_m, a, b, mach, value)


def _on_data_nodes(cruise: CruisePhysics, pressure_pa, altitude_m, a, b, mach, value):
    """A maximum on a kink of the fuel data (a TSFC table's or a propeller efficiency's Mach column,
    where specific range is linear either side): the node itself where it beats the golden section's
    answer, for the cases whose bracket [a, b] holds it."""
    everyone = np.arange(len(cruise))
    for _, nodes, idx in cruise.fuel.mach_nodes():
        rows = everyone[idx]
        for node in nodes:
            near = rows[(a[rows] <= node) & (node <= b[rows])]
            if near.size:
                at = cruise.subset(near).specific_range_m_per_kg(pressure_pa[near], np.full(near.size, node),
                                                                 altitude_m[near])
                better = nan_as_lowest(at) > value[near]
                mach[near[better]], value[near[better]] = node, at[better]
    return mach, value


class _RangeAbove:
    """Specific range less a target at fixed pressures, as a function of Mach: a family for the
    root finder."""

    __slots__ = ("cruise", "p", "h", "target")

    def __init__(self, cruise, p, h, target):
        self.cruise, self.p, self.h, self.target = cruise, p, h, target

    def __call__(self, mach):
        return self.cruise.specific_range_m_per_kg(self.p, mach, self.h) - self.target

    def subset(self, keep):
        return _RangeAbove(self.cruise.subset(keep), self.p[keep], self.h[keep], self.target[keep])


def long_range_mach(cruise: CruisePhysics, pressure_pa, altitude_m, mrc_mach, mrc_sr, high):
    """LRC per case: the Mach above MRC where specific range is LRC_SHARE of its maximum, or
    ``high`` where it is still above that there; (Mach, specific range, held at ``high``).

    Guarantees: specific range at the answer is LRC_SHARE x the maximum to the root finder's
    tolerance (Anderson-Bjorck regula falsi to LRC_TOL), or the answer is ``high``."""
    family = _RangeAbove(cruise, pressure_pa, altitude_m, LRC_SHARE * mrc_sr)
    at_high = family(high)
    held = ~(at_high < 0.0)
    mach = high.copy()
    todo = np.flatnonzero(~held)
    if todo.size:
        sub = family.subset(todo)
        mach[todo] = illinois_root(sub, mrc_mach[todo], high[todo], sub(mrc_mach[todo]), at_high[todo], LRC_TOL)
    sr = cruise.specific_range_m_per_kg(pressure_pa, mach, altitude_m)
    return mach, sr, held


def thrust_margin_n(cruise: CruisePhysics, pressure_pa, altitude_m, mach):
    """Thrust available less drag (N) in level flight at a Mach; -inf where thrust is unknown."""
    phys = cruise.phys
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        return nan_as_lowest(phys.available_thrust_n(altitude_m, mach) - phys.drag_at_pressure_n(pressure_pa, mach))


class _ThrustRoom:
    """Thrust less drag in level flight at fixed pressures, as a function of Mach (a family)."""

    __slots__ = ("cruise", "p", "h")

    def __init__(self, cruise, p, h):
        self.cruise, self.p, self.h = cruise, p, h

    def __call__(self, mach):
        return thrust_margin_n(self.cruise, self.p, self.h, mach)

    def subset(self, keep):
        return _ThrustRoom(self.cruise.subset(keep), self.p[keep], self.h[keep])


def thrust_band(cruise: CruisePhysics, pressure_pa, altitude_m, low, high):
    """The Machs in [low, high] at which thrust holds the level (F >= D): (low, high, holds).

    The margin F - D is taken as single-peaked in Mach: a speed inside the band by golden section
    on it, then the band's edge on each side where the margin is negative at that end (regula
    falsi)."""
    margin = _ThrustRoom(cruise, pressure_pa, altitude_m)
    peak, best = golden_max(margin, low, high, THRUST_PEAK_STEPS)
    return (edge_root(margin, peak, best, low, ROOT_TOL_MACH), edge_root(margin, peak, best, high, ROOT_TOL_MACH),
            best >= 0.0)


def _speeds_within(cruise, p, h, low, high):
    mrc, sr = max_range_mach(cruise, p, h, low, high)
    lrc, lrc_sr, held = long_range_mach(cruise, p, h, mrc, sr, high)
    return mrc, sr, lrc, lrc_sr, held


def cruise_speeds(cruise: CruisePhysics, altitude_m) -> CruiseSpeeds:
    """MRC and LRC at a pressure altitude (m) per case: the stages of the module docstring, in
    chunks (:func:`~variantcmp.solver.fuel_flow.in_chunks`)."""
    return in_chunks(_cruise_speeds, cruise, np.broadcast_to(np.asarray(altitude_m, dtype=float), (len(cruise),)))


def _cruise_speeds(cruise: CruisePhysics, altitude_m) -> CruiseSpeeds:
    n = len(cruise)
    h = np.array(altitude_m, dtype=float)
    p = isa_pressure_pa(h)
    low, high, low_code, high_code, flags = speed_bounds(cruise, p)
    out = CruiseSpeeds(*(np.full(n, np.nan) for _ in range(6)), np.full(n, -1), np.full(n, -1), flags)
    out.low, out.high = low, high
    go = np.flatnonzero(np.isfinite(low) & ((flags & NO_FUEL_DATA) == 0))
    if not go.size:
        return out
    sub = cruise.subset(go)
    lo, hi = low[go], high[go]
    lo_code, hi_code = low_code[go], high_code[go]
    mrc, sr, lrc, lrc_sr, held = _speeds_within(sub, p[go], h[go], lo, hi)
    # Thrust must hold the level at both answers; else solve again where it does.
    short = np.flatnonzero(~((thrust_margin_n(sub, p[go], h[go], mrc) >= 0.0)
                             & (thrust_margin_n(sub, p[go], h[go], lrc) >= 0.0)))
    if short.size:
        tight = sub.subset(short)
        t_lo, t_hi, holds = thrust_band(tight, p[go][short], h[go][short], lo[short], hi[short])
        lo_code[short] = np.where(t_lo > lo[short], THRUST, lo_code[short])
        hi_code[short] = np.where(t_hi < hi[short], THRUST, hi_code[short])
        lo[short], hi[short] = t_lo, t_hi
        again = _speeds_within(tight, p[go][short], h[go][short], t_lo, t_hi)
        for whole, part in zip((mrc, sr, lrc, lrc_sr, held), again):
            whole[short] = part
        cannot = short[~holds]
        flags[go[cannot]] |= CANNOT_HOLD_LEVEL
        for a in (mrc, sr, lrc, lrc_sr, lo, hi):
            a[cannot] = np.nan
        held[cannot] = False
    out.mrc_mach[go], out.mrc_sr[go], out.lrc_mach[go], out.lrc_sr[go] = mrc, sr, lrc, lrc_sr
    out.low[go], out.high[go] = lo, hi
    out.mrc_bound[go] = np.where(mrc - lo < AT_BOUND, lo_code, np.where(hi - mrc < AT_BOUND, hi_code, -1))
    out.lrc_bound[go] = np.where(held, hi_code, -1)
    return out
