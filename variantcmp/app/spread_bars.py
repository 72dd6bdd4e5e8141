"""P10-P90 bars beside the compare screen's rows: the spread of each row's maximum altitude under
the default uncertain data (`variantcmp.table.perturbations.spread_table`, computed in a worker),
drawn as one character bar per row on a scale shared by every row. Reshaping and text only.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from time import perf_counter

import polars as pl

from variantcmp.catalogue import Catalogue
from variantcmp.table import Conditions
from variantcmp.table.perturbations import DEFAULT_VARY, spread_table
from variantcmp.units import OptionError, format_flight_level, format_variations

from .view import NONE, SPREAD_BAR

SEED = 1
#: Samples per row: SAMPLE_BUDGET solves shared by the rows, within MIN_SAMPLES-MAX_SAMPLES, so a
#: large grid answers in about the time of a small one.
MIN_SAMPLES, MAX_SAMPLES, SAMPLE_BUDGET = 100, 1000, 100_000
BAR_WIDTH = 16
SCALE_STEP_FT = 500.0  # the shared scale's ends, rounded out to this
KEYS = ["variant", "engine", "weight_kg", "isa_dev_c", "climb_fpm"]
COLUMNS = ("p10_ft", "p50_ft", "p90_ft")
SPREAD_KEYS = ("p10", "spread", "p90")
PENDING = "…"  # a bar on its way  # the compare table's columns of the spread (view.COLUMNS)
# P10, P50, P90 and the line between (fine, ASCII).
GLYPHS = {False: ("├", "┼", "┤", "─", "┃"), True: ("[", "|", "]", "-", "|")}


@dataclass(frozen=True)
class Spread:
    """A spread table and what it was computed for."""

    catalogue: Catalogue
    conditions: Conditions
    frame: pl.DataFrame | None
    error: str | None
    samples: int
    compute_ms: float


def samples_for(rows: int) -> int:
    return max(MIN_SAMPLES, min(MAX_SAMPLES, SAMPLE_BUDGET // max(rows, 1)))


def compute_spread(catalogue: Catalogue, conditions: Conditions, rows: int) -> Spread:
    """The spread of every row (in the worker); never raises for a user-caused problem."""
    started, samples = perf_counter(), samples_for(rows)
    frame, error = None, None
    try:
        frame = spread_table(catalogue, conditions, DEFAULT_VARY, samples, SEED)
    except OptionError as exc:
        error = str(exc)
    except Exception as exc:  # the app must not die: show what went wrong in place
        error = f"could not compute the spread ({type(exc).__name__}: {exc})"
    return Spread(catalogue, conditions, frame, error, samples, (perf_counter() - started) * 1000.0)


def scale(frame: pl.DataFrame) -> tuple[float, float] | None:
    """The bars' shared scale, ft: the lowest P10 to the highest P90, rounded out."""
    low, high = frame["p10_ft"].min(), frame["p90_ft"].max()
    if low is None or high is None:
        return None
    low = math.floor(low / SCALE_STEP_FT) * SCALE_STEP_FT
    return low, max(math.ceil(high / SCALE_STEP_FT) * SCALE_STEP_FT, low + SCALE_STEP_FT)


def bar(p10, p50, p90, low: float, high: float, width: int = BAR_WIDTH, ascii: bool = False) -> str:
    """``width`` characters: P10 and P90 as the bar's ends on the scale low-high, P50 marked."""
    if p10 is None or p50 is None or p90 is None:
        return NONE.ljust(width)
    start, mid, end, line, single = GLYPHS[ascii]
    place = lambda v: min(width - 1, max(0, round((v - low) / (high - low) * (width - 1))))  # noqa: E731
    a, m, b = place(p10), place(p50), place(p90)
    chars = [" "] * width
    for i in range(a, b + 1):
        chars[i] = line
    if a == b:
        chars[a] = single
    else:
        chars[a], chars[b] = start, end
        if a < m < b:
            chars[m] = mid
    return "".join(chars)


def with_spread(df: pl.DataFrame, spread: Spread | None, ascii: bool) -> pl.DataFrame:
    """``df`` with each row's P10, P50 and P90 (ft) and its bar (``SPREAD_BAR``) where the spread
    is of the same table; the order of ``df`` is kept. Without one (on its way) the columns are
    there, empty, so that the table does not change shape while it is computed."""
    if spread is None or spread.frame is None:
        return df.with_columns(*(pl.lit(None, dtype=pl.Float64).alias(c) for c in COLUMNS),
                               pl.lit(PENDING, dtype=pl.String).alias(SPREAD_BAR))
    frame = spread.frame.select(*KEYS, *COLUMNS)
    ends = scale(frame)
    bars = [NONE] * frame.height if ends is None else [
        bar(a, m, b, *ends, ascii=ascii) for a, m, b in zip(*(frame[c].to_list() for c in COLUMNS))]
    frame = frame.with_columns(pl.Series(SPREAD_BAR, bars, dtype=pl.String))
    return df.join(frame, on=KEYS, how="left", maintain_order="left")


def note(spread: Spread | None, pending: bool, ascii: bool) -> str:
    """The line above the table that says what the bars show, the most needed first."""
    start, mid, end, _, _ = GLYPHS[ascii]
    head = f"{start} P10 {mid} P50 {end} P90 of the maximum altitude"
    sigmas = f"σ {format_variations(DEFAULT_VARY)}"
    if spread is None or spread.frame is None:
        return f"{head} · {sigmas} · " + (f"✗ {spread.error}" if spread is not None and spread.error else "computing …")
    ends = scale(spread.frame)
    where = "" if ends is None else f", {format_flight_level(ends[0])} to {format_flight_level(ends[1])}"
    tail = "recomputing …" if pending else f"{spread.compute_ms:.0f} ms"
    return f"{head}{where} · {sigmas} · {spread.samples:,} samples, seed {SEED} · {tail} · u hides"
