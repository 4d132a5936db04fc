"""Labelled coordinate triads (x red, y green, z blue, as is common practice) for base, tool and joint frames."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl
from PySide6.QtGui import QColor, QFont

from poser.ui import palette
from poser.ui.gl_base import ItemGroup
from poser.ui.gl_label import GLLabel

_AXIS_RGBA = np.array([palette.rgba(c) for c in palette.AXIS_COLOURS])


def triad_lines(frames, size: float) -> tuple[np.ndarray, np.ndarray]:
    """Line endpoints (6k, 3) and colours (6k, 4) for triads of length ``size`` at ``frames`` (k, 4, 4)."""
    F = np.asarray(frames, float).reshape(-1, 4, 4)
    o = F[:, :3, 3]
    pts = np.empty((len(F), 3, 2, 3))
    for a in range(3):
        pts[:, a, 0] = o
        pts[:, a, 1] = o + size * F[:, :3, a]
    cols = np.repeat(np.repeat(_AXIS_RGBA[None, :, None, :], 2, axis=2), len(F), axis=0)
    return pts.reshape(-1, 3), cols.reshape(-1, 4)


class GLTriads(ItemGroup):
    """Any number of labelled triads drawn as one line item plus one text item per label."""

    def __init__(self, width: float = 3.0, font_size: int = 10, label_colour: str = palette.TEXT):
        super().__init__()
        self._lines = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=width, antialias=False,
                                                  glOptions="opaque"))
        self._labels: list = []
        self._font = QFont("DejaVu Sans", font_size)
        self._font.setBold(True)
        self._colour = QColor(label_colour)

    def setData(self, frames, labels, size: float) -> None:
        """Triads at ``frames`` (k, 4, 4) with ``labels`` (k texts), axes ``size`` long."""
        frames = np.asarray(frames, float).reshape(-1, 4, 4)
        if len(frames) == 0:
            self.want(self._lines, False, self._visible)
        else:
            pts, cols = triad_lines(frames, size)
            self._lines.setData(pos=pts, color=cols)
            self.want(self._lines, True, self._visible)
        while len(self._labels) < len(frames):
            label = GLLabel(pos=(0.0, 0.0, 0.0), text="", color=self._colour, font=self._font)
            self._labels.append(self._own(label))
        for k, item in enumerate(self._labels):
            if k < len(frames):
                F = frames[k]
                pos = F[:3, 3] + 0.3 * size * (F[:3, 0] + F[:3, 1] + F[:3, 2])
                item.setData(pos=pos, text=str(labels[k]))
                self.want(item, True, self._visible)
            else:
                self.want(item, False, self._visible)
