"""Solves the target off the GUI thread whenever it or the arm changes, and writes the branches to the state.

One solve runs at a time on a worker thread (a ``QThreadPool`` of one); a
request made while one runs waits as the *next* job, and a newer request
replaces it (the latest wins).  A result is stored only if it still belongs
to the state's present target and arm (:attr:`PoseState.arm_generation`,
the target object itself) and is the newest asked for; any other is dropped
(:attr:`TargetSolver.dropped` counts them).  The worker also computes each
branch's singularity verdict (:func:`poser.ui.state.branch_infos`) and the
branch list's texts (:func:`poser.ui.words.branch_rows`) and the ghosts'
drawings (:func:`poser.ui.state.ghost_drawings`), so the GUI thread only
stores and shows.  No time guard is passed: a solve is a few
tens of milliseconds on every demo arm and on a 32-joint one, and it no
longer blocks anything.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np
from PySide6.QtCore import QObject, QThreadPool, QTimer, Signal

from poser.ui import ikbridge
from poser.ui.state import PoseState, Target, branch_infos, ghost_drawings
from poser.ui.words import branch_rows


@dataclass(frozen=True)
class SolveJob:
    """One request: what to solve, and what it belongs to (to tell a stale result)."""

    number: int
    chain: object
    target: Target
    near: np.ndarray
    arm_generation: int


@dataclass(frozen=True)
class SolveOutcome:
    """What the worker hands back: the result and its branch products, or the error in words."""

    job: SolveJob
    result: object = None
    infos: tuple | None = None
    rows: tuple | None = None
    drawings: tuple | None = None
    error: str = ""
    seconds: float = 0.0


def compute(job: SolveJob) -> SolveOutcome:
    """Solve one job (any thread; touches no Qt object)."""
    t0 = time.perf_counter()
    try:
        result = ikbridge.solve(job.chain, job.target.xyz, job.target.R, near=job.near)
        infos = branch_infos(job.chain, result.branches)
        rows = branch_rows(job.chain, result, infos)
        drawings = ghost_drawings(job.chain, result.branches)
    except Exception as exc:  # the window must not die on a solver error; say it
        return SolveOutcome(job, error=f"the solver failed: {type(exc).__name__}: {exc}",
                            seconds=time.perf_counter() - t0)
    return SolveOutcome(job, result, infos, rows, drawings, seconds=time.perf_counter() - t0)


class _Relay(QObject):
    """Carries an outcome from the worker thread to the GUI thread (a queued signal)."""

    done = Signal(object)


class TargetSolver(QObject):
    """Observes ``target`` and ``arm``; after ``delay_ms`` of quiet, solves on the worker and calls ``state.set_ik``.

    Signals
    -------
    failed(str)
        A solver error in words (the window shows it; nothing is raised).
    solved()
        A result was stored.
    busy(bool)
        True while a request waits or runs, False when the state holds the answer (or there is none to give).
    """

    failed = Signal(str)
    solved = Signal()
    busy = Signal(bool)

    def __init__(self, state: PoseState, delay_ms: int = 40, parent=None):
        super().__init__(parent)
        self.state = state
        self.timer = QTimer(self)
        self.timer.setSingleShot(True)
        self.timer.setInterval(delay_ms)
        self.timer.timeout.connect(self.request)
        self.last_error = ""
        self.dropped = 0
        """Results thrown away because the target or the arm changed while they were computed."""
        self.last_seconds = 0.0
        """How long the last stored solve took on the worker (seconds)."""
        self._number = 0  # the newest job asked for
        self._running: SolveJob | None = None
        self._next: SolveJob | None = None
        self._busy = False
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(1)
        self._relay = _Relay()
        self._relay.done.connect(self._finished)
        state.changed.connect(self._on_state)

    @property
    def pending(self) -> bool:
        """A request is waiting (debounce or queue) or running."""
        return self.timer.isActive() or self._running is not None or self._next is not None

    def _set_busy(self) -> None:
        busy = self.pending
        if busy != self._busy:
            self._busy = busy
            self.busy.emit(busy)

    def _on_state(self, field: str) -> None:
        if field not in ("target", "arm"):
            return
        self._number += 1  # whatever is in flight now answers an old question
        self._next = None
        st = self.state
        if st.target is not None and st.option("live_solve"):
            self.timer.start()
        else:
            self.timer.stop()
        self._set_busy()

    def _job(self) -> SolveJob | None:
        st = self.state
        if st.target is None:
            return None
        self._number += 1
        return SolveJob(self._number, st.chain, st.target, st.q, st.arm_generation)

    def request(self) -> bool:
        """Ask for the present target to be solved on the worker; False when there is nothing to solve."""
        self.timer.stop()
        job = self._job()
        if job is None:
            self._set_busy()
            return False
        if self._running is None:
            self._start(job)
        else:
            self._next = job  # the latest wins; it starts when the running one comes back
        self._set_busy()
        return True

    def _start(self, job: SolveJob) -> None:
        self._running = job
        relay = self._relay
        self._pool.start(lambda: relay.done.emit(compute(job)))

    def _finished(self, out: SolveOutcome) -> None:
        self._running = None
        if self._next is not None:
            job, self._next = self._next, None
            self._start(job)
        self._store(out)
        self._set_busy()

    def _current(self, job: SolveJob) -> bool:
        st = self.state
        return job.number == self._number and job.target is st.target and job.arm_generation == st.arm_generation

    def _store(self, out: SolveOutcome) -> bool:
        if not self._current(out.job):
            self.dropped += 1
            return False
        if out.error:
            self.last_error = out.error
            self.failed.emit(out.error)
            return False
        self.last_error = ""
        self.last_seconds = out.seconds
        self.state.set_ik(out.result, writer=self, infos=out.infos, rows=out.rows, drawings=out.drawings)
        self.solved.emit()
        return True

    def solve_now(self) -> bool:
        """Solve the present target at once on this thread (for ``--target`` and scripts); True when stored.

        Anything in flight becomes stale and is dropped when it comes back.
        """
        self.timer.stop()
        self._next = None
        job = self._job()
        if job is None:
            self._set_busy()
            return False
        ok = self._store(compute(job))
        self._set_busy()
        return ok

    def wait(self, timeout: float = 10.0) -> bool:
        """Process events until no request is pending (tests, scripts); False on timeout."""
        from PySide6.QtCore import QCoreApplication, QEventLoop

        deadline = time.perf_counter() + timeout
        while self.pending and time.perf_counter() < deadline:
            QCoreApplication.processEvents(QEventLoop.ProcessEventsFlag.AllEvents, 20)
            time.sleep(0.002)
        return not self.pending

    def shutdown(self, timeout_ms: int = 5000) -> None:
        """Stop asking and wait for the worker (before the window goes)."""
        self.timer.stop()
        self._next = None
        self._number += 1
        self._pool.waitForDone(timeout_ms)
