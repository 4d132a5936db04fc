"""The Studies panel: workspace and reach studies on the worker (progress, Cancel, errors in words), the 3D
toggles, the reach table (sorting, a click makes the target), inside-the-workspace words, arm switches.

No test waits on a clock: a study is held at a point by wrapping the core's function (``studies.CORE``) with
an event the test releases.
"""

from __future__ import annotations

import threading

import numpy as np
import pytest
from PySide6.QtCore import Qt
from ui_common import copy_demo

from poser import armfile, report
from poser.core.errors import PoserValueError
from poser.ui import studies as studies_mod
from poser.ui.reach_table import COL_MARGIN, COL_NAME, COL_VERDICT, SORT_ROLE

pytestmark = pytest.mark.gui

SAMPLES = 20_000  # enough for a coarse workspace in a fraction of a second

TARGETS = """# an invented job for Heron 6
name,x,y,z,roll,pitch,yaw,free_spin
weld 1,900,-300,900,180,0,0,no
behind,-900,-50,900,180,0,0,no
drill 3,800,400,500,180,0,0,yes
probe 4,700,200,300,,,,
far 5,4000,0,500,180,0,0,no
bad row,abc,0,0,,,,
under 6,300,0,-800,0,0,0,no
pick 7,-1200,-30,1500,90,0,0,no
"""


@pytest.fixture
def targets_csv(tmp_path):
    p = tmp_path / "job.csv"
    p.write_text(TARGETS)
    return p


def _hold(monkeypatch, key):
    """Wrap ``studies.CORE[key]`` so that its first progress report waits until ``gate`` is set."""
    gate, reached = threading.Event(), threading.Event()
    real = studies_mod.CORE[key]

    def held(chain, first, *rest):
        *args, progress = rest

        def report_(f):
            if not reached.is_set():
                reached.set()
                gate.wait(30)
            return progress(f)

        return real(chain, first, *args, report_)

    monkeypatch.setitem(studies_mod.CORE, key, held)
    return gate, reached


def _workspace(win, samples=SAMPLES):
    s = win.state.studies
    s.set_samples(samples)
    assert s.run("workspace")
    assert s.wait()
    assert s.workspace is not None, s.message
    return s.workspace


def _reach(win, path):
    s = win.state.studies
    assert s.load_targets(path)
    assert s.run("reach")
    assert s.wait()
    assert s.reach is not None, s.message
    return s.reach


# -- running, progress, cancel, errors ----------------------------------------------------------------


def test_workspace_runs_on_the_worker_with_progress_and_shows_its_figures(make_window):
    win = make_window()
    s, panel = win.state.studies, win.studies
    seen = []
    s.changed.connect(lambda f: seen.append(s.fraction) if f == "progress" else None)
    s.set_samples(SAMPLES)
    assert s.run("workspace")
    assert s.running == "workspace"
    assert panel.cancel_button.isEnabled()
    assert s.wait()
    assert s.running is None and not panel.cancel_button.isEnabled()
    w = s.workspace
    assert w is not None and w.ws.samples == SAMPLES
    assert seen and seen == sorted(seen) and 0.0 < seen[-1] <= 1.0
    assert panel.workspace_words.text() == "\n".join(report.workspace_lines(win.state.chain, w.ws))  # the CLI's
    assert "mm³" in panel.workspace_words.text()
    assert panel.caution.text() == report.STUDY_CAUTION
    assert "mm³" in panel.legend.text()
    layers = win.view.studies
    assert layers.cloud.visible() and layers.cloud.count == len(w.ws.points) > 0
    assert layers.sections.visible() and layers.sections.counts["vertical"] > 0
    assert layers.sections.counts["horizontal"] > 0


def test_cancel_leaves_every_result_as_it_was(make_window, monkeypatch, targets_csv):
    win = make_window()
    s, panel = win.state.studies, win.studies
    w0 = _workspace(win)
    r0 = _reach(win, targets_csv)
    points0 = win.view.studies.cloud.count
    for key, kind in (("workspace", "workspace"), ("reach", "reach")):
        gate, reached = _hold(monkeypatch, key)
        assert s.run(kind)
        assert reached.wait(30)
        assert panel.cancel_button.isEnabled()
        panel.cancel_button.click()
        gate.set()
        assert s.wait()
        assert s.workspace is w0 and s.reach is r0
        level, text = s.message
        assert level == "near" and "cancelled" in text and "nothing changed" in text
        assert not panel.cancel_button.isEnabled()
        assert panel.progress.format() == "no study running"
    assert win.view.studies.cloud.count == points0 and win.view.studies.cloud.visible()
    assert panel.table.model().rowCount() == len(r0.study.verdicts)


def test_cancel_from_the_menu_shortcut(make_window, monkeypatch):
    win = make_window()
    s = win.state.studies
    assert win.studies.cancel_action.shortcut().toString() == "Ctrl+."
    assert not win.studies.cancel_action.isEnabled()
    gate, reached = _hold(monkeypatch, "workspace")
    s.set_samples(SAMPLES)
    s.run("workspace")
    assert reached.wait(30)
    assert win.studies.cancel_action.isEnabled()
    win.studies.cancel_action.trigger()
    gate.set()
    assert s.wait()
    assert s.workspace is None
    assert "cancelled" in s.message[1]


def test_a_newer_request_replaces_the_running_one(make_window, monkeypatch):
    win = make_window()
    s = win.state.studies
    gate, reached = _hold(monkeypatch, "workspace")
    s.set_samples(SAMPLES)
    s.run("workspace")
    assert reached.wait(30)
    s.run("workspace", samples=2 * SAMPLES)  # the first is cancelled, this one waits and then runs
    gate.set()
    assert s.wait()
    assert s.workspace is not None and s.workspace.ws.samples == 2 * SAMPLES


def test_errors_are_said_in_words_and_change_nothing(make_window, monkeypatch, tmp_path):
    win = make_window()
    s = win.state.studies
    assert not s.load_targets(tmp_path / "missing.csv")
    level, text = s.message
    assert level == "at" and text.startswith("Target list not read:") and "missing.csv" in text
    assert "Traceback" not in text and s.targets is None
    assert not s.run("reach")
    assert "load a target list first" in s.message[1]

    def broken(chain, samples, progress):
        raise RuntimeError("the grid ran out of cells")

    monkeypatch.setitem(studies_mod.CORE, "workspace", broken)
    assert s.run("workspace")
    assert s.wait()
    level, text = s.message
    assert level == "at" and s.workspace is None
    assert text == ("Workspace failed: RuntimeError: the grid ran out of cells. Nothing changed; the results shown "
                    "before stay.")
    assert win.studies.message.text() == text


def test_a_target_file_with_bad_rows_says_each_with_its_line(make_window, targets_csv):
    win = make_window()
    s = win.state.studies
    assert s.load_targets(targets_csv)
    assert len(s.targets.targets) == 7 and s.targets.skipped == 1
    words = win.studies.targets_words.text()
    assert "7 targets read, in mm and deg" in words and "1 malformed row skipped" in words
    assert f"{targets_csv}:8: row skipped: x must be a number" in words  # the bad row, by its line


# -- the 3D view's toggles ------------------------------------------------------------------------------


def test_toggles_draw_and_hide_each_study(make_window, targets_csv):
    win = make_window()
    _workspace(win)
    r = _reach(win, targets_csv)
    layers, panel, s = win.view.studies, win.studies, win.state.studies
    statuses = [v.status for v in r.study.verdicts]
    assert statuses.count("blocked by limits") == 1 and statuses.count("out of reach") == 2
    assert layers.reach.visible()
    assert layers.reach.counts == {"reached": statuses.count("reached"), "blocked by limits": 1, "out of reach": 2,
                                   "fault": 0}
    # shape-coded as well as coloured: a ball, a star of four bars (8 ends), a wire diamond (24 ends) per mark
    assert len(layers.reach._star.pos) == 8 and len(layers.reach._diamond.pos) == 2 * 24
    assert layers.reach._balls["reached"].visible() and not layers.reach._balls["fault"].visible()
    for key, group in (("cloud", layers.cloud), ("sections", layers.sections), ("reach", layers.reach)):
        panel.toggles[key].setChecked(False)
        assert not s.shown(key) and not group.visible()
        assert not panel.show_actions[key].isChecked()  # the menu entry follows
        panel.show_actions[key].trigger()
        assert s.shown(key) and group.visible() and panel.toggles[key].isChecked()


def test_gl_study_items_validate_their_data(qtbot):
    from poser.ui.gl_cloud import GLCloud, dexterity_colours
    from poser.ui.gl_reach import GLReach
    from poser.ui.gl_sections import GLSections

    with pytest.raises(PoserValueError, match="GLCloud.setData takes points, values, size; got unknown colour"):
        GLCloud().setData(points=np.zeros((2, 3)), values=[1, 2], colour="red")
    with pytest.raises(PoserValueError, match=r"values must have shape \(2,\)"):
        GLCloud().setData(points=np.zeros((2, 3)), values=[1, 2, 3])
    with pytest.raises(PoserValueError, match="verdicts must be among"):
        GLReach().setData(points=np.zeros((1, 3)), verdicts=["maybe"], size=1.0)
    with pytest.raises(PoserValueError, match=r"lines\[0\] must have at least 2 points"):
        GLSections().setData(vertical=[np.zeros((1, 3))], horizontal=[])
    c = dexterity_colours([0.0, 5.0, 1.0])  # by rank: lowest, highest, between
    from poser.ui import gl_cloud, palette

    np.testing.assert_allclose(c[0], palette.rgba(gl_cloud.LOW))
    np.testing.assert_allclose(c[1], palette.rgba(gl_cloud.HIGH))
    np.testing.assert_allclose(c[2], 0.5 * (c[0] + c[1]))


# -- the reach table ------------------------------------------------------------------------------------


def _view_column(table, col, role=Qt.ItemDataRole.DisplayRole):
    m = table.model()
    return [m.index(r, col).data(role) for r in range(m.rowCount())]


def test_reach_table_cells_are_the_cli_cells_and_it_sorts(make_window, targets_csv):
    from poser.cli.reach import _table

    win = make_window()
    r = _reach(win, targets_csv)
    chain = win.state.chain
    table = win.studies.table
    assert table.model().rowCount() == len(r.study.verdicts) == 7
    heads = [table.model().headerData(c, Qt.Orientation.Horizontal) for c in range(table.model().columnCount())]
    assert "manip. [mm³]" in heads and "miss [mm, deg]" in heads and "spin [deg]" in heads
    cli = "\n".join(_table(chain, r.study))
    for v, margin in zip(r.study.verdicts, _view_column(table, COL_MARGIN)):
        assert margin == report.margin_cell(chain, v)
        if v.margin_joint is not None:
            assert margin in cli  # the very text poser reach prints
    table.sortByColumn(COL_VERDICT, Qt.SortOrder.DescendingOrder)
    assert _view_column(table, COL_VERDICT)[0] == "◇ out of reach"
    assert _view_column(table, COL_VERDICT)[-1] == "● reached"
    table.sortByColumn(COL_NAME, Qt.SortOrder.AscendingOrder)
    names = _view_column(table, COL_NAME)
    assert names == sorted(names, key=str.casefold) and names[0] == "behind"
    table.sortByColumn(COL_MARGIN, Qt.SortOrder.AscendingOrder)
    keys = _view_column(table, COL_MARGIN, SORT_ROLE)
    assert keys == sorted(keys) and keys[-1] == float("inf")  # targets without a branch last


def test_clicking_a_row_makes_its_target_the_target(make_window, targets_csv, qtbot):
    win = make_window()
    r = _reach(win, targets_csv)
    table = win.studies.table
    table.sortByColumn(COL_NAME, Qt.SortOrder.DescendingOrder)
    idx = table.model().index(2, COL_NAME)
    name = idx.data()
    want = next(v for v in r.study.verdicts if v.target.name == name)
    table.scrollTo(idx)
    qtbot.mouseClick(table.viewport(), Qt.MouseButton.LeftButton, pos=table.visualRect(idx).center())
    t = win.state.target
    assert t is not None
    np.testing.assert_array_equal(t.xyz, want.target.xyz)
    assert (t.R is None) == (want.target.R is None)
    assert [s.value() for s in win.target.xyz] == pytest.approx(list(want.target.xyz))
    assert win.solver.wait()
    assert win.state.ik is not None and win.state.ik.reachable == want.reachable


def test_a_free_spin_row_becomes_the_target_turned_by_the_chosen_spin(make_window, targets_csv):
    from poser.core.transforms import rot_z

    win = make_window()
    r = _reach(win, targets_csv)
    row = next(k for k, v in enumerate(r.study.verdicts) if v.target.free_spin)
    v = r.study.verdicts[row]
    assert v.reachable and v.spin is not None
    target = win.studies.table.source.target_of(row)
    np.testing.assert_allclose(target.R, v.target.R @ rot_z(v.spin), atol=1e-12)


# -- inside the workspace -------------------------------------------------------------------------------


def test_target_panel_says_whether_the_target_is_inside_the_workspace(make_window):
    win = make_window()
    label = win.target.inside
    chain = win.state.chain
    win.target.take_current()
    assert label.text() == report.inside_workspace_words(chain, None)
    assert "none computed yet" in label.text()
    _workspace(win)
    assert label.text() == report.inside_workspace_words(chain, True)  # the present pose is within the limits
    win.set_target_values([5000.0, 0.0, 0.0])  # twice the arm's reach away
    assert label.text() == report.inside_workspace_words(chain, False)
    assert label.text().startswith("Outside the computed workspace")


# -- another arm ----------------------------------------------------------------------------------------


def test_arm_switch_clears_the_studies_of_the_old_arm(make_window, targets_csv, tmp_path):
    win = make_window()
    _workspace(win)
    _reach(win, targets_csv)
    s, layers = win.state.studies, win.view.studies
    win.state.set_arm(armfile.load(copy_demo("wren6.toml", tmp_path)), path=None)
    assert s.workspace is None and s.reach is None
    assert not layers.cloud.visible() and not layers.sections.visible() and not layers.reach.visible()
    assert win.studies.table.model().rowCount() == 0
    assert s.targets is not None  # the job's list stays: run it again for this arm
    assert "cleared" in s.message[1]
    assert "none computed yet" in win.target.inside.text() or not win.target.inside.text()


def test_a_study_running_when_the_arm_changes_is_dropped(make_window, monkeypatch, tmp_path):
    win = make_window()
    s, layers = win.state.studies, win.view.studies
    gate, reached = _hold(monkeypatch, "workspace")
    s.set_samples(SAMPLES)
    s.run("workspace")
    assert reached.wait(30)
    win.state.set_arm(armfile.load(copy_demo("wren6.toml", tmp_path)), path=None)
    gate.set()
    assert s.wait()
    assert s.workspace is None and not layers.cloud.visible()
    assert "cleared" in s.message[1] and "stopped" in s.message[1]


def test_a_finished_result_of_the_old_arm_is_never_stored(make_window, monkeypatch, tmp_path):
    # the study ignores Cancel (it finishes): its result must still be dropped, not drawn on the new arm
    win = make_window()
    s, layers = win.state.studies, win.view.studies
    gate, reached = threading.Event(), threading.Event()
    real = studies_mod.CORE["workspace"]

    def deaf(chain, samples, progress):
        reached.set()
        gate.wait(30)
        return real(chain, samples, None)

    monkeypatch.setitem(studies_mod.CORE, "workspace", deaf)
    s.set_samples(SAMPLES)
    s.run("workspace")
    assert reached.wait(30)
    dropped = s.dropped
    win.state.set_arm(armfile.load(copy_demo("wren6.toml", tmp_path)), path=None)
    gate.set()
    assert s.wait()
    assert s.dropped == dropped + 1
    assert s.workspace is None and not layers.cloud.visible()


def test_another_length_unit_reads_the_target_list_again(make_window, targets_csv, tmp_path):
    win = make_window()
    s = win.state.studies
    assert s.load_targets(targets_csv)
    win.state.set_arm(armfile.load(copy_demo("boom3.toml", tmp_path)), path=None)
    chain = win.state.chain
    assert chain.units.length == "m"
    assert s.targets is not None and s.targets_path == targets_csv
    assert f"in {chain.units.length} and {chain.units.angle}" in s.targets_words()
    assert "read again" in s.message[1]


# -- placement and the test cube ------------------------------------------------------------------------


def _small_grid(win):
    panel = win.studies
    for key, (lo, hi) in (("x", (-400.0, 400.0)), ("y", (-400.0, 400.0))):
        panel.place[key][0].setValue(lo)
        panel.place[key][1].setValue(hi)
    panel.place_step.setValue(400.0)  # 3 × 3 base positions at the arm's height and yaw
    assert panel.place_count.text().startswith("9 placements")


def test_placement_search_lists_the_best_and_draws_the_coverage_map(make_window, targets_csv):
    from poser.core.place import grid, place

    win = make_window()
    s, panel, layers = win.state.studies, win.studies, win.view.studies
    assert not panel.run_placement()  # no targets yet: said in words
    assert "load a target list first" in s.message[1]
    assert s.load_targets(targets_csv)
    _small_grid(win)
    assert panel.run_placement()
    assert s.wait()
    p = s.placement
    assert p is not None, s.message
    direct = place(win.state.chain, s.targets.targets, grid(win.state.chain, **panel.placement_ranges()), workers=1)
    np.testing.assert_array_equal(p.placement.reached, direct.reached)  # the core's figures, unchanged
    assert panel.place_table.rowCount() == len(p.placement.best)
    first = p.placement.best[0]
    assert panel.place_table.item(0, 5).text() == str(first.reached)
    assert panel.place_table.item(0, 1).text() == report.fmt(first.xyz[0], report.length_digits(win.state.chain))
    names = [t.name for t in s.targets.targets]
    assert report.placement_words(win.state.chain, first, 7, names) in panel.place_words.text()  # the CLI's
    assert report.PLACEMENT_NOTE in panel.place_words.text()
    heads = [panel.place_table.horizontalHeaderItem(c).text() for c in range(panel.place_table.columnCount())]
    assert heads[1] == "x [mm]" and heads[4] == "yaw [deg]" and heads[5] == "reached [of 7]"
    assert layers.coverage.visible() and layers.coverage.tiles == 9
    panel.toggles["coverage"].setChecked(False)
    assert not layers.coverage.visible()


def test_placement_cancel_keeps_the_search_before(make_window, targets_csv, monkeypatch):
    win = make_window()
    s, panel = win.state.studies, win.studies
    assert s.load_targets(targets_csv)
    _small_grid(win)
    panel.run_placement()
    assert s.wait()
    p0 = s.placement
    gate, reached = _hold(monkeypatch, "place")
    panel.run_placement()
    assert reached.wait(30)
    s.cancel()
    gate.set()
    assert s.wait()
    assert s.placement is p0 and "cancelled" in s.message[1]


def test_a_grid_that_cannot_be_searched_is_said_in_words(make_window, targets_csv):
    win = make_window()
    s, panel = win.state.studies, win.studies
    assert s.load_targets(targets_csv)
    panel.place["x"][0].setValue(500.0)
    panel.place["x"][1].setValue(-500.0)
    assert panel.place_count.text() == "grid not usable: x range must run from low to high, got 500.0..-500.0"
    assert not panel.run_placement()
    assert s.message == ("at", "Placement search not started: x range must run from low to high, got 500.0..-500.0.")


def test_the_test_cube_is_found_drawn_and_worded(make_window):
    win = make_window()
    s, panel, layers = win.state.studies, win.studies, win.view.studies
    _workspace(win)
    assert panel.run_cube()
    assert s.wait()
    c = s.cube
    assert c is not None, s.message
    cb = c.cube
    assert cb.workspace is s.workspace.ws  # the Workspace tab's, not measured again
    assert cb.edge > 0 and len(cb.study.verdicts) == 5
    words = panel.cube_words.text()
    assert "from memory" in words
    for line in report.cube_lines(win.state.chain, cb):  # what poser cube prints, each verdict with its shape
        assert line.strip() in words
    for v in cb.study.verdicts:
        assert f"{studies_mod.VERDICT_SYMBOLS[v.status]} {v.target.name}" in words
    assert layers.cube.visible() and layers.cube_marks.visible()
    assert sum(layers.cube_marks.counts.values()) == 5
    assert len(layers.cube._edges.pos) == 24  # twelve edges


def test_the_cube_takes_the_orientation_typed(make_window):
    from poser.core.transforms import rpy_to_matrix

    win = make_window()
    panel = win.studies
    assert panel.cube_rotation() is None  # "tool as at home"
    panel.cube_mode.setCurrentIndex(1)
    for sp, v in zip(panel.cube_rpy, (180.0, 0.0, 90.0)):
        sp.setValue(v)
    np.testing.assert_allclose(panel.cube_rotation(), rpy_to_matrix(np.radians([180.0, 0.0, 90.0])), atol=1e-12)


def test_arm_switch_clears_placement_and_cube(make_window, targets_csv, tmp_path):
    win = make_window()
    s, layers, panel = win.state.studies, win.view.studies, win.studies
    _workspace(win)
    s.load_targets(targets_csv)
    _small_grid(win)
    panel.run_placement()
    assert s.wait()
    panel.run_cube()
    assert s.wait()
    assert s.placement is not None and s.cube is not None
    win.state.set_arm(armfile.load(copy_demo("wren6.toml", tmp_path)), path=None)
    assert s.placement is None and s.cube is None
    assert not layers.coverage.visible() and not layers.cube.visible() and not layers.cube_marks.visible()
    assert panel.place_table.rowCount() == 0


def test_keyboard_reaches_every_study_and_help_has_the_caution(make_window):
    from poser.ui.help import CAUTIONS, guide_html

    win = make_window()
    menu = next(a.menu() for a in win.menuBar().actions() if a.text() == "Stu&dies")
    keys = {a.text(): a.shortcut().toString() for a in menu.actions() if not a.isSeparator()}
    assert keys["Run wor&kspace"] == "Ctrl+Shift+W" and keys["&Load targets…"] == "Ctrl+Shift+L"
    assert keys["Run &reach study"] == "Ctrl+Shift+R" and keys["Run &placement search"] == "Ctrl+Shift+P"
    assert keys["Find the test &cube"] == "Ctrl+Shift+B" and keys["Ca&ncel the running study"] == "Ctrl+."
    go = next(a for a in win.actions() if a.text() == "Go to Studies")
    assert go.shortcut().toString() == "Ctrl+6"
    win.docks["target"].raise_()
    go.trigger()
    assert win.studies.isVisible() and win.studies.tabs.isVisible()
    html = guide_html()
    assert "<h3>Studies</h3>" in html and "not a plan for a real robot" in html
    assert any("Verify every study result on the robot's controller" in c for c in CAUTIONS)
