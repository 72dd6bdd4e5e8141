"""One computed result table and how the app asks for it.

The app gets every number through `variantcmp.table.ceilings_table` (and the
planner's through `planner_table`), the same calls as the commands; this module
only times the call and turns a user error into text to show in place.
"""

from __future__ import annotations

from dataclasses import dataclass
from time import perf_counter

import polars as pl

from variantcmp.catalogue import Catalogue
from variantcmp.table import Conditions, ceilings_table, check_selection, planner_table
from variantcmp.units import OptionError

from .planner_view import planner_note
from .view import ROW_KEY, with_row_keys


@dataclass(frozen=True)
class Results:
    catalogue: Catalogue
    conditions: Conditions
    df: pl.DataFrame | None  # ceilings_table output plus a row key; None when it failed
    error: str | None  # one line to show in place when df is None
    compute_ms: float


def compute(catalogue: Catalogue, conditions: Conditions) -> Results:
    """Run the shared table code; never raises for a user-caused problem."""
    return _timed(catalogue, conditions, lambda: ceilings_table(catalogue, conditions))


def compute_planner(catalogue: Catalogue, conditions: Conditions) -> Results:
    """`variantcmp.table.planner_table` for the conditions' target, with each row's notes in one
    column (``planner_note``); never raises for a user-caused problem."""
    def table():
        df = planner_table(catalogue, conditions, conditions.target_fl_ft)
        return df.with_columns(planner_note=pl.Series([planner_note(row) for row in df.iter_rows(named=True)],
                                                      dtype=pl.String))

    return _timed(catalogue, conditions, table)


def _timed(catalogue: Catalogue, conditions: Conditions, table) -> Results:
    start = perf_counter()
    df: pl.DataFrame | None = None
    error: str | None = None
    try:
        check_selection(catalogue, conditions)
        df = with_row_keys(table())
    except OptionError as exc:
        error = str(exc)
    except Exception as exc:  # the app must not die: show what went wrong in place
        error = f"could not compute this table ({type(exc).__name__}: {exc})"
    return Results(catalogue, conditions, df, error, (perf_counter() - start) * 1000.0)


def export_frame(df: pl.DataFrame) -> pl.DataFrame:
    """The table as exported: the shared columns, without the app's row key."""
    return df.drop(ROW_KEY, strict=False)
