"""One engine inoperative: the gross and net ceilings of a case set.

With one of n engines out, the n - 1 left run at maximum continuous thrust: the climb thrust
model times (n - 1)/n times the engine's ``mct_thrust_ratio`` r (shaft power for a propeller
engine: the same ratio). The dead engine (windmilling, or a feathered propeller) and the rudder
and aileron trim add ``oei_cd0_increment`` to the zero-lift drag. The gradient is the steady
flight-path gradient (F - D) / W (:meth:`~variantcmp.solver.physics.ClimbPhysics.climb_gradient`)
at the speed that maximises it among those the stall (CL max at 1 g), the buffet margin, MMO and
VMO allow.

Gross ceiling: the highest pressure altitude where that best gradient reaches zero. The climb
rate is (F - D) V / W times positive factors (the temperature ratio and the energy-share factor,
:meth:`~variantcmp.solver.physics.ClimbPhysics.climb_rate_ms`), so at each altitude some speed
has a zero or positive gradient exactly where some speed has a zero or positive climb rate: the
gross ceiling is the absolute ceiling (zero residual climb) at the best speed of a *derived* case
set, with the thrust and CD0 above, solved by :func:`~variantcmp.solver.parallel.solve_ceilings`,
which honours stall, buffet margin, MMO and VMO.

Net ceiling: where the best gross gradient equals the decrement d (1.1 % for a twin, ...):
F - D - d W = 0 at the best speed. d W is a drag term of the polar, q S (d CL) at 1 g
(``CaseSet.cd_per_cl``, :meth:`~variantcmp.solver.physics.ClimbPhysics.drag_n`), and the same at
every speed, so the speed that maximises F - D - d W is the speed of the best gross gradient:
the net ceiling is the absolute ceiling at best speed of the derived set with ``cd_per_cl = d``.

The certified and cabin ceilings are left out of the derived sets: they limit where an aircraft
may fly with all engines, not where it can level off with one out (a drift-down starts at or
below them anyway). Both ceilings of every case are one best-speed job (each case twice in a
row), so they share the chunks and the processes of the solver.

Tests: ``tests/test_engine_out.py`` (closed forms for thrust proportional to density, twins and
a four-engine case; a round trip with the ceilings of the derived set; properties).
"""

from __future__ import annotations

import dataclasses
import os
from dataclasses import dataclass

import numpy as np

from ..cases import CaseSet, per_case_fields
from .gradient_ceiling import gradient_ceilings
from .parallel import MAX_WORKERS, map_chunks, solve_ceilings
from .results import Ceilings

#: Per-case fields of a :class:`~variantcmp.cases.CaseSet` that carry the engines' thrust (or
#: power): one engine out scales each of them by (n - 1)/n x the MCT ratio.
ENGINE_OUTPUT_FIELDS = ("thrust_sls_n",)


@dataclass(frozen=True)
class EngineOutTerms:
    """Per case: what one engine out changes. NaN where the case has no engine-out answer (a
    single-engine variant)."""

    thrust_factor: np.ndarray  # (n - 1)/n x MCT ratio
    cd0_increment: np.ndarray
    net_decrement: np.ndarray  # the net flight path's gradient decrement, a fraction (1.1 % -> 0.011)

    @property
    def answerable(self) -> np.ndarray:
        return np.isfinite(self.thrust_factor) & np.isfinite(self.net_decrement)


def engine_out_terms(catalogue, cases) -> EngineOutTerms:
    """The catalogue's engine-out data gathered per case (cases from
    :func:`variantcmp.cases.build_cases` on that catalogue): engine count, MCT ratio, the CD0
    increment and the net decrement (their defaults: :class:`variantcmp.catalogue.Variant`)."""
    variants, engines = list(catalogue.variants.values()), list(catalogue.engines.values())
    count = np.array([v.engine_count for v in variants], dtype=float)[cases.variant_index]
    ratio = np.array([e.mct_thrust_ratio for e in engines], dtype=float)[cases.engine_index]
    increment = np.array([v.oei_cd0 for v in variants], dtype=float)[cases.variant_index]
    decrement = np.array([np.nan if v.net_decrement_pct is None else v.net_decrement_pct / 100.0
                          for v in variants], dtype=float)[cases.variant_index]
    factor = np.where(count >= 2, (count - 1.0) / np.maximum(count, 1.0) * ratio, np.nan)
    return EngineOutTerms(factor, increment, np.where(count >= 2, decrement, np.nan))


def engine_out_cases(cases: CaseSet, terms: EngineOutTerms, decrement=None) -> CaseSet:
    """The derived case set of one engine out: thrust (or power) x ``terms.thrust_factor``, CD0 +
    the increment, zero residual climb at the best speed, no certified or cabin ceiling, and the
    polar's linear term ``cd_per_cl`` = ``decrement`` (None: 0, the gross problem). Cases without
    an answer keep their thrust factor NaN: the caller leaves them out."""
    derived = {name: getattr(cases, name) * terms.thrust_factor for name in ENGINE_OUTPUT_FIELDS}
    n = len(cases)
    return dataclasses.replace(
        cases, **derived, cd0=cases.cd0 + terms.cd0_increment,
        cd_per_cl=np.zeros(n) if decrement is None else np.broadcast_to(decrement, (n,)).astype(float),
        climb_ms=np.zeros(n), mach=np.full(n, np.nan), certified_m=np.full(n, np.inf), cabin_m=np.full(n, np.inf))


@dataclass
class EngineOutCeilings:
    """Per case, the solver's answers at the gross and at the net ceiling: ``max_altitude_m`` is
    the ceiling, ``mach`` its best speed, ``limit`` (and ``co_limit``, ``vmo_floor_m``, ``flags``)
    what binds there; blank (NaN) where the case has no engine-out answer. The other limit
    columns are those at that speed where the engine-out search answered, each limit's own best
    over speed where the general search did."""

    gross: Ceilings
    net: Ceilings
    answerable: np.ndarray


#: Cases from which a job is shared between processes (the search costs a few fixed-Mach solves
#: a case), and cases per chunk of the job (each chunk pays the search's per-call overhead once:
#: 100,000 benchmark cases on two processes took 0.53 s in chunks of 50,000, 0.59 s of 32,768 and
#: 0.77 s of 16,384; in one process 0.92 s of CPU against 1.2 s, measured). The answers do not
#: depend on it (test_engine_out_answers_do_not_depend_on_the_chunks_or_the_processes).
PARALLEL_MIN_CASES = 20_000
JOB_CHUNK = 50_000


def engine_out_ceilings(cases: CaseSet, terms: EngineOutTerms, processes: int | None = None) -> EngineOutCeilings:
    """Gross and net ceilings of every case with one engine out (see the module docstring): by the
    search built for them (:mod:`variantcmp.solver.gradient_ceiling`) and the general best-speed
    search for what that leaves, chunk by chunk, large jobs in processes
    (:func:`~variantcmp.solver.parallel.map_chunks`)."""
    n = len(cases)
    gross, net = Ceilings.blank(n, np.full(n, np.nan)), Ceilings.blank(n, np.full(n, np.nan))
    ok = np.flatnonzero(terms.answerable)
    if ok.size:
        sub = cases.take(ok)
        sub_terms = EngineOutTerms(*(a[ok] for a in dataclasses.astuple(terms)))
        # The net decrement travels with the cases as the polar's linear term of the net set.
        both = _stacked(engine_out_cases(sub, sub_terms), engine_out_cases(sub, sub_terms, sub_terms.net_decrement))
        paired = both.take(np.stack([np.arange(ok.size), ok.size + np.arange(ok.size)], axis=1).ravel())
        if processes is None:
            processes = min(MAX_WORKERS, os.cpu_count() or 1) if ok.size >= PARALLEL_MIN_CASES else 1
        solved = map_chunks(paired, lambda part: (gradient_ceilings(part)[0],), 1, 2 * JOB_CHUNK, processes)[0]
        # What the search leaves (blank: no altitude, no flag), all at once: the general search pays
        # its many calls' overhead once (a few dozen cases a chunk cost 40 ms each time, measured).
        rest = np.flatnonzero(np.isnan(solved.max_altitude_m) & (solved.flags == 0))
        if rest.size:
            solved.put(rest, solve_ceilings(paired.take(rest)))
        gross.put(ok, solved.take(slice(0, None, 2)))
        net.put(ok, solved.take(slice(1, None, 2)))
    return EngineOutCeilings(gross, net, terms.answerable.copy())


def _stacked(first: CaseSet, second: CaseSet) -> CaseSet:
    """Two case sets derived from the same one (the same shared tables) as one."""
    return dataclasses.replace(first, **{name: np.concatenate([getattr(first, name), getattr(second, name)])
                                         for name in per_case_fields()})
