"""The generic vectorised finders (variantcmp.solver.finders) against scipy.optimize and numpy on
scalar functions with known answers."""

import numpy as np
import pytest

from variantcmp.solver.finders import parabola_peak


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
