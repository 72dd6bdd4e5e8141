"""The best steady climb gradient at an altitude: the speeds a case may fly there, and the speed of
best gradient (F - D) / W among them (:meth:`~variantcmp.solver.physics.ClimbPhysics.climb_gradient`).

Two stages, vectorised over every case (and every point of a path) at once:

1. :func:`speed_window`: the Mach range an altitude allows: stall (CL max at 1 g) from below, the
   case's speed range (MMO, the data's ranges) and VMO from above, and, where the variant has
   buffet data, the band around the buffet peak where the buffet margin holds (its ends by
   bisection on M^2 CL_buffet(M), rising to the peak and falling after it; a second, lower peak
   of the boundary is not looked at, as in the best-speed search).
2. :func:`best_gradient`: the speed of best gradient in that window (golden section: at a fixed
   altitude the gradient is single-peaked in Mach), and the gradient there; NaN where no speed
   is allowed.

Used by the drift-down (:mod:`variantcmp.solver.driftdown`: the drift-down speed) and by the
engine-out ceiling search (:mod:`variantcmp.solver.gradient_ceiling`). Tests:
``tests/test_driftdown.py`` (the window's ends against their closed forms).
"""

from __future__ import annotations

import numpy as np

from ..airspeed import cas_to_mach
from ..atmosphere import isa_state
from .finders import bisect_root, golden_max, nan_as_lowest
from .limits import buffet_cl_at, buffet_peak_mach
from .physics import ClimbPhysics

GRADIENT_ITERATIONS = 22  # golden section in Mach: a range of 0.6 to 1e-5
BUFFET_EDGE_ITERATIONS = 30  # bisection for the buffet band's ends: 0.5 Mach / 2^30


def speed_window(phys: ClimbPhysics, altitude_m, buffet: bool = True, high_end: bool = True):
    """The lowest and highest Mach each case may fly at an altitude (pressure altitude, m): stall,
    the case's speed range (MMO), VMO and (``buffet``) the buffet margin; see the module
    docstring. low > high (or NaN) where no speed is allowed. ``high_end`` False: the buffet
    band's upper end is not solved (high is then the other limits' alone), for a caller that
    wants the lowest speed only (half the bisections)."""
    cs = phys.cases
    _, p, _ = isa_state(altitude_m)
    qs_per_m2 = phys.qs_per_pm2 * p  # q S = (gamma/2) p M^2 S (Anderson, Introduction to Flight, eq. 4.83)
    with np.errstate(invalid="ignore", divide="ignore"):
        low = np.fmax(cs.mach_low, np.sqrt(phys.w_n / (qs_per_m2 * cs.cl_max)))
        high = np.where(np.isnan(cs.vmo_ms), cs.mach_high, np.fmin(cs.mach_high, cas_to_mach(cs.vmo_ms, p)))
    buffeted = np.flatnonzero(cs.buffet_id >= 0) if buffet else np.zeros(0, dtype=np.intp)
    if buffeted.size:
        sub = cs.take(buffeted)
        lo, hi = low[buffeted], high[buffeted]
        need = cs.g_margin[buffeted] * phys.w_n[buffeted] / qs_per_m2[buffeted]  # M^2 CL_buffet must reach it

        def capacity(m):
            return m * m * buffet_cl_at(sub, m) - need

        with np.errstate(invalid="ignore"):
            peak = buffet_peak_mach(sub, lo, np.fmax(lo, hi))
            ok = capacity(peak) >= 0.0
            rise = bisect_root(capacity, lo, np.where(ok, peak, lo), True, BUFFET_EDGE_ITERATIONS)
            low[buffeted] = np.where(ok, np.where(capacity(lo) >= 0.0, lo, rise), np.nan)
            if high_end:
                fall = bisect_root(capacity, np.where(ok, peak, hi), hi, False, BUFFET_EDGE_ITERATIONS)
                high[buffeted] = np.where(ok, np.where(capacity(hi) >= 0.0, hi, fall), np.nan)
            else:
                high[buffeted] = np.where(ok, hi, np.nan)
    return low, high


def best_gradient(phys: ClimbPhysics, altitude_m):
    """The speed of best gradient (F - D) / W within :func:`speed_window` at each case's altitude,
    and that gradient; NaN where no speed is allowed."""
    low, high = speed_window(phys, altitude_m)
    flyable = low <= high
    lo, hi = np.where(flyable, low, 0.5), np.where(flyable, high, 0.5)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        mach, gradient = golden_max(lambda m: nan_as_lowest(phys.climb_gradient(altitude_m, m)), lo, hi,
                                    GRADIENT_ITERATIONS)
    bad = ~flyable | ~np.isfinite(gradient)
    return np.where(bad, np.nan, mach), np.where(bad, np.nan, gradient)
