"""The 2D three-view (front, side, top) used when no OpenGL context can be made."""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QGridLayout, QLabel, QWidget

from poser.ui import geometry, palette
from poser.ui.state import PoseState

# (title, horizontal axis index, vertical axis index, horizontal sign)
PROJECTIONS = (
    ("front (looking along −x)", 1, 2, 1.0),
    ("side (looking along +y)", 0, 2, 1.0),
    ("top (looking down −z)", 0, 1, 1.0),
)


class View2D(QWidget):
    """Observes the state; draws the arm, frames, target and branches projected on three planes."""

    kind = "2d"

    def __init__(self, state: PoseState, reason: str, parent=None):
        super().__init__(parent)
        self.state = state
        self.reason = reason
        pg.setConfigOptions(antialias=True, background=palette.BACKGROUND, foreground=palette.TEXT)
        lay = QGridLayout(self)
        lay.setContentsMargins(2, 2, 2, 2)
        note = QLabel(f"2D three-view — {reason}")
        note.setWordWrap(True)
        note.setStyleSheet(f"color: {palette.NEAR}; font-weight: bold")
        lay.addWidget(note, 0, 0, 1, 2)
        self.plots = []
        self._items = []
        L = state.chain.units.length
        axis_names = "xyz"
        for k, (title, h, v, sign) in enumerate(PROJECTIONS):
            p = pg.PlotWidget(title=title)
            p.setMinimumSize(160, 120)
            p.setAspectLocked(True)
            p.showGrid(x=True, y=True, alpha=0.3)
            for side, text in (("bottom", f"{'−' if sign < 0 else ''}{axis_names[h]} ({L})"),
                               ("left", f"{axis_names[v]} ({L})")):
                axis = p.getAxis(side)
                # ticks in the arm's own unit: pyqtgraph would otherwise rescale them (700 on an axis in m)
                axis.enableAutoSIPrefix(False)
                axis.setLabel(text)
            lay.addWidget(p, 1 + k // 2, k % 2)
            items = {
                "ghosts": [],
                "link": p.plot(pen=pg.mkPen(palette.LINK, width=6)),
                "joints": pg.ScatterPlotItem(size=12, pen=pg.mkPen(palette.TEXT), brush=pg.mkBrush(palette.REVOLUTE)),
                "tool": p.plot(pen=None, symbol="+", symbolSize=14, symbolPen=pg.mkPen(palette.TOOL, width=2)),
                "target": pg.ScatterPlotItem(size=14, symbol="o", pen=pg.mkPen(palette.TARGET, width=2), brush=None),
                "trail": p.plot(pen=pg.mkPen(palette.TRAIL, width=1.5)),
            }
            p.addItem(items["joints"])
            p.addItem(items["target"])
            self.plots.append(p)
            self._items.append(items)
        legend = QLabel(
            "<b>Key</b><br>"
            f"<span style='color:{palette.LINK}'>━━</span> links<br>"
            f"<span style='color:{palette.REVOLUTE}'>●</span> rotary joint (circle) &nbsp; "
            f"<span style='color:{palette.PRISMATIC}'>■</span> linear joint (square)<br>"
            f"<span style='color:{palette.TOOL}'>✚</span> tool point &nbsp; "
            f"<span style='color:{palette.TARGET}'>○</span> target<br>"
            f"<span style='color:{palette.GHOST}'>━━</span> IK branches (hovered or selected: darker)<br>"
            f"<span style='color:{palette.TRAIL}'>━━</span> tool trail<br><br>"
            "Mouse: drag to pan, wheel to zoom, right-click for more."
        )
        legend.setWordWrap(True)
        legend.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        legend.setContentsMargins(12, 12, 12, 12)
        lay.addWidget(legend, 2, 1)
        self._trail = geometry.ToolTrail()
        state.changed.connect(self._on_state)
        self.redraw()

    def _proj(self, pts, h, v, sign):
        pts = np.asarray(pts, float).reshape(-1, 3)
        return sign * pts[:, h], pts[:, v]

    def _path(self, d: geometry.ArmDrawing):
        segs = d.segments
        if len(segs) == 0:
            return np.zeros((0, 3))
        out = [segs[0, 0]]
        for a, b in segs:
            if np.linalg.norm(a - out[-1]) > 1e-9:
                out.append(np.array([np.nan] * 3))
                out.append(a)
            out.append(b)
        return np.array(out)

    def redraw(self) -> None:
        st = self.state
        d = st.drawing()
        path = self._path(d)
        self._trail.add(d.frames[-1, :3, 3])
        kinds = d.kinds
        brushes = [pg.mkBrush(palette.REVOLUTE if k == "revolute" else palette.PRISMATIC) for k in kinds]
        symbols = ["o" if k == "revolute" else "s" for k in kinds]  # shape, not only colour, tells the type
        drawings, index = geometry.distinct_drawings(st.chain, [b.q for b in st.branches])
        ghost_paths = [self._path(d) for d in drawings[:12]]
        strong = st.hovered if st.hovered >= 0 else st.selected
        strong = index[strong] if strong >= 0 else -1
        for (_title, h, v, sign), p, items in zip(PROJECTIONS, self.plots, self._items):
            x, y = self._proj(path, h, v, sign)
            items["link"].setData(x, y, connect="finite")
            jx, jy = self._proj(d.joint_origins, h, v, sign)
            items["joints"].setData(jx, jy, brush=brushes, symbol=symbols)
            tx, ty = self._proj(d.frames[-1, :3, 3], h, v, sign)
            items["tool"].setData(tx, ty)
            if st.option("show_trail"):
                rx, ry = self._proj(self._trail.points, h, v, sign)
                items["trail"].setData(rx, ry)
            else:
                items["trail"].setData([], [])
            if st.target is not None:
                gx, gy = self._proj(st.target.xyz, h, v, sign)
                items["target"].setData(gx, gy)
            else:
                items["target"].setData([], [])
            shown = ghost_paths if st.option("show_ghosts") else []
            pool = items["ghosts"]
            while len(pool) < len(shown):  # a pool of line items, reused (never removed)
                pool.append(p.plot(pen=pg.mkPen(palette.GHOST, width=2)))
            for k, g in enumerate(pool):
                if k < len(shown):
                    pen = pg.mkPen(palette.GHOST_HOVER, width=4)
                    if k != strong:  # faint, see-through
                        c = QColor(palette.GHOST)
                        c.setAlpha(120)
                        pen = pg.mkPen(c, width=2)
                    gx, gy = self._proj(shown[k], h, v, sign)
                    g.setData(gx, gy, pen=pen, connect="finite")
                else:
                    g.setData([], [])

    def clear_trail(self) -> None:
        self._trail.clear()
        self.redraw()

    def fit(self) -> None:
        for p in self.plots:
            p.enableAutoRange()

    def set_view(self, name: str) -> None:
        self.fit()

    def _on_state(self, field: str) -> None:
        if field == "arm":
            self._trail.clear()
            self.fit()
        if field in ("arm", "q", "target", "ik", "selected", "hovered", "options"):
            self.redraw()
