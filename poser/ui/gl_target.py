"""The target pose: a ball at the target point and its own triad (or a ball only for a position-only target)."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_points, as_size, body_shader, check_keywords, qmatrix, unit_sphere
from poser.ui.gl_triads import GLTriads


class GLTarget(ItemGroup):
    """``setData(T=(4, 4), position_only=bool, size=)``: triad axes ``size`` long, the ball a tenth of that."""

    def __init__(self, layer=None):
        super().__init__()
        self._ball = self._own(gl.GLMeshItem(meshdata=unit_sphere(), color=palette.rgba(palette.TARGET, 1.0),
                                             shader=body_shader(), smooth=True))
        self._triad = GLTriads(layer, width=5.0, label_colour=palette.TARGET)
        self.items += self._triad.items  # its labels are shown and hidden by the triad itself
        self._triad._view = None

    def add_to(self, view) -> None:
        super().add_to(view)
        self._triad._view = view

    def set_visible(self, on: bool) -> None:
        super().set_visible(on)
        self._triad.set_visible(on)

    def setData(self, **kw) -> None:
        check_keywords("GLTarget", kw, ("T", "position_only", "size"))
        T = as_points("T", kw["T"], (4, 4)).reshape(4, 4)
        size = as_size("size", kw["size"])
        S = np.eye(4)
        S[:3, :3] *= 0.12 * size
        S[:3, 3] = T[:3, 3]
        self._ball.setTransform(qmatrix(S))
        if kw["position_only"]:
            Tp = np.eye(4)
            Tp[:3, 3] = T[:3, 3]
            self._triad.setData(frames=Tp[None], labels=["target"], size=1e-6 * size)
            for lab in self._triad._letters:  # no axes, so no letters
                self._triad.want(lab, False, self._visible)
        else:
            self._triad.setData(frames=T[None], labels=["target"], size=1.3 * size)
