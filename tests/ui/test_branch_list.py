"""The branch list: one tree model, grouped by configuration, every row reaching the state, the CLI's numbers."""

from __future__ import annotations

import json
import time

import numpy as np
import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtTest import QTest
from ui_common import copy_demo, wide_heron

from poser import report
from poser.cli import main as cli_main
from poser.ui import palette
from poser.ui.tables import COL_LABEL, COL_LIMITS, COL_MANIP, COL_MOVE, COL_NUMBER, BranchModel

pytestmark = [pytest.mark.gui]




def cli_json(capsys, *argv):
    code = cli_main(["ik", *map(str, argv), "--json"])
    out = capsys.readouterr().out
    assert code in (0, 1), out
    return json.loads(out)


def all_rows(model: BranchModel):
    """Every (index, branch) of the model, children included, in display order."""
    out = []
    for g in range(model.rowCount()):
        top = model.index(g, 0)
        out.append((top, model.branch_of(top)))
        for k in range(model.rowCount(top)):
            child = model.index(k, 0, top)
            out.append((child, model.branch_of(child)))
    return out


def test_a_long_branch_list_is_one_model_grouped_by_configuration(make_window, tmp_path, record_property):
    win = make_window(wide_heron(tmp_path))
    panel = win.target
    assert isinstance(panel.table.model(), BranchModel)
    win.set_target_values([900, -300, 900, 180, 0, 0])
    st = win.state
    n = len(st.branches)
    assert n > 30
    model = panel.model
    rows = all_rows(model)
    assert sorted(i for _, i in rows) == list(range(n))  # every branch once
    configurations = {b.configuration for b in st.branches}
    assert model.rowCount() == len(configurations) < n  # one top row per configuration
    for g in range(model.rowCount()):
        members = [model.branch_of(model.index(g, 0))] + [
            model.branch_of(model.index(k, 0, model.index(g, 0))) for k in range(model.rowCount(model.index(g, 0)))]
        assert len({st.branches[i].configuration for i in members}) == 1
        assert members == sorted(members)  # the best (lowest number) on top
        if len(members) > 1:
            assert model.data(model.index(g, COL_NUMBER)).split("\n") == [str(members[0] + 1), f"+{len(members) - 1}"]
    # the same list filled again (what every later edit does): a figure, not a pass or fail
    t0 = time.perf_counter()
    panel._fill_table()
    ms = (time.perf_counter() - t0) * 1e3
    record_property("branch_list_fill_ms", round(ms, 2))
    print(f"\nbranch list of {n} rows filled in {ms:.2f} ms (GUI thread)")


def test_every_row_hovers_and_selects_its_branch_children_too(make_window, tmp_path, qtbot):
    win = make_window(wide_heron(tmp_path))
    win.set_target_values([900, -300, 900, 180, 0, 0])
    st, panel = win.state, win.target
    model = panel.model
    for index, i in all_rows(model):
        panel.table.entered.emit(index)
        assert st.hovered == i
    # the pointer leaving the list ends the hover
    from PySide6.QtCore import QCoreApplication, QEvent

    QCoreApplication.sendEvent(panel.table.viewport(), QEvent(QEvent.Type.Leave))
    assert st.hovered == -1
    # a child (a turn variant) selected from the state opens its configuration and is selected in the view
    child = next(i for index, i in all_rows(model) if index.parent().isValid())
    st.select_branch(child)
    current = panel.table.selectionModel().selectedRows()
    assert [model.branch_of(r) for r in current] == [child]
    assert panel.table.isExpanded(model.index_of(child).parent())
    # keyboard: the list takes focus, Down walks the rows, Right opens a configuration
    panel.table.setFocus()
    panel.table.collapseAll()
    panel.select_branch(0)
    QTest.keyClick(panel.table, Qt.Key.Key_Right)
    assert panel.table.isExpanded(model.index(0, 0))
    QTest.keyClick(panel.table, Qt.Key.Key_Down)
    assert st.selected == model.branch_of(model.index(0, 0, model.index(0, 0)))


def test_a_singular_target_lists_each_family_once(make_window, tmp_path):
    """Wren 6 with the tool pointing up the base axis: the base turn and the spindle turn share one line,
    so each of the four configurations is one family (base turn free, spindle following) — one row each."""
    win = make_window(copy_demo("wren6.toml", tmp_path))
    win.set_target_values([0, 0, 1500, 0, 0, 0])
    st, model = win.state, win.target.model
    assert len(st.branches) == 4 and all(b.family is not None for b in st.branches)
    assert len(all_rows(model)) == 4 and model.rowCount() == 4
    labels = [model.data(model.index_of(i, COL_LABEL)).split("\n")[0] for i in range(4)]
    assert all(lab.endswith(" · family") for lab in labels)


def test_a_family_is_one_row(make_window, tmp_path):
    """Quill 4 with a position-only target leaves a joint free: each branch stands for a family."""
    win = make_window(copy_demo("quill4.toml", tmp_path))
    win.set_target_values([300, 100, 200])
    st, model = win.state, win.target.model
    fams = [i for i, b in enumerate(st.branches) if b.family is not None]
    assert fams
    rows = all_rows(model)
    assert len(rows) == len(st.branches)  # one row per branch, a family included
    i = fams[0]
    label = model.data(model.index_of(i, COL_LABEL))
    assert label.split("\n")[0].endswith(" · family")
    tip = model.data(model.index_of(i, COL_LABEL), Qt.ItemDataRole.ToolTipRole)
    assert report.family_words(st.chain, st.branches[i].family) in tip
    assert report.family_words(st.chain, st.branches[i].family) in win.target.details_text(i)


def test_only_within_limits_is_a_state_option_the_list_follows(make_window, qtbot):
    win = make_window()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    st, panel = win.state, win.target
    inside = [i for i, b in enumerate(st.branches) if b.within_limits and b.reaches]
    assert 0 < len(inside) < len(st.branches)
    panel.within_only.click()
    assert st.option("ghosts_within_limits_only") is True
    assert st.shown_branches() == inside
    assert sorted(i for _, i in all_rows(panel.model)) == inside
    assert panel.shown_label.text() == f"{len(inside)} of {len(st.branches)} branches shown"
    # written elsewhere (the 3D view's own switch, a script): the box and the list follow
    st.set_option("ghosts_within_limits_only", False)
    assert not panel.within_only.isChecked()
    assert len(all_rows(panel.model)) == len(st.branches)


def test_the_list_shows_the_clis_numbers_and_copies_the_joints(make_window, tmp_path, capsys, qtbot):
    """Boom 3 mixes turns (rad) and a slide (m): joint values, manipulability, distance and largest move as
    ``poser ik`` gives them; degrees and metres are never added up."""
    path = copy_demo("boom3.toml", tmp_path)
    win = make_window(path)
    st = win.state
    near = [0.0, 0.0, 0.1]
    st.set_q_user(near)
    win.set_target_values([0.5, 0.2, 0.4])
    cli = cli_json(capsys, path, "--xyz", "0.5,0.2,0.4", "--near", "0,0,0.1")
    model = win.target.model
    assert len(st.branches) == len(cli["branches"])
    assert model.headerData(COL_LABEL, Qt.Orientation.Horizontal) == "branch / joints [rad, m]"
    assert model.headerData(COL_MANIP, Qt.Orientation.Horizontal) == f"manip. [{cli['manipulability_unit']}]"
    for i, (b, c) in enumerate(zip(st.branches, cli["branches"])):
        label, joints = model.data(model.index_of(i, COL_LABEL)).split("\n")
        assert label == c["label"]
        assert [float(v) for v in joints.split(", ")] == pytest.approx(c["joints"], abs=5e-4)  # three decimals
        assert model.data(model.index_of(i, COL_MANIP)).split("\n")[0] == \
            report.manipulability_text(st.chain, c["manipulability"]).split(" ")[0]
        assert b.manipulability == pytest.approx(c["manipulability"], rel=1e-12)
        d = win.target.details_text(i)
        parts = c["distance_parts"]
        assert f"distance from the pose it was solved at: {report.fmt(parts['angle'], 3)} rad and " \
               f"{report.fmt(parts['length'], 3)} m" in d
        # the largest move: the biggest turn and the biggest slide, each in its own unit
        move = model.data(model.index_of(i, COL_MOVE))
        turn, slide = move.split("\n")
        assert turn.endswith(" rad") and slide.endswith(" m")
        dq = np.abs(b.q - st.q)
        assert float(turn.split()[0]) == pytest.approx(dq[:2].max(), abs=1e-3)
        assert float(slide.split()[0]) == pytest.approx(dq[2], abs=1e-3)
    # copy the selected branch's joints as one line (Ctrl+C in the list)
    win.target.select_branch(1)
    win.target.table.setFocus()
    QTest.keySequence(win.target.table, "Ctrl+C")
    from PySide6.QtGui import QGuiApplication

    line = QGuiApplication.clipboard().text()
    assert line == win.target.last_copied
    assert "\n" not in line
    assert [float(v) for v in line.split(",")] == pytest.approx(cli["branches"][1]["joints"], abs=1e-6)
    # and the line goes straight back into the CLI
    code = cli_main(["fk", str(path), "--joints", line, "--json"])
    out = json.loads(capsys.readouterr().out)
    assert code == 0 and out["joints"] == pytest.approx(cli["branches"][1]["joints"], abs=1e-6)


def test_an_unreachable_target_has_one_set_of_figures_as_the_cli(make_window, tmp_path, capsys):
    path = copy_demo("heron6.toml", tmp_path)
    win = make_window(path)
    win.set_target_values([5000, 0, 900])
    st = win.state
    cli = cli_json(capsys, path, "--xyz", "5000,0,900", "--near",
                   ",".join(report.num(v) for v in st.q_user))
    assert not st.ik.reachable and not cli["reachable"]
    text = win.target.summary.text()
    assert text == report.ik_message(st.chain, st.ik) == cli["message"]
    np.testing.assert_allclose(st.ik.nearest_point, cli["nearest_point"], atol=1e-9)
    assert st.ik.closest.position_error == pytest.approx(cli["closest"]["position_error"], rel=1e-12)
    # the three figures agree with each other: the nearest point is the closest approach's tool position,
    # and the miss is its distance from the target
    T = st.chain.fk(st.ik.closest.q)
    np.testing.assert_allclose(T[:3, 3], st.ik.nearest_point, atol=1e-6)
    assert np.linalg.norm(st.ik.nearest_point - st.target.xyz) == pytest.approx(st.ik.closest.position_error,
                                                                               rel=1e-9)
    assert f"misses the position by {report.length(st.chain, st.ik.closest.position_error, 4)}" in text
    assert report.nearest_point_words(st.chain, st.ik) in text


def test_a_joint_change_rewrites_only_the_move_column(make_window, qtbot):
    win = make_window()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    model = win.target.model
    changed = []
    model.dataChanged.connect(lambda a, b, roles=(): changed.append((a.column(), b.column())))
    resets = []
    model.modelReset.connect(lambda: resets.append(1))
    win.state.set_joint_user(0, 15.0)
    assert changed and all(c == (COL_MOVE, COL_MOVE) for c in changed)
    assert resets == []
    # the texts of the other columns are the ones made once for this result
    assert model.rows is win.state.branch_rows()
    assert model.data(model.index_of(0, COL_LIMITS)).startswith(("yes", "NO"))


def test_hovering_a_row_never_moves_the_rows(make_window, qtbot):
    """The details under the list grow to four lines for a branch beyond its limits; the list must keep its
    height, or the row under the pointer slides away and the hover flickers between two rows."""
    win = make_window(size=(1280, 800))
    win.set_target_values([900, -300, 900, 180, 0, 0])
    qtbot.wait(50)
    table = win.target.table
    heights = {table.height()}
    for i in range(len(win.state.branches)):
        win.state.hover_branch(i)
        qtbot.wait(5)
        heights.add(table.height())
    win.state.hover_branch(-1)
    qtbot.wait(5)
    heights.add(table.height())
    assert len(heights) == 1, heights
    # and a real pointer over the last row shown: it stays hovered
    vp = table.viewport()
    last = table.indexAt(vp.rect().bottomLeft() + QPoint(5, -8))
    assert last.isValid()
    QTest.mouseMove(vp, table.visualRect(last).center())
    qtbot.waitUntil(lambda: win.state.hovered == win.target.model.branch_of(last), timeout=1000)
    qtbot.wait(50)
    assert table.indexAt(table.visualRect(last).center()) == last
    assert win.state.hovered == win.target.model.branch_of(last)


def test_a_turn_variant_row_starts_with_what_tells_it_apart(make_window, qtbot):
    """Heron 6 at 900, -300, 900 mm, rpy 180, 0, 0 deg: branch 6 is branch 1 with J6 one turn on (poser ik
    lists it as 'shoulder front · elbow up · wrist not flipped · J6 flange +1 turn').  Under its
    configuration's row it shows the turn words first, so an elided cell never shows two rows alike."""
    win = make_window(size=(1280, 800))
    win.set_target_values([900, -300, 900, 180, 0, 0])
    st, model = win.state, win.target.model
    assert st.branches[5].label.endswith(" · J6 flange +1 turn")
    index = model.index_of(5, COL_LABEL)
    assert index.parent().isValid()  # a child of branch 1's row
    first = model.data(index).split("\n")[0]
    assert first == "J6 flange +1 turn · same configuration"
    # the configuration's own row keeps its whole label, the tooltip of the variant too
    assert model.data(model.index_of(0, COL_LABEL)).split("\n")[0] == st.branches[0].label
    assert st.branches[5].label in model.data(index, Qt.ItemDataRole.ToolTipRole)
    # every visible first line of a configuration's rows differs within what the column shows
    panel = win.target
    panel.table.expandAll()
    qtbot.wait(20)
    fm = panel.table.fontMetrics()
    width = panel.table.columnWidth(COL_LABEL) - 10
    for top in range(model.rowCount()):
        parent = model.index(top, 0)
        texts = [model.data(model.index(top, COL_LABEL)).split("\n")[0]] + [
            model.data(model.index(k, COL_LABEL, parent)).split("\n")[0] for k in range(model.rowCount(parent))]
        shown = [fm.elidedText(t, Qt.TextElideMode.ElideRight, width) for t in texts]
        assert len(set(shown)) == len(shown), shown


def test_a_joint_change_does_not_restyle_the_branch_details(make_window, qtbot):
    """Setting a style sheet re-polishes a widget; the details under the list once got theirs again on every
    joint change (the costliest call of a frame with a target).  Their colour follows the branch shown."""
    win = make_window(size=(1280, 800))
    win.set_target_values([900, -300, 900, 180, 0, 0])
    st, details = win.state, win.target.details
    sheets = []
    real = details.setStyleSheet
    details.setStyleSheet = lambda s: (sheets.append(s), real(s))
    for k in range(5):
        st.set_joint_user(1, 30.0 + k)
    assert sheets == []
    beyond = next(i for i, b in enumerate(st.branches) if not b.within_limits)
    st.hover_branch(beyond)
    assert sheets and details.styleSheet() == f"color: {palette.AT}"
    st.hover_branch(-1)
    assert details.styleSheet() == f"color: {palette.MUTED}"


def test_the_hovered_row_is_shaded_like_its_ghost(make_window, qtbot):
    """Hovering a branch (pointer or state) shades its row in the list, and only its row; leaving clears it."""
    win = make_window(size=(1280, 800))
    win.set_target_values([900, -300, 900, 180, 0, 0])
    model, st = win.target.model, win.state
    role = Qt.ItemDataRole.BackgroundRole
    assert all(model.data(model.index_of(i, COL_LABEL), role) is None for i in range(len(st.branches)))
    changed = []
    model.dataChanged.connect(lambda a, b, roles=(): changed.append((model.branch_of(a), tuple(roles))))
    st.hover_branch(2)
    shaded = [i for i in range(len(st.branches)) if model.data(model.index_of(i, COL_LIMITS), role) is not None]
    assert shaded == [2]
    assert changed and all(b == 2 and roles == (role,) for b, roles in changed)  # one row announced, one role
    st.hover_branch(-1)
    assert model.data(model.index_of(2, COL_LIMITS), role) is None
