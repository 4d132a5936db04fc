"""The tool point's recent path as a line."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.ui import palette
from poser.ui.gl_base import ItemGroup


class GLTrail(ItemGroup):
    def __init__(self):
        super().__init__()
        self._line = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="line_strip", width=2.5,
                                                 color=palette.rgba(palette.TRAIL, 0.9), antialias=False,
                                                 glOptions="opaque"))

    def setData(self, points) -> None:
        pts = np.asarray(points, float).reshape(-1, 3)
        if len(pts) < 2:
            self.want(self._line, False, self._visible)
            return
        self._line.setData(pos=pts)
        self.want(self._line, True, self._visible)
