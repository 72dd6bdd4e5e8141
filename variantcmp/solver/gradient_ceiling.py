"""The highest pressure altitude where a case set's best climb gradient is zero: the search for the
engine-out ceilings.

On an engine-out case set (:func:`variantcmp.solver.engine_out.engine_out_cases`) the gross or the
net ceiling is the absolute ceiling at the best speed, which the general best-speed search
(:func:`~variantcmp.solver.parallel.solve_ceilings`) gives. That search is built for all-engines
cases, where most speeds of a case's range climb somewhere; with one engine out most of them hold
no altitude at all, and each such speed costs a full altitude scan: on the benchmark's engine-out
sets it took 0.9 to 1.1 s per 25,000-case chunk, against 0.2 s with all engines (measured); this
search takes about 0.9 times an all-engines best-speed solve per level (CPU time, measured). It
uses the problem's structure, accepts only what it can check, and hands the rest to the general
search:

1. *Start* (:func:`start_guess`): the gradient at the minimum-drag speed (CL* = sqrt(CD0/K): a
   linear drag term does not move it), kept in the speed window, at the altitudes of START_LADDER_M;
   between the highest one where it is not negative and the next one up, the interpolated zero.
   It lies below the answer: the best speed does at least as well as the minimum-drag speed.
   Where no rung holds the level there, :func:`holds_nowhere` decides whether the case holds it
   anywhere (no: no ceiling, CANNOT_CLIMB, done).
2. *Joint search* (:func:`joint_gradient_search`): Newton steps in altitude and Mach together, as
   :func:`variantcmp.solver.thrust_best.joint_search` for the thrust ceiling, here on the gradient
   (which, unlike the climb rate, does not jump at a layer base): per step the gradient at three
   speeds JOINT_MACH_STEP apart; the parabola through them gives the best speed at that altitude
   and the best gradient, whose slope in altitude (the envelope theorem) a secant step uses. The
   speed window follows the altitude (stall, the case's range, VMO:
   :func:`~variantcmp.solver.gradient.speed_window` without the buffet band, which step 3 checks).
   Where a kink in Mach lies near (the turbofan lapse's branch change, a thrust or propeller
   efficiency table's Mach) and the gradient peaks in its corner, the corner is the best speed
   (:func:`_corner_peaks`). Where the gradient still rises
   with altitude (below a hump, at a speed held at a fixed Mach) the search steps up
   UPHILL_STEP_M at a time. Settled when the speed moves less than JOINT_MACH_TOL and the
   altitude less than JOINT_ALTITUDE_TOL_M on a slope the search measured, at an interior maximum
   (a concave parabola, or a corner) or at an end of the case's own speed range (MMO, the data's
   range) with the gradient rising outwards. A best speed held by the buffet margin, stall or VMO, which move with the
   altitude, is left to step 4.
3. *Check* (:func:`accepted`): a settled case is accepted only where

   - the fixed-Mach answer at its speed (:func:`~variantcmp.solver.fixed_mach.fixed_mach_ceilings`:
     every limit, the buffet margin included, the thrust root to its full tolerance in a window of
     ACCEPT_HALF_WIDTH_M) has thrust binding, no flags, within ACCEPT_M of the search's altitude;
   - no speed of CHECK_SPEEDS, evenly over the case's speed range, nor any kink in Mach (the
     turbofan lapse's branch change, a thrust table's Mach columns, a propeller efficiency table's
     Machs: a corner peak there lies beside the parabola's) has a gradient above GRADIENT_SLACK at that ceiling, and no kink
     lies within two JOINT_MACH_STEP of the speed found (the parabola would straddle it): the
     speed found is the best at that altitude, not a local peak;
   - none of them, nor the speed found, has a positive gradient at the altitudes ABOVE_M above
     it, nor, for table engines, at the table's altitudes and midpoints above it (up to
     TABLE_CHECK_PROBES: the fixed-Mach hump check's points, at every checked speed): no second
     hump higher up. Not looked at for a density lapse: its
     thrust falls with altitude at a constant EAS, so the same lift coefficient at a lower
     altitude and speed has the same drag and more thrust, and its best gradient cannot rise
     again above the ceiling.

   An accepted case's answer is that fixed-Mach answer: solving at its Mach gives it again.
   *Held at the slowest speed* (:func:`low_edge_search`): where the best speed is the slowest the
   buffet margin or the stall allows (a propeller aircraft's, mostly: its best gradient at the
   ceiling lies near the minimum-power speed, CL = sqrt(3 CD0/K), a lift coefficient the buffet
   margin seldom allows), the case left by step 3 is solved again along that edge: the zero in
   altitude of the gradient at the window's lowest Mach (a ladder as in step 1, then
   :func:`~variantcmp.solver.finders.illinois_root`), the speed the edge has LOW_EDGE_MARGIN_M
   above it (there the thrust ceiling, falling with Mach, binds rather than the margin's), and the
   check of step 3 over the speeds from there up (the slower ones the margin forbids).
4. The rest: the general best-speed search, in full, all of a job's at once
   (``tests/test_engine_out.py`` checks that the two agree on the benchmark and demo fleets: to
   0.001 ft but at corners, where the search is higher by up to 1.3 ft on four seeds' 30,000
   cases, lower by at most 0.07 ft). On the benchmark's seeded cases the search leaves 0.01 to
   0.2 % (measured, four seeds); on the demo fleets (60-110 % MTOW, ISA-15 to +35) none: the
   regional fleet's turboprops and the survey type, whose best speeds the buffet margin mostly
   holds, are answered by the slowest-speed stage (before it, steps 2-3 left 92 % of the
   turboprops' gross ceilings and 30 % of the survey type's; measured). At the margin's edge
   the search lies within 0.07 ft of the general search's corner (both stop a few cm short of
   the crossing).

Like the general search, the checks sample speeds and altitudes: a peak of the gradient narrower
than the sample spacing, away from the speed found, is not seen.
"""

from __future__ import annotations

import numpy as np

from ..atmosphere import MODEL_TOP_M, isa_state, pressure_altitude_m
from ..cases import FT, MODEL_CODES, CaseSet
from .fixed_mach import fixed_mach_ceilings
from .finders import golden_max, illinois_root, nan_as_lowest
from .gradient import GRADIENT_ITERATIONS, speed_window
from .kinks import mach_kink_groups, nearest_kink_mach, turbofan_branch_mach
from .physics import ClimbPhysics, group_key
from .results import CANNOT_CLIMB, LIMITS, Ceilings

#: Altitudes (m) of the start's ladder.
START_LADDER_M = np.array([-1000.0, 2000.0, 4500.0, 7000.0, 9500.0, 12_000.0, 15_000.0, 19_000.0])  # from the floor
JOINT_MACH_STEP = 2e-3  # the speeds either side of the current one (central differences)
JOINT_ITERATIONS = 12  # most settle in five to seven; the rest go to the general search
JOINT_MACH_TOL = 1e-4  # a speed this still is settled (the gradient is flat at its best speed)
JOINT_ALTITUDE_TOL_M = 0.05  # the check's fixed-Mach root gives the answer to ROOT_TOL_M
JOINT_MAX_MACH_STEP = 0.05
JOINT_MAX_STEP_M = 3000.0
SLOPE_STEP_M = 50.0  # the first slope in altitude, by a finite difference
UPHILL_STEP_M = 500.0  # a step up where the gradient still rises with altitude (below its hump)
CORNER_TOL = 1e-4  # a speed this close to a kink is on it (a corner peak: the ceiling then to about 0.1 ft)
ACCEPT_M = 0.3  # the fixed-Mach root and the search's altitude agree this well (1 ft)
ACCEPT_HALF_WIDTH_M = 5.0  # the fixed-Mach root's window around the search's altitude
CHECK_SPEEDS = 7
GRADIENT_SLACK = 1e-7  # above the best speed's own gradient at the ceiling (0.01 ft of ceiling x 3e-6/m, and rounding)
ABOVE_M = (1000.0,)
TABLE_CHECK_PROBES = 4  # of the hump check's table altitudes and midpoints above the ceiling
CHUNK = 8192  # cases per chunk: the arrays of one evaluation stay in cache (4,096-16,384 measured alike)
HUMP_ITERATIONS = 30  # golden section over up to 20 km of altitude: to 0.01 m
LOW_EDGE_TOL_M = 0.002  # the root in altitude along the slowest speed
LOW_EDGE_MARGIN_M = 0.01  # the speed taken is the slowest this much above the root (so the margin's ceiling)


def start_guess(phys: ClimbPhysics):
    """Step 1: (altitude, Mach) to start the joint search from, per case, NaN where the ladder
    shows no zero; and where no rung holds the level at the minimum-drag speed (for
    :func:`holds_nowhere`)."""
    cs = phys.cases
    n, k = len(cs), START_LADDER_M.size
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    h, m, g = np.empty((n, k)), np.empty((n, k)), np.empty((n, k))
    cl_star = np.sqrt(cs.cd0 / cs.k)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for j, rung in enumerate(START_LADDER_M):  # a loop over the ladder's rungs, all cases at once
            h[:, j] = np.clip(rung, cs.floor_m, top)
            lo, hi = speed_window(phys, h[:, j], buffet=False)
            m_md = np.sqrt(phys.w_n / (phys.qs_per_pm2 * isa_state(h[:, j])[1] * cl_star))
            m[:, j] = np.clip(m_md, lo, np.fmax(lo, hi))
            g[:, j] = phys.climb_gradient(h[:, j], m[:, j])
    ok = g >= 0.0
    last = k - 1 - np.argmax(ok[:, ::-1], axis=1)
    found = ok.any(axis=1) & (last < k - 1)
    j = np.minimum(last, k - 2)
    r = np.arange(n)
    ga, gb = g[r, j], g[r, j + 1]
    with np.errstate(invalid="ignore", divide="ignore"):
        t = np.clip(ga / (ga - gb), 0.0, 1.0)
    t = np.where(np.isfinite(t), t, 0.0)
    h0 = h[r, j] + t * (h[r, j + 1] - h[r, j])
    m0 = m[r, j] + t * (m[r, j + 1] - m[r, j])
    return np.where(found, h0, np.nan), np.where(found, m0, np.nan), ~ok.any(axis=1)


def joint_gradient_search(phys: ClimbPhysics, h0, m0):
    """Step 2: (altitude, Mach) of the zero of the best gradient per case, NaN where not settled."""
    cs = phys.cases
    n = len(cs)
    h_out, m_out = np.full(n, np.nan), np.full(n, np.nan)
    idx = np.flatnonzero(np.isfinite(h0) & np.isfinite(m0))
    sub, h, m = phys.subset(idx), h0[idx], m0[idx]
    floor, top = cs.floor_m[idx], np.minimum(cs.top_m, MODEL_TOP_M)[idx]
    range_lo, range_hi = cs.mach_low[idx], cs.mach_high[idx]
    d = JOINT_MACH_STEP
    slope, measured = np.full(idx.size, np.nan), np.zeros(idx.size, dtype=bool)
    m_prev, h_prev, e_prev = np.full(idx.size, np.nan), None, None
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for _ in range(JOINT_ITERATIONS):
            if idx.size == 0:
                break
            lo, hi = speed_window(sub, h, buffet=False)
            wide = hi - lo > 4.0 * d
            x = np.clip(m, lo + d, hi - d)
            e_lo, e_mid, e_hi = (sub.climb_gradient(h, x + j * d) for j in (-1.0, 0.0, 1.0))
            grad, curv = (e_hi - e_lo) / (2.0 * d), (e_hi - 2.0 * e_mid + e_lo) / (d * d)
            step = np.where(curv < 0.0, np.clip(-grad / curv, -JOINT_MAX_MACH_STEP, JOINT_MAX_MACH_STEP),
                            np.copysign(JOINT_MAX_MACH_STEP, grad))
            m_new = np.clip(x + step, lo, hi)
            u = m_new - x
            e_best = e_mid + grad * u + 0.5 * curv * u * u
            corner = _corner_peaks(sub, h, x, lo, hi, m_new)
            if corner is not None:
                at, m_corner, e_corner = corner
                m_new[at], e_best[at] = m_corner, e_corner
            if h_prev is None:
                slope = (sub.climb_gradient(h + SLOPE_STEP_M, x) - e_mid) / SLOPE_STEP_M
            else:
                secant = (e_best - e_prev) / (h - h_prev)
                fresh = (np.abs(h - h_prev) > 1e-3) & (secant < 0.0)
                slope, measured = np.where(fresh, secant, slope), measured | fresh
            # Below a hump of the gradient in altitude (it still rises upwards): climb towards it.
            uphill = ~(slope < 0.0)
            h_new = np.clip(np.where(uphill, h + UPHILL_STEP_M,
                                     h - np.clip(e_best / slope, -JOINT_MAX_STEP_M, JOINT_MAX_STEP_M)), floor, top)
            at_lo, at_hi = m_new <= lo, m_new >= hi
            interior = ~at_lo & ~at_hi & (curv < 0.0)
            if corner is not None:
                interior[at] = True
            # On an end of the case's own range (not stall or VMO, which move with the altitude),
            # with the gradient still rising outwards: the best speed is that end.
            on_end = (at_lo & (lo == range_lo) & (grad < 0.0)) | (at_hi & (hi == range_hi) & (grad > 0.0))
            settled = (measured & (np.abs(m_new - m_prev) < JOINT_MACH_TOL) & (np.abs(h_new - h) < JOINT_ALTITUDE_TOL_M)
                       & (interior | on_end) & wide)
            fail = ~np.isfinite(h_new) | ~wide | (uphill & (h >= top)) | ((h_new == floor) & (e_best < 0.0))
            done = np.flatnonzero(settled & ~fail)
            h_out[idx[done]], m_out[idx[done]] = h_new[done], m_new[done]
            keep = np.flatnonzero(~settled & ~fail)
            if keep.size < idx.size:
                idx, sub = idx[keep], sub.subset(keep)
                h, h_new, m_new, e_best, slope, measured, floor, top, range_lo, range_hi = (
                    v[keep] for v in (h, h_new, m_new, e_best, slope, measured, floor, top, range_lo, range_hi))
            m_prev, h_prev, e_prev, m, h = m_new, h, e_best, m_new, h_new
    return h_out, m_out


def _corner_peaks(phys: ClimbPhysics, h, x, lo, hi, m_vertex):
    """Where a kink in Mach lies within JOINT_MAX_MACH_STEP of the speed ``x`` (the turbofan lapse's
    branch change; the kink Mach nearest ``x`` of a thrust table or a propeller efficiency table,
    :func:`~variantcmp.solver.kinks.nearest_kink_mach`), the gradient peaks in the corner there
    (above its value a JOINT_MACH_STEP either side) and there beats its value at the parabola's
    best speed ``m_vertex`` (a parabola across a corner overshoots: its own value is not
    compared): those cases, the corner's Mach and its gradient; None where there are none. The
    parabola through three speeds does not find a corner, and the turbofan's corner moves fast
    with altitude (its Mach, where theta0 = TR, by some 0.01 per 100 m at low Mach): it is looked
    for at each step's altitude. A propeller's efficiency table puts its corner peaks where the
    efficiency's slope drops (the benchmark's turboprops' best gradient mostly sits on one)."""
    d = JOINT_MACH_STEP
    found_at, found_m, found_e = [], [], []
    for kink in (turbofan_branch_mach(phys, h), nearest_kink_mach(phys, x)):
        with np.errstate(invalid="ignore"):
            near = np.flatnonzero(np.isfinite(kink) & (np.abs(x - kink) < JOINT_MAX_MACH_STEP) & (kink - d > lo)
                                  & (kink + d < hi))
        if near.size == 0:
            continue
        sub, k, hn = phys.subset(near), kink[near], h[near]
        e_k, e_l, e_r = (sub.climb_gradient(hn, k + j * d) for j in (0.0, -1.0, 1.0))
        peak = (e_k >= e_l) & (e_k >= e_r) & (e_k >= sub.climb_gradient(hn, m_vertex[near]))
        found_at.append(near[peak]), found_m.append(k[peak]), found_e.append(e_k[peak])
    if not found_at:
        return None
    # A case with corners of both kinds (a turbofan with a thrust table has none): the higher.
    at, m, e = (np.concatenate(v) for v in (found_at, found_m, found_e))
    if at.size == 0:
        return None
    order = np.lexsort((-e, at))
    first = np.concatenate([[True], at[order][1:] != at[order][:-1]])
    pick = order[first]
    return at[pick], m[pick], e[pick]


def probe_altitudes_m(phys: ClimbPhysics, ceiling_m):
    """The check's altitudes above each case's ceiling (cases x probes, NaN where none): ABOVE_M
    above it and, for table engines, the table's altitudes and midpoints above it (up to
    TABLE_CHECK_PROBES; no such columns where the set has no table engine); none above the
    thrust data's top."""
    cs = phys.cases
    n = len(cs)
    tables = [(tid, group) for code, tid, group in phys.groups if code == MODEL_CODES["table"]]
    out = np.full((n, len(ABOVE_M) + (TABLE_CHECK_PROBES if tables else 0)), np.nan)
    out[:, :len(ABOVE_M)] = ceiling_m[:, None] + np.asarray(ABOVE_M)[None, :]
    for tid, group in tables:
        rows = np.arange(n)[group]
        points = cs.tables[tid].probe_points()[0] * FT
        pick = np.searchsorted(points, ceiling_m[rows] + 1.0)[:, None] + np.arange(TABLE_CHECK_PROBES)[None, :]
        out[rows, len(ABOVE_M):] = np.where(pick < points.size, points[np.minimum(pick, points.size - 1)], np.nan)
    with np.errstate(invalid="ignore"):
        out[out > np.minimum(cs.top_m, MODEL_TOP_M)[:, None]] = np.nan
    return out


def accepted(phys: ClimbPhysics, h, m, edge: bool = False):
    """Step 3: the fixed-Mach answers at the speeds found, and which of them pass the checks.
    ``edge``: the speeds found are the slowest allowed (:func:`low_edge_search`), not a parabola's
    vertex: the speeds checked start there, and the kink rules about the vertex do not apply."""
    cs = phys.cases
    # A narrow window: the root is that close. (It skips the table engines' hump check, whose
    # probes the check below looks at, at the speed found too.)
    res = fixed_mach_ceilings(phys, m, h, guess_half_width_m=ACCEPT_HALF_WIDTH_M)
    with np.errstate(invalid="ignore"):
        ok = (np.isfinite(res.max_altitude_m) & (res.limit == LIMITS.index("thrust")) & (res.flags == 0)
              & (np.abs(res.max_altitude_m - h) < ACCEPT_M))
    rows = np.flatnonzero(ok)
    if rows.size == 0:
        return res, ok
    sub = phys.subset(rows)
    ceiling, found = res.max_altitude_m[rows], m[rows]
    # CHECK_SPEEDS speeds over the case's whole range (a superset of the speeds the limits allow:
    # a speed they forbid may only turn a case down, never pass one).
    lo, hi = cs.mach_low[rows], cs.mach_high[rows]
    if edge:
        lo = np.fmax(lo, found)
    speeds = [lo + f * (hi - lo) for f in np.linspace(0.0, 1.0, CHECK_SPEEDS)]
    bad = np.zeros(rows.size, dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for speed in speeds:  # a loop over the check's speeds, all cases at once
            bad |= sub.climb_gradient(ceiling, speed) > GRADIENT_SLACK
        # The kinks in Mach, where a corner peak may lie beside the parabola's: the turbofan lapse's
        # branch change, a thrust table's Mach columns and a propeller efficiency table's Machs, at
        # the ceiling.
        kinks = [turbofan_branch_mach(sub, ceiling)]
        for machs, group in mach_kink_groups(sub):
            for node in machs:
                at = np.full(rows.size, np.nan)
                at[group] = node
                kinks.append(np.where((at > lo) & (at < hi), at, np.nan))
        for kink in kinks:
            there = np.isfinite(kink)
            if there.any():
                if edge:
                    there &= kink > lo
                bad |= there & (sub.climb_gradient(ceiling, np.where(there, kink, lo)) > GRADIENT_SLACK)
                if edge:
                    continue
                # A kink inside the search's last three speeds: its parabola does not hold there; a
                # speed on the kink itself (a corner peak) must beat its neighbours.
                on = there & (np.abs(found - kink) < CORNER_TOL)
                bad |= there & ~on & (np.abs(found - kink) < 2.0 * JOINT_MACH_STEP)
                for side in (-0.5, 0.5):
                    bad |= on & (sub.climb_gradient(ceiling, found + side * JOINT_MACH_STEP) > GRADIENT_SLACK)
        # Above the ceiling, for the models whose thrust along a constant EAS need not fall with
        # altitude (a density lapse's does: the same CL at a lower altitude and speed has the same
        # drag and more thrust, so its best gradient cannot rise again).
        up = np.flatnonzero(sub.cases.model_code != MODEL_CODES["density-lapse"])
        if up.size:
            upper = sub.subset(up)
            alt = probe_altitudes_m(upper, ceiling[up])
            probe = np.isfinite(alt)
            alt = np.where(probe, alt, ceiling[up][:, None])  # the atmosphere's fast path wants no NaN
            for speed in speeds + [found]:
                g = upper.climb_gradient(alt, speed[up])
                bad[up] |= (probe & (g >= 0.0)).any(axis=1)  # NaN (no thrust data there) passes
    ok[rows[bad]] = False
    return res, ok


class _GradientAtSlowest:
    """``f(altitude)``: the climb gradient at the slowest Mach the window allows there (stall, the
    buffet margin, the case's range), per case; -inf where no speed is allowed (the root finder's
    family: :func:`~variantcmp.solver.finders.illinois_root`)."""

    __slots__ = ("phys",)

    def __init__(self, phys: ClimbPhysics):
        self.phys = phys

    def slowest(self, altitude_m):
        low, high = speed_window(self.phys, altitude_m, high_end=False)
        with np.errstate(invalid="ignore"):
            return np.where(low <= high, low, np.nan)

    def __call__(self, altitude_m):
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            m = self.slowest(altitude_m)
            g = self.phys.climb_gradient(altitude_m, np.where(np.isfinite(m), m, 0.5))
        return np.where(np.isfinite(m) & np.isfinite(g), g, -np.inf)

    def subset(self, keep) -> "_GradientAtSlowest":
        return _GradientAtSlowest(self.phys.subset(keep))


def low_edge_search(phys: ClimbPhysics):
    """Step 3's other way (see the module docstring): (altitude, Mach) per case where the gradient
    at the slowest allowed speed crosses zero between two rungs of START_LADDER_M (the highest such
    pair), NaN elsewhere. Only the caller's check (:func:`accepted` with ``edge``) says whether the
    slowest speed is the best one there."""
    cs = phys.cases
    n = len(cs)
    f = _GradientAtSlowest(phys)
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    rungs = np.stack([np.clip(rung, cs.floor_m, top) for rung in START_LADDER_M], axis=1)
    g = np.stack([f(rungs[:, j]) for j in range(rungs.shape[1])], axis=1)  # a loop over the rungs
    ok = g >= 0.0
    k = rungs.shape[1]
    last = k - 1 - np.argmax(ok[:, ::-1], axis=1)
    found = np.flatnonzero(ok.any(axis=1) & (last < k - 1) & (rungs[np.arange(n), np.minimum(last + 1, k - 1)]
                                                              > rungs[np.arange(n), last]))
    h_out, m_out = np.full(n, np.nan), np.full(n, np.nan)
    if found.size:
        a, b = rungs[found, last[found]], rungs[found, last[found] + 1]
        with np.errstate(invalid="ignore"):
            h = illinois_root(f.subset(found), a, b, g[found, last[found]], g[found, last[found] + 1], LOW_EDGE_TOL_M)
        h_out[found] = h
        m_out[found] = f.subset(found).slowest(h + LOW_EDGE_MARGIN_M)
    return h_out, m_out


def holds_nowhere(phys: ClimbPhysics) -> np.ndarray:
    """Step 1's other outcome, for cases whose ladder held the level at no rung: whether they hold
    it nowhere. Yes where the best gradient over the speed window without the buffet band (more
    speeds than the limits allow: it can only say no more often) is negative at every rung, the
    floor first, and at the top of the gradient's hump in altitude at each end of the case's
    speed range (between the floor and where that Mach flies at the minimum-drag CL, above which
    drag and thrust only get worse). The reason: with the best speed inside the window, the best
    gradient falls with altitude (the same lift coefficient at a lower altitude and speed has the
    same drag and no less thrust; a propeller's eta P / V there goes as eta(M) rho^(m + 1/2), which
    falls only with an efficiency rising with Mach faster than M^(2m + 1), steeper than any
    propeller's), so negative at the floor is negative everywhere; a hump comes
    only where the best speed is held at a fixed Mach, the range's end (a data range, MMO), where
    the drag falls with altitude until that Mach flies at the minimum-drag CL. Such a case gets no ceiling
    and the flag CANNOT_CLIMB, as the general search would give it after scanning every speed
    (about a millisecond a case: most of that search's time on the benchmark's engine-out sets).
    Test: ``test_cases_that_hold_no_altitude_agree_with_the_general_search``."""
    cs = phys.cases
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    nowhere = np.ones(len(cs), dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for rung in START_LADDER_M:  # a loop over the ladder's rungs, all cases at once
            h = np.clip(rung, cs.floor_m, top)
            low, high = speed_window(phys, h, buffet=False)
            flyable = low <= high
            _, g = golden_max(lambda m: nan_as_lowest(phys.climb_gradient(h, m)), np.where(flyable, low, 0.5),
                              np.where(flyable, high, 0.5), GRADIENT_ITERATIONS)
            nowhere &= ~(flyable & (g >= 0.0))
        cl_star = np.sqrt(cs.cd0 / cs.k)
        for end in (cs.mach_low, cs.mach_high):
            # The hump of the gradient at that Mach lies below where it flies at the minimum-drag
            # CL: higher up both the drag and the thrust only get worse.
            h_md = pressure_altitude_m(phys.w_n / (phys.qs_per_pm2 * end * end * cl_star))
            hi = np.clip(np.nan_to_num(h_md, nan=0.0, posinf=MODEL_TOP_M, neginf=-np.inf), cs.floor_m, top)
            _, g = golden_max(lambda h: nan_as_lowest(phys.climb_gradient(h, end)), cs.floor_m, hi, HUMP_ITERATIONS)
            nowhere &= ~(g >= 0.0)
    return nowhere


def gradient_ceilings(cases: CaseSet):
    """The zero of the best gradient of every case (see the module docstring), by steps 1-3.
    Returns (the answers, which cases they answer): the caller solves the others with the
    general search. A case answered has a ceiling or a flag; one left is blank (neither)."""
    n = len(cases)
    out = Ceilings.blank(n, np.full(n, np.nan))
    done = np.zeros(n, dtype=bool)
    order = np.argsort(group_key(cases), kind="stable")  # each thrust model a slice: views, not gathers
    h0, m0, none = np.full(n, np.nan), np.full(n, np.nan), np.zeros(n, dtype=bool)
    chunks = [order[a:a + CHUNK] for a in range(0, n, CHUNK)]
    for rows in chunks:
        h0[rows], m0[rows], none[rows] = start_guess(ClimbPhysics(cases.take(rows)))
    # The cases no rung held, all at once (few, and many calls: one set pays numpy's overhead once).
    empty = order[none[order]]
    if empty.size:
        empty = empty[holds_nowhere(ClimbPhysics(cases.take(empty)))]
        out.flags[empty] |= CANNOT_CLIMB
        done[empty] = True
    for rows in chunks:
        rows = rows[~done[rows]]
        phys = ClimbPhysics(cases.take(rows))
        h, m = joint_gradient_search(phys, h0[rows], m0[rows])
        found = np.flatnonzero(np.isfinite(h))
        if found.size:
            res, ok = accepted(phys.subset(found), h[found], m[found])
            take = np.flatnonzero(ok)
            out.put(rows[found[take]], res.take(take))
            done[rows[found[take]]] = True
    # What steps 2-3 left: held at the slowest speed (the buffet margin's, or the stall's)?
    left = order[~done[order]]
    for start in range(0, left.size, CHUNK):
        rows = left[start:start + CHUNK]
        phys = ClimbPhysics(cases.take(rows))
        h, m = low_edge_search(phys)
        found = np.flatnonzero(np.isfinite(h) & np.isfinite(m))
        if found.size:
            res, ok = accepted(phys.subset(found), h[found], m[found], edge=True)
            take = np.flatnonzero(ok)
            out.put(rows[found[take]], res.take(take))
            done[rows[found[take]]] = True
    return out, done
