"""Result tables: the solvers' answers as polars DataFrames in the units users read (ft, FL, t).

Modules: ``conditions`` (what a result is computed for, the fleet selection), ``ceilings`` (the
maximum altitudes and their notes), ``figures`` (derived figures per variant), ``inverse`` (the
heaviest weight and the warmest day for a target level).
"""

from __future__ import annotations

from .ceilings import (
    COLUMNS,
    LIGHT_FRACTION,
    LIMIT_COLUMNS,
    TARGET_COLUMNS,
    case_notes,
    ceilings_table,
    empty_weight_floor_kg,
    feet,
    solve,
)
from .conditions import Conditions, check_selection, resolve_ids, selected_pairs
from .figures import FIGURE_LABELS, fleet_figures, variant_figures
from .inverse import HEAVIEST_COLUMNS, HOTTEST_COLUMNS, heaviest_table, hottest_table, planner_table

__all__ = [
    "COLUMNS", "FIGURE_LABELS", "HEAVIEST_COLUMNS", "HOTTEST_COLUMNS", "LIGHT_FRACTION", "LIMIT_COLUMNS", "TARGET_COLUMNS", "Conditions", "case_notes", "ceilings_table",
    "check_selection", "empty_weight_floor_kg", "feet", "fleet_figures", "heaviest_table", "hottest_table",
    "planner_table", "resolve_ids", "selected_pairs", "solve",
    "variant_figures",
]
