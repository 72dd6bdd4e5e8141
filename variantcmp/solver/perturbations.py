"""The maximum altitude under changed data: sensitivities by central differences, and its spread
under uncertain data by Monte Carlo. Every perturbed copy of a case set is solved in ONE
:func:`~variantcmp.solver.solve_ceilings` call on the concatenated set (one process pool, full
chunks), never case by case.

Parameters (:data:`PARAMETERS`): ``cd0``, ``k`` (the induced-drag factor), ``thrust`` (the
engines' rated thrust, every field :data:`SCALED_FIELDS` names for it) and ``weight`` change by a
factor; ``isa`` shifts the ISA deviation (deg C), through :meth:`variantcmp.cases.CaseSet.with_isa_dev`
so that everything derived from the day follows.

Stages, each with what it guarantees:

- :func:`perturbed`: a case set with per-case factors and an ISA shift applied, nothing else
  changed (a factor of 1 and a shift of 0 give the cases back, field for field).
- :func:`sensitivities`: d h / d ln x per relative parameter and d h / d T for the day, per case,
  by central differences over x e^(+-LN_STEP) and T +- ISA_STEP_C (exact where h is linear in
  ln x, as in the isothermal layer with thrust proportional to density; second order elsewhere).
  NaN where the case or either perturbed copy has no maximum altitude, so a number is never made
  from a missing one; 0 exactly where a flat limit (certified, cabin) binds on both sides.
- :func:`draws` and :func:`sampled_altitudes_m`: seeded standard normal draws, one per sample
  and parameter in the fixed order of :data:`PARAMETERS` (a parameter's draws do not change when
  others are added), applied to every case alike (common random numbers: a case's samples do
  not depend on the other cases in the grid, and neighbouring cases move together).
- :func:`quantiles_m`: per-case quantiles with samples that have no altitude counted as below
  every altitude (so a quantile among them is NaN, never a number), and altitudes above the
  model top as above every altitude.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..cases import CaseSet
from .parallel import solve_ceilings
from .results import Ceilings

#: CaseSet fields each relative parameter scales.
SCALED_FIELDS: dict[str, tuple[str, ...]] = {
    "cd0": ("cd0",),
    "k": ("k",),
    "thrust": ("thrust_sls_n",),
    "weight": ("weight_kg",),
}
RELATIVE = tuple(SCALED_FIELDS)
#: Every parameter, in the order the tables and the random draws use.
PARAMETERS = RELATIVE + ("isa",)

# Central differences: x e^(+-0.01), i.e. ln x +- 0.01, and T +- 1 deg C. Large enough that the
# solver's own error (0.01 ft at a fixed Mach, about 0.1 ft at the best speed) stays below 0.1 ft
# per 1 %; small enough to stay local (h moves about 200 ft per 1 % of weight).
LN_STEP = 0.01
ISA_STEP_C = 1.0

# Monte Carlo: each draw is clipped at +-Z_CLIP standard deviations so that no factor 1 + s z is
# ever zero or negative (a probability mass of 6e-7 moved, invisible in any percentile); relative
# standard deviations above MAX_RELATIVE_SD are refused (1 - 5 x 0.15 = 0.25 still positive).
Z_CLIP = 5.0
MAX_RELATIVE_SD = 0.15
MAX_ISA_SD_C = 10.0


def perturbed(cases: CaseSet, factors: dict[str, np.ndarray] | None = None, isa_shift_c=None) -> CaseSet:
    """The cases with each relative parameter in ``factors`` multiplied by its (per-case) factor
    and the ISA deviation shifted by ``isa_shift_c`` (deg C)."""
    changes = {}
    for name, factor in (factors or {}).items():
        for field in SCALED_FIELDS[name]:
            changes[field] = getattr(cases, field) * factor
    out = replace(cases, **changes) if changes else cases
    if isa_shift_c is not None:
        out = out.with_isa_dev(out.isa_dev_c + isa_shift_c)
    return out


@dataclass(frozen=True)
class Sensitivities:
    """Per case: the nominal answer, d h / d ln x (m) per relative parameter, d h / d T (m per K),
    and per parameter whether the step down / up had no maximum altitude."""

    nominal: Ceilings
    per_ln_m: dict[str, np.ndarray]
    per_c_m: np.ndarray
    missing_down: dict[str, np.ndarray]
    missing_up: dict[str, np.ndarray]


def _altitude(res: Ceilings) -> np.ndarray:
    """The maximum altitude, NaN where there is none or it lies above the model top."""
    h = res.max_altitude_m
    return np.where(np.isfinite(h), h, np.nan)


def sensitivities(cases: CaseSet) -> Sensitivities:
    """Central differences of the maximum altitude for every parameter (see the module docstring).

    Layout of the one solve: each case followed by its 2 x len(PARAMETERS) copies (case-major),
    in :data:`PARAMETERS` order, down then up.
    """
    n = len(cases)
    copies = 1 + 2 * len(PARAMETERS)
    big = cases.repeat(copies)
    slot = np.tile(np.arange(copies), n)
    factors = {}
    for i, name in enumerate(RELATIVE):
        down, up = 1 + 2 * i, 2 + 2 * i
        factors[name] = np.where(slot == down, np.exp(-LN_STEP), np.where(slot == up, np.exp(LN_STEP), 1.0))
    j = len(RELATIVE)
    shift = np.where(slot == 1 + 2 * j, -ISA_STEP_C, np.where(slot == 2 + 2 * j, ISA_STEP_C, 0.0))
    res = solve_ceilings(perturbed(big, factors, shift))
    h = _altitude(res).reshape(n, copies)
    nominal = res.take(np.arange(0, n * copies, copies))
    have = np.isfinite(h[:, 0])
    per_ln, down_missing, up_missing = {}, {}, {}
    per_c = None
    for i, name in enumerate(PARAMETERS):
        down, up = h[:, 1 + 2 * i], h[:, 2 + 2 * i]
        step = 2 * (ISA_STEP_C if name == "isa" else LN_STEP)
        slope = np.where(have, (up - down) / step, np.nan)
        down_missing[name], up_missing[name] = have & np.isnan(down), have & np.isnan(up)
        if name == "isa":
            per_c = slope
        else:
            per_ln[name] = slope
    return Sensitivities(nominal, per_ln, per_c, down_missing, up_missing)


def check_variation(vary: dict[str, float]) -> None:
    """ValueError for an unknown parameter or a standard deviation out of range."""
    for name, sd in vary.items():
        if name not in PARAMETERS:
            raise ValueError(f"unknown parameter {name!r}; expected one of {', '.join(PARAMETERS)}")
        high = MAX_ISA_SD_C if name == "isa" else MAX_RELATIVE_SD
        if not 0.0 <= sd <= high:  # also refuses NaN
            raise ValueError(f"standard deviation of {name} out of range: {sd!r} (0 to {high:g})")


def draws(samples: int, seed: int) -> np.ndarray:
    """Standard normal draws, (len(PARAMETERS), samples), clipped at +-Z_CLIP, from
    ``numpy.random.default_rng(seed)`` in :data:`PARAMETERS` order."""
    z = np.random.default_rng(seed).standard_normal((len(PARAMETERS), samples))
    return np.clip(z, -Z_CLIP, Z_CLIP)


def sampled_altitudes_m(cases: CaseSet, vary: dict[str, float], samples: int, seed: int) -> tuple[Ceilings, np.ndarray]:
    """The nominal answer of every case and its maximum altitude under ``samples`` draws of the
    data, (cases, samples), m, from one solve (each case followed by its samples).

    ``vary``: parameter -> standard deviation, relative (0.02 = 2 %) for the relative parameters,
    in deg C for ``isa``. Each parameter is x (1 + sd z) (``isa``: dT + sd z), z standard normal.
    NaN: no maximum altitude; +inf: above the model top.
    """
    check_variation(vary)
    n = len(cases)
    z = np.concatenate([np.zeros((len(PARAMETERS), 1)), draws(samples, seed)], axis=1)  # slot 0: nominal
    factors = {name: np.tile(1.0 + vary[name] * z[PARAMETERS.index(name)], n)
               for name in RELATIVE if vary.get(name)}
    shift = np.tile(vary["isa"] * z[PARAMETERS.index("isa")], n) if vary.get("isa") else None
    res = solve_ceilings(perturbed(cases.repeat(samples + 1), factors, shift))
    h = res.max_altitude_m.reshape(n, samples + 1)
    return res.take(np.arange(0, n * (samples + 1), samples + 1)), h[:, 1:].copy()


def quantiles_m(altitudes_m: np.ndarray, q) -> np.ndarray:
    """Per row of ``altitudes_m`` (cases x samples), the quantiles ``q`` (linear between order
    statistics, numpy's default method), (cases, len(q)).

    NaN samples (no altitude) count as below every altitude: a quantile that falls on or next to
    one is NaN. +inf (above the model top) counts as above every altitude: a quantile next to one
    is +inf.
    """
    q = np.atleast_1d(np.asarray(q, dtype=float))
    n = altitudes_m.shape[1]
    ordered = np.sort(np.where(np.isnan(altitudes_m), -np.inf, altitudes_m), axis=1)
    pos = q * (n - 1)
    lo = np.floor(pos).astype(int)
    hi = np.minimum(lo + 1, n - 1)
    frac = pos - lo
    a, b = ordered[:, lo], ordered[:, hi]
    between = frac > 0.0
    with np.errstate(invalid="ignore"):
        out = np.where(between, a + (b - a) * frac, a)
    out = np.where(np.isposinf(a) | (between & np.isposinf(b)), np.inf, out)
    return np.where(np.isneginf(a), np.nan, out)  # b >= a: b is -inf only where a is
