"""Where the data put kinks and jumps, known before any search: the best-speed stages bracket
around them instead of discovering them.

- ISA layer bases (altitude): the energy-share factor changes with the layer's temperature
  gradient, so the climb rate jumps at a base (about 8 % at Mach 0.8 at the tropopause). A
  thrust ceiling often sits exactly there, and over a range of speeds it *is* the base: a flat
  top of the thrust ceiling against Mach (:func:`on_layer_base`).
- Thrust-table Mach columns: a table interpolates linearly in Mach, so thrust, and with it the
  thrust ceiling, has a kink at each table Mach; between two it is smooth (:func:`kink_nodes_inside`,
  :func:`nearest_kink_mach`). A propeller efficiency table's Machs are kinks the same way
  (thrust = eta(M) P / V, eta linear between them), and so is any model's ``kink_machs``
  (:func:`mach_kink_groups`). Between two kinks of a propeller table the excess power at an
  altitude, eta P linear in M less the power required (convex in speed), is concave: one hump
  per cell; where the table is concave (slopes never rising), over the whole range
  (:func:`several_humps_in_mach`).
- The turbofan lapse's branch change at theta0 = TR (:func:`variantcmp.thrust.turbofan_lapse_fraction`):
  a kink in Mach whose place depends on the altitude, fixed in the isothermal layer
  (:func:`turbofan_branch_mach`).
- Buffet-boundary points: the buffet ceiling is smooth between them (:func:`buffet_nodes_around`);
  its highest point over a speed range is a closed form (:func:`variantcmp.solver.limits.buffet_peak_mach`).
- The speed range's ends (MMO, the Mach ranges of the thrust table and the buffet data: see
  :mod:`variantcmp.cases`) are the ends of every search. The VMO floor rises with Mach: where it
  climbs above the other ceilings the flyable speeds can form islands, which
  :func:`variantcmp.solver.best_speed.flyable_islands` scans for.
"""

from __future__ import annotations

import numpy as np

from ..atmosphere import GAMMA, LAYER_BASE_M, T0_K, isa_temperature_k
from ..cases import MODEL_CODES
from .limits import buffet_boundary
from .physics import THRUST_MODELS

#: Altitudes (m) where the climb rate may jump: the layer bases above sea level (the root
#: finders' breaks).
ALTITUDE_BREAKS_M = LAYER_BASE_M[1:]
#: The layer bases the searches meet: the tropopause and the 20 km base.
FLAT_TOP_BASES_M = LAYER_BASE_M[1:3]
PLATEAU_M = 1e-3  # a root this close to a layer base sits on it (roots there come out at the base +- 1e-6 m)


def on_layer_base(altitude_m):
    """Whether each altitude sits on the tropopause or the 20 km base (within PLATEAU_M)."""
    with np.errstate(invalid="ignore"):
        return (np.abs(np.asarray(altitude_m)[:, None] - FLAT_TOP_BASES_M[None, :]) <= PLATEAU_M).any(axis=1)


def layer_base_near_m(altitude_m, within_m):
    """The layer base within ``within_m`` of each altitude (from just above it), NaN where none
    above sea level."""
    base = LAYER_BASE_M[np.clip(np.searchsorted(LAYER_BASE_M, altitude_m + within_m) - 1, 0, LAYER_BASE_M.size - 1)]
    with np.errstate(invalid="ignore"):
        return np.where((np.abs(altitude_m - base) < within_m) & (base > 0.0), base, np.nan)


def mach_kink_groups(phys, several_humps=False):
    """(kink Machs, group) of every group whose data put kinks in Mach (:attr:`ThrustModel.kink_machs`
    of :mod:`variantcmp.solver.physics`: a thrust table's Mach columns, a propeller efficiency
    table's Machs); groups without such points (a constant efficiency) left out. ``several_humps``:
    only the groups whose thrust ceiling may have several humps over speed (not
    :attr:`ThrustModel.one_hump`: a concave efficiency table has one)."""
    out = []
    for code, data_id, group in phys.groups:
        model = THRUST_MODELS[code]
        machs = None if model.kink_machs is None else model.kink_machs(phys.cases, data_id)
        if machs is None or not machs.size:
            continue
        if several_humps and model.one_hump is not None and model.one_hump(phys.cases, data_id):
            continue
        out.append((machs, group))
    return out


def several_humps_in_mach(phys) -> np.ndarray:
    """Per case, whether its thrust ceiling may fall and rise again over speed: kinks in Mach that
    are not all concave (:func:`mach_kink_groups`); a smooth model's has one hump."""
    out = np.zeros(len(phys.cases), dtype=bool)
    for _, group in mach_kink_groups(phys, several_humps=True):
        out[group] = True
    return out


def kink_nodes_inside(phys, where):
    """Every kink Mach (:func:`mach_kink_groups`) strictly inside a case's speed range, for the
    cases ``where`` (a mask): flat (case, Mach) pairs."""
    cs = phys.cases
    n = len(cs)
    case, mach = [], []
    for machs, group in mach_kink_groups(phys):
        rows = np.arange(n)[group]
        inside = ((machs[None, :] > cs.mach_low[rows, None]) & (machs[None, :] < cs.mach_high[rows, None])
                  & where[rows, None])
        who, which = np.nonzero(inside)
        case.append(rows[who])
        mach.append(machs[which])
    return np.concatenate(case or [np.zeros(0, np.intp)]), np.concatenate(mach or [np.zeros(0)])


def nearest_kink_mach(phys, mach):
    """The kink Mach (:func:`mach_kink_groups`) nearest ``mach`` per case (NaN for smooth models)."""
    node = np.full(len(phys.cases), np.nan)
    for machs, group in mach_kink_groups(phys):
        node[group] = machs[np.argmin(np.abs(mach[group][:, None] - machs[None, :]), axis=1)]
    return node


def smooth_cell(phys, mach, low, high):
    """Per case, [low, high] narrowed to the cell between the kink Machs (:func:`mach_kink_groups`)
    around ``mach``: where the thrust ceiling is smooth in Mach (unchanged for smooth models)."""
    low, high = np.array(low, dtype=float), np.array(high, dtype=float)
    for machs, group in mach_kink_groups(phys):
        m = mach[group]
        j = np.searchsorted(machs, m, side="right")
        below = machs[np.clip(j - 1, 0, machs.size - 1)]
        above = machs[np.clip(j, 0, machs.size - 1)]
        low[group] = np.where((j > 0) & (below > low[group]), below, low[group])
        high[group] = np.where((j < machs.size) & (above < high[group]), above, high[group])
    return low, high


def turbofan_branch_mach(phys, altitude_m):
    """The Mach at which each turbofan case's lapse changes branch at an altitude: theta0 = TR,
    theta0 = (T/T0)(1 + (gamma-1)/2 M^2) (:func:`variantcmp.thrust.turbofan_lapse_fraction`; a
    flat-rated engine's lapse sees ISA). Faster, the hot branch's steeper loss takes over, so
    the thrust ceiling may peak in a corner there. NaN for the other models, and where the branch
    lies outside the case's speed range."""
    cs = phys.cases
    out = np.full(len(cs), np.nan)
    for code, _, g in phys.groups:
        if code != MODEL_CODES["turbofan"]:
            continue
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            seen = np.where(np.isnan(cs.flat_rate_isa_dev_c[g]), cs.isa_dev_c[g], 0.0)
            h = altitude_m[g]
            t = np.where(np.isfinite(h), isa_temperature_k(np.where(np.isfinite(h), h, 0.0)), np.nan) + seen
            mach = np.sqrt((T0_K * cs.throttle_ratio[g] / t - 1.0) / (0.5 * (GAMMA - 1.0)))
            out[g] = np.where((mach > cs.mach_low[g]) & (mach < cs.mach_high[g]), mach, np.nan)
    return out


def buffet_nodes_around(cases, mach):
    """The buffet boundary's Mach points either side of ``mach`` per case (strictly below and
    above; ``mach`` itself past the ends, and where the case has no buffet data)."""
    low, high = np.array(mach, dtype=float), np.array(mach, dtype=float)
    bid = cases.buffet_id
    for i in np.flatnonzero(np.bincount(bid[bid >= 0])):
        rows = np.flatnonzero(bid == i)
        m = buffet_boundary(cases, i)[0]
        below = np.searchsorted(m, low[rows], side="left") - 1
        above = np.searchsorted(m, high[rows], side="right")
        low[rows] = np.where(below >= 0, m[np.maximum(below, 0)], low[rows])
        high[rows] = np.where(above < m.size, m[np.minimum(above, m.size - 1)], high[rows])
    return low, high
