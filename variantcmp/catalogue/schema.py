"""The catalogue's key schema: which keys each table takes, their units (in the names) and the
plausible range of every number.

The ranges are plausibility bounds of our own choosing, wide enough for any subsonic transport
or special-mission type, narrow enough to catch typos and unit slips (a wing area in ft2, a
thrust in lbf, an Oswald factor written as a percentage). A new key gets its rule here, its
place in the key lists below, and a field in :mod:`variantcmp.catalogue.model`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from .problems import fmt_value


@dataclass(frozen=True)
class NumberRule:
    """A number rule: what it is (with unit) and its accepted range."""

    what: str
    lo: float
    hi: float
    lo_open: bool = False
    hi_open: bool = False
    integer: bool = False
    mach: bool = False  # a Mach number: >= 1 gets the subsonic message

    def range_text(self) -> str:
        lo = f"greater than {fmt_value(self.lo)}" if self.lo_open else f"at least {fmt_value(self.lo)}"
        hi = f"below {fmt_value(self.hi)}" if self.hi_open else f"at most {fmt_value(self.hi)}"
        return f"{lo} and {hi}"

    def ok(self, x: float) -> bool:
        above = x > self.lo if self.lo_open else x >= self.lo
        below = x < self.hi if self.hi_open else x <= self.hi
        return above and below


MACH_RULE = dict(mach=True, hi=1.0, hi_open=True)

ENGINE_NUMBERS: dict[str, NumberRule] = {
    "static_thrust_kn": NumberRule("sea-level static thrust per engine at ISA, full rating, in kN", 0, 1000, lo_open=True),
    "rating_fraction": NumberRule("the fraction of full rating used for climb/cruise", 0, 1.2, lo_open=True),
    "flat_rate_isa_dev_c": NumberRule("the ISA deviation in deg C up to which thrust is held", -30, 50),
    "hot_day_loss_per_c": NumberRule("the fraction of thrust lost per deg C above the flat-rate deviation", 0, 0.05),
    "lapse_exponent": NumberRule("the density-lapse exponent m of F = F0 (rho/rho0)^m", 0, 3, lo_open=True),
    "lapse_exponent_above_tropopause": NumberRule("the density-lapse exponent above the tropopause", 0, 3, lo_open=True),
    "throttle_ratio": NumberRule("the throttle ratio (theta0 break point)", 0.8, 1.3),
    # Propeller engines: shaft power at the climb/cruise rating, propeller efficiency.
    "shaft_power_kw": NumberRule("shaft power per engine, sea level, static, ISA, at the climb/cruise rating, in kW",
                                 0, 20000, lo_open=True),
    "propeller_efficiency": NumberRule("the propeller efficiency (thrust power / shaft power)", 0.3, 0.95),
    # Fuel (optional on every engine; without it the cruise answers say "no fuel data").
    "tsfc_mg_per_ns": NumberRule("the thrust-specific fuel consumption a of c = (a + b M) sqrt(theta), in mg/(N s)",
                                 0, 50, lo_open=True),
    "tsfc_mach_slope": NumberRule("the TSFC Mach slope b of c = (a + b M) sqrt(theta), in mg/(N s) per unit Mach",
                                  -20, 50),
    "psfc_kg_per_kwh": NumberRule("the power-specific fuel consumption at sea level, ISA, in kg/kWh", 0.1, 0.6),
    # One engine inoperative: maximum continuous thrust (or power) / the climb rating's.
    "mct_thrust_ratio": NumberRule("the maximum continuous thrust as a fraction of the climb rating", 0.5, 1.2),
}
TABLE_ALTITUDE_RULE = NumberRule("pressure altitudes in ft", -2000, 150000)
TABLE_MACH_RULE = NumberRule("Mach numbers", 0, **MACH_RULE)
TABLE_FRACTION_RULE = NumberRule("thrust fractions (thrust / static thrust at ISA)", 0, 1.5)
TSFC_TABLE_RULE = NumberRule("thrust-specific fuel consumptions in mg/(N s)", 0, 50, lo_open=True)
PROPELLER_MACH_RULE = NumberRule("Mach numbers", 0, lo_open=True, **MACH_RULE)
PROPELLER_EFFICIENCY_RULE = NumberRule("propeller efficiencies (thrust power / shaft power)", 0, 0.95, lo_open=True)

VARIANT_NUMBERS: dict[str, NumberRule] = {
    "engine_count": NumberRule("the number of engines", 1, 8, integer=True),
    "wing_area_m2": NumberRule("the reference wing area in m2", 0, 2000, lo_open=True),
    "aspect_ratio": NumberRule("the wing aspect ratio", 2, 40),
    "oswald_e": NumberRule("the Oswald efficiency factor", 0.3, 1.2),
    "induced_drag_k": NumberRule("the induced-drag factor K of CD = CD0 + K CL^2", 0, 0.6, lo_open=True),
    "cd0": NumberRule("the zero-lift drag coefficient", 0, 0.2, lo_open=True, hi_open=True),
    "cl_max": NumberRule("the clean 1 g maximum lift coefficient", 0, 3, lo_open=True),
    "mtow_kg": NumberRule("the maximum take-off weight in kg", 0, 1_000_000, lo_open=True),
    # Speed ranges span every propeller and jet transport (common practice, no source): a
    # cruise below M0.2, an MMO below M0.3 or a VMO outside 80-450 kt CAS is a typo or a unit slip.
    "cruise_mach": NumberRule("the cruise Mach number", 0.2, **MACH_RULE),
    "oew_kg": NumberRule("the operating empty weight in kg", 0, 1_000_000, lo_open=True),
    "max_altitude_ft": NumberRule("the certified maximum operating altitude in ft", 0, 100000, lo_open=True),
    "mmo": NumberRule("the maximum operating Mach number", 0.3, **MACH_RULE),
    "vmo_kt": NumberRule("the maximum operating speed in kt (calibrated)", 80, 450),
    "sweep_deg": NumberRule("the quarter-chord sweep in degrees", 0, 60),
    "thickness_ratio": NumberRule("the mean thickness-to-chord ratio", 0, 0.25, lo_open=True),
    "korn_factor": NumberRule("the Korn airfoil technology factor", 0.8, 1.0),
    "max_cabin_dp_kpa": NumberRule("the maximum cabin pressure differential in kPa", 0, 80, lo_open=True),
    "cabin_altitude_ft": NumberRule("the cabin pressure altitude held at maximum differential, in ft", 0, 15000),
    # One engine inoperative (defaults in variantcmp.catalogue.model, from memory).
    "oei_cd0_increment": NumberRule("the zero-lift drag added with one engine out (windmilling or feathered "
                                    "engine, rudder and aileron trim)", 0, 0.05),
    "net_gradient_decrement_pct": NumberRule("the net flight path's climb-gradient decrement in %", 0, 5),
}
BUFFET_MACH_RULE = NumberRule("Mach numbers", 0, lo_open=True, **MACH_RULE)
BUFFET_CL_RULE = NumberRule("1 g buffet-onset lift coefficients", 0, 2, lo_open=True, hi_open=True)

ID_PATTERN = re.compile(r"[A-Za-z0-9][A-Za-z0-9._-]{0,39}")
ID_RULE = "1 to 40 letters, digits, '.', '_' or '-', starting with a letter or digit"

ENGINE_COMMON_KEYS = ("id", "label", "model", "mct_thrust_ratio")
HOT_DAY_KEYS = ("flat_rate_isa_dev_c", "hot_day_loss_per_c")
JET_KEYS = ("static_thrust_kn", "rating_fraction")
JET_FUEL_KEYS = ("tsfc_mg_per_ns", "tsfc_mach_slope", "tsfc_table_altitude_ft", "tsfc_table_mach", "tsfc_table_mg_per_ns")
PROPELLER_KEYS = ("shaft_power_kw", "propeller_efficiency", "propeller_efficiency_mach", "propeller_efficiency_table")
ENGINE_MODEL_KEYS = {
    "density-lapse": JET_KEYS + ("lapse_exponent", "lapse_exponent_above_tropopause") + HOT_DAY_KEYS + JET_FUEL_KEYS,
    "turbofan": JET_KEYS + ("throttle_ratio",) + HOT_DAY_KEYS + JET_FUEL_KEYS,
    "table": JET_KEYS + ("table_altitude_ft", "table_mach", "table_thrust_fraction") + HOT_DAY_KEYS + JET_FUEL_KEYS,
    "turboprop": PROPELLER_KEYS + ("lapse_exponent", "lapse_exponent_above_tropopause") + HOT_DAY_KEYS
    + ("psfc_kg_per_kwh",),
}
#: The key a model cannot do without (its rating).
ENGINE_RATING_KEY = {"density-lapse": "static_thrust_kn", "turbofan": "static_thrust_kn", "table": "static_thrust_kn",
                     "turboprop": "shaft_power_kw"}
ENGINE_KEYS = ENGINE_COMMON_KEYS + tuple(dict.fromkeys(k for ks in ENGINE_MODEL_KEYS.values() for k in ks))


def engine_keys(model: str) -> tuple[str, ...]:
    """The keys an engine of a model takes (its own and the common ones)."""
    return ENGINE_COMMON_KEYS + ENGINE_MODEL_KEYS[model]
#: Above this cruise Mach a propeller's efficiency collapses (common practice, no source).
PROPELLER_MACH_WARNING = 0.7

VARIANT_KEYS = (
    "id", "label", "engine_options", "engine_count", "wing_area_m2", "aspect_ratio", "oswald_e",
    "induced_drag_k", "cd0", "cl_max", "mtow_kg", "cruise_mach", "oew_kg", "max_altitude_ft", "mmo",
    "vmo_kt", "buffet_mach", "buffet_cl", "sweep_deg", "thickness_ratio", "korn_factor",
    "max_cabin_dp_kpa", "cabin_altitude_ft", "oei_cd0_increment", "net_gradient_decrement_pct",
)  # fmt: skip
VARIANT_REQUIRED = ("engine_options", "engine_count", "wing_area_m2", "cd0", "cl_max", "mtow_kg", "cruise_mach")
CATALOGUE_KEYS = ("title", "description")
TOP_KEYS = ("catalogue", "engine", "variant")
