"""International Standard Atmosphere, vectorised, with a temperature deviation.

Sources: ISO 2533:1975 *Standard Atmosphere*; ICAO Doc 7488/3 *Manual of the ICAO Standard
Atmosphere* (1993); U.S. Standard Atmosphere 1976 (NOAA/NASA/USAF), which share the same
geopotential layers up to 84,852 m.

All altitudes here are geopotential pressure altitudes in metres: the altitude at which the ISA
pressure equals the ambient pressure. A day with a temperature deviation keeps the ISA pressure at a
pressure altitude and only shifts the temperature: ``T = T_ISA(h) + isa_dev``, ``rho = p / (R T)``.
"""

from __future__ import annotations

import numpy as np

#: Specific gas constant of dry air, J/(kg K) (ICAO Doc 7488; ISO 2533 uses 287.05287).
R_AIR = 287.05287
#: Standard acceleration of gravity, m/s2 (ISO 2533).
G0 = 9.80665
#: Ratio of specific heats of air (ISO 2533).
GAMMA = 1.4
#: Sea-level standard values (ISO 2533).
T0_K = 288.15
P0_PA = 101_325.0
RHO0_KG_M3 = P0_PA / (R_AIR * T0_K)  # 1.2250 kg/m3
A0_MS = float(np.sqrt(GAMMA * R_AIR * T0_K))  # 340.294 m/s

#: Layer base geopotential altitudes (m) and temperature gradients (K/m), ISO 2533 / USSA 1976.
LAYER_BASE_M = np.array([0.0, 11_000.0, 20_000.0, 32_000.0, 47_000.0, 51_000.0, 71_000.0])
LAYER_LAPSE_K_PER_M = np.array([-0.0065, 0.0, 0.001, 0.0028, 0.0, -0.0028, -0.002])
#: Lowest and highest pressure altitudes of the model (m): -2,000 ft is the floor ceilings are
#: searched from; the table is defined (layer 0 extended) down to -5,000 m as in ISO 2533.
MODEL_BOTTOM_M = -5_000.0
MODEL_TOP_M = 84_852.0


def _layer_bases() -> tuple[np.ndarray, np.ndarray]:
    """Base temperature and pressure of each layer, built upward from sea level."""
    t_base = np.empty(LAYER_BASE_M.size)
    p_base = np.empty(LAYER_BASE_M.size)
    t_base[0], p_base[0] = T0_K, P0_PA
    for i in range(1, LAYER_BASE_M.size):
        dh = LAYER_BASE_M[i] - LAYER_BASE_M[i - 1]
        lapse, t0, p0 = LAYER_LAPSE_K_PER_M[i - 1], t_base[i - 1], p_base[i - 1]
        t_base[i] = t0 + lapse * dh
        p_base[i] = p0 * _pressure_ratio(lapse, dh, t0)
    return t_base, p_base


def _pressure_ratio(lapse, dh, t_base):
    """p/p_base across a height dh in a layer of constant gradient (hydrostatic, ideal gas)."""
    lapse = np.asarray(lapse, dtype=float)
    x = lapse * dh / t_base
    safe = np.where(lapse == 0.0, 1.0, lapse)
    phi = np.where(lapse == 0.0, dh / t_base, np.log1p(x) / safe)
    return np.exp(-G0 / R_AIR * phi)


LAYER_BASE_T_K, LAYER_BASE_P_PA = _layer_bases()
MODEL_TOP_P_PA = float(LAYER_BASE_P_PA[-1] * _pressure_ratio(
    LAYER_LAPSE_K_PER_M[-1], MODEL_TOP_M - LAYER_BASE_M[-1], LAYER_BASE_T_K[-1]))


def _log_pressure_coefficients():
    """ln p = A + B ln T + C h within each layer (B = 0 in isothermal layers, C = 0 elsewhere).

    The same hydrostatic solution as :func:`_pressure_ratio`, arranged so one expression serves
    every layer without branches (speed: the solvers evaluate it millions of times).
    """
    lapse, t_b, p_b, h_b = LAYER_LAPSE_K_PER_M, LAYER_BASE_T_K, LAYER_BASE_P_PA, LAYER_BASE_M
    iso = lapse == 0.0
    expo = np.where(iso, 0.0, -G0 / (R_AIR * np.where(iso, 1.0, lapse)))
    a = np.where(iso, np.log(p_b) + G0 * h_b / (R_AIR * t_b), np.log(p_b) - expo * np.log(t_b))
    c = np.where(iso, -G0 / (R_AIR * t_b), 0.0)
    return a, expo, c


_LNP_A, _LNP_B, _LNP_C = _log_pressure_coefficients()


def _layer_index(altitude_m):
    return np.clip(np.searchsorted(LAYER_BASE_M, altitude_m, side="right") - 1, 0, LAYER_BASE_M.size - 1)


def isa_temperature_k(altitude_m):
    """ISA temperature (K) at a geopotential pressure altitude (m). Source: ISO 2533, table layers."""
    h = np.asarray(altitude_m, dtype=float)
    if h.size and np.max(h) < LAYER_BASE_M[2]:
        # Below 20 km (as in isa_state): the same bits without the layer search.
        return np.maximum(T0_K + LAYER_LAPSE_K_PER_M[0] * h, LAYER_BASE_T_K[1])
    i = _layer_index(h)
    return LAYER_BASE_T_K[i] + LAYER_LAPSE_K_PER_M[i] * (h - LAYER_BASE_M[i])


def isa_lapse_rate_k_per_m(altitude_m):
    """ISA temperature gradient dT/dh (K/m, negative where temperature falls). Source: ISO 2533."""
    return LAYER_LAPSE_K_PER_M[_layer_index(np.asarray(altitude_m, dtype=float))]


def isa_pressure_pa(altitude_m):
    """ISA static pressure (Pa) at a geopotential pressure altitude (m).

    Source: ISO 2533 / U.S. Standard Atmosphere 1976, eqs. 33a-b (hydrostatic equation integrated
    over layers of constant temperature gradient).
    """
    h = np.asarray(altitude_m, dtype=float)
    i = _layer_index(h)
    return LAYER_BASE_P_PA[i] * _pressure_ratio(LAYER_LAPSE_K_PER_M[i], h - LAYER_BASE_M[i], LAYER_BASE_T_K[i])


def isa_state(altitude_m):
    """ISA (temperature K, pressure Pa, lapse rate K/m) at once, finding the layer a single time.

    Source: ISO 2533 / U.S. Standard Atmosphere 1976 (as :func:`isa_pressure_pa`).
    """
    h = np.asarray(altitude_m, dtype=float)
    if h.size and h.max() < LAYER_BASE_M[2]:
        # Troposphere and the isothermal layer above, where the solvers spend nearly all their
        # time: no layer search and gathers.
        t = np.maximum(T0_K + LAYER_LAPSE_K_PER_M[0] * h, LAYER_BASE_T_K[1])
        return t, np.exp(_low_ln_p(h, t)), np.where(h < LAYER_BASE_M[1], LAYER_LAPSE_K_PER_M[0], LAYER_LAPSE_K_PER_M[1])
    i = _layer_index(h)
    lapse = LAYER_LAPSE_K_PER_M[i]
    t = LAYER_BASE_T_K[i] + lapse * (h - LAYER_BASE_M[i])
    ln_p = _LNP_A[i] + _LNP_B[i] * np.log(t) + _LNP_C[i] * h
    # Below 20 km the same bits as the branch above, whatever else the array holds (a solver's
    # answer must not depend on which other cases share its chunk).
    ln_p = np.where(h < LAYER_BASE_M[2], _low_ln_p(h, t), ln_p)
    return t, np.exp(ln_p), lapse


def _low_ln_p(altitude_m, temperature_k):
    """ln p below 20 km: ln p = A + B ln T up to the tropopause (at its temperature above it),
    then falling linearly with height in the isothermal layer (ISO 2533, as above)."""
    return (_LNP_A[0] + _LNP_B[0] * np.log(temperature_k)
            + _LNP_C[1] * np.maximum(altitude_m - LAYER_BASE_M[1], 0.0))


def pressure_altitude_m(pressure_pa):
    """Geopotential pressure altitude (m) at which the ISA pressure equals ``pressure_pa``.

    Inverse of :func:`isa_pressure_pa` (ISO 2533). Pressures below the model top's give ``+inf``
    and pressures above the model bottom's (-5,000 m) ``-inf``: outside the model, callers flag it.
    """
    p = np.asarray(pressure_pa, dtype=float)
    if p.size and not (p <= LAYER_BASE_P_PA[2]).any():
        # Below 20 km (as in isa_state): two layers, the same expressions without the search (NaN
        # stays NaN on either path).
        upper = p <= LAYER_BASE_P_PA[1]
        pick = lambda table: np.where(upper, table[1], table[0])  # noqa: E731
        t_base, p_base, h_base = pick(LAYER_BASE_T_K), pick(LAYER_BASE_P_PA), pick(LAYER_BASE_M)
        phi = -R_AIR / G0 * np.log(p / p_base)
        dh = np.where(upper, t_base * phi, t_base * np.expm1(LAYER_LAPSE_K_PER_M[0] * phi) / LAYER_LAPSE_K_PER_M[0])
        h = h_base + dh
        return np.where(h < MODEL_BOTTOM_M, -np.inf, h)
    # Base pressures fall with altitude: search the ascending negated sequence.
    i = np.clip(np.searchsorted(-LAYER_BASE_P_PA, -p, side="right") - 1, 0, LAYER_BASE_M.size - 1)
    lapse, t_base, p_base = LAYER_LAPSE_K_PER_M[i], LAYER_BASE_T_K[i], LAYER_BASE_P_PA[i]
    with np.errstate(divide="ignore", invalid="ignore"):
        phi = -R_AIR / G0 * np.log(p / p_base)
        safe = np.where(lapse == 0.0, 1.0, lapse)
        dh = np.where(lapse == 0.0, t_base * phi, t_base * np.expm1(lapse * phi) / safe)
    h = LAYER_BASE_M[i] + dh
    return np.where(p < MODEL_TOP_P_PA, np.inf, np.where(h < MODEL_BOTTOM_M, -np.inf, h))


def _layer_integrals():
    """The integral of dh / T_ISA(h) from sea level to each layer base (1/K x m)."""
    out = np.zeros(LAYER_BASE_M.size)
    for i in range(1, LAYER_BASE_M.size):
        lapse, t_b, dh = LAYER_LAPSE_K_PER_M[i - 1], LAYER_BASE_T_K[i - 1], LAYER_BASE_M[i] - LAYER_BASE_M[i - 1]
        out[i] = out[i - 1] + (dh / t_b if lapse == 0.0 else np.log1p(lapse * dh / t_b) / lapse)
    return out


_INV_T_INTEGRAL = _layer_integrals()


def height_on_day_m(pressure_altitude_m, isa_dev_c):
    """Height above mean sea level (geopotential, m) of a pressure altitude on a day ISA + dev,
    with the standard pressure at mean sea level (QNH 1013.25 hPa).

    Source: the hypsometric equation, the hydrostatic equation with the ideal-gas law,
    dz = -(R T / g0) dp / p (e.g. Wallace & Hobbs, *Atmospheric Science*, 2nd ed., sec. 3.2);
    pressure altitude is the same with T_ISA (ISO 2533), so dz / dh_p = T / T_ISA and
    z = h_p + dev x integral of dh / T_ISA from sea level, layer by layer. A warm day lifts a
    pressure altitude above its number, a cold day lowers it (the basis of altimeter temperature
    corrections).
    """
    h = np.asarray(pressure_altitude_m, dtype=float)
    i = _layer_index(h)
    lapse, t_b = LAYER_LAPSE_K_PER_M[i], LAYER_BASE_T_K[i]
    dh = h - LAYER_BASE_M[i]
    with np.errstate(invalid="ignore", divide="ignore"):
        part = np.where(lapse == 0.0, dh / t_b, np.log1p(lapse * dh / t_b) / np.where(lapse == 0.0, 1.0, lapse))
    return h + np.asarray(isa_dev_c, dtype=float) * (_INV_T_INTEGRAL[i] + part)


def pressure_altitude_on_day_m(height_m, isa_dev_c, iterations: int = 8):
    """The pressure altitude (m) at a height above mean sea level on a day ISA + dev: the inverse
    of :func:`height_on_day_m` (same source), by Newton steps with dz / dh_p = T / T_ISA."""
    z = np.asarray(height_m, dtype=float)
    dev = np.asarray(isa_dev_c, dtype=float)
    h = z.copy()
    for _ in range(iterations):
        t_isa = isa_temperature_k(h)
        h = h - (height_on_day_m(h, dev) - z) * t_isa / (t_isa + dev)
    return h


def density_kg_m3(pressure_pa, temperature_k):
    """Air density from the ideal-gas law rho = p / (R T) (ISO 2533)."""
    return np.asarray(pressure_pa) / (R_AIR * np.asarray(temperature_k))


def speed_of_sound_ms(temperature_k):
    """Speed of sound a = sqrt(gamma R T) (ISO 2533)."""
    return np.sqrt(GAMMA * R_AIR * np.asarray(temperature_k))


def atmosphere(altitude_m, isa_dev_c=0.0):
    """Temperature (K), pressure (Pa), density (kg/m3) and speed of sound (m/s) on a day ISA+dev.

    Pressure follows ISA at the pressure altitude; the deviation shifts temperature only
    (ICAO Doc 7488 definition of pressure altitude).
    """
    t_isa, p, _ = isa_state(altitude_m)
    t = t_isa + np.asarray(isa_dev_c, dtype=float)
    return t, p, density_kg_m3(p, t), speed_of_sound_ms(t)
