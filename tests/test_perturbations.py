"""Sensitivity of the maximum altitude to the data, and its spread under uncertain data.

Closed form for both (steady level flight at best speed with a parabolic polar and thrust
proportional to density, Anderson, Aircraft Performance and Design, 1999, ch. 5): the needed
density is sigma = 2 W sqrt(K CD0) / (n F0); in the ISA's isothermal layer (11-20 km) the
pressure falls with the scale height H = R T_ISA / g = 6,341.6 m (ICAO Doc 7488/3), so the
ceiling moves by -H per unit of ln W, +H per ln F0, -H/2 per ln CD0 and ln K, and by
-H / (T_ISA + dT) per deg C (the density at a pressure falls as 1/T).
"""

import math

import numpy as np
import polars as pl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import write_catalogue
from variantcmp.table import Conditions, ceilings_table
from variantcmp.table.perturbations import sensitivity_table, spread_table
from variantcmp.units import WeightSpec

FT = 0.3048
H_M = 287.05287 * 216.65 / 9.80665  # 6,341.6 m

ENGINE = {"id": "e1", "model": "density-lapse", "static_thrust_kn": 50.0, "lapse_exponent": 1.0}
AIRFRAME = {"id": "a1", "engine_options": ["e1"], "engine_count": 2, "wing_area_m2": 80.0, "aspect_ratio": 9.0,
            "oswald_e": 0.8, "cd0": 0.022, "cl_max": 2.0, "mtow_kg": 40_000.0, "cruise_mach": 0.7, "mmo": 0.95}


def _isothermal(tmp_path):
    """Ceilings near 45,000 ft at these weights: inside the isothermal layer."""
    return write_catalogue(tmp_path / "c.toml", [ENGINE], [AIRFRAME])


COND = Conditions(weights=(WeightSpec(95.0, "%mtow"), WeightSpec(100.0, "%mtow")), isa_devs_c=(0.0, 15.0),
                  mach="best", climb_fpm=(0.0,))


def test_sensitivities_in_the_isothermal_layer_are_the_closed_form(tmp_path):
    rows = sensitivity_table(_isothermal(tmp_path), COND)
    assert rows.height == 4
    assert rows["max_altitude_ft"].min() > 36_089 + 1_000 and rows["max_altitude_ft"].max() < 65_617 - 1_000
    per = H_M / FT * 0.01  # 208.1 ft
    for row in rows.iter_rows(named=True):
        assert row["ft_per_pct_weight"] == pytest.approx(-per, abs=2.0)
        assert row["ft_per_pct_thrust"] == pytest.approx(per, abs=2.0)
        assert row["ft_per_pct_cd0"] == pytest.approx(-per / 2, abs=2.0)
        assert row["ft_per_pct_k"] == pytest.approx(-per / 2, abs=2.0)
        assert row["ft_per_c_isa"] == pytest.approx(-H_M / FT / (216.65 + row["isa_dev_c"]), abs=2.0)


def test_a_flat_limit_has_no_sensitivity_to_thrust(tmp_path):
    # Where the certified ceiling binds, more thrust buys nothing (a definition).
    cat = write_catalogue(tmp_path / "c.toml", [ENGINE], [dict(AIRFRAME, max_altitude_ft=41_000.0)])
    row = sensitivity_table(cat, Conditions(weights=(WeightSpec(80.0, "%mtow"),), mach="best", climb_fpm=(0.0,))).row(0, named=True)
    assert row["max_altitude_ft"] == pytest.approx(41_000.0)
    assert row["ft_per_pct_thrust"] == 0.0 and row["ft_per_pct_weight"] == 0.0


@pytest.mark.parametrize("s_pct", [1.0, 3.0])
def test_spread_with_only_cd0_uncertain_is_the_closed_form(tmp_path, s_pct):
    # h = h0 - (H/2) ln(1 + s z), z standard normal: quantiles pass through the monotone map, so
    # P50 = h0 and P90 - P10 = (H/2) (ln(1 + 1.2816 s) - ln(1 - 1.2816 s)), about
    # 2 x 1.2816 x 104 ft x (s / 1 %). Monte Carlo tolerance: with 4,000 samples the standard
    # error of a 10 % quantile is 0.3 / (sqrt(4000) x 0.1755) = 0.027 sigma, of the median
    # 0.020 sigma (sigma = 104 ft x s/1 %): we allow 4 standard errors.
    cat = _isothermal(tmp_path)
    cond = Conditions(weights=(WeightSpec(100.0, "%mtow"),), mach="best", climb_fpm=(0.0,))
    nominal = ceilings_table(cat, cond)["max_altitude_ft"][0]
    row = spread_table(cat, cond, {"cd0": s_pct / 100.0}, samples=4000, seed=5).row(0, named=True)
    sigma_ft = H_M / FT / 2 * s_pct / 100.0
    assert row["p50_ft"] == pytest.approx(nominal, abs=4 * 0.020 * sigma_ft + 0.5)
    z = 1.2815516
    expected = H_M / FT / 2 * (math.log(1 + z * s_pct / 100) - math.log(1 - z * s_pct / 100))
    assert row["p90_ft"] - row["p10_ft"] == pytest.approx(expected, abs=4 * 0.04 * sigma_ft)


def test_spread_is_reproducible_and_gives_the_chance_of_a_target(tmp_path):
    cat = _isothermal(tmp_path)
    cond = Conditions(weights=(WeightSpec(100.0, "%mtow"),), mach="best", climb_fpm=(0.0,), target_fl_ft=None)
    nominal = ceilings_table(cat, cond)["max_altitude_ft"][0]
    vary = {"cd0": 0.02, "thrust": 0.03, "k": 0.02, "weight": 0.01}
    a = spread_table(cat, cond, vary, samples=500, seed=11, target_ft=nominal)
    b = spread_table(cat, cond, vary, samples=500, seed=11, target_ft=nominal)
    assert a.equals(b)
    # At the nominal ceiling the chance is about one half (the distribution's median).
    assert a["p_reach_target"][0] == pytest.approx(0.5, abs=0.08)
    c = spread_table(cat, cond, vary, samples=500, seed=12, target_ft=nominal)
    assert not a.equals(c)


@settings(max_examples=10, deadline=None)
@given(st.floats(75.0, 100.0), st.floats(-10.0, 25.0), st.sampled_from(["cruise", "best"]))
def test_the_demo_fleet_gains_with_thrust_and_loses_with_weight(demo, w, dev, mach):
    # Physics fact (Anderson, Aircraft Performance and Design, ch. 5): more thrust never lowers
    # a ceiling; more weight, drag or temperature never raises one.
    rows = sensitivity_table(demo, Conditions(weights=(WeightSpec(w, "%mtow"),), isa_devs_c=(dev,), mach=mach))
    ok = rows.filter(pl.col("max_altitude_ft").is_not_null())
    slack = 0.5
    assert (ok["ft_per_pct_thrust"].drop_nulls() >= -slack).all()
    for col in ("ft_per_pct_weight", "ft_per_pct_cd0", "ft_per_pct_k", "ft_per_c_isa"):
        assert (ok[col].drop_nulls() <= slack).all(), col
    assert np.isfinite(ok["ft_per_pct_weight"].to_numpy().astype(float)).any()
