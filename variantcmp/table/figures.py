"""Derived figures of each variant (polar, wing loading, thrust-to-weight, absolute ceiling), for
``variantcmp check`` and the variant view."""

from __future__ import annotations

import numpy as np

from ..aero import best_lift_to_drag
from ..atmosphere import G0
from .ceilings import feet, solve
from .conditions import Conditions


def fleet_figures(catalogue, variant_ids=None) -> dict[str, dict]:
    """Derived figures per variant: polar, wing loading, thrust-to-weight, absolute ceiling.

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
            "K": float(v.k),
            "L/D max": float(ld_max),
            "CL at L/D max": float(cl_star),
            "Wing loading kg/m²": v.mtow_kg / v.wing_area_m2,
            "T/W static at MTOW": {eid: v.engine_count * catalogue.engines[eid].static_thrust_kn * 1000.0
                                   / (v.mtow_kg * G0) for eid in v.engine_options},
            "Absolute ceiling ft (MTOW, ISA)": absolute[vid],
        }
    return figures


def variant_figures(catalogue, variant_id: str) -> dict:
    """:func:`fleet_figures` of one variant."""
    return fleet_figures(catalogue, (variant_id,))[variant_id]
