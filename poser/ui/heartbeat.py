"""How long the GUI thread is busy at a time: a heartbeat timer and a scripted typing session.

:class:`Heartbeat` ticks every millisecond on the GUI thread and records the longest gap between two
ticks — the longest time the window could not answer input.  :func:`typing_session` types texts into
widgets key by key from inside the event loop (as a person would, ``pause_ms`` apart), waits for the
solver to settle after each field, and returns the gaps seen.  ``benchmarks/gui.py`` reports the longest
as ``gui_stall_max_ms``; the tests record it (figures, never pass or fail).
"""

from __future__ import annotations

import time

from PySide6.QtCore import QCoreApplication, QEventLoop, QObject, Qt, QTimer
from PySide6.QtTest import QTest

__all__ = ["Heartbeat", "typing_session", "TARGET_SESSIONS"]

TARGET_SESSIONS = {
    # arm file stem: target fields typed in order (x, y, z, roll, pitch, yaw), arm units
    "wren6": [("0", "0", "1500", "0", "0", "0"), ("600", "-200", "700", "180", "0", "0")],
    "lark7": [("0.45", "0.1", "0.6", "180", "0", "0"), ("0.3", "-0.3", "0.5", "180", "30", "0")],
}
"""Targets typed by the stall measurements (Wren 6's first one lists 90 branches; lengths in the arm's unit)."""


class Heartbeat(QObject):
    """Ticks every ``interval_ms`` on the GUI thread; :attr:`max_gap_ms` is the longest stall seen."""

    def __init__(self, interval_ms: int = 1, parent=None):
        super().__init__(parent)
        self.timer = QTimer(self)
        self.timer.setTimerType(Qt.TimerType.PreciseTimer)
        self.timer.setInterval(interval_ms)
        self.timer.timeout.connect(self._tick)
        self.gaps: list[float] = []
        self._last = None

    def start(self) -> None:
        self.gaps = []
        self._last = time.perf_counter()
        self.timer.start()

    def stop(self) -> None:
        self.timer.stop()
        self._tick()

    def _tick(self) -> None:
        now = time.perf_counter()
        if self._last is not None:
            self.gaps.append((now - self._last) * 1e3)
        self._last = now

    @property
    def max_gap_ms(self) -> float:
        return max(self.gaps, default=0.0)


def _run_for(ms: float) -> None:
    deadline = time.perf_counter() + ms / 1e3
    while time.perf_counter() < deadline:
        QCoreApplication.processEvents(QEventLoop.ProcessEventsFlag.AllEvents, 5)


def typing_session(window, targets, pause_ms: int = 60, settle_s: float = 5.0) -> Heartbeat:
    """Type each target of ``targets`` into the target panel's fields key by key; returns the heartbeat.

    Every key is sent from a timer inside the event loop, so whatever it starts (a target, a solve on the
    worker, a result stored and shown, the view redrawn) runs between heartbeats as it would for a person.
    """
    panel = window.target
    panel.mode.setCurrentIndex(0)  # rpy
    fields = panel.xyz + panel.ori[:3]
    beat = Heartbeat()
    beat.start()
    for target in targets:
        for spin, text in zip(fields, target):
            spin.setFocus()
            spin.selectAll()
            keys = [Qt.Key.Key_Backspace] + list(text)
            for key in keys:

                def press(k=key, s=spin):
                    if isinstance(k, str):
                        QTest.keyClicks(s, k)
                    else:
                        QTest.keyClick(s, k)

                QTimer.singleShot(0, press)
                _run_for(pause_ms)
        t0 = time.perf_counter()
        while window.solver.pending and time.perf_counter() - t0 < settle_s:
            _run_for(10)
        _run_for(100)  # the result shown and drawn
    beat.stop()
    return beat
