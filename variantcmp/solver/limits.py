"""Limits with closed forms at a fixed Mach: buffet onset, stall, the VMO floor, the cabin ceiling.

Lift equilibrium n W = (gamma/2) p M^2 S CL (Anderson, *Introduction to Flight*, eq. 4.83) gives
the lowest pressure at which CL stays within its limit: ``cl_max`` at 1 g (stall), the buffet-onset
CL at the case's g margin (buffet). VMO gives an altitude *floor* at a Mach
(:func:`variantcmp.airspeed.pressure_for_cas_at_mach_pa`); the certified ceiling is a constant and
the cabin ceiling a pressure, both computed once per case in :mod:`variantcmp.cases`. Pressures
become pressure altitudes through :func:`variantcmp.atmosphere.pressure_altitude_m` (+inf above
the model top, -inf below its bottom).
"""

from __future__ import annotations

import numpy as np

from ..airspeed import pressure_for_cas_at_mach_pa
from ..atmosphere import G0, GAMMA, pressure_altitude_m
from ..cases import CaseSet


def buffet_cl_at(cases: CaseSet, mach):
    """1 g buffet-onset CL per case (NaN where the variant has no data at that Mach), linear
    between the catalogue's points (:func:`variantcmp.aero.buffet_onset_cl`, all variants at once)."""
    bid = cases.buffet_id
    has = bid >= 0
    cl = np.full(mach.shape, np.nan)
    if has.any() and cases.buffet_key.size:
        safe = np.where(has, bid, 0)
        inside = has & (mach >= cases.buffet_low[safe]) & (mach <= cases.buffet_high[safe])
        key = mach + 10.0 * safe
        cl = np.where(inside, np.interp(key, cases.buffet_key, cases.buffet_cl), np.nan)
    return cl


def buffet_boundary(cases: CaseSet, buffet_id: int):
    """The catalogue's buffet boundary of one variant: (Mach points, CL there)."""
    node = (cases.buffet_key >= 10.0 * buffet_id) & (cases.buffet_key < 10.0 * (buffet_id + 1))
    return cases.buffet_key[node] - 10.0 * buffet_id, cases.buffet_cl[node]


def buffet_peak_mach(cases: CaseSet, low, high):
    """Mach in [low, high] per case where M^2 CL_buffet(M) peaks: the speed of the highest buffet
    ceiling, since n W = (gamma/2) p M^2 S CL_buffet (Anderson, *Introduction to Flight*, eq. 4.83).

    Closed form: on each segment of the (piecewise linear) boundary CL_b = c + s M, and
    d/dM [M^2 (c + s M)] = 0 at M = -2c / (3s); the peak is there, at a node or at an end of the
    range. NaN where the case has no buffet data, or none in its range.
    """
    out = np.full(len(cases), np.nan)
    bid = cases.buffet_id
    for i in np.flatnonzero(np.bincount(bid[bid >= 0])):  # (np.unique costs more)
        rows = np.flatnonzero(bid == i)
        m, cl = buffet_boundary(cases, i)
        slope = np.diff(cl) / np.diff(m)
        with np.errstate(divide="ignore", invalid="ignore"):
            turn = -2.0 * (cl[:-1] - slope * m[:-1]) / (3.0 * slope)
        turn = turn[(slope < 0.0) & (turn > m[:-1]) & (turn < m[1:])]
        lo = np.maximum(np.broadcast_to(low, (len(cases),))[rows], m[0])[:, None]
        hi = np.minimum(np.broadcast_to(high, (len(cases),))[rows], m[-1])[:, None]
        candidates = np.hstack([np.clip(np.concatenate([m, turn])[None, :], lo, hi), lo, hi])
        capacity = candidates * candidates * np.interp(candidates, m, cl)
        peak = candidates[np.arange(rows.size), np.argmax(capacity, axis=1)]
        out[rows] = np.where(lo[:, 0] <= hi[:, 0], peak, np.nan)  # no buffet data in the range: NaN
    return out


def buffet_ceiling_m(cases: CaseSet, mach):
    """Buffet-onset ceiling (m) at the case's load-factor margin: the pressure at which
    g_margin W = (gamma/2) p M^2 S CL_buffet (Anderson, *Introduction to Flight*, eq. 4.83).
    +inf where the variant has no buffet data, NaN where it has none at this Mach."""
    qs_per_p = 0.5 * GAMMA * mach * mach * cases.wing_area_m2
    with np.errstate(invalid="ignore", divide="ignore"):
        p = cases.g_margin * (cases.weight_kg * G0) / (qs_per_p * buffet_cl_at(cases, mach))
        return np.where(cases.buffet_id >= 0, pressure_altitude_m(p), np.inf)


def closed_form_ceilings_m(cases: CaseSet, mach):
    """Buffet, stall, cabin ceilings and the VMO floor (m) at a Mach; pressure-based closed forms.

    Lift equilibrium n W = (gamma/2) p M^2 S CL gives the lowest pressure at which CL stays within
    its limit (Anderson, *Introduction to Flight*, eq. 4.83). The cabin ceiling does not depend on
    the Mach: it comes with the cases.
    """
    w = cases.weight_kg * G0
    qs_per_p = 0.5 * GAMMA * mach * mach * cases.wing_area_m2
    with np.errstate(invalid="ignore", divide="ignore"):
        stall = pressure_altitude_m(w / (qs_per_p * cases.cl_max))
        vmo_floor = np.where(np.isnan(cases.vmo_ms), -np.inf,
                             pressure_altitude_m(pressure_for_cas_at_mach_pa(cases.vmo_ms, mach)))
    return buffet_ceiling_m(cases, mach), stall, cases.cabin_m.copy(), vmo_floor


def lowest_other_ceiling_m(cases: CaseSet, closed):
    """The lowest of the buffet (where known), stall, certified and cabin ceilings, from the
    closed forms ``closed`` (:func:`closed_form_ceilings_m`): a bound of the maximum altitude."""
    buffet, stall, cabin, _ = closed
    return np.fmin(np.fmin(np.where(np.isnan(buffet), np.inf, buffet), stall), np.fmin(cases.certified_m, cabin))
