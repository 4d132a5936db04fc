"""Labelled coordinate triads (x red, y green, z blue, as is common practice) for base, tool and joint frames.

Each axis carries its letter (x, y, z) at its tip, so the axes read without colour; each triad its
name.  Texts are entries of the view's label layer (:mod:`poser.ui.gl_labels`), which merges the
names of coinciding frames ("F4, F5") and keeps labels from covering each other.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_points, as_size, check_keywords
from poser.ui.gl_labels import label_font

_AXIS_RGBA = np.array([palette.rgba(c) for c in palette.AXIS_COLOURS])
AXIS_LETTERS = ("x", "y", "z")


def triad_lines(frames, size: float) -> tuple[np.ndarray, np.ndarray]:
    """Line endpoints (6k, 3) and colours (6k, 4) for triads of length ``size`` at ``frames`` (k, 4, 4)."""
    F = np.asarray(frames, float).reshape(-1, 4, 4)
    o = F[:, :3, 3]
    pts = np.empty((len(F), 3, 2, 3))
    for a in range(3):
        pts[:, a, 0] = o
        pts[:, a, 1] = o + size * F[:, :3, a]
    cols = np.repeat(np.repeat(_AXIS_RGBA[None, :, None, :], 2, axis=2), len(F), axis=0)
    return pts.reshape(-1, 3), cols.reshape(-1, 4)


class GLTriads(ItemGroup):
    """Any number of labelled triads drawn as one line item; names and axis letters go to ``layer``.

    Parameters
    ----------
    layer : GLLabelLayer or None
        Where the texts go (None: no texts, for tests of the lines alone).
    width : float
        Line width in pixels.
    font_size : int
        Point size of the names (letters are a point smaller).
    label_colour : str
        ``#RRGGBB`` of the names.
    letters : bool
        Write x, y, z at the axis tips.
    """

    def __init__(self, layer=None, width: float = 3.0, font_size: int = 10, label_colour: str = palette.TEXT,
                 letters: bool = True):
        super().__init__()
        self._layer = layer
        self._lines = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=width, antialias=False,
                                                  glOptions="opaque"))
        self._labels: list = []
        self._letters: list = []
        self._font = label_font(font_size)
        self._letter_font = label_font(max(font_size - 1, 7))
        self._colour = label_colour
        self._with_letters = bool(letters)
        self.frames = np.zeros((0, 4, 4))

    def setData(self, **kw) -> None:
        """``frames`` (k, 4, 4), ``labels`` (k texts), ``size`` (axis length, arm length unit)."""
        check_keywords("GLTriads", kw, ("frames", "labels", "size"))
        frames = as_points("frames", kw["frames"], (4, 4)).reshape(-1, 4, 4)
        labels = [str(t) for t in kw["labels"]]
        if len(labels) != len(frames):
            from poser.core.errors import PoserValueError

            raise PoserValueError(f"labels must name each of the {len(frames)} frames, got {len(labels)}")
        size = as_size("size", kw["size"])
        self.frames = frames
        if len(frames) == 0:
            self.want(self._lines, False, self._visible)
        else:
            pts, cols = triad_lines(frames, size)
            self._lines.setData(pos=pts, color=cols)
            self.want(self._lines, True, self._visible)
        if self._layer is None:
            return
        while len(self._labels) < len(frames):
            self._labels.append(self._own_label(self._layer.new_label("frame", self._colour, self._font)))
            if self._with_letters:
                for a in range(3):
                    self._letters.append(self._own_label(
                        self._layer.new_label("axis", palette.AXIS_COLOURS[a], self._letter_font)))
        for k, item in enumerate(self._labels):
            if k < len(frames):
                F = frames[k]
                item.setData(pos=F[:3, 3], text=labels[k])  # at the origin: coinciding frames share one label
                self.want(item, True, self._visible)
            else:
                self.want(item, False, self._visible)
        for j, item in enumerate(self._letters):
            k, a = divmod(j, 3)
            if k < len(frames) and size > 0:
                F = frames[k]
                item.setData(pos=F[:3, 3] + 1.08 * size * F[:3, a], text=AXIS_LETTERS[a])
                self.want(item, True, self._visible)
            else:
                self.want(item, False, self._visible)
