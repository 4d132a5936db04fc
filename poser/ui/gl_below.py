"""Parts of the arm behind the floor or its mount, drawn over the arm in a warning colour with their depth."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import geometry, palette
from poser.ui.gl_base import (
    SOLID,
    ItemGroup,
    as_points,
    as_size,
    body_shader,
    check_keywords,
    merged_bodies,
    mesh_data,
    unit_cylinder,
)
from poser.ui.gl_labels import label_font

PLANES = tuple(palette.PLANE_COLOURS)


class GLBelow(ItemGroup):
    """``setData(pieces=[(plane, segments (k, 2, 3))], marks=[(point (3,), text, plane)], radius=)``.

    ``pieces`` are :func:`poser.ui.geometry.below_pieces` output: bars a little thicker than the links
    are drawn over them; ``marks`` put a text at a part's deepest point.  Empty lists hide it all.
    """

    def __init__(self, layer=None):
        super().__init__()
        self._layer = layer
        self._bars = {}
        for plane in PLANES:
            item = gl.GLMeshItem(meshdata=unit_cylinder(12),
                                 color=palette.rgba(palette.PLANE_COLOURS[plane], 1.0), shader=body_shader(),
                                 smooth=True, glOptions=dict(SOLID))
            item._wanted = False
            self._bars[plane] = self._own(item)
        self._labels: list = []
        self._font = label_font(9)
        self.shown: list[str] = []

    def setData(self, **kw) -> None:
        check_keywords("GLBelow", kw, ("pieces", "marks", "radius"))
        radius = as_size("radius", kw["radius"])
        self.shown = []
        by_plane = {}
        for plane, segs in kw["pieces"]:
            if plane not in self._bars:
                raise PoserValueError(f"pieces: plane must be one of {', '.join(PLANES)}, got {plane!r}")
            by_plane[plane] = as_points("pieces", segs, (2, 3)).reshape(-1, 2, 3)
        for plane, item in self._bars.items():
            segs = by_plane.get(plane)
            r = radius * (0.94 if plane == "base" else 1.0)  # a piece below the floor is below the base too: red wins
            T = geometry.segment_transforms(segs[:, 0], segs[:, 1], r) if segs is not None else np.zeros((0, 4, 4))
            if len(T):
                item.setMeshData(meshdata=mesh_data(*merged_bodies(T, 12)))
                self.shown.append(plane)
            self.want(item, len(T) > 0, self._visible)
        marks = list(kw["marks"])
        if self._layer is None:
            return
        while len(self._labels) < len(marks):
            self._labels.append(self._own_label(self._layer.new_label("note", palette.AT, self._font, priority=25)))
        for k, lab in enumerate(self._labels):
            if k < len(marks):
                point, text, plane = marks[k]
                lab.setData(pos=as_points("marks", point).reshape(3), text=str(text),
                            colour=palette.PLANE_COLOURS.get(plane, palette.AT))
                self.want(lab, True, self._visible)
            else:
                self.want(lab, False, self._visible)
