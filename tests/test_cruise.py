"""Cruise answers (fuel flow, specific range, optimum altitude, cruise level, MRC and LRC) against
closed forms, an independent scalar implementation with scipy, a hand calculation, properties
(hypothesis) and round trips with ``ceilings``."""

import dataclasses
import math

import numpy as np
import polars as pl
import pytest
from ambiance import Atmosphere
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.interpolate import RegularGridInterpolator
from scipy.optimize import brentq, minimize_scalar

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp import fuel
from variantcmp.atmosphere import isa_pressure_pa, isa_state
from variantcmp.cases import build_cases
from variantcmp.solver import solve_ceilings
from variantcmp.solver import cruise as cr
from variantcmp.solver.cruise_speed import LRC_SHARE, cruise_speeds
from variantcmp.solver.fuel_flow import CruisePhysics
from variantcmp.table import Conditions, ceilings_table
from variantcmp.table.cruise import cruise_table, speed_table
from variantcmp.units import WeightSpec

FT, G, R = 0.3048, 9.80665, 287.05287
HYPO = settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


def _pct(*values):
    return tuple(WeightSpec(v, "%mtow") for v in values)


def _kg(*values):
    return tuple(WeightSpec(v, "kg") for v in values)


@pytest.fixture(scope="module")
def clean(tmp_path_factory):
    """A catalogue of our own without compressibility data: a parabolic polar (K = 1/(pi 9 0.8))
    and a TSFC c = (a + b M) sqrt(theta), one engine with b = 0 and one with b = 12."""
    path = tmp_path_factory.mktemp("cruise") / "clean.toml"
    engines = [engine_spec(id="flat", static_thrust_kn=90.0, tsfc_mg_per_ns=15.0),
               engine_spec(id="slope", static_thrust_kn=90.0, tsfc_mg_per_ns=10.0, tsfc_mach_slope=12.0)]
    return write_catalogue(path, engines, [variant_spec(engine_options=["flat", "slope"])])


def _cruise(catalogue, weights_kg, devs, mach, pairs=None):
    pairs = pairs or [(v.id, e) for v in catalogue.variants.values() for e in v.engine_options]
    cases, _ = build_cases(catalogue, pairs, lambda v: weights_kg, devs, [300.0], mach, 1.3)
    return cases, CruisePhysics.of(catalogue, cases)


# --- closed forms ------------------------------------------------------------------------------

def test_optimum_altitude_is_the_closed_form_on_any_day(clean):
    # The closed form: with c = (a + b M) sqrt(theta) the specific range at a fixed Mach is
    # V / (c D) = M a0 / ((a + b M) D): the sqrt(theta) of the true airspeed and of the TSFC
    # cancel, so it is greatest where D is least, at CL = sqrt(CD0/K) (Anderson, Aircraft
    # Performance and Design, 1999, sec. 5.4): p_opt = W / (0.7 M^2 S sqrt(CD0/K)), whatever the
    # ISA deviation. Pressure -> pressure altitude by ambiance (ICAO standard atmosphere, PyPI).
    v = clean.variants["a1"]
    weights = [26_000.0, 33_000.0, 40_000.0]
    worst = 0.0
    for mach in (0.45, 0.6, 0.75):
        cases, cruise = _cruise(clean, weights, [-20.0, 0.0, 25.0], mach)
        optimum_m, _, flags = cr.optimum_altitude(cruise, cases.mach)
        assert not flags.any()
        p_opt = cases.weight_kg * G / (0.7 * mach**2 * v.wing_area_m2 * math.sqrt(v.cd0 / v.k))
        expected_m = Atmosphere.from_pressure(p_opt).H
        worst = max(worst, float(np.max(np.abs(optimum_m - expected_m))) / FT)
    print(f"\nclosed-form optimum: worst difference {worst:.4f} ft")
    assert worst < 25.0


def test_mrc_at_a_level_is_where_cl_is_sqrt_cd0_over_3k(clean):
    # The classic jet range result (Anderson, Aircraft Performance and Design, 1999, sec. 5.13):
    # with a constant TSFC (b = 0) at a fixed altitude the specific range V / (c D) is greatest
    # where CL^(1/2)/CD is, at CL = sqrt(CD0 / (3K)); M = sqrt(W / (0.7 p S CL)).
    v = clean.variants["a1"]
    worst = 0.0
    for level_ft in (25_000.0, 31_000.0, 37_000.0):
        cases, cruise = _cruise(clean, [28_000.0, 36_000.0], [0.0, 20.0], 0.6, pairs=[("a1", "flat")])
        speeds = cruise_speeds(cruise, np.full(len(cases), level_ft * FT))
        p = Atmosphere.from_pressure(isa_pressure_pa(level_ft * FT)).pressure  # the same pressure, by ambiance
        cl = math.sqrt(v.cd0 / (3.0 * v.k))
        expected = np.sqrt(cases.weight_kg * G / (0.7 * p * v.wing_area_m2 * cl))
        assert np.all(speeds.mrc_bound == -1)  # a free maximum, not a bound
        worst = max(worst, float(np.max(np.abs(speeds.mrc_mach - expected))))
    print(f"\nclosed-form MRC: worst Mach difference {worst:.2e}")
    assert worst < 0.002


def _scalar_sr(v, e, weight_kg, level_ft, dev, mach):
    """Specific range (m/kg) written out independently: the tropospheric ISA of ISO 2533
    (T = 288.15 - 0.0065 h, p = 101325 (T/288.15)^(g/(R 0.0065))), the parabolic polar with the
    Korn/Lock wave drag (Malone & Mason 1995; Lock's fourth power), c = (a + b M) sqrt(theta)."""
    h = level_ft * FT
    t_isa = 288.15 - 0.0065 * h
    p = 101325.0 * (t_isa / 288.15) ** (G / (R * 0.0065))
    t = t_isa + dev
    qs = 0.7 * p * mach * mach * v.wing_area_m2
    cl = weight_kg * G / qs
    cd = v.cd0 + v.k * cl * cl
    if v.korn_factor is not None:
        c = math.cos(math.radians(v.sweep_deg))
        m_crit = v.korn_factor / c - v.thickness_ratio / c**2 - cl / (10 * c**3) - (0.1 / 80) ** (1 / 3)
        cd += 20.0 * max(mach - m_crit, 0.0) ** 4
    tsfc = (e.tsfc_mg_per_ns + e.tsfc_mach_slope * mach) * math.sqrt(t / 288.15) * 1e-6
    return mach * math.sqrt(1.4 * R * t) / (tsfc * qs * cd)


@pytest.mark.parametrize("pair, weight_kg, level_ft, dev", [
    (("v88", "ossel-86"), 40_000.0, 33_000.0, 0.0), (("v70", "ossel-78"), 33_000.0, 35_000.0, 15.0),
    (("v104", "brannick-74"), 46_000.0, 31_000.0, -10.0), (("v88", "ossel-78"), 44_000.0, 29_000.0, 25.0)])
def test_mrc_and_lrc_against_scipy_on_a_scalar_implementation(demo, pair, weight_kg, level_ft, dev):
    # MRC by scipy.optimize.minimize_scalar (bounded Brent) and LRC by scipy.optimize.brentq on the
    # scalar specific range above, compressibility included; LRC: the faster Mach at 99 % of the
    # maximum specific range (common practice, no source). Levels below the tropopause, speeds
    # where no bound holds them (checked).
    v, e = demo.variants[pair[0]], demo.engines[pair[1]]
    cases, cruise = _cruise(demo, [weight_kg], [dev], 0.7, pairs=[pair])
    speeds = cruise_speeds(cruise, np.array([level_ft * FT]))
    assert speeds.mrc_bound[0] == -1 and speeds.lrc_bound[0] == -1
    sr = lambda m: _scalar_sr(v, e, weight_kg, level_ft, dev, m)  # noqa: E731
    best = minimize_scalar(lambda m: -sr(m), bounds=(0.4, 0.8), method="bounded", options={"xatol": 1e-9})
    lrc = brentq(lambda m: sr(m) - LRC_SHARE * sr(best.x), best.x, 0.95, xtol=1e-10)
    assert speeds.mrc_mach[0] == pytest.approx(best.x, abs=0.002)
    assert speeds.lrc_mach[0] == pytest.approx(lrc, abs=0.002)
    assert speeds.mrc_sr[0] == pytest.approx(sr(best.x), rel=1e-6)
    print(f"\n{pair}: MRC {speeds.mrc_mach[0]:.5f} vs {best.x:.5f}, LRC {speeds.lrc_mach[0]:.5f} vs {lrc:.5f}")


def test_fuel_flow_and_specific_range_by_hand(clean):
    # Hand calculation (ISO 2533 ISA; the model) at FL350 ISA, M0.70, 36,000 kg, on the
    # clean variant (S 80 m2, CD0 0.022, K = 1/(pi 9 0.8) = 0.044210) with a = 10, b = 10 mg/(N s):
    #   h = 10,668 m, T = 288.15 - 0.0065 h = 218.808 K, p = 101325 (T/288.15)^5.25588 = 23,842.3 Pa
    #   a = sqrt(1.4 R T) = 296.535 m/s, V = 0.7 a = 207.575 m/s
    #   q S = 0.7 p M^2 S = 654,232 N, CL = 36,000 x 9.80665 / q S = 0.53962
    #   CD = 0.022 + K CL^2 = 0.034874, D = q S CD = 22,815 N
    #   c = (10 + 10 x 0.7) sqrt(218.808 / 288.15) = 14.814 mg/(N s)
    #   fuel flow = c D = 0.33799 kg/s = 1,216.8 kg/h; SR = V / FF = 614.15 m/kg = 331.6 NM/t.
    path = clean.path.parent / "hand.toml"
    cat = write_catalogue(path, [engine_spec(id="e1", static_thrust_kn=90.0, tsfc_mg_per_ns=10.0,
                                             tsfc_mach_slope=10.0)], [variant_spec()])
    row = speed_table(cat, Conditions(weights=_kg(36_000.0), mach=0.7), [35_000.0], None).row(0, named=True)
    assert row["fuel_flow_kg_h"] == pytest.approx(1216.8, rel=0.005)
    assert row["specific_range_nm_per_t"] == pytest.approx(331.6, rel=0.005)


def test_table_tsfc_against_scipy_interpolation(demo):
    # The TSFC table engine: fuel flow = c_ISA(h, M) sqrt(T / T_ISA) x drag, c_ISA by
    # scipy.interpolate.RegularGridInterpolator (linear) on the catalogue's table.
    e = demo.engines["brannick-84t"]
    ref = RegularGridInterpolator((np.array(e.tsfc_table_altitude_ft), np.array(e.tsfc_table_mach)),
                                  np.array(e.tsfc_table_mg_per_ns))
    cases, cruise = _cruise(demo, [42_000.0], [0.0, 20.0], 0.74, pairs=[("v88", "brannick-84t")])
    for level_ft in (23_500.0, 36_100.0):
        h = np.full(len(cases), level_ft * FT)
        p = isa_pressure_pa(h)
        t_isa = isa_state(h)[0]
        flow = cruise.fuel_flow_kg_s(p, cases.mach, h)
        drag = cruise.phys.drag_n(h)
        c = ref([[level_ft, 0.74]])[0] * np.sqrt((t_isa + cases.isa_dev_c) / t_isa) * 1e-6
        np.testing.assert_allclose(flow, c * drag, rtol=1e-10)


def test_fuel_units_and_forms():
    # 1 kg/kWh = 1 / 3.6e6 kg/(W s) (SI); PSFC and TSFC scale with sqrt(T / 288.15 K) (the
    # catalogue's documented forms); 1 (lb/h)/lbf = 28.33 mg/(N s) (0.45359237 kg / 3600 s /
    # 4.4482216 N, exact unit definitions).
    assert fuel.psfc_kg_per_ws(288.15, 0.3) == pytest.approx(0.3 / 3.6e6)
    assert fuel.psfc_kg_per_ws(216.65, 0.3) == pytest.approx(0.3 / 3.6e6 * math.sqrt(216.65 / 288.15))
    assert fuel.tsfc_kg_per_ns(0.8, 216.65, 10.0, 10.0) == pytest.approx(18e-6 * math.sqrt(216.65 / 288.15))
    assert 0.45359237 / 3600 / 4.4482216 * 1e6 == pytest.approx(28.33, abs=0.01)
    assert fuel.tsfc_from_isa_kg_per_ns(15.0, 250.0, 230.0) == pytest.approx(15e-6 * math.sqrt(250 / 230))


# --- properties --------------------------------------------------------------------------------

@HYPO
@given(st.floats(0.6, 0.95), st.floats(0.02, 0.2), st.floats(20_000.0, 41_000.0), st.floats(-20.0, 30.0),
       st.floats(0.6, 0.8))
def test_specific_range_falls_as_weight_rises_at_a_level(demo, fraction, more, level_ft, dev, mach):
    # More weight needs more lift, so more drag at the same level and Mach (induced and wave drag
    # both rise with CL: Anderson, Aircraft Performance and Design, ch. 2), and the range factor
    # does not change: specific range falls.
    pairs = [(v.id, e) for v in demo.variants.values() for e in v.engine_options]
    cases, _ = build_cases(demo, pairs, lambda v: [fraction * v.mtow_kg, (fraction + more) * v.mtow_kg], [dev],
                           [300.0], mach, 1.3)
    cruise = CruisePhysics.of(demo, cases)
    h = np.full(len(cases), level_ft * FT)
    sr = cruise.specific_range_m_per_kg(isa_pressure_pa(h), cases.mach, h).reshape(-1, 2)
    ok = np.isfinite(sr).all(axis=1)
    assert ok.any() and np.all(sr[ok, 1] < sr[ok, 0])


@HYPO
@given(st.floats(0.55, 1.0), st.floats(0.03, 0.3), st.floats(-20.0, 30.0), st.sampled_from(["cruise", 0.7, 0.8]))
def test_optimum_rises_as_weight_falls(demo, fraction, less, dev, mach):
    # Drag at a fixed Mach and CL scales with W (q S CD, q proportional to p): the optimum
    # pressure falls with the weight, so the optimum altitude rises (Anderson, Aircraft
    # Performance and Design, sec. 5.13, cruise-climb).
    pairs = [(v.id, e) for v in demo.variants.values() for e in v.engine_options]
    cases, _ = build_cases(demo, pairs, lambda v: [fraction * v.mtow_kg, (fraction - less) * v.mtow_kg], [dev],
                           [300.0], mach, 1.3)
    optimum, _, _ = cr.optimum_altitude(CruisePhysics.of(demo, cases), cases.mach)
    pairs_of = optimum.reshape(-1, 2)
    ok = np.isfinite(pairs_of).all(axis=1)
    assert ok.any() and np.all(pairs_of[ok, 1] > pairs_of[ok, 0])


@HYPO
@given(st.floats(50.0, 105.0), st.floats(-15.0, 40.0), st.sampled_from(["1000", "2000", "4000-west"]),
       st.sampled_from(["cruise", 0.72]))
def test_cruise_level_never_above_the_maximum_altitude(demo, pct, dev, scheme, mach):
    # The cruise level is a level of the scheme at or below the maximum altitude (the issue's
    # definition); it is one of the scheme's levels.
    f = cruise_table(demo, Conditions(weights=_pct(pct), isa_devs_c=(dev,), mach=mach), scheme)
    levels = set((cr.scheme_levels_m(scheme) / FT / 100).round().astype(int).tolist())
    rows = f.filter(pl.col("cruise_fl").is_not_null())
    assert rows.height
    assert (rows["cruise_fl"] * 100 <= rows["max_altitude_ft"] + 1e-6).all()
    assert set(rows["cruise_fl"].to_list()) <= levels


# --- the stages against dense scans on the demo fleets ------------------------------------------------

@pytest.mark.parametrize("fleet", ["fernholt-regional", "tallon-fells-survey"])
def test_best_level_and_optimum_against_every_level(fleet):
    # The best level is chosen among the two levels around the optimum (specific range is single
    # peaked in altitude at a fixed Mach): checked against every level of the scheme at or below
    # the maximum altitude, and the optimum against a dense altitude scan (every 20 ft).
    from variantcmp.catalogue import bundled_fleet_dir, load_catalogue

    cat = load_catalogue(f"{bundled_fleet_dir()}/{fleet}.toml")
    pairs = [(v.id, e) for v in cat.variants.values() for e in v.engine_options]
    cases, _ = build_cases(cat, pairs, lambda v: [0.55 * v.mtow_kg, 0.8 * v.mtow_kg, v.mtow_kg], [-10.0, 15.0, 35.0],
                           [300.0], "cruise", 1.3)
    cruise = CruisePhysics.of(cat, cases)
    res = solve_ceilings(cases)
    optimum, best_sr, flags = cr.optimum_altitude(cruise, cases.mach)
    for scheme in ("1000", "2000", "4000"):
        levels = cr.scheme_levels_m(scheme)
        level, sr = cr.best_level(cruise, cases.mach, levels, optimum, res.max_altitude_m, flags.copy())
        grid = np.where(levels[None, :] <= res.max_altitude_m[:, None] + 1e-6, levels[None, :], np.nan)
        all_sr = np.stack([cruise.specific_range_m_per_kg(isa_pressure_pa(np.nan_to_num(grid[:, j])), cases.mach,
                                                          np.nan_to_num(grid[:, j])) for j in range(levels.size)], 1)
        all_sr = np.where(np.isnan(grid), np.nan, all_sr)
        ok = np.isfinite(sr)
        assert ok.any()
        np.testing.assert_allclose(sr[ok], np.nanmax(all_sr[ok], axis=1), rtol=1e-12)
    dense = np.arange(-2000.0, 95_000.0, 20.0) * FT
    scan = np.stack([cruise.specific_range_m_per_kg(np.full(len(cases), isa_pressure_pa(h)), cases.mach,
                                                    np.full(len(cases), h)) for h in dense], 1)
    found = np.isfinite(optimum)
    assert np.all(best_sr[found] >= np.nanmax(scan[found], axis=1) * (1 - 1e-9))
    at = dense[np.nanargmax(np.where(np.isnan(scan), -np.inf, scan[:, :]), axis=1)]
    assert np.all(np.abs(at[found] - optimum[found]) / FT < 25.0)


def test_mrc_against_a_dense_mach_scan(demo):
    # MRC is the best specific range over the allowed Machs: no Mach of a dense scan (every
    # 0.0005) within the speed range does better.
    pairs = [(v.id, e) for v in demo.variants.values() for e in v.engine_options]
    cases, _ = build_cases(demo, pairs, lambda v: [0.6 * v.mtow_kg, v.mtow_kg], [0.0, 30.0], [300.0], "cruise", 1.3)
    cruise = CruisePhysics.of(demo, cases)
    for level_ft in (25_000.0, 33_000.0, 37_000.0):
        h = np.full(len(cases), level_ft * FT)
        speeds = cruise_speeds(cruise, h)
        p = isa_pressure_pa(h)
        ok = np.isfinite(speeds.mrc_mach)
        assert ok.any()
        for m in np.arange(0.3, 0.85, 0.0005):
            inside = ok & (m >= speeds.low) & (m <= speeds.high)
            sr = cruise.specific_range_m_per_kg(p, np.full(len(cases), m), h)
            assert np.all(sr[inside] <= speeds.mrc_sr[inside] * (1 + 1e-9))


# --- round trips with ceilings --------------------------------------------------------------------------

def test_ceilings_at_the_cruise_level_conditions_reach_it(demo):
    # Round trip: ceilings at each row's weight, day and Mach reaches its cruise level; and the
    # next level of the scheme up is either above that maximum altitude or gives no better range.
    conditions = Conditions(weights=_pct(70.0, 95.0), isa_devs_c=(0.0, 25.0))
    f = cruise_table(demo, conditions, "2000")
    c = ceilings_table(demo, conditions)
    joined = f.join(c.select("variant", "engine", "weight_kg", "isa_dev_c", pl.col("max_altitude_ft").alias("ceiling")),
                    on=["variant", "engine", "weight_kg", "isa_dev_c"])
    rows = joined.filter(pl.col("cruise_fl").is_not_null())
    # Every row with a maximum altitude has a level (the demo's levels start at FL010), none above it.
    assert rows.height == joined.filter(pl.col("ceiling").is_not_null()).height > 0
    assert (rows["cruise_fl"] * 100 <= rows["ceiling"] + 1e-6).all()
    # At the cruise level's own Mach and level, speed_table's maximum altitude says it is reached.
    one = speed_table(demo, dataclasses.replace(conditions, weights=_pct(70.0), isa_devs_c=(0.0,)), [35_000.0], None)
    assert one.filter(pl.col("max_altitude_ft") >= 35_000.0)["reaches_level"].all()


# --- step climbs ---------------------------------------------------------------------------------

def test_distance_at_a_level_is_the_constant_altitude_range_integral(clean):
    # At a fixed level and Mach, no compressibility, b = 0: SR = r / (A + B W^2) with the range
    # factor r = V / c, A = q S CD0 and B = K g^2 / (q S) (W in kg), so the still-air distance
    # from W1 down to W2 is x = r / sqrt(A B) [atan(W1 sqrt(B/A)) - atan(W2 sqrt(B/A))] (a standard
    # integral: the constant-altitude, constant-speed range of a parabolic polar, e.g. Eshelby,
    # Aircraft Performance: Theory and Practice, 2000, ch. 6; from memory) and the time x / V.
    from variantcmp.solver.fuel_flow import fuel_data
    from variantcmp.solver.step_climb import Schedule, segment_integrals

    v, e = clean.variants["a1"], clean.engines["flat"]
    cases, _ = build_cases(clean, [("a1", "flat")], lambda _: [39_000.0], [0.0, 20.0], [300.0], 0.6, 1.3)
    level = np.full((len(cases), 1), 37_000.0 * FT)
    start, end = np.full((len(cases), 1), 39_000.0), np.full((len(cases), 1), 30_000.0)
    plan = Schedule(level, start, end, np.ones(len(cases), dtype=np.int64), np.zeros(len(cases), dtype=np.int8))
    distance, time = segment_integrals(cases, fuel_data(clean, cases), plan)
    t_isa, p, _ = isa_state(37_000.0 * FT)
    for i, dev in enumerate(cases.isa_dev_c):
        t = t_isa + dev
        speed = 0.6 * math.sqrt(1.4 * R * t)
        r = speed / (e.tsfc_mg_per_ns * 1e-6 * math.sqrt(t / 288.15))
        qs = 0.7 * p * 0.36 * v.wing_area_m2
        a, b = qs * v.cd0, v.k * G * G / qs
        x = r / math.sqrt(a * b) * (math.atan(39_000.0 * math.sqrt(b / a)) - math.atan(30_000.0 * math.sqrt(b / a)))
        assert distance[i, 0] == pytest.approx(x, rel=1e-9)
        assert time[i, 0] == pytest.approx(x / speed, rel=1e-9)


def test_step_climb_schedule_steps_where_both_conditions_first_hold(demo):
    # The rule: step up to the next level once it is within the maximum altitude at the
    # climb criterion (as ceilings gives it) and gives a better specific range. At each step
    # weight both hold (the round trip with ceilings); a little heavier (5 kg) one of them fails;
    # segments join, weights fall, and the fuel adds up to the weight burnt.
    from variantcmp.table.step_climb import step_climb_table

    heavy, light = WeightSpec(100.0, "%mtow"), WeightSpec(62.0, "%mtow")
    f = step_climb_table(demo, Conditions(isa_devs_c=(0.0, 20.0)), heavy, light, "2000")
    steps = f.filter(pl.col("segment") > 1)
    assert steps.height >= 5
    for (vid, eid, dev), group in f.group_by(["variant", "engine", "isa_dev_c"], maintain_order=True):
        mtow = demo.variants[vid].mtow_kg
        w0, w1 = group["start_weight_kg"].to_numpy(), group["end_weight_kg"].to_numpy()
        assert w0[0] == pytest.approx(mtow) and w1[-1] == pytest.approx(0.62 * mtow)
        np.testing.assert_allclose(w0[1:], w1[:-1])
        assert np.all(np.diff(w0) < 0)
        assert group["fuel_kg"].sum() == pytest.approx(0.38 * mtow)
        assert np.all(np.diff(group["flight_level"].to_numpy()) > 0)
    for row in steps.iter_rows(named=True):
        level_ft, w = row["flight_level"] * 100.0, row["start_weight_kg"]
        at = ceilings_table(demo, Conditions(weights=_kg(w, w + 5.0), isa_devs_c=(row["isa_dev_c"],),
                                             variants=(row["variant"],), engines=(row["engine"],)))
        reach = at["max_altitude_ft"].to_numpy() >= level_ft - 0.05
        sr = speed_table(demo, Conditions(weights=_kg(w, w + 5.0), isa_devs_c=(row["isa_dev_c"],),
                                          variants=(row["variant"],), engines=(row["engine"],)),
                         [level_ft - 2000.0, level_ft], None)["specific_range_nm_per_t"].to_numpy().reshape(2, 2)
        better = sr[:, 1] > sr[:, 0]
        assert reach[0] and better[0], row
        assert not (reach[1] and better[1]), row


# --- the propeller engines' fuel path --------------------------------------------------------------

def _with_psfc(cases, psfc_kg_per_kwh=0.28, efficiency=0.85):
    """The cases' physics with a turboprop's fuel data: PSFC c = c0 sqrt(theta), constant eta."""
    from variantcmp.solver.fuel_flow import PSFC, FuelData
    from variantcmp.solver.physics import ClimbPhysics
    from variantcmp.thrust import PropellerEfficiency

    n = len(cases)
    fuel = FuelData(np.full(n, PSFC), np.full(n, np.nan), np.full(n, np.nan), np.full(n, psfc_kg_per_kwh),
                    np.zeros(n, dtype=np.int64), [], [PropellerEfficiency(efficiency)])
    return CruisePhysics(ClimbPhysics(cases), fuel)


def test_propeller_optimum_altitude_closed_forms(clean):
    # With PSFC c = c0 sqrt(theta) and a constant propeller efficiency, SR = eta / (c0 sqrt(T/T0) D).
    # At a fixed Mach D = A p + B / p (parabolic polar, q = 0.7 p M^2), so d ln SR / d ln p = 0 gives
    # (1 - x) / (1 + x) = -n/2, x = K CL^2 / CD0 and n = d ln T / d ln p: n = R L / g = 0.190263
    # in the troposphere at ISA (ISO 2533: T = T0 (p/p0)^(R L/g)), so CL = sqrt(x CD0/K) with
    # x = (1 + n/2) / (1 - n/2); n = 0 in the isothermal layer on any day, so CL = sqrt(CD0/K)
    # there (derivation from Anderson, Aircraft Performance and Design, 1999, sec. 5.13's range
    # equation for propeller aircraft). Unlike a jet's, the optimum moves with the ISA deviation
    # in the troposphere (n is R L T_ISA / (g T) there).
    v = clean.variants["a1"]
    n_trop = R * 0.0065 / G
    x = (1 + n_trop / 2) / (1 - n_trop / 2)
    for mach, weights, cl, layer, devs in (
            (0.40, [30_000.0, 38_000.0], math.sqrt(x * v.cd0 / v.k), (0.0, 11_000.0), [0.0]),
            (0.70, [26_000.0, 34_000.0], math.sqrt(v.cd0 / v.k), (11_000.0, 20_000.0), [-10.0, 20.0])):
        cases, _ = _cruise(clean, weights, devs, mach, pairs=[("a1", "flat")])
        optimum_m, _, flags = cr.optimum_altitude(_with_psfc(cases), cases.mach)
        expected = Atmosphere.from_pressure(cases.weight_kg * G / (0.7 * mach**2 * v.wing_area_m2 * cl)).H
        assert np.all((expected > layer[0]) & (expected < layer[1]))  # the closed form's layer
        assert not flags.any()
        np.testing.assert_allclose(optimum_m, expected, atol=25.0 * FT)


def test_propeller_mrc_is_at_the_best_lift_to_drag_ratio(clean):
    # The classic propeller range result (Anderson, Aircraft Performance and Design, 1999, sec.
    # 5.13): with constant eta and PSFC, at a fixed altitude SR = eta / (c D) is greatest at minimum
    # drag, CL = sqrt(CD0/K); M = sqrt(W / (0.7 p S CL)). And the fuel flow by hand: c D V / eta.
    v = clean.variants["a1"]
    cases, _ = _cruise(clean, [28_000.0, 36_000.0], [0.0], 0.5, pairs=[("a1", "flat")])
    cruise = _with_psfc(cases)
    h = np.full(len(cases), 25_000.0 * FT)
    speeds = cruise_speeds(cruise, h)
    t_isa, p, _ = isa_state(25_000.0 * FT)
    expected = np.sqrt(cases.weight_kg * G / (0.7 * p * v.wing_area_m2 * math.sqrt(v.cd0 / v.k)))
    np.testing.assert_allclose(speeds.mrc_mach, expected, atol=0.002)
    flow = cruise.fuel_flow_kg_s(np.full(len(cases), p), speeds.mrc_mach, h)
    drag = cruise.phys.drag_n(h, speeds.mrc_mach)
    speed = speeds.mrc_mach * math.sqrt(1.4 * R * t_isa)
    c = 0.28 / 3.6e6 * math.sqrt(t_isa / 288.15)
    np.testing.assert_allclose(flow, c * drag * speed / 0.85, rtol=1e-12)


def test_chunked_answers_are_each_cases_own():
    # The cruise solvers work in chunks sorted by kind of fuel data (the bench's mixed fleet: the
    # TSFC formula and a TSFC table); every case's answer is the one it gets solved alone.
    from variantcmp.bench import synthetic_cases, synthetic_fleet
    from variantcmp.solver.fuel_flow import CRUISE_CHUNK

    cat = synthetic_fleet()
    cases = synthetic_cases(cat, CRUISE_CHUNK + 5_000)
    optimum, _, _ = cr.optimum_altitude(CruisePhysics.of(cat, cases), cases.mach)
    speeds = cruise_speeds(CruisePhysics.of(cat, cases), np.full(len(cases), 35_000.0 * FT))
    pick = np.random.default_rng(3).choice(len(cases), size=40, replace=False)
    alone = cases.take(pick)
    np.testing.assert_array_equal(cr.optimum_altitude(CruisePhysics.of(cat, alone), alone.mach)[0], optimum[pick])
    again = cruise_speeds(CruisePhysics.of(cat, alone), np.full(pick.size, 35_000.0 * FT))
    np.testing.assert_allclose(again.mrc_mach, speeds.mrc_mach[pick], atol=1e-9)
    np.testing.assert_allclose(again.lrc_mach, speeds.lrc_mach[pick], atol=1e-9)


@settings(max_examples=8, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.floats(75.0, 105.0), st.floats(8.0, 30.0), st.floats(-15.0, 30.0), st.sampled_from(["1000", "2000", "4000"]))
def test_step_climb_properties(demo, heavy_pct, burn_pct, dev, scheme):
    # Weight only falls as fuel burns (the fuel adds up to the weight burnt), the levels only rise,
    # each level is one of the scheme's and within the maximum altitude (at the climb criterion,
    # as ceilings gives it) at the weight it is entered at: the step rule.
    from variantcmp.table.step_climb import step_climb_table

    heavy, light = WeightSpec(heavy_pct, "%mtow"), WeightSpec(heavy_pct - burn_pct, "%mtow")
    f = step_climb_table(demo, Conditions(isa_devs_c=(dev,)), heavy, light, scheme)
    levels = set((cr.scheme_levels_m(scheme) / FT / 100).round().astype(int).tolist())
    flown = f.filter(pl.col("segment").is_not_null())
    assert set(flown["flight_level"].to_list()) <= levels
    for (vid, eid), group in flown.group_by(["variant", "engine"], maintain_order=True):
        mtow = demo.variants[vid].mtow_kg
        assert group["fuel_kg"].sum() == pytest.approx(burn_pct / 100 * mtow, rel=1e-9)
        assert np.all(np.diff(group["flight_level"].to_numpy()) > 0)
        assert np.all(group["distance_nm"].to_numpy() > 0) and np.all(group["time_min"].to_numpy() > 0)
        entered = ceilings_table(demo, Conditions(weights=tuple(WeightSpec(w, "kg") for w in group["start_weight_kg"]),
                                                  isa_devs_c=(dev,), variants=(vid,), engines=(eid,)))
        assert np.all(entered["max_altitude_ft"].to_numpy() >= group["flight_level"].to_numpy() * 100 - 0.05)


def _turboprop_catalogue(tmp_path):
    """A catalogue of our own with a turboprop: 2 x 2,400 kW, constant eta 0.85, PSFC 0.28 kg/kWh."""
    engine = {"id": "tp", "model": "turboprop", "shaft_power_kw": 2400.0, "lapse_exponent": 0.75,
              "propeller_efficiency": 0.85, "psfc_kg_per_kwh": 0.28}
    return write_catalogue(tmp_path / "turboprop.toml", [engine],
                           [variant_spec(engine_options=["tp"], cruise_mach=0.45, mtow_kg=22_000.0)])


def test_turboprop_fuel_flow_by_hand(tmp_path):
    # Hand calculation (ISO 2533 ISA; the model: fuel flow = PSFC x shaft power needed,
    # shaft power = D V / eta, PSFC = c0 sqrt(theta)) at FL200 ISA, M0.45, 18,000 kg, on the
    # clean airframe of tests/specs.py (S 80 m2, CD0 0.022, K = 1/(pi 9 0.8)):
    #   h = 6,096 m, T = 248.526 K, p = 46,563.2 Pa, a = 316.032 m/s, V = 142.214 m/s
    #   q S = 0.7 p M^2 S = 528,027 N, CL = 0.33430, CD = 0.022 + K CL^2 = 0.026941, D = 14,225 N
    #   P = D V / 0.85 = 2,380.1 kW; c = 0.28 / 3.6e6 x sqrt(248.526 / 288.15) = 7.2232e-8 kg/(W s)
    #   fuel flow = c P = 0.17192 kg/s = 618.9 kg/h; SR = V / FF = 446.7 NM/t.
    cat = _turboprop_catalogue(tmp_path)
    row = speed_table(cat, Conditions(weights=_kg(18_000.0), mach=0.45), [20_000.0], None).row(0, named=True)
    assert row["fuel_flow_kg_h"] == pytest.approx(618.9, rel=0.005)
    assert row["specific_range_nm_per_t"] == pytest.approx(446.7, rel=0.005)


def test_turboprop_cruise_answers_end_to_end(tmp_path):
    # Through the catalogue, the turboprop's cruise answers follow the propeller closed forms
    # (see the tests above: the optimum in the isothermal layer at CL = sqrt(CD0/K); MRC at
    # CL = sqrt(CD0/K) with a constant efficiency); at its cruise Mach the cruise level is within
    # the maximum altitude that ceilings gives (round trip), and the fuel flow there is the
    # issue's PSFC x D V / eta with PSFC = c0 sqrt(theta) (ambiance for the ICAO atmosphere).
    cat = _turboprop_catalogue(tmp_path)
    v = cat.variants["a1"]
    fast = cruise_table(cat, Conditions(weights=_kg(17_000.0, 20_000.0), isa_devs_c=(0.0, 15.0), mach=0.62), "1000")
    p_opt = fast["weight_kg"].to_numpy() * G / (0.7 * 0.62**2 * v.wing_area_m2 * math.sqrt(v.cd0 / v.k))
    expected_ft = Atmosphere.from_pressure(p_opt).H / FT
    assert np.all((expected_ft > 36_089.0) & (expected_ft < 65_617.0))  # the isothermal layer
    np.testing.assert_allclose(fast["optimum_altitude_ft"].to_numpy(), expected_ft, atol=25.0)
    conditions = Conditions(weights=_kg(15_000.0, 17_000.0), isa_devs_c=(0.0, 15.0))  # the cruise Mach, 0.45
    f, c = cruise_table(cat, conditions, "1000"), ceilings_table(cat, conditions)
    level_ft = f["cruise_fl"].to_numpy().astype(float) * 100.0
    assert np.all(np.isfinite(c["max_altitude_ft"].to_numpy())) and np.all(level_ft <= c["max_altitude_ft"].to_numpy())
    air = Atmosphere.from_pressure(isa_pressure_pa(level_ft * FT))
    temp_k = air.temperature + f["isa_dev_c"].to_numpy()
    speed_ms = 0.45 * np.sqrt(1.4 * R * temp_k)
    qs = 0.7 * air.pressure * 0.45**2 * v.wing_area_m2
    drag_n = qs * (v.cd0 + v.k * (f["weight_kg"].to_numpy() * G / qs) ** 2)
    flow_kg_h = 0.28 / 3.6e6 * np.sqrt(temp_k / 288.15) * drag_n * speed_ms / 0.85 * 3600.0
    np.testing.assert_allclose(f["fuel_flow_kg_h"].to_numpy(), flow_kg_h, rtol=1e-3)
    speeds = speed_table(cat, Conditions(weights=_kg(17_000.0), mach="cruise"), [18_000.0], "mrc").row(0, named=True)
    p = isa_pressure_pa(18_000.0 * FT)
    mrc = math.sqrt(17_000.0 * G / (0.7 * p * v.wing_area_m2 * math.sqrt(v.cd0 / v.k)))
    assert speeds["mrc_mach"] == pytest.approx(mrc, abs=0.002) and speeds["mach"] == speeds["mrc_mach"]


def test_a_mach_asked_at_a_level_where_thrust_cannot_hold_it_says_so(tmp_path):
    # Hand calculation (ISO 2533 ISA; density lapse F = n F0 sigma, Mattingly et al.; the parabolic
    # polar) at FL350 ISA, 36,000 kg, on the clean airframe (S 80 m2, CD0 0.022, K = 0.044210), two
    # engines of 41 kN, MMO 0.78:
    #   rho = 23,842.3 / (287.053 x 218.808) = 0.37960 kg/m3, sigma = 0.30988, F = 25,410 N
    #   drag D = q S CD0 + K W^2 / (q S), q S = 0.7 p M^2 S = 1,335,167 M^2 N, W = 353,039 N:
    #   M0.45: q S = 270,371 N, CL = 1.3058, D = 26,329 N > F: thrust cannot hold the level there;
    #   M0.70: D = 22,815 N < F; M0.78 (MMO, where MRC and LRC sit): D = 24,654 N < F.
    # So at M0.45 there is no fuel flow and the note says why; at M0.70 there is one; MRC holds.
    rho = Atmosphere.from_pressure(isa_pressure_pa(35_000.0 * FT)).density[0]
    assert 2 * 41_000.0 * rho / 1.225 == pytest.approx(25_410.0, rel=1e-3)  # ambiance: the same density
    cat = write_catalogue(tmp_path / "thin.toml",
                          [engine_spec(id="thin", static_thrust_kn=41.0, tsfc_mg_per_ns=15.0)],
                          [variant_spec(engine_options=["thin"], mmo=0.78)])
    asked = speed_table(cat, Conditions(weights=_kg(36_000.0), mach=0.45), [35_000.0], None).row(0, named=True)
    assert asked["fuel_flow_kg_h"] is None and asked["specific_range_nm_per_t"] is None and asked["mach"] is None
    assert "thrust cannot hold FL350 at M0.450" in asked["note"]
    held = speed_table(cat, Conditions(weights=_kg(36_000.0), mach=0.7), [35_000.0], None).row(0, named=True)
    assert held["fuel_flow_kg_h"] > 0 and "thrust cannot hold" not in (held["note"] or "")
    mrc = speed_table(cat, Conditions(weights=_kg(36_000.0)), [35_000.0], "mrc").row(0, named=True)
    assert mrc["mrc_mach"] == pytest.approx(0.78, abs=1e-6) and mrc["speed_limit"] == "MMO"
    assert mrc["fuel_flow_kg_h"] > 0
