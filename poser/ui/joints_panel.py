"""The joint panel: one row per joint (name, type, slider, value box, limits, margin bar, words).

A value box keeps the digits typed (:data:`DECIMALS`: at least 4 for deg and mm, 6 for m and rad) and
applies what is typed on Enter, on leaving the box, or after a pause of :data:`PAUSE_MS` — never the
partial values on the way (typing 125 does not move the joint to 1 and 12 first).
"""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QEvent, QRectF, QSignalBlocker, Qt, QTimer
from PySide6.QtGui import QColor, QPainter, QPalette, QPen
from PySide6.QtWidgets import (
    QAbstractSpinBox,
    QDoubleSpinBox,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSizePolicy,
    QSlider,
    QVBoxLayout,
    QWidget,
)

from poser.report import printable
from poser.ui import palette
from poser.ui.state import PoseState
from poser.ui.words import LimitState, fmt, kind_words

SLIDER_STEPS = 2000
DECIMALS = {"deg": 4, "mm": 4, "in": 5, "m": 6, "rad": 6}
"""Decimals a joint value box keeps, by unit (a ten-thousandth of a degree or millimetre, a micrometre)."""
PAUSE_MS = 700
"""A typed joint value is applied after this long without a keystroke (or at once on Enter)."""
TINTS = {"near": "#FBEFCF", "at": "#F8D7D7", "beyond": "#F8D7D7"}
"""Light fills of a value box near or at a limit (the words beside it say the same)."""


def spin_bound(lower: float, upper: float) -> float:
    """The largest size a joint's value box takes: the power of ten above ten times the joint's largest number."""
    import math

    biggest = max(abs(lower), abs(upper), upper - lower, 1e-3)
    return 10.0 ** math.ceil(math.log10(biggest * 10.0))


class MarginBar(QWidget):
    """The joint's range as a bar: amber ends within the margin, red end marks, a marker at the value."""

    def __init__(self, parent=None):
        super().__init__(parent)
        self.setMinimumSize(80, 14)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)
        self.position = 0.5  # of the range, 0 = lower limit
        self.margin = 0.05
        self.level = "ok"

    def set_value(self, position: float, margin: float, state: LimitState) -> None:
        self.position, self.margin, self.level = float(position), float(margin), state.level
        self.setToolTip(state.words)
        self.setAccessibleDescription(state.words)
        self.update()

    def paintEvent(self, ev):
        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing)
        w, h = self.width() - 8, self.height()
        x0, y0, bh = 4.0, h / 2 - 4, 8.0
        p.setPen(Qt.PenStyle.NoPen)
        p.setBrush(QColor("#DDDAD0"))
        p.drawRect(QRectF(x0, y0, w, bh))
        m = self.margin * w
        p.setBrush(QColor(palette.NEAR))
        p.drawRect(QRectF(x0, y0, m, bh))
        p.drawRect(QRectF(x0 + w - m, y0, m, bh))
        p.setBrush(QColor(palette.AT))
        p.drawRect(QRectF(x0 - 3, y0 - 3, 3, bh + 6))
        p.drawRect(QRectF(x0 + w, y0 - 3, 3, bh + 6))
        x = x0 + min(max(self.position, 0.0), 1.0) * w
        colour = QColor(palette.LEVEL_COLOURS[self.level] if self.level != "ok" else palette.TEXT)
        p.setPen(QPen(colour, 3))
        p.drawLine(int(x), 1, int(x), h - 1)
        p.end()


class JointRow:
    """The widgets of one joint (kept together so tests and the panel can reach them)."""

    def __init__(self, panel: JointPanel, i: int):
        self.i = i
        self.name = QLabel()
        self.name.setMinimumWidth(80)
        self.name.setStyleSheet("font-weight: bold")
        self.kind = QLabel()
        self.kind.setStyleSheet(f"color: {palette.MUTED}")
        self.slider = QSlider(Qt.Orientation.Horizontal)
        self.slider.setRange(0, SLIDER_STEPS)
        self.slider.setMinimumWidth(100)
        self.spin = QDoubleSpinBox()
        self.spin.setKeyboardTracking(False)  # typed digits apply on Enter or after a pause, not one by one
        self.spin.setAccelerated(True)
        self.spin.setCorrectionMode(QAbstractSpinBox.CorrectionMode.CorrectToNearestValue)
        self.spin.setMinimumWidth(110)
        self.spin_palette = QPalette(self.spin.palette())
        self.typing = False  # digits typed and not yet applied: nothing from elsewhere overwrites them
        self.limits = QLabel()
        self.bar = MarginBar()
        self.words = QLabel("")
        self.words.setMinimumWidth(150)
        self.level = None
        self.describe(panel.state)

    def describe(self, st: PoseState) -> None:
        """Name, type, unit and limits of joint ``i`` of the state's arm (again after an edit of the arm)."""
        chain = st.chain
        i = self.i
        unit = st.unit_of(i)
        lo, hi = (float(v[i]) for v in st.limits_user)
        self.lower, self.upper = lo, hi
        self.unit = unit
        name = printable(chain.names[i])
        self.name.setText(name)
        short, tip = kind_words(chain.kinds[i], unit)
        self.kind.setText(short)
        self.kind.setToolTip(tip)
        self.slider.setAccessibleName(f"{name} slider")
        self.slider.setToolTip(f"{name}: drag over the range {fmt(lo)} … {fmt(hi)} {unit}")
        with QSignalBlocker(self.spin):
            self.spin.setDecimals(DECIMALS.get(unit, 4))  # before the range: Qt rounds the range to the decimals
            # wide enough for any value a person types (Qt drops a keystroke that would leave the range, so a
            # narrow range turned a typed 456 into 45); beyond the limits the words and colours say so
            bound = spin_bound(lo, hi)
            self.spin.setRange(-bound, bound)
            self.spin.setSuffix(f" {unit}")
        self.spin.setAccessibleName(f"{name} value in {unit}")
        self.spin.setToolTip(f"{name} in {unit}: type a value and press Enter (or pause); Up/Down move it by the "
                             "arrow step")
        self.limits.setText(f"{fmt(lo)} … {fmt(hi)} {unit}")
        self.limits.setToolTip(f"{name}: lower limit … upper limit, {unit}")
        self.limits.setAccessibleName(f"{name} limits")
        self.level = None  # restyle at the next refresh

    def slider_to_value(self, pos: int) -> float:
        return self.lower + (self.upper - self.lower) * pos / SLIDER_STEPS

    def value_to_slider(self, v: float) -> int:
        return int(round((v - self.lower) / (self.upper - self.lower) * SLIDER_STEPS))

    @property
    def widgets(self):
        return (self.name, self.kind, self.slider, self.spin, self.limits, self.bar, self.words)


class JointPanel(QWidget):
    """Observes joint values and limits; writes joint values. Arrow keys nudge the focused joint."""

    def __init__(self, state: PoseState, parent=None):
        super().__init__(parent)
        self.state = state
        self.rows: list[JointRow] = []
        top = QHBoxLayout()
        # no mnemonics: Alt+H opens the Help menu; the Pose menu's Ctrl+H and Ctrl+0 do the same as these
        self.home_button = QPushButton("Home")
        self.home_button.setToolTip("every joint to its home value (Ctrl+H)")
        self.home_button.clicked.connect(lambda: self.state.home(writer=self))
        self.zero_button = QPushButton("Zero")
        self.zero_button.setToolTip("every joint to 0, or to its nearer limit when 0 is outside the range (Ctrl+0)")
        self.zero_button.clicked.connect(lambda: self.state.zero(writer=self))
        top.addWidget(self.home_button)
        top.addWidget(self.zero_button)
        top.addSpacing(10)
        self.margin_spin = QDoubleSpinBox()
        self.margin_spin.setRange(0.0, 45.0)
        self.margin_spin.setDecimals(1)
        self.margin_spin.setSuffix(" %")
        self.margin_spin.setAccessibleName("warning margin in percent of each joint's range")
        self.margin_spin.setValue(100 * state.option("margin"))
        self.margin_spin.setToolTip("a joint turns amber this close to a limit")
        self.margin_spin.valueChanged.connect(lambda v: self.state.set_option("margin", v / 100.0, writer=self))
        self.margin_label = QLabel("&Warn within")
        self.margin_label.setBuddy(self.margin_spin)
        self.margin_label.setToolTip("a joint is marked amber (and 'near … limit') this close to a limit, "
                                     "in percent of its range")
        self.margin_spin.setToolTip(self.margin_label.toolTip())
        top.addWidget(self.margin_label)
        top.addWidget(self.margin_spin)
        top.addSpacing(10)
        self.step_spin = QDoubleSpinBox()  # revolute joints, arm angle unit
        self.step_length_spin = QDoubleSpinBox()  # prismatic joints, arm length unit
        for spin, key in ((self.step_spin, "step"), (self.step_length_spin, "step_length")):
            spin.setRange(0.0001, 1000.0)
            spin.setDecimals(3)
            spin.setValue(state.option(key))
            spin.valueChanged.connect(lambda v, k=key: self.state.set_option(k, v, writer=self))
        self.step_spin.setAccessibleName("arrow-key step of rotary joints")
        self.step_length_spin.setAccessibleName("arrow-key step of linear joints")
        self.step_spin.setToolTip(
            "arrow keys move a focused rotary joint by this much (Shift or Page Up/Down: ten steps)")
        self.step_length_spin.setToolTip(
            "arrow keys move a focused linear joint by this much (Shift or Page Up/Down: ten steps)")
        self.step_label = QLabel("Arrow &step")
        self.step_label.setToolTip("how far one press of an arrow key moves the focused joint (Shift: ten steps)")
        self.step_label.setBuddy(self.step_spin)
        self.steps_box = QWidget()
        steps = QHBoxLayout(self.steps_box)
        steps.setContentsMargins(0, 0, 0, 0)
        steps.addWidget(self.step_label)
        steps.addWidget(self.step_spin)
        steps.addWidget(self.step_length_spin)
        steps.addStretch(1)
        self.top = top
        top.addWidget(self.steps_box)
        top.addStretch(1)

        self.grid_host = QWidget()
        self.grid = QGridLayout(self.grid_host)
        self.grid.setContentsMargins(4, 4, 4, 4)
        self.grid.setHorizontalSpacing(8)
        self.grid.setVerticalSpacing(1)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)
        lay.addLayout(top)
        self.second_row = QHBoxLayout()  # the steps move here when an arm has both joint types (two boxes)
        lay.addLayout(self.second_row)
        lay.addWidget(self.grid_host, 1)
        self._source = None
        self.pause = QTimer(self)
        self.pause.setSingleShot(True)
        self.pause.setInterval(PAUSE_MS)
        self.pause.timeout.connect(self._apply_typed)
        self._typed_row: JointRow | None = None
        state.changed.connect(self._on_state)
        self._build()

    # -- building -------------------------------------------------------------------
    def _build(self) -> None:
        """Rows for the state's arm: the rows there are take the new joints' names, units and limits (no widget
        rebuilt for an edit of the arm), missing rows are made, surplus rows go."""
        n = self.state.chain.n
        old_n = len(self.rows)
        for row in self.rows[n:]:
            for w in row.widgets:
                self.grid.removeWidget(w)
                w.setParent(None)
                w.deleteLater()
        self.rows = self.rows[:n]
        self.pause.stop()
        self._typed_row = None
        for row in self.rows:
            row.typing = False
            row.describe(self.state)
        self.grid.setRowStretch(2 * old_n, 0)
        # two lines per joint: name | slider | value | limits, then type | margin bar | state in words
        for i in range(len(self.rows), n):
            row = JointRow(self, i)
            r = 2 * i
            self.grid.addWidget(row.name, r, 0)
            self.grid.addWidget(row.slider, r, 1)
            self.grid.addWidget(row.spin, r, 2)
            self.grid.addWidget(row.limits, r, 3)
            self.grid.addWidget(row.kind, r + 1, 0)
            self.grid.addWidget(row.bar, r + 1, 1)
            self.grid.addWidget(row.words, r + 1, 2, 1, 2)
            row.slider.valueChanged.connect(lambda pos, r=row: self._from_slider(r, pos))
            row.spin.valueChanged.connect(lambda v, r=row: self._from_spin(r, v))
            row.spin.lineEdit().textEdited.connect(lambda _t, r=row: self._typed(r))
            row.spin.editingFinished.connect(lambda r=row: self._typing_done(r))
            row.slider.installEventFilter(self)
            row.spin.installEventFilter(self)
            self.rows.append(row)
        self.grid.setColumnStretch(1, 1)
        self.grid.setRowStretch(2 * n, 1)
        prev = self.step_length_spin
        for row in self.rows:
            QWidget.setTabOrder(prev, row.slider)
            QWidget.setTabOrder(row.slider, row.spin)
            prev = row.spin
        u = self.state.chain.units
        kinds = set(self.state.chain.kinds)
        self.step_spin.setSuffix(f" {u.angle}")
        self.step_length_spin.setSuffix(f" {u.length}")
        self.step_spin.setVisible("revolute" in kinds)
        self.step_length_spin.setVisible("prismatic" in kinds)
        self.top.removeWidget(self.steps_box)
        self.second_row.removeWidget(self.steps_box)
        if len(kinds) > 1:
            self.second_row.insertWidget(0, self.steps_box)
        else:
            self.top.insertWidget(self.top.count() - 1, self.steps_box)  # before the closing stretch
        if "revolute" not in kinds:
            self.step_label.setBuddy(self.step_length_spin)
        self._sync_options()
        self._refresh()

    # -- writing ----------------------------------------------------------------------
    def _from_slider(self, row: JointRow, pos: int) -> None:
        self._source = row.slider
        try:
            self.state.set_joint_user(row.i, row.slider_to_value(pos), writer=self)
        finally:
            self._source = None

    def _from_spin(self, row: JointRow, v: float) -> None:
        self._source = row.spin
        try:
            self.state.set_joint_user(row.i, v, writer=self)
        finally:
            self._source = None

    def _typed(self, row: JointRow) -> None:
        """A keystroke in a value box: wait for the pause (or Enter) before applying anything."""
        if self._typed_row is not None and self._typed_row is not row:
            self._apply_typed()
        row.typing = True
        self._typed_row = row
        self.pause.start()

    def typed_value(self, row: JointRow) -> float | None:
        """The value typed in ``row``'s box, or None while the text is not a complete number in range."""
        from PySide6.QtGui import QValidator

        text = row.spin.text()
        result = row.spin.validate(text, len(text))
        state = result[0] if isinstance(result, (tuple, list)) else result
        if state != QValidator.State.Acceptable:
            return None
        return float(row.spin.valueFromText(text))

    def _apply_typed(self) -> None:
        """After a pause: apply the typed number (the box keeps its text and the cursor where they are)."""
        self.pause.stop()
        row, self._typed_row = self._typed_row, None
        if row is None or row not in self.rows:
            return
        v = self.typed_value(row)
        if v is not None:
            self._from_spin(row, v)

    def _typing_done(self, row: JointRow) -> None:
        """Enter or leaving the box: Qt has applied the value (valueChanged); the box may show the state again."""
        if self._typed_row is row:
            self.pause.stop()
            self._typed_row = None
        row.typing = False
        self._refresh()

    def nudge(self, i: int, steps: float) -> None:
        """Move joint ``i`` by ``steps`` times the arrow-key step (arm units)."""
        q = self.state.q_user
        self.state.set_joint_user(i, float(q[i]) + steps * self.state.step_of(i), writer=self)

    def eventFilter(self, obj, ev):
        if ev.type() == QEvent.Type.KeyPress:
            for row in self.rows:
                if obj is row.slider or obj is row.spin:
                    key = ev.key()
                    if row.typing and key in (Qt.Key.Key_Up, Qt.Key.Key_Down, Qt.Key.Key_PageUp, Qt.Key.Key_PageDown):
                        self._apply_typed()  # a step goes from what was typed, and the box shows the result
                        row.typing = False
                    big = 10.0 if ev.modifiers() & Qt.KeyboardModifier.ShiftModifier else 1.0
                    ups = (Qt.Key.Key_Up, Qt.Key.Key_Right) if obj is row.slider else (Qt.Key.Key_Up,)
                    downs = (Qt.Key.Key_Down, Qt.Key.Key_Left) if obj is row.slider else (Qt.Key.Key_Down,)
                    if key in ups:
                        self.nudge(row.i, big)
                        return True
                    if key in downs:
                        self.nudge(row.i, -big)
                        return True
                    if key == Qt.Key.Key_PageUp:
                        self.nudge(row.i, 10.0)
                        return True
                    if key == Qt.Key.Key_PageDown:
                        self.nudge(row.i, -10.0)
                        return True
        return super().eventFilter(obj, ev)

    # -- reading ----------------------------------------------------------------------
    def _refresh(self) -> None:
        st = self.state
        q = st.q_user
        states = st.limit_states()
        margin = float(st.option("margin"))
        for row, v, ls in zip(self.rows, q, states):
            if self._source is not row.slider:
                with QSignalBlocker(row.slider):
                    row.slider.setValue(row.value_to_slider(float(np.clip(v, row.lower, row.upper))))
            if self._source is not row.spin and not row.typing:
                with QSignalBlocker(row.spin):
                    if not row.spin.minimum() <= v <= row.spin.maximum():
                        # a value from elsewhere (a branch beyond the limits, --joints) must show as it is,
                        # not clamped to the box's range
                        row.spin.setRange(min(row.spin.minimum(), float(v)), max(row.spin.maximum(), float(v)))
                    row.spin.setValue(float(v))
            pos = (float(v) - row.lower) / (row.upper - row.lower)
            row.bar.set_value(pos, margin, ls)
            row.words.setText(ls.words)
            row.words.setAccessibleName(f"{printable(st.chain.names[row.i])}: {ls.words}")
            if row.level != ls.level:  # restyle only on a change of level (style sheets are slow)
                colour = palette.LEVEL_COLOURS[ls.level]
                weight = "bold" if ls.level != "ok" else "normal"
                row.words.setStyleSheet(f"color: {colour}; font-weight: {weight}")
                # a tinted fill through the palette: a style-sheet border would replace the native arrow buttons
                pal = QPalette(row.spin_palette)
                if ls.level != "ok":
                    pal.setColor(QPalette.ColorRole.Base, QColor(TINTS[ls.level]))
                row.spin.setPalette(pal)
                row.level = ls.level

    def _on_state(self, field: str) -> None:
        if field == "arm":
            self._build()
        elif field == "q":
            self._refresh()
        elif field == "options":
            self._sync_options()
            self._refresh()

    def _sync_options(self) -> None:
        with QSignalBlocker(self.margin_spin):
            self.margin_spin.setValue(100 * float(self.state.option("margin")))
        for spin, key in ((self.step_spin, "step"), (self.step_length_spin, "step_length")):
            with QSignalBlocker(spin):
                spin.setValue(float(self.state.option(key)))
