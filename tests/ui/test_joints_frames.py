"""Joint panel and frames panel in a real window (pytest-qt under Xvfb)."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QStyle, QStyleOptionSlider

from poser.core.fk import fk, link_transforms
from poser.ui import palette
from poser.ui.geometry import format_matrix

pytestmark = pytest.mark.gui


def handle_centre(slider) -> QPoint:
    opt = QStyleOptionSlider()
    slider.initStyleOption(opt)
    rect = slider.style().subControlRect(QStyle.ComplexControl.CC_Slider, opt, QStyle.SubControl.SC_SliderHandle,
                                         slider)
    return rect.center()


def test_dragging_a_slider_changes_the_frames_panel_to_the_fk_value(make_window, qtbot):
    win = make_window()
    win.docks["frames"].raise_()  # the Frames tab in front, as a user reading it has it
    row = win.joints.rows[1]  # J2 shoulder
    before = win.state.q_user[1]
    start = handle_centre(row.slider)
    qtbot.mousePress(row.slider, Qt.MouseButton.LeftButton, pos=start)
    for dx in range(5, 65, 5):
        qtbot.mouseMove(row.slider, QPoint(start.x() + dx, start.y()))
    qtbot.mouseRelease(row.slider, Qt.MouseButton.LeftButton, pos=QPoint(start.x() + 60, start.y()))
    after = win.state.q_user[1]
    assert after > before + 1.0, "dragging right must raise J2"
    # the value box shows the new value, in degrees
    assert row.spin.value() == pytest.approx(after, abs=0.01)
    assert row.spin.suffix() == " deg"
    # the frames panel shows exactly the core's FK of the joint values now in the state
    T = fk(win.state.chain, win.state.q)
    assert win.frames.tool_matrix.text() == format_matrix(T, "text", 4)
    assert win.frames.xyz_label.text().endswith(" mm")
    x_text = win.frames.xyz_label.text().split("=")[1].split(",")[0]
    assert float(x_text) == pytest.approx(T[0, 3], abs=1e-3)


def test_typing_a_value_moves_only_that_joint_and_does_not_echo(make_window, qtbot):
    win = make_window()
    row = win.joints.rows[2]
    seen = []
    win.state.changed.connect(seen.append)
    row.spin.setFocus()
    row.spin.selectAll()
    qtbot.keyClicks(row.spin, "35")
    assert win.state.q_user[2] == pytest.approx(0.0)  # nothing applied while typing (see test_typing.py)
    qtbot.keyClick(row.spin, Qt.Key.Key_Return)
    assert win.state.q_user[2] == pytest.approx(35.0)
    assert row.spin.value() == pytest.approx(35.0)
    assert row.slider.value() == row.value_to_slider(35.0)
    assert seen and set(seen) == {"q"}
    # other joints untouched
    home = win.state.chain.q_to_user(win.state.chain.home)
    np.testing.assert_allclose(np.delete(win.state.q_user, 2), np.delete(home, 2), atol=1e-12)


def test_a_joint_at_its_limit_shows_the_warning_in_colour_and_words(make_window, qtbot):
    win = make_window()
    row = win.joints.rows[2]  # J3 elbow, -120 … 160 deg
    win.state.set_joint_user(2, 160.0)
    assert row.words.text() == "AT upper limit"
    assert palette.AT in row.words.styleSheet()
    assert row.bar.level == "at" and row.bar.toolTip() == "AT upper limit"
    assert "J3 elbow AT upper limit" in win.status.limits.text()
    assert palette.AT in win.status.limits.styleSheet()
    # within the 5 % margin: amber and "near"
    win.state.set_joint_user(2, 150.0)  # 10 deg of a 280 deg range
    assert row.words.text() == "near upper limit: 10 deg left"
    assert palette.NEAR in row.words.styleSheet()
    # a wider margin setting is taken at once
    win.joints.margin_spin.setValue(2.0)
    assert win.state.option("margin") == pytest.approx(0.02)
    assert row.words.text().startswith("free")
    assert palette.OK in row.words.styleSheet()


def test_arrow_keys_nudge_the_focused_joint_by_the_step(make_window, qtbot):
    win = make_window()
    win.joints.step_spin.setValue(2.5)
    row = win.joints.rows[0]
    row.slider.setFocus()
    qtbot.keyClick(row.slider, Qt.Key.Key_Up)
    assert win.state.q_user[0] == pytest.approx(2.5)
    qtbot.keyClick(row.slider, Qt.Key.Key_Left)
    qtbot.keyClick(row.slider, Qt.Key.Key_Left)
    assert win.state.q_user[0] == pytest.approx(-2.5)
    qtbot.keyClick(row.spin, Qt.Key.Key_Up, modifier=Qt.KeyboardModifier.ShiftModifier)
    assert win.state.q_user[0] == pytest.approx(22.5)


def test_sliding_joints_have_their_own_step_in_the_length_unit(make_window, qtbot, tmp_path):
    from ui_common import ROOT

    win = make_window(ROOT / "demo_arms" / "boom3.toml")
    assert win.joints.step_spin.suffix() == " rad" and win.joints.step_length_spin.suffix() == " m"
    assert win.state.option("step") == 0.01 and win.state.option("step_length") == 0.001
    slide = win.joints.rows[2]
    # the type in a technician's words with the unit the value is in; the file's term stays in the tooltip
    assert slide.kind.text() == "linear joint, m"
    assert slide.kind.toolTip().startswith("prismatic joint: slides along its axis")
    assert win.joints.rows[1].kind.text() == "rotary joint, rad"
    before = win.state.q_user[2]
    qtbot.keyClick(slide.slider, Qt.Key.Key_Right)
    assert win.state.q_user[2] == pytest.approx(before + 0.001)
    qtbot.keyClick(win.joints.rows[1].slider, Qt.Key.Key_Right)
    assert win.state.q_user[1] == pytest.approx(win.state.chain.home[1] + 0.01)


def test_home_and_zero_buttons(make_window, qtbot):
    win = make_window()
    win.state.set_q_user([10, 20, 30, 40, 50, 60])
    qtbot.mouseClick(win.joints.home_button, Qt.MouseButton.LeftButton)
    np.testing.assert_allclose(win.state.q, win.state.chain.home)
    win.state.set_q_user([10, 20, 30, 40, 50, 60])
    qtbot.mouseClick(win.joints.zero_button, Qt.MouseButton.LeftButton)
    np.testing.assert_allclose(win.state.q, 0.0)


def test_frames_panel_shows_and_copies_a_links_matrices(make_window, qtbot):
    win = make_window()
    win.state.set_q_user([10, 20, 30, 40, 50, 60])
    win.frames.link_combo.setCurrentIndex(2)  # link 3
    chain, q = win.state.chain, win.state.q
    A3 = link_transforms(chain, q)[2]
    W3 = chain.frames(q)[3]
    assert win.frames.a_box.title() == "A₃: frame 2 → frame 3"  # a subscript reads as in print
    assert win.frames.a_matrix.text() == format_matrix(A3, "text", 4)
    assert win.frames.w_matrix.text() == format_matrix(W3, "text", 4)
    ns = {"np": np}
    np.testing.assert_allclose(eval(win.frames.copy("A", "numpy").split("\n", 1)[1], ns), A3, atol=1e-6)
    csv = win.frames.copy("world", "csv")
    np.testing.assert_allclose([[float(v) for v in r.split(",")] for r in csv.splitlines()], W3, atol=1e-6)
    text = win.frames.copy("tool", "text")
    assert text.splitlines()[0] == "world → tool (translation in mm)"
    from PySide6.QtGui import QGuiApplication

    assert QGuiApplication.clipboard().text() == text
    assert "mm" in win.frames.units_label.text()


def test_keyboard_reaches_every_panel(make_window, qtbot):
    win = make_window()
    win.activateWindow()
    qtbot.waitActive(win)
    for k, (_panel, widget) in enumerate(
        [("view", win.view.container), ("joints", win.joints.home_button), ("frames", win.frames.link_combo),
         ("target", win.target.xyz[0]), ("editor", win.editor.name)], start=1):
        qtbot.keyClick(win, Qt.Key(Qt.Key.Key_0 + k), modifier=Qt.KeyboardModifier.ControlModifier)
        qtbot.waitUntil(lambda w=widget: win.focusWidget() is w, timeout=2000)


def test_control_characters_in_joint_names_are_shown_escaped(make_window):
    win = make_window()
    win.editor.set_cell(1, "name", "J2\tshoulder\u200b")
    assert win.editor.problems == []
    assert win.state.chain.names[1] == "J2\tshoulder\u200b"  # kept exactly
    assert win.joints.rows[1].name.text() == "J2\\tshoulder\\u200b"
    assert win.frames.link_combo.itemText(1) == "2: J2\\tshoulder\\u200b"


def test_a_frames_tab_behind_the_target_is_brought_up_to_date_when_raised(make_window, qtbot):
    """The Frames panel is a tab behind the Target panel: joint changes do not format its four matrices (they
    cost a frame's time for nothing), and raising the tab shows the core's FK of the joints now."""
    win = make_window()
    assert not win.frames._seen
    before = win.frames.tool_matrix.text()
    win.state.set_joint_user(1, 35.0)
    win.state.set_joint_user(2, -20.0)
    assert win.frames.tool_matrix.text() == before  # not rewritten while nobody can see it
    win.docks["frames"].raise_()
    qtbot.waitUntil(lambda: win.frames._seen, timeout=1000)
    T = fk(win.state.chain, win.state.q)
    assert win.frames.tool_matrix.text() == format_matrix(T, "text", 4) != before
    win.state.set_joint_user(1, 40.0)  # seen: follows every change again
    assert win.frames.tool_matrix.text() == format_matrix(fk(win.state.chain, win.state.q), "text", 4)
