"""The main window: dockable panels around one shared state, menus, files, recovery and snapshots.

Files (all through :mod:`poser.armfile`):

* **Save** writes exactly what the editor shows: while an editor cell is invalid it refuses and names the
  problem (or saves the last valid arm to another file, leaving the window unsaved).  A file changed on disk
  since it was loaded (:class:`~poser.armfile.ChangedOnDiskError`) asks: reload, overwrite or save as; a
  read-only file (:class:`~poser.armfile.ReadOnlyError`) is replaced only when asked; a folder that takes no
  files asks for another place.  Symbolic links are written through (the link stays) and hard-linked files in
  place (the file layer's rules).
* **Watching**: a ``QFileSystemWatcher`` and a cheap poll of :func:`~poser.armfile.changed_on_disk` notice
  another program changing the open file; the notice bar offers to reload (once per version of the file).
* **Recovery copies**: every applied edit goes to a :class:`~poser.io.recovery.RecoveryWriter` (its own
  thread, coalesced, throttled); while it cannot write, a persistent notice says so.
"""

from __future__ import annotations

import os
import time
from pathlib import Path

from PySide6.QtCore import QFileSystemWatcher, QObject, QPoint, QRect, QSettings, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QGuiApplication, QKeySequence, QOffscreenSurface, QOpenGLContext, QPainter
from PySide6.QtWidgets import (
    QApplication,
    QDockWidget,
    QFileDialog,
    QMainWindow,
    QMessageBox,
    QScrollArea,
    QTabBar,
    QToolBar,
    QWidget,
)

from poser import armfile
from poser.report import printable
from poser.ui import files
from poser.ui.animate import JointAnimator
from poser.ui.editor import EditorPanel
from poser.ui.frames_panel import FramesPanel
from poser.ui.help import HelpDialog
from poser.ui.joints_panel import JointPanel
from poser.ui.questions import Asker
from poser.ui.solver import TargetSolver
from poser.ui.state import PoseState
from poser.ui.status import NoticeBar, PoseStatusBar
from poser.ui.target_panel import TargetPanel

DISK_POLL_MS = 2000
"""How often the open file is checked for changes by another program (besides the file watcher)."""


class _RecoveryRelay(QObject):
    """Carries the recovery writer's status from its thread to the GUI thread."""

    status = Signal(bool, str)


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
        self.ask = Asker(self, interactive, self.answers)
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
        self.editor.ask = self.ask
        from poser.ui.studies_panel import StudiesPanel

        self.studies = StudiesPanel(self.state)
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
            ("studies", "Studies", self.studies, Qt.DockWidgetArea.RightDockWidgetArea),
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
        self.tabifyDockWidget(self.docks["editor"], self.docks["studies"])
        self.docks["target"].raise_()
        self.frames.set_seen(False)
        self.docks["frames"].visibilityChanged.connect(self.frames.set_seen)

        self.status = PoseStatusBar(self.state, self.render_note, self)
        self.setStatusBar(self.status)
        self.solver.failed.connect(lambda text: self.status.showMessage(text, 8000))
        self.notice_bar = QToolBar("Notices", self)
        self.notice_bar.setObjectName("notices")
        self.notice_bar.setMovable(False)
        self.notice_bar.setFloatable(False)
        self.notices = NoticeBar()
        self.notice_bar.addWidget(self.notices)
        self.addToolBar(Qt.ToolBarArea.TopToolBarArea, self.notice_bar)
        self.notice_bar.setVisible(False)
        self.notice_bar.toggleViewAction().setVisible(False)  # shown while there is a notice, by itself
        self.notices.shown.connect(self.notice_bar.setVisible)
        self.notices.shown.connect(lambda _on: QTimer.singleShot(0, self._keep_joints_shown))
        # a longer verdict under the target fields: a long arm's joints (which scroll anyway) give it room
        self.docks["target"].widget().verticalScrollBar().rangeChanged.connect(
            lambda _lo, hi: hi > 0 and QTimer.singleShot(0, self._keep_target_shown))
        self.state.notice.connect(lambda level, text: self.notices.show_notice("state", level, text,
                                                                               timeout_ms=15000))
        self._build_menus()

        # recovery copies: written on the writer's thread, its status comes back through a queued signal
        self._recovery_relay = _RecoveryRelay()
        self._recovery_relay.status.connect(self._recovery_status)
        relay = self._recovery_relay
        self.recovery = armfile.RecoveryWriter(files.recovery_path(self.state.path), min_interval=0.5,
                                               on_status=lambda ok, msg: relay.status.emit(bool(ok), msg or ""))
        # another program changing the open file
        self.watcher = QFileSystemWatcher(self)
        self._disk_event = QTimer(self)  # a file is often written in pieces: look once it has settled
        self._disk_event.setSingleShot(True)
        self._disk_event.setInterval(150)
        self._disk_event.timeout.connect(lambda: self.check_disk(hash_now=True))
        self.watcher.fileChanged.connect(lambda _p: self._disk_event.start())
        self._disk_timer = QTimer(self)
        self._disk_timer.setInterval(DISK_POLL_MS)
        self._disk_timer.timeout.connect(self.check_disk)
        self._disk_timer.start()
        self._disk_asked = None  # the version of the file already asked about
        self._watch()
        self._joint_rows = self.state.chain.n
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
        self.joints.layout().activate()  # rows just built: their size is known only once laid out
        want = self.joints.sizeHint().height() + title + 14
        joints = int(min(max(want, 0.3 * h), 0.6 * h))
        # the two docks share what the menu, notice and status bars leave: sizes that add up to the whole
        # window are scaled down by Qt, and the joints' share came out short of their rows.  The target keeps
        # what its fields, words and a few branch rows need (a long arm's joints scroll instead)
        room = self.docks["joints"].height() + self.docks["target"].height()
        if room > 0:
            # the tabs under the target (Target, Frames, Arm editor) count in the target's share
            box = self.docks["target"].geometry()
            tabs = sum(t.height() for t in self.findChildren(QTabBar) if t.isVisible() and t.parent() is self
                       and abs(t.y() - box.bottom()) < 8 and t.x() < box.right() and t.geometry().right() > box.x())
            room += tabs
            panel, width = self.target, self.docks["target"].widget().viewport().width()
            need = panel.heightForWidth(width) if panel.hasHeightForWidth() else -1  # wrapped words at this width
            target = max(need, panel.minimumSizeHint().height()) + title + 8 + tabs
            joints = max(min(joints, room - max(target, 120)), 1)
        else:
            room = h
        self.resizeDocks([self.docks["joints"], self.docks["target"]], [joints, max(room - joints, 1)],
                         Qt.Orientation.Vertical)

    def _keep_target_shown(self) -> None:
        """The Target panel scrolls while the Joints dock scrolls too (a long arm): refit, the target first."""
        joints, target = (self.docks[k].widget().verticalScrollBar() for k in ("joints", "target"))
        if getattr(self, "_sized", False) and joints.maximum() > 0 and target.maximum() > 0:
            self.fit_joint_dock()

    def _keep_joints_shown(self) -> None:
        """After the notice bar came or went: refit the Joints dock if its rows no longer fit."""
        scroll = self.docks["joints"].widget()
        if getattr(self, "_sized", False) and scroll.verticalScrollBar().maximum() > 0:
            self.fit_joint_dock()

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
        ortho_button = getattr(self.view, "buttons", {}).get("ortho")
        if ortho_button is not None:  # the 3D view (the 2D fallback has no projection to switch)
            ortho = QAction("&Orthographic projection", self)
            ortho.setCheckable(True)
            ortho.setToolTip(ortho_button.toolTip())
            ortho.toggled.connect(ortho_button.setChecked)
            ortho_button.toggled.connect(ortho.setChecked)
            vm.addAction(ortho)
            self.ortho_action = ortho
        vm.addSeparator()
        for k, key in enumerate(("view", "joints", "frames", "target", "editor", "studies"), start=1):
            act = self.docks[key].toggleViewAction()
            vm.addAction(act)
            go = QAction(f"Go to {self.docks[key].windowTitle()}", self)
            go.setShortcut(QKeySequence(f"Ctrl+{k}"))
            go.triggered.connect(lambda _=False, kk=key: self.focus_panel(kk))
            self.addAction(go)

        self.studies.fill_menu(mb.addMenu("Stu&dies"))

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
                  "editor": self.editor.name, "studies": self.studies.tabs}.get(key, w)
        target.setFocus(Qt.FocusReason.ShortcutFocusReason)

    def _help(self, cautions: bool) -> None:
        dlg = HelpDialog(self, cautions_only=cautions)
        if self.interactive:
            dlg.exec()
        self._last_help = dlg

    # -- questions and messages --------------------------------------------------------------------
    def ask_unsaved(self) -> str:
        """'save', 'discard' or 'cancel' for unsaved edits."""
        st = self.state
        info = "Save them first?"
        if st.unapplied:
            info = ("The arm editor also holds an edit that is not valid (Save refuses it until it is fixed):\n"
                    + "\n".join(f"• {p}" for p in st.unapplied))
        return self.ask("Unsaved changes", f"The arm '{printable(st.spec.name)}' has edits that are not saved.",
                        info, (("save", "&Save"), ("discard", "&Discard"), ("cancel", "Cancel")), "cancel",
                        QMessageBox.Icon.Warning)

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

    def reload(self, ask_if_dirty: bool = True) -> bool:
        """Read the open file again (after another program changed it); unsaved edits go, after a question."""
        st = self.state
        if st.path is None:
            return False
        if ask_if_dirty and st.dirty:
            choice = self.ask("Reload the arm file",
                              f"Reload {printable(st.path.name)} from disk and lose the edits not saved here?",
                              "Your edits stay in the recovery copy until your next edit or save; Poser "
                              "offers it when this file is opened again.",
                              (("reload", "&Reload"), ("cancel", "Cancel")), "cancel", QMessageBox.Icon.Warning)
            if choice != "reload":
                return False
        try:
            spec = armfile.load(st.path)
        except armfile.ArmFileError as exc:
            self.report("Cannot reload the arm file", "\n".join(str(p) for p in exc.problems))
            return False
        self.recovery.flush(2.0)  # the recovery copy keeps the dropped edits until the next edit or save
        st.set_arm(spec, path=st.path, dirty=False)
        self.notices.clear("disk")
        self._disk_asked = None
        self.status.showMessage(f"Reloaded {st.path}", 5000)
        return True

    def save(self) -> bool:
        if self.state.path is None:
            return self.save_as()
        return self._save_to(self.state.path)

    def save_as(self, path=None) -> bool:
        if self._refuse_unapplied():
            return False
        path = path if path is not None else self._ask_save_path("Save arm file as")
        if path is None:
            return False
        return self._save_to(Path(path))

    def _ask_save_path(self, title: str):
        if not self.interactive:
            return self.answers.pop(0) if self.answers and isinstance(self.answers[0], Path) else None
        start = str(self.state.path) if self.state.path else f"{self.state.spec.name}.toml"
        path, _ = QFileDialog.getSaveFileName(self, title, start, "Arm files (*.toml)")
        return Path(path) if path else None

    def _refuse_unapplied(self) -> bool:
        """True (and the user told, and offered a way out) while an editor edit is not valid."""
        st = self.state
        if not st.unapplied:
            return False
        problems = "\n".join(f"• {p}" for p in st.unapplied)
        text = ("Not saved: the arm editor holds an edit that is not valid, and the file must hold what the "
                "editor shows.")
        self.reports.append(f"{text}\n{problems}")
        self.status.showMessage(text, 10000)
        choice = self.ask("Cannot save yet", text, problems,
                          (("fix", "&Go to the problem"), ("last", "Save the &last valid arm as…"),
                           ("cancel", "Cancel")), "cancel", QMessageBox.Icon.Warning)
        if choice == "fix":
            self.focus_panel("editor")
            self.editor.first_problem_widget()
        elif choice == "last":
            path = self._ask_save_path("Save the last valid arm as")
            if path is not None:
                spec = st.spec.copy()
                spec.stamp = None
                try:
                    armfile.save(spec, path)
                except (armfile.ArmFileError, OSError) as exc:
                    self.report("Cannot save the arm file", f"{path}: {exc}")
                else:
                    self.status.showMessage(f"Saved the last valid arm to {path}; the editor's invalid edit is not "
                                            "in it, and this window stays unsaved", 10000)
        return True

    def _save_to(self, path: Path, overwrite: bool = False, allow_readonly: bool = False) -> bool:
        st = self.state
        if self._refuse_unapplied():
            return False
        spec = st.spec
        try:
            if not overwrite:
                self._check_unchanged(path)
            armfile.save(spec, path, overwrite=overwrite, allow_readonly=allow_readonly)
        except armfile.ChangedOnDiskError as exc:
            gone = exc.found is None
            what = "was removed or renamed" if gone else "was changed by another program"
            choice = self.ask(
                "The file changed on disk",
                f"{printable(str(path))} {what} since it was loaded.",
                "Reload: read it again (your edits here are lost). Overwrite: replace it with this arm (the other "
                "version is lost). Save as: keep both.",
                (("reload", "&Reload"), ("overwrite", "&Overwrite"), ("saveas", "Save &as…"), ("cancel", "Cancel")),
                "cancel", QMessageBox.Icon.Warning)
            if choice == "reload":
                self.reload(ask_if_dirty=False)
                return False  # nothing was saved: the file's version is shown now
            if choice == "overwrite":
                return self._save_to(path, overwrite=True, allow_readonly=allow_readonly)
            if choice == "saveas":
                return self.save_as()
            return False
        except armfile.ReadOnlyError:
            choice = self.ask(
                "The file is read-only",
                f"{printable(str(path))} is read-only.",
                "Replace it anyway (it stays read-only), or save the arm to another file.",
                (("replace", "&Replace anyway"), ("saveas", "Save &as…"), ("cancel", "Cancel")), "cancel",
                QMessageBox.Icon.Warning)
            if choice == "replace":
                return self._save_to(path, overwrite=overwrite, allow_readonly=True)
            if choice == "saveas":
                return self.save_as()
            return False
        except armfile.FolderNotWritableError as exc:
            choice = self.ask("Cannot save here", str(exc.problems[0]) if exc.problems else str(exc),
                              "Save the arm to another folder?", (("saveas", "Save &as…"), ("cancel", "Cancel")),
                              "cancel", QMessageBox.Icon.Warning)
            self.reports.append(str(exc))
            return self.save_as() if choice == "saveas" else False
        except (armfile.ArmFileError, OSError) as exc:
            self.report("Cannot save the arm file", f"{path}: {exc}")
            return False
        old_path = st.path
        self.recovery.discard()  # the copy of the old path: its edits are in the file now
        st.mark_saved(path)
        if st.path != old_path:
            self.recovery.set_path(files.recovery_path(st.path))
            self.recovery.discard()
        self._disk_asked = None
        self.notices.clear("disk")
        self._watch()
        self._push_recent(path)
        self.status.showMessage(f"Saved {path}", 5000)
        return True

    def _check_unchanged(self, path: Path) -> None:
        """Raise :class:`~poser.armfile.ChangedOnDiskError` when ``path`` is the loaded file and its bytes changed.

        The file layer compares time, size and inode first and hashes only when one of them moved; a change of
        the same size within one tick of the file system's clock keeps all three.  Before replacing a file the
        window reads it and compares the hash itself (at most 1 MiB).
        """
        stamp = getattr(self.state.spec, "stamp", None)
        if not isinstance(stamp, armfile.DiskStamp) or self.state.path is None:
            return
        if Path(path) != self.state.path:
            return  # saved as another file: nothing was loaded from there
        now = armfile.DiskStamp.read(path)
        if now is None or now.sha256 != stamp.sha256:
            raise armfile.ChangedOnDiskError(str(path), stamp, now)

    def add_recent(self, path) -> None:
        """Put ``path`` first in File ▸ Open recent (an arm opened from the command line, too)."""
        self._push_recent(path)

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

    # -- watching the open file -----------------------------------------------------------------------
    def _watch(self) -> None:
        """Watch the open file (again: an editor that saves by renaming makes the watcher lose it)."""
        old = self.watcher.files()
        if old:
            self.watcher.removePaths(old)
        if self.state.path is not None and self.state.path.exists():
            self.watcher.addPath(str(self.state.path))

    def check_disk(self, hash_now: bool = False) -> bool:
        """Offer to reload when another program changed (or removed) the open file; True when it changed.

        The poll asks :func:`~poser.armfile.changed_on_disk` (a ``stat``, a hash only when it moved); the
        watcher's event (``hash_now``) compares the hash at once.  Asked once per version of the file; our own
        saves update the spec's stamp, so they are no change.
        """
        st = self.state
        stamp = getattr(st.spec, "stamp", None)
        if st.path is None or stamp is None:
            return False
        if st.path.exists() and str(st.path) not in self.watcher.files():
            self._watch()
        if hash_now:
            now = armfile.DiskStamp.read(st.path)
            changed = now is None or now.sha256 != stamp.sha256
        else:
            changed = armfile.changed_on_disk(stamp, st.path)
        if not changed:
            if self._disk_asked is not None:
                self.notices.clear("disk")
                self._disk_asked = None
            return False
        now = armfile.DiskStamp.read(st.path)
        version = now.sha256 if now is not None else "gone"
        if version == self._disk_asked:
            return True
        self._disk_asked = version
        name = printable(st.path.name)
        if now is None:
            text = f"{name} was removed or renamed by another program. Save writes it again."
            self.notices.show_notice("disk", "near", text)
        else:
            lost = " — your unsaved edits here would be lost" if st.dirty else ""
            text = (f"{name} was changed by another program. Reload it{lost}, or keep this version "
                    "(Save will ask before replacing theirs).")
            keep = ("Keep &mine", lambda: self.notices.clear("disk"))
            self.notices.show_notice("disk", "near", text, actions=(("&Reload", self.reload), keep))
        self.status.showMessage(text, 8000)
        return True

    # -- recovery ----------------------------------------------------------------------------------
    @property
    def recovery_file(self) -> Path:
        return files.recovery_path(self.state.path)

    def _write_recovery(self) -> None:
        """Hand the present arm to the recovery writer (it writes on its own thread, the latest edit wins)."""
        if self.state.dirty:
            self.recovery.submit(self.state.spec)

    def _recovery_status(self, ok: bool, message: str) -> None:
        if ok:
            self.notices.clear("recovery")
            return
        self.notices.show_notice(
            "recovery", "at",
            f"Recovery copies cannot be written ({message}). Your unsaved edits are only in this window until "
            "you save them.")

    def _drop_recovery(self) -> None:
        self.recovery.discard()

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
        choice = self.ask("Recover unsaved edits?",
                          f"Poser kept unsaved edits of '{printable(spec.name)}' from an earlier session ({rec}).",
                          "Restore them?", (("restore", "&Restore"), ("cancel", "&Not now")), "cancel")
        if choice != "restore":
            return False
        spec.stamp = self.state.spec.stamp  # still the file on disk's version: a save checks against it
        self.state.set_arm(spec, dirty=True)
        return True

    # -- state ------------------------------------------------------------------------------------
    def _title(self) -> None:
        st = self.state
        name = st.path.name if st.path else "not saved"
        self.setWindowTitle(f"Poser — {printable(st.chain.name)} — {printable(name)}[*]")
        self.setWindowModified(st.dirty)

    def _on_state(self, field: str) -> None:
        st = self.state
        if field == "arm" and st.chain.n != self._joint_rows:
            # another number of joint rows: give them room once the panel has laid them out
            self._joint_rows = st.chain.n
            if getattr(self, "_sized", False):
                QTimer.singleShot(0, self.fit_joint_dock)
        if field == "document":
            self._title()
            if self.recovery.path != files.recovery_path(st.path):
                self.recovery.set_path(files.recovery_path(st.path))
                self._disk_asked = None
                self.notices.clear("disk")
                self._watch()
        if field == "spec":
            self._title()
            self._write_recovery()

    def set_target_values(self, values, now: bool = True) -> None:
        """The target from ``X,Y,Z`` or ``X,Y,Z,R,P,Y`` in arm units; solved on this thread when ``now``, else
        on the solver's worker like a typed target."""
        self.target.set_values(values, now)

    def closeEvent(self, ev):
        if self.interactive and not getattr(self, "_close_agreed", False) and not self._resolve_unsaved():
            ev.ignore()
            return
        self._close_agreed = True  # asked once; closing again on the way out asks nothing
        self.solver.shutdown()
        self.state.studies.shutdown()
        self._disk_timer.stop()
        self._disk_event.stop()
        self.recovery.close(flush=True)
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
