"""The best speed: per case, the Mach at which the feasible band closes highest, and every limit's
own best over the speed range.

The maximum altitude at a Mach is H(M) = min(T, B, S, C, Cab)(M) where the speed can be flown
(:mod:`variantcmp.solver.fixed_mach`): thrust T and buffet B ceilings with kinks where the data
put them (:mod:`variantcmp.solver.kinks`), a stall ceiling S rising with Mach, constant certified
C and cabin Cab ceilings. Each limit is an upper bound of H at every speed. The search is four
stages, each with its guarantee:

1. *Coarse* (:mod:`variantcmp.solver.coarse`): every limit on a grid of BEST_MACH_GRID speeds.
2. *Thrust* (:mod:`variantcmp.solver.thrust_best`): T's own best speed M_T, refined in the
   brackets around the best grid speed and the kinks the data define; the fixed-Mach answer at M_T.
3. *Combined* (:func:`combined_stage`): where thrust, the certified or the cabin ceiling binds at
   M_T, no speed does better (each bounds H everywhere), so the case is done; so is one whose
   buffet ceiling binds at its own best speed (:func:`~variantcmp.solver.limits.buffet_peak_mach`,
   a closed form: the highest B goes). Thrust bounds nothing where some speed still climbs at the
   top of the thrust table (its ceiling lies beyond the data there): such a case goes on (up to
   995 ft low without this on a stress catalogue). The buffet peak's answer is the grid's where
   it falls on a grid speed without a maximum altitude (:func:`_at_buffet_peak`). The rest (buffet
   or stall binding: the coffin corner) are searched. Where thrust binds at one grid neighbour of
   the best grid speed and buffet or stall at the other, moving apart, H peaks on their crossing,
   found by a root search (:func:`~variantcmp.solver.corner.corner_search`: where a propeller
   aircraft's best speed mostly lies, against the buffet margin at low speed); the others get
   golden-section searches of H over brackets: the best grid speed's neighbours; the
   buffet-boundary points either side of the buffet peak, where that beats the best grid speed (a
   spike of the boundary can lie between grid speeds); a grid step either side of M_T, where that
   lies outside the first bracket (a peak on a table Mach). These last two only where the other
   limits' closed forms allow more than the best found somewhere in the bracket (:func:`_bound_m`).
   All brackets run as one search on repeated cases. Then two situations the grid is too coarse
   for, each in its own step: :func:`flyable_islands` and :func:`narrow_climbing_band`; and
   where thrust and the buffet or stall ceiling bind together however found,
   :func:`~variantcmp.solver.corner.close_the_corner` steps onto the crossing.
4. *Check* (:func:`check_stage`) enforces the invariants of the answer:

   - the reported maximum altitude is no lower than any fixed-Mach result the search evaluated
     (:class:`~variantcmp.solver.results.Incumbent` keeps the best full-tolerance result; a grid
     speed, solved to GRID_TOL_M, that beats it by more than that is solved again and offered);
   - the reported Mach reproduces the reported maximum altitude at fixed Mach (every answer is
     one fixed-Mach solve to ROOT_TOL_M at that Mach: within 0.01 ft);
   - each limit's column is that limit's own best over the speed range (``thrust_mach`` the speed
     of the thrust ceiling's): thrust at M_T (unknown,
     NaN, where some speed still climbs at the top of the thrust table: such speeds may lie
     between grid speeds, so a best within TABLE_TOP_LOOK_M under the table's top gets a look
     for the best climb rate at the top within a grid step of it), buffet at its closed-form peak,
     stall at the fastest speed (it rises with Mach), certified and cabin constants.

Among speeds of equal altitude (a flat certified or cabin limit) the one with most room under the
aerodynamic and thrust limits wins (:func:`~variantcmp.solver.results.score`).

Accuracy, against dense Mach scans (161 fixed-Mach solves per case, then 41 around the best;
``tests/test_best_speed.py``): on 3,000 benchmark cases of each of three seeds (default, 7, 11)
the worst case was 0.003 ft low for the jets (0.12 ft before the joint search above a layer base:
:mod:`~variantcmp.solver.thrust_best`), 0.15 ft for the turboprops (their thrust column 0.27 ft);
on the two bundled fleets (every pair x 8 weights 0.5-1.05 MTOW x ISA-15 to +45 every 10 C x 0,
100, 300 and 500 ft/min) 0.005 ft for the jets, 0.05 ft for the turboprops. On a reviewer's stress catalogue
(MMO 0.70 with VMO 210 kt, four buffet peaks, three engine models, 0.35-1.3 MTOW, up to 800
ft/min) 26 of 810 cases stayed more than 1 ft low, up to 192 ft, none without an answer (measured
on the single-module solver these stages came from, whose answers they give to 0.004 ft, or
higher). Known limits: a smooth peak narrower
than the grid's step away from the best grid speed where every grid speed can be flown; a second
buffet peak where the highest one cannot be flown; the band just under a thrust table's top where
a buffet ceiling crosses it (reached to about 1 ft).
"""

from __future__ import annotations

import numpy as np

from ..atmosphere import MODEL_TOP_M
from .coarse import GRID_TOL_M, Grid, coarse_stage, mach_grid
from .corner import close_the_corner, corner_search
from .finders import golden_max, nan_as_lowest
from .fixed_mach import fixed_mach_ceilings
from .kinks import buffet_nodes_around
from .limits import buffet_ceiling_m, buffet_peak_mach, closed_form_ceilings_m
from .physics import ClimbPhysics
from .results import CANNOT_CLIMB, LIMITS, THRUST_DATA_TOP, UNFLYABLE, Ceilings, Incumbent, score
from .thrust_best import ThrustBest, thrust_best_stage
from .thrust_ceiling import thrust_ceiling_m

BEST_MACH_ITERATIONS = 18  # golden section on the maximum altitude: a grid step x 0.618^18, about 2e-5
ISLAND_SPEEDS = 48  # dense scan for cases whose grid met unflyable speeds (a step of about 0.014 Mach)
TABLE_TOP_LOOK_M = 300.0  # a best thrust ceiling this close under the thrust table's top gets a look at the top
BOUNDING = (LIMITS.index("thrust"), LIMITS.index("certified"), LIMITS.index("cabin"))  # bound H at every speed


def best_speed_ceilings(phys: ClimbPhysics) -> Ceilings:
    """Best speed per case: the stages of the module docstring."""
    n = len(phys.cases)
    grid = coarse_stage(phys)
    thrust = thrust_best_stage(phys, grid)
    inc = Incumbent(n)
    grid_flags = np.bitwise_or.reduce(grid.at["flags"], axis=1)
    grid_flags[thrust.beyond_table] |= THRUST_DATA_TOP
    m_buffet = buffet_peak_mach(phys.cases, phys.cases.mach_low, phys.cases.mach_high)
    todo = combined_stage(phys, grid, thrust, m_buffet, grid_flags, inc)
    # Speeds that cannot be flown among the grid's (or no answer): there may be islands.
    suspect = np.zeros(n, dtype=bool)
    suspect[todo] = ((grid.at["flags"][todo] & (UNFLYABLE | THRUST_DATA_TOP)).any(axis=1)
                     | np.isnan(inc.result.max_altitude_m[todo]))
    flyable_islands(phys, grid, np.flatnonzero(suspect), inc)
    narrow_climbing_band(phys, grid, inc)
    close_the_corner(phys, inc)
    return check_stage(phys, grid, thrust, m_buffet, grid_flags, inc)


def combined_score(phys: ClimbPhysics, mach, guess_m):
    """The maximum altitude's score at a speed per case, for a search over speeds: the thrust
    ceiling is solved only where thrust binds (elsewhere its guess stands in for the room)."""
    res = fixed_mach_ceilings(phys, mach, guess_m, thrust_needed=False)
    return score(res, np.where(np.isposinf(res.thrust_m), guess_m, res.thrust_m))


def combined_stage(phys: ClimbPhysics, grid: Grid, thrust: ThrustBest, m_buffet, grid_flags, inc: Incumbent):
    """Stage 3: the cases where no speed can beat the thrust-best speed's answer are done; the
    rest searched over the brackets of the module docstring. Offers every answer to ``inc`` (the
    candidates in a fixed order, ties to the first); returns the cases searched."""
    final = thrust.final
    done = np.isfinite(final.max_altitude_m) & np.isin(final.limit, BOUNDING)
    done &= ~((final.limit == LIMITS.index("thrust")) & (grid_flags & THRUST_DATA_TOP).astype(bool))
    inc.offer(np.flatnonzero(done), final.take(np.flatnonzero(done)))
    todo = np.flatnonzero(~done)
    if todo.size == 0:
        return todo
    sub = phys.subset(todo)
    guess = grid.guess(todo)
    gs = grid.score()[todo]
    r = np.arange(todo.size)
    i = np.argmax(gs, axis=1)
    m_grid = grid.mach[todo][r, i]
    lo, hi = grid.around(i, todo)
    # The buffet ceiling's own best speed: where the buffet ceiling binds there, no speed goes
    # higher (it bounds the maximum altitude at every speed): no search.
    m_peak = np.where(np.isfinite(m_buffet[todo]), m_buffet[todo], m_grid)
    at_peak = _at_buffet_peak(sub, grid, todo, m_peak, guess)
    open_ = ~(np.isfinite(m_buffet[todo]) & (at_peak.limit == LIMITS.index("buffet"))
              & np.isfinite(at_peak.max_altitude_m))
    go = np.flatnonzero(open_)
    around = np.flatnonzero((score(at_peak) > gs[r, i]) & open_ & np.isfinite(m_buffet[todo]))
    # A coffin corner next to the best grid speed: its crossing by a root search (few solves),
    # the golden-section search for the rest.
    cornered, m_corner = corner_search(sub, Grid(grid.mach[todo], {k: v[todo] for k, v in grid.at.items()},
                                                 grid.low[todo], grid.high[todo]), go)
    go = np.setdiff1d(go, cornered)
    peak_lo, peak_hi = buffet_nodes_around(sub.cases, m_peak)
    m_t = thrust.mach[todo]
    step = grid.step(todo)
    low, high = grid.mach[todo][:, 0], grid.mach[todo][:, -1]
    apart = np.flatnonzero(np.isfinite(m_t) & ((m_t < lo) | (m_t > hi)) & open_)
    # Brackets where the other limits' closed forms keep every speed below the best found cannot
    # do better (at a propeller's coffin corner, M_T's bracket lies where the buffet margin binds).
    best_m = np.fmax(nan_as_lowest(np.fmax.reduce(grid.at["max_altitude_m"][todo], axis=1)),
                     nan_as_lowest(inc.result.max_altitude_m[todo]))
    around = around[_bound_m(sub.cases, around, np.maximum(peak_lo, low)[around], np.minimum(peak_hi, high)[around])
                    > best_m[around]]
    apart = apart[_bound_m(sub.cases, apart, np.maximum(m_t - step, low)[apart], np.minimum(m_t + step, high)[apart])
                  > best_m[apart]]
    searched = np.concatenate([go, around, apart])
    m_found = np.zeros(0)
    if searched.size:
        sub2 = sub if searched.size == todo.size else sub.subset(searched)
        m_found, _ = golden_max(lambda m: combined_score(sub2, m, guess(m, searched)),
                                np.concatenate([lo[go], np.maximum(peak_lo, low)[around],
                                                np.maximum(m_t - step, low)[apart]]),
                                np.concatenate([hi[go], np.minimum(peak_hi, high)[around],
                                                np.minimum(m_t + step, high)[apart]]), BEST_MACH_ITERATIONS)

    def solved(which, mach):
        return fixed_mach_ceilings(sub.subset(which), mach, guess(mach, which))

    # The candidates, in order: the first search (or the buffet peak where none), the best grid
    # speed, the buffet peak, the search around it, the one around M_T, M_T itself.
    rest = np.flatnonzero(~open_)
    inc.offer(todo[rest], at_peak.take(rest))
    if cornered.size:
        inc.offer(todo[cornered], solved(cornered, m_corner))
    if go.size:
        inc.offer(todo[go], solved(go, m_found[:go.size]))
    inc.offer(todo, fixed_mach_ceilings(sub, m_grid, guess(m_grid)))
    inc.offer(todo, at_peak)
    if around.size:
        inc.offer(todo[around], solved(around, m_found[go.size:go.size + around.size]))
    if apart.size:
        inc.offer(todo[apart], solved(apart, m_found[go.size + around.size:]))
    inc.offer(todo, final.take(todo))
    return todo


def _bound_m(cases, rows, low, high):
    """An upper bound of the maximum altitude over [low, high] for the cases ``rows``: the lowest of
    the certified and cabin ceilings, the stall ceiling at ``high`` (it rises with Mach) and the
    buffet ceiling at its own best speed there (:func:`~variantcmp.solver.limits.buffet_peak_mach`);
    each bounds it at every speed. Unknown buffet (no data in the range) bounds nothing."""
    sub = cases.take(rows)
    buffet = buffet_ceiling_m(sub, buffet_peak_mach(sub, low, high))
    stall = closed_form_ceilings_m(sub, high)[1]
    return np.fmin(np.fmin(np.where(np.isnan(buffet), np.inf, buffet), stall), np.fmin(sub.certified_m, sub.cabin_m))


def _at_buffet_peak(sub: ClimbPhysics, grid: Grid, todo, m_peak, guess) -> Ceilings:
    """The fixed-Mach answers at the buffet ceiling's own best speed for the cases ``todo`` (``sub``
    their physics). Where that speed is a grid speed without a maximum altitude (solved there, or
    skipped by the coarse stage: it cannot beat the best found) the grid's answer stands in: no
    speed there beats the best grid speed, nor can the buffet ceiling bind there (it is higher
    there than at the best grid speed). A propeller aircraft's buffet ceiling mostly peaks at MMO,
    where heavy or hot ones cannot climb at all: proving that (the altitude scan) took a quarter of
    a turboprop chunk's time."""
    r = np.arange(todo.size)
    mach = grid.mach[todo]
    on_grid = mach == m_peak[:, None]
    col = np.argmax(on_grid, axis=1)
    known = np.flatnonzero(on_grid.any(axis=1) & np.isnan(grid.at["max_altitude_m"][todo][r, col]))
    if known.size == 0:
        return fixed_mach_ceilings(sub, m_peak, guess(m_peak))
    out = Ceilings.blank(todo.size, m_peak)
    out.put(known, Ceilings(**{k: v[todo[known], col[known]] for k, v in grid.at.items()}))
    need = np.setdiff1d(r, known)
    if need.size:
        out.put(need, fixed_mach_ceilings(sub.subset(need), m_peak[need], guess(m_peak[need], need)))
    return out


def flyable_islands(phys: ClimbPhysics, grid: Grid, idx, inc: Incumbent) -> None:
    """Cases whose grid met speeds that cannot be flown: the best of a dense speed scan.

    Where a VMO floor rises above the buffet or thrust ceiling, or a buffet ceiling above the top
    of the thrust table, the flyable speeds can form islands narrower than the grid's step; the
    searches around the best grid speed do not reach them. These few cases (none of the benchmark
    fleet's) get ISLAND_SPEEDS fixed-Mach solves over their range and a golden-section search
    between the best one's neighbours; the best of those and the answer so far is kept. Test:
    ``test_a_narrow_band_of_flyable_speeds_between_grid_speeds_is_found``.
    """
    if idx.size == 0:
        return
    k, r = ISLAND_SPEEDS, np.arange(idx.size)
    sub = phys.subset(idx)
    guess = grid.guess(idx)
    dense = mach_grid(sub.cases, k)
    rep = np.repeat(r, k)
    m_flat = dense.ravel()
    scan = fixed_mach_ceilings(sub.subset(rep), m_flat, guess(m_flat, rep))
    q = np.argmax(score(scan).reshape(idx.size, k), axis=1)
    m_gold, _ = golden_max(lambda m: combined_score(sub, m, guess(m)), dense[r, np.maximum(q - 1, 0)],
                           dense[r, np.minimum(q + 1, k - 1)], BEST_MACH_ITERATIONS)
    # Ties to the scan, then to the search, then to the answer so far.
    inc.offer(idx, fixed_mach_ceilings(sub, m_gold, guess(m_gold)), ties=True)
    inc.offer(idx, scan.take(r * k + q), ties=True)


def narrow_climbing_band(phys: ClimbPhysics, grid: Grid, inc: Incumbent) -> None:
    """Cases that cannot climb at any grid speed: the speed that climbs best at the floor.

    A narrow band of speeds may climb between two grid speeds (low, heavy, hot): before such a
    case is called unable to climb, the excess climb rate at its floor is maximised over its speed
    range (:meth:`~variantcmp.solver.physics.ClimbPhysics.best_climb_mach`), and where that climbs
    the case is solved at that speed. Test: ``test_a_narrow_band_of_climbing_speeds_is_found``.
    """
    cs = phys.cases
    stuck = np.flatnonzero(np.isnan(inc.result.max_altitude_m)
                           & (np.bitwise_and.reduce(grid.at["flags"], axis=1) & CANNOT_CLIMB).astype(bool))
    if stuck.size == 0:
        return
    sub = phys.subset(stuck)
    m_star, e_star = sub.best_climb_mach(cs.floor_m[stuck])
    climbs = np.flatnonzero(e_star >= 0.0)
    if climbs.size:
        inc.offer(stuck[climbs], fixed_mach_ceilings(sub.subset(climbs), m_star[climbs]))


def past_table_top(phys: ClimbPhysics, grid: Grid, thrust: ThrustBest, thrust_best, grid_flags) -> None:
    """Where a speed between the grid's may climb past the top of the thrust table (``grid_flags``
    in place).

    The best-speed thrust ceiling is unknown where any speed still climbs at the top of the thrust
    table (the data stop there), and such speeds may lie between grid speeds: a best within
    TABLE_TOP_LOOK_M under the table's top gets a look for the best climb rate at the top over the
    speeds within a grid step of its speed; where that is not negative, the grid missed a speed
    beyond the data. Test: ``test_a_best_speed_climbing_past_the_thrust_table_is_never_a_number``.
    """
    cs = phys.cases
    with np.errstate(invalid="ignore"):
        look = np.flatnonzero(np.isfinite(thrust_best) & (cs.top_m - thrust_best < TABLE_TOP_LOOK_M)
                              & (cs.top_m < MODEL_TOP_M) & ~(grid_flags & THRUST_DATA_TOP).astype(bool))
    if look.size:
        step = grid.step(look)
        m_t = thrust.mach[look]
        lo, hi = np.maximum(m_t - step, cs.mach_low[look]), np.minimum(m_t + step, cs.mach_high[look])
        e_top = phys.subset(look).best_climb_mach(cs.top_m[look], lo, hi)[1]
        grid_flags[look[e_top >= 0.0]] |= THRUST_DATA_TOP


def check_stage(phys: ClimbPhysics, grid: Grid, thrust: ThrustBest, m_buffet, grid_flags, inc: Incumbent) -> Ceilings:
    """Stage 4: the invariants of the module docstring, and the answer with each limit's own best."""
    cs = phys.cases
    # (1) No speed evaluated beats the answer: every full-tolerance result went to ``inc``; the
    # grid's (solved to GRID_TOL_M) may beat it by that much at most, else it is solved again and
    # offered. The same for the thrust column against the grid's thrust ceilings.
    with np.errstate(invalid="ignore"):
        short = np.flatnonzero(np.fmax.reduce(grid.at["max_altitude_m"], axis=1)
                               > nan_as_lowest(inc.result.max_altitude_m) + GRID_TOL_M)
    if short.size:
        m = grid.mach[short, np.argmax(grid.score()[short], axis=1)]
        inc.offer(short, fixed_mach_ceilings(phys.subset(short), m, grid.guess(short)(m)))
    final = inc.result
    # The thrust ceiling's own best, and the speed it is at.
    answer_higher = nan_as_lowest(final.thrust_m) > nan_as_lowest(thrust.final.thrust_m)
    thrust_best = np.maximum(nan_as_lowest(thrust.final.thrust_m), nan_as_lowest(final.thrust_m))
    thrust_mach = np.where(answer_higher, final.mach, thrust.mach)
    with np.errstate(invalid="ignore"):
        short = np.flatnonzero(np.fmax.reduce(grid.thrust_m, axis=1) > thrust_best + GRID_TOL_M)
    if short.size:
        j = np.argmax(nan_as_lowest(grid.thrust_m[short]), axis=1)
        again = nan_as_lowest(thrust_ceiling_m(phys.subset(short), grid.mach[short, j], grid.thrust_m[short, j])[0])
        higher = again > thrust_best[short]
        thrust_best[short] = np.where(higher, again, thrust_best[short])
        thrust_mach[short] = np.where(higher, grid.mach[short, j], thrust_mach[short])
    # (2) The answer is one fixed-Mach result at its Mach (``inc`` holds nothing else): solving
    # there again gives it, to the root tolerance.
    # (3) Each limit's own best over the speed range.
    buffet_best = np.maximum.reduce([nan_as_lowest(buffet_ceiling_m(cs, m_buffet)),
                                     nan_as_lowest(grid.at["buffet_m"]).max(axis=1), nan_as_lowest(final.buffet_m)])
    stall_best = closed_form_ceilings_m(cs, cs.mach_high)[1]
    past_table_top(phys, grid, thrust, thrust_best, grid_flags)
    # Where some speed still climbs at the top of the thrust table, the best-speed thrust ceiling
    # lies beyond the data: unknown, not the best of the other speeds.
    beyond = (grid_flags & THRUST_DATA_TOP).astype(bool)
    thrust_best[beyond] = np.nan
    thrust_mach[~np.isfinite(thrust_best)] = np.nan
    flags = final.flags.copy()
    nothing = np.isnan(final.max_altitude_m)
    # Explain a case no speed can fly by what every grid speed ran into.
    flags[nothing] |= np.bitwise_and.reduce(grid.at["flags"], axis=1)[nothing]
    flags[beyond] |= THRUST_DATA_TOP
    unavailable = lambda v: np.where(np.isneginf(v), np.nan, v)  # noqa: E731
    return Ceilings(unavailable(thrust_best), np.where(cs.buffet_id >= 0, unavailable(buffet_best), np.inf),
                    stall_best, final.certified_m, final.cabin_m, final.max_altitude_m, final.mach,
                    final.limit, flags, final.vmo_floor_m, final.co_limit, thrust_mach)
