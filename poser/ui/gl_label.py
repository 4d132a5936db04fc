"""A text label in the 3D scene on a pale plate, so it stays readable over dark bodies."""

from __future__ import annotations

import pyqtgraph.opengl as gl
from PySide6.QtCore import QRectF
from PySide6.QtGui import QColor, QFontMetricsF, QPainter, QVector3D

PLATE = QColor(250, 249, 244, 215)


class GLLabel(gl.GLTextItem):
    """pyqtgraph's text item with a plate behind the text; drawn after the scene (depth value 1000)."""

    def __init__(self, **kwds):
        super().__init__(**kwds)
        self.setDepthValue(1000)

    def paint(self):
        if len(self.text) < 1:
            return
        self.setupGLState()
        project = self.compute_projection()
        p = project.map(QVector3D(*self.pos)).toPointF()
        fm = QFontMetricsF(self.font)
        w, h = fm.horizontalAdvance(self.text), fm.height()
        rect = QRectF(p.x() - 2, p.y() - fm.ascent() - 1, w + 4, h + 2)
        painter = QPainter(self.view())
        painter.setRenderHints(QPainter.RenderHint.Antialiasing | QPainter.RenderHint.TextAntialiasing)
        painter.setPen(QColor(0, 0, 0, 0))
        painter.setBrush(PLATE)
        painter.drawRoundedRect(rect, 3, 3)
        painter.setPen(self.color)
        painter.setFont(self.font)
        painter.drawText(p, self.text)
        painter.end()
