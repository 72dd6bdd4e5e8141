"""Maximum-altitude sweeps: the maximum altitude and the binding limit against weight, ISA deviation
or Mach (result-table layer; no printing).

A weight or ISA sweep is one :func:`variantcmp.table.ceilings_table` over the swept values; a Mach
sweep one :func:`variantcmp.solver.solve_ceilings` call for all points (fixed Mach each).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np
import polars as pl

from . import solver as s
from .cases import FPM, FT, build_cases
from .table import Conditions, ceilings_table, check_selection, selected_pairs
from .units import OptionError, WeightSpec, flight_level_number, format_isa_dev

SWEEP_OVER = {"weight": "weight_kg", "isa": "isa_dev_c", "mach": "mach"}
SWEEP_COLUMNS = ("series", "variant", "engine", "weight_kg", "isa_dev_c", "climb_fpm", "mach",
                 "max_altitude_ft", "flight_level", "limit", "note")
#: Default sweep ranges: ISA deviations (degrees C) for the hot-day curve; weights OEW..MTOW.
DEFAULT_ISA_RANGE_C = (-20.0, 40.0)
DEFAULT_LOW_WEIGHT_PCT_MTOW = 60.0  # when a variant gives no OEW (common practice, no source)


@dataclass(frozen=True)
class Sweep:
    """Maximum altitude against one quantity: ``frame`` has :data:`SWEEP_COLUMNS`, one row per point."""

    over: str  # "weight", "isa" or "mach"
    x_column: str
    frame: pl.DataFrame
    conditions: Conditions


def _series_labels(frame: pl.DataFrame, over: str, conditions: Conditions) -> pl.DataFrame:
    """A label per series as people write it: "v88/ossel-78 42.9t ISA+15 300 ft/min"."""
    parts = [pl.col("variant"), pl.lit("/"), pl.col("engine")]
    if over != "weight" and len(conditions.weights) > 1:
        parts += [pl.lit(" "), (pl.col("weight_kg") / 1000).round(1).map_elements(lambda t: f"{t:g}t",
                                                                                   return_dtype=pl.String)]
    if over != "isa" and len(conditions.isa_devs_c) > 1:
        parts += [pl.lit(" "), pl.col("isa_dev_c").map_elements(format_isa_dev, return_dtype=pl.String)]
    if len(conditions.climb_fpm) > 1:
        parts += [pl.lit(" "), pl.col("climb_fpm").map_elements(lambda c: f"{c:g} ft/min", return_dtype=pl.String)]
    return frame.with_columns(series=pl.concat_str(parts))


def sweep(catalogue, conditions: Conditions, over: str, points: int = 31, value_range=None) -> Sweep:
    """Maximum altitude and binding limit against weight, ISA deviation or Mach, one solver call.

    ``value_range``: (low, high) of the swept quantity: for weight two :class:`WeightSpec` (both kg
    or both %MTOW; default each variant's OEW to MTOW), for ISA degrees C (default -20 to +40), for
    Mach numbers (default each case's speed range: the best-speed search range of the solver).
    """
    if over not in SWEEP_OVER:
        raise OptionError(f"--over: cannot use {over!r}: expected one of {', '.join(SWEEP_OVER)}")
    if not 2 <= points <= 400:
        raise OptionError(f"--points: cannot use {points}: expected 2 to 400 points")
    check_selection(catalogue, conditions)
    pairs = selected_pairs(catalogue, conditions)
    frac = np.linspace(0.0, 1.0, points)
    if over == "weight":
        if value_range is None:
            pct = set()
            for vid in dict.fromkeys(v for v, _ in pairs):
                v = catalogue.variants[vid]
                low = 100.0 * v.oew_kg / v.mtow_kg if v.oew_kg else DEFAULT_LOW_WEIGHT_PCT_MTOW
                pct.update(np.round(low + (100.0 - low) * frac, 9).tolist())
            weights = tuple(WeightSpec(x, "%mtow") for x in sorted(pct))
        else:
            lo, hi = value_range
            if lo.unit != hi.unit:
                raise OptionError("--range: both ends of a weight range must be kg (t, lb) or both %mtow")
            weights = tuple(WeightSpec(float(x), lo.unit) for x in lo.value + (hi.value - lo.value) * frac)
        cond = _replace(conditions, weights=weights)
        frame = ceilings_table(catalogue, cond)
        if value_range is None:  # each variant from its own OEW (or the default share) to MTOW
            low_kg = {vid: (v.oew_kg or v.mtow_kg * DEFAULT_LOW_WEIGHT_PCT_MTOW / 100.0)
                      for vid, v in catalogue.variants.items()}
            frame = frame.filter(pl.col("weight_kg") >= pl.col("variant").replace_strict(low_kg) * (1 - 1e-9))
    elif over == "isa":
        lo, hi = value_range or DEFAULT_ISA_RANGE_C
        cond = _replace(conditions, isa_devs_c=tuple(np.round(lo + (hi - lo) * frac, 9).tolist()))
        frame = ceilings_table(catalogue, cond)
    else:
        cond = conditions
        frame = _mach_sweep(catalogue, conditions, pairs, frac, value_range)
    frame = _series_labels(frame, over, conditions).select(SWEEP_COLUMNS)
    frame = frame.sort("series", SWEEP_OVER[over], maintain_order=True)
    return Sweep(over=over, x_column=SWEEP_OVER[over], frame=frame, conditions=cond)


def _replace(conditions, **changes):
    return dataclasses.replace(conditions, **changes)


def _mach_sweep(catalogue, conditions, pairs, frac, value_range) -> pl.DataFrame:
    cases, index = build_cases(catalogue, pairs, lambda v: [w.resolve_kg(v.mtow_kg) for w in conditions.weights],
                               conditions.isa_devs_c, conditions.climb_fpm, "cruise", conditions.g_margin)
    g = frac.size
    if value_range is None:
        grid = cases.mach_low[:, None] + (cases.mach_high - cases.mach_low)[:, None] * frac[None, :]
    else:
        lo, hi = value_range
        grid = np.broadcast_to(lo + (hi - lo) * frac, (len(cases), g))
    rep = cases.repeat(g).with_mach(grid.ravel())
    res = s.solve_ceilings(rep)
    max_ft = res.max_altitude_m / FT
    has = np.isfinite(max_ft)
    names = np.array(list(s.LIMITS) + ["none"], dtype=object)
    limit = np.where(has, names[np.where(res.limit >= 0, res.limit, len(s.LIMITS))],
                     np.where(res.flags & s.ABOVE_MODEL_TOP, "none", None))
    notes = np.where(has, "", np.where(res.flags & s.ABOVE_MMO, "above MMO",
                                       np.where(res.flags & s.BELOW_VMO_FLOOR, "exceeds VMO at the limits' ceiling",
                                                "no altitude meets every limit")))
    return pl.DataFrame({
        "variant": np.asarray(index.variant_ids, dtype=object)[rep.variant_index].tolist(),
        "engine": np.asarray(index.engine_ids, dtype=object)[rep.engine_index].tolist(),
        "weight_kg": rep.weight_kg,
        "isa_dev_c": rep.isa_dev_c,
        "climb_fpm": rep.climb_ms / FPM,
        "mach": rep.mach,
        "max_altitude_ft": np.where(has, max_ft, np.nan),
        "flight_level": np.where(has, flight_level_number(np.where(has, max_ft, 0.0)), np.nan),
        "limit": pl.Series(limit.tolist(), dtype=pl.String),
        "note": notes.tolist(),
    }, nan_to_null=True).with_columns(pl.col("flight_level").cast(pl.Int64),
                                      pl.col("climb_fpm").round(6))
