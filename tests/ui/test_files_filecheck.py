"""The window's saves, checked against inputs chosen to break them: a CRLF file with comments edited row by
row in the editor (moved, removed, inserted joints keep their comments; every line stays CRLF; a save without
edits changes no byte), a file removed or replaced by another program after a save, and names with control
and blank characters shown escaped in the window."""

from __future__ import annotations

import os

import pytest
from PySide6.QtCore import Qt

from poser import armfile

pytestmark = pytest.mark.gui

CRLF_ARM = (
    "# Hinge 3 - an invented test arm\n"
    "format = 1\n"
    'name = "Hinge 3"\n'
    "\n"
    "# about A: the base turn\n"
    "[[joint]]\n"
    'name = "A"\n'
    'type = "revolute"\n'
    "d = 300\n"
    "alpha = 90\n"
    "min = -170\n"
    "max = 170  # stop at 170\n"
    "\n"
    "# about B: the shoulder\n"
    "# (second line about B)\n"
    "[[joint]]\n"
    'name = "B"\n'
    'type = "revolute"\n'
    "a = 400\n"
    "min = -90\n"
    "max = 135\n"
    "\n"
    "# about C: the slide\n"
    "[[joint]]\n"
    'name = "C"\n'
    'type = "prismatic"\n'
    "min = 0\n"
    "max = 200\n"
    "\n"
    "# end of the file\n"
).replace("\n", "\r\n")


def _block(text: str, name: str) -> str:
    """The comment lines right above the [[joint]] header of joint ``name``."""
    lines = text.split("\r\n")
    at = lines.index(f'name = "{name}"') - 1
    assert lines[at] == "[[joint]]"
    out = []
    while at > 0 and lines[at - 1].startswith("#"):
        at -= 1
        out.insert(0, lines[at])
    return "\n".join(out)


def test_a_crlf_file_is_saved_unchanged_and_edits_keep_comments_with_their_joints(make_window, tmp_path):
    path = tmp_path / "hinge3.toml"
    path.write_bytes(CRLF_ARM.encode())
    win = make_window(path)
    ed = win.editor
    ed.set_cell(0, "home", "0")  # an explicit home, then back to blank: the arm as loaded, dirty
    ed.set_cell(0, "home", "")
    assert win.save()
    assert path.read_bytes() == CRLF_ARM.encode()  # byte for byte
    ed.table.selectRow(2)
    ed.move_joint(-1)  # C above B
    ed.table.selectRow(0)
    ed.add_joint()  # a new joint after A
    ed.table.selectRow(3)  # B (now last) goes
    ed.remove_joint()
    assert [ed.cell(r, "name") for r in range(ed.table.rowCount())] == ["A", "J2", "C"]
    assert win.save()
    text = path.read_bytes().decode()
    assert "\n" not in text.replace("\r\n", "")  # every line CRLF, the new ones too
    assert _block(text, "A") == "# about A: the base turn"
    assert _block(text, "C") == "# about C: the slide"
    assert _block(text, "J2") == ""  # a fresh table, no comment taken from another joint
    assert "about B" not in text  # removed with its joint
    assert "max = 170  # stop at 170" in text and text.endswith("# end of the file\r\n")
    assert [j.name for j in armfile.load(path).joints] == ["A", "J2", "C"]


def test_a_file_removed_after_loading_is_not_silently_written_again(make_window, heron_path):
    win = make_window(heron_path)
    win.editor.set_cell(1, "max", "141")
    os.remove(heron_path)
    assert win.save() is False  # the default answer: cancel
    assert win.ask.asked[-1] == ("The file changed on disk",
                                 f"{heron_path} was removed or renamed since it was loaded.")
    assert not heron_path.exists()
    win.answers.append("overwrite")
    assert win.save() and armfile.load(heron_path).joints[1].max == 141


def test_a_change_by_a_renaming_editor_after_our_own_save_is_noticed(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    win.editor.set_cell(1, "max", "141")
    assert win.save()
    theirs = heron_path.with_name("heron6.toml.new")
    theirs.write_text(heron_path.read_text(encoding="utf-8").replace("max = 141", "max = 139"), encoding="utf-8")
    os.replace(theirs, heron_path)  # as editors that save by renaming do: a new inode
    qtbot.waitUntil(lambda: "disk" in win.notices.items, timeout=6000)
    win.notices.press("disk", "Reload")
    assert win.state.spec.joints[1].max == 139 and not win.state.dirty


def test_names_with_control_and_blank_characters_are_escaped_in_the_window(make_window, heron_path):
    text = heron_path.read_text(encoding="utf-8")
    text = text.replace('name = "Heron 6"', 'name = "Heron\\u001b[2J\\u3164"').replace(
        'name = "J6 flange"', 'name = "J6\\t\\u0007\\u200b"')
    heron_path.write_text(text, encoding="utf-8")
    win = make_window(heron_path)
    assert "Heron\\x1b[2J\\u3164" in win.windowTitle()
    assert not any(c in win.windowTitle() for c in "\x1b\u3164")
    label = win.joints.rows[5].name.text()
    assert label == "J6\\t\\x07\\u200b"
    assert win.editor.cell(5, "name") == "J6\t\x07\u200b"  # the editor keeps the name exactly, for editing


def test_the_editor_shows_a_name_escaped_and_edits_it_exactly(make_window, heron_path, qtbot):
    from PySide6.QtWidgets import QStyleOptionViewItem

    from poser.ui.editor import KEYS

    win = make_window(heron_path)
    ed = win.editor
    ed.set_cell(5, "name", "J6 \u202eegnalf")  # a right-to-left override would turn the rest of the row around
    assert ed.problems == [] and win.state.spec.joints[5].name == "J6 \u202eegnalf"
    index = ed.table.model().index(5, KEYS.index("name"))
    opt = QStyleOptionViewItem()
    ed.table.itemDelegateForIndex(index).initStyleOption(opt, index)
    assert opt.text == "J6 \\u202eegnalf"
    assert index.data(Qt.ItemDataRole.EditRole) == "J6 \u202eegnalf"  # what the cell's editor opens with
