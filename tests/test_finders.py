"""The generic vectorised finders (variantcmp.solver.finders) against scipy.optimize and numpy on
scalar functions with known answers: smooth, kinked, flat and discontinuous ones."""

import numpy as np
import pytest
from scipy.optimize import brentq, minimize_scalar

from variantcmp.solver.finders import (BREAK_EPS, EDGE_BISECT_STEPS, Family, bisect_root, brent_max, edge_root,
                                       golden_max, illinois_root, newton_secant_root, parabola_peak)

RNG = np.random.default_rng(15)
N = 200


def _falling(x, kind, r, k, jump):
    """Decreasing functions through a root: smooth, kinked at k, flat at the root (a triple
    root), and with a downward jump at k; numpy, one member per element."""
    return np.select([kind == 0, kind == 1, kind == 2],
                     [r + 2.0 - x**3 / 50.0 - x - (r + 2.0 - r**3 / 50.0 - r),  # root r, smooth
                      r - x + 0.6 * np.abs(x - k) - 0.6 * np.abs(r - k),  # root r, kink at k
                      -((x - r) ** 3)],  # root r, f' = f'' = 0 there
                     r - x - jump * (x >= k))  # kind 3: root r, or at k where the jump crosses zero


JUMPS = np.arange(-4.0, 5.0)  # where kind 3 jumps: one a unit apart, so a bracket narrower holds one at most


def _members():
    kind = np.arange(N) % 4
    r = RNG.uniform(-3.0, 3.0, N)
    k = np.where(kind == 3, RNG.choice(JUMPS[1:-1], N), r + RNG.uniform(-0.3, 0.3, N))  # a jump, or a kink near the root
    jump = RNG.uniform(0.5, 2.0, N)
    r = np.where(kind == 3, k + RNG.uniform(-0.4, 0.4, N), r)  # near the jump: some roots on it
    return kind, r, k, jump


def _scalar(i, kind, r, k, jump):
    return lambda x: float(_falling(np.array([x]), kind[i:i + 1], r[i:i + 1], k[i:i + 1], jump[i:i + 1])[0])


def test_illinois_root_against_brentq():
    # Reference: scipy.optimize.brentq (xtol 1e-12) on each member alone, brackets given either
    # way round (the climbing end first). The jumps are declared as breaks: a root on one comes
    # out within BREAK_EPS of it, where brentq closes in on the sign change too.
    kind, r, k, jump = _members()
    u, v = RNG.uniform(0.05, 0.25, N), RNG.uniform(0.05, 0.25, N)
    lo, hi = np.where(kind == 3, np.minimum(r, k), r) - u, np.where(kind == 3, np.maximum(r, k), r) + v
    flip = RNG.uniform(size=N) < 0.5  # x -> -x: increasing, the bracket (a, b) with a > b
    f = Family(lambda x, flip, *p: np.where(flip, _falling(-x, *p), _falling(x, *p)), flip, kind, r, k, jump)
    a, b = np.where(flip, -lo, lo), np.where(flip, -hi, hi)
    fa, fb = f(a), f(b)
    assert np.all(fa >= 0.0) and np.all(fb < 0.0)
    got = illinois_root(f, a, b, fa, fb, tol=1e-9, breaks=JUMPS)
    on_jump = 0
    for i in range(N):
        ref = brentq(_scalar(i, kind, r, k, jump), lo[i], hi[i], xtol=1e-12, maxiter=1000)
        ref = -ref if flip[i] else ref
        slack = 2.0 * BREAK_EPS if kind[i] == 3 else 1e-8
        assert got[i] == pytest.approx(ref, abs=slack), (i, kind[i])
        on_jump += kind[i] == 3 and abs(abs(ref) - k[i]) < 1e-6
    assert on_jump > 5  # roots on a jump were met


def test_illinois_root_without_breaks_still_brackets_a_jump():
    # Without the break declared the false position crawls, but the bracket keeps the sign
    # change: within the iterations it ends at the jump (brentq's answer too) to the tolerance.
    x0 = RNG.uniform(-1.0, 1.0, 50)
    f = Family(lambda x, x0: np.where(x < x0, 1.0, -1.0), x0)
    got = illinois_root(f, np.full(50, -2.0), np.full(50, 2.0), np.ones(50), -np.ones(50), tol=1e-9, max_iter=80)
    for i in range(50):
        ref = brentq(lambda x: 1.0 if x < x0[i] else -1.0, -2.0, 2.0, xtol=1e-12)
        assert got[i] == pytest.approx(ref, abs=1e-8)


def test_newton_secant_root_settles_near_guesses_only():
    # Reference: brentq. From guesses near the root, with the exact slope there, a member is
    # settled once a step is under max_step, and then lies within it of the root; from a guess
    # far off (slope taken there), three evaluations are not enough, and it says so.
    kind, r, _, _ = _members()
    smooth = np.flatnonzero(kind == 0)
    r = r[smooth]
    near = RNG.uniform(-0.3, 0.3, r.size)
    far = np.where(np.arange(r.size) % 5 == 0, 40.0, 0.0)
    guess = r + near + far
    f = Family(lambda x, r: r + 2.0 - x**3 / 50.0 - x - (r + 2.0 - r**3 / 50.0 - r), r)
    slope = -(3.0 * guess**2 / 50.0 + 1.0)
    root, settled, learnt = newton_secant_root(f, guess, slope, max_step=1e-3)
    assert settled[far == 0.0].mean() > 0.9 and not settled[far > 0.0].any()
    for i in np.flatnonzero(settled):
        ref = brentq(lambda x: float(f.subset([i])(np.array([x]))[0]), r[i] - 5.0, r[i] + 5.0, xtol=1e-12)
        assert root[i] == pytest.approx(ref, abs=1e-3)
        assert learnt[i] == pytest.approx(-(3.0 * ref**2 / 50.0 + 1.0), rel=0.05)  # the last secant's slope


@pytest.mark.parametrize("rising", [True, False])
def test_bisect_root_against_brentq(rising):
    # Reference: brentq on cos(x) - c x, which has one root on [0, 2] for c in (0, 1].
    c = RNG.uniform(0.1, 1.0, 100)
    sign = 1.0 if rising else -1.0
    got = bisect_root(lambda x: sign * (c * x - np.cos(x)), np.zeros(100), np.full(100, 2.0), rising, 50)
    for i in range(100):
        assert got[i] == pytest.approx(brentq(lambda x: c[i] * x - np.cos(x), 0.0, 2.0, xtol=1e-14), abs=1e-12)


def test_edge_root_against_brentq_and_where_the_data_end():
    # Reference: brentq on cos(x) - c x (one root on [0, 2] for c in (0, 1]), searched from 0
    # (inside, f >= 0) towards an end: 2 (the root between), 0.3 x root (f >= 0 there: the end
    # itself), or 2 with the function undefined (NaN) beyond a cut below the root, where the edge
    # is the cut, to the bisection's 2 / 2^22, on its near side (a false position cannot use a
    # NaN or -inf end).
    c = RNG.uniform(0.1, 1.0, 90)
    roots = np.array([brentq(lambda x: c[i] * x - np.cos(x), 0.0, 2.0, xtol=1e-14) for i in range(90)])
    kind = np.arange(90) % 3
    cut = np.where(kind == 2, 0.8 * roots, np.inf)
    f = Family(lambda x, c, cut: np.where(x > cut, np.nan, np.cos(x) - c * x), c, cut)
    end = np.where(kind == 1, 0.3 * roots, 2.0)
    got = edge_root(f, np.zeros(90), f(np.zeros(90)), end, 1e-10)
    expected = np.select([kind == 0, kind == 1], [roots, end], cut)
    slack = np.where(kind == 2, 2.0 / 2**EDGE_BISECT_STEPS, 1e-9)
    assert np.all(np.abs(got - expected) <= slack)
    assert np.all(got[kind == 2] <= cut[kind == 2])  # never where the function has no value


def _peaked(x, kind, c, w):
    """Functions with one maximum at c: smooth, kinked, flat on [c - w, c + w], at a bracket end."""
    return np.select([kind == 0, kind == 1, kind == 2],
                     [-(x - c) ** 2 + 0.3 * np.sin(x - c) * (x - c) ** 2, -np.abs(x - c) - 0.2 * (x - c),
                      -np.maximum(np.abs(x - c) - w, 0.0)], x)


def _maxima_members():
    kind = np.arange(N) % 4
    c = RNG.uniform(0.3, 0.7, N)
    w = RNG.uniform(0.01, 0.1, N)
    return kind, c, w


def _reference_maximum(i, kind, c, w):
    """scipy.optimize.minimize_scalar (bounded Brent, xatol 1e-10) on [0, 1]: (x, f)."""
    res = minimize_scalar(lambda x: -float(_peaked(np.array([x]), kind[i:i + 1], c[i:i + 1], w[i:i + 1])[0]),
                          bounds=(0.0, 1.0), method="bounded", options={"xatol": 1e-10})
    return res.x, -res.fun


def test_golden_max_against_minimize_scalar():
    # The maximum of each member on [0, 1] (kind 3: f = x, at the end): no lower than scipy's,
    # and where it is unique, at scipy's point to the section's resolution.
    kind, c, w = _maxima_members()
    x, fx = golden_max(lambda x: _peaked(x, kind, c, w), np.zeros(N), np.ones(N), 60)
    for i in range(N):
        ref_x, ref_f = _reference_maximum(i, kind, c, w)
        assert fx[i] >= ref_f - 1e-9, i
        if kind[i] != 2:
            assert x[i] == pytest.approx(ref_x, abs=1e-5), i
        else:
            assert abs(x[i] - c[i]) <= w[i] + 1e-9  # anywhere on the flat top


def test_brent_max_against_minimize_scalar():
    # The same functions started from an 8-point grid (the best point's neighbours bracket the
    # maximum): no lower than scipy's; unique maxima at scipy's point within the tolerance.
    kind, c, w = _maxima_members()
    grid = np.tile(np.linspace(0.0, 1.0, 8), (N, 1))
    calls = []

    def func(rows, x, guess, spread):
        calls.append(rows.size)
        assert guess.shape == x.shape == spread.shape
        return _peaked(x, kind[rows], c[rows], w[rows])

    x, fx = brent_max(func, grid, _peaked(grid, kind[:, None], c[:, None], w[:, None]), 60, 1e-7)
    for i in range(N):
        ref_x, ref_f = _reference_maximum(i, kind, c, w)
        assert fx[i] >= ref_f - 1e-6, i  # within the tolerance in x (the slopes are about 1)
        if kind[i] != 2:
            assert x[i] == pytest.approx(ref_x, abs=1e-5), i
    assert calls[-1] < N  # rows drop out as they converge


def test_parabola_peak_between_samples_against_numpy_polyfit():
    # The far-side check's estimate of a peak between samples: the vertex of the parabola through
    # the best sample and its neighbours. Reference: numpy.polyfit (degree 2) through those three
    # points; samples given out of order; no vertex (-inf) where the parabola does not peak
    # between the neighbours.
    rng = np.random.default_rng(2)
    x = np.sort(rng.uniform(0.5, 0.7, (200, 9)), axis=1)
    top, height, width = rng.uniform(0.52, 0.68, 200), rng.uniform(-0.05, 0.05, 200), rng.uniform(5.0, 400.0, 200)
    f = height[:, None] - width[:, None] * (x - top[:, None]) ** 2 - 0.02 * np.abs(x - 0.6)  # peaks, not parabolas
    shuffle = rng.permuted(np.tile(np.arange(9), (200, 1)), axis=1)
    got = parabola_peak(np.take_along_axis(x, shuffle, axis=1), np.take_along_axis(f, shuffle, axis=1))
    for r in range(200):
        i = int(np.clip(np.argmax(f[r]), 1, 7))
        c2, c1, c0 = np.polyfit(x[r, i - 1:i + 2], f[r, i - 1:i + 2], 2)
        vertex = -c1 / (2.0 * c2)
        if c2 < 0.0 and x[r, i - 1] < vertex < x[r, i + 1]:
            assert got[r] == pytest.approx(c0 - c1 * c1 / (4.0 * c2), rel=1e-9, abs=1e-12)
        else:
            assert got[r] == -np.inf
    assert np.isfinite(got).sum() > 100
