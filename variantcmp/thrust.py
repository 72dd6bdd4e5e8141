"""Thrust lapse models: available thrust as a fraction of sea-level static thrust.

Each function returns F / F_SLS for one engine at full rating; the solver multiplies by the
engine count, static thrust and rating fraction.
"""

from __future__ import annotations

import numpy as np

from .atmosphere import GAMMA, P0_PA, RHO0_KG_M3, T0_K

LN_TINY = -745.0  # about ln of the smallest positive float


def density_lapse_fraction(density_kg_m3, lapse_exponent=1.0, tropopause_density_kg_m3=None,
                           lapse_exponent_above_tropopause=None):
    """Thrust proportional to a power of density: F/F0 = (rho/rho0)^m.

    Source: the classical density-ratio thrust lapse for jets (e.g. Raymer, *Aircraft Design: A
    Conceptual Approach*, 6th ed., sec. 10.3; Torenbeek, *Synthesis of Subsonic Airplane Design*,
    app. H). Above the tropopause an optional second exponent m2 applies to the density ratio
    from the tropopause: F/F0 = sigma_11^m (rho/rho_11)^m2. No Mach dependence.
    """
    with np.errstate(divide="ignore"):
        ln_sigma = np.log(np.asarray(density_kg_m3, dtype=float) / RHO0_KG_M3)
    m = np.asarray(lapse_exponent, dtype=float)
    if tropopause_density_kg_m3 is None or lapse_exponent_above_tropopause is None:
        return density_lapse_from_logs(ln_sigma, m, 0.0, 0.0)
    return density_lapse_from_logs(ln_sigma, m, np.log(np.asarray(tropopause_density_kg_m3, dtype=float) / RHO0_KG_M3),
                                   np.asarray(lapse_exponent_above_tropopause, dtype=float) - m)


def density_lapse_from_logs(ln_sigma, lapse_exponent, ln_sigma_tropopause, exponent_change):
    """:func:`density_lapse_fraction` from ln(rho/rho0), ln(rho_11/rho0) and m2 - m (same source).

    ln F/F0 = m ln sigma, plus (m2 - m) ln(rho/rho_11) above the tropopause density: one
    exponential per point (two powers cost twice as much).
    """
    # Zero density (ln = -inf) as the smallest positive one: 0 * -inf would give NaN where 0^0 = 1.
    ln_sigma = np.maximum(ln_sigma, LN_TINY)
    ln_frac = lapse_exponent * ln_sigma + exponent_change * np.minimum(ln_sigma - ln_sigma_tropopause, 0.0)
    return np.exp(ln_frac)


def ram_temperature_ratio(mach):
    """Total-to-static temperature ratio 1 + (gamma-1)/2 M^2 (isentropic flow: Mattingly et al.,
    *Aircraft Engine Design*, 2nd ed., AIAA 2002, ch. 2)."""
    m = np.asarray(mach, dtype=float)
    return 1.0 + 0.5 * (GAMMA - 1.0) * m * m


def stagnation_ratios(mach, temperature_k, pressure_pa):
    """Total-temperature and total-pressure ratios theta0, delta0 (to sea-level standard).

    Source: Mattingly et al., *Aircraft Engine Design*, 2nd ed. (AIAA 2002), ch. 2:
    theta0 = (T/T_std)(1 + (gamma-1)/2 M^2), delta0 = (p/p_std)(1 + (gamma-1)/2 M^2)^(gamma/(gamma-1)).
    """
    ram = ram_temperature_ratio(mach)
    theta0 = np.asarray(temperature_k) / T0_K * ram
    delta0 = np.asarray(pressure_pa) / P0_PA * ram ** (GAMMA / (GAMMA - 1.0))
    return theta0, delta0


def turbofan_lapse_fraction(mach, temperature_k, pressure_pa, throttle_ratio=1.0):
    """Installed full-throttle thrust lapse of a high-bypass turbofan.

    Source: Mattingly et al., *Aircraft Engine Design*, 2nd ed. (AIAA 2002), ch. 2,
    installed thrust lapse of a high-bypass turbofan at maximum power (the formula as recalled,
    from memory):
    alpha = delta0 (1 - 0.49 sqrt(M))                          for theta0 <= TR
    alpha = delta0 (1 - 0.49 sqrt(M) - 3 (theta0 - TR)/(1.5 + M)) for theta0 > TR,
    TR the throttle ratio (theta0 at which the engine reaches its temperature limit). Hot days
    raise theta0 and so lower thrust once theta0 > TR. Clipped at zero thrust.
    """
    return turbofan_lapse_from_terms(temperature_k, pressure_pa, throttle_ratio, turbofan_mach_terms(mach))


def turbofan_mach_terms(mach):
    """The Mach-only factors of :func:`turbofan_lapse_fraction` (computed once per Mach).

    Returns (ram temperature ratio, ram pressure ratio, 1 - 0.49 sqrt(M), 1.5 + M); same source.
    """
    m = np.asarray(mach, dtype=float)
    ram = ram_temperature_ratio(m)
    return ram, ram ** (GAMMA / (GAMMA - 1.0)), 1.0 - 0.49 * np.sqrt(m), 1.5 + m


def turbofan_lapse_from_terms(temperature_k, pressure_pa, throttle_ratio, terms):
    """:func:`turbofan_lapse_fraction` from precomputed :func:`turbofan_mach_terms` (same source)."""
    ram, ram_p, base, denom = terms
    theta0 = np.asarray(temperature_k) * (ram / T0_K)
    delta0 = np.asarray(pressure_pa) * (ram_p / P0_PA)
    hot = 3.0 * np.maximum(theta0 - np.asarray(throttle_ratio, dtype=float), 0.0) / denom
    return np.maximum(delta0 * (base - hot), 0.0)


def turbofan_sea_level_fraction(throttle_ratio):
    """:func:`turbofan_lapse_fraction` at sea level, static, ISA (same source): 1 for TR >= 1,
    1 - 2 (1 - TR) below (theta0 = 1 is then past the break). The solver divides by it so that an
    engine's static thrust is its thrust there whatever its throttle ratio."""
    tr = np.asarray(throttle_ratio, dtype=float)
    return np.maximum(1.0 - 2.0 * np.maximum(1.0 - tr, 0.0), 0.0)


def hot_day_factor(isa_dev_c, flat_rate_isa_dev_c=None, hot_day_loss_per_c=0.0):
    """Flat-rated thrust: 1 up to the flat-rate deviation, then falling linearly per degree.

    factor = 1 - loss x max(0, dT - dT_flat), not below zero, applied to the thrust the engine's
    lapse model gives at ISA: a flat-rated engine's lapse sees the ISA temperature of the pressure
    altitude (the density for the density lapse, theta0 for the turbofan; Mach and pressure kept),
    so its hot-day loss comes from this factor alone. Common practice
    approximation of a flat-rated engine's hot-day loss (no single published source; see e.g.
    Torenbeek app. H for the flat-rating concept).
    """
    dev = np.asarray(isa_dev_c, dtype=float)
    if flat_rate_isa_dev_c is None:
        return np.ones_like(dev)
    flat = np.asarray(flat_rate_isa_dev_c, dtype=float)
    loss = np.asarray(hot_day_loss_per_c, dtype=float)
    # A NaN flat-rate deviation means the engine is not flat rated: no loss.
    over = np.where(np.isnan(flat), 0.0, np.maximum(dev - np.nan_to_num(flat), 0.0))
    return np.maximum(1.0 - loss * over, 0.0)


class TableLapse:
    """Thrust fraction read from a grid of pressure altitude (ft) x Mach at ISA.

    Bilinear interpolation on the rectilinear grid (the "linear" method of
    scipy.interpolate.RegularGridInterpolator, which the tests use as the reference; written in
    numpy here because the solver calls it millions of times and importing scipy.interpolate
    costs the terminal app half a second at start). A point outside the grid gives NaN: the
    table's range is where the data stops, never extrapolated.
    """

    def __init__(self, altitude_ft, mach, fraction):
        self.altitude_ft = np.asarray(altitude_ft, dtype=float)
        self.mach = np.asarray(mach, dtype=float)
        self.fraction = np.asarray(fraction, dtype=float)
        xs, z = self.altitude_ft, self.fraction
        # Per altitude cell and Mach column, the line z = a + b x along altitude; two all-NaN
        # columns at the end stand for a Mach outside the table (no bounds test per point).
        slope = np.diff(z, axis=0) / np.diff(xs)[:, None]
        nan_cols = np.full((xs.size - 1, 2), np.nan)
        self._a = np.hstack([z[:-1] - slope * xs[:-1, None], nan_cols]).ravel()
        self._b = np.hstack([slope, nan_cols]).ravel()
        self._columns = self.mach.size + 2
        self._bins = _uniform_bins(xs)
        self._probes = None  # probe_points(), made when first asked for

    def probe_points(self):
        """The table's altitudes and the points midway between them (ft, ascending) and the
        fraction there per Mach column (points x (columns + 2), the last two NaN: a Mach outside
        the table), as the interpolation gives it: the nodes' values and their means."""
        if self._probes is None:
            xs, z = self.altitude_ft, self.fraction
            points = np.empty(2 * xs.size - 1)
            points[0::2], points[1::2] = xs, 0.5 * (xs[1:] + xs[:-1])
            at = np.empty((points.size, z.shape[1]))
            at[0::2], at[1::2] = z, 0.5 * (z[1:] + z[:-1])
            self._probes = points, np.hstack([at, np.full((points.size, 2), np.nan)])
        return self._probes

    def __call__(self, altitude_ft, mach):
        return self.at(altitude_ft, self.mach_terms(np.broadcast_to(np.asarray(mach, dtype=float),
                                                                   np.shape(altitude_ft))))

    def mach_terms(self, mach):
        """The Mach half of the interpolation (column index, weight), reusable per Mach."""
        ys = self.mach
        y = np.asarray(mach, dtype=float)
        j = np.clip(np.searchsorted(ys, y, side="right") - 1, 0, ys.size - 2)
        ty = (y - ys[j]) / (ys[j + 1] - ys[j])
        outside = (y < ys[0]) | (y > ys[-1]) | np.isnan(y)
        return np.where(outside, ys.size, j), np.where(outside, 0.0, ty)

    def at(self, altitude_ft, terms):
        """Interpolated fraction at pressure altitudes (ft) for precomputed Mach terms."""
        xs = self.altitude_ft
        j, ty = terms
        x = np.asarray(altitude_ft, dtype=float)
        if self._bins is None:
            cell = np.clip(np.searchsorted(xs, x, side="right") - 1, 0, xs.size - 2)
        else:
            # Evenly spaced bins, each inside one cell: a lookup instead of a binary search.
            start, per_ft, lookup = self._bins
            u = (x - start) * per_ft
            np.fmax(u, 0.0, out=u)  # fmax also sends NaN to 0 (masked below)
            np.fmin(u, lookup.size - 1, out=u)
            cell = lookup[u.astype(np.intp)]
        k = cell * self._columns + j
        a, b = self._a, self._b
        low = a[k] + b[k] * x
        out = a[k + 1] + b[k + 1] * x
        out -= low
        out *= ty
        out += low
        return np.where((x >= xs[0]) & (x <= xs[-1]), out, np.nan)


MAX_BINS = 4096


def _uniform_bins(altitude_ft):
    """(first altitude, bins per ft, cell of each bin) if the nodes sit on a whole-ft grid of at
    most MAX_BINS bins, else None (the caller then searches the nodes)."""
    xs = altitude_ft
    steps = np.diff(xs)
    if not np.all(steps == np.round(steps)) or not np.all(xs == np.round(xs)):
        return None
    step = float(np.gcd.reduce(steps.astype(np.int64)))
    count = int(round((xs[-1] - xs[0]) / step))
    if step <= 0 or count > MAX_BINS:
        return None
    lower_edges = xs[0] + step * np.arange(count)
    cells = np.clip(np.searchsorted(xs, lower_edges, side="right") - 1, 0, xs.size - 2)
    return float(xs[0]), 1.0 / step, cells.astype(np.intp)


def propeller_thrust_n(shaft_power_w, propeller_efficiency, true_airspeed_ms):
    """Propeller thrust from shaft power: T = eta P / V (power available P_A = eta P = T V;
    Anderson, *Aircraft Performance and Design*, McGraw-Hill 1999, sec. 3.3). The shaft power's
    lapse with altitude is :func:`density_lapse_fraction` applied to power, P = P0 (rho/rho0)^m
    (the same reference). Infinite at zero speed, as the form says: callers stay above the stall.
    """
    with np.errstate(divide="ignore"):
        return np.asarray(propeller_efficiency, dtype=float) * np.asarray(shaft_power_w, dtype=float) / np.asarray(
            true_airspeed_ms, dtype=float)


class PropellerEfficiency:
    """Propeller efficiency against Mach: a constant, or linear between the catalogue's points
    and NaN outside them (never extrapolated: outside the data the answer is withheld)."""

    def __init__(self, constant=None, mach=(), efficiency=()):
        self.constant = None if constant is None else float(constant)
        self.mach = np.asarray(mach, dtype=float)
        self.efficiency = np.asarray(efficiency, dtype=float)

    @property
    def concave(self) -> bool:
        """Whether the efficiency is concave in Mach (a constant, or slopes that never rise): then
        eta P less the power required, convex in speed, is concave in Mach at every altitude, and
        the thrust ceiling has one hump over speed however many points the table has."""
        if self.constant is not None or self.mach.size < 3:
            return True
        slopes = np.diff(self.efficiency) / np.diff(self.mach)
        return bool(np.all(np.diff(slopes) <= 1e-12))

    @property
    def mach_range(self) -> tuple[float, float]:
        """The Mach range the efficiency is known over ((0, 1) for a constant)."""
        if self.constant is not None:
            return 0.0, 1.0
        return float(self.mach[0]), float(self.mach[-1])

    def __call__(self, mach):
        m = np.asarray(mach, dtype=float)
        if self.constant is not None:
            return np.full(m.shape, self.constant)
        inside = (m >= self.mach[0]) & (m <= self.mach[-1])
        return np.where(inside, np.interp(m, self.mach, self.efficiency), np.nan)
