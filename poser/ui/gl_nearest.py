"""The nearest reachable point of an unreachable target: an amber ball, the tool's orientation there,
and a dashed line from the target to it, labelled in words."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.ui import geometry, palette
from poser.ui.gl_base import ItemGroup, as_points, as_size, body_shader, check_keywords, qmatrix, unit_sphere
from poser.ui.gl_labels import label_font
from poser.ui.gl_triads import GLTriads

TEXT = "nearest reachable"


class GLNearest(ItemGroup):
    """``setData(point=(3,), target=(3,), size=, rotation=None)``; hide it with ``set_visible(False)``."""

    def __init__(self, layer=None):
        super().__init__()
        self._ball = self._own(gl.GLMeshItem(meshdata=unit_sphere(), color=palette.rgba(palette.NEAREST, 1.0),
                                             shader=body_shader(), smooth=True))
        self._line = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=2.0, antialias=False,
                                                 glOptions="opaque", color=palette.rgba(palette.NEAREST, 1.0)))
        self._triad = GLTriads(layer, width=3.0)
        self.items += self._triad.items  # its labels are shown and hidden by the triad itself
        self._label = None
        if layer is not None:
            self._label = self._own_label(layer.new_label("note", palette.NEAR, label_font(9)))
        self.point = None

    def add_to(self, view) -> None:
        super().add_to(view)
        self._triad._view = view

    def set_visible(self, on: bool) -> None:
        super().set_visible(on)
        self._triad.set_visible(on)

    def setData(self, **kw) -> None:
        check_keywords("GLNearest", kw, ("point", "target", "size"), ("rotation",))
        p = as_points("point", kw["point"]).reshape(3)
        t = as_points("target", kw["target"]).reshape(3)
        size = as_size("size", kw["size"])
        R = kw.get("rotation")
        S = np.eye(4)
        S[:3, :3] *= 0.1 * size
        S[:3, 3] = p
        self._ball.setTransform(qmatrix(S))
        dashes = geometry.dash_segments(np.array([[t, p]]), 0.12 * size, 0.08 * size)
        self._line.setData(pos=dashes.reshape(-1, 3) if len(dashes) else np.array([t, p]))
        if R is not None:
            T = np.eye(4)
            T[:3, :3] = as_points("rotation", R, (3, 3)).reshape(3, 3)
            T[:3, 3] = p
            self._triad.setData(frames=T[None], labels=[""], size=0.8 * size)
        else:
            self._triad.setData(frames=np.zeros((0, 4, 4)), labels=[], size=size)
        if self._label is not None:
            self._label.setData(pos=p, text=TEXT)
        self.point = p
