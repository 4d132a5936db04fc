"""The target panel: a tool pose to reach, solved live; the branches listed, previewed and applied.

The branch list is one :class:`poser.ui.tables.BranchModel` in a :class:`BranchView` (a tree: a
configuration's other turn variants open under it).  Hovering or selecting any row writes that branch to
the state; the filter "only within limits" is the state option ``ghosts_within_limits_only``, which the
3D view's ghosts follow too.
"""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QEvent, QItemSelectionModel, QSignalBlocker, QSize, Qt
from PySide6.QtGui import QGuiApplication, QKeySequence
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QDoubleSpinBox,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QPushButton,
    QScrollArea,
    QTreeView,
    QVBoxLayout,
    QWidget,
)

from poser import report
from poser.ui import geometry, palette, words
from poser.ui.animate import JointAnimator
from poser.ui.solver import TargetSolver
from poser.ui.state import PoseState, Target
from poser.ui.tables import COL_LABEL, COL_LIMITS, COL_MANIP, COL_MOVE, COL_NUMBER, BranchModel, joint_units

MODES = ("rpy", "axis-angle", "quaternion", "position only")
LABEL_MIN = 200
"""Narrowest the branch label column gets (pixels); the others are as wide as their texts."""
LIMIT_COL_MAX = 130
"""Widest the limits column grows (pixels); a longer reason ends in "…" (the tooltip has every violation)."""
FIELD_LIMIT = 1e6
"""Largest size of a value in the target fields (arm units)."""
DECIMALS = {"mm": 3, "m": 5, "in": 4, "deg": 3, "rad": 5}
"""Decimals of the target fields by unit (a tenth of a micrometre-ish, a thousandth of a degree)."""
DETAIL_LINES = 4
"""Lines of the branch details under the list (a fixed height; a longer text scrolls)."""




class BranchView(QTreeView):
    """The branch list: asks for little height (the panel's layout gives it the rest), one line per row."""

    def __init__(self, parent=None):
        super().__init__(parent)
        self.setUniformRowHeights(True)  # one line per row: Qt lays out thousands of rows without measuring them
        self.setAllColumnsShowFocus(True)
        self.setRootIsDecorated(True)
        self.setItemsExpandable(True)
        self.setExpandsOnDoubleClick(False)  # a double-click applies the branch
        self.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.setMouseTracking(True)
        self.setTextElideMode(Qt.TextElideMode.ElideRight)
        self.setIndentation(14)

    def sizeHint(self) -> QSize:
        hint = super().sizeHint()
        hint.setHeight(self.header().sizeHint().height() + 4 * max(self.fontMetrics().lineSpacing() + 4, 18)
                       + 2 * self.frameWidth())
        return hint


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
        from poser.ui.studies_panel import WorkspaceVerdict

        self.inside = WorkspaceVerdict(state)  # inside the computed workspace, or none computed yet
        lay.addWidget(self.inside)
        list_row = QHBoxLayout()
        self.within_only = QCheckBox("Only w&ithin limits")
        self.within_only.setToolTip("list (and draw as ghosts) only the branches that reach the target with every "
                                    "joint inside its limits")
        self.within_only.setChecked(bool(state.option("ghosts_within_limits_only")))
        self.within_only.toggled.connect(lambda on: self.state.set_option("ghosts_within_limits_only", on,
                                                                          writer=self))
        self.copy_button = QPushButton("Cop&y joints")
        self.copy_button.setToolTip("copy the selected branch's joint values as one line, in the arm's units "
                                    "(Ctrl+C in the list does the same)")
        self.copy_button.clicked.connect(self.copy_selected)
        self.shown_label = QLabel()
        self.shown_label.setStyleSheet(f"color: {palette.MUTED}")
        list_row.addWidget(self.within_only)
        list_row.addSpacing(8)
        list_row.addWidget(self.shown_label, 1)
        list_row.addWidget(self.copy_button)
        lay.addLayout(list_row)

        self.model = BranchModel(state, self)
        self.table = BranchView()
        self.table.setModel(self.model)
        self.table.setAccessibleName("branches")
        hh = self.table.header()
        hh.setStretchLastSection(False)
        hh.setMinimumSectionSize(24)
        hh.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        self.table.entered.connect(lambda index: self.state.hover_branch(self.model.branch_of(index), writer=self))
        self.table.viewport().installEventFilter(self)
        self.table.installEventFilter(self)
        self.table.selectionModel().selectionChanged.connect(lambda *_: self._from_selection())
        self.table.doubleClicked.connect(lambda _index: self.apply_selected())
        self.table.setMinimumHeight(4 * 22)
        lay.addWidget(self.table, 1)
        self.details = QLabel()
        self.details.setWordWrap(True)
        self.details.setAccessibleName("branch details")
        self.details.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.details.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop)
        # a fixed height: a longer text for the hovered row must not shrink the list and move rows away
        # from under the pointer (hover would then flicker between two rows); a longer text scrolls
        self.details_box = QScrollArea()
        self.details_box.setWidget(self.details)
        self.details_box.setWidgetResizable(True)
        self.details_box.setFrameShape(QScrollArea.Shape.NoFrame)
        self.details_box.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.details_box.setFixedHeight(self.details.fontMetrics().lineSpacing() * DETAIL_LINES + 6)
        lay.addWidget(self.details_box)

        for s in self.xyz + self.ori:
            s.valueChanged.connect(self._from_fields)
        self.mode.currentIndexChanged.connect(self._mode_changed)
        solver.failed.connect(lambda text: self._say("at", text))
        solver.busy.connect(lambda _busy: self._show_summary())
        state.changed.connect(self._on_state)
        self._layout_mode()
        self._units()
        self.last_copied = ""
        self._filtered = bool(state.option("ghosts_within_limits_only"))
        self._fill_table()

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

    def set_values(self, values, now: bool = True) -> None:
        """Set the target from ``X,Y,Z`` or ``X,Y,Z,R,P,Y`` in arm units (rpy mode); solve at once on this thread
        (``now``: snapshots and scripts want the answer before they go on) or on the solver's worker (the
        window starting with a target: it shows at once and the branches follow)."""
        v = np.asarray(values, float)
        with QSignalBlocker(self.mode):
            self.mode.setCurrentIndex(MODES.index("rpy" if len(v) == 6 else "position only"))
        self._layout_mode()
        R = None
        if len(v) == 6:
            R = geometry.rotation_from_values("rpy", v[3:], self.state.chain.units.angle_to_rad)
        self.state.set_target(Target(v[:3], R), writer=self)
        self._target_to_fields(self.state.target)
        if now:
            self.solver.solve_now()  # at once, on this thread: the caller wants the answer now

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

    def _show_summary(self) -> None:
        st = self.state
        chain = st.chain
        level, text = words.ik_summary(chain, st.ik)
        tip = "" if st.ik is None else f"solver: {st.ik.solver}\n{words.ik_message(chain, st.ik)}"
        if st.target is None:
            level, text = "ok", "No target. Type a tool pose above or press 'Take current pose'."
        elif st.ik is None:
            if self.solver.last_error and not self.solver.pending:
                level, text = "at", self.solver.last_error
            else:
                level, text = "ok", "Solving…"
        self._say(level, text)
        self.summary.setToolTip(tip)

    def _fill_table(self) -> None:
        st = self.state
        self._filtered = bool(st.option("ghosts_within_limits_only"))
        shown = st.shown_branches()
        self.model.reset(st.branch_rows() if st.branches else (), shown)
        n, total = len(shown), len(st.branches)
        self.shown_label.setText("" if total == 0 or n == total else f"{n} of {total} branches shown")
        self._fit_columns()
        self._show_summary()
        self._select_in_view()
        self.apply_button.setEnabled(st.selected >= 0)
        self.copy_button.setEnabled(st.selected >= 0)
        self._show_details()

    def _fit_columns(self) -> None:
        """Numbers and verdicts as wide as their texts (the limit reason within a cap, then "…"); the label
        and joint values get what is left, at least :data:`LABEL_MIN` (a narrower panel scrolls sideways)."""
        st = self.state
        fm = self.table.fontMetrics()
        rows = [st.branch_rows()[i] for i in st.shown_branches()] if st.branches else []
        pad = 14

        def widest(texts):
            return max((fm.horizontalAdvance(t) for t in texts), default=0) + pad

        move = words.move_cell(st.chain, st.q, st.q)[0].replace("0", "000.0").split("; ")
        want = {
            COL_NUMBER: widest([str(max(len(st.branches), 1)), "+00"]) + self.table.indentation(),
            COL_LIMITS: min(widest([r.limits.partition(": ")[2] for r in rows] + ["yes", "NO"]), LIMIT_COL_MAX),
            COL_MANIP: widest([p for r in rows for p in r.manip.split(" ", 1)] + ["0.0000e+00"]),
            COL_MOVE: widest(move),
        }
        hh = self.table.header()
        for c, w in want.items():
            self.table.setColumnWidth(c, max(w, hh.sectionSizeFromContents(c).width()))
        used = sum(self.table.columnWidth(c) for c in want)
        # room as if the vertical scroll bar were shown: opening a configuration must not push "move" out
        bar = self.table.verticalScrollBar()
        room = self.table.width() - 2 * self.table.frameWidth() - max(bar.sizeHint().width(), 12)
        self.table.setColumnWidth(COL_LABEL, max(LABEL_MIN, room - used))

    def resizeEvent(self, ev):
        super().resizeEvent(ev)
        self._fit_columns()

    def details_text(self, i: int) -> str:
        """Branch ``i`` in one or two lines: verdict with every violation, family, singularity figures, moves,
        distance and joint values (the CLI's numbers)."""
        st = self.state
        chain = st.chain
        b = st.branches[i]
        info = st.branch_info(i)
        row = st.branch_rows()[i]
        parts = [f"Branch {i + 1}"]
        if not b.reaches:
            parts.append(words.miss_words(chain, b, bool(getattr(st.ik, "position_only", False))))
        if b.within_limits:
            parts.append("every joint within its limits")
        else:
            parts.append("BEYOND LIMITS: " + "; ".join(words.violations_words(chain, b.violations)))
        if b.family is not None:
            parts.append(report.family_words(chain, b.family))
        parts.append(f"manipulability {words.manipulability_text(chain, b.manipulability)}, condition "
                     f"{report.condition_text(info.condition)} ({info.words})")
        parts.append(f"largest move from here: {words.largest_move(chain, st.q, b.q)}")
        if b.distance_parts is not None:
            parts.append(f"distance from the pose it was solved at: {report.distance_text(chain, b)}")
        parts.append(f"joints [{joint_units(chain)}]: {row.joints}")
        return " · ".join(parts) + "."

    def _details_style(self, sheet: str) -> None:
        """Restyle the details only when their colour changes (a style sheet re-polishes the label: on every
        joint change it cost more than the text)."""
        if self.details.styleSheet() != sheet:
            self.details.setStyleSheet(sheet)

    def _show_details(self) -> None:
        st = self.state
        tip = "move the arm to the selected branch (Enter in the list does the same)"
        if 0 <= st.selected < len(st.branches):
            b = st.branches[st.selected]
            tip = f"move the arm to branch {st.selected + 1}"
            if not b.within_limits:
                tip += " — BEYOND joint limits: " + "; ".join(words.violations_words(st.chain, b.violations))
            if not b.reaches:
                tip += " — it does not reach the target"
        self.apply_button.setToolTip(tip)
        i = st.hovered if st.hovered >= 0 else st.selected
        if 0 <= i < len(st.branches):
            self.details.setText(self.details_text(i))
            b = st.branches[i]
            bad = not (b.within_limits and b.reaches)
            self._details_style(f"color: {palette.AT}" if bad else "")
        elif st.branches:
            self.details.setText("Hover or select a branch to see it in full and as a ghost; "
                                 "Enter, double-click or 'Apply branch' moves the arm there; Ctrl+C copies its "
                                 "joint values.")
            self._details_style(f"color: {palette.MUTED}")
        else:
            self.details.setText("")

    def _from_selection(self) -> None:
        rows = self.table.selectionModel().selectedRows()
        i = self.model.branch_of(rows[0]) if rows else -1
        self.state.select_branch(i, writer=self)
        self.apply_button.setEnabled(self.state.selected >= 0)
        self.copy_button.setEnabled(self.state.selected >= 0)

    def _select_in_view(self) -> None:
        """Show the state's selection in the list (opening its configuration when it is a variant)."""
        st = self.state
        sm = self.table.selectionModel()
        with QSignalBlocker(sm):
            sm.clearSelection()
            index = self.model.index_of(st.selected) if st.selected >= 0 else None
            if index is not None and index.isValid():
                if index.parent().isValid():
                    self.table.expand(index.parent())
                flags = QItemSelectionModel.SelectionFlag.ClearAndSelect | QItemSelectionModel.SelectionFlag.Rows
                sm.setCurrentIndex(index, flags)
                self.table.scrollTo(index)
        self.table.viewport().update()

    def select_branch(self, i: int) -> bool:
        """Select branch ``i`` as a click on its row would (tests, keyboard scripts); False when it is not shown."""
        index = self.model.index_of(i)
        if not index.isValid():
            return False
        if index.parent().isValid():
            self.table.expand(index.parent())
        flags = QItemSelectionModel.SelectionFlag.ClearAndSelect | QItemSelectionModel.SelectionFlag.Rows
        self.table.selectionModel().setCurrentIndex(index, flags)
        return True

    def copy_selected(self) -> str:
        """Copy the selected (or hovered) branch's joint values as one line; returns the line ("" for none)."""
        st = self.state
        i = st.selected if st.selected >= 0 else st.hovered
        if not 0 <= i < len(st.branches):
            return ""
        line = st.branch_rows()[i].copy
        QGuiApplication.clipboard().setText(line)
        self.last_copied = line
        return line

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
        if obj is self.table and ev.type() == QEvent.Type.KeyPress:
            if ev.key() in (Qt.Key.Key_Return, Qt.Key.Key_Enter):
                self.apply_selected()
                return True
            if ev.matches(QKeySequence.StandardKey.Copy):
                self.copy_selected()
                return True
        return super().eventFilter(obj, ev)

    def _on_state(self, field: str) -> None:
        st = self.state
        if field == "arm":
            self._units()
            self.model.headerDataChanged.emit(Qt.Orientation.Horizontal, 0, self.model.columnCount() - 1)
            self._fill_table()
        elif field == "target":
            if st.writer is not self:
                self._target_to_fields(st.target)
            self._show_summary()
        elif field == "ik":
            self._fill_table()
        elif field == "selected":
            if st.writer is not self:
                self._select_in_view()
            self.apply_button.setEnabled(st.selected >= 0)
            self.copy_button.setEnabled(st.selected >= 0)
            self._show_details()
        elif field == "hovered":
            self.model.set_hovered(st.hovered)
            self._show_details()
        elif field == "q" and st.branches:
            self.model.moves_changed()
            self._show_details()
        elif field == "options":
            on = bool(st.option("ghosts_within_limits_only"))
            if self.within_only.isChecked() != on:
                with QSignalBlocker(self.within_only):
                    self.within_only.setChecked(on)
            if on != self._filtered:
                self._fill_table()
