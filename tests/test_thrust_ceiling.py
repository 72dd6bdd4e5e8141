"""The thrust ceiling at a fixed Mach (variantcmp.solver.thrust_ceiling) alone."""

import numpy as np
import pytest

from conftest import write_catalogue
from specs import engine_spec, variant_spec

FT = 0.3048


@pytest.mark.parametrize("top_known", [False, True])
def test_hump_probes_screened_out_cannot_climb(tmp_path, top_known):
    # Self-consistency, no external source: the table-engine hump check screens its probes with
    # the climb rate without wave drag, which wave drag only lowers. Its answer must be the one
    # that evaluating the full excess climb rate at every probe gives: climbs at a table altitude
    # (or midway) between the root and the top, or at the top itself. Tables whose Mach columns
    # dip and rise again, with and without compressibility data, hot and cold, 0-800 ft/min.
    from variantcmp import solver
    from variantcmp.solver import thrust_ceiling
    from variantcmp.atmosphere import isa_pressure_pa
    from variantcmp.cases import build_cases

    altitudes_ft = [-2000, 0, 5000, 10000, 15000, 20000, 25000, 30000, 35000, 40000, 45000, 51000]
    factors = [1.3, 1.3, 0.8, 0.8, 1.1, 1.0, 0.9]
    engine = engine_spec(model="table", static_thrust_kn=60.0, table_altitude_ft=altitudes_ft,
                     table_mach=[0.0, 0.3, 0.45, 0.5, 0.6, 0.75, 0.9],
                     table_thrust_fraction=[[float(isa_pressure_pa(a * FT) / 101325.0) * f for f in factors]
                                            for a in altitudes_ft])
    del engine["lapse_exponent"]
    cat = write_catalogue(tmp_path / "c.toml", [engine],
                          [variant_spec(id="a1", mmo=0.84), variant_spec(id="a2", mmo=0.84, sweep_deg=28.0,
                                                                  thickness_ratio=0.12, korn_factor=0.93)])
    cases, _ = build_cases(cat, [("a1", "e1"), ("a2", "e1")], lambda v: np.linspace(0.5, 1.1, 7) * v.mtow_kg,
                           [-15.0, 15.0, 40.0], [0.0, 300.0, 800.0], 0.7, 1.3)
    rng = np.random.default_rng(11)
    n = len(cases)
    phys = solver.ClimbPhysics(cases)
    mach = rng.uniform(0.3, 0.85, n)
    root = rng.uniform(-500.0, 14_000.0, n)
    top = np.minimum(root + rng.uniform(0.0, 6_000.0, n), cases.top_m)
    got = thrust_ceiling.climbs_above(phys, mach, root, top, top_known)

    nodes = np.array(altitudes_ft) * FT
    points = np.sort(np.concatenate([nodes, 0.5 * (nodes[1:] + nodes[:-1])]))
    expect = np.zeros(n, dtype=bool)
    for i in range(n):  # every probe the check looks at, by the full evaluation
        above = points[points >= root[i] + 1.0][:thrust_ceiling.TABLE_PROBES]
        probes = list(above[above < top[i]]) + ([top[i]] if not top_known and top[i] > root[i] + 1.0 else [])
        one = phys.subset(np.full(len(probes), i))
        expect[i] = bool((one.excess(np.array(probes), np.full(len(probes), mach[i])) >= 0.0).any()) if probes else False
    assert 0 < expect.sum() < n  # both outcomes occur
    np.testing.assert_array_equal(got, expect)


def test_thrust_ceiling_is_the_top_root_against_brentq():
    # Reference: scipy.optimize.brentq on the same excess climb rate, case by case, between the
    # highest of a dense scan of altitudes (every 5 m from the floor up, one call per case) that
    # climbs and the next above it. Every thrust model, random speeds in each case's range, cold
    # and warm starts (a guess up to 400 m off). Where the root sits on a layer base (the climb
    # rate jumps there) brentq closes in on the jump; ours is within 1e-6 m of it.
    from scipy.optimize import brentq

    from variantcmp import bench
    from variantcmp.atmosphere import MODEL_TOP_M
    from variantcmp.solver import CANNOT_CLIMB, THRUST_DATA_TOP, ClimbPhysics, thrust_ceiling_m

    rng = np.random.default_rng(3)
    cases = bench.synthetic_cases(bench.synthetic_fleet(), 3000).take(slice(0, 3000, 23))
    cases = cases.with_mach(rng.uniform(cases.mach_low, cases.mach_high))
    phys = ClimbPhysics(cases)
    cold, flags = thrust_ceiling_m(phys, cases.mach)
    warm = thrust_ceiling_m(phys, cases.mach, np.where(np.isfinite(cold), cold + rng.uniform(-400, 400, cold.size), cold))[0]
    assert len({int(c) for c in cases.model_code}) == 3
    found = 0
    for i in range(len(cases)):
        one, m = phys.subset(np.array([i])), cases.mach[i:i + 1]
        top = min(cases.top_m[i], MODEL_TOP_M, 30_000.0)
        levels = np.append(np.arange(cases.floor_m[i], top, 5.0), top)
        climbs = one.excess(levels[None, :], m)[0] >= 0.0
        if not climbs.any():
            assert np.isnan(cold[i]) and flags[i] & CANNOT_CLIMB, i
            continue
        j = np.flatnonzero(climbs)[-1]
        if j == levels.size - 1:
            assert np.isnan(cold[i]) and flags[i] & THRUST_DATA_TOP, i
            continue
        ref = brentq(lambda h: float(one.excess(np.array([h]), m)[0]), levels[j], levels[j + 1], xtol=1e-9)
        assert cold[i] == pytest.approx(ref, abs=0.005), i  # ROOT_TOL_M
        assert warm[i] == pytest.approx(ref, abs=0.005), i
        found += 1
    assert found > 80
