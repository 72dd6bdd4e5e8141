"""Best speed, stage 2: the thrust ceiling's own best speed (the maximum of T(M) over Mach).

T(M) is the fixed-Mach thrust ceiling. It is smooth in Mach except where the data put kinks
(:mod:`variantcmp.solver.kinks`): thrust-table Mach columns and a propeller efficiency table's
Machs (both "table Machs" below), the turbofan lapse's branch change,
and layer bases, where over a range of speeds T(M) *is* the base (a flat top: the climb rate
drops across it). The stage starts from the coarse grid (:mod:`variantcmp.solver.coarse`):

1. *Bracket*: the best grid speed's neighbours. Between kinks T is single-peaked, so the peak
   next to the best grid speed lies between them; peaks on or past a kink are step 3's.
2. *Refine* (:func:`refine`): :func:`joint_search`, Newton steps in altitude and Mach together,
   where the excess climb rate is smooth in both; Brent's search over Mach
   (:func:`~variantcmp.solver.finders.brent_max`) for what it leaves, each point a thrust ceiling
   (:class:`ThrustAtSpeed`: Newton steps from the parabola's guess with a learnt slope, else a
   warm window). The joint search settles every case of a 25,000-case benchmark chunk in 15
   evaluation calls (the far side of the table Mach columns, step 3: 151 cases in 12; measured).
3. *Kinks* (:func:`kink_stage`, :func:`layer_base_stage`): each table Mach in the range, and the
   turbofan lapse's branch Mach, that still climbs at the best ceiling found is solved (a peak on
   a kink, between grid speeds); where the table Mach nearest the best lies inside the first
   bracket, the cell on its far side is refined too, if some speed there may climb at the best
   ceiling found; where the best sits on a layer base (a flat top), the speed that climbs best
   just above the base is solved, and from there the joint search in the layer above.
4. *Polish*: the thrust ceiling at the best speed found, solved again to the full root tolerance
   in a window of a few centimetres (on a flat top, 1e-6 m just below the base, where the fixed-Mach
   root finder puts such roots).

Guarantees: the result is no lower than the best grid speed's thrust ceiling (to GRID_TOL_M), nor
than any thrust ceiling the stage solved; its Mach is in the case's speed range; ``final`` is the
fixed-Mach answer at that Mach (every limit, to ROOT_TOL_M). Known limit: a smooth peak of T(M)
narrower than the grid's step, away from the best grid speed and from the table Mach columns, is
not looked for. Tests: ``tests/test_best_speed.py`` (dense Mach scans on the review catalogues,
the joint search against ``scipy.optimize.minimize_scalar``, flat tops at the tropopause).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..atmosphere import LAYER_BASE_M
from .coarse import GRID_TOL_M, Grid
from .finders import brent_max, nan_as_lowest, newton_secant_root, parabola_peak
from .fixed_mach import fixed_mach_ceilings
from .kinks import (FLAT_TOP_BASES_M, PLATEAU_M, kink_nodes_inside, layer_base_near_m, mach_kink_groups,
                    nearest_kink_mach, on_layer_base, smooth_cell, turbofan_branch_mach)
from .physics import ClimbPhysics
from .results import THRUST_DATA_TOP, Ceilings
from .thrust_ceiling import WARM_HALF_WIDTH_M, thrust_ceiling_m

SEARCH_TOL_M = 0.03  # roots inside the searches, where only comparisons matter (0.1 ft)
SLOPE_STEP_M = 1.0  # finite-difference step for the excess climb rate's slope in altitude
# Brent's search over Mach:
BEST_MACH_SEARCH_ITERATIONS = 12  # at most: a case stops once its bracket is within BEST_MACH_TOL
BEST_MACH_TOL = 3e-4  # Mach: the ceiling is flat at its best speed (3e-4 costs well under 0.1 ft)
SEARCH_MIN_HALF_WIDTH_M = 10.0  # narrowest window for a search root (the parabola's guesses are often off by more)
SEARCH_MAX_HALF_WIDTH_M = 2000.0  # widest (a guess off by more takes the cold start)
NEWTON_MAX_STEP_M = 0.3  # a Newton step this short ends the root (slope off by 5 %: 1.5 cm)
LAYER_GUARD_M = 50.0  # no Newton steps this close to a layer base (the slope learnt may be the other layer's)
# The joint search:
JOINT_MACH_STEP = 2e-3  # its speeds either side of its current one (central differences)
JOINT_ITERATIONS = 8  # most settle in three or four; the few left go to Brent's search
JOINT_MACH_TOL = 1e-4  # a speed this still is settled (the ceiling is flat at its best speed)
JOINT_MAX_MACH_STEP = 0.05  # a grid step at most: the search stays near its start
JOINT_RATE_TOL_MS = 1e-6  # a best climb rate this small is its root (0.5 mm at a typical slope of 2e-3/s)
JOINT_MAX_STEP_M = 600.0  # altitude step limit (a slope learnt at the start may be far off)
# The table Mach columns' far side:
FAR_SIDE_SPEEDS = 9  # speeds of the far side of a table Mach (its ends included) screened before it is refined


@dataclass
class ThrustBest:
    """The stage's answer per case: the best speed found, its thrust ceiling (to SEARCH_TOL_M),
    the fixed-Mach answer there (``final``, full tolerance) and whether some table Mach solved on
    the way still climbs at the top of the thrust table (``beyond_table``)."""

    mach: np.ndarray
    altitude_m: np.ndarray
    final: Ceilings
    beyond_table: np.ndarray


class ThrustAtSpeed:
    """The thrust ceiling at speeds per case, to SEARCH_TOL_M, for searches over Mach:
    ``f(rows, mach, near, spread)`` -> ceilings (-inf where none), ``near`` a guess of the value
    (NaN: none) and ``spread`` how far it may be off.

    Near a known value: Newton and secant steps with the slope d(excess)/dh learnt per case
    (``slope``: from the start, then each root's last secant), settled when a step is under
    NEWTON_MAX_STEP_M; never within LAYER_GUARD_M of a layer base. Else a warm window around the
    guess (or the grid's interpolation), half as wide as the spread, within
    [SEARCH_MIN_HALF_WIDTH_M, SEARCH_MAX_HALF_WIDTH_M].
    """

    def __init__(self, phys: ClimbPhysics, guess, slope):
        self.phys, self.guess, self.slope = phys, guess, slope

    def __call__(self, idx, m, near, spread):
        phys, slope = self.phys, self.slope
        sub = phys if idx.size == len(phys.cases) else phys.subset(idx)
        out = np.full(idx.size, np.nan)
        with np.errstate(invalid="ignore"):
            base = np.abs(near[:, None] - FLAT_TOP_BASES_M[None, :]).min(axis=1)
            close = np.isfinite(near) & np.isfinite(slope[idx]) & (base > LAYER_GUARD_M)
        qi = np.flatnonzero(close)
        if qi.size:
            part = sub if qi.size == idx.size else sub.subset(qi)
            root, ok, new_slope = newton_secant_root(part.excess_family(m[qi]), near[qi], slope[idx[qi]],
                                                     NEWTON_MAX_STEP_M)
            out[qi[ok]] = root[ok]
            slope[idx[qi]] = new_slope
            close[qi[~ok]] = False
        rest = np.flatnonzero(~close)
        if rest.size:
            part = sub if rest.size == idx.size else sub.subset(rest)
            near_r, spread_r, m_r = near[rest], spread[rest], m[rest]
            ok = np.isfinite(near_r)
            start = np.where(ok, near_r, self.guess(m_r, idx[rest]))
            half = np.clip(np.where(ok & np.isfinite(spread_r), 0.5 * spread_r, WARM_HALF_WIDTH_M),
                           SEARCH_MIN_HALF_WIDTH_M, SEARCH_MAX_HALF_WIDTH_M)
            root = thrust_ceiling_m(part, m_r, start, half, SEARCH_TOL_M)[0]
            out[rest] = root
            learn = np.flatnonzero(np.isfinite(root) & np.isnan(slope[idx[rest]]))
            if learn.size:
                with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                    up = part.subset(learn).excess(root[learn] + SLOPE_STEP_M, m_r[learn])
                slope[idx[rest[learn]]] = up / SLOPE_STEP_M
        return nan_as_lowest(out)


def joint_search(phys: ClimbPhysics, mach, altitude_m, low, high, slope_per_s):
    """Best speed of the thrust ceiling by Newton steps in altitude and Mach together, for the
    cases whose excess climb rate is smooth in both; (Mach, ceiling), NaN where not settled.
    The speeds stay within [low, high] (the caller keeps these inside one smooth cell).

    At the best speed the excess climb rate E is zero and flat in Mach. Each step takes E at
    the altitude reached and three speeds JOINT_MACH_STEP apart; the parabola through them gives
    the speed that climbs best there and that best rate, whose slope in altitude is dE/dh at
    that speed (the envelope theorem); a secant step in altitude on that best rate follows
    (Newton's method for the optimum: Nocedal & Wright, *Numerical Optimization*, 2nd ed.,
    ch. 3; central differences: ibid. ch. 8). A case is settled once its speed moves less than
    JOINT_MACH_TOL and its altitude less than SEARCH_TOL_M, on a slope the search measured itself
    (or with a best rate under JOINT_RATE_TOL_MS, which no slope could move). The climb rate
    jumps at a layer base, so each case's steps stay in the layer it starts in (a start on a base
    counts as below it), PLATEAU_M inside its bases: one that climbs just below the base above
    has a flat top there and is answered as the base itself; one pressed against the base below,
    and cases still moving after JOINT_ITERATIONS, are left to the caller. A kink between the
    three speeds (a turbofan lapse's branch change) may settle a case beside a corner peak: the
    kink stage solves the corner itself.
    """
    cs = phys.cases
    n = len(cs)
    m_out, h_out = np.full(n, np.nan), np.full(n, np.nan)
    d = JOINT_MACH_STEP
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(altitude_m) & (slope_per_s < 0.0) & (high - low > 4.0 * d)
    idx = np.flatnonzero(ok)
    sub, m, h, slope = phys.subset(idx), mach[idx], altitude_m[idx], slope_per_s[idx]
    lo, hi = low[idx], high[idx]
    # The layer each case starts in, a hair inside its bases (a start on a base: the layer below,
    # where a flat top shows).
    h = np.where(on_layer_base(h), h - 2.0 * PLATEAU_M, h)
    bases = FLAT_TOP_BASES_M
    k = np.searchsorted(bases, h)
    floor = np.where(k > 0, bases[np.maximum(k - 1, 0)] + PLATEAU_M, -np.inf)
    ceiling = np.where(k < bases.size, bases[np.minimum(k, bases.size - 1)] - PLATEAU_M, np.inf)
    h_prev = e_prev = None
    m_prev, measured = np.full(idx.size, np.nan), np.zeros(idx.size, dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for _ in range(JOINT_ITERATIONS):
            if idx.size == 0:
                break
            x = np.clip(m, lo + d, hi - d)
            e_lo, e_mid, e_hi = (sub.excess(h, x + j * d) for j in (-1.0, 0.0, 1.0))
            # Climbing just below the base above: the ceiling at that speed is the base.
            e_max = np.fmax(np.fmax(e_lo, e_mid), e_hi)
            top = np.flatnonzero((h == ceiling) & (e_max >= 0.0))
            if top.size:
                best_of_three = np.argmax(np.stack([e_lo[top], e_mid[top], e_hi[top]]), axis=0) - 1.0
                m_out[idx[top]] = x[top] + best_of_three * d
                h_out[idx[top]] = bases[np.minimum(np.searchsorted(bases, ceiling[top]), bases.size - 1)]
            grad, curv = (e_hi - e_lo) / (2.0 * d), (e_hi - 2.0 * e_mid + e_lo) / (d * d)
            # Uphill by the parabola's vertex where it is concave, else by the largest step.
            step = np.where(curv < 0.0, np.clip(-grad / curv, -JOINT_MAX_MACH_STEP, JOINT_MAX_MACH_STEP),
                            np.copysign(JOINT_MAX_MACH_STEP, grad))
            m_new = np.clip(x + step, lo, hi)
            u = m_new - x
            e_best = e_mid + grad * u + 0.5 * curv * u * u
            if h_prev is not None:
                secant = (e_best - e_prev) / (h - h_prev)
                fresh = (np.abs(h - h_prev) > 1e-3) & (secant < 0.0)
                slope, measured = np.where(fresh, secant, slope), measured | fresh
            h_new = np.clip(h - np.clip(e_best / slope, -JOINT_MAX_STEP_M, JOINT_MAX_STEP_M), floor, ceiling)
            # Settled only on a slope this search measured (one learnt elsewhere may be far off),
            # or where the best rate is so near zero that no slope could move it (a start that was
            # already the answer: the altitude never moves enough to measure one).
            settled = ((measured | (np.abs(e_best) < JOINT_RATE_TOL_MS)) & (np.abs(m_new - m_prev) < JOINT_MACH_TOL)
                       & (np.abs(h_new - h) < SEARCH_TOL_M) & (curv < 0.0))
            fail = ~np.isfinite(h_new) | (~(curv < 0.0) & (np.abs(u) < d)) | (h_new == floor)
            fail[top] = True  # answered above
            done = np.flatnonzero(settled & ~fail)
            m_out[idx[done]], h_out[idx[done]] = m_new[done], h_new[done]
            keep = np.flatnonzero(~settled & ~fail)
            if keep.size < idx.size:
                idx, sub = idx[keep], sub.subset(keep)
                m_new, h_new, h, e_best, slope, lo, hi, measured, floor, ceiling = (
                    v[keep] for v in (m_new, h_new, h, e_best, slope, lo, hi, measured, floor, ceiling))
            m_prev, h_prev, e_prev, m, h = m_new, h, e_best, m_new, h_new
    return m_out, h_out


def refine(phys: ClimbPhysics, thrust_at: ThrustAtSpeed, rows, low, high, m0, h0, seed_mach, seed_values,
           solved_start=False):
    """The best thrust ceiling of the cases ``rows`` (None: all) in [low, high], inside one smooth
    cell, from (m0, h0): :func:`joint_search`, then Brent's search from the seeds (``seed_mach``,
    cases x points, and their values, or a function giving the values of the positions it is
    passed) for the cases the joint search leaves. ``solved_start``: (m0, h0) is a solved grid
    speed, the best of the seeds, whose neighbours bound the bracket; an answer at an inner end of
    the bracket (no maximum there) or below the start is then not taken, and a start on a layer
    base that the joint search leaves is kept as it is: a flat top, where Brent's search finds
    little (at most 0.07 ft more on the benchmark's seeds) at 3 % of the benchmark's best-speed
    work; :func:`layer_base_stage` looks above it. Returns (Mach, ceiling)."""
    sub, slope = (phys, thrust_at.slope) if rows is None else (phys.subset(rows), thrust_at.slope[rows])
    m, h = joint_search(sub, m0, h0, low, high, slope)
    if solved_start:
        cs = sub.cases
        with np.errstate(invalid="ignore"):
            inside = ((m > low) | (low <= cs.mach_low)) & ((m < high) | (high >= cs.mach_high))
            h[~inside | (h < h0 - GRID_TOL_M)] = np.nan
        plateau = np.isnan(h) & on_layer_base(h0)
        m[plateau], h[plateau] = m0[plateau], h0[plateau]
    rest = np.flatnonzero(np.isnan(h))
    if rest.size:
        at = rest if rows is None else rows[rest]
        values = seed_values(rest) if callable(seed_values) else seed_values[rest]
        m[rest], h[rest] = brent_max(lambda i, x, near, spread: thrust_at(at[i], x, near, spread),
                                     seed_mach[rest], values, BEST_MACH_SEARCH_ITERATIONS, BEST_MACH_TOL)
    return m, h


def kink_stage(phys: ClimbPhysics, thrust_at: ThrustAtSpeed, grid: Grid, m_best, h_best):
    """T(M) on the kinks the data define, and beyond the table Mach nearest the best (``m_best``,
    ``h_best`` in place).

    One flat screen at the best ceiling found (less twice SEARCH_TOL_M: near-ties are looked at)
    decides what can do better:

    (a) The kink points: every table Mach in the case's range (a sharp kink can put a narrow peak
        on one, between grid speeds: up to 162 ft low without this on a review catalogue whose
        thrust drops 40 % between two columns 0.05 apart), and the turbofan lapse's branch Mach
        at the best ceiling (a corner peak where the hot branch's steeper loss takes over, which a
        search over Mach only approaches: up to 0.46 ft low without this), solved where the case
        still climbs there. The branch Mach moves with the altitude below the tropopause: one
        more solve at the branch Mach of the ceiling found there.
    (b) Where the table Mach nearest the best lies inside the first bracket (the best grid speed's
        neighbours), the cell on its far side is refined from its middle where some of
        FAR_SIDE_SPEEDS evenly spaced speeds of it, or a table Mach in it, climbs, or where the
        parabola through the best of those and its neighbours peaks between them at a climbing
        rate (:func:`~variantcmp.solver.finders.parabola_peak`: the excess climb rate is smooth
        between the columns, and a peak 0.009 Mach wide went by without it: 2.3 ft low on a
        stress catalogue). A best on the table Mach itself searches the cell on the other side of
        the best grid speed's.

    Returns where a table Mach solved still climbs at the table's top. Tests: the "table-dip",
    "close-table-columns" and "turbofan-branch" dense scans.
    """
    n = len(phys.cases)
    rows = np.arange(n)
    beyond = np.zeros(n, dtype=bool)
    level = h_best - 2.0 * SEARCH_TOL_M
    known = np.isfinite(h_best)
    node_case, node_mach = kink_nodes_inside(phys, known)
    branch = turbofan_branch_mach(phys, np.where(known, h_best, np.nan))
    turbofan = np.flatnonzero(np.isfinite(branch))
    point_case, point_mach = np.concatenate([node_case, turbofan]), np.concatenate([node_mach, branch[turbofan]])
    order = np.argsort(point_case, kind="stable")  # cases in order keep the subsets' model groups slices
    point_case, point_mach = point_case[order], point_mach[order]
    tables = mach_kink_groups(phys, several_humps=True)  # a far side can rise again (not under a concave table)
    who, probe = np.zeros(0, np.intp), np.zeros((0, 1))
    if tables:
        i = np.argmax(nan_as_lowest(grid.thrust_m), axis=1)
        lo, hi = grid.around(i)
        node = nearest_kink_mach(phys, m_best)
        with np.errstate(invalid="ignore"):
            who = np.flatnonzero((node > lo + BEST_MACH_TOL) & (node < hi - BEST_MACH_TOL) & known)
        side = np.where(np.abs(m_best - node) <= BEST_MACH_TOL, grid.mach[rows, i], m_best)[who]
        below = side < node[who]
        a, b = np.where(below, node[who], lo[who]), np.where(below, hi[who], node[who])
        k = FAR_SIDE_SPEEDS + max(machs.size for machs, _ in tables)
        probe = np.repeat(a[:, None], k, axis=1)  # (a repeated where a table has fewer Mach columns)
        probe[:, :FAR_SIDE_SPEEDS] += (b - a)[:, None] * np.linspace(0.0, 1.0, FAR_SIDE_SPEEDS)[None, :]
        for machs, group in tables:
            in_group = np.zeros(n, dtype=bool)
            in_group[group] = True
            mine = np.flatnonzero(in_group[who])
            probe[mine, FAR_SIDE_SPEEDS:FAR_SIDE_SPEEDS + machs.size] = np.clip(machs[None, :], a[mine, None],
                                                                                b[mine, None])
    case = np.concatenate([point_case, np.repeat(who, probe.shape[1])])
    if case.size == 0:
        return beyond
    order = np.argsort(case, kind="stable")
    e = np.empty(case.size)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        e[order] = phys.subset(case[order]).excess(level[case[order]],
                                                   np.concatenate([point_mach, probe.ravel()])[order])
    e_point, e_side = e[:point_case.size], e[point_case.size:].reshape(who.size, probe.shape[1])

    # (a) The kink points.
    climbs = np.flatnonzero(e_point >= 0.0)
    if climbs.size:
        c, m = point_case[climbs], point_mach[climbs]
        h, flags = thrust_ceiling_m(phys.subset(c), m, h_best[c] + WARM_HALF_WIDTH_M, WARM_HALF_WIDTH_M, SEARCH_TOL_M)
        beyond[c[(flags & THRUST_DATA_TOP).astype(bool)]] = True
        _keep_higher(c, m, h, m_best, h_best)
        moved = turbofan_branch_mach(phys.subset(c), np.where(np.isfinite(h), h, np.nan))
        again = np.flatnonzero(np.isfinite(moved) & (np.abs(moved - m) > 0.1 * BEST_MACH_TOL))
        if again.size:
            c, m = c[again], moved[again]
            h = thrust_ceiling_m(phys.subset(c), m, h[again], SEARCH_MIN_HALF_WIDTH_M, SEARCH_TOL_M)[0]
            _keep_higher(c, m, h, m_best, h_best)

    # (b) The far side of the nearest table Mach.
    keep = np.flatnonzero((e_side >= 0.0).any(axis=1) | (parabola_peak(probe, e_side) >= 0.0)) if who.size else who
    if keep.size:
        who, a, b = who[keep], a[keep], b[keep]
        mid = 0.5 * (a + b)
        seeds = a[:, None] + (b - a)[:, None] * np.array([0.0, 0.5, 1.0])[None, :]

        def seed_values(rest):
            nan = np.full(rest.size, np.nan)
            return np.stack([thrust_at(who[rest], seeds[rest, j], nan, nan) for j in range(3)], axis=1)

        m_side, h_side = refine(phys, thrust_at, who, a, b, mid, thrust_at.guess(mid, who), seeds, seed_values)
        better = np.flatnonzero(h_side > h_best[who])
        m_best[who[better]], h_best[who[better]] = m_side[better], h_side[better]
    return beyond


def _keep_higher(case, mach, altitude_m, m_best, h_best):
    """Per case of ``case`` (repeats allowed), the highest of ``altitude_m`` where it beats
    ``h_best`` (in place, with its Mach)."""
    value = nan_as_lowest(altitude_m)
    order = np.lexsort((value, case))  # by case, highest ceiling last
    last = order[np.append(case[order][1:] != case[order][:-1], True)]
    better = last[value[last] > h_best[case[last]]]
    m_best[case[better]], h_best[case[better]] = mach[better], altitude_m[better]


def layer_base_stage(phys: ClimbPhysics, m_best, h_best, where=None):
    """Where the best thrust ceiling found sits on a layer base, look just above it (in place).

    The climb rate drops across a layer base, so over a range of speeds the thrust ceiling is held
    at the base itself: a flat top on which a search sees nothing. Just above the base the excess
    climb rate is smooth in Mach: where its best over the speed range
    (:meth:`~variantcmp.solver.physics.ClimbPhysics.best_climb_mach`) still climbs, the ceiling
    at that speed rises above the base (the speed that climbs best at the base: near, not always
    at, the one whose ceiling is highest above it). ``where``: only those cases (a mask). Tests:
    the flat tops at the tropopause against a dense scan, the "synthetic" and "turbofan-branch"
    dense scans.
    """
    base = layer_base_near_m(h_best, 0.5)
    on = np.flatnonzero(np.isfinite(base) & (True if where is None else where))
    if on.size == 0:
        return
    sub, h_on = phys.subset(on), base[on]
    m_star, e_star = sub.best_climb_mach(h_on)
    up = np.flatnonzero(e_star > 0.0)
    if up.size:
        h_up = thrust_ceiling_m(sub.subset(up), m_star[up], h_on[up] + WARM_HALF_WIDTH_M, WARM_HALF_WIDTH_M,
                                SEARCH_TOL_M)[0]
        better = np.flatnonzero(nan_as_lowest(h_up) > h_best[on[up]])
        m_best[on[up[better]]], h_best[on[up[better]]] = m_star[up[better]], h_up[better]
        _above_the_base(phys, on[up[better]], m_best, h_best)


def _above_the_base(phys: ClimbPhysics, rows, m_best, h_best):
    """The cases ``rows`` whose best now lies just above a layer base (in place): the joint search
    from there, in the layer above, in the smooth cell around the speed found, its answer kept
    where higher. The speed that climbs best at the base is near the one whose ceiling is highest
    above it, not at it: 2 ft low without this on a turboprop whose ceiling is 400 ft above the
    tropopause (tests/test_turboprop.py, the minimum-power closed form)."""
    if rows.size == 0:
        return
    sub = phys.subset(rows)
    cs = sub.cases
    m0, h0 = m_best[rows], h_best[rows]
    low, high = smooth_cell(sub, m0, np.maximum(m0 - JOINT_MAX_MACH_STEP, cs.mach_low),
                            np.minimum(m0 + JOINT_MAX_MACH_STEP, cs.mach_high))
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        slope = sub.excess(h0 + SLOPE_STEP_M, m0) / SLOPE_STEP_M
    m, h = joint_search(sub, m0, h0, low, high, slope)
    better = np.flatnonzero(nan_as_lowest(h) > h0)
    m_best[rows[better]], h_best[rows[better]] = m[better], h[better]


def thrust_best_stage(phys: ClimbPhysics, grid: Grid) -> ThrustBest:
    """The thrust ceiling's best speed per case: the steps of the module docstring."""
    n = len(phys.cases)
    rows = np.arange(n)
    values = nan_as_lowest(grid.thrust_m)
    i = np.argmax(values, axis=1)
    m0, h0 = grid.mach[rows, i], grid.thrust_m[rows, i]
    # d(excess)/dh at each case's thrust ceiling (1/s), at the best grid speed: it changes little
    # over the searches' steps in speed (and they measure their own as they go).
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        slope = phys.excess(h0 + SLOPE_STEP_M, m0) / SLOPE_STEP_M
    thrust_at = ThrustAtSpeed(phys, grid.guess(), slope)
    low, high = grid.around(i)
    m_best, h_best = refine(phys, thrust_at, None, low, high, m0, h0, grid.mach, values, solved_start=True)
    # A flat top first (a kink's ceiling just above the base would hide it), and again where the
    # kinks moved the best onto one (the far side of a table Mach may end on a flat top too).
    layer_base_stage(phys, m_best, h_best)
    before = h_best.copy()
    beyond = kink_stage(phys, thrust_at, grid, m_best, h_best)
    layer_base_stage(phys, m_best, h_best, h_best != before)

    # Polish: the root at the best speed to the full tolerance, in a window of 4 x SEARCH_TOL_M
    # (the search's root is within SEARCH_TOL_M). On a flat top the root is the layer base itself
    # (to 1e-6 m, as the fixed-Mach root finder gives it): a window that wide just below it (in a
    # window across the base the regula falsi, whose secant sees the jump there as a steep slope,
    # may stop a few cm short).
    known = np.isfinite(h_best)
    flat = known & on_layer_base(h_best)
    below_base = np.where(np.abs(h_best - LAYER_BASE_M[1]) <= PLATEAU_M, LAYER_BASE_M[1], LAYER_BASE_M[2]) - 0.5e-6
    guess = np.where(flat, below_base, np.where(known, h_best, grid.guess()(m_best)))
    half = np.where(flat, 0.5e-6, np.where(known, 4.0 * SEARCH_TOL_M, WARM_HALF_WIDTH_M))
    final = fixed_mach_ceilings(phys, m_best, guess, guess_half_width_m=half)
    return ThrustBest(m_best, h_best, final, beyond)
