"""Best speed: the search against dense Mach scans on review catalogues (each built to defeat one
shortcut), against scipy's bounded Brent search, and the invariants of its check stage."""

import numpy as np
import polars as pl
import pytest

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp.table import Conditions, ceilings_table

FT = 0.3048


def test_fixed_and_best_agree_where_best_mach_is_used(demo):
    # Self-consistency, no external source: solving at the Mach that the best-speed search found gives the same altitude.
    best = ceilings_table(demo, Conditions(mach="best"))
    for row in best.head(4).iter_rows(named=True):
        fixed = ceilings_table(demo, Conditions(mach=row["mach"], variants=(row["variant"],))).filter(
            pl.col("engine") == row["engine"]).row(0, named=True)
        assert fixed["max_altitude_ft"] == pytest.approx(row["max_altitude_ft"], abs=0.5)


@pytest.mark.parametrize("fleet", ["demo", "survey", "slow-buffet-peak", "buffet-spike", "table-dip", "no-drag-rise",
                                   "beyond-table-top", "close-table-columns", "turbofan-branch", "turboprop",
                                   "synthetic"])
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
    # them on the far side of the table Mach next to the best grid speed. Then turbofans with
    # throttle ratios 0.88-1.02 and no flat rating, on hot days: their lapse changes branch
    # (theta0 = TR) inside the speed range, and the thrust ceiling may peak in a corner there.
    # Then propeller engines (thrust = eta P / V): the thrust ceiling peaks at low Mach near the
    # minimum-power speed, against a buffet margin rising with Mach; one efficiency table with a
    # dip and a sharp rise between its Machs (kinks where the ceiling falls and rises again), one
    # smooth table, one constant efficiency without buffet data.
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
        cat = write_catalogue(tmp_path / "c.toml", [engine_spec(static_thrust_kn=60.0)],
                              [variant_spec(mmo=0.82, buffet_mach=boundary[0], buffet_cl=boundary[1])])
        cases, _ = build_cases(cat, [("a1", "e1")], lambda v: weights * v.mtow_kg,
                               np.arange(-15.0, 50.0, 10.0), [0.0, 300.0], "best", 1.3)
    elif fleet == "table-dip":
        from variantcmp.atmosphere import isa_pressure_pa

        altitudes_ft = [-2000, 0, 5000, 10000, 15000, 20000, 25000, 30000, 35000, 40000, 45000, 51000]
        factors = [1.35, 1.35, 1.35, 1.35, 0.8, 0.8, 1.0, 1.0, 1.0]
        tables = [engine_spec(id=f"e{k}", model="table", static_thrust_kn=thrust_kn, table_altitude_ft=altitudes_ft,
                          table_mach=[0.0, 0.2, 0.4, 0.45, 0.5, 0.6, 0.7, 0.75, 0.9],
                          table_thrust_fraction=[[float(isa_pressure_pa(a * FT) / 101325.0) * f for f in factors]
                                                 for a in altitudes_ft])
                  for k, thrust_kn in ((1, 45.0), (2, 55.0))]
        for table in tables:
            del table["lapse_exponent"]
        cat = write_catalogue(tmp_path / "c.toml", tables,
                              [variant_spec(mmo=0.82, mtow_kg=38_500.0, engine_options=["e1", "e2"])])
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
        table = engine_spec(model="table", table_altitude_ft=altitudes_ft, table_mach=machs,
                        table_thrust_fraction=[[float(isa_pressure_pa(a * FT) / 101325.0) * f for f in factors]
                                               for a in altitudes_ft], **engine)
        del table["lapse_exponent"]
        cat = write_catalogue(tmp_path / "c.toml", [table], [variant_spec(**variant)])
        cases, _ = build_cases(cat, [("a1", "e1")], lambda v: weights * v.mtow_kg, devs, climbs, "best", 1.3)
    elif fleet == "turbofan-branch":
        engines = [engine_spec(id=f"t{i}", model="turbofan", static_thrust_kn=float(kn), throttle_ratio=tr)
                   for i, (kn, tr) in enumerate([(60, 0.88), (70, 0.92), (75, 0.96), (65, 1.0), (80, 1.02)])]
        for e in engines:
            del e["lapse_exponent"]
        cat = write_catalogue(tmp_path / "c.toml", engines, [variant_spec(
            engine_options=[e["id"] for e in engines], mmo=0.84, sweep_deg=27.0, thickness_ratio=0.11, korn_factor=0.94)])
        cases, _ = build_cases(cat, [("a1", e["id"]) for e in engines], lambda v: np.linspace(0.5, 1.1, 10) * v.mtow_kg,
                               np.arange(-20.0, 50.0, 5.0), [0.0, 300.0], "best", 1.3)
    elif fleet == "turboprop":
        props = [{"id": "p1", "model": "turboprop", "shaft_power_kw": 2050.0, "lapse_exponent": 0.8,
                  "flat_rate_isa_dev_c": 18.0, "hot_day_loss_per_c": 0.008,
                  "propeller_efficiency_mach": [0.15, 0.25, 0.35, 0.45, 0.55, 0.65],
                  "propeller_efficiency_table": [0.62, 0.78, 0.85, 0.86, 0.82, 0.70]},
                 {"id": "p2", "model": "turboprop", "shaft_power_kw": 2400.0, "lapse_exponent": 0.75,
                  "propeller_efficiency_mach": [0.2, 0.3, 0.33, 0.36, 0.4, 0.5, 0.6],
                  "propeller_efficiency_table": [0.70, 0.84, 0.76, 0.88, 0.86, 0.83, 0.72]},
                 {"id": "p3", "model": "turboprop", "shaft_power_kw": 1900.0, "lapse_exponent": 1.0,
                  "propeller_efficiency": 0.82}]
        airframe = dict(wing_area_m2=61.0, aspect_ratio=12.0, oswald_e=0.8, cd0=0.026, cl_max=1.6, mtow_kg=23_000.0,
                        cruise_mach=0.42, mmo=0.55, vmo_kt=250.0)
        cat = write_catalogue(tmp_path / "c.toml", props, [
            variant_spec(id="t1", engine_options=["p1", "p2"], buffet_mach=[0.25, 0.35, 0.45, 0.55, 0.60],
                         buffet_cl=[1.35, 1.28, 1.18, 1.00, 0.88], **airframe),
            variant_spec(id="t2", engine_options=["p2", "p3"], **airframe)])
        cases, _ = build_cases(cat, [("t1", "p1"), ("t1", "p2"), ("t2", "p2"), ("t2", "p3")],
                               lambda v: np.linspace(0.5, 1.05, 8) * v.mtow_kg, np.arange(-15.0, 50.0, 10.0),
                               [0.0, 300.0], "best", 1.3)
    elif fleet == "no-drag-rise":
        turbofan = engine_spec(id="e2", model="turbofan", static_thrust_kn=75.0, throttle_ratio=1.08)
        del turbofan["lapse_exponent"]
        cat = write_catalogue(tmp_path / "c.toml", [engine_spec(lapse_exponent=0.8), turbofan],
                              [variant_spec(mmo=0.86, engine_options=["e1", "e2"])])
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


def test_buffet_data_only_above_mmo_leave_best_speed_without_an_answer(tmp_path):
    # The catalogue's contract (the best speed stays below MMO; a limit that cannot be checked
    # gives no maximum altitude, not a number), no external source: buffet data that start above
    # MMO leave no allowed speed where every limit is known, and the row says why.
    cat = write_catalogue(tmp_path / "c.toml", [engine_spec()], [variant_spec(mmo=0.55, cruise_mach=0.5, buffet_mach=[0.6, 0.7, 0.8],
                                                                       buffet_cl=[1.0, 0.9, 0.7])])
    best = ceilings_table(cat, Conditions(mach="best")).row(0, named=True)
    assert best["max_altitude_ft"] is None and best["flight_level"] is None and best["limit"] is None
    assert "no buffet data at the speeds allowed" in best["note"]


@pytest.mark.parametrize("isa_dev_c, widest", [(25.0, 0.1), (25.1, 0.015)])
def test_a_narrow_band_of_climbing_speeds_is_found(tmp_path, isa_dev_c, widest):
    # Definition of "cannot climb at any speed", checked by brute force, no external source: a
    # jet airframe without MMO or buffet data on a small engine, at MTOW on an ISA+25 day, climbs
    # 300 ft/min only in a narrow band of low speeds near the floor, between the search's grid
    # speeds. The best speed must find it, as a dense scan of fixed-Mach solves does. At ISA+25.1
    # the band is narrower than the steps of the dense scan for flyable islands (1/47 of the range).
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
    cases, _ = build_cases(cat, [(airframe["id"], "wren-20")], lambda v: [v.mtow_kg], [isa_dev_c], [300.0], "best", 1.3)
    best = solver.solve_ceilings(cases, processes=1)
    mach = np.linspace(cases.mach_low[0], cases.mach_high[0], 4001)
    scan = solver.solve_ceilings(dataclasses.replace(cases.take(np.zeros(mach.size, dtype=int)), mach=mach),
                                 processes=1).max_altitude_m
    assert 0 < np.isfinite(scan).sum() < widest * mach.size  # a narrow band indeed
    assert best.max_altitude_m[0] == pytest.approx(np.nanmax(scan), abs=0.3 * FT)


def test_joint_best_speed_search_matches_a_reference_optimiser(monkeypatch):
    # Reference library: scipy.optimize.minimize_scalar (bounded Brent) maximising each case's
    # fixed-Mach thrust ceiling over its speed range. The joint altitude-and-Mach search must
    # settle most cases itself (the test would not exercise it otherwise) and be no lower than
    # the reference anywhere, nor more than a few ft higher (the reference's own tolerance).
    from scipy.optimize import minimize_scalar

    from variantcmp import bench, solver
    from variantcmp.solver import thrust_best

    settled = []
    joint = thrust_best.joint_search

    def spy(*args):
        out = joint(*args)
        settled.append((np.isfinite(out[1]).sum(), out[1].size))
        return out

    monkeypatch.setattr(thrust_best, "joint_search", spy)
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

    turbofan = engine_spec(model="turbofan", static_thrust_kn=66.0, rating_fraction=0.95, throttle_ratio=1.08,
                       flat_rate_isa_dev_c=20.0, hot_day_loss_per_c=0.01)
    del turbofan["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [turbofan],
                          [variant_spec(mtow_kg=38_500.0, wing_area_m2=84.0, aspect_ratio=9.8, oswald_e=0.83, cd0=0.02,
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


def _best_speed_sets(demo):
    # The demo and survey fleets (every pair x 5 weights x 4 days x 3 climbs) and 600 benchmark cases.
    from variantcmp import bench
    from variantcmp.cases import build_cases
    from variantcmp.catalogue import bundled_fleet_dir, load_catalogue
    from variantcmp.table import selected_pairs

    survey = load_catalogue(bundled_fleet_dir() / "tallon-fells-survey.toml")
    for cat in (demo, survey):
        yield build_cases(cat, selected_pairs(cat, Conditions()), lambda v: np.linspace(0.55, 1.05, 5) * v.mtow_kg,
                          [-15.0, 0.0, 20.0, 40.0], [0.0, 300.0, 800.0], "best", 1.3)[0]
    yield bench.synthetic_cases(bench.synthetic_fleet(), 600, mach="best")


def test_the_reported_mach_gives_the_reported_altitude_at_fixed_mach(demo):
    # The check stage's invariant (self-consistency, no external source): the best speed's Mach,
    # solved as a fixed Mach, gives its maximum altitude within 0.05 ft and the same limit.
    import dataclasses

    from variantcmp import solver

    for cases in _best_speed_sets(demo):
        best = solver.solve_ceilings(cases, processes=1)
        speed = np.where(np.isnan(best.mach), cases.mach_low, best.mach)
        fixed = solver.solve_ceilings(dataclasses.replace(cases, mach=speed), processes=1)
        assert np.array_equal(np.isnan(best.max_altitude_m), np.isnan(fixed.max_altitude_m))
        ok = np.isfinite(best.max_altitude_m)
        assert ok.sum() > 100
        np.testing.assert_allclose(fixed.max_altitude_m[ok], best.max_altitude_m[ok], rtol=0, atol=0.05 * FT)
        np.testing.assert_array_equal(fixed.limit[ok], best.limit[ok])


def test_no_speed_the_search_evaluated_beats_its_answer(demo, monkeypatch):
    # The check stage's invariant (self-consistency, no external source): every fixed-Mach
    # result the stages offered, and every coarse-grid speed (solved to GRID_TOL_M), is no higher
    # than the answer.
    from variantcmp import solver
    from variantcmp.solver import coarse, results
    from variantcmp.solver.physics import ClimbPhysics

    offers = []
    real = results.Incumbent.offer

    def spy(self, rows, res, ties=False):
        offers.append((rows.copy(), res.max_altitude_m.copy()))
        return real(self, rows, res, ties)

    monkeypatch.setattr(results.Incumbent, "offer", spy)
    for cases in _best_speed_sets(demo):
        offers.clear()
        best = solver.best_speed_ceilings(ClimbPhysics(cases))
        answer = np.where(np.isnan(best.max_altitude_m), -np.inf, best.max_altitude_m)
        assert len(offers) >= 3
        for rows, offered in offers:
            assert np.all(answer[rows] >= np.where(np.isnan(offered), -np.inf, offered))
        grid = coarse.coarse_stage(ClimbPhysics(cases))
        at_grid = np.where(np.isnan(grid.at["max_altitude_m"]), -np.inf, grid.at["max_altitude_m"]).max(axis=1)
        assert np.all(answer >= at_grid - coarse.GRID_TOL_M)


def test_the_check_stage_mends_an_answer_below_a_grid_speed(demo, monkeypatch):
    # The check stage enforces the invariant, not only states it: with the combined stage made to
    # offer only the slowest speed's answer, every case ends no lower than its best grid speed.
    from variantcmp.solver import best_speed, coarse, fixed_mach_ceilings
    from variantcmp.solver.physics import ClimbPhysics

    def slowest_only(phys, grid, thrust, m_buffet, grid_flags, inc):
        inc.offer(np.arange(len(phys.cases)), fixed_mach_ceilings(phys, phys.cases.mach_low.copy()))
        return np.zeros(0, dtype=np.intp)

    cases = next(_best_speed_sets(demo))
    honest = best_speed.best_speed_ceilings(ClimbPhysics(cases))
    monkeypatch.setattr(best_speed, "combined_stage", slowest_only)
    mended = best_speed.best_speed_ceilings(ClimbPhysics(cases))
    grid = coarse.coarse_stage(ClimbPhysics(cases))
    at_grid = np.where(np.isnan(grid.at["max_altitude_m"]), -np.inf, grid.at["max_altitude_m"]).max(axis=1)
    got = np.where(np.isnan(mended.max_altitude_m), -np.inf, mended.max_altitude_m)
    assert np.all(got >= at_grid - coarse.GRID_TOL_M)
    slow = fixed_mach_ceilings(ClimbPhysics(cases), cases.mach_low.copy()).max_altitude_m
    assert np.sum(got > np.where(np.isnan(slow), -np.inf, slow) + 100.0) > 50  # it did mend
    assert np.all(got <= np.where(np.isnan(honest.max_altitude_m), -np.inf, honest.max_altitude_m) + 0.05 * FT)


def test_each_limit_column_is_that_limits_own_best_over_speed(demo):
    # The columns' contract (the CSV docs), by brute force (no external source): at the best speed
    # the thrust, buffet and stall columns are each that limit's highest over a dense scan of
    # fixed-Mach solves (161 speeds), each possibly at its own speed, and no lower than the scan.
    import dataclasses

    from variantcmp import solver

    cases = next(_best_speed_sets(demo))
    best = solver.solve_ceilings(cases, processes=1)
    # The scan's speeds and every engine's kink Machs (thrust-table columns, propeller efficiency
    # points) in range: a thrust ceiling can peak on one, where a scan point beside it reads lower.
    kinks = np.array(sorted({m for e in demo.engines.values() for m in e.table_mach + e.propeller_efficiency_mach}))
    dense = cases.mach_low[:, None] + (cases.mach_high - cases.mach_low)[:, None] * np.linspace(0.0, 1.0, 161)[None, :]
    speeds = np.hstack([dense, np.clip(kinks[None, :], cases.mach_low[:, None], cases.mach_high[:, None])])
    k = speeds.shape[1]
    rep = cases.take(np.repeat(np.arange(len(cases)), k))
    scan = solver.solve_ceilings(dataclasses.replace(rep, mach=speeds.ravel().copy()), processes=1)
    for column, slack_ft in (("thrust_m", 0.3), ("buffet_m", 1e-6), ("stall_m", 1e-6)):
        brute = np.where(np.isnan(getattr(scan, column)), -np.inf, getattr(scan, column)).reshape(len(cases), k).max(axis=1)
        got = getattr(best, column)
        ok = np.isfinite(brute) & np.isfinite(got)
        assert ok.sum() > 50, column
        assert np.all(got[ok] >= brute[ok] - slack_ft * FT), column
        assert np.all(got[ok] <= brute[ok] + 5.0 * FT), column  # the scan's steps (a few ft) at most
    differ = np.abs(best.buffet_m - best.max_altitude_m) > 100.0
    assert differ.sum() > 10  # the columns are their own bests, not the values at the reported Mach
    # The thrust ceiling's own speed (thrust_mach): solved there at fixed Mach, it gives the column.
    known = np.flatnonzero(np.isfinite(best.thrust_m))
    assert known.size > 50 and np.all(np.isnan(best.thrust_mach[np.isnan(best.thrust_m)]))
    at = solver.solve_ceilings(dataclasses.replace(cases.take(known), mach=best.thrust_mach[known].copy()), processes=1)
    np.testing.assert_allclose(at.thrust_m, best.thrust_m[known], rtol=0, atol=0.05 * FT)
