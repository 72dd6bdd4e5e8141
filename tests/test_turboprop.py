"""Propeller engines: thrust = eta P / V with a shaft-power lapse, through the ceiling solver.

Closed forms on catalogues of our own (invented numbers): the best-speed absolute ceiling at the
minimum-power point, the fixed-Mach thrust ceiling against scipy's brentq on a scalar function
written here, a Mach outside the efficiency table withheld, and properties (hypothesis).
"""

import io
import math

import numpy as np
import polars as pl
import pytest
import tomli_w
from ambiance import Atmosphere
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from conftest import write_catalogue
from specs import variant_spec
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import WeightSpec

FT = 0.3048  # m per ft, exact (international foot)
G0 = 9.80665  # standard gravity (ISO 2533)
GAMMA = 1.4

# A 70-seat-class twin turboprop airframe (invented): high aspect ratio, no compressibility data,
# a CLmax above the minimum-power CL so that nothing but power limits the absolute ceiling.
AIRFRAME = dict(wing_area_m2=61.0, aspect_ratio=12.0, oswald_e=0.80, cd0=0.027, cl_max=3.0, mtow_kg=23_000.0,
                cruise_mach=0.45)
POWER_KW, ETA = 2050.0, 0.82


def turboprop_spec(**kw):
    e = {"id": "p1", "model": "turboprop", "shaft_power_kw": POWER_KW, "lapse_exponent": 1.0,
         "propeller_efficiency": ETA}
    e.update(kw)
    return e


@pytest.fixture(scope="module")
def power_lapse_cat(tmp_path_factory):
    return write_catalogue(tmp_path_factory.mktemp("tp") / "c.toml", [turboprop_spec()], [variant_spec(
        engine_options=["p1"], **AIRFRAME)])


def isa(h_m):
    """(pressure Pa, ISA temperature K, gas constant) at a geopotential altitude, from ambiance
    (an independent ISO 2533 implementation; it takes geometric heights)."""
    a = Atmosphere(Atmosphere.geop2geom_height(h_m))
    p, t, rho = float(a.pressure[0]), float(a.temperature[0]), float(a.density[0])
    return p, t, p / (rho * t)


def pressure_altitude_for_density_m(rho, isa_dev_c):
    """Pressure altitude where the density on a day of ISA + dev is rho (brentq on ambiance)."""
    def gap(h):
        p, t, r = isa(h)
        return p / (r * (t + isa_dev_c)) - rho
    return brentq(gap, -1000.0, 40_000.0, xtol=1e-6)


@pytest.mark.parametrize("weight_pct", [60.0, 70.0, 80.0, 100.0])
@pytest.mark.parametrize("isa_dev_c", [-15.0, -10.0, 0.0, 20.0, 35.0])
def test_best_speed_absolute_ceiling_is_at_minimum_power(power_lapse_cat, weight_pct, isa_dev_c):
    # Minimum power required with a parabolic polar: CL = sqrt(3 CD0 / K), CD = 4 CD0 (Anderson,
    # Aircraft Performance and Design, McGraw-Hill 1999, sec. 5.4), P_R = sqrt(2 W^3 / (rho S))
    # CD / CL^(3/2). Power available eta P0 sigma (power proportional to density, propeller thrust
    # eta P / V: ibid. sec. 3.3) meets it at the absolute ceiling:
    # sigma^(3/2) = sqrt(2 W^3 / (rho0 S)) 4 CD0 / ((3 CD0/K)^(3/4) n eta P0). The density becomes
    # a pressure altitude on the day with brentq on ambiance's ISA.
    v = AIRFRAME
    k = 1.0 / (math.pi * v["aspect_ratio"] * v["oswald_e"])
    cd0, s = v["cd0"], v["wing_area_m2"]
    w = v["mtow_kg"] * weight_pct / 100.0 * G0
    _, _, r = isa(0.0)
    rho0 = 101_325.0 / (r * 288.15)
    sigma = (math.sqrt(2 * w**3 / (rho0 * s)) * 4 * cd0 / ((3 * cd0 / k) ** 0.75 * 2 * ETA * POWER_KW * 1e3)) ** (2 / 3)
    h_ref = pressure_altitude_for_density_m(sigma * rho0, isa_dev_c)
    row = ceilings_table(power_lapse_cat, Conditions(weights=(WeightSpec(weight_pct, "%mtow"),), isa_devs_c=(isa_dev_c,),
                                                     mach="best", climb_fpm=(0.0,))).row(0, named=True)
    assert row["limit"] == "thrust"
    # The bound is 25 ft; the search does better: within 1 ft (measured 0.04 ft worst over
    # 13 weights x 26 days), 70 %MTOW at ISA-10 included, 400 ft above the tropopause, where the
    # speed climbing best at the layer base is not quite the speed of the best ceiling above it.
    assert row["max_altitude_ft"] * FT == pytest.approx(h_ref, abs=1.0 * FT)
    assert row["thrust_ceiling_ft"] * FT == pytest.approx(h_ref, abs=1.0 * FT)
    # Flown at the minimum-power CL (the optimum is flat in speed: a few % on CL).
    p, t, _ = isa(row["max_altitude_ft"] * FT)
    cl = w / (0.5 * GAMMA * p * row["mach"] ** 2 * s)
    assert cl == pytest.approx(math.sqrt(3 * cd0 / k), rel=0.05)
    assert row["mach"] < v["cruise_mach"]


def scalar_excess_thrust_n(h_m, mach, weight_kg, isa_dev_c, lapse_exponent, eta):
    """n eta P0 sigma^m / V - (q S CD0 + K W^2 / (q S)) at a pressure altitude: thrust less drag
    in level flight (Anderson, Aircraft Performance and Design, secs. 3.3 and 5.3), atmosphere from
    ambiance, plain floats."""
    v = AIRFRAME
    p, t_isa, r = isa(h_m)
    t = t_isa + isa_dev_c
    sigma = (p / (r * t)) / (101_325.0 / (r * 288.15))
    speed = mach * math.sqrt(GAMMA * r * t)
    q_s = 0.5 * GAMMA * p * mach**2 * v["wing_area_m2"]
    k = 1.0 / (math.pi * v["aspect_ratio"] * v["oswald_e"])
    w = weight_kg * G0
    return 2 * eta * POWER_KW * 1e3 * sigma**lapse_exponent / speed - (q_s * v["cd0"] + k * w * w / q_s)


EFFICIENCY_MACH, EFFICIENCY = [0.2, 0.3, 0.4, 0.5, 0.6], [0.70, 0.80, 0.85, 0.83, 0.74]


@pytest.mark.parametrize("lapse_exponent, table", [(1.0, False), (0.75, False), (0.8, True)])
def test_fixed_mach_thrust_ceiling_against_brentq(tmp_path, lapse_exponent, table):
    # Thrust ceiling at zero residual climb: the top altitude where n eta P0 sigma^m / V = q S CD0
    # + K W^2 / (q S), found by scipy's brentq on the scalar function above (the efficiency table
    # interpolated linearly by numpy, as the catalogue format defines it). Within 1 ft.
    eta_keys = ({"propeller_efficiency_mach": EFFICIENCY_MACH, "propeller_efficiency_table": EFFICIENCY} if table
                else {"propeller_efficiency": ETA})
    engine = {k: val for k, val in turboprop_spec(lapse_exponent=lapse_exponent).items() if k != "propeller_efficiency"}
    cat = write_catalogue(tmp_path / "c.toml", [dict(engine, **eta_keys)],
                          [variant_spec(engine_options=["p1"], **AIRFRAME)])
    machs, weights, devs = (0.25, 0.35, 0.45, 0.55), (0.6, 0.8, 1.0), (-10.0, 0.0, 25.0)
    checked = 0
    for mach in machs:
        eta = float(np.interp(mach, EFFICIENCY_MACH, EFFICIENCY)) if table else ETA
        frame = ceilings_table(cat, Conditions(weights=tuple(WeightSpec(f * 100, "%mtow") for f in weights),
                                               isa_devs_c=devs, mach=mach, climb_fpm=(0.0,)))
        for row in frame.iter_rows(named=True):
            f = lambda h: scalar_excess_thrust_n(h, mach, row["weight_kg"], row["isa_dev_c"], lapse_exponent, eta)  # noqa: E731
            top = 25_000.0  # above every ceiling here: find the highest level that still has thrust to spare
            assert f(top) < 0
            h = top
            while f(h) < 0 and h > -600.0:
                h -= 250.0
            if f(h) < 0:
                assert row["thrust_ceiling_ft"] is None and "cannot climb" in row["note"]
                continue
            ref = brentq(f, h, h + 250.0, xtol=1e-6)
            assert row["thrust_ceiling_ft"] * FT == pytest.approx(ref, abs=1.0 * FT)
            checked += 1
    assert checked >= 20


def test_a_mach_outside_the_efficiency_table_is_withheld(tmp_path):
    # The catalogue format: propeller efficiency against Mach is never extrapolated. A fixed Mach
    # outside the table gets no answer and a note; the best speed stays inside the table.
    engine = {k: val for k, val in turboprop_spec().items() if k != "propeller_efficiency"}
    engine.update(propeller_efficiency_mach=EFFICIENCY_MACH, propeller_efficiency_table=EFFICIENCY)
    cat = write_catalogue(tmp_path / "c.toml", [engine], [variant_spec(engine_options=["p1"], **AIRFRAME)])
    for mach in (0.65, 0.18):
        out = ceilings_table(cat, Conditions(mach=mach)).row(0, named=True)
        assert out["max_altitude_ft"] is None and out["thrust_ceiling_ft"] is None and out["limit"] is None
        assert out["note"] == f"M{mach:.3f} outside the propeller efficiency table (efficiency data M0.200-0.600)"
    inside = ceilings_table(cat, Conditions(mach=0.2)).row(0, named=True)
    assert inside["max_altitude_ft"] is not None and inside["note"] == ""
    best = ceilings_table(cat, Conditions(mach="best", climb_fpm=(0.0, 300.0)))
    assert best["max_altitude_ft"].null_count() == 0
    assert ((best["mach"] >= 0.2) & (best["mach"] <= 0.6)).all()


def _property_cat(tmp_path_factory):
    # A turboprop with an efficiency table and a buffet boundary, flat rated (invented numbers).
    engine = {k: val for k, val in turboprop_spec(lapse_exponent=0.8, flat_rate_isa_dev_c=15.0,
                                                  hot_day_loss_per_c=0.008).items() if k != "propeller_efficiency"}
    engine.update(propeller_efficiency_mach=[0.15, 0.25, 0.35, 0.45, 0.55, 0.65],
                  propeller_efficiency_table=[0.62, 0.78, 0.85, 0.86, 0.82, 0.70])
    variant = variant_spec(engine_options=["p1"], **dict(AIRFRAME, cl_max=1.6), mmo=0.55, vmo_kt=250.0,
                           buffet_mach=[0.25, 0.35, 0.45, 0.55, 0.60], buffet_cl=[1.35, 1.28, 1.18, 1.00, 0.88])
    return write_catalogue(tmp_path_factory.mktemp("tp") / "c.toml", [engine], [variant])


@pytest.fixture(scope="module")
def property_cat(tmp_path_factory):
    return _property_cat(tmp_path_factory)


@settings(max_examples=12, deadline=None)
@given(st.floats(75.0, 95.0), st.floats(2.0, 10.0), st.floats(-15.0, 35.0), st.floats(2.0, 15.0),
       st.sampled_from([0.0, 300.0]))
def test_best_speed_is_slower_than_cruise_and_its_ceiling_falls_with_weight_and_heat(property_cat, w, dw, dev, ddev,
                                                                                    climb):
    # Trade facts (Anderson, Aircraft Performance and Design, ch. 5): a propeller aircraft's
    # highest altitude is flown near its minimum-power speed (here at the buffet margin just
    # faster than it), slower than it cruises, at the weights it flies high with; more weight
    # needs more power at every altitude, and on a warmer day at the same pressure altitude the
    # true airspeed of a Mach is higher, so thrust eta P / V is lower, and above the flat-rate
    # deviation power falls too: neither raises the best-speed ceiling. A few ft of slack for
    # the search's tolerance on a flat optimum.
    frame = ceilings_table(property_cat, Conditions(weights=(WeightSpec(w, "%mtow"), WeightSpec(w + dw, "%mtow")),
                                                    isa_devs_c=(dev, dev + ddev), mach="best", climb_fpm=(climb,)))
    assert (frame["mach"].drop_nulls() < AIRFRAME["cruise_mach"]).all()
    grid = {(r["weight_kg"], r["isa_dev_c"]): r for r in frame.iter_rows(named=True)}
    (light, heavy), (cool, hot) = sorted({k[0] for k in grid}), sorted({k[1] for k in grid})
    for col in ("thrust_ceiling_ft", "max_altitude_ft"):
        for a, b in [((light, cool), (heavy, cool)), ((light, cool), (light, hot)), ((light, hot), (heavy, hot))]:
            lo, hi = grid[b][col], grid[a][col]
            if lo is not None and hi is not None:
                assert lo <= hi + 5.0, (col, a, b)


@pytest.mark.parametrize("flat_rated", [False, True])
def test_available_thrust_is_efficiency_times_power_over_true_airspeed(tmp_path, flat_rated):
    # T = eta P / V (Anderson, Aircraft Performance and Design, sec. 3.3) with P = P0 sigma^m (and
    # m2 above the tropopause: sigma_11^m (rho/rho_11)^m2), V = M a at the day's temperature. Flat
    # rated: power held at its ISA value up to the flat-rate deviation, then a loss per degree
    # (definition of flat rating, common practice, no source). Assembled here from ambiance's
    # atmosphere and plain floats, checked against the solver's physics at many points.
    from variantcmp.cases import build_cases
    from variantcmp.solver import ClimbPhysics

    rating = {"flat_rate_isa_dev_c": 12.0, "hot_day_loss_per_c": 0.01} if flat_rated else {}
    engine = {k: val for k, val in turboprop_spec(lapse_exponent=0.8, lapse_exponent_above_tropopause=1.1,
                                                  **rating).items() if k != "propeller_efficiency"}
    engine.update(propeller_efficiency_mach=EFFICIENCY_MACH, propeller_efficiency_table=EFFICIENCY)
    cat = write_catalogue(tmp_path / "c.toml", [engine], [variant_spec(engine_options=["p1"], **AIRFRAME)])
    devs = [-10.0, 0.0, 20.0, 35.0]
    cases, _ = build_cases(cat, [("a1", "p1")], lambda v: [v.mtow_kg], devs, [0.0], 0.3, 1.3)
    rng = np.random.default_rng(3)
    rows = np.repeat(np.arange(len(cases)), 20)
    sample = cases.take(rows).with_mach(rng.uniform(0.2, 0.6, rows.size))
    h = rng.uniform(0.0, 15_000.0, rows.size)
    got = ClimbPhysics(sample).available_thrust_n(h, sample.mach)
    _, _, r = isa(0.0)
    rho0 = 101_325.0 / (r * 288.15)
    p11, t11, _ = isa(11_000.0)
    for i in range(rows.size):
        dev = float(sample.isa_dev_c[i])
        p, t_isa, _ = isa(float(h[i]))
        seen = 0.0 if flat_rated else dev  # a flat-rated engine's lapse sees the ISA day
        rho, rho11 = p / (r * (t_isa + seen)), p11 / (r * (t11 + seen))
        lapse = (rho / rho0) ** 0.8 if rho >= rho11 else (rho11 / rho0) ** 0.8 * (rho / rho11) ** 1.1
        hot = max(1.0 - 0.01 * max(dev - 12.0, 0.0), 0.0) if flat_rated else 1.0
        m = float(sample.mach[i])
        speed = m * math.sqrt(GAMMA * r * (t_isa + dev))
        eta = float(np.interp(m, EFFICIENCY_MACH, EFFICIENCY))
        # (1e-5: the two ISA implementations differ in the last digits of their constants)
        assert got[i] == pytest.approx(eta * 2 * POWER_KW * 1e3 * lapse * hot / speed, rel=1e-5)


def test_derived_figures_give_power_to_weight_and_the_speed_of_the_absolute_ceiling(power_lapse_cat):
    # Shaft power-to-weight = n P0 / MTOW (definition); the absolute ceiling at MTOW, ISA is the
    # minimum-power closed form above, flown at CL = sqrt(3 CD0/K) (Anderson 1999, sec. 5.4), and
    # the figures name that speed and the propeller efficiency there (constant here).
    from variantcmp.table import fleet_figures

    fig = fleet_figures(power_lapse_cat)["a1"]
    assert "thrust_to_weight" not in fig
    assert fig["power_to_weight_kw_per_kg"]["p1"] == pytest.approx(2 * POWER_KW / AIRFRAME["mtow_kg"])
    row = ceilings_table(power_lapse_cat, Conditions(mach="best", climb_fpm=(0.0,))).row(0, named=True)
    assert fig["absolute_ceiling_ft"]["p1"] == pytest.approx(row["thrust_ceiling_ft"], abs=0.01)
    mach = fig["absolute_ceiling_mach"]["p1"]
    assert mach == pytest.approx(row["mach"], abs=1e-3)  # nothing else binds: the best speed's
    p, _, _ = isa(row["thrust_ceiling_ft"] * FT)
    k = 1.0 / (math.pi * AIRFRAME["aspect_ratio"] * AIRFRAME["oswald_e"])
    cl = AIRFRAME["mtow_kg"] * G0 / (0.5 * GAMMA * p * mach**2 * AIRFRAME["wing_area_m2"])
    assert cl == pytest.approx(math.sqrt(3 * AIRFRAME["cd0"] / k), rel=0.05)
    assert fig["absolute_ceiling_propeller_efficiency"]["p1"] == ETA


def test_catalogue_warnings_go_to_stderr_one_line_each_and_check_lists_them(tmp_path, capsys):
    # Common practice, no source: propeller efficiency collapses above about M0.7, so a turboprop
    # option on a variant cruising faster is valid but doubtful: warned about, never silently.
    from variantcmp.cli import main

    fast = dict(AIRFRAME, cruise_mach=0.74, mmo=0.78)
    write_catalogue(tmp_path / "fast.toml", [turboprop_spec()], [variant_spec(engine_options=["p1"], **fast),
                                                                  variant_spec(id="a2", engine_options=["p1"], **fast)])
    path = str(tmp_path / "fast.toml")
    assert main(["ceilings", path, "--format", "csv"]) == 0
    out, err = capsys.readouterr()
    assert pl.read_csv(io.StringIO(out)).height == 2  # data only on stdout
    lines = [line for line in err.splitlines() if "warning:" in line]
    assert len(lines) == 2 and all(line.startswith(path + ": variant[") for line in lines)
    assert '"a2".cruise_mach' in lines[1] and "propeller efficiency collapses above about M0.7" in lines[1]
    assert main(["check", path]) == 0
    out, err = capsys.readouterr()
    assert "warning" not in err and out.count("propeller efficiency collapses") == 2


# ------------------------------------------------------------------- the demo turboprops, end to end

DEMO_PROPS = [("t72", "tavish-20", 23_000.0, 15.0), ("t78", "tavish-24", 25_000.0, 30.0), ("t72", "tavish-24", 20_000.0, 0.0)]


def _demo_row(demo, variant, engine, weight_kg, isa_dev_c, mach, climb_fpm=300.0):
    return ceilings_table(demo, Conditions(weights=(WeightSpec(weight_kg, "kg"),), isa_devs_c=(isa_dev_c,), mach=mach,
                                           climb_fpm=(climb_fpm,), variants=(variant,), engines=(engine,))).row(0, named=True)


def test_demo_turboprop_envelopes_agree_with_ceilings_and_balance_power(demo):
    # Round trip: the envelope's top (where the feasible band closes) is the best-speed maximum
    # altitude and its highest point on the cruise-Mach line the fixed-Mach one (within the
    # envelope's altitude grid, 20 ft, as for the jets); on the thrust boundaries the residual
    # climb is the criterion, by the climb equation written here: (T - D) V / W x (T_ISA/T) x f
    # with T = eta P / V (Anderson, Aircraft Performance and Design, secs. 3.3 and 5.11).
    from variantcmp import aero, thrust
    from variantcmp.envelope import EnvelopeCase, compute_envelopes

    specs = [EnvelopeCase(v, e, w, dev) for v, e, w, dev in DEMO_PROPS]
    env = compute_envelopes(demo, specs)
    for case, spec in enumerate(specs):
        summary = env.summary.row(case, named=True)
        best = _demo_row(demo, spec.variant, spec.engine, spec.weight_kg, spec.isa_dev_c, "best")
        cruise = _demo_row(demo, spec.variant, spec.engine, spec.weight_kg, spec.isa_dev_c, "cruise")
        assert summary["top_ft"] == pytest.approx(best["max_altitude_ft"], abs=20.0)
        assert best["limit"] in summary["top_limit"]
        if cruise["max_altitude_ft"] is not None:
            assert summary["marked_top_ft"] == pytest.approx(cruise["max_altitude_ft"], abs=20.0)
        v, e = demo.variants[spec.variant], demo.engines[spec.engine]
        eff = thrust.PropellerEfficiency(e.propeller_efficiency, e.propeller_efficiency_mach, e.propeller_efficiency_table)
        checked = 0
        for side in ("min", "max"):
            t = env.table.filter((pl.col("case") == case) & pl.col(f"thrust_{side}_mach").is_not_null())
            for alt_ft, mach in zip(t["altitude_ft"].to_list(), t[f"thrust_{side}_mach"].to_list()):
                p, t_isa, r = isa(alt_ft * FT)
                temp = t_isa + spec.isa_dev_c
                rho_isa = p / (r * t_isa)  # flat rated (both demo engines): power sees the ISA day
                power = 2 * e.shaft_power_kw * 1e3 * (rho_isa / (101_325.0 / (r * 288.15))) ** e.lapse_exponent
                power *= max(1.0 - e.hot_day_loss_per_c * max(spec.isa_dev_c - e.flat_rate_isa_dev_c, 0.0), 0.0)
                speed = mach * math.sqrt(GAMMA * r * temp)
                q_s = 0.5 * GAMMA * p * mach**2 * v.wing_area_m2
                w = spec.weight_kg * G0
                cl = w / q_s
                cd = v.cd0 + v.k * cl**2 + aero.wave_drag_coefficient(mach, cl, v.thickness_ratio, v.sweep_deg,
                                                                      v.korn_factor)
                lapse = -0.0065 if alt_ft * FT < 11_000.0 else 0.0
                share = aero.energy_share_factor(mach, temp, t_isa, lapse)
                rate = (float(eff(mach)) * power / speed - q_s * cd) * speed / w * (t_isa / temp) * share
                assert rate / (FT / 60.0) == pytest.approx(300.0, abs=0.1)
                checked += 1
        assert checked > 10


def test_demo_turboprop_sweeps_agree_with_ceilings(demo):
    # Round trip: each sweep point is the ceilings table's answer at that weight, ISA deviation or
    # Mach; the Mach sweep's highest point is the best speed's maximum altitude less at most what
    # a 41-point grid misses (a few hundred ft), never more.
    from variantcmp.sweeps import sweep

    select = Conditions(variants=("t78",), engines=("tavish-20",))
    sw = sweep(demo, select, "isa", points=5, value_range=(0.0, 40.0))
    for row in sw.frame.iter_rows(named=True):
        direct = _demo_row(demo, "t78", "tavish-20", row["weight_kg"], row["isa_dev_c"], "cruise")
        assert row["max_altitude_ft"] == direct["max_altitude_ft"]
    weights = sweep(demo, select, "weight", points=6).frame.sort("weight_kg")
    assert np.all(np.diff(weights["max_altitude_ft"].drop_nulls().to_numpy()) <= 1e-6)  # heavier never higher
    direct = _demo_row(demo, "t78", "tavish-20", weights["weight_kg"][-1], 0.0, "cruise")
    assert weights["max_altitude_ft"][-1] == pytest.approx(direct["max_altitude_ft"], abs=1e-6)
    machs = sweep(demo, select, "mach", points=41).frame
    best = _demo_row(demo, "t78", "tavish-20", 25_000.0, 0.0, "best")
    assert best["max_altitude_ft"] - 300.0 <= machs["max_altitude_ft"].max() <= best["max_altitude_ft"] + 20.0
    peak = machs.filter(pl.col("max_altitude_ft") == pl.col("max_altitude_ft").max()).row(0, named=True)
    assert peak["mach"] < demo.variants["t78"].cruise_mach  # the minimum-power region, slower than cruise


@settings(max_examples=10, deadline=None)
@given(st.sampled_from(["t72", "t78"]), st.sampled_from(["tavish-20", "tavish-24"]), st.floats(70.0, 98.0),
       st.floats(2.0, 10.0), st.floats(-15.0, 35.0), st.floats(2.0, 15.0), st.sampled_from([0.0, 100.0, 300.0]))
def test_demo_turboprops_fly_highest_slower_than_they_cruise(demo, variant, engine, w, dw, dev, ddev, climb):
    # Trade facts (Anderson, Aircraft Performance and Design, ch. 5): a propeller aircraft's thrust
    # ceiling peaks near its minimum-power speed, slower than it cruises; where thrust binds the
    # maximum altitude, that is where it flies highest. Its best-speed ceiling falls with weight and
    # with a warmer day (a few ft of slack: the search's tolerance on a flat optimum).
    from variantcmp.table import solve

    conditions = Conditions(weights=(WeightSpec(w, "%mtow"), WeightSpec(w + dw, "%mtow")), isa_devs_c=(dev, dev + ddev),
                            mach="best", climb_fpm=(climb,), variants=(variant,), engines=(engine,))
    cases, _, res = solve(demo, conditions)
    cruise = demo.variants[variant].cruise_mach
    known = np.isfinite(res.thrust_m)
    assert known.any() and np.all(res.thrust_mach[known] < cruise)
    thrust_binds = np.isfinite(res.max_altitude_m) & (res.limit == 0)
    assert np.all(res.mach[thrust_binds] < cruise)
    grid = {(cases.weight_kg[i], cases.isa_dev_c[i]): (res.thrust_m[i], res.max_altitude_m[i]) for i in range(len(cases))}
    (light, heavy), (cool, hot) = sorted({k[0] for k in grid}), sorted({k[1] for k in grid})
    for a, b in [((light, cool), (heavy, cool)), ((light, cool), (light, hot)), ((light, hot), (heavy, hot))]:
        for high, low in zip(grid[a], grid[b]):
            if np.isfinite(high) and np.isfinite(low):
                assert low <= high + 5.0 * FT, (a, b)


_TABLE_ETA = {"propeller_efficiency_mach": [0.2, 0.5], "propeller_efficiency_table": [0.7, 0.8]}


@pytest.mark.parametrize("change, fragment", [
    ({"shaft_power_kw": 2_000_000.0}, '"p1".shaft_power_kw: expected shaft power per engine, sea level, static, '
                                      "ISA, at the climb/cruise rating, in kW, greater than 0 and at most 20,000; got 2,000,000"),
    ({"propeller_efficiency": 82.0}, '"p1".propeller_efficiency: expected the propeller efficiency (thrust power / shaft '
                                     "power), at least 0.3 and at most 0.95; got 82"),
    ({"propeller_efficiency": None, **_TABLE_ETA, "propeller_efficiency_mach": [0.5, 0.2]},
     '"p1".propeller_efficiency_mach[1]: expected Mach numbers in strictly increasing order, got 0.2 after 0.5'),
    ({"propeller_efficiency": None, **_TABLE_ETA, "propeller_efficiency_table": [0.7, 1.3]},
     '"p1".propeller_efficiency_table[1]: expected propeller efficiencies (thrust power / shaft power), greater than 0 '
     "and at most 0.95; got 1.3"),
    ({"propeller_efficiency": None, "propeller_efficiency_mach": [0.2, 0.5]},
     '"p1".propeller_efficiency_table: missing: the propeller efficiency against Mach needs propeller_efficiency_mach, '
     "propeller_efficiency_table together"),
    ({"propeller_efficiency": None, **_TABLE_ETA, "propeller_efficiency_mach": [0.2, 1.2]},
     '"p1".propeller_efficiency_mach[1]: expected Mach numbers below 1: the models are subsonic; got 1.2'),
    ({"rating_fraction": 0.9}, '"p1".rating_fraction: not used by model "turboprop"'),
    ({"throttle_ratio": 1.05}, '"p1".throttle_ratio: not used by model "turboprop"; it belongs to model \'turbofan\''),
])
def test_a_broken_turboprop_gets_one_clear_message_with_its_key_path(tmp_path, capsys, change, fragment):
    # The project's rule for errors users can cause: one message naming the file, the key path and
    # what is expected, exit status 2, no traceback (no external source: the catalogue format).
    from variantcmp.cli import main

    engine = {k: val for k, val in dict(turboprop_spec(), **change).items() if val is not None}
    path = tmp_path / "broken.toml"
    path.write_text(tomli_w.dumps({"catalogue": {"title": "t"}, "engine": [engine], "variant": [
        variant_spec(engine_options=["p1"], **AIRFRAME)]}))
    assert main(["ceilings", str(path)]) == 2
    err = capsys.readouterr().err
    assert f"{path}: engine[0] {fragment}" in err and "Traceback" not in err
