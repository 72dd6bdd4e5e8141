"""Ceiling solver: physical properties (hypothesis) and the cases the model cannot give."""

import numpy as np
import polars as pl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from conftest import write_catalogue
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
    flat = [i for i, e in enumerate(isa["engine"])
            if demo.engines[e].flat_rate_isa_dev_c is not None and dev <= demo.engines[e].flat_rate_isa_dev_c]
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


def _engine(**kw):
    e = {"id": "e1", "model": "density-lapse", "static_thrust_kn": 60.0, "lapse_exponent": 1.0}
    e.update(kw)
    return e


def _variant(**kw):
    v = {"id": "a1", "engine_options": ["e1"], "engine_count": 2, "wing_area_m2": 80.0, "aspect_ratio": 9.0,
         "oswald_e": 0.8, "cd0": 0.022, "cl_max": 1.5, "mtow_kg": 40_000.0, "cruise_mach": 0.7}
    v.update(kw)
    return v


def test_cannot_climb_reports_no_altitude(tmp_path):
    cat = write_catalogue(tmp_path / "c.toml", [_engine(static_thrust_kn=5.0)], [_variant()])
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

    cat = write_catalogue(tmp_path / "c.toml", [_engine(static_thrust_kn=1000.0, lapse_exponent=0.1)],
                          [_variant(mtow_kg=500.0, cruise_mach=0.9)])
    cases, index = build_cases(cat, selected_pairs(cat, Conditions()), lambda v: [500.0], [0.0], [300.0], "cruise", 1.3)
    cases = dataclasses.replace(cases, cl_max=np.full(1, 1e4), weight_kg=np.full(1, 1.0))
    res = solver.solve_ceilings(cases)
    assert np.isposinf(res.max_altitude_m[0]) and res.limit[0] == -1
    assert res.flags[0] & solver.ABOVE_MODEL_TOP
    assert "model top" in case_notes(cases, res, index.climb_fpm, np.full(1, 500.0), np.full(1, 150.0))[0]


def test_thrust_table_top_is_not_extrapolated(tmp_path):
    # A thrust table that stops at 20,000 ft while the aircraft still climbs there.
    table = _engine(model="table", table_altitude_ft=[-2000.0, 0.0, 20000.0], table_mach=[0.0, 0.9],
                    table_thrust_fraction=[[1.0, 0.9], [1.0, 0.9], [0.6, 0.55]])
    del table["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [table], [_variant()])
    row = ceilings_table(cat, Conditions(weights=_pct(60))).row(0, named=True)
    assert row["thrust_ceiling_ft"] is None and row["max_altitude_ft"] is None
    assert "thrust table top" in row["note"]
    # ...but a certified ceiling below the table top still gives an answer.
    cat = write_catalogue(tmp_path / "d.toml", [table], [_variant(max_altitude_ft=15000.0)])
    row = ceilings_table(cat, Conditions(weights=_pct(60))).row(0, named=True)
    assert row["max_altitude_ft"] == pytest.approx(15000.0) and row["limit"] == "certified"


def test_fixed_and_best_agree_where_best_mach_is_used(demo):
    # Self-consistency, no external source: solving at the Mach that the best-speed search found gives the same altitude.
    best = ceilings_table(demo, Conditions(mach="best"))
    for row in best.head(4).iter_rows(named=True):
        fixed = ceilings_table(demo, Conditions(mach=row["mach"], variants=(row["variant"],))).filter(
            pl.col("engine") == row["engine"]).row(0, named=True)
        assert fixed["max_altitude_ft"] == pytest.approx(row["max_altitude_ft"], abs=0.5)


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

    cases = _demo_cases(demo)
    serial = solver.solve_ceilings(cases, chunk=50, processes=1)
    parent, real = os.getpid(), solver._solve_chunk

    def dies_in_a_worker(part):
        if os.getpid() != parent:
            raise MemoryError("worker")
        return real(part)

    monkeypatch.setattr(solver, "_solve_chunk", dies_in_a_worker)
    again = solver.solve_ceilings(cases, chunk=50, processes=2)
    np.testing.assert_array_equal(serial.max_altitude_m, again.max_altitude_m)
    np.testing.assert_array_equal(serial.flags, again.flags)


def test_case_views_read_what_take_gives(demo):
    # Self-consistency, no external source: a lazy view (and a view of a view) reads the same
    # per-case values as an eager take, for index arrays, slices and masks.
    from variantcmp.cases import CaseView, _per_case_fields

    cases = _demo_cases(demo)
    pick = np.array([5, 3, 3, 40, 0])
    mask = np.arange(len(cases)) % 3 == 0
    for index in (pick, slice(10, 60, 7), mask):
        view, eager = CaseView(cases, index), cases.take(index)
        assert len(view) == len(eager)
        inner = np.array([1, 0, 1])
        for name in _per_case_fields():
            np.testing.assert_array_equal(getattr(view, name), getattr(eager, name))
            np.testing.assert_array_equal(getattr(view.take(inner), name), getattr(eager, name)[inner])


def test_thrust_table_floor_is_respected(tmp_path):
    # A thrust table from 10,000 ft up: nothing below it may be claimed (no extrapolation), and the
    # note names the table's lowest altitude, not -2,000 ft.
    table = _engine(model="table", table_altitude_ft=[10000.0, 20000.0, 40000.0], table_mach=[0.0, 0.9],
                    table_thrust_fraction=[[0.7, 0.65], [0.5, 0.46], [0.2, 0.19]])
    del table["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [table], [_variant()])
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


@pytest.mark.parametrize("fleet", ["demo", "survey", "slow-buffet-peak", "buffet-spike", "table-dip", "no-drag-rise",
                                   "beyond-table-top", "close-table-columns", "synthetic"])
def test_best_speed_is_the_highest_over_a_dense_mach_scan(demo, fleet, tmp_path):
    # Definition of the best speed (the speed at which the maximum altitude is highest), checked
    # by brute force, no external source: fixed-Mach solves at 161 speeds over each case's range,
    # then 41 around the best of them. The search must be no lower than the scan, for the maximum
    # altitude and for the thrust ceiling alone. The benchmark's fleet has wide speed ranges (no
    # buffet data) and a drag rise that make the optimum lopsided; the survey fleet's thrust
    # tables have kinks at their Mach columns; the next sets are buffet-bound, the buffet
    # ceiling peaking at a slower speed than the thrust ceiling or in a spike narrower than the
    # grid's steps; the last has a thrust table whose Mach columns dip over two grid steps and
    # rise again (thrust fraction = pressure ratio x a factor per column), with a sharp peak of
    # the thrust ceiling on a table Mach between grid speeds; then a variant with no drag rise,
    # whose thrust ceiling peaks at the fastest speed (MMO) for a density-lapse engine and below
    # it for a turbofan. The last two come from a stress test of the searches (invented data):
    # a table engine that still climbs at the table's top over a range of speeds, so that its
    # thrust ceiling bounds nothing there, with a buffet ceiling crossing that top; and a table
    # whose Mach columns lie close together, its thrust ceiling peaking sharply between two of
    # them on the far side of the table Mach next to the best grid speed.
    import dataclasses

    from variantcmp import bench, solver
    from variantcmp.cases import build_cases
    from variantcmp.catalogue import bundled_fleet_dir, load_catalogue
    from variantcmp.table import selected_pairs

    if fleet == "demo":
        cases, _ = build_cases(demo, selected_pairs(demo, Conditions()), lambda v: np.array([0.7, 0.85, 1.0]) * v.mtow_kg,
                               [-5.0, 15.0, 30.0], [0.0, 300.0], "best", 1.3)
    elif fleet == "survey":
        survey = load_catalogue(bundled_fleet_dir() / "tallon-fells-survey.toml")
        cases, _ = build_cases(survey, selected_pairs(survey, Conditions()), lambda v: np.linspace(0.55, 1.05, 6) * v.mtow_kg,
                               np.arange(-15.0, 50.0, 10.0), [0.0, 100.0, 300.0], "best", 1.3)
    elif fleet in ("slow-buffet-peak", "buffet-spike"):
        boundary, weights = {"slow-buffet-peak": (([0.30, 0.45, 0.55, 0.62, 0.67, 0.84], [1.50, 1.20, 1.10, 1.00, 0.70, 0.30]),
                                                  np.linspace(0.4, 1.05, 14)),
                             "buffet-spike": (([0.30, 0.45, 0.47, 0.49, 0.60, 0.84], [1.20, 1.20, 1.60, 1.20, 0.90, 0.40]),
                                              np.linspace(0.6, 1.05, 10))}[fleet]
        cat = write_catalogue(tmp_path / "c.toml", [_engine(static_thrust_kn=60.0)],
                              [_variant(mmo=0.82, buffet_mach=boundary[0], buffet_cl=boundary[1])])
        cases, _ = build_cases(cat, [("a1", "e1")], lambda v: weights * v.mtow_kg,
                               np.arange(-15.0, 50.0, 10.0), [0.0, 300.0], "best", 1.3)
    elif fleet == "table-dip":
        from variantcmp.atmosphere import isa_pressure_pa

        altitudes_ft = [-2000, 0, 5000, 10000, 15000, 20000, 25000, 30000, 35000, 40000, 45000, 51000]
        factors = [1.35, 1.35, 1.35, 1.35, 0.8, 0.8, 1.0, 1.0, 1.0]
        tables = [_engine(id=f"e{k}", model="table", static_thrust_kn=thrust_kn, table_altitude_ft=altitudes_ft,
                          table_mach=[0.0, 0.2, 0.4, 0.45, 0.5, 0.6, 0.7, 0.75, 0.9],
                          table_thrust_fraction=[[float(isa_pressure_pa(a * FT) / 101325.0) * f for f in factors]
                                                 for a in altitudes_ft])
                  for k, thrust_kn in ((1, 45.0), (2, 55.0))]
        for table in tables:
            del table["lapse_exponent"]
        cat = write_catalogue(tmp_path / "c.toml", tables,
                              [_variant(mmo=0.82, mtow_kg=38_500.0, engine_options=["e1", "e2"])])
        cases, _ = build_cases(cat, [("a1", "e1"), ("a1", "e2")], lambda v: np.linspace(0.6, 1.05, 10) * v.mtow_kg,
                               np.arange(-15.0, 50.0, 10.0), [0.0, 300.0], "best", 1.3)
    elif fleet in ("beyond-table-top", "close-table-columns"):
        from variantcmp.atmosphere import isa_pressure_pa

        if fleet == "beyond-table-top":
            altitudes_ft, machs, factors = ([-2000, 1000, 6000, 12000, 16000, 20000, 39000, 40000],
                                            [0.0, 0.176, 0.447, 0.9], [1.0, 0.821, 0.788, 0.941])
            engine = dict(static_thrust_kn=116.0, rating_fraction=0.97, flat_rate_isa_dev_c=18.2, hot_day_loss_per_c=0.0086)
            variant = dict(engine_count=1, wing_area_m2=85.75, aspect_ratio=8.45, oswald_e=0.834, cd0=0.0258,
                           cl_max=1.563, mtow_kg=39_842.0, mmo=0.841, sweep_deg=33.0, thickness_ratio=0.136,
                           korn_factor=0.918, buffet_mach=[0.3, 0.4458, 0.5831, 0.7241, 0.8844],
                           buffet_cl=[1.159, 0.953, 0.925, 0.789, 0.668])
            weights, devs, climbs = np.linspace(0.45, 1.0, 24), [-13.3, 9.7, 22.0], [100.0, 200.0]
        else:
            altitudes_ft, machs = [-2000, 3000, 5000, 7000, 9000, 11000, 14000, 22000, 35000, 38000, 40000], \
                [0.0, 0.367, 0.384, 0.457, 0.529, 0.612, 0.658, 0.74, 0.9]
            factors = [1.0, 0.8515, 0.8532, 0.8653, 0.8843, 0.9149, 0.9359, 0.9807, 1.0976]
            engine = dict(static_thrust_kn=61.95)
            variant = dict(wing_area_m2=91.19, aspect_ratio=8.37, oswald_e=0.741, cd0=0.02454, cl_max=1.457,
                           mtow_kg=52_436.0, mmo=0.798, sweep_deg=25.9, thickness_ratio=0.1013, korn_factor=0.937)
            weights, devs, climbs = np.linspace(0.9, 1.3, 18), [-15.0, 21.2, 22.7], [500.0, 800.0]
        table = _engine(model="table", table_altitude_ft=altitudes_ft, table_mach=machs,
                        table_thrust_fraction=[[float(isa_pressure_pa(a * FT) / 101325.0) * f for f in factors]
                                               for a in altitudes_ft], **engine)
        del table["lapse_exponent"]
        cat = write_catalogue(tmp_path / "c.toml", [table], [_variant(**variant)])
        cases, _ = build_cases(cat, [("a1", "e1")], lambda v: weights * v.mtow_kg, devs, climbs, "best", 1.3)
    elif fleet == "no-drag-rise":
        turbofan = _engine(id="e2", model="turbofan", static_thrust_kn=75.0, throttle_ratio=1.08)
        del turbofan["lapse_exponent"]
        cat = write_catalogue(tmp_path / "c.toml", [_engine(lapse_exponent=0.8), turbofan],
                              [_variant(mmo=0.86, engine_options=["e1", "e2"])])
        cases, _ = build_cases(cat, [("a1", "e1"), ("a1", "e2")], lambda v: np.linspace(0.5, 1.1, 13) * v.mtow_kg,
                               np.arange(-15.0, 50.0, 10.0), [0.0, 300.0], "best", 1.3)
    else:
        cases = bench.synthetic_cases(bench.synthetic_fleet(), 1500, mach="best")
    best = solver.solve_ceilings(cases, processes=1)

    def scan(mach):  # (cases, k) speeds -> maximum altitude and thrust ceiling (m), -inf where none
        k = mach.shape[1]
        rep = cases.take(np.repeat(np.arange(len(cases)), k))
        got = solver.solve_ceilings(dataclasses.replace(rep, mach=mach.ravel().copy()), processes=1)
        return tuple(np.where(np.isnan(v), -np.inf, v).reshape(len(cases), k) for v in (got.max_altitude_m, got.thrust_m))

    lo, hi = cases.mach_low[:, None], cases.mach_high[:, None]
    step = (hi - lo) / 160.0
    coarse_m = lo + (hi - lo) * np.linspace(0.0, 1.0, 161)[None, :]
    coarse = scan(coarse_m)
    # The search's own speed too: what it reports must be flown there (and a spike of the buffet
    # boundary narrower than the scan's steps is no reason for the search to look higher).
    own = scan(np.where(np.isnan(best.mach), lo[:, 0], best.mach)[:, None])
    for which, found in enumerate((best.max_altitude_m, best.thrust_m)):
        centre = coarse_m[np.arange(len(cases)), np.argmax(coarse[which], axis=1)][:, None]
        fine = scan(np.clip(centre + step * np.linspace(-1.0, 1.0, 41)[None, :], lo, hi))[which]
        brute = np.maximum(coarse[which].max(axis=1), fine.max(axis=1))
        if which == 0:
            brute = np.maximum(brute, own[0][:, 0])
        found = np.where(np.isnan(found), -np.inf, found)
        if which == 0:
            assert np.array_equal(np.isfinite(found), np.isfinite(brute))
        ok = np.isfinite(brute) & np.isfinite(found)  # a thrust ceiling beyond the thrust table is no number
        assert ok.sum() > 100
        # Just under a thrust table's top, where a buffet ceiling crosses it, the answer is a cliff
        # edge (past it the ceiling lies beyond the data) that the golden-section search reaches
        # to about 1 ft: a known limit (DEVELOPERS.md). Elsewhere the searches' tolerance.
        slack_ft = 1.0 if fleet == "beyond-table-top" and which == 0 else 0.3
        assert np.all(found[ok] >= brute[ok] - slack_ft * FT)
        assert np.all(found[ok] <= brute[ok] + 5.0 * FT)  # no speed flies higher than the scan allows (a few ft between points)


@pytest.mark.parametrize("top_known", [False, True])
def test_hump_probes_screened_out_cannot_climb(tmp_path, top_known):
    # Self-consistency, no external source: the table-engine hump check screens its probes with
    # the climb rate without wave drag, which wave drag only lowers. Its answer must be the one
    # that evaluating the full excess climb rate at every probe gives: climbs at a table altitude
    # (or midway) between the root and the top, or at the top itself. Tables whose Mach columns
    # dip and rise again, with and without compressibility data, hot and cold, 0-800 ft/min.
    from variantcmp import solver
    from variantcmp.atmosphere import isa_pressure_pa
    from variantcmp.cases import build_cases

    altitudes_ft = [-2000, 0, 5000, 10000, 15000, 20000, 25000, 30000, 35000, 40000, 45000, 51000]
    factors = [1.3, 1.3, 0.8, 0.8, 1.1, 1.0, 0.9]
    engine = _engine(model="table", static_thrust_kn=60.0, table_altitude_ft=altitudes_ft,
                     table_mach=[0.0, 0.3, 0.45, 0.5, 0.6, 0.75, 0.9],
                     table_thrust_fraction=[[float(isa_pressure_pa(a * FT) / 101325.0) * f for f in factors]
                                            for a in altitudes_ft])
    del engine["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [engine],
                          [_variant(id="a1", mmo=0.84), _variant(id="a2", mmo=0.84, sweep_deg=28.0,
                                                                  thickness_ratio=0.12, korn_factor=0.93)])
    cases, _ = build_cases(cat, [("a1", "e1"), ("a2", "e1")], lambda v: np.linspace(0.5, 1.1, 7) * v.mtow_kg,
                           [-15.0, 15.0, 40.0], [0.0, 300.0, 800.0], 0.7, 1.3)
    rng = np.random.default_rng(11)
    n = len(cases)
    phys = solver.ClimbPhysics(cases)
    mach = rng.uniform(0.3, 0.85, n)
    root = rng.uniform(-500.0, 14_000.0, n)
    top = np.minimum(root + rng.uniform(0.0, 6_000.0, n), cases.top_m)
    got = solver._climbs_above(phys, mach, root, top, top_known)

    nodes = np.array(altitudes_ft) * FT
    points = np.sort(np.concatenate([nodes, 0.5 * (nodes[1:] + nodes[:-1])]))
    expect = np.zeros(n, dtype=bool)
    for i in range(n):  # every probe the check looks at, by the full evaluation
        above = points[points >= root[i] + 1.0][:solver.TABLE_PROBES]
        probes = list(above[above < top[i]]) + ([top[i]] if not top_known and top[i] > root[i] + 1.0 else [])
        one = phys.subset(np.full(len(probes), i))
        expect[i] = bool((one.excess(np.array(probes), np.full(len(probes), mach[i])) >= 0.0).any()) if probes else False
    assert 0 < expect.sum() < n  # both outcomes occur
    np.testing.assert_array_equal(got, expect)


def test_parabola_peak_between_samples_against_numpy_polyfit():
    # The far-side check's estimate of a peak between samples: the vertex of the parabola through
    # the best sample and its neighbours. Reference: numpy.polyfit (degree 2) through those three
    # points; samples given out of order; no vertex (-inf) where the parabola does not peak
    # between the neighbours.
    from variantcmp import solver

    rng = np.random.default_rng(2)
    x = np.sort(rng.uniform(0.5, 0.7, (200, 9)), axis=1)
    top, height, width = rng.uniform(0.52, 0.68, 200), rng.uniform(-0.05, 0.05, 200), rng.uniform(5.0, 400.0, 200)
    f = height[:, None] - width[:, None] * (x - top[:, None]) ** 2 - 0.02 * np.abs(x - 0.6)  # peaks, not parabolas
    shuffle = rng.permuted(np.tile(np.arange(9), (200, 1)), axis=1)
    got = solver._parabola_peak(np.take_along_axis(x, shuffle, axis=1), np.take_along_axis(f, shuffle, axis=1))
    for r in range(200):
        i = int(np.clip(np.argmax(f[r]), 1, 7))
        c2, c1, c0 = np.polyfit(x[r, i - 1:i + 2], f[r, i - 1:i + 2], 2)
        vertex = -c1 / (2.0 * c2)
        if c2 < 0.0 and x[r, i - 1] < vertex < x[r, i + 1]:
            assert got[r] == pytest.approx(c0 - c1 * c1 / (4.0 * c2), rel=1e-9, abs=1e-12)
        else:
            assert got[r] == -np.inf
    assert np.isfinite(got).sum() > 100


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


def test_buffet_data_only_above_mmo_leave_best_speed_without_an_answer(tmp_path):
    # The catalogue's contract (the best speed stays below MMO; a limit that cannot be checked
    # gives no maximum altitude, not a number), no external source: buffet data that start above
    # MMO leave no allowed speed where every limit is known, and the row says why.
    cat = write_catalogue(tmp_path / "c.toml", [_engine()], [_variant(mmo=0.55, cruise_mach=0.5, buffet_mach=[0.6, 0.7, 0.8],
                                                                       buffet_cl=[1.0, 0.9, 0.7])])
    best = ceilings_table(cat, Conditions(mach="best")).row(0, named=True)
    assert best["max_altitude_ft"] is None and best["flight_level"] is None and best["limit"] is None
    assert "no buffet data at the speeds allowed" in best["note"]


def test_a_fixed_mach_outside_the_buffet_data_gives_no_maximum_altitude(tmp_path):
    # The tool's contract (a limit that cannot be evaluated is shown as such, never as a number),
    # no external source: buffet data over M0.70-0.80 only; at M0.65 the maximum altitude, flight
    # level, limit and target columns are blank and the note names the missing data. The best
    # speed only uses speeds where every limit is known: its Mach lies inside the data.
    buffet = dict(buffet_mach=[0.70, 0.75, 0.80], buffet_cl=[0.80, 0.74, 0.62], mmo=0.82)
    cat = write_catalogue(tmp_path / "c.toml", [_engine()], [_variant(**buffet)])
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
    plain = write_catalogue(tmp_path / "p.toml", [_engine()], [_variant(mmo=0.82)])
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
    cat = write_catalogue(tmp_path / "c.toml", [flat, plain], [_variant(
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
    cat = write_catalogue(tmp_path / "c.toml", [_engine()], [_variant(oew_kg=24_000.0), _variant(id="a2")])
    rows = ceilings_table(cat, Conditions(weights=_pct(35.0, 58.0)))
    flagged = {(r["variant"], round(r["weight_pct_mtow"])) for r in rows.iter_rows(named=True) if r["below_empty_weight"]}
    assert flagged == {("a1", 35), ("a1", 58)}  # a1: OEW 60 % of MTOW; a2: no OEW, 30 % floor


def test_a_narrow_band_of_climbing_speeds_is_found(tmp_path):
    # Definition of "cannot climb at any speed", checked by brute force, no external source: a
    # jet airframe without MMO or buffet data on a small engine, at MTOW on an ISA+25 day, climbs
    # 300 ft/min only in a narrow band of low speeds near the floor, between the search's grid
    # speeds. The best speed must find it, as a dense scan of fixed-Mach solves does.
    import dataclasses
    import tomllib

    from variantcmp import solver
    from variantcmp.catalogue import bundled_fleet_dir
    from variantcmp.cases import build_cases

    regional = tomllib.loads((bundled_fleet_dir() / "fernholt-regional.toml").read_text())
    survey = tomllib.loads((bundled_fleet_dir() / "tallon-fells-survey.toml").read_text())
    engine = {k: v for k, v in next(e for e in survey["engine"] if e["id"] == "wren-20").items()
              if k not in ("flat_rate_isa_dev_c", "hot_day_loss_per_c")}  # the bare lapse: hot days cost most
    airframe = {k: v for k, v in regional["variant"][0].items() if k not in ("buffet_mach", "buffet_cl", "mmo", "vmo_kt")}
    cat = write_catalogue(tmp_path / "c.toml", [engine], [{**airframe, "engine_options": ["wren-20"]}])
    cases, _ = build_cases(cat, [(airframe["id"], "wren-20")], lambda v: [v.mtow_kg], [25.0], [300.0], "best", 1.3)
    best = solver.solve_ceilings(cases, processes=1)
    mach = np.linspace(cases.mach_low[0], cases.mach_high[0], 4001)
    scan = solver.solve_ceilings(dataclasses.replace(cases.take(np.zeros(mach.size, dtype=int)), mach=mach),
                                 processes=1).max_altitude_m
    assert np.isfinite(scan).sum() < 0.1 * mach.size  # a narrow band indeed
    assert best.max_altitude_m[0] == pytest.approx(np.nanmax(scan), abs=0.3 * FT)


def test_joint_best_speed_search_matches_a_reference_optimiser(monkeypatch):
    # Reference library: scipy.optimize.minimize_scalar (bounded Brent) maximising each case's
    # fixed-Mach thrust ceiling over its speed range. The joint altitude-and-Mach search must
    # settle most cases itself (the test would not exercise it otherwise) and be no lower than
    # the reference anywhere, nor more than a few ft higher (the reference's own tolerance).
    from scipy.optimize import minimize_scalar

    from variantcmp import bench, solver

    settled = []
    joint = solver._joint_best

    def spy(*args):
        out = joint(*args)
        settled.append((np.isfinite(out[1]).sum(), out[1].size))
        return out

    monkeypatch.setattr(solver, "_joint_best", spy)
    cases = bench.synthetic_cases(bench.synthetic_fleet(), 3000, mach="best").take(slice(0, 3000, 50))
    best = solver.solve_ceilings(cases, processes=1)
    first_settled, first_n = settled[0]
    assert first_settled >= 0.8 * first_n
    phys = solver.ClimbPhysics(cases)
    checked = 0
    for i in range(len(cases)):
        one = phys.subset(np.array([i]))

        def minus_ceiling(m):
            h = solver.thrust_ceiling_m(one, np.array([m]))[0][0]
            return -h if np.isfinite(h) else 1e9

        ref = minimize_scalar(minus_ceiling, bounds=(cases.mach_low[i], cases.mach_high[i]), method="bounded",
                              options={"xatol": 1e-5})
        if ref.fun < 1e9 and np.isfinite(best.thrust_m[i]):
            checked += 1
            assert best.thrust_m[i] >= -ref.fun - 0.3 * FT, i
            assert best.thrust_m[i] <= -ref.fun + 3.0 * FT, i
    assert checked > 40


def test_a_thrust_ceiling_held_at_the_tropopause_is_the_tropopause(demo):
    # Facts of the trade: the ISA tropopause is at 11,000 m (ISO 2533, from memory), and at
    # constant Mach the climb rate drops there, as below it the falling true airspeed feeds the
    # climb (the acceleration factor, e.g. Mair & Birdsall, *Aircraft Performance*, ch. 2). Over
    # a range of speeds the thrust ceiling is then the tropopause itself. Reference: fixed-Mach
    # solves at 161 speeds over each case's range; no speed may beat the best-speed search, and
    # where the scan meets a flat top the search must give it to the millimetre.
    import dataclasses

    from variantcmp import solver
    from variantcmp.cases import build_cases
    from variantcmp.table import selected_pairs

    cases, _ = build_cases(demo, selected_pairs(demo, Conditions()), lambda v: np.linspace(0.55, 1.05, 12) * v.mtow_kg,
                           np.arange(-15.0, 50.0, 5.0), [0.0, 300.0, 500.0], "best", 1.3)
    best = solver.solve_ceilings(cases, processes=1)
    near = np.flatnonzero(np.abs(best.thrust_m - 11_000.0) < 5.0)
    cases = cases.take(near)
    k = 161
    lo, hi = cases.mach_low[:, None], cases.mach_high[:, None]
    speeds = lo + (hi - lo) * np.linspace(0.0, 1.0, k)[None, :]
    rep = cases.take(np.repeat(np.arange(len(cases)), k))
    scan = solver.solve_ceilings(dataclasses.replace(rep, mach=speeds.ravel().copy()), processes=1).thrust_m
    brute = np.nanmax(np.where(np.isnan(scan), -np.inf, scan).reshape(len(cases), k), axis=1)
    found = best.thrust_m[near]
    assert np.all(found >= brute - 1e-3)
    flat = np.abs(brute - 11_000.0) <= 1e-5  # the fixed-Mach roots there come out at the base - 1e-6 m
    assert flat.sum() >= 3
    assert np.all(np.abs(found[flat] - 11_000.0) <= 1e-5)


def test_a_best_speed_climbing_past_the_thrust_table_is_never_a_number():
    # Definition, checked by brute force (no external source): the best-speed thrust ceiling is
    # unknown where any speed still climbs at the top of the engine's thrust table (the data stop
    # there). Speeds that do may lie between the search's grid speeds; a dense scan of 161
    # fixed-Mach solves per case must agree with the search case by case, both ways.
    import dataclasses

    from variantcmp import solver
    from variantcmp.cases import build_cases
    from variantcmp.catalogue import bundled_fleet_dir, load_catalogue

    survey = load_catalogue(bundled_fleet_dir() / "tallon-fells-survey.toml")
    pairs = [(v.id, e) for v in survey.variants.values() for e in v.engine_options]
    cases, _ = build_cases(survey, pairs, lambda v: np.linspace(0.55, 1.05, 12) * v.mtow_kg,
                           np.arange(-15.0, 50.0, 5.0), [0.0, 300.0], "best", 1.3)
    cases = cases.take(np.flatnonzero(cases.top_m < solver.MODEL_TOP_M))
    best = solver.solve_ceilings(cases, processes=1)
    k = 161
    speeds = cases.mach_low[:, None] + (cases.mach_high - cases.mach_low)[:, None] * np.linspace(0.0, 1.0, k)[None, :]
    rep = cases.take(np.repeat(np.arange(len(cases)), k))
    scan = solver.solve_ceilings(dataclasses.replace(rep, mach=speeds.ravel().copy()), processes=1)
    past_top = ((scan.flags & solver.THRUST_DATA_TOP) != 0).reshape(len(cases), k).any(axis=1)
    assert 10 < past_top.sum() < len(cases)
    assert np.array_equal(np.isnan(best.thrust_m), past_top)
    assert np.array_equal((best.flags & solver.THRUST_DATA_TOP) != 0, past_top)


def test_a_narrow_band_of_flyable_speeds_between_grid_speeds_is_found(tmp_path):
    # Definition, checked by brute force (no external source): a low VMO puts the VMO floor above
    # the buffet ceiling at most speeds of this heavy, hot case, so that it can be flown only in
    # a band about 0.025 Mach wide, between the search's grid speeds. The best speed must find
    # it: a number, no lower than a dense scan of fixed-Mach solves (161 speeds).
    import dataclasses

    from variantcmp import solver
    from variantcmp.cases import build_cases

    turbofan = _engine(model="turbofan", static_thrust_kn=66.0, rating_fraction=0.95, throttle_ratio=1.08,
                       flat_rate_isa_dev_c=20.0, hot_day_loss_per_c=0.01)
    del turbofan["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [turbofan],
                          [_variant(mtow_kg=38_500.0, wing_area_m2=84.0, aspect_ratio=9.8, oswald_e=0.83, cd0=0.02,
                                    cl_max=1.52, cruise_mach=0.68, mmo=0.70, vmo_kt=210.0, sweep_deg=25.0,
                                    thickness_ratio=0.12, korn_factor=0.93,
                                    buffet_mach=[0.30, 0.45, 0.50, 0.55, 0.60, 0.65, 0.70],
                                    buffet_cl=[0.9, 1.3, 0.8, 1.3, 0.7, 1.2, 0.6])])
    cases, _ = build_cases(cat, [("a1", "e1")], lambda v: np.array([1.3]) * v.mtow_kg, [45.0], [800.0], "best", 1.3)
    best = solver.solve_ceilings(cases, processes=1)
    k = 161
    speeds = np.linspace(cases.mach_low[0], cases.mach_high[0], k)
    scan = solver.solve_ceilings(dataclasses.replace(cases.take(np.zeros(k, dtype=int)), mach=speeds), processes=1)
    flyable = np.isfinite(scan.max_altitude_m)
    assert 0 < flyable.sum() < 0.1 * k  # a narrow band
    grid = np.linspace(cases.mach_low[0], cases.mach_high[0], solver.BEST_MACH_GRID)
    at_grid = solver.solve_ceilings(dataclasses.replace(cases.take(np.zeros(grid.size, dtype=int)), mach=grid),
                                    processes=1)
    assert np.isnan(at_grid.max_altitude_m).all()  # no grid speed flies
    assert best.max_altitude_m[0] >= np.nanmax(scan.max_altitude_m) - 0.3 * FT


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
        write_catalogue(tmp_path / "bad.toml", [_engine()], [_variant(vmo_kt=1.0)])
    cat = write_catalogue(tmp_path / "c.toml", [_engine()], [_variant(vmo_kt=80.0, mmo=0.85)])
    rows = ceilings_table(cat, Conditions(weights=_pct(60, 100), isa_devs_c=(0.0, 30.0), mach=0.84))
    notes = " ".join(rows["note"].to_list())
    assert "exceeds VMO" in notes
    assert not re.search(r"\binf\b|\bnan\b", notes)
    for feet in re.findall(r"([\d,]+) ft", notes):
        assert -2000 <= int(feet.replace(",", "")) <= 280_000
