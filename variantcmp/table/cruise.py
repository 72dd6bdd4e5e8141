"""Cruise-level tables: the optimum altitude, the cruise level of a scheme, fuel flow and specific
range per case; and the cruise speeds (MRC, LRC) at given levels. Polars DataFrames in the units
users read (ft, FL, kg/h, NM per 1,000 kg), nulls where the model gives no value and a note why."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import polars as pl

from .. import solver as s
from ..atmosphere import isa_pressure_pa
from ..cases import FT, CaseIndex
from ..solver import cruise as cr
from ..solver.cruise_speed import SPEED_LIMITS, cruise_speeds, thrust_margin_n
from ..solver.fuel_flow import TSFC_TABLE, CruisePhysics
from ..units import OptionError, format_flight_level
from .ceilings import case_notes, empty_weight_floor_kg, feet, solve
from .conditions import Conditions

M_PER_NM = 1852.0
S_PER_H = 3600.0

#: Columns of the cruise-level table, in order.
CRUISE_COLUMNS = (
    "variant", "engine", "weight_kg", "isa_dev_c", "climb_fpm", "mach", "optimum_altitude_ft", "max_altitude_ft",
    "cruise_fl", "fuel_flow_kg_h", "specific_range_nm_per_t", "optimum_specific_range_nm_per_t",
    "specific_range_loss_pct", "limit", "note", "over_mtow", "weight_pct_mtow", "below_empty_weight",
)
#: Columns of the cruise-speed table (at given levels), in order.
SPEED_COLUMNS = (
    "variant", "engine", "weight_kg", "isa_dev_c", "climb_fpm", "flight_level", "mach", "mrc_mach", "lrc_mach",
    "fuel_flow_kg_h", "specific_range_nm_per_t", "speed_limit", "max_altitude_ft", "reaches_level", "note",
    "over_mtow", "weight_pct_mtow", "below_empty_weight",
)
SPEEDS = ("mrc", "lrc")


def nm_per_t(sr_m_per_kg):
    """Specific range m/kg -> NM per 1,000 kg; NaN stays NaN."""
    return np.asarray(sr_m_per_kg, dtype=float) * 1000.0 / M_PER_NM


def fixed_mach_only(conditions: Conditions, option: str = "--mach") -> None:
    """The cruise answers are at a fixed Mach: "best" is refused with what to use instead."""
    if conditions.mach == "best":
        raise OptionError(f"{option}: cannot use 'best' for cruise answers: they are at a fixed Mach; give cruise "
                          "(each variant's cruise Mach) or a Mach such as 0.78 (for the best-range speeds use "
                          "--level FL with --mach mrc or lrc)")


def _case_frame(catalogue, cases, index, res) -> dict:
    """The columns every cruise table shares, from the cases and their ceilings."""
    variants = [catalogue.variants[v] for v in index.variant_ids]
    mtow_kg = np.array([v.mtow_kg for v in variants])[cases.variant_index]
    floor_kg = np.array([empty_weight_floor_kg(v) for v in variants])[cases.variant_index]
    return {
        "variant": np.asarray(index.variant_ids, dtype=object)[cases.variant_index].tolist(),
        "engine": np.asarray(index.engine_ids, dtype=object)[cases.engine_index].tolist(),
        "weight_kg": cases.weight_kg,
        "isa_dev_c": cases.isa_dev_c,
        "climb_fpm": index.climb_fpm,
        "_ceiling_notes": case_notes(cases, res, index.climb_fpm, mtow_kg, floor_kg),
        "over_mtow": cases.over_mtow,
        "weight_pct_mtow": 100.0 * cases.weight_kg / mtow_kg,
        "below_empty_weight": cases.weight_kg < floor_kg,
    }


def _limits(res):
    has_alt = np.isfinite(res.max_altitude_m)
    names = np.array(list(s.LIMITS) + ["none"], dtype=object)
    return np.where(has_alt, names[np.where(res.limit >= 0, res.limit, len(s.LIMITS))],
                    np.where(res.flags & s.ABOVE_MODEL_TOP, "none", None))


def fuel_notes(catalogue, cruise: CruisePhysics, mach, flags) -> list[list[str]]:
    """Per case, the notes of the fuel-data flags (no data, a Mach outside the data, an optimum
    beyond them)."""
    engines = list(catalogue.engines.values())
    fuel = cruise.fuel
    mach_low, mach_high = fuel.mach_range()
    _, top_m = fuel.altitude_range_m()
    out = []
    for i in range(len(cruise)):  # text only, per row: the numbers are all computed
        f, parts = int(flags[i]), []
        if f & cr.NO_FUEL_DATA:
            parts.append(f"no fuel data for {engines[cruise.phys.cases.engine_index[i]].id}")
        if f & cr.FUEL_DATA_MACH:
            what = "TSFC table" if fuel.code[i] == TSFC_TABLE else "propeller efficiency data"
            parts.append(f"M{mach[i]:.3f} outside the {what} (M{mach_low[i]:.2f}-{mach_high[i]:.2f})")
        if f & cr.OPTIMUM_ABOVE_DATA:
            where = (f"the TSFC table's top ({top_m[i] / FT:,.0f} ft)" if fuel.code[i] == TSFC_TABLE
                     else "the model top")
            parts.append(f"specific range still rising at {where}: the optimum lies above it")
        if f & cr.OPTIMUM_BELOW_FLOOR:
            parts.append("specific range still rising at the lowest altitude of the data: the optimum lies below it")
        out.append(parts)
    return out


def _joined(ceiling_notes: list[str], notes: list[list[str]]) -> list[str]:
    """Each row's ceilings note and its cruise notes, in one text."""
    return ["; ".join(part for part in [first, *more] if part) for first, more in zip(ceiling_notes, notes)]


def cruise_table(catalogue, conditions: Conditions, scheme: str = cr.DEFAULT_SCHEME) -> pl.DataFrame:
    """One row per variant x engine x weight x ISA deviation x climb criterion, at the conditions'
    Mach (each variant's cruise Mach or a number): the optimum altitude (unconstrained), the
    maximum altitude at the climb criterion (as ``ceilings``), the level of ``scheme`` at or below it
    with the best specific range, and fuel flow and specific range there."""
    return _cruise_answers(catalogue, conditions, scheme)[0]


@dataclass(frozen=True)
class CruiseView:
    """The cruise table and, per row, specific range against altitude at the row's Mach: a long
    table (``row``: the row's position, ``altitude_ft``, ``specific_range_nm_per_t``), over the
    altitudes from 8,000 ft below the lowest of the optimum, maximum and cruise altitudes to
    2,000 ft above the highest."""

    frame: pl.DataFrame
    profiles: pl.DataFrame
    scheme: str


PROFILE_POINTS = 80
PROFILE_BELOW_FT, PROFILE_ABOVE_FT = 8_000.0, 2_000.0


def cruise_view(catalogue, conditions: Conditions, scheme: str = cr.DEFAULT_SCHEME,
                points: int = PROFILE_POINTS) -> CruiseView:
    """:func:`cruise_table` with each row's specific range against altitude (for the app's view)."""
    frame, cases, cruise, optimum_m, max_m, level_m = _cruise_answers(catalogue, conditions, scheme)
    stack = np.stack([optimum_m, max_m, level_m])
    with np.errstate(invalid="ignore"):
        low = np.nanmin(np.where(np.isfinite(stack), stack, np.nan), axis=0) - PROFILE_BELOW_FT * FT
        high = np.nanmax(np.where(np.isfinite(stack), stack, np.nan), axis=0) + PROFILE_ABOVE_FT * FT
    known = np.isfinite(low) & np.isfinite(high)
    low, high = np.where(known, np.maximum(low, 0.0), 0.0), np.where(known, high, 45_000.0 * FT)
    grid = low[:, None] + (high - low)[:, None] * np.linspace(0.0, 1.0, points)[None, :]
    with np.errstate(invalid="ignore"):
        sr = cruise.specific_range_m_per_kg(isa_pressure_pa(grid), cases.mach, grid)
    profiles = pl.DataFrame({
        "row": np.repeat(np.arange(len(cases)), points),
        "altitude_ft": (grid / FT).ravel(),
        "specific_range_nm_per_t": nm_per_t(sr).ravel(),
    }, nan_to_null=True)
    return CruiseView(frame, profiles, scheme)


def _cruise_answers(catalogue, conditions: Conditions, scheme: str):
    """The cruise table, and the cases, physics and altitudes (m) behind it."""
    fixed_mach_only(conditions)
    cases, index, res = solve(catalogue, conditions)
    shared = _case_frame(catalogue, cases, index, res)
    cruise = CruisePhysics.of(catalogue, cases)
    mach = cases.mach
    optimum_m, optimum_sr, flags = cr.optimum_altitude(cruise, mach)
    level_m, level_sr = cr.best_level(cruise, mach, cr.scheme_levels_m(scheme), optimum_m, res.max_altitude_m, flags)
    with np.errstate(invalid="ignore"):
        flow = cruise.fuel_flow_kg_s(isa_pressure_pa(np.nan_to_num(level_m)), mach, np.nan_to_num(level_m))
    flow = np.where(np.isfinite(level_m), flow, np.nan)
    max_ft, optimum_ft = feet(res.max_altitude_m), feet(optimum_m)
    notes = fuel_notes(catalogue, cruise, mach, flags)
    for i in range(len(cases)):
        if np.isfinite(optimum_ft[i]) and np.isfinite(max_ft[i]) and optimum_ft[i] > max_ft[i]:
            notes[i].append(f"optimum {format_flight_level(optimum_ft[i])} above the maximum altitude "
                            f"({format_flight_level(max_ft[i])})")
        if flags[i] & cr.NO_LEVEL:
            notes[i].append(f"no level of the {scheme} ft scheme at or below the maximum altitude")
    with np.errstate(invalid="ignore"):
        loss = 100.0 * (1.0 - level_sr / optimum_sr)
    frame = pl.DataFrame({
        **{k: v for k, v in shared.items() if k not in ("_ceiling_notes", "over_mtow", "weight_pct_mtow",
                                                           "below_empty_weight")},
        "mach": mach,
        "optimum_altitude_ft": optimum_ft,
        "max_altitude_ft": max_ft,
        "cruise_fl": np.where(np.isfinite(level_m), np.round(np.nan_to_num(level_m) / FT / 100.0), np.nan),
        "fuel_flow_kg_h": flow * S_PER_H,
        "specific_range_nm_per_t": nm_per_t(level_sr),
        "optimum_specific_range_nm_per_t": nm_per_t(optimum_sr),
        "specific_range_loss_pct": np.where(np.isfinite(loss), np.maximum(loss, 0.0), np.nan),
        "limit": pl.Series(_limits(res).tolist(), dtype=pl.String),
        "note": _joined(shared["_ceiling_notes"], notes),
        "over_mtow": shared["over_mtow"],
        "weight_pct_mtow": shared["weight_pct_mtow"],
        "below_empty_weight": shared["below_empty_weight"],
    }, nan_to_null=True).with_columns(pl.col("cruise_fl").cast(pl.Int64))
    return frame.select(CRUISE_COLUMNS), cases, cruise, optimum_m, res.max_altitude_m, level_m


def speed_table(catalogue, conditions: Conditions, levels_ft, speed) -> pl.DataFrame:
    """One row per case x level: MRC and LRC Machs at the level, and fuel flow and specific range
    at ``speed`` ("mrc", "lrc", or the conditions' Mach when ``speed`` is None), with the maximum
    altitude at that Mach and the climb criterion (as ``ceilings``) and whether it reaches the level."""
    levels_ft = np.asarray(levels_ft, dtype=float)
    base_conditions = conditions if speed is None else _cruise_mach(conditions)
    fixed_mach_only(base_conditions)
    cases0, index0, _ = solve(catalogue, base_conditions)
    k = levels_ft.size
    cases = cases0.repeat(k)
    level_m = np.tile(levels_ft, len(cases0)) * FT
    cruise = CruisePhysics.of(catalogue, cases)
    speeds = cruise_speeds(cruise, level_m)
    if speed == "mrc":
        mach = speeds.mrc_mach
    elif speed == "lrc":
        mach = speeds.lrc_mach
    else:
        mach = cases.mach
    chosen = cases.with_mach(np.where(np.isfinite(mach), mach, cases.mach))
    res = s.solve_ceilings(chosen)
    p = isa_pressure_pa(level_m)
    in_range = (mach >= speeds.low - 1e-9) & (mach <= speeds.high + 1e-9)
    holds = np.ones(len(cases), dtype=bool)
    if speed is None:  # a Mach asked for: thrust must hold the level there too (MRC and LRC are solved within)
        with np.errstate(invalid="ignore"):
            holds = thrust_margin_n(cruise, p, level_m, mach) >= 0.0
    inside = in_range & holds
    with np.errstate(invalid="ignore"):
        flow = np.where(inside, cruise.fuel_flow_kg_s(p, mach, level_m), np.nan)
        sr = np.where(inside, cruise.specific_range_m_per_kg(p, mach, level_m), np.nan)
    index = CaseIndex(index0.variant_ids, index0.engine_ids, np.repeat(index0.climb_fpm, k),
                         np.repeat(index0.mach_request, k))
    shared = _case_frame(catalogue, chosen, index, res)
    notes = fuel_notes(catalogue, cruise, np.where(np.isfinite(mach), mach, cases.mach), speeds.flags)
    bound = speeds.lrc_bound if speed == "lrc" else speeds.mrc_bound if speed == "mrc" else np.full(len(cases), -1)
    max_ft = np.where(np.isfinite(mach), feet(res.max_altitude_m), np.nan)  # no speed: no maximum at it
    names = np.array(SPEED_LIMITS + (None,), dtype=object)
    for i in range(len(cases)):
        notes[i] += speed_notes(int(speeds.flags[i]), levels_ft[i % k], mach[i], speeds.low[i], speeds.high[i],
                                in_range[i], speed, names[bound[i]])
        if not holds[i] and not speeds.flags[i]:
            notes[i].append(f"thrust cannot hold {format_flight_level(levels_ft[i % k])} at M{mach[i]:.3f}")
        if np.isfinite(max_ft[i]) and max_ft[i] < level_m[i] / FT and np.isfinite(mach[i]):
            notes[i].append(f"{format_flight_level(level_m[i] / FT)} above the maximum altitude at M{mach[i]:.3f} "
                            f"({format_flight_level(max_ft[i])})")
    frame = pl.DataFrame({
        **{k2: v for k2, v in shared.items() if k2 != "_ceiling_notes"},
        "flight_level": np.round(level_m / FT / 100.0).astype(np.int64),
        "mach": np.where(np.isfinite(flow), mach, np.nan),
        "mrc_mach": speeds.mrc_mach,
        "lrc_mach": speeds.lrc_mach,
        "fuel_flow_kg_h": flow * S_PER_H,
        "specific_range_nm_per_t": nm_per_t(sr),
        "speed_limit": pl.Series(names[np.where(np.isfinite(flow), bound, -1)].tolist(), dtype=pl.String),
        "max_altitude_ft": max_ft,
        "reaches_level": np.isfinite(max_ft) & (np.nan_to_num(max_ft, nan=-np.inf) >= level_m / FT - 1e-6),
        "note": _joined(shared["_ceiling_notes"], notes),
    }, nan_to_null=True)
    return frame.select(SPEED_COLUMNS)


def _cruise_mach(conditions: Conditions) -> Conditions:
    """For MRC and LRC the ceilings' cases are built at the cruise Mach (replaced after)."""
    from dataclasses import replace

    return replace(conditions, mach="cruise")


def speed_notes(flags, level_ft, mach, low, high, inside, speed, bound) -> list[str]:
    """Notes of one cruise-speed row: no speed at the level, or the one asked outside the range."""
    fl = format_flight_level(level_ft)
    if flags & cr.NO_SPEED_IN_BUFFET_MARGIN:
        return [f"the buffet margin holds at no speed at {fl}"]
    if flags & cr.CANNOT_HOLD_LEVEL:
        return [f"thrust cannot hold {fl} at any allowed speed"]
    if flags & cr.NO_SPEED:
        return [f"no speed at {fl} is within stall, buffet margin, MMO and VMO"]
    if flags & (cr.NO_FUEL_DATA | cr.FUEL_DATA_MACH):
        return []
    if speed is None and not inside:
        return [f"M{mach:.3f} outside the speeds allowed at {fl} (M{low:.3f}-{high:.3f})"]
    if bound is not None:
        name = "LRC" if speed == "lrc" else "MRC"
        return [f"{name} held by {bound} at {fl}"]
    return []
