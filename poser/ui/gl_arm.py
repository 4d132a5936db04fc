"""The arm as solid bodies: links as round bars, turning joints as drums, sliding joints as square sleeves,
every joint axis drawn as a thin line through its body.

All bodies of one kind are one mesh, rebuilt from the body transforms on every pose (a few hundred
vertices, written into the same GL buffers): three draw calls per arm instead of one per body,
which is what software OpenGL is slow at.  Bodies are closed, so back faces are culled.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import geometry, palette
from poser.ui.gl_base import (
    SEE_THROUGH,
    SOLID,
    ItemGroup,
    as_size,
    body_shader,
    check_keywords,
    merged_bodies,
    mesh_data,
    unit_cylinder,
)

LINK_COLS, DRUM_COLS, SLEEVE_COLS = 16, 20, 4
DRUM = (1.55, 2.6, 3.6)
"""Drum radius, length and axis-line reach, in link radii."""
SLEEVE = (1.35, 4.0, 4.2)
"""Sleeve half-width, length and axis-line reach, in link radii."""

__all__ = ["GLArm", "merged_bodies", "body_arrays"]


def body_arrays(drawing: geometry.ArmDrawing, radius: float, link_cols: int = LINK_COLS,
                drum_cols: int = DRUM_COLS) -> dict:
    """Mesh arrays ``{"links"|"drums"|"sleeves": (verts, faces, normals)}`` and ``"link_transforms"``
    (k, 4, 4) for ``drawing`` with link bars of ``radius`` (arm length unit)."""
    segs = drawing.segments
    links = geometry.segment_transforms(segs[:, 0], segs[:, 1], radius)
    rev = np.array([k == "revolute" for k in drawing.kinds], bool)
    o, z = drawing.joint_origins, drawing.joint_axes
    drums = geometry.axis_body_transforms(o[rev], z[rev], DRUM[0] * radius, DRUM[1] * radius)
    sleeves = geometry.axis_body_transforms(o[~rev], z[~rev], SLEEVE[0] * radius, SLEEVE[1] * radius)
    return {
        "links": merged_bodies(links, link_cols),
        "drums": merged_bodies(drums, drum_cols),
        "sleeves": merged_bodies(sleeves, SLEEVE_COLS),
        "link_transforms": links,
    }


def axis_lines(drawing: geometry.ArmDrawing, radius: float) -> np.ndarray:
    """Each joint's axis as a line through its body: endpoints (2n, 3)."""
    rev = np.array([k == "revolute" for k in drawing.kinds], bool)
    reach = np.where(rev, DRUM[2], SLEEVE[2])[:, None] * radius
    o, z = drawing.joint_origins, drawing.joint_axes
    pts = np.empty((2 * len(o), 3))
    pts[0::2] = o - reach * z
    pts[1::2] = o + reach * z
    return pts


class GLArm(ItemGroup):
    """Draws one pose of an arm; ``setData(drawing=, radius=)`` moves it.

    Parameters
    ----------
    alpha : float
        1 for the real arm; below 1 for a ghost (translucent, drawn after opaque items).
    colours : dict, optional
        ``link``, ``revolute``, ``prismatic`` and ``axis`` colours as ``#RRGGBB``.
    axes : bool
        Draw each joint's axis as a line.
    link_cols, drum_cols : int
        Sides of the round bars and drums (fewer for faint ghosts: software OpenGL pays per triangle).
    """

    def __init__(self, alpha: float = 1.0, colours: dict | None = None, axes: bool = True,
                 link_cols: int = LINK_COLS, drum_cols: int = DRUM_COLS):
        super().__init__()
        c = {"link": palette.LINK, "revolute": palette.REVOLUTE, "prismatic": palette.PRISMATIC,
             "axis": palette.JOINT_AXIS}
        c.update(colours or {})
        self.colours = c
        self.alpha = float(alpha)
        self.link_cols, self.drum_cols = int(link_cols), int(drum_cols)
        self.links = self._mesh(c["link"], smooth=True)
        self.drums = self._mesh(c["revolute"], smooth=True)
        self.sleeves = self._mesh(c["prismatic"], smooth=False)
        self._axes = None
        if axes:
            self._axes = self._own(
                gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=2.0, antialias=False, glOptions="opaque",
                                  color=palette.rgba(c["axis"], 0.85 * self.alpha))
            )
        self.link_transforms = np.zeros((0, 4, 4))

    def _mesh(self, colour: str, smooth: bool):
        item = gl.GLMeshItem(meshdata=unit_cylinder(4), color=palette.rgba(colour, self.alpha), shader=body_shader(),
                             smooth=smooth, glOptions=dict(SEE_THROUGH if self.alpha < 1 else SOLID))
        if self.alpha < 1:
            item.setDepthValue(10)
        item._wanted = False
        return self._own(item)

    def show_arrays(self, arrays: dict) -> None:
        """Show bodies from :func:`body_arrays` output (or several of them concatenated)."""
        for key, item in (("links", self.links), ("drums", self.drums), ("sleeves", self.sleeves)):
            verts, faces, normals = arrays[key]
            if len(faces) == 0:
                self.want(item, False, self._visible)
                continue
            item.setMeshData(meshdata=mesh_data(verts, faces, normals))
            self.want(item, True, self._visible)
        self.link_transforms = arrays.get("link_transforms", np.zeros((0, 4, 4)))

    def setData(self, **kw) -> None:
        """``drawing`` (:class:`~poser.ui.geometry.ArmDrawing`), ``radius`` (link bar radius, arm length unit)."""
        check_keywords("GLArm", kw, ("drawing", "radius"))
        drawing = kw["drawing"]
        if not isinstance(drawing, geometry.ArmDrawing):
            raise PoserValueError(f"drawing must be an ArmDrawing, got {type(drawing).__name__}")
        radius = as_size("radius", kw["radius"])
        self.show_arrays(body_arrays(drawing, radius, self.link_cols, self.drum_cols))
        if self._axes is not None:
            self._axes.setData(pos=axis_lines(drawing, radius))
            self.want(self._axes, len(drawing.kinds) > 0, self._visible)


def concatenate_arrays(parts) -> dict:
    """Several :func:`body_arrays` results as one (faces renumbered)."""
    out = {}
    for key in ("links", "drums", "sleeves"):
        verts, faces, normals, base = [], [], [], 0
        for p in parts:
            v, f, n = p[key]
            verts.append(v)
            faces.append(f + base)
            normals.append(n)
            base += len(v)
        out[key] = (np.concatenate(verts).reshape(-1, 3) if verts else np.zeros((0, 3)),
                    np.concatenate(faces).reshape(-1, 3) if faces else np.zeros((0, 3), np.int32),
                    np.concatenate(normals).reshape(-1, 3) if normals else np.zeros((0, 3)))
    return out
