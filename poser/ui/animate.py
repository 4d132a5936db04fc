"""Moves the arm to new joint values with a short, eased animation through joint space."""

from __future__ import annotations

import time

import numpy as np
from PySide6.QtCore import QObject, QTimer, Signal

from poser.ui.geometry import interpolate_q
from poser.ui.state import PoseState


class JointAnimator(QObject):
    """``go(q)`` animates ``state.q`` to ``q`` (internal units) over ``duration`` seconds; 0 jumps."""

    finished = Signal()

    def __init__(self, state: PoseState, duration: float = 0.6, parent=None):
        super().__init__(parent)
        self.state = state
        self.duration = float(duration)
        self._timer = QTimer(self)
        self._timer.setInterval(16)
        self._timer.timeout.connect(self._tick)
        self._q0 = self._q1 = None
        self._t0 = 0.0
        state.changed.connect(self._on_state)

    def _on_state(self, field: str) -> None:
        # Another arm (other joints, maybe another count) or a joint moved by someone else (a slider, a
        # key, Home): the motion in flight is stale and must not pull the arm back.
        if self.running and (field == "arm" or (field == "q" and self.state.writer is not self)):
            self.stop()

    @property
    def running(self) -> bool:
        return self._timer.isActive()

    def go(self, q) -> None:
        q = np.asarray(q, float)
        if self.duration <= 0:
            self.state.set_q(q, writer=self)
            self.finished.emit()
            return
        self._q0, self._q1 = self.state.q, q
        self._t0 = time.perf_counter()
        self._timer.start()

    def stop(self) -> None:
        self._timer.stop()

    def _tick(self) -> None:
        s = (time.perf_counter() - self._t0) / self.duration
        if s >= 1.0:
            self._timer.stop()
            self.state.set_q(self._q1, writer=self)
            self.finished.emit()
            return
        self.state.set_q(interpolate_q(self._q0, self._q1, s), writer=self)
