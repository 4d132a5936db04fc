"""Without OpenGL the window still opens, with a 2D three-view, and says why (QT_QPA_PLATFORM=offscreen)."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest
from ui_common import ROOT

SCRIPT = r"""
import sys
from PySide6.QtWidgets import QApplication
app = QApplication([])
from poser import armfile
from poser.ui.app import default_arm
from poser.ui.main_window import MainWindow
win = MainWindow(armfile.load(default_arm()), default_arm(), interactive=False)
win.resize(1280, 800)
win.show()
app.processEvents()
win.state.set_q_user([20, 30, 20, 30, -40, 10])
app.processEvents()
print("platform", app.platformName())
print("kind", win.view.kind)
print("dock", win.docks["view"].windowTitle())
print("render", win.status.render.text())
print("plots", len(win.view.plots))
x, z = win.view._items[1]["link"].getData()
print("side-view-tool", round(float(x[-1]), 3), round(float(z[-1]), 3))
print("fk-tool", round(float(win.state.tool()[0, 3]), 3), round(float(win.state.tool()[2, 3]), 3))
"""


def run_offscreen(code_or_args, tmp_path):
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen", POSER_RECOVERY_DIR=str(tmp_path))
    env.pop("DISPLAY", None)
    return subprocess.run([sys.executable, *code_or_args], capture_output=True, text=True, cwd=ROOT, env=env,
                          timeout=60)


def test_the_2d_fallback_opens_under_offscreen(tmp_path):
    r = run_offscreen(["-c", SCRIPT], tmp_path)
    assert r.returncode == 0, r.stderr
    out = dict(line.split(" ", 1) for line in r.stdout.strip().splitlines())
    assert out["platform"] == "offscreen"
    assert out["kind"] == "2d"
    assert out["dock"] == "Three-view (2D)"
    assert out["render"] == "2D three-view: no OpenGL on Qt platform 'offscreen'"
    assert out["plots"] == "3"
    # the side view (x across, z up) ends at the tool point computed by the core
    assert out["side-view-tool"] == out["fk-tool"]


@pytest.mark.gui
def test_a_snapshot_without_opengl_shows_the_three_view(tmp_path):
    out = tmp_path / "flat.png"
    r = run_offscreen(["-m", "poser", "--snapshot", str(out)], tmp_path)
    assert r.returncode == 0, r.stderr
    from PySide6.QtGui import QImage

    img = QImage(str(out))
    assert (img.width(), img.height()) == (1280, 800)


@pytest.mark.gui
def test_the_three_view_follows_the_state(make_window, monkeypatch, qtbot):
    monkeypatch.setenv("POSER_NO_GL", "1")
    win = make_window()
    assert win.view.kind == "2d" and win.status.render.text() == "2D three-view: POSER_NO_GL is set"
    win.state.set_q_user([20, 30, 20, 30, -40, 10])
    x, z = win.view._items[1]["link"].getData()
    T = win.state.tool()
    assert (x[-1], z[-1]) == pytest.approx((T[0, 3], T[2, 3]))
    win.set_target_values([900, -300, 900, 180, 0, 0])
    ghosts = [g for g in win.view._items[2]["ghosts"] if len(g.getData()[0] if g.getData()[0] is not None else [])]
    assert len(ghosts) >= 2
    tx, ty = win.view._items[2]["target"].getData()
    assert (tx[0], ty[0]) == pytest.approx((900, -300))
