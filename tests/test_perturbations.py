"""Sensitivity of the maximum altitude to the data, and its spread under uncertain data.

Closed form for both (steady level flight at best speed with a parabolic polar and thrust
proportional to density, Anderson, Aircraft Performance and Design, 1999, ch. 5): the needed
density is sigma = 2 W sqrt(K CD0) / (n F0); in the ISA's isothermal layer (11-20 km) the
pressure falls with the scale height H = R T_ISA / g = 6,341.6 m (ICAO Doc 7488/3 constants), so
the ceiling moves by -H per unit of ln W, +H per ln F0, -H/2 per ln CD0 and ln K, and by
-H / (T_ISA + dT) per deg C (the density at a pressure falls as 1/T).
"""

import math

import numpy as np
import polars as pl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import write_catalogue
from variantcmp.solver import perturbations as pert
from variantcmp.table import Conditions, ceilings_table
from variantcmp.table.ceilings import cases_for
from variantcmp.table.perturbations import sensitivity_table, spread_table
from variantcmp.units import VARIED, WeightSpec, parse_variations

FT = 0.3048
H_M = 287.05287 * 216.65 / 9.80665  # 6,341.6 m
Z90 = 1.2815516  # standard normal 90 % quantile (any statistics table)

ENGINE = {"id": "e1", "model": "density-lapse", "static_thrust_kn": 50.0, "lapse_exponent": 1.0}
AIRFRAME = {"id": "a1", "engine_options": ["e1"], "engine_count": 2, "wing_area_m2": 80.0, "aspect_ratio": 9.0,
            "oswald_e": 0.8, "cd0": 0.022, "cl_max": 2.0, "mtow_kg": 40_000.0, "cruise_mach": 0.7, "mmo": 0.95}


def _isothermal(tmp_path):
    """Ceilings near 39,000-42,000 ft at these weights: inside the isothermal layer."""
    return write_catalogue(tmp_path / "c.toml", [ENGINE], [AIRFRAME])


COND = Conditions(weights=(WeightSpec(95.0, "%mtow"), WeightSpec(100.0, "%mtow")), isa_devs_c=(0.0, 15.0),
                  mach="best", climb_fpm=(0.0,))
ONE = Conditions(weights=(WeightSpec(100.0, "%mtow"),), mach="best", climb_fpm=(0.0,))


def test_sensitivities_in_the_isothermal_layer_are_the_closed_form(tmp_path):
    rows = sensitivity_table(_isothermal(tmp_path), COND)
    assert rows.height == 4
    assert rows["max_altitude_ft"].min() > 36_089 + 1_000 and rows["max_altitude_ft"].max() < 65_617 - 1_000
    per = H_M / FT * 0.01  # 208.1 ft
    for row in rows.iter_rows(named=True):
        # Within 2 ft (the tolerance); measured: 1e-9 ft, and 0.001 ft per deg C.
        assert row["ft_per_pct_weight"] == pytest.approx(-per, abs=2.0)
        assert row["ft_per_pct_thrust"] == pytest.approx(per, abs=2.0)
        assert row["ft_per_pct_cd0"] == pytest.approx(-per / 2, abs=2.0)
        assert row["ft_per_pct_k"] == pytest.approx(-per / 2, abs=2.0)
        assert row["ft_per_c_isa"] == pytest.approx(-H_M / FT / (216.65 + row["isa_dev_c"]), abs=2.0)
    assert rows.filter(pl.col("isa_dev_c") == 0)["ft_per_c_isa"][0] == pytest.approx(-96.0, abs=0.1)


def test_a_flat_limit_has_no_sensitivity_to_thrust(tmp_path):
    # Where the certified ceiling binds, more thrust buys nothing (a definition).
    cat = write_catalogue(tmp_path / "c.toml", [ENGINE], [dict(AIRFRAME, max_altitude_ft=41_000.0)])
    row = sensitivity_table(cat, Conditions(weights=(WeightSpec(80.0, "%mtow"),), mach="best", climb_fpm=(0.0,))).row(0, named=True)
    assert row["max_altitude_ft"] == pytest.approx(41_000.0) and row["limit"] == "certified"
    assert row["ft_per_pct_thrust"] == 0.0 and row["ft_per_pct_weight"] == 0.0 and row["ft_per_c_isa"] == 0.0


def test_sensitivity_round_trips_with_ceilings_at_the_perturbed_values(demo):
    # The weight and ISA columns are central differences of what `ceilings` gives at x e^(+-0.01)
    # and dT +- 1 C (the definition), here a turbofan at its cruise Mach in the troposphere.
    cat, w0 = demo, 0.95 * demo.variants["v88"].mtow_kg
    cond = Conditions(weights=(WeightSpec(w0, "kg"),), isa_devs_c=(20.0,), variants=("v88",), engines=("ossel-78",))
    row = sensitivity_table(cat, cond).row(0, named=True)
    assert row["max_altitude_ft"] < 36_089  # below the tropopause: no closed form, a round trip
    at = lambda **kw: ceilings_table(cat, Conditions(**{**cond.__dict__, **kw}))["max_altitude_ft"][0]  # noqa: E731
    up, down = at(weights=(WeightSpec(w0 * math.exp(0.01), "kg"),)), at(weights=(WeightSpec(w0 * math.exp(-0.01), "kg"),))
    assert row["ft_per_pct_weight"] == pytest.approx((up - down) / 0.02 * 0.01, abs=0.01)
    hot, cold = at(isa_devs_c=(21.0,)), at(isa_devs_c=(19.0,))
    assert row["ft_per_c_isa"] == pytest.approx((hot - cold) / 2.0, abs=0.01)
    assert row["max_altitude_ft"] == pytest.approx(at(), abs=1e-6)


def test_no_sensitivity_where_a_perturbed_copy_has_no_altitude(tmp_path):
    # A weak engine that just climbs above the -2,000 ft floor: 1 % more weight or 1 % less thrust
    # needs more density than the floor has (sigma 1.0603 at -2,000 ft, ISO 2533), so those
    # columns are null and the note says why; CD0 (sigma ~ sqrt(CD0)) still has an answer.
    cat = write_catalogue(tmp_path / "c.toml", [dict(ENGINE, static_thrust_kn=12.0)], [dict(AIRFRAME, mtow_kg=45_000.0)])
    w_kg = 1.05 * 24_000.0 / (2 * math.sqrt(0.022 / (math.pi * 9 * 0.8))) / 9.80665  # sigma = 1.05
    row = sensitivity_table(cat, Conditions(weights=(WeightSpec(w_kg, "kg"),), mach="best", climb_fpm=(0.0,))).row(0, named=True)
    assert row["max_altitude_ft"] is not None and row["max_altitude_ft"] < 0
    assert row["ft_per_pct_weight"] is None and row["ft_per_pct_thrust"] is None
    assert row["ft_per_pct_cd0"] is not None and row["ft_per_pct_cd0"] < 0
    assert "weight +1 %" in row["note"] and "thrust -1 %" in row["note"]


# --- the spread ---------------------------------------------------------------------------
# h = h0 - c H ln(1 + s z), z standard normal, c = 1/2 for CD0 and K, 1 for weight, -1 for
# thrust: quantiles pass through the monotone map, so P50 = h0 and P90 - P10 =
# |c| H (ln(1 + 1.2816 s) - ln(1 - 1.2816 s)), about 2 x 1.2816 x |c| x 208 ft x (s / 1 %).
# Monte Carlo tolerance: the standard error of a q-quantile of n samples is
# sqrt(q (1 - q) / n) / f(x_q) (asymptotic normality of sample quantiles, e.g. Cramer 1946);
# with n = 4,000 it is 0.020 sigma for the median and, with the two ends' covariance, 0.036
# sigma for P90 - P10 (sigma = |c| x 208 ft x s/1 %, f the normal density). We allow 4
# standard errors (a chance of 6e-5 of failing a true model, for a given seed).
SAMPLES = 4000
SE_MEDIAN, SE_WIDTH = 0.020, 0.036


@pytest.mark.parametrize("name, c, s_pct", [("cd0", 0.5, 1.0), ("cd0", 0.5, 3.0), ("k", 0.5, 2.0),
                                            ("thrust", -1.0, 2.0), ("weight", 1.0, 1.0)])
def test_spread_with_one_value_uncertain_is_the_closed_form(tmp_path, name, c, s_pct):
    cat = _isothermal(tmp_path)
    nominal = ceilings_table(cat, ONE)["max_altitude_ft"][0]
    row = spread_table(cat, ONE, {name: s_pct / 100.0}, samples=SAMPLES, seed=5).row(0, named=True)
    sigma_ft = abs(c) * H_M / FT * s_pct / 100.0
    assert row["max_altitude_ft"] == pytest.approx(nominal, abs=1e-6)
    assert row["p50_ft"] == pytest.approx(nominal, abs=4 * SE_MEDIAN * sigma_ft + 0.5)
    expected = abs(c) * H_M / FT * (math.log(1 + Z90 * s_pct / 100) - math.log(1 - Z90 * s_pct / 100))
    assert row["p90_ft"] - row["p10_ft"] == pytest.approx(expected, abs=4 * SE_WIDTH * sigma_ft)
    assert row["no_altitude_pct"] == 0.0


def test_spread_of_the_day_is_the_closed_form(tmp_path):
    # isa varies by 2 C: h = h0 - H ln((T + 2 z) / T), the same monotone map.
    cat = _isothermal(tmp_path)
    row = spread_table(cat, ONE, {"isa": 2.0}, samples=SAMPLES, seed=9).row(0, named=True)
    expected = H_M / FT * (math.log(216.65 + 2 * Z90) - math.log(216.65 - 2 * Z90))
    assert row["p90_ft"] - row["p10_ft"] == pytest.approx(expected, abs=4 * SE_WIDTH * H_M / FT * 2 / 216.65)


def test_spread_is_reproducible_and_gives_the_chance_of_a_target(tmp_path):
    cat = _isothermal(tmp_path)
    nominal = ceilings_table(cat, ONE)["max_altitude_ft"][0]
    vary = {"cd0": 0.02, "thrust": 0.03, "k": 0.02, "weight": 0.01}
    a = spread_table(cat, ONE, vary, samples=500, seed=11, target_ft=nominal)
    b = spread_table(cat, ONE, vary, samples=500, seed=11, target_ft=nominal)
    assert a.equals(b)
    # At the nominal ceiling the chance is about one half (the distribution's median; 500
    # samples: standard error 0.022, we allow 3.6 of them).
    assert a["p_reach_target"][0] == pytest.approx(0.5, abs=0.08)
    c = spread_table(cat, ONE, vary, samples=500, seed=12, target_ft=nominal)
    assert not a.equals(c)


def test_a_cases_spread_does_not_depend_on_the_other_cases_in_the_grid(demo):
    # Common random numbers: the same seed gives a case the same samples in any grid.
    vary = {"cd0": 0.02, "thrust": 0.03}
    big = spread_table(demo, Conditions(weights=(WeightSpec(90.0, "%mtow"), WeightSpec(100.0, "%mtow")),
                                        isa_devs_c=(0.0, 15.0)), vary, samples=50, seed=3)
    one = spread_table(demo, Conditions(weights=(WeightSpec(100.0, "%mtow"),), isa_devs_c=(15.0,), variants=("v88",)),
                       vary, samples=50, seed=3)
    same = big.filter((pl.col("variant") == "v88") & (pl.col("weight_pct_mtow") == 100.0) & (pl.col("isa_dev_c") == 15.0))
    for col in ("p10_ft", "p50_ft", "p90_ft"):
        assert same[col].to_list() == pytest.approx(one[col].to_list(), abs=1e-6)


def test_no_spread_round_trips_with_ceilings(demo):
    # Standard deviations of zero: every sample is the catalogue's case, so every percentile is
    # the maximum altitude `ceilings` gives.
    cond = Conditions(weights=(WeightSpec(100.0, "%mtow"),), isa_devs_c=(0.0, 20.0), mach="best")
    spread = spread_table(demo, cond, {"cd0": 0.0}, samples=10, seed=1)
    expected = ceilings_table(demo, cond)["max_altitude_ft"].to_numpy()
    for col in ("max_altitude_ft", "p10_ft", "p50_ft", "p90_ft"):
        assert spread[col].to_numpy() == pytest.approx(expected, abs=1e-6)


def test_samples_without_an_altitude_count_as_below_every_altitude(tmp_path):
    # The weak engine at the floor (above): about half the thrust draws leave no altitude, so P10
    # and P50 are null, P90 is a number, and the note says how many had none.
    cat = write_catalogue(tmp_path / "c.toml", [dict(ENGINE, static_thrust_kn=12.0)], [dict(AIRFRAME, mtow_kg=45_000.0)])
    w_kg = 1.0603 * 24_000.0 / (2 * math.sqrt(0.022 / (math.pi * 9 * 0.8))) / 9.80665 / 1.01  # 1 % below the floor's
    row = spread_table(cat, Conditions(weights=(WeightSpec(w_kg, "kg"),), mach="best", climb_fpm=(0.0,)),
                       {"thrust": 0.01}, samples=400, seed=2, target_ft=0.0).row(0, named=True)
    assert 10 < row["no_altitude_pct"] < 30  # P(z < -1) = 15.9 % (normal table)
    assert row["p10_ft"] is None and row["p50_ft"] is not None
    assert "of samples have no maximum altitude" in row["note"]
    assert row["p_reach_target"] == 0.0  # every altitude here is below 0 ft


def test_quantiles_count_no_altitude_below_and_above_the_model_top_above():
    rng = np.random.default_rng(0)
    h = rng.normal(11_000.0, 100.0, (3, 1001))
    q = pert.quantiles_m(h, [0.1, 0.5, 0.9])
    assert q == pytest.approx(np.quantile(h, [0.1, 0.5, 0.9], axis=1).T)  # numpy's default method
    h[1, :200] = np.nan  # 20 % without an altitude: P10 among them
    h[2, :150] = np.inf  # 15 % above the model top: P90 among them
    q = pert.quantiles_m(h, [0.1, 0.5, 0.9])
    assert np.isnan(q[1, 0]) and np.isfinite(q[1, 1:]).all()
    assert np.isposinf(q[2, 2]) and np.isfinite(q[2, :2]).all()


def test_the_day_shift_is_the_case_set_of_that_day(demo):
    # CaseSet.with_isa_dev gives the cases build_cases gives on that day, field for field.
    cases, _ = cases_for(demo, Conditions(isa_devs_c=(0.0,)))
    hot, _ = cases_for(demo, Conditions(isa_devs_c=(17.5,)))
    shifted = cases.with_isa_dev(cases.isa_dev_c + 17.5)
    for name in ("isa_dev_c", "tropopause_density_kg_m3", "thrust_sls_n", "weight_kg", "cd0"):
        assert np.array_equal(getattr(shifted, name), getattr(hot, name)), name
    same = pert.perturbed(cases, {"cd0": np.ones(len(cases))}, 0.0)
    assert np.array_equal(same.cd0, cases.cd0) and np.array_equal(same.tropopause_density_kg_m3,
                                                                   cases.tropopause_density_kg_m3)


def test_the_parameters_the_option_parser_knows_are_the_solvers():
    assert VARIED == pert.PARAMETERS
    assert parse_variations("cd0=2%,thrust=3%,k=2%,weight=1%") == {"cd0": 0.02, "thrust": 0.03, "k": 0.02,
                                                                   "weight": 0.01}
    with pytest.raises(ValueError):
        pert.check_variation({"cd0": 0.5})


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


@settings(max_examples=5, deadline=None)
@given(st.integers(0, 2**32 - 1), st.floats(0.0, 0.05), st.floats(0.0, 0.05), st.floats(0.0, 3.0))
def test_percentiles_are_ordered_and_the_nominal_lies_within_reach(demo, seed, s_cd0, s_thrust, s_isa):
    # Order statistics: P10 <= P50 <= P90 (a definition); shares are shares.
    frame = spread_table(demo, Conditions(isa_devs_c=(10.0,)), {"cd0": s_cd0, "thrust": s_thrust, "isa": s_isa},
                         samples=40, seed=seed, target_ft=35_000.0)
    both = frame.drop_nulls(["p10_ft", "p50_ft", "p90_ft"])
    assert (both["p10_ft"] <= both["p50_ft"]).all() and (both["p50_ft"] <= both["p90_ft"]).all()
    assert frame["no_altitude_pct"].is_between(0.0, 100.0).all()
    assert frame["p_reach_target"].is_between(0.0, 1.0).all()
