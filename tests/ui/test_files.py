"""Nothing lost: Save writes what the editor shows or refuses, changed-on-disk, links, read-only files,
watching the open file, recovery copies off the GUI thread with a persistent warning while they fail."""

from __future__ import annotations

import os
import stat
import time

import pytest

from poser import armfile

pytestmark = pytest.mark.gui


def test_save_refuses_while_a_cell_is_invalid_and_never_writes_an_older_arm(make_window, heron_path):
    original = heron_path.read_text(encoding="utf-8")
    win = make_window(heron_path)
    ed = win.editor
    ed.set_cell(1, "a", "7OO")  # letters O: invalid
    ed.set_cell(2, "max", "161")  # more edits after it, valid on their own
    ed.set_cell(3, "d", "645")
    assert win.state.dirty and win.isWindowModified()
    assert win.state.unapplied
    assert win.save() is False
    assert heron_path.read_text(encoding="utf-8") == original  # nothing written, not even the older arm
    assert win.state.dirty
    assert "Not saved: the arm editor holds an edit that is not valid" in win.reports[-1]
    assert "a must be a number, got '7OO'" in win.reports[-1]
    # the question offered the way out: go to the problem
    win.answers.append("fix")
    assert win.save() is False
    assert ed.table.currentRow() == 1 and ed.table.currentColumn() == 2  # the a cell of row 2
    # fixed: the next save writes exactly what the editor shows, every edit
    ed.set_cell(1, "a", "700")
    assert win.state.unapplied == ()
    assert win.save()
    back = armfile.load(heron_path)
    assert back.joints[2].max == 161 and back.joints[3].d == 645 and back.joints[1].a == 700
    assert not win.state.dirty


def test_saving_the_last_valid_arm_elsewhere_keeps_the_window_unsaved(make_window, heron_path, tmp_path):
    win = make_window(heron_path)
    ed = win.editor
    ed.set_cell(2, "max", "161")  # applied
    ed.set_cell(1, "a", "")  # blank a is 0 — valid; now something invalid:
    ed.set_cell(1, "min", "x")
    other = tmp_path / "last-valid.toml"
    win.answers.extend(["last", other])
    assert win.save() is False
    saved = armfile.load(other)
    assert saved.joints[2].max == 161 and saved.joints[1].min == win.state.spec.joints[1].min
    assert win.state.dirty and win.state.path == heron_path  # the window still holds the invalid edit


def test_closing_with_an_invalid_cell_asks_and_a_failed_save_keeps_the_window(make_window, heron_path):
    win = make_window(heron_path)
    win.interactive = True  # closeEvent asks only in an interactive window; the questions still take answers
    win.ask.interactive = False
    win.editor.set_cell(1, "a", "7OO")
    win.answers.append("save")
    assert win.close() is False  # the save refused, so the window stays
    assert win.isVisible() and win.state.dirty
    win.answers.append("discard")
    assert win.close() is True


def test_a_file_changed_on_disk_is_not_overwritten_without_asking(make_window, heron_path):
    win = make_window(heron_path)
    win.editor.set_cell(1, "max", "141")
    theirs = heron_path.read_text(encoding="utf-8").replace("max = 160", "max = 155")
    heron_path.write_text(theirs, encoding="utf-8")  # another program, after we loaded
    assert win.save() is False  # the default answer: cancel
    assert win.ask.asked[-1][0] == "The file changed on disk"
    assert heron_path.read_text(encoding="utf-8") == theirs
    win.answers.append("overwrite")
    assert win.save()
    back = armfile.load(heron_path)
    assert back.joints[1].max == 141 and back.joints[2].max == 160  # ours, as the editor shows it
    # and reload: theirs replaces ours
    heron_path.write_text(theirs.replace("max = 140", "max = 139"), encoding="utf-8")
    win.editor.set_cell(0, "max", "168")
    win.answers.append("reload")
    assert win.save() is False
    assert win.state.spec.joints[2].max == 155 and win.state.spec.joints[1].max == 139
    assert not win.state.dirty and win.editor.cell(1, "max") == "139"


def test_another_programs_change_is_noticed_and_offered_for_reload_once(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    assert str(heron_path) in win.watcher.files()
    time.sleep(0.01)
    heron_path.write_text(heron_path.read_text(encoding="utf-8").replace("max = 160", "max = 150"),
                          encoding="utf-8")
    qtbot.waitUntil(lambda: "disk" in win.notices.items, timeout=5000)  # the watcher (or the poll) saw it
    text = win.notices.text("disk")
    assert text.startswith("heron6.toml was changed by another program. Reload it")
    assert "lost" not in text  # no unsaved edits here
    assert win.check_disk() is True
    assert len([t for t, _ in win.ask.asked]) == 0  # a notice, not a dialog in the middle of typing
    win.notices.press("disk", "Reload")
    assert win.state.spec.joints[2].max == 150 and not win.state.dirty
    assert "disk" not in win.notices.items
    assert win.check_disk() is False
    # our own save is no change by another program
    win.editor.set_cell(2, "max", "151")
    assert win.save()
    qtbot.wait(300)
    assert win.check_disk() is False and "disk" not in win.notices.items


def test_a_change_on_disk_with_unsaved_edits_says_they_would_be_lost(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    win.editor.set_cell(1, "max", "141")
    heron_path.write_text(heron_path.read_text(encoding="utf-8") + "\n# touched\n", encoding="utf-8")
    assert win.check_disk()
    assert "your unsaved edits here would be lost" in win.notices.text("disk")
    win.notices.press("disk", "Reload")  # asks first; the default answer keeps the edits
    assert win.ask.asked[-1][0] == "Reload the arm file"
    assert win.state.dirty and win.state.spec.joints[1].max == 141
    win.notices.press("disk", "Keep mine")
    assert "disk" not in win.notices.items
    assert win.check_disk() is True and "disk" not in win.notices.items  # asked once per version


def test_saving_through_a_symbolic_link_writes_its_target(make_window, heron_path, tmp_path):
    link = tmp_path / "link.toml"
    link.symlink_to(heron_path)
    win = make_window(link)
    win.editor.set_cell(1, "max", "141")
    assert win.save()
    assert link.is_symlink() and os.readlink(link) == str(heron_path)
    assert armfile.load(heron_path).joints[1].max == 141


def test_a_hard_linked_file_is_written_in_place(make_window, heron_path, tmp_path):
    twin = tmp_path / "twin.toml"
    os.link(heron_path, twin)
    inode = heron_path.stat().st_ino
    win = make_window(heron_path)
    win.editor.set_cell(1, "max", "141")
    assert win.save()
    assert heron_path.stat().st_ino == inode and twin.stat().st_ino == inode
    assert armfile.load(twin).joints[1].max == 141


@pytest.mark.skipif(os.name != "posix", reason="permission bits")
def test_a_read_only_file_is_replaced_only_when_asked(make_window, heron_path):
    win = make_window(heron_path)
    win.editor.set_cell(1, "max", "141")
    before = heron_path.read_text(encoding="utf-8")
    heron_path.chmod(0o444)
    try:
        assert win.save() is False
        assert win.ask.asked[-1][0] == "The file is read-only"
        assert heron_path.read_text(encoding="utf-8") == before
        win.answers.append("replace")
        assert win.save()
        assert armfile.load(heron_path).joints[1].max == 141
        assert stat.S_IMODE(heron_path.stat().st_mode) == 0o444  # still read-only
    finally:
        heron_path.chmod(0o644)


def test_the_recovery_copy_holds_every_applied_edit_even_one_without_kinematics(make_window, heron_path):
    win = make_window(heron_path)
    ed = win.editor
    ed.set_cell(0, "home", "0")  # Heron's J1 home is 0 when blank: an explicit 0 changes no kinematics
    assert win.state.dirty
    assert win.recovery.flush(5.0)
    assert 'home = 0' in win.recovery_file.read_text(encoding="utf-8").split("[[joint]]")[1]
    ed.name.setText("Heron 6 b")
    ed.name.textEdited.emit("Heron 6 b")
    assert win.recovery.flush(5.0)
    assert 'name = "Heron 6 b"' in win.recovery_file.read_text(encoding="utf-8")
    assert win.save()
    assert not win.recovery_file.exists()


def test_a_recovery_copy_that_cannot_be_written_is_a_persistent_warning(make_window, heron_path, tmp_path,
                                                                        monkeypatch, qtbot):
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("a file where the recovery folder should be")
    monkeypatch.setenv("POSER_RECOVERY_DIR", str(blocker / "recovery"))
    win = make_window(heron_path)
    win.editor.set_cell(1, "max", "141")
    win.recovery.flush(5.0)
    qtbot.waitUntil(lambda: "recovery" in win.notices.items, timeout=3000)
    text = win.notices.text("recovery")
    assert text.startswith("Recovery copies cannot be written (")
    assert "only in this window until you save" in text
    qtbot.wait(700)  # it stays (no timeout) while the copies fail
    win.editor.set_cell(1, "max", "142")
    win.recovery.flush(5.0)
    qtbot.wait(50)
    assert "recovery" in win.notices.items
    blocker.unlink()  # the folder can be made now
    win.editor.set_cell(1, "max", "143")
    win.recovery.flush(5.0)
    qtbot.waitUntil(lambda: "recovery" not in win.notices.items, timeout=3000)
    assert "max = 143" in win.recovery_file.read_text(encoding="utf-8")


def test_recovery_copies_do_not_stall_typing_into_a_large_arm(make_window, tmp_path, qtbot):
    """Thirty-two joints: each edit hands the writer a copy; the text is made and written on its thread."""
    from poser.armfile import ArmSpec, JointSpec, dumps
    from poser.core.units import Units

    joints = [JointSpec(name=f"J{i + 1}", a=60, alpha=(90 if i % 2 else -90), min=-170, max=170) for i in range(32)]
    path = tmp_path / "snake32.toml"
    path.write_text(dumps(ArmSpec(name="Snake 32", joints=joints, units=Units("mm", "deg"))), encoding="utf-8")
    win = make_window(path)
    calls = []
    real = armfile.dumps
    import poser.io.recovery as rec

    def spy(*a, **k):
        import threading

        calls.append(threading.current_thread().name)
        return real(*a, **k)

    orig = rec.dumps
    rec.dumps = spy
    try:
        for k in range(10):
            win.editor.set_cell(5, "max", str(160 + k))
        assert win.recovery.flush(10.0)
    finally:
        rec.dumps = orig
    assert calls and all(name == "poser-recovery" for name in calls)
    assert len(calls) < 10  # coalesced: the latest edit wins
    assert "max = 169" in win.recovery_file.read_text(encoding="utf-8")
