"""Every text label of the 3D view, drawn in one pass after the scene so that none covers another.

Labels are entries of one :class:`GLLabelLayer` (the view has one).  Each frame the layer

1. merges labels of the same kind whose points coincide (frames 4 and 5 at one wrist centre read
   "F4, F5"; the same axis letter twice is written once), see :func:`poser.ui.geometry.coinciding_groups`;
2. projects them and gives each a free place near its point, most important first; a label moved
   off its point gets a thin leader line, one with no free place nearby is left out
   (:func:`poser.ui.geometry.place_labels`);
3. paints them all with one QPainter (a painter per label cost software OpenGL ~0.5 ms each).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from pyqtgraph.opengl import GLGraphicsItem
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QMatrix4x4, QPainter, QPen

from poser.core.errors import PoserValueError
from poser.ui import geometry, palette
from poser.ui.gl_base import FLAT_2D, as_points

PLATE = QColor(250, 249, 244, 215)

PRIORITY = {"frame": 40, "ghost": 30, "note": 20, "axis": 10}
"""Which labels keep their place when space is short: frame names first, axis letters last."""


def label_font(size: int = 10, bold: bool = True) -> QFont:
    f = QFont("DejaVu Sans", size)
    f.setBold(bold)
    return f


class Label:
    """One text at a point of the scene (arm length unit); kept by a :class:`GLLabelLayer`.

    ``kind`` is one of :data:`PRIORITY`'s keys; ``priority`` adds to its weight (the hovered ghost's
    number before the others).  ``text`` is shown as given (callers pass names through
    ``poser.report.printable``).
    """

    def __init__(self, layer, kind: str, colour, font: QFont, priority: int = 0):
        if kind not in PRIORITY:
            raise PoserValueError(f"kind must be one of {', '.join(PRIORITY)}, got {kind!r}")
        self.layer = layer
        self.kind = kind
        self.colour = QColor(colour)
        self.font = font
        self.priority = PRIORITY[kind] + int(priority)
        self.pos = np.zeros(3)
        self.text = ""
        self._shown = True

    def setData(self, **kw) -> None:
        """``pos`` (3,) and/or ``text`` (str), ``colour``, ``priority`` (added to the kind's)."""
        unknown = set(kw) - {"pos", "text", "colour", "priority"}
        if unknown:
            raise PoserValueError(f"Label.setData takes pos, text, colour, priority; got {', '.join(sorted(unknown))}")
        if "pos" in kw:
            self.pos = as_points("pos", kw["pos"]).reshape(3).copy()
        if "text" in kw:
            self.text = str(kw["text"])
        if "colour" in kw:
            self.colour = QColor(kw["colour"])
        if "priority" in kw:
            self.priority = PRIORITY[self.kind] + int(kw["priority"])
        self.layer.update()

    def visible(self) -> bool:
        return self._shown

    def setVisible(self, on: bool) -> None:
        on = bool(on)
        if on != self._shown:
            self._shown = on
            self.layer.update()


@dataclass
class Placed:
    """A label as drawn: its text and colour, top-left corner and size (pixels), and its point."""

    text: str
    colour: QColor
    font: QFont
    x: float
    y: float
    w: float
    h: float
    ax: float
    ay: float
    kind: str

    @property
    def rect(self) -> QRectF:
        return QRectF(self.x, self.y, self.w, self.h)


class GLLabelLayer(GLGraphicsItem.GLGraphicsItem):
    """The view's labels (see the module docstring); ``merge_distance`` is in the arm's length unit."""

    def __init__(self):
        super().__init__()
        self.setDepthValue(1000)  # after the scene
        self.setGLOptions(dict(FLAT_2D))
        self.entries: list[Label] = []
        self.merge_distance = 1e-9
        self.placed: list[Placed] = []
        self._metrics: dict = {}

    def new_label(self, kind: str, colour=palette.TEXT, font: QFont | None = None, priority: int = 0) -> Label:
        label = Label(self, kind, colour, font or label_font(), priority)
        self.entries.append(label)
        return label

    def setData(self, **kw) -> None:
        """``merge_distance``: labels of one kind closer than this (arm length unit) are one label."""
        if set(kw) - {"merge_distance"}:
            raise PoserValueError(f"GLLabelLayer.setData takes merge_distance; got {', '.join(sorted(kw))}")
        if "merge_distance" in kw:
            v = float(kw["merge_distance"])
            if not v >= 0:
                raise PoserValueError(f"merge_distance must be >= 0, got {v!r}")
            self.merge_distance = v
        self.update()

    # -- layout ---------------------------------------------------------------------------------
    def _size(self, font: QFont, text: str) -> tuple[float, float]:
        key = (font.key(), text)
        if key not in self._metrics:
            fm = QFontMetricsF(font)
            self._metrics[key] = (fm.horizontalAdvance(text) + 6.0, fm.height() + 2.0, fm.ascent())
        return self._metrics[key][:2]

    def merged(self) -> list[tuple[np.ndarray, str, Label]]:
        """Visible labels with coinciding ones of a kind merged: ``(point, text, first label)``."""
        shown = [lab for lab in self.entries if lab._shown and lab.text]
        out = []
        for kind in PRIORITY:
            labs = [lab for lab in shown if lab.kind == kind]
            if not labs:
                continue
            for group in geometry.coinciding_groups([lab.pos for lab in labs], self.merge_distance):
                texts = []
                for k in group:
                    if labs[k].text not in texts:
                        texts.append(labs[k].text)
                top = max((labs[k] for k in group), key=lambda lab: lab.priority)
                out.append((labs[group[0]].pos, ", ".join(texts), top))
        return out

    def _projection(self) -> QMatrix4x4:
        view = self.view()
        w, h = max(view.width(), 1), max(view.height(), 1)
        vp = (0, 0, w, h)
        ndc = QMatrix4x4()
        ndc.viewport(0.0, float(h), float(w), -float(h))
        return ndc * view.projectionMatrix(vp, vp) * view.viewMatrix()

    def layout(self) -> list[Placed]:
        """Where each label goes on the screen now (also what :meth:`paint` draws)."""
        view = self.view()
        if view is None:
            return []
        w, h = float(view.width()), float(view.height())
        M = np.array(self._projection().data(), float).reshape(4, 4).T  # QMatrix4x4.data() is column-major
        merged = self.merged()
        if not merged:
            self.placed = []
            return []
        P = np.array([p for p, _, _ in merged])
        clip = np.c_[P, np.ones(len(P))] @ M.T
        boxes, keep = [], []
        for k, (_, text, lab) in enumerate(merged):
            if clip[k, 3] <= 1e-12:
                continue  # behind the camera
            ax, ay = clip[k, 0] / clip[k, 3], clip[k, 1] / clip[k, 3]
            if not (-20 <= ax <= w + 20 and -20 <= ay <= h + 20):
                continue
            bw, bh = self._size(lab.font, text)
            boxes.append((ax, ay, bw, bh, lab.priority))
            keep.append(k)
        spots = geometry.place_labels(boxes, w, h)
        placed = []
        for (ax, ay, bw, bh, _), k, spot in zip(boxes, keep, spots):
            if spot is None:
                continue
            _, text, lab = merged[k]
            placed.append(Placed(text, lab.colour, lab.font, spot[0], spot[1], bw, bh, ax, ay, lab.kind))
        self.placed = placed
        return placed

    # -- drawing --------------------------------------------------------------------------------
    def paint(self):
        placed = self.layout()
        if not placed:
            return
        self.setupGLState()
        painter = QPainter(self.view())
        painter.setRenderHints(QPainter.RenderHint.Antialiasing | QPainter.RenderHint.TextAntialiasing)
        lead = QPen(QColor(palette.MUTED))
        lead.setWidthF(1.0)
        for p in placed:  # leader lines first, under every plate
            r = p.rect
            nx, ny = min(max(p.ax, r.left()), r.right()), min(max(p.ay, r.top()), r.bottom())
            if (nx - p.ax) ** 2 + (ny - p.ay) ** 2 > 36.0:
                painter.setPen(lead)
                painter.drawLine(QPointF(p.ax, p.ay), QPointF(nx, ny))
        for p in placed:
            painter.setPen(QColor(0, 0, 0, 0))
            painter.setBrush(PLATE)
            painter.drawRoundedRect(p.rect, 3, 3)
            painter.setPen(p.colour)
            painter.setFont(p.font)
            asc = self._metrics[(p.font.key(), p.text)][2]
            painter.drawText(QPointF(p.x + 3.0, p.y + 1.0 + asc), p.text)
        painter.end()
