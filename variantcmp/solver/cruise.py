"""Cruise levels at a fixed Mach: the optimum altitude (maximum specific range) and the best level
of a level scheme at or below the maximum altitude.

Stages, each vectorised over the cases (loops over iterations only):

- :func:`closed_form_optimum_pressure_pa`: the pressure where CL = sqrt(CD0/K), the optimum
  exactly for a parabolic polar with a TSFC of the (a + b M) sqrt(theta) form (specific range is
  then proportional to 1/D at a fixed Mach, and D is least at that CL); the search's centre.
- :func:`optimum_altitude`: the pressure altitude of maximum specific range, unconstrained by the
  ceilings (a scan in ln p around the closed form, then a golden-section search between the best
  scan point's neighbours); flags where the data end before specific range stops rising.
- :func:`best_level`: the level of a scheme at or below the maximum altitude with the best
  specific range: the scheme's levels either side of the optimum (specific range is single-peaked
  in altitude at a fixed Mach; a test checks it against every level on the demo fleets).

Level schemes (:data:`LEVEL_SCHEMES`) are the semicircular cruising levels of one direction of
flight, as common practice has them (ICAO Annex 2, app. 3, from memory).
"""

from __future__ import annotations

import numpy as np

from ..atmosphere import G0, GAMMA, isa_pressure_pa, pressure_altitude_m
from ..cases import FT
from .finders import golden_max, nan_as_lowest
from .fuel_flow import NO_FUEL, CruisePhysics, in_chunks

# Flags (bit mask) of the cruise answers.
NO_FUEL_DATA = 1  # the engine has no fuel data
FUEL_DATA_MACH = 2  # the Mach lies outside the TSFC table or the propeller efficiency data
OPTIMUM_ABOVE_DATA = 4  # specific range still rising at the top of the TSFC table or of the model
OPTIMUM_BELOW_FLOOR = 8  # still rising at -2,000 ft (or the TSFC table's lowest altitude)
NO_LEVEL = 16  # no level of the scheme at or below the maximum altitude (where the data reach)
# ... and of the cruise speeds at a level (:mod:`variantcmp.solver.cruise_speed`).
NO_SPEED_IN_BUFFET_MARGIN = 32  # the buffet margin holds at no speed at this level
NO_SPEED = 64  # the speed limits leave no speed (stall or buffet above MMO, VMO or the data's range)
CANNOT_HOLD_LEVEL = 128  # thrust is below drag at every allowed speed

#: The scan around the closed-form optimum: pressures from p*/8 to 32 p* (CL from 8 CL* down to
#: CL*/32: compressibility moves the optimum to lower CL, a TSFC table or a PSFC a little either
#: way), cut to where the data reach.
SCAN_LOW, SCAN_HIGH, SCAN_POINTS = 1.0 / 8.0, 32.0, 13
#: Golden-section steps between the best scan point's neighbours (0.69 in ln p): 0.69 x 0.618^30
#: = 3e-7 in ln p, about 0.01 ft.
GOLDEN_STEPS = 30
EDGE_LN_P = 1e-5  # an optimum this close (in ln p, about 0.2 ft) to where the data end is at the edge

#: Level schemes: name -> (description, levels in ft). "1000": every 1,000 ft; "2000": the
#: semicircular levels of one direction with 1,000 ft vertical separation up to FL410 (east: odd
#: thousands to FL410, then FL450, 490, ...; west: even thousands to FL400, then FL430, 470, ...);
#: "4000": the same without reduced separation (east: odd thousands to FL290, then FL330, 370, ...;
#: west: even thousands to FL280, then FL310, 350, ...). Common practice (ICAO Annex 2, app. 3,
#: from memory); east means magnetic tracks 000-179 there. Local rules may differ.
TOP_LEVEL_FT = 75_000


def _levels(below: int, step_below: int, first_above: int) -> tuple[int, ...]:
    return tuple(range(below % step_below or step_below, below + 1, step_below)) + tuple(
        range(first_above, TOP_LEVEL_FT + 1, 4000))


LEVEL_SCHEMES: dict[str, tuple[str, tuple[int, ...]]] = {
    "1000": ("every 1,000 ft", tuple(range(1000, TOP_LEVEL_FT + 1, 1000))),
    "2000-east": ("eastbound, 1,000 ft separation to FL410", _levels(41_000, 2000, 45_000)),
    "2000-west": ("westbound, 1,000 ft separation to FL410", _levels(40_000, 2000, 43_000)),
    "4000-east": ("eastbound, 2,000 ft separation above FL290", _levels(29_000, 2000, 33_000)),
    "4000-west": ("westbound, 2,000 ft separation above FL290", _levels(28_000, 2000, 31_000)),
}
SCHEME_ALIASES = {"2000": "2000-east", "4000": "4000-east"}
DEFAULT_SCHEME = "2000-east"


def scheme_levels_m(scheme: str) -> np.ndarray:
    """The levels of a scheme (its name or alias), ascending, in m."""
    return np.asarray(LEVEL_SCHEMES[SCHEME_ALIASES.get(scheme, scheme)][1], dtype=float) * FT


def closed_form_optimum_pressure_pa(cases, mach):
    """Pressure (Pa) at which a case flies at CL = sqrt(CD0/K) at its Mach: p = W / ((gamma/2) M^2
    S sqrt(CD0/K)) (minimum drag of a parabolic polar, Anderson, *Aircraft Performance and Design*,
    1999, sec. 5.4; lift equilibrium with q = (gamma/2) p M^2)."""
    cl_star = np.sqrt(cases.cd0 / cases.k)
    return cases.weight_kg * G0 / (0.5 * GAMMA * np.asarray(mach) ** 2 * cases.wing_area_m2 * cl_star)


def optimum_altitude(cruise: CruisePhysics, mach):
    """In chunks (:func:`~variantcmp.solver.fuel_flow.in_chunks`) of :func:`optimum_altitude_of`."""
    return in_chunks(optimum_altitude_of, cruise, np.broadcast_to(np.asarray(mach, dtype=float), (len(cruise),)))


def optimum_altitude_of(cruise: CruisePhysics, mach):
    """The pressure altitude (m) of maximum specific range at each case's Mach, unconstrained by
    the ceilings, the specific range there (m/kg) and flags.

    Guarantees: the search covers pressures from p*/8 to 32 p* (:func:`closed_form_optimum_pressure_pa`)
    within where the fuel data and the model reach; the answer is the best of the scan's 13 points
    refined by golden section to about 0.01 ft (for a single-peaked specific range, its maximum).
    Where the best lies at the edge of the data or the model, the answer is withheld (NaN) and
    flagged: the optimum lies beyond the data.
    """
    cases, fuel = cruise.phys.cases, cruise.fuel
    mach = np.asarray(mach, dtype=float)
    n = len(cruise)
    floor_m, top_m = fuel.altitude_range_m()
    ln_p_low = np.log(isa_pressure_pa(top_m))  # the highest altitude: the lowest pressure
    ln_p_high = np.log(isa_pressure_pa(floor_m))
    centre = np.log(closed_form_optimum_pressure_pa(cases, mach))
    lo = np.clip(centre + np.log(SCAN_LOW), ln_p_low, ln_p_high)
    hi = np.clip(centre + np.log(SCAN_HIGH), ln_p_low, ln_p_high)
    flags = np.zeros(n, dtype=np.int32)
    flags[fuel.code == NO_FUEL] |= NO_FUEL_DATA
    mach_low, mach_high = fuel.mach_range()
    flags[(fuel.code != NO_FUEL) & ((mach < mach_low) | (mach > mach_high))] |= FUEL_DATA_MACH

    def sr(ln_p):
        return nan_as_lowest(cruise.specific_range_m_per_kg(np.exp(ln_p), mach))

    # Stage 1: the scan (one call, a row of pressures per case).
    grid = lo[:, None] + (hi - lo)[:, None] * np.linspace(0.0, 1.0, SCAN_POINTS)[None, :]
    values = sr(grid)
    best = np.argmax(values, axis=1)
    rows = np.arange(n)
    a = grid[rows, np.maximum(best - 1, 0)]
    b = grid[rows, np.minimum(best + 1, SCAN_POINTS - 1)]
    # Stage 2: golden section between the best point's neighbours.
    ln_p, value = golden_max(sr, a, b, GOLDEN_STEPS)
    found = np.isfinite(value) & (value > 0.0)
    at_top = found & (ln_p - ln_p_low < EDGE_LN_P)
    at_floor = found & (ln_p_high - ln_p < EDGE_LN_P)
    flags[at_top] |= OPTIMUM_ABOVE_DATA
    flags[at_floor] |= OPTIMUM_BELOW_FLOOR
    ok = found & ~at_top & ~at_floor
    altitude = np.where(ok, pressure_altitude_m(np.exp(ln_p)), np.nan)
    return altitude, np.where(ok, value, np.nan), flags


def best_level(cruise: CruisePhysics, mach, levels_m, optimum_m, max_altitude_m, flags):
    """The level of ``levels_m`` (ascending, m) at or below each case's maximum altitude with the
    best specific range, and the specific range there (m/kg); NaN (flag NO_LEVEL) where no level
    of the scheme lies at or below the maximum altitude within the fuel data.

    Guarantees: the level returned is never above the maximum altitude; of the scheme's levels
    just below and just above the optimum (those at or below the maximum altitude) it is the one
    with the better specific range. Where the optimum lies above the data, the highest level within
    the data and the maximum altitude.
    """
    n = len(cruise)
    _, data_top = cruise.fuel.altitude_range_m()
    usable = np.isfinite(max_altitude_m) & ~(flags & (NO_FUEL_DATA | FUEL_DATA_MACH)).astype(bool)
    cap = np.where(usable, np.fmin(max_altitude_m, data_top), -np.inf)
    target = np.where(np.isfinite(optimum_m), np.fmin(optimum_m, cap), cap)
    # The level at or below the target, and the one above it where that is still within the cap.
    i_low = np.searchsorted(levels_m, target + 1e-6, side="right") - 1
    i_high = i_low + 1
    candidates = np.stack([i_low, i_high], axis=1)
    valid = (candidates >= 0) & (candidates < levels_m.size)
    level = np.where(valid, levels_m[np.clip(candidates, 0, levels_m.size - 1)], np.nan)
    valid &= level <= cap[:, None] + 1e-6
    level = np.where(valid, level, np.nan)
    with np.errstate(invalid="ignore"):
        p = np.where(valid, isa_pressure_pa(np.nan_to_num(level)), np.nan)
        values = np.where(valid, cruise.specific_range_m_per_kg(p, mach, np.nan_to_num(level)), np.nan)
    pick = np.argmax(nan_as_lowest(values), axis=1)
    rows = np.arange(n)
    chosen, value = level[rows, pick], values[rows, pick]
    none = ~np.isfinite(value)
    flags[none & usable] |= NO_LEVEL
    return np.where(none, np.nan, chosen), np.where(none, np.nan, value)
