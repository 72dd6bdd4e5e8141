"""Model functions and closed-form ceilings against textbook results and hand calculations."""

import math

import numpy as np
import pytest
from ambiance import Atmosphere
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import minimize_scalar

from conftest import write_catalogue
from variantcmp import aero, thrust
from variantcmp.cases import build_cases
from variantcmp.solver import buffet_peak_mach
from variantcmp.atmosphere import G0, GAMMA, R_AIR, RHO0_KG_M3, isa_pressure_pa, isa_state
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import WeightSpec

FT = 0.3048


def test_mattingly_lapse_hand_values():
    # Mattingly et al., Aircraft Engine Design 2nd ed., ch. 2 high-bypass lapse (formula from memory),
    # worked by hand:
    # M 0.8 at 11 km ISA: theta = 216.65/288.15 = 0.75187, delta = 22632/101325 = 0.22336,
    # ram = 1 + 0.2*0.64 = 1.128, theta0 = 0.84811 <= TR 1.0, delta0 = 0.22336*1.128^3.5 = 0.34048,
    # alpha = 0.34048 * (1 - 0.49*sqrt(0.8)) = 0.34048 * 0.56173 = 0.19126.
    assert thrust.turbofan_lapse_fraction(0.8, 216.65, 22_632.06, 1.0) == pytest.approx(0.19126, abs=2e-5)
    # Hot day at sea level, M 0.3, ISA+30: theta0 = (318.15/288.15)*1.018 = 1.12398 > TR 1.0,
    # delta0 = 1.018^3.5 = 1.06443; alpha = 1.06443*(1 - 0.26838 - 3*0.12398/1.8) = 0.55880.
    assert thrust.turbofan_lapse_fraction(0.3, 318.15, 101_325.0, 1.0) == pytest.approx(0.55880, abs=5e-5)
    # Static sea-level standard gives the rated thrust exactly (alpha = 1 by definition).
    assert thrust.turbofan_lapse_fraction(0.0, 288.15, 101_325.0, 1.0) == pytest.approx(1.0)


def test_density_lapse_is_density_ratio_power():
    # Density-ratio lapse (Raymer sec. 10.3): at rho = rho0/2 with m = 1, half the thrust.
    assert thrust.density_lapse_fraction(RHO0_KG_M3 / 2, 1.0) == pytest.approx(0.5)
    assert thrust.density_lapse_fraction(RHO0_KG_M3 / 2, 0.7) == pytest.approx(0.5**0.7)
    # No air, no thrust; an exponent of zero keeps the static thrust (0^0 = 1).
    assert thrust.density_lapse_fraction(0.0, 1.0) == pytest.approx(0.0, abs=1e-300)
    assert thrust.density_lapse_fraction(np.array([0.0, 0.3]), 0.0) == pytest.approx([1.0, 1.0])


@pytest.mark.parametrize("rho", [1.1, 0.5, 0.3639, 0.2, 0.05, 0.0])
@pytest.mark.parametrize("m, m2", [(0.8, 1.2), (1.0, 1.0), (0.75, 0.0)])
def test_density_lapse_above_the_tropopause_in_plain_powers(rho, m, m2):
    # Two-exponent density lapse (Raymer sec. 10.3; Torenbeek app. H), written out with plain
    # powers: F/F0 = sigma^m below the tropopause density rho_11, sigma_11^m (rho/rho_11)^m2 above.
    rho11 = 0.3639  # ISA at 11 km, ISO 2533 (0.36392 kg/m3)
    sigma, sigma11 = rho / RHO0_KG_M3, rho11 / RHO0_KG_M3
    expected = sigma**m if rho >= rho11 else sigma11**m * (rho / rho11) ** m2
    assert thrust.density_lapse_fraction(rho, m, rho11, m2) == pytest.approx(expected, rel=1e-12, abs=1e-300)


def test_flat_rating():
    # Flat rating (common practice, no source): no loss up to the flat-rate deviation, then linear.
    assert thrust.hot_day_factor(10.0, 15.0, 0.01) == pytest.approx(1.0)
    assert thrust.hot_day_factor(25.0, 15.0, 0.01) == pytest.approx(0.9)


def test_korn_lock_hand_values():
    # Korn equation with sweep (Malone & Mason 1995; Mason, Configuration Aerodynamics ch. 7),
    # worked by hand for kA 0.95, t/c 0.12, sweep 25 deg, CL 0.5: cos 25 = 0.906308,
    # Mdd = 0.95/0.906308 - 0.12/0.821394 - 0.5/(10*0.744435) = 1.048209 - 0.146093 - 0.067165
    # = 0.834951; Mcrit = Mdd - (0.1/80)^(1/3) = 0.834951 - 0.107722 = 0.727229;
    # Lock: CDw = 20 (0.8 - 0.727229)^4 = 20 * 2.80433e-5 = 5.6087e-4 at M 0.8.
    assert aero.korn_critical_mach(0.5, 0.12, 25.0, 0.95) == pytest.approx(0.727229, abs=1e-6)
    assert aero.wave_drag_coefficient(0.8, 0.5, 0.12, 25.0, 0.95) == pytest.approx(5.6087e-4, rel=1e-4)
    assert aero.wave_drag_coefficient(0.7, 0.5, 0.12, 25.0, 0.95) == 0.0  # below Mcrit


def test_best_lift_to_drag_textbook():
    # Anderson, Aircraft Performance and Design sec. 5.4: CL* = sqrt(CD0/K), CD = 2 CD0 there.
    cd0, k = 0.02, 0.04
    ld, cl = aero.best_lift_to_drag(cd0, k)
    assert cl == pytest.approx(math.sqrt(cd0 / k))
    assert cd0 + k * cl**2 == pytest.approx(2 * cd0)
    assert ld == pytest.approx(cl / (2 * cd0))


@pytest.mark.parametrize("h_m, dev", [(3_000.0, 0.0), (9_000.0, 0.0), (9_000.0, 20.0), (15_000.0, 0.0), (25_000.0, 0.0)])
@pytest.mark.parametrize("mach", [0.3, 0.78])
def test_energy_share_factor_against_total_energy(h_m, dev, mach):
    # Derivation check: climb at constant Mach, E = z + V^2/(2 g0) with z the geopotential height.
    # Numerically, with ambiance's (independent) ISA temperatures: dz/dh_p = T/T_ISA
    # (hydrostatics), V = M sqrt(gamma R T). Then f = (dh_p/dE) (T/T_ISA).
    dh = 1.0
    hs = np.array([h_m - dh, h_m + dh])
    t_isa = Atmosphere(Atmosphere.geop2geom_height(hs)).temperature
    t = t_isa + dev
    v2 = mach**2 * GAMMA * R_AIR * t
    t_mid = Atmosphere(Atmosphere.geop2geom_height(np.array([h_m]))).temperature[0]
    de_dhp = (t_mid + dev) / t_mid + (v2[1] - v2[0]) / (2 * dh) / (2 * G0)
    f_numeric = (1.0 / de_dhp) * (t_mid + dev) / t_mid
    _, _, lapse = isa_state(h_m)
    assert aero.energy_share_factor(mach, t_mid + dev, t_mid, lapse) == pytest.approx(f_numeric, rel=1e-6)
    # The same factor times T_ISA/T, in one expression (the climb rate in pressure altitude).
    assert aero.pressure_climb_factor(mach, t_mid + dev, t_mid, lapse) == pytest.approx(
        f_numeric * t_mid / (t_mid + dev), rel=1e-6)


def test_energy_share_factor_magnitudes():
    # Below the tropopause at ISA the factor is 1/(1 - 0.1332 M^2) (kinetic energy released as
    # the true airspeed falls: f > 1); in the isothermal layer it is exactly 1.
    m = 0.8
    assert aero.energy_share_factor(m, 250.0, 250.0, -0.0065) == pytest.approx(1 / (1 - 0.13317 * m**2), rel=1e-4)
    assert aero.energy_share_factor(m, 216.65, 216.65, 0.0) == 1.0


def _simple(tmp_path, **variant):
    engine = {"id": "e1", "model": "density-lapse", "static_thrust_kn": 60.0, "lapse_exponent": 1.0}
    v = {"id": "a1", "engine_options": ["e1"], "engine_count": 2, "wing_area_m2": 80.0, "aspect_ratio": 9.0,
         "oswald_e": 0.8, "cd0": 0.022, "cl_max": 1.5, "mtow_kg": 40_000.0, "cruise_mach": 0.78}
    v.update(variant)
    return write_catalogue(tmp_path / "simple.toml", [engine], [v])


def test_absolute_ceiling_closed_form(tmp_path):
    # Thrust proportional to density with a parabolic polar (Anderson, Aircraft Performance and
    # Design, sec. 5.12): at the absolute ceiling n F0 sigma = W 2 sqrt(K CD0), flown at
    # CL = sqrt(CD0/K) where CD = 2 CD0. The density is turned into a pressure altitude with
    # ambiance (independent ISA).
    cat = _simple(tmp_path)
    k = 1 / (math.pi * 9.0 * 0.8)
    w = 40_000.0 * G0
    sigma = w * 2 * math.sqrt(k * 0.022) / (2 * 60_000.0)
    h_ref = Atmosphere.from_density(sigma * 1.225).H[0]
    frame = ceilings_table(cat, Conditions(weights=(WeightSpec(40_000.0, "kg"),), mach="best", climb_fpm=(0.0,)))
    row = frame.row(0, named=True)
    assert row["thrust_ceiling_ft"] * FT == pytest.approx(h_ref, abs=1.0)
    assert row["max_altitude_ft"] == pytest.approx(row["thrust_ceiling_ft"], abs=1.0)
    assert row["limit"] == "thrust"
    # The best speed flies the polar at CL* (the optimum is flat in Mach: 1 % on CL).
    p = float(isa_pressure_pa(row["max_altitude_ft"] * FT))
    cl = aero.lift_coefficient(w, p, row["mach"], 80.0)
    assert cl == pytest.approx(math.sqrt(0.022 / k), rel=0.01)
    assert 0.022 + k * cl**2 == pytest.approx(2 * 0.022, rel=0.02)


def test_buffet_ceiling_closed_form(demo):
    # Lift at the buffet margin: n W = (gamma/2) p M^2 S CL_buffet(M) (Anderson, Introduction to
    # Flight, eq. 4.83), CL_buffet read from the catalogue by linear interpolation.
    frame = ceilings_table(demo, Conditions(weights=(WeightSpec(90.0, "%mtow"),), g_margin=1.3))
    checked = 0
    for row in frame.iter_rows(named=True):
        v = demo.variants[row["variant"]]
        if not v.buffet_mach:
            continue
        p = float(isa_pressure_pa(row["buffet_ceiling_ft"] * FT))
        cl_b = np.interp(row["mach"], v.buffet_mach, v.buffet_cl)
        lift = 0.5 * GAMMA * p * row["mach"] ** 2 * v.wing_area_m2 * cl_b
        assert lift == pytest.approx(1.3 * row["weight_kg"] * G0, rel=1e-9)
        checked += 1
    assert checked > 0


def test_stall_and_cabin_closed_forms(demo):
    # Stall: W = (gamma/2) p M^2 S CLmax (Anderson eq. 4.83). Cabin: ambient pressure =
    # cabin pressure (ISA at the cabin altitude) minus the maximum differential.
    frame = ceilings_table(demo, Conditions())
    for row in frame.iter_rows(named=True):
        v = demo.variants[row["variant"]]
        p = float(isa_pressure_pa(row["stall_ceiling_ft"] * FT))
        assert 0.5 * GAMMA * p * row["mach"] ** 2 * v.wing_area_m2 * v.cl_max == pytest.approx(row["weight_kg"] * G0)
        if v.max_cabin_dp_kpa is not None:
            p_cab = float(isa_pressure_pa(row["cabin_ceiling_ft"] * FT))
            expect = float(isa_pressure_pa(v.cabin_altitude_ft * FT)) - v.max_cabin_dp_kpa * 1000
            assert p_cab == pytest.approx(expect)


@pytest.mark.parametrize("alt", [
    [-2000.0, 0.0, 10000.0, 25000.0, 41000.0],  # on a 1,000 ft grid: the bin lookup
    [-2000.0, 0.0, 10000.5, 25000.0, 41000.0],  # off any whole-ft grid: the node search
    [-2000.0, 0.0, 1.0, 25000.0, 41000.0],  # a 1 ft grid would need too many bins: the node search
])
def test_thrust_table_matches_scipy_bilinear(alt):
    # Reference: scipy.interpolate.RegularGridInterpolator(method="linear"), NaN outside the grid.
    from scipy.interpolate import RegularGridInterpolator

    alt = np.array(alt)
    mach = np.array([0.0, 0.3, 0.6, 0.85])
    frac = np.random.default_rng(3).uniform(0.1, 1.0, (alt.size, mach.size))
    ours = thrust.TableLapse(alt, mach, frac)
    ref = RegularGridInterpolator((alt, mach), frac, method="linear", bounds_error=False, fill_value=np.nan)
    rng = np.random.default_rng(4)
    pts_alt = np.concatenate([rng.uniform(-3000.0, 42000.0, 2000), alt, [41000.0, -2000.0, np.nan, 20000.0]])
    pts_mach = np.concatenate([rng.uniform(-0.05, 0.9, 2000), mach[[0, 1, 2, 3, 3]], [0.85, 0.0, 0.5, np.nan]])
    expect = ref(np.stack([pts_alt, pts_mach], axis=1))
    got = ours(pts_alt, pts_mach)
    np.testing.assert_array_equal(np.isnan(got), np.isnan(expect))
    ok = ~np.isnan(expect)
    np.testing.assert_allclose(got[ok], expect[ok], rtol=1e-12, atol=1e-12)


def test_thrust_table_probe_points_match_scipy_bilinear():
    # The values the hump check reads at a table's altitudes and midway between them are the
    # interpolation's own there. Reference: scipy.interpolate.RegularGridInterpolator (linear).
    from scipy.interpolate import RegularGridInterpolator

    alt = np.array([-2000.0, 0.0, 10000.0, 25000.0, 41000.0, 51000.0])
    mach = np.array([0.0, 0.3, 0.6, 0.85])
    frac = np.random.default_rng(5).uniform(0.1, 1.0, (alt.size, mach.size))
    points, at = thrust.TableLapse(alt, mach, frac).probe_points()
    np.testing.assert_array_equal(points[0::2], alt)
    np.testing.assert_allclose(points[1::2], 0.5 * (alt[1:] + alt[:-1]))
    ref = RegularGridInterpolator((alt, mach), frac, method="linear")
    grid = np.stack(np.meshgrid(points, mach, indexing="ij"), axis=-1)
    np.testing.assert_allclose(at[:, :mach.size], ref(grid), rtol=1e-12, atol=1e-12)
    assert np.isnan(at[:, mach.size:]).all()  # a Mach outside the table: no data


@settings(max_examples=25, deadline=None)
@given(st.lists(st.floats(0.3, 1.4), min_size=2, max_size=7), st.floats(0.25, 0.45), st.floats(0.03, 0.08),
       st.floats(0.0, 1.0), st.floats(0.0, 1.0))
def test_buffet_peak_mach_against_scipy(tmp_path_factory, cls, m0, step, lo_frac, hi_frac):
    # The highest buffet ceiling is where M^2 CL_b(M) peaks (n W = (gamma/2) p M^2 S CL_b,
    # Anderson, Introduction to Flight, eq. 4.83). Reference: scipy's bounded Brent
    # minimiser on each segment of the boundary inside the speed range.
    bm = [m0 + step * i for i in range(len(cls))]
    cat = write_catalogue(tmp_path_factory.mktemp("b") / "b.toml", [{"id": "e1", "model": "density-lapse",
                          "static_thrust_kn": 60.0, "lapse_exponent": 1.0}],
                          [{"id": "a1", "engine_options": ["e1"], "engine_count": 2, "wing_area_m2": 80.0,
                            "aspect_ratio": 9.0, "oswald_e": 0.8, "cd0": 0.022, "cl_max": 1.5, "mtow_kg": 40_000.0,
                            "cruise_mach": bm[0], "buffet_mach": bm, "buffet_cl": cls}])
    cases, _ = build_cases(cat, [("a1", "e1")], lambda v: [30_000.0], [0.0], [300.0], "best", 1.3)
    lo, hi = sorted((bm[0] + lo_frac * (bm[-1] - bm[0]), bm[0] + hi_frac * (bm[-1] - bm[0])))
    capacity = lambda m: m * m * np.interp(m, bm, cls)  # noqa: E731
    ref = max(capacity(lo), capacity(hi))
    for a, b in zip(bm[:-1], bm[1:]):
        a, b = max(a, lo), min(b, hi)
        if a < b:
            best = minimize_scalar(lambda m: -capacity(m), bounds=(a, b), method="bounded", options={"xatol": 1e-9})
            ref = max(ref, -best.fun, capacity(a), capacity(b))
    m = buffet_peak_mach(cases, np.array([lo]), np.array([hi]))[0]
    assert lo - 1e-12 <= m <= hi + 1e-12
    assert capacity(m) == pytest.approx(ref, rel=1e-9, abs=1e-12)


def test_isa_state_below_20km_ignores_the_rest_of_the_array():
    # Self-consistency, no external source: the solvers' answers must not depend on which other
    # points share an array, so the fast path below 20 km and the general path give the same bits.
    h = np.linspace(-5_000.0, 19_999.0, 2_001)
    alone, mixed = isa_state(h), isa_state(np.append(h, [25_000.0, 60_000.0]))
    for a, b in zip(alone, mixed):
        assert np.array_equal(a, b[:-2])
