"""A one-line label that shortens its text with "…" when it has too little room, and keeps it whole in a tooltip."""

from __future__ import annotations

from PySide6.QtCore import QEvent, Qt
from PySide6.QtWidgets import QLabel, QSizePolicy


class ElidedLabel(QLabel):
    """Like QLabel, but a text wider than the label ends in "…" instead of being cut mid-word.

    :meth:`text` returns the whole text; the tooltip and the accessible description carry it
    too (unless a tooltip of its own is set with ``setToolTip``), so nothing is lost.
    """

    def __init__(self, text: str = "", parent=None, mode=Qt.TextElideMode.ElideRight):
        super().__init__(parent)
        self._full = ""
        self._mode = mode
        self._own_tip = False
        self.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        self.setMinimumWidth(40)
        self.setText(text)

    def text(self) -> str:
        return self._full

    def shown_text(self) -> str:
        """What is painted now (possibly shortened)."""
        return super().text()

    @property
    def elided(self) -> bool:
        return self.shown_text() != self._full

    def setText(self, text: str) -> None:
        self._full = str(text)
        if not self._own_tip:
            super().setToolTip(self._full)
        self.setAccessibleDescription(self._full)
        self._fit()
        self.updateGeometry()

    def setToolTip(self, tip: str) -> None:
        self._own_tip = bool(tip)
        super().setToolTip(tip if tip else self._full)

    def sizeHint(self):
        """Wide enough for the whole text: with a Preferred policy the label takes that much when there is room."""
        hint = super().sizeHint()
        m = self.contentsMargins()
        hint.setWidth(self.fontMetrics().horizontalAdvance(self._full) + m.left() + m.right() + 2 * self.margin() + 4)
        return hint

    def minimumSizeHint(self):
        hint = super().minimumSizeHint()
        hint.setWidth(min(hint.width(), 40))
        return hint

    def _fit(self) -> None:
        width = self.contentsRect().width()
        if width <= 0:
            super().setText(self._full)
            return
        super().setText(self.fontMetrics().elidedText(self._full, self._mode, width))

    def resizeEvent(self, ev):
        super().resizeEvent(ev)
        self._fit()

    def changeEvent(self, ev):  # a style sheet may change the font
        super().changeEvent(ev)
        if ev.type() in (QEvent.Type.FontChange, QEvent.Type.StyleChange):
            self._fit()
