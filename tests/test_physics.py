"""Climb physics of a case set (variantcmp.solver.physics): thrust and drag apart, and the climb
rate they make, against textbook forms evaluated on an independent atmosphere."""

import numpy as np
import pytest
from fluids.atmosphere import ATMOSPHERE_1976

from variantcmp import bench
from variantcmp.cases import MODEL_CODES
from variantcmp.solver import THRUST_MODELS, ClimbPhysics

R0_EARTH_M = 6_356_766.0  # effective Earth radius of U.S. Standard Atmosphere 1976, eq. 18


def _cases(n=300, seed=5):
    rng = np.random.default_rng(seed)
    cases = bench.synthetic_cases(bench.synthetic_fleet(), 3000).take(slice(0, 3000, 3000 // n))
    return cases.with_mach(rng.uniform(0.3, 0.82, len(cases))), rng.uniform(0.0, 14_000.0, len(cases))


def test_drag_is_the_parabolic_polar_at_the_dynamic_pressure():
    # Drag in level flight: D = q S (CD0 + K CL^2 + CDw), q = rho V^2 / 2, CL = W / (q S)
    # (Anderson, Aircraft Performance and Design, eq. 2.47 and ch. 5), with rho and the speed of
    # sound from fluids' U.S. Standard Atmosphere 1976 (geometric height: converted), not the
    # solver's (gamma/2) p M^2 form; the wave drag from the Korn/Lock model of variantcmp.aero.
    from variantcmp import aero

    cases, h = _cases()
    phys = ClimbPhysics(cases)
    got = phys.drag_n(h, cases.mach)
    for i in range(len(cases)):
        air = ATMOSPHERE_1976(R0_EARTH_M * h[i] / (R0_EARTH_M - h[i]), dT=float(cases.isa_dev_c[i]))
        v = cases.mach[i] * air.v_sonic
        q = 0.5 * air.rho * v * v
        w = cases.weight_kg[i] * 9.80665
        cl = w / (q * cases.wing_area_m2[i])
        cdw = aero.wave_drag_coefficient(cases.mach[i], cl, cases.thickness_ratio[i], cases.sweep_deg[i],
                                         cases.korn_factor[i]) if np.isfinite(cases.korn_factor[i]) else 0.0
        expected = q * cases.wing_area_m2[i] * (cases.cd0[i] + cases.k[i] * cl * cl + cdw)
        assert got[i] == pytest.approx(expected, rel=2e-5), i


def test_climb_rate_is_excess_power_over_weight_times_the_climb_factors():
    # dh_p/dt = (F - D) V / W x (T_ISA/T) x f (total-energy equation at constant Mach; Anderson,
    # Aircraft Performance and Design, sec. 5.11; f: variantcmp.aero.energy_share_factor): the
    # climb rate from the thrust and the drag given apart, V from fluids' atmosphere.
    from variantcmp import aero
    from variantcmp.atmosphere import isa_lapse_rate_k_per_m, isa_temperature_k

    cases, h = _cases(seed=6)
    phys = ClimbPhysics(cases)
    thrust, drag = phys.available_thrust_n(h, cases.mach), phys.drag_n(h, cases.mach)
    rate = phys.climb_rate_ms(h, cases.mach)
    assert np.all(thrust > 0.0)
    for i in range(len(cases)):
        air = ATMOSPHERE_1976(R0_EARTH_M * h[i] / (R0_EARTH_M - h[i]), dT=float(cases.isa_dev_c[i]))
        t_isa = isa_temperature_k(h[i])
        f = aero.energy_share_factor(cases.mach[i], air.T, t_isa, isa_lapse_rate_k_per_m(h[i]))
        expected = (thrust[i] - drag[i]) * cases.mach[i] * air.v_sonic / (cases.weight_kg[i] * 9.80665) * t_isa / air.T * f
        assert rate[i] == pytest.approx(expected, rel=1e-5, abs=1e-6), i
    np.testing.assert_allclose(phys.excess(h, cases.mach), rate - cases.climb_ms)


def test_density_lapse_thrust_is_static_thrust_times_the_density_ratio_power():
    # F = F_SLS x (rho / rho0)^m below the tropopause (Raymer, Aircraft Design, sec. 10.3), with
    # the density from fluids' atmosphere; the engines' count, static thrust and rating fraction
    # from the catalogue (the synthetic density-lapse engine is flat rated: its lapse reads the
    # ISA density up to the flat-rate deviation, hot_day_factor the loss above).
    from variantcmp.thrust import hot_day_factor

    cases, h = _cases(seed=7)
    pick = np.flatnonzero(cases.model_code == MODEL_CODES["density-lapse"])
    cases, h = cases.take(pick), np.minimum(h[pick], 10_900.0)  # below the tropopause (one exponent)
    got = ClimbPhysics(cases).available_thrust_n(h, cases.mach)
    for i in range(len(cases)):
        air = ATMOSPHERE_1976(R0_EARTH_M * h[i] / (R0_EARTH_M - h[i]))  # ISA: the flat-rated lapse
        lapse = (air.rho / 1.225) ** cases.lapse_exponent[i]
        hot = hot_day_factor(cases.isa_dev_c[i], cases.flat_rate_isa_dev_c[i], cases.hot_day_loss_per_c[i])
        assert got[i] == pytest.approx(cases.thrust_sls_n[i] * lapse * hot, rel=3e-5), i


def test_every_thrust_model_has_its_evaluation():
    # The dispatch is a table: each model the catalogue knows has an entry, and a set made of one
    # model alone evaluates through it alone (as a subset of a mixed set does).
    import dataclasses

    assert set(THRUST_MODELS) == set(MODEL_CODES.values())
    jets, props = bench.synthetic_fleet(), bench.synthetic_turboprop_fleet()
    both = dataclasses.replace(jets, engines={**jets.engines, **props.engines}, variants={**jets.variants, **props.variants})
    rng = np.random.default_rng(8)
    cases = bench.synthetic_cases(both, 4000).take(slice(0, 4000, 10))
    cases = cases.with_mach(rng.uniform(0.3, 0.6, len(cases)))
    h = rng.uniform(0.0, 9_000.0, len(cases))
    phys = ClimbPhysics(cases)
    whole = phys.climb_rate_ms(h, cases.mach)
    for code in MODEL_CODES.values():
        rows = np.flatnonzero(cases.model_code == code)
        assert rows.size > 10, code
        alone = ClimbPhysics(cases.take(rows)).climb_rate_ms(h[rows], cases.mach[rows])
        np.testing.assert_allclose(alone, whole[rows], rtol=1e-12)
        np.testing.assert_allclose(phys.subset(rows).climb_rate_ms(h[rows], cases.mach[rows]), whole[rows], rtol=1e-12)
