"""The target panel: a tool pose to reach, solved live; the branches listed, previewed and applied."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QEvent, QSignalBlocker, Qt
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDoubleSpinBox,
    QGridLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from poser.ui import geometry, ikbridge, palette, words
from poser.ui.animate import JointAnimator
from poser.ui.solver import TargetSolver
from poser.ui.state import PoseState, Target

MODES = ("rpy", "axis-angle", "quaternion", "position only")
COLUMNS = ("#", "branch", "within limits", "worst violation", "manipulability", "largest joint move")
HEADER_TIPS = (
    "branch number",
    "how the arm is set up in this branch",
    "yes when every joint is inside its limits",
    "the joint furthest beyond a limit, and by how much",
    "Yoshikawa manipulability at this branch (arm units; larger is farther from a singularity)",
    "the largest single joint move from the present pose",
)


class TargetPanel(QWidget):
    """Writes the target, the hovered/selected branch and (through the animator) the joint values."""

    def __init__(self, state: PoseState, solver: TargetSolver, animator: JointAnimator, parent=None):
        super().__init__(parent)
        self.state = state
        self.solver = solver
        self.animator = animator
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        grid = QGridLayout()
        self.xyz = []
        for k, name in enumerate("xyz"):
            s = self._spin(4)
            s.setAccessibleName(f"target {name}")
            lab = QLabel(f"&{name}" if name != "x" else "&x")
            lab.setBuddy(s)
            grid.addWidget(lab, 0, 2 * k)
            grid.addWidget(s, 0, 2 * k + 1)
            self.xyz.append(s)
        self.mode = QComboBox()
        self.mode.addItems(MODES)
        self.mode.setAccessibleName("orientation notation")
        self.mode.setToolTip("how the target orientation is written (or position only)")
        mlab = QLabel("&Orientation")
        mlab.setBuddy(self.mode)
        grid.addWidget(mlab, 1, 0)
        grid.addWidget(self.mode, 1, 1, 1, 3)
        self.ori_labels = []
        self.ori = []
        for k in range(4):
            lab = QLabel()
            s = self._spin(5)
            grid.addWidget(lab, 2 + k // 2, 2 * (k % 2))
            grid.addWidget(s, 2 + k // 2, 2 * (k % 2) + 1)
            self.ori_labels.append(lab)
            self.ori.append(s)
        lay.addLayout(grid)

        buttons = QHBoxLayout()
        self.take_button = QPushButton("&Take current pose")
        self.take_button.setToolTip("put the tool's present pose in the target fields")
        self.take_button.clicked.connect(self.take_current)
        self.clear_button = QPushButton("C&lear target")
        self.clear_button.clicked.connect(lambda: self.state.set_target(None, writer=self))
        self.apply_button = QPushButton("&Apply branch")
        self.apply_button.setToolTip("move the arm to the selected branch (Enter in the list does the same)")
        self.apply_button.clicked.connect(self.apply_selected)
        for b in (self.take_button, self.clear_button, self.apply_button):
            buttons.addWidget(b)
        buttons.addStretch(1)
        lay.addLayout(buttons)

        self.summary = QLabel()
        self.summary.setWordWrap(True)
        self.summary.setAccessibleName("solution summary")
        lay.addWidget(self.summary)
        self.table = QTableWidget(0, len(COLUMNS))
        self.table.setHorizontalHeaderLabels(COLUMNS)
        self.table.verticalHeader().setVisible(False)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setMouseTracking(True)
        self.table.setAccessibleName("branches")
        hh = self.table.horizontalHeader()
        hh.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        hh.setStretchLastSection(False)
        self.table.setWordWrap(False)
        self.table.verticalHeader().setDefaultSectionSize(22)
        hh.setSectionResizeMode(1, QHeaderView.ResizeMode.Interactive)
        self.table.setTextElideMode(Qt.TextElideMode.ElideRight)
        for c, tip in enumerate(HEADER_TIPS):
            self.table.horizontalHeaderItem(c).setToolTip(tip)
        self.table.cellEntered.connect(lambda r, _c: self.state.hover_branch(r, writer=self))
        self.table.viewport().installEventFilter(self)
        self.table.installEventFilter(self)
        self.table.itemSelectionChanged.connect(self._from_selection)
        self.table.cellDoubleClicked.connect(lambda r, _c: self.apply_selected())
        lay.addWidget(self.table, 1)

        for s in self.xyz + self.ori:
            s.valueChanged.connect(self._from_fields)
        self.mode.currentIndexChanged.connect(self._mode_changed)
        solver.failed.connect(lambda text: self._say("at", text))
        state.changed.connect(self._on_state)
        self._layout_mode()
        self._units()
        self._fill_table()
        if not ikbridge.available():
            self._say("near", f"Targets are shown, but {ikbridge.IK_MISSING}.")

    @staticmethod
    def _spin(decimals: int) -> QDoubleSpinBox:
        s = QDoubleSpinBox()
        s.setRange(-1e6, 1e6)
        s.setDecimals(decimals)
        s.setKeyboardTracking(True)
        s.setMinimumWidth(70)
        return s

    # -- fields ------------------------------------------------------------------------
    @property
    def mode_name(self) -> str:
        return MODES[self.mode.currentIndex()]

    def _units(self) -> None:
        u = self.state.chain.units
        for s in self.xyz:
            s.setSuffix(f" {u.length}")
            s.setDecimals(5 if u.length == "m" else 3)
        self._layout_mode()

    def _layout_mode(self) -> None:
        mode = self.mode_name
        u = self.state.chain.units
        names = geometry.ORIENTATION_MODES.get(mode, ())
        for k in range(4):
            on = k < len(names)
            self.ori_labels[k].setVisible(on)
            self.ori[k].setVisible(on)
            if on:
                angle = mode == "rpy" or (mode == "axis-angle" and k == 3)
                self.ori_labels[k].setText(names[k])
                self.ori[k].setSuffix(f" {u.angle}" if angle else "")
                self.ori[k].setAccessibleName(f"target {names[k]}")
                self.ori_labels[k].setBuddy(self.ori[k])

    def _fields_to_target(self) -> Target | None:
        xyz = np.array([s.value() for s in self.xyz])
        mode = self.mode_name
        if mode == "position only":
            return Target(xyz, None)
        vals = [s.value() for s in self.ori[: len(geometry.ORIENTATION_MODES[mode])]]
        try:
            R = geometry.rotation_from_values(mode, vals, self.state.chain.units.angle_to_rad)
        except ValueError as exc:
            self._say("at", f"Target orientation not usable: {exc}.")
            return None
        return Target(xyz, R)

    def _target_to_fields(self, target: Target | None) -> None:
        if target is None:
            return
        blockers = [QSignalBlocker(s) for s in self.xyz + self.ori]
        for s, v in zip(self.xyz, target.xyz):
            s.setValue(float(v))
        mode = self.mode_name
        if target.R is not None and mode != "position only":
            vals = geometry.values_from_rotation(mode, target.R, self.state.chain.units.angle_to_rad)
            for s, v in zip(self.ori, vals):
                s.setValue(float(v))
        del blockers

    def _from_fields(self, *_):
        t = self._fields_to_target()
        if t is not None:
            self.state.set_target(t, writer=self)

    def _mode_changed(self, *_):
        old = self.state.target
        self._layout_mode()
        if old is not None and old.R is not None:
            self._target_to_fields(old)
        if old is not None:
            self._from_fields()

    def set_values(self, values) -> None:
        """Set the target from ``X,Y,Z`` or ``X,Y,Z,R,P,Y`` in arm units (rpy mode) and solve at once."""
        v = np.asarray(values, float)
        with QSignalBlocker(self.mode):
            self.mode.setCurrentIndex(MODES.index("rpy" if len(v) == 6 else "position only"))
        self._layout_mode()
        R = None
        if len(v) == 6:
            R = geometry.rotation_from_values("rpy", v[3:], self.state.chain.units.angle_to_rad)
        self.state.set_target(Target(v[:3], R), writer=self)
        self._target_to_fields(self.state.target)
        self.solver.solve_now()

    def take_current(self) -> None:
        T = self.state.tool()
        if self.mode_name == "position only":
            target = Target(T[:3, 3].copy(), None)
        else:
            target = Target(T[:3, 3].copy(), T[:3, :3].copy())
        self.state.set_target(target, writer=self)
        self._target_to_fields(target)

    # -- branches ---------------------------------------------------------------------------
    def _say(self, level: str, text: str) -> None:
        colour = palette.LEVEL_COLOURS.get(level, palette.TEXT) if level != "ok" else palette.TEXT
        self.summary.setText(text)
        self.summary.setStyleSheet(f"color: {colour}")

    def _fill_table(self) -> None:
        st = self.state
        chain = st.chain
        branches = st.branches
        with QSignalBlocker(self.table):
            self.table.setRowCount(len(branches))
            for r, b in enumerate(branches):
                within = "yes" if b.within_limits else "NO"
                if not getattr(b, "reaches", True):
                    within += f" · misses by {words.fmt(b.position_error, 1)} {chain.units.length}"
                cells = (
                    str(r + 1),
                    b.label,
                    within,
                    words.worst_violation(chain, b),
                    f"{b.manipulability:.3g}",
                    words.largest_move(chain, st.q, b.q),
                )
                for c, text in enumerate(cells):
                    item = QTableWidgetItem(text)
                    item.setToolTip(text)
                    if c == 2:
                        item.setForeground(Qt.GlobalColor.darkGreen if b.within_limits else Qt.GlobalColor.red)
                    self.table.setItem(r, c, item)
            self.table.clearSelection()
        self.table.setColumnWidth(1, min(260, max(120, self.table.sizeHintForColumn(1))))
        level, text = words.ik_summary(chain, st.ik)
        if st.ik is None and st.target is not None:
            level, text = ("ok", "Solving…" if ikbridge.available() else f"Not solved: {ikbridge.IK_MISSING}.")
        elif st.target is None:
            level, text = "ok", "No target. Type a tool pose above or press 'Take current pose'."
        self._say(level, text)
        self.apply_button.setEnabled(False)

    def _from_selection(self) -> None:
        rows = {i.row() for i in self.table.selectedIndexes()}
        r = min(rows) if rows else -1
        self.state.select_branch(r, writer=self)
        self.apply_button.setEnabled(r >= 0)

    def apply_selected(self) -> bool:
        """Animate the arm to the selected branch; False when none is selected."""
        i = self.state.selected
        if i < 0:
            return False
        self.animator.go(self.state.branches[i].q)
        return True

    def eventFilter(self, obj, ev):
        if obj is self.table.viewport() and ev.type() == QEvent.Type.Leave:
            self.state.hover_branch(-1, writer=self)
        enter = (Qt.Key.Key_Return, Qt.Key.Key_Enter)
        if obj is self.table and ev.type() == QEvent.Type.KeyPress and ev.key() in enter:
            self.apply_selected()
            return True
        return super().eventFilter(obj, ev)

    def _on_state(self, field: str) -> None:
        st = self.state
        if field == "arm":
            self._units()
            self._fill_table()
        elif field == "target":
            if st.writer is not self:
                self._target_to_fields(st.target)
            self._fill_table()
        elif field == "ik":
            self._fill_table()
        elif field == "selected" and st.writer is not self:
            with QSignalBlocker(self.table):
                self.table.clearSelection()
                if st.selected >= 0:
                    self.table.selectRow(st.selected)
            self.apply_button.setEnabled(st.selected >= 0)
