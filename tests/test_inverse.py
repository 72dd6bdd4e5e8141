"""The planner's inverse questions: the heaviest weight and the hottest day for a flight level.

Checked three ways: against closed forms on catalogues of our own (steady level flight with a
parabolic polar and thrust proportional to density: Anderson, *Aircraft Performance and Design*,
McGraw-Hill 1999, ch. 5), by round trips through the ceilings answer on both bundled fleets, and
by hypothesis properties.
"""

import math

import numpy as np
import polars as pl
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp.catalogue import demo_catalogue_paths, load_catalogue
from variantcmp.table import HEAVIEST_COLUMNS, HOTTEST_COLUMNS, Conditions, ceilings_table
from variantcmp.table.inverse import heaviest_table, hottest_table, planner_table
from variantcmp.units import WeightSpec

FT = 0.3048
G = 9.80665
R = 287.05287
RHO0 = 1.225
GAMMA = 1.4
CLIMBS = (0.0, 100.0, 300.0)  # absolute, service and cruise ceilings' residual climb (ft/min)
FLEETS = [load_catalogue(p) for p in demo_catalogue_paths()]


def _isa(h_m):
    """ISA temperature (K) and pressure (Pa) below 20 km (ICAO Doc 7488/3 closed forms, written
    out here independently of variantcmp.atmosphere)."""
    if h_m <= 11_000.0:
        t = 288.15 - 0.0065 * h_m
        return t, 101_325.0 * (t / 288.15) ** (G / (R * 0.0065))
    t11 = 288.15 - 0.0065 * 11_000.0
    p11 = 101_325.0 * (t11 / 288.15) ** (G / (R * 0.0065))
    return 216.65, p11 * math.exp(-G * (h_m - 11_000.0) / (R * 216.65))


PLAIN = dict(cl_max=2.0, mmo=0.95)  # a parabolic polar, no compressibility, buffet, certified or cabin limit
N_F0 = 2 * 60_000.0  # two engines of 60 kN static thrust, thrust proportional to density
K = 1.0 / (math.pi * 9.0 * 0.8)
CD0 = 0.022
S = 80.0


def _plain(tmp_path, **changes):
    return write_catalogue(tmp_path / "c.toml", [engine_spec()], [variant_spec(**{**PLAIN, **changes})])


def _sigma(target_ft, dev):
    t_isa, p = _isa(target_ft * FT)
    return p / (R * (t_isa + dev)) / RHO0


def _one(frame):
    assert frame.height == 1
    return frame.row(0, named=True)


# --- closed forms ---------------------------------------------------------------------------------

@pytest.mark.parametrize("target_ft, dev", [(31_000.0, 0.0), (35_000.0, 15.0), (39_000.0, -10.0), (41_000.0, 25.0)])
def test_heaviest_at_best_speed_is_the_closed_form(tmp_path, target_ft, dev):
    # Best speed, zero residual climb: thrust n F0 sigma balances the least drag 2 W sqrt(K CD0)
    # (Anderson, Aircraft Performance and Design, sec. 5.4), so W_max = n F0 sigma / (2 sqrt(K CD0)),
    # reached at CL = sqrt(CD0 / K).
    row = _one(heaviest_table(_plain(tmp_path), Conditions(isa_devs_c=(dev,), mach="best", climb_fpm=(0.0,)),
                              (target_ft,)))
    w_n = N_F0 * _sigma(target_ft, dev) / (2 * math.sqrt(K * CD0))
    assert row["max_weight_kg"] == pytest.approx(w_n / G, abs=1.0)
    assert row["limit"] == "thrust" and row["note"] == ""
    p = _isa(target_ft * FT)[1]
    cl = row["max_weight_kg"] * G / (0.5 * GAMMA * p * row["mach"] ** 2 * S)
    assert cl == pytest.approx(math.sqrt(CD0 / K), rel=2e-3)


@pytest.mark.parametrize("mach, target_ft, dev", [(0.6, 30_000.0, 0.0), (0.72, 36_000.0, 10.0), (0.8, 33_000.0, -5.0),
                                                  (0.5, 41_000.0, 30.0)])
def test_heaviest_at_a_fixed_mach_is_the_closed_form(tmp_path, mach, target_ft, dev):
    # At a fixed Mach thrust equals drag where n F0 sigma = q S CD0 + K W^2 / (q S), q = 0.7 p M^2
    # (Anderson, Aircraft Performance and Design, eq. 5.18 with the polar of eq. 2.47):
    # W_max = sqrt(q S (n F0 sigma - q S CD0) / K).
    row = _one(heaviest_table(_plain(tmp_path), Conditions(isa_devs_c=(dev,), mach=mach, climb_fpm=(0.0,)),
                              (target_ft,)))
    qs = 0.7 * _isa(target_ft * FT)[1] * mach**2 * S
    w_n = math.sqrt(qs * (N_F0 * _sigma(target_ft, dev) - qs * CD0) / K)
    assert row["max_weight_kg"] == pytest.approx(w_n / G, abs=1.0)
    assert row["thrust_weight_kg"] == pytest.approx(w_n / G, abs=1.0)
    assert row["mach"] == pytest.approx(mach) and row["limit"] == "thrust"


@pytest.mark.parametrize("climb_fpm", [100.0, 300.0, 500.0])
def test_heaviest_with_a_residual_climb_is_the_closed_form_in_the_isothermal_layer(tmp_path, climb_fpm):
    # Steady climb R/C = (T - D) V / W (Anderson, Aircraft Performance and Design, sec. 5.6); in the
    # isothermal layer at ISA a constant-Mach climb does not trade speed for height (V is
    # constant), so (K/qS) W^2 + (R/C / V) W - (n F0 sigma - q S CD0) = 0, the positive root.
    mach, target_ft = 0.7, 37_000.0
    row = _one(heaviest_table(_plain(tmp_path), Conditions(mach=mach, climb_fpm=(climb_fpm,)), (target_ft,)))
    t, p = _isa(target_ft * FT)
    qs = 0.7 * p * mach**2 * S
    v = mach * math.sqrt(GAMMA * R * t)
    a, b, c = K / qs, climb_fpm * FT / 60.0 / v, -(N_F0 * _sigma(target_ft, 0.0) - qs * CD0)
    w_n = (-b + math.sqrt(b * b - 4 * a * c)) / (2 * a)
    assert row["max_weight_kg"] == pytest.approx(w_n / G, abs=1.0)


@pytest.mark.parametrize("mach", ["best", 0.7])
@pytest.mark.parametrize("target_ft, weight_kg", [(33_000.0, 60_000.0), (37_000.0, 50_000.0), (30_000.0, 68_000.0),
                                                  (39_000.0, 44_000.0)])
def test_hottest_day_is_the_closed_form(tmp_path, target_ft, weight_kg, mach):
    # With sigma = p / (R rho0 (T_ISA + dT)) in W = n F0 sigma / (2 sqrt(K CD0)) (best speed, same
    # source): dT_max = n F0 p(h) / (R rho0 2 W sqrt(K CD0)) - T_ISA(h); at a fixed Mach the
    # density needed is sigma = (q S CD0 + K W^2 / (q S)) / (n F0).
    cat = _plain(tmp_path, mtow_kg=70_000.0)
    row = _one(hottest_table(cat, Conditions(weights=(WeightSpec(weight_kg, "kg"),), mach=mach, climb_fpm=(0.0,)),
                             (target_ft,)))
    t_isa, p = _isa(target_ft * FT)
    w = weight_kg * G
    if mach == "best":
        dev = N_F0 * p / (R * RHO0 * 2 * w * math.sqrt(K * CD0)) - t_isa
    else:
        qs = 0.7 * p * mach**2 * S
        dev = p / (R * RHO0 * (qs * CD0 + K * w * w / qs) / N_F0) - t_isa
    assert -40.0 < dev < 50.0
    assert row["max_isa_dev_c"] == pytest.approx(dev, abs=0.01)
    assert row["limit"] == "thrust"
    assert row["level_oat_c"] == pytest.approx(t_isa + dev - 273.15, abs=0.01)


# --- out of reach: no number, a note -------------------------------------------------------------

def test_a_level_out_of_reach_or_within_reach_on_every_day_says_so(tmp_path):
    # Not a bound printed as an answer: above the certified ceiling no weight reaches the level;
    # a light aircraft low down makes it even at ISA+50; a heavy one high up fails even at ISA-40.
    cat = _plain(tmp_path, max_altitude_ft=37_000.0)
    row = _one(heaviest_table(cat, Conditions(mach="best"), (39_000.0,)))
    assert row["max_weight_kg"] is None and "certified ceiling (37,000 ft)" in row["note"]
    assert row["reason"] == "certified"
    light = _one(hottest_table(cat, Conditions(weights=(WeightSpec(20_000.0, "kg"),), mach="best"), (20_000.0,)))
    assert light["max_isa_dev_c"] is None and "holds even at ISA+50" in light["note"] and light["limit"] is None
    assert light["reason"] == "holds_on_warmest_day"
    heavy = _plain(tmp_path, mtow_kg=60_000.0)
    row = _one(hottest_table(heavy, Conditions(weights=(WeightSpec(60_000.0, "kg"),), mach="best"), (41_000.0,)))
    assert row["max_isa_dev_c"] is None and "fails even at ISA-40" in row["note"] and row["reason"] == "thrust"
    answered = _one(hottest_table(heavy, Conditions(weights=(WeightSpec(45_000.0, "kg"),), mach="best"), (37_000.0,)))
    assert answered["max_isa_dev_c"] is not None and answered["reason"] is None


def test_each_weight_free_limit_blocks_the_level_with_its_reason(tmp_path):
    # The certified and cabin ceilings, MMO and the VMO floor do not depend on the weight or the
    # day (pressure limits: Anderson, Introduction to Flight, sec. 4.12 for CAS): each alone keeps
    # every weight from the level, and the note names it.
    cases = {
        "cabin": (dict(max_cabin_dp_kpa=50.0, cabin_altitude_ft=8_000.0), 0.7, 41_000.0, "cabin-pressure ceiling"),
        "mmo": (dict(mmo=0.78), 0.8, 35_000.0, "above MMO 0.780"),
        "vmo": (dict(vmo_kt=250.0), 0.7, 20_000.0, "exceeds VMO 250 kt at this level"),
    }
    for name, (changes, mach, target_ft, words) in cases.items():
        cat = write_catalogue(tmp_path / f"{name}.toml", [engine_spec()], [variant_spec(**{**PLAIN, **changes})])
        row = _one(heaviest_table(cat, Conditions(mach=mach), (target_ft,)))
        assert row["max_weight_kg"] is None and words in row["note"], (name, row["note"])
        assert row["reason"] == name, row
        hot = _one(hottest_table(cat, Conditions(mach=mach, weights=(WeightSpec(30_000.0, "kg"),)), (target_ft,)))
        assert hot["max_isa_dev_c"] is None and words in hot["note"], (name, hot["note"])


def test_a_level_beyond_the_thrust_table_has_no_weight(tmp_path):
    # A thrust table is data, never extrapolated: a level above its top has no answer, a level
    # inside it does (the table: pressure ratio at ISA, invented).
    altitudes = [-2000.0, 0.0, 10_000.0, 20_000.0, 30_000.0, 36_000.0]
    fraction = [[_isa(a * FT)[1] / 101_325.0] * 3 for a in altitudes]
    engine = {"id": "e1", "model": "table", "static_thrust_kn": 60.0, "table_altitude_ft": altitudes,
              "table_mach": [0.0, 0.5, 0.9], "table_thrust_fraction": fraction}
    cat = write_catalogue(tmp_path / "t.toml", [engine], [variant_spec(**PLAIN)])
    for mach in ("best", 0.7):
        rows = heaviest_table(cat, Conditions(mach=mach), (35_000.0, 37_000.0)).sort("target_ft")
        assert rows["max_weight_kg"][0] is not None and rows["max_weight_kg"][1] is None
        assert "above the thrust table (top 36,000 ft)" in rows["note"][1]
        hot = hottest_table(cat, Conditions(mach=mach, weights=(WeightSpec(20_000.0, "kg"),)), (37_000.0,))
        assert "above the thrust table" in hot["note"][0]


def test_the_weight_is_not_capped_at_mtow_and_a_weight_below_the_empty_weight_is_none(tmp_path):
    # The heaviest weight is the limits' own, above MTOW where they allow it (the level is then
    # reached at every permitted weight); below the variant's empty weight no aircraft flies.
    cat = _plain(tmp_path, oew_kg=36_000.0)
    low, high = heaviest_table(cat, Conditions(), (25_000.0, 45_000.0)).sort("target_ft").iter_rows(named=True)
    assert low["max_weight_kg"] > 40_000.0 and low["over_mtow"] and low["max_weight_pct_mtow"] > 100.0
    assert high["max_weight_kg"] is None and not high["over_mtow"]
    assert "below the empty weight (36.0 t)" in high["note"] and high["limit"] is None
    assert high["reason"] == "empty_weight" and low["reason"] is None


def test_no_weight_holds_a_level_where_thrust_is_short_of_the_parasite_drag(tmp_path):
    # Thrust below q S CD0 (the drag at zero lift) holds no weight at all (same source, eq. 5.18).
    cat = write_catalogue(tmp_path / "weak.toml", [engine_spec(static_thrust_kn=40.0)], [variant_spec(**PLAIN)])
    row = _one(heaviest_table(cat, Conditions(mach=0.9), (20_000.0,)))
    qs = 0.7 * _isa(20_000.0 * FT)[1] * 0.81 * S
    assert qs * CD0 > 80_000.0 * _sigma(20_000.0, 0.0)
    assert row["max_weight_kg"] is None and "cannot hold 300 ft/min at this level at M0.900 at any weight" in row["note"]


def test_a_level_below_where_thrust_suffices_best_says_so(tmp_path):
    # Thrust proportional to density against q S CD0 proportional to pressure: climbing in the
    # troposphere the parasite drag falls faster than the thrust (p/rho falls with T, ISO 2533),
    # so at a high Mach where it nearly equals the thrust the heaviest weight that holds the
    # level rises with height up to the tropopause: the aircraft that holds FL340 exactly still
    # climbs above it. The weight is the level's own; the note says the ceiling lies higher.
    cat = write_catalogue(tmp_path / "weak.toml", [engine_spec(static_thrust_kn=40.0)], [variant_spec(**PLAIN)])
    rows = heaviest_table(cat, Conditions(mach=0.9, climb_fpm=(0.0,)), (34_000.0, 35_000.0)).sort("target_ft")
    assert rows["max_weight_kg"][1] > rows["max_weight_kg"][0]
    row = rows.row(0, named=True)
    assert "still climbs above the level" in row["note"]
    forward = _one(ceilings_table(cat, Conditions(weights=(WeightSpec(row["max_weight_kg"], "kg"),), mach=0.9,
                                                  climb_fpm=(0.0,))))
    assert forward["max_altitude_ft"] > 35_000.0


# --- round trips through ceilings -----------------------------------------------------------------

def _same_limit(inverse, forward):
    """The limit named is the ceilings' binding limit, or the other of two that bind together."""
    return inverse["limit"] == forward["limit"] or inverse["limit"] in forward["note"] and "bind together" in forward["note"]


def _near_the_top(cat, below_ft):
    """Each variant with the levels the given distances below its certified ceiling (41,000 ft where
    it gives none)."""
    return [(vid, tuple((v.max_altitude_ft or 41_000.0) - d for d in below_ft)) for vid, v in cat.variants.items()]


def _forward(cat, row, mach, weight_kg, isa_dev_c):
    return _one(ceilings_table(cat, Conditions(
        weights=(WeightSpec(weight_kg, "kg"),), isa_devs_c=(isa_dev_c,), mach=mach, climb_fpm=(row["climb_fpm"],),
        variants=(row["variant"],), engines=(row["engine"],))))


@pytest.mark.parametrize("cat", FLEETS, ids=lambda c: c.path.stem)
@pytest.mark.parametrize("mach", ["cruise", "best"])
def test_ceilings_at_the_heaviest_weight_give_the_target(cat, mach):
    # Round trip through the ceilings answer: at max_weight_kg the maximum altitude is the target
    # level (within 1 ft) with the same limit binding; every variant near its certified ceiling,
    # every climb criterion, cool to hot days.
    checked = set()
    for vid, targets in _near_the_top(cat, (9_000.0, 5_000.0, 1_000.0)):
        cond = Conditions(isa_devs_c=(-10.0, 20.0, 35.0), mach=mach, climb_fpm=CLIMBS, variants=(vid,))
        inverse = heaviest_table(cat, cond, targets).filter(pl.col("max_weight_kg").is_not_null())
        for row in inverse.iter_rows(named=True):
            forward = _forward(cat, row, mach, row["max_weight_kg"], row["isa_dev_c"])
            if "still climbs above the level" in row["note"]:
                # At a fixed Mach a propeller's thrust (eta P / V) can be shortest at the level
                # itself: the weight that just holds it climbs on above, as the note says.
                assert forward["max_altitude_ft"] > row["target_ft"] - 1.0, (row, forward)
                continue
            assert forward["max_altitude_ft"] == pytest.approx(row["target_ft"], abs=1.0), row
            assert _same_limit(row, forward), (row, forward)
            checked.add((vid, row["limit"]))
    assert {v for v, _ in checked} == set(cat.variants) and "thrust" in {lim for _, lim in checked}


@pytest.mark.parametrize("cat", FLEETS, ids=lambda c: c.path.stem)
@pytest.mark.parametrize("mach", ["cruise", "best"])
def test_ceilings_on_the_hottest_day_give_the_target(cat, mach):
    checked = set()
    for vid, targets in _near_the_top(cat, (10_000.0, 6_000.0, 2_000.0)):
        cond = Conditions(weights=(WeightSpec(70.0, "%mtow"), WeightSpec(90.0, "%mtow")), mach=mach, climb_fpm=CLIMBS,
                          variants=(vid,))
        inverse = hottest_table(cat, cond, targets).filter(pl.col("max_isa_dev_c").is_not_null())
        for row in inverse.iter_rows(named=True):
            forward = _forward(cat, row, mach, row["weight_kg"], row["max_isa_dev_c"])
            if "still climbs above the level" in row["note"]:
                # A propeller at a fixed Mach whose thrust is shortest at the level itself (see above).
                assert forward["max_altitude_ft"] > row["target_ft"] - 1.0, (row, forward)
                continue
            # Within 1 ft, or, where the ceiling moves thousands of feet per degree (a propeller's
            # thrust nearly level with its drag over height), between the ceilings 0.001 deg C either side.
            cooler = _forward(cat, row, mach, row["weight_kg"], row["max_isa_dev_c"] - 0.001)["max_altitude_ft"]
            hotter = _forward(cat, row, mach, row["weight_kg"], row["max_isa_dev_c"] + 0.001)["max_altitude_ft"] or 0.0
            assert (forward["max_altitude_ft"] == pytest.approx(row["target_ft"], abs=1.0)
                    or hotter - 1.0 <= row["target_ft"] <= cooler + 1.0), (row, forward, cooler, hotter)
            assert _same_limit(row, forward), (row, forward)
            # A hair warmer, the level is out of reach (the answer is the warmest day, not a bound).
            warmer = _forward(cat, row, mach, row["weight_kg"], row["max_isa_dev_c"] + 0.05)
            assert warmer["max_altitude_ft"] is None or warmer["max_altitude_ft"] < row["target_ft"], row
            checked.add(vid)
    assert checked == set(cat.variants)


@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.sampled_from(range(len(FLEETS))), st.floats(0.55, 0.97), st.floats(-15.0, 40.0),
       st.sampled_from(CLIMBS), st.sampled_from(["cruise", "best", 0.6]), st.integers(0, 10_000))
def test_round_trips_hold_anywhere(fleet, share_of_top, dev, climb, mach, pick):
    # Property: for any level, day and climb criterion, the heaviest weight put back into
    # ceilings gives the level, and so does the warmest day at that weight (within 1 ft).
    cat = FLEETS[fleet]
    pairs = [(v.id, e) for v in cat.variants.values() for e in v.engine_options]
    vid, eid = pairs[pick % len(pairs)]
    target = round(share_of_top * (cat.variants[vid].max_altitude_ft or 41_000.0), 1)
    one = dict(mach=mach, climb_fpm=(climb,), variants=(vid,), engines=(eid,))
    row = _one(heaviest_table(cat, Conditions(isa_devs_c=(dev,), **one), (target,)))
    if row["max_weight_kg"] is None or "still climbs above" in row["note"]:
        return  # (there the ceiling at that weight is above the level, by design: the test above)
    forward = _one(ceilings_table(cat, Conditions(weights=(WeightSpec(row["max_weight_kg"], "kg"),),
                                                  isa_devs_c=(dev,), **one)))
    assert forward["max_altitude_ft"] == pytest.approx(target, abs=1.0), (row, forward)
    hot = _one(hottest_table(cat, Conditions(weights=(WeightSpec(row["max_weight_kg"], "kg"),), **one), (target,)))
    if hot["max_isa_dev_c"] is not None and "still climbs above" not in hot["note"]:
        back = _one(ceilings_table(cat, Conditions(weights=(WeightSpec(row["max_weight_kg"], "kg"),),
                                                   isa_devs_c=(hot["max_isa_dev_c"],), **one)))
        assert back["max_altitude_ft"] == pytest.approx(target, abs=1.0), (hot, back)


# --- monotonicity ---------------------------------------------------------------------------------

@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.floats(28_000.0, 38_000.0), st.floats(500.0, 4_000.0), st.floats(-20.0, 30.0), st.floats(1.0, 15.0),
       st.sampled_from(["cruise", 0.72, "best"]))
def test_higher_targets_and_hotter_days_give_lighter_weights(demo, target_ft, dh, dev, ddev, mach):
    # Physics fact (Anderson, Aircraft Performance and Design, ch. 5): the ceiling falls with
    # weight and (above the flat rating) with temperature, so the heaviest weight for a level
    # falls as the level rises and as the day warms.
    cond = Conditions(isa_devs_c=(dev, dev + ddev), mach=mach)
    f = heaviest_table(demo, cond, (target_ft, target_ft + dh))
    key = ["variant", "engine", "climb_fpm"]
    low = f.filter((pl.col("target_ft") == target_ft) & (pl.col("isa_dev_c") == dev)).sort(key)
    high = f.filter((pl.col("target_ft") == target_ft + dh) & (pl.col("isa_dev_c") == dev)).sort(key)
    hot = f.filter((pl.col("target_ft") == target_ft) & (pl.col("isa_dev_c") == dev + ddev)).sort(key)
    assert low.height == high.height == hot.height > 0
    for a, b in ((low, high), (low, hot)):
        x, y = a["max_weight_kg"].to_numpy().astype(float), b["max_weight_kg"].to_numpy().astype(float)
        both = np.isfinite(x) & np.isfinite(y)
        assert np.all(y[both] <= x[both] + 0.01)


@settings(max_examples=10, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.floats(30_000.0, 39_000.0), st.floats(60.0, 95.0), st.floats(1.0, 10.0), st.sampled_from(["cruise", "best"]))
def test_heavier_weights_and_higher_targets_give_cooler_warmest_days(demo, target_ft, pct, dpct, mach):
    # The same fact the other way round: the warmest day for a level falls with weight and with
    # the level (same source).
    cond = Conditions(weights=(WeightSpec(pct, "%mtow"), WeightSpec(pct + dpct, "%mtow")), mach=mach)
    f = hottest_table(demo, cond, (target_ft, target_ft + 1_000.0))
    key = ["variant", "engine"]

    def at(level, share):
        return f.filter((pl.col("target_ft") == level) & ((pl.col("weight_pct_mtow") - share).abs() < 1e-6)).sort(key)

    base = at(target_ft, pct)
    for other in (at(target_ft + 1_000.0, pct), at(target_ft, pct + dpct)):
        assert other.height == base.height > 0
        x = base["max_isa_dev_c"].to_numpy().astype(float)
        y = other["max_isa_dev_c"].to_numpy().astype(float)
        both = np.isfinite(x) & np.isfinite(y)
        assert np.all(y[both] <= x[both] + 1e-3)


# --- the tables -----------------------------------------------------------------------------------

def test_the_tables_have_their_columns_and_one_row_per_case(demo):
    cond = Conditions(weights=(WeightSpec(80.0, "%mtow"), WeightSpec(95.0, "%mtow")), isa_devs_c=(0.0, 15.0, 25.0),
                      climb_fpm=(0.0, 300.0))
    pairs = sum(len(v.engine_options) for v in demo.variants.values())
    heavy = heaviest_table(demo, cond, (35_000.0, 37_000.0))
    assert heavy.columns == list(HEAVIEST_COLUMNS) and heavy.height == pairs * 2 * 3 * 2
    # Order: pair, target, deviation, climb (last fastest).
    first = heavy.head(12)
    assert first["target_ft"].to_list() == [35_000.0] * 6 + [37_000.0] * 6
    assert first["isa_dev_c"].to_list()[:6] == [0.0, 0.0, 15.0, 15.0, 25.0, 25.0]
    hot = hottest_table(demo, cond, (35_000.0, 37_000.0))
    assert hot.columns == list(HOTTEST_COLUMNS) and hot.height == pairs * 2 * 2 * 2
    assert not any(math.isnan(x) for x in heavy["max_weight_kg"].drop_nulls())


def test_the_planner_table_puts_both_answers_beside_each_row(demo):
    # What the app's planner screen shows: per row of the ceilings grid, the heaviest weight on
    # that row's day and the warmest day at that row's weight; a row makes the level exactly
    # where its weight is within the heaviest (and its day within the warmest).
    cond = Conditions(weights=(WeightSpec(85.0, "%mtow"), WeightSpec(100.0, "%mtow")), isa_devs_c=(0.0, 20.0))
    frame = planner_table(demo, cond, 37_000.0)
    assert frame.height == ceilings_table(demo, cond).height
    for row in frame.iter_rows(named=True):
        if row["max_weight_kg"] is not None and row["margin_ft"] is not None and abs(row["margin_ft"]) > 2.0:
            assert (row["weight_margin_kg"] >= 0) == (row["margin_ft"] >= 0), row
        if row["max_isa_dev_c"] is not None and row["margin_ft"] is not None and abs(row["margin_ft"]) > 2.0:
            assert (row["isa_margin_c"] >= 0) == (row["margin_ft"] >= 0), row
