"""A reach study's targets in the 3D view, coloured AND shaped by verdict (never by colour alone):
a ball where reached within limits, a star of crossed bars where every reaching branch breaks a limit,
a wire diamond where nothing reaches, a grey ball where the solver failed."""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_points, as_size, check_keywords
from poser.ui.studies import VERDICT_COLOURS

REACHED, BLOCKED, OUT, FAULT = "reached", "blocked by limits", "out of reach", "fault"
VERDICTS = (REACHED, BLOCKED, OUT, FAULT)

_STAR = np.array([[sx, sy, 1.0] for sx in (-1, 1) for sy in (-1, 1)])  # the cube's four body diagonals
_DIAMOND = np.array([[a, b] for a, b in ((0, 2), (0, 3), (0, 4), (0, 5), (1, 2), (1, 3), (1, 4), (1, 5),
                                         (2, 4), (4, 3), (3, 5), (5, 2))])
_TIPS = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)


def star_segments(P, half) -> np.ndarray:
    """Four crossed bars through each point (N, 3), ``half`` long each way: segment ends (8N, 3)."""
    ends = np.stack([-_STAR, _STAR], axis=1) * half  # (4, 2, 3)
    return (np.asarray(P, float)[:, None, None, :] + ends[None]).reshape(-1, 3)


def diamond_segments(P, half) -> np.ndarray:
    """A wire octahedron (12 edges) about each point (N, 3), tips ``half`` away: segment ends (24N, 3)."""
    tips = _TIPS * half
    return (np.asarray(P, float)[:, None, None, :] + tips[_DIAMOND][None]).reshape(-1, 3)


class GLReach(ItemGroup):
    """``setData(points=(N, 3), verdicts=[N str], size=)``: ``size`` is the half size of a mark (length unit);
    balls are drawn in pixels."""

    def __init__(self):
        super().__init__()
        rgba = {k: palette.rgba(c, 1.0) for k, c in VERDICT_COLOURS.items()}
        self._balls = {k: self._own(gl.GLScatterPlotItem(pos=np.zeros((1, 3)), size=11.0, pxMode=True, color=rgba[k],
                                                         glOptions="opaque")) for k in (REACHED, FAULT)}
        self._star = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=3.0, color=rgba[BLOCKED],
                                                 antialias=False, glOptions="opaque"))
        self._diamond = self._own(gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=2.0, color=rgba[OUT],
                                                    antialias=False, glOptions="opaque"))
        self.counts = dict.fromkeys(VERDICTS, 0)

    def setData(self, **kw) -> None:
        check_keywords("GLReach", kw, ("points", "verdicts", "size"))
        P = as_points("points", kw["points"]).reshape(-1, 3)
        verdicts = list(kw["verdicts"])
        if len(verdicts) != len(P):
            raise PoserValueError(f"verdicts must have one entry per point ({len(P)}), got {len(verdicts)}")
        bad = sorted({v for v in verdicts if v not in VERDICTS})
        if bad:
            raise PoserValueError(f"verdicts must be among {', '.join(VERDICTS)}, got {', '.join(map(repr, bad))}")
        half = as_size("size", kw["size"])
        kinds = np.array(verdicts, dtype=object)
        for k in VERDICTS:
            self.counts[k] = int(np.sum(kinds == k)) if len(kinds) else 0
        for k, item in self._balls.items():
            sel = P[kinds == k] if len(P) else P
            if len(sel):
                item.setData(pos=sel)
            self.want(item, bool(len(sel)), self._visible)
        for k, item, make in ((BLOCKED, self._star, star_segments), (OUT, self._diamond, diamond_segments)):
            sel = P[kinds == k] if len(P) else P
            if len(sel):
                item.setData(pos=make(sel, half))
            self.want(item, bool(len(sel)), self._visible)
