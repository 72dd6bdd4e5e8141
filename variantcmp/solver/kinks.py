"""Where the data put kinks and jumps, known before any search: the best-speed stages bracket
around them instead of discovering them.

- ISA layer bases (altitude): the energy-share factor changes with the layer's temperature
  gradient, so the climb rate jumps at a base (about 8 % at Mach 0.8 at the tropopause). A
  thrust ceiling often sits exactly there, and over a range of speeds it *is* the base: a flat
  top of the thrust ceiling against Mach (:func:`on_layer_base`).
- Thrust-table Mach columns: a table interpolates linearly in Mach, so thrust, and with it the
  thrust ceiling, has a kink at each table Mach; between two it is smooth (:func:`thrust_cell`,
  :func:`table_nodes_inside`, :func:`nearest_table_node`).
- The turbofan lapse's branch change at theta0 = TR (:func:`variantcmp.thrust.turbofan_lapse_fraction`):
  a kink in Mach whose place depends on the altitude (:func:`turbofan_branch_between`).
- Buffet-boundary points: the buffet ceiling is smooth between them (:func:`buffet_nodes_around`);
  its highest point over a speed range is a closed form (:func:`variantcmp.solver.limits.buffet_peak_mach`).
- The speed range's ends (MMO, the Mach ranges of the thrust table and the buffet data: see
  :mod:`variantcmp.cases`) are the ends of every search.
"""

from __future__ import annotations

import numpy as np

from ..atmosphere import LAYER_BASE_M, T0_K, isa_state
from ..cases import MODEL_CODES
from ..thrust import ram_temperature_ratio
from .limits import buffet_boundary

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


def thrust_cell(phys, mach, low, high):
    """[low, high] narrowed, for table engines, to the table Mach cell holding ``mach`` (where
    their thrust is smooth in Mach); unchanged for the other models."""
    cs = phys.cases
    low, high = np.array(low, dtype=float), np.array(high, dtype=float)
    for code, tid, group in phys.groups:
        if code == MODEL_CODES["table"]:
            nodes = cs.tables[tid].mach
            j = np.clip(np.searchsorted(nodes, mach[group], side="right") - 1, 0, nodes.size - 2)
            low[group] = np.maximum(low[group], nodes[j])
            high[group] = np.minimum(high[group], nodes[j + 1])
    return low, high


def table_nodes_inside(phys, where):
    """Every table Mach strictly inside a table-engine case's speed range, for the cases ``where``
    (a mask): flat (case, Mach) pairs."""
    cs = phys.cases
    n = len(cs)
    case, mach = [], []
    for code, tid, group in phys.groups:
        if code != MODEL_CODES["table"]:
            continue
        rows = np.arange(n)[group]
        machs = cs.tables[tid].mach
        inside = ((machs[None, :] > cs.mach_low[rows, None]) & (machs[None, :] < cs.mach_high[rows, None])
                  & where[rows, None])
        who, which = np.nonzero(inside)
        case.append(rows[who])
        mach.append(machs[which])
    return np.concatenate(case or [np.zeros(0, np.intp)]), np.concatenate(mach or [np.zeros(0)])


def nearest_table_node(phys, mach):
    """The table Mach nearest ``mach`` per case (NaN for the other models)."""
    node = np.full(len(phys.cases), np.nan)
    for code, tid, group in phys.groups:
        if code == MODEL_CODES["table"]:
            machs = phys.cases.tables[tid].mach
            node[group] = machs[np.argmin(np.abs(mach[group][:, None] - machs[None, :]), axis=1)]
    return node


def table_machs(phys):
    """(Mach columns, group) of every thrust table of the set."""
    return [(phys.cases.tables[tid].mach, group) for code, tid, group in phys.groups if code == MODEL_CODES["table"]]


def turbofan_branch_between(phys, altitude_m, low, high):
    """Turbofan cases whose lapse changes branch (theta0 = TR) between two speeds at an altitude:
    the excess climb rate has a kink in Mach there. A flat-rated engine's lapse sees ISA."""
    cs = phys.cases
    t = isa_state(altitude_m)[0] + np.where(np.isnan(cs.flat_rate_isa_dev_c), cs.isa_dev_c, 0.0)
    limit_k = T0_K * cs.throttle_ratio  # theta0 = TR
    with np.errstate(invalid="ignore"):
        return (cs.model_code == MODEL_CODES["turbofan"]) & (
            (t * ram_temperature_ratio(low) - limit_k) * (t * ram_temperature_ratio(high) - limit_k) <= 0.0)


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
