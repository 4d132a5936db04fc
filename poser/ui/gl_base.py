"""Small base for the 3D view's drawables: a group of pyqtgraph GL items added and shown together."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl
from PySide6.QtGui import QMatrix4x4

_MESHES: dict = {}
_SHADER = None


def body_shader():
    """Our shading for solid bodies: a light from above the viewer's right shoulder, plus ambient light,
    so faces turned to the viewer are bright (pyqtgraph's 'shaded' lights them from behind)."""
    global _SHADER
    if _SHADER is None:
        from pyqtgraph.opengl import shaders

        _SHADER = shaders.ShaderProgram("poser_body", [
            shaders.VertexShader("""
                uniform mat4 u_mvp;
                uniform mat3 u_normal;
                attribute vec4 a_position;
                attribute vec3 a_normal;
                attribute vec4 a_color;
                varying vec4 v_color;
                varying vec3 v_normal;
                void main() {
                    v_normal = normalize(u_normal * a_normal);
                    v_color = a_color;
                    gl_Position = u_mvp * a_position;
                }
            """),
            shaders.FragmentShader("""
                #ifdef GL_ES
                precision mediump float;
                #endif
                varying vec4 v_color;
                varying vec3 v_normal;
                void main() {
                    vec3 n = normalize(v_normal);
                    float key = max(dot(n, normalize(vec3(0.35, 0.55, 1.0))), 0.0);
                    float rim = max(dot(n, normalize(vec3(-0.6, -0.2, 0.4))), 0.0);
                    vec3 rgb = v_color.rgb * (0.38 + 0.62 * key + 0.15 * rim);
                    gl_FragColor = vec4(min(rgb, vec3(1.0)), v_color.a);
                }
            """),
        ])
    return _SHADER


def qmatrix(T) -> QMatrix4x4:
    """A numpy 4x4 (row-major) as a QMatrix4x4."""
    return QMatrix4x4(*np.asarray(T, float).ravel().tolist())


def cylinder_arrays(cols: int = 20, flat: bool = False) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A closed cylinder of radius 1 from z = 0 to z = 1: vertices (V, 3), faces (F, 3), outward normals (V, 3).

    ``flat`` gives every side face its own vertices and normal (a square bar for ``cols`` = 4);
    otherwise side normals are radial (a smooth round bar).  The caps have their own vertices.
    """
    ang = 2 * np.pi * (np.arange(cols) + (0.5 if flat else 0.0)) / cols
    ring = np.column_stack([np.cos(ang), np.sin(ang)])
    verts, norms, faces = [], [], []

    def add(v, n):
        verts.append(v)
        norms.append(n)
        return len(verts) - 1

    for k in range(cols):
        a, b = k, (k + 1) % cols
        if flat:
            mid = 0.5 * (ring[a] + ring[b])
            n = np.array([*mid / np.linalg.norm(mid), 0.0])
            na = nb = n
        else:
            na, nb = np.array([*ring[a], 0.0]), np.array([*ring[b], 0.0])
        i0 = add([*ring[a], 0.0], na)
        i1 = add([*ring[b], 0.0], nb)
        i2 = add([*ring[b], 1.0], nb)
        i3 = add([*ring[a], 1.0], na)
        faces += [[i0, i1, i2], [i0, i2, i3]]
    for z, nz in ((0.0, -1.0), (1.0, 1.0)):
        c = add([0.0, 0.0, z], [0.0, 0.0, nz])
        rim = [add([*ring[k], z], [0.0, 0.0, nz]) for k in range(cols)]
        for k in range(cols):
            a, b = rim[k], rim[(k + 1) % cols]
            faces.append([c, a, b] if nz > 0 else [c, b, a])
    return np.array(verts, float), np.array(faces, np.int32), np.array(norms, float)


def mesh_data(verts, faces, normals) -> gl.MeshData:
    """Mesh data with the given vertex normals (V, 3)."""
    md = gl.MeshData(vertexes=verts, faces=faces)
    md._vertexNormals = np.ascontiguousarray(normals, dtype=np.float32)  # exact; pyqtgraph would average them
    return md


def unit_cylinder(cols: int = 20) -> gl.MeshData:
    """:func:`cylinder_arrays` as pyqtgraph mesh data (``cols`` = 4 gives a flat-sided square bar)."""
    if cols not in _MESHES:
        _MESHES[cols] = mesh_data(*cylinder_arrays(cols, flat=cols <= 6))
    return _MESHES[cols]


def unit_sphere() -> gl.MeshData:
    if "sphere" not in _MESHES:
        md = gl.MeshData.sphere(rows=10, cols=16, radius=1.0)
        v = md.vertexes()
        _MESHES["sphere"] = mesh_data(v, md.faces(), v / np.linalg.norm(v, axis=1, keepdims=True))
    return _MESHES["sphere"]


class ItemGroup:
    """Several GL items that are added to a view and shown or hidden together."""

    def __init__(self):
        self.items: list = []
        self._view = None
        self._visible = True

    def _own(self, item):
        self.items.append(item)
        if self._view is not None:
            self._view.addItem(item)
        item.setVisible(self._visible and getattr(item, "_wanted", True))
        return item

    def add_to(self, view) -> None:
        self._view = view
        for it in self.items:
            view.addItem(it)

    def set_visible(self, on: bool) -> None:
        self._visible = bool(on)
        for it in self.items:
            it.setVisible(self._visible and getattr(it, "_wanted", True))

    @staticmethod
    def want(item, on: bool, group_visible: bool = True) -> None:
        """Show or hide one item of the group (kept hidden while the whole group is)."""
        item._wanted = bool(on)
        vis = bool(on) and group_visible
        if item.visible() != vis:
            item.setVisible(vis)
