"""The arm editor: the arm's rows in a table plus its name, units, convention, base and tool.

Every edit is validated at once with the arm-file loader's own checks
(:func:`poser.armfile.validate`); a valid arm goes to the shared state (the 3D
view follows live), an invalid one is refused with the loader's messages, the
cell (or field) at fault is highlighted, the state records the problems
(:meth:`PoseState.set_unapplied`: the window is dirty and Save refuses) and
the arm in the state stays as it was.  Names are kept exactly as typed.

Switching the DH convention asks whether to convert the table
(:func:`poser.armfile.convert_convention`: the same physical arm and tool
pose, other numbers) or keep the numbers (read in the other convention: another
arm); the column headers follow (``a(i−1)``, ``alpha(i−1)`` in the modified
convention).
"""

from __future__ import annotations

import math

from PySide6.QtCore import QEvent, QItemSelectionModel, QSignalBlocker, Qt
from PySide6.QtGui import QAction, QBrush, QColor, QKeySequence, QPalette, QPen
from PySide6.QtWidgets import (
    QAbstractItemView,
    QApplication,
    QComboBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QStyle,
    QStyledItemDelegate,
    QStyleOptionViewItem,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from poser.armfile import ArmFileError, ArmSpec, JointSpec, Problem, convert_convention, validate
from poser.core.dh import CONVENTIONS
from poser.core.errors import PoserError
from poser.core.units import ANGLE_UNITS, LENGTH_UNITS, Units
from poser.text import name_key, printable
from poser.ui import palette
from poser.ui.questions import Asker
from poser.ui.state import PoseState
from poser.ui.tables import CompactTable

KEYS = ("name", "type", "a", "alpha", "d", "theta", "min", "max", "home")
TYPES = ("revolute", "prismatic")
HOME_RULE = "blank home: 0, or the middle of the range when 0 is outside it"
"""What a blank home cell means (the arm file's rule, docs/arm-file.md)."""
BAD_CELL = "#F2B8B8"
"""Fill of the cell (or field) at fault."""
BAD_ROW = "#FBE9E9"
"""Faint fill of the other cells of its row."""
CONVENTION_CHOICES = (
    ("convert", "&Convert the table (same arm)"),
    ("keep", "&Keep the numbers (another arm)"),
    ("cancel", "Cancel"),
)


def new_joint_name(names, position: int) -> str:
    """A name for a joint added at ``position`` (1-based): ``"J3"``, or ``"J3 new"``/``"J3 new 2"`` when taken
    (compared as :func:`poser.text.name_key` compares names)."""
    taken = {name_key(n) for n in names}
    base = f"J{position}"
    if name_key(base) not in taken:
        return base
    k = 1
    while True:
        cand = f"{base} new" if k == 1 else f"{base} new {k}"
        if name_key(cand) not in taken:
            return cand
        k += 1


def find_problems(spec: ArmSpec, file: str) -> list[tuple[Problem, tuple | None]]:
    """Every problem of ``spec`` with the key path it is about (``("joint", 2, "min")``, ``("name",)``, …).

    :func:`poser.armfile.validate` reports the path through its ``lines`` callback; the path is kept here
    (and no line number, an edited arm has none).
    """
    paths: list = []

    def where(path):
        paths.append(path)
        return len(paths)  # a token, read back below

    out = []
    for p in validate(spec, file, lines=where):
        path = paths[p.line - 1] if p.line else None
        out.append((Problem(p.message, p.file, None, p.joint), path))
    return out


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


class CellDelegate(QStyledItemDelegate):
    """Edits a cell and tells the panel which editor is open, so that text typed but not yet applied is applied
    before anything could act on the arm without it (a save, a menu, closing the window: see
    :meth:`EditorPanel.apply_typing`)."""

    def __init__(self, panel, parent=None):
        super().__init__(parent)
        self.panel = panel

    def createEditor(self, parent, option, index):
        editor = self._make(parent, option, index)
        self.panel._editor_opened(self, editor)
        return editor

    def _make(self, parent, option, index):
        return super().createEditor(parent, option, index)

    def initStyleOption(self, option, index):  # noqa: N802 - Qt's name
        """A name is shown as every other part of the window shows it (control characters, bidirectional
        overrides and blank letters as escapes); its editor holds the name exactly, to edit."""
        super().initStyleOption(option, index)
        if index.column() == KEYS.index("name"):
            option.text = printable(option.text)

    def paint(self, painter, option, index):
        """A cell at fault keeps its fill and gets a frame even in the selected row (the selection colour
        would hide it: the row of the cell just edited is the selected one)."""
        if (index.row(), index.column()) not in self.panel.bad_cells:
            super().paint(painter, option, index)
            return
        opt = QStyleOptionViewItem(option)
        self.initStyleOption(opt, index)
        opt.state &= ~QStyle.StateFlag.State_Selected
        opt.backgroundBrush = QBrush(QColor(BAD_CELL))
        opt.palette.setColor(QPalette.ColorRole.Text, QColor(palette.TEXT))
        widget = opt.widget
        style = widget.style() if widget is not None else QApplication.style()
        style.drawControl(QStyle.ControlElement.CE_ItemViewItem, opt, painter, widget)
        painter.save()
        painter.setPen(QPen(QColor(palette.AT), 2))
        painter.drawRect(opt.rect.adjusted(1, 1, -1, -1))
        painter.restore()

    def destroyEditor(self, editor, index):
        self.panel._editor_closed(editor)
        super().destroyEditor(editor, index)


class TypeDelegate(CellDelegate):
    """Edits the type column with a list of the two joint types (a cell widget per row cost a 32-joint arm
    tens of milliseconds to load)."""

    def _make(self, parent, option, index):
        combo = QComboBox(parent)
        combo.addItems(TYPES)
        combo.activated.connect(lambda _i, c=combo: self.commitData.emit(c))
        return combo

    def setEditorData(self, editor, index):
        editor.setCurrentText(index.data() or "revolute")
        editor.showPopup()

    def setModelData(self, editor, model, index):
        model.setData(index, editor.currentText())


class EditorPanel(QWidget):
    """Reads the arm from the state and writes a new, valid arm back; never writes an invalid one."""

    def __init__(self, state: PoseState, parent=None):
        super().__init__(parent)
        self.state = state
        self.problems: list = []
        self.bad_cells: dict = {}
        self._painted: dict = {}  # (row, column) → fill shown
        self._painted_tips: dict = {}
        self._painted_rows = -1
        self.last_conversion: ArmSpec | None = None
        self.ask = Asker(self, True, [])  # the main window puts its own (which answers from a queue in tests)
        self._tables: list = []  # the loaded document's table of each row (keeps comments on save)
        self._applied: list = []  # the tables of the arm last handed to the state, in its joint order
        self._loading = False
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        form = QFormLayout()
        self.name = QLineEdit()
        self.name.setAccessibleName("arm name")
        self.name.setToolTip("the arm's name, kept exactly as typed")
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

        self.table = CompactTable(0, len(KEYS))
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        hh = self.table.horizontalHeader()
        hh.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        hh.setSectionResizeMode(0, QHeaderView.ResizeMode.Stretch)
        self.table.verticalHeader().setDefaultSectionSize(26)
        self.table.setAccessibleName("arm rows")
        self._open_editor = None  # (delegate, editor widget) while a cell is being edited
        self.cell_delegate = CellDelegate(self, self.table)
        self.table.setItemDelegate(self.cell_delegate)
        self.type_delegate = TypeDelegate(self, self.table)
        self.table.setItemDelegateForColumn(KEYS.index("type"), self.type_delegate)
        self.limits_note = QLabel()
        self.limits_note.setWordWrap(True)
        self.limits_note.setStyleSheet(f"color: {palette.MUTED}")
        lay.addWidget(self.table, 1)
        lay.addWidget(self.limits_note)
        lay.addWidget(self.message)  # below the rows: a message growing to more lines never moves a row
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
        for c in (self.length, self.angle):
            c.currentIndexChanged.connect(lambda *_: self.edited())
        self.convention.currentIndexChanged.connect(lambda *_: self._convention_changed())
        state.changed.connect(self._on_state)
        self.load_from_state()

    # -- state → widgets ------------------------------------------------------------------
    def load_from_state(self) -> None:
        self._load_spec(self.state.spec)
        self._applied = list(self._tables)
        self._show_problems([])
        self.state.set_unapplied([], writer=self)

    def _load_spec(self, spec: ArmSpec) -> None:
        """Fill the widgets from ``spec`` (nothing is checked or applied)."""
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
            del blockers
        finally:
            self._loading = False
        self._headers()

    def _headers(self) -> None:
        L, A = self.length.currentText(), self.angle.currentText()
        modified = self.convention.currentText() == "modified"
        a, alpha = ("a(i−1)", "alpha(i−1)") if modified else ("a", "alpha")
        self.table.setHorizontalHeaderLabels(
            ["name", "type", f"{a} ({L})", f"{alpha} ({A})", f"d ({L})", f"theta ({A})", "min", "max", "home"]
        )
        for lab, text in zip(self.place_labels, (f"xyz ({L})", f"rpy ({A})", f"xyz ({L})", f"rpy ({A})")):
            lab.setText(text)
        if modified:
            a_tip = f"link length a(i−1), {L}: along x(i−1), from z(i−1) to z(i) (modified DH: before the joint)"
            alpha_tip = f"link twist alpha(i−1), {A}: about x(i−1), from z(i−1) to z(i) (modified DH: before the joint)"
        else:
            a_tip = f"link length a(i), {L}: along x(i), from z(i−1) to z(i) (standard DH: after the joint)"
            alpha_tip = f"link twist alpha(i), {A}: about x(i), from z(i−1) to z(i) (standard DH: after the joint)"
        tips = ["joint name (unique; kept exactly as typed)",
                "revolute (rotary: turns) or prismatic (linear: slides); double-click or F2 to choose",
                a_tip, alpha_tip, f"link offset d, {L}: along the joint axis", f"joint angle offset theta, {A}",
                f"lower limit: {A} for revolute, {L} for prismatic joints",
                f"upper limit: {A} for revolute, {L} for prismatic joints",
                f"home value ({HOME_RULE})"]
        for c, tip in enumerate(tips):
            self.table.horizontalHeaderItem(c).setToolTip(tip)
        self.limits_note.setText(f"min, max, home: {A} for revolute, {L} for prismatic joints; {HOME_RULE}.")

    def _append_row(self, j: JointSpec, at: int | None = None) -> None:
        r = self.table.rowCount() if at is None else at
        with QSignalBlocker(self.table):
            self.table.insertRow(r)
            for c, key in enumerate(KEYS):
                if key in ("name", "type"):  # the type is a plain cell; TypeDelegate edits it with a list
                    text = j.name if key == "name" else (j.type if j.type in TYPES else "revolute")
                    self.table.setItem(r, c, QTableWidgetItem(text))
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
        self.table.item(row, KEYS.index(key)).setText(text)

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
                    vals[key] = text  # exactly as typed: the file layer says what is wrong with a name
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
        found = find_problems(spec, file)
        if not found:
            try:
                self.state.set_arm(spec, dirty=True, writer=self)
                self._applied = [j._table for j in spec.joints]
            except (ArmFileError, PoserError, ValueError) as exc:
                found = [(p, None) for p in (getattr(exc, "problems", None) or [Problem(str(exc), file)])]
        self._show_problems(found)
        self.state.set_unapplied([p for p, _ in found], writer=self)
        return not found

    def _fields(self) -> dict:
        return {("name",): self.name, ("base", "xyz"): self.base_xyz, ("base", "rpy"): self.base_rpy,
                ("tool", "xyz"): self.tool_xyz, ("tool", "rpy"): self.tool_rpy}

    def _cell_of(self, problem, path) -> tuple[int, int] | None:
        """(row, column) of the table cell a problem is about, or None."""
        if path and path[0] == "joint" and len(path) >= 2 and isinstance(path[1], int):
            row = path[1]
            key = path[2] if len(path) >= 3 else problem.message.split(" ", 1)[0]  # "min is missing; …"
            return row, (KEYS.index(key) if key in KEYS else 0)
        if problem.joint is not None and problem.joint.startswith("#") and problem.joint[1:].isdigit():
            return int(problem.joint[1:]) - 1, 0
        return None

    def _show_problems(self, found) -> None:
        """Show ``found`` ((problem, path) pairs): the cell or field at fault filled, its row faintly, the
        messages below the fields."""
        self.problems = [p for p, _ in found]
        self.bad_cells: dict = {}
        bad_fields = {}
        for p, path in found:
            cell = self._cell_of(p, path)
            if cell is not None:
                self.bad_cells.setdefault(cell, []).append(p.message)
            elif path in self._fields():
                bad_fields.setdefault(path, []).append(p.message)
        bad_rows = {r for r, _ in self.bad_cells}
        fills = {}
        for r in bad_rows:
            for c in range(len(KEYS)):
                fills[(r, c)] = BAD_CELL if (r, c) in self.bad_cells else BAD_ROW
        # only the cells whose fill or message changes are touched (a 32-row table has 288 cells)
        rows = self.table.rowCount()
        full = rows != self._painted_rows
        every = {(r, c) for r in range(rows) for c in range(len(KEYS))}
        touched = every if full else set(fills) | set(self._painted)
        with QSignalBlocker(self.table):
            for r, c in touched:
                item = self.table.item(r, c)
                if item is None:
                    continue
                fill = fills.get((r, c))
                messages = self.bad_cells.get((r, c))
                if not full and fill == self._painted.get((r, c)) and messages == self._painted_tips.get((r, c)):
                    continue
                item.setBackground(QColor(fill) if fill else QColor(0, 0, 0, 0))
                exact = item.data(EXACT)
                base_tip = _exact(exact) if exact is not None else ""
                item.setToolTip("\n".join(messages) if messages else base_tip)
        self._painted = fills
        self._painted_tips = dict(self.bad_cells)
        self._painted_rows = rows
        for path, w in self._fields().items():
            messages = bad_fields.get(path)
            w.setStyleSheet(f"background: {BAD_CELL}" if messages else "")
            if messages:
                w.setToolTip("\n".join(messages))
            elif w is not self.name:
                w.setToolTip(w.accessibleName() + ": three numbers separated by commas")
            else:
                w.setToolTip("the arm's name, kept exactly as typed")
        if self.problems:
            text = "Not applied — the arm stays as it was until this is fixed (Save refuses meanwhile):\n" + \
                "\n".join(f"• {p}" for p in self.problems)
            self.message.setStyleSheet(f"color: {palette.AT}")
        else:
            text = "The arm is valid; the view shows it."
            self.message.setStyleSheet(f"color: {palette.OK}")
        self.message.setText(text)

    def first_problem_widget(self):
        """The cell (as the table, with it current) or field of the first problem, focused; None when none."""
        for (r, c) in self.bad_cells:
            self.table.clearSelection()  # a selected row would hide the cell's fill
            item = self.table.item(r, c)
            self.table.setFocus()
            if item is not None:
                self.table.selectionModel().setCurrentIndex(
                    self.table.indexFromItem(item), QItemSelectionModel.SelectionFlag.NoUpdate)
                self.table.editItem(item)  # ready to type the fix
            else:
                self.table.setCurrentCell(r, c)
            return self.table
        for w in self._fields().values():
            if w.styleSheet():
                w.setFocus()
                return w
        return None

    # -- text typed into a cell, not yet applied -----------------------------------------------------------
    def _editor_opened(self, delegate, editor) -> None:
        self._open_editor = (delegate, editor)
        app = QApplication.instance()
        if app is not None:
            app.installEventFilter(self)
        window = self.window()
        if window is not None:
            window.installEventFilter(self)

    def _editor_closed(self, editor) -> None:
        if self._open_editor is not None and self._open_editor[1] is editor:
            self._open_editor = None
            app = QApplication.instance()
            if app is not None:
                app.removeEventFilter(self)

    def apply_typing(self) -> bool:
        """Apply the text of the cell being edited, as Enter would (the editor stays open).

        Called before anything that acts on the arm can see it without that text: a click anywhere else
        (a menu, a button, another panel), a shortcut of the window (Ctrl+S saves what the cell shows, not
        the value before it) and closing the window (which then asks about the unsaved edit).  True when
        an editor was open.
        """
        if self._open_editor is None:
            return False
        delegate, editor = self._open_editor
        try:
            delegate.commitData.emit(editor)
        except RuntimeError:  # the editor widget is gone already
            self._open_editor = None
            return False
        return True

    def _is_shortcut(self, ev) -> bool:
        window = self.window()
        plain = Qt.KeyboardModifier.ShiftModifier | Qt.KeyboardModifier.KeypadModifier
        function_key = Qt.Key.Key_F1 <= ev.key() <= Qt.Key.Key_F35
        if window is None or not (ev.modifiers() & ~plain or function_key):  # typing is no shortcut
            return False
        seq = QKeySequence(ev.keyCombination())
        return any(seq in a.shortcuts() for a in window.findChildren(QAction) if a.isEnabled())

    def eventFilter(self, obj, ev):  # noqa: N802 - Qt's name
        if self._open_editor is not None:
            kind = ev.type()
            editor = self._open_editor[1]
            try:
                if kind == QEvent.Type.MouseButtonPress and isinstance(obj, QWidget):
                    if obj is not editor and not editor.isAncestorOf(obj):
                        self.apply_typing()
                elif kind == QEvent.Type.ShortcutOverride and (obj is editor or editor.isAncestorOf(obj)):
                    if self._is_shortcut(ev):
                        self.apply_typing()
                elif kind == QEvent.Type.Close and obj is self.window():
                    self.apply_typing()
            except RuntimeError:  # the editor widget was deleted under us
                self._open_editor = None
        return False

    # -- convention ----------------------------------------------------------------------------------------
    def _convention_changed(self) -> None:
        """Ask whether to convert the table to the new convention or to read its numbers in it."""
        if self._loading:
            return
        new = self.convention.currentText()
        old = "modified" if new == "standard" else "standard"
        spec = self.candidate()
        spec.convention = old
        file = self.state.path.name if self.state.path else "<arm>"
        valid = not validate(spec, file)
        if valid:
            choice = self.ask(
                "Switch DH convention",
                f"Convert the table from the {old} to the {new} convention?",
                "Convert: the rows' a and alpha move by one row (and into the base or tool), so the arm and its "
                "tool pose stay the same for every joint value.\nKeep the numbers: the same numbers are read in "
                f"the {new} convention — that describes another arm.",
                CONVENTION_CHOICES, "convert")
        else:
            choice = self.ask(
                "Switch DH convention",
                f"The table cannot be converted while it has a problem; its numbers will be read in the {new} "
                "convention (another arm).",
                "Fix the problem first to convert instead.",
                (("keep", "&Keep the numbers"), ("cancel", "Cancel")), "cancel")
        if choice == "cancel":
            with QSignalBlocker(self.convention):
                self.convention.setCurrentText(old)
            self._headers()
            return
        if choice == "convert":
            converted = convert_convention(spec, new)
            self._load_spec(converted)
            self.last_conversion = converted
            self.edited()
            if not self.problems:
                self.message.setText(f"Converted to the {new} convention: the same arm and tool pose "
                                     "(a and alpha moved by one row; see base and tool).")
            return
        self.edited()
        if not self.problems:
            self.message.setText(f"The numbers are now read in the {new} convention: this is another arm "
                                 "(switch back to get the old one).")
            self.message.setStyleSheet(f"color: {palette.NEAR}")

    # -- row operations -------------------------------------------------------------------------
    def _selected_row(self) -> int:
        rows = {i.row() for i in self.table.selectedIndexes()}
        return min(rows) if rows else self.table.currentRow()

    def add_joint(self) -> None:
        r = self._selected_row()
        at = self.table.rowCount() if r < 0 else r + 1
        names = [self.cell(k, "name") for k in range(self.table.rowCount())]
        angle = self.angle.currentText()
        lim = 180 if angle == "deg" else math.pi  # half a turn either way, in the arm's angle unit (exact)
        self._append_row(JointSpec(name=new_joint_name(names, at + 1), type="revolute", min=-lim, max=lim), at)
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
        if field == "spec" and self.state.writer is not self:  # opened, reloaded, restored: not our edit
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
