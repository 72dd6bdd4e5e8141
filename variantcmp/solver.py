"""Ceilings: the highest pressure altitude each limit allows, and the maximum altitude.

For a fixed Mach, the buffet, stall, certified and cabin ceilings are closed forms in pressure;
the thrust ceiling (residual rate of climb = the required rate) is the top root of the excess
climb rate, bracketed from lift-coefficient levels (a coarse altitude scan where they fail) and
refined by a regula falsi. For the best speed, the Mach that gives the highest altitude meeting
every limit at once is found per case from a Mach grid, a Brent search for the thrust
ceiling's maximum and, where another limit binds, a golden-section search. Everything is
vectorised over cases; DEVELOPERS.md ("How the ceiling solver works") has the details.
"""

from __future__ import annotations

import mmap
import multiprocessing
import os
import sys
from dataclasses import dataclass

import numpy as np

from .aero import energy_share_factor, korn_coefficients, lock_wave_drag, pressure_climb_factor
from .airspeed import pressure_for_cas_at_mach_pa
from .atmosphere import (G0, GAMMA, LAYER_BASE_M, MODEL_TOP_M, R_AIR, RHO0_KG_M3, T0_K, isa_state, pressure_altitude_m,
                         speed_of_sound_ms)
from .cases import FLOOR_M, FT, MODEL_CODES, CaseSet, CaseView
from .thrust import (density_lapse_from_logs, hot_day_factor, ram_temperature_ratio, turbofan_lapse_from_terms,
                     turbofan_mach_terms, turbofan_sea_level_fraction)

LIMITS = ("thrust", "buffet", "stall", "certified", "cabin")

# Flags (bit mask) explaining results the model cannot give as a number.
CANNOT_CLIMB = 1  # no altitude with the required residual climb at this speed
THRUST_DATA_TOP = 2  # still climbing at the top of the engine's thrust table
THRUST_DATA_MACH = 4  # Mach outside the engine's thrust table
NO_BUFFET_AT_MACH = 8  # variant has buffet data, but not at this Mach
ABOVE_MMO = 16
BELOW_VMO_FLOOR = 32  # at this Mach the ceiling lies where CAS would exceed VMO
NO_COMMON_ALTITUDE = 64  # thrust only works above the ceiling the other limits allow
ABOVE_MODEL_TOP = 128  # no limit binds below the top of the atmosphere model
BELOW_FLOOR = 256  # the limits cross below -2,000 ft

#: Coarse altitude scan (m) bracketing the thrust ceiling: dense where aircraft fly.
SCAN_LEVELS_M = np.concatenate([
    [FLOOR_M], np.arange(0.0, 21_000.0, 1_000.0), [22_500.0, 25_000.0, 28_000.0, 32_000.0,
                                                   38_000.0, 47_000.0, 60_000.0, MODEL_TOP_M]])
QUICK_CL_FRACTIONS = (0.6, 0.4, 0.25, 0.12)  # of CL*, stepping down from CLmax to bracket the root
WARM_HALF_WIDTH_M = 250.0  # window around a nearby speed's thrust ceiling
GRID_START = 5  # the grid speed solved first (of BEST_MACH_GRID, slowest 0): a middle one
FIRST_STEP_HALF_WIDTH_M = 1500.0  # window around the first grid speed's thrust ceiling for the next one
WARM_REACH = 2.0  # a second look this many windows beyond a window that missed the root
HUMP_CHECK_HALF_WIDTH_M = 50.0  # warm windows at least this wide get the table-engine hump check
ROOT_TOL_M = 0.003  # about 0.01 ft
SEARCH_TOL_M = 0.03  # inside the best-speed search, where only comparisons matter (0.1 ft)
GRID_TOL_M = 0.3  # best-speed grid: only a start for the search (1 ft)
STRAGGLER_ITERATION = 5  # regula falsi steps before brackets across a layer base are split there
CO_LIMIT_M = 10.0  # two limits this close both bind (e.g. thrust and buffet at the coffin corner)
GOLDEN = (np.sqrt(5.0) - 1.0) / 2.0
BEST_MACH_GRID = 8
BEST_MACH_ITERATIONS = 18
FALL_M = 1.0  # a grid speed's thrust ceiling this far below the best faster one: a fall
BEST_MACH_SEARCH_ITERATIONS = 12  # at most: a case stops once its bracket is within BEST_MACH_TOL
BEST_MACH_TOL = 3e-4
SEARCH_MIN_HALF_WIDTH_M = 10.0  # narrowest window for a best-speed search root (guesses are often off by more)
NEWTON_MAX_STEP_M = 0.3  # a Newton step this short ends the root (slope off by 5 %: 1.5 cm)
SLOPE_STEP_M = 1.0  # finite-difference step for the excess climb rate's slope
LAYER_GUARD_M = 50.0  # no Newton steps this close to a layer base
RESCUE_ITERATIONS, RESCUE_TOL_M = 40, 0.5  # Brent's search for a narrow climbing window between scan levels
JOINT_MACH_STEP = 2e-3  # the joint search's speeds either side of its current one
JOINT_ITERATIONS = 8  # most settle in three or four; the few left go to Brent's search
JOINT_MACH_TOL = 1e-4  # a speed this still is settled (the ceiling is flat at its best speed)
JOINT_MAX_MACH_STEP = 0.05
JOINT_RATE_TOL_MS = 1e-6  # a best climb rate this small is its root (0.5 mm at a typical slope of 2e-3/s)
JOINT_MAX_STEP_M = 600.0
TABLE_TOP_LOOK_M = 300.0  # a best thrust ceiling this close under the thrust table's top gets a look at the top
PLATEAU_M = 1e-3  # a grid root this close to a layer base sits on it (roots there come out at the base +- 1e-6 m)
ISLAND_SPEEDS = 48  # dense scan for cases whose grid met unflyable speeds
FAR_SIDE_SPEEDS = 9  # speeds of the far side of a table Mach (its ends included) checked before it is searched
CLIMB_MACH_ITERATIONS = 24  # golden section in Mach at a fixed altitude: range x 0.618^24, about 1e-5
CHUNK = 16_384
BEST_CHUNK = 25_000  # best speed makes many calls on small sets: larger chunks share their overhead
PARALLEL_MIN_CASES = 200_000
MAX_WORKERS = 2  # processes for large jobs (one per core of the machines this is built for)
BEST_SPEED_WORK = 15


@dataclass
class Ceilings:
    """Solver output, one element per case. Altitudes are pressure altitudes in m.

    NaN: the model cannot give a value (see ``flags``); +inf: the limit does not exist for the
    case or lies above the model top.
    """

    thrust_m: np.ndarray
    buffet_m: np.ndarray
    stall_m: np.ndarray
    certified_m: np.ndarray
    cabin_m: np.ndarray
    max_altitude_m: np.ndarray
    mach: np.ndarray
    limit: np.ndarray  # index into LIMITS, -1 for none
    flags: np.ndarray
    vmo_floor_m: np.ndarray  # lowest altitude where the Mach stays within VMO (-inf: no VMO)
    co_limit: np.ndarray  # a second limit binding within CO_LIMIT_M of the first (band closure), -1 none

    @classmethod
    def allocate(cls, n: int, make=np.empty) -> "Ceilings":
        """Uninitialised arrays for n cases, from ``make(n, dtype)``."""
        small = {"limit": np.int8, "co_limit": np.int8, "flags": np.int32}
        return cls(**{name: make(n, small.get(name, float)) for name in cls.__dataclass_fields__})

    def take(self, index) -> "Ceilings":
        return Ceilings(**{n: getattr(self, n)[index] for n in self.__dataclass_fields__})

    def put(self, index, other: "Ceilings") -> None:
        """Overwrite the cases at ``index`` with ``other``'s (same order)."""
        for n in self.__dataclass_fields__:
            getattr(self, n)[index] = getattr(other, n)

    @classmethod
    def concat(cls, parts: list["Ceilings"]) -> "Ceilings":
        names = cls.__dataclass_fields__
        return cls(**{n: np.concatenate([getattr(p, n) for p in parts]) for n in names})


class ClimbPhysics:
    """Residual climb rate of a set of cases, thrust models evaluated per model group.

    Shared by the ceiling and envelope solvers: ``climb_rate_ms(altitude_m, mach)`` and
    ``excess(altitude_m, mach)`` (climb rate minus the case's required rate).
    """

    _DERIVED = ("w_n", "qs_per_pm2", "thrust_n", "m_crit0", "m_crit_slope", "lapse_change", "ln_sigma11", "flat_rated")

    def __init__(self, cases: CaseSet):
        self.cases = cases
        self._groups()
        self._derived()

    def _groups(self):
        # One group per thrust model (per table for table engines). Cases sorted by group (as
        # _solve_chunk does) make each group a slice: views instead of gathers and scatters.
        key = _group_key(self.cases)
        self.groups = []
        if key.size and np.all(key[1:] >= key[:-1]):
            bounds = np.concatenate([[0], np.flatnonzero(key[1:] != key[:-1]) + 1, [key.size]])
            for start, stop in zip(bounds[:-1], bounds[1:]):
                k = int(key[start])
                self.groups.append((k // _GROUP_BASE, k % _GROUP_BASE - 1, slice(int(start), int(stop))))
            return
        for k in np.unique(key):
            idx = np.flatnonzero(key == k)
            self.groups.append((int(k) // _GROUP_BASE, int(k) % _GROUP_BASE - 1, idx))

    def subset(self, index) -> "ClimbPhysics":
        """The physics of some of the cases (an index array or slice), derived values taken along."""
        new = ClimbPhysics.__new__(ClimbPhysics)
        new.cases = CaseView(self.cases, index)
        new.groups = self._subset_groups(index)
        if new.groups is None:
            new._groups()
        for name in self._DERIVED:
            setattr(new, name, getattr(self, name)[index])
        new.has_wave = self.has_wave
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
        # The thrust the lapse fraction multiplies: static thrust, the hot-day factor, and for
        # turbofans 1 / the lapse at sea level (static thrust is the thrust there, TR < 1 too).
        sea_level = np.where(cs.model_code == MODEL_CODES["turbofan"], turbofan_sea_level_fraction(cs.throttle_ratio), 1.0)
        self.thrust_n = cs.thrust_sls_n * hot_day_factor(cs.isa_dev_c, cs.flat_rate_isa_dev_c, cs.hot_day_loss_per_c)
        self.thrust_n /= sea_level
        self.m_crit0, self.m_crit_slope = korn_coefficients(cs.thickness_ratio, cs.sweep_deg, cs.korn_factor)
        self.has_wave = bool(np.isfinite(self.m_crit0).any())
        # Density lapse above the tropopause: the exponent's change there, and ln(rho_11/rho0).
        above = cs.lapse_exponent_above
        self.lapse_change = np.where(np.isnan(above), 0.0, above - cs.lapse_exponent)
        self.ln_sigma11 = np.log(cs.tropopause_density_kg_m3 / RHO0_KG_M3)
        self.flat_rated = ~np.isnan(cs.flat_rate_isa_dev_c)
        self._terms = self._parent_terms = None

    def _mach_terms(self, mach):
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
            if any(code == 1 for code, _, _ in self.groups):
                terms["turbofan"] = turbofan_mach_terms(m)
            if any(code == 2 for code, _, _ in self.groups):
                # Column index and weight per case, filled group by group (full length, so a
                # subset can take them).
                j, ty = np.zeros(m.shape, dtype=np.intp), np.zeros(m.shape)
                for code, tid, idx in self.groups:
                    if code == 2:
                        j[idx], ty[idx] = self.cases.tables[tid].mach_terms(m[idx])
                terms["table"] = (j, ty)
        self._terms = (mach, terms)
        return terms

    def thrust_fraction(self, altitude_m, terms, t, t_isa, p, col):
        """F / (F_SLS at rating) for every case, each engine model on its own group."""
        cs = self.cases
        out = np.empty(t.shape)
        # Gathers only: the solvers call this thousands of times on small sets, where numpy's
        # per-call overhead (broadcasting included) costs more than the arithmetic.
        h = altitude_m if np.shape(altitude_m) == out.shape else np.broadcast_to(altitude_m, out.shape)
        p = p if p.shape == out.shape else np.broadcast_to(p, out.shape)
        t_isa = t_isa if t_isa.shape == out.shape else np.broadcast_to(t_isa, out.shape)
        for code, tid, idx in self.groups:
            sub = (lambda a, idx=idx: col(a)[idx])  # noqa: E731  (per-case arrays of the group)
            # A flat-rated engine holds its ISA thrust up to the flat-rate deviation (the loss
            # above it is hot_day_factor): its lapse sees the ISA temperature, not the day's.
            t_seen = np.where(sub(self.flat_rated), t_isa[idx], t[idx]) if code < 2 else None
            if code == 0:
                with np.errstate(divide="ignore"):
                    ln_sigma = np.log(p[idx] / (R_AIR * RHO0_KG_M3 * t_seen))
                frac = density_lapse_from_logs(ln_sigma, sub(cs.lapse_exponent), sub(self.ln_sigma11),
                                               sub(self.lapse_change))
            elif code == 1:
                frac = turbofan_lapse_from_terms(t_seen, p[idx], sub(cs.throttle_ratio),
                                                 tuple(sub(x) for x in terms["turbofan"]))
            else:
                j, ty = terms["table"]
                frac = cs.tables[tid].at(h[idx] / FT, (sub(j), sub(ty)))
            if len(self.groups) == 1:
                return frac
            out[idx] = frac
        return out

    def climb_rate_ms(self, altitude_m, mach=None):
        """Residual rate of climb (m/s of pressure altitude) at constant Mach.

        dh_p/dt = (F - D) V / W x (T_ISA / T) x f (total-energy equation, see
        :func:`variantcmp.aero.energy_share_factor`), D = q S (CD0 + K CL^2 + CDw) with the
        Korn/Lock wave drag (:mod:`variantcmp.aero`). ``altitude_m`` is (N,) or (N, L).
        """
        cs = self.cases
        h = np.asarray(altitude_m, dtype=float)
        col = (lambda a: a[:, None]) if h.ndim == 2 else (lambda a: a)
        terms = self._mach_terms(cs.mach if mach is None else mach)
        m = col(terms["m"])
        t_isa, p, lapse = isa_state(h)
        t = t_isa + col(cs.isa_dev_c)
        q_s = col(terms["qs_per_p"]) * p
        w = col(self.w_n)
        cl = w / q_s
        cd = cl * cl
        cd *= col(cs.k)
        cd += col(cs.cd0)
        if self.has_wave:
            cd += lock_wave_drag(m, col(self.m_crit0) - col(self.m_crit_slope) * cl)
        excess_n = self.thrust_fraction(h, terms, t, t_isa, p, col)
        excess_n *= col(self.thrust_n)
        excess_n -= q_s * cd
        ratio = t_isa / t
        rate = excess_n * (m * speed_of_sound_ms(t))
        rate /= w
        rate *= ratio
        rate *= energy_share_factor(m, t, t_isa, lapse)
        return rate

    def excess(self, altitude_m, mach=None):
        col = (lambda a: a[:, None]) if np.ndim(altitude_m) == 2 else (lambda a: a)
        return self.climb_rate_ms(altitude_m, mach) - col(self.cases.climb_ms)


def _illinois(phys: "ClimbPhysics", mach, a, b, fa, fb, tol=ROOT_TOL_M, max_iter=60):
    """Vectorised modified regula falsi on the excess climb rate, fa >= 0 > fb.

    Anderson-Bjorck variant (Anderson & Bjorck, "A new high order method of regula falsi type
    for computing a root of an equation", BIT 13 (1973) 253-264) of the Illinois method (Dowell &
    Jarratt, BIT 11 (1971) 168-174). Converged cases drop out once they are half the work.
    """
    a, b, fa, fb = (np.array(x, dtype=float) for x in (a, b, fa, fb))
    out = np.empty(a.size)
    idx = np.arange(a.size)  # the cases still in the working arrays
    side = np.zeros(a.size, dtype=np.int8)
    sub, m_sub = phys, mach
    for iteration in range(max_iter):
        active = np.abs(b - a) > tol
        n_active = int(np.count_nonzero(active))
        if n_active == 0:
            break
        if iteration == STRAGGLER_ITERATION:
            a, b, fa, fb = _split_at_layer_base(sub, m_sub, a, b, fa, fb, active)
            continue
        if n_active < 0.5 * idx.size:
            done = ~active
            out[idx[done]] = np.where(np.abs(fa[done]) <= np.abs(fb[done]), a[done], b[done])
            keep = np.flatnonzero(active)
            idx, a, b, fa, fb, side = idx[keep], a[keep], b[keep], fa[keep], fb[keep], side[keep]
            sub, m_sub = sub.subset(keep), m_sub[keep]
        denom = fb - fa
        c = np.where(denom != 0.0, (a * fb - b * fa) / np.where(denom != 0.0, denom, 1.0), 0.5 * (a + b))
        c = np.clip(c, np.minimum(a, b), np.maximum(a, b))
        fc = sub.excess(c, m_sub)
        # Close enough: the secant slope puts the root within a tenth of the tolerance of c.
        with np.errstate(divide="ignore", invalid="ignore"):
            there = np.abs(fc) * np.abs(b - a) < 0.1 * tol * np.abs(fb - fa)
        left = fc >= 0.0  # the root lies between c and b
        # Anderson-Bjorck scaling of the endpoint kept twice running (Illinois would halve it).
        with np.errstate(divide="ignore", invalid="ignore"):
            m_left, m_right = 1.0 - fc / fa, 1.0 - fc / fb
        fb = np.where(left & (side == -1), np.where(m_left > 0.0, m_left, 0.5) * fb, fb)
        fa = np.where(~left & (side == 1), np.where(m_right > 0.0, m_right, 0.5) * fa, fa)
        a, fa = np.where(left | there, c, a), np.where(left, fc, fa)
        b, fb = np.where(left & (fc != 0.0) & ~there, b, c), np.where(left, fb, fc)  # fc == 0: the root
        side = np.where(left, -1, 1).astype(np.int8)
    out[idx] = np.where(np.abs(fa) <= np.abs(fb), a, b)
    return out


def _newton_root(phys: "ClimbPhysics", mach, guess_m, slope_per_s, max_step_m=NEWTON_MAX_STEP_M, steps=3):
    """Thrust ceiling near a guess: a Newton step with a known slope d(excess)/dh, then secant
    steps through the last two points (e.g. Press et al., *Numerical Recipes*, 3rd ed., sec.
    9.2). A case is settled once a step is under ``max_step_m``; those still moving after
    ``steps`` evaluations (a guess too far off, a jump in the climb rate) are left to the
    bracketing solver. Returns (root, settled, slope: the last secant's where settled).
    """
    n = len(mach)
    root, ok = np.full(n, np.nan), np.zeros(n, dtype=bool)
    slope, learnt = np.array(slope_per_s, dtype=float), np.array(slope_per_s, dtype=float)
    idx, h, sub = np.arange(n), np.array(guess_m, dtype=float), phys
    e_prev = h_prev = None
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for _ in range(steps):
            e = sub.excess(h, mach[idx])
            if e_prev is not None:
                slope[idx] = (e - e_prev) / (h - h_prev)
            h_next = h - e / slope[idx]
            done = (np.abs(h_next - h) <= max_step_m) & (slope[idx] < 0.0)
            root[idx[done]], ok[idx[done]], learnt[idx[done]] = h_next[done], True, slope[idx[done]]
            going = np.flatnonzero(~done & np.isfinite(h_next))
            if going.size == 0:
                break
            idx, sub = idx[going], sub.subset(going)
            e_prev, h_prev, h = e[going], h[going], h_next[going]
    return root, ok, learnt


def _split_at_layer_base(phys: "ClimbPhysics", mach, a, b, fa, fb, active):
    """Brackets that straddle an ISA layer base, narrowed to one side of it (or to it).

    The energy-share factor changes with the layer's temperature gradient, so the climb rate
    jumps at a layer base (about 8 % at Mach 0.8 at the tropopause). A ceiling often sits exactly
    there, where a regula falsi crawls; a look just below and just above the base settles it.
    """
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    base_i = np.searchsorted(LAYER_BASE_M, hi, side="left") - 1
    base = LAYER_BASE_M[np.clip(base_i, 0, LAYER_BASE_M.size - 1)]
    cut = np.flatnonzero(active & (base_i >= 1) & (base > lo) & (base < hi))
    if cut.size == 0:
        return a, b, fa, fb
    eps = 1e-6
    sub = phys if cut.size == a.size else phys.subset(cut)
    below = sub.excess(base[cut] - eps, mach[cut])
    above = sub.excess(base[cut] + eps, mach[cut])
    a, b, fa, fb = a.copy(), b.copy(), fa.copy(), fb.copy()
    # a climbs (fa >= 0) and b does not; keep the side where the sign changes.
    up = above >= 0.0  # climbs just above the base: the root is above it
    at = (below >= 0.0) & ~up  # climbs below, not above: the base itself
    a[cut] = np.where(up, base[cut] + eps, np.where(at, base[cut] - eps, a[cut]))
    fa[cut] = np.where(up, above, np.where(at, below, fa[cut]))
    b[cut] = np.where(up, b[cut], np.where(at, base[cut] + eps, base[cut] - eps))
    fb[cut] = np.where(up, fb[cut], np.where(at, above, below))
    return a, b, fa, fb


def _golden_max(func, a, b, iterations):
    """Vectorised golden-section search for the maximum of func on [a, b] (func(idx, x))."""
    a, b = np.array(a, dtype=float), np.array(b, dtype=float)
    every = np.arange(a.size)
    c1, c2 = b - GOLDEN * (b - a), a + GOLDEN * (b - a)
    f1, f2 = func(every, c1), func(every, c2)
    for _ in range(iterations):
        go_left = f1 >= f2
        b = np.where(go_left, c2, b)
        a = np.where(go_left, a, c1)
        new = np.where(go_left, b - GOLDEN * (b - a), a + GOLDEN * (b - a))
        fn = func(every, new)
        c2, f2, c1, f1 = (np.where(go_left, c1, new), np.where(go_left, f1, fn),
                          np.where(go_left, new, c2), np.where(go_left, fn, f2))
    best = f1 >= f2
    return np.where(best, c1, c2), np.where(best, f1, f2)


def golden_max(func, a, b, iterations):
    """Public name of the vectorised golden-section maximiser (used by the envelope solver)."""
    return _golden_max(func, a, b, iterations)


def _brent_max(func, grid, values, max_iter, tol):
    """Vectorised Brent maximisation per row, started from the best point of a grid.

    Brent, *Algorithms for Minimization without Derivatives* (1973), ch. 5: a parabola through
    the three best points so far, its vertex taken where it lies well inside the bracket and the
    step is under half the one before last; a golden-section step into the larger part of the
    bracket otherwise. Each row of ``grid`` (speeds) comes with its ``values``; a row stops once
    its bracket is within ``tol`` of its best point. ``func(idx, x, guess, spread)`` evaluates the
    rows ``idx`` at ``x``, with a guess of the value and how far it may be off. Returns (x, f).
    """
    n, g = grid.shape
    rows = np.arange(n)
    i = np.argmax(values, axis=1)
    i_lo, i_hi = np.maximum(i - 1, 0), np.minimum(i + 1, g - 1)
    a, b = grid[rows, i_lo].copy(), grid[rows, i_hi].copy()
    x, fx = grid[rows, i].copy(), values[rows, i].copy()
    f_lo, f_hi = values[rows, i_lo], values[rows, i_hi]
    lo_better = f_lo >= f_hi
    w, fw = np.where(lo_better, a, b), np.where(lo_better, f_lo, f_hi)
    v, fv = np.where(lo_better, b, a), np.where(lo_better, f_hi, f_lo)
    d, e = np.zeros(n), b - a  # e: the step before last (the bracket allows a parabola at once)
    live = np.flatnonzero(np.isfinite(fx) & (b > a))
    for _ in range(max_iter):
        mid = 0.5 * (a[live] + b[live])
        xl, al, bl = x[live], a[live], b[live]
        going = np.abs(xl - mid) > 2.0 * tol - 0.5 * (bl - al)
        live, mid, xl, al, bl = live[going], mid[going], xl[going], al[going], bl[going]
        if live.size == 0:
            break
        wl, vl, fxl, fwl, fvl, dl, el = w[live], v[live], fx[live], fw[live], fv[live], d[live], e[live]
        with np.errstate(invalid="ignore", divide="ignore"):  # -inf values, coincident points
            r, q = (xl - wl) * (fxl - fvl), (xl - vl) * (fxl - fwl)
            step = -0.5 * ((xl - wl) * r - (xl - vl) * q) / (r - q)
            u = xl + step
            parabola = (np.isfinite(step) & (np.abs(step) < 0.5 * np.abs(el))
                        & (u - al >= 2.0 * tol) & (bl - u >= 2.0 * tol))
        golden_e = np.where(xl >= mid, al - xl, bl - xl)
        e[live] = np.where(parabola, dl, golden_e)
        dl = np.where(parabola, step, (1.0 - GOLDEN) * golden_e)
        dl = np.where(np.abs(dl) >= tol, dl, np.where(dl >= 0.0, tol, -tol))
        d[live] = dl
        u = xl + dl
        # The root's start: the parabola's value at the new point (a vertex or a golden-section
        # point), off by up to its distance from the value at the nearest known point.
        with np.errstate(invalid="ignore", divide="ignore"):
            pred = (fxl * (u - wl) * (u - vl) / ((xl - wl) * (xl - vl))
                    + fwl * (u - xl) * (u - vl) / ((wl - xl) * (wl - vl))
                    + fvl * (u - xl) * (u - wl) / ((vl - xl) * (vl - wl)))
        near_w, near_v = np.abs(u - wl) < np.abs(u - xl), np.abs(u - vl) < np.abs(u - xl)
        nearest = np.where(near_w & (np.abs(u - wl) <= np.abs(u - vl)), fwl, np.where(near_v, fvl, fxl))
        with np.errstate(invalid="ignore"):
            use_pred = np.isfinite(pred)
            guess = np.where(use_pred, pred, nearest)
            spread = np.where(use_pred, np.abs(pred - nearest), np.nan)
        fu = func(live, u, guess, spread)
        better = fu >= fxl
        # The bracket shrinks to the side of the best point; the three best points move along.
        a[live] = np.where(better, np.where(u >= xl, xl, al), np.where(u < xl, u, al))
        b[live] = np.where(better, np.where(u >= xl, bl, xl), np.where(u < xl, bl, u))
        second = ~better & ((fu >= fwl) | (wl == xl))
        third = ~better & ~second & ((fu >= fvl) | (vl == xl) | (vl == wl))
        v[live] = np.where(better | second, wl, np.where(third, u, vl))
        fv[live] = np.where(better | second, fwl, np.where(third, fu, fvl))
        w[live] = np.where(better, xl, np.where(second, u, wl))
        fw[live] = np.where(better, fxl, np.where(second, fu, fwl))
        x[live], fx[live] = np.where(better, u, xl), np.where(better, fu, fxl)
    return x, fx


def _on_layer_base(altitude_m):
    """Whether each altitude sits on the tropopause or the 20 km base (within PLATEAU_M)."""
    with np.errstate(invalid="ignore"):
        return (np.abs(altitude_m[:, None] - LAYER_BASE_M[None, 1:3]) <= PLATEAU_M).any(axis=1)


def _turbofan_switch_between(phys: ClimbPhysics, altitude_m, low, high):
    """Turbofan cases whose lapse changes branch (theta0 = TR, see
    :func:`variantcmp.thrust.turbofan_lapse_fraction`) between two speeds at an altitude: the
    excess climb rate has a kink in Mach there."""
    cs = phys.cases
    t = isa_state(altitude_m)[0] + np.where(np.isnan(cs.flat_rate_isa_dev_c), cs.isa_dev_c, 0.0)  # flat rated: ISA
    limit_k = T0_K * cs.throttle_ratio  # theta0 = TR
    with np.errstate(invalid="ignore"):
        return (cs.model_code == MODEL_CODES["turbofan"]) & (
            (t * ram_temperature_ratio(low) - limit_k) * (t * ram_temperature_ratio(high) - limit_k) <= 0.0)


def _within_table_cell(phys: ClimbPhysics, mach, low, high):
    """Table engines: [low, high] narrowed (in place) to the table Mach cell holding ``mach``."""
    cs = phys.cases
    for code, tid, group in phys.groups:
        if code == MODEL_CODES["table"]:
            nodes = cs.tables[tid].mach
            j = np.clip(np.searchsorted(nodes, mach[group], side="right") - 1, 0, nodes.size - 2)
            low[group] = np.maximum(low[group], nodes[j])
            high[group] = np.minimum(high[group], nodes[j + 1])


def _joint_best(phys: ClimbPhysics, mach, altitude_m, low, high, slope_per_s):
    """Best speed of the thrust ceiling by Newton steps in altitude and Mach together, for the
    cases whose excess climb rate is smooth in both; (Mach, ceiling), NaN where not settled.
    The speeds stay within [low, high]: for table engines the caller keeps these inside one
    table Mach cell (the thrust has a kink at each table Mach).

    At the best speed the excess climb rate E is zero and flat in Mach. Each step takes E at
    the altitude reached and three speeds a small step apart; the parabola through them gives
    the speed that climbs best there and that best rate, whose slope in altitude is dE/dh at
    that speed (the envelope theorem); a secant step in altitude on that best rate follows
    (Newton's method for the optimum: Nocedal & Wright, *Numerical Optimization*, 2nd ed.,
    ch. 3; central differences: ibid. ch. 8). A case is settled once both its speed and its
    altitude stop moving. The climb rate jumps at a layer base, so each case's steps stay in the
    layer it starts in: one that climbs just below the base above has a flat top there (its
    ceiling is the base, for a range of speeds), answered as the base itself; one pressed against
    the base below, and turbofans near their lapse branch change, are left to the caller.
    """
    cs = phys.cases
    n = len(cs)
    m_out, h_out = np.full(n, np.nan), np.full(n, np.nan)
    d = JOINT_MACH_STEP
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(altitude_m) & (slope_per_s < 0.0) & (high - low > 4.0 * d)
    idx = np.flatnonzero(ok)
    sub, m, h, slope = phys.subset(idx), mach[idx], altitude_m[idx], slope_per_s[idx]
    lo, hi = low[idx], high[idx]
    # The layer each case starts in, a hair inside its bases (a start on a base: the layer below,
    # where a flat top shows).
    h = np.where(_on_layer_base(h), h - 2.0 * PLATEAU_M, h)
    bases = LAYER_BASE_M[1:3]
    k = np.searchsorted(bases, h)
    floor = np.where(k > 0, bases[np.maximum(k - 1, 0)] + PLATEAU_M, -np.inf)
    ceiling = np.where(k < bases.size, bases[np.minimum(k, bases.size - 1)] - PLATEAU_M, np.inf)
    h_prev = e_prev = None
    m_prev, measured = np.full(idx.size, np.nan), np.zeros(idx.size, dtype=bool)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        for _ in range(JOINT_ITERATIONS):
            if idx.size == 0:
                break
            x = np.clip(m, lo + d, hi - d)
            e_lo, e_mid, e_hi = (sub.excess(h, x + j * d) for j in (-1.0, 0.0, 1.0))
            # Climbing just below the base above: the ceiling at that speed is the base.
            e_max = np.fmax(np.fmax(e_lo, e_mid), e_hi)
            top = np.flatnonzero((h == ceiling) & (e_max >= 0.0))
            if top.size:
                best_of_three = np.argmax(np.stack([e_lo[top], e_mid[top], e_hi[top]]), axis=0) - 1.0
                m_out[idx[top]] = x[top] + best_of_three * d
                h_out[idx[top]] = bases[np.minimum(np.searchsorted(bases, ceiling[top]), bases.size - 1)]
            grad, curv = (e_hi - e_lo) / (2.0 * d), (e_hi - 2.0 * e_mid + e_lo) / (d * d)
            # Uphill by the parabola's vertex where it is concave, else by the largest step.
            step = np.where(curv < 0.0, np.clip(-grad / curv, -JOINT_MAX_MACH_STEP, JOINT_MAX_MACH_STEP),
                            np.copysign(JOINT_MAX_MACH_STEP, grad))
            m_new = np.clip(x + step, lo, hi)
            u = m_new - x
            e_best = e_mid + grad * u + 0.5 * curv * u * u
            if h_prev is not None:
                secant = (e_best - e_prev) / (h - h_prev)
                fresh = (np.abs(h - h_prev) > 1e-3) & (secant < 0.0)
                slope, measured = np.where(fresh, secant, slope), measured | fresh
            h_new = np.clip(h - np.clip(e_best / slope, -JOINT_MAX_STEP_M, JOINT_MAX_STEP_M), floor, ceiling)
            # Settled only on a slope this search measured (one learnt elsewhere may be far off),
            # or where the best rate is so near zero that no slope could move it (a start that was
            # already the answer: the altitude never moves enough to measure one).
            settled = ((measured | (np.abs(e_best) < JOINT_RATE_TOL_MS)) & (np.abs(m_new - m_prev) < JOINT_MACH_TOL)
                       & (np.abs(h_new - h) < SEARCH_TOL_M) & (curv < 0.0))
            fail = ~np.isfinite(h_new) | (~(curv < 0.0) & (np.abs(u) < d)) | (h_new == floor)
            fail |= _turbofan_switch_between(sub, h_new, x - d, x + d)
            fail[top] = True  # answered above
            done = np.flatnonzero(settled & ~fail)
            m_out[idx[done]], h_out[idx[done]] = m_new[done], h_new[done]
            keep = np.flatnonzero(~settled & ~fail)
            if keep.size < idx.size:
                idx, sub = idx[keep], sub.subset(keep)
                m_new, h_new, h, e_best, slope, lo, hi, measured, floor, ceiling = (
                    v[keep] for v in (m_new, h_new, h, e_best, slope, lo, hi, measured, floor, ceiling))
            m_prev, h_prev, e_prev, m, h = m_new, h, e_best, m_new, h_new
    return m_out, h_out


def _best_climbing_mach(phys: ClimbPhysics, altitude_m, low=None, high=None):
    """Speed in each case's range (or in [low, high]) with the largest excess climb rate at a
    fixed altitude, and that excess (golden section: smooth in Mach at a fixed altitude)."""
    cs = phys.cases
    low, high = cs.mach_low if low is None else low, cs.mach_high if high is None else high
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        return _golden_max(lambda idx, m: _objective(phys.excess(altitude_m, m)), low, high, CLIMB_MACH_ITERATIONS)


def _above_layer_base(phys: ClimbPhysics, m_best, h_best):
    """Where the best thrust ceiling found sits on a layer base, look just above it (in place).

    The climb rate drops across a layer base (the energy-share factor changes), so over a range
    of speeds the thrust ceiling is held at the base itself: a flat top on which a search sees
    nothing. Just above the base the excess climb rate is smooth in Mach: where its best over the
    speed range still climbs, the ceiling there rises above the base.
    """
    cs = phys.cases
    base = LAYER_BASE_M[np.clip(np.searchsorted(LAYER_BASE_M, h_best + 0.5) - 1, 0, LAYER_BASE_M.size - 1)]
    with np.errstate(invalid="ignore"):
        on = np.flatnonzero((np.abs(h_best - base) < 0.5) & (base > 0.0))
    if on.size == 0:
        return
    sub, h_on = phys.subset(on), base[on]
    m_star, e_star = _best_climbing_mach(sub, h_on)
    up = np.flatnonzero(e_star > 0.0)
    if up.size:
        h_up = thrust_ceiling_m(sub.subset(up), m_star[up], h_on[up] + WARM_HALF_WIDTH_M, WARM_HALF_WIDTH_M, SEARCH_TOL_M)[0]
        better = np.flatnonzero(_objective(h_up) > h_best[on[up]])
        m_best[on[up[better]]], h_best[on[up[better]]] = m_star[up[better]], h_up[better]


def _table_mach_peaks(phys: ClimbPhysics, m_best, h_best):
    """Table engines: a peak of the thrust ceiling on a table Mach between grid speeds (in place).

    The thrust has a kink at each table Mach, and a sharp one can put a narrow peak of the
    thrust ceiling there, between grid speeds and away from the best of them. Each table Mach in
    a case's range that still climbs at the best ceiling found (one flat evaluation) is solved;
    a higher ceiling there replaces the best. Returns the cases whose ceiling at such a Mach is
    beyond the top of the thrust table.
    """
    cs = phys.cases
    n = len(cs)
    case, mach = [], []
    for code, tid, group in phys.groups:
        if code != MODEL_CODES["table"]:
            continue
        rows = np.arange(n)[group]
        machs = cs.tables[tid].mach
        with np.errstate(invalid="ignore"):
            inside = ((machs[None, :] > cs.mach_low[rows, None]) & (machs[None, :] < cs.mach_high[rows, None])
                      & np.isfinite(h_best[rows, None]))
        who, which = np.nonzero(inside)
        case.append(rows[who])
        mach.append(machs[which])
    beyond = np.zeros(n, dtype=bool)
    case, mach = np.concatenate(case or [np.zeros(0, np.intp)]), np.concatenate(mach or [np.zeros(0)])
    if case.size == 0:
        return beyond
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        higher = np.flatnonzero(phys.subset(case).excess(h_best[case], mach) >= 0.0)
    if higher.size == 0:
        return beyond
    case, mach = case[higher], mach[higher]
    h, flags = thrust_ceiling_m(phys.subset(case), mach, h_best[case] + WARM_HALF_WIDTH_M, WARM_HALF_WIDTH_M,
                                SEARCH_TOL_M)
    beyond[case[(flags & THRUST_DATA_TOP).astype(bool)]] = True
    value = _objective(h)
    order = np.lexsort((value, case))  # by case, highest ceiling last
    last = order[np.append(case[order][1:] != case[order][:-1], True)]
    better = last[value[last] > h_best[case[last]]]
    m_best[case[better]], h_best[case[better]] = mach[better], h[better]
    return beyond


def _past_table_mach_node(phys: ClimbPhysics, thrust_at, grid, values, m_best, h_best, guess, slope):
    """Table engines: the search again on the far side of the table Mach nearest the best found.

    A thrust table interpolates linearly in Mach, so the thrust ceiling has a kink at each table
    Mach and may peak on both sides of one; the search settles on one side. Where a table Mach
    lies inside the search's first bracket, the other side gets its own search (in place).
    """
    cs = phys.cases
    n, g = grid.shape
    rows = np.arange(n)
    i = np.argmax(values, axis=1)
    lo, hi = grid[rows, np.maximum(i - 1, 0)], grid[rows, np.minimum(i + 1, g - 1)]
    node = np.full(n, np.nan)
    for code, tid, group in phys.groups:
        if code == MODEL_CODES["table"]:
            machs = cs.tables[tid].mach
            x = m_best[group]
            near = machs[np.argmin(np.abs(x[:, None] - machs[None, :]), axis=1)]
            node[group] = near
    with np.errstate(invalid="ignore"):
        inside = (node > lo + BEST_MACH_TOL) & (node < hi - BEST_MACH_TOL) & np.isfinite(h_best)
    who = np.flatnonzero(inside)
    if who.size == 0:
        return
    # The best so far below the node: search above it. A best on the node itself (a search that
    # ran into the kink there) came from the cell of the best grid speed: search the other one.
    side = np.where(np.abs(m_best - node) <= BEST_MACH_TOL, grid[rows, i], m_best)
    below = side[who] < node[who]
    a = np.where(below, node[who], lo[who])
    b = np.where(below, hi[who], node[who])
    # Only where some speed of the far side still climbs at the best ceiling found (less the
    # search's tolerance: near-ties are searched) can that side do better: the excess climb rate
    # at that altitude, in one flat call, at FAR_SIDE_SPEEDS evenly spaced speeds of the side and
    # at every table Mach in it (the node included), where the excess climb rate has its kinks
    # (a narrow peak sits on one); between them it is smooth in Mach, and a peak between two of
    # these speeds shows as the vertex of the parabola through the best of them and its neighbours.
    tables = [(cs.tables[tid].mach, group) for code, tid, group in phys.groups if code == MODEL_CODES["table"]]
    k = FAR_SIDE_SPEEDS + max(machs.size for machs, _ in tables)
    probe = np.repeat(a[:, None], k, axis=1)  # (a repeated where a table has fewer Mach columns)
    probe[:, :FAR_SIDE_SPEEDS] += (b - a)[:, None] * np.linspace(0.0, 1.0, FAR_SIDE_SPEEDS)[None, :]
    for machs, group in tables:
        in_group = np.zeros(n, dtype=bool)
        in_group[group] = True
        mine = np.flatnonzero(in_group[who])
        probe[mine, FAR_SIDE_SPEEDS:FAR_SIDE_SPEEDS + machs.size] = np.clip(machs[None, :], a[mine, None], b[mine, None])
    rep = np.repeat(who, k)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        e = phys.subset(rep).excess(h_best[rep] - 2.0 * SEARCH_TOL_M, probe.ravel()).reshape(who.size, k)
    keep = np.flatnonzero((e >= 0.0).any(axis=1) | (_parabola_peak(probe, e) >= 0.0))
    if keep.size == 0:
        return
    who, a, b = who[keep], a[keep], b[keep]
    # The joint search from the side's middle (its start from the grid), Brent's for the rest.
    mid = 0.5 * (a + b)
    m_side, h_side = _joint_best(phys.subset(who), mid, guess(mid, who), a, b, slope[who])
    rest = np.flatnonzero(np.isnan(h_side))
    if rest.size:
        side = a[rest, None] + (b - a)[rest, None] * np.array([0.0, 0.5, 1.0])[None, :]
        nan = np.full(rest.size, np.nan)
        side_values = np.stack([thrust_at(who[rest], side[:, k], nan, nan) for k in range(3)], axis=1)

        def on_side(idx, m, near, spread):
            return thrust_at(who[rest[idx]], m, near, spread)

        m_side[rest], h_side[rest] = _brent_max(on_side, side, side_values, BEST_MACH_SEARCH_ITERATIONS, BEST_MACH_TOL)
    # The node itself too: a peak on the kink, which searches from either side only approach.
    h_node = thrust_at(who, node[who], h_best[who], np.full(who.size, np.nan))
    on_node = h_node > np.fmax(h_side, h_best[who])
    m_side[on_node], h_side[on_node] = node[who][on_node], h_node[on_node]
    better = np.flatnonzero(h_side > h_best[who])
    m_best[who[better]], h_best[who[better]] = m_side[better], h_side[better]


def _parabola_peak(x, f):
    """Per row of samples f(x) (any order), the vertex value of the parabola through the best
    sample and its neighbours in x (Brent's parabolic step), where that parabola peaks between
    them; -inf elsewhere. A peak between two samples rises above the best of them."""
    order = np.argsort(x, axis=1)
    x, f = np.take_along_axis(x, order, axis=1), _objective(np.take_along_axis(f, order, axis=1))
    rows = np.arange(x.shape[0])
    i = np.clip(np.argmax(f, axis=1), 1, x.shape[1] - 2)
    d0, d2 = x[rows, i - 1] - x[rows, i], x[rows, i + 1] - x[rows, i]
    f0, f1, f2 = f[rows, i - 1], f[rows, i], f[rows, i + 1]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        s0, s2 = (f0 - f1) / d0, (f2 - f1) / d2  # the two chords' slopes
        curv = 2.0 * (s2 - s0) / (d2 - d0)  # the second derivative
        rise = s0 - 0.5 * curv * d0  # the slope at the best sample
        t = -rise / curv  # the vertex, from the best sample
        return np.where((curv < 0.0) & (t > d0) & (t < d2), f1 + 0.5 * rise * t, -np.inf)


def _combined_score(phys: ClimbPhysics, mach, guess_m):
    """The maximum altitude's score at a speed per case, for a search over speeds: the thrust
    ceiling is solved only where thrust binds (elsewhere its guess stands in for the room)."""
    res = _fixed_mach(phys, mach, guess_m, thrust_needed=False)
    return _score(res, np.where(np.isposinf(res.thrust_m), guess_m, res.thrust_m))


def _resolved(phys: ClimbPhysics, base: Ceilings, rows, mach, guess_m) -> Ceilings:
    """A copy of ``base`` with the cases ``rows`` solved again at ``mach[rows]``."""
    out = base.take(np.arange(len(phys.cases)))
    if rows.size:
        out.put(rows, _fixed_mach(phys.subset(rows), mach[rows], guess_m[rows]))
    return out


def _flyable_islands(phys: ClimbPhysics, idx, final: Ceilings, m_best, guess):
    """Cases whose grid met speeds that cannot be flown: the best of a dense speed scan (in place).

    Where a VMO floor rises above the buffet or thrust ceiling, or a buffet ceiling above the top
    of the thrust table, the flyable speeds can form islands narrower than the grid's step; the
    searches around the best grid speed do not reach them. These few cases get ISLAND_SPEEDS
    fixed-Mach solves over their range and a golden-section search between the best one's
    neighbours; the best of those and the answer so far is kept.
    """
    if idx.size == 0:
        return
    cs = phys.cases
    k, r = ISLAND_SPEEDS, np.arange(idx.size)
    sub = phys.subset(idx)
    lo, hi = cs.mach_low[idx], cs.mach_high[idx]
    dense = lo[:, None] + (hi - lo)[:, None] * np.linspace(0.0, 1.0, k)[None, :]
    rep = np.repeat(r, k)
    m_flat = dense.ravel()
    scan = _fixed_mach(sub.subset(rep), m_flat, guess(m_flat, idx[rep]))
    q = np.argmax(_score(scan, scan.thrust_m).reshape(idx.size, k), axis=1)

    m_gold, _ = _golden_max(lambda i, m: _combined_score(sub, m, guess(m, idx)), dense[r, np.maximum(q - 1, 0)],
                            dense[r, np.minimum(q + 1, k - 1)], BEST_MACH_ITERATIONS)
    candidates = [dense[r, q], m_gold]
    results = [scan.take(r * k + q), _fixed_mach(sub, m_gold, guess(m_gold, idx)), final.take(idx)]
    pick = np.argmax(np.stack([_score(res, res.thrust_m) for res in results]), axis=0)
    for c, m in enumerate(candidates):
        sel = np.flatnonzero(pick == c)
        if sel.size:
            final.put(idx[sel], results[c].take(sel))
            m_best[idx[sel]] = m[sel]


def _between_grid_speeds(phys: ClimbPhysics, grid_flags, final: Ceilings, m_best):
    """Cases that cannot climb at any grid speed: the speed that climbs best at the floor (in place).

    A narrow band of speeds may climb between two grid speeds (low, heavy, hot): before such a
    case is called unable to climb, the excess climb rate at its floor is maximised over its
    speed range, and where that climbs the case is solved at that speed.
    """
    cs = phys.cases
    stuck = np.flatnonzero(np.isnan(final.max_altitude_m)
                           & (np.bitwise_and.reduce(grid_flags, axis=1) & CANNOT_CLIMB).astype(bool))
    if stuck.size == 0:
        return
    sub = phys.subset(stuck)
    m_star, e_star = _best_climbing_mach(sub, cs.floor_m[stuck])
    climbs = np.flatnonzero(e_star >= 0.0)
    if climbs.size == 0:
        return
    found = _fixed_mach(sub.subset(climbs), m_star[climbs])
    ok = np.flatnonzero(np.isfinite(found.max_altitude_m))
    final.put(stuck[climbs[ok]], found.take(ok))
    m_best[stuck[climbs[ok]]] = m_star[climbs[ok]]


def _thrust_ceiling_below(phys: ClimbPhysics, rows, mach, altitude_m):
    """Of the table-engine cases ``rows``, those whose thrust ceiling at ``mach`` lies below an
    altitude (finite, inside the thrust table): the excess climb rate is negative there and at the
    table's altitudes (and midway) above it up to where the speed flies at CLmax, so no hump of it
    rises higher (the hump check of ``thrust_ceiling_m``)."""
    cs = phys.cases
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    h = altitude_m[rows]
    with np.errstate(invalid="ignore"):
        rows = rows[np.isfinite(h) & (h >= cs.floor_m[rows]) & (h < top[rows])]
    if rows.size == 0:
        return rows
    sub = phys.subset(rows)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        e = sub.excess(altitude_m[rows], mach[rows])
    fall = np.flatnonzero(e < 0.0)  # NaN (no thrust data at this Mach) is solved as usual
    rows, sub = rows[fall], sub.subset(fall)
    if rows.size == 0:
        return rows
    return rows[~_climbs_above(sub, mach[rows], altitude_m[rows], _cl_max_altitude(phys, rows, mach, top, altitude_m))]


def _interpolated_guess(cases: CaseSet, grid_values):
    """Thrust ceiling between grid speeds, interpolated from the grid: a start for the root."""
    n, g = grid_values.shape
    rows = np.arange(n)
    span = np.where(cases.mach_high > cases.mach_low, cases.mach_high - cases.mach_low, 1.0)

    def guess(m, idx=rows):
        u = np.clip((m - cases.mach_low[idx]) / span[idx] * (g - 1), 0.0, g - 1.0)
        j = np.minimum(u.astype(np.int64), max(g - 2, 0))
        lo_v, hi_v = grid_values[idx, j], grid_values[idx, np.minimum(j + 1, g - 1)]
        with np.errstate(invalid="ignore"):  # inf - inf where a speed is above the model top
            mid = lo_v + (u - j) * (hi_v - lo_v)
        return np.where(np.isfinite(mid), mid, np.where(np.isfinite(lo_v), lo_v, hi_v))

    return guess


def thrust_ceiling_m(phys: ClimbPhysics, mach, guess_m=None, half_width_m=WARM_HALF_WIDTH_M, tol_m=ROOT_TOL_M):
    """Highest pressure altitude (m) with the required residual climb at a Mach, and flags.

    With ``guess_m`` (the answer at a nearby speed) the root is first bracketed tightly around
    it. Otherwise, or where that fails, a quick bracket: at CLmax the excess climb rate is far
    past its peak, and stepping down through fractions of CL* (L/D max) finds a level that
    climbs; the top root lies between. Cases where neither holds go through the altitude scan.
    Table engines may have several humps: a root is kept only if nothing above it climbs.
    """
    cs = phys.cases
    n = len(cs)
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    if guess_m is not None:
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            a = np.clip(guess_m - half_width_m, cs.floor_m, top)
            b = np.clip(guess_m + half_width_m, cs.floor_m, top)
            fa, fb = phys.excess(a, mach), phys.excess(b, mach)
            # The root just outside the window (both ends climb, or neither): one look further
            # that way, WARM_REACH windows wide, before falling back to the cold start.
            up = (fa >= 0.0) & (fb >= 0.0) & (b < top)
            down = (fa < 0.0) & (fb < 0.0) & (a > cs.floor_m)
            ext = np.flatnonzero(np.isfinite(guess_m) & (up | down))
            if ext.size:
                u, reach = up[ext], WARM_REACH * 2.0 * np.broadcast_to(half_width_m, (n,))[ext]
                far = np.where(u, np.minimum(b[ext] + reach, top[ext]), np.maximum(a[ext] - reach, cs.floor_m[ext]))
                f_far = (phys if ext.size == n else phys.subset(ext)).excess(far, mach[ext])
                a[ext], fa[ext], b[ext], fb[ext] = (np.where(u, b[ext], far), np.where(u, fb[ext], f_far),
                                                    np.where(u, far, a[ext]), np.where(u, f_far, fa[ext]))
        warm = np.isfinite(guess_m) & (fa >= 0.0) & (fb < 0.0) & (b > a)
        if warm.any():
            result, flags = np.full(n, np.nan), np.zeros(n, dtype=np.int32)
            cold, hot = np.flatnonzero(~warm), np.flatnonzero(warm)
            if cold.size:
                result[cold], flags[cold] = thrust_ceiling_m(phys.subset(cold), mach[cold], tol_m=tol_m)
            sub = phys if hot.size == n else phys.subset(hot)
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                result[hot] = _illinois(sub, mach[hot], a[hot], b[hot], fa[hot], fb[hot], tol=tol_m)
                # A tight window means a very close speed's answer: a higher hump cannot appear
                # from nothing over so small a step, so only wide windows get the look above.
                wide = np.broadcast_to(half_width_m, (n,))[hot] > HUMP_CHECK_HALF_WIDTH_M
                table = hot[(cs.model_code[hot] == MODEL_CODES["table"]) & wide]
                if table.size:
                    redo = table[_climbs_above(phys.subset(table), mach[table], result[table],
                                               _cl_max_altitude(phys, table, mach, top, result))]
                    if redo.size:
                        result[redo], flags[redo] = thrust_ceiling_m(phys.subset(redo), mach[redo], tol_m=tol_m)
            return result, flags
    qs = phys.qs_per_pm2 * mach * mach
    cl_star = np.sqrt(cs.cd0 / cs.k)
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        b = np.clip(pressure_altitude_m(phys.w_n / (qs * cs.cl_max)), cs.floor_m, top)
        fb = phys.excess(b, mach)
        a, fa = b.copy(), fb.copy()
        # Step down in lift coefficient until the aircraft climbs; the last level that did not
        # climb closes the bracket from above. The excess has one hump (except table engines,
        # checked below), so the root found is the top one.
        for fraction in QUICK_CL_FRACTIONS:
            open_ = np.flatnonzero(fa < 0.0)
            if open_.size == 0:
                break
            h = np.clip(pressure_altitude_m(phys.w_n[open_] / (qs[open_] * fraction * cl_star[open_])),
                        cs.floor_m[open_], top[open_])
            e = phys.subset(open_).excess(h, mach[open_]) if open_.size < n else phys.excess(h, mach)
            b[open_], fb[open_] = a[open_], fa[open_]
            a[open_], fa[open_] = h, e
    quick = (fa >= 0.0) & (fb < 0.0) & (b > a)
    result, flags = np.full(n, np.nan), np.zeros(n, dtype=np.int32)
    fast = np.flatnonzero(quick)
    if fast.size:
        sub = phys if fast.size == n else phys.subset(fast)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            result[fast] = _illinois(sub, mach[fast], a[fast], b[fast], fa[fast], fb[fast], tol=tol_m)
        # Table engines interpolate linearly between grid altitudes, so their excess climb rate
        # can have more than one hump: a case that still climbs somewhere above its root takes
        # the scan, which finds the highest root.
        table = fast[cs.model_code[fast] == MODEL_CODES["table"]]
        if table.size:
            quick[table[_climbs_above(phys.subset(table), mach[table], result[table], b[table], True)]] = False
    slow = np.flatnonzero(~quick)
    if slow.size:
        result[slow], flags[slow] = _scanned_thrust_ceiling_m(phys.subset(slow), mach[slow], tol_m)
    return result, flags


def _cl_max_altitude(phys: ClimbPhysics, rows, mach, top, root):
    """The top of the table-engine hump check for the cases ``rows``: the altitude where the
    Mach flies at CLmax (far past the excess peak), within the thrust data, not below the root."""
    cs = phys.cases
    qs = phys.qs_per_pm2[rows] * mach[rows] ** 2
    at_cl_max = pressure_altitude_m(phys.w_n[rows] / (qs * cs.cl_max[rows]))
    return np.maximum(np.clip(at_cl_max, cs.floor_m[rows], top[rows]), root[rows])


TABLE_PROBES = 8
MAY_CLIMB_MARGIN_MS = 1e-9  # rounding between the two evaluations of the climb rate


def _climbs_above(phys: ClimbPhysics, mach, root_m, top_m, top_known=False):
    """Whether each table-engine case climbs at a table altitude (or midway) between root and top.

    Up to TABLE_PROBES such altitudes per case, and the top itself unless ``top_known`` (the
    caller has seen it not climb). Most probes above a thrust ceiling fall short of the required
    climb rate even without wave drag (which only lowers it): that climb rate, from the table's
    own values at its altitudes and the atmosphere there, costs a few products per probe; only
    the probes it leaves, and the top, get the full excess climb rate, as one flat set.
    """
    cs = phys.cases
    out = np.zeros(len(cs), dtype=bool)
    for code, tid, group in phys.groups:
        if code != MODEL_CODES["table"]:
            continue
        rows = np.arange(len(cs))[group]
        table = cs.tables[tid]
        points_ft, fraction = table.probe_points()
        points = points_ft * FT
        root, top = root_m[rows], top_m[rows]
        pick = np.searchsorted(points, root + 1.0, side="left")[:, None] + np.arange(TABLE_PROBES)[None, :]
        k = np.minimum(pick, points.size - 1)
        who, which = np.nonzero((pick < points.size) & (points[k] < top[:, None]))
        if who.size:
            # The climb rate without wave drag at those probes (the climb equation of ClimbPhysics).
            case, node, m = rows[who], k[who, which], mach[rows[who]]
            j, ty = table.mach_terms(m)
            at = node * fraction.shape[1] + j
            thrust = fraction.ravel()[at] * (1.0 - ty) + fraction.ravel()[at + 1] * ty
            thrust *= phys.thrust_n[case]
            t_isa, p, lapse = (x[node] for x in isa_state(points))
            q_s = phys.qs_per_pm2[case] * m * m * p
            w = phys.w_n[case]
            thrust -= q_s * cs.cd0[case] + cs.k[case] * w * w / q_s
            t = t_isa + cs.isa_dev_c[case]
            rate = thrust * (m * speed_of_sound_ms(t) / w) * pressure_climb_factor(m, t, t_isa, lapse)
            with np.errstate(invalid="ignore"):
                keep = ~(rate < cs.climb_ms[case] - MAY_CLIMB_MARGIN_MS)  # NaN (no data): evaluated
            who, which = who[keep], which[keep]
        probes = points[k]
        if not top_known:
            tops = np.flatnonzero(top > root + 1.0)
            who, which = np.concatenate([who, tops]), np.concatenate([which, np.full(tops.size, TABLE_PROBES)])
            probes = np.hstack([probes, top[:, None]])
        if who.size == 0:
            continue
        sub = phys.subset(rows[who])
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            climbs = sub.excess(probes[who, which], mach[rows[who]]) >= 0.0
        out[rows[who[climbs]]] = True
    return out


def _scanned_thrust_ceiling_m(phys: ClimbPhysics, mach, tol_m=ROOT_TOL_M):
    """Thrust ceiling bracketed by a coarse scan of altitudes (robust, slower)."""
    cs = phys.cases
    n = len(cs)
    flags = np.zeros(n, dtype=np.int32)
    top = np.minimum(cs.top_m, MODEL_TOP_M)
    levels = np.clip(SCAN_LEVELS_M[None, :], cs.floor_m[:, None], top[:, None])
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        e = phys.excess(levels, mach)
    unknown = np.isnan(e).all(axis=1)
    flags[unknown] |= THRUST_DATA_MACH
    ok = e >= 0.0
    any_ok = ok.any(axis=1)
    last = levels.shape[1] - 1
    j = last - np.argmax(ok[:, ::-1], axis=1)
    rows = np.arange(n)
    a, fa = levels[rows, j], e[rows, j]

    # No scan level climbs: look for a narrow window around the best level before giving up.
    rescue = np.flatnonzero(~any_ok & ~unknown)
    if rescue.size:
        e_r = _objective(e[rescue])
        jm = np.argmax(e_r, axis=1)
        around = np.clip(jm[:, None] + np.arange(-1, 2)[None, :], 0, last)  # the best level and its neighbours
        r = np.arange(rescue.size)[:, None]
        sub = phys.subset(rescue)
        m_sub = mach[rescue]
        peak_h, peak_e = _brent_max(lambda i, x, guess, spread: _objective(sub.subset(i).excess(x, m_sub[i])),
                                    levels[rescue][r, around], e_r[r, around], RESCUE_ITERATIONS, RESCUE_TOL_M)
        found = (peak_e >= 0.0) & (jm < last)
        fix = rescue[found]
        any_ok[fix] = True
        j[fix] = jm[found]  # the level above the peak does not climb
        a[fix], fa[fix] = peak_h[found], peak_e[found]

    result = np.full(n, np.nan)
    at_top = any_ok & (j == last)
    result[at_top & (cs.top_m >= MODEL_TOP_M)] = np.inf
    table_top = at_top & (cs.top_m < MODEL_TOP_M)
    flags[table_top] |= THRUST_DATA_TOP
    flags[~any_ok & ~unknown] |= CANNOT_CLIMB
    solve = np.flatnonzero(any_ok & ~at_top)
    if solve.size:
        b, fb = levels[solve, j[solve] + 1], e[solve, j[solve] + 1]
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            root = _illinois(phys.subset(solve), mach[solve], a[solve], b, fa[solve], fb, tol=tol_m)
        result[solve] = root
    return result, flags


def buffet_cl_at(cases: CaseSet, mach):
    """1 g buffet-onset CL per case (NaN where the variant has no data at that Mach)."""
    bid = cases.buffet_id
    has = bid >= 0
    cl = np.full(mach.shape, np.nan)
    if has.any() and cases.buffet_key.size:
        safe = np.where(has, bid, 0)
        inside = has & (mach >= cases.buffet_low[safe]) & (mach <= cases.buffet_high[safe])
        key = mach + 10.0 * safe
        cl = np.where(inside, np.interp(key, cases.buffet_key, cases.buffet_cl), np.nan)
    return cl


def buffet_peak_mach(cases: CaseSet, low, high):
    """Mach in [low, high] per case where M^2 CL_buffet(M) peaks: the speed of the highest buffet
    ceiling, since n W = (gamma/2) p M^2 S CL_buffet (Anderson, *Introduction to Flight*, eq. 4.83).

    Closed form: on each segment of the (piecewise linear) boundary CL_b = c + s M, and
    d/dM [M^2 (c + s M)] = 0 at M = -2c / (3s); the peak is there, at a node or at an end of the
    range. NaN where the case has no buffet data, or none in its range.
    """
    out = np.full(len(cases), np.nan)
    bid = cases.buffet_id
    for i in np.flatnonzero(np.bincount(bid[bid >= 0])):  # (np.unique costs more)
        rows = np.flatnonzero(bid == i)
        node = (cases.buffet_key >= 10.0 * i) & (cases.buffet_key < 10.0 * (i + 1))
        m, cl = cases.buffet_key[node] - 10.0 * i, cases.buffet_cl[node]
        slope = np.diff(cl) / np.diff(m)
        with np.errstate(divide="ignore", invalid="ignore"):
            turn = -2.0 * (cl[:-1] - slope * m[:-1]) / (3.0 * slope)
        turn = turn[(slope < 0.0) & (turn > m[:-1]) & (turn < m[1:])]
        lo = np.maximum(np.broadcast_to(low, (len(cases),))[rows], m[0])[:, None]
        hi = np.minimum(np.broadcast_to(high, (len(cases),))[rows], m[-1])[:, None]
        candidates = np.hstack([np.clip(np.concatenate([m, turn])[None, :], lo, hi), lo, hi])
        capacity = candidates * candidates * np.interp(candidates, m, cl)
        peak = candidates[np.arange(rows.size), np.argmax(capacity, axis=1)]
        out[rows] = np.where(lo[:, 0] <= hi[:, 0], peak, np.nan)  # no buffet data in the range: NaN
    return out


def buffet_nodes_around(cases: CaseSet, mach):
    """The buffet boundary's Mach points either side of ``mach`` per case (strictly below and
    above; ``mach`` itself past the ends, and where the case has no buffet data)."""
    low, high = np.array(mach, dtype=float), np.array(mach, dtype=float)
    bid = cases.buffet_id
    for i in np.flatnonzero(np.bincount(bid[bid >= 0])):
        rows = np.flatnonzero(bid == i)
        node = (cases.buffet_key >= 10.0 * i) & (cases.buffet_key < 10.0 * (i + 1))
        m = cases.buffet_key[node] - 10.0 * i
        below = np.searchsorted(m, low[rows], side="left") - 1
        above = np.searchsorted(m, high[rows], side="right")
        low[rows] = np.where(below >= 0, m[np.maximum(below, 0)], low[rows])
        high[rows] = np.where(above < m.size, m[np.minimum(above, m.size - 1)], high[rows])
    return low, high


def buffet_ceiling_m(cases: CaseSet, mach):
    """Buffet-onset ceiling (m) at the case's load-factor margin: the pressure at which
    g_margin W = (gamma/2) p M^2 S CL_buffet (Anderson, *Introduction to Flight*, eq. 4.83).
    +inf where the variant has no buffet data, NaN where it has none at this Mach."""
    qs_per_p = 0.5 * GAMMA * mach * mach * cases.wing_area_m2
    with np.errstate(invalid="ignore", divide="ignore"):
        p = cases.g_margin * (cases.weight_kg * G0) / (qs_per_p * buffet_cl_at(cases, mach))
        return np.where(cases.buffet_id >= 0, pressure_altitude_m(p), np.inf)


def closed_form_ceilings_m(cases: CaseSet, mach):
    """Buffet, stall, cabin ceilings and the VMO floor (m) at a Mach; pressure-based closed forms.

    Lift equilibrium n W = (gamma/2) p M^2 S CL gives the lowest pressure at which CL stays within
    its limit (Anderson, *Introduction to Flight*, eq. 4.83). The cabin ceiling does not depend on
    the Mach: it comes with the cases.
    """
    w = cases.weight_kg * G0
    qs_per_p = 0.5 * GAMMA * mach * mach * cases.wing_area_m2
    with np.errstate(invalid="ignore", divide="ignore"):
        stall = pressure_altitude_m(w / (qs_per_p * cases.cl_max))
        vmo_floor = np.where(np.isnan(cases.vmo_ms), -np.inf,
                             pressure_altitude_m(pressure_for_cas_at_mach_pa(cases.vmo_ms, mach)))
    return buffet_ceiling_m(cases, mach), stall, cases.cabin_m.copy(), vmo_floor


def _fixed_mach(phys: ClimbPhysics, mach, thrust_guess_m=None, thrust_needed=True,
                guess_half_width_m=WARM_HALF_WIDTH_M, tol_m=ROOT_TOL_M) -> Ceilings:
    """Every limit at a fixed Mach per case, and the maximum altitude where all are met.

    With ``thrust_needed=False`` (only the maximum altitude is wanted) the thrust root is not
    sought where thrust still climbs at the lowest of the other limits: its ceiling is then
    reported as +inf (not computed) and does not bind.
    """
    cs = phys.cases
    buffet, stall, cabin, vmo_floor = closed_form_ceilings_m(cs, mach)
    skipped = np.zeros(len(cs), dtype=bool)
    if thrust_needed:
        thrust, flags = thrust_ceiling_m(phys, mach, thrust_guess_m, guess_half_width_m, tol_m)
    else:
        other = np.fmin(np.fmin(np.where(np.isnan(buffet), np.inf, buffet), stall), np.fmin(cs.certified_m, cabin))
        inside = np.isfinite(other) & (other >= cs.floor_m) & (other <= np.minimum(cs.top_m, MODEL_TOP_M))
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            skipped = inside & (phys.excess(np.where(inside, other, 0.0), mach) >= 0.0)
        thrust, flags = np.full(len(cs), np.inf), np.zeros(len(cs), dtype=np.int32)
        todo = np.flatnonzero(~skipped)
        if todo.size:
            sub = phys if todo.size == len(cs) else phys.subset(todo)
            guess = None if thrust_guess_m is None else thrust_guess_m[todo]
            thrust[todo], flags[todo] = thrust_ceiling_m(sub, mach[todo], guess, tol_m=tol_m)
    # Buffet data that stop short of this Mach: the buffet limit cannot be checked, so no maximum
    # altitude either (as a thrust table's Mach gap); NaN in the stack makes the minimum NaN.
    flags[(cs.buffet_id >= 0) & np.isnan(buffet)] |= NO_BUFFET_AT_MACH
    # A ceiling beyond the thrust table is unknown; the other limits may still bind below its top.
    thrust_for_min = np.where(flags & THRUST_DATA_TOP, np.inf, thrust)
    stack = np.stack([thrust_for_min, buffet, stall, cs.certified_m, cabin])
    with np.errstate(invalid="ignore"):
        max_alt = stack.min(axis=0)
        limit = np.where(np.isnan(max_alt) | np.isinf(max_alt), -1, np.argmin(np.where(np.isnan(stack), np.inf, stack), axis=0))
        over_table = (flags & THRUST_DATA_TOP).astype(bool) & (max_alt > cs.top_m)
        max_alt[over_table] = np.nan
        limit[over_table] = -1
        flags[np.isposinf(max_alt)] |= ABOVE_MODEL_TOP
        bad_mmo = ~np.isnan(cs.mmo) & (mach > cs.mmo + 1e-9)
        flags[bad_mmo] |= ABOVE_MMO
        bad_vmo = max_alt < vmo_floor
        flags[bad_vmo] |= BELOW_VMO_FLOOR
        low = max_alt < cs.floor_m  # -2,000 ft, or the lowest altitude of the thrust table
        flags[low] |= BELOW_FLOOR
    # Thrust may only work above the other limits' ceiling (high speed at low level): check there.
    check = np.flatnonzero(np.isfinite(max_alt) & (limit > 0) & ~bad_vmo & ~low & ~bad_mmo & ~skipped)
    if check.size:
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            e = phys.subset(check).excess(max_alt[check], mach[check])
        flags[check[~(e >= 0.0)]] |= NO_COMMON_ALTITUDE  # NaN (no thrust data there) fails too
    dead = (flags & (ABOVE_MMO | BELOW_VMO_FLOOR | NO_COMMON_ALTITUDE | BELOW_FLOOR)).astype(bool)
    max_alt[dead] = np.nan
    limit[dead | np.isnan(max_alt)] = -1
    with np.errstate(invalid="ignore"):
        others = np.where(np.isnan(stack), np.inf, stack)
        others[limit.clip(0), np.arange(len(cs))] = np.inf
        co = np.where((limit >= 0) & (others.min(axis=0) - max_alt <= CO_LIMIT_M), np.argmin(others, axis=0), -1)
    return Ceilings(thrust, buffet, stall, cs.certified_m.copy(), cabin, max_alt, np.asarray(mach, dtype=float).copy(),
                    limit.astype(np.int8), flags, vmo_floor, co.astype(np.int8))


def _objective(values):
    """Altitudes for maximisation: unavailable counts as -inf, above the model top as +inf."""
    return np.where(np.isnan(values), -np.inf, values)


def _blank_ceilings(n: int, mach) -> Ceilings:
    """Ceilings of cases not solved at a speed: nothing known (NaN), no flags."""
    nan = np.full(n, np.nan)
    return Ceilings(nan.copy(), nan.copy(), nan.copy(), nan.copy(), nan.copy(), nan.copy(), np.array(mach, float),
                    np.full(n, -1, np.int8), np.zeros(n, np.int32), np.full(n, -np.inf), np.full(n, -1, np.int8))


def _score(res: Ceilings, thrust_m):
    """Highest altitude first; where a flat limit (certified, cabin) makes many speeds equal,
    prefer the speed with the most room under the aerodynamic and thrust limits."""
    room = np.fmin(np.fmin(thrust_m, res.buffet_m), res.stall_m)
    return _objective(res.max_altitude_m) + 1e-3 * np.where(np.isfinite(room), room, 0.0)


def _grid_sweeps(phys: ClimbPhysics, grid) -> list[Ceilings]:
    """Every limit at the grid's speeds (``grid``: cases x BEST_MACH_GRID, slowest first), one
    ``Ceilings`` per speed; speeds that cannot beat the best maximum altitude found are left
    unsolved (their thrust ceiling NaN, the closed forms kept).

    Two sweeps from GRID_START, a middle speed where nearly every case climbs: towards the
    fastest, then from the middle towards the slowest. Each root is started from the line
    through the sweep's previous two, in a window as wide as their step. Past a fall of its
    thrust ceiling along a sweep (more than FALL_M below the sweep's peak: a flat top at a layer
    base scatters by 1e-6 m) a case's thrust ceiling is taken to keep falling that way (one hump);
    so is one that rose from the middle to the next faster speed, on the slow sweep. No further
    speed of the sweep can then beat the best maximum altitude found where the last thrust
    ceiling, or that speed's other limits (closed forms), are no higher: it is not solved. Not
    for table engines, whose thrust ceiling can rise again after a dip in a table's Mach
    columns: past a fall they are checked at each speed (``_thrust_ceiling_below``), one
    evaluation and the hump-check probes where a solve takes five or more.
    """
    cs = phys.cases
    n, g = grid.shape
    columns = [None] * g
    best_max = np.full(n, -np.inf)
    smooth = cs.model_code != MODEL_CODES["table"]
    start = min(GRID_START, g - 1)
    for sweep in (range(start, g), range(start - 1, -1, -1)):
        if len(sweep) == 0:
            continue
        fell = np.zeros(n, dtype=bool)
        if sweep[0] == start:
            guess, half, last, before = None, WARM_HALF_WIDTH_M, None, None
            peak, latest = np.full(n, -np.inf), np.full(n, np.inf)
        else:
            # Back from the middle, started from the line through the middle and the next faster
            # speed; a ceiling that rose from the middle to the next faster speed falls this way.
            last = columns[start].thrust_m
            peak = latest = _objective(last)
            before = columns[start + 1].thrust_m if start + 1 < g else None
            guess, half = _next_guess(last, before)
            if before is not None:
                fell = _objective(before) > peak + FALL_M
        for j in sweep:
            mach_j = np.ascontiguousarray(grid[:, j])
            skip = np.zeros(n, dtype=bool)
            past = fell & smooth
            closed = None
            if past.any():
                closed = closed_form_ceilings_m(cs, mach_j)
                buffet_j, stall_j, cabin_j, _ = closed
                others = np.fmin(np.fmin(np.where(np.isnan(buffet_j), np.inf, buffet_j), stall_j),
                                 np.fmin(cs.certified_m, cabin_j))
                skip = past & ((latest <= best_max) | (others <= best_max))
            screen = np.flatnonzero(fell & ~smooth)
            if screen.size:
                skip[_thrust_ceiling_below(phys, screen, mach_j, best_max)] = True
            live = np.flatnonzero(~skip)
            if live.size == n:
                columns[j] = _fixed_mach(phys, mach_j, guess, guess_half_width_m=half, tol_m=GRID_TOL_M)
            else:
                columns[j] = _blank_ceilings(n, mach_j)
                # The closed forms cost little: keep them for every speed (buffet's own best speed).
                buffet_j, stall_j, cabin_j, _ = closed or closed_form_ceilings_m(cs, mach_j)
                columns[j].buffet_m[:], columns[j].stall_m[:], columns[j].cabin_m[:] = buffet_j, stall_j, cabin_j
                if live.size:
                    pick = (lambda x, live=live: None if x is None else (x[live] if np.ndim(x) else x))  # noqa: E731
                    columns[j].put(live, _fixed_mach(phys.subset(live), mach_j[live], pick(guess),
                                                     guess_half_width_m=pick(half), tol_m=GRID_TOL_M))
            found = columns[j].thrust_m
            value = _objective(found)
            fell |= value < peak - FALL_M
            latest = np.where(skip, latest, value)
            best_max = np.maximum(best_max, _objective(columns[j].max_altitude_m))
            peak = np.maximum(peak, value)
            before, last = last, (found if last is None else np.where(np.isfinite(found), found, last))
            guess, half = _next_guess(last, before)
    return columns


def _next_guess(last, before):
    """A grid speed's thrust-ceiling guess and window half-width from the sweep's previous two
    speeds' (``before`` None: only one so far, a wide window around it): the line through them,
    in a window as wide as their step."""
    if before is None:
        return last, FIRST_STEP_HALF_WIDTH_M
    step = np.where(np.isfinite(last - before), last - before, 0.0)
    return last + step, np.maximum(WARM_HALF_WIDTH_M, np.abs(step))


def _best_speed(phys: ClimbPhysics) -> Ceilings:
    """Best speed per case: the Mach at which the feasible band closes highest.

    1. The limits on a grid of speeds (``_grid_sweeps``: outwards from a middle speed, each
       thrust root started from the previous speeds'; speeds that cannot do better not solved).
    2. The thrust ceiling's own best speed from the best grid speed: by Newton steps in altitude
       and Mach together (``_joint_best``) where the excess climb rate is smooth, else by Brent's
       search, whose roots take Newton steps with a slope learnt on the first (they move little
       between its speeds). Table engines: the other side of the nearest table Mach as well.
    3. Where thrust, the certified or the cabin ceiling binds there, no speed does better (each is
       an upper bound of the maximum altitude at every speed): done; so where the buffet ceiling
       binds at its own best speed. Elsewhere (buffet or stall binding, the coffin corner) a
       golden-section search on the combined maximum altitude.
    """
    cs = phys.cases
    n, g = len(cs), BEST_MACH_GRID
    grid = cs.mach_low[:, None] + (cs.mach_high - cs.mach_low)[:, None] * np.linspace(0.0, 1.0, g)[None, :]
    columns = _grid_sweeps(phys, grid)
    at_grid = {k: np.stack([getattr(c, k) for c in columns], axis=1) for k in Ceilings.__dataclass_fields__}
    thrust_grid = at_grid["thrust_m"]
    guess_all = _interpolated_guess(cs, thrust_grid)

    values = _objective(thrust_grid)
    rows = np.arange(n)
    i_best = np.argmax(values, axis=1)
    m_grid, h_grid = grid[rows, i_best], thrust_grid[rows, i_best]
    # d(excess)/dh at each case's thrust ceiling (1/s), taken at the best grid speed: it changes
    # little over the searches' steps in speed (and they measure their own as they go).
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        slope = phys.excess(h_grid + SLOPE_STEP_M, m_grid) / SLOPE_STEP_M

    def thrust_at(idx, m, near, spread):
        sub = phys if idx.size == n else phys.subset(idx)
        out = np.full(idx.size, np.nan)
        with np.errstate(invalid="ignore"):
            # Not next to a layer base, where the climb rate jumps (and the slope learnt may be the
            # other layer's).
            base = np.abs(near[:, None] - LAYER_BASE_M[None, 1:3]).min(axis=1)
            close = np.isfinite(near) & np.isfinite(slope[idx]) & (base > LAYER_GUARD_M)
        # Near a known root: Newton steps from the guess with the learnt slope (see _newton_root).
        qi = np.flatnonzero(close)
        if qi.size:
            root, ok, new_slope = _newton_root(sub if qi.size == idx.size else sub.subset(qi), m[qi], near[qi],
                                               slope[idx[qi]])
            out[qi[ok]] = root[ok]
            slope[idx[qi]] = new_slope
            close[qi[~ok]] = False
        rest = np.flatnonzero(~close)
        if rest.size:
            part = sub if rest.size == idx.size else sub.subset(rest)
            near_r, spread_r, m_r = near[rest], spread[rest], m[rest]
            ok = np.isfinite(near_r)
            start = np.where(ok, near_r, guess_all(m_r, idx[rest]))
            half = np.clip(np.where(ok & np.isfinite(spread_r), 0.5 * spread_r, WARM_HALF_WIDTH_M), SEARCH_MIN_HALF_WIDTH_M,
                           2000.0)
            root = thrust_ceiling_m(part, m_r, start, half, SEARCH_TOL_M)[0]
            out[rest] = root
            learn = np.flatnonzero(np.isfinite(root) & np.isnan(slope[idx[rest]]))
            if learn.size:
                with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                    up = part.subset(learn).excess(root[learn] + SLOPE_STEP_M, m_r[learn])
                slope[idx[rest[learn]]] = up / SLOPE_STEP_M
        return _objective(out)

    # Smooth cases: the joint search from the best grid speed, inside its neighbours; the rest
    # (and any it leaves at a neighbour, which cannot be a maximum) by Brent's search.
    lo_b, hi_b = grid[rows, np.maximum(i_best - 1, 0)], grid[rows, np.minimum(i_best + 1, g - 1)]
    _within_table_cell(phys, m_grid, lo_b, hi_b)
    m_thrust, searched = _joint_best(phys, m_grid, h_grid, lo_b, hi_b, slope)
    with np.errstate(invalid="ignore"):
        inside = ((m_thrust > lo_b) | (lo_b <= cs.mach_low)) & ((m_thrust < hi_b) | (hi_b >= cs.mach_high))
        searched[~inside | (searched < h_grid - GRID_TOL_M)] = np.nan
    # A ceiling held at a layer base over a range of speeds (a flat top: the climb rate drops
    # across the base) gives a search nothing to find below it; _above_layer_base looks above.
    plateau = np.isnan(searched) & _on_layer_base(h_grid)
    m_thrust[plateau], searched[plateau] = m_grid[plateau], h_grid[plateau]
    rest = np.flatnonzero(np.isnan(searched))
    if rest.size:
        m_thrust[rest], searched[rest] = _brent_max(lambda i, m, near, spread: thrust_at(rest[i], m, near, spread),
                                                    grid[rest], values[rest], BEST_MACH_SEARCH_ITERATIONS, BEST_MACH_TOL)
    beyond_table = _table_mach_peaks(phys, m_thrust, searched)
    _past_table_mach_node(phys, thrust_at, grid, values, m_thrust, searched, guess_all, slope)
    _above_layer_base(phys, m_thrust, searched)  # after the far side, which may end on a flat top too
    # The search's root at its best speed is within SEARCH_TOL_M: a window that wide settles it
    # to ROOT_TOL_M.
    known = np.isfinite(searched)
    # On a flat top the root is the layer base itself (to 1e-6 m, as _split_at_layer_base gives
    # it): a window that wide just below it. (In a window across the base the regula falsi,
    # whose secant sees the jump there as a steep slope, may stop a few cm short.)
    flat = known & _on_layer_base(searched)
    below_base = np.where(np.abs(searched - LAYER_BASE_M[1]) <= PLATEAU_M, LAYER_BASE_M[1], LAYER_BASE_M[2]) - 0.5e-6
    final = _fixed_mach(phys, m_thrust, np.where(flat, below_base, np.where(known, searched, guess_all(m_thrust))),
                        guess_half_width_m=np.where(flat, 0.5e-6, np.where(known, 4.0 * SEARCH_TOL_M, WARM_HALF_WIDTH_M)))
    thrust_best = _objective(final.thrust_m)  # to the full tolerance (the search's roots are looser)
    m_best = m_thrust.copy()

    grid_res = Ceilings(**{k: v.ravel() for k, v in at_grid.items()})
    grid_score = _score(grid_res, grid_res.thrust_m).reshape(n, g)
    m_buffet = buffet_peak_mach(cs, cs.mach_low, cs.mach_high)
    # Thrust bounds the maximum altitude at every speed only where its ceiling is known at every
    # speed: not where a speed still climbs at the top of the thrust table (its ceiling lies
    # beyond the data, maybe higher than the best found).
    grid_flags = np.bitwise_or.reduce(at_grid["flags"], axis=1)
    grid_flags[beyond_table] |= THRUST_DATA_TOP
    done = np.isfinite(final.max_altitude_m) & np.isin(final.limit, (0, 3, 4))
    done &= ~((final.limit == LIMITS.index("thrust")) & (grid_flags & THRUST_DATA_TOP).astype(bool))
    todo = np.flatnonzero(~done)
    if todo.size:
        sub = phys.subset(todo)
        guess_sub = _interpolated_guess(sub.cases, thrust_grid[todo])
        gs = grid_score[todo]
        i = np.argmax(gs, axis=1)
        sg = grid[todo]
        r = np.arange(todo.size)
        lo, hi = sg[r, np.maximum(i - 1, 0)], sg[r, np.minimum(i + 1, g - 1)]
        # A narrow peak of the buffet boundary can lie between grid speeds: where the buffet
        # ceiling's own best speed beats the best grid speed, a second search goes around it,
        # between the boundary's points either side (where the buffet ceiling is smooth). So can
        # the thrust ceiling's (a kink at a table Mach): where the thrust-best speed lies outside
        # the first bracket, a third goes around it, a grid step either side. All run as one (on
        # repeated cases), sharing their calls.
        m_peak = np.where(np.isfinite(m_buffet[todo]), m_buffet[todo], sg[r, i])
        at_peak = _fixed_mach(sub, m_peak, guess_sub(m_peak))
        # Where the buffet ceiling binds at its own best speed, no speed goes higher (the buffet
        # ceiling bounds the maximum altitude at every speed): no search.
        open_ = ~(np.isfinite(m_buffet[todo]) & (at_peak.limit == LIMITS.index("buffet"))
                  & np.isfinite(at_peak.max_altitude_m))
        go = np.flatnonzero(open_)
        around = np.flatnonzero((_score(at_peak, at_peak.thrust_m) > gs[r, i]) & open_)
        peak_lo, peak_hi = buffet_nodes_around(sub.cases, m_peak)
        m_t = m_thrust[todo]
        step = (sg[:, -1] - sg[:, 0]) / (g - 1)
        apart = np.flatnonzero(np.isfinite(m_t) & ((m_t < lo) | (m_t > hi)) & open_)
        rows2 = np.concatenate([go, around, apart])
        m_gold = m_peak.copy()  # the buffet peak where there is no search
        m_near_peak, m_near_thrust = m_peak.copy(), m_gold.copy()
        if rows2.size:
            sub2 = sub if rows2.size == todo.size else sub.subset(rows2)
            m_all, _ = _golden_max(lambda idx, m: _combined_score(sub2, m, guess_sub(m, rows2)),
                                   np.concatenate([lo[go], np.maximum(peak_lo, sg[:, 0])[around],
                                                   np.maximum(m_t - step, sg[:, 0])[apart]]),
                                   np.concatenate([hi[go], np.minimum(peak_hi, sg[:, -1])[around],
                                                   np.minimum(m_t + step, sg[:, -1])[apart]]), BEST_MACH_ITERATIONS)
            m_gold[go] = m_all[:go.size]
            m_near_thrust = m_gold.copy()
            m_near_peak[around] = m_all[go.size:go.size + around.size]
            m_near_thrust[apart] = m_all[go.size + around.size:]
        # The best of: the searches, the best grid speed, the buffet ceiling's best speed, the
        # thrust-best speed.
        candidates = [m_gold, sg[r, i], m_peak, m_near_peak, m_near_thrust, m_t]
        results = [_resolved(sub, at_peak, go, m_gold, guess_sub(m_gold)), _fixed_mach(sub, sg[r, i], guess_sub(sg[r, i])),
                   at_peak]
        results += [_resolved(sub, at_peak, around, m_near_peak, guess_sub(m_near_peak)),
                    _resolved(sub, results[0], apart, m_near_thrust, guess_sub(m_near_thrust)), final.take(todo)]
        scores = np.stack([_score(res, res.thrust_m) for res in results])
        pick = np.argmax(scores, axis=0)
        for k, (m, res) in enumerate(zip(candidates, results)):
            sel = np.flatnonzero(pick == k)
            if sel.size:
                m_best[todo[sel]] = m[sel]
                final.put(todo[sel], res.take(sel))

    # Speeds that cannot be flown among the grid's (or no answer): there may be islands.
    unflyable = (at_grid["flags"] & (ABOVE_MMO | BELOW_VMO_FLOOR | NO_COMMON_ALTITUDE | BELOW_FLOOR | THRUST_DATA_TOP))
    suspect = np.zeros(n, dtype=bool)
    suspect[todo] = unflyable[todo].any(axis=1) | np.isnan(final.max_altitude_m[todo])
    _flyable_islands(phys, np.flatnonzero(suspect), final, m_best, guess_all)
    _between_grid_speeds(phys, at_grid["flags"], final, m_best)
    thrust_best = np.maximum(thrust_best, _objective(final.thrust_m))

    buffet_best = np.maximum.reduce([_objective(buffet_ceiling_m(cs, m_buffet)),
                                     _objective(at_grid["buffet_m"]).max(axis=1), _objective(final.buffet_m)])
    stall_best = closed_form_ceilings_m(cs, cs.mach_high)[1]

    # A best just under the top of the thrust table may lie beside speeds between the grid's
    # that still climb there: where the best climb rate at the table top over the speeds within
    # a grid step is not negative, the grid missed a speed beyond the data.
    with np.errstate(invalid="ignore"):
        look = np.flatnonzero(np.isfinite(thrust_best) & (cs.top_m - thrust_best < TABLE_TOP_LOOK_M)
                              & (cs.top_m < MODEL_TOP_M) & ~(grid_flags & THRUST_DATA_TOP).astype(bool))
    if look.size:
        step = (cs.mach_high - cs.mach_low)[look] / (g - 1)
        lo, hi = np.maximum(m_thrust[look] - step, cs.mach_low[look]), np.minimum(m_thrust[look] + step, cs.mach_high[look])
        e_top = _best_climbing_mach(phys.subset(look), cs.top_m[look], lo, hi)[1]
        grid_flags[look[e_top >= 0.0]] |= THRUST_DATA_TOP
    # Where some speed still climbs at the top of the thrust table, the best-speed thrust
    # ceiling lies beyond the data: unknown, not the best of the other speeds.
    thrust_best[(grid_flags & THRUST_DATA_TOP).astype(bool)] = np.nan
    flags = final.flags.copy()
    nothing = np.isnan(final.max_altitude_m)
    # Explain a case no speed can fly by what every grid speed ran into.
    flags[nothing] |= np.bitwise_and.reduce(at_grid["flags"], axis=1)[nothing]
    flags[(grid_flags & THRUST_DATA_TOP).astype(bool)] |= THRUST_DATA_TOP
    unavailable = lambda v: np.where(np.isneginf(v), np.nan, v)  # noqa: E731
    return Ceilings(unavailable(thrust_best), np.where(cs.buffet_id >= 0, unavailable(buffet_best), np.inf),
                    stall_best, final.certified_m, final.cabin_m, final.max_altitude_m, m_best,
                    final.limit, flags, final.vmo_floor_m, final.co_limit)


_GROUP_BASE = 1_000_000


def _group_key(cases: CaseSet) -> np.ndarray:
    """Thrust-model group of each case: model code, and the table for table engines."""
    return cases.model_code * _GROUP_BASE + np.where(cases.model_code == MODEL_CODES["table"], cases.table_id + 1, 0)


def _solve_chunk(part: CaseSet) -> Ceilings:
    key = _group_key(part)
    if np.any(key[1:] < key[:-1]):
        order = np.argsort(key, kind="stable")
        solved = _solve_sorted_chunk(part.take(order))
        return solved.take(np.argsort(order))
    return _solve_sorted_chunk(part)


def _solve_sorted_chunk(part: CaseSet) -> Ceilings:
    best = np.isnan(part.mach)
    if best.all():
        return _best_speed(ClimbPhysics(part))
    if not best.any():
        return _fixed_mach(ClimbPhysics(part), part.mach)
    fixed_idx, best_idx = np.flatnonzero(~best), np.flatnonzero(best)
    a = _fixed_mach(ClimbPhysics(part.take(fixed_idx)), part.mach[fixed_idx])
    b = _best_speed(ClimbPhysics(part.take(best_idx)))
    order = np.argsort(np.concatenate([fixed_idx, best_idx]))
    merged = Ceilings.concat([a, b])
    return Ceilings(**{k: getattr(merged, k)[order] for k in Ceilings.__dataclass_fields__})


def solve_ceilings(cases: CaseSet, chunk: int | None = None, processes: int | None = None) -> Ceilings:
    """Every limit's ceiling and the maximum altitude for all cases (fixed Mach or best speed).

    Cases whose ``mach`` is NaN are solved for the best speed. Work goes in chunks of about
    ``chunk`` cases (``CHUNK``; ``BEST_CHUNK`` when every case is best speed), so memory stays
    bounded. Large jobs (``PARALLEL_MIN_CASES`` fixed-Mach solves or more, a best-speed case
    counting ``BEST_SPEED_WORK``) are shared between processes, one per core, in chunks of equal
    size and a number of them that is a multiple of ``MAX_WORKERS``: numpy threads gained nothing
    here (measured), processes do.
    """
    n = len(cases)
    if n == 0:
        return Ceilings.allocate(0)
    n_best = int(np.count_nonzero(np.isnan(cases.mach)))
    if chunk is None:
        chunk = BEST_CHUNK if n_best == n else CHUNK
    if processes is None:
        # A best-speed case is some fifteen fixed-Mach solves: weigh the work, not the count.
        work = n + (BEST_SPEED_WORK - 1) * n_best
        processes = min(MAX_WORKERS, os.cpu_count() or 1) if work >= PARALLEL_MIN_CASES else 1
    # Chunk bounds from n and chunk alone (a case's answer never depends on the process count),
    # their number a multiple of the most workers used, so that workers get equal shares.
    count = -(-n // max(1, chunk))
    count = -(-count // MAX_WORKERS) * MAX_WORKERS if count > 1 else 1
    processes = max(1, min(processes, count))
    size = -(-n // count)
    bounds = [(start, min(start + size, n)) for start in range(0, n, size)]
    if processes > 1 and sys.platform.startswith("linux"):
        solved = _solve_in_processes(cases, bounds, processes)
        if solved is not None:
            return solved
    return Ceilings.concat([_solve_chunk(cases.take(slice(a, b))) for a, b in bounds])


def _shared_array(n: int, dtype) -> np.ndarray:
    """An array on anonymous shared memory: what a forked child writes there, the parent sees."""
    dtype = np.dtype(dtype)
    return np.frombuffer(mmap.mmap(-1, max(1, n * dtype.itemsize)), dtype=dtype, count=n)


def _solve_in_processes(cases: CaseSet, bounds, processes: int) -> Ceilings | None:
    """Chunks shared between this process and ``processes - 1`` forked workers, each taking the
    next chunk as it finishes one.

    fork: the workers read the parent's case arrays in place and write their results straight
    into shared memory, so nothing is pickled either way (a process pool sending results back
    lost most of the second core, measured). This process works too: it is warm where a new
    worker first pays for its memory, and one fork fewer. None if a chunk failed: the caller
    then solves in this process, where a failure shows with its cause.
    """
    ctx = multiprocessing.get_context("fork")
    out = Ceilings.allocate(len(cases), _shared_array)
    next_chunk = ctx.Value("q", 0)

    def work():
        while True:
            with next_chunk.get_lock():
                k = next_chunk.value
                next_chunk.value = k + 1
            if k >= len(bounds):
                break
            part = slice(*bounds[k])
            out.put(part, _solve_chunk(cases.take(part)))

    def child():
        try:
            _keep_freed_memory()
            work()
        except BaseException:  # noqa: BLE001  (reported by the exit code; re-raised by the serial run)
            os._exit(1)
        os._exit(0)

    workers = [ctx.Process(target=child, daemon=True) for _ in range(processes - 1)]
    for w in workers:
        w.start()
    try:
        work()
        failed = False
    except Exception:  # noqa: BLE001  (the serial run shows it with its cause)
        failed = True
    except BaseException:
        for w in workers:
            w.kill()
        raise
    finally:
        for w in workers:
            w.join()
    return None if failed or any(w.exitcode != 0 for w in workers) else out


def _keep_freed_memory():
    """In a worker: keep freed memory for reuse instead of giving it back to the system.

    The solvers allocate and free thousands of temporary arrays; glibc returns the top of the
    heap to the system whenever enough of it is free, and each page taken back later costs a
    page fault (measured: about a tenth of a worker's time). A worker lives for one job.
    """
    try:
        import ctypes
        libc = ctypes.CDLL(None)
        libc.mallopt(-1, 1 << 30)  # M_TRIM_THRESHOLD
        libc.mallopt(-3, 1 << 26)  # M_MMAP_THRESHOLD: temporaries from the heap, not fresh maps
    except (OSError, AttributeError):
        pass
