"""The conditions every view shares, as the user types them, turned into `Conditions`.

Parsing goes through `variantcmp.units`, the same parsers as the command line,
so a value the CLI refuses is refused here with the same words.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from variantcmp.table import Conditions
from variantcmp.units import (
    OptionError,
    parse_climbs,
    parse_flight_level,
    parse_g_margin,
    parse_isa_devs,
    parse_mach,
    parse_weights,
)


@dataclass(frozen=True)
class Field:
    key: str
    label: str
    default: str
    placeholder: str
    help: str


FIELDS: tuple[Field, ...] = (
    Field("weight", "Weight", "100%mtow", "e.g. 62t, 90%mtow",
          "kg, t, lb or %mtow; a comma list gives one row per weight"),
    Field("isa", "ISA dev", "0", "e.g. ISA+15",
          "deviation from ISA in °C (15, ISA+15, -10); a comma list gives one row per deviation"),
    Field("target", "Target", "", "e.g. FL350",
          "target flight level for the margin column (FL350, 350, 35000ft); empty for none"),
    Field("speed", "Speed", "cruise", "e.g. cruise, best, M.78",
          "cruise (each variant's cruise Mach), best (the Mach giving the highest altitude) or a Mach"),
    Field("climb", "Climb", "cruise", "e.g. cruise, service, 250",
          "residual rate of climb: absolute (0), service (100), cruise (300) or ft/min"),
    Field("g_margin", "Buffet g", "1.3", "e.g. 1.3",
          "load factor kept to buffet onset, 1.0 to 2.5 g"),
)
FIELDS_BY_KEY = {field.key: field for field in FIELDS}
DEFAULT_TEXTS: dict[str, str] = {field.key: field.default for field in FIELDS}


def parse_field(key: str, text: str):
    """The parsed value of one field; raises OptionError with an in-app message."""
    label = FIELDS_BY_KEY[key].label
    text = text.strip()
    if key == "weight":
        return tuple(parse_weights(text, option=label))
    if key == "isa":
        return tuple(parse_isa_devs(text, option=label))
    if key == "target":
        return None if not text else parse_flight_level(text, option=label)
    if key == "speed":
        return parse_mach(text, option=label)
    if key == "climb":
        return tuple(fpm for fpm, _label in parse_climbs(text, option=label))
    if key == "g_margin":
        return parse_g_margin(text, option=label)
    raise KeyError(key)


def conditions_from_texts(
    texts: dict[str, str], base: Conditions | None = None
) -> tuple[Conditions | None, dict[str, str]]:
    """Conditions from the typed texts, or None and one message per bad field."""
    values: dict[str, object] = {}
    errors: dict[str, str] = {}
    for field in FIELDS:
        try:
            values[field.key] = parse_field(field.key, texts.get(field.key, field.default))
        except OptionError as error:
            errors[field.key] = str(error)
    if errors:
        return None, errors
    conditions = Conditions(
        weights=values["weight"],
        isa_devs_c=values["isa"],
        mach=values["speed"],
        climb_fpm=values["climb"],
        g_margin=values["g_margin"],
        target_fl_ft=values["target"],
    )
    if base is not None:  # keep a variant/engine selection made elsewhere
        conditions = replace(conditions, variants=base.variants, engines=base.engines)
    return conditions, {}
