"""The arm editor: the arm's rows in a table plus its name, units, convention, base and tool.

Every edit is validated at once with the arm-file loader's own checks
(:func:`poser.armfile.validate`); a valid arm goes to the shared state (the 3D
view follows live), an invalid one is refused with the loader's messages and
the arm in the state stays as it was.
"""

from __future__ import annotations

from PySide6.QtCore import QSignalBlocker, Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from poser.armfile import ArmFileError, ArmSpec, JointSpec, validate
from poser.core.dh import CONVENTIONS
from poser.core.errors import PoserError
from poser.core.units import ANGLE_UNITS, LENGTH_UNITS, Units
from poser.ui import palette
from poser.ui.state import PoseState
from poser.ui.tables import CompactTable

KEYS = ("name", "type", "a", "alpha", "d", "theta", "min", "max", "home")
TYPES = ("revolute", "prismatic")


def parse_number(text: str, blank):
    """A cell's text as a float; ``blank`` for an empty cell; the text itself when it is not a number
    (so the loader's check reports it in its own words)."""
    t = str(text).strip()
    if not t:
        return blank
    try:
        v = float(t)
    except ValueError:
        return t
    return int(v) if v.is_integer() and abs(v) < 1e15 and "." not in t and "e" not in t.lower() else v


def parse_vector(text: str) -> tuple:
    """``"0, 0, 300"`` → (0, 0, 300); unparsable parts stay text for the loader's message."""
    parts = [p for p in str(text).replace(";", ",").split(",")]
    if len(parts) == 1 and not parts[0].strip():
        return (0.0, 0.0, 0.0)
    return tuple(parse_number(p, p) for p in parts)


def _exact(v) -> str:
    """A number as text that reads back to the same value (``:g`` keeps six digits: editing any other
    cell would then quietly round every row, and saving would write the rounded values)."""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return str(v)
    if isinstance(v, int) or (v.is_integer() and abs(v) < 1e15):
        return str(int(v))
    return repr(float(v))


def _vec_text(v) -> str:
    return ", ".join(_exact(x) for x in v)


def _num_text(v) -> str:
    """A cell's text: short (six digits, so the table stays narrow); the exact value rides along in the
    cell (:data:`EXACT`) and is used for as long as the text is left as shown."""
    if v is None:
        return ""
    return f"{v:g}" if isinstance(v, (int, float)) and not isinstance(v, bool) else str(v)


EXACT = Qt.ItemDataRole.UserRole
"""Where a table cell keeps the exact number it shows rounded."""


class EditorPanel(QWidget):
    """Reads the arm from the state and writes a new, valid arm back; never writes an invalid one."""

    def __init__(self, state: PoseState, parent=None):
        super().__init__(parent)
        self.state = state
        self.problems: list = []
        self._tables: list = []  # the loaded document's table of each row (keeps comments on save)
        self._applied: list = []  # the tables of the arm last handed to the state, in its joint order
        self._loading = False
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        form = QFormLayout()
        self.name = QLineEdit()
        self.convention = QComboBox()
        self.convention.addItems(list(CONVENTIONS))
        self.convention.setToolTip("standard (distal) or modified (proximal) DH parameters")
        self.length = QComboBox()
        self.length.addItems(list(LENGTH_UNITS))
        self.angle = QComboBox()
        self.angle.addItems(list(ANGLE_UNITS))
        units_row = QHBoxLayout()
        for text, w in (("length", self.length), ("angle", self.angle)):
            lab = QLabel(text)
            lab.setBuddy(w)
            units_row.addWidget(lab)
            units_row.addWidget(w)
        units_row.addSpacing(12)
        dh_label = QLabel("DH &convention")
        dh_label.setBuddy(self.convention)
        units_row.addWidget(dh_label)
        units_row.addWidget(self.convention)
        units_row.addStretch(1)
        self.length.setAccessibleName("length unit")
        self.angle.setAccessibleName("angle unit")
        self.convention.setAccessibleName("DH convention")
        self.base_xyz, self.base_rpy, self.tool_xyz, self.tool_rpy = (QLineEdit() for _ in range(4))
        form.addRow("&Name", self.name)
        form.addRow("Units", units_row)
        self.place_labels = []
        for title, xyz, rpy in (("Base", self.base_xyz, self.base_rpy), ("Tool", self.tool_xyz, self.tool_rpy)):
            place = QHBoxLayout()
            for w in (xyz, rpy):
                lab = QLabel()
                lab.setBuddy(w)
                place.addWidget(lab)
                place.addWidget(w, 1)
                self.place_labels.append(lab)
            form.addRow(title, place)
        for w, what in ((self.base_xyz, "base position in the world"), (self.base_rpy, "base roll, pitch, yaw"),
                        (self.tool_xyz, "tool point from the last joint frame"),
                        (self.tool_rpy, "tool roll, pitch, yaw")):
            w.setToolTip(f"{what}: three numbers separated by commas")
            w.setAccessibleName(what)
        lay.addLayout(form)
        self.message = QLabel()
        self.message.setWordWrap(True)
        self.message.setAccessibleName("editor check result")
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        lay.addWidget(self.message)

        self.table = CompactTable(0, len(KEYS))
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        hh = self.table.horizontalHeader()
        hh.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        hh.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
        self.table.verticalHeader().setDefaultSectionSize(26)
        self.table.setAccessibleName("arm rows")
        self.limits_note = QLabel()
        self.limits_note.setWordWrap(True)
        self.limits_note.setStyleSheet(f"color: {palette.MUTED}")
        lay.addWidget(self.table, 1)
        lay.addWidget(self.limits_note)
        buttons = QHBoxLayout()
        self.add_button = QPushButton("Add joint")
        self.remove_button = QPushButton("Remove joint")
        self.up_button = QPushButton("Move up")
        self.down_button = QPushButton("Move down")
        for b in (self.add_button, self.remove_button, self.up_button, self.down_button):
            buttons.addWidget(b)
        buttons.addStretch(1)
        lay.addLayout(buttons)

        self.add_button.clicked.connect(self.add_joint)
        self.remove_button.clicked.connect(self.remove_joint)
        self.up_button.clicked.connect(lambda: self.move_joint(-1))
        self.down_button.clicked.connect(lambda: self.move_joint(1))
        self.table.cellChanged.connect(lambda *_: self.edited())
        self.name.textEdited.connect(lambda *_: self.edited())
        for w in (self.base_xyz, self.base_rpy, self.tool_xyz, self.tool_rpy):
            w.textEdited.connect(lambda *_: self.edited())
        for c in (self.convention, self.length, self.angle):
            c.currentIndexChanged.connect(lambda *_: self.edited())
        state.changed.connect(self._on_state)
        self.load_from_state()

    # -- state → widgets ------------------------------------------------------------------
    def load_from_state(self) -> None:
        spec = self.state.spec
        self._loading = True
        try:
            blockers = [QSignalBlocker(w) for w in (self.table, self.name, self.convention, self.length, self.angle,
                                                    self.base_xyz, self.base_rpy, self.tool_xyz, self.tool_rpy)]
            self.name.setText(spec.name)
            self.convention.setCurrentText(spec.convention)
            self.length.setCurrentText(spec.units.length)
            self.angle.setCurrentText(spec.units.angle)
            self.base_xyz.setText(_vec_text(spec.base_xyz))
            self.base_rpy.setText(_vec_text(spec.base_rpy))
            self.tool_xyz.setText(_vec_text(spec.tool_xyz))
            self.tool_rpy.setText(_vec_text(spec.tool_rpy))
            self.table.setRowCount(0)
            self._tables = []
            for j in spec.joints:
                self._append_row(j)
            self._applied = list(self._tables)
            del blockers
        finally:
            self._loading = False
        self._headers()
        self._show_problems([])

    def _headers(self) -> None:
        L, A = self.length.currentText(), self.angle.currentText()
        self.table.setHorizontalHeaderLabels(
            ["name", "type", f"a ({L})", f"alpha ({A})", f"d ({L})", f"theta ({A})", "min", "max", "home"]
        )
        for lab, text in zip(self.place_labels, (f"xyz ({L})", f"rpy ({A})", f"xyz ({L})", f"rpy ({A})")):
            lab.setText(text)
        tips = ["joint name (unique)", "revolute (rotary: turns) or prismatic (linear: slides)", f"link length, {L}",
                f"link twist, {A}", f"link offset, {L}", f"joint angle offset, {A}",
                f"lower limit: {A} for revolute, {L} for prismatic joints",
                f"upper limit: {A} for revolute, {L} for prismatic joints",
                "home value (blank: 0, or mid-range when 0 is outside the limits)"]
        for c, tip in enumerate(tips):
            self.table.horizontalHeaderItem(c).setToolTip(tip)
        self.limits_note.setText(f"min, max, home: {A} for revolute, {L} for prismatic joints; blank home: 0")

    def _append_row(self, j: JointSpec, at: int | None = None) -> None:
        r = self.table.rowCount() if at is None else at
        with QSignalBlocker(self.table):
            self.table.insertRow(r)
            for c, key in enumerate(KEYS):
                if key == "type":
                    combo = QComboBox()
                    combo.addItems(TYPES)
                    combo.setCurrentText(j.type if j.type in TYPES else "revolute")
                    combo.currentIndexChanged.connect(lambda *_: self.edited())
                    self.table.setCellWidget(r, c, combo)
                    continue
                if key == "name":
                    self.table.setItem(r, c, QTableWidgetItem(j.name))
                    continue
                value = getattr(j, key)
                item = QTableWidgetItem(_num_text(value))
                if isinstance(value, (int, float)) and not isinstance(value, bool):
                    item.setData(EXACT, value)
                    item.setToolTip(_exact(value))
                self.table.setItem(r, c, item)
        self._tables.insert(r, j._table)

    # -- widgets → candidate arm ---------------------------------------------------------------
    def cell(self, row: int, key: str) -> str:
        c = KEYS.index(key)
        if key == "type":
            return self.table.cellWidget(row, c).currentText()
        item = self.table.item(row, c)
        return item.text() if item is not None else ""

    def _number(self, row: int, key: str, blank):
        """A numeric cell's value: the exact number behind it while its text is as shown, else the text read."""
        text = self.cell(row, key)
        item = self.table.item(row, KEYS.index(key))
        exact = item.data(EXACT) if item is not None else None
        if exact is not None and text.strip() == _num_text(exact):
            return exact
        return parse_number(text, blank)

    def set_cell(self, row: int, key: str, text: str) -> None:
        """Type ``text`` into a cell (as a user would); validation follows."""
        c = KEYS.index(key)
        if key == "type":
            self.table.cellWidget(row, c).setCurrentText(text)
        else:
            self.table.item(row, c).setText(text)

    def candidate(self) -> ArmSpec:
        """The arm as the widgets describe it now (possibly invalid)."""
        old = self.state.spec
        spec = old.copy()
        spec.name = self.name.text()
        spec.convention = self.convention.currentText()
        spec.units = Units(self.length.currentText(), self.angle.currentText())
        spec.base_xyz = parse_vector(self.base_xyz.text())
        spec.base_rpy = parse_vector(self.base_rpy.text())
        spec.tool_xyz = parse_vector(self.tool_xyz.text())
        spec.tool_rpy = parse_vector(self.tool_rpy.text())
        joints = []
        for r in range(self.table.rowCount()):
            vals = {}
            for key in KEYS:
                text = self.cell(r, key)
                if key in ("name", "type"):
                    vals[key] = text.strip() if key == "name" else text
                else:
                    vals[key] = self._number(r, key, None if key in ("min", "max", "home") else 0.0)
            joints.append(JointSpec(**vals, _table=self._tables[r] if r < len(self._tables) else None))
        spec.joints = joints
        return spec

    def edited(self) -> bool:
        """Check the widgets; hand a valid arm to the state. True when the state took it."""
        if self._loading:
            return False
        self._headers()
        spec = self.candidate()
        file = self.state.path.name if self.state.path else "<arm>"
        problems = validate(spec, file)
        if not problems:
            try:
                self.state.set_arm(spec, dirty=True, writer=self)
                self._applied = [j._table for j in spec.joints]
            except (ArmFileError, PoserError, ValueError) as exc:
                problems = getattr(exc, "problems", None) or [str(exc)]
        self._show_problems(problems)
        return not problems

    def _show_problems(self, problems) -> None:
        self.problems = list(problems)
        bad_rows = set()
        names = [self.cell(r, "name").strip() for r in range(self.table.rowCount())]
        for p in self.problems:
            j = getattr(p, "joint", None)
            if j is None:
                continue
            if j in names:
                bad_rows.add(names.index(j))
            elif j.startswith("#") and j[1:].isdigit():
                bad_rows.add(int(j[1:]) - 1)
        with QSignalBlocker(self.table):
            for r in range(self.table.rowCount()):
                for c in range(len(KEYS)):
                    item = self.table.item(r, c)
                    if item is not None:
                        item.setBackground(QColor("#F6D5D5") if r in bad_rows else QColor(0, 0, 0, 0))
        if self.problems:
            text = "Not applied — the arm stays as it was until this is fixed:\n" + "\n".join(
                f"• {p}" for p in self.problems)
            self.message.setStyleSheet(f"color: {palette.AT}")
        else:
            text = "The arm is valid; the view shows it."
            self.message.setStyleSheet(f"color: {palette.OK}")
        self.message.setText(text)

    # -- row operations -------------------------------------------------------------------------
    def _selected_row(self) -> int:
        rows = {i.row() for i in self.table.selectedIndexes()}
        return min(rows) if rows else self.table.currentRow()

    def add_joint(self) -> None:
        r = self._selected_row()
        at = self.table.rowCount() if r < 0 else r + 1
        names = {self.cell(k, "name") for k in range(self.table.rowCount())}
        k = self.table.rowCount() + 1
        while f"J{k}" in names:
            k += 1
        angle = self.angle.currentText()
        lim = 180.0 if angle == "deg" else 3.14159
        self._append_row(JointSpec(name=f"J{k}", type="revolute", min=-lim, max=lim), at)
        self.table.selectRow(at)
        self.edited()

    def remove_joint(self) -> None:
        r = self._selected_row()
        if r < 0 or self.table.rowCount() == 0:
            return
        with QSignalBlocker(self.table):
            self.table.removeRow(r)
        del self._tables[r]
        self.edited()

    def move_joint(self, delta: int) -> None:
        r = self._selected_row()
        to = r + delta
        if r < 0 or not 0 <= to < self.table.rowCount():
            return
        joints = self.candidate().joints
        joints[r], joints[to] = joints[to], joints[r]
        lo = min(r, to)
        with QSignalBlocker(self.table):
            self.table.removeRow(lo + 1)
            self.table.removeRow(lo)
        del self._tables[lo : lo + 2]
        self._append_row(joints[lo], lo)
        self._append_row(joints[lo + 1], lo + 1)
        self.table.selectRow(to)
        self.edited()

    def _on_state(self, field: str) -> None:
        if field == "arm" and self.state.writer is not self:
            self.load_from_state()
        elif field == "document" and self.state.writer is not self:  # a save (not one of our own edits)
            self._follow_saved_tables()

    def _follow_saved_tables(self) -> None:
        """After a save the arm refers to the written document's tables: the rows must too.

        Otherwise the next save meets tables that are not in its document, takes every joint for a new
        one and adds blank lines around each, more on every save.
        """
        new = [j._table for j in self.state.spec.joints]
        if len(new) != len(self._applied):
            return
        swap = {id(old): t for old, t in zip(self._applied, new) if old is not None}
        self._tables = [swap.get(id(t), t) for t in self._tables]
        self._applied = new
