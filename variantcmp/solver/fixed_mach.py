"""Every limit at a fixed Mach per case, and the maximum altitude where all of them are met.

The closed forms (:mod:`variantcmp.solver.limits`) and the thrust ceiling
(:mod:`variantcmp.solver.thrust_ceiling`) give each limit's ceiling; the maximum altitude is the
lowest of them, then checked: thrust must still climb there (a high Mach can need altitude
before thrust suffices: NO_COMMON_ALTITUDE), the Mach within MMO, the altitude above the VMO
floor, the -2,000 ft floor (or the thrust table's lowest altitude), not beyond the thrust table's
top. A failed check is a flag and no maximum altitude (NaN); ``variantcmp.table`` turns flags
into notes. Buffet data that stop short of the Mach leave the buffet limit unknown, and so the
maximum altitude (NaN in the stack of limits makes its minimum NaN).
"""

from __future__ import annotations

import numpy as np

from ..atmosphere import MODEL_TOP_M
from .limits import closed_form_ceilings_m, lowest_other_ceiling_m
from .physics import ClimbPhysics
from .results import (ABOVE_MMO, ABOVE_MODEL_TOP, BELOW_FLOOR, BELOW_VMO_FLOOR, NO_BUFFET_AT_MACH, NO_COMMON_ALTITUDE,
                      THRUST_DATA_TOP, UNFLYABLE, Ceilings)
from .thrust_ceiling import ROOT_TOL_M, WARM_HALF_WIDTH_M, thrust_ceiling_m

CO_LIMIT_M = 10.0  # two limits this close both bind (e.g. thrust and buffet at the coffin corner)


def fixed_mach_ceilings(phys: ClimbPhysics, mach, thrust_guess_m=None, thrust_needed=True,
                        guess_half_width_m=WARM_HALF_WIDTH_M, tol_m=ROOT_TOL_M) -> Ceilings:
    """Every limit at a fixed Mach per case, and the maximum altitude where all are met.

    ``thrust_guess_m``, ``guess_half_width_m``: a warm start for the thrust ceiling (see
    :func:`~variantcmp.solver.thrust_ceiling.thrust_ceiling_m`); ``tol_m`` its root tolerance.
    With ``thrust_needed=False`` (only the maximum altitude is wanted) the thrust root is not
    sought where thrust still climbs at the lowest of the other limits: its ceiling is then
    reported as +inf (not computed) and does not bind.
    """
    cs = phys.cases
    closed = closed_form_ceilings_m(cs, mach)
    buffet, stall, cabin, vmo_floor = closed
    skipped = np.zeros(len(cs), dtype=bool)
    if thrust_needed:
        thrust, flags = thrust_ceiling_m(phys, mach, thrust_guess_m, guess_half_width_m, tol_m)
    else:
        other = lowest_other_ceiling_m(cs, closed)
        inside = np.isfinite(other) & (other >= cs.floor_m) & (other <= np.minimum(cs.top_m, MODEL_TOP_M))
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            skipped = inside & (phys.excess(np.where(inside, other, 0.0), mach) >= 0.0)
        thrust, flags = np.full(len(cs), np.inf), np.zeros(len(cs), dtype=np.int32)
        todo = np.flatnonzero(~skipped)
        if todo.size:
            sub = phys if todo.size == len(cs) else phys.subset(todo)
            guess = None if thrust_guess_m is None else thrust_guess_m[todo]
            thrust[todo], flags[todo] = thrust_ceiling_m(sub, mach[todo], guess, tol_m=tol_m)
    # Buffet data that stop short of this Mach: the buffet limit cannot be checked, so no maximum
    # altitude either (as a thrust table's Mach gap); NaN in the stack makes the minimum NaN.
    flags[(cs.buffet_id >= 0) & np.isnan(buffet)] |= NO_BUFFET_AT_MACH
    # A ceiling beyond the thrust table is unknown; the other limits may still bind below its top.
    thrust_for_min = np.where(flags & THRUST_DATA_TOP, np.inf, thrust)
    stack = np.stack([thrust_for_min, buffet, stall, cs.certified_m, cabin])
    with np.errstate(invalid="ignore"):
        max_alt = stack.min(axis=0)
        limit = np.where(np.isnan(max_alt) | np.isinf(max_alt), -1, np.argmin(np.where(np.isnan(stack), np.inf, stack), axis=0))
        over_table = (flags & THRUST_DATA_TOP).astype(bool) & (max_alt > cs.top_m)
        max_alt[over_table] = np.nan
        limit[over_table] = -1
        flags[np.isposinf(max_alt)] |= ABOVE_MODEL_TOP
        bad_mmo = ~np.isnan(cs.mmo) & (mach > cs.mmo + 1e-9)
        flags[bad_mmo] |= ABOVE_MMO
        bad_vmo = max_alt < vmo_floor
        flags[bad_vmo] |= BELOW_VMO_FLOOR
        low = max_alt < cs.floor_m  # -2,000 ft, or the lowest altitude of the thrust table
        flags[low] |= BELOW_FLOOR
    # Thrust may only work above the other limits' ceiling (high speed at low level): check there.
    check = np.flatnonzero(np.isfinite(max_alt) & (limit > 0) & ~bad_vmo & ~low & ~bad_mmo & ~skipped)
    if check.size:
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            e = phys.subset(check).excess(max_alt[check], mach[check])
        flags[check[~(e >= 0.0)]] |= NO_COMMON_ALTITUDE  # NaN (no thrust data there) fails too
    dead = (flags & UNFLYABLE).astype(bool)
    max_alt[dead] = np.nan
    limit[dead | np.isnan(max_alt)] = -1
    with np.errstate(invalid="ignore"):
        others = np.where(np.isnan(stack), np.inf, stack)
        others[limit.clip(0), np.arange(len(cs))] = np.inf
        co = np.where((limit >= 0) & (others.min(axis=0) - max_alt <= CO_LIMIT_M), np.argmin(others, axis=0), -1)
    mach = np.asarray(mach, dtype=float)
    return Ceilings(thrust, buffet, stall, cs.certified_m.copy(), cabin, max_alt, mach.copy(), limit.astype(np.int8),
                    flags, vmo_floor, co.astype(np.int8), mach.copy())
