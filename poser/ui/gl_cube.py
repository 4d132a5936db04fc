"""The performance-test cube: its twelve edges, the diagonal plane of the test positions, and the positions'
names (the positions themselves are drawn as reach marks, :mod:`poser.ui.gl_reach`)."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_points, check_keywords
from poser.ui.gl_labels import label_font

EDGE = "#3D4A5C"
PLANE = "#8E44AD"


def cube_edges(corners) -> np.ndarray:
    """The 12 edges (24, 3) of a cube whose corners (8, 3) differ in one index bit per axis (any order of
    bits), found as the corner pairs at the edge's length."""
    C = as_points("corners", corners, (3,)).reshape(-1, 3)
    if len(C) != 8:
        raise PoserValueError(f"corners must have shape (8, 3), got shape {C.shape}")
    d = np.linalg.norm(C[:, None] - C[None], axis=-1)
    edge = np.min(d[d > 0]) if np.any(d > 0) else 0.0
    pairs = [(i, j) for i in range(8) for j in range(i + 1, 8) if abs(d[i, j] - edge) <= 1e-9 * max(edge, 1.0)]
    return C[np.array(pairs, int).reshape(-1, 2)].reshape(-1, 3)


class GLCube(ItemGroup):
    """``setData(corners=(8, 3), plane=(4, 3), positions=(k, 3), names=[k])``."""

    def __init__(self, layer=None):
        super().__init__()
        self._edges = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=2.0,
                                                  color=palette.rgba(EDGE, 1.0), antialias=False, glOptions="opaque"))
        self._plane = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="line_strip", width=2.0,
                                                  color=palette.rgba(PLANE, 1.0), antialias=False,
                                                  glOptions="opaque"))
        self._layer = layer
        self._names: list = []

    def setData(self, **kw) -> None:
        check_keywords("GLCube", kw, ("corners", "plane", "positions", "names"))
        self._edges.setData(pos=cube_edges(kw["corners"]))
        plane = as_points("plane", kw["plane"]).reshape(-1, 3)
        self._plane.setData(pos=np.vstack([plane, plane[:1]]))
        P = as_points("positions", kw["positions"]).reshape(-1, 3)
        names = list(kw["names"])
        if len(names) != len(P):
            raise PoserValueError(f"names must have one entry per position ({len(P)}), got {len(names)}")
        if self._layer is None:
            return
        while len(self._names) < len(P):
            self._names.append(self._own_label(self._layer.new_label("note", EDGE, label_font(9))))
        for k, lab in enumerate(self._names):
            on = k < len(P)
            if on:
                lab.setData(pos=P[k], text=names[k])
            self.want(lab, on, self._visible)
