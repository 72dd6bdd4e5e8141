"""Solver calls off the UI thread, at most one at a time per view, the newest request winning.

Each key in a condition field asks for a new table. A thread per request would pile up solver
runs that no one waits for (a thread cannot be stopped), so fast typing or a paste would slow every
answer. `LatestJob` runs one job at a time; a request made meanwhile waits, replacing any request
already waiting, and starts when the running job ends. Each result goes to its own callback on the
UI thread; the callers drop results that a newer request has made stale.
"""

from __future__ import annotations

from collections.abc import Callable
from functools import partial

from textual.dom import DOMNode


class LatestJob:
    """One worker thread at a time for ``owner`` (a screen or the app)."""

    def __init__(self, owner: DOMNode, name: str) -> None:
        self.owner, self.name = owner, name
        self.running = False
        self._waiting: tuple[Callable[[], object], Callable[[object], None]] | None = None

    def request(self, job: Callable[[], object], deliver: Callable[[object], None]) -> None:
        """Run ``job()`` in a thread now, or as soon as the running one ends; then ``deliver(result)``."""
        if self.running:
            self._waiting = (job, deliver)
            return
        self._start(job, deliver)

    def _start(self, job, deliver) -> None:
        self.running = True
        self.owner.run_worker(partial(self._run, job, deliver), name=self.name, group=self.name, thread=True,
                              exit_on_error=False)

    def _run(self, job, deliver) -> None:  # in the worker thread
        result, failed = None, None
        try:
            result = job()
        except BaseException as error:  # hand it to the UI thread: it must not leave `running` set
            failed = error
        try:
            self.owner.app.call_from_thread(self._done, result, failed, deliver)
        except RuntimeError:  # the app closed while this ran
            pass

    def _done(self, result, failed, deliver) -> None:
        self.running = False
        if self._waiting is not None:
            job, waiting_deliver = self._waiting
            self._waiting = None
            self._start(job, waiting_deliver)
        if failed is not None:
            raise failed
        deliver(result)
