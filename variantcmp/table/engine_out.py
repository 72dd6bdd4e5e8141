"""The engine-out table: per variant x engine x weight x ISA deviation, the gross and net ceilings
with one engine out, the drift-down from the start altitude and, when asked, the terrain check of
the net flight path; a polars DataFrame in the units users read (ft, nm, min), nulls with a note
where there is no value."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import polars as pl

from .. import solver as s
from ..atmosphere import height_on_day_m, pressure_altitude_on_day_m
from ..cases import BEST_MACH_LOW, FT
from ..constants import M_PER_NM
from ..solver.driftdown import DriftDown, drift_down
from ..solver.engine_out import EngineOutCeilings, engine_out_cases, engine_out_ceilings, engine_out_terms
from ..solver.fixed_mach import CO_LIMIT_M
from .ceilings import empty_weight_floor_kg, feet, solve, weight_note
from .conditions import Conditions

#: Columns of the engine-out table, in order (the terrain columns follow when a terrain is given).
COLUMNS = (
    "variant", "engine", "weight_kg", "isa_dev_c", "mach", "gross_ceiling_ft", "net_ceiling_ft", "limit", "note",
    "start_altitude_ft", "driftdown_distance_nm", "driftdown_time_min", "level_off_ft", "gross_limit", "net_mach",
    "engine_count", "net_decrement_pct", "weight_pct_mtow", "over_mtow", "below_empty_weight",
)
TERRAIN_COLUMNS = ("terrain_ft", "clearance_ft", "net_clearance_ft", "net_clears", "net_crossing_nm")
#: En-route obstacle clearance of the net flight path in a drift-down (from memory of en-route
#: one-engine-inoperative practice: 2,000 ft while descending).
DEFAULT_CLEARANCE_FT = 2000.0


@dataclass(frozen=True)
class EngineOutOptions:
    """What the engine-out answer is asked for beyond the shared conditions."""

    start_ft: float | None = None  # None: the all-engines maximum altitude at the conditions
    terrain_ft: float | None = None  # highest obstacle, ft above mean sea level; None: no check
    clearance_ft: float = DEFAULT_CLEARANCE_FT


@dataclass(frozen=True)
class DriftProfile:
    """One row's drift-down for a drawing: ``paths`` (columns path "gross" or "net", distance_nm,
    altitude_ft: the points from the start, none where there is no path) and the row (the table's
    values by column name), with the obstacle and obstacle + clearance as pressure altitudes on
    the row's day (ft; None without a terrain)."""

    paths: pl.DataFrame
    row: dict
    terrain_pa_ft: float | None
    required_pa_ft: float | None


@dataclass
class EngineOut:
    """The table and the solver's paths behind it (row i of ``frame`` is case i of ``drift``);
    ``terrain_pa_m`` and ``required_pa_m``: the obstacle and obstacle + clearance as pressure
    altitudes on each row's day (None without a terrain)."""

    frame: pl.DataFrame
    drift: DriftDown
    options: EngineOutOptions
    terrain_pa_m: np.ndarray | None = None
    required_pa_m: np.ndarray | None = None

    def profile(self, row: int) -> DriftProfile:
        """Row ``row``'s drift-down profile (see :class:`DriftProfile`)."""
        parts = []
        for name, path in (("gross", self.drift.gross), ("net", self.drift.net)):
            alt, dist = path.altitude_m[row] / FT, path.distance_m[row] / M_PER_NM
            keep = np.isfinite(alt) & np.isfinite(dist)
            parts.append(pl.DataFrame({"path": [name] * int(keep.sum()), "distance_nm": dist[keep],
                                       "altitude_ft": alt[keep]},
                                      schema={"path": pl.String, "distance_nm": pl.Float64, "altitude_ft": pl.Float64}))
        terrain = None if self.terrain_pa_m is None else float(self.terrain_pa_m[row] / FT)
        required = None if self.required_pa_m is None else float(self.required_pa_m[row] / FT)
        return DriftProfile(pl.concat(parts), self.frame.row(row, named=True), terrain, required)


def engine_out(catalogue, conditions: Conditions, options: EngineOutOptions = EngineOutOptions()) -> EngineOut:
    """Solve the engine-out answer for every case the conditions describe (see the module
    docstring); the start altitude, the terrain and the clearance from ``options``."""
    cases, index, res = solve(catalogue, conditions)
    terms = engine_out_terms(catalogue, cases)
    oei = engine_out_ceilings(cases, terms)
    gross_m, net_m = oei.gross.max_altitude_m, oei.net.max_altitude_m
    n = len(cases)
    start_m = res.max_altitude_m.copy() if options.start_ft is None else np.full(n, options.start_ft * FT)
    start_m[~terms.answerable] = np.nan
    required_m = terrain_pa_m = None
    if options.terrain_ft is not None:
        required_m = pressure_altitude_on_day_m(np.full(n, (options.terrain_ft + options.clearance_ft) * FT),
                                                cases.isa_dev_c)
        terrain_pa_m = pressure_altitude_on_day_m(np.full(n, options.terrain_ft * FT), cases.isa_dev_c)
    drift = drift_down(engine_out_cases(cases, terms), start_m, gross_m, net_m, terms.net_decrement, required_m)
    variants = [catalogue.variants[v] for v in index.variant_ids]
    mtow_kg = np.array([v.mtow_kg for v in variants])[cases.variant_index]
    floor_kg = np.array([empty_weight_floor_kg(v) for v in variants])[cases.variant_index]
    count = np.array([v.engine_count for v in variants])[cases.variant_index]
    has_gross, has_net = np.isfinite(gross_m), np.isfinite(net_m)
    data = {
        "variant": np.asarray(index.variant_ids, dtype=object)[cases.variant_index].tolist(),
        "engine": np.asarray(index.engine_ids, dtype=object)[cases.engine_index].tolist(),
        "weight_kg": cases.weight_kg,
        "isa_dev_c": cases.isa_dev_c,
        "mach": np.where(has_gross, oei.gross.mach, np.nan),
        "gross_ceiling_ft": feet(gross_m),
        "net_ceiling_ft": feet(net_m),
        "limit": pl.Series(limit_names(cases, oei.net).tolist(), dtype=pl.String),
        "note": engine_out_notes(cases, res, oei, drift, start_m, conditions, options, count, mtow_kg, floor_kg),
        "start_altitude_ft": feet(start_m),
        "driftdown_distance_nm": drift.gross.total_distance_m / M_PER_NM,
        "driftdown_time_min": drift.gross.total_time_s / 60.0,
        "level_off_ft": feet(np.where(np.isfinite(drift.gross.total_distance_m), drift.gross.end_m, np.nan)),
        "gross_limit": pl.Series(limit_names(cases, oei.gross).tolist(), dtype=pl.String),
        "net_mach": np.where(has_net, oei.net.mach, np.nan),
        "engine_count": count,
        "net_decrement_pct": 100.0 * terms.net_decrement,
        "weight_pct_mtow": 100.0 * cases.weight_kg / mtow_kg,
        "over_mtow": cases.over_mtow,
        "below_empty_weight": cases.weight_kg < floor_kg,
    }
    if options.terrain_ft is not None:
        data.update(terrain_columns(cases, drift, start_m, net_m, required_m, options))
    return EngineOut(pl.DataFrame(data, nan_to_null=True), drift, options, terrain_pa_m, required_m)


def engine_out_table(catalogue, conditions: Conditions, options: EngineOutOptions = EngineOutOptions()) -> pl.DataFrame:
    """The engine-out table alone (see :func:`engine_out`)."""
    return engine_out(catalogue, conditions, options).frame


def terrain_columns(cases, drift: DriftDown, start_m, net_m, required_m, options: EngineOutOptions) -> dict:
    """The net flight path against the highest obstacle: its lowest height on the day (the net
    ceiling, or the start where that lies lower) above the obstacle, whether that is at least the
    clearance (null where the net path cannot be flown), and the still-air distance from the start at which it descends through obstacle +
    clearance (0 where it starts below; null where it clears). Heights above mean sea level from
    the pressure altitudes on the day (:func:`variantcmp.atmosphere.height_on_day_m`, QNH 1013.25)."""
    n = len(cases)
    # The lowest point of a net path that can be flown (no path, no check).
    lowest = np.where(np.isfinite(drift.net.total_distance_m), np.fmin(start_m, net_m), np.nan)
    clearance_ft = (height_on_day_m(lowest, cases.isa_dev_c) / FT) - options.terrain_ft
    known = np.isfinite(clearance_ft)
    clears = known & (clearance_ft >= options.clearance_ft - 1e-6)
    with np.errstate(invalid="ignore"):
        below_at_start = known & ~clears & (start_m <= required_m)
    crossing = drift.net.distance_at(required_m) / M_PER_NM
    crossing = np.where(below_at_start, 0.0, np.where(known & ~clears, crossing, np.nan))
    return {
        "terrain_ft": np.full(n, float(options.terrain_ft)),
        "clearance_ft": np.full(n, float(options.clearance_ft)),
        "net_clearance_ft": clearance_ft,
        "net_clears": pl.Series(np.where(known, clears, None).tolist(), dtype=pl.Boolean),
        "net_crossing_nm": crossing,
    }


def limit_names(cases, res) -> np.ndarray:
    """What binds at a ceiling: thrust, buffet or stall, and "thrust at MMO" / "thrust at VMO"
    where the best speed is held at a speed limit there; None where there is no ceiling."""
    names = np.array(list(s.LIMITS) + [None], dtype=object)
    out = names[np.where(res.limit >= 0, res.limit, len(s.LIMITS))]
    thrust = (res.limit == s.LIMITS.index("thrust")) & np.isfinite(res.max_altitude_m)
    with np.errstate(invalid="ignore"):
        at_mmo = thrust & (res.mach >= cases.mmo - 1e-6)
        at_vmo = thrust & ~at_mmo & (np.abs(res.max_altitude_m - res.vmo_floor_m) <= CO_LIMIT_M)
    out[at_mmo] = "thrust at MMO"
    out[at_vmo] = "thrust at VMO"
    return out


def _flag_words(flags: int, cases, i: int) -> list[str]:
    parts = []
    if flags & s.CANNOT_CLIMB:
        floor_ft = cases.floor_m[i] / FT
        lowest = "-2,000 ft" if floor_ft <= -1999.0 else f"{floor_ft:,.0f} ft (the thrust table's lowest)"
        parts.append(f"cannot hold any altitude from {lowest} up at any speed")
    if flags & s.THRUST_DATA_MACH:
        parts.append("no speed in the thrust table")
    if flags & s.THRUST_DATA_TOP:
        parts.append(f"holds its level at the thrust table's top ({cases.top_m[i] / FT:,.0f} ft): beyond the data")
    if flags & s.NO_BUFFET_AT_MACH:
        parts.append("no buffet data at the speeds allowed")
    if flags & s.BELOW_VMO_FLOOR:
        parts.append("every speed that holds its level exceeds VMO")
    if flags & s.NO_COMMON_ALTITUDE:
        parts.append("thrust and the other limits leave no common altitude")
    if flags & s.BELOW_FLOOR:
        parts.append("limits cross below -2,000 ft")
    return parts


def engine_out_notes(cases, res, oei: EngineOutCeilings, drift: DriftDown, start_m, conditions, options, count,
                     mtow_kg, floor_kg) -> list[str]:
    """Why a value is missing, and what a row's numbers mean where that is not plain."""
    from ..units import format_flight_level

    notes = []
    gross, net = oei.gross, oei.net
    for i in range(len(cases)):  # text only, per row: the numbers are all computed above
        parts = []
        if count[i] < 2:
            parts.append("single engine: no engine-out answer")
        elif np.isnan(gross.max_altitude_m[i]):
            parts.append("no gross ceiling with one engine out: " + ("; ".join(_flag_words(int(gross.flags[i]), cases, i))
                                                                    or "no answer"))
        else:
            if np.isnan(net.max_altitude_m[i]):
                parts.append("no net ceiling: " + ("; ".join(_flag_words(int(net.flags[i]), cases, i)) or "no answer"))
            elif net.co_limit[i] >= 0 and net.limit[i] >= 0:
                parts.append(f"{s.LIMITS[net.limit[i]]} and {s.LIMITS[net.co_limit[i]]} bind together at the net ceiling")
            if np.isnan(start_m[i]):
                parts.append(f"no all-engines maximum altitude at {conditions.climb_fpm[0]:g} ft/min to start "
                             "from (give a start level)")
            elif start_m[i] <= drift.gross.end_m[i] and np.isfinite(drift.gross.total_distance_m[i]):
                parts.append(f"holds {format_flight_level(start_m[i] / FT)} with one engine out: no drift-down")
            elif drift.gross.no_speed_at_start[i]:
                parts.append(f"no speed meets stall, buffet margin, MMO and VMO at {format_flight_level(start_m[i] / FT)} "
                             "at this weight: start lower")
            elif drift.gross.no_speed[i]:
                parts.append(f"no speed within the limits on the way down from {format_flight_level(start_m[i] / FT)}")
            elif np.isnan(drift.gross.total_distance_m[i]):
                parts.append("no drift-down path to the gross ceiling")
        held = [name for name, res in (("gross", gross), ("net", net))
                if np.isfinite(res.max_altitude_m[i]) and res.mach[i] <= cases.mach_low[i] + 1e-6
                and cases.mach_low[i] > BEST_MACH_LOW + 1e-9]
        if held:
            parts.append(f"{' and '.join(held)} speed held at M{cases.mach_low[i]:.3f}, the data's lowest Mach")
        parts += weight_note(cases, i, mtow_kg, floor_kg)
        notes.append("; ".join(parts))
    return notes
