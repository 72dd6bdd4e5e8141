"""The level asked about: what a target pressure altitude allows whatever the weight or the day.

At a pressure altitude h and a Mach M, the limits split three ways:

- weight-free and day-free (:func:`level_flags`): the certified and cabin ceilings, MMO, the
  VMO floor (CAS rises as the pressure does, at a fixed Mach), the thrust data's altitude range;
  with thrust NaN at the level (a Mach outside a thrust table or a propeller's efficiency data)
  and buffet data that stop short of the Mach. Any of them failing: no weight on any day reaches the level at that speed;
- pressure limits that depend on the weight only (:func:`lift_limited_weights_n`): buffet onset
  and stall. Lift equilibrium n W = (gamma/2) p M^2 S CL (Anderson, *Introduction to Flight*,
  eq. 4.83) gives the heaviest weight each allows as a closed form, the same on every day;
- thrust, which depends on both: :mod:`~variantcmp.solver.heaviest`, :mod:`~variantcmp.solver.hottest`.

The speeds that can fly the level (:func:`speed_range_at_level`) are each case's speed range
(:mod:`variantcmp.cases`: up to MMO, within the thrust and buffet data) with its top cut to the
Mach at which the CAS reaches VMO at h.

Flags: the bits of :mod:`~variantcmp.solver.results` where the meaning is the same (the level
beyond the thrust table is THRUST_DATA_TOP, below its lowest altitude BELOW_FLOOR; no weight
holds the climb at the level is CANNOT_CLIMB) and the inverse answers' own below.
"""

from __future__ import annotations

import numpy as np

from ..airspeed import cas_to_mach, pressure_for_cas_at_mach_pa
from ..atmosphere import GAMMA, MODEL_TOP_M, isa_pressure_pa, pressure_altitude_m
from .limits import buffet_cl_at
from .physics import data_mach_flags
from .results import (ABOVE_MMO, BELOW_FLOOR, BELOW_VMO_FLOOR, NO_BUFFET_AT_MACH, PROPELLER_DATA_MACH, THRUST_DATA_MACH,
                      THRUST_DATA_TOP)
from .thrust_ceiling import cl_max_altitude_m, climbs_above

ABOVE_CERTIFIED = 1 << 10  # the level is above the certified ceiling
ABOVE_CABIN = 1 << 11  # above the cabin-pressure ceiling
BUFFET_BELOW = 1 << 12  # at this weight buffet onset lies below the level (every day)
STALL_BELOW = 1 << 13  # at this weight the stall ceiling lies below the level (every day)
CLIMBS_ABOVE = 1 << 14  # at the answer the aircraft still climbs above the level (it is not the thrust ceiling)
HOLDS_AT_WARMEST = 1 << 15  # the level holds even on the warmest day searched
FAILS_AT_COLDEST = 1 << 16  # the level fails even on the coldest day searched
NOT_MONOTONE = 1 << 17  # a warmer day searched holds again after the first crossing
#: A level these flags mark cannot be flown at that speed by any weight on any day.
LEVEL_BLOCKS = (ABOVE_CERTIFIED | ABOVE_CABIN | ABOVE_MMO | BELOW_VMO_FLOOR | BELOW_FLOOR | THRUST_DATA_TOP
                | THRUST_DATA_MACH | PROPELLER_DATA_MACH | NO_BUFFET_AT_MACH)
#: Flags that hold at every speed (the search over speeds stops at once).
EVERY_SPEED = ABOVE_CERTIFIED | ABOVE_CABIN | BELOW_FLOOR | THRUST_DATA_TOP
CHECK_STEP_M = 1.0  # the climb looked at this far above the level, at an answer
VMO_EDGE = 1e-9  # the range's top this far (relative) inside the VMO Mach: rounding stays on the flyable side


def level_flags(cases, altitude_m, mach) -> np.ndarray:
    """The weight-free and day-free limits at the level and Mach of each case (module docstring),
    but for thrust data at the Mach, which the caller flags where the thrust is NaN."""
    h = np.asarray(altitude_m, dtype=float)
    m = np.asarray(mach, dtype=float)
    flags = np.zeros(h.shape, dtype=np.int32)
    flags[h > cases.certified_m] |= ABOVE_CERTIFIED
    flags[h > cases.cabin_m] |= ABOVE_CABIN
    flags[h > cases.top_m] |= THRUST_DATA_TOP
    flags[h < cases.floor_m] |= BELOW_FLOOR
    flags[~np.isnan(cases.mmo) & (m > cases.mmo + 1e-9)] |= ABOVE_MMO
    with np.errstate(invalid="ignore", divide="ignore"):
        floor = pressure_altitude_m(pressure_for_cas_at_mach_pa(cases.vmo_ms, m))
        flags[~np.isnan(cases.vmo_ms) & (h < floor)] |= BELOW_VMO_FLOOR
    return flags


def thrust_data_flags(cases, flags, thrust_n) -> np.ndarray:
    """``flags`` with the model's flag of a Mach outside its data (THRUST_DATA_MACH for a thrust
    table, PROPELLER_DATA_MACH for a propeller efficiency table:
    :func:`~variantcmp.solver.physics.data_mach_flags`) where the thrust at the level is NaN inside
    the thrust data's altitude range."""
    gap = np.isnan(thrust_n) & ~(flags & (THRUST_DATA_TOP | BELOW_FLOOR)).astype(bool)
    return flags | np.where(gap, data_mach_flags(cases.model_code), 0).astype(np.int32)


def lift_limited_weights_n(cases, altitude_m, mach):
    """The heaviest weight (N) at which buffet onset and stall allow the level, per case:
    W_buffet = p q_per_p S CL_buffet(M) / n_margin and W_stall = p q_per_p S CL_max, with
    q_per_p = (gamma/2) M^2 (lift equilibrium, Anderson, *Introduction to Flight*, eq. 4.83; the
    inverse of :func:`~variantcmp.solver.limits.closed_form_ceilings_m`). Buffet: +inf without
    buffet data, NaN with none at the Mach (the caller flags it)."""
    m = np.asarray(mach, dtype=float)
    lift_per_cl = 0.5 * GAMMA * m * m * cases.wing_area_m2 * isa_pressure_pa(np.asarray(altitude_m, dtype=float))
    buffet = np.where(cases.buffet_id >= 0, lift_per_cl * buffet_cl_at(cases, m) / cases.g_margin, np.inf)
    return buffet, lift_per_cl * cases.cl_max


def buffet_data_flags(cases, flags, buffet_weight_n) -> np.ndarray:
    """``flags`` with NO_BUFFET_AT_MACH where the variant has buffet data, but not at the Mach."""
    return flags | np.where((cases.buffet_id >= 0) & np.isnan(buffet_weight_n), NO_BUFFET_AT_MACH, 0).astype(np.int32)


def speed_range_at_level(cases, altitude_m):
    """The speeds that can fly the level per case: (low, high) of the case's speed range, the top
    cut to the Mach at which CAS reaches VMO at the level (a hair inside it); low > high where
    every speed exceeds VMO there."""
    h = np.asarray(altitude_m, dtype=float)
    with np.errstate(invalid="ignore"):
        vmo_mach = cas_to_mach(cases.vmo_ms, isa_pressure_pa(h)) * (1.0 - VMO_EDGE)
    high = np.where(np.isnan(cases.vmo_ms), cases.mach_high, np.fmin(cases.mach_high, vmo_mach))
    return cases.mach_low.copy(), high


def climbs_past_level(phys, altitude_m, mach) -> np.ndarray:
    """Whether each case (the physics at an answer's weight and day) still climbs above the level:
    CHECK_STEP_M above it, and for table engines at the thrust ceiling's hump-check probes above
    it (:func:`~variantcmp.solver.thrust_ceiling.climbs_above`). Where it does, the level is not
    the case's thrust ceiling (CLIMBS_ABOVE): thrust improves with altitude there."""
    h, m = np.asarray(altitude_m, dtype=float), np.asarray(mach, dtype=float)
    top = np.minimum(phys.cases.top_m, MODEL_TOP_M)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        above = (phys.excess(np.minimum(h + CHECK_STEP_M, top), m) >= 0.0) & (h + CHECK_STEP_M <= top)
        return above | climbs_above(phys, m, h, cl_max_altitude_m(phys, np.arange(h.size), m, top, h))
