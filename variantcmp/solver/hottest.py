"""The warmest day (ISA deviation) at which a target level is within every limit, for a weight.

At a fixed Mach and pressure altitude every limit but thrust is a pressure limit: buffet onset,
stall, the VMO floor, the certified and cabin ceilings are the same on every day. So, per case:

1. *Level and lift* (:mod:`~variantcmp.solver.level`): the day-free limits, and buffet onset and
   stall at the case's weight (BUFFET_BELOW, STALL_BELOW). One failing: no day reaches the level.
2. *Scan*: the excess climb rate at the level on each of SCAN_DAYS_C (DAY_LOW_C to DAY_HIGH_C),
   in one flat call (a derived case set per day: :meth:`variantcmp.cases.CaseSet.with_isa_dev`,
   so any thrust model's day dependence comes through :class:`~variantcmp.solver.physics.ClimbPhysics`).
3. *First crossing from the cold side*: the first scan day that fails, the coldest holding; a
   warmer scan day that holds again is NOT_MONOTONE (reported, with that day). The ceiling falls
   with temperature in every model here (thrust falls or is flat-rated, the climb speed factor
   V (T_ISA/T) f falls: ``tests/test_inverse.py`` checks each model), so this does not happen with
   them; below a flat rating the thrust does not change with the day and the excess only through
   the speed factor, so the crossing lies above the flat-rate deviation or the level holds or
   fails on every day. Holding on every scan day: HOLDS_AT_WARMEST; failing on the coldest:
   FAILS_AT_COLDEST (no number: the searched range's end is no answer).
4. *Root*: Anderson-Bjorck (:func:`~variantcmp.solver.finders.illinois_root`) in the deviation
   between the two scan days, to DAY_TOL_C; the answer that much cooler, on the holding side.
5. *Check*: the level is the thrust ceiling on that day (:func:`~variantcmp.solver.level.climbs_past_level`),
   else CLIMBS_ABOVE.

Guarantees: a finite answer lies in [DAY_LOW_C, DAY_HIGH_C]; the level holds on it (to
DAY_TOL_C) and fails just above; limit thrust (with buffet or stall as co-binding where its
weight is within CO_LIMIT_FRACTION of the case's).

At the best speed (:func:`hottest_best_speed`): the maximum over Mach of the fixed-Mach answer
(:mod:`~variantcmp.solver.speed_search`) on a continuous stand-in: the root where the ends
bracket one (no scan: monotone), beyond the ends the end plus DAY_PER_MS x the excess there,
where lift fails LIFT_PENALTY plus the weight shortfall; then the fixed-Mach answer at the Mach
found (with the scan).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..cases import CaseSet
from .answers import PerCase, solve_by_level
from .finders import illinois_root
from .heaviest import BUFFET, CO_LIMIT_FRACTION, STALL, THRUST
from .level import (BUFFET_BELOW, CLIMBS_ABOVE, FAILS_AT_COLDEST, HOLDS_AT_WARMEST, LEVEL_BLOCKS, NOT_MONOTONE,
                    STALL_BELOW, buffet_data_flags, climbs_past_level, level_flags, lift_limited_weights_n,
                    thrust_data_flags)
from .physics import ClimbPhysics
from .speed_search import best_speed_at_level

DAY_LOW_C, DAY_HIGH_C = -40.0, 50.0  # the days searched
SCAN_DAYS_C = np.arange(DAY_LOW_C, DAY_HIGH_C + 1.0, 10.0)  # a crossing narrower than 10 C between them is not seen
DAY_TOL_C = 1e-4
DAY_PER_MS = 10.0  # the best-speed stand-in beyond the searched days: deg C per m/s of excess climb (continuity only)
LIFT_PENALTY = -1e6  # the stand-in where lift fails at the case's weight (below every day's value)


@dataclass
class Hottest(PerCase):
    """The answer per case: the warmest deviation (deg C, NaN where none), the Mach, the limit
    (thrust, or -1), a co-binding limit, flags, and the first warmer scan day that holds again
    after the crossing (NaN where none)."""

    isa_dev_c: np.ndarray
    mach: np.ndarray
    limit: np.ndarray
    co_limit: np.ndarray
    flags: np.ndarray
    holds_again_c: np.ndarray

    SMALL = {"limit": np.int8, "co_limit": np.int8, "flags": np.int32}
    VALUE = "isa_dev_c"


class DayExcess:
    """The excess climb rate per case at its level and Mach as a function of the day (ISA
    deviation, deg C): a family for the root finders."""

    __slots__ = ("cases", "h", "m")

    def __init__(self, cases: CaseSet, altitude_m, mach):
        self.cases, self.h, self.m = cases, altitude_m, mach

    def __call__(self, isa_dev_c):
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            return ClimbPhysics(self.cases.with_isa_dev(isa_dev_c)).excess(self.h, self.m)

    def subset(self, keep) -> "DayExcess":
        return DayExcess(self.cases.take(keep), self.h[keep], self.m[keep])


def day_free_flags(cases: CaseSet, altitude_m, mach, in_range=False):
    """Stage 1: (flags, buffet and stall weights in N at the level and Mach); ``in_range`` as for
    :func:`~variantcmp.solver.heaviest.weights_at_mach`."""
    flags = np.zeros(np.shape(altitude_m), dtype=np.int32) if in_range else level_flags(cases, altitude_m, mach)
    w_buffet, w_stall = lift_limited_weights_n(cases, altitude_m, mach)
    flags = buffet_data_flags(cases, flags, w_buffet)
    w = cases.weight_n
    flags[w > w_buffet] |= BUFFET_BELOW
    flags[w > w_stall] |= STALL_BELOW
    # Thrust data at the Mach: a table's (or a propeller's) Mach range does not depend on the day.
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        thrust = ClimbPhysics(cases).available_thrust_n(altitude_m, mach)
    return thrust_data_flags(cases, flags, thrust), w_buffet, w_stall


def hottest_fixed_mach(cases: CaseSet, altitude_m, mach) -> Hottest:
    """The stages of the module docstring at a fixed Mach per case."""
    n = len(cases)
    h, m = np.asarray(altitude_m, dtype=float), np.asarray(mach, dtype=float)
    flags, w_buffet, w_stall = day_free_flags(cases, h, m)
    dev, again = np.full(n, np.nan), np.full(n, np.nan)
    todo = np.flatnonzero((flags & (LEVEL_BLOCKS | BUFFET_BELOW | STALL_BELOW)) == 0)
    if todo.size:
        k = SCAN_DAYS_C.size
        sub = cases.take(todo)
        day = DayExcess(sub, h[todo], m[todo])
        e_scan = np.stack([day(d) for d in SCAN_DAYS_C], axis=1)  # a loop over days, not cases
        holds = e_scan >= 0.0
        first_fail = np.argmax(~holds, axis=1)
        warm = holds.all(axis=1)
        cold = ~holds[:, 0]
        later = np.where(np.arange(k)[None, :] > first_fail[:, None], holds, False)
        flags[todo[warm]] |= HOLDS_AT_WARMEST
        flags[todo[cold]] |= FAILS_AT_COLDEST
        odd = later.any(axis=1) & ~warm
        flags[todo[odd]] |= NOT_MONOTONE
        again[todo[odd]] = SCAN_DAYS_C[np.argmax(later[odd], axis=1)]
        root = np.flatnonzero(~warm & ~cold)
        if root.size:
            j, r = first_fail[root], np.arange(todo.size)[root]
            # On the holding side of the root, by its tolerance (as the heaviest weight).
            dev[todo[root]] = illinois_root(DayExcess(sub.take(root), h[todo[root]], m[todo[root]]),
                                            SCAN_DAYS_C[j - 1], SCAN_DAYS_C[j], e_scan[r, j - 1], e_scan[r, j],
                                            DAY_TOL_C) - DAY_TOL_C
    found = np.flatnonzero(np.isfinite(dev))
    limit, co = np.full(n, -1, np.int8), np.full(n, -1, np.int8)
    limit[found] = THRUST
    w = cases.weight_n[found]
    near = lambda limit_w: limit_w[found] <= w * (1.0 + CO_LIMIT_FRACTION)  # noqa: E731
    co[found] = np.where(near(w_buffet), BUFFET, np.where(near(w_stall), STALL, -1))
    if found.size:
        at = ClimbPhysics(cases.take(found).with_isa_dev(dev[found]))
        flags[found[climbs_past_level(at, h[found], m[found])]] |= CLIMBS_ABOVE
    return Hottest(dev, m.copy(), limit, co, flags, again)


class DayAtSpeed:
    """The best-speed stand-in of the module docstring per case at its level and weight as a
    function of the Mach, in the speed range at the level (higher is warmer)."""

    def __init__(self, cases: CaseSet, altitude_m):
        self.cases, self.h = cases, altitude_m

    def __call__(self, rows, mach):
        return day_objective(self.cases.take(rows), self.h[rows], mach)

    def subset(self, rows) -> "DayAtSpeed":
        return DayAtSpeed(self.cases.take(rows), self.h[rows])


def day_objective(cases: CaseSet, altitude_m, mach):
    """:class:`DayAtSpeed` at a Mach per case."""
    n = len(cases)
    flags, w_buffet, w_stall = day_free_flags(cases, altitude_m, mach, in_range=True)
    value = np.full(n, -np.inf)
    lift = (flags & LEVEL_BLOCKS) == 0
    short = lift & ((flags & (BUFFET_BELOW | STALL_BELOW)) != 0)
    value[short] = LIFT_PENALTY + (np.fmin(w_buffet, w_stall)[short] / cases.weight_n[short] - 1.0)
    todo = np.flatnonzero(lift & ~short)
    if todo.size:
        sub = cases.take(todo)
        day = DayExcess(sub, altitude_m[todo], mach[todo])
        ends = np.stack([day(DAY_LOW_C), day(DAY_HIGH_C)], axis=1)
        cold, warm = ~(ends[:, 0] >= 0.0), ends[:, 1] >= 0.0
        v = np.where(warm, DAY_HIGH_C + DAY_PER_MS * ends[:, 1], DAY_LOW_C + DAY_PER_MS * ends[:, 0])
        v[np.isnan(ends[:, 0])] = -np.inf
        root = np.flatnonzero(~cold & ~warm)
        if root.size:
            v[root] = illinois_root(DayExcess(sub.take(root), altitude_m[todo[root]], mach[todo[root]]),
                                    np.full(root.size, DAY_LOW_C), np.full(root.size, DAY_HIGH_C),
                                    ends[root, 0], ends[root, 1], DAY_TOL_C)
        value[todo] = v
    return value


def hottest_best_speed(cases: CaseSet, altitude_m) -> Hottest:
    """The warmest day over the speeds that can fly the level (module docstring)."""
    return best_speed_at_level(cases, altitude_m, lambda sub, h: (DayAtSpeed(sub, h), ClimbPhysics(sub)),
                               hottest_fixed_mach)


def solve_hottest(cases: CaseSet, altitude_m, processes: int | None = None) -> Hottest:
    """The warmest day for each case's level and weight (fixed Mach, or best speed where the Mach is NaN)."""
    return solve_by_level(cases, altitude_m, hottest_fixed_mach, hottest_best_speed, Hottest, processes)
