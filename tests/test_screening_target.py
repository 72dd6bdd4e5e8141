"""Screening with a target level: the heaviest weight for it, each option's against the baseline's.

Closed form (thrust proportional to density, parabolic polar, best speed, zero residual climb,
Anderson, Aircraft Performance and Design, 1999, ch. 5): level flight at the best point needs
n F0 sigma = 2 W sqrt(K CD0), so the heaviest weight for a level is W = n F0 sigma / (2 sqrt(K CD0)),
with sigma = p / (R T rho0) at the level's pressure on the day (ICAO Doc 7488/3 for the
isothermal layer's p = p11 exp(-(h - 11 km) / H), H = R T / g). An option with r times the thrust
lifts r times the weight to the level: the difference is (r - 1) times the baseline's, on every day.
"""

import math
from dataclasses import replace

import polars as pl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import write_catalogue
from test_screening import AIRFRAME, ENGINES, GRID
from variantcmp.table import Conditions, ceilings_table, heaviest_table
from variantcmp.table.screening import (TARGET_WEIGHT_COLUMNS, compare_heaviest, compare_options, screening_summary,
                                        screening_table)
from variantcmp.units import WeightSpec

FT, G0, R_AIR = 0.3048, 9.80665, 287.05287  # ICAO Doc 7488/3 constants
P11_PA, T11_K, RHO0 = 22_632.06, 216.65, 1.225  # ISA at 11 km and at sea level (ICAO Doc 7488/3)


def closed_form_weight_kg(thrust_kn: float, level_ft: float, isa_dev_c: float) -> float:
    """W = n F0 sigma / (2 sqrt(K CD0)) / g in the isothermal layer (the module docstring)."""
    h_m = level_ft * FT
    p = P11_PA * math.exp(-(h_m - 11_000.0) * G0 / (R_AIR * T11_K))
    sigma = p / (R_AIR * (T11_K + isa_dev_c)) / RHO0
    k = 1.0 / (math.pi * AIRFRAME["aspect_ratio"] * AIRFRAME["oswald_e"])
    return AIRFRAME["engine_count"] * thrust_kn * 1000.0 * sigma / (2.0 * math.sqrt(k * AIRFRAME["cd0"])) / G0


def test_the_heaviest_weight_for_a_level_scales_with_thrust(tmp_path):
    catalogue = write_catalogue(tmp_path / "c.toml", ENGINES, [AIRFRAME])
    rows = screening_table(catalogue, replace(GRID, target_fl_ft=39_000.0), "e1")
    assert set(TARGET_WEIGHT_COLUMNS) <= set(rows.columns)
    thrust_kn = {e["id"]: e["static_thrust_kn"] for e in ENGINES}
    for row in rows.iter_rows(named=True):
        assert row["target_weight_limit"] == row["baseline_target_weight_limit"] == "thrust"
        # Within 0.5 kg of the hand calculation (the constants above are given to 7 digits).
        assert row["baseline_target_weight_kg"] == pytest.approx(
            closed_form_weight_kg(thrust_kn["e1"], 39_000.0, row["isa_dev_c"]), abs=0.5)
        r = thrust_kn[row["engine"]] / thrust_kn["e1"]
        assert row["target_weight_delta_kg"] == pytest.approx((r - 1.0) * row["baseline_target_weight_kg"], rel=1e-6)
    # e3 (1.5 x thrust) has its ceiling on the certified one at every grid point, yet for FL390 it
    # still lifts 1.5 x the weight: a flat limit at the top says nothing about the weight for a level.
    e3 = rows.filter(pl.col("engine") == "e3")
    assert (e3["limit"] == "certified").all() and (e3["target_weight_limit"] == "thrust").all()
    summary = screening_summary(rows).filter(pl.col("engine") == "e2").row(0, named=True)
    assert summary["mean_target_weight_delta_kg"] == pytest.approx(rows.filter(pl.col("engine") == "e2")
                                                                   ["target_weight_delta_kg"].mean())


def test_the_heaviest_weights_round_trip_with_ceilings(demo):
    # Ceilings at the option's and at the baseline's heaviest weight give the target back (thrust or
    # buffet binding: within 1 ft), and 1 % heavier both fall short of it.
    target = 37_000.0
    cond = Conditions(weights=(WeightSpec(90.0, "%mtow"), WeightSpec(100.0, "%mtow")), isa_devs_c=(0.0, 20.0),
                      target_fl_ft=target, variants=("v88", "v104"))
    rows = screening_table(demo, cond, "ossel-86").filter(pl.col("weight_pct_mtow") == 100.0)
    checked = 0
    for row in rows.iter_rows(named=True):
        for engine, weight, limit in ((row["engine"], row["target_weight_kg"], row["target_weight_limit"]),
                                      (row["baseline"], row["baseline_target_weight_kg"],
                                       row["baseline_target_weight_limit"])):
            assert weight is not None and limit in ("thrust", "buffet")
            back = ceilings_table(demo, replace(cond, variants=(row["variant"],), engines=(engine,),
                                                weights=(WeightSpec(weight, "kg"), WeightSpec(1.01 * weight, "kg")),
                                                isa_devs_c=(row["isa_dev_c"],)))
            at, heavier = back["max_altitude_ft"].to_list()
            assert at == pytest.approx(target, abs=1.0) and heavier < target - 1.0
            checked += 1
    assert checked == rows.height * 2 == 16


def test_turboprop_options_screen_with_a_target(demo):
    # The demo's turboprops: more shaft power lifts more weight to FL200 on every day (fact of the
    # trade: at a fixed speed propeller thrust is eta P / V, so more power is more thrust).
    cond = Conditions(weights=(WeightSpec(90.0, "%mtow"), WeightSpec(100.0, "%mtow")), isa_devs_c=(0.0, 20.0),
                      target_fl_ft=20_000.0)
    rows = screening_table(demo, cond, "tavish-20")
    assert sorted(rows["variant"].unique()) == ["t72", "t78"] and (rows["engine"] == "tavish-24").all()
    assert (rows["target_weight_delta_kg"] > 0).all() and (rows["delta_ft"] >= 0).all()
    heavy = heaviest_table(demo, cond, (20_000.0,))
    for row in rows.iter_rows(named=True):
        mine = heavy.filter((pl.col("variant") == row["variant"]) & (pl.col("engine") == row["engine"])
                            & (pl.col("isa_dev_c") == row["isa_dev_c"]))
        assert mine["max_weight_kg"][0] == row["target_weight_kg"]


@settings(max_examples=5, deadline=None)
@given(st.sampled_from([("v88", "ossel-78", "brannick-84t"), ("v104", "ossel-86", "brannick-74"),
                        ("t72", "tavish-20", "tavish-24")]),
       st.floats(-10.0, 30.0), st.integers(200, 400), st.sampled_from(["cruise", "best"]))
def test_heavier_for_the_level_means_it_reaches_it_at_the_other_options_weight(demo, pair, dev, fl, mach):
    # Swapping the baseline negates the weight difference; and an option that lifts more to the
    # level reaches it at the other option's heaviest weight (a lighter aircraft climbs higher at
    # the same speed: common practice, no source).
    variant, a, b = pair
    cond = Conditions(weights=(WeightSpec(95.0, "%mtow"),), isa_devs_c=(dev,), mach=mach, variants=(variant,),
                      target_fl_ft=fl * 100.0)
    frame = ceilings_table(demo, cond)
    heavy = heaviest_table(demo, cond, (fl * 100.0,))
    ab = compare_heaviest(compare_options(frame, a), heavy, a).filter(pl.col("engine") == b).row(0, named=True)
    ba = compare_heaviest(compare_options(frame, b), heavy, b).filter(pl.col("engine") == a).row(0, named=True)
    if ab["target_weight_delta_kg"] is None:
        assert ba["target_weight_delta_kg"] is None
        return
    assert ab["target_weight_delta_kg"] == pytest.approx(-ba["target_weight_delta_kg"])
    if abs(ab["target_weight_delta_kg"]) > 10.0:
        winner, loser_weight = (b, ab["baseline_target_weight_kg"]) if ab["target_weight_delta_kg"] > 0 else \
            (a, ab["target_weight_kg"])
        back = ceilings_table(demo, replace(cond, engines=(winner,), weights=(WeightSpec(loser_weight, "kg"),)))
        assert back["max_altitude_ft"][0] >= fl * 100.0 - 1.0


def test_a_level_above_the_certified_ceiling_says_why_in_the_matrix(demo):
    # FL370 is above the turboprops' certified ceiling (25,000 ft in the demo): no weight reaches
    # it, and the screening view's ΔW row says so in the reason word of `heaviest`.
    from variantcmp.app.screening_view import block, sorted_options

    rows = screening_table(demo, Conditions(weights=GRID.weights, isa_devs_c=(0.0, 15.0), target_fl_ft=37_000.0),
                           "tavish-24")
    assert rows["target_weight_kg"].is_null().all() and (rows["target_weight_reason"] == "certified").all()
    shown = block(sorted_options(rows, screening_summary(rows), None, False)[0], True).plain
    assert "no heaviest weight for FL370 (certified)" in shown
