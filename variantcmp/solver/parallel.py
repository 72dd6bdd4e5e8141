"""Solving a whole case set: chunks, and processes for large jobs.

Work goes in chunks of about CHUNK cases (BEST_CHUNK when every case is best speed), so memory
stays bounded and the arrays stay in cache. Best-speed sets use larger chunks: their search makes
many calls on small sets, where numpy's per-call overhead outweighs the arithmetic, and larger
chunks share it (measured on two processes, 100,000 cases: 75k cases/s against 70k with 16,384
and 50,000; one process: 50,000 was 24 % faster than 16,384). The chunk bounds come from the case
count and the chunk size alone, their number rounded up to a multiple of MAX_WORKERS, so the
workers get equal shares and an answer never depends on how many processes solved it (a test
checks this bit for bit). Inside a chunk the cases are sorted by thrust model (and put back in
order after), so that each model's group is a slice of the arrays.

Large jobs (PARALLEL_MIN_CASES fixed-Mach solves and more, a best-speed case counting
BEST_SPEED_WORK) are shared between forked processes, one per core. The workers read the parent's
case arrays in place, take the next chunk from a shared counter and write their results straight
into anonymous shared memory (``mmap``): nothing is pickled (a process pool that sent results back
lost most of the second core: 0.92 s on one process, 0.88 s on two, for 1M cases). The calling
process takes chunks too, beside the forked workers: it is warm, where a new process first pays
for its memory in page faults (a fresh worker's first chunk ran 1.4x as long as the same chunk
warm), and one fork fewer (benchmark best speed on two cores: 0.35 s instead of 0.52 s for
100,000 cases). A worker sets glibc's malloc to keep freed memory (``mallopt``): the solvers free
and allocate thousands of chunk-sized temporaries, and glibc gives the top of its heap back to the
system whenever enough is free, so each page came back with a fault (about 10,000 a chunk; 600
with the setting). If a chunk fails, the job is solved again in the calling process, where the
error shows with its cause. numpy threads were measured and gained nothing here.
"""

from __future__ import annotations

import mmap
import multiprocessing
import os
import sys

import numpy as np

from ..cases import CaseSet
from .best_speed import best_speed_ceilings
from .fixed_mach import fixed_mach_ceilings
from .physics import ClimbPhysics, group_key
from .results import Ceilings

CHUNK = 16_384  # cases per chunk: the arrays of one evaluation stay in cache
BEST_CHUNK = 25_000  # best speed makes many calls on small sets: larger chunks share their overhead
PARALLEL_MIN_CASES = 200_000  # fixed-Mach solves worth a fork (below, the fork costs more than it gains)
MAX_WORKERS = 2  # processes for large jobs (one per core of the machines this is built for)
BEST_SPEED_WORK = 15  # a best-speed case costs about this many fixed-Mach solves


def solve_chunk(part: CaseSet) -> Ceilings:
    """One chunk of cases, sorted by thrust-model group for the solve (so that each group is a
    slice: views, not gathers) and put back in order."""
    key = group_key(part)
    if np.any(key[1:] < key[:-1]):
        order = np.argsort(key, kind="stable")
        solved = _solve_sorted_chunk(part.take(order))
        return solved.take(np.argsort(order))
    return _solve_sorted_chunk(part)


def _solve_sorted_chunk(part: CaseSet) -> Ceilings:
    best = np.isnan(part.mach)
    if best.all():
        return best_speed_ceilings(ClimbPhysics(part))
    if not best.any():
        return fixed_mach_ceilings(ClimbPhysics(part), part.mach)
    fixed_idx, best_idx = np.flatnonzero(~best), np.flatnonzero(best)
    a = fixed_mach_ceilings(ClimbPhysics(part.take(fixed_idx)), part.mach[fixed_idx])
    b = best_speed_ceilings(ClimbPhysics(part.take(best_idx)))
    order = np.argsort(np.concatenate([fixed_idx, best_idx]))
    merged = Ceilings.concat([a, b])
    return Ceilings(**{k: getattr(merged, k)[order] for k in Ceilings.__dataclass_fields__})


def solve_ceilings(cases: CaseSet, chunk: int | None = None, processes: int | None = None) -> Ceilings:
    """Every limit's ceiling and the maximum altitude for all cases (fixed Mach or best speed).

    Cases whose ``mach`` is NaN are solved for the best speed. Work goes in chunks of about
    ``chunk`` cases (``CHUNK``; ``BEST_CHUNK`` when every case is best speed), so memory stays
    bounded. Large jobs (``PARALLEL_MIN_CASES`` fixed-Mach solves or more, a best-speed case
    counting ``BEST_SPEED_WORK``) are shared between processes, one per core, in chunks of equal
    size and a number of them that is a multiple of ``MAX_WORKERS``: numpy threads gained nothing
    here (measured), processes do.
    """
    n = len(cases)
    if n == 0:
        return Ceilings.allocate(0)
    n_best = int(np.count_nonzero(np.isnan(cases.mach)))
    if chunk is None:
        chunk = BEST_CHUNK if n_best == n else CHUNK
    if processes is None:
        # A best-speed case is some fifteen fixed-Mach solves: weigh the work, not the count.
        work = n + (BEST_SPEED_WORK - 1) * n_best
        processes = min(MAX_WORKERS, os.cpu_count() or 1) if work >= PARALLEL_MIN_CASES else 1
    bounds = chunk_bounds(n, chunk)
    processes = max(1, min(processes, len(bounds)))
    if processes > 1 and sys.platform.startswith("linux"):
        solved = _solve_in_processes(cases, bounds, processes)
        if solved is not None:
            return solved
    return Ceilings.concat([solve_chunk(cases.take(slice(a, b))) for a, b in bounds])


def chunk_bounds(n: int, chunk: int) -> list[tuple[int, int]]:
    """(start, stop) of each chunk of about ``chunk`` cases: from n and chunk alone (a case's answer
    never depends on the process count), their number a multiple of the most workers used, so
    that workers get equal shares."""
    if n == 0:
        return []
    count = -(-n // max(1, chunk))
    count = -(-count // MAX_WORKERS) * MAX_WORKERS if count > 1 else 1
    size = -(-n // count)
    return [(start, min(start + size, n)) for start in range(0, n, size)]


def shared_array(n: int, dtype) -> np.ndarray:
    """An array on anonymous shared memory: what a forked child writes there, the parent sees."""
    dtype = np.dtype(dtype)
    return np.frombuffer(mmap.mmap(-1, max(1, n * dtype.itemsize)), dtype=dtype, count=n)


def _solve_in_processes(cases: CaseSet, bounds, processes: int) -> Ceilings | None:
    """:func:`in_processes` for the ceilings; None if a chunk failed."""
    out = Ceilings.allocate(len(cases), shared_array)
    return out if in_processes(bounds, processes, out, lambda part: solve_chunk(cases.take(part))) else None


def in_processes(bounds, processes: int, out, solve) -> bool:
    """``out.put(part, solve(part))`` for every chunk ``part`` (a slice of ``bounds``), shared
    between this process and ``processes - 1`` forked workers, each taking the next chunk as it
    finishes one; ``out``'s arrays on shared memory (:func:`shared_array`).

    fork: the workers read the parent's case arrays in place and write their results straight
    into shared memory, so nothing is pickled either way (a process pool sending results back
    lost most of the second core, measured). This process works too: it is warm where a new
    worker first pays for its memory, and one fork fewer. False if a chunk failed: the caller
    then solves in this process, where a failure shows with its cause.
    """
    ctx = multiprocessing.get_context("fork")
    next_chunk = ctx.Value("q", 0)

    def work():
        while True:
            with next_chunk.get_lock():
                k = next_chunk.value
                next_chunk.value = k + 1
            if k >= len(bounds):
                break
            part = slice(*bounds[k])
            out.put(part, solve(part))

    def child():
        try:
            _keep_freed_memory()
            work()
        except BaseException:  # noqa: BLE001  (reported by the exit code; re-raised by the serial run)
            os._exit(1)
        os._exit(0)

    workers = [ctx.Process(target=child, daemon=True) for _ in range(processes - 1)]
    for w in workers:
        w.start()
    try:
        work()
        failed = False
    except Exception:  # noqa: BLE001  (the serial run shows it with its cause)
        failed = True
    except BaseException:
        for w in workers:
            w.kill()
        raise
    finally:
        for w in workers:
            w.join()
    return not failed and all(w.exitcode == 0 for w in workers)


def _keep_freed_memory():
    """In a worker: keep freed memory for reuse instead of giving it back to the system.

    The solvers allocate and free thousands of temporary arrays; glibc returns the top of the
    heap to the system whenever enough of it is free, and each page taken back later costs a
    page fault (measured: about a tenth of a worker's time). A worker lives for one job.
    """
    try:
        import ctypes
        libc = ctypes.CDLL(None)
        libc.mallopt(-1, 1 << 30)  # M_TRIM_THRESHOLD
        libc.mallopt(-3, 1 << 26)  # M_MMAP_THRESHOLD: temporaries from the heap, not fresh maps
    except (OSError, AttributeError):
        pass
