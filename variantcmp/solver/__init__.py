"""Ceilings: the highest pressure altitude each limit allows, and the maximum altitude.

For a fixed Mach, the buffet, stall, certified and cabin ceilings are closed forms in pressure;
the thrust ceiling (residual rate of climb = the required rate) is the top root of the excess
climb rate. For the best speed, the Mach that gives the highest altitude meeting every limit at
once is found per case by a staged search. Everything is vectorised over cases: no Python loop
per case, loops over iterations and chunks only.

The package, one concern per module, each importing only those above it:

- :mod:`~variantcmp.solver.finders`: generic vectorised root and maximum finders (no physics);
- :mod:`~variantcmp.solver.results`: limit names, flags, :class:`Ceilings`, the best so far;
- :mod:`~variantcmp.solver.physics`: :class:`ClimbPhysics`, thrust, drag and climb rate of a case set;
- :mod:`~variantcmp.solver.limits`: the closed-form limits (buffet, stall, VMO floor, cabin);
- :mod:`~variantcmp.solver.kinks`: where the data put kinks and jumps (table Machs, layer bases, ...);
- :mod:`~variantcmp.solver.thrust_ceiling`: the thrust ceiling at a fixed Mach;
- :mod:`~variantcmp.solver.fixed_mach`: every limit and the maximum altitude at a fixed Mach;
- :mod:`~variantcmp.solver.coarse`, :mod:`~variantcmp.solver.thrust_best`,
  :mod:`~variantcmp.solver.corner`, :mod:`~variantcmp.solver.best_speed`: the best-speed search's
  stages (coarse grid; the thrust ceiling's best speed; the crossing of thrust and buffet or
  stall at a coffin corner; the combined maximum altitude and the checks);
- :mod:`~variantcmp.solver.parallel`: :func:`solve_ceilings`, chunks and processes;
- the inverse questions at a target level: :mod:`~variantcmp.solver.level` (what the level allows
  whatever the weight or the day), :mod:`~variantcmp.solver.speed_search` (the best speed at a
  fixed level), :mod:`~variantcmp.solver.heaviest` (:func:`solve_heaviest`: the heaviest weight),
  :mod:`~variantcmp.solver.hottest` (:func:`solve_hottest`: the warmest day), on
  :mod:`~variantcmp.solver.answers` (per-case records, chunks).

This module gives the names the rest of the package uses.
"""

from ..atmosphere import MODEL_TOP_M
from .best_speed import best_speed_ceilings
from .coarse import BEST_MACH_GRID, mach_grid
from .finders import bisect_root, golden_max, nan_as_lowest
from .fixed_mach import fixed_mach_ceilings
from .heaviest import Heaviest, solve_heaviest
from .hottest import Hottest, solve_hottest
from .limits import buffet_ceiling_m, buffet_cl_at, buffet_peak_mach, closed_form_ceilings_m
from .parallel import solve_ceilings
from .physics import THRUST_MODELS, ClimbPhysics
from .results import (ABOVE_MMO, ABOVE_MODEL_TOP, BELOW_FLOOR, BELOW_VMO_FLOOR, CANNOT_CLIMB, LIMITS, NO_BUFFET_AT_MACH,
                      NO_COMMON_ALTITUDE, PROPELLER_DATA_MACH, THRUST_DATA_MACH, THRUST_DATA_TOP, UNFLYABLE,
                      Ceilings)
from .thrust_ceiling import SCAN_LEVELS_M, thrust_ceiling_m

__all__ = [
    "ABOVE_MMO", "ABOVE_MODEL_TOP", "BELOW_FLOOR", "BELOW_VMO_FLOOR", "BEST_MACH_GRID", "CANNOT_CLIMB", "LIMITS",
    "MODEL_TOP_M", "NO_BUFFET_AT_MACH", "NO_COMMON_ALTITUDE", "PROPELLER_DATA_MACH", "SCAN_LEVELS_M",
    "THRUST_DATA_MACH", "THRUST_DATA_TOP", "THRUST_MODELS", "UNFLYABLE", "Ceilings", "ClimbPhysics", "Heaviest", "Hottest",
    "best_speed_ceilings", "bisect_root",
    "buffet_ceiling_m", "buffet_cl_at", "buffet_peak_mach", "closed_form_ceilings_m", "fixed_mach_ceilings",
    "golden_max", "mach_grid", "nan_as_lowest", "solve_ceilings", "solve_heaviest", "solve_hottest", "thrust_ceiling_m",
]
