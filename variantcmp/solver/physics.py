"""Quasi-steady climb physics of a set of cases: thrust available, drag and the residual climb rate.

:class:`ClimbPhysics` evaluates, for every case of a :class:`variantcmp.cases.CaseSet` at once, at
a pressure altitude and a Mach per case (or a row of altitudes per case):

- ``available_thrust_n``: the engines' thrust after lapse and flat rating;
- ``drag_n``: q S (CD0 + c CL + K CL^2 + CDw), q S = (gamma/2) p M^2 S, with the Korn/Lock wave
  drag; the term c CL (``CaseSet.cd_per_cl``, zero in a catalogue's cases) is a drag of c times
  the weight at 1 g, which is how a derived set asks for a climb gradient c instead of zero;
- ``climb_gradient``: the steady flight-path gradient (F - D) / W;
- ``climb_rate_ms``: dh_p/dt = (F - D) V / W x (T_ISA/T) x f (the total-energy equation at
  constant Mach, :func:`variantcmp.aero.energy_share_factor`), and ``excess``, that rate less
  the case's required residual climb.

Per-case constants (weight, q S per unit pressure and Mach^2, the thrust the lapse fraction
multiplies, the Korn coefficients, the density lapse's tropopause terms) are computed once per
case set; the Mach-only terms once per Mach array in use (a subset asked for its parent's speeds
takes the parent's: one comparison instead of square roots and powers). Each evaluation is then
one ISA look-up (:func:`variantcmp.atmosphere.isa_state`, branch-free below 20 km) and a few dozen
array operations. Logarithms, exponentials and powers dominate the arithmetic where numpy has no
vector code for them (about 10 ns a point each, 24 for a power, measured on a 2-core AVX2
machine): one log and one exp per point for the atmosphere, the density lapse as one exp
(:func:`variantcmp.thrust.density_lapse_from_logs`). numpy's per-call overhead (100-170 us an
evaluation whatever its size) is what the solvers count, so they make few, large calls.

Narrowed sets are lazy: the root finders drop converged cases and the checks work on a few cases
at a time; :meth:`ClimbPhysics.subset` wraps them in a :class:`variantcmp.cases.CaseView`, which
gathers a per-case array only when it is first read (an evaluation reads about a third of them),
and takes its thrust-model groups from its parent's slices (an ascending index keeps them slices).

Thrust models: :data:`THRUST_MODELS` maps each model code (:data:`variantcmp.cases.MODEL_CODES`)
to its Mach-only terms, its lapse fraction, its static fraction, the Mach points where its data
put kinks and the flag for a Mach outside its data, each a function of its own. Cases are grouped
by model (and by table, for table engines; by propeller, for propeller engines); the solvers sort
each chunk by :func:`group_key` so that every group is a slice (views, not gathers). A new model is
one more entry (its evaluation point carries altitude, temperature, ISA temperature, pressure and
Mach, so a model may use true airspeed too, as the propeller's does).

Propeller engines give shaft power, not thrust: T = eta(M) P / V with P = P0 (rho/rho0)^m
(:func:`variantcmp.thrust.propeller_thrust_n`), V = M a at the day's temperature. Their
``thrust_sls_n`` is n P0 / a0 (:func:`variantcmp.cases.reference_thrust_n`), so the fraction is
eta(M)/M x (rho/rho0)^m x sqrt(T0/T): eta(M)/M is a Mach-only term, NaN outside the efficiency
table (flagged PROPELLER_DATA_MACH, never extrapolated).

Other questions use the same physics: a derived :class:`~variantcmp.cases.CaseSet` (other
weights, deviations, thrust or CD0: ``dataclasses.replace``) gives a new ``ClimbPhysics``, and
``best_climb_mach`` maximises the climb rate over Mach at given altitudes.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from ..aero import energy_share_factor, korn_coefficients, lock_wave_drag, pressure_climb_factor
from ..atmosphere import G0, GAMMA, R_AIR, RHO0_KG_M3, T0_K, isa_state, speed_of_sound_ms
from ..cases import FT, MODEL_CODES, CaseSet, CaseView
from ..thrust import (density_lapse_from_logs, hot_day_factor, turbofan_lapse_from_terms, turbofan_mach_terms,
                      turbofan_sea_level_fraction)
from .finders import golden_max, nan_as_lowest
from .results import PROPELLER_DATA_MACH, THRUST_DATA_MACH

CLIMB_MACH_ITERATIONS = 24  # golden section in Mach at a fixed altitude: range x 0.618^24, about 1e-5
# Group key = model code x GROUP_BASE + the model's data id + 1 (the table of a table engine, the
# propeller of a propeller engine; 0 for the others).
GROUP_BASE = 1_000_000
TURBOFAN, TABLE, TURBOPROP = MODEL_CODES["turbofan"], MODEL_CODES["table"], MODEL_CODES["turboprop"]


def group_key(cases) -> np.ndarray:
    """Thrust-model group of each case: model code, and the table or propeller of its engine."""
    data_id = np.where(cases.model_code == TABLE, cases.table_id + 1,
                       np.where(cases.model_code == TURBOPROP, cases.propeller_id + 1, 0))
    return cases.model_code * GROUP_BASE + data_id


def key_groups(key: np.ndarray) -> list[tuple[int, int, np.ndarray | slice]]:
    """(code, data id, cases) per value of a group key (code x GROUP_BASE + data id + 1): slices
    where the cases are sorted by the key (views instead of gathers and scatters), else index arrays."""
    if key.size and np.all(key[1:] >= key[:-1]):
        bounds = np.concatenate([[0], np.flatnonzero(key[1:] != key[:-1]) + 1, [key.size]])
        return [(int(key[a]) // GROUP_BASE, int(key[a]) % GROUP_BASE - 1, slice(int(a), int(b)))
                for a, b in zip(bounds[:-1], bounds[1:])]
    return [(int(k) // GROUP_BASE, int(k) % GROUP_BASE - 1, np.flatnonzero(key == k)) for k in np.unique(key)]


def _same(a):
    return a


def _column(a):
    return a[:, None]


class Point:
    """Where thrust is evaluated: altitude (m), temperature and ISA temperature (K), pressure (Pa)
    and Mach, for all cases (1-D) or rows of altitudes per case (2-D; ``col`` turns a per-case
    array into a column)."""

    __slots__ = ("h", "col", "terms", "m", "t_isa", "p", "lapse", "t")

    def __init__(self, phys: "ClimbPhysics", altitude_m, mach):
        self.h = np.asarray(altitude_m, dtype=float)
        self.col = _column if self.h.ndim == 2 else _same
        self.terms = phys.mach_terms(phys.cases.mach if mach is None else mach)
        self.m = self.col(self.terms["m"])
        self.t_isa, self.p, self.lapse = isa_state(self.h)
        self.t = self.t_isa + self.col(phys.cases.isa_dev_c)
        # One shape for every array the models gather from (an altitude per case may come with a
        # row of them, or one altitude for all).
        shape = self.t.shape
        if self.h.shape != shape:
            self.h = np.broadcast_to(self.h, shape)
        if self.p.shape != shape:
            self.p = np.broadcast_to(self.p, shape)
        if self.t_isa.shape != shape:
            self.t_isa = np.broadcast_to(self.t_isa, shape)


class PressurePoint:
    """Where level-flight drag is evaluated from the static pressure alone (at a fixed Mach it does
    not depend on the temperature): pressure (Pa, per case or rows per case) and Mach per case."""

    __slots__ = ("p", "col", "terms", "m")

    def __init__(self, phys: "ClimbPhysics", pressure_pa, mach):
        self.p = np.asarray(pressure_pa, dtype=float)
        self.col = _column if self.p.ndim == 2 else _same
        m = np.asarray(phys.cases.mach if mach is None else mach, dtype=float)
        self.terms = {"qs_per_p": phys.qs_per_pm2 * m * m}
        self.m = self.col(m)


@dataclass(frozen=True)
class ThrustModel:
    """How :class:`ClimbPhysics` evaluates one thrust model on its group of cases.

    ``fraction(phys, idx, data_id, at, case)``: F / F_SLS for the group's cases ``idx`` at the
    :class:`Point` ``at`` (``case(a)``: a per-case array for the group, as a column when ``at`` is
    2-D; ``data_id`` the group's table or propeller). ``mach_terms(phys, m)``: the model's Mach-only
    terms for every case (full length, so that a subset can take them), cached with the Mach.
    ``static_fraction(cases)``: the fraction at sea level, static, ISA, which the catalogue's static
    thrust is (the thrust is divided by it). ``kink_machs(cases, data_id)``: the Mach points where
    the group's data interpolate linearly (thrust has a kink there; none: smooth in Mach).
    ``one_hump(cases, data_id)``: whether the thrust ceiling has one hump over speed in spite of
    those kinks (all of them concave; None: the model cannot say, several humps are possible).
    ``data_mach_flag``: the flag of a Mach outside the model's data.
    """

    fraction: Callable
    mach_terms: Callable | None = None
    static_fraction: Callable | None = None
    kink_machs: Callable | None = None
    one_hump: Callable | None = None
    data_mach_flag: int = THRUST_DATA_MACH


def _seen_temperature(phys, idx, at, case):
    """A flat-rated engine holds its ISA thrust up to the flat-rate deviation (the loss above it is
    :func:`variantcmp.thrust.hot_day_factor`): its lapse sees the ISA temperature, not the day's."""
    return np.where(case(phys.flat_rated), at.t_isa[idx], at.t[idx])


def _density_lapse(phys, idx, _tid, at, case):
    with np.errstate(divide="ignore"):
        ln_sigma = np.log(at.p[idx] / (R_AIR * RHO0_KG_M3 * _seen_temperature(phys, idx, at, case)))
    return density_lapse_from_logs(ln_sigma, case(phys.cases.lapse_exponent), case(phys.ln_sigma11),
                                   case(phys.lapse_change))


def _turbofan(phys, idx, _tid, at, case):
    terms = tuple(case(x) for x in at.terms[TURBOFAN])
    return turbofan_lapse_from_terms(_seen_temperature(phys, idx, at, case), at.p[idx], case(phys.cases.throttle_ratio),
                                     terms)


def _table(phys, idx, tid, at, case):
    j, ty = at.terms[TABLE]
    return phys.cases.tables[tid].at(at.h[idx] / FT, (case(j), case(ty)))


def _table_mach_terms(phys, m):
    # Column index and weight per case, filled group by group.
    j, ty = np.zeros(m.shape, dtype=np.intp), np.zeros(m.shape)
    for code, tid, idx in phys.groups:
        if code == TABLE:
            j[idx], ty[idx] = phys.cases.tables[tid].mach_terms(m[idx])
    return j, ty


def _turboprop(phys, idx, pid, at, case):
    # eta(M)/M x (rho/rho0)^m x sqrt(T0/T): eta P / V over n P0 / a0 (see the module docstring).
    frac = _density_lapse(phys, idx, pid, at, case)
    frac *= case(at.terms[TURBOPROP])
    frac *= np.sqrt(T0_K / at.t[idx])
    return frac


def _turboprop_mach_terms(phys, m):
    # eta(M) / M per case (NaN outside an efficiency table), filled group by group.
    out = np.full(m.shape, np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        for code, pid, idx in phys.groups:
            if code == TURBOPROP:
                out[idx] = phys.cases.propellers[pid](m[idx]) / m[idx]
    return out


#: Thrust model code -> how it is evaluated (sources in :mod:`variantcmp.thrust`).
THRUST_MODELS: dict[int, ThrustModel] = {
    MODEL_CODES["density-lapse"]: ThrustModel(_density_lapse),
    MODEL_CODES["turbofan"]: ThrustModel(_turbofan, lambda phys, m: turbofan_mach_terms(m),
                                         lambda cs: turbofan_sea_level_fraction(cs.throttle_ratio)),
    MODEL_CODES["table"]: ThrustModel(_table, _table_mach_terms, kink_machs=lambda cs, tid: cs.tables[tid].mach),
    TURBOPROP: ThrustModel(_turboprop, _turboprop_mach_terms, kink_machs=lambda cs, pid: cs.propellers[pid].mach,
                           one_hump=lambda cs, pid: cs.propellers[pid].concave, data_mach_flag=PROPELLER_DATA_MACH),
}


def data_mach_flags(model_code) -> np.ndarray:
    """Per case, the flag of a Mach outside its thrust model's data (:attr:`ThrustModel.data_mach_flag`)."""
    flags = np.full(np.shape(model_code), THRUST_DATA_MACH, dtype=np.int32)
    for code, model in THRUST_MODELS.items():
        flags[model_code == code] = model.data_mach_flag
    return flags


class ClimbPhysics:
    """Thrust, drag and residual climb rate of a set of cases (see the module docstring)."""

    _DERIVED = ("w_n", "qs_per_pm2", "thrust_n", "m_crit0", "m_crit_slope", "lapse_change", "ln_sigma11", "flat_rated")

    def __init__(self, cases: CaseSet):
        self.cases = cases
        self._groups()
        self._derived()

    def _groups(self):
        # One group per thrust model (per table or propeller): slices where the cases are sorted.
        self.groups = key_groups(group_key(self.cases))

    def subset(self, index) -> "ClimbPhysics":
        """The physics of some of the cases (an index array or slice), derived values taken along."""
        new = ClimbPhysics.__new__(ClimbPhysics)
        new.cases = CaseView(self.cases, index)
        new.groups = self._subset_groups(index)
        if new.groups is None:
            new._groups()
        for name in self._DERIVED:
            setattr(new, name, getattr(self, name)[index])
        new.has_wave, new.has_linear = self.has_wave, self.has_linear
        new._terms = None
        # The parent's Mach terms, taken along when the subset is asked for the same speeds.
        new._parent_terms = None if self._terms is None else (self._terms[1], index)
        return new

    def _subset_groups(self, index):
        """The groups of a subset as slices, from this set's slices: where an ascending index
        array (the solvers' flatnonzero) or a slice picks the cases. None where that does not hold."""
        if not all(isinstance(g, slice) for _, _, g in self.groups):
            return None
        if isinstance(index, slice):
            index = np.arange(len(self.cases))[index]
        index = np.asarray(index)
        if index.dtype == bool or (index.size > 1 and not np.all(index[1:] > index[:-1])):
            return None
        cuts = np.searchsorted(index, [g.start for _, _, g in self.groups] + [len(self.cases)])
        return [(code, tid, slice(int(a), int(b))) for (code, tid, _), a, b in zip(self.groups, cuts[:-1], cuts[1:])
                if b > a]

    def _derived(self):
        """Per-case constants of the climb equation, computed once per case set."""
        cs = self.cases
        self.w_n = cs.weight_kg * G0
        self.qs_per_pm2 = 0.5 * GAMMA * cs.wing_area_m2  # q S = (gamma/2) p M^2 S
        # The thrust the lapse fraction multiplies: static thrust, the hot-day factor, and 1 / the
        # model's fraction at sea level, static, ISA (static thrust is the thrust there).
        static = np.ones(len(cs))
        for code, model in THRUST_MODELS.items():
            if model.static_fraction is not None:
                static = np.where(cs.model_code == code, model.static_fraction(cs), static)
        self.thrust_n = cs.thrust_sls_n * hot_day_factor(cs.isa_dev_c, cs.flat_rate_isa_dev_c, cs.hot_day_loss_per_c)
        self.thrust_n /= static
        self.m_crit0, self.m_crit_slope = korn_coefficients(cs.thickness_ratio, cs.sweep_deg, cs.korn_factor)
        self.has_wave = bool(np.isfinite(self.m_crit0).any())
        self.has_linear = bool(np.any(cs.cd_per_cl != 0.0))
        # Density lapse above the tropopause: the exponent's change there, and ln(rho_11/rho0).
        above = cs.lapse_exponent_above
        self.lapse_change = np.where(np.isnan(above), 0.0, above - cs.lapse_exponent)
        self.ln_sigma11 = np.log(cs.tropopause_density_kg_m3 / RHO0_KG_M3)
        self.flat_rated = ~np.isnan(cs.flat_rate_isa_dev_c)
        self._terms = self._parent_terms = None

    def mach_terms(self, mach):
        """Per-case constants that depend on the Mach only, cached for the Mach array in use.

        A subset asked for its parent's speeds (the solvers narrow both alike) takes the parent's
        terms: comparing the Mach arrays costs less than the square roots and powers."""
        if self._terms is not None and self._terms[0] is mach:
            return self._terms[1]
        m = np.asarray(mach, dtype=float)
        terms = None
        if self._parent_terms is not None and m.ndim == 1 and self._parent_terms[0]["m"].ndim == 1:
            parent, index = self._parent_terms
            if np.array_equal(parent["m"][index], m):
                terms = {k: tuple(x[index] for x in v) if isinstance(v, tuple) else v[index] for k, v in parent.items()}
        if terms is None:
            terms = {"m": m, "qs_per_p": self.qs_per_pm2 * m * m}
            for code in {code for code, _, _ in self.groups}:
                if THRUST_MODELS[code].mach_terms is not None:
                    terms[code] = THRUST_MODELS[code].mach_terms(self, m)
        self._terms = (mach, terms)
        return terms

    def thrust_fraction(self, at: Point):
        """F / (F_SLS at rating) for every case, each engine model on its own group."""
        # Gathers only: the solvers call this thousands of times on small sets, where numpy's
        # per-call overhead (broadcasting included) costs more than the arithmetic.
        out = np.empty(at.t.shape)
        for code, tid, idx in self.groups:
            frac = THRUST_MODELS[code].fraction(self, idx, tid, at, lambda a, idx=idx: at.col(a)[idx])
            if len(self.groups) == 1:
                return frac
            out[idx] = frac
        return out

    def _thrust(self, at: Point):
        thrust = self.thrust_fraction(at)
        thrust *= at.col(self.thrust_n)
        return thrust

    def _drag(self, at: Point):
        return self._polar_drag(at.col(at.terms["qs_per_p"]) * at.p, at.m, at.col(self.w_n), at.col)

    def _polar_drag(self, q_s, m, w_n, col):
        cs = self.cases
        cl = w_n / q_s
        cd = cl * cl
        cd *= col(cs.k)
        cd += col(cs.cd0)
        if self.has_linear:
            cd += col(cs.cd_per_cl) * cl
        if self.has_wave:
            cd += lock_wave_drag(m, col(self.m_crit0) - col(self.m_crit_slope) * cl)
        return q_s * cd

    def available_thrust_n(self, altitude_m, mach=None):
        """Thrust of all the case's engines (N) at constant Mach, after lapse and flat rating."""
        return self._thrust(Point(self, altitude_m, mach))

    def drag_n(self, altitude_m, mach=None):
        """Drag (N) in level flight at 1 g: q S (CD0 + c CL + K CL^2 + CDw), CL = W / (q S) (Anderson,
        *Aircraft Performance and Design*, eq. 2.47 polar; Korn/Lock wave drag, :mod:`variantcmp.aero`).

        c = ``cases.cd_per_cl`` (zero for a catalogue's cases): q S c CL = c W, a drag of c times the
        weight at any speed and altitude, so that F - D = 0 with it is (F - D0) / W = c without it.
        It must not be negative: screens that leave drag terms out to bound the climb rate from
        above (:func:`variantcmp.solver.thrust_ceiling.climbs_above`) rely on every term adding drag.
        """
        return self._drag(Point(self, altitude_m, mach))

    def drag_at_pressure_n(self, pressure_pa, mach=None):
        """:meth:`drag_n` at a static pressure (Pa; per case, or rows per case) instead of an
        altitude: no atmosphere is evaluated (the cruise solvers search in pressure)."""
        return self._drag(PressurePoint(self, pressure_pa, mach))

    def climb_gradient(self, altitude_m, mach=None):
        """Steady flight-path gradient sin(gamma) = (F - D) / W at 1 g (the steady climb of Anderson,
        *Aircraft Performance and Design*, ch. 5: no acceleration along the path); negative in a
        descent. Same shapes as :meth:`climb_rate_ms`."""
        at = Point(self, altitude_m, mach)
        gradient = self._thrust(at)
        gradient -= self._drag(at)
        gradient /= at.col(self.w_n)
        return gradient

    def level_drag_n(self, q_s, mach, weight_n):
        """Drag (N) in level flight at 1 g at other weights than the cases' own, from q S (N) at
        each case's point (:meth:`level_terms`): the polar of :meth:`drag_n`. ``q_s`` is (N,) or
        (N, L) with ``mach`` and ``weight_n`` per case or of its shape."""
        q_s = np.asarray(q_s, dtype=float)
        col = _column if q_s.ndim == 2 else _same
        m, w = (np.asarray(x, dtype=float) for x in (mach, weight_n))
        return self._polar_drag(q_s, col(m) if m.ndim < q_s.ndim else m, col(w) if w.ndim < q_s.ndim else w, col)

    def level_terms(self, altitude_m, mach=None):
        """The climb equation's terms that do not depend on the weight, at a point: the thrust
        F (N), q S (N) and the climb speed factor sf = V (T_ISA/T) f (m/s), so that
        dh_p/dt = (F - D(W)) sf / W (the equation of :meth:`climb_rate_ms`, with
        :func:`variantcmp.aero.pressure_climb_factor`). For questions about the weight: the
        heaviest weight that holds a level."""
        at = Point(self, altitude_m, mach)
        q_s = at.col(at.terms["qs_per_p"]) * at.p
        speed_factor = at.m * speed_of_sound_ms(at.t) * pressure_climb_factor(at.m, at.t, at.t_isa, at.lapse)
        return self._thrust(at), q_s, speed_factor

    def climb_rate_ms(self, altitude_m, mach=None):
        """Residual rate of climb (m/s of pressure altitude) at constant Mach.

        dh_p/dt = (F - D) V / W x (T_ISA / T) x f (total-energy equation, see
        :func:`variantcmp.aero.energy_share_factor`). ``altitude_m`` is (N,) or (N, L).
        """
        at = Point(self, altitude_m, mach)
        w = at.col(self.w_n)
        excess_n = self.thrust_fraction(at)
        excess_n *= at.col(self.thrust_n)
        excess_n -= self._drag(at)
        ratio = at.t_isa / at.t
        rate = excess_n * (at.m * speed_of_sound_ms(at.t))
        rate /= w
        rate *= ratio
        rate *= energy_share_factor(at.m, at.t, at.t_isa, at.lapse)
        return rate

    def excess(self, altitude_m, mach=None):
        """Climb rate minus the case's required residual climb (m/s); >= 0: the case climbs."""
        col = (lambda a: a[:, None]) if np.ndim(altitude_m) == 2 else (lambda a: a)
        return self.climb_rate_ms(altitude_m, mach) - col(self.cases.climb_ms)

    def propeller_efficiency(self, mach=None):
        """Propeller efficiency per case at its Mach (NaN for jets and outside an efficiency table)."""
        m = np.asarray(self.cases.mach if mach is None else mach, dtype=float)
        eta = np.full(m.shape, np.nan)
        for code, pid, idx in self.groups:
            if code == TURBOPROP:
                eta[idx] = self.cases.propellers[pid](m[idx])
        return eta

    def excess_family(self, mach) -> "ExcessAtMach":
        """The excess climb rate at fixed Mach as a function of altitude: a family for the root finders."""
        return ExcessAtMach(self, np.asarray(mach, dtype=float))

    def best_climb_mach(self, altitude_m, low=None, high=None):
        """Speed in each case's range (or in [low, high]) with the largest excess climb rate at a
        fixed altitude, and that excess (golden section: smooth and single-peaked in Mach at a
        fixed altitude, except at a thrust table's Mach columns)."""
        cs = self.cases
        low, high = cs.mach_low if low is None else low, cs.mach_high if high is None else high
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            return golden_max(lambda m: nan_as_lowest(self.excess(altitude_m, m)), low, high, CLIMB_MACH_ITERATIONS)


class ExcessAtMach:
    """``f(h)``: the excess climb rate of each case at its Mach and altitude h (m); ``subset``."""

    __slots__ = ("phys", "mach")

    def __init__(self, phys: ClimbPhysics, mach):
        self.phys, self.mach = phys, mach

    def __call__(self, altitude_m):
        return self.phys.excess(altitude_m, self.mach)

    def subset(self, keep) -> "ExcessAtMach":
        return ExcessAtMach(self.phys.subset(keep), self.mach[keep])
