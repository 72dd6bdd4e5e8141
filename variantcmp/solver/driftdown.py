"""The drift-down with one engine out: from a start altitude down to level-off above a ceiling,
at the speed of best gradient, with still-air distance and time; the net flight path alike.

The physics is that of the engine-out case set (:func:`~variantcmp.solver.engine_out.engine_out_cases`,
no decrement): maximum continuous thrust on the engines left, the engine-out drag. The drift-down
speed is the speed of best gradient at each altitude, within the stall and buffet margins, MMO
and VMO (:func:`variantcmp.solver.gradient.best_gradient`), evaluated at every point of every
path at once.

A path (:func:`descent_path`) runs from ``start`` down to ``end``, above the ``ceiling`` where its
gradient G (the best gradient, less the net decrement on the net path) reaches zero.
Quasi-steady: sin(gamma) = G, so per unit of pressure altitude the still-air distance grows by
(T/T_ISA) cos(gamma) / -G and the time by (T/T_ISA) / (V x -G), T/T_ISA being the height per
unit of pressure altitude (hydrostatic). Left out: the kinetic energy given up as the speed
changes along the path (as in the gradient), and the slowing from the cruise speed to the
drift-down speed at the start (level, a few nm more). Near the ceiling G falls linearly to zero,
so the distance grows like the logarithm of the height left: the path never reaches the ceiling,
and its end is a definition (below). The integral is taken in u, h = ceiling + (end - ceiling)
r^u with r = (start - ceiling)/(end - ceiling), where the integrand is bounded and smooth:
PATH_NODES points evenly spaced in u (dense near the ceiling, sparse near the start), by
cumulative Simpson (``scipy.integrate.cumulative_simpson``).

Level-off: a path is taken as levelled off LEVEL_OFF_MARGIN_FT above its ceiling: the drift-down
distance and time are those from the start to that altitude (the rest of the approach to the
ceiling is an ever slower sink, at about LEVEL_OFF_MARGIN_FT x V x dG/dh: 2 to 8 ft/min on the demo
fleets at ISA-10 to +30). A start within that margin of the ceiling, or below it, holds its level: no
distance, no time.

Tests: ``tests/test_driftdown.py`` (distance and time against ``scipy.integrate.solve_ivp`` on
an independent scalar implementation of the same equations, within 1 %; the level-off
definition; the terrain crossing).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.integrate import cumulative_simpson

from ..atmosphere import isa_state, speed_of_sound_ms
from ..cases import FT, CaseSet
from .gradient import best_gradient
from .physics import ClimbPhysics

#: A path has levelled off this far above its ceiling (see the module docstring).
LEVEL_OFF_MARGIN_FT = 100.0
#: Points per path, evenly spaced in u: 32 Simpson intervals (against 256: 0.02 % in distance,
#: 0.06 % in time at worst on the demo fleets' grid of 60-100 % MTOW, ISA-10 to +30).
PATH_NODES = 33
PATH_CHUNK_POINTS = 200_000  # points (cases x nodes) evaluated at once: memory stays bounded


@dataclass
class DescentPath:
    """Per case (rows), the path at its PATH_NODES points from the start (column 0) to its end:
    pressure altitude (m), still-air distance (m) and time (s) from the start, Mach and the path's
    gradient there. ``ceiling_m`` is where the path's gradient reaches zero. Rows of NaN where the
    path cannot be flown (``no_speed``: somewhere on it no speed is allowed or the thrust data
    stop; ``no_speed_at_start``: already at the start)."""

    altitude_m: np.ndarray
    distance_m: np.ndarray
    time_s: np.ndarray
    mach: np.ndarray
    gradient: np.ndarray
    ceiling_m: np.ndarray
    no_speed: np.ndarray
    no_speed_at_start: np.ndarray

    @property
    def end_m(self) -> np.ndarray:
        return self.altitude_m[:, -1]

    @property
    def total_distance_m(self) -> np.ndarray:
        return self.distance_m[:, -1]

    @property
    def total_time_s(self) -> np.ndarray:
        return self.time_s[:, -1]

    def distance_at(self, altitude_m) -> np.ndarray:
        """Distance from the start where the path passes an altitude per case (between its start
        and end; NaN elsewhere), interpolated linearly in u, the grid's own variable, in which the
        distance is smooth (see :func:`path_altitudes_m`)."""
        k = self.altitude_m.shape[1]
        h = np.asarray(altitude_m, dtype=float)
        start, end, ceiling = self.altitude_m[:, 0], self.end_m, self.ceiling_m
        with np.errstate(invalid="ignore", divide="ignore"):
            inside = (h <= start) & (h >= end)
            u = np.log((h - ceiling) / (end - ceiling)) / np.log((start - ceiling) / (end - ceiling))
            column = np.clip(np.where(start > end, (1.0 - u) * (k - 1), 0.0), 0.0, k - 1.0)
        column = np.where(inside, column, 0.0)
        j = np.minimum(column.astype(np.intp), k - 2)
        rows = np.arange(h.size)
        frac = column - j
        out = self.distance_m[rows, j] * (1.0 - frac) + self.distance_m[rows, j + 1] * frac
        return np.where(inside, out, np.nan)


def path_altitudes_m(start_m, ceiling_m, end_m, nodes: int = PATH_NODES):
    """The path's points: h = ceiling + (end - ceiling) r^u, u from 1 (the start) down to 0 (the
    end), r = (start - ceiling)/(end - ceiling); and d h / d u. A start at or below the end: every
    point at the start (no descent)."""
    end = np.fmin(end_m, start_m)
    span = end - ceiling_m
    with np.errstate(invalid="ignore", divide="ignore"):
        log_r = np.log((start_m - ceiling_m) / span)
    u = np.linspace(1.0, 0.0, nodes)
    h = ceiling_m[:, None] + span[:, None] * np.exp(log_r[:, None] * u[None, :])
    return h, (h - ceiling_m[:, None]) * log_r[:, None]


def descent_path(cases: CaseSet, start_m, ceiling_m, end_m, decrement=0.0) -> DescentPath:
    """The descent of each case from ``start_m`` to ``end_m`` (pressure altitudes, m) above its
    ``ceiling_m``, on the path whose gradient is the best gradient less ``decrement`` (0: the
    gross path); see the module docstring. ``cases``: the engine-out case set."""
    n, k = len(cases), PATH_NODES
    start_m, ceiling_m, end_m = (np.broadcast_to(np.asarray(a, dtype=float), (n,)) for a in (start_m, ceiling_m, end_m))
    h, dh_du = path_altitudes_m(start_m, ceiling_m, end_m, k)
    mach, best = np.full((n, k), np.nan), np.full((n, k), np.nan)
    rows = max(1, PATH_CHUNK_POINTS // k)
    for a in range(0, n, rows):  # chunks of cases, every point of their paths at once
        part = slice(a, min(a + rows, n))
        flat = h[part].ravel()
        known = np.flatnonzero(np.isfinite(flat))
        if known.size:
            phys = ClimbPhysics(cases.take(part).repeat(k).take(known))
            m, g = best_gradient(phys, flat[known])
            mach_part, best_part = np.full(flat.size, np.nan), np.full(flat.size, np.nan)
            mach_part[known], best_part[known] = m, g
            mach[part], best[part] = mach_part.reshape(-1, k), best_part.reshape(-1, k)
    gradient = best - np.broadcast_to(np.asarray(decrement, dtype=float), (n,))[:, None]
    t_isa, _, _ = isa_state(h)
    t = t_isa + cases.isa_dev_c[:, None]
    height_per_m = t / t_isa  # geopotential height per m of pressure altitude (hydrostatic)
    descends = start_m > np.fmin(end_m, start_m)
    with np.errstate(invalid="ignore", divide="ignore"):
        sink = np.where(descends[:, None], -gradient, 1.0)  # no descent: the integrand is zero anyway
        per_u = height_per_m * dh_du / sink
        d_dist = per_u * np.sqrt(np.clip(1.0 - gradient * gradient, 0.0, 1.0))
        d_time = per_u / (mach * speed_of_sound_ms(t))
    # u runs from 1 at the start to 0 at the end: integrate from the end, count from the start.
    dist = _from_start(d_dist)
    time = _from_start(d_time)
    no_speed = descends & ~np.all(np.isfinite(gradient), axis=1)
    no_speed_at_start = no_speed & ~np.isfinite(gradient[:, 0])
    # A path that would climb on its way down has no drift-down to the ceiling given (it cannot
    # happen above the top root the solver gives; kept as no answer, never a number).
    wrong = descends & np.any(gradient >= 0.0, axis=1)
    bad = no_speed | wrong | ~np.isfinite(start_m) | ~np.isfinite(ceiling_m)
    for a in (dist, time, mach, gradient):
        a[bad] = np.nan
    flat_rows = ~descends & ~bad
    dist[flat_rows], time[flat_rows] = 0.0, 0.0
    return DescentPath(np.where(bad[:, None], np.nan, h), dist, time, mach, gradient, ceiling_m.copy(), no_speed,
                       no_speed_at_start)


def _from_start(per_u):
    """Cumulative integral over u from the start (column 0, u = 1) along the columns (u falling
    evenly to 0): Simpson's rule, cumulated from the end."""
    du = 1.0 / (per_u.shape[1] - 1)
    reversed_cum = cumulative_simpson(per_u[:, ::-1], dx=du, axis=1, initial=0.0)
    return reversed_cum[:, -1:] - reversed_cum[:, ::-1]


def level_off_m(ceiling_m):
    """Where a path is taken as levelled off: LEVEL_OFF_MARGIN_FT above its ceiling."""
    return np.asarray(ceiling_m, dtype=float) + LEVEL_OFF_MARGIN_FT * FT


@dataclass
class DriftDown:
    """The gross and the net paths of each case (see :func:`drift_down`)."""

    gross: DescentPath
    net: DescentPath


def drift_down(cases: CaseSet, start_m, gross_m, net_m, decrement, net_stop_m=None) -> DriftDown:
    """Both paths from the start: the gross path to its level-off above the gross ceiling, the
    net path (gradient less ``decrement``) to its level-off above the net ceiling, or to
    ``net_stop_m`` where that lies higher (the terrain check's crossing altitude)."""
    gross = descent_path(cases, start_m, gross_m, level_off_m(gross_m))
    end = level_off_m(net_m)
    if net_stop_m is not None:
        with np.errstate(invalid="ignore"):
            end = np.where(net_stop_m > net_m, np.fmin(end, net_stop_m), end)
    return DriftDown(gross, descent_path(cases, start_m, net_m, end, decrement))
