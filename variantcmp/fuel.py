"""Fuel consumption models: thrust-specific (jets) and power-specific (propeller engines).

Each returns kg of fuel per second per unit of thrust (N) or shaft power (W); the solvers
multiply by the thrust (drag in steady level flight) or the shaft power needed.
"""

from __future__ import annotations

import numpy as np

from .atmosphere import T0_K

MG_PER_KG = 1.0e6
S_PER_H = 3600.0
W_PER_KW = 1000.0


def tsfc_kg_per_ns(mach, temperature_k, tsfc_mg_per_ns, tsfc_mach_slope=0.0):
    """Thrust-specific fuel consumption c = (a + b M) sqrt(theta), theta = T / 288.15 K, in
    kg/(N s) from a and b in mg/(N s).

    Source: the TSFC form of Mattingly et al., *Aircraft Engine Design*, 2nd ed., AIAA
    2002, ch. 3 (installed TSFC of a high-bypass turbofan; from memory).
    """
    a = np.asarray(tsfc_mg_per_ns, dtype=float)
    b = np.asarray(tsfc_mach_slope, dtype=float)
    theta = np.asarray(temperature_k, dtype=float) / T0_K
    return (a + b * np.asarray(mach, dtype=float)) * np.sqrt(theta) / MG_PER_KG


def psfc_kg_per_ws(temperature_k, psfc_kg_per_kwh):
    """Power-specific fuel consumption of a turboprop in kg/(W s): the sea-level value scaled by
    sqrt(theta), the same temperature form as :func:`tsfc_kg_per_ns` (Mattingly et al., 2002,
    ch. 3, from memory)."""
    theta = np.asarray(temperature_k, dtype=float) / T0_K
    return np.asarray(psfc_kg_per_kwh, dtype=float) * np.sqrt(theta) / (W_PER_KW * S_PER_H)
