"""Entry point of the posing window: ``poser [ARM] [--snapshot OUT.png] [--joints …] [--target …] [--size WxH]``."""

from __future__ import annotations

import os
import sys
import time
from pathlib import Path

_T0 = time.perf_counter()


def default_arm() -> Path:
    """The Heron 6 demo arm shipped beside the package."""
    import poser

    return Path(poser.__file__).resolve().parent.parent / "demo_arms" / "heron6.toml"


def _size(text: str) -> tuple[int, int]:
    from poser.cli import UsageError

    try:
        w, h = (int(v) for v in str(text).lower().split("x"))
    except ValueError:
        raise UsageError(f"--size must look like WIDTHxHEIGHT, e.g. 1280x800, got {text!r}") from None
    if not (320 <= w <= 8000 and 240 <= h <= 8000):
        raise UsageError(f"--size must be between 320x240 and 8000x8000, got {text!r}")
    return w, h


def _prepare(args):
    """Read and check every argument before Qt starts; raises UsageError with a plain message."""
    import numpy as np

    from poser.cli import UsageError, load_arm, parse_list

    FIELD_LIMIT = 1e6  # as poser.ui.target_panel.FIELD_LIMIT (not imported: Qt is not started yet)

    path = Path(args.arm) if getattr(args, "arm", None) else default_arm()
    spec, chain = load_arm(path)
    q_user = None
    if getattr(args, "joints", None):
        q_user = parse_list(args.joints, "--joints", chain.n)
    target = None
    if getattr(args, "target", None):
        vals = parse_list(args.target, "--target")
        if len(vals) not in (3, 6):
            raise UsageError(f"--target needs 3 values (X,Y,Z) or 6 (X,Y,Z,R,P,Y), got {len(vals)} ({args.target!r})")
        if np.max(np.abs(vals)) > FIELD_LIMIT:
            raise UsageError(f"--target values must lie within ±1e6 (the target fields' range), "
                             f"got {args.target!r}")
        target = vals
    size = _size(getattr(args, "size", None) or "1280x800")
    snapshot = getattr(args, "snapshot", None)
    if snapshot:
        out = Path(snapshot)
        if out.suffix.lower() != ".png":
            raise UsageError(f"--snapshot must name a .png file, got {snapshot!r}")
        if not out.parent.exists() and str(out.parent):
            raise UsageError(f"--snapshot: folder {str(out.parent)!r} does not exist")
        if out.is_dir():
            raise UsageError(f"--snapshot: {snapshot!r} is a folder, not a file to write")
    return path, spec, q_user, target, size


def run(args) -> int:
    """Open the window (or render it to ``args.snapshot``); returns the exit status."""
    from poser.cli import UsageError

    try:
        path, spec, q_user, target, size = _prepare(args)
    except UsageError as exc:
        print(f"poser: error: {exc}", file=sys.stderr)
        return 2

    from PySide6.QtCore import QCoreApplication, Qt, QTimer
    from PySide6.QtWidgets import QApplication

    QCoreApplication.setAttribute(Qt.ApplicationAttribute.AA_ShareOpenGLContexts)
    app = QApplication.instance() or QApplication([sys.argv[0] if sys.argv else "poser"])
    app.setApplicationName("Poser")
    icon = default_arm().parent.parent / "resources" / "poser-icon.svg"
    if icon.exists():
        from PySide6.QtGui import QIcon

        app.setWindowIcon(QIcon(str(icon)))
    app.setOrganizationName("Poser")
    from poser.ui.main_window import MainWindow

    snapshot = getattr(args, "snapshot", None)
    win = MainWindow(spec, path, interactive=not snapshot)
    win.resize(*size)
    if q_user is not None:
        win.state.set_q_user(q_user)
        win.view.clear_trail()  # the jump from home is no path the tool took
    if target is not None:
        # a snapshot needs the branches before it is taken; a window shows at once and solves on its worker
        win.set_target_values(target, now=bool(snapshot))
    if snapshot:
        ok = win.snapshot(snapshot, size)
        _dispose(app, win)
        if not ok:
            print(f"poser: error: --snapshot: cannot write {snapshot!r} (a folder, or no permission?)", file=sys.stderr)
            return 2
        return 0

    if getattr(args, "arm", None):  # the file named on the command line is one the user opened
        win.add_recent(path)
    win.show()
    if os.environ.get("POSER_EXIT_AFTER_FIRST_FRAME"):
        # for benchmarks/gui.py: report the first rendered frame and quit
        def first():
            print(f"first-frame {time.perf_counter() - _T0:.4f}", flush=True)
            QTimer.singleShot(0, app.quit)

        win.on_first_frame(first)
    win.offer_recovery()
    rc = app.exec()
    _dispose(app, win)
    return int(rc)


def _dispose(app, win) -> None:
    """Delete the window while Qt and Python are both alive (not in the interpreter's final sweep,
    where PySide6 and pyqtgraph objects can be torn down in an order that aborts the process)."""
    import gc

    from PySide6.QtCore import QCoreApplication, QEvent

    win.close()
    win.deleteLater()
    QCoreApplication.sendPostedEvents(None, QEvent.Type.DeferredDelete)
    app.processEvents()
    gc.collect()
