"""Engine-option screening: every other engine option of each variant against a baseline option,
over the weight x ISA grid, and a summary per option.

No physics here: one ceilings table for the variants offering the baseline (one solve), then a
polars join of each option's rows with the baseline's rows at the same variant, weight, ISA
deviation and climb criterion. With a target level, the heaviest weight for it
(:func:`~variantcmp.table.inverse.heaviest_table`, one solve) joins the same way at the same
variant, ISA deviation and climb: each option's, the baseline's and the difference.
"""

from __future__ import annotations

from dataclasses import replace

import polars as pl

from ..units import OptionError, WeightSpec, format_isa_dev, shown
from .ceilings import ceilings_table
from .conditions import Conditions
from .inverse import heaviest_table

#: A difference under this is no difference (the solver's stated accuracy is about 0.1 ft at the
#: best speed, and the tables show whole feet).
TIE_FT = 1.0
#: The grid `screen` and the app's screening matrix use where the conditions give one weight or one
#: day: 80-100 %MTOW in steps of 5, ISA to ISA+30 (hot days, where flat ratings run out).
DEFAULT_WEIGHTS = tuple(WeightSpec(p, "%mtow") for p in (80.0, 85.0, 90.0, 95.0, 100.0))
DEFAULT_ISA_DEVS_C = (0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0)
KEYS = ["variant", "weight_kg", "isa_dev_c", "climb_fpm"]
#: Outcome of an option at a grid point against the baseline.
GAINS, LOSES, TIES = "gains", "loses", "ties"
#: The heaviest-weight columns a target adds (the option's, the baseline's, the difference, the
#: limits that give them and why one is missing).
TARGET_WEIGHT_COLUMNS = ("target_ft", "target_weight_kg", "baseline_target_weight_kg", "target_weight_delta_kg",
                         "target_weight_pct_mtow", "baseline_target_weight_pct_mtow", "target_weight_limit", "baseline_target_weight_limit", "target_weight_reason",
                         "baseline_target_weight_reason")


def screening_grid(conditions: Conditions) -> Conditions:
    """The conditions with the default grid's weights where they give one weight, and its days
    where they give one day (a grid needs both directions)."""
    return replace(conditions,
                   weights=conditions.weights if len(conditions.weights) > 1 else DEFAULT_WEIGHTS,
                   isa_devs_c=conditions.isa_devs_c if len(conditions.isa_devs_c) > 1 else DEFAULT_ISA_DEVS_C)


def screened_variants(catalogue, conditions: Conditions, baseline: str) -> tuple[str, list[str], list[str]]:
    """(the baseline's id, the variants screened, the variants left out with why) for ``baseline``
    (an id in any case); OptionError for an unknown baseline or one that no selected variant
    offers beside another option."""
    if baseline not in catalogue.engines:
        same = [e for e in catalogue.engines if e.lower() == baseline.lower()]
        if len(same) != 1:
            raise OptionError(f"--baseline: unknown engine option {shown(baseline)} in {catalogue.path}; "
                              f"expected one of: {', '.join(catalogue.engines)}")
        baseline = same[0]
    chosen = conditions.variants or tuple(catalogue.variants)
    screened, left_out = [], []
    for vid in chosen:
        options = catalogue.variants[vid].engine_options
        if baseline not in options:
            left_out.append(f"{vid} does not offer {baseline}")
        elif len(options) == 1:
            left_out.append(f"{vid} offers only {baseline}")
        else:
            screened.append(vid)
    if not screened:
        offering = [v.id for v in catalogue.variants.values() if baseline in v.engine_options and len(v.engine_options) > 1]
        hint = f"variants offering it beside another option: {', '.join(offering)}" if offering else \
            "no variant offers it beside another option"
        raise OptionError(f"--baseline: nothing to compare with {baseline} ({'; '.join(left_out)}); {hint}")
    return baseline, screened, left_out


def baseline_candidates(catalogue, variants: tuple[str, ...] = ()) -> list[str]:
    """Engine options that some of ``variants`` (all when empty) offers beside another option:
    the baselines a screening can use, in catalogue order."""
    chosen = [catalogue.variants[v] for v in (variants or tuple(catalogue.variants))]
    return [e for e in catalogue.engines if any(e in v.engine_options and len(v.engine_options) > 1 for v in chosen)]


def compare_options(frame: pl.DataFrame, baseline: str) -> pl.DataFrame:
    """The screening rows of a ceilings table (a polars join, no physics): one row per variant
    offering ``baseline`` x other engine option x weight x ISA deviation x climb, with its maximum
    altitude, the baseline's, the difference, both binding limits and whether the limit changed,
    and the outcome (gains / loses / ties within TIE_FT; an option with an altitude where the
    baseline has none gains, and the reverse loses; null where neither has one)."""
    base = frame.filter(pl.col("engine") == baseline).select(
        *KEYS, pl.col("max_altitude_ft").alias("baseline_ft"), pl.col("limit").alias("baseline_limit"),
        pl.col("mach").alias("baseline_mach"), pl.col("note").alias("baseline_note"))
    delta = pl.col("max_altitude_ft") - pl.col("baseline_ft")
    have, base_have = pl.col("max_altitude_ft").is_not_null(), pl.col("baseline_ft").is_not_null()
    return (frame.filter((pl.col("engine") != baseline) & pl.col("variant").is_in(base["variant"].unique().implode()))
            .join(base, on=KEYS, how="left", maintain_order="left")
            .with_columns(baseline=pl.lit(baseline), delta_ft=delta,
                          limit_changed=pl.col("limit").ne_missing(pl.col("baseline_limit")) & (have | base_have),
                          outcome=pl.when(have & base_have).then(
                              pl.when(delta >= TIE_FT).then(pl.lit(GAINS)).when(delta <= -TIE_FT).then(pl.lit(LOSES))
                              .otherwise(pl.lit(TIES)))
                          .when(have).then(pl.lit(GAINS)).when(base_have).then(pl.lit(LOSES)))
            .select("variant", "engine", "baseline", "weight_kg", "weight_pct_mtow", "isa_dev_c", "climb_fpm", "mach",
                    "baseline_mach", "max_altitude_ft", "baseline_ft", "delta_ft", "limit", "baseline_limit",
                    "limit_changed", "outcome", "note", "baseline_note", "over_mtow", "below_empty_weight"))


def compare_heaviest(frame: pl.DataFrame, heaviest: pl.DataFrame, baseline: str) -> pl.DataFrame:
    """The screening rows ``frame`` with the heaviest weight for the target (a
    :func:`~variantcmp.table.inverse.heaviest_table` of one target) of each row's option and of the
    baseline at the same variant, ISA deviation and climb (kg and %MTOW: not capped at MTOW, as
    ``heaviest`` gives it), and the difference (option - baseline; null where either has none). A
    polars join, no physics."""
    keys = ["variant", "isa_dev_c", "climb_fpm"]
    picked = heaviest.select(*keys, "engine", "target_ft", pl.col("max_weight_kg").alias("target_weight_kg"),
                             pl.col("max_weight_pct_mtow").alias("target_weight_pct_mtow"),
                             pl.col("limit").alias("target_weight_limit"),
                             pl.col("reason").alias("target_weight_reason"))
    base = picked.filter(pl.col("engine") == baseline).select(
        *keys, *(pl.col(c).alias(f"baseline_{c}") for c in ("target_weight_kg", "target_weight_pct_mtow",
                                                            "target_weight_limit", "target_weight_reason")))
    return (frame.join(picked, on=[*keys, "engine"], how="left", maintain_order="left")
            .join(base, on=keys, how="left", maintain_order="left")
            .with_columns(target_weight_delta_kg=pl.col("target_weight_kg") - pl.col("baseline_target_weight_kg"))
            .select(*frame.columns, *TARGET_WEIGHT_COLUMNS))


def screening_table(catalogue, conditions: Conditions, baseline: str) -> pl.DataFrame:
    """:func:`compare_options` of the ceilings table of the variants offering ``baseline`` beside
    another option (see :func:`screened_variants`), solved once; with a target level
    (``conditions.target_fl_ft``) also :func:`compare_heaviest` of their heaviest weights for it."""
    baseline, screened, _ = screened_variants(catalogue, conditions, baseline)
    conditions = replace(conditions, variants=tuple(screened), engines=())
    frame = compare_options(ceilings_table(catalogue, conditions), baseline)
    if conditions.target_fl_ft is None:
        return frame
    return compare_heaviest(frame, heaviest_table(catalogue, conditions, (conditions.target_fl_ft,)), baseline)


def _span(values: list[float], unit: str) -> str:
    low, high = min(values), max(values)
    text = (lambda v: f"{v:g}") if unit == "%MTOW" else format_isa_dev
    return text(low) if low == high else f"{text(low)} to {text(high)}"


def _flip_text(rows: list[dict]) -> str:
    """Where an option's binding limit differs from the baseline's: per change (baseline's limit
    -> the option's), the weights and days it spans and how many points."""
    groups: dict[tuple, list[dict]] = {}
    for row in rows:
        groups.setdefault((row["baseline_limit"] or "no altitude", row["limit"] or "no altitude"), []).append(row)
    parts = []
    for (before, after), members in groups.items():
        weights = _span([m["weight_pct_mtow"] for m in members], "%MTOW")
        days = _span([m["isa_dev_c"] for m in members], "ISA")
        parts.append(f"{before}→{after} at {weights} %MTOW, {days} ({len(members)} point{'s' * (len(members) > 1)})")
    return "; ".join(parts)


def screening_summary(frame: pl.DataFrame) -> pl.DataFrame:
    """Per variant x option: grid points, mean, worst and best difference (ft, over the points where
    both have an altitude), the shares of points it gains, ties and loses (%), how many points
    the binding limit changes at, and where (``limit_flips``); with a target, the mean difference
    of the heaviest weight for it (kg, over the days where both have one)."""
    counted = pl.col("outcome").is_not_null().sum()
    share = lambda outcome: pl.when(counted > 0).then(100.0 * (pl.col("outcome") == outcome).sum() / counted)  # noqa: E731
    summary = (frame.group_by("variant", "engine", "baseline", maintain_order=True).agg(
        points=pl.len(),
        mean_delta_ft=pl.col("delta_ft").mean(),
        worst_delta_ft=pl.col("delta_ft").min(),
        best_delta_ft=pl.col("delta_ft").max(),
        gains_pct=share(GAINS), ties_pct=share(TIES), loses_pct=share(LOSES),
        limit_changes=pl.col("limit_changed").sum(),
        *([] if "target_weight_delta_kg" not in frame.columns else [
            pl.col("target_weight_delta_kg").mean().alias("mean_target_weight_delta_kg")]),
    ))
    flips = {(v, e): _flip_text(g.to_dicts()) for (v, e), g in
             frame.filter(pl.col("limit_changed")).group_by("variant", "engine", maintain_order=True)}
    return summary.with_columns(pl.Series("limit_flips", [flips.get((v, e), "") for v, e in
                                                          zip(summary["variant"], summary["engine"])], dtype=pl.String))
