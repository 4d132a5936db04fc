"""The 3D view panel: the arm, its frames, the floor, the trail, the target and ghost branches."""

from __future__ import annotations

import math

import numpy as np
from pyqtgraph.opengl.GLViewWidget import GLViewMixin
from PySide6.QtCore import QRect, Qt, QTimer
from PySide6.QtGui import QAction, QColor, QKeySequence, QSurfaceFormat, QVector3D
from PySide6.QtOpenGL import QOpenGLWindow
from PySide6.QtWidgets import QHBoxLayout, QLabel, QSizePolicy, QToolButton, QVBoxLayout, QWidget

from poser.ui import geometry, palette
from poser.ui.gl_arm import GLArm
from poser.ui.gl_floor import GLFloor
from poser.ui.gl_ghosts import GLGhosts
from poser.ui.gl_target import GLTarget
from poser.ui.gl_trail import GLTrail
from poser.ui.gl_triads import GLTriads
from poser.ui.state import PoseState

VIEWS = {
    # name: (elevation, azimuth) in degrees; pyqtgraph puts the camera at azimuth 0 on +x
    "front": (0.0, 0.0),
    "side": (0.0, -90.0),
    "top": (90.0, -90.0),
    "iso": (28.0, -50.0),
}


class ArmGLView(GLViewMixin, QOpenGLWindow):
    """pyqtgraph's 3D view as a native OpenGL window (embedded with a window container).

    A QOpenGLWidget would make Qt compose the whole main window through OpenGL on
    every frame; with software OpenGL that costs more than drawing the arm.  A
    window of its own is drawn alone.  It counts rendered frames (``frameSwapped``).
    """

    def __init__(self):
        super().__init__()
        fmt = QSurfaceFormat.defaultFormat()
        fmt.setDepthBufferSize(24)
        fmt.setStencilBufferSize(8)
        self.setFormat(fmt)
        self.frames_rendered = 0
        self.frameSwapped.connect(self._count)

    def _count(self):
        self.frames_rendered += 1

    view_keys: dict = {}
    """Plain keys that pick a camera (filled by View3D: key → callable)."""

    def keyPressEvent(self, ev):
        act = self.view_keys.get(ev.key()) if ev.modifiers() == Qt.KeyboardModifier.NoModifier else None
        if act is not None:
            act()
            return
        super().keyPressEvent(ev)

    def rect(self) -> QRect:  # pyqtgraph's text items ask their view for its rectangle, as of a widget
        return QRect(0, 0, self.width(), self.height())


class View3D(QWidget):
    """Observes the state and draws it; its buttons change only the camera and display options."""

    kind = "3d"

    def __init__(self, state: PoseState, parent=None):
        super().__init__(parent)
        self.state = state
        self.view = ArmGLView()
        self.view.setBackgroundColor(QColor(palette.BACKGROUND))
        self.container = QWidget.createWindowContainer(self.view, self)
        self.container.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Expanding)
        self.container.setFocusPolicy(Qt.FocusPolicy.StrongFocus)
        self.container.setAccessibleName("3D view of the arm")
        self.container.setMinimumSize(200, 150)
        self.floor = GLFloor()
        self.arm = GLArm()
        self.triads = GLTriads()
        self.joint_triads = GLTriads(width=2.0, font_size=9)
        self.trail = GLTrail()
        self.target = GLTarget()
        self.ghosts = GLGhosts()
        for group in (self.floor, self.trail, self.arm, self.triads, self.joint_triads, self.target, self.ghosts):
            group.add_to(self.view)
        self._trail = geometry.ToolTrail()

        bar = QHBoxLayout()
        bar.setContentsMargins(4, 2, 4, 2)
        self.buttons = {}
        for key, text, tip, sc in (
            ("front", "Front", "look along −x at the arm's front (F)", "F"),
            ("side", "Side", "look along +y at the arm's side (S)", "S"),
            ("top", "Top", "look down on the arm (T)", "T"),
            ("iso", "Iso", "isometric view (I)", "I"),
            ("fit", "Fit arm", "zoom to fit the whole arm (A)", "A"),
        ):
            b = QToolButton(self)
            b.setText(text)
            b.setToolTip(tip)
            b.clicked.connect(lambda _=False, k=key: self.fit() if k == "fit" else self.set_view(k))
            act = QAction(self)
            act.setShortcut(sc)
            act.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
            act.triggered.connect(b.click)
            self.addAction(act)
            self.view.view_keys = {**self.view.view_keys, QKeySequence(sc)[0].key(): b.click}
            bar.addWidget(b)
            self.buttons[key] = b
        bar.addSpacing(8)
        for key, text, tip in (
            ("show_frames", "Joint frames", "a labelled triad at every joint frame"),
            ("show_trail", "Trail", "the tool point's recent path"),
            ("show_ghosts", "Ghosts", "IK branches as translucent ghost arms"),
        ):
            b = QToolButton(self)
            b.setText(text)
            b.setCheckable(True)
            b.setToolTip(tip)
            b.toggled.connect(lambda on, k=key: self.state.set_option(k, on, writer=self))
            bar.addWidget(b)
            self.buttons[key] = b
        clear = QToolButton(self)
        clear.setText("Clear trail")
        clear.clicked.connect(self.clear_trail)
        bar.addWidget(clear)
        bar.addStretch(1)
        bar2 = QHBoxLayout()
        bar2.setContentsMargins(6, 0, 6, 2)
        self.grid_label = QLabel(self)
        self.grid_label.setAccessibleName("grid spacing")
        bar2.addWidget(self.grid_label)
        bar2.addStretch(1)
        hint = QLabel("mouse: left-drag orbit · middle-drag pan · wheel zoom", self)
        hint.setStyleSheet(f"color: {palette.MUTED}")
        bar2.addWidget(hint)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(0)
        lay.addLayout(bar)
        lay.addLayout(bar2)
        lay.addWidget(self.container, 1)

        self._elev_azim = VIEWS["iso"]
        state.changed.connect(self._on_state)
        self._rebuild()

    # -- camera -----------------------------------------------------------------------
    def set_view(self, name: str) -> None:
        """One of ``front``, ``side``, ``top``, ``iso``; keeps the zoom, then fits."""
        self._elev_azim = VIEWS[name]
        self.fit()

    def fit(self) -> None:
        """Zoom and centre on the whole arm (and the target, if any)."""
        pts = [self.state.drawing().points]
        if self.state.target is not None:
            pts.append(self.state.target.xyz[None])
        centre, radius = geometry.bounds_of(np.concatenate(pts))
        fov = math.radians(self.view.opts.get("fov", 60.0))
        w, h = max(self.view.width(), 1), max(self.view.height(), 1)
        # pyqtgraph's field of view is horizontal; the vertical one is narrower on a wide view.
        # The bounding sphere fits when the camera is radius / sin(half angle) away.
        half = math.atan(math.tan(fov / 2) * min(1.0, h / w))
        dist = 1.15 * radius / math.sin(half)
        elev, azim = self._elev_azim
        self.view.setCameraPosition(pos=QVector3D(*centre), distance=dist, elevation=elev, azimuth=azim)

    def camera(self) -> tuple[float, float, float]:
        o = self.view.opts
        return float(o["elevation"]), float(o["azimuth"]), float(o["distance"])

    # -- drawing -----------------------------------------------------------------------
    @property
    def radius(self) -> float:
        return 0.018 * self.state.scale

    def _rebuild(self) -> None:
        st = self.state
        scale = st.scale
        d = st.drawing()
        half = max(0.6 * scale, float(np.abs(d.points[:, :2]).max()) * 1.15)
        spacing = geometry.nice_spacing(2 * half)
        self.floor.setData(spacing, half, st.chain.units.length)
        self.grid_label.setText(f"floor grid: {spacing:g} {st.chain.units.length} per square")
        self._trail.clear()
        for key in ("show_frames", "show_trail", "show_ghosts"):
            b = self.buttons[key]
            b.blockSignals(True)
            b.setChecked(bool(st.option(key)))
            b.blockSignals(False)
        self._draw_pose()
        self._draw_target()
        self._draw_ghosts()
        self._apply_options()
        self.fit()

    def _draw_pose(self) -> None:
        st = self.state
        d = st.drawing()
        self.arm.setData(d, self.radius)
        F = d.frames
        size = 0.11 * st.scale
        self.triads.setData(F[[0, -1]], ["base", "tool"], size)
        if st.option("show_frames"):
            self.joint_triads.setData(F[1:-1], [f"F{i}" for i in range(1, st.chain.n + 1)], 0.6 * size)
        if self._trail.add(F[-1, :3, 3]) and st.option("show_trail"):
            self.trail.setData(self._trail.points)

    def clear_trail(self) -> None:
        self._trail.clear()
        self._trail.add(self.state.tool()[:3, 3])
        self.trail.setData(self._trail.points)

    def _draw_target(self) -> None:
        t = self.state.target
        self.target.set_visible(t is not None)
        if t is not None:
            self.target.setData(t.matrix, t.R is None, 0.11 * self.state.scale)

    def _draw_ghosts(self) -> None:
        st = self.state
        branches = st.branches
        if not branches or not st.option("show_ghosts"):
            self.ghosts.set_visible(False)
            return
        self.ghosts.set_visible(True)
        strong = st.hovered if st.hovered >= 0 else st.selected
        drawings, index = geometry.distinct_drawings(st.chain, [b.q for b in branches])
        self.ghosts.setData(drawings, self.radius, index[strong] if strong >= 0 else -1)

    def _apply_options(self) -> None:
        st = self.state
        self.joint_triads.set_visible(bool(st.option("show_frames")))
        if st.option("show_frames"):
            F = st.drawing().frames
            self.joint_triads.setData(F[1:-1], [f"F{i}" for i in range(1, st.chain.n + 1)], 0.066 * st.scale)
        self.trail.set_visible(bool(st.option("show_trail")))
        if st.option("show_trail"):
            self.trail.setData(self._trail.points)
        for key in ("show_frames", "show_trail", "show_ghosts"):
            b = self.buttons[key]
            if b.isChecked() != bool(st.option(key)):
                b.blockSignals(True)
                b.setChecked(bool(st.option(key)))
                b.blockSignals(False)

    def _on_state(self, field: str) -> None:
        if field == "arm":
            self._rebuild()
        elif field == "q":
            self._draw_pose()
        elif field == "target":
            self._draw_target()
        elif field in ("ik", "selected", "hovered"):
            self._draw_ghosts()
        elif field == "options":
            self._apply_options()
            self._draw_ghosts()

    def showEvent(self, ev):  # fit once the widget has its real size
        super().showEvent(ev)
        QTimer.singleShot(0, self.fit)
