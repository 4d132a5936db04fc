"""What the window shows must be what the state holds: no clamped values, no motion that outlives its
arm, no silent rounding by the editor, no "out of reach" for a solver fault, no silent snapshot failure."""

from __future__ import annotations

import shutil

import numpy as np
import pytest
from ui_common import ROOT

from poser import armfile
from poser.cli import main
from poser.ui import words

pytestmark = pytest.mark.gui

BOOM = ROOT / "demo_arms" / "boom3.toml"
QUILL = ROOT / "demo_arms" / "quill4.toml"


def _copy(src, tmp_path):
    p = tmp_path / src.name
    shutil.copy(src, p)
    return p


def test_a_value_beyond_the_boxs_range_is_shown_as_it_is(make_window, tmp_path):
    """Applying a branch beyond the limits (Boom 3's 'boom reversed' needs the slide at about -1.1 m,
    range 0 … 0.9 m) used to show the box's end, -0.45 m, beside the words 'BEYOND lower limit by 1.1 m'."""
    win = make_window(_copy(BOOM, tmp_path))
    row = win.joints.rows[2]
    win.state.set_q_user([0.131, 3.655, -1.113])
    assert row.spin.value() == pytest.approx(-1.113)
    assert win.state.q_user[2] == pytest.approx(-1.113)  # no echo wrote a clamped value back
    assert "BEYOND lower limit by 1.113 m" in row.words.text()
    win.state.set_q_user([0.0, 0.0, 5.0])
    assert row.spin.value() == pytest.approx(5.0)
    assert row.slider.value() == row.value_to_slider(0.9)  # the slider stays at its end, the words say why


def test_a_motion_in_flight_stops_when_the_arm_changes(make_window, tmp_path, qtbot):
    win = make_window()
    win.animator.duration = 5.0
    win.animator.go(win.state.chain.home + 0.5)
    assert win.animator.running
    quill = armfile.load(QUILL)
    win.state.set_arm(quill, path=QUILL, dirty=False)  # four joints now; the old motion has six
    assert not win.animator.running
    qtbot.wait(50)  # a tick after the change would have raised on the six-joint values
    assert win.state.chain.n == 4 and win.state.q.shape == (4,)


def test_a_motion_in_flight_yields_to_the_user(make_window, qtbot):
    win = make_window()
    win.animator.duration = 5.0
    win.animator.go(win.state.q + 0.5)
    qtbot.wait(40)
    win.joints.nudge(0, 1.0)  # an arrow key on J1 while the arm is moving
    assert not win.animator.running
    moved = win.state.q.copy()
    qtbot.wait(60)
    np.testing.assert_array_equal(win.state.q, moved)  # nothing pulls the arm on


def test_editing_one_cell_keeps_every_other_value_exact(make_window, tmp_path):
    """Boom 3 has alpha = 1.5707963267948966 rad; the editor showed 1.5708 and, on any other edit,
    wrote 1.5708 back into the arm (and into the file on save)."""
    path = _copy(BOOM, tmp_path)
    win = make_window(path)
    exact = armfile.load(path)
    ed = win.editor
    ed.name.setText("Boom 3b")
    ed.name.textEdited.emit("Boom 3b")
    assert ed.problems == []
    spec = win.state.spec
    assert spec.name == "Boom 3b"
    for got, want in zip(spec.joints, exact.joints):
        assert (got.a, got.alpha, got.d, got.theta, got.min, got.max) == (
            want.a, want.alpha, want.d, want.theta, want.min, want.max)
    assert win.state.chain.joints == exact.to_chain().joints
    # the cell shows the short form (the table stays narrow), the tooltip the exact value
    assert ed.cell(1, "alpha") == "1.5708"
    assert ed.table.item(1, 3).toolTip() == "1.5707963267948966"
    # a cell typed into takes the typed value; the others stay exact
    ed.set_cell(1, "d", "0.13")
    assert ed.problems == []
    assert win.state.spec.joints[1].d == 0.13
    assert win.state.spec.joints[1].alpha == 1.5707963267948966
    ed.set_cell(1, "theta", "1.5")
    assert win.state.spec.joints[1].theta == 1.5
    ed.set_cell(1, "theta", "1.5707963267948966")
    assert win.save()
    again = armfile.load(path)
    assert again.joints[1].alpha == 1.5707963267948966 and again.joints[1].d == 0.13
    assert "alpha = 1.5707963267948966" in path.read_text()


def test_a_solver_fault_is_not_called_out_of_reach():
    chain = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    from poser.core.ik import IKResult

    fault = IKResult("fault", "none", (), False, None, None, None, False, False, (1e-3, 1e-6),
                     fault="LinAlgError: SVD did not converge")
    level, text = words.ik_summary(chain, fault)
    assert level == "at"
    assert "Out of reach" not in text
    assert text.startswith("Not solved: LinAlgError: SVD did not converge")
    assert "may still be reachable" in text


def test_a_snapshot_that_cannot_be_written_is_reported(make_window, tmp_path):
    win = make_window()
    folder = tmp_path / "shot.png"
    folder.mkdir()
    assert win.snapshot(folder) is False
    assert win.reports and "cannot write this PNG file" in win.reports[-1]


@pytest.mark.parametrize(
    "argv, message",
    [
        (["--snapshot", "{tmp}"], "is a folder, not a file to write"),
        (["--snapshot", "{tmp}/x.png", "--target", "1e7,0,0"], "--target values must lie within ±1e6"),
        (["--snapshot", "{tmp}/x.png", "--joints", "1e13,0,0,0,0,0"], "--joints values must lie within ±1e12"),
    ],
)
def test_window_arguments_are_checked_before_qt_starts(argv, message, tmp_path, capsys):
    folder = tmp_path / "out.png"
    folder.mkdir()
    argv = [a.replace("{tmp}", str(folder) if a == "{tmp}" else str(tmp_path)) for a in argv]
    code = main(argv)
    out, err = capsys.readouterr()
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("poser: error: ") and message in err


def test_saving_twice_keeps_the_layout_and_every_comment_with_its_joint(make_window, heron_path):
    """After a save the editor's rows still pointed at the tables of the document loaded before it; the
    next save took every joint for a new one and added blank lines around each, more on every save."""
    original = heron_path.read_text().splitlines()
    win = make_window(heron_path)
    ed = win.editor
    ed.set_cell(1, "max", "141")
    assert ed.problems == [] and win.save()
    ed.set_cell(2, "max", "161")
    assert ed.problems == [] and win.save()
    ed.set_cell(0, "max", "169")
    assert ed.problems == [] and win.save()
    now = heron_path.read_text().splitlines()
    assert len(now) == len(original)
    changed = [(a, b) for a, b in zip(original, now) if a != b]
    assert changed == [("max = 170", "max = 169"), ("max = 140", "max = 141"), ("max = 160", "max = 161")]
    # a reorder after a save: the comment stays with its joint
    ed.table.selectRow(1)
    ed.move_joint(1)
    assert ed.problems == [] and win.save()
    text = heron_path.read_text()
    block = text[text.index('name = "J2 shoulder"'):]
    block = block[: block.index("[[joint]]")]
    assert "# upper arm points straight up at J2 = 0" in block
    assert text.index('name = "J3 elbow"') < text.index('name = "J2 shoulder"')
    assert "\n\n\n" not in text
    assert [j.name for j in armfile.load(heron_path).joints][1:3] == ["J3 elbow", "J2 shoulder"]


def test_another_arms_units_do_not_invent_a_target(make_window, tmp_path):
    """Opening an arm in mm after one in m cuts the target fields' decimals from 5 to 3; the rounding
    that causes is no edit, so it must not set a target."""
    heron = _copy(ROOT / "demo_arms" / "heron6.toml", tmp_path)
    win = make_window(_copy(BOOM, tmp_path))
    win.target.xyz[0].setValue(0.12345)
    win.state.set_target(None)
    assert win.state.target is None
    win.open_file(heron)
    assert win.state.chain.units.length == "mm"
    assert win.state.target is None


def test_the_floor_grid_never_computes_more_lines_than_it_draws(qapp, monkeypatch):
    """pyqtgraph redraws the grid on every size or spacing call; setting the size first with the old
    spacing asked for 4e9 lines (30 GiB) when an arm 1e9 mm long was shown: the window died."""
    from pyqtgraph.opengl import GLGridItem

    from poser.ui.gl_floor import GLFloor

    ratios = []
    original = GLGridItem.updateLines

    def spy(self):
        if getattr(self, "lineplot", None) is not None:  # not while the item is being built
            ratios.append(self.size()[0] / self.spacing()[0])
        return original(self)

    monkeypatch.setattr(GLGridItem, "updateLines", spy)
    floor = GLFloor()
    for spacing, half in ((0.2, 1.0), (5e8, 2.3e9), (0.0002, 0.001), (200.0, 1500.0)):
        ratios.clear()
        floor.setData(spacing, half, "mm")
        cells = 2 * max(2, round(half / spacing))
        assert ratios and max(ratios) <= cells + 1e-9
        assert floor.text == f"grid {spacing:g} mm"


def test_reopening_the_same_file_then_editing_keeps_the_layout(make_window, heron_path):
    """Reopening an unchanged file gives an equal arm (no 'arm' event) but a new document; the editor
    kept the old document's tables, and the next save reformatted every joint."""
    original = heron_path.read_text().splitlines()
    win = make_window(heron_path)
    assert win.open_file(heron_path)
    win.editor.set_cell(1, "max", "141")
    assert win.editor.problems == [] and win.save()
    now = heron_path.read_text().splitlines()
    assert len(now) == len(original)
    assert [(a, b) for a, b in zip(original, now) if a != b] == [("max = 140", "max = 141")]
