"""How the screening matrix is shown: one block per engine option, weights down, ISA deviations
across, each cell the difference from the baseline in hundreds of feet with a shade glyph (and
the option's binding limit where it differs from the baseline's), options sorted by a summary
figure. Reshaping and text only: the numbers come from `variantcmp.table.screening`.

Nothing rests on colour: the sign and the number say gain or loss, the shade says how much, a
limit glyph says where the limit flips; colour (green gains, red losses) is a second cue.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import polars as pl
from rich.text import Text

from variantcmp.table.screening import GAINS, LOSES, TIE_FT
from variantcmp.units import format_flight_level, format_isa_dev

from .view import LIMIT_GLYPHS, NONE

#: Shade glyph by the size of the difference (ft, upper bounds): ties and small differences
#: first, then ever darker.
SHADES = ((50.0, "·"), (500.0, "░"), (1000.0, "▒"), (2000.0, "▓"), (math.inf, "█"))
TIE_MARK = "="
ONLY_OPTION, ONLY_BASELINE = "✓", "✗"  # only the option / only the baseline has a maximum altitude
CELL_WIDTH = 6  # number (4), shade (1), limit glyph (1)
GAP = " "


@dataclass(frozen=True)
class SortFigure:
    """A summary figure the options sort by (the shared sort cycle's column: ``key``, ``high_first``)."""

    key: str
    words: str
    high_first: bool = True


#: The figures the options sort by, in the order s steps through them (then catalogue order).
SORTS = (SortFigure("mean_delta_ft", "mean Δ"), SortFigure("worst_delta_ft", "worst Δ"),
         SortFigure("best_delta_ft", "best Δ"), SortFigure("gains_pct", "gains %"))
SORTS_BY_KEY = {f.key: f for f in SORTS}


def hundreds(delta_ft: float) -> int:
    """A difference in hundreds of feet, rounded half away from zero."""
    return int(math.copysign(math.floor(abs(delta_ft) / 100.0 + 0.5), delta_ft))


def shade(delta_ft: float) -> str:
    size = abs(delta_ft)
    return next(glyph for bound, glyph in SHADES if size < bound)


def cell_text(row: dict) -> tuple[str, str | None]:
    """One cell (CELL_WIDTH characters) and its colour: the difference in hundreds of feet, a
    shade glyph, the option's limit glyph where the limit changed."""
    flip = LIMIT_GLYPHS.get(row["limit"], "?") if row["limit_changed"] and row["limit"] else " "
    delta = row["delta_ft"]
    if delta is None:
        sign = {GAINS: ONLY_OPTION, LOSES: ONLY_BASELINE}.get(row["outcome"], NONE)
        colour = {GAINS: "green", LOSES: "red"}.get(row["outcome"])
        return f"{sign:>4} {flip}", colour
    if abs(delta) < TIE_FT:
        return f"{TIE_MARK:>4}{shade(delta)}{flip}", None
    n = hundreds(delta)
    number = f"{n:+d}" if n else ("+0" if delta > 0 else "-0")
    return f"{number:>4}{shade(delta)}{flip}", "green" if delta > 0 else "red"


@dataclass(frozen=True)
class Option:
    """One option's block: its summary row and its grid rows."""

    summary: dict
    rows: pl.DataFrame


def sorted_options(frame: pl.DataFrame, summary: pl.DataFrame, key: str | None, descending: bool) -> list[Option]:
    """The options sorted by the summary figure ``key`` (None: catalogue order); missing figures last."""
    if key is not None:
        summary = summary.sort(key, descending=descending, nulls_last=True, maintain_order=True)
    elif descending:
        summary = summary.reverse()
    parts = frame.partition_by("variant", "engine", as_dict=True, maintain_order=True)
    return [Option(row, parts[(row["variant"], row["engine"])]) for row in summary.iter_rows(named=True)]


def _signed(value) -> str:
    return NONE if value is None else ("0" if abs(value) < 0.5 else f"{value:+,.0f}")


def _pct(value) -> str:
    return NONE if value is None else f"{value:.0f}"


def block(option: Option, by_pct: bool, colour: bool = True) -> Text:
    """The matrix of one option: a title line with its summary, the ISA header, a row per weight,
    and where its limit flips."""
    s, rows = option.summary, option.rows
    text = Text()
    text.append(f"{s['variant']} · {s['engine']}", style="bold")
    text.append(f" vs ◆ {s['baseline']}\n")
    text.append(f"  mean Δ {_signed(s['mean_delta_ft'])} ft, worst {_signed(s['worst_delta_ft'])}, best "
                f"{_signed(s['best_delta_ft'])} · gains {_pct(s['gains_pct'])} %, ties {_pct(s['ties_pct'])} %, "
                f"loses {_pct(s['loses_pct'])} %\n")
    days = sorted(set(rows["isa_dev_c"].to_list()))
    label = "%MTOW" if by_pct else "W t"
    text.append(f"{label:>6} " + GAP.join(f"{format_isa_dev(d):>{CELL_WIDTH}}" for d in days) + "\n", style="dim")
    cells = {(r["weight_kg"], r["isa_dev_c"]): r for r in rows.iter_rows(named=True)}
    for weight_kg in sorted(set(rows["weight_kg"].to_list())):
        first = next(r for (w, _), r in cells.items() if w == weight_kg)
        name = f"{first['weight_pct_mtow']:.0f}" if by_pct else f"{weight_kg / 1000.0:.1f}"
        text.append(f"{name:>6} ")
        for i, day in enumerate(days):
            row = cells.get((weight_kg, day))
            shown, style = cell_text(row) if row is not None else (f"{NONE:>4}  ", None)
            text.append(shown, style=style if colour else None)
            if i + 1 < len(days):
                text.append(GAP)
        text.append("\n")
    if "target_weight_delta_kg" in rows.columns:
        text.append_text(_weight_row(rows, days, s, colour))
    flips = s["limit_flips"]
    text.append(f"  limit flips: {flips}\n" if flips else "  limit flips: none\n", style="italic")
    return text


def weight_cell(row: dict) -> tuple[str, str | None]:
    """The difference of the heaviest weight for the target (t, one decimal) and its colour;
    ✓ / ✗ where only the option / only the baseline has one, — where neither."""
    delta = row["target_weight_delta_kg"]
    if delta is None:
        mine, theirs = row["target_weight_kg"] is not None, row["baseline_target_weight_kg"] is not None
        sign = ONLY_OPTION if mine else ONLY_BASELINE if theirs else NONE
        return f"{sign:>{CELL_WIDTH}}", "green" if mine else "red" if theirs else None
    tonnes = delta / 1000.0
    if abs(tonnes) < 0.05:
        return f"{TIE_MARK:>{CELL_WIDTH}}", None
    return f"{tonnes:>+{CELL_WIDTH}.1f}", "green" if delta > 0 else "red"


def _weight_row(rows: pl.DataFrame, days: list, summary: dict, colour: bool) -> Text:
    """The row under the matrix: per day, the option's heaviest weight for the target less the
    baseline's (t), whatever the row's weight."""
    level = rows["target_ft"][0]
    text = Text()
    text.append(f"{'ΔW t':>6} ", style="bold")
    by_day = {r["isa_dev_c"]: r for r in rows.iter_rows(named=True)}
    for i, day in enumerate(days):
        shown, style = weight_cell(by_day[day])
        text.append(shown, style=style if colour else None)
        if i + 1 < len(days):
            text.append(GAP)
    mean = summary.get("mean_target_weight_delta_kg")
    if mean is None:  # no day with both weights: say why (the reason words of `heaviest`)
        why = sorted({w for c in ("target_weight_reason", "baseline_target_weight_reason") for w in rows[c] if w})
        text.append(f"  no heaviest weight for {format_flight_level(level)} ({', '.join(why) or 'none'})\n",
                    style="italic")
    else:
        text.append(f"  heaviest for {format_flight_level(level)}, mean {_signed(mean)} kg\n", style="italic")
    return text


def legend() -> str:
    shades = " ".join(f"{glyph} <{bound:,.0f}" if math.isfinite(bound) else f"{glyph} more" for bound, glyph in SHADES)
    limits = "".join(LIMIT_GLYPHS[k] for k in ("thrust", "buffet", "stall", "certified", "cabin"))
    return (f"Δ option − baseline, hundreds of ft ({TIE_MARK} within {TIE_FT:g} ft) · shade |Δ| ft: {shades} · {limits} "
            f"the option's limit where it differs · {ONLY_OPTION} / {ONLY_BASELINE} only the option / only the baseline "
            f"has a maximum altitude, {NONE} neither")
