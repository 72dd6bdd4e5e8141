"""One engine inoperative on propeller engines: the remaining engine's shaft power at maximum
continuous, thrust eta P / V, the best speed near the minimum-power speed or held at the slowest
the buffet margin allows. Closed forms and scipy references on catalogues of our own (invented
numbers), the drift-down against solve_ivp, a round trip through `ceilings` from the command
line, and properties on the demo turboprops (hypothesis)."""

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from conftest import write_catalogue
from specs import variant_spec
from test_driftdown import GAMMA, KT, NM, P0, A0, R, Scalar
from test_driftdown import isa as scalar_isa
from test_turboprop import AIRFRAME, pressure_altitude_for_density_m, turboprop_spec
from variantcmp.cli import main
from variantcmp.solver.driftdown import LEVEL_OFF_MARGIN_FT
from variantcmp.table import Conditions
from variantcmp.table.engine_out import EngineOutOptions, engine_out, engine_out_table
from variantcmp.units import WeightSpec

FT = 0.3048
G0 = 9.80665
RHO0 = 1.225  # ISA sea-level density (ISO 2533)
RATIO, INCREMENT = 0.95, 0.004  # MCT ratio, CD0 increment (feathered propeller, trim), invented
# The demo's buffet boundary shape for a straight-wing turboprop (invented).
BUFFET = dict(buffet_mach=[0.25, 0.35, 0.45, 0.50, 0.55, 0.60], buffet_cl=[1.35, 1.28, 1.18, 1.10, 1.00, 0.88])


def _pct(*values):
    return tuple(WeightSpec(v, "%mtow") for v in values)


def _prop_catalogue(path, lapse_exponent=1.0, **variant):
    engine = turboprop_spec(lapse_exponent=lapse_exponent, mct_thrust_ratio=RATIO)
    return write_catalogue(path, [engine], [variant_spec(engine_options=["p1"], oei_cd0_increment=INCREMENT,
                                                         **dict(AIRFRAME, **variant))])


class PropScalar(Scalar):
    """One engine-out turboprop case at a time, plain floats: thrust (n - 1) r eta P0 sigma^m / V
    (shaft power lapse on the day's density, no flat rating), the parabolic polar (no
    compressibility data), stall at CL max, the buffet margin (1.3 g on the boundary, linear
    between points: brentq on M^2 CL_b(M) = 1.3 W / ((gamma/2) p S), Anderson, Introduction to
    Flight, eq. 4.83), MMO, VMO (the jet reference's pitot relations)."""

    def __init__(self, v, e, weight_kg, dev):
        self.v, self.e, self.w, self.dev = v, e, weight_kg * G0, dev
        self.p_oei = (v.engine_count - 1) * e.shaft_power_kw * 1000.0 * e.mct_thrust_ratio * e.propeller_efficiency

    def gradient(self, h, m):
        v = self.v
        t_isa, p = scalar_isa(h)
        t = t_isa + self.dev
        rho = p / (R * t)
        speed = m * math.sqrt(GAMMA * R * t)
        qs = 0.5 * GAMMA * p * m * m * v.wing_area_m2
        cl = self.w / qs
        thrust = self.p_oei * (rho / RHO0) ** self.e.lapse_exponent / speed
        return (thrust - qs * (v.cd0 + v.oei_cd0 + v.k * cl * cl)) / self.w

    def window(self, h):
        v = self.v
        _, p = scalar_isa(h)
        low = max(0.15, math.sqrt(self.w / (0.5 * GAMMA * p * v.wing_area_m2 * v.cl_max)))
        high = v.mmo or 0.95  # without MMO: the solver's top of the speed range (BEST_MACH_HIGH_DEFAULT)
        if v.vmo_kt is not None:
            qc = P0 * ((1 + 0.2 * (v.vmo_kt * KT / A0) ** 2) ** 3.5 - 1)
            high = min(high, math.sqrt(5 * ((qc / p + 1) ** (1 / 3.5) - 1)))
        if v.buffet_mach:
            need = 1.3 * self.w / (0.5 * GAMMA * p * v.wing_area_m2)

            def capacity(m):
                return m * m * np.interp(m, v.buffet_mach, v.buffet_cl) - need

            low = max(low, v.buffet_mach[0])
            grid = np.linspace(low, high, 801)
            peak = grid[int(np.argmax([capacity(m) for m in grid]))]
            if capacity(low) < 0.0:
                low = brentq(capacity, low, peak, xtol=1e-12)
        return low, high


@pytest.mark.parametrize("lapse_exponent", [1.0, 0.75])
def test_turboprop_gross_ceiling_is_the_minimum_power_closed_form_and_net_matches_scipy(tmp_path, lapse_exponent):
    # Propeller thrust eta P / V with P = (n - 1) r P0 sigma^m, a parabolic polar, no buffet data
    # and a CL max above the minimum-power CL: the best gradient (eta P / V - D) / W is zero where
    # eta P equals the least power required, at CL_mp = sqrt(3 CD0'/K), CD = 4 CD0' (Anderson,
    # Aircraft Performance and Design, sec. 5.4: minimum power required; CD0' = CD0 + dCD0), so
    # sigma^(m + 1/2) = W^1.5 (4 CD0'/CL_mp) sqrt(2 / (rho0 S CL_mp)) / ((n - 1) r eta P0), solved
    # for pressure altitude on the day (ambiance's ISO 2533). There the speed is V_mp. The net
    # ceiling (best gradient = 1.1 %, a twin's default) has no closed form: scipy's
    # minimize_scalar over the speed and brentq in altitude on the scalar model above (PropScalar.best,
    # .ceiling). Within 25 ft.
    cat = _prop_catalogue(tmp_path / "tp.toml", lapse_exponent)
    v, e = cat.variants["a1"], cat.engines["p1"]
    frame = engine_out_table(cat, Conditions(weights=_pct(70.0, 100.0), isa_devs_c=(0.0, 25.0)),
                             EngineOutOptions(start_ft=30_000.0))
    cd0 = v.cd0 + INCREMENT
    cl_mp = math.sqrt(3.0 * cd0 / v.k)
    power = e.shaft_power_kw * 1000.0 * RATIO * e.propeller_efficiency
    worst = 0.0
    for row in frame.iter_rows(named=True):
        w = row["weight_kg"] * G0
        sigma = (w ** 1.5 * (4.0 * cd0 / cl_mp) * math.sqrt(2.0 / (RHO0 * v.wing_area_m2 * cl_mp)) / power) ** (
            1.0 / (lapse_exponent + 0.5))
        gross_m = pressure_altitude_for_density_m(sigma * RHO0, row["isa_dev_c"])
        t = scalar_isa(gross_m)[0] + row["isa_dev_c"]
        m_mp = math.sqrt(2.0 * w / (sigma * RHO0 * v.wing_area_m2 * cl_mp)) / math.sqrt(GAMMA * R * t)
        ref = PropScalar(v, e, row["weight_kg"], row["isa_dev_c"])
        net_m = ref.ceiling(0.011, 30_000.0 * FT)
        assert row["gross_limit"] == "thrust" and row["limit"] == "thrust"
        assert row["gross_ceiling_ft"] == pytest.approx(gross_m / FT, abs=25.0)
        assert row["mach"] == pytest.approx(m_mp, abs=2e-3)
        assert row["net_ceiling_ft"] == pytest.approx(net_m / FT, abs=25.0)
        assert row["net_mach"] == pytest.approx(ref.best(net_m)[0], abs=2e-3)
        worst = max(worst, abs(row["gross_ceiling_ft"] - gross_m / FT), abs(row["net_ceiling_ft"] - net_m / FT))
    print(f"\nturboprop, lapse {lapse_exponent}: worst difference {worst:.3f} ft")


def test_turboprop_driftdown_at_the_buffet_margin_matches_solve_ivp(tmp_path):
    # With buffet data the best speed is the slowest the 1.3 g margin allows (the minimum-power
    # CL is out of reach): the gross and net ceilings by brentq along the scalar model's best
    # speed (minimize_scalar in the window), the path by solve_ivp (the jet reference's
    # equations, test_driftdown.Scalar.path). Ceilings within 1 ft, distance and time within 1 %.
    cat = _prop_catalogue(tmp_path / "tpb.toml", 0.75, cl_max=1.6, mmo=0.55, vmo_kt=250.0, **BUFFET)
    v, e = cat.variants["a1"], cat.engines["p1"]
    start_ft = 22_000.0
    result = engine_out(cat, Conditions(weights=_pct(90.0), isa_devs_c=(10.0,)), EngineOutOptions(start_ft=start_ft))
    row = result.frame.row(0, named=True)
    ref = PropScalar(v, e, row["weight_kg"], 10.0)
    gross = ref.ceiling(0.0, start_ft * FT)
    net = ref.ceiling(0.011, start_ft * FT)
    assert ref.best(gross)[0] == pytest.approx(ref.window(gross)[0], abs=1e-6)  # held at the margin's edge
    assert row["gross_ceiling_ft"] == pytest.approx(gross / FT, abs=1.0)
    assert row["net_ceiling_ft"] == pytest.approx(net / FT, abs=1.0)
    assert row["mach"] == pytest.approx(ref.window(gross)[0], abs=1e-4)
    distance, time = ref.path(start_ft * FT, gross + LEVEL_OFF_MARGIN_FT * FT, 0.0)
    assert row["driftdown_distance_nm"] == pytest.approx(distance / NM, rel=0.01)
    assert row["driftdown_time_min"] == pytest.approx(time / 60.0, rel=0.01)
    print(f"\nturboprop drift-down {row['driftdown_distance_nm']:.2f} nm vs {distance / NM:.2f}, "
          f"{row['driftdown_time_min']:.2f} min vs {time / 60.0:.2f}")


def test_oei_command_round_trips_through_ceilings_of_the_engine_out_turboprop(tmp_path, capsys):
    # Definition: the gross ceiling is the absolute ceiling (0 ft/min) at the best speed of the
    # aircraft with one engine out. End to end from the command line: `oei` on a turboprop fleet
    # against `ceilings --mach best --climb 0` on the same fleet written as the engine-out
    # aircraft (one engine's shaft power x the MCT ratio, CD0 + the increment, no certified or
    # cabin ceiling).
    variant = dict(cl_max=1.6, mmo=0.55, vmo_kt=250.0, **BUFFET)
    cat_path = tmp_path / "tp.toml"
    _prop_catalogue(cat_path, 0.75, **variant)
    one_left = turboprop_spec(lapse_exponent=0.75, shaft_power_kw=turboprop_spec()["shaft_power_kw"] * RATIO)
    write_catalogue(tmp_path / "one.toml", [one_left], [variant_spec(
        engine_options=["p1"], engine_count=1, **dict(AIRFRAME, **variant, cd0=AIRFRAME["cd0"] + INCREMENT))])
    args = ["--weight", "70%mtow,100%mtow", "--isa", "0,20", "--format", "json"]
    assert main(["oei", str(cat_path), *args]) == 0
    oei = json.loads(capsys.readouterr().out)
    assert main(["ceilings", str(tmp_path / "one.toml"), *args, "--mach", "best", "--climb", "0"]) == 0
    ceilings = json.loads(capsys.readouterr().out)
    assert len(oei) == len(ceilings) == 4
    for a, b in zip(oei, ceilings):
        assert (a["weight_kg"], a["isa_dev_c"]) == (b["weight_kg"], b["isa_dev_c"])
        assert a["gross_ceiling_ft"] == pytest.approx(b["max_altitude_ft"], abs=0.05)
        assert a["mach"] == pytest.approx(b["mach"], abs=2e-3)
        assert a["net_ceiling_ft"] < a["gross_ceiling_ft"]
    # The readable table on the bundled fleet's turboprops, with the caution under it.
    assert main(["oei", "--variant", "t72,t78", "--isa", "0,20", "--terrain", "8000"]) == 0
    out = capsys.readouterr().out
    assert "t72" in out and "tavish-24" in out and "the operator's en-route procedures govern" in out


@settings(max_examples=8, deadline=None)
@given(weight=st.floats(60.0, 95.0), dev=st.floats(-10.0, 25.0))
def test_demo_turboprops_net_below_gross_and_both_fall_with_weight_and_heat(demo, weight, dev):
    # Facts of flight: the net path lies below the gross (it asks a positive gradient), and more
    # weight or a warmer day never raises either ceiling (less power, more drag).
    conditions = Conditions(weights=_pct(weight, weight + 5.0), isa_devs_c=(dev, dev + 10.0))
    frame = engine_out_table(demo, conditions, EngineOutOptions(start_ft=25_000.0))
    frame = frame.filter(frame["variant"].is_in(["t72", "t78"])).sort(["variant", "engine", "weight_kg", "isa_dev_c"])
    gross = frame["gross_ceiling_ft"].to_numpy().reshape(-1, 2, 2)  # option x weight x day
    net = frame["net_ceiling_ft"].fill_null(-1e9).to_numpy().reshape(-1, 2, 2)
    assert np.all(net < gross)
    assert np.all(np.diff(gross, axis=1) <= 0.01) and np.all(np.diff(gross, axis=2) <= 0.01)
    assert np.all(np.diff(net, axis=1) <= 0.01) and np.all(np.diff(net, axis=2) <= 0.01)
