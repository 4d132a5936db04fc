"""The workspace's section outlines: the vertical one through the base axis and a horizontal one."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_points, check_keywords
from poser.ui.gl_labels import label_font

VERTICAL = "#1F4E79"  # dark blue
HORIZONTAL = "#7B1FA2"  # purple


def polyline_segments(lines) -> np.ndarray:
    """Closed or open polylines (each (k, 3)) as segment end points (2·Σ(k − 1), 3) for a ``lines`` item."""
    segs = []
    for i, line in enumerate(lines):
        L = as_points(f"lines[{i}]", line).reshape(-1, 3)
        if len(L) < 2:
            raise PoserValueError(f"lines[{i}] must have at least 2 points, got {len(L)}")
        segs.append(np.stack([L[:-1], L[1:]], axis=1).reshape(-1, 3))
    return np.concatenate(segs) if segs else np.zeros((0, 3))


class GLSections(ItemGroup):
    """``setData(vertical=[(k, 3), …], horizontal=[(k, 3), …], label=str)``: the outlines as lines; the
    label (the horizontal plane's height) beside the horizontal outline."""

    def __init__(self, layer=None):
        super().__init__()
        self._lines = {}
        for key, colour in (("vertical", VERTICAL), ("horizontal", HORIZONTAL)):
            self._lines[key] = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=2.0,
                                                           color=palette.rgba(colour, 1.0), antialias=False,
                                                           glOptions="opaque"))
        self._label = None
        if layer is not None:
            self._label = self._own_label(layer.new_label("note", HORIZONTAL, label_font(9)))
        self.counts = {"vertical": 0, "horizontal": 0}

    def setData(self, **kw) -> None:
        check_keywords("GLSections", kw, ("vertical", "horizontal"), ("label",))
        for key in ("vertical", "horizontal"):
            segs = polyline_segments(kw[key] or [])
            self.counts[key] = len(segs) // 2
            if len(segs):
                self._lines[key].setData(pos=segs)
            self.want(self._lines[key], bool(len(segs)), self._visible)
        if self._label is not None:
            lines = kw["horizontal"] or []
            text = kw.get("label") or ""
            on = bool(lines) and bool(text)
            if on:
                top = max((np.asarray(line, float) for line in lines), key=lambda a: float(a[:, 0].max()))
                self._label.setData(pos=top[int(np.argmax(top[:, 0]))], text=text)
            self.want(self._label, on, self._visible)
