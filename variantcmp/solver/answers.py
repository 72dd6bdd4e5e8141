"""Per-case answer records of the inverse questions, and solving a case set in chunks.

:class:`PerCase` gives a dataclass of per-case arrays ``take``, ``put`` and ``concat``;
:func:`solve_by_level` solves cases that each ask about one level (pressure altitude) in chunks
of CHUNK cases, each sorted by thrust-model group for the solve (so that each group is a slice:
views, not gathers, as :mod:`~variantcmp.solver.parallel` does) and put back in order, fixed-Mach
cases and best-speed cases (Mach NaN) each by their own solver.
"""

from __future__ import annotations

import dataclasses
from typing import Callable

import numpy as np

from ..cases import CaseSet
from .physics import group_key

CHUNK = 16_384  # cases per chunk: the arrays of one evaluation stay in cache


class PerCase:
    """Mixin for dataclasses whose fields are all per-case arrays."""

    def take(self, index):
        return type(self)(**{f.name: getattr(self, f.name)[index] for f in dataclasses.fields(self)})

    def put(self, index, other) -> None:
        for f in dataclasses.fields(self):
            getattr(self, f.name)[index] = getattr(other, f.name)

    @classmethod
    def concat(cls, parts):
        return cls(**{f.name: np.concatenate([getattr(p, f.name) for p in parts]) for f in dataclasses.fields(cls)})


def solve_by_level(cases: CaseSet, altitude_m, fixed: Callable, best: Callable, empty: Callable, chunk: int = CHUNK):
    """``fixed(part, altitude_m, mach)`` for the cases with a Mach and ``best(part, altitude_m)``
    for those without (NaN: best speed), chunk by chunk; the answers in the cases' order
    (``empty()`` for no cases)."""
    h = np.broadcast_to(np.asarray(altitude_m, dtype=float), (len(cases),))
    parts = []
    for start in range(0, max(len(cases), 1), chunk):
        part, h_part = cases.take(slice(start, start + chunk)), h[start:start + chunk]
        key = group_key(part)
        order = np.argsort(key, kind="stable")
        part, h_part = part.take(order), h_part[order]
        is_best = np.isnan(part.mach)
        pieces, where = [], []
        for rows, solve in ((np.flatnonzero(~is_best), fixed), (np.flatnonzero(is_best), best)):
            if rows.size:
                sub = part if rows.size == len(part) else part.take(rows)
                pieces.append(solve(sub, h_part[rows]) if solve is best else solve(sub, h_part[rows], sub.mach))
                where.append(rows)
        if not pieces:
            continue
        solved = type(pieces[0]).concat(pieces)
        back = np.empty(len(part), dtype=np.intp)
        back[order[np.concatenate(where)]] = np.arange(len(part))
        parts.append(solved.take(back))
    return type(parts[0]).concat(parts) if parts else empty()
