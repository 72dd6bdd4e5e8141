"""How a result table is shown: columns, cell text, sorting, filtering, baseline differences.

Everything here reshapes the DataFrames that `variantcmp.table` returns (polars joins, no
physics). Cell text uses the same formatters as the headless commands (`variantcmp.units`), so a
number reads the same in the app and on the CLI.

A baseline is a variant x engine option. Each row is compared with the baseline's row at the same
weight (the same %MTOW or the same kg: `Baseline.match`), ISA deviation and climb criterion:
`with_baseline` puts those values beside the row (`_base_*` columns), and the difference columns
show row minus baseline, or no value where the baseline has no such row.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import polars as pl
from rich.cells import cell_len
from rich.text import Text

from variantcmp.units import format_altitude_ft, format_flight_level, format_isa_dev

NONE = "—"
ROW_KEY = "_row"

# Binding limit: a glyph as well as the word, so nothing rests on colour.
LIMIT_GLYPHS: dict[str, str] = {
    "thrust": "↑",
    "buffet": "≈",
    "stall": "▽",
    "certified": "■",
    "cabin": "◇",
    "none": "○",
}
LIMIT_MEANINGS: dict[str, str] = {
    "thrust": "residual rate of climb falls below the criterion",
    "buffet": "buffet onset at the load-factor margin",
    "stall": "lift coefficient reaches CL max at 1 g",
    "certified": "certified maximum operating altitude",
    "cabin": "cabin pressure differential limit",
    "none": "no limit found below the model top",
}
BASELINE_MARK = "◆"
OVER_MTOW_MARK = "*"  # weight above MTOW: computed, and flagged
BELOW_EMPTY_MARK = "!"  # weight below the operating empty weight: computed, and flagged
BASE_PREFIX = "_base_"  # the baseline's value of a column, beside each row
IS_BASE = "_is_base"  # the row belongs to the baseline variant x engine option
BASE_ROW = "_base_row"  # true where the baseline has a row at the same weight, day and climb
# Rows marked for the envelope overlay carry their overlay number (the drawing's curve tag).
MAX_MARKED = 3
MARK_PREFIX = "#"
SPREAD_BAR = "_spread_bar"  # the row's P10-P90 bar, drawn by spread_bars.with_spread
MAKES_IT = "✓"
SHORT_OF_IT = "✗"


class Cell:
    """The text of one table cell.

    Not a Rich object and not a str: the table widget turns it into text only
    when the row scrolls into view, and never reads it as markup.
    """

    __slots__ = ("plain", "right")

    def __init__(self, plain: str, right: bool = False) -> None:
        self.plain = plain
        self.right = right  # a number: right-justified in its column

    def __str__(self) -> str:
        return self.plain

    def __repr__(self) -> str:
        return f"Cell({self.plain!r})"


@dataclass(frozen=True)
class Column:
    """One column of the compare table."""

    key: str  # DataTable column key
    header: str
    source: str  # DataFrame column holding the value (also the sort key)
    kind: str  # how to write the value: text, ft, fl, limit, margin, mach, tonnes, pct, isa, fpm
    diff: bool = False  # written as a difference from the baseline row when one is pinned
    high_first: bool = False  # first sort puts the highest value on top


COLUMNS: tuple[Column, ...] = (
    Column("variant", "Variant", "variant", "text"),
    Column("engine", "Engine", "engine", "text"),
    Column("fl", "Max FL", "max_altitude_ft", "fl", high_first=True),
    Column("max_ft", "Max ft", "max_altitude_ft", "ft", diff=True, high_first=True),
    Column("limit", "Limit", "limit", "limit"),
    # Shown only where the P10-P90 spread is joined (the compare screen's u).
    Column("p10", "P10", "p10_ft", "fl", high_first=True),
    Column("spread", "P10–P90", "p50_ft", "bar", high_first=True),
    Column("p90", "P90", "p90_ft", "fl", high_first=True),
    Column("margin", "Margin ft", "margin_ft", "margin", high_first=True),
    Column("mach", "Mach", "mach", "mach", diff=True, high_first=True),
    Column("weight", "W t", "weight_kg", "tonnes"),
    Column("pct_mtow", "%MTOW", "weight_pct_mtow", "pct"),
    Column("isa", "ISA", "isa_dev_c", "isa"),
    Column("climb", "Climb", "climb_fpm", "fpm"),
    Column("thrust", "Thrust", "thrust_ceiling_ft", "ft", diff=True, high_first=True),
    Column("buffet", "Buffet", "buffet_ceiling_ft", "ft", diff=True, high_first=True),
    Column("stall", "Stall", "stall_ceiling_ft", "ft", diff=True, high_first=True),
    Column("certified", "Cert.", "certified_ceiling_ft", "ft", diff=True, high_first=True),
    Column("cabin", "Cabin", "cabin_ceiling_ft", "ft", diff=True, high_first=True),
    Column("note", "Note", "note", "text"),
)
COLUMNS_BY_KEY = {column.key: column for column in COLUMNS}
_RIGHT = {"ft", "fl", "margin", "mach", "tonnes", "pct", "isa", "fpm"}
DIFF_SOURCES = tuple(dict.fromkeys(column.source for column in COLUMNS if column.diff))


def visible_columns(df: pl.DataFrame) -> list[Column]:
    """The columns this table can fill (the margin needs a target flight level, the P10-P90
    columns a spread)."""
    return [column for column in COLUMNS if column.source in df.columns]


def with_row_keys(df: pl.DataFrame) -> pl.DataFrame:
    """Add a stable row identity: variant, engine and the row's place within that pair.

    With one weight and one deviation the key survives condition changes, so a
    pinned baseline and the cursor stay on the same aircraft.
    """
    ordinal = pl.int_range(pl.len()).over(["variant", "engine"]).cast(pl.Utf8)
    return df.with_columns(
        pl.concat_str([pl.col("variant"), pl.col("engine"), ordinal], separator="|").alias(ROW_KEY)
    )


def filter_rows(df: pl.DataFrame, text: str) -> pl.DataFrame:
    """Rows whose variant, engine, limit or note contain every word of ``text`` (any case)."""
    words = text.lower().split()
    if not words or df.height == 0:
        return df
    haystack = pl.concat_str(
        [pl.col(name).cast(pl.Utf8).fill_null("") for name in ("variant", "engine", "limit", "note")],
        separator=" ",
    ).str.to_lowercase()
    condition = pl.lit(True)
    for word in words:
        condition = condition & haystack.str.contains(word, literal=True)
    return df.filter(condition)


def sort_rows(df: pl.DataFrame, column: Column | None, descending: bool) -> pl.DataFrame:
    """Sort by one column; missing values always last; ties keep catalogue order."""
    if column is None or column.source not in df.columns:
        return df
    return df.sort(column.source, descending=descending, nulls_last=True, maintain_order=True)


@dataclass(frozen=True)
class Baseline:
    """The variant x engine option the other rows are compared with."""

    variant: str
    engine: str
    match: str = "pct"  # rows are compared at the same "pct" (%MTOW) or the same "kg"

    @property
    def name(self) -> str:
        return f"{self.variant}/{self.engine}"

    @property
    def match_words(self) -> str:
        return "%MTOW" if self.match == "pct" else "weight in kg"

    def switched(self) -> "Baseline":
        """The same baseline, compared at the other kind of weight."""
        return Baseline(self.variant, self.engine, "kg" if self.match == "pct" else "pct")


def default_match(weights) -> str:
    """Compare at the same kg when every weight was typed as a mass, else at the same %MTOW."""
    return "kg" if weights and all(w.unit == "kg" for w in weights) else "pct"


# Rounding of the matching keys: weights and days that print the same are the same.
_MATCH_KEYS = {"pct": ("weight_pct_mtow", 6), "kg": ("weight_kg", 3)}


def with_baseline(df: pl.DataFrame, baseline: Baseline | None) -> pl.DataFrame:
    """``df`` with, per row, the baseline's values of the difference columns at the same weight
    (``baseline.match``), ISA deviation and climb criterion (``_base_<column>``, null where the
    baseline has no such row: then ``_base_row`` is null too) and ``_is_base``; the order of ``df``
    is kept."""
    if baseline is None:
        return df
    weight_column, decimals = _MATCH_KEYS[baseline.match]
    keys = {"_k_weight": pl.col(weight_column).round(decimals), "_k_isa": pl.col("isa_dev_c").round(6),
            "_k_climb": pl.col("climb_fpm").round(6)}
    is_base = (pl.col("variant") == baseline.variant) & (pl.col("engine") == baseline.engine)
    keyed = df.with_columns(**keys)
    base = (keyed.filter(is_base)
            .select(*keys, pl.lit(True).alias(BASE_ROW),
                    *[pl.col(c).alias(BASE_PREFIX + c) for c in DIFF_SOURCES if c in df.columns])
            .unique(subset=list(keys), keep="first", maintain_order=True))
    return (keyed.with_row_index("_order").join(base, on=list(keys), how="left")
            .sort("_order").drop("_order", *keys).with_columns(is_base.alias(IS_BASE)))


def header(column: Column, sort_key: str | None, descending: bool, baseline: bool) -> str:
    """Column header with the sort direction and a delta sign for baseline differences."""
    label = column.header
    if baseline and column.diff:
        label = "Δ" + label
    if sort_key == column.key:
        label += " ▼" if descending else " ▲"
    return label


def _finite(value) -> bool:
    return value is not None and not (isinstance(value, float) and math.isnan(value))


def _signed_ft(value: float) -> str:
    """A signed whole number of feet, rounded down like every altitude shown."""
    whole = math.floor(value)
    return "±0" if whole == 0 else f"{whole:+,d}"


def mark_sign(number: int) -> str:
    """The sign of the ``number``-th marked row (1-based): the tag of its curve in the overlay."""
    return f"{MARK_PREFIX}{number}"


def _weight_marks(row: dict) -> str:
    return (OVER_MTOW_MARK if row.get("over_mtow") else "") + (BELOW_EMPTY_MARK if row.get("below_empty_weight") else "")


def cell(column: Column, row: dict, marked: int | None = None) -> Cell:
    """The text of one cell. Where the row carries the baseline's values (`with_baseline`) the
    difference columns show row minus baseline; ``marked`` (1-based) is the row's place among the
    rows marked for the envelope overlay."""
    value = row.get(column.source)
    kind = column.kind
    right = kind in _RIGHT
    base_key = BASE_PREFIX + column.source
    if column.diff and base_key in row and not row.get(IS_BASE):
        base = row[base_key]
        if not (_finite(value) and _finite(base)):
            return Cell(NONE, right)
        if kind == "mach":
            delta = value - base
            return Cell("±0" if abs(delta) < 5e-4 else f"{delta:+.3f}", right)
        # Difference of the shown (rounded-down) altitudes, so the columns add up on screen.
        return Cell(_signed_ft(math.floor(value) - math.floor(base)), right)
    if kind == "text":
        text = "" if value is None else str(value)
        if column.key == "variant" and row.get(IS_BASE):
            text = f"{BASELINE_MARK} {text}"
        if column.key == "variant" and marked is not None:
            text = f"{mark_sign(marked)} {text}"
        return Cell(text)
    if kind == "bar":
        return Cell(row.get(SPREAD_BAR) or NONE)
    if not _finite(value):
        return Cell(NONE, right)
    if kind == "ft":
        return Cell(format_altitude_ft(value), right)
    if kind == "fl":
        return Cell(format_flight_level(value), right)
    if kind == "limit":
        return Cell(f"{LIMIT_GLYPHS.get(value, '?')} {value}")
    if kind == "margin":
        mark = MAKES_IT if row.get("reaches_target") else SHORT_OF_IT
        return Cell(f"{_signed_ft(value)} {mark}", right)
    if kind == "mach":
        return Cell(f"{value:.3f}", right)
    if kind == "tonnes":
        return Cell(f"{value / 1000.0:.1f}{_weight_marks(row)}", right)
    if kind == "pct":
        return Cell(f"{value:.1f}".removesuffix(".0") + _weight_marks(row), right)
    if kind == "isa":
        return Cell(format_isa_dev(value).removeprefix("ISA") or "0", right)
    if kind == "fpm":
        return Cell(f"{value:,.0f}", right)
    return Cell(str(value))


def row_cells(columns: list[Column], row: dict, marked: int | None = None) -> list[Cell]:
    return [cell(column, row, marked) for column in columns]


def justify(headers: list[str], rows: list[list[Cell]]) -> tuple[list[Text], list[int]]:
    """Pad number cells (in place) to their column's width; the headers and the widths.

    The table widget neither right-justifies nor needs to measure: it gets fixed widths.
    """
    widths = [cell_len(h) for h in headers]
    right = [False] * len(headers)
    for row in rows:
        for i, item in enumerate(row):
            width = cell_len(item.plain)
            if width > widths[i]:
                widths[i] = width
            right[i] = right[i] or item.right
    for row in rows:
        for i, item in enumerate(row):
            if right[i]:
                item.plain = item.plain.rjust(widths[i] - cell_len(item.plain) + len(item.plain))
    labels = [Text(h.rjust(widths[i] - cell_len(h) + len(h)) if right[i] else h) for i, h in enumerate(headers)]
    return labels, widths
