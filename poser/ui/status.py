"""The status bar (singularity proximity, a point below the mounting plane, limit warnings, arm name and
units, how the view is drawn) and the notice bar (persistent warnings and questions that must not interrupt
typing: the file changed on disk, recovery copies failing, a target converted to another arm's unit)."""

from __future__ import annotations

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtWidgets import QFrame, QHBoxLayout, QLabel, QPushButton, QSizePolicy, QStatusBar, QVBoxLayout, QWidget

from poser import report
from poser.ui import palette, words
from poser.ui.elided import ElidedLabel
from poser.ui.state import PoseState


class NoticeBar(QWidget):
    """Notices one above the other, each with its level's colour, words and buttons.

    ``show_notice(key, level, text, actions=(), timeout_ms=None)`` adds or replaces the notice ``key``;
    ``actions`` is a sequence of ``(label, callable)``; a notice with a timeout goes by itself, the others
    stay until :meth:`clear` (or a button that clears it).  ``shown(bool)`` tells the host whether there is
    any notice (the main window shows its notice toolbar only then).
    """

    shown = Signal(bool)

    def __init__(self, parent=None):
        super().__init__(parent)
        self._lay = QVBoxLayout(self)
        self._lay.setContentsMargins(4, 2, 4, 2)
        self._lay.setSpacing(2)
        self.items: dict = {}

    def show_notice(self, key: str, level: str, text: str, actions=(), timeout_ms: int | None = None) -> QFrame:
        self.clear(key)
        row = QFrame(self)
        row.setObjectName(f"notice_{key}")
        colour = palette.LEVEL_COLOURS.get(level, palette.TEXT) if level != "ok" else palette.TEXT
        row.setStyleSheet(f"QFrame#notice_{key} {{ border: 1px solid {colour}; border-radius: 3px; }}")
        lay = QHBoxLayout(row)
        lay.setContentsMargins(6, 1, 2, 1)
        lay.setSpacing(6)
        label = ElidedLabel(text)  # one line; a longer text ends in "…" and is whole in the tooltip
        label.setStyleSheet(f"color: {colour}; font-weight: {'bold' if level == 'at' else 'normal'}; border: none")
        label.setAccessibleName(f"notice: {key}")
        lay.addWidget(label, 1)
        row.buttons = {}
        for text_, fn in actions:
            b = QPushButton(text_)
            b.clicked.connect(lambda _=False, f=fn: f())
            lay.addWidget(b)
            row.buttons[text_.replace("&", "")] = b
        close = QPushButton("Dismiss")
        close.setToolTip("hide this notice")
        close.clicked.connect(lambda: self.clear(key))
        lay.addWidget(close)
        row.label = label
        row.level = level
        self._lay.addWidget(row)
        self.items[key] = row
        if timeout_ms:
            timer = QTimer(row)  # goes with its notice
            timer.setSingleShot(True)
            timer.timeout.connect(lambda: self.clear(key))
            timer.start(timeout_ms)
        self.shown.emit(True)
        return row

    def text(self, key: str) -> str:
        row = self.items.get(key)
        return row.label.text() if row is not None else ""

    def press(self, key: str, button: str) -> None:
        """Click a notice's button by its label (without '&'): tests and keyboard scripts."""
        self.items[key].buttons[button].click()

    def clear(self, key: str) -> None:
        row = self.items.pop(key, None)
        if row is not None:
            row.setParent(None)
            row.deleteLater()
        if not self.items:
            self.shown.emit(False)


def short_render_note(note: str) -> str:
    """The renderer note without the driver's name (that goes in the tooltip): ``"3D: software OpenGL"``."""
    return note.split(" (")[0] if note.startswith("3D:") else note


class PoseStatusBar(QStatusBar):
    """Observes the state only."""

    def __init__(self, state: PoseState, render_note: str, parent=None):
        super().__init__(parent)
        self.state = state
        # Long texts end in "…" rather than widening the window or being cut mid-word; the tooltip keeps them whole.
        self.singular = ElidedLabel()
        self.singular.setAccessibleName("singularity proximity")
        self.limits = ElidedLabel()
        self.limits.setAccessibleName("limit warnings")
        # a long singularity verdict (a long arm's) shortens before the limit words fall below their first words
        self.limits.setMinimumWidth(self.limits.fontMetrics().horizontalAdvance("limits: every joint clear") + 24)
        self.mount = ElidedLabel()
        self.mount.setAccessibleName("below the mounting plane")
        self.mount.setVisible(False)
        self.arm = ElidedLabel(mode=Qt.TextElideMode.ElideMiddle)  # a long name keeps its units and '(edited)'
        self.arm.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Preferred)  # its width if room
        self.render = QLabel(short_render_note(render_note))
        self.render.setStyleSheet(f"color: {palette.MUTED}")
        self.render.setToolTip(render_note)
        self.render.setAccessibleName("how the view is drawn")
        self.render.setAccessibleDescription(render_note)
        # one box of our own for the two warnings: QStatusBar does not lay its items out again when a
        # size hint changes, this box does
        self.singular.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Preferred)  # its whole text first
        self.warnings = QWidget()
        box = QHBoxLayout(self.warnings)
        box.setContentsMargins(0, 0, 0, 0)
        box.setSpacing(14)
        box.addWidget(self.singular)
        box.addWidget(self.mount)
        box.addWidget(self.limits, 1)
        self.addWidget(self.warnings, 1)
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

    def singularity_text(self) -> tuple[str, str]:
        """(level, text) of the singularity label: the verdict first, then the figures behind it."""
        st = self.state
        s = st.singularity()
        level, verdict = report.singularity_words(st.chain, s, short=True)
        return level, (f"{verdict} · condition {report.condition_text(s.condition)} · manipulability "
                       f"{report.manipulability_text(st.chain, s.manipulability)}")

    def _refresh(self) -> None:
        st = self.state
        level, text = self.singularity_text()
        self.singular.setText(text)
        long = report.singularity_words(st.chain, st.singularity())[1]
        self.singular.setToolTip(
            f"{long}\n\ncondition number: ratio of the Jacobian's largest to smallest singular value, lengths "
            f"divided by the arm's size L = {report.fmt(st.scale, 1)} {st.chain.units.length} (no unit; 1 is ideal, "
            f"infinite at a singularity; above 80 Poser warns).\n{report.manipulability_tip(st.chain)}"
        )
        self._style(self.singular, level)
        below = words.below_mount_words(st.chain, st.below_mount())
        self.mount.setVisible(bool(below))
        if below:
            self.mount.setText(below)
            self.mount.setToolTip(f"{below}\n\nThe mounting plane is the base's x-y plane (the floor for a floor-"
                                  "mounted arm, the wall or ceiling otherwise); a real arm would hit it there.")
            self._style(self.mount, "at")
        states = st.limit_states()
        bad = [(n, s) for n, s in zip(st.chain.names, states) if s.level != "ok"]
        if not bad:
            self.limits.setText("limits: every joint clear")
            self._style(self.limits, "ok")
        else:
            worst = "at" if any(s.level in ("at", "beyond") for _, s in bad) else "near"
            head = "limits: " if len(bad) == 1 else f"limits ({len(bad)} joints): "
            # worst first, so a cut-off end never hides a joint at its limit behind one that is only near
            bad.sort(key=lambda ns: {"beyond": 0, "at": 1, "near": 2}[ns[1].level])
            self.limits.setText(head + "; ".join(f"{n} {s.words}" for n, s in bad))
            self._style(self.limits, worst)
        u = st.chain.units
        name = st.path.name if st.path else "not saved"
        star = " (edited)" if st.dirty else ""
        text = f"{report.printable(st.chain.name)} · {u.length}, {u.angle} · {report.printable(name)}{star}"
        self.arm.setText(text)
        self.arm.setToolTip(f"{text}\narm name · length and angle units · file"
                            f"{': ' + report.printable(str(st.path)) if st.path else ''}")
        self.arm.setMaximumWidth(320)
        self.render.setMaximumWidth(380)

    def _on_state(self, field: str) -> None:
        if field in ("q", "arm", "options", "document", "spec"):
            self._refresh()
