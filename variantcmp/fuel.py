"""Fuel consumption models: thrust-specific (jets) and power-specific (propeller engines), and the
range factor and specific range of steady level flight.

The consumption functions return kg of fuel per second per unit of thrust (N) or of shaft power
(W); the range factor is the speed-and-engine half of the range equation (V/c for a jet, eta/c for
a propeller engine, in N m/kg), so that specific range = range factor / drag.
"""

from __future__ import annotations

import numpy as np

from .atmosphere import T0_K

MG_PER_KG = 1.0e6
S_PER_H = 3600.0
W_PER_KW = 1000.0


def tsfc_kg_per_ns(mach, temperature_k, tsfc_mg_per_ns, tsfc_mach_slope=0.0):
    """Thrust-specific fuel consumption c = (a + b M) sqrt(theta), theta = T / 288.15 K the static
    temperature ratio, in kg/(N s) from a and b in mg/(N s) (1 (lb/h)/lbf = 28.33 mg/(N s)).

    Source: the installed-TSFC form of Mattingly et al., *Aircraft Engine Design*, 2nd ed., AIAA
    2002, ch. 3 (mission analysis), which gives a and b per engine type in 1/h (from memory).
    """
    a = np.asarray(tsfc_mg_per_ns, dtype=float)
    b = np.asarray(tsfc_mach_slope, dtype=float)
    theta = np.asarray(temperature_k, dtype=float) / T0_K
    return (a + b * np.asarray(mach, dtype=float)) * np.sqrt(theta) / MG_PER_KG


def tsfc_from_isa_kg_per_ns(isa_tsfc_mg_per_ns, temperature_k, isa_temperature_k):
    """TSFC on a day from its value at ISA at the same pressure altitude and Mach (a maker's table),
    in kg/(N s): c = c_ISA sqrt(T / T_ISA), the temperature dependence of :func:`tsfc_kg_per_ns`'s
    form (same source) at a fixed Mach."""
    ratio = np.asarray(temperature_k, dtype=float) / np.asarray(isa_temperature_k, dtype=float)
    return np.asarray(isa_tsfc_mg_per_ns, dtype=float) * np.sqrt(ratio) / MG_PER_KG


def psfc_kg_per_ws(temperature_k, psfc_kg_per_kwh):
    """Power-specific fuel consumption of a turboprop in kg/(W s) from kg/kWh (1 kg/kWh =
    1 / 3.6e6 kg/(W s)): the sea-level value scaled by sqrt(theta), theta = T / 288.15 K.

    The sqrt(theta) scaling is this tool's modelling assumption (the catalogue's documented form),
    carried over from the jet form of :func:`tsfc_kg_per_ns`; it is not a published turboprop
    model (Mattingly et al.'s turboprop entry is thrust-specific). By the quasi-dimensionless
    groups of gas-turbine performance (fuel flow and shaft power both scale with p sqrt(T)), PSFC at
    a fixed corrected operating point does not depend on the intake temperature (Walsh & Fletcher,
    *Gas Turbine Performance*, 2nd ed., 2004, ch. 4; from memory): the assumption lowers PSFC in
    the cold air of cruise levels and raises it on hot days, a corrected point would not.
    """
    theta = np.asarray(temperature_k, dtype=float) / T0_K
    return np.asarray(psfc_kg_per_kwh, dtype=float) * np.sqrt(theta) / (W_PER_KW * S_PER_H)


def jet_range_factor_n_m_per_kg(true_airspeed_ms, tsfc_kg_per_ns_):
    """V / c (N m/kg) of a jet: the distance flown per kg of fuel per N of drag in steady level
    flight, where thrust = drag and fuel flow = c D (Breguet's range equation, dx = (V/c)(L/D)
    dW/W: Anderson, *Aircraft Performance and Design*, McGraw-Hill 1999, sec. 5.13)."""
    return np.asarray(true_airspeed_ms, dtype=float) / np.asarray(tsfc_kg_per_ns_, dtype=float)


def propeller_range_factor_n_m_per_kg(propeller_efficiency, psfc_kg_per_ws_):
    """eta / c (N m/kg) of a propeller engine: shaft power needed = D V / eta, fuel flow =
    c D V / eta, so the distance per kg of fuel per N of drag is eta / c (Breguet's range equation
    for propeller aircraft: Anderson, *Aircraft Performance and Design*, 1999, sec. 5.13)."""
    return np.asarray(propeller_efficiency, dtype=float) / np.asarray(psfc_kg_per_ws_, dtype=float)


def specific_range_m_per_kg(range_factor_n_m_per_kg, drag_n):
    """Specific range (m of air distance per kg of fuel) in steady level flight: range factor / drag
    (V / (c D) for a jet, eta / (c D) for a propeller engine; the same source)."""
    return np.asarray(range_factor_n_m_per_kg, dtype=float) / np.asarray(drag_n, dtype=float)


def fuel_flow_kg_s(true_airspeed_ms, drag_n, range_factor_n_m_per_kg):
    """Total fuel flow (kg/s) in steady level flight: true airspeed / specific range (c D for a
    jet, c D V / eta for a propeller engine; the same source)."""
    return np.asarray(true_airspeed_ms, dtype=float) * np.asarray(drag_n, dtype=float) / np.asarray(
        range_factor_n_m_per_kg, dtype=float)
