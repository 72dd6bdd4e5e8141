"""What a result is computed for: the conditions (weights, days, speed, climb criteria, margins)
and the fleet selection, with ids resolved against the catalogue."""

from __future__ import annotations

import difflib
from dataclasses import dataclass, replace

from ..units import OptionError, WeightSpec, shown


@dataclass(frozen=True)
class Conditions:
    """What every view computes for: weights, days, speed, climb criteria, margins, selection."""

    weights: tuple[WeightSpec, ...] = (WeightSpec(100.0, "%mtow"),)
    isa_devs_c: tuple[float, ...] = (0.0,)
    mach: float | str = "cruise"  # "cruise" (each variant's cruise Mach), a Mach, or "best"
    climb_fpm: tuple[float, ...] = (300.0,)
    g_margin: float = 1.3
    target_fl_ft: float | None = None
    variants: tuple[str, ...] = ()  # empty: all
    engines: tuple[str, ...] = ()


def selected_pairs(catalogue, conditions: Conditions) -> list[tuple[str, str]]:
    """(variant id, engine id) pairs the conditions select, in catalogue order."""
    variants = conditions.variants or tuple(catalogue.variants)
    return [(vid, eid) for vid in variants for eid in catalogue.variants[vid].engine_options
            if not conditions.engines or eid in conditions.engines]


def resolve_ids(given: tuple[str, ...], known, what: str, path) -> tuple[str, ...]:
    """Ids as typed -> the catalogue's ids: exact, else the one that differs only in case; an
    unknown id is refused with the closest known one ("did you mean") and the list."""
    out = []
    for ident in given:
        if ident in known:
            out.append(ident)
            continue
        same = [k for k in known if k.lower() == ident.lower()]
        if len(same) == 1:
            out.append(same[0])
            continue
        close = difflib.get_close_matches(ident.lower(), [k.lower() for k in known], n=1, cutoff=0.6)
        hint = next((f" (did you mean {k!r}?)" for k in known if close and k.lower() == close[0]), "")
        raise OptionError(f"{what}: unknown id {shown(ident)} in {path}{hint}; expected one of: {', '.join(known)}")
    return tuple(dict.fromkeys(out))


def check_selection(catalogue, conditions: Conditions) -> Conditions:
    """The conditions with their variant and engine ids resolved (see :func:`resolve_ids`);
    OptionError for an unknown id or a selection with no variant x engine pair."""
    conditions = replace(
        conditions,
        variants=resolve_ids(conditions.variants, catalogue.variants, "--variant", catalogue.path),
        engines=resolve_ids(conditions.engines, catalogue.engines, "--engine", catalogue.path))
    if not selected_pairs(catalogue, conditions):
        raise OptionError(f"--variant/--engine: no variant in {catalogue.path} offers the selected engine(s) "
                          f"{', '.join(conditions.engines)}")
    return conditions
