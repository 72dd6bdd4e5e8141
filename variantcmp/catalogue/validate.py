"""Engine and variant tables -> records, with every cross-key rule (models, pairs of keys that go
together, references to engine ids, physical consistency)."""

from __future__ import annotations

import difflib
from typing import Any

from ..atmosphere import isa_pressure_pa
from ..constants import M_PER_FT
from .model import ENGINE_MODELS, Engine, Variant
from .problems import describe, fmt_value
from .schema import (BUFFET_CL_RULE, BUFFET_MACH_RULE, ENGINE_COMMON_KEYS, ENGINE_KEYS, ENGINE_MODEL_KEYS,
                     ENGINE_NUMBERS, ENGINE_RATING_KEY, HOT_DAY_KEYS, PROPELLER_EFFICIENCY_RULE, PROPELLER_MACH_RULE,
                     TABLE_ALTITUDE_RULE, TABLE_FRACTION_RULE, TABLE_MACH_RULE, TSFC_TABLE_RULE, VARIANT_KEYS,
                     VARIANT_NUMBERS, VARIANT_REQUIRED)
from .tables import TableReader


def read_engine(t: TableReader) -> Engine | None:
    ident = t.ident()
    label = t.text("label", "a label (free text)")
    model = t.text("model", f"the thrust model, one of {', '.join(map(repr, ENGINE_MODELS))}", required=True)
    if model is not None and model not in ENGINE_MODELS:
        close = difflib.get_close_matches(model, ENGINE_MODELS, n=1, cutoff=0.5)
        hint = f'; did you mean "{close[0]}"?' if close else ""
        t.fail("model", f"expected one of {', '.join(map(repr, ENGINE_MODELS))}, got {describe(model)}{hint}")
        model = None

    # Keys of another thrust model are named as such rather than "unknown".
    elsewhere: dict[str, str] = {}
    allowed = ENGINE_COMMON_KEYS + (ENGINE_MODEL_KEYS[model] if model else ENGINE_KEYS)
    if model:
        for key in ENGINE_KEYS:
            if key not in allowed:
                owners = [m for m, ks in ENGINE_MODEL_KEYS.items() if key in ks]
                elsewhere[key] = (
                    f'not used by model "{model}"; it belongs to model '
                    f"{' or '.join(repr(o) for o in owners)}"
                )
    t.unknown_keys(allowed, elsewhere)

    nums = {
        key: t.number(key, rule, required=model is not None and key == ENGINE_RATING_KEY[model])
        for key, rule in ENGINE_NUMBERS.items()
        if key in allowed
    }

    if model:
        given = [k for k in HOT_DAY_KEYS if t.has(k)]
        if len(given) == 1:
            other = HOT_DAY_KEYS[1] if given[0] == HOT_DAY_KEYS[0] else HOT_DAY_KEYS[0]
            t.fail(other, f"missing: {given[0]} is given, and the flat-rate deviation and the loss per "
                          "deg C above it go together")  # fmt: skip

    table: dict[str, Any] = {}
    if model == "table":
        table = _grid(t, ("table_altitude_ft", "table_mach", "table_thrust_fraction"), TABLE_FRACTION_RULE,
                      "a table engine needs", "thrust fractions")
    if model == "turboprop":
        table = _propeller_efficiency(t)
    if model in ENGINE_MODEL_KEYS and "tsfc_mg_per_ns" in ENGINE_MODEL_KEYS[model]:
        table.update(_tsfc(t))

    if t.bad:
        return None
    kwargs = {k: v for k, v in nums.items() if v is not None}
    return Engine(id=ident, label=label or ident, model=model, **kwargs, **table)


def _grid(t: TableReader, keys: tuple[str, str, str], rule, needs: str, what: str) -> dict[str, Any]:
    """An altitude x Mach grid: increasing altitudes and Machs and one row of values per altitude."""
    alt_key, mach_key, value_key = keys
    alt = t.number_list(alt_key, TABLE_ALTITUDE_RULE, increasing=True)
    mach = t.number_list(mach_key, TABLE_MACH_RULE, increasing=True)
    for key in (alt_key, mach_key):
        if not t.has(key):
            t.fail(key, f"missing: {needs} {key} (at least 2 increasing values)")
    values = _value_rows(t, alt, mach, value_key, rule, needs, what, mach_key)
    return {alt_key: alt, mach_key: mach, value_key: values} if alt and mach and values else {}


def _propeller_efficiency(t: TableReader) -> dict[str, Any]:
    """A constant propeller efficiency, or one against Mach (both lists together, same length)."""
    keys = ("propeller_efficiency_mach", "propeller_efficiency_table")
    has_table = [k for k in keys if t.has(k)]
    if t.has("propeller_efficiency") and has_table:
        t.fail("propeller_efficiency", "give either propeller_efficiency (a constant) or propeller_efficiency_mach "
                                       "with propeller_efficiency_table, not both")  # fmt: skip
        return {}
    if not t.has("propeller_efficiency") and not has_table:
        t.fail("propeller_efficiency", "missing: a turboprop needs propeller_efficiency (e.g. 0.82), or "
                                       "propeller_efficiency_mach with propeller_efficiency_table")  # fmt: skip
        return {}
    if not has_table:
        return {}
    _together(t, keys, "the propeller efficiency against Mach")
    mach = t.number_list(keys[0], PROPELLER_MACH_RULE, increasing=True)
    eta = t.number_list(keys[1], PROPELLER_EFFICIENCY_RULE, increasing=False)
    if mach and eta and len(mach) != len(eta):
        t.fail(keys[1], f"expected one efficiency per Mach in propeller_efficiency_mach ({len(mach)}), got {len(eta)}")
        return {}
    return {keys[0]: mach, keys[1]: eta} if mach and eta else {}


def _tsfc(t: TableReader) -> dict[str, Any]:
    """Fuel data of a jet: the TSFC formula's a (and b), or a table of TSFC at ISA, not both."""
    keys = ("tsfc_table_altitude_ft", "tsfc_table_mach", "tsfc_table_mg_per_ns")
    has_table = any(t.has(k) for k in keys)
    if t.has("tsfc_mg_per_ns") and has_table:
        t.fail("tsfc_mg_per_ns", "give either tsfc_mg_per_ns (with tsfc_mach_slope) or the TSFC table "
                                 "(tsfc_table_altitude_ft, tsfc_table_mach, tsfc_table_mg_per_ns), not both")
        return {}
    if t.has("tsfc_mach_slope") and not t.has("tsfc_mg_per_ns"):
        t.fail("tsfc_mg_per_ns", "missing: tsfc_mach_slope is given, and it goes with tsfc_mg_per_ns")
    if not has_table:
        return {}
    return _grid(t, keys, TSFC_TABLE_RULE, "a TSFC table needs", "TSFC values")


def _value_rows(t: TableReader, alt, mach, key: str, rule, needs: str, what: str, mach_key: str):
    if not t.has(key):
        t.fail(key, f"missing: {needs} {key}, one row of {what} per altitude, one column per Mach")
        return None
    rows = t.raw[key]
    shape = f"{len(alt)} rows (one per altitude) of {len(mach)} values (one per Mach)" if alt and mach else ""
    if not isinstance(rows, list) or not all(isinstance(r, list) for r in rows):
        t.fail(key, f"expected a list of rows, each a list of numbers{', ' + shape if shape else ''}; "
                    f"got {describe(rows)}")  # fmt: skip
        return None
    if alt and len(rows) != len(alt):
        t.fail(key, f"expected {shape}; got {len(rows)} rows")
        return None
    out = []
    for i, row in enumerate(rows):
        if mach and len(row) != len(mach):
            t.fail(f"{key}[{i}]", f"expected {len(mach)} values (one per Mach in {mach_key}), got {len(row)}")
            return None
        vals = [t.checked_number(f"{key}[{i}][{j}]", v, rule) for j, v in enumerate(row)]
        if any(v is None for v in vals):
            return None
        out.append(tuple(vals))
    return tuple(out)


def read_variant(t: TableReader, engine_ids: set[str]) -> Variant | None:
    ident = t.ident()
    label = t.text("label", "a label (free text)")
    t.unknown_keys(VARIANT_KEYS)

    nums = {key: t.number(key, rule, required=key in VARIANT_REQUIRED) for key, rule in VARIANT_NUMBERS.items()}

    options = _engine_options(t, engine_ids)

    # Lift-dependent drag: aspect ratio and Oswald factor, or K directly.
    ar_e = ("aspect_ratio", "oswald_e")
    if not any(t.has(k) for k in ar_e + ("induced_drag_k",)):
        t.fail("oswald_e", "missing: give aspect_ratio and oswald_e, or induced_drag_k (the K of CD = CD0 + K CL^2)")
    elif t.has("induced_drag_k") and t.has("oswald_e"):
        t.fail("induced_drag_k", "give either oswald_e (with aspect_ratio) or induced_drag_k, not both: "
                                 "K = 1 / (pi A e) would be defined twice")  # fmt: skip
    elif not t.has("induced_drag_k"):
        for key in ar_e:
            if not t.has(key):
                other = ar_e[1] if key == ar_e[0] else ar_e[0]
                t.fail(key, f"missing: {other} is given; K = 1 / (pi A e) needs both aspect_ratio and oswald_e "
                            "(or give induced_drag_k)")  # fmt: skip

    _together(t, ("sweep_deg", "thickness_ratio", "korn_factor"), "the wave-drag model")
    _together(t, ("max_cabin_dp_kpa", "cabin_altitude_ft"), "the cabin-pressure limit")

    buffet = _buffet(t)

    dp, cabin_ft = nums.get("max_cabin_dp_kpa"), nums.get("cabin_altitude_ft")
    if dp is not None and cabin_ft is not None:
        # The differential must leave a positive ambient pressure, or the limit would vanish.
        cabin_kpa = float(isa_pressure_pa(cabin_ft * M_PER_FT)) / 1000.0
        if dp >= cabin_kpa:
            t.fail("max_cabin_dp_kpa", f"expected less than the cabin pressure at cabin_altitude_ft "
                                       f"({cabin_kpa:.1f} kPa at {fmt_value(cabin_ft)} ft), got {fmt_value(dp)}")
    mtow, oew = nums["mtow_kg"], nums["oew_kg"]
    if mtow is not None and oew is not None and not oew < mtow:
        t.fail("oew_kg", f"expected the operating empty weight below mtow_kg ({fmt_value(mtow)}), got {fmt_value(oew)}")
    cruise, mmo = nums["cruise_mach"], nums["mmo"]
    if cruise is not None and mmo is not None and cruise > mmo:
        t.fail("cruise_mach", f"expected a cruise Mach no higher than mmo ({fmt_value(mmo)}), got {fmt_value(cruise)}")

    if t.bad:
        return None
    kwargs = {k: v for k, v in nums.items() if v is not None}
    kwargs.setdefault("aspect_ratio", None)
    kwargs.setdefault("oswald_e", None)
    kwargs.setdefault("induced_drag_k", None)
    return Variant(id=ident, label=label or ident, engine_options=options, **kwargs, **buffet)


def _engine_options(t: TableReader, engine_ids: set[str]) -> tuple[str, ...] | None:
    key = "engine_options"
    if not t.has(key):
        t.fail(key, 'missing: expected a list of engine ids like ["eng-a", "eng-b"]')
        return None
    value = t.raw[key]
    if isinstance(value, str):
        t.fail(key, f'expected a list of engine ids like ["{value}"] (square brackets), got {describe(value)}')
        return None
    if not isinstance(value, list):
        t.fail(key, f"expected a list of engine ids, got {describe(value)}")
        return None
    if not value:
        t.fail(key, "expected at least one engine id: a variant with no engine option cannot be computed")
        return None
    out: list[str] = []
    for i, ident in enumerate(value):
        if not isinstance(ident, str):
            t.fail(f"{key}[{i}]", f"expected an engine id in quotes, got {describe(ident)}")
            continue
        ident = ident.strip()
        if ident in out:
            t.fail(f"{key}[{i}]", f'engine "{ident}" is listed twice')
        elif ident not in engine_ids:
            known = sorted(engine_ids)
            same_but_case = [k for k in known if k.lower() == ident.lower()]
            close = difflib.get_close_matches(ident, known, n=1, cutoff=0.6)
            if same_but_case:
                hint = f'; did you mean "{same_but_case[0]}"? (ids are case-sensitive)'
            elif close:
                hint = f'; did you mean "{close[0]}"?'
            elif known:
                hint = f"; known engines: {', '.join(known)}"
            else:
                hint = ""
            t.fail(f"{key}[{i}]", f'no [[engine]] has id "{ident}"{hint}')
        out.append(ident)
    return tuple(out)


def _together(t: TableReader, keys: tuple[str, ...], what: str) -> None:
    given = [k for k in keys if t.has(k)]
    if given and len(given) < len(keys):
        for k in keys:
            if k not in given:
                t.fail(k, f"missing: {what} needs {', '.join(keys)} together ({', '.join(given)} given)")


def _buffet(t: TableReader) -> dict[str, tuple[float, ...]]:
    mach = t.number_list("buffet_mach", BUFFET_MACH_RULE, increasing=True)
    cl = t.number_list("buffet_cl", BUFFET_CL_RULE, increasing=False)
    has_m, has_c = t.has("buffet_mach"), t.has("buffet_cl")
    if has_m != has_c:
        missing = "buffet_cl" if has_m else "buffet_mach"
        t.fail(missing, "missing: the buffet-onset table needs buffet_mach and buffet_cl together")
    if mach and cl and len(mach) != len(cl):
        t.fail("buffet_cl", f"expected one buffet-onset CL per Mach in buffet_mach ({len(mach)}), got {len(cl)}")
        return {}
    if mach and cl:
        return dict(buffet_mach=mach, buffet_cl=cl)
    return {}
