"""What a technician reads: wording, units, nothing cut off at 1280x800, colour never alone, keys reachable."""

from __future__ import annotations

import re

import numpy as np
import pytest
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QAbstractButton, QLabel, QScrollArea
from ui_common import ROOT

from poser import armfile
from poser.ui import geometry, palette, words

DEMO = ROOT / "demo_arms"


def chain_of(name):
    return armfile.load(DEMO / f"{name}.toml").to_chain()


# -- wording (no display) ---------------------------------------------------------------------------


def test_joint_types_are_named_in_the_trade_with_their_unit():
    assert words.kind_words("revolute", "deg") == (
        "rotary joint, deg", "revolute joint: turns about its axis; its value is an angle in deg")
    short, tip = words.kind_words("prismatic", "mm")
    assert short == "linear joint, mm" and "slides along its axis" in tip and "length in mm" in tip


def test_manipulability_text_has_four_digits_its_unit_and_says_zero_at_a_singularity():
    heron, boom = chain_of("heron6"), chain_of("boom3")
    assert words.manipulability_text(heron, 4.6347e8) == "4.635e+08 mm³"
    assert words.manipulability_text(boom, 0.022734) == "0.02273 m²"
    assert words.manipulability_text(boom, 0.36) == "0.3600 m²"
    assert words.manipulability_text(heron, 0.0) == "0 mm³"
    assert words.manipulability_text(heron, float("nan")) == "–"


def test_the_manipulability_unit_is_the_task_spaces():
    # |det| of the task-space Jacobian: length^(linear task rows - prismatic joints) for a square one
    # (see poser.core.jacobian.TaskSpace); six revolute axes give length³.
    assert words.manipulability_unit(chain_of("heron6")) == "mm³"
    assert words.manipulability_unit(chain_of("lark7")) == "m³"
    assert words.manipulability_unit(chain_of("boom3")) == "m²"  # position: 3 rows, one slide
    assert words.manipulability_unit(chain_of("quill4")) == "mm²"  # x, y, z and turn: 3 linear rows, one slide


def test_the_raw_unit_claim_holds_numerically():
    """Scaling every length of Heron 6 by 1000 multiplies the raw manipulability by 1000³ (mm³ → m³ check)."""
    from poser.core.jacobian import manipulability

    spec = armfile.load(DEMO / "heron6.toml")
    spec_m = spec.copy()
    spec_m._doc = None
    spec_m.units = type(spec.units)("m", spec.units.angle)
    spec_m.base_xyz = tuple(v / 1000 for v in spec.base_xyz)
    spec_m.tool_xyz = tuple(v / 1000 for v in spec.tool_xyz)
    for j in spec_m.joints:
        j.a, j.d = j.a / 1000, j.d / 1000
    mm, m = spec.to_chain(), spec_m.to_chain()
    q = np.radians([20, 30, 20, 30, -40, 10])
    w_mm, w_m = float(manipulability(mm, q)), float(manipulability(m, q))
    assert w_mm == pytest.approx(w_m * 1000**3, rel=1e-9)
    # the window shows it with its unit, so the two read as the same arm
    assert words.manipulability_text(mm, w_mm).endswith("mm³") and words.manipulability_text(m, w_m).endswith("m³")


def test_a_miss_in_orientation_is_not_reported_as_a_zero_distance():
    from types import SimpleNamespace as NS

    heron = chain_of("heron6")
    b = NS(position_error=0.0, orientation_error=np.radians(90.0))
    assert words.miss_words(heron, b) == "misses by 90 deg in orientation"
    b = NS(position_error=12.34, orientation_error=np.radians(4.5))
    assert words.miss_words(heron, b) == "misses by 12.3 mm and 4.5 deg in orientation"
    assert words.miss_words(heron, b, position_only=True) == "misses by 12.3 mm"


def test_matrices_line_up_on_the_decimal_point():
    T = np.array([[-0.3896, -0.101, 0.9154, 1463.5213], [0.342, 0, 1, -22.5], [0, -1, 0, 700], [0, 0, 0, 1]])
    lines = geometry.format_matrix(T, "text", 4).splitlines()
    # the decimal points of the first column are in one text column
    points = {line.index(".") for line in lines[:2]}
    assert len(points) == 1
    assert [float(v) for v in lines[0].split()] == pytest.approx(T[0])


# -- the window at 1280x800 -------------------------------------------------------------------------


def _scroll_of(win, key) -> QScrollArea:
    return win.docks[key].widget()


@pytest.mark.gui
@pytest.mark.parametrize("arm", ["heron6", "lark7", "boom3", "quill4"])
def test_every_joint_row_and_the_editor_buttons_fit_without_scrolling(make_window, tmp_path, arm, qtbot):
    import shutil

    path = tmp_path / f"{arm}.toml"
    shutil.copy(DEMO / f"{arm}.toml", path)
    win = make_window(path)
    qtbot.wait(50)
    joints = _scroll_of(win, "joints")
    assert joints.verticalScrollBar().maximum() == 0, "a joint row is hidden below the panel"
    assert joints.horizontalScrollBar().maximum() == 0, "the joint panel is wider than its dock"
    win.docks["editor"].raise_()
    qtbot.wait(50)
    editor = _scroll_of(win, "editor")
    assert editor.verticalScrollBar().maximum() == 0
    button = win.editor.add_button
    top_left = button.mapTo(editor.viewport(), button.rect().topLeft())
    assert editor.viewport().rect().contains(top_left) and button.isVisible()


@pytest.mark.gui
def test_joint_rows_say_type_and_unit_and_a_limit_keeps_the_spin_arrows(make_window):
    win = make_window()
    row = win.joints.rows[4]
    assert row.kind.text() == "rotary joint, deg"
    win.state.set_q_user([0, 0, 0, 0, 125, 0])
    assert row.words.text() == "AT upper limit"
    # the value box is tinted through its palette; a style sheet would swap Qt's arrow buttons for bare boxes
    assert row.spin.styleSheet() == ""
    assert row.spin.palette().color(row.spin.palette().ColorRole.Base).name().upper() == "#F8D7D7"
    win.state.set_q_user([0, 0, 0, 0, 0, 0])
    assert row.spin.palette().color(row.spin.palette().ColorRole.Base) == row.spin_palette.color(
        row.spin_palette.ColorRole.Base)


@pytest.mark.gui
def test_the_status_bar_never_cuts_a_warning_silently(make_window, tmp_path):
    import shutil

    path = tmp_path / "boom3.toml"
    shutil.copy(DEMO / "boom3.toml", path)
    win = make_window(path, size=(1280, 800))
    win.state.set_q_user([0.6, 2.2, 0.88])
    lim = win.status.limits
    full = lim.text()
    assert full.startswith("limits (2 joints): boom pitch AT upper limit; boom slide near upper limit")
    assert lim.toolTip() == full and lim.accessibleDescription() == full
    shown = lim.shown_text()
    # either the whole text, or a shortened one that ends in an ellipsis: never a text cut mid-word
    assert shown == full or (shown.endswith("…") and full.startswith(shown[:-1]))
    assert palette.AT in lim.styleSheet()  # in colour, and "AT" in words
    # the singularity verdict is never shortened at 1280 px
    assert not win.status.singular.elided
    # a narrow window shortens with an ellipsis
    win.resize(700, 600)
    win.status.layout().activate()
    for w in (win.status.singular, win.status.limits):
        assert w.shown_text() == w.text() or w.shown_text().endswith("…")


@pytest.mark.gui
def test_branch_list_fits_its_panel_and_agrees_with_the_status_bar(make_window, qtbot):
    from poser.ui.target_panel import LABEL_MIN

    win = make_window()
    win.state.set_q_user([20, 30, 20, 30, -40, 10])
    win.set_target_values([900, -300, 900, 180, 0, 0])
    qtbot.wait(50)
    panel = win.target
    table, model = panel.table, panel.model
    st = win.state
    assert len(st.branches) > 6
    # the label column has real room; every other column is as wide as its texts
    assert table.columnWidth(1) >= LABEL_MIN
    heads = [model.headerData(c, Qt.Orientation.Horizontal) for c in range(model.columnCount())]
    assert heads == ["#", "branch / joints [deg]", "limits", "manip. [mm³]", "move"]
    assert "manipulability" in model.headerData(3, Qt.Orientation.Horizontal, Qt.ItemDataRole.ToolTipRole)
    fm = table.fontMetrics()
    for r in range(len(st.branches)):
        for c in (0, 3, 4):
            for line in model.data(model.index_of(r, c)).split("\n"):
                assert fm.horizontalAdvance(line) <= table.columnWidth(c), (r, c, line)
    # a failing branch names its worst joint in the list and every violation in the details line
    bad = next(r for r, b in enumerate(st.branches) if not b.within_limits)
    cell = model.data(model.index_of(bad, 2))
    worst_joint = words.worst_violation(st.chain, st.branches[bad]).split(":")[0]
    assert cell.startswith(f"NO\n{worst_joint} ")
    panel.select_branch(bad)
    details = panel.details.text()
    assert details.startswith(f"Branch {bad + 1} · BEYOND LIMITS: ")
    for v in words.violations_words(st.chain, st.branches[bad].violations):
        assert v in details
    assert panel.apply_button.toolTip().startswith(f"move the arm to branch {bad + 1} — BEYOND joint limits: ")
    # apply a good branch: the status bar then shows the manipulability the list showed for it
    good = next(r for r, b in enumerate(st.branches) if b.within_limits)
    panel.select_branch(good)
    listed = model.data(model.index_of(good, 3)).split("\n")[0] + " mm³"  # the unit is in the header
    panel.apply_selected()
    qtbot.waitUntil(lambda: np.allclose(st.q, st.branches[good].q), timeout=3000)
    assert re.search(r"manipulability (.+)$", win.status.singular.text()).group(1) == listed
    # the tooltip says what the figure is and its unit (six revolute joints: length cubed)
    assert "in mm³" in win.status.singular.toolTip()
    # after the move, the largest-move column is measured from the new pose
    assert model.data(model.index_of(good, 4)).split("\n")[0] == "0 deg"


@pytest.mark.gui
def test_the_summary_is_short_and_the_solver_message_is_kept_in_its_tooltip(make_window, qtbot):
    win = make_window()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    text = win.target.summary.text()
    assert re.fullmatch(r"\d+ branches \(position and orientation, closed form solver\): \d+ within limits\.", text)
    assert win.target.summary.toolTip().startswith("solver: closed-form")


@pytest.mark.gui
def test_no_two_controls_share_a_keyboard_mnemonic(make_window):
    """Panels can be floated side by side, so an Alt+letter must be unique in the whole window."""
    win = make_window()
    keys = [a.text() for a in win.menuBar().actions()]
    for w in win.findChildren(QLabel) + win.findChildren(QAbstractButton):
        if not isinstance(w, QLabel) or w.buddy() is not None:
            keys.append(w.text())
    letters = [m.group(1).lower() for t in keys for m in [re.search(r"&([^&\s])", t)] if m]
    assert len(letters) >= 10  # the menus and the main fields have one
    dupes = {c for c in letters if letters.count(c) > 1}
    assert not dupes, f"Alt+{'/'.join(sorted(dupes))} is claimed twice: {[k for k in keys if '&' in k]}"


@pytest.mark.gui
def test_the_three_view_axes_read_in_the_arms_own_unit(make_window, monkeypatch, tmp_path):
    import shutil

    monkeypatch.setenv("POSER_NO_GL", "1")
    path = tmp_path / "lark7.toml"
    shutil.copy(DEMO / "lark7.toml", path)
    win = make_window(path)
    assert win.view.kind == "2d"
    for p in win.view.plots:
        for side in ("left", "bottom"):
            axis = p.getAxis(side)
            assert axis.labelText.endswith("(m)")
            assert axis.autoSIPrefix is False and axis.autoSIPrefixScale == 1.0  # ticks are metres, not mm


@pytest.mark.gui
def test_a_short_arm_given_an_orientation_is_told_to_try_position_only(make_window, tmp_path, qtbot):
    import shutil

    path = tmp_path / "boom3.toml"
    shutil.copy(DEMO / "boom3.toml", path)
    win = make_window(path)
    win.set_target_values([0.5, 0.2, 0.4, 0, 0, 0])
    st = win.state
    assert not st.ik.reachable
    assert win.target.summary.text().startswith("Out of reach")
    assert "An arm with 3 joints cannot take every orientation: try a position-only target" in \
        win.target.summary.text()
    # configurations that do not reach are no branches: the one set of figures is the closest approach
    assert all(b.reaches for b in st.branches)
    assert st.ik.closest is not None and "closest approach within limits" in win.target.summary.text()
