"""The target panel: a tool pose to reach, solved live; the branches listed, previewed and applied."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QEvent, QSignalBlocker, Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDoubleSpinBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from poser import report
from poser.ui import geometry, ikbridge, palette, words
from poser.ui.animate import JointAnimator
from poser.ui.solver import TargetSolver
from poser.ui.state import PoseState, Target
from poser.ui.tables import CompactTable

MODES = ("rpy", "axis-angle", "quaternion", "position only")
COLUMNS = ("#", "branch", "limits", "manip.", "largest move")
HEADER_TIPS = (
    "branch number",
    "how the arm is set up in this branch (the whole label is also in the line below the list)",
    "yes when every joint is inside its limits; otherwise NO and the joint furthest beyond a limit",
    "manipulability: Yoshikawa's measure over the directions the arm controls, in the arm's units; "
    "0 at a singularity (the unit is in the column header's tooltip and the status bar's)",
    "the largest single joint move from the present pose (which joint: hover the cell, or see below the list)",
)
LIMIT_COL_MAX = 140
"""Widest the limits column grows (pixels) before its text wraps onto a second line."""
MANIP_COL_MAX = 110
FIELD_LIMIT = 1e6
"""Largest size of a value in the target fields (arm units)."""
DECIMALS = {"mm": 3, "m": 5, "in": 4, "deg": 3, "rad": 5}
"""Decimals of the target fields by unit (a tenth of a micrometre-ish, a thousandth of a degree)."""


limits_cell = words.limits_cell


class TargetPanel(QWidget):
    """Writes the target, the hovered/selected branch and (through the animator) the joint values."""

    def __init__(self, state: PoseState, solver: TargetSolver, animator: JointAnimator, parent=None):
        super().__init__(parent)
        self.state = state
        self.solver = solver
        self.animator = animator
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        pos_row = QHBoxLayout()
        self.xyz = []
        for name in "xyz":
            s = self._spin(4)
            s.setAccessibleName(f"target {name}")
            lab = QLabel(name)  # no mnemonic: Ctrl+4 comes here, and Alt+X/Y/Z would crowd the others
            lab.setBuddy(s)
            pos_row.addWidget(lab)
            pos_row.addWidget(s, 1)
            self.xyz.append(s)
        lay.addLayout(pos_row)
        ori_row = QHBoxLayout()
        self.mode = QComboBox()
        self.mode.addItems(MODES)
        self.mode.setAccessibleName("orientation notation")
        self.mode.setToolTip("how the target orientation is written: roll-pitch-yaw about fixed X, Y, Z; "
                             "axis and angle; quaternion w, x, y, z; or no orientation at all (position only)")
        mlab = QLabel("&Orientation")
        mlab.setBuddy(self.mode)
        ori_row.addWidget(mlab)
        ori_row.addWidget(self.mode)
        ori_row.addSpacing(8)
        ori_values = QHBoxLayout()
        self.ori_labels = []
        self.ori = []
        for _k in range(4):
            lab = QLabel()
            s = self._spin(5)
            ori_values.addWidget(lab)
            ori_values.addWidget(s, 1)
            self.ori_labels.append(lab)
            self.ori.append(s)
        self.ori_row_host = QWidget()
        self.ori_row_host.setLayout(ori_values)
        ori_values.setContentsMargins(0, 0, 0, 0)
        lay.addWidget(self.ori_row_host)

        buttons = ori_row  # the buttons share the notation's row (height is scarce under the joints)
        self.take_button = QPushButton("&Take current pose")
        self.take_button.setToolTip("put the tool's present pose in the target fields")
        self.take_button.clicked.connect(self.take_current)
        self.clear_button = QPushButton("Clear tar&get")
        self.clear_button.clicked.connect(lambda: self.state.set_target(None, writer=self))
        self.apply_button = QPushButton("&Apply branch")
        self.apply_button.setToolTip("move the arm to the selected branch (Enter in the list does the same)")
        self.apply_button.clicked.connect(self.apply_selected)
        for b in (self.take_button, self.clear_button, self.apply_button):
            buttons.addWidget(b)
        buttons.addStretch(1)
        lay.insertLayout(1, buttons)

        self.summary = QLabel()
        self.summary.setWordWrap(True)
        self.summary.setAccessibleName("solution summary")
        self.summary.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        lay.addWidget(self.summary)
        self.table = CompactTable(0, len(COLUMNS))
        self.table.setHorizontalHeaderLabels(COLUMNS)
        self.table.verticalHeader().setVisible(False)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setMouseTracking(True)
        self.table.setAccessibleName("branches")
        hh = self.table.horizontalHeader()
        hh.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        hh.setSectionResizeMode(1, QHeaderView.ResizeMode.Stretch)  # the label takes what is left, and wraps
        hh.setSectionResizeMode(2, QHeaderView.ResizeMode.Interactive)
        hh.setSectionResizeMode(3, QHeaderView.ResizeMode.Interactive)
        hh.setStretchLastSection(False)
        hh.setMinimumSectionSize(24)
        # No sideways scrolling: every column fits the panel; long texts wrap onto a second line.
        self.table.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.table.setWordWrap(True)
        self.table.setTextElideMode(Qt.TextElideMode.ElideMiddle)
        self.table.verticalHeader().setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        self.table.verticalHeader().setMinimumSectionSize(20)
        for c, tip in enumerate(HEADER_TIPS):
            self.table.horizontalHeaderItem(c).setToolTip(tip)
        self.table.cellEntered.connect(lambda r, _c: self.state.hover_branch(r, writer=self))
        self.table.viewport().installEventFilter(self)
        self.table.installEventFilter(self)
        self.table.itemSelectionChanged.connect(self._from_selection)
        self.table.cellDoubleClicked.connect(lambda r, _c: self.apply_selected())
        self.table.setMinimumHeight(4 * 22)
        lay.addWidget(self.table, 1)
        self.details = QLabel()
        self.details.setWordWrap(True)
        self.details.setAccessibleName("branch details")
        self.details.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.details.setMinimumHeight(self.details.fontMetrics().lineSpacing() * 2 + 4)
        lay.addWidget(self.details)

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
        s.setRange(-FIELD_LIMIT, FIELD_LIMIT)
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
        blockers = [QSignalBlocker(s) for s in self.xyz]  # new decimals round the value: that is no edit
        for s in self.xyz:
            s.setSuffix(f" {u.length}")
            s.setDecimals(DECIMALS.get(u.length, 4))
        del blockers
        self._layout_mode()

    def _layout_mode(self) -> None:
        mode = self.mode_name
        u = self.state.chain.units
        names = geometry.ORIENTATION_MODES.get(mode, ())
        self.ori_row_host.setVisible(bool(names))
        blockers = [QSignalBlocker(s) for s in self.ori]  # new decimals round the value: that is no edit
        for k in range(4):
            on = k < len(names)
            self.ori_labels[k].setVisible(on)
            self.ori[k].setVisible(on)
            if on:
                angle = mode == "rpy" or (mode == "axis-angle" and k == 3)
                self.ori_labels[k].setText(names[k])
                self.ori[k].setSuffix(f" {u.angle}" if angle else "")
                self.ori[k].setDecimals(DECIMALS.get(u.angle, 4) if angle else 5)
                self.ori[k].setAccessibleName(f"target {names[k]}" + (f" in {u.angle}" if angle else ""))
                self.ori_labels[k].setBuddy(self.ori[k])
        del blockers

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

    def _branch_metrics(self) -> list[tuple[str, str, float]]:
        """(singularity level, singularity words, condition number) of every branch (the status bar's verdict)."""
        from poser.core.singularity import assess

        st = self.state
        out = []
        for b in st.branches:
            s = assess(st.chain, b.q)
            level, w = words.singularity_words(st.chain, s)
            out.append((level, w, s.condition))
        return out

    def _fill_table(self) -> None:
        st = self.state
        chain = st.chain
        branches = st.branches
        position_only = bool(getattr(st.ik, "position_only", False))
        self._metrics = self._branch_metrics()
        with QSignalBlocker(self.table):
            self.table.setRowCount(len(branches))
            for r, (b, (s_level, s_words, kappa)) in enumerate(zip(branches, self._metrics)):
                limits = limits_cell(chain, b)
                reaches = getattr(b, "reaches", True)
                label = b.label if reaches else f"{b.label} — {words.miss_words(chain, b, position_only)}"
                if b.family is not None:
                    label += " · family"
                manip = words.manipulability_text(chain, b.manipulability)
                if s_level != "ok":
                    manip += " singular" if s_level == "at" else " near singular"
                move = words.largest_move(chain, st.q, b.q)
                size = move.split(" by ", 1)[-1] if "; " not in move else move
                fam = f"\n{report.family_words(chain, b.family)}" if b.family is not None else ""
                cells = (
                    (str(r + 1), f"branch {r + 1}"),
                    (label, label + fam),
                    (limits, "; ".join(words.violations_words(chain, b.violations)) or "every joint within its limits"),
                    (manip, f"manipulability {manip}, condition {words.fmt(kappa, 1)}: {s_words}"),
                    (size, f"largest joint move from the present pose: {move}"),
                )
                for c, (text, tip) in enumerate(cells):
                    item = QTableWidgetItem(text)
                    item.setToolTip(tip)
                    if c == 2:
                        item.setForeground(QColor(palette.OK if b.within_limits else palette.AT))
                    elif c == 1 and not reaches:
                        item.setForeground(QColor(palette.AT))  # and "misses by …" in words
                    elif c == 3 and s_level != "ok":
                        item.setForeground(QColor(palette.LEVEL_COLOURS[s_level]))
                    if c in (0, 3, 4):
                        item.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
                    self.table.setItem(r, c, item)
            self.table.clearSelection()
        self._fit_columns()
        level, text = words.ik_summary(chain, st.ik)
        tip = "" if st.ik is None else f"solver: {st.ik.solver}\n{words.ik_message(chain, st.ik)}"
        if st.ik is None and st.target is not None:
            level, text = ("ok", "Solving…" if ikbridge.available() else f"Not solved: {ikbridge.IK_MISSING}.")
        elif st.target is None:
            level, text = "ok", "No target. Type a tool pose above or press 'Take current pose'."
        self._say(level, text)
        self.summary.setToolTip(tip)
        self.apply_button.setEnabled(False)
        self._show_details()

    def _fit_columns(self) -> None:
        """Numbers and verdicts as wide as their text (within a cap, then they wrap); the label gets the rest."""
        for c, cap in ((2, LIMIT_COL_MAX), (3, MANIP_COL_MAX)):
            head = self.table.horizontalHeader().sectionSizeFromContents(c).width()
            want = max(head, self.table.sizeHintForColumn(c) if self.table.rowCount() else 0)
            self.table.setColumnWidth(c, min(cap, want))
        self.table.resizeRowsToContents()

    def resizeEvent(self, ev):
        super().resizeEvent(ev)
        self.table.resizeRowsToContents()  # the label column's width changed: its wrapping too

    def details_text(self, i: int) -> str:
        """Branch ``i`` in one or two lines: verdict with every violation, family, singularity figures, largest move."""
        st = self.state
        chain = st.chain
        b = st.branches[i]
        s_level, s_words, kappa = self._metrics[i] if i < len(self._metrics) else ("ok", "", float("nan"))
        parts = [f"Branch {i + 1}"]
        if not getattr(b, "reaches", True):
            parts.append(words.miss_words(chain, b, bool(getattr(st.ik, "position_only", False))))
        if b.within_limits:
            parts.append("every joint within its limits")
        else:
            parts.append("BEYOND LIMITS: " + "; ".join(words.violations_words(chain, b.violations)))
        if b.family is not None:
            parts.append(report.family_words(chain, b.family))
        parts.append(f"manipulability {words.manipulability_text(chain, b.manipulability)}, condition "
                     f"{words.fmt(kappa, 1)} ({s_words})")
        parts.append(f"largest move from here: {words.largest_move(chain, st.q, b.q)}")
        return " · ".join(parts) + "."

    def _show_details(self) -> None:
        st = self.state
        tip = "move the arm to the selected branch (Enter in the list does the same)"
        if 0 <= st.selected < len(st.branches):
            b = st.branches[st.selected]
            tip = f"move the arm to branch {st.selected + 1}"
            if not b.within_limits:
                tip += " — BEYOND joint limits: " + "; ".join(words.violations_words(st.chain, b.violations))
            if not getattr(b, "reaches", True):
                tip += " — it does not reach the target"
        self.apply_button.setToolTip(tip)
        i = st.hovered if st.hovered >= 0 else st.selected
        if 0 <= i < len(st.branches):
            self.details.setText(self.details_text(i))
            b = st.branches[i]
            bad = not (b.within_limits and getattr(b, "reaches", True))
            self.details.setStyleSheet(f"color: {palette.AT}" if bad else "")
        elif st.branches:
            self.details.setText("Hover or select a branch to see it in full and as a ghost; "
                                 "Enter, double-click or 'Apply branch' moves the arm there.")
            self.details.setStyleSheet(f"color: {palette.MUTED}")
        else:
            self.details.setText("")

    def _refresh_moves(self) -> None:
        """The largest-move column follows the arm (it is measured from the present pose)."""
        st = self.state
        for r, b in enumerate(st.branches):
            item = self.table.item(r, 4)
            if item is None:
                continue
            move = words.largest_move(st.chain, st.q, b.q)
            item.setText(move.split(" by ", 1)[-1] if "; " not in move else move)
            item.setToolTip(f"largest joint move from the present pose: {move}")
        self._show_details()

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
        elif field == "selected":
            if st.writer is not self:
                with QSignalBlocker(self.table):
                    self.table.clearSelection()
                    if st.selected >= 0:
                        self.table.selectRow(st.selected)
                self.apply_button.setEnabled(st.selected >= 0)
            self._show_details()
        elif field == "hovered":
            self._show_details()
        elif field == "q" and st.branches:
            self._refresh_moves()
