"""Fleet catalogues: TOML files of engine options and aircraft variants.

`load_catalogue` reads a catalogue, checks every value (type, finiteness, a plausible
physical range, cross references between tables) and returns frozen dataclasses, or
raises one `CatalogueError` that lists every problem found, each with the file, the key
path and what was expected.  No physics lives here.

The ranges are plausibility bounds of our own choosing, wide enough for any subsonic
transport or special-mission type, narrow enough to catch typos and unit slips (a wing
area in ft2, a thrust in lbf, an Oswald factor written as a percentage).
"""

from __future__ import annotations

import difflib
import math
import os
import re
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from .atmosphere import isa_pressure_pa
from .constants import M_PER_FT

__all__ = [
    "Problem",
    "CatalogueError",
    "Engine",
    "Variant",
    "Catalogue",
    "ENGINE_MODELS",
    "load_catalogue",
    "bundled_fleet_dir",
    "demo_catalogue_path",
    "demo_catalogue_paths",
    "summarise",
]

ENGINE_MODELS = ("density-lapse", "turbofan", "table")
DEMO_CATALOGUE = "fernholt-regional.toml"


# --------------------------------------------------------------------------- results


@dataclass(frozen=True)
class Problem:
    """One thing wrong with a catalogue."""

    file: str
    key: str  # key path like 'variant[2] "vr-104".wing_area_m2', or "" for the whole file
    message: str

    def __str__(self) -> str:
        return f"{self.file}: {self.key}: {self.message}" if self.key else f"{self.file}: {self.message}"


class CatalogueError(Exception):
    """A catalogue that cannot be used; `problems` lists every reason at once."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__(str(self))

    def __str__(self) -> str:
        return "\n".join(str(p) for p in self.problems)


@dataclass(frozen=True)
class Engine:
    """One engine option; thrusts per engine."""

    id: str
    label: str
    model: str  # "density-lapse" | "turbofan" | "table"
    static_thrust_kn: float
    rating_fraction: float = 1.0
    flat_rate_isa_dev_c: float | None = None
    hot_day_loss_per_c: float = 0.0
    # density-lapse
    lapse_exponent: float = 1.0
    lapse_exponent_above_tropopause: float | None = None
    # turbofan
    throttle_ratio: float = 1.0
    # table: thrust / static thrust at ISA, [altitude row][mach column]
    table_altitude_ft: tuple[float, ...] = ()
    table_mach: tuple[float, ...] = ()
    table_thrust_fraction: tuple[tuple[float, ...], ...] = ()


@dataclass(frozen=True)
class Variant:
    """One aircraft variant."""

    id: str
    label: str
    engine_options: tuple[str, ...]
    engine_count: int
    wing_area_m2: float
    aspect_ratio: float | None
    oswald_e: float | None
    induced_drag_k: float | None
    cd0: float
    cl_max: float
    mtow_kg: float
    cruise_mach: float
    oew_kg: float | None = None
    max_altitude_ft: float | None = None
    mmo: float | None = None
    vmo_kt: float | None = None
    buffet_mach: tuple[float, ...] = ()
    buffet_cl: tuple[float, ...] = ()
    sweep_deg: float | None = None
    thickness_ratio: float | None = None
    korn_factor: float | None = None
    max_cabin_dp_kpa: float | None = None
    cabin_altitude_ft: float | None = None

    @property
    def k(self) -> float:
        """Induced-drag factor K of CD = CD0 + K CL^2: given, or 1 / (pi A e)."""
        if self.induced_drag_k is not None:
            return self.induced_drag_k
        return 1.0 / (math.pi * self.aspect_ratio * self.oswald_e)

    @property
    def has_buffet(self) -> bool:
        return len(self.buffet_mach) > 0

    @property
    def has_wave_drag(self) -> bool:
        return None not in (self.sweep_deg, self.thickness_ratio, self.korn_factor)

    @property
    def has_cabin(self) -> bool:
        return self.max_cabin_dp_kpa is not None and self.cabin_altitude_ft is not None


@dataclass(frozen=True)
class Catalogue:
    path: Path
    title: str
    description: str
    engines: dict[str, Engine]  # file order
    variants: dict[str, Variant]  # file order


# --------------------------------------------------------------------------- value rules


@dataclass(frozen=True)
class _Num:
    """A number rule: what it is (with unit) and its accepted range."""

    what: str
    lo: float
    hi: float
    lo_open: bool = False
    hi_open: bool = False
    integer: bool = False
    mach: bool = False  # a Mach number: >= 1 gets the subsonic message

    def range_text(self) -> str:
        lo = f"greater than {_fmt(self.lo)}" if self.lo_open else f"at least {_fmt(self.lo)}"
        hi = f"below {_fmt(self.hi)}" if self.hi_open else f"at most {_fmt(self.hi)}"
        return f"{lo} and {hi}"

    def ok(self, x: float) -> bool:
        above = x > self.lo if self.lo_open else x >= self.lo
        below = x < self.hi if self.hi_open else x <= self.hi
        return above and below


_MACH = dict(mach=True, hi=1.0, hi_open=True)

_ENGINE_NUMS: dict[str, _Num] = {
    "static_thrust_kn": _Num("sea-level static thrust per engine at ISA, full rating, in kN", 0, 1000, lo_open=True),
    "rating_fraction": _Num("the fraction of full rating used for climb/cruise", 0, 1.2, lo_open=True),
    "flat_rate_isa_dev_c": _Num("the ISA deviation in deg C up to which thrust is held", -30, 50),
    "hot_day_loss_per_c": _Num("the fraction of thrust lost per deg C above the flat-rate deviation", 0, 0.05),
    "lapse_exponent": _Num("the density-lapse exponent m of F = F0 (rho/rho0)^m", 0, 3, lo_open=True),
    "lapse_exponent_above_tropopause": _Num("the density-lapse exponent above the tropopause", 0, 3, lo_open=True),
    "throttle_ratio": _Num("the throttle ratio (theta0 break point)", 0.8, 1.3),
}
_TABLE_ALT = _Num("pressure altitudes in ft", -2000, 150000)
_TABLE_MACH = _Num("Mach numbers", 0, **_MACH)
_TABLE_FRACTION = _Num("thrust fractions (thrust / static thrust at ISA)", 0, 1.5)

_VARIANT_NUMS: dict[str, _Num] = {
    "engine_count": _Num("the number of engines", 1, 8, integer=True),
    "wing_area_m2": _Num("the reference wing area in m2", 0, 2000, lo_open=True),
    "aspect_ratio": _Num("the wing aspect ratio", 2, 40),
    "oswald_e": _Num("the Oswald efficiency factor", 0.3, 1.2),
    "induced_drag_k": _Num("the induced-drag factor K of CD = CD0 + K CL^2", 0, 0.6, lo_open=True),
    "cd0": _Num("the zero-lift drag coefficient", 0, 0.2, lo_open=True, hi_open=True),
    "cl_max": _Num("the clean 1 g maximum lift coefficient", 0, 3, lo_open=True),
    "mtow_kg": _Num("the maximum take-off weight in kg", 0, 1_000_000, lo_open=True),
    "cruise_mach": _Num("the cruise Mach number", 0, lo_open=True, **_MACH),
    "oew_kg": _Num("the operating empty weight in kg", 0, 1_000_000, lo_open=True),
    "max_altitude_ft": _Num("the certified maximum operating altitude in ft", 0, 100000, lo_open=True),
    "mmo": _Num("the maximum operating Mach number", 0, lo_open=True, **_MACH),
    "vmo_kt": _Num("the maximum operating speed in kt (calibrated)", 0, 700, lo_open=True),
    "sweep_deg": _Num("the quarter-chord sweep in degrees", 0, 60),
    "thickness_ratio": _Num("the mean thickness-to-chord ratio", 0, 0.25, lo_open=True),
    "korn_factor": _Num("the Korn airfoil technology factor", 0.8, 1.0),
    "max_cabin_dp_kpa": _Num("the maximum cabin pressure differential in kPa", 0, 80, lo_open=True),
    "cabin_altitude_ft": _Num("the cabin pressure altitude held at maximum differential, in ft", 0, 15000),
}
_BUFFET_MACH = _Num("Mach numbers", 0, lo_open=True, **_MACH)
_BUFFET_CL = _Num("1 g buffet-onset lift coefficients", 0, 2, lo_open=True, hi_open=True)

_ID_RE = re.compile(r"[A-Za-z0-9][A-Za-z0-9._-]{0,39}")
_ID_RULE = "1 to 40 letters, digits, '.', '_' or '-', starting with a letter or digit"

_ENGINE_COMMON = ("id", "label", "model", "static_thrust_kn", "rating_fraction")
_HOT_DAY = ("flat_rate_isa_dev_c", "hot_day_loss_per_c")
_ENGINE_MODEL_KEYS = {
    "density-lapse": ("lapse_exponent", "lapse_exponent_above_tropopause") + _HOT_DAY,
    "turbofan": ("throttle_ratio",) + _HOT_DAY,
    "table": ("table_altitude_ft", "table_mach", "table_thrust_fraction") + _HOT_DAY,
}
_ENGINE_KEYS = _ENGINE_COMMON + tuple(dict.fromkeys(k for ks in _ENGINE_MODEL_KEYS.values() for k in ks))

_VARIANT_KEYS = (
    "id", "label", "engine_options", "engine_count", "wing_area_m2", "aspect_ratio", "oswald_e",
    "induced_drag_k", "cd0", "cl_max", "mtow_kg", "cruise_mach", "oew_kg", "max_altitude_ft", "mmo",
    "vmo_kt", "buffet_mach", "buffet_cl", "sweep_deg", "thickness_ratio", "korn_factor",
    "max_cabin_dp_kpa", "cabin_altitude_ft",
)  # fmt: skip
_VARIANT_REQUIRED = ("engine_options", "engine_count", "wing_area_m2", "cd0", "cl_max", "mtow_kg", "cruise_mach")
_CATALOGUE_KEYS = ("title", "description")
_TOP_KEYS = ("catalogue", "engine", "variant")


def _fmt(x: Any) -> str:
    """A number as a person would write it in a message."""
    if isinstance(x, bool):
        return "true" if x else "false"
    if isinstance(x, int) or (isinstance(x, float) and math.isfinite(x) and x.is_integer() and abs(x) < 1e15):
        return f"{int(x):,}"
    if isinstance(x, float):
        return repr(x)
    return str(x)


def _describe(value: Any) -> str:
    """What the user wrote, for a 'got ...' phrase."""
    if isinstance(value, bool):
        return f"the boolean {_fmt(value)}"
    if isinstance(value, (int, float)):
        return _fmt(value)
    if isinstance(value, str):
        shown = value if len(value) <= 40 else value[:37] + "..."
        return f"the text {shown!r}"
    if isinstance(value, list):
        return f"a list of {len(value)} item{'s' if len(value) != 1 else ''}"
    if isinstance(value, dict):
        return "a table"
    return f"a date/time ({value})"


def _hint(key: str, allowed: tuple[str, ...]) -> str:
    close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
    return f'; did you mean "{close[0]}"?' if close else ""


# --------------------------------------------------------------------------- reading a table


class _Table:
    """Checked access to one TOML table; every problem goes to the shared list."""

    def __init__(self, raw: dict, where: str, file: str, problems: list[Problem]):
        self.raw = raw
        self.where = where
        self.file = file
        self.problems = problems
        self.bad = False

    def path(self, key: str) -> str:
        return f"{self.where}.{key}" if key else self.where

    def fail(self, key: str, message: str) -> None:
        self.bad = True
        self.problems.append(Problem(self.file, self.path(key), message))

    def has(self, key: str) -> bool:
        return key in self.raw

    def number(self, key: str, rule: _Num, required: bool = False) -> float | int | None:
        if key not in self.raw:
            if required:
                self.fail(key, f"missing: expected {rule.what}, {rule.range_text()}")
            return None
        return self._number(key, self.raw[key], rule)

    def _number(self, key: str, value: Any, rule: _Num) -> float | int | None:
        what = rule.what
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            kind = "a whole number" if rule.integer else "a number"
            self.fail(key, f"expected {kind} ({what}), got {_describe(value)}")
            return None
        if rule.integer and not isinstance(value, int):
            self.fail(key, f"expected a whole number ({what}) written without a decimal point, got {value!r}")
            return None
        try:
            x = float(value)
        except OverflowError:
            x = math.copysign(math.inf, value)
        if not math.isfinite(x):
            self.fail(key, f"expected a finite number ({what}), got {_describe(x)}")
            return None
        if rule.mach and x >= 1.0:
            self.fail(key, f"expected {what} below 1: the models are subsonic; got {_fmt(value)}")
            return None
        if not rule.ok(x):
            self.fail(key, f"expected {what}, {rule.range_text()}; got {_fmt(value)}")
            return None
        return int(value) if rule.integer else x

    def text(self, key: str, what: str, required: bool = False) -> str | None:
        if key not in self.raw:
            if required:
                self.fail(key, f"missing: expected {what}")
            return None
        value = self.raw[key]
        if not isinstance(value, str):
            self.fail(key, f"expected {what} in quotes, got {_describe(value)}")
            return None
        if not value.strip():
            self.fail(key, f"expected {what}, got empty text")
            return None
        return value.strip()

    def ident(self, required: bool = True) -> str | None:
        value = self.text("id", f"an id ({_ID_RULE})", required=required)
        if value is not None and not _ID_RE.fullmatch(value):
            self.fail("id", f"expected an id of {_ID_RULE}, got {_describe(value)}")
            return None
        return value

    def number_list(self, key: str, rule: _Num, increasing: bool, min_len: int = 2) -> tuple[float, ...] | None:
        """A list of numbers; None if absent or bad."""
        if key not in self.raw:
            return None
        value = self.raw[key]
        if not isinstance(value, list):
            self.fail(key, f"expected a list of {rule.what} like [0.4, 0.6], got {_describe(value)}")
            return None
        if len(value) < min_len:
            self.fail(key, f"expected at least {min_len} {rule.what}, got {len(value)}")
            return None
        out = [self._number(f"{key}[{i}]", v, rule) for i, v in enumerate(value)]
        if any(x is None for x in out):
            return None
        if increasing:
            for i in range(1, len(out)):
                if not out[i] > out[i - 1]:
                    self.fail(
                        f"{key}[{i}]",
                        f"expected {rule.what} in strictly increasing order, "
                        f"got {_fmt(out[i])} after {_fmt(out[i - 1])}",
                    )
                    return None
        return tuple(out)

    def unknown_keys(self, allowed: tuple[str, ...], elsewhere: dict[str, str] | None = None) -> None:
        """Refuse keys not in `allowed`; `elsewhere` maps keys that belong to another kind of table."""
        for key in self.raw:
            if key in allowed:
                continue
            if elsewhere and key in elsewhere:
                self.fail(key, elsewhere[key])
            else:
                self.fail(key, f"unknown key{_hint(key, allowed)}")


def _where(kind: str, index: int, raw: dict) -> str:
    ident = raw.get("id")
    if isinstance(ident, str) and _ID_RE.fullmatch(ident.strip()):
        return f'{kind}[{index}] "{ident.strip()}"'
    return f"{kind}[{index}]"


# --------------------------------------------------------------------------- engines


def _engine(t: _Table) -> Engine | None:
    ident = t.ident()
    label = t.text("label", "a label (free text)")
    model = t.text("model", f"the thrust model, one of {', '.join(map(repr, ENGINE_MODELS))}", required=True)
    if model is not None and model not in ENGINE_MODELS:
        close = difflib.get_close_matches(model, ENGINE_MODELS, n=1, cutoff=0.5)
        hint = f'; did you mean "{close[0]}"?' if close else ""
        t.fail("model", f"expected one of {', '.join(map(repr, ENGINE_MODELS))}, got {_describe(model)}{hint}")
        model = None

    # Keys of another thrust model are named as such rather than "unknown".
    elsewhere: dict[str, str] = {}
    allowed = _ENGINE_COMMON + (_ENGINE_MODEL_KEYS[model] if model else _ENGINE_KEYS)
    if model:
        for key in _ENGINE_KEYS:
            if key not in allowed:
                owners = [m for m, ks in _ENGINE_MODEL_KEYS.items() if key in ks]
                elsewhere[key] = (
                    f'not used by model "{model}"; it belongs to model '
                    f"{' or '.join(repr(o) for o in owners)}"
                )
    t.unknown_keys(allowed, elsewhere)

    nums = {
        key: t.number(key, rule, required=key == "static_thrust_kn")
        for key, rule in _ENGINE_NUMS.items()
        if key in allowed
    }

    if model:
        given = [k for k in _HOT_DAY if t.has(k)]
        if len(given) == 1:
            other = _HOT_DAY[1] if given[0] == _HOT_DAY[0] else _HOT_DAY[0]
            t.fail(other, f"missing: {given[0]} is given, and the flat-rate deviation and the loss per "
                          "deg C above it go together")  # fmt: skip

    table: dict[str, Any] = {}
    if model == "table":
        alt = t.number_list("table_altitude_ft", _TABLE_ALT, increasing=True)
        mach = t.number_list("table_mach", _TABLE_MACH, increasing=True)
        for key in ("table_altitude_ft", "table_mach"):
            if not t.has(key):
                t.fail(key, f"missing: a table engine needs {key} (at least 2 increasing values)")
        frac = _fraction_table(t, alt, mach)
        if alt and mach and frac:
            table = dict(table_altitude_ft=alt, table_mach=mach, table_thrust_fraction=frac)

    if t.bad:
        return None
    kwargs = {k: v for k, v in nums.items() if v is not None}
    return Engine(id=ident, label=label or ident, model=model, **kwargs, **table)


def _fraction_table(t: _Table, alt, mach) -> tuple[tuple[float, ...], ...] | None:
    key = "table_thrust_fraction"
    if not t.has(key):
        t.fail(key, "missing: a table engine needs table_thrust_fraction, one row of thrust fractions per "
                    "altitude, one column per Mach")  # fmt: skip
        return None
    rows = t.raw[key]
    shape = f"{len(alt)} rows (one per altitude) of {len(mach)} values (one per Mach)" if alt and mach else ""
    if not isinstance(rows, list) or not all(isinstance(r, list) for r in rows):
        t.fail(key, f"expected a list of rows, each a list of numbers{', ' + shape if shape else ''}; "
                    f"got {_describe(rows)}")  # fmt: skip
        return None
    if alt and len(rows) != len(alt):
        t.fail(key, f"expected {shape}; got {len(rows)} rows")
        return None
    out = []
    for i, row in enumerate(rows):
        if mach and len(row) != len(mach):
            t.fail(f"{key}[{i}]", f"expected {len(mach)} values (one per Mach in table_mach), got {len(row)}")
            return None
        vals = [t._number(f"{key}[{i}][{j}]", v, _TABLE_FRACTION) for j, v in enumerate(row)]
        if any(v is None for v in vals):
            return None
        out.append(tuple(vals))
    return tuple(out)


# --------------------------------------------------------------------------- variants


def _variant(t: _Table, engine_ids: set[str]) -> Variant | None:
    ident = t.ident()
    label = t.text("label", "a label (free text)")
    t.unknown_keys(_VARIANT_KEYS)

    nums = {key: t.number(key, rule, required=key in _VARIANT_REQUIRED) for key, rule in _VARIANT_NUMS.items()}

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
                                       f"({cabin_kpa:.1f} kPa at {_fmt(cabin_ft)} ft), got {_fmt(dp)}")
    mtow, oew = nums["mtow_kg"], nums["oew_kg"]
    if mtow is not None and oew is not None and not oew < mtow:
        t.fail("oew_kg", f"expected the operating empty weight below mtow_kg ({_fmt(mtow)}), got {_fmt(oew)}")
    cruise, mmo = nums["cruise_mach"], nums["mmo"]
    if cruise is not None and mmo is not None and cruise > mmo:
        t.fail("cruise_mach", f"expected a cruise Mach no higher than mmo ({_fmt(mmo)}), got {_fmt(cruise)}")

    if t.bad:
        return None
    kwargs = {k: v for k, v in nums.items() if v is not None}
    kwargs.setdefault("aspect_ratio", None)
    kwargs.setdefault("oswald_e", None)
    kwargs.setdefault("induced_drag_k", None)
    return Variant(id=ident, label=label or ident, engine_options=options, **kwargs, **buffet)


def _engine_options(t: _Table, engine_ids: set[str]) -> tuple[str, ...] | None:
    key = "engine_options"
    if not t.has(key):
        t.fail(key, 'missing: expected a list of engine ids like ["eng-a", "eng-b"]')
        return None
    value = t.raw[key]
    if isinstance(value, str):
        t.fail(key, f'expected a list of engine ids like ["{value}"] (square brackets), got {_describe(value)}')
        return None
    if not isinstance(value, list):
        t.fail(key, f"expected a list of engine ids, got {_describe(value)}")
        return None
    if not value:
        t.fail(key, "expected at least one engine id: a variant with no engine option cannot be computed")
        return None
    out: list[str] = []
    for i, ident in enumerate(value):
        if not isinstance(ident, str):
            t.fail(f"{key}[{i}]", f"expected an engine id in quotes, got {_describe(ident)}")
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


def _together(t: _Table, keys: tuple[str, ...], what: str) -> None:
    given = [k for k in keys if t.has(k)]
    if given and len(given) < len(keys):
        for k in keys:
            if k not in given:
                t.fail(k, f"missing: {what} needs {', '.join(keys)} together ({', '.join(given)} given)")


def _buffet(t: _Table) -> dict[str, tuple[float, ...]]:
    mach = t.number_list("buffet_mach", _BUFFET_MACH, increasing=True)
    cl = t.number_list("buffet_cl", _BUFFET_CL, increasing=False)
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


# --------------------------------------------------------------------------- file level


_TOML_POS = re.compile(r"^(?P<msg>.*?) \(at line (?P<line>\d+), column (?P<col>\d+)\)$", re.S)


def _read_text(path: Path, file: str) -> str | Problem:
    try:
        if not path.exists():
            return Problem(file, "", "no such file: expected a TOML catalogue (.toml)")
        if path.is_dir():
            found = sorted(p.name for p in path.glob("*.toml"))[:5]
            hint = f"; catalogues in it: {', '.join(found)}" if found else ""
            return Problem(file, "", f"is a directory, expected a TOML catalogue file{hint}")
        data = path.read_bytes()
    except PermissionError:
        return Problem(file, "", "cannot be read: permission denied")
    except OSError as exc:
        return Problem(file, "", f"cannot be read: {exc.strerror or exc}")
    if b"\x00" in data:
        return Problem(file, "", "looks like a binary file, expected a TOML catalogue (UTF-8 text)")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        return Problem(file, "", f"is not UTF-8 text (undecodable byte at offset {exc.start}): "
                                 "expected a TOML catalogue saved as UTF-8")  # fmt: skip
    if not text.strip():
        return Problem(file, "", "the file is empty: expected [catalogue], [[engine]] and [[variant]] tables")
    return text


def _parse(text: str, file: str) -> dict | Problem:
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = _TOML_POS.match(str(exc))
        if m:
            line = int(m["line"])
            lines = text.splitlines()
            shown = lines[line - 1].strip() if 0 < line <= len(lines) else ""
            near = f" (the line reads: {shown[:60]})" if shown else ""
            return Problem(file, f"line {line}, column {m['col']}", f"TOML syntax error: {m['msg']}{near}")
        return Problem(file, "", f"TOML syntax error: {exc}")
    except RecursionError:
        return Problem(file, "", "TOML syntax error: values nested too deeply")
    except ValueError as exc:  # e.g. an integer with more digits than Python converts
        return Problem(file, "", f"TOML value cannot be read: {exc}")


def _tables(doc: dict, kind: str, file: str, problems: list[Problem]) -> list[dict]:
    raw = doc.get(kind)
    if raw is None:
        return []
    if isinstance(raw, dict):
        problems.append(Problem(file, kind, f"expected one or more [[{kind}]] tables (double brackets), "
                                            f"got a single [{kind}] table"))  # fmt: skip
        return []
    if not isinstance(raw, list) or not all(isinstance(x, dict) for x in raw):
        problems.append(Problem(file, kind, f"expected [[{kind}]] tables, got {_describe(raw)}"))
        return []
    return raw


def load_catalogue(path: str | os.PathLike) -> Catalogue:
    """Read and check a TOML catalogue; raise CatalogueError listing every problem."""
    file = os.fspath(path)
    if isinstance(file, bytes):
        file = os.fsdecode(file)
    p = Path(file)
    got = _read_text(p, file)
    if isinstance(got, Problem):
        raise CatalogueError([got])
    doc = _parse(got, file)
    if isinstance(doc, Problem):
        raise CatalogueError([doc])

    problems: list[Problem] = []
    for key in doc:
        if key not in _TOP_KEYS:
            problems.append(Problem(file, key, f"unknown top-level key or table{_hint(key, _TOP_KEYS)} "
                                               "(a catalogue holds [catalogue], [[engine]] and [[variant]])"))  # fmt: skip

    title, description = "", ""
    head = doc.get("catalogue")
    if head is None:
        problems.append(Problem(file, "catalogue", 'missing: expected a [catalogue] table with title = "..."'))
    elif not isinstance(head, dict):
        problems.append(Problem(file, "catalogue", f"expected a [catalogue] table, got {_describe(head)}"))
    else:
        t = _Table(head, "catalogue", file, problems)
        t.unknown_keys(_CATALOGUE_KEYS)
        title = t.text("title", "a title (free text)", required=True) or ""
        description = t.text("description", "a description (free text)") or ""

    engine_raw = _tables(doc, "engine", file, problems)
    variant_raw = _tables(doc, "variant", file, problems)
    if not engine_raw and not any(p.key == "engine" for p in problems):
        problems.append(Problem(file, "engine", "missing: expected at least one [[engine]] table"))
    all_engine_ids = {r["id"].strip() for r in engine_raw if isinstance(r.get("id"), str)}

    engines: dict[str, Engine] = {}
    for i, raw in enumerate(engine_raw):
        t = _Table(raw, _where("engine", i, raw), file, problems)
        eng = _engine(t)
        if eng is not None and eng.id not in engines:
            engines[eng.id] = eng
    _duplicates(engine_raw, "engine", file, problems)

    if not variant_raw and not any(p.key == "variant" for p in problems):
        problems.append(Problem(file, "variant", "missing: expected at least one [[variant]] table"))
    variants: dict[str, Variant] = {}
    for i, raw in enumerate(variant_raw):
        t = _Table(raw, _where("variant", i, raw), file, problems)
        var = _variant(t, all_engine_ids)
        if var is not None and var.id not in variants:
            variants[var.id] = var
    _duplicates(variant_raw, "variant", file, problems)

    if problems:
        raise CatalogueError(problems)
    return Catalogue(path=p, title=title, description=description, engines=engines, variants=variants)


def _duplicates(raws: list[dict], kind: str, file: str, problems: list[Problem]) -> None:
    """Refuse an id used by two tables of the same kind (even when the first is itself invalid)."""
    seen: dict[str, int] = {}
    for i, raw in enumerate(raws):
        ident = raw.get("id")
        if not isinstance(ident, str):
            continue
        ident = ident.strip()
        if ident in seen:
            problems.append(Problem(file, f"{_where(kind, i, raw)}.id",
                                    f'duplicate {kind} id "{ident}" ({kind}[{seen[ident]}] has it too): '
                                    "ids must be unique"))  # fmt: skip
        else:
            seen[ident] = i


# --------------------------------------------------------------------------- bundled demo data


def bundled_fleet_dir() -> Path:
    """The folder of demo catalogues: inside the installed package, else the source checkout's fleets/."""
    here = Path(__file__).resolve().parent
    installed = here / "fleets"
    if installed.is_dir():
        return installed
    return here.parent / "fleets"


def demo_catalogue_path() -> Path:
    """The catalogue used when none is given: the fictional regional operator's fleet."""
    return bundled_fleet_dir() / DEMO_CATALOGUE


def demo_catalogue_paths() -> list[Path]:
    """Every bundled demo catalogue, sorted by file name."""
    return sorted(bundled_fleet_dir().glob("*.toml"))


# --------------------------------------------------------------------------- summary


def summarise(catalogue: Catalogue) -> list[tuple[str, str]]:
    """(label, text) rows describing a loaded catalogue, for `variantcmp check` to print."""
    rows = [
        ("file", str(catalogue.path)),
        ("title", catalogue.title),
    ]
    if catalogue.description:
        rows.append(("description", " ".join(catalogue.description.split())))
    models = ", ".join(f"{e.id} ({e.model})" for e in catalogue.engines.values())
    rows.append(("engines", f"{len(catalogue.engines)}: {models}"))
    rows.append(("variants", str(len(catalogue.variants))))
    used: set[str] = set()
    for v in catalogue.variants.values():
        used.update(v.engine_options)
        data = []
        if v.has_buffet:
            data.append(f"buffet M{v.buffet_mach[0]:g}-{v.buffet_mach[-1]:g}")
        if v.has_wave_drag:
            data.append("wave drag")
        if v.has_cabin:
            data.append("cabin")
        if v.max_altitude_ft is not None:
            data.append(f"certified {v.max_altitude_ft:,.0f} ft")
        if v.mmo is not None:
            data.append(f"MMO {v.mmo:g}")
        if v.vmo_kt is not None:
            data.append(f"VMO {v.vmo_kt:g} kt")
        text = (
            f"{v.label}; {v.engine_count} x {', '.join(v.engine_options)}; "
            f"optional data: {', '.join(data) if data else 'none'}"
        )
        rows.append((f"variant {v.id}", text))
    unused = [e for e in catalogue.engines if e not in used]
    if unused:
        rows.append(("unused engines", ", ".join(unused)))
    return rows
