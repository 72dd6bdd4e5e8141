"""Speed-altitude envelopes and sweeps: each boundary against its defining equation, the envelope's
top and Mach line against the ceiling solver, CAS -> Mach against worked values."""

import math

import numpy as np
import polars as pl
import pytest

from variantcmp import aero, thrust
from variantcmp.airspeed import cas_to_mach, mach_to_cas
from variantcmp.atmosphere import A0_MS, G0, GAMMA, R_AIR, atmosphere, isa_pressure_pa, isa_state
from variantcmp.catalogue import bundled_fleet_dir, demo_catalogue_path, load_catalogue
from variantcmp.envelope import EnvelopeCase, compute_envelopes, sweep
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import OptionError, WeightSpec

FT, KT, FPM = 0.3048, 1852 / 3600, 0.3048 / 60


@pytest.fixture(scope="module")
def fleet():
    return load_catalogue(demo_catalogue_path())


@pytest.fixture(scope="module")
def survey():
    return load_catalogue(bundled_fleet_dir() / "tallon-fells-survey.toml")


@pytest.fixture(scope="module")
def env(fleet):
    return compute_envelopes(fleet, [EnvelopeCase("v88", "ossel-78", 45_200.0, 0.0, 300.0, 1.3),
                                     EnvelopeCase("v70", "brannick-74", 36_000.0, 15.0, 100.0, 1.3),
                                     EnvelopeCase("v104", "brannick-84t", 51_500.0, 10.0, 300.0, 1.3)])


def rows_with(table, case, column):
    t = table.filter((pl.col("case") == case) & pl.col(column).is_not_null())
    assert t.height > 5, f"{column} is missing for case {case}"
    return t


def dynamic_pressure(alt_ft, isa_dev, tas_kt):
    """q = rho V^2 / 2 from density and true airspeed (not the solver's (gamma/2) p M^2 form)."""
    _, _, rho, _ = atmosphere(np.asarray(alt_ft) * FT, isa_dev)
    return 0.5 * rho * (np.asarray(tas_kt) * KT) ** 2


def test_stall_boundary_has_cl_max_at_1g(env, fleet):
    # Lift equation L = q S CL = W at CL max (Anderson, Introduction to Flight, eq. 5.20 form).
    v = fleet.variants["v88"]
    t = rows_with(env.table, 0, "stall_1g_mach")
    q = dynamic_pressure(t["altitude_ft"], 0.0, t["stall_1g_tas_kt"])
    cl = 45_200.0 * G0 / (q * v.wing_area_m2)
    np.testing.assert_allclose(cl, v.cl_max, rtol=1e-6)


CASES = {0: ("v88", 45_200.0, 0.0), 1: ("v70", 36_000.0, 15.0), 2: ("v104", 51_500.0, 10.0)}


@pytest.mark.parametrize("branch", ["low", "high"])
@pytest.mark.parametrize("load, column", [(1.0, "1g"), (1.3, "margin")])
def test_buffet_boundaries_sit_on_the_buffet_cl(env, fleet, branch, load, column):
    # n W = q S CL_buffet(M), the catalogue's onset CL interpolated linearly (numpy, not the solver).
    name = f"buffet_{branch}_{column}"
    checked = 0
    for case, (variant, weight, dev) in CASES.items():
        v = fleet.variants[variant]
        t = env.table.filter((pl.col("case") == case) & pl.col(f"{name}_mach").is_not_null())
        m = t[f"{name}_mach"].to_numpy()
        q = dynamic_pressure(t["altitude_ft"], dev, t[f"{name}_tas_kt"])
        cl_needed = load * weight * G0 / (q * v.wing_area_m2)
        np.testing.assert_allclose(cl_needed, np.interp(m, v.buffet_mach, v.buffet_cl), rtol=1e-6)
        checked += t.height
    assert checked >= 3


def climb_rate_fpm(fleet, variant, engine, weight_kg, isa_dev, alt_ft, mach):
    """Residual climb from the model functions, assembled here: total-energy equation
    dh/dt = (F - D) V / W x (T_ISA/T) x f (Anderson, Aircraft Performance and Design, sec. 5.11)."""
    v, e = fleet.variants[variant], fleet.engines[engine]
    h = np.asarray(alt_ft) * FT
    t_isa, p, lapse = isa_state(h)
    temp = t_isa + isa_dev
    rho = p / (R_AIR * temp)
    vel = mach * np.sqrt(GAMMA * R_AIR * temp)
    q = 0.5 * rho * vel**2
    w = weight_kg * G0
    cl = w / (q * v.wing_area_m2)
    cd = v.cd0 + v.k * cl**2 + aero.wave_drag_coefficient(mach, cl, v.thickness_ratio, v.sweep_deg, v.korn_factor)
    n = v.engine_count * e.static_thrust_kn * 1000 * e.rating_fraction
    if e.model == "turbofan":
        # Static thrust is the thrust at sea level, static, ISA (its definition): the lapse is
        # divided by its value there. Flat rated: the lapse sees the ISA temperature (definition of
        # flat rating, common practice, no source).
        seen = t_isa if e.flat_rate_isa_dev_c is not None else temp
        f = n * thrust.turbofan_lapse_fraction(mach, seen, p, e.throttle_ratio)
        f = f / thrust.turbofan_lapse_fraction(0.0, 288.15, 101_325.0, e.throttle_ratio)
        f = f * thrust.hot_day_factor(isa_dev, e.flat_rate_isa_dev_c, e.hot_day_loss_per_c)
    elif e.model == "density-lapse":
        # Flat rated: thrust held at its ISA value up to the flat-rate deviation (definition of
        # flat rating, common practice, no source), so the lapse sees ISA density.
        dev_seen = 0.0 if e.flat_rate_isa_dev_c is not None else isa_dev
        rho_seen = p / (R_AIR * (t_isa + dev_seen))
        rho11 = isa_pressure_pa(11_000.0) / (R_AIR * (216.65 + dev_seen))
        f = n * thrust.density_lapse_fraction(rho_seen, e.lapse_exponent, rho11, e.lapse_exponent_above_tropopause)
        f = f * thrust.hot_day_factor(isa_dev, e.flat_rate_isa_dev_c, e.hot_day_loss_per_c)
    else:
        table = thrust.TableLapse(e.table_altitude_ft, e.table_mach, e.table_thrust_fraction)
        f = n * table(np.asarray(alt_ft), mach) * thrust.hot_day_factor(isa_dev, e.flat_rate_isa_dev_c,
                                                                         e.hot_day_loss_per_c)
    share = aero.energy_share_factor(mach, temp, t_isa, lapse)
    return (f - q * v.wing_area_m2 * cd) * vel / w * (t_isa / temp) * share / FPM


@pytest.mark.parametrize("case, variant, engine, weight, dev, climb",
                         [(0, "v88", "ossel-78", 45_200.0, 0.0, 300.0),
                          (1, "v70", "brannick-74", 36_000.0, 15.0, 100.0),
                          (2, "v104", "brannick-84t", 51_500.0, 10.0, 300.0)])
@pytest.mark.parametrize("side", ["min", "max"])
def test_thrust_boundaries_balance_thrust_drag_and_climb(env, fleet, case, variant, engine, weight, dev, climb, side):
    # Thrust = drag + the climb's share of weight: residual climb equals the criterion on the boundary.
    t = rows_with(env.table, case, f"thrust_{side}_mach")
    rate = climb_rate_fpm(fleet, variant, engine, weight, dev, t["altitude_ft"].to_numpy(),
                          t[f"thrust_{side}_mach"].to_numpy())
    np.testing.assert_allclose(rate, climb, atol=0.05)


def test_vmo_boundary_reads_vmo_and_mmo_is_constant(env, fleet):
    v = fleet.variants["v88"]
    t = rows_with(env.table, 0, "vmo_mach")
    np.testing.assert_allclose(t["vmo_cas_kt"], v.vmo_kt, rtol=1e-9)
    assert t["mmo_mach"].unique().to_list() == [v.mmo]


def test_cas_to_mach_worked_values():
    # Sea level ISA: CAS = TAS = M a0, a0 = 340.294 m/s = 661.48 kt (ICAO Doc 7488 / ISO 2533).
    assert A0_MS / KT == pytest.approx(661.48, abs=0.01)
    assert cas_to_mach(300 * KT, 101_325.0) == pytest.approx(300 / 661.4786, rel=1e-6)
    # FL350 (p = 23,842 Pa, U.S. Standard Atmosphere 1976 table): M0.80 reads about 272 kt CAS
    # (from memory, the usual flight-deck figure), and the inverse returns the Mach.
    p350 = isa_pressure_pa(35_000 * FT)
    assert p350 == pytest.approx(23_842, rel=2e-4)
    assert mach_to_cas(0.80, p350) / KT == pytest.approx(272, abs=1.0)
    assert cas_to_mach(mach_to_cas(0.80, p350), p350) == pytest.approx(0.80, abs=1e-12)
    # FL100: 250 kt CAS is about M0.45 and 290 kt TAS (from memory; the +2 %/1,000 ft rule of thumb
    # gives 300 kt: common practice, no source).
    p100 = isa_pressure_pa(10_000 * FT)
    m = cas_to_mach(250 * KT, p100)
    assert m == pytest.approx(0.452, abs=0.002)
    tas_kt = m * math.sqrt(GAMMA * R_AIR * (288.15 - 0.0065 * 10_000 * FT)) / KT
    assert tas_kt == pytest.approx(290, abs=3)


def best(catalogue, spec, mach):
    frame = ceilings_table(catalogue, Conditions(
        weights=(WeightSpec(spec.weight_kg, "kg"),), isa_devs_c=(spec.isa_dev_c,), mach=mach,
        climb_fpm=(spec.climb_fpm,), g_margin=spec.g_margin, variants=(spec.variant,), engines=(spec.engine,)))
    return frame.row(0, named=True)


SPECS = [EnvelopeCase("v88", "ossel-78", 45_200.0), EnvelopeCase("v70", "brannick-74", 38_500.0),
         EnvelopeCase("v104", "brannick-84t", 48_000.0, 15.0), EnvelopeCase("v88", "ossel-86", 40_000.0, 25.0, 100.0)]


@pytest.mark.parametrize("spec", SPECS, ids=lambda s: f"{s.variant}-{s.engine}-{s.isa_dev_c:g}")
def test_top_and_cruise_line_agree_with_the_ceiling_solver(fleet, spec):
    summary = compute_envelopes(fleet, [spec]).summary.row(0, named=True)
    solved = best(fleet, spec, "best")
    assert summary["top_ft"] == pytest.approx(solved["max_altitude_ft"], abs=20.0)
    assert solved["limit"] in summary["top_limit"]
    cruise = best(fleet, spec, "cruise")
    assert summary["marked_top_ft"] == pytest.approx(cruise["max_altitude_ft"], abs=20.0)
    assert summary["marked_limit"] == cruise["limit"]


def test_survey_type_top_agrees_too(survey):
    specs = [EnvelopeCase("ha2", "wren-20", 8_400.0), EnvelopeCase("ha2-er", "wren-20ha", 9_000.0, 10.0)]
    summary = compute_envelopes(survey, specs).summary
    for spec, row in zip(specs, summary.iter_rows(named=True)):
        assert row["top_ft"] == pytest.approx(best(survey, spec, "best")["max_altitude_ft"], abs=20.0)
        assert row["marked_top_ft"] == pytest.approx(best(survey, spec, "cruise")["max_altitude_ft"], abs=20.0)


def test_band_is_ordered_and_closes_at_the_top(env):
    t = env.table.filter(pl.col("open"))
    assert (t["band_low_mach"] <= t["band_high_mach"] + 1e-9).all()
    assert (t["stall_1g_mach"] <= t["band_low_mach"] + 1e-9).all()
    for row in env.summary.iter_rows(named=True):
        case = env.table.filter(pl.col("case") == row["case"])
        assert case.filter(pl.col("open"))["altitude_ft"].max() == pytest.approx(row["top_ft"], abs=0.1)
        assert not case.filter(pl.col("altitude_ft") > row["top_ft"] + 1.0)["open"].any()
        # Unless a certified or cabin ceiling caps it, the band narrows to a point at the top.
        top = case.filter(pl.col("open")).sort("altitude_ft").row(-1, named=True)
        if row["top_limit"] not in ("certified", "cabin"):
            assert top["band_high_mach"] - top["band_low_mach"] < 0.01
        else:
            assert row["top_ft"] == pytest.approx(row[f"{row['top_limit']}_ft"], abs=0.1)


def test_table_has_speeds_for_every_boundary(env):
    for name in ("stall_1g", "buffet_low_1g", "buffet_low_margin", "thrust_min", "thrust_max",
                 "buffet_high_margin", "buffet_high_1g", "vmo", "mmo", "band_low", "band_high", "marked"):
        for unit in ("mach", "tas_kt", "cas_kt"):
            assert f"{name}_{unit}" in env.table.columns
    assert env.table["flight_level"].dtype == pl.Int64


def test_more_than_three_cases_is_refused(fleet):
    with pytest.raises(OptionError, match="at most 3"):
        compute_envelopes(fleet, [EnvelopeCase("v88", "ossel-78", w) for w in (40e3, 41e3, 42e3, 43e3)])


def test_weight_sweep_spans_oew_to_mtow_and_never_rises(fleet):
    sw = sweep(fleet, Conditions(variants=("v88",)), "weight", points=11)
    for (variant, engine), part in sw.frame.group_by("variant", "engine"):
        v = fleet.variants[variant]
        assert part["weight_kg"].min() == pytest.approx(v.oew_kg)
        assert part["weight_kg"].max() == pytest.approx(v.mtow_kg)
        alt = part.sort("weight_kg")["max_altitude_ft"].to_numpy()
        # A heavier aircraft never gets higher (trade fact: ceilings fall with weight).
        assert np.all(np.diff(alt) <= 1e-6)
        assert part["limit"].null_count() == 0


def test_isa_sweep_matches_ceilings_rows(fleet):
    sw = sweep(fleet, Conditions(variants=("v104",), engines=("ossel-86",)), "isa", points=5, value_range=(0.0, 20.0))
    assert sw.frame["isa_dev_c"].to_list() == [0.0, 5.0, 10.0, 15.0, 20.0]
    direct = ceilings_table(fleet, Conditions(variants=("v104",), engines=("ossel-86",), isa_devs_c=(15.0,)))
    row = sw.frame.filter(pl.col("isa_dev_c") == 15.0).row(0, named=True)
    assert row["max_altitude_ft"] == pytest.approx(direct["max_altitude_ft"][0], abs=1e-6)


def test_mach_sweep_peaks_at_the_best_speed(fleet):
    spec = EnvelopeCase("v88", "ossel-78", 45_200.0)
    sw = sweep(fleet, Conditions(variants=("v88",), engines=("ossel-78",)), "mach", points=41)
    best_ft = best(fleet, spec, "best")["max_altitude_ft"]
    peak = sw.frame["max_altitude_ft"].max()
    assert peak <= best_ft + 20.0
    assert peak >= best_ft - 150.0  # a 41-point grid lands within a few hundred ft of the optimum
    assert set(sw.frame["limit"].drop_nulls()) <= {"thrust", "buffet", "stall", "certified", "cabin", "none"}


def test_a_top_on_the_certified_ceiling_is_that_ceiling_exactly(demo):
    # One rounding rule for flight levels everywhere (the tool's contract, no external source): a
    # case that `ceilings` gives as FL410 at 41,000 ft certified must not be FL409 (40,999 ft) in
    # the envelope, whose top is found by bisection.
    from variantcmp.envelope import EnvelopeCase, compute_envelopes
    from variantcmp.table import Conditions, ceilings_table
    from variantcmp.units import WeightSpec, flight_level_number, format_flight_level

    weight = 0.8 * demo.variants["v70"].mtow_kg
    env = compute_envelopes(demo, [EnvelopeCase("v70", "brannick-74", weight, 0.0, 300.0)])
    top = env.summary.row(0, named=True)
    row = ceilings_table(demo, Conditions(weights=(WeightSpec(weight, "kg"),), mach="best", variants=("v70",),
                                          engines=("brannick-74",))).row(0, named=True)
    assert row["limit"] == top["top_limit"] == "certified"
    assert top["top_ft"] == row["max_altitude_ft"] == 41_000.0
    assert top["top_flight_level"] == row["flight_level"] == 410
    assert format_flight_level(40_999.999) == "FL410" and int(flight_level_number(40_999.99)) == 409


def test_sweep_series_are_labelled_as_people_write_them(demo):
    from variantcmp.sweeps import sweep
    from variantcmp.table import Conditions

    result = sweep(demo, Conditions(isa_devs_c=(0.0, 15.0), climb_fpm=(0.0, 300.0), variants=("v88",)), "weight", 5)
    labels = set(result.frame["series"])
    assert "v88/ossel-78 ISA+15 300 ft/min" in labels and "v88/ossel-78 ISA 0 ft/min" in labels
    assert not any("+0.0" in label or ".0fpm" in label for label in labels)
