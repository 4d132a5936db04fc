"""Arm editor: names kept exactly, the cell at fault highlighted, new joints named by position, the home rule,
switching the DH convention (convert: the same arm; keep: the numbers read anew) with headers that follow."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtGui import QColor

from poser import armfile
from poser.ui.editor import BAD_CELL, BAD_ROW, HOME_RULE, KEYS, new_joint_name

pytestmark = pytest.mark.gui


def fill(ed, row, key) -> str:
    return ed.table.item(row, KEYS.index(key)).background().color().name().upper()


def test_names_are_kept_exactly_as_typed(make_window, heron_path):
    win = make_window(heron_path)
    ed = win.editor
    ed.set_cell(0, "name", "  J1 turret ")  # spaces are part of the name
    assert ed.problems == []
    assert win.state.spec.joints[0].name == "  J1 turret "
    ed.name.setText(" Heron 6 ")
    ed.name.textEdited.emit(" Heron 6 ")
    assert win.state.spec.name == " Heron 6 "
    assert win.save()
    back = armfile.load(heron_path)
    assert back.joints[0].name == "  J1 turret " and back.name == " Heron 6 "


def test_a_name_of_invisible_characters_or_a_look_alike_is_refused_with_the_file_layers_message(make_window):
    win = make_window()
    ed = win.editor
    ed.set_cell(0, "name", "\u200b ")  # a zero-width space and a space
    spec = ed.candidate()
    expected = armfile.validate(spec)[0].message
    assert expected.startswith("name must hold a visible character")
    assert [p.message for p in ed.problems] == [expected]
    assert fill(ed, 0, "name") == BAD_CELL.upper()
    ed.set_cell(0, "name", "J2  shoulder")  # J2's name with a double space: the same to the eye
    messages = [p.message for p in ed.problems]
    assert any("differ only by spaces, invisible characters or Unicode form" in m for m in messages)
    assert win.state.chain.names[0] == "J1 turret"  # nothing applied


def test_the_invalid_cell_is_highlighted_not_just_its_row(make_window):
    win = make_window()
    ed = win.editor
    ed.set_cell(2, "min", "200")  # above max: the min cell is at fault
    assert fill(ed, 2, "min") == BAD_CELL.upper()
    assert fill(ed, 2, "a") == BAD_ROW.upper() and fill(ed, 2, "max") == BAD_ROW.upper()
    assert fill(ed, 1, "min") != BAD_CELL.upper()
    assert "min must be below max" in ed.table.item(2, KEYS.index("min")).toolTip()
    ed.set_cell(2, "min", "-120")
    assert QColor(ed.table.item(2, KEYS.index("min")).background().color()).alpha() == 0
    # a field outside the table: the base position
    ed.base_xyz.setText("0, 0")
    ed.edited()
    assert BAD_CELL in ed.base_xyz.styleSheet()
    assert "[base] xyz must be a list of three numbers" in ed.base_xyz.toolTip()
    ed.base_xyz.setText("0, 0, 0")
    ed.edited()
    assert ed.base_xyz.styleSheet() == ""


def test_an_added_joint_is_named_by_its_position(make_window):
    win = make_window()
    ed = win.editor
    ed.table.selectRow(1)
    ed.add_joint()  # goes in as the third joint
    assert ed.cell(2, "name") == "J3"  # Heron's third is "J3 elbow": "J3" is still free
    assert win.state.chain.names[2] == "J3"
    ed.table.selectRow(1)
    ed.add_joint()
    assert ed.cell(2, "name") == "J3 new"  # "J3" taken now
    assert new_joint_name(["J1", "j 2"], 2) == "J2"
    assert new_joint_name(["J2", "J2 new"], 2) == "J2 new 2"


def test_the_blank_home_hint_states_the_real_rule(make_window):
    win = make_window()
    ed = win.editor
    assert HOME_RULE == "blank home: 0, or the middle of the range when 0 is outside it"
    assert HOME_RULE in ed.limits_note.text()
    assert HOME_RULE in ed.table.horizontalHeaderItem(KEYS.index("home")).toolTip()
    # and it is the rule: a joint whose range leaves out 0 starts mid-range
    ed.set_cell(2, "min", "10")
    ed.set_cell(2, "home", "")
    assert ed.problems == []
    assert win.state.chain.q_to_user(win.state.chain.home)[2] == pytest.approx((10 + 160) / 2)


def _headers(ed):
    return [ed.table.horizontalHeaderItem(c).text() for c in range(ed.table.columnCount())]


def test_switching_convention_converts_the_table_to_the_same_arm(make_window, heron_path, qtbot):
    win = make_window(heron_path)
    ed = win.editor
    st = win.state
    rng = np.random.default_rng(7)
    qs = [st.chain.q_from_user(rng.uniform(-90, 90, st.chain.n)) for _ in range(5)]
    before = [st.chain.fk(q) for q in qs]
    assert _headers(ed)[2:4] == ["a (mm)", "alpha (deg)"]
    win.answers.append("convert")
    ed.convention.setCurrentText("modified")
    assert ed.problems == []
    assert st.spec.convention == "modified"
    assert _headers(ed)[2:4] == ["a(i−1) (mm)", "alpha(i−1) (deg)"]
    for q, T in zip(qs, before):
        np.testing.assert_allclose(st.chain.fk(q), T, atol=1e-9)  # the same tool pose for every joint value
    assert "Converted to the modified convention" in ed.message.text()
    expected = armfile.convert_convention(armfile.load(heron_path), "modified")
    assert [(j.a, j.alpha) for j in st.spec.joints] == [(j.a, j.alpha) for j in expected.joints]
    # saved and read back: still the same arm
    assert win.save()
    back = armfile.load(heron_path).to_chain()
    for q, T in zip(qs, before):
        np.testing.assert_allclose(back.fk(q), T, atol=1e-9)


def test_switching_convention_can_keep_the_numbers_and_says_so(make_window):
    win = make_window()
    ed = win.editor
    st = win.state
    rows = [(j.a, j.alpha) for j in st.spec.joints]
    tool = st.tool().copy()
    win.answers.append("keep")
    ed.convention.setCurrentText("modified")
    assert st.spec.convention == "modified"
    assert [(j.a, j.alpha) for j in st.spec.joints] == rows
    assert not np.allclose(st.tool(), tool)  # the same numbers read differently: another arm
    assert "read in the modified convention: this is another arm" in ed.message.text()
    # cancel puts the switch back
    win.answers.append("cancel")
    ed.convention.setCurrentText("standard")
    assert ed.convention.currentText() == "modified" and st.spec.convention == "modified"


def test_the_type_is_chosen_from_a_list_in_the_cell(make_window, qtbot):
    from PySide6.QtWidgets import QComboBox

    win = make_window()
    ed = win.editor
    index = ed.table.model().index(5, KEYS.index("type"))
    ed.table.setCurrentIndex(index)
    ed.table.edit(index)
    combo = ed.table.findChild(QComboBox)
    assert combo is not None and [combo.itemText(k) for k in range(combo.count())] == ["revolute", "prismatic"]
    combo.hidePopup()
    combo.setCurrentText("prismatic")
    combo.activated.emit(1)
    ed.set_cell(5, "min", "0")
    ed.set_cell(5, "max", "100")
    ed.set_cell(5, "home", "")
    assert ed.cell(5, "type") == "prismatic"
    assert ed.problems == [] and win.state.chain.kinds[5] == "prismatic"
