"""The target pose: a ball at the target point and its own triad (or a ball only for a position-only target)."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.ui import palette
from poser.ui.gl_base import ItemGroup, body_shader, qmatrix, unit_sphere
from poser.ui.gl_triads import GLTriads


class GLTarget(ItemGroup):
    def __init__(self):
        super().__init__()
        self._ball = self._own(gl.GLMeshItem(meshdata=unit_sphere(), color=palette.rgba(palette.TARGET, 1.0),
                                             shader=body_shader(), smooth=True))
        self._triad = GLTriads(width=5.0, label_colour=palette.TARGET)
        self.items += self._triad.items
        self._triad._view = None

    def add_to(self, view) -> None:
        super().add_to(view)
        self._triad._view = view

    def set_visible(self, on: bool) -> None:
        super().set_visible(on)
        self._triad.set_visible(on)

    def setData(self, T, position_only: bool, size: float) -> None:
        """Target pose ``T`` (4, 4); triad axes ``size`` long; ball radius a tenth of that."""
        T = np.asarray(T, float)
        S = np.eye(4)
        S[:3, :3] *= 0.12 * size
        S[:3, 3] = T[:3, 3]
        self._ball.setTransform(qmatrix(S))
        if position_only:
            Tp = np.eye(4)
            Tp[:3, 3] = T[:3, 3]
            self._triad.setData(Tp[None], ["target"], 1e-6 * size)
        else:
            self._triad.setData(T[None], ["target"], 1.3 * size)
