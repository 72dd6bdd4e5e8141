"""The ceilings table: the solver's answers as a polars DataFrame in the units users read (ft, FL),
with the notes that say why a value is missing."""

from __future__ import annotations

import numpy as np
import polars as pl

from .. import solver as s
from ..atmosphere import MODEL_TOP_M
from ..cases import FT, build_cases
from ..units import flight_level_number
from .conditions import Conditions, selected_pairs

#: Columns of a ceilings table, in order (the target columns are added when a target is set).
COLUMNS = (
    "variant", "engine", "weight_kg", "isa_dev_c", "mach", "climb_fpm", "thrust_ceiling_ft",
    "buffet_ceiling_ft", "stall_ceiling_ft", "certified_ceiling_ft", "cabin_ceiling_ft",
    "max_altitude_ft", "flight_level", "limit", "note", "over_mtow", "weight_pct_mtow", "below_empty_weight",
)
TARGET_COLUMNS = ("target_ft", "margin_ft", "reaches_target")
LIMIT_COLUMNS = dict(zip(s.LIMITS, ("thrust_ceiling_ft", "buffet_ceiling_ft", "stall_ceiling_ft",
                                    "certified_ceiling_ft", "cabin_ceiling_ft")))


def cases_for(catalogue, conditions: Conditions):
    """The cases the conditions describe, unsolved: (CaseSet, CaseIndex)."""
    return build_cases(
        catalogue, selected_pairs(catalogue, conditions), lambda v: [w.resolve_kg(v.mtow_kg) for w in conditions.weights],
        conditions.isa_devs_c, conditions.climb_fpm, conditions.mach, conditions.g_margin)


def solve(catalogue, conditions: Conditions):
    """Build the cases the conditions describe and solve them: (CaseSet, CaseIndex, Ceilings)."""
    cases, index = cases_for(catalogue, conditions)
    return cases, index, s.solve_ceilings(cases)


def feet(values_m) -> np.ndarray:
    """m -> ft; NaN and infinities (unavailable or above the model top) become NaN (null)."""
    out = np.asarray(values_m, dtype=float) / FT
    return np.where(np.isfinite(out), out, np.nan)


# Below this share of MTOW no transport aircraft flies (its empty weight is more): likely a unit
# slip. The floor where a variant gives no operating empty weight.
LIGHT_FRACTION = 0.3


def empty_weight_floor_kg(variant) -> float:
    """The lightest weight a variant can fly at: its operating empty weight, or LIGHT_FRACTION of
    MTOW where the catalogue gives none."""
    return variant.oew_kg if variant.oew_kg is not None else LIGHT_FRACTION * variant.mtow_kg


def case_notes(cases, res, climb_fpm, mtow_kg, floor_kg) -> list[str]:
    notes = []
    best = np.isnan(cases.mach)
    for i in range(len(cases)):  # text only, per row: the numbers are all computed above
        f, parts = int(res.flags[i]), []
        speed = "at any speed" if best[i] else f"at M{cases.mach[i]:.3f}"
        floor_ft = cases.floor_m[i] / FT
        lowest = "-2,000 ft" if floor_ft <= -1999.0 else f"{floor_ft:,.0f} ft, the thrust table's lowest altitude"
        if f & s.CANNOT_CLIMB:
            parts.append(f"cannot climb at {climb_fpm[i]:g} ft/min {speed}"
                         + ("" if best[i] else f" at any altitude from {lowest} up"))
        if f & s.THRUST_DATA_MACH:
            parts.append(f"M{cases.mach[i]:.3f} outside the thrust table" if not best[i] else "no speed in the thrust table")
        if f & s.PROPELLER_DATA_MACH:
            low, high = cases.propellers[cases.propeller_id[i]].mach_range
            data = f"efficiency data M{low:.3f}-{high:.3f}"
            parts.append(f"M{cases.mach[i]:.3f} outside the propeller efficiency table ({data})" if not best[i]
                         else f"no speed in the propeller efficiency table ({data})")
        if f & s.THRUST_DATA_TOP:
            parts.append(f"still climbing at the thrust table top ({cases.top_m[i] / FT:,.0f} ft)")
        if f & s.NO_BUFFET_AT_MACH:
            data = f"buffet data M{cases.buffet_low[cases.buffet_id[i]]:.3f}-{cases.buffet_high[cases.buffet_id[i]]:.3f}"
            parts.append(f"no buffet data at M{cases.mach[i]:.3f} ({data}): buffet cannot be checked" if not best[i] else
                         f"no buffet data at the speeds allowed ({data}): buffet cannot be checked")
        if f & s.ABOVE_MMO:
            parts.append(f"M{cases.mach[i]:.3f} above MMO {cases.mmo[i]:.3f}")
        if f & s.BELOW_VMO_FLOOR:
            floor_m = res.vmo_floor_m[i]
            where = (f"below {floor_m / FT:,.0f} ft" if np.isfinite(floor_m) and floor_m < MODEL_TOP_M
                     else "at every altitude of the model")
            parts.append(f"M{res.mach[i]:.3f} exceeds VMO {where}, above the other limits' ceiling")
        if f & s.NO_COMMON_ALTITUDE:
            parts.append("thrust and the other limits leave no common altitude")
        if f & s.BELOW_FLOOR:
            parts.append(f"limits cross below {lowest}")
        if f & s.ABOVE_MODEL_TOP:
            parts.append("no limit binds below the model top")
        if res.co_limit[i] >= 0 and res.limit[i] >= 0:
            parts.append(f"{s.LIMITS[res.limit[i]]} and {s.LIMITS[res.co_limit[i]]} bind together")
        parts += weight_note(cases, i, mtow_kg, floor_kg)
        notes.append("; ".join(parts))
    return notes


def weight_note(cases, i, mtow_kg, floor_kg) -> list[str]:
    """Case ``i``'s weight flagged in words: above MTOW, or below the empty weight (none else)."""
    if cases.over_mtow[i]:
        return ["above MTOW"]
    if cases.weight_kg[i] < floor_kg[i]:
        return [f"below the empty weight ({floor_kg[i]:,.0f} kg, {100.0 * floor_kg[i] / mtow_kg[i]:.0f} % of MTOW): "
                "check the weight"]
    return []


def ceilings_table(catalogue, conditions: Conditions) -> pl.DataFrame:
    """One row per variant x engine x weight x ISA deviation x climb criterion."""
    return ceilings_frame(catalogue, conditions, *solve(catalogue, conditions))


def ceilings_frame(catalogue, conditions: Conditions, cases, index, res) -> pl.DataFrame:
    """The ceilings table of solved cases (``cases_for`` order): what :func:`ceilings_table` returns."""
    climb_fpm = index.climb_fpm
    variants = [catalogue.variants[v] for v in index.variant_ids]
    mtow_kg = np.array([v.mtow_kg for v in variants])[cases.variant_index]
    floor_kg = np.array([empty_weight_floor_kg(v) for v in variants])[cases.variant_index]
    max_ft = feet(res.max_altitude_m)
    limit_names = np.array(list(s.LIMITS) + ["none"], dtype=object)
    has_alt = np.isfinite(max_ft)
    limit = np.where(has_alt, limit_names[np.where(res.limit >= 0, res.limit, len(s.LIMITS))],
                     np.where(res.flags & s.ABOVE_MODEL_TOP, "none", None))
    frame = pl.DataFrame({
        "variant": np.asarray(index.variant_ids, dtype=object)[cases.variant_index].tolist(),
        "engine": np.asarray(index.engine_ids, dtype=object)[cases.engine_index].tolist(),
        "weight_kg": cases.weight_kg,
        "isa_dev_c": cases.isa_dev_c,
        "mach": np.where(has_alt | ~np.isnan(cases.mach), res.mach, np.nan),
        "climb_fpm": climb_fpm,
        "thrust_ceiling_ft": feet(res.thrust_m),
        "buffet_ceiling_ft": feet(res.buffet_m),
        "stall_ceiling_ft": feet(res.stall_m),
        "certified_ceiling_ft": feet(res.certified_m),
        "cabin_ceiling_ft": feet(res.cabin_m),
        "max_altitude_ft": max_ft,
        "flight_level": np.where(has_alt, flight_level_number(np.where(has_alt, max_ft, 0.0)), np.nan),
        "limit": pl.Series(limit.tolist(), dtype=pl.String),
        "note": case_notes(cases, res, climb_fpm, mtow_kg, floor_kg),
        "over_mtow": cases.over_mtow,
        "weight_pct_mtow": 100.0 * cases.weight_kg / mtow_kg,
        "below_empty_weight": cases.weight_kg < floor_kg,
    }, nan_to_null=True).with_columns(pl.col("flight_level").cast(pl.Int64))
    if conditions.target_fl_ft is not None:
        frame = frame.with_columns(target_ft=pl.lit(float(conditions.target_fl_ft))).with_columns(
            margin_ft=pl.col("max_altitude_ft") - pl.col("target_ft"),
        ).with_columns(reaches_target=pl.col("margin_ft") >= 0)
    return frame
