"""Another arm with a target set: no traceback, the target in the new arm's unit (said in words), the view
refitted, the branches solved again for the new joints; the Joints dock shows every row of the new arm."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import QPoint
from ui_common import DEMO, copy_demo

from poser.ui.state import Target

pytestmark = pytest.mark.gui




def test_opening_an_arm_in_metres_converts_a_target_in_millimetres(make_window, tmp_path, qtbot):
    win = make_window()
    st = win.state
    win.set_target_values([1200, 0, 900])
    assert st.ik is not None
    fields = []
    st.changed.connect(fields.append)
    notices = []
    st.notice.connect(lambda level, text: notices.append(text))
    boom = copy_demo("boom3.toml", tmp_path)
    assert win.open_file(boom)
    assert st.chain.units.length == "m" and st.chain.n == 3
    np.testing.assert_allclose(st.target.xyz, [1.2, 0.0, 0.9])  # the same place: never 1200 m
    assert notices == ["Target converted to the new arm's unit: 1200, 0, 900 mm is 1.2, 0, 0.9 m (the same place; "
                       "Clear target drops it)."]
    assert win.notices.text("state") == notices[0]
    assert fields.index("arm") < fields.index("target")  # the view refits to the new arm, then the target moves
    # the fields show the converted target in the new unit
    assert [s.value() for s in win.target.xyz] == pytest.approx([1.2, 0.0, 0.9])
    assert win.target.xyz[0].suffix() == " m"
    # solved again, for three joints
    assert win.solver.wait(10.0)
    assert st.ik is not None and all(b.q.shape == (3,) for b in st.branches)
    np.testing.assert_allclose(st.ik.xyz, [1.2, 0.0, 0.9])


def test_adding_and_removing_joints_with_a_target_set_keeps_every_panel_consistent(make_window, qtbot):
    win = make_window()
    st = win.state
    win.set_target_values([900, -300, 900, 180, 0, 0])
    win.state.hover_branch(2)
    win.state.select_branch(1)
    ed = win.editor
    ed.table.selectRow(5)
    ed.add_joint()  # seven joints now, the six-joint branches are gone before anyone draws them
    assert st.chain.n == 7 and st.branches == () and st.selected == st.hovered == -1
    assert win.target.model.rowCount() == 0
    assert win.solver.wait(20.0)
    assert st.ik is not None and all(b.q.shape == (7,) for b in st.branches)
    ed.table.selectRow(6)
    ed.remove_joint()
    assert st.chain.n == 6
    assert win.solver.wait(20.0)
    assert st.ik is not None and all(b.q.shape == (6,) for b in st.branches)
    np.testing.assert_allclose(st.target.xyz, [900, -300, 900])  # the same unit: the target stays as typed


def test_opening_an_arm_without_a_target_invents_none(make_window, tmp_path):
    win = make_window()
    assert win.open_file(copy_demo("boom3.toml", tmp_path))
    assert win.state.target is None
    assert "state" not in win.notices.items


def test_the_state_converts_between_any_two_length_units(qapp):
    from poser import armfile
    from poser.ui.state import PoseState

    heron = armfile.load(DEMO / "heron6.toml")
    st = PoseState(heron)
    st.set_target(Target(np.array([254.0, 0.0, 25.4])))
    inch = heron.copy()
    inch.units = type(heron.units)("in", heron.units.angle)
    for j in inch.joints:
        j.a, j.d = j.a / 25.4, j.d / 25.4
    inch.base_xyz = tuple(v / 25.4 for v in inch.base_xyz)
    inch.tool_xyz = tuple(v / 25.4 for v in inch.tool_xyz)
    st.set_arm(inch)
    np.testing.assert_allclose(st.target.xyz, [10.0, 0.0, 1.0])


def _last_row_shown(win) -> bool:
    scroll = win.docks["joints"].widget()
    vp = scroll.viewport()
    last = win.joints.rows[-1]
    bottom = max(w.mapTo(vp, QPoint(0, w.height())).y() for w in (last.words, last.bar, last.kind))
    return 0 < bottom <= vp.height()


@pytest.mark.parametrize("first, then", [("quill4.toml", "lark7.toml"), ("planar3.toml", "wren6.toml"),
                                         ("quill4.toml", "heron6.toml")])
def test_the_joints_dock_shows_every_joint_of_the_arm_opened(make_window, tmp_path, qtbot, first, then):
    win = make_window(copy_demo(first, tmp_path))
    qtbot.wait(50)
    assert _last_row_shown(win)
    assert win.open_file(copy_demo(then, tmp_path))
    qtbot.waitUntil(lambda: _last_row_shown(win), timeout=2000)
    assert len(win.joints.rows) == win.state.chain.n >= 6


def test_the_joints_dock_fits_the_new_arm_when_a_notice_comes_with_it(make_window, tmp_path, qtbot):
    """Heron 6 (mm) with a target, then Lark 7 (m): the target is converted and a notice bar appears above the
    docks at the same time; the seven rows must still fit (the dock once got the share of the whole window's
    height, which the menu, notice and status bars make too little)."""
    win = make_window(copy_demo("heron6.toml", tmp_path))
    win.set_target_values([900, -300, 900, 180, 0, 0])
    qtbot.wait(50)
    assert win.open_file(copy_demo("lark7.toml", tmp_path))
    qtbot.waitUntil(lambda: win.notice_bar.isVisible(), timeout=2000)
    qtbot.wait(200)
    assert _last_row_shown(win)
    assert win.docks["joints"].widget().verticalScrollBar().maximum() == 0
    assert win.docks["target"].height() >= 120  # the branch list keeps room


def _snake(folder, n=32):
    """An invented arm of ``n`` short joints (for sizes only: a demo of nothing)."""
    rows = ['format = 1', f'name = "Snake {n}"', "", "[units]", 'length = "mm"', 'angle = "deg"', ""]
    for i in range(n):
        rows += ["[[joint]]", f'name = "J{i + 1}"', 'type = "revolute"', f"alpha = {90 if i % 2 == 0 else -90}",
                 "d = 60", "min = -120", "max = 120", ""]
    path = folder / f"snake{n}.toml"
    path.write_text("\n".join(rows))
    return path


def test_a_long_arm_leaves_the_target_panel_its_fields_and_branch_list(make_window, tmp_path, qtbot):
    """Heron 6 with a target, then a 32-joint arm: the Joints dock cannot show 32 rows at 800 px and scrolls,
    but it must not take the room the target needs — the Target panel once got what was left after 60 % of the
    window and hid its branch list below a scroll bar."""
    win = make_window(copy_demo("heron6.toml", tmp_path))
    win.set_target_values([300, 200, 900, 0, 0, 0])
    assert win.open_file(_snake(tmp_path))
    assert win.solver.wait(20.0)
    qtbot.wait(200)
    target = win.docks["target"].widget()
    assert target.verticalScrollBar().maximum() == 0  # every part of the Target panel shown
    table = win.target.table
    top = table.mapTo(target.viewport(), QPoint(0, 0)).y()
    assert top + table.height() <= target.viewport().height()
    rows = table.viewport().height() / max(table.sizeHintForRow(0), 1)
    assert rows >= 2, rows  # room for a few branches
    assert win.docks["joints"].widget().verticalScrollBar().maximum() > 0  # the joints scroll instead
