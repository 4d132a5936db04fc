"""A small world-axes gizmo in a corner of the 3D view: X, Y and Z as the camera sees them.

Drawn flat with one QPainter after the scene (it turns with the camera but never moves or zooms):
the three axes in the usual x red, y green, z blue (common practice) from a common centre, far ones
first, each with its capital letter, so the letters say what the colours say.
"""

from __future__ import annotations

import numpy as np
from pyqtgraph.opengl import GLGraphicsItem
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPainter, QPen

from poser.core.errors import PoserValueError
from poser.ui import geometry, palette
from poser.ui.gl_base import FLAT_2D
from poser.ui.gl_labels import PLATE, label_font

LETTERS = ("X", "Y", "Z")


def view_rotation(view) -> np.ndarray:
    """The world-to-eye rotation (3, 3) of a pyqtgraph GL view's camera."""
    M = np.array(view.viewMatrix().data(), float).reshape(4, 4).T  # data() is column-major
    return M[:3, :3]


class GLAxesGizmo(GLGraphicsItem.GLGraphicsItem):
    """``setData(length=px, margin=px)``: axes ``length`` pixels long, ``margin`` from the bottom-left corner."""

    def __init__(self):
        super().__init__()
        self.setDepthValue(1001)
        self.setGLOptions(dict(FLAT_2D))
        self.length = 26.0
        self.margin = 14.0
        self.font = label_font(9)

    def setData(self, **kw) -> None:
        unknown = set(kw) - {"length", "margin"}
        if unknown:
            raise PoserValueError(f"GLAxesGizmo.setData takes length, margin; got {', '.join(sorted(unknown))}")
        for name in ("length", "margin"):
            if name in kw:
                v = float(kw[name])
                if not (np.isfinite(v) and v > 0):
                    raise PoserValueError(f"{name} must be a positive number of pixels, got {kw[name]!r}")
                setattr(self, name, v)
        self.update()

    def centre(self) -> tuple[float, float]:
        h = float(self.view().height())
        r = self.length + 12.0
        return self.margin + r, h - self.margin - r

    def layout(self) -> list[tuple[str, float, float, float, float, str]]:
        """``(letter, x0, y0, x1, y1, colour)`` per axis, far to near: the line from the centre to its tip
        (pixels, y down) and where the letter's centre goes."""
        cx, cy = self.centre()
        axes = geometry.gizmo_axes(view_rotation(self.view()))
        out = []
        for axis, dx, dy, _depth in axes:
            x1, y1 = cx + self.length * dx, cy - self.length * dy
            ux, uy = dx, dy
            if np.hypot(dx, dy) < 0.3:  # along the line of sight: the letter goes where the others are not
                ux = -sum(o[1] for o in axes if o[0] != axis)
                uy = -sum(o[2] for o in axes if o[0] != axis)
                n = float(np.hypot(ux, uy)) or 1.0
                ux, uy = 0.75 * ux / n, 0.75 * uy / n
            out.append((LETTERS[axis], x1, y1, cx + (self.length + 9.0) * ux, cy - (self.length + 9.0) * uy,
                        palette.AXIS_COLOURS[axis]))
        return out

    def paint(self):
        if self.view() is None:
            return
        cx, cy = self.centre()
        self.setupGLState()
        painter = QPainter(self.view())
        painter.setRenderHints(QPainter.RenderHint.Antialiasing | QPainter.RenderHint.TextAntialiasing)
        painter.setPen(QPen(QColor(palette.GRID), 1.0))
        painter.setBrush(PLATE)
        r = self.length + 12.0
        painter.drawEllipse(QPointF(cx, cy), r, r)
        painter.setFont(self.font)
        fm = QFontMetricsF(self.font)
        for letter, x1, y1, lx, ly, colour in self.layout():
            pen = QPen(QColor(colour), 2.5)
            pen.setCapStyle(Qt.PenCapStyle.RoundCap)
            painter.setPen(pen)
            painter.drawLine(QPointF(cx, cy), QPointF(x1, y1))
            if np.hypot(x1 - cx, y1 - cy) < 0.3 * self.length:
                painter.setBrush(QColor(colour))
                painter.drawEllipse(QPointF(cx, cy), 3.0, 3.0)
            w, h = fm.horizontalAdvance(letter), fm.height()
            painter.drawText(QRectF(lx - w / 2 - 1, ly - h / 2, w + 2, h), Qt.AlignmentFlag.AlignCenter, letter)
        painter.end()
