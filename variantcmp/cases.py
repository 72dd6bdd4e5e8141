"""Cases: a catalogue crossed with conditions, laid out as flat numpy arrays for the solvers.

A :class:`CaseSet` holds one entry per variant x engine option x weight x ISA deviation x climb
criterion, with every catalogue value the physics needs gathered per case (SI units), so that the
solvers work on whole arrays and never loop over cases.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from .atmosphere import A0_MS, G0, LAYER_BASE_P_PA, LAYER_BASE_T_K, R_AIR, isa_pressure_pa, pressure_altitude_m
from .constants import M_PER_FT, MS_PER_FPM, MS_PER_KT
from .thrust import PropellerEfficiency, TableLapse

FT, KT, FPM = M_PER_FT, MS_PER_KT, MS_PER_FPM  # m per ft, m/s per kt, m/s per ft/min
MODEL_CODES = {"density-lapse": 0, "turbofan": 1, "table": 2, "turboprop": 3}
#: Lowest pressure altitude at which ceilings are searched: -2,000 ft.
FLOOR_M = -2000.0 * FT
#: Speed range searched for the best speed when a variant gives no MMO (subsonic models only).
BEST_MACH_LOW = 0.15
BEST_MACH_HIGH_DEFAULT = 0.95

# Per-case float arrays, in SI units. NaN marks "not given in the catalogue".
_FLOAT_FIELDS = (
    "weight_kg", "isa_dev_c", "mach", "climb_ms", "g_margin",
    "wing_area_m2", "k", "cd0", "cl_max", "certified_m", "mmo", "vmo_ms",
    "sweep_deg", "thickness_ratio", "korn_factor", "cabin_m",
    "thrust_sls_n", "lapse_exponent", "lapse_exponent_above", "throttle_ratio",
    "flat_rate_isa_dev_c", "hot_day_loss_per_c", "tropopause_density_kg_m3",
    "floor_m", "top_m", "mach_low", "mach_high",
)
_INT_FIELDS = ("variant_index", "engine_index", "model_code", "table_id", "propeller_id", "buffet_id")


@dataclass
class CaseSet:
    """Struct of arrays, one element per case; see the module docstring."""

    weight_kg: np.ndarray
    isa_dev_c: np.ndarray
    mach: np.ndarray  # NaN: best speed
    climb_ms: np.ndarray
    g_margin: np.ndarray
    wing_area_m2: np.ndarray
    k: np.ndarray
    cd0: np.ndarray
    cl_max: np.ndarray
    certified_m: np.ndarray  # +inf: no certified ceiling given
    mmo: np.ndarray
    vmo_ms: np.ndarray
    sweep_deg: np.ndarray
    thickness_ratio: np.ndarray
    korn_factor: np.ndarray  # NaN: no compressibility drag
    cabin_m: np.ndarray  # cabin ceiling: where the outside pressure falls to the cabin's limit (+inf: none)
    # All engines, at the climb/cruise rating. Propeller engines: the shaft power over the sea-level
    # speed of sound, n P0 / a0 (see reference_thrust_n), so whatever scales thrust scales power alike.
    thrust_sls_n: np.ndarray
    lapse_exponent: np.ndarray
    lapse_exponent_above: np.ndarray
    throttle_ratio: np.ndarray
    flat_rate_isa_dev_c: np.ndarray
    hot_day_loss_per_c: np.ndarray
    tropopause_density_kg_m3: np.ndarray
    floor_m: np.ndarray  # lowest altitude the thrust model covers (>= -2,000 ft)
    top_m: np.ndarray  # highest altitude the thrust model covers
    mach_low: np.ndarray  # speed range for the best-speed search
    mach_high: np.ndarray
    variant_index: np.ndarray
    engine_index: np.ndarray
    model_code: np.ndarray
    table_id: np.ndarray
    propeller_id: np.ndarray  # index into ``propellers`` (-1: not a propeller engine)
    buffet_id: np.ndarray
    over_mtow: np.ndarray
    # Shared tables (not per case).
    tables: list = field(default_factory=list)  # TableLapse per table engine
    propellers: list = field(default_factory=list)  # PropellerEfficiency per propeller engine
    buffet_key: np.ndarray = field(default_factory=lambda: np.empty(0))  # mach + 10 x buffet_id
    buffet_cl: np.ndarray = field(default_factory=lambda: np.empty(0))
    buffet_low: np.ndarray = field(default_factory=lambda: np.empty(0))  # per buffet_id
    buffet_high: np.ndarray = field(default_factory=lambda: np.empty(0))

    def __len__(self) -> int:
        return self.weight_kg.shape[0]

    @property
    def weight_n(self) -> np.ndarray:
        return self.weight_kg * G0

    @property
    def shaft_power_w(self) -> np.ndarray:
        """All engines' shaft power at sea level, static, ISA, at the rating (W; NaN for jets)."""
        return np.where(self.propeller_id >= 0, self.thrust_sls_n * A0_MS, np.nan)

    def take(self, index) -> "CaseSet":
        """The cases at ``index`` (an integer array, a slice or a boolean mask)."""
        return dataclasses.replace(self, **{n: getattr(self, n)[index] for n in per_case_fields()})

    def repeat(self, times: int) -> "CaseSet":
        """Every case ``times`` times in a row (case-major), e.g. one per Mach of a grid."""
        return dataclasses.replace(self, **{n: np.repeat(getattr(self, n), times) for n in per_case_fields()})

    def with_mach(self, mach) -> "CaseSet":
        return dataclasses.replace(self, mach=np.broadcast_to(np.asarray(mach, dtype=float), self.mach.shape).copy())

    def with_isa_dev(self, isa_dev_c) -> "CaseSet":
        """The same cases on other days (one deviation per case, or one for all), with what the
        cases derive from the deviation (the tropopause density)."""
        dev = np.broadcast_to(np.asarray(isa_dev_c, dtype=float), self.isa_dev_c.shape).copy()
        return dataclasses.replace(self, isa_dev_c=dev, tropopause_density_kg_m3=tropopause_density_kg_m3(
            dev, ~np.isnan(self.flat_rate_isa_dev_c)))


def tropopause_density_kg_m3(isa_dev_c, flat_rated):
    """Density at the tropopause's pressure on the day, p_11 / (R (216.65 K + dT)) (ISO 2533); a
    flat-rated engine's lapse sees ISA there (dT = 0: see :mod:`variantcmp.solver.physics`)."""
    return LAYER_BASE_P_PA[1] / (R_AIR * (LAYER_BASE_T_K[1] + np.where(flat_rated, 0.0, isa_dev_c)))


def per_case_fields() -> tuple[str, ...]:
    return _FLOAT_FIELDS + _INT_FIELDS + ("over_mtow",)


_PER_CASE = frozenset(per_case_fields())


class CaseView:
    """Some cases of a :class:`CaseSet`, each per-case array gathered when first read.

    The solvers narrow their working set many times per solve and read only a few of the
    arrays of each narrowed set: gathering all of them up front cost more than the physics.
    """

    def __init__(self, base: CaseSet, index):
        if isinstance(base, CaseView):  # a view of a view: index the base directly
            index = base._index[index]
            base = base._base
        elif not isinstance(index, np.ndarray) or index.dtype == bool:
            index = np.arange(len(base))[index]
        self._base, self._index = base, index

    def __len__(self) -> int:
        return self._index.size

    def __getattr__(self, name):  # only for names not yet cached on the view
        if name.startswith("_"):
            raise AttributeError(name)
        value = getattr(self._base, name)
        if name in _PER_CASE:
            value = value[self._index]
        setattr(self, name, value)
        return value

    def take(self, index) -> "CaseView":
        return CaseView(self, index)


@dataclass(frozen=True)
class CaseIndex:
    """What each case stands for, for building result tables."""

    variant_ids: list[str]
    engine_ids: list[str]
    climb_fpm: np.ndarray
    mach_request: np.ndarray  # the Mach asked for (NaN for best speed)


def _nan(value) -> float:
    return np.nan if value is None else float(value)


def reference_thrust_n(engine_count: int, engine) -> float:
    """The thrust the lapse fraction of :mod:`variantcmp.solver.physics` multiplies, for all engines
    at the climb/cruise rating: a jet's static thrust; for a propeller engine the shaft power over
    the sea-level speed of sound, n P0 / a0, the fraction then being eta (P/P0) a0 / V."""
    if engine.is_propeller:
        return engine_count * engine.shaft_power_kw * 1000.0 / A0_MS
    return engine_count * engine.static_thrust_kn * 1000.0 * engine.rating_fraction


def _narrowed(low, high, data_low, data_high):
    """A speed range cut to where some data reach, or left as it is where they miss it."""
    cut_low, cut_high = max(low, data_low), min(high, data_high)
    return (cut_low, cut_high) if cut_low <= cut_high else (low, high)


def build_cases(catalogue, pairs, weights_kg_per_variant, isa_devs_c, climbs_fpm, mach, g_margin):
    """Cross variant x engine pairs with weights, deviations and climb criteria.

    ``pairs``: list of (variant_id, engine_id). ``weights_kg_per_variant``: callable giving the
    list of weights (kg) for a variant. ``mach``: "cruise", "best" or a number. Returns
    (CaseSet, CaseIndex). Order: pair, weight, deviation, climb (last varies fastest).
    """
    variants, engines = catalogue.variants, catalogue.engines
    table_engines = [e for e in engines.values() if e.model == "table"]
    table_ids = {e.id: i for i, e in enumerate(table_engines)}
    tables = [TableLapse(e.table_altitude_ft, e.table_mach, e.table_thrust_fraction) for e in table_engines]
    propeller_engines = [e for e in engines.values() if e.is_propeller]
    propeller_ids = {e.id: i for i, e in enumerate(propeller_engines)}
    propellers = [PropellerEfficiency(e.propeller_efficiency, e.propeller_efficiency_mach, e.propeller_efficiency_table)
                  for e in propeller_engines]
    buffet_variants = [v for v in variants.values() if len(v.buffet_mach) >= 2]
    buffet_ids = {v.id: i for i, v in enumerate(buffet_variants)}
    key = np.concatenate([np.asarray(v.buffet_mach) + 10.0 * i for i, v in enumerate(buffet_variants)] or [np.empty(0)])
    bcl = np.concatenate([np.asarray(v.buffet_cl, dtype=float) for v in buffet_variants] or [np.empty(0)])
    blow = np.array([v.buffet_mach[0] for v in buffet_variants], dtype=float)
    bhigh = np.array([v.buffet_mach[-1] for v in buffet_variants], dtype=float)

    rows: dict[str, list] = {n: [] for n in per_case_fields()}
    climb_list, mach_list = [], []
    variant_order = list(variants)
    engine_order = list(engines)
    dev = np.asarray(isa_devs_c, dtype=float)
    # Tropopause density on each day: p at 11 km, T = 216.65 K + deviation.
    for vid, eid in pairs:
        v, e = variants[vid], engines[eid]
        weights = np.asarray(weights_kg_per_variant(v), dtype=float)
        # Cartesian product, weight slowest and climb fastest (the documented row order).
        mesh = np.meshgrid(weights, dev, np.asarray(climbs_fpm, dtype=float), indexing="ij")
        grid = np.stack([m.ravel() for m in mesh], axis=1)
        n = grid.shape[0]
        if mach == "best":
            m = np.nan
        elif mach == "cruise":
            m = v.cruise_mach
        else:
            m = float(mach)
        floor_m, top_m, m_low, m_high = FLOOR_M, np.inf, BEST_MACH_LOW, (v.mmo or BEST_MACH_HIGH_DEFAULT)
        # The best-speed search stays where the thrust table, the propeller efficiency table and
        # the buffet data reach, unless that leaves no speed below MMO: it then searches the speeds
        # it has, and what lacks data there is flagged as for a fixed Mach.
        if e.model == "table":
            floor_m = max(FLOOR_M, e.table_altitude_ft[0] * FT)
            top_m = e.table_altitude_ft[-1] * FT
            m_low, m_high = _narrowed(m_low, m_high, e.table_mach[0], e.table_mach[-1])
        if e.is_propeller:  # a constant efficiency covers every Mach
            m_low, m_high = _narrowed(m_low, m_high, *propellers[propeller_ids[eid]].mach_range)
        if v.id in buffet_ids:
            m_low, m_high = _narrowed(m_low, m_high, v.buffet_mach[0], v.buffet_mach[-1])
        cabin_m = np.inf
        if v.max_cabin_dp_kpa is not None:
            lowest_pa = float(isa_pressure_pa((v.cabin_altitude_ft or 8000.0) * FT)) - v.max_cabin_dp_kpa * 1000.0
            cabin_m = float(pressure_altitude_m(max(lowest_pa, 0.0)))  # no outside pressure left: above the model
        per = {
            "weight_kg": grid[:, 0], "isa_dev_c": grid[:, 1], "climb_ms": grid[:, 2] * FPM,
            "mach": m, "g_margin": g_margin,
            "wing_area_m2": v.wing_area_m2, "k": v.k, "cd0": v.cd0, "cl_max": v.cl_max,
            "certified_m": np.inf if v.max_altitude_ft is None else v.max_altitude_ft * FT,
            "mmo": _nan(v.mmo), "vmo_ms": np.nan if v.vmo_kt is None else v.vmo_kt * KT,
            "sweep_deg": _nan(v.sweep_deg), "thickness_ratio": _nan(v.thickness_ratio),
            "korn_factor": _nan(v.korn_factor), "cabin_m": cabin_m,
            "thrust_sls_n": reference_thrust_n(v.engine_count, e),
            "lapse_exponent": e.lapse_exponent,
            "lapse_exponent_above": _nan(e.lapse_exponent_above_tropopause),
            "throttle_ratio": e.throttle_ratio,
            "flat_rate_isa_dev_c": _nan(e.flat_rate_isa_dev_c), "hot_day_loss_per_c": e.hot_day_loss_per_c,
            "tropopause_density_kg_m3": tropopause_density_kg_m3(grid[:, 1], e.flat_rate_isa_dev_c is not None),
            "floor_m": floor_m, "top_m": top_m, "mach_low": m_low, "mach_high": m_high,
            "variant_index": variant_order.index(vid), "engine_index": engine_order.index(eid),
            "model_code": MODEL_CODES[e.model], "table_id": table_ids.get(eid, -1),
            "propeller_id": propeller_ids.get(eid, -1),
            "buffet_id": buffet_ids.get(vid, -1), "over_mtow": grid[:, 0] > v.mtow_kg * (1 + 1e-9),
        }
        for name, value in per.items():
            rows[name].append(np.broadcast_to(np.asarray(value), (n,)))
        climb_list.append(grid[:, 2])
        mach_list.append(np.full(n, m))
    arrays = {}
    for name in per_case_fields():
        dtype = bool if name == "over_mtow" else (np.int64 if name in _INT_FIELDS else float)
        arrays[name] = np.concatenate(rows[name]).astype(dtype) if rows[name] else np.empty(0, dtype=dtype)
    cases = CaseSet(**arrays, tables=tables, propellers=propellers, buffet_key=key, buffet_cl=bcl, buffet_low=blow, buffet_high=bhigh)
    index = CaseIndex(variant_order, engine_order,
                      np.concatenate(climb_list) if climb_list else np.empty(0),
                      np.concatenate(mach_list) if mach_list else np.empty(0))
    return cases, index
