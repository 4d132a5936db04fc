"""Joint value boxes: the digits typed are kept, nothing is applied on the way through partial values, the
value goes in on Enter or after a pause."""

from __future__ import annotations

import shutil

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest
from ui_common import ROOT

from poser.ui.joints_panel import DECIMALS, PAUSE_MS

pytestmark = pytest.mark.gui


def type_in(spin, text):
    spin.setFocus()
    spin.selectAll()
    QTest.keyClicks(spin, text)


def test_partial_values_never_move_the_joint_and_a_pause_applies_the_whole_number(make_window, qtbot):
    win = make_window()
    st = win.state
    row = win.joints.rows[2]
    seen = []
    st.changed.connect(lambda f: seen.append(st.q_user[2]) if f == "q" else None)
    type_in(row.spin, "-12")
    qtbot.wait(PAUSE_MS // 3)
    QTest.keyClicks(row.spin, "5.125")
    assert seen == []  # "-", "-1", "-12", "-125", … never reached the arm
    qtbot.waitUntil(lambda: bool(seen), timeout=PAUSE_MS * 4)
    assert seen == [pytest.approx(-125.125)]
    assert row.spin.text() == "-125.125 deg"  # the box keeps what was typed while it has the focus
    assert row.slider.value() == row.value_to_slider(-120.0)  # the slider at its end; the words say beyond
    # Enter applies at once (no second change: the same value)
    QTest.keyClick(row.spin, Qt.Key.Key_Return)
    assert seen == [pytest.approx(-125.125)]
    assert row.spin.value() == pytest.approx(-125.125)


def test_enter_applies_at_once_and_other_joints_do_not_overwrite_what_is_being_typed(make_window, qtbot):
    win = make_window()
    st = win.state
    row = win.joints.rows[1]
    type_in(row.spin, "33.3333")
    st.set_joint_user(0, 5.0)  # something else moves the arm meanwhile (an animation, a script)
    assert row.spin.text().startswith("33.3333")  # the typed digits are not replaced
    QTest.keyClick(row.spin, Qt.Key.Key_Return)
    assert st.q_user[1] == pytest.approx(33.3333, abs=1e-9)
    assert row.spin.value() == pytest.approx(33.3333, abs=1e-9)
    assert st.q_user[0] == pytest.approx(5.0)


@pytest.mark.parametrize("arm, joint, typed", [("heron6.toml", 3, "12.3456"), ("boom3.toml", 2, "0.123456"),
                                               ("boom3.toml", 0, "1.234567")])
def test_the_boxes_keep_four_decimals_for_deg_and_mm_and_six_for_m_and_rad(make_window, tmp_path, qtbot,
                                                                           arm, joint, typed):
    path = tmp_path / arm
    shutil.copy(ROOT / "demo_arms" / arm, path)
    win = make_window(path)
    row = win.joints.rows[joint]
    assert row.spin.decimals() == DECIMALS[row.unit] >= (6 if row.unit in ("m", "rad") else 4)
    type_in(row.spin, typed)
    QTest.keyClick(row.spin, Qt.Key.Key_Return)
    assert win.state.q_user[joint] == pytest.approx(float(typed), abs=1e-12)
    assert row.spin.text() == f"{typed} {row.unit}"


def test_an_arrow_key_after_typing_steps_from_the_typed_value(make_window, qtbot):
    win = make_window()
    row = win.joints.rows[0]
    type_in(row.spin, "10")
    QTest.keyClick(row.spin, Qt.Key.Key_Up)
    assert win.state.q_user[0] == pytest.approx(11.0)
    assert row.spin.value() == pytest.approx(11.0) and not row.typing


def test_a_value_beyond_the_limits_is_typed_whole_not_cut_short(make_window, qtbot):
    """With the box's range at the limits ± half the span, Qt dropped the keystroke that left it: 456 in a
    -100 … 140 deg joint became 45.  The box takes the number; the words say it is beyond the limit."""
    win = make_window()
    row = win.joints.rows[1]
    type_in(row.spin, "456")
    QTest.keyClick(row.spin, Qt.Key.Key_Return)
    assert win.state.q_user[1] == pytest.approx(456.0)
    assert row.words.text() == "BEYOND upper limit by 316 deg"


def test_an_edit_of_the_arm_updates_the_joint_rows_in_place(make_window):
    """Editing a limit, a name or a unit keeps the row widgets (rebuilding 32 rows on every keystroke in the editor
    took tens of milliseconds); another joint count adds or removes rows only."""
    win = make_window()
    rows = list(win.joints.rows)
    spin = rows[2].spin
    win.editor.set_cell(2, "max", "150")
    win.editor.set_cell(2, "name", "J3 elbow (new)")
    assert win.joints.rows == rows and win.joints.rows[2].spin is spin
    assert rows[2].limits.text() == "-120 … 150 deg" and rows[2].name.text() == "J3 elbow (new)"
    assert rows[2].upper == 150.0 and "150" in rows[2].slider.toolTip()
    win.editor.table.selectRow(5)
    win.editor.add_joint()
    assert win.joints.rows[:6] == rows and len(win.joints.rows) == 7
    win.editor.set_cell(6, "type", "prismatic")
    assert win.joints.rows[6].unit == "mm" and win.joints.rows[6].spin.suffix() == " mm"
    win.editor.remove_joint()
    assert win.joints.rows == rows
