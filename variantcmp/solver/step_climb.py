"""Step climbs at a fixed Mach: as fuel burns off, the weights at which to step up to the next level
of a scheme, and the fuel, still-air distance and time flown at each level.

A step to the next level is due at the first weight (going down) at which that level is both
within the maximum altitude at the climb criterion and gives a better specific range than the
level flown. Both conditions are thresholds in weight found once per level, for every case and
level at once (the schedule is then a walk through them):

- :func:`reach_weights`: per level, the heaviest weight at which it lies within the maximum
  altitude (the maximum altitude falls as weight rises: a bisection on max_altitude(W) - level,
  each evaluation one fixed-Mach ceilings solve of every case x level);
- :func:`crossover_weights`: per pair of adjacent levels, the weight below which the upper one
  gives the better specific range (with D = A + B W^2 at each level, a single crossing);
- :func:`schedule`: the walk from the starting level down to the final weight;
- :func:`segment_integrals`: per level flown, distance = integral of specific range over the
  weight burnt (dW/dx = -1/SR, so x = integral SR dW) and time = integral of dW / fuel flow, by
  Gauss-Legendre quadrature in weight (:data:`QUADRATURE_NODES` nodes: specific range is smooth in
  weight at a fixed level and Mach). The fuel burnt at a level is the weight lost there.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from ..atmosphere import isa_pressure_pa
from ..cases import CaseSet
from .finders import illinois_root, nan_as_lowest
from .fuel_flow import CruisePhysics, FuelData
from .parallel import solve_ceilings
from .physics import ClimbPhysics

WEIGHT_TOL_KG = 0.5  # step weights to half a kg
LEVEL_ROOM_M = 0.01  # a maximum altitude this close under a level (1 cm) reaches it
QUADRATURE_NODES = 8
MAX_STEPS = 40  # more steps than any scheme has levels between FL010 and the model's reach


@dataclass
class Schedule:
    """Per case x segment (a level flown): the level (m), its start and end weights (kg); NaN
    where the case has fewer segments. ``segments[i]`` counts case i's."""

    level_m: np.ndarray
    start_kg: np.ndarray
    end_kg: np.ndarray
    segments: np.ndarray
    stop: np.ndarray  # why the last level is kept to the light weight: STOP_* bits (0: no case)


# Why a schedule stays at its last level down to the final weight (bits).
STOP_NOT_REACHED = 1  # the next level is not within the maximum altitude before the final weight
STOP_NOT_BETTER = 2  # the next level gives no better specific range before the final weight
STOP_TOP = 4  # the scheme (or the levels searched) has no level above


def _at_weights(cases: CaseSet, fuel: FuelData, rows, weight_kg) -> CruisePhysics:
    """The cruise physics of the cases ``rows`` at other weights (a derived case set)."""
    derived = dataclasses.replace(cases.take(rows), weight_kg=np.asarray(weight_kg, dtype=float))
    return CruisePhysics(ClimbPhysics(derived), fuel.take(rows))


def specific_range_at(cases, fuel, rows, weight_kg, level_m, mach):
    """Specific range (m/kg) of the cases ``rows`` at weights and levels (m), at their Machs."""
    cruise = _at_weights(cases, fuel, rows, weight_kg)
    return cruise.specific_range_m_per_kg(isa_pressure_pa(level_m), mach, level_m)


class _Reach:
    """max_altitude(W) - level (m) of (case, level) pairs as a function of weight; NaN maximum
    altitudes (no altitude at all) count as -inf."""

    __slots__ = ("cases", "rows", "level")

    def __init__(self, cases, rows, level):
        self.cases, self.rows, self.level = cases, rows, level

    def __call__(self, weight_kg):
        derived = dataclasses.replace(self.cases.take(self.rows), weight_kg=np.asarray(weight_kg, dtype=float))
        # A level equal to a flat limit (the certified ceiling) is within it: a little room makes
        # that plateau positive, so the root is where the maximum altitude reaches the level.
        return nan_as_lowest(solve_ceilings(derived).max_altitude_m) - self.level + LEVEL_ROOM_M

    def subset(self, keep):
        return _Reach(self.cases, self.rows[keep], self.level[keep])


def reach_weights(cases: CaseSet, levels_m, light_kg, heavy_kg):
    """Per case and level, the heaviest weight in [light, heavy] at which the level lies within the
    maximum altitude (at the case's Mach and climb criterion): heavy where it does throughout, NaN
    where it does not even at the light weight. Shape (cases, levels).

    Guarantees: the weight to WEIGHT_TOL_KG, on the side where the level is within the maximum
    altitude (as ``ceilings`` at that weight gives it), by bisection."""
    n, k = len(cases), levels_m.size
    rows, level = np.repeat(np.arange(n), k), np.tile(levels_m, n)
    family = _Reach(cases, rows, level)
    heavy, light = np.repeat(heavy_kg, k), np.repeat(light_kg, k)
    at_heavy, at_light = family(heavy), family(light)
    out = np.where(at_heavy >= 0.0, heavy, np.nan)
    todo = np.flatnonzero((at_heavy < 0.0) & (at_light >= 0.0))
    if todo.size:
        # Bisection, not a secant method: the maximum altitude has kinks and flat stretches in
        # weight (where a limit takes over; the certified ceiling binding below some weight).
        sub, lo, hi = family.subset(todo), light[todo], heavy[todo]
        for _ in range(int(np.ceil(np.log2(max(np.max(hi - lo), WEIGHT_TOL_KG) / WEIGHT_TOL_KG)))):
            mid = 0.5 * (lo + hi)
            reached = sub(mid) >= 0.0
            lo, hi = np.where(reached, mid, lo), np.where(reached, hi, mid)
        out[todo] = lo  # the side where the level is reached
    return out.reshape(n, k)


class _Crossing:
    """SR(upper level) - SR(lower level) of (case, level pair) rows as a function of weight."""

    __slots__ = ("cases", "fuel", "rows", "lower", "upper", "mach")

    def __init__(self, cases, fuel, rows, lower, upper, mach):
        self.cases, self.fuel, self.rows, self.lower, self.upper, self.mach = cases, fuel, rows, lower, upper, mach

    def __call__(self, weight_kg):
        up = specific_range_at(self.cases, self.fuel, self.rows, weight_kg, self.upper, self.mach)
        down = specific_range_at(self.cases, self.fuel, self.rows, weight_kg, self.lower, self.mach)
        return nan_as_lowest(up) - np.where(np.isnan(down), 0.0, down)

    def subset(self, keep):
        return _Crossing(self.cases, self.fuel, self.rows[keep], self.lower[keep], self.upper[keep], self.mach[keep])


def crossover_weights(cases: CaseSet, fuel: FuelData, levels_m, light_kg, heavy_kg):
    """Per case and level i, the weight in [light, heavy] below which level i + 1 gives a better
    specific range than level i (at the case's Mach): heavy where it does throughout, NaN where
    it does not even at the light weight. Shape (cases, levels - 1).

    Guarantees: the root to WEIGHT_TOL_KG, on the side where the upper level is better."""
    n, k = len(cases), levels_m.size - 1
    rows = np.repeat(np.arange(n), k)
    lower, upper = np.tile(levels_m[:-1], n), np.tile(levels_m[1:], n)
    family = _Crossing(cases, fuel, rows, lower, upper, cases.mach[rows])
    heavy, light = np.repeat(heavy_kg, k), np.repeat(light_kg, k)
    at_heavy, at_light = family(heavy), family(light)
    out = np.where(at_heavy > 0.0, heavy, np.nan)
    todo = np.flatnonzero(~(at_heavy > 0.0) & (at_light > 0.0))
    if todo.size:
        sub = family.subset(todo)
        root = illinois_root(sub, light[todo], heavy[todo], at_light[todo], at_heavy[todo], WEIGHT_TOL_KG)
        out[todo] = np.where(sub(root) > 0.0, root, root - WEIGHT_TOL_KG)
    return out.reshape(n, k)


def schedule(start_index, levels_m, reach_kg, crossover_kg, heavy_kg, light_kg) -> Schedule:
    """The walk: from level ``start_index`` (per case, -1: none) at the heavy weight, step to the
    next level at min(its reach weight, the crossover weight, the weight now) while that is above
    the light weight. Steps at the same weight merge (a climb of several levels at once).

    Guarantees: weights fall along a case's segments, which join end to start and end at the
    light weight; each step's level is within the maximum altitude at its weight and gives the
    better specific range there (to WEIGHT_TOL_KG)."""
    n, k = start_index.size, levels_m.size
    level_i = start_index.copy()
    weight = np.asarray(heavy_kg, dtype=float).copy()
    active = level_i >= 0
    light_kg = np.broadcast_to(np.asarray(light_kg, dtype=float), (n,))
    stop = np.zeros(n, dtype=np.int8)
    starts, ends, levels = [], [], []
    for _ in range(MAX_STEPS):
        if not active.any():
            break
        nxt = level_i + 1
        can = active & (nxt < k)
        rows, safe_next, safe_now = np.arange(n), np.clip(nxt, 0, k - 1), np.clip(level_i, 0, max(k - 2, 0))
        # Both conditions hold from the lighter of the two thresholds down (NaN: never).
        reach = np.where(can, reach_kg[rows, safe_next], np.nan)
        better = np.where(can, crossover_kg[rows, safe_now], np.nan) if k > 1 else np.full(n, np.nan)
        step_at = np.minimum(np.minimum(reach, better), weight)
        step = can & (step_at > light_kg)
        end = np.where(step, step_at, light_kg)
        ending = active & ~step
        stop[ending] = np.where(~can[ending], STOP_TOP, np.where(reach[ending] > light_kg[ending], 0, STOP_NOT_REACHED)
                                | np.where(better[ending] > light_kg[ending], 0, STOP_NOT_BETTER))
        levels.append(np.where(active, levels_m[np.clip(level_i, 0, k - 1)], np.nan))
        starts.append(np.where(active, weight, np.nan))
        ends.append(np.where(active, end, np.nan))
        level_i = np.where(step, nxt, level_i)
        weight = np.where(step, step_at, weight)
        active = step
    level = np.stack(levels, axis=1) if levels else np.full((n, 0), np.nan)
    start = np.stack(starts, axis=1) if starts else level.copy()
    end = np.stack(ends, axis=1) if ends else level.copy()
    # Zero-length segments: a level passed at the weight of the step before (several levels at once).
    empty = start - end <= 0.0
    level[empty], start[empty], end[empty] = np.nan, np.nan, np.nan
    order = np.argsort(np.isnan(level), axis=1, kind="stable")  # kept segments first, in order
    level, start, end = (np.take_along_axis(a, order, axis=1) for a in (level, start, end))
    return Schedule(level, start, end, np.count_nonzero(~np.isnan(level), axis=1), stop)


def step_climbs(cases: CaseSet, fuel: FuelData, levels_m, start_level_m, light_kg, heavy_kg):
    """The step-climb schedule of every case from its starting level (m; NaN: none) at the heavy
    weight down to the light one, with each segment's distance (m) and time (s): the stages of the
    module docstring, on the scheme's levels from the lowest start to the first above the highest
    maximum altitude at the light weight. (Schedule, distance, time)."""
    light_kg, heavy_kg = np.asarray(light_kg, dtype=float), np.asarray(heavy_kg, dtype=float)
    top = solve_ceilings(dataclasses.replace(cases, weight_kg=light_kg.copy())).max_altitude_m
    known = np.isfinite(start_level_m)
    if not known.any():
        empty = np.full((len(cases), 1), np.nan)
        return (Schedule(empty, empty.copy(), empty.copy(), np.zeros(len(cases), dtype=np.int64),
                         np.zeros(len(cases), dtype=np.int8)), empty, empty)
    first = int(np.searchsorted(levels_m, np.min(start_level_m[known]) - 1e-6))
    last = int(np.searchsorted(levels_m, np.nanmax(np.where(known, top, -np.inf)) + 1e-6, side="right"))
    window = levels_m[first:min(last + 1, levels_m.size)]
    start_index = np.where(known, np.searchsorted(window, np.nan_to_num(start_level_m) - 1e-6), -1)
    reach = reach_weights(cases, window, light_kg, heavy_kg)
    cross = crossover_weights(cases, fuel, window, light_kg, heavy_kg) if window.size > 1 else np.full((len(cases), 0), np.nan)
    plan = schedule(start_index, window, reach, cross, heavy_kg, light_kg)
    distance, time = segment_integrals(cases, fuel, plan)
    return plan, distance, time


def segment_integrals(cases: CaseSet, fuel: FuelData, plan: Schedule):
    """Per case x segment: still-air distance (m) and time (s) flown at the segment's level from its
    start weight to its end weight, by Gauss-Legendre quadrature in weight of specific range
    (dx = SR dW) and of 1 / fuel flow (dt = dW / FF). NaN where there is no segment."""
    n, s = plan.level_m.shape
    rows_case, cols = np.nonzero(~np.isnan(plan.level_m))
    distance, time = np.full((n, s), np.nan), np.full((n, s), np.nan)
    if not rows_case.size:
        return distance, time
    nodes, weights = np.polynomial.legendre.leggauss(QUADRATURE_NODES)
    start, end, level = plan.start_kg[rows_case, cols], plan.end_kg[rows_case, cols], plan.level_m[rows_case, cols]
    half, mid = 0.5 * (start - end), 0.5 * (start + end)
    w = (mid[:, None] + half[:, None] * nodes[None, :]).ravel()
    rep = np.repeat(rows_case, QUADRATURE_NODES)
    lv = np.repeat(level, QUADRATURE_NODES)
    cruise = _at_weights(cases, fuel, rep, w)
    p = isa_pressure_pa(lv)
    mach = cases.mach[rep]
    sr = cruise.specific_range_m_per_kg(p, mach, lv).reshape(-1, QUADRATURE_NODES)
    flow = cruise.fuel_flow_kg_s(p, mach, lv).reshape(-1, QUADRATURE_NODES)
    distance[rows_case, cols] = half * (sr @ weights)
    time[rows_case, cols] = half * ((1.0 / flow) @ weights)
    return distance, time
