"""A placement search's coverage map: one tile per base position searched, coloured by the share of the
targets reached from there (the best over the heights and yaws searched), and a ring at the best placement."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_points, as_size, check_keywords
from poser.ui.gl_labels import label_font

NONE = "#D8D4C8"
"""A base position that reaches no target (pale, so the floor grid still reads through the gaps)."""
ALL = palette.OK
"""Every target reached."""
SOME = palette.NEAR
"""Half of them."""


def coverage_colours(share, alpha: float = 1.0) -> np.ndarray:
    """RGBA (..., 4) for shares reached (0 … 1): pale for none, amber at half, green for all."""
    t = np.clip(np.asarray(share, float), 0.0, 1.0)[..., None]
    a, b, c = (np.array(palette.rgba(h, alpha)) for h in (NONE, SOME, ALL))
    return np.where(t <= 0.5, a + (b - a) * (t / 0.5), b + (c - b) * ((t - 0.5) / 0.5))


class GLCoverage(ItemGroup):
    """``setData(x=(nx,), y=(ny,), z=, counts=(ny, nx), total=, best=(3,) or None, size=)``: tiles at height
    ``z`` (length unit), 90 % of the grid spacing wide (``size`` when the grid has one column or row)."""

    def __init__(self, layer=None):
        super().__init__()
        self._tiles = self._own(gl.GLMeshItem(vertexes=np.zeros((3, 3)), faces=np.array([[0, 1, 2]]),
                                              smooth=False, glOptions="opaque", computeNormals=False))
        self._ring = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="line_strip", width=3.0,
                                                 color=palette.rgba(palette.TEXT, 1.0), antialias=False,
                                                 glOptions="opaque"))
        self._label = None
        if layer is not None:
            self._label = self._own_label(layer.new_label("note", palette.TEXT, label_font(9)))
        self.tiles = 0

    def setData(self, **kw) -> None:
        check_keywords("GLCoverage", kw, ("x", "y", "z", "counts", "total", "size"), ("best", "label"))
        x = as_points("x", np.asarray(kw["x"], float)[:, None], (1,)).reshape(-1)
        y = as_points("y", np.asarray(kw["y"], float)[:, None], (1,)).reshape(-1)
        z = float(as_points("z", [kw["z"]], (1,))[0])
        counts = np.asarray(kw["counts"], float)
        if counts.shape != (len(y), len(x)):
            raise PoserValueError(f"counts must have shape ({len(y)}, {len(x)}) (y by x), got shape {counts.shape}")
        total = int(kw["total"])
        if total < 1:
            raise PoserValueError(f"total must be at least 1, got {total}")
        size = as_size("size", kw["size"])
        dx = 0.45 * (float(np.min(np.diff(x))) if len(x) > 1 else size)
        dy = 0.45 * (float(np.min(np.diff(y))) if len(y) > 1 else size)
        X, Y = np.meshgrid(x, y)
        cx, cy = X.ravel(), Y.ravel()
        corners = np.array([[-dx, -dy], [dx, -dy], [dx, dy], [-dx, dy]])
        verts = np.empty((len(cx), 4, 3))
        verts[..., 0] = cx[:, None] + corners[:, 0]
        verts[..., 1] = cy[:, None] + corners[:, 1]
        verts[..., 2] = z
        base = (np.arange(len(cx)) * 4)[:, None]
        faces = np.concatenate([base + [0, 1, 2], base + [0, 2, 3]])
        colours = coverage_colours(counts.ravel() / total)
        self._tiles.setMeshData(vertexes=verts.reshape(-1, 3), faces=faces,
                                faceColors=np.concatenate([colours, colours]))
        self.tiles = len(cx)
        best = kw.get("best")
        if best is not None:
            b = as_points("best", best).reshape(3)
            a = np.linspace(0, 2 * np.pi, 33)
            r = 1.2 * max(dx, dy)
            self._ring.setData(pos=np.stack([b[0] + r * np.cos(a), b[1] + r * np.sin(a), np.full_like(a, z)], axis=1))
            if self._label is not None:
                self._label.setData(pos=b, text=kw.get("label") or "best placement")
        self.want(self._ring, best is not None, self._visible)
        if self._label is not None:
            self.want(self._label, best is not None, self._visible)
