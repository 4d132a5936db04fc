"""The arm's mount: a plate on the mounting plane of the base frame, and for a wall or ceiling mount a
hatched square of that surface (the plate's thickness is behind the plane, in the surface)."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.ui import geometry, palette
from poser.ui.gl_base import SOLID, ItemGroup, as_points, as_size, body_shader, check_keywords, qmatrix, unit_cylinder


class GLMount(ItemGroup):
    """``setData(base=(4, 4), scale=)``: the plate at the base origin, normal along base z."""

    def __init__(self):
        super().__init__()
        self._plate = self._own(gl.GLMeshItem(meshdata=unit_cylinder(4), color=palette.rgba(palette.MOUNT, 1.0),
                                              shader=body_shader(), smooth=False, glOptions=dict(SOLID)))
        self._hatch = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=1.5, antialias=False,
                                                  glOptions="opaque", color=palette.rgba(palette.GRID_AXES, 1.0)))
        self.plate = np.eye(4)

    def setData(self, **kw) -> None:
        check_keywords("GLMount", kw, ("base", "scale"))
        base = as_points("base", kw["base"], (4, 4)).reshape(4, 4)
        scale = as_size("scale", kw["scale"])
        self.plate = geometry.mount_plate(base, scale)
        self._plate.setTransform(qmatrix(self.plate))
        hatch = geometry.mount_hatch(base, scale)
        if len(hatch):
            self._hatch.setData(pos=hatch.reshape(-1, 3))
        self.want(self._hatch, len(hatch) > 0, self._visible)
