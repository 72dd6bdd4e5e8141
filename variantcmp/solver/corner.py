"""Best speed at a coffin corner: where the thrust ceiling and the buffet or stall ceiling cross.

Where the thrust ceiling T(M) falls with Mach and an aerodynamic ceiling L(M) (buffet onset at the
g margin, or the stall) rises with it, or the other way, the maximum altitude min(T, L, ...) peaks
on their crossing, a kink. A propeller aircraft's best speed is mostly there: its thrust ceiling
peaks slowly, near the minimum-power speed, where the buffet margin does not allow the lift
coefficient, so the highest it can fly is where the margin's ceiling, rising with speed, meets
the falling thrust ceiling (on the benchmark's turboprops two cases in three; jets rarely).

- :func:`corner_brackets`: the grid cells (:mod:`variantcmp.solver.coarse`) next to the best grid
  speed where thrust binds at one end and buffet or stall at the other, the two moving apart;
- :func:`corner_search`: the crossing in such a cell by regula falsi on the gap g = T - L in Mach
  (:func:`~variantcmp.solver.finders.illinois_root`, each value one warm thrust root and a closed
  form), where the golden-section search over the combined maximum altitude takes some twenty
  fixed-Mach solves;
- :func:`close_the_corner`: one Newton step onto the crossing for any answer where the two bind
  together, however it was found.

Guarantees: their answers are fixed-Mach solves offered to the incumbent
(:class:`~variantcmp.solver.results.Incumbent`), which keeps the highest: never worse than what the
other stages found. Tests: the "turboprop"
dense Mach scan (``tests/test_best_speed.py``), the closed forms of ``tests/test_turboprop.py``.
"""

from __future__ import annotations

import numpy as np

from .coarse import Grid
from .finders import illinois_root
from .fixed_mach import fixed_mach_ceilings
from .limits import closed_form_ceilings_m
from .physics import ClimbPhysics
from .results import LIMITS, Incumbent
from .thrust_ceiling import WARM_HALF_WIDTH_M, thrust_ceiling_m

THRUST, BUFFET, STALL = LIMITS.index("thrust"), LIMITS.index("buffet"), LIMITS.index("stall")
CORNER_MACH_TOL = 1e-6  # the crossing's Mach (the ceilings move about 30 m per 0.001 Mach there: 3 cm)
CORNER_SEARCH_TOL_M = 0.03  # thrust roots inside the search (0.1 ft), solved again in full at the answer
CORNER_STEP_MACH = 1e-4  # the second speed of the corner's Newton step (its gap is linear over this)
CORNER_MAX_STEPS = 20  # the Newton step goes at most this many of those (the searches leave it within a few)
CORNER_WINDOW_M = 30.0  # thrust roots of the Newton step start this close (a 1e-4 Mach step moves them about 3 m)
CORNER_MARGIN_M = 0.05  # the Newton step stops this far short of the crossing (over 10 x the root tolerance)


def corner_brackets(grid: Grid, rows):
    """For the cases ``rows`` (their best grid speed's thrust or buffet or stall binding): the grid
    cell next to the best grid speed where thrust binds at one end and buffet or stall at the
    other, thrust falling towards the aerodynamic end's side and the aerodynamic ceiling rising.

    Returns (which: index into ``rows``, a: the Mach where the aerodynamic limit binds, b: where
    thrust binds, the gaps T - L there (>= 0 at a, < 0 at b), the aerodynamic limit's index).
    Where both cells qualify, the one towards the higher aerodynamic ceiling.
    """
    at = grid.at
    score = grid.score()[rows]
    n, g = score.shape
    r = np.arange(n)
    i = np.argmax(score, axis=1)
    best = np.full(n, -1)
    out = {k: np.full(n, np.nan) for k in ("a", "b", "ga", "gb", "lift")}
    for side in (-1, 1):
        j = i + side
        ok = (j >= 0) & (j < g)
        j = np.clip(j, 0, g - 1)
        lim_i, lim_j = at["limit"][rows, i], at["limit"][rows, j]
        t_i, t_j = at["thrust_m"][rows, i], at["thrust_m"][rows, j]
        for aero, column in ((BUFFET, "buffet_m"), (STALL, "stall_m")):
            l_i, l_j = at[column][rows, i], at[column][rows, j]
            # Thrust at one end, this limit at the other, thrust falling and the limit rising from
            # the aerodynamic end: then min(T, L) peaks on their crossing inside the cell.
            aero_at_i = (lim_i == aero) & (lim_j == THRUST) & (t_i > t_j) & (l_j > l_i)
            aero_at_j = (lim_j == aero) & (lim_i == THRUST) & (t_j > t_i) & (l_i > l_j)
            with np.errstate(invalid="ignore"):
                fits = ok & (aero_at_i | aero_at_j) & np.isfinite(t_i + t_j + l_i + l_j)
            higher = fits & ((best < 0) | (np.maximum(l_i, l_j) > out["lift"]))
            a_col, b_col = np.where(aero_at_i, i, j), np.where(aero_at_i, j, i)
            mach = grid.mach[rows]
            a_m, b_m = mach[r, a_col], mach[r, b_col]
            ga = at["thrust_m"][rows, a_col] - at[column][rows, a_col]
            gb = at["thrust_m"][rows, b_col] - at[column][rows, b_col]
            for k, v in (("a", a_m), ("b", b_m), ("ga", ga), ("gb", gb), ("lift", np.maximum(l_i, l_j))):
                out[k] = np.where(higher, v, out[k])
            best = np.where(higher, aero, best)
    which = np.flatnonzero((best >= 0) & (out["ga"] >= 0.0) & (out["gb"] < 0.0))
    return which, out["a"][which], out["b"][which], out["ga"][which], out["gb"][which], best[which]


class GapAtSpeed:
    """``f(mach)``: the thrust ceiling less the buffet or stall ceiling per case (m), for the root
    finder; each thrust root warm-started from the member's last one (first: ``guess_m``)."""

    __slots__ = ("phys", "aero", "guess_m", "offset_m")

    def __init__(self, phys: ClimbPhysics, aero, guess_m, offset_m=0.0):
        self.phys, self.aero, self.guess_m, self.offset_m = phys, aero, guess_m, offset_m

    def __call__(self, mach):
        thrust = thrust_ceiling_m(self.phys, mach, self.guess_m, WARM_HALF_WIDTH_M, CORNER_SEARCH_TOL_M)[0]
        buffet, stall = closed_form_ceilings_m(self.phys.cases, mach)[:2]
        self.guess_m = np.where(np.isfinite(thrust), thrust, self.guess_m)
        gap = thrust - np.where(self.aero == BUFFET, buffet, stall) + self.offset_m
        return np.where(np.isnan(gap), -np.inf, gap)  # no thrust ceiling there: the thrust side

    def subset(self, keep) -> "GapAtSpeed":
        return GapAtSpeed(self.phys.subset(keep), self.aero[keep], self.guess_m[keep], self.offset_m)


def corner_search(phys: ClimbPhysics, grid: Grid, rows):
    """The crossing of thrust and the buffet or stall ceiling for the cases ``rows`` whose best grid
    speed sits next to one (:func:`corner_brackets`): (the cases answered, a subset of ``rows``;
    the Mach of each crossing), the others left to the golden-section search."""
    which, a, b, ga, gb, aero = corner_brackets(grid, rows)
    if which.size == 0:
        return which, np.zeros(0)
    cases = rows[which]
    sub = phys.subset(cases)
    guess = grid.guess(cases)
    start = guess(0.5 * (a + b))
    # The crossing less CORNER_MARGIN_M on the thrust side (see close_the_corner: on the crossing
    # itself a fixed-Mach solve may find that thrust cannot climb at the buffet ceiling).
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        mach = illinois_root(GapAtSpeed(sub, aero, start, CORNER_MARGIN_M), a, b, ga + CORNER_MARGIN_M,
                             gb + CORNER_MARGIN_M, CORNER_MACH_TOL)
    return cases, mach


def close_the_corner(phys: ClimbPhysics, inc: Incumbent) -> None:
    """Where thrust and the buffet or stall ceiling bind together at the answer (a coffin corner),
    one Newton step onto their crossing in Mach.

    There the maximum altitude is min(T, L) with T falling and L rising (or the other way): a
    kink, which a golden-section search brackets only to its last step, where steep sides (a
    propeller aircraft's, against the buffet margin at low speed: about 100 ft per 0.001 Mach)
    leave up to a foot. The gap g = T - L is smooth in Mach: a second solve CORNER_STEP_MACH away
    gives its slope, and a solve at the Newton step's speed (within CORNER_MAX_STEPS of those
    steps) is offered, kept only where it is higher. The step aims CORNER_MARGIN_M short of the
    crossing, on the side where the limit found binding stays the lower: on the crossing itself
    the two ceilings are equal to less than the thrust root's tolerance, and a solve at that Mach
    could name the other limit, or find that thrust cannot climb at the other's ceiling (the check
    of :func:`~variantcmp.solver.fixed_mach.fixed_mach_ceilings`). Tests: the "turboprop" dense
    Mach scan (0.42 ft low without this), the reported Mach giving the reported altitude.
    """
    res = inc.result
    aero_limits = (BUFFET, STALL)
    pair = ((res.limit == THRUST) & np.isin(res.co_limit, aero_limits)) | (
        np.isin(res.limit, aero_limits) & (res.co_limit == THRUST))
    rows = np.flatnonzero(pair & np.isfinite(res.max_altitude_m))
    if rows.size == 0:
        return
    cs = phys.cases
    here = res.take(rows)
    other = np.where(np.isin(here.limit, aero_limits), here.limit, here.co_limit)
    gap = lambda r: r.thrust_m - np.where(other == BUFFET, r.buffet_m, r.stall_m)  # noqa: E731
    sub = phys.subset(rows)
    low, high = cs.mach_low[rows], cs.mach_high[rows]
    # Step towards the middle of the speed range (a corner may sit at one end of it).
    step = np.where(here.mach + CORNER_STEP_MACH <= high, CORNER_STEP_MACH, -CORNER_STEP_MACH)
    m2 = np.clip(here.mach + step, low, high)
    there = fixed_mach_ceilings(sub, m2, here.thrust_m, guess_half_width_m=CORNER_WINDOW_M)
    inc.offer(rows, there)
    with np.errstate(invalid="ignore", divide="ignore"):
        slope = (gap(there) - gap(here)) / (m2 - here.mach)
        # The gap to aim at: the binding limit CORNER_MARGIN_M under the other one.
        aim = np.where(here.limit == THRUST, -CORNER_MARGIN_M, CORNER_MARGIN_M)
        move = np.clip((aim - gap(here)) / slope, -CORNER_MAX_STEPS * CORNER_STEP_MACH,
                       CORNER_MAX_STEPS * CORNER_STEP_MACH)
        thrust_slope = (there.thrust_m - here.thrust_m) / (m2 - here.mach)
    go = np.flatnonzero(np.isfinite(move) & (move != 0.0))
    if go.size:
        m_new = np.clip(here.mach[go] + move[go], low[go], high[go])
        guess = here.thrust_m[go] + thrust_slope[go] * (m_new - here.mach[go])
        inc.offer(rows[go], fixed_mach_ceilings(sub.subset(go), m_new, guess, guess_half_width_m=CORNER_WINDOW_M))
