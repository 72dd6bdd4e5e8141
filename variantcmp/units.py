"""Units at the edges: conversion constants and parsers for what users type.

Everything inside the package is SI; this module turns aviation units typed on
the command line or in the terminal app (kg, t, lb, %mtow, ISA+15, ft/min,
M.78, FL350) into plain numbers, and formats altitudes back as flight levels.
Every parser raises :class:`OptionError` whose text names the option, quotes
the bad text and says what is expected.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from .constants import KG_PER_LB, M_PER_FT, MS_PER_FPM, MS_PER_KT

# Exact by definition: international foot (1959), nautical mile (1929), pound (1959).
FT_PER_M = 1 / M_PER_FT
KT_TO_MS = MS_PER_KT
LB_TO_KG = KG_PER_LB
FPM_TO_MS = MS_PER_FPM
T_TO_KG = 1000.0

# Named residual rate-of-climb criteria, ft/min (trade definitions; common practice).
CLIMB_CRITERIA_FPM: dict[str, float] = {"absolute": 0.0, "service": 100.0, "cruise": 300.0}

# Plausibility bounds: values outside are typing mistakes, not aircraft.
MAX_WEIGHT_KG = 2.0e6
BARE_KG_MIN = 1000.0  # a bare number below this is refused as a weight (kg meant as t or %MTOW)
MAX_WEIGHT_PCT_MTOW = 200.0
ISA_DEV_RANGE_C = (-80.0, 70.0)
MAX_CLIMB_FPM = 10000.0
ALTITUDE_RANGE_FT = (-2000.0, 154000.0)  # model atmosphere spans -2,000 ft to about 47 km
G_MARGIN_RANGE = (1.0, 2.5)
TERRAIN_RANGE_FT = (-1500.0, 30000.0)  # the lowest dry land to above the highest summit (from memory)
CLEARANCE_RANGE_FT = (0.0, 10000.0)

_NUMBER = r"[+-]?(?:\d+(?:_\d+)*(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"


class OptionError(ValueError):
    """A bad user value; str() is the one-line message to show."""


SHOWN_CHARS = 40  # a value longer than this is cut in messages (the user has it in full already)


def shown(text: str) -> str:
    """What the user typed, quoted for a message, cut to SHOWN_CHARS characters."""
    text = str(text).strip()
    return repr(text if len(text) <= SHOWN_CHARS else text[: SHOWN_CHARS - 3] + "...")


def _fail(option: str, text: str, expected: str) -> OptionError:
    return OptionError(f"{option}: cannot use {shown(text)}: expected {expected}")


def _items(text: str, option: str, expected: str) -> list[str]:
    """Split a comma list, refusing empty items ("1,,2") and empty input."""
    if text is None or not str(text).strip():
        raise _fail(option, str(text or ""), expected)
    items = [item.strip() for item in str(text).split(",")]
    if any(not item for item in items):
        raise OptionError(f"{option}: empty item in {shown(text)}: expected {expected}")
    return items


def _number(body: str) -> float | None:
    """The float in ``body`` if it is a plain finite number, else None."""
    if not re.fullmatch(_NUMBER, body):
        return None
    value = float(body)
    return value if math.isfinite(value) else None


def _dedupe(values: list) -> list:
    seen: list = []
    for value in values:
        if value not in seen:
            seen.append(value)
    return seen


# --- weights -----------------------------------------------------------------

@dataclass(frozen=True)
class WeightSpec:
    """A weight as typed: absolute (``unit="kg"``) or a share of each variant's MTOW."""

    value: float
    unit: str  # "kg" (t and lb already converted) or "%mtow"

    def resolve_kg(self, mtow_kg: float) -> float:
        """Mass in kg for a variant whose maximum take-off weight is ``mtow_kg``."""
        if self.unit == "%mtow":
            return self.value / 100.0 * mtow_kg
        return self.value

    def __str__(self) -> str:
        if self.unit == "%mtow":
            return f"{self.value:g} %MTOW"
        return f"{self.value:,.0f} kg"


_WEIGHT_EXPECTED = (
    "a comma list of weights in kg, t, lb or %mtow, e.g. 62000,64.5t,140000lb,90%mtow"
)
_WEIGHT_UNITS = {
    "": ("kg", 1.0), "kg": ("kg", 1.0), "kgs": ("kg", 1.0),
    "t": ("kg", T_TO_KG), "tonne": ("kg", T_TO_KG), "tonnes": ("kg", T_TO_KG),
    "lb": ("kg", LB_TO_KG), "lbs": ("kg", LB_TO_KG),
    "%mtow": ("%mtow", 1.0), "%": ("%mtow", 1.0),
}


def parse_weight(text: str, option: str = "--weight") -> WeightSpec:
    """One weight: "62000", "62000kg", "64.5t", "140000lb", "90%mtow", "mtow" (= 100 %MTOW)."""
    raw = text.strip()
    compact = re.sub(r"\s+", "", raw).lower()
    if compact == "mtow":
        return WeightSpec(100.0, "%mtow")
    match = re.fullmatch(rf"({_NUMBER})([a-z%]*)", compact)
    if not match or match.group(2) not in _WEIGHT_UNITS or _number(match.group(1)) is None:
        raise _fail(option, raw, _WEIGHT_EXPECTED)
    unit, factor = _WEIGHT_UNITS[match.group(2)]
    value = _number(match.group(1)) * factor
    if not match.group(2) and 0.0 < value < BARE_KG_MIN:
        # No aircraft this tool models weighs under a tonne: a bare 70 is 70 t or 70 %MTOW meant.
        raise OptionError(f"{option}: cannot use {shown(raw)}: a bare number is kg, and {value:g} kg is no "
                          f"aircraft weight; did you mean {value:g}t or {value:g}%mtow?")
    if unit == "%mtow":
        if not 0.0 < value <= MAX_WEIGHT_PCT_MTOW:
            raise _fail(option, raw, f"a share of MTOW above 0 and at most {MAX_WEIGHT_PCT_MTOW:g} %")
    elif not 0.0 < value <= MAX_WEIGHT_KG:
        raise _fail(option, raw, f"a weight above 0 and at most {MAX_WEIGHT_KG:,.0f} kg")
    return WeightSpec(value, unit)


def parse_weights(text: str, option: str = "--weight") -> list[WeightSpec]:
    """A comma list of weights, e.g. "62000, 64.5t, 140000lb, 90%mtow"; duplicates dropped."""
    items = _items(text, option, _WEIGHT_EXPECTED)
    # "62,000" splits into "62" and "000": refuse a bare three-digit group after a bare number.
    for before, item in zip(items, items[1:]):
        if re.fullmatch(r"\d{3}", item) and re.fullmatch(r"\d{1,3}", before):
            raise OptionError(
                f"{option}: {shown(text)} looks like a number with a thousands separator; "
                "commas separate list items: write 62000 or 62t"
            )
    return _dedupe([parse_weight(item, option) for item in items])


# --- temperature deviation ------------------------------------------------------

_ISA_EXPECTED = (
    "a comma list of ISA temperature deviations in degrees C, e.g. -10,0,15 or ISA+15,ISA-5"
)


def parse_isa_dev(text: str, option: str = "--isa") -> float:
    """One deviation from ISA in degrees C: "15", "+20", "-10", "ISA+15", "isa-5", "ISA", "15C"."""
    raw = text.strip()
    compact = re.sub(r"\s+", "", raw).lower().replace("°", "")
    if compact == "isa":
        return 0.0
    if compact.startswith("isa"):
        compact = compact[3:]
        if compact[:1] not in ("+", "-"):
            raise _fail(option, raw, _ISA_EXPECTED)
    if compact.endswith("c"):
        compact = compact[:-1]
    value = _number(compact)
    if value is None:
        raise _fail(option, raw, _ISA_EXPECTED)
    low, high = ISA_DEV_RANGE_C
    if not low <= value <= high:
        raise _fail(option, raw, f"a deviation from {low:+g} to {high:+g} degrees C")
    return value + 0.0  # -0.0 -> 0.0


def parse_isa_devs(text: str, option: str = "--isa") -> list[float]:
    """A comma list of deviations: "-10,0,15", "ISA+15", "isa-5", "+20"; duplicates dropped."""
    return _dedupe([parse_isa_dev(item, option) for item in _items(text, option, _ISA_EXPECTED)])


def format_isa_dev(isa_dev_c: float) -> str:
    """15 -> "ISA+15", -5 -> "ISA-5", 0 -> "ISA"."""
    if isa_dev_c == 0:
        return "ISA"
    return f"ISA{isa_dev_c:+g}"


# --- residual rate of climb -----------------------------------------------------

_CLIMB_EXPECTED = (
    "absolute (0 ft/min), service (100 ft/min), cruise (300 ft/min) "
    "or a rate in ft/min such as 250 or 250fpm"
)


def parse_climb(text: str, option: str = "--climb") -> tuple[float, str]:
    """A residual rate-of-climb criterion -> (ft/min, label).

    "absolute" -> (0, "absolute"), "service" -> (100, "service"), "cruise" -> (300, "cruise"),
    "250", "250fpm" or "250 ft/min" -> (250, "250 ft/min"). A negative rate is refused.
    """
    raw = text.strip()
    compact = re.sub(r"\s+", "", raw).lower()
    if compact in CLIMB_CRITERIA_FPM:
        return CLIMB_CRITERIA_FPM[compact], compact
    for suffix in ("ft/min", "fpm", "ft/mn"):
        if compact.endswith(suffix):
            compact = compact[: -len(suffix)]
            break
    value = _number(compact)
    if value is None:
        raise _fail(option, raw, _CLIMB_EXPECTED)
    if value < 0:
        raise OptionError(
            f"{option}: cannot use {shown(raw)}: a residual rate of climb must be 0 ft/min or more "
            "(0 = absolute ceiling)"
        )
    if value > MAX_CLIMB_FPM:
        raise _fail(option, raw, f"a rate of climb of at most {MAX_CLIMB_FPM:,.0f} ft/min")
    value += 0.0
    return value, f"{value:g} ft/min"


def parse_climbs(text: str, option: str = "--climb") -> list[tuple[float, str]]:
    """A comma list of climb criteria, e.g. "absolute,service,cruise" or "0,100,300"."""
    parsed = [parse_climb(item, option) for item in _items(text, option, _CLIMB_EXPECTED)]
    unique: dict[float, str] = {}
    for fpm, label in parsed:
        unique.setdefault(fpm, label)
    return list(unique.items())


# --- Mach -------------------------------------------------------------------------

_MACH_EXPECTED = "best, cruise or a subsonic Mach number above 0 and below 1, e.g. 0.78 or M.78"


def parse_mach(text: str, option: str = "--mach") -> float | str:
    """"best" -> "best", "cruise" -> "cruise", "0.78", ".78", "M.78" or "M0.78" -> 0.78.

    The models are subsonic: a Mach at or above 1, or at or below 0, is refused.
    """
    raw = text.strip()
    compact = re.sub(r"\s+", "", raw).lower()
    if compact in ("best", "cruise"):
        return compact
    if compact.startswith("m"):
        compact = compact[1:]
        if compact.startswith("."):
            compact = "0" + compact
    value = _number(compact)
    if value is None:
        raise _fail(option, raw, _MACH_EXPECTED)
    if not 0.0 < value < 1.0:
        raise _fail(option, raw, "a Mach above 0 and below 1 (the models are subsonic), best or cruise")
    return value


def format_mach(mach: float | None) -> str:
    """0.78 -> "M0.78"; None/nan -> "—"."""
    if mach is None or not math.isfinite(mach):
        return "—"
    return f"M{mach:.2f}"


# --- altitude -------------------------------------------------------------------

_FL_EXPECTED = "a flight level or pressure altitude, e.g. FL350, 350, 35000ft or 10668m"


def parse_flight_level(text: str, option: str = "--target") -> float:
    """A pressure altitude in ft from "FL350", "350" (a flight level), "35000ft", "35,000 ft" or "10668m".

    A bare number below 1000 is a flight level; from 10,000 up it is feet; between, it is refused
    as ambiguous (3500: FL350 or 3,500 ft?).
    """
    raw = text.strip()
    compact = re.sub(r"[\s,]+", "", raw).lower()
    if compact.startswith("fl"):
        value = _number(compact[2:])
        altitude_ft = None if value is None else value * 100.0
    elif compact.endswith("ft"):
        value = _number(compact[:-2])
        altitude_ft = value
    elif compact.endswith("m"):
        value = _number(compact[:-1])
        altitude_ft = None if value is None else value * FT_PER_M
    else:
        value = _number(compact)
        if value is None:
            altitude_ft = None
        elif 1000 <= abs(value) < 10000:
            # 3500: a typo for FL350, or 3,500 ft? Ask rather than guess.
            raise _fail(option, raw, f"FL{value / 10:03.0f} or {value:.0f}ft: a bare number from 1000 to 9999 is "
                                     "ambiguous; write FL... or ...ft")
        else:
            altitude_ft = value * 100.0 if abs(value) < 1000 else value
    if altitude_ft is None:
        raise _fail(option, raw, _FL_EXPECTED)
    high = ALTITUDE_RANGE_FT[1]
    if altitude_ft < 0.0:
        # Flight levels are never negative, and a level at the model floor says nothing.
        raise _fail(option, raw, f"a level at or above FL000 (0 ft), up to {high:,.0f} ft")
    if altitude_ft > high:
        raise _fail(option, raw, f"an altitude from 0 ft to {high:,.0f} ft (the top of the atmosphere model)")
    return altitude_ft + 0.0


def parse_flight_levels(text: str, option: str = "--target") -> list[float]:
    """A comma list of levels, each as :func:`parse_flight_level`: "FL350,FL370", "37000ft,FL390"
    (ft, in a list without a thousands separator); duplicates dropped."""
    items = _items(text, option, "a comma list of flight levels or altitudes, e.g. FL350,FL370 or 37000ft")
    for before, item in zip(items, items[1:]):  # "35,000ft" splits into "35" and "000ft"
        if re.fullmatch(r"\d{3}(ft)?", item.lower()) and re.fullmatch(r"\d{1,3}", before):
            raise OptionError(f"{option}: {shown(text)} looks like a number with a thousands separator; commas "
                              "separate list items: write 35000ft or FL350")
    return _dedupe([parse_flight_level(item, option) for item in items])


#: Altitudes are first rounded to this many decimals of a foot (the export precision), then
#: rounded down: the one rule for feet and flight levels everywhere, so that 40,999.999 ft
#: (a ceiling solved to a hundredth of a foot) is FL410 and 41,000 ft like the exported value.
ALTITUDE_DECIMALS = 2


def flight_level_number(altitude_ft):
    """Flight level of pressure altitudes in ft (scalar or array): hundreds of ft, rounded down
    after rounding to ALTITUDE_DECIMALS (NaN stays NaN)."""
    import numpy as np

    return np.floor(np.round(np.asarray(altitude_ft, dtype=float), ALTITUDE_DECIMALS) / 100.0)


def format_flight_level(altitude_ft: float | None) -> str:
    """37120 -> "FL371" (see :func:`flight_level_number`, three digits); None/nan -> "—"."""
    if altitude_ft is None or not math.isfinite(altitude_ft):
        return "—"
    level = int(flight_level_number(altitude_ft))
    if level < 0:
        return f"FL-{-level:03d}"
    return f"FL{level:03d}"


def format_altitude_ft(altitude_ft: float | None) -> str:
    """37120.4 -> "37,120"; None/nan -> "—". Rounded down so it never overstates a ceiling."""
    if altitude_ft is None or not math.isfinite(altitude_ft):
        return "—"
    return f"{math.floor(round(altitude_ft, ALTITUDE_DECIMALS)):,d}"


def parse_height_ft(text: str, option: str, limits: tuple[float, float]) -> float:
    """A height or elevation in ft from "12000", "12,000 ft", "12000ft" or "3658m" (a bare
    number is feet), within ``limits`` (ft)."""
    raw = str(text).strip()
    compact = re.sub(r"[\s,]+", "", raw).lower()
    scale = 1.0
    if compact.endswith("ft"):
        compact = compact[:-2]
    elif compact.endswith("m"):
        compact, scale = compact[:-1], FT_PER_M
    value = _number(compact)
    low, high = limits
    if value is None:
        raise _fail(option, raw, "a height in ft such as 12000, 12,000ft or 3658m")
    value *= scale
    if not low <= value <= high:
        raise _fail(option, raw, f"a height from {low:,.0f} to {high:,.0f} ft")
    return value + 0.0


# --- load factor --------------------------------------------------------------------

def parse_g_margin(text: str, option: str = "--g-margin") -> float:
    """Buffet-onset load-factor margin: "1.3", "1.3g" -> 1.3 (1.0 = onset at 1 g)."""
    raw = str(text).strip()
    compact = re.sub(r"\s+", "", raw).lower().removesuffix("g")
    value = _number(compact)
    low, high = G_MARGIN_RANGE
    if value is None:
        raise _fail(option, raw, f"a load factor such as 1.3 (from {low:g} to {high:g} g)")
    if not low <= value <= high:
        raise _fail(option, raw, f"a load factor from {low:g} to {high:g} g")
    return value


# --- uncertain data ------------------------------------------------------------------

#: What `--vary` can vary: relative standard deviations (%) of the drag polar's CD0 and K, the
#: engines' thrust and the weight, and the ISA deviation's standard deviation in deg C.
VARIED_RELATIVE = ("cd0", "k", "thrust", "weight")
VARIED = VARIED_RELATIVE + ("isa",)
MAX_VARY_PCT = 15.0  # a relative standard deviation above this is no longer "uncertain data"
MAX_VARY_ISA_C = 10.0
SAMPLES_RANGE = (10, 100_000)
_VARY_EXPECTED = ("a comma list of name=standard deviation, e.g. cd0=2%,thrust=3%,k=2%,weight=1% "
                  f"(names: {', '.join(VARIED)}; isa in degrees C, e.g. isa=2)")


def parse_variations(text: str, option: str = "--vary") -> dict[str, float]:
    """"cd0=2%,thrust=3%,k=2%,weight=1%,isa=2" -> {"cd0": 0.02, "thrust": 0.03, "k": 0.02,
    "weight": 0.01, "isa": 2.0}: relative standard deviations as fractions (typed with %, from 0
    to MAX_VARY_PCT), the ISA deviation's in degrees C (0 to MAX_VARY_ISA_C). A name given twice,
    an unknown name or a relative value without % is refused."""
    import difflib

    out: dict[str, float] = {}
    for item in _items(text, option, _VARY_EXPECTED):
        name, eq, value = item.partition("=")
        name, value = name.strip().lower(), re.sub(r"\s+", "", value).lower().replace("°", "")
        if not eq or not name:
            raise _fail(option, item, _VARY_EXPECTED)
        if name not in VARIED:
            close = difflib.get_close_matches(name, VARIED, n=1, cutoff=0.5)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise OptionError(f"{option}: unknown parameter {shown(name)}{hint}; expected one of {', '.join(VARIED)}")
        if name in out:
            raise OptionError(f"{option}: {name} given twice in {shown(text)}; give each parameter once")
        if name == "isa":
            if value.endswith("%"):
                raise OptionError(f"{option}: cannot use {shown(item)}: the ISA deviation varies in degrees C "
                                  f"(isa=2 or isa=2C), not in %")
            number = _number(value.removesuffix("c"))
            if number is None or not 0.0 <= number <= MAX_VARY_ISA_C:
                raise _fail(option, item, f"a standard deviation from 0 to {MAX_VARY_ISA_C:g} degrees C, e.g. isa=2")
            out[name] = number + 0.0
            continue
        if not value.endswith("%"):
            raise OptionError(f"{option}: cannot use {shown(item)}: give {name}'s relative standard deviation "
                              f"with %, e.g. {name}=2%")
        number = _number(value[:-1])
        if number is None or not 0.0 <= number <= MAX_VARY_PCT:
            raise _fail(option, item, f"a relative standard deviation from 0 to {MAX_VARY_PCT:g} %, e.g. {name}=2%")
        out[name] = number / 100.0
    return out


def format_variations(vary: dict[str, float]) -> str:
    """{"cd0": 0.02, "isa": 2.0} -> "cd0 2 %, isa 2 °C" (standard deviations, as typed)."""
    return ", ".join(f"{name} {value:g} °C" if name == "isa" else f"{name} {100 * value:g} %"
                     for name, value in vary.items())


def _whole(text: str, option: str, low: int, high: int, expected: str) -> int:
    """A whole number from ``low`` to ``high`` ("1000", "1_000" or "1,000")."""
    raw = str(text).strip()
    compact = raw.replace("_", "").replace(",", "")
    if not re.fullmatch(r"\d+", compact) or not low <= int(compact) <= high:
        raise _fail(option, raw, expected)
    return int(compact)


def parse_samples(text: str, option: str = "--samples") -> int:
    """Monte Carlo samples per case: a whole number in SAMPLES_RANGE."""
    low, high = SAMPLES_RANGE
    return _whole(text, option, low, high, f"a whole number of samples from {low:,} to {high:,}")


def parse_seed(text: str, option: str = "--seed") -> int:
    """A random seed: a whole number from 0 to 2^32 - 1 (the same seed gives the same numbers)."""
    return _whole(text, option, 0, 2**32 - 1, "a whole number from 0 to 4,294,967,295 (any; the same seed "
                                              "gives the same numbers)")
