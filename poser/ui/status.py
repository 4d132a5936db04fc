"""The status bar: singularity proximity, limit warnings, arm name and units, and how the view is drawn."""

from __future__ import annotations

from PySide6.QtWidgets import QLabel, QSizePolicy, QStatusBar

from poser.ui import palette
from poser.ui.state import PoseState
from poser.ui.words import fmt, singularity_words


class PoseStatusBar(QStatusBar):
    """Observes the state only."""

    def __init__(self, state: PoseState, render_note: str, parent=None):
        super().__init__(parent)
        self.state = state
        self.singular = QLabel()
        self.singular.setAccessibleName("singularity proximity")
        self.limits = QLabel()
        self.limits.setAccessibleName("limit warnings")
        self.arm = QLabel()
        self.render = QLabel(render_note)
        self.render.setStyleSheet(f"color: {palette.MUTED}")
        for label in (self.singular, self.limits):
            # long texts are cut at the window's edge rather than widening the window (tooltips keep them whole)
            label.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
            label.setMinimumWidth(40)
        self.render.setToolTip(render_note)
        self.addWidget(self.singular, 5)
        self.addWidget(self.limits, 4)
        self.addPermanentWidget(self.arm)
        self.addPermanentWidget(self.render)
        self._levels = {}
        state.changed.connect(self._on_state)
        self._refresh()

    def _style(self, label: QLabel, level: str) -> None:
        if self._levels.get(id(label)) == level:
            return
        self._levels[id(label)] = level
        colour = palette.LEVEL_COLOURS[level] if level != "ok" else palette.TEXT
        weight = "bold" if level != "ok" else "normal"
        label.setStyleSheet(f"color: {colour}; font-weight: {weight}")

    def _refresh(self) -> None:
        st = self.state
        w, kappa, _ = st.metrics()
        level, text = singularity_words(kappa)
        self.singular.setText(f"manipulability {w:.3g} · condition {fmt(kappa, 1)}: {text}")
        self.singular.setToolTip(
            "manipulability: Yoshikawa's measure of the Jacobian in the arm's units; condition number: of the "
            "Jacobian with lengths divided by the arm's size (no unit). A large condition number means "
            "a singularity is near."
        )
        self._style(self.singular, level)
        states = st.limit_states()
        bad = [(n, s) for n, s in zip(st.chain.names, states) if s.level != "ok"]
        if not bad:
            self.limits.setText("limits: every joint clear")
            self._style(self.limits, "ok")
        else:
            worst = "at" if any(s.level in ("at", "beyond") for _, s in bad) else "near"
            self.limits.setText("limits: " + "; ".join(f"{n} {s.words}" for n, s in bad))
            self._style(self.limits, worst)
        self.limits.setToolTip(self.limits.text())
        u = st.chain.units
        name = st.path.name if st.path else "not saved"
        star = " (edited)" if st.dirty else ""
        self.arm.setText(f"{st.chain.name} · {u.length}, {u.angle} · {name}{star}")
        self.arm.setToolTip(f"arm name · length and angle units · file{': ' + str(st.path) if st.path else ''}")
        self.arm.setMaximumWidth(320)
        self.render.setMaximumWidth(380)

    def _on_state(self, field: str) -> None:
        if field in ("q", "arm", "options", "document"):
            self._refresh()
