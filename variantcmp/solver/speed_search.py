"""Best speed at a fixed level: per case, the Mach in a range that maximises an objective there.

The inverse answers at best speed (the heaviest weight for a level, the warmest day) are the
best over Mach of their fixed-Mach answers at the level. At a fixed level each objective
evaluation is cheap (no altitude root), and the objective is smooth between the kinks the data
put (:mod:`~variantcmp.solver.kinks`: thrust-table and propeller-efficiency Mach points, the
turbofan lapse's branch Mach at the level; the buffet boundary's peak, a closed form), with a kink where two limits cross (the
coffin corner: thrust against buffet onset). The search is three stages:

1. *Coarse*: GRID_SPEEDS speeds evenly spaced over each case's range and the kink speeds inside
   it (:func:`kink_speeds`), in one flat call.
2. *Brackets* (:func:`_around`): the best point's nearest neighbours below and above among
   those points (a peak between them lies there, or on the point). The objective is smooth
   between kinks, not across them, so a bracket is split at a kink: where the best point is a
   kink speed, each side is searched alone; where a neighbour is one, the piece beyond it too, up
   to the next point (a table's thrust can dip at a Mach column between two humps, and the
   higher hump's top lie on either side). Where the best kink speed lies outside the first
   bracket, within KINK_SHARE of the best value (a peak on or next to a kink, on another hump),
   the same around it. And around up to
   SCREENED samples elsewhere whose parabola with their neighbours peaks between them above the
   best value found (:func:`_screened`: a hump whose top lies between samples, on another piece).
3. *Refine*: Brent's search (:func:`~variantcmp.solver.finders.brent_max`) in every bracket, as
   one search on repeated cases, each stopping once its bracket is within MACH_TOL: at a crossing
   of two limits the objective's slope is not zero, so the Mach is found to MACH_TOL there (a
   weight to about 0.1 kg at 1e5 kg per Mach); the best of all kept.

Guarantees: the result is no worse than any point evaluated (the grid, the kinks, the searches),
and its Mach lies in the case's range. Known limit: a peak narrower than a grid step, away from
the best point and from every kink, is not looked for.
"""

from __future__ import annotations

import numpy as np

from .finders import brent_max, nan_as_lowest
from .kinks import mach_kink_groups, turbofan_branch_mach
from .level import EVERY_SPEED, level_flags, speed_range_at_level
from .limits import buffet_peak_mach
from .results import BELOW_VMO_FLOOR

GRID_SPEEDS = 12  # evenly spaced over the range: a step of about 0.06 Mach
MACH_TOL = 1e-6  # Brent's search stops once its bracket is within this of its best point
SEARCH_ITERATIONS = 48  # at most (golden-section steps at a crossing: 0.12 x 0.618^25 is 7e-7)
SCREENED = 2  # humps between samples searched per case, besides the best point's
KINK_SHARE = 0.02  # a kink speed apart from the best point is searched around if this close to the best value
SCREEN_MARGIN = 1e-9  # a vertex must beat the best value by this share of it (not rounding)


def kink_speeds(phys, altitude_m, low, high) -> np.ndarray:
    """Speeds where the objective at the level may have a kink or a peak (cases x kinds, NaN where
    none or outside (low, high)): the Machs where the thrust data have kinks
    (:func:`~variantcmp.solver.kinks.mach_kink_groups`: a thrust table's Mach columns, a propeller
    efficiency table's Machs), the turbofan lapse's branch Mach at the level (:func:`~variantcmp.solver.kinks.turbofan_branch_mach`) and the buffet
    ceiling's own best speed (:func:`~variantcmp.solver.limits.buffet_peak_mach`)."""
    cs = phys.cases
    n = len(cs)
    tables = mach_kink_groups(phys)
    width = max((m.size for m, _ in tables), default=0)
    out = np.full((n, width + 2), np.nan)
    for machs, group in tables:
        out[group, :machs.size] = machs
    out[:, width] = turbofan_branch_mach(phys, np.asarray(altitude_m, dtype=float))
    out[:, width + 1] = buffet_peak_mach(cs, low, high)
    with np.errstate(invalid="ignore"):
        return np.where((out > low[:, None]) & (out < high[:, None]), out, np.nan)


def best_speed_at_level(cases, altitude_m, objective_for, fixed):
    """An answer at the best speed per case: the search of the module docstring over the speeds
    that can fly each level (:func:`~variantcmp.solver.level.speed_range_at_level`; none where a
    limit blocks the level at every speed), then ``fixed(cases, altitude_m, mach)`` at the speed
    found, so that the answer is one fixed-Mach answer. ``objective_for(cases, altitude_m)``: the
    objective and the physics (for the kink speeds) of the cases searched. Where no speed at all
    can fly the level (every one over VMO there) BELOW_VMO_FLOOR and no answer; no Mach where
    there is no answer."""
    h = np.asarray(altitude_m, dtype=float)
    low, high = speed_range_at_level(cases, h)
    every = level_flags(cases, h, low) & EVERY_SPEED
    search = np.flatnonzero((every == 0) & (low <= high))
    mach = low.copy()
    if search.size:
        objective, phys = objective_for(cases.take(search), h[search])
        mach[search], _ = best_speed_search(objective, low[search], high[search],
                                            kink_speeds(phys, h[search], low[search], high[search]))
    res = fixed(cases, h, mach)
    none = (every == 0) & (low > high)
    res.flags[none] |= BELOW_VMO_FLOOR
    res.blank(none)
    res.mach[~res.answered()] = np.nan
    return res


def best_speed_search(objective, low, high, kinks=None):
    """The stages of the module docstring. ``objective(rows, mach)``: the value at a Mach for the
    cases ``rows`` (ascending, repeats allowed; higher is better; -inf where the speed cannot fly),
    and ``objective.subset(rows)`` the objective of those cases; ``low``, ``high``: each case's
    range; ``kinks``: cases x kinds speeds (NaN where none). Returns (mach, value)."""
    n = low.size
    kinks = np.empty((n, 0)) if kinks is None else kinks
    grid = low[:, None] + (high - low)[:, None] * np.linspace(0.0, 1.0, GRID_SPEEDS)[None, :]
    points = np.hstack([grid, kinks])
    values = np.full(points.shape, -np.inf)
    rows, cols = np.nonzero(np.isfinite(points))
    if rows.size:
        values[rows, cols] = nan_as_lowest(objective(rows, points[rows, cols]))
    r = np.arange(n)
    first = np.argmax(values, axis=1)
    brackets = _around(points, r, first)
    if kinks.shape[1]:
        k = GRID_SPEEDS + np.argmax(values[:, GRID_SPEEDS:], axis=1)
        x_k = points[r, k]
        best = values[r, first]
        with np.errstate(invalid="ignore"):
            apart = np.flatnonzero(np.isfinite(values[r, k]) & (values[r, k] >= best - KINK_SHARE * np.abs(best))
                                   & ((x_k < points[r, _neighbours(points, first)])
                                      | (x_k > points[r, _neighbours(points, first, True)])))
        brackets += _around(points, apart, k[apart])
    brackets += _screened(points, values, first)
    who, start, start_values = _starts(objective, points, values, brackets)
    # Cases in order (each at most once per bracket), so that their thrust-model groups stay slices.
    order = np.argsort(who, kind="stable")
    who, start, start_values = who[order], start[order], start_values[order]
    searched = objective.subset(who)
    x, fx = brent_max(lambda live, u, guess, spread: nan_as_lowest(searched(live, u)), start, start_values,
                      SEARCH_ITERATIONS, MACH_TOL)
    best_x, best_f = points[r, first], values[r, first]
    top = np.lexsort((-fx, who))
    top = top[np.concatenate([[True], who[top][1:] != who[top][:-1]])] if top.size else top  # each case's best search
    better = fx[top] > best_f[who[top]]
    best_x[who[top][better]], best_f[who[top][better]] = x[top][better], fx[top][better]
    return best_x, best_f


def _around(points, rows, at):
    """The brackets around the point ``at`` of each row of ``rows``, as (rows, low column, middle
    column or None for the midpoint, high column): its neighbours; split at the point where it is
    a kink (the objective is smooth on either side, not across); and the piece beyond each
    neighbour that is a kink."""
    p = points[rows]
    below, above = _neighbours(p, at), _neighbours(p, at, up=True)
    kink = at >= GRID_SPEEDS
    out = []
    smooth, split = np.flatnonzero(~kink), np.flatnonzero(kink)
    out.append((rows[smooth], below[smooth], at[smooth], above[smooth]))
    out.append((rows[split], below[split], None, at[split]))
    out.append((rows[split], at[split], None, above[split]))
    for side, up in ((below, False), (above, True)):
        far = np.flatnonzero((side >= GRID_SPEEDS) & (side != at))
        beyond = _neighbours(p[far], side[far], up=up)
        out.append((rows[far], side[far], None, beyond) if up else (rows[far], beyond, None, side[far]))
    return [b for b in out if b[0].size]


def _screened(points, values, first):
    """Brackets (as :func:`_around`'s) around the samples, away from the best point, where the
    parabola through a sample and its neighbours (never across a kink: the sample is not one)
    peaks between them above the best value found: a smooth hump whose top lies between samples
    (Brent's parabolic step; the screen of :func:`~variantcmp.solver.finders.parabola_peak`, at
    every sample). At most SCREENED per case, the highest vertices first."""
    n, width = points.shape
    r = np.arange(n)
    order = np.argsort(np.where(np.isfinite(points), points, np.inf), axis=1)
    x, f = np.take_along_axis(points, order, axis=1), np.take_along_axis(values, order, axis=1)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        d0, d2 = x[:, :-2] - x[:, 1:-1], x[:, 2:] - x[:, 1:-1]
        s0, s2 = (f[:, :-2] - f[:, 1:-1]) / d0, (f[:, 2:] - f[:, 1:-1]) / d2
        curv = 2.0 * (s2 - s0) / (d2 - d0)
        rise = s0 - 0.5 * curv * d0
        t = -rise / curv
        vertex = np.where((curv < 0.0) & (t > d0) & (t < d2), f[:, 1:-1] + 0.5 * rise * t, -np.inf)
    middle = order[:, 1:-1]
    near = (middle == first[:, None]) | (order[:, :-2] == first[:, None]) | (order[:, 2:] == first[:, None])
    vertex = np.where((middle < GRID_SPEEDS) & ~near & np.isfinite(vertex), vertex, -np.inf)
    vertex = np.where(vertex > values[r, first][:, None] + SCREEN_MARGIN * np.abs(values[r, first])[:, None], vertex,
                      -np.inf)
    out = []
    for rank in range(min(SCREENED, vertex.shape[1])):
        j = np.argmax(vertex, axis=1)
        rows = np.flatnonzero(np.isfinite(vertex[r, j]))
        if rows.size == 0:
            break
        jj = j[rows]
        out.append((rows, order[rows, jj], order[rows, jj + 1], order[rows, jj + 2]))
        vertex[rows, jj] = -np.inf
    return out


def _starts(objective, points, values, brackets):
    """Brent's starting triples (low end, best point, high end) and their values, one per bracket:
    (rows, low column, middle column or None for the midpoint, high column)."""
    who, xs, fs = [], [], []
    for rows, lo, mid, hi in brackets:
        rr = np.arange(rows.size)
        p, v = points[rows], values[rows]
        x_lo, x_hi = p[rr, lo], p[rr, hi]
        x_mid = 0.5 * (x_lo + x_hi) if mid is None else p[rr, mid]
        f_mid = np.full(rows.size, np.nan) if mid is None else v[rr, mid]
        who.append(rows)
        xs.append(np.stack([x_lo, x_mid, x_hi], axis=1))
        fs.append(np.stack([v[rr, lo], f_mid, v[rr, hi]], axis=1))
    who, xs, fs = np.concatenate(who), np.concatenate(xs), np.concatenate(fs)
    todo = np.flatnonzero(np.isnan(fs[:, 1]))
    if todo.size:
        todo = todo[np.argsort(who[todo], kind="stable")]  # the objective takes cases in order
        fs[todo, 1] = nan_as_lowest(objective(who[todo], xs[todo, 1]))
    return who, xs, fs


def _neighbours(points, at, up=False):
    """Per row, the column of the nearest point strictly below ``points[row, at]`` (``up``: above);
    ``at`` itself where there is none."""
    r = np.arange(points.shape[0])
    x0 = points[r, at]
    with np.errstate(invalid="ignore"):
        if up:
            cand = np.where(points > x0[:, None], points, np.inf)
            j = np.argmin(cand, axis=1)
        else:
            cand = np.where(points < x0[:, None], points, -np.inf)
            j = np.argmax(cand, axis=1)
    return np.where(np.isfinite(cand[r, j]), j, at)
