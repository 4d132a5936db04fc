"""The 2D three-view (front, side, top) used when no OpenGL context can be made.

It shows what the 3D view shows where a flat drawing can: the arm on its mount plate, the floor line,
the target and the nearest reachable point, ghost branches with their row numbers (dashed beyond the
limits) and, in red, parts of the arm behind the floor or the mount with their depth.
"""

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
MAX_GHOSTS = 24
"""Faint ghosts drawn per projection (the hovered or selected one is drawn whatever its row)."""
GHOSTS_WITHIN_ONLY = "ghosts_within_limits_only"


def _faint(colour: str, alpha: int) -> QColor:
    c = QColor(colour)
    c.setAlpha(alpha)
    return c


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
                "ghost_labels": [],
                "below_labels": [],
                "mount": p.plot(pen=pg.mkPen(palette.MOUNT, width=4)),
                "hatch": p.plot(pen=pg.mkPen(palette.GRID_AXES, width=1)),
                "link": p.plot(pen=pg.mkPen(palette.LINK, width=6)),
                "below": p.plot(pen=pg.mkPen(palette.AT, width=7)),
                "joints": pg.ScatterPlotItem(size=12, pen=pg.mkPen(palette.TEXT), brush=pg.mkBrush(palette.REVOLUTE)),
                "tool": p.plot(pen=None, symbol="+", symbolSize=14, symbolPen=pg.mkPen(palette.TOOL, width=2)),
                "target": pg.ScatterPlotItem(size=14, symbol="o", pen=pg.mkPen(palette.TARGET, width=2), brush=None),
                "nearest_line": p.plot(pen=pg.mkPen(palette.NEAREST, width=2, style=Qt.PenStyle.DashLine)),
                "nearest": pg.ScatterPlotItem(size=13, symbol="d", pen=pg.mkPen(palette.TEXT),
                                              brush=pg.mkBrush(palette.NEAREST)),
                "trail": p.plot(pen=pg.mkPen(palette.TRAIL, width=1.5)),
            }
            if v == 2:  # the floor (world z = 0) seen edge-on
                floor = pg.InfiniteLine(pos=0.0, angle=0, pen=pg.mkPen(palette.GRID_AXES, width=1.5))
                p.addItem(floor)
                items["floor"] = floor
            p.addItem(items["joints"])
            p.addItem(items["target"])
            p.addItem(items["nearest"])
            self.plots.append(p)
            self._items.append(items)
        legend = QLabel(
            "<b>Key</b><br>"
            f"<span style='color:{palette.LINK}'>━━</span> links &nbsp; "
            f"<span style='color:{palette.MOUNT}'>━━</span> mount plate<br>"
            f"<span style='color:{palette.REVOLUTE}'>●</span> rotary joint (circle) &nbsp; "
            f"<span style='color:{palette.PRISMATIC}'>■</span> linear joint (square)<br>"
            f"<span style='color:{palette.TOOL}'>✚</span> tool point &nbsp; "
            f"<span style='color:{palette.TARGET}'>○</span> target &nbsp; "
            f"<span style='color:{palette.NEAREST}'>◆</span> nearest reachable point<br>"
            f"<span style='color:{palette.GHOST}'>━━</span> IK branch within limits, "
            f"<span style='color:{palette.GHOST_OUT}'>╍╍</span> beyond a limit; numbered by row "
            "(hovered or selected: darker)<br>"
            f"<span style='color:{palette.AT}'>━━</span> part below the floor or behind the mount<br>"
            f"<span style='color:{palette.TRAIL}'>━━</span> tool trail<br><br>"
            "Mouse: drag to pan, wheel to zoom, right-click for more."
        )
        legend.setWordWrap(True)
        legend.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        legend.setContentsMargins(12, 12, 12, 12)
        lay.addWidget(legend, 2, 1)
        self._trail = geometry.ToolTrail()
        self.below_parts: list = []
        state.changed.connect(self._on_state)
        self.redraw()

    def _proj(self, pts, h, v, sign):
        pts = np.asarray(pts, float).reshape(-1, 3)
        return sign * pts[:, h], pts[:, v]

    def _path(self, d: geometry.ArmDrawing):
        return self._polyline(d.segments)

    @staticmethod
    def _polyline(segs) -> np.ndarray:
        """Segments (m, 2, 3) as one polyline with NaN breaks where they do not join."""
        segs = np.asarray(segs, float).reshape(-1, 2, 3)
        if len(segs) == 0:
            return np.zeros((0, 3))
        out = [segs[0, 0]]
        for a, b in segs:
            if np.linalg.norm(a - out[-1]) > 1e-9:
                out.append(np.array([np.nan] * 3))
                out.append(a)
            out.append(b)
        return np.array(out)

    @staticmethod
    def _text_pool(p, pool, n, anchor=(0.0, 1.0)):
        while len(pool) < n:
            t = pg.TextItem("", anchor=anchor, fill=pg.mkBrush(250, 249, 244, 215))
            p.addItem(t)
            pool.append(t)
        for t in pool[n:]:
            t.setVisible(False)
        return pool[:n]

    def _ghost_shapes(self):
        """``(polyline, pen, label point, label text, label colour)`` for the ghosts to draw."""
        st = self.state
        if not st.option("show_ghosts"):
            return [], []
        groups, index = st.ghost_drawings()
        strong = geometry.strong_group(index, st.hovered, st.selected)
        within_only = bool(st.options.get(GHOSTS_WITHIN_ONLY, False))
        keep = [k for k, g in enumerate(groups) if g.within_limits or not within_only][:MAX_GHOSTS]
        if strong >= 0 and strong not in keep:
            keep.append(strong)
        shapes = []
        for k in keep:
            g = groups[k]
            colour = palette.GHOST if g.within_limits else palette.GHOST_OUT
            style = Qt.PenStyle.SolidLine if g.within_limits else Qt.PenStyle.DashLine  # not only colour
            if k == strong:
                pen = pg.mkPen(palette.GHOST_HOVER if g.within_limits else palette.GHOST_OUT_HOVER, width=4,
                               style=style)
            else:
                pen = pg.mkPen(_faint(colour, 130 if g.within_limits else 190), width=2, style=style)
            shapes.append((self._path(g.drawing), pen))
        labels = []
        for same in geometry.coinciding_groups([groups[k].anchor for k in keep], 1e-3 * st.scale):
            ks = [keep[m] for m in same]
            inside = any(groups[k].within_limits for k in ks)
            labels.append((groups[ks[0]].anchor, geometry.number_list(r + 1 for k in ks for r in groups[k].rows),
                           palette.GHOST_HOVER if inside else palette.GHOST_OUT_HOVER))
        return shapes, labels

    def redraw(self) -> None:
        st = self.state
        d = st.drawing()
        path = self._path(d)
        self._trail.add(d.frames[-1, :3, 3])
        kinds = d.kinds
        brushes = [pg.mkBrush(palette.REVOLUTE if k == "revolute" else palette.PRISMATIC) for k in kinds]
        symbols = ["o" if k == "revolute" else "s" for k in kinds]  # shape, not only colour, tells the type
        ghosts, ghost_labels = self._ghost_shapes()
        plate = geometry.mount_plate(st.chain.base, st.scale)
        corners = np.array([plate[:3, 3] + plate[:3, 2] + sx * plate[:3, 0] + sy * plate[:3, 1]
                            for sx, sy in ((-1, -1), (1, -1), (1, 1), (-1, 1), (-1, -1))])
        hatch = self._polyline(geometry.mount_hatch(st.chain.base, st.scale))
        self.below_parts = st.below_mount()
        pieces = [s for _, s in geometry.below_pieces(st.chain, d)] if self.below_parts else []
        below = self._polyline(np.concatenate(pieces)) if pieces else np.zeros((0, 3))
        marks = geometry.below_marks(st.chain, self.below_parts)
        nearest = None
        if st.target is not None and st.ik is not None and getattr(st.ik, "nearest_point", None) is not None:
            nearest = np.asarray(st.ik.nearest_point, float).reshape(3)
        for (_title, h, v, sign), p, items in zip(PROJECTIONS, self.plots, self._items):
            x, y = self._proj(path, h, v, sign)
            items["link"].setData(x, y, connect="finite")
            items["mount"].setData(*self._proj(corners, h, v, sign))
            items["hatch"].setData(*self._proj(hatch, h, v, sign), connect="finite")
            items["below"].setData(*self._proj(below, h, v, sign), connect="finite")
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
            if nearest is not None:
                items["nearest"].setData(*self._proj(nearest, h, v, sign))
                items["nearest_line"].setData(*self._proj(np.array([st.target.xyz, nearest]), h, v, sign))
            else:
                items["nearest"].setData([], [])
                items["nearest_line"].setData([], [])
            pool = items["ghosts"]
            while len(pool) < len(ghosts):  # a pool of line items, reused (never removed)
                pool.append(p.plot(pen=pg.mkPen(palette.GHOST, width=2)))
            for k, g in enumerate(pool):
                if k < len(ghosts):
                    gx, gy = self._proj(ghosts[k][0], h, v, sign)
                    g.setData(gx, gy, pen=ghosts[k][1], connect="finite")
                else:
                    g.setData([], [])
            for t, (pt, text, colour) in zip(self._text_pool(p, items["ghost_labels"], len(ghost_labels)),
                                             ghost_labels):
                t.setText(text, color=colour)
                t.setPos(*(float(c[0]) for c in self._proj(pt, h, v, sign)))
                t.setVisible(True)
            for t, (pt, text, plane) in zip(self._text_pool(p, items["below_labels"], len(marks)), marks):
                t.setText(text, color=palette.PLANE_COLOURS[plane])
                t.setPos(*(float(c[0]) for c in self._proj(pt, h, v, sign)))
                t.setVisible(True)

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
