"""The main window: dockable panels around one shared state, menus, files, recovery and snapshots."""

from __future__ import annotations

import os
import time
from pathlib import Path

from PySide6.QtCore import QPoint, QRect, QSettings, Qt, QTimer
from PySide6.QtGui import QAction, QGuiApplication, QKeySequence, QOffscreenSurface, QOpenGLContext, QPainter
from PySide6.QtWidgets import (
    QApplication,
    QDockWidget,
    QFileDialog,
    QMainWindow,
    QMessageBox,
    QScrollArea,
    QWidget,
)

from poser import armfile
from poser.ui import files
from poser.ui.animate import JointAnimator
from poser.ui.editor import EditorPanel
from poser.ui.frames_panel import FramesPanel
from poser.ui.help import HelpDialog
from poser.ui.joints_panel import JointPanel
from poser.ui.solver import TargetSolver
from poser.ui.state import PoseState
from poser.ui.status import PoseStatusBar
from poser.ui.target_panel import TargetPanel


def gl_problem() -> tuple[str | None, str]:
    """(reason the 3D view cannot run or None, a note on the renderer)."""
    if os.environ.get("POSER_NO_GL"):
        return "POSER_NO_GL is set", ""
    platform = QGuiApplication.platformName()
    if platform in ("offscreen", "minimal", "vnc", "linuxfb"):
        return f"no OpenGL on Qt platform '{platform}'", ""
    try:
        from OpenGL import GL
    except Exception as exc:  # PyOpenGL missing or no libGL
        return f"OpenGL library cannot be loaded ({exc})", ""
    ctx = QOpenGLContext()
    if not ctx.create():
        return "no OpenGL context could be created", ""
    surface = QOffscreenSurface()
    surface.create()
    if not ctx.makeCurrent(surface):
        return "an OpenGL context was created but cannot be used", ""
    try:
        renderer = GL.glGetString(GL.GL_RENDERER)
        renderer = renderer.decode("ascii", "replace") if renderer else "unknown renderer"
    except Exception:
        renderer = "unknown renderer"
    finally:
        ctx.doneCurrent()
    soft = any(k in renderer.lower() for k in ("llvmpipe", "softpipe", "swrast", "software"))
    note = f"3D: {'software ' if soft else ''}OpenGL ({renderer.split('(')[0].strip()})"
    return None, note


class MainWindow(QMainWindow):
    """Poser's posing window.

    Parameters
    ----------
    spec : ArmSpec
    path : Path or None
        The arm file (for saving and recovery).
    interactive : bool
        False for snapshots and tests: no dialogs are shown (questions take their default answers).
    settings : QSettings, optional
        Where recent files are kept (a test passes its own).
    """

    def __init__(self, spec, path=None, interactive: bool = True, settings: QSettings | None = None):
        super().__init__()
        self.interactive = interactive
        self.settings = settings if settings is not None else QSettings()
        self.state = PoseState(spec, path, self)
        self.solver = TargetSolver(self.state, parent=self)
        self.animator = JointAnimator(self.state, duration=0.6 if interactive else 0.0, parent=self)
        self.answers: list[str] = []  # queued answers to questions when not interactive (tests)
        self.reports: list[str] = []  # messages shown (or that would be shown) to the user
        self._first_frame_hooks = []

        self.gl_reason, note = gl_problem()
        if self.gl_reason is None:
            from poser.ui.view3d import View3D

            self.view = View3D(self.state)
            self.render_note = note
            self.view.view.frameSwapped.connect(self._frame_swapped)
        else:
            from poser.ui.view2d import View2D

            self.view = View2D(self.state, self.gl_reason)
            self.render_note = f"2D three-view: {self.gl_reason}"

        self.joints = JointPanel(self.state)
        self.frames = FramesPanel(self.state)
        self.target = TargetPanel(self.state, self.solver, self.animator)
        self.editor = EditorPanel(self.state)
        placeholder = QWidget()
        placeholder.setMaximumSize(0, 0)
        self.setCentralWidget(placeholder)
        self.setDockNestingEnabled(True)
        self.docks = {}
        for key, title, widget, area in (
            ("view", "3D view" if self.view.kind == "3d" else "Three-view (2D)", self.view,
             Qt.DockWidgetArea.LeftDockWidgetArea),
            ("joints", "Joints", self.joints, Qt.DockWidgetArea.RightDockWidgetArea),
            ("target", "Target", self.target, Qt.DockWidgetArea.RightDockWidgetArea),
            ("frames", "Frames", self.frames, Qt.DockWidgetArea.RightDockWidgetArea),
            ("editor", "Arm editor", self.editor, Qt.DockWidgetArea.RightDockWidgetArea),
        ):
            d = QDockWidget(title, self)
            d.setObjectName(f"dock_{key}")
            if key != "view":  # a narrow window scrolls a panel rather than growing past the screen
                scroll = QScrollArea()
                scroll.setWidgetResizable(True)
                scroll.setFrameShape(QScrollArea.Shape.NoFrame)
                scroll.setWidget(widget)
                d.setWidget(scroll)
            else:
                d.setWidget(widget)
            d.setFeatures(QDockWidget.DockWidgetFeature.DockWidgetMovable
                          | QDockWidget.DockWidgetFeature.DockWidgetFloatable
                          | QDockWidget.DockWidgetFeature.DockWidgetClosable)
            self.addDockWidget(area, d)
            self.docks[key] = d
        self.splitDockWidget(self.docks["joints"], self.docks["target"], Qt.Orientation.Vertical)
        self.tabifyDockWidget(self.docks["target"], self.docks["frames"])
        self.tabifyDockWidget(self.docks["frames"], self.docks["editor"])
        self.docks["target"].raise_()

        self.status = PoseStatusBar(self.state, self.render_note, self)
        self.setStatusBar(self.status)
        self.solver.failed.connect(lambda text: self.status.showMessage(text, 8000))
        self._build_menus()
        self.state.changed.connect(self._on_state)
        self._title()

    # -- layout -------------------------------------------------------------------------------
    def resizeEvent(self, ev):
        super().resizeEvent(ev)
        w = self.width()
        if not getattr(self, "_sized", False) and w > 0:
            self._sized = True
            self.resizeDocks([self.docks["view"], self.docks["joints"]], [int(w * 0.5), int(w * 0.5)],
                             Qt.Orientation.Horizontal)
            self.fit_joint_dock()

    def fit_joint_dock(self) -> None:
        """Give the joint panel the height its rows need (within 30-60 % of the window), the target the rest."""
        h = self.height()
        title = self.docks["joints"].widget().mapTo(self.docks["joints"], QPoint(0, 0)).y() or 24
        want = self.joints.sizeHint().height() + title + 14
        joints = int(min(max(want, 0.3 * h), 0.6 * h))
        self.resizeDocks([self.docks["joints"], self.docks["target"]], [joints, max(h - joints, 1)],
                         Qt.Orientation.Vertical)

    def _build_menus(self) -> None:
        mb = self.menuBar()
        fm = mb.addMenu("&File")
        self._act(fm, "&Open arm…", self.open_file, QKeySequence.StandardKey.Open)
        self.recent_menu = fm.addMenu("Open &recent")
        self._act(fm, "&Save", self.save, QKeySequence.StandardKey.Save)
        self._act(fm, "Save &as…", self.save_as, QKeySequence("Ctrl+Shift+S"))
        fm.addSeparator()
        self._act(fm, "Save &snapshot…", self._snapshot_dialog, QKeySequence("Ctrl+P"))
        fm.addSeparator()
        self._act(fm, "&Quit", self.close, QKeySequence("Ctrl+Q"))
        self._fill_recent()

        pm = mb.addMenu("&Pose")
        self._act(pm, "&Home", lambda: self.state.home(), QKeySequence("Ctrl+H"))
        self._act(pm, "&Zero", lambda: self.state.zero(), QKeySequence("Ctrl+0"))
        self._act(pm, "&Take current pose as target", self.target.take_current, QKeySequence("Ctrl+T"))
        self._act(pm, "&Apply selected branch", self.target.apply_selected, QKeySequence("Ctrl+Return"))

        vm = mb.addMenu("&View")
        for key, text in (("front", "&Front"), ("side", "&Side"), ("top", "&Top"), ("iso", "&Isometric")):
            self._act(vm, text, lambda k=key: self.view.set_view(k))
        self._act(vm, "Fit &arm", lambda: self.view.fit())
        vm.addSeparator()
        for k, key in enumerate(("view", "joints", "frames", "target", "editor"), start=1):
            act = self.docks[key].toggleViewAction()
            vm.addAction(act)
            go = QAction(f"Go to {self.docks[key].windowTitle()}", self)
            go.setShortcut(QKeySequence(f"Ctrl+{k}"))
            go.triggered.connect(lambda _=False, kk=key: self.focus_panel(kk))
            self.addAction(go)

        hm = mb.addMenu("&Help")
        self._act(hm, "&Guide", lambda: self._help(False), QKeySequence.StandardKey.HelpContents)
        self._act(hm, "&Cautions", lambda: self._help(True))

    def _act(self, menu, text, slot, shortcut=None) -> QAction:
        a = QAction(text, self)
        if shortcut is not None:
            a.setShortcut(shortcut)
        a.triggered.connect(lambda _=False: slot())
        menu.addAction(a)
        return a

    def focus_panel(self, key: str) -> None:
        d = self.docks[key]
        d.show()
        d.raise_()
        w = d.widget()
        target = {"view": getattr(self.view, "container", self.view), "joints": self.joints.home_button,
                  "frames": self.frames.link_combo, "target": self.target.xyz[0],
                  "editor": self.editor.name}.get(key, w)
        target.setFocus(Qt.FocusReason.ShortcutFocusReason)

    def _help(self, cautions: bool) -> None:
        dlg = HelpDialog(self, cautions_only=cautions)
        if self.interactive:
            dlg.exec()
        self._last_help = dlg

    # -- questions and messages --------------------------------------------------------------------
    def ask_unsaved(self) -> str:
        """'save', 'discard' or 'cancel' for unsaved edits."""
        if not self.interactive:
            return self.answers.pop(0) if self.answers else "cancel"
        box = QMessageBox(self)
        box.setIcon(QMessageBox.Icon.Warning)
        box.setWindowTitle("Unsaved changes")
        box.setText(f"The arm '{self.state.spec.name}' has edits that are not saved.")
        box.setInformativeText("Save them first?")
        box.setStandardButtons(QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
                               | QMessageBox.StandardButton.Cancel)
        box.setDefaultButton(QMessageBox.StandardButton.Save)
        r = box.exec()
        return {QMessageBox.StandardButton.Save: "save", QMessageBox.StandardButton.Discard: "discard"}.get(
            QMessageBox.StandardButton(r), "cancel")

    def report(self, title: str, text: str) -> None:
        self.reports.append(text)
        self.status.showMessage(text.splitlines()[0], 10000)
        if self.interactive:
            QMessageBox.warning(self, title, text)

    def _resolve_unsaved(self) -> bool:
        """True when it is fine to drop the present arm."""
        if not self.state.dirty:
            return True
        answer = self.ask_unsaved()
        if answer == "save":
            return self.save()
        if answer == "discard":
            self._drop_recovery()
            return True
        return False

    # -- files -------------------------------------------------------------------------------------
    def open_file(self, path=None) -> bool:
        if not self._resolve_unsaved():
            return False
        if path is None:
            if not self.interactive:
                return False
            start = str(self.state.path.parent) if self.state.path else ""
            path, _ = QFileDialog.getOpenFileName(self, "Open arm file", start, "Arm files (*.toml);;All files (*)")
            if not path:
                return False
        try:
            spec = armfile.load(path)
        except armfile.ArmFileError as exc:
            self.report("Cannot open the arm file", "\n".join(str(p) for p in exc.problems))
            return False
        self.state.set_arm(spec, path=Path(path), dirty=False)
        self._push_recent(path)
        self.offer_recovery()
        return True

    def save(self) -> bool:
        if self.state.path is None:
            return self.save_as()
        return self._save_to(self.state.path)

    def save_as(self, path=None) -> bool:
        if path is None:
            if not self.interactive:
                return False
            start = str(self.state.path) if self.state.path else f"{self.state.spec.name}.toml"
            path, _ = QFileDialog.getSaveFileName(self, "Save arm file as", start, "Arm files (*.toml)")
            if not path:
                return False
        return self._save_to(Path(path))

    def _save_to(self, path: Path) -> bool:
        old_recovery = files.recovery_path(self.state.path)
        try:
            armfile.save(self.state.spec, path)
        except (armfile.ArmFileError, OSError) as exc:
            self.report("Cannot save the arm file", f"{path}: {exc}")
            return False
        try:
            old_recovery.unlink()
        except OSError:
            pass
        self.state.mark_saved(path)
        self._drop_recovery()
        self._push_recent(path)
        self.status.showMessage(f"Saved {path}", 5000)
        return True

    def _push_recent(self, path) -> None:
        recent = self.settings.value("recent", [], type=list) or []
        self.settings.setValue("recent", files.push_recent([str(r) for r in recent], path))
        self._fill_recent()

    def recent_files(self) -> list[str]:
        return [str(r) for r in (self.settings.value("recent", [], type=list) or [])]

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        for r in self.recent_files():
            self.recent_menu.addAction(r, lambda p=r: self.open_file(p))
        self.recent_menu.setEnabled(bool(self.recent_files()))

    # -- recovery ----------------------------------------------------------------------------------
    @property
    def recovery_file(self) -> Path:
        return files.recovery_path(self.state.path)

    def _write_recovery(self) -> None:
        if not self.state.dirty:
            return
        try:
            files.write_atomic(self.recovery_file, armfile.dumps(self.state.spec))
        except (OSError, armfile.ArmFileError) as exc:
            self.status.showMessage(f"Cannot write the recovery copy: {exc}", 8000)

    def _drop_recovery(self) -> None:
        try:
            self.recovery_file.unlink()
        except OSError:
            pass

    def offer_recovery(self) -> bool:
        """If a recovery copy of this arm exists and differs from the file, offer (or, in tests, take) it."""
        rec = self.recovery_file
        if not rec.exists():
            return False
        try:
            spec = armfile.load(rec)
        except armfile.ArmFileError:
            return False
        current = armfile.dumps(self.state.spec)
        if rec.read_text(encoding="utf-8") == current:
            self._drop_recovery()
            return False
        if self.interactive:
            r = QMessageBox.question(self, "Recover unsaved edits?",
                                     f"Poser kept unsaved edits of '{spec.name}' from an earlier session "
                                     f"({rec}). Restore them?")
            if r != QMessageBox.StandardButton.Yes:
                return False
        elif not (self.answers and self.answers.pop(0) == "restore"):
            return False
        self.state.set_arm(spec, dirty=True)
        return True

    # -- state ------------------------------------------------------------------------------------
    def _title(self) -> None:
        st = self.state
        name = st.path.name if st.path else "not saved"
        self.setWindowTitle(f"Poser — {st.chain.name} — {name}[*]")
        self.setWindowModified(st.dirty)

    def _on_state(self, field: str) -> None:
        if field == "arm" and getattr(self, "_sized", False) and self.state.writer is not self.editor:
            self.fit_joint_dock()  # another arm: another number of joint rows (not while editing rows live)
        if field in ("document", "arm"):
            self._title()
            self._write_recovery()

    def set_target_values(self, values) -> None:
        self.target.set_values(values)

    def closeEvent(self, ev):
        if self.interactive and not getattr(self, "_close_agreed", False) and not self._resolve_unsaved():
            ev.ignore()
            return
        self._close_agreed = True  # asked once; closing again on the way out asks nothing
        ev.accept()

    # -- frames and snapshots ---------------------------------------------------------------------------
    def _frame_swapped(self) -> None:
        hooks, self._first_frame_hooks = self._first_frame_hooks, []
        for h in hooks:
            h()

    def on_first_frame(self, fn) -> None:
        """Call ``fn`` once after the next rendered frame (at once without a 3D view, after showing)."""
        if self.view.kind == "3d":
            self._first_frame_hooks.append(fn)
        else:
            QTimer.singleShot(0, fn)

    def render_now(self, timeout: float = 5.0) -> bool:
        """Show the window, fit the view and process events until a frame is drawn."""
        app = QApplication.instance()
        if not self.isVisible():
            self.show()
        app.processEvents()
        self.view.fit()
        if self.view.kind != "3d":
            for _ in range(3):
                app.processEvents()
            return True
        start = self.view.view.frames_rendered
        self.view.view.update()
        t0 = time.perf_counter()
        while self.view.view.frames_rendered == start and time.perf_counter() - t0 < timeout:
            app.processEvents()
            time.sleep(0.005)
        app.processEvents()
        return self.view.view.frames_rendered > start

    def snapshot(self, out, size=None) -> bool:
        """Render the window to a PNG file; True on success."""
        if size is not None:
            self.resize(*size)
        self.render_now()
        pix = self.grab()
        if self.view.kind == "3d":
            # QWidget.grab() loses what pyqtgraph paints with QPainter inside the GL frame (the labels);
            # the view's own framebuffer has everything, so lay it over its place in the window.
            frame = self.view.view.grabFramebuffer()
            box = self.view.container
            painter = QPainter(pix)
            painter.drawImage(QRect(box.mapTo(self, QPoint(0, 0)), box.size()), frame)
            painter.end()
        ok = pix.save(str(out), "PNG")
        if not ok:
            self.report("Cannot save the snapshot", f"{out}: cannot write this PNG file (a folder, or no permission?)")
        return ok

    def _snapshot_dialog(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Save snapshot", "poser.png", "PNG images (*.png)")
        if path:
            self.snapshot(path)  # a failure is reported by snapshot()
