"""The 3D view's camera and toggles, the guide and cautions, and the reference-count guard."""

from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest
from PySide6.QtCore import Qt
from ui_common import ROOT

from poser.ui import help as guide

pytestmark = pytest.mark.gui


def test_standard_views_and_fit(make_window, qtbot):
    win = make_window()
    view = win.view
    view.set_view("top")
    elev, azim, dist = view.camera()
    assert elev == 90.0
    view.set_view("front")
    assert view.camera()[:2] == (0.0, 0.0)
    view.set_view("side")
    assert view.camera()[:2] == (0.0, -90.0)
    # "Fit arm" brings the camera back out after zooming in
    view.view.setCameraPosition(distance=10.0)
    qtbot.mouseClick(view.buttons["fit"], Qt.MouseButton.LeftButton)
    _, _, fitted = view.camera()
    points = win.state.drawing().points
    size = float(np.linalg.norm(points.max(axis=0) - points.min(axis=0)))
    assert fitted > size / 2


def test_joint_frames_trail_and_ghost_toggles_go_through_the_state(make_window, qtbot):
    win = make_window()
    view = win.view
    assert not win.state.option("show_frames")
    view.buttons["show_frames"].click()
    assert win.state.option("show_frames")
    labels = [lab.text for lab in view.joint_triads._labels if lab.visible()]
    assert labels == [f"F{i}" for i in range(1, 7)]
    view.buttons["show_trail"].click()
    assert not win.state.option("show_trail")
    assert not view.trail._line.visible()
    win.state.set_option("show_trail", True)  # written elsewhere: the button follows, without echo
    assert view.buttons["show_trail"].isChecked()
    win.state.set_q_user([10, 20, 30, 40, 50, 60])
    win.state.set_q_user([15, 20, 30, 40, 50, 60])
    assert view.trail._line.visible() and len(view._trail) >= 2
    assert view.grid_label.text() == "floor grid: 200 mm per square"
    assert view.floor.text == "grid 200 mm"


def test_the_guide_covers_every_panel_and_the_cautions(make_window):
    html = guide.guide_html()
    for panel in ("3D view", "Joints", "Frames", "Target", "Arm editor", "Status bar", "Keys"):
        assert f"<h3>{panel}</h3>" in html
    text = " ".join(guide.CAUTIONS)
    assert "plans nothing for a real robot" in text
    assert "real controller" in text
    assert "safeguarded space" in text
    assert "ISO 10218" in text and "local codes" in text and "licensed practice" in text
    win = make_window()
    win._help(False)
    assert "ISO 10218" in win._last_help.browser.toPlainText()
    win._help(True)
    assert "safeguarded space" in win._last_help.browser.toPlainText()


def test_thousands_of_signals_do_not_exhaust_none_or_true():
    # PySide6 6.12.0 on CPython 3.11 drops a reference to True per delivered signal and to None per
    # void call; poser.ui guards against it (poser/ui/_singletons.py).  Far more calls than the
    # objects' usual counts must leave the process healthy.
    code = (
        "import poser.ui\n"
        "from PySide6.QtCore import QObject, Signal\n"
        "from PySide6.QtWidgets import QApplication, QSlider\n"
        "app = QApplication([])\n"
        "class S(QObject):\n"
        "    s = Signal()\n"
        "o = S(); o.s.connect(lambda: None); w = QSlider()\n"
        "for k in range(60000):\n"
        "    o.s.emit(); w.setValue(k % 50)\n"
        "print('ok')\n"
    )
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=120,
                       env={**os.environ, "QT_QPA_PLATFORM": "offscreen"})
    assert r.returncode == 0, r.stderr[-500:]
    assert r.stdout.strip() == "ok"


def test_mouse_orbits_and_zooms_and_keys_pick_views(make_window, qtbot):
    from PySide6.QtCore import QPoint, QPointF
    from PySide6.QtGui import QWheelEvent
    from PySide6.QtTest import QTest
    from PySide6.QtWidgets import QApplication

    win = make_window()
    view = win.view
    glwin = view.view
    elev0, azim0, dist0 = view.camera()
    centre = QPoint(glwin.width() // 2, glwin.height() // 2)
    QTest.mousePress(glwin, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, centre)
    for dx in range(10, 110, 10):
        QTest.mouseMove(glwin, centre + QPoint(dx, 0))
    QTest.mouseRelease(glwin, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, centre + QPoint(100, 0))
    elev1, azim1, _ = view.camera()
    assert azim1 != azim0, "a left-drag must orbit"
    wheel = QWheelEvent(QPointF(centre), QPointF(glwin.mapToGlobal(centre)), QPoint(0, 0), QPoint(0, 120),
                        Qt.MouseButton.NoButton, Qt.KeyboardModifier.NoModifier, Qt.ScrollPhase.NoScrollPhase, False)
    QApplication.sendEvent(glwin, wheel)
    assert view.camera()[2] < dist0, "the wheel must zoom in"
    # keys typed into the 3D view pick a camera: T top, F front
    QTest.keyClick(glwin, Qt.Key.Key_T)
    assert view.camera()[0] == 90.0
    QTest.keyClick(glwin, Qt.Key.Key_F)
    assert view.camera()[:2] == (0.0, 0.0)


def test_the_3d_view_keeps_drawing_when_its_panel_floats(make_window, qtbot):
    win = make_window()
    dock = win.docks["view"]
    dock.setFloating(True)
    dock.resize(700, 500)
    qtbot.waitUntil(lambda: dock.isVisible(), timeout=2000)
    assert win.render_now()
    win.state.set_q_user([10, 20, 30, 40, 50, 60])
    assert win.render_now()
    dock.setFloating(False)
    assert win.render_now()


def test_window_icon_is_ours(tmp_path, qapp):
    """The application icon comes from resources/poser-icon.svg (drawn for Poser)."""
    from types import SimpleNamespace

    from PySide6.QtWidgets import QApplication

    from poser.ui.app import default_arm

    icon = default_arm().parent.parent / "resources" / "poser-icon.svg"
    assert icon.exists()
    args = SimpleNamespace(arm=None, snapshot=str(tmp_path / "s.png"), joints=None, target=None, size="640x480")
    from poser.ui.app import run

    assert run(args) == 0
    assert not QApplication.windowIcon().isNull()


def test_the_guide_explains_units_families_closest_approach_up_and_saving():
    html = guide.guide_html()
    for panel in ("Mounting and 'up'", "Saving", "Manipulability and condition number"):
        assert f"<h3>{panel}</h3>" in html
    text = " ".join(t for _, t in guide.SECTIONS)
    # manipulability has a unit and is 0 at a singularity; the condition number is the unitless figure
    assert "shown with its unit" in text and "mm³" in text and "It is 0 at a singularity" in text
    assert "The <i>condition number</i> is the figure without a unit" in text
    assert "have no unit" not in text  # what the guide used to say of both
    # families, turn variants, the closest approach and the nearest reachable point
    assert "<i>family</i>" in text and "<i>turn variants</i>" in text
    assert "<i>closest approach</i>" in text and "<i>nearest reachable point</i>" in text
    # up on wall and ceiling mounts: the base frame's z, away from the mounting surface
    assert "'Up' is the arm's base frame z axis: away from the surface the arm is mounted on" in text
    # saving: changed on disk, recovery copies
    assert "if another program changed it, Poser asks — reload it, overwrite it, or save as" in text
    assert "recovery copy" in text and "cannot be written, a red notice says so" in text
    # the cautions stay
    assert "ISO 10218" in html and "plans nothing for a real robot" in html


def test_an_arm_named_on_the_command_line_is_in_open_recent(tmp_path, qapp, monkeypatch):
    """`poser ARM.toml` opens a file the user chose: File ▸ Open recent lists it first next time (it was
    left out; only files opened through the dialog were remembered)."""
    import shutil
    from types import SimpleNamespace

    from PySide6.QtCore import QSettings, QStandardPaths

    from poser.ui.app import run

    arm = tmp_path / "my arm.toml"
    shutil.copy(ROOT / "demo_arms" / "wren6.toml", arm)
    before = QStandardPaths.writableLocation(QStandardPaths.StandardLocation.GenericConfigLocation)
    QSettings.setPath(QSettings.Format.NativeFormat, QSettings.Scope.UserScope, str(tmp_path / "config"))
    try:
        monkeypatch.setenv("POSER_EXIT_AFTER_FIRST_FRAME", "1")
        args = SimpleNamespace(arm=str(arm), snapshot=None, joints=None, target=None, size="640x480")
        assert run(args) == 0
        recent = QSettings("Poser", "Poser").value("recent", [], type=list)
    finally:
        QSettings.setPath(QSettings.Format.NativeFormat, QSettings.Scope.UserScope, before)
    assert recent and recent[0] == str(arm.resolve())
