"""One engine inoperative (variantcmp.solver.engine_out, variantcmp.table.engine_out): the gross
and net ceilings against closed forms, a round trip through the ceilings of a catalogue that
describes the engine-out aircraft, and physical properties."""

import dataclasses

import numpy as np
import polars as pl
import pytest
from fluids.atmosphere import ATMOSPHERE_1976
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp.catalogue import Catalogue
from variantcmp.solver.gradient import best_gradient
from variantcmp.solver.engine_out import engine_out_cases, engine_out_terms
from variantcmp.solver import ClimbPhysics
from variantcmp.table import Conditions, ceilings_table, solve
from variantcmp.table.engine_out import engine_out_table
from variantcmp.units import WeightSpec

FT = 0.3048
G0 = 9.80665
R0_EARTH_M = 6_356_766.0  # effective Earth radius of U.S. Standard Atmosphere 1976, eq. 18
RHO0 = ATMOSPHERE_1976(0.0).rho


def _pct(*values):
    return tuple(WeightSpec(v, "%mtow") for v in values)


def _pressure_altitude_for_density_ratio_m(sigma, isa_dev_c):
    """The geopotential pressure altitude where rho / rho0 = sigma on a day ISA + dev: fluids' U.S.
    Standard Atmosphere 1976 (pressure standard at the altitude, the temperature shifted), its
    geometric height converted (USSA 1976 eq. 18), solved by brentq."""
    def excess(h):
        air = ATMOSPHERE_1976(R0_EARTH_M * h / (R0_EARTH_M - h), dT=isa_dev_c)
        return air.rho / RHO0 - sigma
    return brentq(excess, -1500.0, 30_000.0, xtol=1e-6)


# --- closed forms ---------------------------------------------------------------------------

CLOSED_FORM_CASES = [  # engine count, MCT ratio, CD0 increment, net decrement % (None: default), weights %MTOW
    (2, 0.95, 0.003, None, (70.0, 100.0)),
    (2, 1.0, 0.0045, 1.3, (60.0, 90.0)),
    (4, 0.92, 0.002, None, (45.0, 80.0, 100.0)),  # four engines: 1.6 % by default; the lightest above the tropopause
]


@pytest.mark.parametrize("count, ratio, increment, decrement_pct, weights", CLOSED_FORM_CASES)
def test_gross_and_net_ceilings_match_the_closed_forms(tmp_path, count, ratio, increment, decrement_pct, weights):
    # Thrust proportional to density (lapse exponent 1, not flat rated), a parabolic polar and no
    # compressibility: the gradient (F - D)/W is best at minimum drag, D_min = 2 W sqrt(K CD0')
    # (Anderson, Aircraft Performance and Design, sec. 5.4: CD = 2 CD0 at (L/D)max), with
    # F = (n - 1) F0 r sigma, so sigma_gross = 2 W sqrt(K (CD0 + dCD0)) / ((n - 1) F0 r) and
    # sigma_net = W (d + 2 sqrt(K (CD0 + dCD0))) / ((n - 1) F0 r); solved for pressure altitude on
    # the day with fluids' standard atmosphere. Net decrements by engine count: 1.1 % twins, 1.6 %
    # four engines (en-route practice, from memory: the catalogue's defaults). Within 25 ft.
    f0_kn = 60.0 if count == 2 else 40.0
    extra = {} if decrement_pct is None else {"net_gradient_decrement_pct": decrement_pct}
    cat = write_catalogue(tmp_path / "oei.toml", [engine_spec(static_thrust_kn=f0_kn, mct_thrust_ratio=ratio)],
                          [variant_spec(engine_count=count, oei_cd0_increment=increment, mtow_kg=40_000.0 * count / 2,
                                        wing_area_m2=80.0 * count / 2, **extra)])
    frame = engine_out_table(cat, Conditions(weights=_pct(*weights), isa_devs_c=(-10.0, 0.0, 25.0)))
    v = cat.variants["a1"]
    d = (decrement_pct if decrement_pct is not None else {2: 1.1, 4: 1.6}[count]) / 100.0
    worst = 0.0
    for row in frame.iter_rows(named=True):
        w = row["weight_kg"] * G0
        f_oei = (count - 1) * f0_kn * 1000.0 * ratio
        two_sqrt = 2.0 * np.sqrt(v.k * (v.cd0 + increment))
        gross = _pressure_altitude_for_density_ratio_m(w * two_sqrt / f_oei, row["isa_dev_c"]) / FT
        net = _pressure_altitude_for_density_ratio_m(w * (d + two_sqrt) / f_oei, row["isa_dev_c"]) / FT
        assert row["limit"] == "thrust" and row["gross_limit"] == "thrust"
        assert row["gross_ceiling_ft"] == pytest.approx(gross, abs=25.0)
        assert row["net_ceiling_ft"] == pytest.approx(net, abs=25.0)
        worst = max(worst, abs(row["gross_ceiling_ft"] - gross), abs(row["net_ceiling_ft"] - net))
    assert frame["gross_ceiling_ft"].max() > 11_000.0 / FT or count == 2  # the four-engine grid reaches the stratosphere
    print(f"\n{count} engines: worst closed-form difference {worst:.3f} ft")


def test_a_single_engine_variant_has_no_engine_out_answer(tmp_path):
    # Definition: with one engine there is none left to hold altitude: no answer, with a note.
    cat = write_catalogue(tmp_path / "one.toml", [engine_spec()], [variant_spec(engine_count=1, id="s1"),
                                                                   variant_spec(id="t2")])
    frame = engine_out_table(cat, Conditions())
    single = frame.filter(pl.col("variant") == "s1").row(0, named=True)
    for key in ("mach", "gross_ceiling_ft", "net_ceiling_ft", "limit", "driftdown_distance_nm", "driftdown_time_min"):
        assert single[key] is None, key
    assert "single engine" in single["note"]
    assert frame.filter(pl.col("variant") == "t2")["gross_ceiling_ft"].is_not_null().all()


# --- round trip -------------------------------------------------------------------------------

def _engine_out_catalogue(cat) -> Catalogue:
    """The catalogue of the same fleet with one engine out, written as ordinary records: each
    engine's thrust (a turboprop's shaft power) x (n - 1)/n x its MCT ratio (every variant here a
    twin), CD0 + the increment, no certified or cabin ceiling."""
    counts = {v.engine_count for v in cat.variants.values()}
    assert counts == {2}

    def one_left(e):
        if e.model == "turboprop":
            return dataclasses.replace(e, shaft_power_kw=e.shaft_power_kw * 0.5 * e.mct_thrust_ratio)
        return dataclasses.replace(e, static_thrust_kn=e.static_thrust_kn * 0.5 * e.mct_thrust_ratio)

    engines = {k: one_left(e) for k, e in cat.engines.items()}
    variants = {k: dataclasses.replace(v, cd0=v.cd0 + v.oei_cd0, max_altitude_ft=None, max_cabin_dp_kpa=None,
                                       cabin_altitude_ft=None) for k, v in cat.variants.items()}
    return dataclasses.replace(cat, engines=engines, variants=variants)


def test_round_trip_the_absolute_ceiling_of_the_engine_out_aircraft_is_the_gross_ceiling(demo):
    # Definition: the gross ceiling is where the best climb gradient, and with it the best climb
    # rate, reaches zero: the absolute ceiling (0 ft/min) at best speed of the aircraft with one
    # engine out. Here that aircraft is a catalogue of its own, solved by `ceilings`; at the net
    # ceiling the best gross gradient is the decrement (1.1 %, twins), and 0 at the gross ceiling,
    # by the drift-down's own speed search.
    conditions = Conditions(weights=_pct(70.0, 100.0), isa_devs_c=(0.0, 20.0))
    oei = engine_out_table(demo, conditions)
    ceilings = ceilings_table(_engine_out_catalogue(demo), dataclasses.replace(conditions, mach="best",
                                                                               climb_fpm=(0.0,)))
    np.testing.assert_allclose(oei["gross_ceiling_ft"].to_numpy(), ceilings["max_altitude_ft"].to_numpy(), atol=0.05)
    np.testing.assert_allclose(oei["mach"].to_numpy(), ceilings["mach"].to_numpy(), atol=2e-3)
    cases, _, _ = solve(demo, conditions)
    phys = ClimbPhysics(engine_out_cases(cases, engine_out_terms(demo, cases)))
    _, at_gross = best_gradient(phys, oei["gross_ceiling_ft"].to_numpy() * FT)
    net_ft = oei["net_ceiling_ft"].to_numpy()
    has_net = np.isfinite(net_ft)  # the heavy turboprop on the warm day holds no altitude on the net path
    assert has_net.mean() > 0.9
    _, at_net = best_gradient(phys.subset(np.flatnonzero(has_net)), net_ft[has_net] * FT)
    np.testing.assert_allclose(at_gross, 0.0, atol=2e-6)  # 0.01 ft of ceiling x dG/dh ~ 1e-9 (solver tolerance)
    np.testing.assert_allclose(at_net, 0.011, atol=2e-6)


# --- properties ----------------------------------------------------------------------------------

def _fleet(tmp_path, count, flat=None, **variant):
    engine = engine_spec(static_thrust_kn=90.0 / count, mct_thrust_ratio=0.95, lapse_exponent=0.9)
    if flat is not None:
        engine.update(flat_rate_isa_dev_c=flat, hot_day_loss_per_c=0.009)
    return write_catalogue(tmp_path / f"p{count}.toml", [engine],
                           [variant_spec(engine_count=count, mmo=0.82, vmo_kt=300.0, sweep_deg=25.0,
                                         thickness_ratio=0.12, korn_factor=0.92, buffet_mach=[0.4, 0.6, 0.75, 0.82],
                                         buffet_cl=[1.1, 0.95, 0.75, 0.6], net_gradient_decrement_pct=1.1, **variant)])


@settings(max_examples=8, deadline=None)
@given(st.floats(55.0, 95.0), st.floats(2.0, 15.0), st.floats(-15.0, 30.0), st.floats(2.0, 20.0),
       st.sampled_from([None, 10.0]))
def test_net_below_gross_both_fall_with_weight_and_heat(tmp_path_factory, w, dw, dev, ddev, flat):
    # The net path is the gross one less a positive gradient, so it levels lower; a heavier
    # aircraft needs more thrust for the same gradient and a warmer day gives less thrust at the
    # same pressure altitude (density lapse; a flat-rated engine holds it up to its deviation), so
    # no ceiling rises (physics facts, e.g. Anderson, Aircraft Performance and Design, ch. 5).
    # No ceiling at all (too heavy or too hot to hold any altitude) counts as the lowest.
    cat = _fleet(tmp_path_factory.mktemp("prop"), 2, flat)
    f = engine_out_table(cat, Conditions(weights=_pct(w, w + dw), isa_devs_c=(dev, dev + ddev)))
    assert f["gross_ceiling_ft"][0] is not None  # the lightest on the coolest day holds one
    both = f.filter(pl.col("net_ceiling_ft").is_not_null())
    assert (both["net_ceiling_ft"] < both["gross_ceiling_ft"] - 100.0).all()
    for col in ("gross_ceiling_ft", "net_ceiling_ft"):
        grid = np.nan_to_num(f[col].to_numpy().astype(float), nan=-np.inf).reshape(2, 2)  # weight, then ISA deviation
        assert np.all(grid[1] <= grid[0] + 0.5), col
        assert np.all(grid[:, 1] <= grid[:, 0] + 0.5), col


@settings(max_examples=6, deadline=None)
@given(st.floats(60.0, 100.0), st.floats(-10.0, 25.0))
def test_more_engines_lose_less(tmp_path_factory, w, dev):
    # With the same total thrust, losing one of four engines leaves 3/4 of it, one of two 1/2:
    # the four-engine aircraft levels higher, gross and net (the same decrement and drag increment
    # here, so only the engine count differs; a physics fact).
    folder = tmp_path_factory.mktemp("count")
    rows = {n: engine_out_table(_fleet(folder, n), Conditions(weights=_pct(w), isa_devs_c=(dev,))).row(0, named=True)
            for n in (2, 3, 4)}
    for col in ("gross_ceiling_ft", "net_ceiling_ft"):
        assert rows[2][col] < rows[3][col] < rows[4][col], col


# --- the polar's linear term and the engine-out search -------------------------------------------

def test_the_polars_linear_term_is_a_drag_of_c_times_the_weight(demo):
    # q S (c CL) = c W at 1 g (CL = W / (q S), Anderson, Introduction to Flight, eq. 4.83): the
    # net decrement enters the climb equation as a drag of d W at every speed and altitude.
    cases, _, _ = solve(demo, Conditions(isa_devs_c=(0.0, 20.0)))
    rng = np.random.default_rng(3)
    # (Machs inside every engine's data, the turboprops' efficiency tables included: M0.15 to 0.65)
    h, m = rng.uniform(0.0, 11_000.0, len(cases)), rng.uniform(0.3, 0.6, len(cases))
    plain = ClimbPhysics(cases)
    linear = ClimbPhysics(dataclasses.replace(cases, cd_per_cl=np.full(len(cases), 0.016)))
    np.testing.assert_allclose(linear.drag_n(h, m) - plain.drag_n(h, m), 0.016 * cases.weight_kg * G0, rtol=1e-9)
    np.testing.assert_allclose(plain.climb_gradient(h, m) - linear.climb_gradient(h, m), 0.016, atol=1e-12)


def _general(cases):
    from variantcmp.solver import solve_ceilings

    return solve_ceilings(cases, processes=1)


@pytest.mark.parametrize("fleet", ["benchmark", "benchmark-turboprops", "fernholt-regional", "tallon-fells-survey"])
def test_the_engine_out_search_agrees_with_the_general_search(fleet):
    # The search built for the engine-out ceilings (variantcmp.solver.gradient_ceiling) against
    # the general best-speed search on the same derived sets (gross and net): where it answers,
    # both are fixed-Mach roots at a best speed, so the same ceiling within 0.05 ft, but where
    # the best speed is a corner at the turbofan lapse's branch change, which the search solves
    # on the corner and the general search beside it: there the search may be higher (by up to
    # 1.3 ft on the benchmark's seeds), never lower by more than 0.1 ft (the corner's tolerance).
    # It answers nearly every case: where the best speed is free, on a corner or on a fixed end
    # of the speed range (the benchmark, the regional fleet's jets), and where the buffet margin
    # holds it at the slowest speed allowed (the regional fleet's turboprops, the survey type,
    # slow and high: the slowest-speed stage, within 0.1 ft of the general search's corner), and
    # on a propeller efficiency table's kink (the benchmark's turboprops: a corner peak).
    from variantcmp import bench
    from variantcmp.catalogue import bundled_fleet_dir, load_catalogue
    from variantcmp.solver.gradient_ceiling import gradient_ceilings

    if fleet.startswith("benchmark"):
        cat = bench.synthetic_fleet() if fleet == "benchmark" else bench.synthetic_turboprop_fleet()
        cases = bench.synthetic_cases(cat, 1500, mach="best")
    else:
        cat = load_catalogue(f"{bundled_fleet_dir()}/{fleet}.toml")
        cases, _, _ = solve(cat, Conditions(weights=_pct(60.0, 80.0, 100.0, 110.0), isa_devs_c=(-15.0, 10.0, 35.0)))
    terms = engine_out_terms(cat, cases)
    for decrement in (None, terms.net_decrement):
        derived = engine_out_cases(cases, terms, decrement)
        fast, done = gradient_ceilings(derived)
        ref = _general(derived)
        assert done.mean() > 0.95
        both = done & np.isfinite(ref.max_altitude_m)
        diff_ft = (fast.max_altitude_m[both] - ref.max_altitude_m[both]) / FT
        # (Higher by up to 3.1 ft on a propeller efficiency table's kink, the benchmark turboprops'
        # net set: a dense scan of 4,001 Machs gives this search's answer, to 0.001 ft; measured.)
        assert np.all(diff_ft > -0.1) and np.all(diff_ft < 4.0)
        assert np.mean(np.abs(diff_ft) < 0.05) > 0.95
        # At a speed held at the slowest edge (stall or buffet margin) both stop short of the
        # crossing, the general search 5 cm (CORNER_MARGIN_M), this one 1 cm: higher by up to 0.15 ft.
        assert np.mean((diff_ft > -0.05) & (diff_ft < 0.2)) > 0.98
        assert np.mean(np.abs(fast.mach[both] - ref.mach[both]) < 2e-3) > 0.98
        np.testing.assert_array_equal(np.isnan(fast.max_altitude_m[done]), np.isnan(ref.max_altitude_m[done]))


def test_engine_out_answers_do_not_depend_on_the_chunks_or_the_processes(monkeypatch):
    # The job's chunk size (JOB_CHUNK, a tuning constant: 50,000 cases) and the process count
    # change only how the work is shared: the same answers bit for bit, one chunk in this process
    # or many chunks over two processes (definition of the machinery, solver.parallel).
    from variantcmp import bench
    from variantcmp.solver import engine_out as eo

    cat = bench.synthetic_fleet()
    cases = bench.synthetic_cases(cat, 1200, mach="best")
    terms = engine_out_terms(cat, cases)
    whole = eo.engine_out_ceilings(cases, terms, processes=1)
    monkeypatch.setattr(eo, "JOB_CHUNK", 150)
    shared = eo.engine_out_ceilings(cases, terms, processes=2)
    for a, b in ((whole.gross, shared.gross), (whole.net, shared.net)):
        for name in ("max_altitude_m", "mach", "limit", "co_limit", "flags"):
            np.testing.assert_array_equal(getattr(a, name), getattr(b, name), err_msg=name)
    assert np.isfinite(whole.net.max_altitude_m).mean() > 0.5


def test_cases_that_hold_no_altitude_agree_with_the_general_search():
    # Heavy and hot with one engine out, many benchmark cases hold no altitude on the net path:
    # the search says so (no ceiling, CANNOT_CLIMB) without scanning every speed, and the general
    # search, scanning every speed, says the same for each of them; a marginal hump of the
    # gradient in altitude at a fixed Mach (the speed range's end) is not missed.
    from variantcmp import bench
    from variantcmp.solver import CANNOT_CLIMB
    from variantcmp.solver.gradient_ceiling import gradient_ceilings

    cat = bench.synthetic_fleet()
    cases = bench.synthetic_cases(cat, 6000, mach="best", seed=11)
    terms = engine_out_terms(cat, cases)
    derived = engine_out_cases(cases, terms, terms.net_decrement)
    fast, done = gradient_ceilings(derived)
    nowhere = np.flatnonzero(done & np.isnan(fast.max_altitude_m))
    assert nowhere.size > 20
    assert np.all(fast.flags[nowhere] == CANNOT_CLIMB)
    ref = _general(derived.take(nowhere))
    assert np.isnan(ref.max_altitude_m).all() and np.all(ref.flags & CANNOT_CLIMB)
