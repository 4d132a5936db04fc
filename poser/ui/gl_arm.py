"""The arm as solid bodies: links as round bars, turning joints as drums, sliding joints as square sleeves,
every joint axis drawn as a thin line through its body.

All bodies of one kind are one mesh, rebuilt from the body transforms on every
pose (a few hundred vertices): three draw calls per arm instead of one per body,
which is what software OpenGL is slow at.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.ui import geometry, palette
from poser.ui.gl_base import ItemGroup, body_shader, mesh_data, unit_cylinder

LINK_COLS, DRUM_COLS, SLEEVE_COLS = 16, 20, 4


def merged_bodies(transforms, cols: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Vertices (k*V, 3), faces (k*F, 3) and vertex normals (k*V, 3) of unit cylinders placed by
    ``transforms`` (k, 4, 4).  Normals go through the inverse transpose of each body's linear part."""
    md = unit_cylinder(cols)
    V, F, N = md.vertexes(), md.faces(), md.vertexNormals()
    T = np.asarray(transforms, float).reshape(-1, 4, 4)
    A = T[:, :3, :3]
    verts = np.einsum("kij,vj->kvi", A, V) + T[:, None, :3, 3]
    normals = np.einsum("kji,vj->kvi", np.linalg.inv(A), N)
    normals /= np.linalg.norm(normals, axis=-1, keepdims=True)
    faces = F[None, :, :] + (np.arange(len(T)) * len(V))[:, None, None]
    return verts.reshape(-1, 3), faces.reshape(-1, 3), normals.reshape(-1, 3)


class GLArm(ItemGroup):
    """Draws one pose of an arm; ``setData(drawing, radius)`` moves it.

    Parameters
    ----------
    alpha : float
        1 for the real arm; below 1 for a ghost (translucent, drawn after opaque items).
    colours : dict, optional
        ``link``, ``revolute``, ``prismatic`` and ``axis`` colours as ``#RRGGBB``.
    axes : bool
        Draw each joint's axis as a line.
    """

    def __init__(self, alpha: float = 1.0, colours: dict | None = None, axes: bool = True):
        super().__init__()
        c = {"link": palette.LINK, "revolute": palette.REVOLUTE, "prismatic": palette.PRISMATIC,
             "axis": palette.JOINT_AXIS}
        c.update(colours or {})
        self.colours = c
        self.alpha = float(alpha)
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
        opts = "translucent" if self.alpha < 1 else "opaque"
        item = gl.GLMeshItem(meshdata=unit_cylinder(4), color=palette.rgba(colour, self.alpha), shader=body_shader(),
                             smooth=smooth, glOptions=opts)
        if self.alpha < 1:
            item.setDepthValue(10)
        item._wanted = False
        return self._own(item)

    def _show(self, item, transforms, cols: int) -> None:
        if len(transforms) == 0:
            self.want(item, False, self._visible)
            return
        verts, faces, normals = merged_bodies(transforms, cols)
        item.setMeshData(meshdata=mesh_data(verts, faces, normals))
        self.want(item, True, self._visible)

    def setData(self, drawing: geometry.ArmDrawing, radius: float) -> None:
        """Show ``drawing`` with link bars of ``radius`` (arm length unit)."""
        links = [geometry.segment_transform(a, b, radius) for a, b in drawing.segments]
        self.link_transforms = np.array([T for T in links if T is not None]).reshape(-1, 4, 4)
        self._show(self.links, self.link_transforms, LINK_COLS)
        drums, sleeves = [], []
        n = len(drawing.kinds)
        axis_pts = np.zeros((2 * n, 3))
        for i in range(n):
            o, z = drawing.joint_origins[i], drawing.joint_axes[i]
            if drawing.kinds[i] == "revolute":
                drums.append(geometry.axis_body_transform(o, z, 1.55 * radius, 2.6 * radius))
                reach = 3.6 * radius
            else:
                sleeves.append(geometry.axis_body_transform(o, z, 1.35 * radius, 4.0 * radius))
                reach = 4.2 * radius
            axis_pts[2 * i] = o - reach * z
            axis_pts[2 * i + 1] = o + reach * z
        self._show(self.drums, drums, DRUM_COLS)
        self._show(self.sleeves, sleeves, SLEEVE_COLS)
        if self._axes is not None:
            self._axes.setData(pos=axis_pts)
