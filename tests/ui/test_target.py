"""Target panel: live solving, the branch list against the core, preview, apply, unreachable targets."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt

from poser.core.transforms import rpy_to_matrix
from poser.ui import geometry

pytestmark = [pytest.mark.gui]


def type_into(qtbot, spin, text):
    spin.setFocus()
    spin.selectAll()
    qtbot.keyClicks(spin, text)


def typed_target(win, qtbot, xyz, rpy_deg):
    panel = win.target
    panel.mode.setCurrentIndex(0)  # rpy
    for spin, v in zip(panel.xyz + panel.ori[:3], list(xyz) + list(rpy_deg)):
        type_into(qtbot, spin, f"{v:g}")
    qtbot.waitUntil(lambda: win.state.ik is not None, timeout=5000)


def test_typing_a_target_lists_the_same_branches_as_the_core(make_window, qtbot):
    from poser.core.ik import solve

    win = make_window()
    win.state.set_q_user([20, 30, 20, 30, -40, 10])
    typed_target(win, qtbot, (900, -300, 900), (180, 0, 0))
    st = win.state
    assert np.allclose(st.target.xyz, [900, -300, 900])
    R = rpy_to_matrix(np.radians([180.0, 0.0, 0.0]))
    np.testing.assert_allclose(st.target.R, R, atol=1e-12)
    core = solve(st.chain, np.array([900.0, -300.0, 900.0]), R, near=st.q)
    model = win.target.model
    assert len(st.branches) == len(core.branches) > 0
    for r, b in enumerate(core.branches):
        index = model.index_of(r, 1)
        assert index.isValid() and model.branch_of(index) == r
        # a configuration's row shows the core's label; a turn variant under it, what tells it apart (the
        # label's turn words) first — its tooltip keeps the core's whole label
        first = model.data(index).split("\n")[0]
        if index.parent().isValid():
            assert b.label == f"{b.configuration} · {first.removesuffix(' · same configuration')}"
        else:
            assert first == b.label
        assert b.label in model.data(index, Qt.ItemDataRole.ToolTipRole)
        assert model.data(model.index_of(r, 2)).startswith("yes" if b.within_limits else "NO")
        np.testing.assert_allclose(st.branches[r].q, b.q, atol=1e-9)
    assert "within limits" in win.target.summary.text()


def test_hovering_previews_and_selecting_then_applying_poses_the_arm(make_window, qtbot):
    win = make_window()
    win.animator.duration = 0.15  # the real animation, kept short
    typed_target(win, qtbot, (900, -300, 900), (180, 0, 0))
    st = win.state
    panel = win.target
    panel.table.entered.emit(panel.model.index_of(1))
    assert st.hovered == 1
    assert win.view.ghosts._strong._visible
    inside = next(r for r, b in enumerate(st.branches) if b.within_limits)
    panel.select_branch(inside)
    assert st.selected == inside
    assert win.target.apply_button.isEnabled()
    start = st.q
    seen = []
    st.changed.connect(lambda f: seen.append(st.q) if f == "q" else None)
    qtbot.mouseClick(win.target.apply_button, Qt.MouseButton.LeftButton)
    goal = st.branches[inside].q
    qtbot.waitUntil(lambda: np.allclose(st.q, goal, atol=1e-12), timeout=3000)
    # the arm went there through joint space: poses in between, each between start and goal joint by joint
    between = [q for q in seen[:-1] if not np.allclose(q, goal)]
    assert len(between) >= 2
    lo, hi = np.minimum(start, goal) - 1e-12, np.maximum(start, goal) + 1e-12
    assert all(np.all((q >= lo) & (q <= hi)) for q in between)
    # the arm now sits on the target: the frames panel (its tab raised) reads the target back
    win.docks["frames"].raise_()
    qtbot.waitUntil(lambda: win.frames._seen, timeout=1000)
    T = st.tool()
    np.testing.assert_allclose(T[:3, 3], [900, -300, 900], atol=1e-6)
    np.testing.assert_allclose(T[:3, :3], st.target.R, atol=1e-8)
    x_text = win.frames.xyz_label.text().split("=")[1].split(",")[0]
    assert float(x_text) == pytest.approx(900.0, abs=1e-3)


def test_an_unreachable_target_is_explained(make_window, qtbot):
    win = make_window()
    win.target.mode.setCurrentIndex(3)  # position only
    for spin, v in zip(win.target.xyz, (5000, 0, 900)):
        type_into(qtbot, spin, f"{v:g}")
    qtbot.waitUntil(lambda: win.state.ik is not None, timeout=5000)
    assert win.state.target.R is None
    text = win.target.summary.text()
    assert text.startswith("Out of reach")
    assert "closest approach within limits misses the position by" in text and " mm" in text
    assert "nearest reachable point is" in text


def test_take_current_pose_fills_the_fields_in_every_notation(make_window, qtbot):
    win = make_window()
    win.state.set_q_user([10, 20, 30, 40, 50, 60])
    win.target.take_current()
    T = win.state.tool()
    np.testing.assert_allclose([s.value() for s in win.target.xyz], T[:3, 3], atol=1e-3)
    np.testing.assert_allclose(win.state.target.R, T[:3, :3], atol=1e-12)
    for k, mode in enumerate(("rpy", "axis-angle", "quaternion")):
        win.target.mode.setCurrentIndex(k)
        n = len(geometry.ORIENTATION_MODES[mode])
        vals = [s.value() for s in win.target.ori[:n]]
        R = geometry.rotation_from_values(mode, vals, np.pi / 180)
        np.testing.assert_allclose(R, T[:3, :3], atol=1e-4)  # fields hold 5 decimals
    qtbot.waitUntil(lambda: win.state.ik is not None, timeout=5000)
    # the present pose is one of the branches, at (almost) no distance
    assert min(np.abs(b.q - win.state.q).max() for b in win.state.branches) < 1e-4


def test_the_cli_target_option_solves_at_once(make_window, qtbot):
    win = make_window()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    assert win.state.ik is not None and len(win.state.branches) > 0
    assert win.target.mode.currentText() == "rpy"
    assert win.target.xyz[1].value() == pytest.approx(-300)


def test_applying_a_branch_beyond_a_limit_says_so(make_window, qtbot):
    win = make_window()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    st = win.state
    out = next(r for r, b in enumerate(st.branches) if not b.within_limits)
    worst = max(st.branches[out].violations, key=lambda v: v.excess)
    win.target.select_branch(out)
    assert win.target.apply_selected()  # the animator jumps when the window asks no questions
    np.testing.assert_allclose(st.q, st.branches[out].q)
    row = win.joints.rows[worst.joint]
    assert row.words.text().startswith(f"BEYOND {worst.side} limit by ")
    assert row.bar.level == "beyond"
    assert f"{worst.name} BEYOND {worst.side} limit" in win.status.limits.text()
