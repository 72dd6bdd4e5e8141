"""The planner's inverse questions as tables: the heaviest weight and the warmest day for a level.

:func:`heaviest_table`: one row per variant x engine x target x ISA deviation x climb criterion;
:func:`hottest_table`: one row per variant x engine x weight x target x climb criterion;
:func:`planner_table`: the ceilings grid with both answers beside each row (the app's planner).
Units users read (kg, deg C, ft, Mach); nulls where the model gives no value, and a ``note``
saying why. The numbers come from :mod:`variantcmp.solver.heaviest` and
:mod:`variantcmp.solver.hottest`.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import polars as pl

from .. import solver as s
from ..atmosphere import isa_temperature_k
from ..cases import FT, KT, build_cases
from ..constants import M_PER_FT
from ..solver import level as lv
from ..solver.heaviest import solve_heaviest
from ..solver.hottest import DAY_HIGH_C, DAY_LOW_C, solve_hottest
from .ceilings import ceilings_table, empty_weight_floor_kg
from .conditions import Conditions, selected_pairs

HEAVIEST_COLUMNS = (
    "variant", "engine", "isa_dev_c", "mach", "climb_fpm", "target_ft", "max_weight_kg", "max_weight_pct_mtow",
    "over_mtow", "limit", "reason", "note", "thrust_weight_kg", "buffet_weight_kg", "stall_weight_kg", "mtow_kg",
)
HOTTEST_COLUMNS = (
    "variant", "engine", "weight_kg", "weight_pct_mtow", "mach", "climb_fpm", "target_ft", "max_isa_dev_c",
    "level_oat_c", "limit", "reason", "note", "over_mtow", "below_empty_weight",
)
#: Where an answer is empty, why, in one word (the first that applies; the note says it in full).
REASONS = (
    (lv.ABOVE_CERTIFIED, "certified"), (lv.ABOVE_CABIN, "cabin"), (s.THRUST_DATA_TOP, "thrust_table_top"),
    (s.BELOW_FLOOR, "thrust_table_floor"), (s.ABOVE_MMO, "mmo"), (s.BELOW_VMO_FLOOR, "vmo"),
    (s.THRUST_DATA_MACH, "thrust_data"), (s.PROPELLER_DATA_MACH, "propeller_data"), (s.NO_BUFFET_AT_MACH, "buffet_data"), (lv.BUFFET_BELOW, "buffet"),
    (lv.STALL_BELOW, "stall"), (s.CANNOT_CLIMB, "thrust"), (lv.FAILS_AT_COLDEST, "thrust"),
    (lv.HOLDS_AT_WARMEST, "holds_on_warmest_day"),
)
K = 273.15


def _by_target(n_blocks: int, block: int, targets_ft):
    """Case index, level (ft, as given) and level (m) with a target dimension put before the last
    ``block`` cases of each of ``n_blocks`` blocks: block, target, then the block's own order."""
    t = np.asarray(targets_ft, dtype=float)
    idx = (np.arange(n_blocks)[:, None, None] * block + np.zeros((1, t.size, 1), dtype=np.int64)
           + np.arange(block)[None, None, :]).ravel()
    level_ft = np.broadcast_to(t[None, :, None], (n_blocks, t.size, block)).ravel()
    return idx, level_ft, level_ft * M_PER_FT


def _names(index, cases):
    return (np.asarray(index.variant_ids, dtype=object)[cases.variant_index].tolist(),
            np.asarray(index.engine_ids, dtype=object)[cases.engine_index].tolist())


def _reasons(flags, answered, light=None) -> list:
    """The ``reason`` column: a word from REASONS where there is no answer (``light``: a heaviest
    weight below the empty weight), null where there is one."""
    out = np.full(flags.shape, None, dtype=object)
    for flag, word in reversed(REASONS):  # the first that applies is written last
        out[(flags & flag).astype(bool)] = word
    if light is not None:
        out[light] = "empty_weight"
    out[answered] = None
    return out.tolist()


def _limit_names(limit) -> list:
    names = np.array(list(s.LIMITS) + [None], dtype=object)
    return names[np.where(limit >= 0, limit, len(s.LIMITS))].tolist()


def _per_variant(catalogue, index, cases, get):
    variants = [catalogue.variants[v] for v in index.variant_ids]
    return np.array([get(v) for v in variants], dtype=float)[cases.variant_index]


def heaviest_table(catalogue, conditions: Conditions, targets_ft) -> pl.DataFrame:
    """The heaviest weight at which each target is within every limit (the limits and options of
    ``ceilings``), per variant x engine x target x ISA deviation x climb criterion; the weights of
    ``conditions`` are not used. Not capped at MTOW (``over_mtow``: reachable at every permitted
    weight); null below the variant's empty weight (or 30 % of MTOW), with the note saying why."""
    pairs = selected_pairs(catalogue, conditions)
    base, index = build_cases(catalogue, pairs, lambda v: [v.mtow_kg], conditions.isa_devs_c, conditions.climb_fpm,
                              conditions.mach, conditions.g_margin)
    block = len(conditions.isa_devs_c) * len(conditions.climb_fpm)
    idx, level_ft, level_m = _by_target(len(pairs), block, targets_ft)
    cases = base.take(idx)
    climb_fpm = index.climb_fpm[idx]
    res = solve_heaviest(cases, level_m)
    mtow = _per_variant(catalogue, index, cases, lambda v: v.mtow_kg)
    floor = _per_variant(catalogue, index, cases, empty_weight_floor_kg)
    light = res.weight_kg < floor
    notes = heaviest_notes(cases, res, climb_fpm, floor)
    weight = np.where(light, np.nan, res.weight_kg)
    variant, engine = _names(index, cases)
    return pl.DataFrame({
        "variant": variant, "engine": engine, "isa_dev_c": cases.isa_dev_c,
        "mach": np.where(np.isfinite(weight) | ~np.isnan(cases.mach), res.mach, np.nan),
        "climb_fpm": climb_fpm, "target_ft": level_ft, "max_weight_kg": weight,
        "max_weight_pct_mtow": 100.0 * weight / mtow, "over_mtow": np.isfinite(weight) & (weight > mtow * (1 + 1e-9)),
        "limit": pl.Series(_limit_names(np.where(np.isfinite(weight), res.limit, -1)), dtype=pl.String),
        "reason": pl.Series(_reasons(res.flags, np.isfinite(weight), light), dtype=pl.String),
        "note": notes,
        "thrust_weight_kg": np.where(res.thrust_kg > 0.0, res.thrust_kg, np.nan),
        "buffet_weight_kg": np.where(np.isfinite(res.buffet_kg), res.buffet_kg, np.nan),
        "stall_weight_kg": res.stall_kg, "mtow_kg": mtow,
    }, nan_to_null=True)


def hottest_table(catalogue, conditions: Conditions, targets_ft) -> pl.DataFrame:
    """The warmest ISA deviation (searched over -40 to +50 deg C) at which each target is within
    every limit, per variant x engine x weight x target x climb criterion; the deviations of
    ``conditions`` are not used. Null where the target holds even on the warmest day searched or
    fails even on the coldest (the note says which), never the bound as if it were an answer."""
    pairs = selected_pairs(catalogue, conditions)
    base, index = build_cases(catalogue, pairs, lambda v: [w.resolve_kg(v.mtow_kg) for w in conditions.weights],
                              (0.0,), conditions.climb_fpm, conditions.mach, conditions.g_margin)
    idx, level_ft, level_m = _by_target(len(pairs) * len(conditions.weights), len(conditions.climb_fpm), targets_ft)
    cases = base.take(idx)
    climb_fpm = index.climb_fpm[idx]
    res = solve_hottest(cases, level_m)
    mtow = _per_variant(catalogue, index, cases, lambda v: v.mtow_kg)
    floor = _per_variant(catalogue, index, cases, empty_weight_floor_kg)
    variant, engine = _names(index, cases)
    return pl.DataFrame({
        "variant": variant, "engine": engine, "weight_kg": cases.weight_kg,
        "weight_pct_mtow": 100.0 * cases.weight_kg / mtow, "mach": res.mach, "climb_fpm": climb_fpm,
        "target_ft": level_ft, "max_isa_dev_c": res.isa_dev_c,
        "level_oat_c": isa_temperature_k(level_m) + res.isa_dev_c - K,
        "limit": pl.Series(_limit_names(res.limit), dtype=pl.String),
        "reason": pl.Series(_reasons(res.flags, np.isfinite(res.isa_dev_c)), dtype=pl.String),
        "note": hottest_notes(cases, res, climb_fpm, floor),
        "over_mtow": cases.over_mtow, "below_empty_weight": cases.weight_kg < floor,
    }, nan_to_null=True)


def planner_table(catalogue, conditions: Conditions, target_ft: float) -> pl.DataFrame:
    """The ceilings table at the conditions with a target, and beside each row the heaviest weight
    for the target on that row's day and the warmest day for it at that row's weight (with their
    limits, notes and margins: ``weight_margin_kg`` = heaviest - weight, ``isa_margin_c`` =
    warmest - the row's deviation)."""
    conditions = replace(conditions, target_fl_ft=float(target_ft))
    frame = ceilings_table(catalogue, conditions)
    keys = ["variant", "engine", "climb_fpm"]
    heavy = heaviest_table(catalogue, conditions, (target_ft,)).select(
        *keys, "isa_dev_c", "max_weight_kg", "max_weight_pct_mtow", pl.col("limit").alias("weight_limit"),
        pl.col("reason").alias("weight_reason"), pl.col("note").alias("weight_note"), pl.col("mach").alias("weight_mach"))
    hot = hottest_table(catalogue, conditions, (target_ft,)).select(
        *keys, "weight_kg", "max_isa_dev_c", pl.col("limit").alias("isa_limit"), pl.col("reason").alias("isa_reason"),
        pl.col("note").alias("isa_note"), pl.col("mach").alias("isa_mach"))
    return (frame.with_row_index("_order")
            .join(heavy, on=[*keys, "isa_dev_c"], how="left")
            .join(hot, on=[*keys, "weight_kg"], how="left")
            .sort("_order").drop("_order")
            .with_columns(weight_margin_kg=pl.col("max_weight_kg") - pl.col("weight_kg"),
                          isa_margin_c=pl.col("max_isa_dev_c") - pl.col("isa_dev_c")))


# --- notes: text only, per row (every number is computed above) -----------------------------------

def _level_reasons(cases, i, f, best, mach):
    """Why no weight or day reaches the level at the case's speed: the weight- and day-free limits."""
    parts = []
    at = "at any speed" if best else f"at M{mach:.3f}"
    if f & lv.ABOVE_CERTIFIED:
        parts.append(f"above the certified ceiling ({cases.certified_m[i] / FT:,.0f} ft)")
    if f & lv.ABOVE_CABIN:
        parts.append(f"above the cabin-pressure ceiling ({cases.cabin_m[i] / FT:,.0f} ft)")
    if f & s.THRUST_DATA_TOP:
        parts.append(f"above the thrust table (top {cases.top_m[i] / FT:,.0f} ft)")
    if f & s.BELOW_FLOOR:
        parts.append(f"below the lowest altitude of the thrust data ({cases.floor_m[i] / FT:,.0f} ft)")
    if f & s.THRUST_DATA_MACH:
        parts.append("no speed in the thrust table" if best else f"M{mach:.3f} outside the thrust table")
    if f & s.PROPELLER_DATA_MACH:
        low, high = cases.propellers[cases.propeller_id[i]].mach_range
        data = f"efficiency data M{low:.3f}-{high:.3f}"
        parts.append(f"no speed in the propeller efficiency table ({data})" if best
                     else f"M{mach:.3f} outside the propeller efficiency table ({data})")
    if f & s.NO_BUFFET_AT_MACH:
        b = cases.buffet_id[i]
        data = f"buffet data M{cases.buffet_low[b]:.3f}-{cases.buffet_high[b]:.3f}"
        parts.append(f"no buffet data {at} ({data}): buffet cannot be checked")
    if f & s.ABOVE_MMO:
        parts.append(f"M{mach:.3f} above MMO {cases.mmo[i]:.3f}")
    if f & s.BELOW_VMO_FLOOR:
        vmo = f"VMO {cases.vmo_ms[i] / KT:,.0f} kt"
        parts.append(f"even M{cases.mach_low[i]:.3f} exceeds {vmo} at this level" if best
                     else f"M{mach:.3f} exceeds {vmo} at this level")
    return parts


def heaviest_notes(cases, res, climb_fpm, floor_kg) -> list[str]:
    """Why a heaviest weight is missing, or what to know about it, per row."""
    notes = []
    best = np.isnan(cases.mach)
    for i in range(len(cases)):
        f, w = int(res.flags[i]), res.weight_kg[i]
        speed = "at any speed" if best[i] else f"at M{res.mach[i]:.3f}"
        parts = _level_reasons(cases, i, f, best[i], res.mach[i])
        if f & s.CANNOT_CLIMB:
            parts.append(f"thrust cannot hold {climb_fpm[i]:g} ft/min at this level {speed} at any weight")
        if np.isfinite(w) and w < floor_kg[i]:
            parts.append(f"only {w / 1000.0:,.1f} t ({s.LIMITS[res.limit[i]]}), below the empty weight "
                         f"({floor_kg[i] / 1000.0:,.1f} t)")
        elif np.isfinite(w):
            if f & lv.CLIMBS_ABOVE:
                parts.append("at this weight it still climbs above the level: thrust is shortest at the level itself "
                             "at this speed")
            if res.co_limit[i] >= 0:
                parts.append(f"{s.LIMITS[res.limit[i]]} and {s.LIMITS[res.co_limit[i]]} bind together")
        notes.append("; ".join(parts))
    return notes


def hottest_notes(cases, res, climb_fpm, floor_kg) -> list[str]:
    """Why a warmest day is missing, or what to know about it, per row."""
    notes = []
    best = np.isnan(cases.mach)
    for i in range(len(cases)):
        f = int(res.flags[i])
        speed = "at any speed" if best[i] else f"at M{res.mach[i]:.3f}"
        parts = _level_reasons(cases, i, f, best[i], res.mach[i])
        if f & lv.BUFFET_BELOW:
            parts.append(f"buffet onset below the level at this weight on every day {speed}")
        if f & lv.STALL_BELOW:
            parts.append(f"stall below the level at this weight on every day {speed}")
        if f & lv.HOLDS_AT_WARMEST:
            parts.append(f"holds even at ISA{DAY_HIGH_C:+.0f}, the warmest day searched")
        if f & lv.FAILS_AT_COLDEST:
            parts.append(f"fails even at ISA{DAY_LOW_C:+.0f}, the coldest day searched: thrust cannot hold "
                         f"{climb_fpm[i]:g} ft/min {speed}")
        if f & lv.NOT_MONOTONE:
            parts.append(f"holds again at ISA{res.holds_again_c[i]:+.0f}: the ceiling does not fall steadily with "
                         "temperature here; the first crossing from the cold side is shown")
        if f & lv.CLIMBS_ABOVE:
            parts.append("on that day it still climbs above the level: thrust is shortest at the level itself at this "
                         "speed")
        if res.co_limit[i] >= 0 and res.limit[i] >= 0:
            parts.append(f"{s.LIMITS[res.limit[i]]} and {s.LIMITS[res.co_limit[i]]} bind together")
        if cases.over_mtow[i]:
            parts.append("above MTOW")
        elif cases.weight_kg[i] < floor_kg[i]:
            parts.append(f"below the empty weight ({floor_kg[i]:,.0f} kg): check the weight")
        notes.append("; ".join(parts))
    return notes
