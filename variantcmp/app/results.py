"""One computed result table and how the app asks for it.

The app gets every number through `variantcmp.table.ceilings_table`, the same
call as `variantcmp ceilings`; this module only times the call and turns a user
error into text to show in place.
"""

from __future__ import annotations

from dataclasses import dataclass
from time import perf_counter

import polars as pl

from variantcmp.catalogue import Catalogue
from variantcmp.table import Conditions, ceilings_table, check_selection
from variantcmp.units import OptionError

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
    start = perf_counter()
    df: pl.DataFrame | None = None
    error: str | None = None
    try:
        check_selection(catalogue, conditions)
        df = with_row_keys(ceilings_table(catalogue, conditions))
    except OptionError as exc:
        error = str(exc)
    except Exception as exc:  # the app must not die: show what went wrong in place
        error = f"could not compute this table ({type(exc).__name__}: {exc})"
    return Results(catalogue, conditions, df, error, (perf_counter() - start) * 1000.0)


def export_frame(df: pl.DataFrame) -> pl.DataFrame:
    """The table as exported: the shared columns, without the app's row key."""
    return df.drop(ROW_KEY, strict=False)
