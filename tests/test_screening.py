"""Engine-option screening: each option against a baseline option over the weight x ISA grid.

Closed form (thrust proportional to density, parabolic polar, best speed, zero residual climb,
Anderson, Aircraft Performance and Design, 1999, ch. 5): the ceiling sits where the density
ratio is 2 W sqrt(K CD0) / (n F0); in the isothermal layer the pressure altitude follows
p = p11 exp(-(h - 11 km) / H), H = R T_ISA / g = 6,341.6 m (ICAO Doc 7488/3), and on any day the
temperature there is constant, so the density at a pressure is p / (R T): an engine with a thrust
F2 = r F1 needs r times less pressure and flies H ln r higher, at every weight and on every day.
"""

import math

import polars as pl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import write_catalogue
from variantcmp.table import Conditions, ceilings_table
from variantcmp.table.screening import (GAINS, LOSES, TIES, baseline_candidates, compare_options, screened_variants,
                                        screening_grid, screening_summary, screening_table)
from variantcmp.units import OptionError, WeightSpec

FT = 0.3048
H_M = 287.05287 * 216.65 / 9.80665

ENGINES = [{"id": f"e{i}", "model": "density-lapse", "static_thrust_kn": kn, "lapse_exponent": 1.0}
           for i, kn in ((1, 50.0), (2, 55.0), (3, 75.0))]
AIRFRAME = {"id": "a1", "engine_options": ["e1", "e2", "e3"], "engine_count": 2, "wing_area_m2": 80.0,
            "aspect_ratio": 9.0, "oswald_e": 0.8, "cd0": 0.022, "cl_max": 2.0, "mtow_kg": 40_000.0,
            "cruise_mach": 0.7, "mmo": 0.95, "max_altitude_ft": 47_000.0}
GRID = Conditions(weights=tuple(WeightSpec(p, "%mtow") for p in (85.0, 95.0, 100.0)), isa_devs_c=(0.0, 15.0),
                  mach="best", climb_fpm=(0.0,))


@pytest.fixture
def isothermal(tmp_path):
    return write_catalogue(tmp_path / "c.toml", ENGINES, [AIRFRAME, dict(AIRFRAME, id="solo", engine_options=["e1"])])


def test_more_thrust_is_h_ln_r_higher_until_the_certified_ceiling_binds(isothermal):
    rows = screening_table(isothermal, GRID, "e1")
    assert rows["variant"].unique().to_list() == ["a1"]  # "solo" offers only the baseline
    e2 = rows.filter(pl.col("engine") == "e2")
    assert e2.height == 6 and (e2["limit"] == "thrust").all() and not e2["limit_changed"].any()
    for row in e2.iter_rows(named=True):
        assert 36_089 < row["baseline_ft"] < 47_000  # isothermal layer, below the certified ceiling
        # Within 0.1 ft (the solver's best-speed accuracy; measured 1e-9 ft).
        assert row["delta_ft"] == pytest.approx(H_M * math.log(1.1) / FT, abs=0.1)
        assert row["outcome"] == GAINS
    # 1.5 x the thrust would fly H ln 1.5 = 2,571 m higher (ISA): the certified ceiling binds, and the difference
    # is that ceiling less the baseline's thrust ceiling.
    e3 = rows.filter(pl.col("engine") == "e3")
    assert (e3["limit"] == "certified").all() and e3["limit_changed"].all()
    assert e3["delta_ft"].to_list() == pytest.approx((47_000.0 - e3["baseline_ft"]).to_list(), abs=1e-6)
    summary = screening_summary(rows)
    s3 = summary.filter(pl.col("engine") == "e3").row(0, named=True)
    assert s3["limit_changes"] == 6 and s3["gains_pct"] == 100.0
    assert s3["limit_flips"] == "thrust→certified at 85 to 100 %MTOW, ISA to ISA+15 (6 points)"
    s2 = summary.filter(pl.col("engine") == "e2").row(0, named=True)
    assert s2["worst_delta_ft"] <= s2["mean_delta_ft"] <= s2["best_delta_ft"] and s2["limit_flips"] == ""


def test_screening_round_trips_with_ceilings(demo):
    # Each row's two altitudes are the ceilings table's rows for the option and the baseline.
    cond = Conditions(weights=(WeightSpec(90.0, "%mtow"), WeightSpec(100.0, "%mtow")), isa_devs_c=(0.0, 20.0))
    rows = screening_table(demo, cond, "ossel-86")
    table = ceilings_table(demo, cond).select("variant", "engine", "weight_kg", "isa_dev_c", "max_altitude_ft", "limit")
    keys = ["variant", "weight_kg", "isa_dev_c"]
    check = (rows.join(table, on=[*keys, "engine"], suffix="_c")
             .join(table.filter(pl.col("engine") == "ossel-86").drop("engine"), on=keys, suffix="_b"))
    assert check.height == rows.height == 4 * 4  # v88 and v104, two other options each
    assert (check["max_altitude_ft"] == check["max_altitude_ft_c"]).all()
    assert (check["baseline_ft"] == check["max_altitude_ft_b"]).all()
    assert (check["limit_changed"] == (check["limit_c"] != check["limit_b"])).all()


def test_only_one_altitude_is_a_gain_or_a_loss_and_none_is_no_outcome():
    # Outcomes by definition: an option that has an altitude where the baseline has none gains.
    frame = pl.DataFrame({
        "variant": ["a"] * 6, "engine": ["b", "b", "b", "o", "o", "o"], "weight_kg": [1.0, 2.0, 3.0] * 2,
        "isa_dev_c": [0.0] * 6, "climb_fpm": [0.0] * 6, "mach": [0.7] * 6, "weight_pct_mtow": [50.0] * 6,
        "max_altitude_ft": [30_000.0, None, None, 30_000.5, 31_000.0, None],
        "limit": ["thrust", None, None, "thrust", "thrust", None], "note": [""] * 6,
        "over_mtow": [False] * 6, "below_empty_weight": [False] * 6})
    rows = compare_options(frame, "b")
    assert rows["outcome"].to_list() == [TIES, GAINS, None]
    assert rows["limit_changed"].to_list() == [False, True, False]
    assert rows["delta_ft"].to_list()[1:] == [None, None]
    frame2 = frame.with_columns(engine=pl.when(pl.col("engine") == "b").then(pl.lit("o")).otherwise(pl.lit("b")))
    assert compare_options(frame2, "b")["outcome"].to_list() == [TIES, LOSES, None]


def test_baselines_and_what_is_left_out(isothermal, demo):
    assert baseline_candidates(isothermal) == ["e1", "e2", "e3"]
    assert baseline_candidates(demo, ("v70",)) == ["ossel-78", "brannick-74"]
    assert screened_variants(isothermal, GRID, "E1") == ("e1", ["a1"], ["solo offers only e1"])
    with pytest.raises(OptionError, match="unknown engine option 'e9'.*expected one of: e1, e2, e3"):
        screened_variants(isothermal, GRID, "e9")
    with pytest.raises(OptionError, match="nothing to compare with ossel-86 .v70 does not offer ossel-86.; "
                                          "variants offering it beside another option: v88, v104"):
        screened_variants(demo, Conditions(variants=("v70",)), "ossel-86")


def test_the_default_grid_where_the_conditions_give_one_weight_or_one_day():
    grid = screening_grid(Conditions())
    assert [w.value for w in grid.weights] == [80.0, 85.0, 90.0, 95.0, 100.0]
    assert grid.isa_devs_c == (0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0)
    given_ = Conditions(weights=GRID.weights, isa_devs_c=(0.0, 15.0))
    assert screening_grid(given_).weights == GRID.weights and screening_grid(given_).isa_devs_c == (0.0, 15.0)


@settings(max_examples=6, deadline=None)
@given(st.sampled_from([("v88", "ossel-78", "brannick-84t"), ("v104", "ossel-86", "brannick-74"),
                        ("v70", "ossel-78", "brannick-74")]),
       st.floats(70.0, 100.0), st.floats(-10.0, 30.0), st.sampled_from(["cruise", "best"]))
def test_swapping_the_baseline_swaps_the_sign(demo, pair, w, dev, mach):
    # A difference changes sign with the order of its terms, and a gain becomes a loss.
    variant, a, b = pair
    cond = Conditions(weights=(WeightSpec(w, "%mtow"), WeightSpec(min(w + 5, 105.0), "%mtow")), isa_devs_c=(dev,),
                      mach=mach, variants=(variant,))
    frame = ceilings_table(demo, cond)
    ab = compare_options(frame, a).filter(pl.col("engine") == b)
    ba = compare_options(frame, b).filter(pl.col("engine") == a)
    assert ab["delta_ft"].to_list() == pytest.approx([None if d is None else -d for d in ba["delta_ft"].to_list()])
    flip = {GAINS: LOSES, LOSES: GAINS, TIES: TIES, None: None}
    assert ab["outcome"].to_list() == [flip[o] for o in ba["outcome"].to_list()]
    s_ab, s_ba = screening_summary(ab).row(0, named=True), screening_summary(ba).row(0, named=True)
    if s_ab["gains_pct"] is not None:
        assert s_ab["gains_pct"] == pytest.approx(s_ba["loses_pct"])
        assert s_ab["gains_pct"] + s_ab["ties_pct"] + s_ab["loses_pct"] == pytest.approx(100.0)
