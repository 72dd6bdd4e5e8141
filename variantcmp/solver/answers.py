"""Per-case answer records of the inverse questions, and solving a case set in chunks.

:class:`PerCase` gives a dataclass of per-case arrays ``take``, ``put``, ``concat`` and
``allocate``; :func:`solve_by_level` solves cases that each ask about one level (pressure
altitude) in the chunks of :func:`~variantcmp.solver.parallel.chunk_bounds`, each sorted by
thrust-model group for the solve (so that each group is a slice: views, not gathers) and put
back in order, fixed-Mach cases and best-speed cases (Mach NaN) each by their own solver. Large
jobs are shared between processes as the ceilings' are
(:func:`~variantcmp.solver.parallel.in_processes`, the same weighing of the work); the chunk
bounds do not depend on the process count, so neither does an answer.
"""

from __future__ import annotations

import dataclasses
import os
import sys
from typing import Callable

import numpy as np

from ..cases import CaseSet
from .parallel import (BEST_CHUNK, BEST_SPEED_WORK, CHUNK, MAX_WORKERS, PARALLEL_MIN_CASES, chunk_bounds,
                       in_processes, shared_array)
from .physics import group_key


class PerCase:
    """Mixin for dataclasses whose fields are all per-case arrays (``SMALL``: the integer ones),
    an answer's (``VALUE``, NaN where none) with its ``limit`` and ``co_limit``."""

    SMALL: dict = {}
    VALUE = ""

    def blank(self, rows) -> None:
        """No answer for the cases ``rows`` (their flags kept)."""
        getattr(self, self.VALUE)[rows] = np.nan
        self.limit[rows], self.co_limit[rows] = -1, -1

    def answered(self) -> np.ndarray:
        return np.isfinite(getattr(self, self.VALUE))

    def take(self, index):
        return type(self)(**{f.name: getattr(self, f.name)[index] for f in dataclasses.fields(self)})

    def put(self, index, other) -> None:
        for f in dataclasses.fields(self):
            getattr(self, f.name)[index] = getattr(other, f.name)

    @classmethod
    def concat(cls, parts):
        return cls(**{f.name: np.concatenate([getattr(p, f.name) for p in parts]) for f in dataclasses.fields(cls)})

    @classmethod
    def allocate(cls, n: int, make=np.empty):
        """Uninitialised arrays for n cases, from ``make(n, dtype)``."""
        return cls(**{f.name: make(n, cls.SMALL.get(f.name, float)) for f in dataclasses.fields(cls)})


def solve_by_level(cases: CaseSet, altitude_m, fixed: Callable, best: Callable, record, processes: int | None = None):
    """``fixed(part, altitude_m, mach)`` for the cases with a Mach and ``best(part, altitude_m)``
    for those without (NaN: best speed), chunk by chunk; the answers (a ``record``, a
    :class:`PerCase`) in the cases' order."""
    n = len(cases)
    h = np.broadcast_to(np.asarray(altitude_m, dtype=float), (n,))
    if n == 0:
        return record.allocate(0)
    n_best = int(np.count_nonzero(np.isnan(cases.mach)))
    if processes is None:
        work = n + (BEST_SPEED_WORK - 1) * n_best
        processes = min(MAX_WORKERS, os.cpu_count() or 1) if work >= PARALLEL_MIN_CASES else 1
    bounds = chunk_bounds(n, BEST_CHUNK if n_best == n else CHUNK)

    def solve(part):
        return _solve_chunk(cases.take(part), h[part], fixed, best)

    if processes > 1 and len(bounds) > 1 and sys.platform.startswith("linux"):
        out = record.allocate(n, shared_array)
        if in_processes(bounds, min(processes, len(bounds)), out, solve):
            return out
    return record.concat([solve(slice(a, b)) for a, b in bounds])


def _solve_chunk(part: CaseSet, h, fixed, best):
    """One chunk, sorted by thrust-model group for the solve and put back in order."""
    order = np.argsort(group_key(part), kind="stable")
    part, h = part.take(order), h[order]
    is_best = np.isnan(part.mach)
    pieces, where = [], []
    for rows, by in ((np.flatnonzero(~is_best), fixed), (np.flatnonzero(is_best), best)):
        if rows.size:
            sub = part if rows.size == len(part) else part.take(rows)
            pieces.append(best(sub, h[rows]) if by is best else fixed(sub, h[rows], sub.mach))
            where.append(rows)
    solved = type(pieces[0]).concat(pieces)
    back = np.empty(len(part), dtype=np.intp)
    back[order[np.concatenate(where)]] = np.arange(len(part))
    return solved.take(back)
