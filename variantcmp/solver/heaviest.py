"""The heaviest weight at which a target level is within every limit, at a fixed Mach or the best speed.

At a fixed Mach M and pressure altitude h, per case:

1. *Level* (:func:`~variantcmp.solver.level.level_flags`): the weight-free limits (certified,
   cabin, MMO, VMO floor, thrust and buffet data). One failing: no weight reaches the level.
2. *Lift* (:func:`~variantcmp.solver.level.lift_limited_weights_n`): buffet onset and stall give
   their heaviest weight as closed forms.
3. *Thrust* (:func:`thrust_weight_n`): the required residual climb holds where
   g(W) = F - D(W) - c W >= 0, with c = (required rate) / sf and F, q S, sf the climb equation's
   weight-free terms (:meth:`~variantcmp.solver.physics.ClimbPhysics.level_terms`, any thrust
   model). For a parabolic polar D = q S CD0 + K W^2 / (q S), so g(W) = 0 is the quadratic
   (K/qS) W^2 + c W - (F - q S CD0) = 0, solved in its cancellation-free form
   W = 2 s / (c + sqrt(c^2 + 4 (K/qS) s)), s = F - q S CD0 (e.g. Press et al., *Numerical Recipes*,
   3rd ed., sec. 5.6). Compressibility drag grows with CL, so it only adds drag: g falls with W,
   the quadratic's root (with the wave drag at zero lift in s) brackets the root from above and
   W = 0 from below, and the Anderson-Bjorck root (:func:`~variantcmp.solver.finders.illinois_root`)
   finds it to WEIGHT_TOL_N; the answer is that much lighter than the root, on its holding side
   (a level that is also a flat limit then passes the ceilings' check that thrust still climbs
   there, not rounding). Where s <= 0 no weight holds the climb: the same formula then gives
   a negative weight, continuous through zero, for the search over speeds.
4. *Combine* (:func:`combine`): the lowest of the three, the limit that gives it, and a second
   limit within CO_LIMIT_FRACTION of it (about 10 m of ceiling, as the ceilings' "bind
   together"). Where thrust binds, :func:`heaviest_fixed_mach` checks that the level is the thrust
   ceiling at that weight (:func:`~variantcmp.solver.level.climbs_past_level`); else CLIMBS_ABOVE:
   the aircraft would climb past the level at that weight (a speed whose thrust improves with
   altitude there), and heavier it holds a higher level but not this one.

Guarantees: at a finite answer every limit holds at the level (g >= 0 to WEIGHT_TOL_N, the
closed forms exactly) and a heavier weight breaks the limit named; the answer is not capped at
MTOW. NaN with the flags saying why elsewhere.

At the best speed (:func:`heaviest_best_speed`): the maximum over Mach of the fixed-Mach answer
(:mod:`~variantcmp.solver.speed_search`, over the speeds that can fly the level:
:func:`~variantcmp.solver.level.speed_range_at_level`), then the fixed-Mach answer at the Mach
found, so that solving there again gives it.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from ..atmosphere import G0
from ..cases import CaseSet
from .answers import PerCase, solve_by_level
from .finders import illinois_root, nan_as_lowest
from .level import (CLIMBS_ABOVE, LEVEL_BLOCKS, buffet_data_flags, climbs_past_level, level_flags,
                    lift_limited_weights_n, thrust_data_flags)
from .physics import ClimbPhysics
from .results import CANNOT_CLIMB, LIMITS
from .speed_search import best_speed_at_level

WEIGHT_TOL_N = 0.01  # the thrust root in weight: about 1 g
CO_LIMIT_FRACTION = 1.5e-3  # a second limit this close binds too (about 10 m of ceiling: dh = -H dW/W)
THRUST, BUFFET, STALL = (LIMITS.index(name) for name in ("thrust", "buffet", "stall"))


@dataclass
class Heaviest(PerCase):
    """The answer per case: the heaviest weight (kg, NaN where none), each limit's own at the
    Mach (thrust NaN without data, negative where no weight holds the climb; buffet +inf without
    buffet data), the Mach, the limit (index into LIMITS, -1 none), a co-binding limit and flags."""

    weight_kg: np.ndarray
    thrust_kg: np.ndarray
    buffet_kg: np.ndarray
    stall_kg: np.ndarray
    mach: np.ndarray
    limit: np.ndarray
    co_limit: np.ndarray
    flags: np.ndarray

    SMALL = {"limit": np.int8, "co_limit": np.int8, "flags": np.int32}
    VALUE = "weight_kg"


class LevelExcess:
    """g(W) = F - D(W) - c W per case at its level and Mach: the excess force whose sign is the
    excess climb rate's; a family in W for the root finders."""

    __slots__ = ("phys", "thrust", "q_s", "c", "mach")

    def __init__(self, phys, thrust, q_s, c, mach):
        self.phys, self.thrust, self.q_s, self.c, self.mach = phys, thrust, q_s, c, mach

    def __call__(self, weight_n):
        return self.thrust - self.phys.level_drag_n(self.q_s, self.mach, weight_n) - self.c * weight_n

    def subset(self, keep) -> "LevelExcess":
        return LevelExcess(self.phys.subset(keep), self.thrust[keep], self.q_s[keep], self.c[keep], self.mach[keep])


def thrust_weight_n(phys: ClimbPhysics, mach, thrust, q_s, speed_factor):
    """Stage 3: the heaviest weight (N) holding the required residual climb per case (negative
    where none, continuous through zero; NaN where the thrust is)."""
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        c = phys.cases.climb_ms / speed_factor
        a = phys.cases.k / q_s
        spare = thrust - phys.level_drag_n(q_s, mach, 0.0)
        w = 2.0 * spare / (c + np.sqrt(c * c + 4.0 * a * np.abs(spare)))
        if not phys.has_wave:
            return w - WEIGHT_TOL_N
        g = LevelExcess(phys, thrust, q_s, c, mach)
        residual = g(np.maximum(w, 0.0))
        # Where the wave drag at the quadratic's root moves the weight by more than the tolerance
        # (dg/dW is about -2 s / W there).
        root = np.flatnonzero((spare > 0.0) & (residual * w < -WEIGHT_TOL_N * spare))
        if root.size:
            sub = g if root.size == w.size else g.subset(root)
            w[root] = illinois_root(sub, np.zeros(root.size), w[root], spare[root], residual[root], WEIGHT_TOL_N)
    # On the holding side of the root, by its tolerance: the answer holds the climb, not rounding.
    return w - WEIGHT_TOL_N


def weights_at_mach(phys: ClimbPhysics, altitude_m, mach, in_range=False):
    """Stages 1-3 at a Mach per case: (flags, thrust, buffet and stall weights in N). ``in_range``:
    the Mach is in the speed range at the level and no EVERY_SPEED flag is set (the search over
    speeds): only the thrust and buffet data are checked."""
    cs = phys.cases
    flags = np.zeros(np.shape(altitude_m), dtype=np.int32) if in_range else level_flags(cs, altitude_m, mach)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        thrust, q_s, speed_factor = phys.level_terms(altitude_m, mach)
    flags = thrust_data_flags(cs, flags, thrust)
    w_thrust = thrust_weight_n(phys, mach, thrust, q_s, speed_factor)
    w_buffet, w_stall = lift_limited_weights_n(cs, altitude_m, mach)
    return buffet_data_flags(cs, flags, w_buffet), w_thrust, w_buffet, w_stall


def objective(flags, w_thrust, w_buffet, w_stall):
    """The heaviest weight (N) for the search over speeds: -inf where the level cannot be flown
    at that speed, negative where no weight holds the climb."""
    w = np.fmin(np.fmin(w_thrust, w_buffet), w_stall)
    return np.where((flags & LEVEL_BLOCKS).astype(bool), -np.inf, nan_as_lowest(w))


def combine(flags, w_thrust, w_buffet, w_stall, mach) -> Heaviest:
    """Stage 4 (without the thrust-ceiling check): the lowest weight, its limit, a co-binding one."""
    stack = np.stack([w_thrust, w_buffet, w_stall])
    safe = np.where(np.isnan(stack), np.inf, stack)
    limit = np.argmin(safe, axis=0)
    r = np.arange(limit.size)
    w = safe[limit, r]
    blocked = (flags & LEVEL_BLOCKS).astype(bool)
    flags = flags | np.where(~blocked & (w <= 0.0), CANNOT_CLIMB, 0).astype(np.int32)
    ok = ~blocked & (w > 0.0) & np.isfinite(w)
    others = safe.copy()
    others[limit, r] = np.inf
    second = np.argmin(others, axis=0)
    with np.errstate(invalid="ignore"):
        co = np.where(ok & (others[second, r] <= w * (1.0 + CO_LIMIT_FRACTION)), second, -1)
    return Heaviest(np.where(ok, w / G0, np.nan), w_thrust / G0, w_buffet / G0, w_stall / G0,
                    np.asarray(mach, dtype=float).copy(), np.where(ok, limit, -1).astype(np.int8), co.astype(np.int8),
                    flags.astype(np.int32))


def heaviest_fixed_mach(cases: CaseSet, altitude_m, mach) -> Heaviest:
    """The stages of the module docstring at a fixed Mach per case, with the thrust-ceiling check."""
    phys = ClimbPhysics(cases)
    res = combine(*weights_at_mach(phys, altitude_m, mach), mach)
    check_thrust_ceiling(cases, np.asarray(altitude_m, dtype=float), np.asarray(mach, dtype=float), res)
    return res


def check_thrust_ceiling(cases: CaseSet, altitude_m, mach, res: Heaviest) -> None:
    """Stage 4's check (``res.flags`` in place): where thrust binds, the level must be the thrust
    ceiling at the answer's weight (:func:`~variantcmp.solver.level.climbs_past_level`), else
    CLIMBS_ABOVE."""
    rows = np.flatnonzero((res.limit == THRUST) & np.isfinite(res.weight_kg))
    if rows.size:
        at = ClimbPhysics(dataclasses.replace(cases.take(rows), weight_kg=res.weight_kg[rows]))
        res.flags[rows[climbs_past_level(at, altitude_m[rows], mach[rows])]] |= CLIMBS_ABOVE


class WeightAtSpeed:
    """The heaviest weight (N) per case at its level as a function of the Mach, in the speed
    range at the level (the objective of :func:`~variantcmp.solver.speed_search.best_speed_search`)."""

    def __init__(self, phys: ClimbPhysics, altitude_m):
        self.phys, self.h = phys, altitude_m

    def __call__(self, rows, mach):
        return objective(*weights_at_mach(self.phys.subset(rows), self.h[rows], mach, in_range=True))

    def subset(self, rows) -> "WeightAtSpeed":
        return WeightAtSpeed(self.phys.subset(rows), self.h[rows])


def heaviest_best_speed(cases: CaseSet, altitude_m) -> Heaviest:
    """The heaviest weight over the speeds that can fly the level (module docstring)."""
    def objective(sub, h):
        phys = ClimbPhysics(sub)
        return WeightAtSpeed(phys, h), phys

    return best_speed_at_level(cases, altitude_m, objective, heaviest_fixed_mach)


def solve_heaviest(cases: CaseSet, altitude_m, processes: int | None = None) -> Heaviest:
    """The heaviest weight for each case's level (fixed Mach, or best speed where the Mach is NaN)."""
    return solve_by_level(cases, altitude_m, heaviest_fixed_mach, heaviest_best_speed, Heaviest, processes)
