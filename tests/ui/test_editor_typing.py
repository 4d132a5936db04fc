"""Save writes exactly what the editor shows, also while a cell is still being typed into: the typed text is
applied before a shortcut, a click elsewhere (a menu, a button) or closing the window acts on the arm; and
the cell at fault stays visible in the selected row."""

from __future__ import annotations

import pytest
from PySide6.QtCore import QPoint, Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QApplication, QLineEdit

from poser import armfile
from poser.ui.editor import BAD_CELL, KEYS

pytestmark = pytest.mark.gui


def type_into_cell(win, qtbot, row, key, text):
    """Open the cell's editor as a double-click would and type ``text`` (nothing pressed after it)."""
    ed = win.editor
    win.activateWindow()
    qtbot.waitActive(win)
    win.focus_panel("editor")
    item = ed.table.item(row, KEYS.index(key))
    ed.table.setCurrentItem(item)
    ed.table.editItem(item)
    qtbot.waitUntil(lambda: isinstance(QApplication.focusWidget(), QLineEdit), timeout=3000)
    line = QApplication.focusWidget()
    line.selectAll()
    qtbot.keyClicks(line, text)
    return line


def test_ctrl_s_while_typing_saves_the_typed_value(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    line = type_into_cell(win, qtbot, 2, "max", "123")
    assert line.text() == "123" and armfile.load(heron_path).joints[2].max == 160
    qtbot.keyClick(line, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    assert armfile.load(heron_path).joints[2].max == 123  # what the cell showed, not the value before it
    assert not win.state.dirty and win.editor.cell(2, "max") == "123"


def test_an_invalid_value_typed_and_ctrl_s_is_refused_not_the_older_arm_saved(make_window, heron_path, qtbot):
    original = heron_path.read_bytes()
    win = make_window(heron_path)
    line = type_into_cell(win, qtbot, 2, "max", "12x")
    qtbot.keyClick(line, Qt.Key.Key_S, Qt.KeyboardModifier.ControlModifier)
    assert heron_path.read_bytes() == original
    assert win.state.dirty and win.state.unapplied
    assert "max must be a number, got '12x'" in win.reports[-1]


def test_a_click_on_the_menu_bar_applies_the_typed_value_first(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    type_into_cell(win, qtbot, 1, "a", "701")
    bar = win.menuBar()
    qtbot.mouseClick(bar, Qt.MouseButton.LeftButton, pos=QPoint(bar.width() - 3, bar.height() // 2))
    assert win.state.spec.joints[1].a == 701 and win.state.dirty
    assert win.save()  # File ▸ Save, as the menu would
    assert armfile.load(heron_path).joints[1].a == 701


def test_closing_the_window_while_typing_asks_about_the_typed_edit(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    win.interactive = True  # closeEvent asks only in an interactive window; the questions still take answers
    win.ask.interactive = False
    type_into_cell(win, qtbot, 3, "d", "650")
    win.answers.append("cancel")
    assert win.close() is False  # the typed value counts as an unsaved edit
    assert win.ask.asked[-1][0] == "Unsaved changes" and win.state.spec.joints[3].d == 650
    win.answers.append("save")
    assert win.close() is True
    assert armfile.load(heron_path).joints[3].d == 650


def test_typing_without_a_shortcut_applies_nothing_yet(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    line = type_into_cell(win, qtbot, 2, "max", "1")  # "1" of "150": not applied on the way
    assert win.state.spec.joints[2].max == 160 and not win.state.dirty
    qtbot.keyClicks(line, "50")
    qtbot.keyClick(line, Qt.Key.Key_Return)  # the delegate commits on the next pass of the event loop
    qtbot.waitUntil(lambda: win.state.spec.joints[2].max == 150, timeout=3000)


def test_the_invalid_cell_stays_filled_in_the_selected_row(make_window, qtbot):
    win = make_window(size=(1400, 900))
    win.focus_panel("editor")
    ed = win.editor
    ed.table.selectRow(2)  # the row of the cell being edited is the selected one
    ed.set_cell(2, "min", "200")
    qtbot.wait(50)
    img = ed.table.viewport().grab().toImage()
    bad = ed.table.visualItemRect(ed.table.item(2, KEYS.index("min"))).center()
    other = ed.table.visualItemRect(ed.table.item(2, KEYS.index("d"))).center()
    selection = ed.table.palette().highlight().color()

    def near(a: QColor, b: QColor) -> bool:
        return abs(a.red() - b.red()) + abs(a.green() - b.green()) + abs(a.blue() - b.blue()) < 40

    assert near(img.pixelColor(other.x() + 8, other.y() + 8), selection)  # the row is selected
    fill = img.pixelColor(bad.x() + 10, bad.y() + 7)
    assert near(fill, QColor(BAD_CELL)), fill.name()  # the cell at fault is not hidden by it


def test_a_joint_added_to_a_radian_arm_turns_exactly_half_a_turn_each_way(make_window, tmp_path):
    import math

    path = tmp_path / "rad.toml"
    path.write_text('format = 1\n[units]\nangle = "rad"\n[[joint]]\nname = "J1"\ntype = "revolute"\nmin = -3\n'
                    "max = 3\n", encoding="utf-8")
    win = make_window(path)
    ed = win.editor
    ed.table.selectRow(0)
    ed.add_joint()
    j = win.state.spec.joints[1]
    assert (j.name, j.min, j.max) == ("J2", -math.pi, math.pi)  # not 3.14159, which falls short of π
    assert win.save()
    assert armfile.load(path).joints[1].max == math.pi
