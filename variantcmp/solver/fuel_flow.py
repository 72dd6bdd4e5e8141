"""Fuel flow and specific range in steady level flight, for a set of cases.

:class:`FuelData` gathers each case's fuel data from the catalogue (one entry per case, as the
case set's own arrays). :data:`FUEL_MODELS` maps each kind of fuel data to how its range factor is
evaluated (V/c for a jet, eta/c for a propeller engine: :mod:`variantcmp.fuel`), one function
each: a new kind of engine is one more entry. :class:`CruisePhysics` joins them with
:class:`~variantcmp.solver.physics.ClimbPhysics`'s drag (compressibility included): specific
range = range factor / drag, fuel flow = true airspeed / specific range, at a static pressure and
a Mach per case (or rows of pressures per case).

At a fixed Mach the drag depends on the pressure alone; the range factor depends on what the
fuel data say. A TSFC of the form (a + b M) sqrt(theta) makes V/c independent of altitude and
temperature (the sqrt(theta) of the true airspeed and of the TSFC cancel); a TSFC table at ISA,
scaled by sqrt(T / T_ISA) on other days, makes it depend on the pressure altitude only (the ISA
speed of sound over the table's value); a PSFC scaled by sqrt(theta) depends on the day's
temperature. The evaluation point (:class:`FuelPoint`) works out the pressure altitude and the
temperatures only when a model asks for them, so the search over pressure for the first kind
never evaluates the atmosphere.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Callable

import numpy as np

from ..atmosphere import A0_MS, MODEL_TOP_M, T0_K, isa_temperature_k, pressure_altitude_m, speed_of_sound_ms
from ..cases import FLOOR_M, FT
from ..fuel import (fuel_flow_kg_s, jet_range_factor_n_m_per_kg, propeller_range_factor_n_m_per_kg, psfc_kg_per_ws,
                    specific_range_m_per_kg, tsfc_from_isa_kg_per_ns, tsfc_kg_per_ns)
from ..thrust import PropellerEfficiency, TableLapse
from .physics import GROUP_BASE, ClimbPhysics, key_groups

#: Kinds of fuel data, by the catalogue keys an engine gives.
FUEL_CODES = {"none": 0, "tsfc": 1, "tsfc-table": 2, "psfc": 3}
NO_FUEL, TSFC, TSFC_TABLE, PSFC = (FUEL_CODES[k] for k in ("none", "tsfc", "tsfc-table", "psfc"))


@dataclass
class FuelData:
    """Per-case fuel data (``code`` one of :data:`FUEL_CODES`; NaN where a kind does not use a
    value) and the shared tables: TSFC tables at ISA in mg/(N s) (``tables``) and propeller
    efficiencies (``propellers``), indexed by ``data_id``."""

    code: np.ndarray
    tsfc_mg_per_ns: np.ndarray
    tsfc_mach_slope: np.ndarray
    psfc_kg_per_kwh: np.ndarray
    data_id: np.ndarray
    tables: list
    propellers: list

    def take(self, index) -> "FuelData":
        return FuelData(self.code[index], self.tsfc_mg_per_ns[index], self.tsfc_mach_slope[index],
                        self.psfc_kg_per_kwh[index], self.data_id[index], self.tables, self.propellers)

    def repeat(self, times: int) -> "FuelData":
        return self.take(np.repeat(np.arange(self.code.size), times))

    def mach_range(self) -> tuple[np.ndarray, np.ndarray]:
        """The Mach range each case's fuel data cover ((0, 1) for the formula)."""
        low, high = np.zeros(self.code.size), np.ones(self.code.size)
        for code, did, idx in self.groups():
            if code == TSFC_TABLE:
                low[idx], high[idx] = self.tables[did].mach[0], self.tables[did].mach[-1]
            elif code == PSFC:
                low[idx], high[idx] = self.propellers[did].mach_range
        return low, high

    def mach_nodes(self) -> list[tuple[int, np.ndarray, np.ndarray | slice]]:
        """(data id, Mach columns, cases) of each TSFC table and propeller efficiency against Mach:
        where specific range has kinks in Mach."""
        out = []
        for code, did, idx in self.groups():
            if code == TSFC_TABLE:
                out.append((did, self.tables[did].mach, idx))
            elif code == PSFC and self.propellers[did].constant is None:
                out.append((did, self.propellers[did].mach, idx))
        return out

    def altitude_range_m(self) -> tuple[np.ndarray, np.ndarray]:
        """The pressure altitudes each case's fuel data cover: a TSFC table's, else the -2,000 ft
        floor to the model top."""
        low, high = np.full(self.code.size, FLOOR_M), np.full(self.code.size, MODEL_TOP_M)
        for code, did, idx in self.groups():
            if code == TSFC_TABLE:
                low[idx] = max(FLOOR_M, self.tables[did].altitude_ft[0] * FT)
                high[idx] = self.tables[did].altitude_ft[-1] * FT
        return low, high

    def group_key(self) -> np.ndarray:
        """Each case's kind of fuel data and its table or propeller, as one number."""
        return self.code * GROUP_BASE + self.data_id + 1

    def groups(self) -> list[tuple[int, int, np.ndarray | slice]]:
        """(code, data id, cases) per kind of fuel data (and per table or propeller): slices where
        the cases are sorted by :meth:`group_key`, else index arrays."""
        return key_groups(self.group_key())


def fuel_data(catalogue, cases) -> FuelData:
    """Each case's fuel data, from its engine in the catalogue (``cases.engine_index`` counts the
    catalogue's engines in file order, as :func:`variantcmp.cases.build_cases` does)."""
    engines = list(catalogue.engines.values())
    tables, propellers, per_engine = [], [], []
    for e in engines:
        a = b = psfc = np.nan
        did = -1
        if e.is_propeller and e.psfc_kg_per_kwh is not None:
            code, psfc, did = PSFC, e.psfc_kg_per_kwh, len(propellers)
            propellers.append(PropellerEfficiency(e.propeller_efficiency, e.propeller_efficiency_mach,
                                                  e.propeller_efficiency_table))
        elif not e.is_propeller and e.tsfc_table_mg_per_ns:
            code, did = TSFC_TABLE, len(tables)
            tables.append(TableLapse(e.tsfc_table_altitude_ft, e.tsfc_table_mach, e.tsfc_table_mg_per_ns))
        elif not e.is_propeller and e.tsfc_mg_per_ns is not None:
            code, a, b = TSFC, e.tsfc_mg_per_ns, e.tsfc_mach_slope
        else:
            code = NO_FUEL
        per_engine.append((code, a, b, psfc, did))
    columns = [np.array(c) for c in zip(*per_engine)] if per_engine else [np.empty(0)] * 5
    code, a, b, psfc, did = (col[cases.engine_index] if col.size else col for col in columns)
    return FuelData(code.astype(np.int64), a.astype(float), b.astype(float), psfc.astype(float),
                    did.astype(np.int64), tables, propellers)


class FuelPoint:
    """Where the range factor is evaluated: static pressure (Pa; per case, or rows per case) and a
    Mach per case; the pressure altitude and the ISA and day temperatures on first use."""

    def __init__(self, cruise: "CruisePhysics", pressure_pa, mach, altitude_m=None):
        self.p = np.asarray(pressure_pa, dtype=float)
        self.col = (lambda a: a[:, None]) if self.p.ndim == 2 else (lambda a: a)
        self.mach = mach  # as given: the key of the cruise physics' cache of Mach-only terms
        self.m = np.broadcast_to(self.col(np.asarray(mach, dtype=float)), self.p.shape)
        self.cruise = self._cruise = cruise
        self._h = None if altitude_m is None else np.broadcast_to(np.asarray(altitude_m, dtype=float), self.p.shape)
        self._t_isa = None

    @property
    def h(self):
        if self._h is None:
            self._h = pressure_altitude_m(self.p)
        return self._h

    @property
    def t_isa(self):
        if self._t_isa is None:
            self._t_isa = isa_temperature_k(self.h)
        return self._t_isa

    @property
    def t(self):
        return self.t_isa + self.col(self._cruise.phys.cases.isa_dev_c)


@dataclass(frozen=True)
class FuelModel:
    """How one kind of fuel data gives the range factor (N m/kg): ``range_factor(fuel, idx,
    data_id, at)`` for the cases ``idx`` at the :class:`FuelPoint` ``at`` (arrays of ``at`` are
    indexed by ``idx``; per-case values of ``fuel`` too, as columns where ``at`` is 2-D)."""

    range_factor: Callable


def _no_fuel(fuel, idx, _did, at):
    return np.full(at.p[idx].shape, np.nan)


def _tsfc(fuel, idx, _did, at):
    # The sqrt(theta) of the true airspeed and of the TSFC cancel: evaluated at T0, exactly the
    # value at any temperature (and no atmosphere needed).
    m = at.m[idx]
    c = tsfc_kg_per_ns(m, T0_K, at.col(fuel.tsfc_mg_per_ns[idx]), at.col(fuel.tsfc_mach_slope[idx]))
    return jet_range_factor_n_m_per_kg(m * A0_MS, c)


def _tsfc_table(fuel, idx, did, at):
    # c = c_ISA(h, M) sqrt(T / T_ISA) and V = M a(T): T cancels, so both at ISA.
    m, t_isa = at.m[idx], at.t_isa[idx]
    j, ty = at.cruise.table_mach_terms(did, idx, at.mach)
    c = tsfc_from_isa_kg_per_ns(fuel.tables[did].at(at.h[idx] / FT, (at.col(j), at.col(ty))), t_isa, t_isa)
    return jet_range_factor_n_m_per_kg(m * speed_of_sound_ms(t_isa), c)


def _psfc(fuel, idx, did, at):
    eta = fuel.propellers[did](at.m[idx])
    return propeller_range_factor_n_m_per_kg(eta, psfc_kg_per_ws(at.t[idx], at.col(fuel.psfc_kg_per_kwh[idx])))


#: Fuel data kind -> how its range factor is evaluated (sources in :mod:`variantcmp.fuel`).
FUEL_MODELS: dict[int, FuelModel] = {
    NO_FUEL: FuelModel(_no_fuel),
    TSFC: FuelModel(_tsfc),
    TSFC_TABLE: FuelModel(_tsfc_table),
    PSFC: FuelModel(_psfc),
}


class CruisePhysics:
    """Drag, range factor, specific range and fuel flow of a set of cases in steady level flight
    (see the module docstring). ``phys`` gives the drag; ``fuel`` the cases' fuel data."""

    def __init__(self, phys: ClimbPhysics, fuel: FuelData):
        self.phys, self.fuel = phys, fuel
        self._groups = fuel.groups()
        self._terms_mach, self._terms = None, {}

    def table_mach_terms(self, data_id: int, idx, mach):
        """The Mach half of a TSFC table's interpolation for the cases ``idx``, cached while the
        same Mach array is asked for (the optimum search keeps its Mach)."""
        if self._terms_mach is not mach:
            self._terms_mach, self._terms = mach, {}
        if data_id not in self._terms:
            self._terms[data_id] = self.fuel.tables[data_id].mach_terms(np.asarray(mach, dtype=float)[idx])
        return self._terms[data_id]

    @classmethod
    def of(cls, catalogue, cases) -> "CruisePhysics":
        return cls(ClimbPhysics(cases), fuel_data(catalogue, cases))

    def __len__(self) -> int:
        return self.fuel.code.size

    def subset(self, index) -> "CruisePhysics":
        return CruisePhysics(self.phys.subset(index), self.fuel.take(index))

    def point(self, pressure_pa, mach, altitude_m=None) -> FuelPoint:
        return FuelPoint(self, pressure_pa, mach, altitude_m)

    def range_factor(self, at: FuelPoint):
        """V/c or eta/c (N m/kg) at the point, each kind of fuel data on its own cases."""
        if len(self._groups) == 1:
            code, did, idx = self._groups[0]
            return np.broadcast_to(FUEL_MODELS[code].range_factor(self.fuel, idx, did, at), at.p.shape)
        out = np.empty(at.p.shape)
        for code, did, idx in self._groups:
            out[idx] = FUEL_MODELS[code].range_factor(self.fuel, idx, did, at)
        return out

    def specific_range_m_per_kg(self, pressure_pa, mach, altitude_m=None):
        """Specific range (m per kg of fuel) at a pressure and a Mach per case; NaN where the fuel
        data say nothing (none given, or outside a table)."""
        at = self.point(pressure_pa, mach, altitude_m)
        with np.errstate(invalid="ignore", divide="ignore"):
            return specific_range_m_per_kg(self.range_factor(at), self.phys.drag_at_pressure_n(at.p, mach))

    def fuel_flow_kg_s(self, pressure_pa, mach, altitude_m=None):
        """Total fuel flow (kg/s) in steady level flight at a pressure and a Mach per case."""
        at = self.point(pressure_pa, mach, altitude_m)
        with np.errstate(invalid="ignore", divide="ignore"):
            return fuel_flow_kg_s(at.m * speed_of_sound_ms(at.t), self.phys.drag_at_pressure_n(at.p, mach),
                                  self.range_factor(at))


#: Cases per chunk of the cruise solvers: memory stays bounded, and the calls stay large enough
#: that numpy's per-call overhead is shared (measured on the MRC stage: 65,536 cases ran 16 %
#: faster per case than 16,384).
CRUISE_CHUNK = 65_536


def in_chunks(solve: Callable, cruise: CruisePhysics, *per_case):
    """``solve(cruise, *per_case)`` on chunks of at most CRUISE_CHUNK cases, each sorted by kind of
    fuel data for the solve (so that each kind is a slice: views, not gathers) and put back in
    order; the results joined: a tuple of per-case arrays, or a dataclass of them."""
    n = len(cruise)
    key = cruise.fuel.group_key()
    parts = []
    for start in range(0, max(n, 1), CRUISE_CHUNK):
        stop = min(start + CRUISE_CHUNK, n)
        part = key[start:stop]
        if part.size and np.any(part[1:] < part[:-1]):
            order = np.argsort(part, kind="stable")
            index = start + order
            out = _take(solve(cruise.subset(index), *(np.asarray(x)[index] for x in per_case)), np.argsort(order))
        elif start == 0 and stop == n:
            out = solve(cruise, *per_case)
        else:
            out = solve(cruise.subset(slice(start, stop)), *(np.asarray(x)[start:stop] for x in per_case))
        parts.append(out)
    return parts[0] if len(parts) == 1 else _join(parts)


def _take(result, index):
    if dataclasses.is_dataclass(result):
        return type(result)(**{f.name: getattr(result, f.name)[index] for f in dataclasses.fields(result)})
    return tuple(np.asarray(a)[index] for a in result)


def _join(parts):
    first = parts[0]
    if dataclasses.is_dataclass(first):
        return type(first)(**{f.name: np.concatenate([getattr(p, f.name) for p in parts])
                              for f in dataclasses.fields(first)})
    return tuple(np.concatenate(column) for column in zip(*parts))
