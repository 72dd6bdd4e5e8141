"""Vectorised root and maximum finders: one scalar problem per case, all cases at once.

Nothing here knows about aircraft. A root finder works on a *family*: an object ``f`` with
``f(x)`` (one x per member, an array of values) and ``f.subset(keep)`` (the family of the members
``keep``, an index array), so that converged members drop out of the working arrays;
:class:`Family` makes one from a numpy function and per-member parameters, and
:meth:`variantcmp.solver.physics.ClimbPhysics.excess_family` gives the excess climb rate of a set of
cases at fixed Mach as a function of altitude. A maximiser takes a plain function of the members'
points (and, for :func:`brent_max`, of which members are still searching).

Every finder is tested alone against ``scipy.optimize.brentq`` or ``minimize_scalar`` on scalar
functions with known answers, kinked, flat and discontinuous ones included
(``tests/test_finders.py``).
"""

from __future__ import annotations

import numpy as np

GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0
#: Regula falsi steps before a bracket across a known break of the function is split there: by
#: then the cases left are the stragglers (a root on a break makes a false position crawl).
STRAGGLER_ITERATION = 5
BREAK_EPS = 1e-6  # a break is looked at this far either side of it (m, when x is an altitude)


class Family:
    """The family f_i(x) = func(x, *params_i): ``params`` are per-member arrays, gathered on subset."""

    __slots__ = ("func", "params")

    def __init__(self, func, *params):
        self.func, self.params = func, tuple(np.asarray(p) for p in params)

    def __call__(self, x):
        return self.func(x, *self.params)

    def subset(self, keep) -> "Family":
        return Family(self.func, *(p[keep] for p in self.params))


def nan_as_lowest(values):
    """Values for maximisation: unavailable (NaN) counts as -inf, +inf stays (above everything)."""
    return np.where(np.isnan(values), -np.inf, values)


def illinois_root(f, a, b, fa, fb, tol, max_iter=60, breaks=None):
    """Root of each member of the family ``f`` in its bracket [a, b] (either order), f(a) >= 0 > f(b).

    Anderson-Bjorck modified regula falsi (Anderson & Bjorck, "A new high order method of regula
    falsi type for computing a root of an equation", BIT 13 (1973) 253-264), the variant of the
    Illinois method (Dowell & Jarratt, BIT 11 (1971) 168-174) that scales the end kept twice
    running by 1 - f(c)/f(kept) instead of halving it. Guarantees: the bracket never loses the
    sign change; a member stops once its bracket is within ``tol`` or the secant slope puts the
    root within a tenth of ``tol`` of the new point; the result is the end with the smaller
    |f|. Converged members drop out of the working arrays once they are half of them.

    ``breaks`` (ascending): points where f may jump. After STRAGGLER_ITERATION steps a bracket
    still straddling one is cut to the side of it where the sign changes, or to BREAK_EPS either
    side of it where the sign changes across the break itself (a root on a jump, where a false
    position would crawl). Where a bracket holds several sign changes the one nearest ``b`` is kept.
    """
    a, b, fa, fb = (np.array(x, dtype=float) for x in (a, b, fa, fb))
    out = np.empty(a.size)
    idx = np.arange(a.size)  # the members still in the working arrays
    side = np.zeros(a.size, dtype=np.int8)
    for iteration in range(max_iter):
        active = np.abs(b - a) > tol
        n_active = int(np.count_nonzero(active))
        if n_active == 0:
            break
        if iteration == STRAGGLER_ITERATION and breaks is not None:
            a, b, fa, fb = _split_at_breaks(f, a, b, fa, fb, active, breaks)
            continue
        if n_active < 0.5 * idx.size:
            done = ~active
            out[idx[done]] = np.where(np.abs(fa[done]) <= np.abs(fb[done]), a[done], b[done])
            keep = np.flatnonzero(active)
            idx, a, b, fa, fb, side = idx[keep], a[keep], b[keep], fa[keep], fb[keep], side[keep]
            f = f.subset(keep)
        denom = fb - fa
        c = np.where(denom != 0.0, (a * fb - b * fa) / np.where(denom != 0.0, denom, 1.0), 0.5 * (a + b))
        c = np.clip(c, np.minimum(a, b), np.maximum(a, b))
        fc = f(c)
        # Close enough: the secant slope puts the root within a tenth of the tolerance of c.
        with np.errstate(divide="ignore", invalid="ignore"):
            there = np.abs(fc) * np.abs(b - a) < 0.1 * tol * np.abs(fb - fa)
        left = fc >= 0.0  # the root lies between c and b
        # Anderson-Bjorck scaling of the endpoint kept twice running (Illinois would halve it).
        with np.errstate(divide="ignore", invalid="ignore"):
            m_left, m_right = 1.0 - fc / fa, 1.0 - fc / fb
        fb = np.where(left & (side == -1), np.where(m_left > 0.0, m_left, 0.5) * fb, fb)
        fa = np.where(~left & (side == 1), np.where(m_right > 0.0, m_right, 0.5) * fa, fa)
        a, fa = np.where(left | there, c, a), np.where(left, fc, fa)
        b, fb = np.where(left & (fc != 0.0) & ~there, b, c), np.where(left, fb, fc)  # fc == 0: the root
        side = np.where(left, -1, 1).astype(np.int8)
    out[idx] = np.where(np.abs(fa) <= np.abs(fb), a, b)
    return out


def _split_at_breaks(f, a, b, fa, fb, active, breaks):
    """Brackets of active members that straddle a break, narrowed to one side of it (or to it)."""
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    k = np.searchsorted(breaks, hi, side="left") - 1  # the highest break below hi
    at = breaks[np.clip(k, 0, breaks.size - 1)]
    cut = np.flatnonzero(active & (k >= 0) & (at > lo) & (at < hi))
    if cut.size == 0:
        return a, b, fa, fb
    sub = f if cut.size == a.size else f.subset(cut)
    toward_b = np.where(b[cut] > a[cut], BREAK_EPS, -BREAK_EPS)
    near, far = at[cut] + toward_b, at[cut] - toward_b
    f_near, f_far = sub(near), sub(far)
    a, b, fa, fb = a.copy(), b.copy(), fa.copy(), fb.copy()
    past = f_near >= 0.0  # the sign changes between the break and b
    on = (f_far >= 0.0) & ~past  # across the break itself
    a[cut] = np.where(past, near, np.where(on, far, a[cut]))
    fa[cut] = np.where(past, f_near, np.where(on, f_far, fa[cut]))
    b[cut] = np.where(past, b[cut], np.where(on, near, far))
    fb[cut] = np.where(past, fb[cut], np.where(on, f_near, f_far))
    return a, b, fa, fb


def newton_secant_root(f, guess, slope, max_step, steps=3):
    """Roots near guesses: a Newton step with a known slope df/dx, then secant steps through the
    last two points (e.g. Press et al., *Numerical Recipes*, 3rd ed., sec. 9.2).

    Guarantees: a member is settled once a step is under ``max_step`` with a negative slope (a
    falling root, as the top root of a climb rate); one still moving after ``steps`` evaluations
    (a guess too far off, a jump in f) is not settled and is left to a bracketing finder. Returns
    (root, settled, slope: the last secant's where settled, the given one elsewhere).
    """
    n = np.size(guess)
    root, ok = np.full(n, np.nan), np.zeros(n, dtype=bool)
    slope, learnt = np.array(slope, dtype=float), np.array(slope, dtype=float)
    idx, x = np.arange(n), np.array(guess, dtype=float)
    f_prev = x_prev = None
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for _ in range(steps):
            fx = f(x)
            if f_prev is not None:
                slope[idx] = (fx - f_prev) / (x - x_prev)
            x_next = x - fx / slope[idx]
            done = (np.abs(x_next - x) <= max_step) & (slope[idx] < 0.0)
            root[idx[done]], ok[idx[done]], learnt[idx[done]] = x_next[done], True, slope[idx[done]]
            going = np.flatnonzero(~done & np.isfinite(x_next))
            if going.size == 0:
                break
            idx, f = idx[going], f.subset(going)
            f_prev, x_prev, x = fx[going], x[going], x_next[going]
    return root, ok, learnt


def bisect_root(func, lo, hi, rising, iterations):
    """Vectorised bisection for func(x) = 0 on [lo, hi], ``rising``: func < 0 at lo and >= 0 at hi
    (else the reverse). The bracket halves each step: the result is within (hi - lo) / 2^(n+1)."""
    lo, hi = np.array(lo, dtype=float), np.array(hi, dtype=float)
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        with np.errstate(invalid="ignore"):
            up = func(mid) >= 0.0
        to_hi = up == rising  # root below mid
        hi = np.where(to_hi, mid, hi)
        lo = np.where(to_hi, lo, mid)
    return 0.5 * (lo + hi)


#: Bisection steps of :func:`edge_root` where the function has no value at the end (a bracket of
#: at most 1 in x, e.g. a Mach range: 2.4e-7).
EDGE_BISECT_STEPS = 22


def edge_root(f, inside, f_inside, end, tol):
    """Per member of the family ``f``, the edge of the region where f >= 0, going from ``inside``
    (where f >= 0) towards ``end``: ``end`` itself where f >= 0 there too, else the root between
    them. Guarantees: the result is never beyond ``end``; where f(end) is a number the root is that
    of :func:`illinois_root` to ``tol``; where f has no value at the end (NaN or -inf: the
    function's data end there, and a false position cannot use an infinite end) it is a point
    where f >= 0 within |end - inside| / 2^EDGE_BISECT_STEPS of the edge of the region
    (bisection, NaN counting as below zero)."""
    out = np.array(end, dtype=float)
    inside, f_inside = np.asarray(inside, dtype=float), np.asarray(f_inside, dtype=float)
    f_end = f(out)
    todo = (f_inside >= 0.0) & ~(f_end >= 0.0)
    finite = np.flatnonzero(todo & np.isfinite(f_end))
    if finite.size:
        out[finite] = illinois_root(f.subset(finite), inside[finite], out[finite], f_inside[finite], f_end[finite], tol)
    blank = np.flatnonzero(todo & ~np.isfinite(f_end))
    if blank.size:  # bisection, ending on the side where f >= 0
        sub, good, bad = f.subset(blank), inside[blank], out[blank]
        for _ in range(EDGE_BISECT_STEPS):
            mid = 0.5 * (good + bad)
            with np.errstate(invalid="ignore"):
                up = sub(mid) >= 0.0
            good, bad = np.where(up, mid, good), np.where(up, bad, mid)
        out[blank] = good
    return out


def golden_max(func, a, b, iterations):
    """Vectorised golden-section search for the maximum of ``func(x)`` on each [a, b].

    Kiefer's section search (e.g. Press et al., *Numerical Recipes*, 3rd ed., sec. 10.2). For a
    unimodal function the bracket holding the maximum shrinks by 0.618 per step; for any other it
    ends on a local maximum or a kink. Ties go left. Returns (x, f) of the better inner point.
    """
    a, b = np.array(a, dtype=float), np.array(b, dtype=float)
    c1, c2 = b - GOLDEN * (b - a), a + GOLDEN * (b - a)
    f1, f2 = func(c1), func(c2)
    for _ in range(iterations):
        go_left = f1 >= f2
        b = np.where(go_left, c2, b)
        a = np.where(go_left, a, c1)
        new = np.where(go_left, b - GOLDEN * (b - a), a + GOLDEN * (b - a))
        fn = func(new)
        c2, f2, c1, f1 = (np.where(go_left, c1, new), np.where(go_left, f1, fn),
                          np.where(go_left, new, c2), np.where(go_left, fn, f2))
    best = f1 >= f2
    return np.where(best, c1, c2), np.where(best, f1, f2)


def brent_max(func, grid, values, max_iter, tol):
    """Vectorised Brent maximisation per row, started from the best point of a grid.

    Brent, *Algorithms for Minimization without Derivatives* (1973), ch. 5: a parabola through
    the three best points so far, its vertex taken where it lies well inside the bracket and the
    step is under half the one before last; a golden-section step into the larger part of the
    bracket otherwise. The bracket is the best grid point's neighbours. Guarantees: the result is
    never worse than the best grid point; a row stops once its bracket is within ``tol`` of its
    best point. ``func(rows, x, guess, spread)`` evaluates the rows ``rows`` at ``x``, with the
    parabola's guess of the value and how far it may be off (NaN where there is none): an
    expensive objective (a root per point) can start from it. Returns (x, f).
    """
    n, g = grid.shape
    rows = np.arange(n)
    i = np.argmax(values, axis=1)
    i_lo, i_hi = np.maximum(i - 1, 0), np.minimum(i + 1, g - 1)
    a, b = grid[rows, i_lo].copy(), grid[rows, i_hi].copy()
    x, fx = grid[rows, i].copy(), values[rows, i].copy()
    f_lo, f_hi = values[rows, i_lo], values[rows, i_hi]
    lo_better = f_lo >= f_hi
    w, fw = np.where(lo_better, a, b), np.where(lo_better, f_lo, f_hi)
    v, fv = np.where(lo_better, b, a), np.where(lo_better, f_hi, f_lo)
    d, e = np.zeros(n), b - a  # e: the step before last (the bracket allows a parabola at once)
    live = np.flatnonzero(np.isfinite(fx) & (b > a))
    for _ in range(max_iter):
        mid = 0.5 * (a[live] + b[live])
        xl, al, bl = x[live], a[live], b[live]
        going = np.abs(xl - mid) > 2.0 * tol - 0.5 * (bl - al)
        live, mid, xl, al, bl = live[going], mid[going], xl[going], al[going], bl[going]
        if live.size == 0:
            break
        wl, vl, fxl, fwl, fvl, dl, el = w[live], v[live], fx[live], fw[live], fv[live], d[live], e[live]
        with np.errstate(invalid="ignore", divide="ignore"):  # -inf values, coincident points
            r, q = (xl - wl) * (fxl - fvl), (xl - vl) * (fxl - fwl)
            step = -0.5 * ((xl - wl) * r - (xl - vl) * q) / (r - q)
            u = xl + step
            parabola = (np.isfinite(step) & (np.abs(step) < 0.5 * np.abs(el))
                        & (u - al >= 2.0 * tol) & (bl - u >= 2.0 * tol))
        golden_e = np.where(xl >= mid, al - xl, bl - xl)
        e[live] = np.where(parabola, dl, golden_e)
        dl = np.where(parabola, step, (1.0 - GOLDEN) * golden_e)
        dl = np.where(np.abs(dl) >= tol, dl, np.where(dl >= 0.0, tol, -tol))
        d[live] = dl
        u = xl + dl
        # The value's guess: the parabola's value at the new point (a vertex or a golden-section
        # point), off by up to its distance from the value at the nearest known point.
        with np.errstate(invalid="ignore", divide="ignore"):
            pred = (fxl * (u - wl) * (u - vl) / ((xl - wl) * (xl - vl))
                    + fwl * (u - xl) * (u - vl) / ((wl - xl) * (wl - vl))
                    + fvl * (u - xl) * (u - wl) / ((vl - xl) * (vl - wl)))
        near_w, near_v = np.abs(u - wl) < np.abs(u - xl), np.abs(u - vl) < np.abs(u - xl)
        nearest = np.where(near_w & (np.abs(u - wl) <= np.abs(u - vl)), fwl, np.where(near_v, fvl, fxl))
        with np.errstate(invalid="ignore"):
            use_pred = np.isfinite(pred)
            guess = np.where(use_pred, pred, nearest)
            spread = np.where(use_pred, np.abs(pred - nearest), np.nan)
        fu = func(live, u, guess, spread)
        better = fu >= fxl
        # The bracket shrinks to the side of the best point; the three best points move along.
        a[live] = np.where(better, np.where(u >= xl, xl, al), np.where(u < xl, u, al))
        b[live] = np.where(better, np.where(u >= xl, bl, xl), np.where(u < xl, bl, u))
        second = ~better & ((fu >= fwl) | (wl == xl))
        third = ~better & ~second & ((fu >= fvl) | (vl == xl) | (vl == wl))
        v[live] = np.where(better | second, wl, np.where(third, u, vl))
        fv[live] = np.where(better | second, fwl, np.where(third, fu, fvl))
        w[live] = np.where(better, xl, np.where(second, u, wl))
        fw[live] = np.where(better, fxl, np.where(second, fu, fwl))
        x[live], fx[live] = np.where(better, u, xl), np.where(better, fu, fxl)
    return x, fx


def parabola_peak(x, f):
    """Per row of samples f(x) (any order), the vertex value of the parabola through the best
    sample and its neighbours in x (Brent's parabolic step), where that parabola peaks between
    them; -inf elsewhere. A peak between two samples rises above the best of them: a screen for
    whether a smooth function may exceed a level between its samples."""
    order = np.argsort(x, axis=1)
    x, f = np.take_along_axis(x, order, axis=1), nan_as_lowest(np.take_along_axis(f, order, axis=1))
    rows = np.arange(x.shape[0])
    i = np.clip(np.argmax(f, axis=1), 1, x.shape[1] - 2)
    d0, d2 = x[rows, i - 1] - x[rows, i], x[rows, i + 1] - x[rows, i]
    f0, f1, f2 = f[rows, i - 1], f[rows, i], f[rows, i + 1]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        s0, s2 = (f0 - f1) / d0, (f2 - f1) / d2  # the two chords' slopes
        curv = 2.0 * (s2 - s0) / (d2 - d0)  # the second derivative
        rise = s0 - 0.5 * curv * d0  # the slope at the best sample
        t = -rise / curv  # the vertex, from the best sample
        return np.where((curv < 0.0) & (t > d0) & (t < d2), f1 + 0.5 * rise * t, -np.inf)
