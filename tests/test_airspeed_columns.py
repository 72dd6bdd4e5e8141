"""TAS and CAS at the maximum altitude (variantcmp.airspeed_columns), against references outside it."""

import math

import numpy as np
import polars as pl
import pytest
from ambiance import Atmosphere
from hypothesis import given
from hypothesis import strategies as st

from variantcmp.airspeed import cas_to_mach
from variantcmp.airspeed_columns import airspeeds_kt, with_airspeeds
from variantcmp.atmosphere import atmosphere
from variantcmp.catalogue import demo_catalogue_path, load_catalogue
from variantcmp.table import Conditions, ceilings_table
from variantcmp.units import WeightSpec

FT_M, KT_MS = 0.3048, 1852.0 / 3600.0  # international foot and knot (ICAO Annex 5)
P0_PA, A0_MS = 101_325.0, 340.294  # ISA sea level: pressure, speed of sound (ICAO Doc 7488)


def pitot_reference_kt(altitude_ft: float, mach: float, isa_dev_c: float) -> tuple[float, float]:
    """TAS and CAS written out independently: ISA pressure and temperature from ambiance (PyPI,
    ICAO 1993 atmosphere; it takes geometric height), TAS = M sqrt(gamma R T) and the subsonic
    compressible pitot relations qc = p [(1 + 0.2 M^2)^3.5 - 1],
    CAS = a0 sqrt(5 [(qc / p0 + 1)^(2/7) - 1]) (Anderson, Introduction to Flight, sec. 4.12)."""
    ref = Atmosphere(Atmosphere.geop2geom_height(altitude_ft * FT_M))
    pressure, temperature = float(ref.pressure[0]), float(ref.temperature[0]) + isa_dev_c
    tas = mach * math.sqrt(1.4 * 287.05287 * temperature)
    qc = pressure * ((1.0 + 0.2 * mach**2) ** 3.5 - 1.0)
    cas = A0_MS * math.sqrt(5.0 * ((qc / P0_PA + 1.0) ** (2.0 / 7.0) - 1.0))
    return tas / KT_MS, cas / KT_MS


def test_demo_fleet_rows_against_the_written_out_pitot_relations():
    fleet = load_catalogue(demo_catalogue_path())
    conditions = Conditions(weights=(WeightSpec(90.0, "%mtow"), WeightSpec(100.0, "%mtow")),
                            isa_devs_c=(-10.0, 0.0, 20.0), mach="best")
    df = with_airspeeds(ceilings_table(fleet, conditions))
    pairs = sum(len(v.engine_options) for v in fleet.variants.values())
    assert df.height == pairs * 2 * 3 and df["max_altitude_ft"].null_count() == 0
    for row in df.iter_rows(named=True):
        tas, cas = pitot_reference_kt(row["max_altitude_ft"], row["mach"], row["isa_dev_c"])
        assert row["tas_kt"] == pytest.approx(tas, rel=2e-6)
        assert row["cas_kt"] == pytest.approx(cas, rel=2e-5)


def test_sea_level_standard_day_cas_equals_tas():
    # By the definition of calibrated airspeed: at ISA sea level CAS = TAS = M a0.
    tas, cas = airspeeds_kt([0.0], [0.3], [0.0])
    assert tas[0] == pytest.approx(0.3 * A0_MS / KT_MS, rel=1e-6)
    assert cas[0] == pytest.approx(tas[0], rel=1e-9)


def test_a_row_without_a_maximum_altitude_gets_no_airspeed():
    df = pl.DataFrame({"max_altitude_ft": [35_000.0, None], "mach": [0.78, None], "isa_dev_c": [0.0, 15.0]})
    out = with_airspeeds(df)
    assert out["tas_kt"][1] is None and out["cas_kt"][1] is None
    assert out["tas_kt"][0] > out["cas_kt"][0] > 0


@given(st.floats(5_000.0, 45_000.0), st.floats(0.2, 0.9), st.floats(-30.0, 40.0))
def test_cas_round_trips_to_the_mach_and_stays_below_tas(altitude_ft, mach, isa_dev_c):
    tas, cas = airspeeds_kt([altitude_ft], [mach], [isa_dev_c])
    _, pressure, _, _ = atmosphere(altitude_ft * FT_M, isa_dev_c)
    assert float(cas_to_mach(cas[0] * KT_MS, pressure)) == pytest.approx(mach, rel=1e-9)
    # Above 5,000 ft the air is thinner than at ISA sea level on any of these days: CAS < TAS.
    assert cas[0] < tas[0]
    assert np.isfinite(tas).all()
