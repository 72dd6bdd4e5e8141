"""The inverse answers' stages alone: the thrust weight against numpy and scipy, the lift weights
against the ceilings' closed forms, the speed search against scipy's bounded Brent, the best
speed against dense Mach scans, and the day search where the ceiling does not fall with
temperature (every model checked for it)."""

import dataclasses
import math

import numpy as np
import pytest
from scipy.optimize import brentq, minimize_scalar

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp.cases import FT, build_cases
from variantcmp.catalogue import demo_catalogue_paths, load_catalogue
from variantcmp.solver import ClimbPhysics, solve_ceilings
from variantcmp.solver.heaviest import heaviest_fixed_mach, objective, solve_heaviest, weights_at_mach
from variantcmp.solver.hottest import SCAN_DAYS_C, hottest_fixed_mach, solve_hottest
from variantcmp.solver.level import HOLDS_AT_WARMEST, NOT_MONOTONE, lift_limited_weights_n, speed_range_at_level
from variantcmp.solver.limits import closed_form_ceilings_m
from variantcmp.solver.speed_search import MACH_TOL, best_speed_search
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import WeightSpec

G = 9.80665
RNG = np.random.default_rng(16)
JET = dict(cl_max=1.6, mmo=0.86, sweep_deg=27.0, thickness_ratio=0.11, korn_factor=0.93)


def _cases(cat, weights_kg, devs, climbs, mach):
    pairs = [(v.id, e) for v in cat.variants.values() for e in v.engine_options]
    cases, _ = build_cases(cat, pairs, lambda v: list(weights_kg), devs, climbs, mach, 1.3)
    return cases


# --- the thrust weight ----------------------------------------------------------------------------

def test_the_thrust_weight_is_the_quadratic_root_numpy_finds(tmp_path):
    # Reference library: numpy.roots on (K/qS) W^2 + c W - (F - q S CD0) = 0, with F, q S and
    # the climb speed factor from the same weight-free terms (no compressibility drag).
    cat = write_catalogue(tmp_path / "c.toml", [engine_spec()], [variant_spec(cl_max=2.0, mmo=0.95)])
    n = 60
    cases = _cases(cat, [40_000.0], [-20.0, 0.0, 25.0], [0.0, 300.0, 800.0], "cruise").repeat(n // 9 + 1).take(
        slice(0, n))
    cases = cases.with_mach(RNG.uniform(0.4, 0.9, n))
    h = RNG.uniform(5_000.0, 13_000.0, n)
    phys = ClimbPhysics(cases)
    _, w_thrust, _, _ = weights_at_mach(phys, h, cases.mach)
    thrust, q_s, sf = phys.level_terms(h, cases.mach)
    for i in range(n):
        c = cases.climb_ms[i] / sf[i]
        roots = np.roots([cases.k[i] / q_s[i], c, -(thrust[i] - q_s[i] * cases.cd0[i])])
        if thrust[i] > q_s[i] * cases.cd0[i]:
            assert w_thrust[i] == pytest.approx(roots.real.max(), abs=0.05), i
        else:
            assert w_thrust[i] <= 0.0


def test_the_thrust_weight_with_compressibility_drag_matches_brentq(tmp_path):
    # Reference library: scipy.optimize.brentq on an independent scalar excess force F - D(W)
    # with Korn's critical Mach and Lock's fourth-power rise (Mason, Configuration Aerodynamics,
    # ch. 7, written out here), over speeds where the drag rise matters.
    cat = write_catalogue(tmp_path / "c.toml", [engine_spec(static_thrust_kn=90.0)], [variant_spec(**JET)])
    n = 40
    cases = _cases(cat, [40_000.0], [0.0], [0.0], "cruise").repeat(n).with_mach(np.linspace(0.7, 0.86, n))
    h = np.linspace(9_000.0, 12_500.0, n)
    res = heaviest_fixed_mach(cases, h, cases.mach)
    thrust, q_s, _ = ClimbPhysics(cases).level_terms(h, cases.mach)
    v = cat.variants["a1"]
    cos = math.cos(math.radians(v.sweep_deg))

    def excess(w, i):
        cl = w / q_s[i]
        m_crit = v.korn_factor / cos - v.thickness_ratio / cos**2 - cl / (10 * cos**3) - (0.1 / 80) ** (1 / 3)
        cdw = 20 * max(cases.mach[i] - m_crit, 0.0) ** 4
        return thrust[i] - q_s[i] * (v.cd0 + v.k * cl * cl + cdw)

    rises = 0
    for i in range(n):
        ref = brentq(excess, 1.0, 5e6, args=(i,), xtol=1e-6)
        assert res.thrust_kg[i] == pytest.approx(ref / G, abs=0.01), i
        rises += excess(ref, i) != thrust[i] - q_s[i] * (v.cd0 + v.k * (ref / q_s[i]) ** 2)
    assert rises > n // 2  # the drag rise is in play for most of them


def test_the_lift_weights_put_the_buffet_and_stall_ceilings_on_the_level(demo):
    # Lift equilibrium both ways (Anderson, Introduction to Flight, eq. 4.83): at the weight the
    # closed form gives, the ceilings' closed forms put buffet onset and stall on the level.
    cases = _cases(demo, [30_000.0], [0.0], [300.0], "cruise")
    h = np.fmin(cases.certified_m, 12_500.0) * RNG.uniform(0.7, 1.0, len(cases))
    w_buffet, w_stall = lift_limited_weights_n(cases, h, cases.mach)
    for weights, column in ((w_buffet, 0), (w_stall, 1)):
        at = dataclasses.replace(cases, weight_kg=weights / G)
        ceiling = closed_form_ceilings_m(at, cases.mach)[column]
        has = np.isfinite(weights)
        assert has.sum() >= len(cases) // 2
        np.testing.assert_allclose(ceiling[has], h[has], atol=1e-6)


def test_the_speed_range_at_a_level_ends_where_cas_reaches_vmo(demo):
    # Subsonic pitot relation (Anderson, Introduction to Flight, sec. 4.12, written out here):
    # at the range's top the CAS at the level is VMO.
    cases = _cases(demo, [30_000.0], [0.0], [300.0], "best")
    h = np.full(len(cases), 3_000.0)
    _, high = speed_range_at_level(cases, h)
    p = 101_325.0 * (1 - 0.0065 * 3_000.0 / 288.15) ** 5.25588
    qc = p * ((1 + 0.2 * high**2) ** 3.5 - 1)
    cas = 340.294 * np.sqrt(5 * ((qc / 101_325.0 + 1) ** (2 / 7) - 1))
    cut = high < cases.mach_high
    assert cut.any()
    np.testing.assert_allclose(cas[cut], cases.vmo_ms[cut], rtol=1e-5)


# --- the speed search -----------------------------------------------------------------------------

class _Scalar:
    """Objectives of one variable per case for the speed search: smooth, two limits crossing,
    two humps meeting in a dip at a kink (as a thrust table's Mach column can make), and a feasible band (wider than a grid step: a narrower
    one is the search's known limit) with -inf outside it."""

    def __init__(self, kind, a, b):
        self.kind, self.a, self.b = kind, a, b

    def __call__(self, rows, x):
        k, a, b = self.kind[rows], self.a[rows], self.b[rows]
        smooth = -(x - a) ** 2
        crossing = np.minimum(3.0 * (x - 0.3), -2.0 * (x - b)) + 0.1 * np.sin(7 * x)
        humps = np.where(x < 0.5, 40.0 * ((0.5 - a) ** 2 - (x - a) ** 2), 40.0 * ((0.5 - b) ** 2 - (x - b) ** 2))
        band = np.where(np.abs(x - a) < 0.05, 1.0 - (x - a) ** 2, -np.inf)
        return np.select([k == 0, k == 1, k == 2], [smooth, crossing, humps], band)

    def subset(self, rows):
        return _Scalar(self.kind[rows], self.a[rows], self.b[rows])


def test_the_speed_search_matches_scipy_where_it_applies():
    # Reference library: scipy.optimize.minimize_scalar (bounded), on the piece where each
    # function's maximum lies; the two humps meet in a dip at a kink (0.5, given as one), either
    # hump the higher, often on the far side of the kink from the best grid point.
    rng = np.random.default_rng(16)
    n = 400
    kind = np.arange(n) % 4
    a = np.where(kind == 2, rng.uniform(0.40, 0.47, n), rng.uniform(0.35, 0.75, n))
    b = np.where(kind == 2, rng.uniform(0.53, 0.60, n), rng.uniform(0.4, 0.8, n))
    f = _Scalar(kind, a, b)
    low, high = np.full(n, 0.2), np.full(n, 0.85)
    kinks = np.where(kind[:, None] == 2, 0.5, np.nan)
    x, fx = best_speed_search(f, low, high, kinks)
    for i in range(n):
        one = _Scalar(kind[i:i + 1], a[i:i + 1], b[i:i + 1])
        pieces = [(0.2, 0.5), (0.5, 0.85)] if kind[i] == 2 else [(a[i] - 0.0499, a[i] + 0.0499)] if kind[i] == 3 \
            else [(0.2, 0.85)]
        ref = max(-minimize_scalar(lambda m: -one(np.array([0]), np.array([m]))[0], bounds=piece, method="bounded",
                                   options={"xatol": 1e-9}).fun for piece in pieces)
        assert fx[i] >= ref - 10.0 * MACH_TOL, (i, kind[i], a[i], b[i], x[i])  # slopes up to 5 at a crossing
        assert fx[i] == pytest.approx(f(np.array([i]), x[i:i + 1])[0])


@pytest.mark.parametrize("path", demo_catalogue_paths(), ids=lambda p: p.stem)
def test_the_best_speed_heaviest_weight_is_the_best_of_a_dense_mach_scan(path):
    # By brute force, no external source: the heaviest weight at 601 speeds over each case's
    # range at the level, then a golden-section search around the best of them. The search must
    # be no lighter than that (to 0.2 kg) and give the same weight at its own Mach.
    from variantcmp.solver.finders import golden_max

    cat = load_catalogue(path)
    cases = _cases(cat, [1.0], np.arange(-15.0, 46.0, 15.0), [0.0, 100.0, 300.0, 500.0], "best")
    h = cases.certified_m - RNG.uniform(0.0, 16_000.0, len(cases)) * FT  # up to 16,000 ft below each's ceiling
    res = solve_heaviest(cases, h)
    low, high = speed_range_at_level(cases, h)
    k = 601
    machs = low[:, None] + (high - low)[:, None] * np.linspace(0.0, 1.0, k)[None, :]
    scan = objective(*weights_at_mach(ClimbPhysics(cases.repeat(k)), np.repeat(h, k), machs.ravel())).reshape(-1, k)
    j, r = np.argmax(scan, axis=1), np.arange(len(cases))
    phys = ClimbPhysics(cases)
    _, refined = golden_max(lambda m: objective(*weights_at_mach(phys, h, m)), machs[r, np.maximum(j - 1, 0)],
                            machs[r, np.minimum(j + 1, k - 1)], 40)
    dense = np.maximum(refined, scan[r, j]) / G
    found = np.isfinite(res.weight_kg)
    assert found.sum() > len(cases) // 2
    assert np.all(res.weight_kg[found] >= dense[found] - 0.2)  # MACH_TOL at a crossing of two limits: 0.1 kg
    again = heaviest_fixed_mach(cases.take(np.flatnonzero(found)), h[found], res.mach[found])
    np.testing.assert_allclose(again.weight_kg, res.weight_kg[found], atol=1e-6)


# --- the warmest day ------------------------------------------------------------------------------

MODELS = {
    "density-lapse": engine_spec(lapse_exponent=1.2, lapse_exponent_above_tropopause=1.0),
    "density-lapse flat rated": engine_spec(flat_rate_isa_dev_c=15.0, hot_day_loss_per_c=0.008),
    "turbofan": {"id": "e1", "model": "turbofan", "static_thrust_kn": 90.0, "throttle_ratio": 1.0},
    "turbofan flat rated": {"id": "e1", "model": "turbofan", "static_thrust_kn": 90.0, "throttle_ratio": 1.06,
                            "flat_rate_isa_dev_c": 10.0, "hot_day_loss_per_c": 0.009},
    "table flat rated": {"id": "e1", "model": "table", "static_thrust_kn": 70.0,
                         "table_altitude_ft": [-2000.0, 0.0, 20_000.0, 40_000.0, 60_000.0],
                         "table_mach": [0.0, 0.5, 0.9],
                         "table_thrust_fraction": [[1.07, 0.9, 0.95], [1.0, 0.84, 0.88], [0.46, 0.39, 0.42],
                                                   [0.19, 0.16, 0.18], [0.07, 0.06, 0.07]],
                         "flat_rate_isa_dev_c": 15.0, "hot_day_loss_per_c": 0.007},
}


@pytest.mark.parametrize("model", list(MODELS))
@pytest.mark.parametrize("mach", [0.74, "best"])
def test_the_ceiling_falls_with_temperature_in_every_model(tmp_path, model, mach):
    # Physics facts the warmest-day search relies on (Anderson, Aircraft Performance and Design,
    # ch. 5; the lapse models' sources in variantcmp.thrust): at a fixed pressure altitude and
    # Mach a warmer day lowers thrust or, below a flat rating, keeps it, and lowers the climb
    # speed factor V (T_ISA/T) f; the pressure limits do not move. So the maximum altitude never
    # rises with temperature (to the solvers' tolerance), from ISA-40 to ISA+50.
    cat = write_catalogue(tmp_path / "m.toml", [MODELS[model]], [variant_spec(**JET)])
    devs = np.arange(-40.0, 50.1, 5.0)
    frame = ceilings_table(cat, Conditions(weights=(WeightSpec(36_000.0, "kg"),), isa_devs_c=tuple(devs), mach=mach,
                                           climb_fpm=(0.0, 300.0)))
    for climb in (0.0, 300.0):
        alt = frame.filter(frame["climb_fpm"] == climb)["max_altitude_ft"].to_numpy().astype(float)
        assert np.isfinite(alt).all()
        assert np.all(np.diff(alt) <= (0.05 if mach == "best" else 0.01)), (model, climb, alt)


def test_below_a_flat_rating_the_ceiling_is_flat_and_the_warmest_day_lies_above_it(tmp_path):
    # Flat rating (Torenbeek, Synthesis of Subsonic Airplane Design, app. H; common practice for
    # the loss above it): thrust is held up to the flat-rate deviation, so at zero residual climb
    # the ceiling does not change with the day up to there, and the first crossing from the cold
    # side lies above it.
    cat = write_catalogue(tmp_path / "f.toml", [MODELS["density-lapse flat rated"]], [variant_spec(**JET)])
    frame = ceilings_table(cat, Conditions(weights=(WeightSpec(36_000.0, "kg"),), isa_devs_c=(-30.0, 0.0, 15.0),
                                           mach=0.74, climb_fpm=(0.0,)))
    alt = frame["max_altitude_ft"].to_list()
    assert alt[0] == pytest.approx(alt[1], abs=0.01) and alt[1] == pytest.approx(alt[2], abs=0.01)
    cases = _cases(cat, [36_000.0], [0.0], [0.0], 0.74)
    res = hottest_fixed_mach(cases, np.array([alt[0] * FT - 150.0]), cases.mach)
    assert 15.0 < res.isa_dev_c[0] < 30.0


def test_where_the_data_make_the_ceiling_rise_with_temperature_the_first_crossing_is_reported(tmp_path):
    # No catalogue can do this (a negative hot-day loss is refused), so the data are changed in
    # the case set itself: thrust that rises above the flat-rate deviation. The level holds cold,
    # fails from some deviation below the flat rating (only the climb speed factor falls there),
    # and holds again when the thrust rises: the answer is the first crossing from the cold side
    # (checked against brentq on the excess in that bracket) and NOT_MONOTONE says it holds again.
    from variantcmp.solver.hottest import DayExcess

    cat = write_catalogue(tmp_path / "f.toml", [MODELS["density-lapse flat rated"]], [variant_spec(**JET)])
    cases = _cases(cat, [36_000.0], [0.0], [800.0], 0.74)
    cases = dataclasses.replace(cases, flat_rate_isa_dev_c=np.array([20.0]), hot_day_loss_per_c=np.array([-0.02]))
    day = DayExcess(cases, np.array([0.0]), cases.mach)
    # The level: where the excess at ISA-10 and ISA+10 straddles zero (the climb speed factor).
    lo, hi = 8_000.0, 13_000.0
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        day = DayExcess(cases, np.array([mid]), cases.mach)
        lo, hi = (mid, hi) if day(np.array([0.0]))[0] >= 0.0 else (lo, mid)
    level = np.array([lo])
    day = DayExcess(cases, level, cases.mach)
    assert day(np.array([-40.0]))[0] >= 0.0 > day(np.array([10.0]))[0] and day(np.array([50.0]))[0] >= 0.0
    res = hottest_fixed_mach(cases, level, cases.mach)
    assert res.flags[0] & NOT_MONOTONE and res.holds_again_c[0] in SCAN_DAYS_C
    j = np.argmax([day(np.array([d]))[0] < 0.0 for d in SCAN_DAYS_C])
    ref = brentq(lambda d: day(np.array([d]))[0], SCAN_DAYS_C[j - 1], SCAN_DAYS_C[j], xtol=1e-8)
    assert res.isa_dev_c[0] == pytest.approx(ref, abs=1e-3)


def test_the_best_speed_warmest_day_is_no_cooler_than_at_any_grid_speed(demo):
    # The definition, by brute force, no external source: the warmest day at best speed is at
    # least the warmest day at each of 25 fixed speeds over the range (to 0.001 deg C).
    pairs = [(v.id, e) for v in demo.variants.values() for e in v.engine_options]
    cases, _ = build_cases(demo, pairs, lambda v: [0.8 * v.mtow_kg], [0.0], [0.0, 300.0], "best", 1.3)
    h = 0.88 * cases.certified_m
    best = solve_hottest(cases, h)
    warmest = np.where(best.flags & HOLDS_AT_WARMEST, np.inf, best.isa_dev_c)
    low, high = speed_range_at_level(cases, h)
    for m in np.linspace(0.0, 1.0, 25):
        fixed = hottest_fixed_mach(cases, h, low + m * (high - low))
        both = np.isfinite(fixed.isa_dev_c)
        assert np.all(warmest[both] >= fixed.isa_dev_c[both] - 1e-3)
    # Not vacuous: every case has a warmest day or holds on the warmest day searched, and a
    # third of them (jets and turboprops alike) have a warmest day to compare.
    assert np.all(np.isfinite(best.isa_dev_c) | (best.flags & HOLDS_AT_WARMEST > 0))
    assert np.isfinite(best.isa_dev_c).sum() >= len(cases) // 3
    forward = solve_ceilings(cases.with_isa_dev(best.isa_dev_c))
    ok = np.isfinite(best.isa_dev_c)
    np.testing.assert_allclose(forward.max_altitude_m[ok] / FT, h[ok] / FT, atol=1.0)
