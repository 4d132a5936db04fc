"""The frames panel: the tool pose (4x4, xyz, rpy) and, for a chosen link, A_i and world → frame i."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import Qt
from PySide6.QtGui import QFont, QGuiApplication
from PySide6.QtWidgets import (
    QComboBox,
    QGridLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QMenu,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from poser.core.transforms import as_xyz_rpy
from poser.report import printable
from poser.ui.geometry import format_matrix
from poser.ui.state import PoseState
from poser.ui.words import fmt


def subscript(i: int) -> str:
    """``12`` → ``"₁₂"`` (for A₁, A₁₂ in titles)."""
    return str(i).translate(str.maketrans("0123456789", "₀₁₂₃₄₅₆₇₈₉"))


STYLES = (("text", "as plain text"), ("numpy", "as a NumPy array literal"), ("csv", "as CSV"))


def _mono() -> QFont:
    f = QFont("DejaVu Sans Mono")
    f.setStyleHint(QFont.StyleHint.Monospace)
    f.setPointSize(9)
    return f


class FramesPanel(QWidget):
    """Read-only view of the pose; its only write is the clipboard."""

    def __init__(self, state: PoseState, parent=None):
        super().__init__(parent)
        self._stale = False  # joints moved while hidden: refreshed when shown
        self._seen = True  # set_seen: the window says when its dock is a tab behind another
        self.state = state
        self.last_copied = ""
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)

        self.tool_box = QGroupBox("Tool pose: world → tool")
        tl = QGridLayout(self.tool_box)
        self.tool_matrix = QLabel()
        self.tool_matrix.setFont(_mono())
        self.tool_matrix.setAccessibleName("tool pose matrix")
        self.xyz_label = QLabel()
        self.rpy_label = QLabel()
        for w in (self.tool_matrix, self.xyz_label, self.rpy_label):
            w.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        tl.addWidget(self.tool_matrix, 0, 0, 3, 1)
        tl.addWidget(self.xyz_label, 0, 1)
        tl.addWidget(self.rpy_label, 1, 1)
        tl.addWidget(self._copy_button("tool"), 2, 1)
        tl.setColumnStretch(1, 1)
        lay.addWidget(self.tool_box)

        pick = QHBoxLayout()
        lab = QLabel("&Link:")
        self.link_combo = QComboBox()
        self.link_combo.setAccessibleName("link whose matrices are shown")
        lab.setBuddy(self.link_combo)
        self.link_combo.currentIndexChanged.connect(lambda _i: self._refresh())
        pick.addWidget(lab)
        pick.addWidget(self.link_combo, 1)
        lay.addLayout(pick)

        row = QHBoxLayout()
        self.a_box = QGroupBox("A_i")
        al = QVBoxLayout(self.a_box)
        self.a_matrix = QLabel()
        self.a_matrix.setFont(_mono())
        al.addWidget(self.a_matrix)
        al.addWidget(self._copy_button("A"))
        self.w_box = QGroupBox("world → frame i")
        wl = QVBoxLayout(self.w_box)
        self.w_matrix = QLabel()
        self.w_matrix.setFont(_mono())
        wl.addWidget(self.w_matrix)
        wl.addWidget(self._copy_button("world"))
        row.addWidget(self.a_box)
        row.addWidget(self.w_box)
        lay.addLayout(row)
        self.units_label = QLabel()
        self.units_label.setWordWrap(True)
        lay.addWidget(self.units_label)
        lay.addStretch(1)
        state.changed.connect(self._on_state)
        self._fill_links()

    def _copy_button(self, which: str) -> QToolButton:
        b = QToolButton(self)
        b.setText("Copy …")
        b.setToolTip("copy this matrix to the clipboard")
        b.setPopupMode(QToolButton.ToolButtonPopupMode.InstantPopup)
        m = QMenu(b)
        for style, text in STYLES:
            m.addAction(text, lambda w=which, s=style: self.copy(w, s))
        b.setMenu(m)
        b.setAccessibleName(f"copy {which} matrix")
        return b

    # -- data -------------------------------------------------------------------------
    @property
    def link(self) -> int:
        """Chosen link, 1-based."""
        return max(self.link_combo.currentIndex(), 0) + 1

    def matrix(self, which: str) -> np.ndarray:
        """``"tool"``, ``"A"`` (A_i of the chosen link) or ``"world"`` (world → frame i)."""
        st = self.state
        if which == "tool":
            return st.tool()
        if which == "A":
            return st.link_matrices()[self.link - 1]
        if which == "world":
            return st.frames()[self.link]
        raise ValueError(f"which must be 'tool', 'A' or 'world', got {which!r}")

    def copy(self, which: str, style: str) -> str:
        """Copy a matrix as ``text``, ``numpy`` or ``csv``; returns the text copied."""
        T = self.matrix(which)
        body = format_matrix(T, style)
        L = self.state.chain.units.length
        name = {"tool": "world → tool", "A": f"A_{self.link}", "world": f"world → frame {self.link}"}[which]
        if style == "text":
            body = f"{name} (translation in {L})\n{body}"
        elif style == "numpy":
            body = f"# {name}; translation column in {L}\n{body}"
        self.last_copied = body
        QGuiApplication.clipboard().setText(body)
        return body

    def _fill_links(self) -> None:
        names = self.state.chain.names
        keep = self.link_combo.currentIndex()
        self.link_combo.blockSignals(True)
        self.link_combo.clear()
        for i, n in enumerate(names, start=1):
            self.link_combo.addItem(f"{i}: {printable(n)}")
        self.link_combo.setCurrentIndex(min(max(keep, 0), len(names) - 1))
        self.link_combo.blockSignals(False)
        self._refresh()

    def _refresh(self) -> None:
        self._stale = False
        st = self.state
        u = st.chain.units
        T = st.tool()
        self.tool_matrix.setText(format_matrix(T, "text", 4))
        xyz, rpy = as_xyz_rpy(T)
        rpy_u = np.asarray(u.angle_out(rpy))
        self.xyz_label.setText(f"xyz = {', '.join(fmt(v, 3) for v in xyz)} {u.length}")
        self.rpy_label.setText(f"rpy = {', '.join(fmt(v, 3) for v in rpy_u)} {u.angle}\n(about fixed X, Y, Z)")
        i = self.link
        self.a_box.setTitle(f"A{subscript(i)}: frame {i - 1} → frame {i}")
        self.w_box.setTitle(f"world → frame {i}")
        self.a_matrix.setText(format_matrix(self.matrix("A"), "text", 4))
        self.w_matrix.setText(format_matrix(self.matrix("world"), "text", 4))
        self.units_label.setText(
            f"Units: translations in {u.length}; rotation entries have no unit. "
            f"Angles shown in {u.angle}. Frame 0 is the base."
        )

    def set_seen(self, seen: bool) -> None:
        """Whether the panel can be seen (its dock raised): while not, joint changes only mark it stale."""
        self._seen = bool(seen)
        if self._seen and self._stale:  # joints moved while it was a tab behind another panel
            self._refresh()

    def _on_state(self, field: str) -> None:
        if field == "arm":
            self._fill_links()
        elif field == "q":
            if self._seen:
                self._refresh()
            else:  # nobody sees it: four matrices formatted per joint change cost a frame's time for nothing
                self._stale = True
