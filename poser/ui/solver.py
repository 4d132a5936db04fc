"""Solves the target whenever it changes (debounced) and writes the branches to the state."""

from __future__ import annotations

from PySide6.QtCore import QObject, QTimer, Signal

from poser.ui import ikbridge
from poser.ui.state import PoseState


class TargetSolver(QObject):
    """Observes ``target`` (and the arm); after ``delay_ms`` of quiet, solves and calls ``state.set_ik``.

    ``failed(str)`` reports a solver error in words (the window shows it; nothing is raised).
    """

    failed = Signal(str)
    solved = Signal()

    def __init__(self, state: PoseState, delay_ms: int = 180, parent=None):
        super().__init__(parent)
        self.state = state
        self.timer = QTimer(self)
        self.timer.setSingleShot(True)
        self.timer.setInterval(delay_ms)
        self.timer.timeout.connect(self.solve_now)
        self.last_error = ""
        state.changed.connect(self._on_state)

    @property
    def available(self) -> bool:
        return ikbridge.available()

    def _on_state(self, field: str) -> None:
        if field in ("target", "arm") and self.state.target is not None and self.state.option("live_solve"):
            self.timer.start()

    def solve_now(self) -> bool:
        """Solve the current target at once; True when a result was stored."""
        self.timer.stop()
        st = self.state
        if st.target is None or not ikbridge.available():
            return False
        t = st.target
        try:
            result = ikbridge.solve(st.chain, t.xyz, t.R, near=st.q)
        except Exception as exc:  # the window must not die on a solver error; say it
            self.last_error = f"the solver failed: {type(exc).__name__}: {exc}"
            self.failed.emit(self.last_error)
            return False
        self.last_error = ""
        st.set_ik(result, writer=self)
        self.solved.emit()
        return True
