"""ISA checks against published tables and independent reference implementations."""

import numpy as np
import pytest
from ambiance import Atmosphere
from fluids.atmosphere import ATMOSPHERE_1976
from hypothesis import given
from hypothesis import strategies as st

from variantcmp import atmosphere as atm

FT = 0.3048
R0_EARTH_M = 6_356_766.0  # effective Earth radius of U.S. Standard Atmosphere 1976, eq. 18


def test_sea_level_values():
    # ISO 2533 / ICAO Doc 7488 sea-level standard: 288.15 K, 101,325 Pa, 1.2250 kg/m3, 340.294 m/s.
    t, p, rho, a = atm.atmosphere(0.0)
    assert t == pytest.approx(288.15)
    assert p == pytest.approx(101_325.0)
    assert rho == pytest.approx(1.2250, abs=5e-5)
    assert a == pytest.approx(340.294, abs=1e-3)


@pytest.mark.parametrize("h_m, t_k, p_pa", [
    # U.S. Standard Atmosphere 1976, Table 4 (layer bases, geopotential altitude), from memory.
    (11_000.0, 216.65, 22_632.06),
    (20_000.0, 216.65, 5_474.889),
    (32_000.0, 228.65, 868.0187),
    (47_000.0, 270.65, 110.9063),
    (51_000.0, 270.65, 66.93887),
    (71_000.0, 214.65, 3.956420),
])
def test_layer_bases_match_ussa_1976(h_m, t_k, p_pa):
    assert atm.isa_temperature_k(h_m) == pytest.approx(t_k, abs=1e-3)
    # ISO 2533's R = 287.05287 and USSA 1976's R*/M0 = 8314.32/28.9644 differ by 1e-6: 1e-5 slack.
    assert atm.isa_pressure_pa(h_m) == pytest.approx(p_pa, rel=1e-5)


@pytest.mark.parametrize("alt_ft, t_k, p_pa", [
    # ICAO Doc 7488 table in feet, from memory: 10,000 ft 268.34 K 69,682 Pa;
    # 35,000 ft 218.81 K 23,842 Pa; 36,089 ft is the tropopause (216.65 K, 22,632 Pa).
    (10_000.0, 268.34, 69_682.0),
    (35_000.0, 218.81, 23_842.0),
    (36_089.24, 216.65, 22_632.0),
])
def test_icao_feet_table(alt_ft, t_k, p_pa):
    assert atm.isa_temperature_k(alt_ft * FT) == pytest.approx(t_k, abs=0.01)
    assert atm.isa_pressure_pa(alt_ft * FT) == pytest.approx(p_pa, rel=1e-4)


GRID_M = np.concatenate([np.linspace(-2000 * FT, 47_000.0, 200), np.linspace(47_000.0, 80_000.0, 50)])


def test_against_ambiance_every_layer():
    # ambiance (ICAO 1993 standard atmosphere, PyPI) works in geometric height: convert.
    ref = Atmosphere(Atmosphere.geop2geom_height(GRID_M))
    t, p, rho, a = atm.atmosphere(GRID_M)
    np.testing.assert_allclose(t, ref.temperature, rtol=1e-6)
    np.testing.assert_allclose(p, ref.pressure, rtol=1e-5)
    np.testing.assert_allclose(rho, ref.density, rtol=1e-5)
    np.testing.assert_allclose(a, ref.speed_of_sound, rtol=1e-6)


def test_against_fluids_ussa_1976():
    # fluids.atmosphere.ATMOSPHERE_1976 (PyPI), geometric altitude Z = r0 H / (r0 - H).
    for h in GRID_M[::10]:
        z = R0_EARTH_M * h / (R0_EARTH_M - h)
        ref = ATMOSPHERE_1976(float(z))
        assert atm.isa_temperature_k(h) == pytest.approx(ref.T, rel=1e-6)
        assert atm.isa_pressure_pa(h) == pytest.approx(ref.P, rel=1e-5)


def test_pressure_altitude_against_ambiance_inverse():
    # ambiance.Atmosphere.from_pressure gives the geometric height; its .H is geopotential.
    p = atm.isa_pressure_pa(GRID_M[:-50])
    ref = Atmosphere.from_pressure(p)
    np.testing.assert_allclose(atm.pressure_altitude_m(p), ref.H, atol=0.05)


@given(st.floats(-5_000.0, 84_000.0))
def test_pressure_altitude_round_trip(h):
    assert float(atm.pressure_altitude_m(atm.isa_pressure_pa(h))) == pytest.approx(h, abs=1e-6)


def test_above_model_top_is_infinite_not_clipped():
    assert np.isposinf(atm.pressure_altitude_m(0.1))


@given(st.floats(0.0, 20_000.0), st.floats(-40.0, 40.0))
def test_temperature_deviation_keeps_pressure(h, dev):
    # ICAO Doc 7488: pressure altitude fixes pressure; a deviation shifts temperature only.
    t, p, rho, _ = atm.atmosphere(h, dev)
    assert p == pytest.approx(atm.isa_pressure_pa(h))
    assert t == pytest.approx(atm.isa_temperature_k(h) + dev)
    assert rho == pytest.approx(p / (287.05287 * t))


@pytest.mark.parametrize("dev", [-20.0, 0.0, 15.0, 35.0])
def test_height_on_the_day_is_the_hypsometric_integral(dev):
    # Hypsometric equation (hydrostatic with the ideal-gas law; e.g. Wallace & Hobbs, Atmospheric
    # Science, 2nd ed., sec. 3.2): dz/dh_p = T/T_ISA at a pressure altitude, integrated by scipy's
    # quad with fluids' USSA 1976 standard temperature (geometric height converted, eq. 18); the
    # inverse returns the pressure altitude. Rule of thumb (common practice, no source): about 4 %
    # of the height per 10 degrees C below 11 km.
    from scipy.integrate import quad

    def t_std(h):
        return ATMOSPHERE_1976(R0_EARTH_M * h / (R0_EARTH_M - h)).T

    for h in (-500.0, 3000.0, 9000.0, 11_000.0, 15_000.0):
        expected = quad(lambda x: (t_std(x) + dev) / t_std(x), 0.0, h, epsabs=1e-7, points=[11_000.0])[0]
        z = float(atm.height_on_day_m(h, dev))
        assert z == pytest.approx(expected, abs=0.01)
        assert float(atm.pressure_altitude_on_day_m(z, dev)) == pytest.approx(h, abs=1e-6)
    assert float(atm.height_on_day_m(3000.0, dev)) / 3000.0 - 1.0 == pytest.approx(0.0036 * dev, abs=0.0006 * abs(dev) + 1e-9)
