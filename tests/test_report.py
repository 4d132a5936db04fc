"""poser.report: the one wording of every verdict, shared by the command line and the window."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser import armfile, report
from poser.core.dh import DHRow, chain_from_dh
from poser.core.ik import solve

ROOT = Path(__file__).resolve().parents[1]
D = np.pi / 180


def _demo(stem):
    return armfile.load(ROOT / "demo_arms" / f"{stem}.toml").to_chain()


def test_numbers_read_plainly():
    assert report.fmt(1.23456) == "1.235" and report.fmt(-0.0001) == "0" and report.fmt(float("inf")) == "∞"
    assert report.fmt(310, 0) == "310" and report.fmt(1200.0, 0) == "1200" and report.fmt(2.50, 2) == "2.5"
    assert report.num(12.5) == "12.5" and report.num(3e-14) == "0"


def test_control_characters_are_escaped_wherever_a_name_is_printed():
    assert report.printable("J1\nturret\x07") == "J1\\nturret\\x07"
    assert report.printable("plain name") == "plain name"


def test_a_mixed_arm_never_adds_degrees_to_millimetres():
    quill = _demo("quill4")
    a = np.array([0.0, 0.0, 20.0, 0.0])
    b = np.array([30 * D, -10 * D, 80.0, 200 * D])
    assert report.largest_move(quill, a, b) == "gripper turn by 200 deg; quill by 60 mm"
    res = solve(quill, quill.fk(b)[:3, 3], quill.fk(b)[:3, :3], near=a)
    text = report.distance_text(quill, res.branches[0])
    assert " deg and " in text and text.endswith(" mm")


def test_limit_words():
    assert report.limit_state(12, -10, 10, 0.05, "mm").words == "BEYOND upper limit by 2 mm"
    assert report.limit_state(-10, -10, 10, 0.05, "deg").words == "AT lower limit"
    assert report.limit_state(9.5, -10, 10, 0.05, "deg").words == "near upper limit: 0.5 deg left"


def test_manipulability_text_carries_the_task_space_unit():
    heron, boom = _demo("heron6"), _demo("boom3")
    assert report.manipulability_text(heron, 0.0) == "0 mm³"
    assert report.manipulability_text(boom, 0.5) == "0.5000 m²"
    assert "full pose" in report.manipulability_tip(heron) and "in mm³" in report.manipulability_tip(heron)


def test_the_verdicts_in_words():
    heron = _demo("heron6")
    ok = solve(heron, [900.0, -300.0, 900.0], np.diag([1.0, -1.0, -1.0]), near=heron.home)
    msg = report.ik_message(heron, ok)
    assert msg.startswith("Reachable: ") and "branches reach the target within limits" in msg
    far = solve(heron, [3000.0, 0.0, 900.0], np.diag([1.0, -1.0, -1.0]), near=heron.home)
    msg = report.ik_message(heron, far)
    assert msg.startswith("Out of reach: ") and "nearest reachable point is" in msg and "with the tool at rpy" in msg
    level, text = report.ik_summary(heron, far)
    assert level == "at" and text == msg
    rows = [DHRow("shoulder", "revolute", a=0.7, lower=-0.5, upper=0.5), DHRow("elbow", "revolute", a=0.4)]
    arm = chain_from_dh(rows)
    blocked = solve(arm, [0.0, 0.9, 0.0])
    msg = report.ik_message(arm, blocked)
    assert msg.startswith("Not reachable within limits") and "shoulder" in msg and "upper limit" in msg


def test_family_words_say_what_is_free_and_where():
    heron = _demo("heron6")
    q = np.radians([10.0, 20.0, 30.0, 40.0, 0.0, 60.0])
    T = heron.fk(q)
    fam = solve(heron, T[:3, 3], T[:3, :3], near=q).branches[0].family
    assert report.family_words(heron, fam) == (
        "J4 forearm roll free: any value from -190 to 190 deg keeps the tool here (J6 flange follows)")
    pos = solve(heron, T[:3, 3], None, near=q).branches[0].family
    assert report.family_words(heron, pos).startswith("tool orientation free: ")


@pytest.mark.parametrize("short", [False, True])
def test_singularity_words_have_a_long_and_a_short_form(short):
    from poser.core.singularity import assess

    heron = _demo("heron6")
    s = assess(heron, np.radians([10.0, 20.0, 30.0, 40.0, 0.0, 60.0]))
    level, text = report.singularity_words(heron, s, short=short)
    assert level == "at" and text.startswith("AT A SINGULARITY: wrist axes aligned")
    assert ("joints 4 and 6" in text) == short and ("J4 forearm roll and J6 flange" in text) == (not short)
