#!/usr/bin/env python3
"""The window's speed figures (a section of benchmarks/run.py; also runs on its own).

    python benchmarks/gui.py [--quick] [--json]

* ``gui_frame_ms`` — median time from a joint change (``PoseState.set_q``) to the
  next frame the 3D view has rendered (QOpenGLWidget.frameSwapped): Heron 6, a
  1280x800 window, every panel live, software OpenGL (Mesa llvmpipe under Xvfb).
* ``gui_frame_target_ms`` — the same with a target that has ten or more branches
  (Heron 6 at 900, -300, 900 mm, rpy 180, 0, 0 deg) and ghosts on: the posing
  workflow (median over ~50 joint changes; ``gui_frame_target_p90_ms`` beside it).
* ``gui_start_s`` — from starting ``python -m poser`` to its first rendered frame
  (median of three starts).
* ``gui_stall_max_ms`` — the longest time the GUI thread was busy at once (a 1 ms heartbeat,
  :mod:`poser.ui.heartbeat`) over a scripted session typing targets key by key into Wren 6's
  target fields, the singular target 0, 0, 1500 mm at rpy 0, 0, 0 (four families) first; the 3D
  view's redraws are part of it (the median of three sessions' longest stalls; one with --quick).
* ``gui_branch_list_ms`` — filling the branch list (model, column widths, summary) with Heron 6's
  12 branches at 900, -300, 900 mm, rpy 180, 0, 0 deg, on the GUI thread (median).

Both are measured in child processes.  Without a display the child runs under
``xvfb-run`` (with GLX); a figure is never a pass or a fail.
"""

from __future__ import annotations

import json
import os
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
XVFB = ["xvfb-run", "-a", "-s", "-screen 0 1600x1000x24 +extension GLX +render"]

GOALS = {
    "gui_frame_ms": "<= 16 ms (joint change to next rendered frame; Heron 6, 1280x800, software GL)",
    "gui_frame_p90_ms": "reference: 90th percentile of the same",
    "gui_frame_target_ms": "<= 16 ms (the same with a target of >= 10 branches and ghosts on)",
    "gui_frame_target_p90_ms": "reference: 90th percentile of the same",
    "gui_start_s": "<= 1.2 s (process start to first rendered frame)",
    "gui_stall_max_ms": "<= 50 ms (longest GUI stall typing targets on Wren 6, its singular target included)",
    "gui_branch_list_ms": "reference: the branch list filled with Heron 6's 12 branches (GUI thread)",
    "gui_renderer": "OpenGL renderer the figures were taken with",
}


TARGET = (900.0, -300.0, 900.0, 180.0, 0.0, 0.0)
"""The posing-workflow target on Heron 6 (mm, deg): 12 branches, six of them within the limits."""


def _time_changes(app, glw, st, base, n: int) -> list[float]:
    """Milliseconds from each of ``n`` joint changes to the next rendered frame (after five warm-ups)."""
    times = []
    for k in range(n + 5):
        q = base.copy()
        q[k % st.chain.n] += 0.02 * (1 + k % 7)
        start = glw.frames_rendered
        t0 = time.perf_counter()
        st.set_q(q)
        while glw.frames_rendered == start:
            app.processEvents()
        dt = time.perf_counter() - t0
        if k >= 5:  # the first few warm caches
            times.append(dt * 1e3)
    times.sort()
    return times


def _frames_child(n: int, n_target: int) -> dict:
    """Runs inside the child: build the window and time joint changes to rendered frames."""
    sys.path.insert(0, str(ROOT))
    import numpy as np
    from PySide6.QtCore import QCoreApplication, Qt
    from PySide6.QtWidgets import QApplication

    QCoreApplication.setAttribute(Qt.ApplicationAttribute.AA_ShareOpenGLContexts)
    app = QApplication.instance() or QApplication(["poser-bench"])
    from poser import armfile
    from poser.ui.app import default_arm
    from poser.ui.main_window import MainWindow

    path = default_arm()
    win = MainWindow(armfile.load(path), path, interactive=False)
    win.resize(1280, 800)
    if win.view.kind != "3d":
        raise RuntimeError(f"no 3D view: {win.gl_reason}")
    win.render_now()
    glw = win.view.view
    st = win.state
    base = st.chain.q_from_user(np.array([20.0, 30.0, 20.0, 30.0, -40.0, 10.0]))
    plain = _time_changes(app, glw, st, base, n)
    # the posing workflow: a target with many branches, ghosts on
    st.set_option("show_ghosts", True)
    win.set_target_values(TARGET)
    if len(st.branches) < 10:
        raise RuntimeError(f"the benchmark target has {len(st.branches)} branches, expected at least 10")
    win.render_now()
    target = _time_changes(app, glw, st, base, n_target)
    from OpenGL import GL

    glw.makeCurrent()
    renderer = GL.glGetString(GL.GL_RENDERER).decode("ascii", "replace")
    glw.doneCurrent()
    win.close()
    return {
        "gui_frame_ms": statistics.median(plain),
        "gui_frame_p90_ms": plain[int(0.9 * (len(plain) - 1))],
        "gui_frame_target_ms": statistics.median(target),
        "gui_frame_target_p90_ms": target[int(0.9 * (len(target) - 1))],
        "gui_renderer": renderer,
    }


def _stall_child(rounds: int) -> dict:
    """Runs inside the child: type Wren 6's targets key by key, heartbeat running; fill the branch list."""
    sys.path.insert(0, str(ROOT))
    from PySide6.QtCore import QCoreApplication, Qt
    from PySide6.QtWidgets import QApplication

    QCoreApplication.setAttribute(Qt.ApplicationAttribute.AA_ShareOpenGLContexts)
    app = QApplication.instance() or QApplication(["poser-bench"])
    from poser import armfile
    from poser.ui.heartbeat import TARGET_SESSIONS, typing_session
    from poser.ui.main_window import MainWindow

    path = ROOT / "demo_arms" / "wren6.toml"
    win = MainWindow(armfile.load(path), path, interactive=False)
    win.resize(1280, 800)
    win.render_now()
    stalls = [typing_session(win, TARGET_SESSIONS["wren6"]).max_gap_ms for _ in range(rounds)]
    win.close()
    path = ROOT / "demo_arms" / "heron6.toml"
    win = MainWindow(armfile.load(path), path, interactive=False)
    win.resize(1280, 800)
    win.render_now()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    fills = []
    for _ in range(20):
        t0 = time.perf_counter()
        win.target._fill_table()
        fills.append((time.perf_counter() - t0) * 1e3)
    app.processEvents()
    win.close()
    return {"gui_stall_max_ms": statistics.median(stalls), "gui_branch_list_ms": statistics.median(fills)}


def _start_once() -> float:
    env = dict(os.environ, POSER_EXIT_AFTER_FIRST_FRAME="1", POSER_RECOVERY_DIR=str(Path("/tmp") / "poser-bench-rec"))
    t0 = time.perf_counter()
    p = subprocess.Popen([sys.executable, "-m", "poser"], cwd=ROOT, env=env, stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True)
    line = ""
    while True:
        line = p.stdout.readline()
        if not line or line.startswith("first-frame"):
            break
    t = time.perf_counter() - t0
    p.communicate(timeout=30)
    if not line.startswith("first-frame"):
        raise RuntimeError(f"the window did not report a first frame (exit {p.returncode}): {p.stderr}")
    return t


def _child(quick: bool) -> dict:
    figures = _frames_child(40 if quick else 200, 20 if quick else 50)
    figures.update(_stall_child(1 if quick else 3))
    starts = [_start_once() for _ in range(1 if quick else 3)]
    figures["gui_start_s"] = statistics.median(starts)
    return figures


def _have_display() -> bool:
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def run(quick: bool = False):
    """``(figures, goals)`` for benchmarks/run.py; measures in a child process (under xvfb-run without a display)."""
    cmd = [sys.executable, str(Path(__file__).resolve()), "--child"] + (["--quick"] if quick else [])
    if not _have_display():
        if shutil.which("xvfb-run") is None:
            raise RuntimeError("no display and no xvfb-run: install xvfb (see tools/sysdeps.sh)")
        cmd = XVFB + cmd
    env = dict(os.environ)
    env.pop("QT_QPA_PLATFORM", None)
    r = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, env=env, timeout=600)
    if r.returncode != 0:
        raise RuntimeError(f"GUI benchmark child failed ({r.returncode}): {r.stderr.strip()[-800:]}")
    line = [x for x in r.stdout.splitlines() if x.startswith("{")][-1]
    return json.loads(line), dict(GOALS)


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    quick = "--quick" in argv
    if "--child" in argv:
        print(json.dumps(_child(quick)), flush=True)
        return 0
    figures, goals = run(quick=quick)
    if "--json" in argv:
        print(json.dumps({**figures, "goals": goals}, indent=2))
    else:
        for k, v in figures.items():
            print(f"{k:24} {v:>10.3f}   {goals.get(k, '')}" if isinstance(v, float) else
                  f"{k:24} {v!s:>10}   {goals.get(k, '')}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
