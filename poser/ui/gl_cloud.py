"""The workspace's point cloud: the kept tool points, coloured by their dexterity (manipulability)."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_points, as_size, check_keywords

LOW = "#D9480F"
"""Colour of the lowest manipulability of the cloud (orange)."""
HIGH = "#1D4ED8"
"""Colour of the highest (blue)."""


def dexterity_colours(values, alpha: float = 1.0) -> np.ndarray:
    """RGBA (N, 4) by the rank of each of ``values`` (N,): :data:`LOW` for the lowest, :data:`HIGH` for the highest,
    evenly between (the manipulability of a six-axis arm is a product of six singular values: by value, nearly
    every point would take the low colour).  Equal values take equal colours."""
    v = np.asarray(values, float).reshape(-1)
    if v.size < 2:
        t = np.ones((v.size, 1))
    else:
        t = (np.searchsorted(np.sort(v), v, "left") / (v.size - 1))[:, None]
    lo, hi = np.array(palette.rgba(LOW, alpha)), np.array(palette.rgba(HIGH, alpha))
    return lo + t * (hi - lo)


class GLCloud(ItemGroup):
    """``setData(points=(N, 3), values=(N,), size=px)``: one dot per point, coloured by ``values``."""

    def __init__(self):
        super().__init__()
        self._dots = self._own(gl.GLScatterPlotItem(pos=np.zeros((1, 3)), size=3.0, pxMode=True,
                                                    color=(0.0, 0.0, 0.0, 0.0), glOptions="opaque"))
        self.count = 0

    def setData(self, **kw) -> None:
        check_keywords("GLCloud", kw, ("points", "values"), ("size",))
        P = as_points("points", kw["points"]).reshape(-1, 3)
        v = np.asarray(kw["values"], float).reshape(-1)
        if v.shape != (len(P),):
            raise PoserValueError(f"values must have shape ({len(P)},) (one per point), got shape {v.shape}")
        if not np.all(np.isfinite(v)):
            raise PoserValueError("values must be finite, got a value that is not")
        size = as_size("size", kw.get("size", 2.0))
        self.count = len(P)
        if not len(P):
            self.want(self._dots, False, self._visible)
            return
        self._dots.setData(pos=P, color=dexterity_colours(v), size=size)
        self.want(self._dots, True, self._visible)
