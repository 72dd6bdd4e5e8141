"""Aerodynamic model functions: drag polar, compressibility drag, buffet onset, climb terms."""

from __future__ import annotations

import numpy as np

from .atmosphere import G0, GAMMA, R_AIR


def induced_drag_factor(aspect_ratio, oswald_e):
    """K = 1 / (pi A e) of the parabolic drag polar CD = CD0 + K CL^2.

    Source: Anderson, *Aircraft Performance and Design* (McGraw-Hill 1999), eq. 2.47.
    """
    return 1.0 / (np.pi * np.asarray(aspect_ratio) * np.asarray(oswald_e))


def best_lift_to_drag(cd0, k):
    """Maximum lift-to-drag ratio and its lift coefficient for a parabolic polar.

    Source: Anderson, *Aircraft Performance and Design*, sec. 5.4: CL* = sqrt(CD0/K), where
    CD = 2 CD0 and (L/D)max = 1 / (2 sqrt(K CD0)). Returns (ld_max, cl_star).
    """
    cd0, k = np.asarray(cd0, dtype=float), np.asarray(k, dtype=float)
    return 1.0 / (2.0 * np.sqrt(k * cd0)), np.sqrt(cd0 / k)


def lift_coefficient(weight_n, pressure_pa, mach, wing_area_m2, load_factor=1.0):
    """CL = n W / (q S) with the dynamic pressure written q = (gamma/2) p M^2.

    Source: Anderson, *Introduction to Flight*, 8th ed., eq. 4.83 (q in terms of p and M).
    """
    q = 0.5 * GAMMA * np.asarray(pressure_pa) * np.asarray(mach) ** 2
    return np.asarray(load_factor) * np.asarray(weight_n) / (q * np.asarray(wing_area_m2))


def korn_critical_mach(cl, thickness_ratio, sweep_deg, korn_factor):
    """Critical Mach from the Korn equation with simple sweep theory and Lock's criterion.

    Source: Malone & Mason, "Multidisciplinary optimization in aircraft design using analytic
    technology models", J. Aircraft 32(2), 1995; W.H. Mason, *Configuration Aerodynamics*
    (Virginia Tech), ch. 7: M_dd = kA/cos L - (t/c)/cos^2 L - CL/(10 cos^3 L);
    M_crit = M_dd - (0.1/80)^(1/3).
    """
    m_crit0, slope = korn_coefficients(thickness_ratio, sweep_deg, korn_factor)
    return m_crit0 - slope * np.asarray(cl)


def korn_coefficients(thickness_ratio, sweep_deg, korn_factor):
    """The Korn critical Mach as M_crit = M0 - s CL: returns (M0, s) (same source as above)."""
    cos_l = np.cos(np.radians(np.asarray(sweep_deg, dtype=float)))
    m_crit0 = np.asarray(korn_factor) / cos_l - np.asarray(thickness_ratio) / cos_l**2 - (0.1 / 80.0) ** (1.0 / 3.0)
    return m_crit0, 1.0 / (10.0 * cos_l**3)


def wave_drag_coefficient(mach, cl, thickness_ratio, sweep_deg, korn_factor):
    """Compressibility drag by Lock's fourth-power law: CDw = 20 (M - M_crit)^4 above M_crit.

    Source: Lock's empirical rise as used by Malone & Mason (1995) and Mason, *Configuration
    Aerodynamics*, ch. 7. A NaN Korn factor means the variant has no compressibility data: 0.
    """
    m_crit0, slope = korn_coefficients(thickness_ratio, sweep_deg, korn_factor)
    return lock_wave_drag(mach, m_crit0 - slope * np.asarray(cl))


def lock_wave_drag(mach, critical_mach):
    """Lock's fourth-power law CDw = 20 (M - M_crit)^4 above M_crit; NaN M_crit (no data): 0."""
    over = np.fmax(np.asarray(mach) - critical_mach, 0.0)  # fmax: NaN -> 0
    over *= over
    return 20.0 * over * over


def buffet_onset_cl(mach, buffet_mach, buffet_cl):
    """1 g buffet-onset lift coefficient at a Mach, linear between the given points.

    Source: the catalogue's buffet boundary (flight-test or manual data); linear interpolation,
    NaN outside the given Mach range (no extrapolation).
    """
    bm = np.asarray(buffet_mach, dtype=float)
    m = np.asarray(mach, dtype=float)
    cl = np.interp(m, bm, np.asarray(buffet_cl, dtype=float))
    return np.where((m < bm[0]) | (m > bm[-1]), np.nan, cl)


def energy_share_factor(mach, temperature_k, isa_temperature_k, lapse_rate_k_per_m):
    """Share of the excess power that goes into climb when climbing at constant Mach.

    Derived from the total-energy equation E = h + V^2/(2 g0) with V = M a(T) and
    T = T_ISA(h_p) + dT, and the hydrostatic relation dh/dh_p = T/T_ISA between geopotential and
    pressure altitude (e.g. Anderson, *Aircraft Performance and Design*, sec. 5.11 on energy
    height; Mair & Birdsall, *Aircraft Performance*, ch. 2, "acceleration factor"):

        dh_p/dt = (F - D) V / (m g0) x (T_ISA/T) x f,
        f = 1 / (1 + (gamma R beta / (2 g0)) M^2 T_ISA/T),

    beta = dT_ISA/dh_p of the layer (negative below the tropopause). At constant Mach in the
    troposphere the true airspeed falls as the air cools, so kinetic energy feeds the climb and
    f = 1/(1 - 0.1332 M^2) > 1 at ISA; f = 1 in the isothermal layer.
    """
    ratio = np.asarray(isa_temperature_k) / np.asarray(temperature_k)
    coeff = GAMMA * R_AIR * np.asarray(lapse_rate_k_per_m) / (2.0 * G0)
    return 1.0 / (1.0 + coeff * np.asarray(mach) ** 2 * ratio)


def pressure_climb_factor(mach, temperature_k, isa_temperature_k, lapse_rate_k_per_m):
    """(T_ISA/T) x f, f the :func:`energy_share_factor` (same source), in one expression:

        dh_p/dt = (F - D) V / W x (T_ISA/T) f,  (T_ISA/T) f = T_ISA / (T + (gamma R beta/(2 g0)) M^2 T_ISA).
    """
    t_isa = np.asarray(isa_temperature_k)
    coeff = GAMMA * R_AIR * np.asarray(lapse_rate_k_per_m) / (2.0 * G0)
    return t_isa / (np.asarray(temperature_k) + coeff * np.asarray(mach) ** 2 * t_isa)
