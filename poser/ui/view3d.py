"""The 3D view panel: the arm on its mount, its frames, the floor, the trail, the target, ghost branches,
the nearest reachable point, warnings for parts behind the floor or mount, and a world-axes gizmo."""

from __future__ import annotations

import math

import numpy as np
from pyqtgraph.opengl.GLViewWidget import GLViewMixin
from PySide6.QtCore import QCoreApplication, QEvent, QRect, Qt, QTimer
from PySide6.QtGui import QAction, QColor, QKeySequence, QMatrix4x4, QSurfaceFormat, QVector3D
from PySide6.QtOpenGL import QOpenGLWindow
from PySide6.QtWidgets import QHBoxLayout, QLabel, QSizePolicy, QToolButton, QVBoxLayout, QWidget

from poser.ui import geometry, palette
from poser.ui.gl_arm import GLArm
from poser.ui.gl_below import GLBelow
from poser.ui.gl_floor import GLFloor
from poser.ui.gl_ghosts import GLGhosts
from poser.ui.gl_gizmo import GLAxesGizmo
from poser.ui.gl_labels import GLLabelLayer
from poser.ui.gl_mount import GLMount
from poser.ui.gl_nearest import GLNearest
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

ORBIT_PER_PIXEL = 0.35
"""Degrees the camera turns per pixel of left-drag."""
ZOOM_PER_NOTCH = 0.93
"""Camera distance factor per wheel notch (120 eighths of a degree) towards the arm; Ctrl: finer."""
KEY_ORBIT = (3.0, 15.0)
"""Degrees per arrow key press (plain, with Shift)."""
KEY_ZOOM = 0.9
"""Camera distance factor per + key press (- divides by it)."""
GHOSTS_WITHIN_ONLY = "ghosts_within_limits_only"
"""The display option (read with a default: the target panel adds it) that hides ghosts beyond the limits."""


class ArmGLView(GLViewMixin, QOpenGLWindow):
    """pyqtgraph's 3D view as a native OpenGL window (embedded with a window container).

    A QOpenGLWidget would make Qt compose the whole main window through OpenGL on every frame; with
    software OpenGL that costs more than drawing the arm.  A window of its own is drawn alone.

    * It counts rendered frames (``frameSwapped``).
    * :meth:`update` draws on the next pass of the event loop instead of after the platform's
      idle delay (5 ms on X11: a third of a 60 Hz frame).
    * ``ortho`` switches to an orthographic projection as wide at the centre as the perspective one.
    * Orbit, zoom and keys are gentler than pyqtgraph's (:data:`ORBIT_PER_PIXEL`, :data:`ZOOM_PER_NOTCH`).
    """

    def __init__(self):
        super().__init__()
        fmt = QSurfaceFormat.defaultFormat()
        fmt.setDepthBufferSize(24)
        fmt.setStencilBufferSize(8)
        self.setFormat(fmt)
        self.frames_rendered = 0
        self.frameSwapped.connect(self._count)
        self.ortho = False
        self.scene_radius = 1.0
        self.view_keys: dict = {}  # plain keys that pick a camera (filled by View3D: key → callable)
        self._paint_timer = QTimer(self)
        self._paint_timer.setSingleShot(True)
        self._paint_timer.setInterval(0)
        self._paint_timer.timeout.connect(self._paint_now)

    def _count(self):
        self.frames_rendered += 1

    # -- drawing soon -----------------------------------------------------------------------------
    def update(self):
        if getattr(self, "_paint_timer", None) is None:  # while pyqtgraph's __init__ runs
            return
        if not self._paint_timer.isActive():
            self._paint_timer.start()

    def _paint_now(self):
        if self.isExposed():
            QCoreApplication.sendEvent(self, QEvent(QEvent.Type.UpdateRequest))
        else:
            QOpenGLWindow.update(self)

    # -- projection ---------------------------------------------------------------------------------
    def projectionMatrix(self, region, viewport):
        if not self.ortho:
            return super().projectionMatrix(region, viewport)
        x0, y0, w, h = viewport
        dist = self.opts["distance"]
        r = dist * math.tan(0.5 * math.radians(self.opts["fov"]))  # the half-width the perspective has at the centre
        t = r * h / w
        left = r * ((region[0] - x0) * (2.0 / w) - 1)
        right = r * ((region[0] + region[2] - x0) * (2.0 / w) - 1)
        bottom = t * ((region[1] - y0) * (2.0 / h) - 1)
        top = t * ((region[1] + region[3] - y0) * (2.0 / h) - 1)
        depth = 2.0 * self.scene_radius
        tr = QMatrix4x4()
        tr.ortho(left, right, bottom, top, dist - depth, dist + depth)
        return tr

    # -- mouse and keys -------------------------------------------------------------------------------
    def mouseMoveEvent(self, ev):
        lpos = ev.position()
        if not hasattr(self, "mousePos"):
            self.mousePos = lpos
        diff = lpos - self.mousePos
        self.mousePos = lpos
        if ev.buttons() == Qt.MouseButton.LeftButton and not (ev.modifiers() & Qt.KeyboardModifier.ControlModifier):
            self.orbit(-diff.x() * ORBIT_PER_PIXEL, diff.y() * ORBIT_PER_PIXEL)
        elif ev.buttons() == Qt.MouseButton.LeftButton:
            self.pan(diff.x(), diff.y(), 0, relative="view")
        elif ev.buttons() == Qt.MouseButton.MiddleButton:
            self.pan(diff.x(), diff.y(), 0, relative="view-upright")

    def wheelEvent(self, ev):
        delta = ev.angleDelta().y() or ev.angleDelta().x()
        notches = delta / 120.0
        fine = bool(ev.modifiers() & Qt.KeyboardModifier.ControlModifier)
        self.zoom(ZOOM_PER_NOTCH ** (notches / (4.0 if fine else 1.0)))

    def zoom(self, factor: float) -> None:
        """Multiply the camera's distance by ``factor`` (below 1 comes closer)."""
        self.opts["distance"] *= float(factor)
        self.update()

    def keyPressEvent(self, ev):
        key, mods = ev.key(), ev.modifiers()
        act = self.view_keys.get(key) if mods == Qt.KeyboardModifier.NoModifier else None
        if act is not None:
            act()
            return
        step = KEY_ORBIT[1] if mods & Qt.KeyboardModifier.ShiftModifier else KEY_ORBIT[0]
        turns = {Qt.Key.Key_Left: (step, 0.0), Qt.Key.Key_Right: (-step, 0.0), Qt.Key.Key_Up: (0.0, -step),
                 Qt.Key.Key_Down: (0.0, step)}
        if key in turns:
            self.orbit(*turns[key])
            ev.accept()
            return
        if key in (Qt.Key.Key_Plus, Qt.Key.Key_Equal, Qt.Key.Key_PageUp):
            self.zoom(KEY_ZOOM)
            ev.accept()
            return
        if key in (Qt.Key.Key_Minus, Qt.Key.Key_PageDown):
            self.zoom(1.0 / KEY_ZOOM)
            ev.accept()
            return
        super().keyPressEvent(ev)

    def keyReleaseEvent(self, ev):
        ev.accept()

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
        self.labels = GLLabelLayer()
        self.floor = GLFloor(self.labels)
        self.mount = GLMount()
        self.arm = GLArm()
        self.below = GLBelow(self.labels)
        self.triads = GLTriads(self.labels)
        self.joint_triads = GLTriads(self.labels, width=2.0, font_size=9)
        self.trail = GLTrail()
        self.target = GLTarget(self.labels)
        self.nearest = GLNearest(self.labels)
        self.ghosts = GLGhosts(self.labels)
        # the plate before the floor: where its top face lies on the floor (z = 0) it hides the grid lines
        for group in (self.mount, self.floor, self.trail, self.arm, self.below, self.triads, self.joint_triads,
                      self.target, self.nearest, self.ghosts):
            group.add_to(self.view)
        from poser.ui.study_view import StudyLayers

        self.studies = StudyLayers(state, self.view, self.labels)  # workspace cloud, sections, reach targets
        self.gizmo = GLAxesGizmo()
        self.view.addItem(self.labels)
        self.view.addItem(self.gizmo)
        self._trail = geometry.ToolTrail()
        self.below_parts: list = []

        bar = QHBoxLayout()
        bar.setContentsMargins(4, 2, 4, 2)
        self.buttons = {}
        for key, text, tip, sc in (
            ("front", "Front", "look along −x at the arm's front (F)", "F"),
            ("side", "Side", "look along +y at the arm's side (S)", "S"),
            ("top", "Top", "look down on the arm (T)", "T"),
            ("iso", "Iso", "isometric view (I)", "I"),
            ("fit", "Fit arm", "zoom to fit the whole arm (A)", "A"),
            ("ortho", "Ortho", "orthographic projection: no perspective, parallel lines stay parallel and sizes "
             "do not shrink with distance, for reading Front, Side and Top true to scale (O; again for perspective)",
             "O"),
        ):
            b = QToolButton(self)
            b.setText(text)
            b.setToolTip(tip)
            if key == "ortho":
                b.setCheckable(True)
                b.toggled.connect(self.set_ortho)
            else:
                b.clicked.connect(lambda _=False, k=key: self.fit() if k == "fit" else self.set_view(k))
            act = QAction(self)
            act.setShortcut(sc)
            act.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
            act.triggered.connect(b.click)
            self.addAction(act)
            self.view.view_keys = {**self.view.view_keys, QKeySequence(sc)[0].key(): b.click}
            if key == "ortho":
                bar.addSpacing(4)
            bar.addWidget(b)
            self.buttons[key] = b
        bar.addSpacing(8)
        for key, text, tip in (
            ("show_frames", "Joint frames", "a labelled triad at every joint frame"),
            ("show_trail", "Trail", "the tool point's recent path"),
            ("show_ghosts", "Ghosts", "IK branches as ghost arms with their row numbers: see-through bodies "
             "within the limits, dashed lines beyond them"),
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
        hint = QLabel("left-drag or arrows: orbit · middle-drag: pan · wheel or +/−: zoom", self)
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
        """One of ``front``, ``side``, ``top``, ``iso``; then fits."""
        self._elev_azim = VIEWS[name]
        self.fit()

    def set_ortho(self, on: bool) -> None:
        """Orthographic (True) or perspective (False) projection; the arm keeps its size at the centre."""
        on = bool(on)
        if self.buttons["ortho"].isChecked() != on:
            self.buttons["ortho"].setChecked(on)  # comes back here through toggled
            return
        self.view.ortho = on
        self.view.update()

    @property
    def ortho(self) -> bool:
        return self.view.ortho

    def _fit_points(self) -> np.ndarray:
        """The arm, its mount, the tool's triad, and the target and nearest reachable point with theirs."""
        st = self.state
        d = st.drawing()
        pts = [d.points, geometry.mount_plate(st.chain.base, st.scale)[None, :3, 3]]
        box = 0.1 * st.scale * np.array([[sx, sy, sz] for sx in (-1, 1) for sy in (-1, 1) for sz in (-1, 1)])
        marks = [d.frames[-1, :3, 3]]
        if st.target is not None:
            marks.append(st.target.xyz)
        p = self._nearest_point()
        if p is not None:
            marks.append(p)
        pts += [m + box for m in marks]
        return np.concatenate(pts)

    def fit(self) -> None:
        """Zoom and centre on the whole arm (and the target and nearest reachable point, if any)."""
        centre, radius = geometry.bounds_of(self._fit_points())
        fov = math.radians(self.view.opts.get("fov", 60.0))
        w, h = max(self.view.width(), 1), max(self.view.height(), 1)
        # pyqtgraph's field of view is horizontal; the vertical one is narrower on a wide view.
        # The bounding sphere fits when the camera is radius / sin(half angle) away (perspective), or
        # when the half-height at the centre, distance × tan(half angle), is the radius (orthographic).
        self.view.scene_radius = max(self.view.scene_radius, 2.0 * radius)  # the orthographic depth range
        half = math.atan(math.tan(fov / 2) * min(1.0, h / w))
        dist = 1.15 * radius / (math.tan(half) if self.view.ortho else math.sin(half))
        elev, azim = self._elev_azim
        self.view.setCameraPosition(pos=QVector3D(*centre), distance=dist, elevation=elev, azimuth=azim)

    def in_view(self, point, margin: float = 0.05) -> bool:
        """Whether a world point (3,) is in front of the camera and inside the view, ``margin`` (a share of
        the half width) in from its edges."""
        w, h = max(self.view.width(), 1), max(self.view.height(), 1)
        vp = (0, 0, w, h)
        M = np.array((self.view.projectionMatrix(vp, vp) * self.view.viewMatrix()).data(), float).reshape(4, 4).T
        c = M @ np.append(np.asarray(point, float), 1.0)
        if c[3] <= 1e-12:
            return False
        x, y = c[0] / c[3], c[1] / c[3]
        return abs(x) <= 1.0 - margin and abs(y) <= 1.0 - margin

    def camera(self) -> tuple[float, float, float]:
        o = self.view.opts
        return float(o["elevation"]), float(o["azimuth"]), float(o["distance"])

    # -- drawing -----------------------------------------------------------------------
    @property
    def radius(self) -> float:
        """Link bar radius (arm length unit): a fixed share of the arm's size."""
        return 0.018 * self.state.scale

    def _rebuild(self) -> None:
        st = self.state
        scale = st.scale
        d = st.drawing()
        half = max(0.6 * scale, float(np.abs(d.points[:, :2]).max()) * 1.15)
        spacing = geometry.nice_spacing(2 * half)
        self.floor.setData(spacing, half, st.chain.units.length)
        self.grid_label.setText(f"floor grid: {spacing:g} {st.chain.units.length} per square")
        self.mount.setData(base=st.chain.base, scale=scale)
        self.labels.setData(merge_distance=1e-3 * scale)
        self.view.scene_radius = 2.0 * max(geometry.bounds_of(self._fit_points())[1], half)
        self._trail.clear()
        for key in ("show_frames", "show_trail", "show_ghosts"):
            b = self.buttons[key]
            b.blockSignals(True)
            b.setChecked(bool(st.option(key)))
            b.blockSignals(False)
        self._draw_pose()
        self._draw_target()
        self._draw_ghosts()
        self._draw_nearest()
        self._apply_options()
        self.fit()

    def _frame_names(self) -> list[str]:
        return [f"F{i}" for i in range(1, self.state.chain.n + 1)]

    def _draw_pose(self) -> None:
        st = self.state
        d = st.drawing()
        self.arm.setData(drawing=d, radius=self.radius)
        F = d.frames
        size = 0.11 * st.scale
        self.triads.setData(frames=F[[0, -1]], labels=["base", "tool"], size=size)
        if st.option("show_frames"):
            self.joint_triads.setData(frames=F[1:-1], labels=self._frame_names(), size=0.6 * size)
        if self._trail.add(F[-1, :3, 3]) and st.option("show_trail"):
            self.trail.setData(self._trail.points)
        self._draw_below(d)

    def _draw_below(self, d) -> None:
        st = self.state
        self.below_parts = st.below_mount()
        marks = geometry.below_marks(st.chain, self.below_parts)
        self.below.setData(pieces=geometry.below_pieces(st.chain, d) if self.below_parts else [], marks=marks,
                           radius=1.25 * self.radius)

    def clear_trail(self) -> None:
        self._trail.clear()
        self._trail.add(self.state.tool()[:3, 3])
        self.trail.setData(self._trail.points)

    def _draw_target(self) -> None:
        t = self.state.target
        self.target.set_visible(t is not None)
        if t is not None:
            self.target.setData(T=t.matrix, position_only=t.R is None, size=0.11 * self.state.scale)

    def _nearest_point(self):
        st = self.state
        ik = st.ik
        p = getattr(ik, "nearest_point", None) if ik is not None and st.target is not None else None
        return None if p is None else np.asarray(p, float).reshape(3)

    def _draw_nearest(self) -> None:
        st = self.state
        p = self._nearest_point()
        self.nearest.set_visible(p is not None)
        if p is not None:
            R = getattr(st.ik, "nearest_rotation", None)
            if st.target.R is None:
                R = None  # a position-only target: the orientation there is not part of the answer
            self.nearest.setData(point=p, target=st.target.xyz, size=0.11 * st.scale, rotation=R)

    @property
    def ghost_groups(self) -> list:
        """The ghosts of the state's branches (:class:`poser.ui.geometry.GhostGroup`), made once per IK result."""
        return self.state.ghost_drawings()[0]

    @property
    def ghost_index(self) -> list:
        """For each branch, its ghost group."""
        return self.state.ghost_drawings()[1]

    def _draw_ghosts(self) -> None:
        st = self.state
        groups, index = st.ghost_drawings()
        if not groups or not st.option("show_ghosts"):
            self.ghosts.set_visible(False)
            return
        strong = geometry.strong_group(index, st.hovered, st.selected)
        self.ghosts.setData(groups=groups, radius=self.radius, strong=strong,
                            within_only=bool(st.options.get(GHOSTS_WITHIN_ONLY, False)))
        self.ghosts.set_visible(True)

    def _apply_options(self) -> None:
        st = self.state
        self.joint_triads.set_visible(bool(st.option("show_frames")))
        if st.option("show_frames"):
            F = st.drawing().frames
            self.joint_triads.setData(frames=F[1:-1], labels=self._frame_names(), size=0.066 * st.scale)
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
            self._draw_nearest()
            t = self.state.target
            if t is not None and self.isVisible() and not self.in_view(t.xyz):
                self.fit()  # a target typed out of sight: bring it (and the arm) into the view
        elif field == "ik":
            self._draw_ghosts()
            self._draw_nearest()
        elif field in ("selected", "hovered"):
            self._draw_ghosts()
        elif field == "options":
            self._apply_options()
            self._draw_ghosts()

    def showEvent(self, ev):  # fit once the widget has its real size
        super().showEvent(ev)
        QTimer.singleShot(0, self.fit)
