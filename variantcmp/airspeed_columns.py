"""Airspeeds at the maximum altitude, as columns of a ceilings table (result layer).

`with_airspeeds` adds the true airspeed and the calibrated airspeed of each row's Mach at its
maximum altitude on its day (ISA deviation): TAS = M a(T) with T the ISA temperature of the
pressure altitude plus the deviation, and CAS from the impact pressure through the compressible
pitot relations of `variantcmp.airspeed` (subsonic; ICAO Doc 7488 atmosphere via
`variantcmp.atmosphere`). A row without a maximum altitude gets no airspeed.
"""

from __future__ import annotations

import numpy as np
import polars as pl

from .airspeed import mach_to_cas
from .atmosphere import atmosphere
from .constants import M_PER_FT, MS_PER_KT

AIRSPEED_COLUMNS = ("tas_kt", "cas_kt")


def airspeeds_kt(altitude_ft, mach, isa_dev_c) -> tuple[np.ndarray, np.ndarray]:
    """(TAS kt, CAS kt) for Mach numbers at pressure altitudes (ft) on days ISA + ``isa_dev_c``;
    NaN where an input is NaN."""
    altitude_ft = np.asarray(altitude_ft, dtype=float)
    mach = np.asarray(mach, dtype=float)
    known = np.isfinite(altitude_ft) & np.isfinite(mach)
    _, pressure_pa, _, sound_ms = atmosphere(np.where(known, altitude_ft, 0.0) * M_PER_FT,
                                             np.asarray(isa_dev_c, dtype=float))
    tas = np.where(known, mach * sound_ms / MS_PER_KT, np.nan)
    cas = np.where(known, mach_to_cas(np.where(known, mach, 0.0), pressure_pa) / MS_PER_KT, np.nan)
    return tas, cas


def with_airspeeds(df: pl.DataFrame) -> pl.DataFrame:
    """``df`` (a ceilings table) with ``tas_kt`` and ``cas_kt`` at each row's maximum altitude and Mach."""
    altitude = df["max_altitude_ft"].cast(pl.Float64).fill_null(np.nan).to_numpy()
    mach = df["mach"].cast(pl.Float64).fill_null(np.nan).to_numpy()
    tas, cas = airspeeds_kt(altitude, mach, df["isa_dev_c"].cast(pl.Float64).to_numpy())
    return df.with_columns(pl.Series("tas_kt", tas, nan_to_null=True), pl.Series("cas_kt", cas, nan_to_null=True))
