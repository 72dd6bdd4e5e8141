"""The step-climb table: per variant x engine x ISA deviation x climb criterion, the levels flown
from a starting weight down to a final one at a fixed Mach, the weights at which to step up, and
the fuel, still-air distance and time at each level."""

from __future__ import annotations

import numpy as np
import polars as pl

from ..cases import FT, build_cases
from ..solver import cruise as cr
from ..solver import solve_ceilings
from ..solver.fuel_flow import CruisePhysics, fuel_data
from ..solver.step_climb import STOP_NOT_BETTER, STOP_NOT_REACHED, STOP_TOP, specific_range_at, step_climbs
from ..units import OptionError, WeightSpec, format_flight_level
from .conditions import Conditions, selected_pairs
from .cruise import M_PER_NM, fixed_mach_only, fuel_notes, nm_per_t

#: Columns of the step-climb table, in order: one row per level flown.
STEP_COLUMNS = (
    "variant", "engine", "isa_dev_c", "climb_fpm", "mach", "segment", "flight_level", "start_weight_kg",
    "end_weight_kg", "fuel_kg", "distance_nm", "time_min", "specific_range_start_nm_per_t",
    "specific_range_end_nm_per_t", "note",
)


def step_climb_table(catalogue, conditions: Conditions, heavy: WeightSpec, light: WeightSpec,
                     scheme: str = cr.DEFAULT_SCHEME) -> pl.DataFrame:
    """The step-climb schedule of every variant x engine x ISA deviation x climb criterion at the
    conditions' Mach, from ``heavy`` down to ``light`` on ``scheme``'s levels (see
    :mod:`variantcmp.solver.step_climb`); a case with no level to start at has one row, its note
    saying why. OptionError where ``heavy`` is not above ``light`` for a variant."""
    fixed_mach_only(conditions)
    pairs = selected_pairs(catalogue, conditions)
    for vid in dict.fromkeys(v for v, _ in pairs):
        mtow = catalogue.variants[vid].mtow_kg
        if not heavy.resolve_kg(mtow) > light.resolve_kg(mtow):
            raise OptionError(f"--from-weight/--to-weight: for {vid} the starting weight {heavy} "
                              f"({heavy.resolve_kg(mtow):,.0f} kg) must be above the final one {light} "
                              f"({light.resolve_kg(mtow):,.0f} kg): fuel burns off")
    cases, index = build_cases(catalogue, pairs, lambda v: [heavy.resolve_kg(v.mtow_kg)], conditions.isa_devs_c,
                               conditions.climb_fpm, conditions.mach, conditions.g_margin)
    variants = [catalogue.variants[v] for v in index.variant_ids]
    light_kg = np.array([light.resolve_kg(v.mtow_kg) for v in variants])[cases.variant_index]
    heavy_kg = cases.weight_kg.copy()
    res = solve_ceilings(cases)
    cruise = CruisePhysics.of(catalogue, cases)
    optimum_m, _, flags = cr.optimum_altitude(cruise, cases.mach)
    levels = cr.scheme_levels_m(scheme)
    start_m, _ = cr.best_level(cruise, cases.mach, levels, optimum_m, res.max_altitude_m, flags)
    fuel = fuel_data(catalogue, cases)
    plan, distance_m, time_s = step_climbs(cases, fuel, levels, start_m, light_kg, heavy_kg)
    notes = fuel_notes(catalogue, cruise, cases.mach, flags)
    # One row per segment flown, in case order then segment order.
    ci, sj = np.nonzero(~np.isnan(plan.level_m))
    level_m, start_kg, end_kg = plan.level_m[ci, sj], plan.start_kg[ci, sj], plan.end_kg[ci, sj]
    sr_start = specific_range_at(cases, fuel, ci, start_kg, level_m, cases.mach[ci])
    sr_end = specific_range_at(cases, fuel, ci, end_kg, level_m, cases.mach[ci])
    segment_notes = [_segment_note(j, int(plan.segments[i]), lv, int(plan.stop[i]), light_kg[i], levels)
                     for i, j, lv in zip(ci.tolist(), sj.tolist(), level_m.tolist())]
    # A case with no level to start at: one row saying why.
    none = np.flatnonzero(plan.segments == 0)
    why = []
    for i in none.tolist():  # text only
        reason = notes[i] or ([f"no level of the {scheme} ft scheme at or below the maximum altitude at "
                               f"{heavy_kg[i]:,.0f} kg"] if np.isfinite(res.max_altitude_m[i])
                              else [f"no maximum altitude at {heavy_kg[i]:,.0f} kg at M{cases.mach[i]:.3f}"])
        why.append("; ".join(reason))
    case = np.concatenate([ci, none])
    order = np.argsort(case, kind="stable")
    nan = np.full(none.size, np.nan)

    def both(a, fill=nan):
        return np.concatenate([np.asarray(a, dtype=float), fill])[order]

    frame = pl.DataFrame({
        "variant": np.asarray(index.variant_ids, dtype=object)[cases.variant_index[case[order]]].tolist(),
        "engine": np.asarray(index.engine_ids, dtype=object)[cases.engine_index[case[order]]].tolist(),
        "isa_dev_c": cases.isa_dev_c[case[order]],
        "climb_fpm": index.climb_fpm[case[order]],
        "mach": cases.mach[case[order]],
        "segment": both(sj + 1.0),
        "flight_level": both(np.round(level_m / FT / 100.0)),
        "start_weight_kg": both(start_kg),
        "end_weight_kg": both(end_kg),
        "fuel_kg": both(start_kg - end_kg),
        "distance_nm": both(distance_m[ci, sj] / M_PER_NM),
        "time_min": both(time_s[ci, sj] / 60.0),
        "specific_range_start_nm_per_t": both(nm_per_t(sr_start)),
        "specific_range_end_nm_per_t": both(nm_per_t(sr_end)),
        "note": np.asarray(segment_notes + why, dtype=object)[order].tolist(),
    }, nan_to_null=True).with_columns(pl.col("segment").cast(pl.Int64), pl.col("flight_level").cast(pl.Int64))
    return frame.select(STEP_COLUMNS)


def _segment_note(j, count, level_m, stop, light_kg, levels) -> str:
    parts = []
    if j > 0:
        parts.append(f"step up to {format_flight_level(level_m / FT)}")
    if j + 1 == count:
        nxt = levels[levels > level_m + 1e-6]
        if stop & STOP_TOP or not nxt.size:
            parts.append("no higher level in the scheme")
        else:
            reasons = []
            if stop & STOP_NOT_REACHED:
                reasons.append("above the maximum altitude")
            if stop & STOP_NOT_BETTER:
                reasons.append("no better specific range")
            parts.append(f"{format_flight_level(nxt[0] / FT)}: {' and '.join(reasons)} down to {light_kg:,.0f} kg")
    return "; ".join(parts)
