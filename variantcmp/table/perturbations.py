"""How much a maximum altitude depends on the data: sensitivities per case, and the spread of the
maximum altitude under uncertain data (Monte Carlo), as polars DataFrames in feet.

Both tables start with the ceilings table's case columns (the same rows, in the same order, as
:func:`variantcmp.table.ceilings_table` for the same conditions) and its nominal answer; the
solving is :mod:`variantcmp.solver.perturbations` (one solve of every perturbed copy at once).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import polars as pl

from ..cases import FT
from ..solver import perturbations as pert
from ..units import OptionError
from .ceilings import cases_for, ceilings_frame, feet
from .conditions import Conditions

#: Sensitivity columns: parameter -> column (ft per +1 %, ft per +1 deg C for the day).
SENSITIVITY_COLUMNS = {"cd0": "ft_per_pct_cd0", "k": "ft_per_pct_k", "thrust": "ft_per_pct_thrust",
                       "weight": "ft_per_pct_weight", "isa": "ft_per_c_isa"}
#: Standard deviations of a spread when none are given (the CLI's and the app's default, stated
#: under every spread): an example of a data package's uncertainty, a drag estimate to 2 %, an
#: engine's thrust margin to 3 % (common practice, no source); users give their own.
DEFAULT_VARY = {"cd0": 0.02, "thrust": 0.03, "k": 0.02, "weight": 0.01}
#: Quantiles of the spread table and their columns.
QUANTILES = {"p10_ft": 0.10, "p50_ft": 0.50, "p90_ft": 0.90}
#: Above this share of samples without a maximum altitude the note says so (a P10 or more is then
#: among them, so null).
NO_ANSWER_NOTE_SHARE = 0.10
#: Most cases x samples solved in one spread (memory: some 300 bytes a case at once, 600 MB).
MAX_SAMPLED_CASES = 2_000_000
#: The case columns both tables keep from the ceilings table, in order.
CASE_COLUMNS = ("variant", "engine", "weight_kg", "weight_pct_mtow", "isa_dev_c", "mach", "climb_fpm",
                "max_altitude_ft", "flight_level", "limit")
TAIL_COLUMNS = ("note", "over_mtow", "below_empty_weight")
_WORDS = {"cd0": "CD0", "k": "K", "thrust": "thrust", "weight": "weight"}


def _joined(*parts: str) -> str:
    return "; ".join(p for p in parts if p)


def sensitivity_table(catalogue, conditions: Conditions) -> pl.DataFrame:
    """Per case: the maximum altitude and its change per +1 % of CD0, K, thrust and weight
    (d h / d ln x x 0.01) and per +1 deg C of ISA deviation; null (with a note) where the case or a
    perturbed copy of it has no maximum altitude."""
    cases, index = cases_for(catalogue, conditions)
    sens = pert.sensitivities(cases)
    base = ceilings_frame(catalogue, conditions, cases, index, sens.nominal)
    columns = {SENSITIVITY_COLUMNS[name]: feet(slope * 0.01) for name, slope in sens.per_ln_m.items()}
    columns[SENSITIVITY_COLUMNS["isa"]] = feet(sens.per_c_m)
    notes = []
    for i, note in enumerate(base["note"].to_list()):  # text only: the numbers are computed above
        gone = []
        for name in pert.PARAMETERS:
            down, up = bool(sens.missing_down[name][i]), bool(sens.missing_up[name][i])
            if down or up:
                if name == "isa":
                    side = " and ".join(w for w, m in (("1 °C colder", down), ("1 °C hotter", up)) if m)
                else:
                    side = f"{_WORDS[name]} " + " and ".join(w for w, m in (("-1 %", down), ("+1 %", up)) if m)
                gone.append(side)
        notes.append(_joined(note, f"no maximum altitude with {', '.join(gone)}: no sensitivity there" if gone else ""))
    return (base.select(*CASE_COLUMNS)
            .with_columns(pl.Series(name, values, dtype=pl.Float64, nan_to_null=True) for name, values in columns.items())
            .with_columns(pl.Series("note", notes, dtype=pl.String), base["over_mtow"], base["below_empty_weight"]))


def spread_table(catalogue, conditions: Conditions, vary: dict[str, float], samples: int, seed: int,
                 target_ft: float | None = None) -> pl.DataFrame:
    """Per case: the nominal maximum altitude and its P10, P50 and P90 over ``samples`` seeded
    draws of the data (``vary``: parameter -> standard deviation, relative for cd0, k, thrust and
    weight, deg C for isa), the share of samples with no maximum altitude (counted as below every
    altitude), and with ``target_ft`` the probability of reaching it (a sample without an altitude
    does not reach it). The same seed gives the same numbers, in any grid."""
    conditions = replace(conditions, target_fl_ft=target_ft)
    cases, index = cases_for(catalogue, conditions)
    if len(cases) * (samples + 1) > MAX_SAMPLED_CASES:
        raise OptionError(f"--samples: {len(cases):,} cases x {samples:,} samples is more than "
                          f"{MAX_SAMPLED_CASES:,} solves at once; use fewer samples or a smaller grid")
    nominal, altitudes_m = pert.sampled_altitudes_m(cases, vary, samples, seed)
    base = ceilings_frame(catalogue, conditions, cases, index, nominal)
    quantiles = pert.quantiles_m(altitudes_m, list(QUANTILES.values()))
    missing = np.isnan(altitudes_m).mean(axis=1)
    columns = {name: feet(quantiles[:, j]) for j, name in enumerate(QUANTILES)}
    columns["no_altitude_pct"] = 100.0 * missing
    if target_ft is not None:
        columns["p_reach_target"] = (altitudes_m >= target_ft * FT).mean(axis=1)  # NaN compares False
    notes = [_joined(note, f"{100 * share:.0f} % of samples have no maximum altitude (counted as below every altitude)"
                     if share > NO_ANSWER_NOTE_SHARE else "")
             for note, share in zip(base["note"].to_list(), missing.tolist())]
    target = [base[c] for c in ("target_ft", "margin_ft", "reaches_target") if c in base.columns]
    frame = base.select(*CASE_COLUMNS).with_columns(
        pl.Series(name, values, dtype=pl.Float64, nan_to_null=True) for name, values in columns.items())
    if target:
        frame = frame.with_columns(*target).select(pl.exclude("p_reach_target"), "p_reach_target")
    return frame.with_columns(pl.Series("note", notes, dtype=pl.String), base["over_mtow"], base["below_empty_weight"])
