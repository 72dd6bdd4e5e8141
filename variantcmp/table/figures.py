"""Derived figures of each variant (polar, wing loading, thrust- or power-to-weight, absolute
ceiling and the speed it is flown at), for ``variantcmp check`` and the variant view."""

from __future__ import annotations

import numpy as np

from ..aero import best_lift_to_drag
from ..atmosphere import G0
from ..solver import ClimbPhysics
from .ceilings import feet, solve
from .conditions import Conditions


#: Each figure's name for people, its unit ("" for none) and a short two-line header.
FIGURE_LABELS = {
    "induced_drag_k": ("K (induced-drag factor)", "", "K"),
    "ld_max": ("best lift-to-drag ratio", "", "L/D\nmax"),
    "cl_ld_max": ("CL at best lift-to-drag", "", "CL at\nL/D max"),
    "wing_loading_kg_m2": ("wing loading at MTOW", "kg/m²", "W/S MTOW\nkg/m²"),
    "thrust_to_weight": ("static thrust-to-weight at MTOW", "", "T/W static\nat MTOW"),
    "power_to_weight_kw_per_kg": ("shaft power-to-weight at MTOW", "kW/kg", "P/W kW/kg\nat MTOW"),
    "absolute_ceiling_ft": ("absolute ceiling (MTOW, ISA, best speed)", "ft", "Absolute ceiling\nMTOW, ISA"),
    "absolute_ceiling_mach": ("speed for the absolute ceiling", "", "Mach at\nabs. ceiling"),
    "absolute_ceiling_propeller_efficiency": ("propeller efficiency at that speed", "", "Propeller\neff. there"),
}


def fleet_figures(catalogue, variant_ids=None) -> dict[str, dict]:
    """Derived figures per variant, keyed by name with the unit in it (:data:`FIGURE_LABELS` has
    the words for people): polar, wing loading, thrust-to-weight (jets) or shaft power-to-weight
    (propeller engines), absolute ceiling and its speed (and the propeller efficiency there).

    The absolute ceiling is the thrust ceiling at zero residual climb, best speed, MTOW, ISA, and
    its speed the one it is reached at (for a propeller aircraft near the minimum-power speed,
    which the buffet margin may not allow: the maximum altitude is then lower); one solve for
    every variant x engine option at once. Dict-valued figures are keyed by engine id (only the
    engines a figure applies to).
    """
    ids = tuple(catalogue.variants) if variant_ids is None else tuple(variant_ids)
    cases, index, res = solve(catalogue, Conditions(mach="best", climb_fpm=(0.0,), variants=ids))
    thrust_ft = feet(res.thrust_m)
    mach = np.where(np.isfinite(thrust_ft), res.thrust_mach, np.nan)
    eta = ClimbPhysics(cases).propeller_efficiency(np.where(np.isfinite(mach), mach, cases.mach_low))
    per_pair: dict[str, dict] = {vid: {} for vid in ids}
    for i, (vi, ei) in enumerate(zip(cases.variant_index.tolist(), cases.engine_index.tolist())):
        per_pair[index.variant_ids[vi]][index.engine_ids[ei]] = (_number(thrust_ft[i]), _number(mach[i]),
                                                                 _number(eta[i]) if np.isfinite(mach[i]) else None)
    figures = {}
    for vid in ids:
        v = catalogue.variants[vid]
        ld_max, cl_star = best_lift_to_drag(v.cd0, v.k)
        engines = [catalogue.engines[eid] for eid in v.engine_options]
        weight_n = v.mtow_kg * G0
        fig = {
            "induced_drag_k": float(v.k),
            "ld_max": float(ld_max),
            "cl_ld_max": float(cl_star),
            "wing_loading_kg_m2": v.mtow_kg / v.wing_area_m2,
        }
        jets, props = [e for e in engines if not e.is_propeller], [e for e in engines if e.is_propeller]
        if jets:
            fig["thrust_to_weight"] = {e.id: v.engine_count * e.static_thrust_kn * 1000.0 / weight_n for e in jets}
        if props:
            fig["power_to_weight_kw_per_kg"] = {e.id: v.engine_count * e.shaft_power_kw / v.mtow_kg for e in props}
        fig["absolute_ceiling_ft"] = {e.id: per_pair[vid][e.id][0] for e in engines}
        fig["absolute_ceiling_mach"] = {e.id: per_pair[vid][e.id][1] for e in engines}
        if props:
            fig["absolute_ceiling_propeller_efficiency"] = {e.id: per_pair[vid][e.id][2] for e in props}
        figures[vid] = fig
    return figures


def _number(value) -> float | None:
    return None if np.isnan(value) else float(value)


def variant_figures(catalogue, variant_id: str) -> dict:
    """:func:`fleet_figures` of one variant."""
    return fleet_figures(catalogue, (variant_id,))[variant_id]
