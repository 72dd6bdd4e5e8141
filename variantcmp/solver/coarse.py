"""Best speed, stage 1 (coarse): every limit on a grid of speeds across each case's speed range.

The grid is BEST_MACH_GRID speeds per case, evenly spaced over the speed range of
:mod:`variantcmp.cases` (``mach_low`` to ``mach_high``: from BEST_MACH_LOW to MMO, cut to the Mach
ranges of the thrust table and the buffet data). Each speed is a fixed-Mach solve
(:func:`~variantcmp.solver.fixed_mach.fixed_mach_ceilings`) to GRID_TOL_M, being only the searches'
start, in two sweeps from GRID_START, a middle speed where nearly every case climbs and the cold
bracket is cheap (PROPELLER_GRID_START, slower, for propeller engines): towards the fastest,
then from the middle towards the slowest. Each thrust root
is started from the line through the sweep's previous two speeds', in a window as wide as their
step (FIRST_STEP_HALF_WIDTH_M for the first step from the middle).

Skip rule. Once a case's thrust ceiling has fallen more than FALL_M below its sweep's peak (a
flat top at a layer base scatters by 1e-6 m) it is taken to keep falling that way (one hump);
so is one that rose from the middle to the next faster speed, on the slow sweep. A further speed
of the sweep is then not solved where neither the last thrust ceiling nor that speed's other
limits (closed forms) are above the best maximum altitude found: it cannot beat it. Table
engines, and propeller engines whose efficiency table is not concave, are not taken to keep
falling (a dip in a table's Mach columns can rise again after any number of grid speeds;
:func:`~variantcmp.solver.kinks.several_humps_in_mach`): past a fall, a speed is not solved where
:func:`~variantcmp.solver.thrust_ceiling.ceiling_below` shows its thrust ceiling below the best
maximum altitude found. (Before the sweeps the fastest speed came first, where many heavy, hot
cases cannot climb at all: the sweeps and the table-engine check took the benchmark's best-speed
evaluation calls from 1,788 to 1,041 per 100,000 cases.)

Guarantees: at every grid speed either the fixed-Mach answer (to GRID_TOL_M), or a thrust
ceiling NaN with the closed forms kept, where that speed cannot beat the best maximum altitude
found at the others; the best grid speed's answers are never skipped.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from ..cases import MODEL_CODES, CaseSet
from .finders import nan_as_lowest
from .fixed_mach import fixed_mach_ceilings
from .kinks import several_humps_in_mach
from .limits import closed_form_ceilings_m, lowest_other_ceiling_m
from .physics import ClimbPhysics
from .results import Ceilings, score
from .thrust_ceiling import WARM_HALF_WIDTH_M, ceiling_below

BEST_MACH_GRID = 8  # speeds per case: 7 steps over a range of about 0.67 Mach
GRID_START = 5  # the grid speed solved first (slowest 0): a middle one
# Propeller aircraft fly highest slowly, near their minimum-power speed: their sweeps start in
# the slower half, where they climb (from GRID_START the fast speeds, where many heavy or hot
# cases cannot climb at all, took a third of a turboprop chunk's time in the altitude scan).
PROPELLER_GRID_START = 3
GRID_TOL_M = 0.3  # best-speed grid: only a start for the search (1 ft)
FIRST_STEP_HALF_WIDTH_M = 1500.0  # window around the first grid speed's thrust ceiling for the next one
FALL_M = 1.0  # a grid speed's thrust ceiling this far below the sweep's peak: a fall


@dataclass
class Grid:
    """The coarse stage's answers: ``mach`` (cases x speeds, slowest first) and, per field of
    :class:`~variantcmp.solver.results.Ceilings`, the cases x speeds array ``at[field]``."""

    mach: np.ndarray
    at: dict
    low: np.ndarray  # each case's speed range
    high: np.ndarray

    @property
    def thrust_m(self):
        return self.at["thrust_m"]

    def score(self):
        """Each grid speed's :func:`~variantcmp.solver.results.score` (cases x speeds)."""
        flat = Ceilings(**{k: v.ravel() for k, v in self.at.items()})
        return score(flat).reshape(self.mach.shape)

    def around(self, column, rows=None):
        """The grid speeds either side of ``column`` (an index per case, or of the cases ``rows``)."""
        mach = self.mach if rows is None else self.mach[rows]
        r, g = np.arange(mach.shape[0]), mach.shape[1]
        return mach[r, np.maximum(column - 1, 0)], mach[r, np.minimum(column + 1, g - 1)]

    def step(self, rows=None):
        mach = self.mach if rows is None else self.mach[rows]
        return (mach[:, -1] - mach[:, 0]) / (mach.shape[1] - 1)

    def guess(self, rows=None) -> Callable:
        """The thrust ceiling between grid speeds, interpolated (for the cases ``rows``): a start
        for a root. Returns ``guess(mach, idx)`` (idx: which of those cases, default all)."""
        pick = (lambda a: a) if rows is None else (lambda a: a[rows])  # noqa: E731
        return interpolated_guess(pick(self.low), pick(self.high), pick(self.thrust_m))


def mach_grid(cases: CaseSet, speeds: int = BEST_MACH_GRID) -> np.ndarray:
    """Evenly spaced speeds over each case's speed range (cases x speeds, slowest first)."""
    frac = np.linspace(0.0, 1.0, speeds)
    return cases.mach_low[:, None] + (cases.mach_high - cases.mach_low)[:, None] * frac[None, :]


def interpolated_guess(low, high, grid_values) -> Callable:
    """Values between grid speeds (evenly spaced from ``low`` to ``high`` per row), interpolated
    linearly; an end's own value where the other is not finite."""
    n, g = grid_values.shape
    rows = np.arange(n)
    span = np.where(high > low, high - low, 1.0)

    def guess(m, idx=rows):
        u = np.clip((m - low[idx]) / span[idx] * (g - 1), 0.0, g - 1.0)
        j = np.minimum(u.astype(np.int64), max(g - 2, 0))
        lo_v, hi_v = grid_values[idx, j], grid_values[idx, np.minimum(j + 1, g - 1)]
        with np.errstate(invalid="ignore"):  # inf - inf where a speed is above the model top
            mid = lo_v + (u - j) * (hi_v - lo_v)
        return np.where(np.isfinite(mid), mid, np.where(np.isfinite(lo_v), lo_v, hi_v))

    return guess


def coarse_stage(phys: ClimbPhysics) -> Grid:
    """Every limit at the grid's speeds, by the sweeps and the skip rule of the module docstring,
    the sweeps of propeller engines from PROPELLER_GRID_START (each kind of engine a slice of the
    chunk, sorted by thrust model)."""
    cs = phys.cases
    start = np.where(cs.model_code == MODEL_CODES["turboprop"], PROPELLER_GRID_START, GRID_START)
    if np.all(start == start[0]) if start.size else True:
        return _sweeps(phys, int(start[0]) if start.size else GRID_START)
    parts = [(rows, _sweeps(phys.subset(rows), int(first)))
             for first in np.unique(start) for rows in [np.flatnonzero(start == first)]]
    at = {k: np.empty((len(cs), BEST_MACH_GRID), dtype=v.dtype) for k, v in parts[0][1].at.items()}
    mach = np.empty((len(cs), BEST_MACH_GRID))
    for rows, part in parts:
        mach[rows] = part.mach
        for k, v in part.at.items():
            at[k][rows] = v
    return Grid(mach, at, cs.mach_low, cs.mach_high)


def _sweeps(phys: ClimbPhysics, start: int) -> Grid:
    """The grid's sweeps for cases that all start at grid speed ``start``."""
    cs = phys.cases
    grid = mach_grid(cs)
    n, g = grid.shape
    columns = [None] * g
    best_max = np.full(n, -np.inf)
    smooth = ~several_humps_in_mach(phys)
    start = min(start, g - 1)
    for sweep in (range(start, g), range(start - 1, -1, -1)):
        if len(sweep) == 0:
            continue
        fell = np.zeros(n, dtype=bool)
        if sweep[0] == start:
            guess, half, last, before = None, WARM_HALF_WIDTH_M, None, None
            peak, latest = np.full(n, -np.inf), np.full(n, np.inf)
        else:
            # Back from the middle, started from the line through the middle and the next faster
            # speed; a ceiling that rose from the middle to the next faster speed falls this way.
            last = columns[start].thrust_m
            peak = latest = nan_as_lowest(last)
            before = columns[start + 1].thrust_m if start + 1 < g else None
            guess, half = _next_guess(last, before)
            if before is not None:
                fell = nan_as_lowest(before) > peak + FALL_M
        for j in sweep:
            mach_j = np.ascontiguousarray(grid[:, j])
            skip = np.zeros(n, dtype=bool)
            past = fell & smooth
            closed = None
            if past.any():
                closed = closed_form_ceilings_m(cs, mach_j)
                skip = past & ((latest <= best_max) | (lowest_other_ceiling_m(cs, closed) <= best_max))
            screen = np.flatnonzero(fell & ~smooth)
            if screen.size:
                skip[ceiling_below(phys, screen, mach_j, best_max)] = True
            live = np.flatnonzero(~skip)
            if live.size == n:
                columns[j] = fixed_mach_ceilings(phys, mach_j, guess, guess_half_width_m=half, tol_m=GRID_TOL_M)
            else:
                columns[j] = Ceilings.blank(n, mach_j)
                # The closed forms cost little: keep them for every speed (buffet's own best speed).
                buffet_j, stall_j, cabin_j, _ = closed or closed_form_ceilings_m(cs, mach_j)
                columns[j].buffet_m[:], columns[j].stall_m[:], columns[j].cabin_m[:] = buffet_j, stall_j, cabin_j
                if live.size:
                    pick = (lambda x, live=live: None if x is None else (x[live] if np.ndim(x) else x))  # noqa: E731
                    columns[j].put(live, fixed_mach_ceilings(phys.subset(live), mach_j[live], pick(guess),
                                                             guess_half_width_m=pick(half), tol_m=GRID_TOL_M))
            found = columns[j].thrust_m
            value = nan_as_lowest(found)
            fell |= value < peak - FALL_M
            latest = np.where(skip, latest, value)
            best_max = np.maximum(best_max, nan_as_lowest(columns[j].max_altitude_m))
            peak = np.maximum(peak, value)
            before, last = last, (found if last is None else np.where(np.isfinite(found), found, last))
            guess, half = _next_guess(last, before)
    return Grid(grid, Ceilings.stack(columns), cs.mach_low, cs.mach_high)


def _next_guess(last, before):
    """A grid speed's thrust-ceiling guess and window half-width from the sweep's previous two
    speeds' (``before`` None: only one so far, a wide window around it): the line through them,
    in a window as wide as their step."""
    if before is None:
        return last, FIRST_STEP_HALF_WIDTH_M
    step = np.where(np.isfinite(last - before), last - before, 0.0)
    return last + step, np.maximum(WARM_HALF_WIDTH_M, np.abs(step))
