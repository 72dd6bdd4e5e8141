"""The drift-down (variantcmp.solver.driftdown, variantcmp.table.engine_out): the still-air
distance and time against scipy's solve_ivp on an independent scalar implementation of the same
equations, the speed window against its closed forms, the level-off definition and the terrain
check."""

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq, minimize_scalar

from conftest import write_catalogue
from specs import engine_spec, variant_spec
from variantcmp.solver.driftdown import LEVEL_OFF_MARGIN_FT
from variantcmp.solver.gradient import speed_window
from variantcmp.solver.engine_out import engine_out_cases, engine_out_terms
from variantcmp.solver import ClimbPhysics
from variantcmp.table import Conditions, solve
from variantcmp.table.engine_out import EngineOutOptions, engine_out
from variantcmp.units import WeightSpec

FT, NM, KT = 0.3048, 1852.0, 1852.0 / 3600.0
# Scalar model, plain floats and math (ISO 2533 constants and layers to 20 km).
G, R, GAMMA, T0, P0, A0 = 9.80665, 287.05287, 1.4, 288.15, 101_325.0, 340.294


def isa(h):
    """(T_ISA, p) at geopotential pressure altitude h below 20 km (ISO 2533)."""
    if h <= 11_000.0:
        t = T0 - 0.0065 * h
        return t, P0 * (t / T0) ** (G / (R * 0.0065))
    p11 = P0 * (216.65 / T0) ** (G / (R * 0.0065))
    return 216.65, p11 * math.exp(-G * (h - 11_000.0) / (R * 216.65))


class Scalar:
    """One engine-out case, one altitude and speed at a time: thrust (n - 1) F0 r sigma^m (density
    lapse on the day's density), drag q S (CD0 + dCD0 + K CL^2 + CDw) with the Korn/Lock wave drag
    (Malone & Mason 1995: M_crit = kA/cos L - (t/c)/cos^2 L - CL/(10 cos^3 L) - (0.1/80)^(1/3),
    CDw = 20 (M - M_crit)^4), stall at CL max, MMO, VMO by the subsonic pitot relations (Anderson,
    Introduction to Flight, sec. 4.12)."""

    def __init__(self, v, e, weight_kg, dev):
        self.v, self.e, self.w, self.dev = v, e, weight_kg * G, dev
        self.f_oei = (v.engine_count - 1) * e.static_thrust_kn * 1000.0 * e.mct_thrust_ratio

    def gradient(self, h, m):
        v = self.v
        t_isa, p = isa(h)
        t = t_isa + self.dev
        sigma = p / (R * t) / (P0 / (R * T0))
        qs = 0.5 * GAMMA * p * m * m * v.wing_area_m2
        cl = self.w / qs
        c = math.cos(math.radians(v.sweep_deg))
        m_crit = v.korn_factor / c - v.thickness_ratio / c**2 - cl / (10 * c**3) - (0.1 / 80) ** (1 / 3)
        cd = v.cd0 + v.oei_cd0 + v.k * cl * cl + (20 * (m - m_crit) ** 4 if m > m_crit else 0.0)
        return (self.f_oei * sigma**self.e.lapse_exponent - qs * cd) / self.w

    def window(self, h):
        v = self.v
        _, p = isa(h)
        low = max(0.15, math.sqrt(self.w / (0.5 * GAMMA * p * v.wing_area_m2 * v.cl_max)))
        qc = P0 * ((1 + 0.2 * (v.vmo_kt * KT / A0) ** 2) ** 3.5 - 1)
        m_vmo = math.sqrt(5 * ((qc / p + 1) ** (1 / 3.5) - 1))
        return low, min(v.mmo, m_vmo)

    def best(self, h):
        low, high = self.window(h)
        r = minimize_scalar(lambda m: -self.gradient(h, m), bounds=(low, high), method="bounded",
                            options={"xatol": 1e-8})
        return r.x, -r.fun

    def ceiling(self, decrement, start):
        return brentq(lambda h: self.best(h)[1] - decrement, 0.0, start, xtol=1e-6)

    def path(self, start, end, decrement):
        """Still-air distance (m) and time (s) from start down to end: solve_ivp in pressure
        altitude of dx/dh = (T/T_ISA) cos(gamma)/sin(gamma), dt/dh = (T/T_ISA)/(V sin(gamma)),
        sin(gamma) = best gradient - decrement (quasi-steady; hydrostatic height per pressure
        altitude)."""
        def rhs(h, _):
            m, g = self.best(h)
            g -= decrement
            t_isa, _ = isa(h)
            t = t_isa + self.dev
            ratio = t / t_isa
            return [ratio * math.sqrt(1 - g * g) / g, ratio / (m * math.sqrt(GAMMA * R * t) * g)]
        sol = solve_ivp(rhs, (start, end), [0.0, 0.0], rtol=1e-9, atol=1e-6)
        return sol.y[0, -1], sol.y[1, -1]


def _catalogue(tmp_path, vmo_kt=300.0, count=2):
    return write_catalogue(tmp_path / "dd.toml", [engine_spec(static_thrust_kn=62.0, mct_thrust_ratio=0.94,
                                                              lapse_exponent=0.9)],
                           [variant_spec(engine_count=count, mmo=0.80, vmo_kt=vmo_kt, sweep_deg=25.0,
                                         thickness_ratio=0.12, korn_factor=0.92, oei_cd0_increment=0.003)])


@pytest.mark.parametrize("vmo_kt, weight_pct, dev, start_fl", [
    (300.0, 100.0, 0.0, 370.0),  # the speed limits do not bind
    (190.0, 85.0, 20.0, 350.0),  # VMO holds the drift-down speed down near the start
])
def test_driftdown_distance_and_time_match_solve_ivp(tmp_path, vmo_kt, weight_pct, dev, start_fl):
    # The same equations integrated independently: scalar model above, the best speed by scipy's
    # minimize_scalar, the ceilings by brentq, the path by solve_ivp (RK45, rtol 1e-9) to the
    # level-off (LEVEL_OFF_MARGIN_FT above the gross ceiling). Within 1 % (the bound).
    cat = _catalogue(tmp_path, vmo_kt)
    result = engine_out(cat, Conditions(weights=(WeightSpec(weight_pct, "%mtow"),), isa_devs_c=(dev,)),
                        EngineOutOptions(start_ft=start_fl * 100.0, terrain_ft=8000.0))
    row = result.frame.row(0, named=True)
    ref = Scalar(cat.variants["a1"], cat.engines["e1"], row["weight_kg"], dev)
    start = start_fl * 100.0 * FT
    gross = ref.ceiling(0.0, start)
    assert row["gross_ceiling_ft"] == pytest.approx(gross / FT, abs=1.0)
    distance, time = ref.path(start, gross + LEVEL_OFF_MARGIN_FT * FT, 0.0)
    assert row["driftdown_distance_nm"] == pytest.approx(distance / NM, rel=0.01)
    assert row["driftdown_time_min"] == pytest.approx(time / 60.0, rel=0.01)
    assert row["level_off_ft"] == pytest.approx(gross / FT + LEVEL_OFF_MARGIN_FT, abs=1.0)
    # The net path to terrain + clearance, on the day's heights: where it crosses.
    net = ref.ceiling(0.011, start)
    assert row["net_ceiling_ft"] == pytest.approx(net / FT, abs=1.0)
    print(f"\ndistance {row['driftdown_distance_nm']:.3f} nm vs {distance / NM:.3f}, "
          f"time {row['driftdown_time_min']:.3f} min vs {time / 60:.3f}")
    if vmo_kt < 200.0:
        # The drift-down speed is held at VMO somewhere on the path (the case is a real check of it).
        path = result.drift.gross
        assert np.any(np.abs(path.mach[0] - [ref.window(h)[1] for h in path.altitude_m[0]]) < 1e-4)


def test_the_net_path_crosses_terrain_plus_clearance_where_solve_ivp_says(tmp_path):
    # A terrain the net path does not clear: it descends through terrain + clearance (a height
    # above mean sea level, turned into the day's pressure altitude by the hypsometric relation,
    # here with brentq on the scalar integral of T/T_ISA) at the distance solve_ivp gives.
    from scipy.integrate import quad

    cat = _catalogue(tmp_path)
    dev, terrain, clearance = 15.0, 21_000.0, 2_000.0
    frame = engine_out(cat, Conditions(isa_devs_c=(dev,)),
                       EngineOutOptions(start_ft=37_000.0, terrain_ft=terrain, clearance_ft=clearance)).frame
    row = frame.row(0, named=True)
    ref = Scalar(cat.variants["a1"], cat.engines["e1"], row["weight_kg"], dev)

    def height(h):
        return quad(lambda x: (isa(x)[0] + dev) / isa(x)[0], 0.0, h, epsabs=1e-6)[0]

    required = brentq(lambda h: height(h) - (terrain + clearance) * FT, 0.0, 15_000.0, xtol=1e-6)
    net = ref.ceiling(0.011, 37_000.0 * FT)
    assert net < required  # the net path goes below terrain + clearance
    distance, _ = ref.path(37_000.0 * FT, required, 0.011)
    assert row["net_clears"] is False
    assert row["net_crossing_nm"] == pytest.approx(distance / NM, rel=0.01)
    assert row["net_clearance_ft"] == pytest.approx(height(net) / FT - terrain, abs=1.0)
    # The same terrain 3,000 ft lower is cleared: no crossing.
    clear = engine_out(cat, Conditions(isa_devs_c=(dev,)), EngineOutOptions(
        start_ft=37_000.0, terrain_ft=terrain - 3000.0, clearance_ft=clearance)).frame.row(0, named=True)
    assert clear["net_clears"] is True and clear["net_crossing_nm"] is None


def test_speed_window_ends_are_the_closed_forms(tmp_path, demo):
    # Stall: CL = W / ((gamma/2) p M^2 S) = CL max (Anderson, Introduction to Flight, eq. 4.83);
    # VMO: the Mach of the calibrated airspeed at the altitude (subsonic pitot relations, ibid.
    # sec. 4.12); buffet margin: g W = (gamma/2) p M^2 S CL_buffet(M), its two roots either side
    # of the boundary's peak by brentq on the catalogue's boundary (linear between points).
    cases, _, _ = solve(demo, Conditions(weights=(WeightSpec(100.0, "%mtow"),)))
    phys = ClimbPhysics(engine_out_cases(cases, engine_out_terms(demo, cases)))
    h = np.full(len(cases), 10_000.0)
    low, high = speed_window(phys, h)
    _, p = isa(10_000.0)
    for i in range(len(cases)):
        v = [x for x in demo.variants.values()][cases.variant_index[i]]
        w = cases.weight_kg[i] * G
        lo = max(cases.mach_low[i], math.sqrt(w / (0.7 * p * v.wing_area_m2 * v.cl_max)))
        qc = P0 * ((1 + 0.2 * (v.vmo_kt * KT / A0) ** 2) ** 3.5 - 1)
        hi = min(cases.mach_high[i], math.sqrt(5 * ((qc / p + 1) ** (1 / 3.5) - 1)))
        if v.buffet_mach:
            need = 1.3 * w / (0.7 * p * v.wing_area_m2)
            cap = lambda m: m * m * np.interp(m, v.buffet_mach, v.buffet_cl) - need  # noqa: E731
            grid = np.linspace(max(lo, v.buffet_mach[0]), min(hi, v.buffet_mach[-1]), 2001)
            peak = grid[np.argmax([cap(m) for m in grid])]
            lo = lo if cap(lo) >= 0 else brentq(cap, lo, peak, xtol=1e-10)
            hi = hi if cap(hi) >= 0 else brentq(cap, peak, hi, xtol=1e-10)
        assert low[i] == pytest.approx(lo, abs=1e-6)
        assert high[i] == pytest.approx(hi, abs=1e-6)
    assert np.all(low < high)


def test_level_off_is_the_stated_margin_above_the_gross_ceiling_and_a_start_below_holds(tmp_path):
    # Definition (README, driftdown docstring): the drift-down ends LEVEL_OFF_MARGIN_FT above the
    # gross ceiling, still sinking slowly; a start within that margin, or lower, holds its level.
    cat = _catalogue(tmp_path)
    first = engine_out(cat, Conditions(), EngineOutOptions(start_ft=37_000.0))
    row = first.frame.row(0, named=True)
    path = first.drift.gross
    assert row["level_off_ft"] == pytest.approx(row["gross_ceiling_ft"] + LEVEL_OFF_MARGIN_FT, abs=1e-6)
    assert path.gradient[0, -1] < 0.0  # still descending there
    assert np.all(np.diff(path.altitude_m[0]) < 0.0) and np.all(np.diff(path.distance_m[0]) > 0.0)
    sink_fpm = -path.gradient[0, -1] * path.mach[0, -1] * 300.0 / FT * 60.0  # about, V ~ 300 m/s x M
    assert 1.0 < sink_fpm < 40.0
    for start in (row["gross_ceiling_ft"] + 0.5 * LEVEL_OFF_MARGIN_FT, row["gross_ceiling_ft"] - 3000.0):
        held = engine_out(cat, Conditions(), EngineOutOptions(start_ft=start)).frame.row(0, named=True)
        assert held["driftdown_distance_nm"] == 0.0 and held["driftdown_time_min"] == 0.0
        assert "no drift-down" in held["note"]


def test_default_start_is_the_all_engines_maximum_altitude(demo):
    # The definition: the drift-down starts at the all-engines cruise-criterion maximum
    # altitude (the ceilings command's answer at the same conditions).
    from variantcmp.table import ceilings_table

    conditions = Conditions(isa_devs_c=(0.0, 15.0))
    frame = engine_out(demo, conditions).frame
    np.testing.assert_array_equal(frame["start_altitude_ft"].to_numpy(),
                                  ceilings_table(demo, conditions)["max_altitude_ft"].to_numpy())
    assert frame["driftdown_distance_nm"].is_not_null().all()
    assert (frame["driftdown_distance_nm"] > 50.0).all() and (frame["driftdown_time_min"] > 10.0).all()
    assert (frame["level_off_ft"] < frame["start_altitude_ft"]).all()
