"""Airspeed conversions with the standard subsonic compressible pitot-static relations.

Source: ICAO Doc 7488 / ISO 2533 constants with the isentropic impact-pressure relations
(e.g. Anderson, *Introduction to Flight*, 8th ed., sec. 4.12): impact pressure
qc = p [(1 + (gamma-1)/2 M^2)^(gamma/(gamma-1)) - 1], and calibrated airspeed is the speed that
gives the same qc at sea-level standard conditions. Valid below Mach 1 and below CAS = a0.
"""

from __future__ import annotations

import numpy as np

from .atmosphere import A0_MS, GAMMA, P0_PA

_EXP = GAMMA / (GAMMA - 1.0)  # 3.5
_HALF_GM1 = (GAMMA - 1.0) / 2.0  # 0.2


def impact_pressure_pa(mach, pressure_pa):
    """Impact pressure qc (Pa) at a Mach and static pressure (isentropic, subsonic)."""
    return np.asarray(pressure_pa) * ((1.0 + _HALF_GM1 * np.asarray(mach) ** 2) ** _EXP - 1.0)


def cas_to_impact_pressure_pa(cas_ms):
    """Impact pressure (Pa) that a calibrated airspeed stands for (sea-level standard reference)."""
    return P0_PA * ((1.0 + _HALF_GM1 * (np.asarray(cas_ms) / A0_MS) ** 2) ** _EXP - 1.0)


def cas_to_mach(cas_ms, pressure_pa):
    """Mach number for a calibrated airspeed (m/s) at a static pressure (Pa)."""
    qc = cas_to_impact_pressure_pa(cas_ms)
    return np.sqrt((((qc / np.asarray(pressure_pa)) + 1.0) ** (1.0 / _EXP) - 1.0) / _HALF_GM1)


def mach_to_cas(mach, pressure_pa):
    """Calibrated airspeed (m/s) for a Mach number at a static pressure (Pa)."""
    qc = impact_pressure_pa(mach, pressure_pa)
    return A0_MS * np.sqrt(((qc / P0_PA + 1.0) ** (1.0 / _EXP) - 1.0) / _HALF_GM1)


def pressure_for_cas_at_mach_pa(cas_ms, mach):
    """Static pressure (Pa) at which a Mach number reads a given calibrated airspeed.

    Above that pressure altitude the same Mach reads a lower CAS: this gives the altitude floor
    that a VMO sets at a fixed Mach.
    """
    qc = cas_to_impact_pressure_pa(cas_ms)
    return qc / ((1.0 + _HALF_GM1 * np.asarray(mach) ** 2) ** _EXP - 1.0)
