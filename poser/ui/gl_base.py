"""Small base for the 3D view's drawables: a group of pyqtgraph GL items added and shown together."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl
from OpenGL import GL
from PySide6.QtGui import QMatrix4x4

from poser.core.errors import PoserValueError

_MESHES: dict = {}
_SHADER = None

SOLID = {GL.GL_DEPTH_TEST: True, GL.GL_BLEND: False, GL.GL_CULL_FACE: True}
"""GL state for closed opaque bodies: back faces are culled (software OpenGL rasterises half as much)."""

SEE_THROUGH = {
    GL.GL_DEPTH_TEST: True, GL.GL_BLEND: True, GL.GL_CULL_FACE: True,
    "glBlendFuncSeparate": (GL.GL_SRC_ALPHA, GL.GL_ONE_MINUS_SRC_ALPHA, GL.GL_ONE, GL.GL_ONE_MINUS_SRC_ALPHA),
}
"""GL state for closed translucent bodies (ghosts): blended, only the faces turned to the viewer."""

FLAT_2D = {GL.GL_DEPTH_TEST: False, GL.GL_CULL_FACE: False}
"""GL state before a QPainter draws over the scene: the face culling of the bodies drawn before it must
not cull the painter's own triangles (plates and lines went missing when a culled mesh came last)."""


def check_keywords(owner: str, kw: dict, required: tuple = (), optional: tuple = ()) -> None:
    """Raise PoserValueError unless ``kw`` has every ``required`` name and nothing but those and ``optional``."""
    unknown = sorted(set(kw) - set(required) - set(optional))
    missing = [k for k in required if k not in kw]
    if unknown or missing:
        parts = []
        if missing:
            parts.append(f"missing {', '.join(missing)}")
        if unknown:
            parts.append(f"unknown {', '.join(unknown)}")
        known = ", ".join(list(required) + list(optional))
        raise PoserValueError(f"{owner}.setData takes {known}; got {'; '.join(parts)}")


def as_points(name: str, value, shape_tail: tuple = (3,)) -> np.ndarray:
    """``value`` as a finite float array of shape (..., *shape_tail); PoserValueError naming ``name`` otherwise."""
    try:
        a = np.asarray(value, float)
    except (TypeError, ValueError):
        raise PoserValueError(f"{name} must be numbers of shape (..., {', '.join(map(str, shape_tail))}), "
                              f"got {type(value).__name__}") from None
    if a.ndim < len(shape_tail) or a.shape[a.ndim - len(shape_tail):] != tuple(shape_tail):
        raise PoserValueError(f"{name} must have shape (..., {', '.join(map(str, shape_tail))}), got shape {a.shape}")
    if not np.all(np.isfinite(a)):
        raise PoserValueError(f"{name} must be finite, got a value that is not")
    return a


def as_size(name: str, value, allow_zero: bool = False) -> float:
    """``value`` as a positive finite float; PoserValueError naming ``name`` otherwise."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise PoserValueError(f"{name} must be a number, got {value!r}") from None
    if not np.isfinite(v) or v < 0 or (v == 0 and not allow_zero):
        raise PoserValueError(f"{name} must be a {'non-negative' if allow_zero else 'positive'} finite number, "
                              f"got {v!r}")
    return v


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
        _MESHES[cols] = mesh_data(*cylinder_arrays(cols, flat=cols <= 4))
    return _MESHES[cols]


def merged_bodies(transforms, cols: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Vertices (k*V, 3), faces (k*F, 3) and vertex normals (k*V, 3) of unit cylinders placed by
    ``transforms`` (k, 4, 4) whose linear part is a rotation times diag(r, r, length).

    With equal x and y scales the inverse transpose turns every normal of the cylinder (radial on
    the sides, along z on the caps) in the rotation's direction, so normals are the rotation's
    columns applied to them: no inverse is needed.
    """
    md = unit_cylinder(cols)
    V, F, N = md.vertexes(), md.faces(), md.vertexNormals()
    T = np.asarray(transforms, float).reshape(-1, 4, 4)
    A = T[:, :3, :3]
    verts = np.einsum("kij,vj->kvi", A, V) + T[:, None, :3, 3]
    R = A / np.linalg.norm(A, axis=1, keepdims=True)  # unit columns: the rotation
    normals = np.einsum("kij,vj->kvi", R, N)
    faces = F[None, :, :] + (np.arange(len(T)) * len(V))[:, None, None]
    return verts.reshape(-1, 3), faces.reshape(-1, 3), normals.reshape(-1, 3)


def unit_sphere() -> gl.MeshData:
    if "sphere" not in _MESHES:
        md = gl.MeshData.sphere(rows=10, cols=16, radius=1.0)
        v = md.vertexes()
        _MESHES["sphere"] = mesh_data(v, md.faces(), v / np.linalg.norm(v, axis=1, keepdims=True))
    return _MESHES["sphere"]


class ItemGroup:
    """Several GL items that are added to a view and shown or hidden together.

    Text labels are not GL items of their own: they are entries of the view's one label layer
    (:class:`poser.ui.gl_labels.GLLabelLayer`) and are shown and hidden with the group too.
    """

    def __init__(self):
        self.items: list = []
        self.labels: list = []
        self._view = None
        self._visible = True

    def _own_label(self, label):
        """Keep a label of the view's label layer with the group (shown and hidden with it)."""
        self.labels.append(label)
        label.setVisible(self._visible and getattr(label, "_wanted", True))
        return label

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
        for it in self.items + self.labels:
            it.setVisible(self._visible and getattr(it, "_wanted", True))

    def visible(self) -> bool:
        return self._visible

    @staticmethod
    def want(item, on: bool, group_visible: bool = True) -> None:
        """Show or hide one item of the group (kept hidden while the whole group is)."""
        item._wanted = bool(on)
        vis = bool(on) and group_visible
        if item.visible() != vis:
            item.setVisible(vis)
