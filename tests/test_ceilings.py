"""Ceiling solver: physical properties (hypothesis) and the cases the model cannot give."""

import numpy as np
import polars as pl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import WeightSpec

SLACK_FT = 0.1  # root tolerance is about 0.01 ft
FT = 0.3048
LIMIT_COLS = ["thrust_ceiling_ft", "buffet_ceiling_ft", "stall_ceiling_ft", "certified_ceiling_ft", "cabin_ceiling_ft"]

def _pct(*values):
    return tuple(WeightSpec(v, "%mtow") for v in values)

@settings(max_examples=25, deadline=None)
@given(st.floats(55.0, 100.0), st.floats(1.0, 20.0), st.floats(-15.0, 35.0), st.sampled_from(["cruise", 0.72, "best"]))
def test_ceilings_never_rise_with_weight(demo, w, dw, dev, mach):
    # Physics fact: more weight needs more lift and thrust at the same altitude, so no limit's
    # ceiling rises (textbook, e.g. Anderson, Aircraft Performance and Design ch. 5).
    f = ceilings_table(demo, Conditions(weights=_pct(w, w + dw), isa_devs_c=(dev,), mach=mach))
    light, heavy = f.filter(pl.col("weight_kg") < pl.col("weight_kg").max().over("variant")), None
    heavy = f.filter(pl.col("weight_kg") == pl.col("weight_kg").max().over("variant"))
    slack = SLACK_FT if mach != "best" else 5.0  # best speed: golden-section search on a flat optimum
    for col in ["thrust_ceiling_ft", "buffet_ceiling_ft", "stall_ceiling_ft", "max_altitude_ft"]:
        a, b = light[col].to_numpy(), heavy[col].to_numpy()
        both = np.isfinite(a) & np.isfinite(b)
        assert np.all(b[both] <= a[both] + slack), col

@settings(max_examples=20, deadline=None)
@given(st.floats(60.0, 100.0), st.floats(-15.0, 30.0), st.floats(1.0, 15.0))
def test_hot_days(demo, w, dev, ddev):
    # At a fixed Mach on a warmer day (same pressure altitude): the true airspeed V = M a rises as
    # sqrt(T) but the climb rate scales with V T_ISA/T, i.e. 1/sqrt(T), and above the flat-rate
    # deviation thrust only falls (definition of flat rating, common practice, no source), so
    # thrust ceilings never rise with the deviation (climb equation: Anderson, Aircraft
    # Performance and Design, sec. 5.11).
    f = ceilings_table(demo, Conditions(weights=_pct(w), isa_devs_c=(max(dev, 15.0), max(dev, 15.0) + ddev)))
    cool = f.filter(pl.col("isa_dev_c") == pl.col("isa_dev_c").min())
    hot = f.filter(pl.col("isa_dev_c") == pl.col("isa_dev_c").max())
    a, b = cool["thrust_ceiling_ft"].to_numpy(), hot["thrust_ceiling_ft"].to_numpy()
    ok = np.isfinite(a) & np.isfinite(b)
    assert np.all(b[ok] <= a[ok] + SLACK_FT)

@settings(max_examples=10, deadline=None)
@given(st.floats(60.0, 100.0), st.floats(-10.0, 15.0))
def test_buffet_ceiling_ignores_the_day_and_flat_rating_holds_thrust(demo, w, dev):
    # Buffet onset at a fixed Mach is a pressure limit, n W = (gamma/2) p M^2 S CL_b (Anderson,
    # Introduction to Flight, eq. 4.83): the same at ISA and ISA+dev. A flat-rated engine keeps
    # its ISA thrust up to its flat-rate deviation (definition of flat rating, common practice,
    # no source): its lapse is read at ISA temperature, so up to that deviation the thrust
    # ceiling moves only by the climb-rate terms, a few hundred ft at most, not by the thousands
    # a density lapse gives.
    f = ceilings_table(demo, Conditions(weights=_pct(w), isa_devs_c=(0.0, dev)))
    isa = f.filter(pl.col("isa_dev_c") == 0.0)
    day = f.filter(pl.col("isa_dev_c") == dev) if dev != 0.0 else isa
    np.testing.assert_allclose(isa["buffet_ceiling_ft"].to_numpy(), day["buffet_ceiling_ft"].to_numpy())
    # (Jets: a propeller's thrust eta P / V falls on a warm day at a fixed Mach even with its power
    # held, V = M a rising with sqrt(T): tests/test_turboprop.py.)
    flat = [i for i, e in enumerate(isa["engine"])
            if demo.engines[e].flat_rate_isa_dev_c is not None and dev <= demo.engines[e].flat_rate_isa_dev_c
            and not demo.engines[e].is_propeller]
    assert flat
    moved = np.abs(isa["thrust_ceiling_ft"].to_numpy()[flat] - day["thrust_ceiling_ft"].to_numpy()[flat])
    assert np.all(moved < 400.0)

@settings(max_examples=20, deadline=None)
@given(st.floats(50.0, 110.0), st.floats(-15.0, 35.0), st.sampled_from(["cruise", 0.7, "best"]))
def test_max_altitude_within_every_limit_and_criteria_order(demo, w, dev, mach):
    # Definition: the maximum altitude meets every limit at once. Trade definitions (common
    # practice): cruise (300 ft/min) <= service (100 ft/min) <= absolute (0 ft/min) ceiling.
    f = ceilings_table(demo, Conditions(weights=_pct(w), isa_devs_c=(dev,), mach=mach, climb_fpm=(0.0, 100.0, 300.0)))
    for col in LIMIT_COLS:
        both = f.filter(pl.col("max_altitude_ft").is_not_null() & pl.col(col).is_not_null())
        assert (both["max_altitude_ft"] <= both[col] + SLACK_FT).all(), col
    slack = SLACK_FT if mach != "best" else 5.0
    t = f.pivot(on="climb_fpm", index=["variant", "engine"], values="thrust_ceiling_ft")
    absolute, service, cruise = (t[c].to_numpy().astype(float) for c in ("0.0", "100.0", "300.0"))
    ok = np.isfinite(absolute) & np.isfinite(service) & np.isfinite(cruise)
    assert np.all(cruise[ok] <= service[ok] + slack) and np.all(service[ok] <= absolute[ok] + slack)

def test_every_row_names_a_known_limit(demo):
    # Self-consistency (the contract for the limit column), no external source.
    f = ceilings_table(demo, Conditions(weights=_pct(60, 100, 120), isa_devs_c=(-10, 0, 20, 35)))
    assert set(f["limit"].drop_nulls()) <= {"thrust", "buffet", "stall", "certified", "cabin", "none"}
    # A row without an altitude always says why.
    assert (f.filter(pl.col("max_altitude_ft").is_null())["note"].str.len_chars() > 0).all()

def test_above_mtow_is_computed_and_flagged(demo):
    f = ceilings_table(demo, Conditions(weights=_pct(100, 110)))
    over = f.filter(pl.col("over_mtow"))
    assert over.height == f.height // 2
    assert over["note"].str.contains("above MTOW").all()

def test_cannot_climb_reports_no_altitude(tmp_path):
    cat = write_catalogue(tmp_path / "c.toml", [engine_spec(static_thrust_kn=5.0)], [variant_spec()])
    for mach in ("cruise", "best"):
        row = ceilings_table(cat, Conditions(mach=mach)).row(0, named=True)
        assert row["max_altitude_ft"] is None and row["thrust_ceiling_ft"] is None and row["flight_level"] is None
        assert row["limit"] is None
        assert "cannot climb" in row["note"]

def test_ceiling_above_model_top_is_flagged(tmp_path):
    # No catalogue can be valid and that light, so make the case directly: huge thrust, a huge
    # CLmax and nothing else: no limit binds below the model top, and the table says so.
    import dataclasses

    from variantcmp import solver
    from variantcmp.table import case_notes, selected_pairs
    from variantcmp.cases import build_cases

    cat = write_catalogue(tmp_path / "c.toml", [engine_spec(static_thrust_kn=1000.0, lapse_exponent=0.1)],
                          [variant_spec(mtow_kg=500.0, cruise_mach=0.9)])
    cases, index = build_cases(cat, selected_pairs(cat, Conditions()), lambda v: [500.0], [0.0], [300.0], "cruise", 1.3)
    cases = dataclasses.replace(cases, cl_max=np.full(1, 1e4), weight_kg=np.full(1, 1.0))
    res = solver.solve_ceilings(cases)
    assert np.isposinf(res.max_altitude_m[0]) and res.limit[0] == -1
    assert res.flags[0] & solver.ABOVE_MODEL_TOP
    assert "model top" in case_notes(cases, res, index.climb_fpm, np.full(1, 500.0), np.full(1, 150.0))[0]

def test_thrust_table_top_is_not_extrapolated(tmp_path):
    # A thrust table that stops at 20,000 ft while the aircraft still climbs there.
    table = engine_spec(model="table", table_altitude_ft=[-2000.0, 0.0, 20000.0], table_mach=[0.0, 0.9],
                    table_thrust_fraction=[[1.0, 0.9], [1.0, 0.9], [0.6, 0.55]])
    del table["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [table], [variant_spec()])
    row = ceilings_table(cat, Conditions(weights=_pct(60))).row(0, named=True)
    assert row["thrust_ceiling_ft"] is None and row["max_altitude_ft"] is None
    assert "thrust table top" in row["note"]
    # ...but a certified ceiling below the table top still gives an answer.
    cat = write_catalogue(tmp_path / "d.toml", [table], [variant_spec(max_altitude_ft=15000.0)])
    row = ceilings_table(cat, Conditions(weights=_pct(60))).row(0, named=True)
    assert row["max_altitude_ft"] == pytest.approx(15000.0) and row["limit"] == "certified"

def test_process_pool_gives_the_same_answers(demo):
    # Self-consistency, no external source: sharing a job between processes changes no number.
    from variantcmp import solver
    from variantcmp.cases import build_cases
    from variantcmp.table import selected_pairs

    cases, _ = build_cases(demo, selected_pairs(demo, Conditions()), lambda v: np.linspace(0.6, 1.0, 7) * v.mtow_kg,
                           np.linspace(-10, 30, 5), [300.0], "cruise", 1.3)
    serial = solver.solve_ceilings(cases, chunk=50, processes=1)
    shared = solver.solve_ceilings(cases, chunk=50, processes=2)
    for name in ("thrust_m", "buffet_m", "max_altitude_m", "limit", "flags"):
        np.testing.assert_array_equal(getattr(serial, name), getattr(shared, name))

def _demo_cases(demo):
    from variantcmp.cases import build_cases
    from variantcmp.table import selected_pairs

    return build_cases(demo, selected_pairs(demo, Conditions()), lambda v: np.linspace(0.6, 1.0, 7) * v.mtow_kg,
                       np.linspace(-10, 30, 5), [300.0], "cruise", 1.3)[0]

def test_a_failed_worker_leaves_the_job_to_the_calling_process(demo, monkeypatch):
    # Self-consistency, no external source: a worker that dies (here: every forked one) must
    # not lose cases; the job is solved again in this process, with the same numbers.
    import os

    from variantcmp import solver
    from variantcmp.solver import parallel

    cases = _demo_cases(demo)
    serial = solver.solve_ceilings(cases, chunk=50, processes=1)
    parent, real = os.getpid(), parallel.solve_chunk

    def dies_in_a_worker(part):
        if os.getpid() != parent:
            raise MemoryError("worker")
        return real(part)

    monkeypatch.setattr(parallel, "solve_chunk", dies_in_a_worker)
    again = solver.solve_ceilings(cases, chunk=50, processes=2)
    np.testing.assert_array_equal(serial.max_altitude_m, again.max_altitude_m)
    np.testing.assert_array_equal(serial.flags, again.flags)

def test_case_views_read_what_take_gives(demo):
    # Self-consistency, no external source: a lazy view (and a view of a view) reads the same
    # per-case values as an eager take, for index arrays, slices and masks.
    from variantcmp.cases import CaseView, per_case_fields

    cases = _demo_cases(demo)
    pick = np.array([5, 3, 3, 40, 0])
    mask = np.arange(len(cases)) % 3 == 0
    for index in (pick, slice(10, 60, 7), mask):
        view, eager = CaseView(cases, index), cases.take(index)
        assert len(view) == len(eager)
        inner = np.array([1, 0, 1])
        for name in per_case_fields():
            np.testing.assert_array_equal(getattr(view, name), getattr(eager, name))
            np.testing.assert_array_equal(getattr(view.take(inner), name), getattr(eager, name)[inner])

def test_thrust_table_floor_is_respected(tmp_path):
    # A thrust table from 10,000 ft up: nothing below it may be claimed (no extrapolation), and the
    # note names the table's lowest altitude, not -2,000 ft.
    table = engine_spec(model="table", table_altitude_ft=[10000.0, 20000.0, 40000.0], table_mach=[0.0, 0.9],
                    table_thrust_fraction=[[0.7, 0.65], [0.5, 0.46], [0.2, 0.19]])
    del table["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [table], [variant_spec()])
    row = ceilings_table(cat, Conditions(mach=0.3, weights=(WeightSpec(60_000.0, "kg"),))).row(0, named=True)
    assert row["max_altitude_ft"] is None or row["max_altitude_ft"] >= 10000.0
    if row["max_altitude_ft"] is None:
        assert "10,000 ft" in row["note"]
    heavy = ceilings_table(cat, Conditions(mach=0.3, weights=(WeightSpec(120_000.0, "kg"),))).row(0, named=True)
    assert heavy["max_altitude_ft"] is None
    assert "10,000 ft" in heavy["note"] and "-2,000" not in heavy["note"]

def test_limits_below_the_atmosphere_model_are_not_numbers(demo):
    # At a very low Mach the stall "ceiling" lies far below the model's -5,000 m bottom (ISO 2533
    # range): it is unavailable, not a number like -100,000 ft.
    f = ceilings_table(demo, Conditions(mach=0.05))
    assert f["stall_ceiling_ft"].drop_nulls().min() is None or f["stall_ceiling_ft"].drop_nulls().min() > -16_500
    assert f["max_altitude_ft"].is_null().all()
    assert (f["note"].str.len_chars() > 0).all()  # and each row says why

def test_answers_do_not_depend_on_chunks_or_processes():
    # Self-consistency, no external source: the same cases give the same answers, bit for bit,
    # however many processes share the job, and within rounding whatever other cases share a
    # chunk (best speed, whose searches go above 20 km, where the atmosphere takes its general
    # path).
    from variantcmp import bench, solver

    cases = bench.synthetic_cases(bench.synthetic_fleet(), 700, mach="best")
    whole = solver.solve_ceilings(cases, chunk=700, processes=1)
    serial, shared = (solver.solve_ceilings(cases, chunk=240, processes=p) for p in (1, 2))  # three chunks asked
    for name in solver.Ceilings.__dataclass_fields__:
        assert np.array_equal(getattr(serial, name), getattr(shared, name), equal_nan=True), name
        np.testing.assert_allclose(getattr(whole, name), getattr(serial, name), rtol=0, atol=1e-6, err_msg=name)

def test_a_fixed_mach_outside_the_buffet_data_gives_no_maximum_altitude(tmp_path):
    # The tool's contract (a limit that cannot be evaluated is shown as such, never as a number),
    # no external source: buffet data over M0.70-0.80 only; at M0.65 the maximum altitude, flight
    # level, limit and target columns are blank and the note names the missing data. The best
    # speed only uses speeds where every limit is known: its Mach lies inside the data.
    buffet = dict(buffet_mach=[0.70, 0.75, 0.80], buffet_cl=[0.80, 0.74, 0.62], mmo=0.82)
    cat = write_catalogue(tmp_path / "c.toml", [engine_spec()], [variant_spec(**buffet)])
    row = ceilings_table(cat, Conditions(mach=0.65, target_fl_ft=30000.0)).row(0, named=True)
    for col in ("max_altitude_ft", "flight_level", "limit", "margin_ft", "reaches_target"):
        assert row[col] is None, col
    assert row["buffet_ceiling_ft"] is None and row["thrust_ceiling_ft"] is not None
    assert "no buffet data at M0.650" in row["note"] and "M0.700-0.800" in row["note"]
    best = ceilings_table(cat, Conditions(mach="best", weights=_pct(60, 80, 100), isa_devs_c=(0.0, 20.0)))
    assert best["max_altitude_ft"].is_not_null().all()
    assert best["mach"].min() >= 0.70 - 1e-9 and best["mach"].max() <= 0.80 + 1e-9
    assert not best["note"].str.contains("buffet").any()
    inside = ceilings_table(cat, Conditions(mach=0.75)).row(0, named=True)
    assert inside["max_altitude_ft"] is not None and "buffet" not in inside["note"]
    # Without any buffet data the variant has no buffet limit, as before.
    plain = write_catalogue(tmp_path / "p.toml", [engine_spec()], [variant_spec(mmo=0.82)])
    row = ceilings_table(plain, Conditions(mach=0.65)).row(0, named=True)
    assert row["max_altitude_ft"] is not None and row["buffet_ceiling_ft"] is None and row["limit"] != "buffet"

def _isa_scalar(h_m):
    """Temperature (K) and pressure (Pa) of the ISA below 20 km (ICAO Doc 7488/3 closed forms,
    written out here independently of variantcmp.atmosphere)."""
    g, r = 9.80665, 287.05287
    if h_m <= 11_000.0:
        t = 288.15 - 0.0065 * h_m
        return t, 101_325.0 * (t / 288.15) ** (g / (r * 0.0065))
    return 216.65, 22_632.06 * np.exp(-g * (h_m - 11_000.0) / (r * 216.65))

def _mattingly_alpha(mach, t_k, p_pa, tr):
    """High-bypass turbofan lapse (Mattingly et al., Aircraft Engine Design, 2nd ed. 2002, ch. 2;
    from memory), scalar, written out here."""
    theta0, delta0 = t_k / 288.15 * (1 + 0.2 * mach**2), p_pa / 101_325.0 * (1 + 0.2 * mach**2) ** 3.5
    return max(delta0 * (1 - 0.49 * np.sqrt(mach) - 3 * max(theta0 - tr, 0.0) / (1.5 + mach)), 0.0)

@pytest.mark.parametrize("throttle_ratio", [0.90, 1.05])
def test_flat_rated_turbofan_loses_its_hot_day_thrust_once(tmp_path, throttle_ratio):
    # Independent check with scipy's brentq: at a fixed Mach the absolute ceiling is where thrust
    # equals drag, n F0 alpha(M, T, p)/alpha_SLS x hot(dT) = q S CD0 + K W^2 / (q S), q = 0.7 p M^2
    # (steady level flight, Anderson, Aircraft Performance and Design, ch. 5). Static thrust is
    # the thrust at sea level, static, ISA (its definition: hence / alpha_SLS, which matters for a
    # throttle ratio below 1); a flat-rated engine's lapse sees the ISA temperature and the loss
    # per deg C above the flat-rate deviation is its only hot-day loss (flat rating, common
    # practice, no source).
    from scipy.optimize import brentq

    n, f0, s_m2, a, e, cd0, w_kg, mach = 2, 120.0, 122.0, 9.5, 0.8, 0.019, 100_000.0, 0.60
    engine = dict(model="turbofan", static_thrust_kn=f0, throttle_ratio=throttle_ratio)
    flat = dict(engine, id="flat", flat_rate_isa_dev_c=15.0, hot_day_loss_per_c=0.010)
    plain = dict(engine, id="plain")
    cat = write_catalogue(tmp_path / "c.toml", [flat, plain], [variant_spec(
        engine_options=["flat", "plain"], wing_area_m2=s_m2, aspect_ratio=a, oswald_e=e, cd0=cd0, cl_max=1.6,
        mtow_kg=w_kg, cruise_mach=mach)])
    devs = (0.0, 10.0, 15.0, 20.0, 30.0)
    rows = ceilings_table(cat, Conditions(isa_devs_c=devs, climb_fpm=(0.0,))).rows(named=True)
    k, w_n = 1.0 / (np.pi * a * e), w_kg * 9.80665
    sls = _mattingly_alpha(0.0, 288.15, 101_325.0, throttle_ratio)

    def ceiling_ft(dev, flat_rated):
        def excess(h_m):
            t_isa, p = _isa_scalar(h_m)
            seen = t_isa if flat_rated else t_isa + dev
            hot = 1.0 - 0.010 * max(dev - 15.0, 0.0) if flat_rated else 1.0
            qs = 0.7 * p * mach**2 * s_m2
            return n * f0 * 1e3 * _mattingly_alpha(mach, seen, p, throttle_ratio) / sls * hot - (qs * cd0 + k * w_n**2 / qs)
        return brentq(excess, 0.0, 19_999.0, xtol=1e-6) / FT

    for row in rows:
        expected = ceiling_ft(row["isa_dev_c"], row["engine"] == "flat")
        assert row["thrust_ceiling_ft"] == pytest.approx(expected, abs=0.5), (row["engine"], row["isa_dev_c"])
    flat_ft = {r["isa_dev_c"]: r["thrust_ceiling_ft"] for r in rows if r["engine"] == "flat"}
    plain_ft = {r["isa_dev_c"]: r["thrust_ceiling_ft"] for r in rows if r["engine"] == "plain"}
    assert flat_ft[15.0] == pytest.approx(flat_ft[0.0], abs=0.1) and flat_ft[10.0] == pytest.approx(flat_ft[0.0], abs=0.1)
    assert flat_ft[15.0] >= plain_ft[15.0] - 0.1  # the flat rating only ever adds thrust up to its deviation
    assert flat_ft[30.0] < flat_ft[20.0] < flat_ft[15.0]

def test_a_weight_below_the_empty_weight_is_computed_and_flagged(demo, tmp_path):
    # Definition of operating empty weight (the aircraft cannot weigh less), and a fact of the
    # trade where a variant gives none (from memory): a jet transport's operating empty weight is
    # about 45-60 % of its MTOW, so a weight under 30 % of MTOW is a unit slip.
    rows = ceilings_table(demo, Conditions(weights=(WeightSpec(15.0, "kg"), WeightSpec(70.0, "%mtow"))))
    light = rows.filter(pl.col("weight_kg") == 15.0)
    assert light.height > 0 and light["note"].str.contains("below the empty weight").all()
    assert light["below_empty_weight"].all() and light["max_altitude_ft"].is_not_null().any()
    assert not rows.filter(pl.col("weight_kg") > 15.0)["note"].str.contains("empty weight").any()
    assert rows["weight_pct_mtow"].filter(rows["weight_kg"] > 15.0).round(6).unique().to_list() == [70.0]
    cat = write_catalogue(tmp_path / "c.toml", [engine_spec()], [variant_spec(oew_kg=24_000.0), variant_spec(id="a2")])
    rows = ceilings_table(cat, Conditions(weights=_pct(35.0, 58.0)))
    flagged = {(r["variant"], round(r["weight_pct_mtow"])) for r in rows.iter_rows(named=True) if r["below_empty_weight"]}
    assert flagged == {("a1", 35), ("a1", 58)}  # a1: OEW 60 % of MTOW; a2: no OEW, 30 % floor

def test_demo_turbofans_hold_to_their_flat_rating_then_lose_thousands_of_feet(demo):
    # Fact of the trade (common practice, no source): a maximum-altitude table of a flat-rated
    # engine holds to the flat-rating deviation and then falls by thousands of feet on hotter
    # days. The demo's turbofans are flat rated, so the demo shows it.
    rows = ceilings_table(demo, Conditions(weights=_pct(95.0), isa_devs_c=(-20.0, 0.0, 40.0)))
    turbofans = [e for e in demo.engines.values() if e.model == "turbofan"]
    assert turbofans and all(e.flat_rate_isa_dev_c is not None for e in turbofans)
    for e in turbofans:
        mine = rows.filter(pl.col("engine") == e.id)
        thrust = {dev: mine.filter(pl.col("isa_dev_c") == dev)["thrust_ceiling_ft"].to_numpy() for dev in (-20.0, 0.0, 40.0)}
        assert np.all(np.abs(thrust[-20.0] - thrust[0.0]) < 400.0)
        hot = np.nan_to_num(thrust[40.0], nan=-np.inf)  # no thrust ceiling at all: cannot climb
        assert np.all(hot < thrust[0.0] - 3000.0)


def test_notes_never_print_infinities_or_altitudes_outside_the_model(tmp_path):
    # Fuzzing found "exceeds VMO below inf ft" for a 1 kt VMO, and 105,577 ft (above the model
    # top) at 50 kt; such VMOs are now refused (see test_catalogue), and at the slowest allowed
    # VMO the note names no altitude the model does not have.
    import re

    from variantcmp.catalogue import CatalogueError

    with pytest.raises(CatalogueError, match="vmo_kt"):
        write_catalogue(tmp_path / "bad.toml", [engine_spec()], [variant_spec(vmo_kt=1.0)])
    cat = write_catalogue(tmp_path / "c.toml", [engine_spec()], [variant_spec(vmo_kt=80.0, mmo=0.85)])
    rows = ceilings_table(cat, Conditions(weights=_pct(60, 100), isa_devs_c=(0.0, 30.0), mach=0.84))
    notes = " ".join(rows["note"].to_list())
    assert "exceeds VMO" in notes
    assert not re.search(r"\binf\b|\bnan\b", notes)
    for feet in re.findall(r"([\d,]+) ft", notes):
        assert -2000 <= int(feet.replace(",", "")) <= 280_000
