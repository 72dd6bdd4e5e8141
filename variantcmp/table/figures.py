"""Derived figures of each variant (polar, wing loading, thrust-to-weight, absolute ceiling), for
``variantcmp check`` and the variant view."""

from __future__ import annotations

import numpy as np

from ..aero import best_lift_to_drag
from ..atmosphere import G0
from .ceilings import feet, solve
from .conditions import Conditions


#: Each figure's name for people, its unit ("" for none) and a short two-line header.
FIGURE_LABELS = {
    "induced_drag_k": ("K (induced-drag factor)", "", "K"),
    "ld_max": ("best lift-to-drag ratio", "", "L/D\nmax"),
    "cl_ld_max": ("CL at best lift-to-drag", "", "CL at\nL/D max"),
    "wing_loading_kg_m2": ("wing loading at MTOW", "kg/m²", "W/S MTOW\nkg/m²"),
    "thrust_to_weight": ("static thrust-to-weight at MTOW", "", "T/W static\nat MTOW"),
    "absolute_ceiling_ft": ("absolute ceiling (MTOW, ISA, best speed)", "ft", "Absolute ceiling\nMTOW, ISA"),
}


def fleet_figures(catalogue, variant_ids=None) -> dict[str, dict]:
    """Derived figures per variant, keyed by name with the unit in it (:data:`FIGURE_LABELS` has
    the words for people): polar, wing loading, thrust-to-weight, absolute ceiling.

    The absolute ceiling is the thrust ceiling at zero residual climb, best speed, MTOW, ISA; one
    solve for every variant x engine option at once. Dict-valued figures are keyed by engine id.
    """
    ids = tuple(catalogue.variants) if variant_ids is None else tuple(variant_ids)
    cases, index, res = solve(catalogue, Conditions(mach="best", climb_fpm=(0.0,), variants=ids))
    thrust_ft = feet(res.thrust_m)
    absolute: dict[str, dict] = {vid: {} for vid in ids}
    for vi, ei, ft in zip(cases.variant_index.tolist(), cases.engine_index.tolist(), thrust_ft.tolist()):
        absolute[index.variant_ids[vi]][index.engine_ids[ei]] = None if np.isnan(ft) else ft
    figures = {}
    for vid in ids:
        v = catalogue.variants[vid]
        ld_max, cl_star = best_lift_to_drag(v.cd0, v.k)
        figures[vid] = {
            "induced_drag_k": float(v.k),
            "ld_max": float(ld_max),
            "cl_ld_max": float(cl_star),
            "wing_loading_kg_m2": v.mtow_kg / v.wing_area_m2,
            "thrust_to_weight": {eid: v.engine_count * catalogue.engines[eid].static_thrust_kn * 1000.0
                                 / (v.mtow_kg * G0) for eid in v.engine_options},
            "absolute_ceiling_ft": absolute[vid],
        }
    return figures


def variant_figures(catalogue, variant_id: str) -> dict:
    """:func:`fleet_figures` of one variant."""
    return fleet_figures(catalogue, (variant_id,))[variant_id]
