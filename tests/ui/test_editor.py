"""Arm editor and files: validation with the loader's words, live view, save with comments, recovery."""

from __future__ import annotations

import numpy as np
import pytest
from ui_common import HERON

from poser import armfile

pytestmark = pytest.mark.gui


def loader_message(tmp_path, old: str, new: str) -> str:
    """The message poser.armfile.load gives for the Heron file with ``old`` replaced by ``new``."""
    bad = tmp_path / "bad.toml"
    bad.write_text(HERON.read_text(encoding="utf-8").replace(old, new, 1), encoding="utf-8")
    with pytest.raises(armfile.ArmFileError) as info:
        armfile.load(bad)
    return info.value.problems[0].message


def test_the_editor_refuses_bad_input_with_the_loaders_message(make_window, tmp_path):
    win = make_window()
    before = win.state.chain
    tool_before = win.state.tool().copy()
    ed = win.editor
    ed.set_cell(1, "a", "7OO")  # letters O, not zeros
    expected = loader_message(tmp_path, "a = 700", 'a = "7OO"')
    assert expected == "a must be a number, got '7OO'"
    assert any(p.message == expected for p in ed.problems)
    assert expected in ed.message.text()
    assert "Not applied" in ed.message.text()
    # the arm stays as it was; the window is dirty (the editor shows an edit the file does not hold)
    assert win.state.chain == before and win.state.dirty
    assert [p.message for p in win.state.unapplied] == [p.message for p in ed.problems]
    np.testing.assert_array_equal(win.state.tool(), tool_before)
    # a second fault: limits the wrong way round
    ed.set_cell(1, "a", "700")
    ed.set_cell(2, "min", "200")
    expected = loader_message(tmp_path, "min = -120", "min = 200")
    assert expected.startswith("min must be below max")
    assert any(p.message == expected for p in ed.problems)
    assert win.state.chain == before
    # fixing it applies the arm and the view follows
    ed.set_cell(2, "min", "-120")
    assert ed.problems == [] and win.state.chain == before
    assert win.state.unapplied == ()


def test_a_valid_edit_is_live_in_the_view_and_marks_the_document(make_window):
    win = make_window()
    win.state.set_q_user([0, 0, 0, 0, 30, 0])
    x_before = win.state.tool()[0, 3]
    win.editor.set_cell(0, "a", "280")  # the shoulder 100 mm further out
    assert win.state.dirty and win.isWindowModified()
    assert win.state.tool()[0, 3] == pytest.approx(x_before + 100.0)
    d = win.state.drawing()
    np.testing.assert_allclose(d.segments[2, 1], [280.0, 0.0, 820.0], atol=1e-9)
    # the 3D view's body for that link ends there too
    end = win.view.arm.link_transforms[2] @ [0.0, 0.0, 1.0, 1.0]
    np.testing.assert_allclose(end[:3], [280.0, 0.0, 820.0], atol=1e-9)
    assert "(edited)" in win.status.arm.text()


def test_rows_can_be_added_removed_and_reordered(make_window):
    win = make_window()
    ed = win.editor
    names = list(win.state.chain.names)
    ed.table.selectRow(5)
    ed.add_joint()
    assert win.state.chain.n == 7 and win.state.chain.names[6] == "J7"
    assert len(win.joints.rows) == 7  # the joint panel rebuilt itself from the state
    ed.table.selectRow(6)
    ed.set_cell(6, "type", "prismatic")
    ed.set_cell(6, "min", "0")
    ed.set_cell(6, "max", "150")
    assert win.state.chain.kinds[6] == "prismatic"
    ed.remove_joint()
    assert list(win.state.chain.names) == names
    ed.table.selectRow(3)
    ed.move_joint(-1)
    assert list(win.state.chain.names) == names[:2] + [names[3], names[2]] + names[4:]


def test_units_and_places_are_checked_too(make_window):
    win = make_window()
    before = win.state.chain
    ed = win.editor
    ed.base_xyz.setText("0, 0")
    ed.edited()
    assert any("[base] xyz must be a list of three numbers" in p.message for p in ed.problems)
    assert win.state.chain == before
    ed.base_xyz.setText("0, 0, 400")
    ed.edited()
    assert ed.problems == []
    assert win.state.chain.base[2, 3] == pytest.approx(400)


def test_save_is_atomic_keeps_comments_and_reloads_equal(make_window, heron_path):
    win = make_window(heron_path)
    win.editor.set_cell(1, "a", "720")
    assert win.save()
    text = heron_path.read_text(encoding="utf-8")
    assert "# Heron 6 — the default demo arm" in text
    assert "# upper arm points straight up at J2 = 0" in text
    assert "a = 720" in text
    assert armfile.load(heron_path).to_chain() == win.state.chain
    assert not win.state.dirty and not win.isWindowModified()
    assert not list(heron_path.parent.glob(".heron6.toml.*"))  # no temporary file left behind
    assert win.recent_files()[0] == str(heron_path.resolve())


def test_a_recovery_copy_keeps_unsaved_edits(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    win.editor.set_cell(1, "a", "730")
    rec = win.recovery_file
    assert win.recovery.flush(5.0)  # written on the recovery writer's thread
    assert rec.exists() and "a = 730" in rec.read_text(encoding="utf-8")
    assert "# Heron 6" in rec.read_text(encoding="utf-8")  # comments kept in the copy too
    # "crash": a new window on the same file is offered the copy
    win2 = make_window(heron_path)
    win2.answers.append("restore")
    assert win2.offer_recovery()
    assert win2.state.dirty
    assert win2.state.chain == win.state.chain
    assert win2.save()
    assert not rec.exists()
    assert "a = 730" in heron_path.read_text(encoding="utf-8")


def test_unsaved_changes_are_asked_about(make_window, heron_path, tmp_path):
    other = tmp_path / "planar3.toml"
    other.write_text((HERON.parent / "planar3.toml").read_text(encoding="utf-8"), encoding="utf-8")
    win = make_window(heron_path)
    win.editor.set_cell(1, "a", "740")
    win.answers.append("cancel")
    assert not win.open_file(other)
    assert win.state.chain.name == "Heron 6" and win.state.dirty
    win.answers.append("discard")
    assert win.open_file(other)
    assert win.state.chain.n == 3 and not win.state.dirty
    assert "a = 700" in heron_path.read_text(encoding="utf-8")  # discarded, never written
    assert str(other.resolve()) in win.recent_files()


def test_opening_a_broken_file_reports_every_problem_and_keeps_the_arm(make_window, tmp_path):
    win = make_window()
    bad = tmp_path / "broken.toml"
    bad.write_text(HERON.read_text(encoding="utf-8").replace("max = 140", "max = -140"), encoding="utf-8")
    assert not win.open_file(bad)
    assert "min must be below max" in win.reports[-1]
    assert win.state.chain.name == "Heron 6"


def test_an_added_joint_is_saved_and_reads_back(make_window, heron_path):
    win = make_window(heron_path)
    ed = win.editor
    ed.table.selectRow(5)
    ed.add_joint()
    ed.set_cell(6, "type", "prismatic")
    ed.set_cell(6, "d", "50")
    ed.set_cell(6, "min", "0")
    ed.set_cell(6, "max", "120")
    assert ed.problems == []
    assert win.save()
    back = armfile.load(heron_path)
    assert [j.name for j in back.joints][-1] == "J7" and back.joints[-1].type == "prismatic"
    assert back.to_chain() == win.state.chain
    assert "# Heron 6 — the default demo arm" in heron_path.read_text(encoding="utf-8")
