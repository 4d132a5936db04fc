"""Singularities named by kind with the joints involved, for any arm (the task-space Jacobian's rank).

Kinds of the six-axis arm with a spherical wrist — wrist (θ5 = 0: axes 4 and 6 in line), shoulder (wrist
centre on axis 1), elbow (arm stretched or folded) — from Spong, Hutchinson & Vidyasagar, *Robot Modeling
and Control*, ch. 4, and Siciliano et al., *Robotics: Modelling, Planning and Control*, §3.3 (from memory).
A planar two-link arm is singular stretched out or folded (Yoshikawa 1985, from memory).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

from poser import armfile, report
from poser.core.anatomy import anatomy, points_at
from poser.core.dh import DHRow, chain_from_dh
from poser.core.fk import frames
from poser.core.singularity import NEAR_CONDITION, assess

ROOT = Path(__file__).resolve().parents[2]
D = np.pi / 180


def _heron():
    return armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()


def test_wrist_axes_aligned():
    ch = _heron()
    s = assess(ch, np.radians([10, 20, 30, 40, 0, 60]))
    assert s.level == "at" and s.manipulability == 0.0 and s.condition == np.inf
    assert [(f.kind, f.joints) for f in s.findings] == [("wrist", (3, 5))]
    level, words = report.singularity_words(ch, s)
    assert level == "at" and "wrist axes aligned" in words and "J4 forearm roll and J6 flange" in words
    assert report.singularity_words(ch, s, short=True)[1] == "AT A SINGULARITY: wrist axes aligned (joints 4 and 6)"


def test_near_the_wrist_singularity_it_is_named_too():
    ch = _heron()
    s = assess(ch, np.radians([10, 20, 30, 40, 1.0, 60]))
    assert s.level == "near" and s.condition > NEAR_CONDITION
    assert s.findings[0].kind == "wrist" and 0 < s.findings[0].measure < 0.05


def test_wrist_centre_on_the_base_axis():
    ch = _heron()
    an = anatomy(ch)
    q = np.radians([0.0, 0.0, 0.0, 20.0, 40.0, 10.0])
    # J3 that puts the wrist centre on axis 1 (its horizontal distance from the axis crosses zero)
    f = lambda t: points_at(an, frames(ch, np.r_[q[:2], t, q[3:]]), "wrist")[0]  # noqa: E731
    q[2] = brentq(f, 0.5, 2.8, xtol=1e-14)
    s = assess(ch, q)
    assert s.level == "at"
    assert ("shoulder", (0,)) in [(x.kind, x.joints) for x in s.findings]
    assert "wrist centre on the base axis" in report.singularity_words(ch, s)[1]


def test_elbow_stretched():
    ch = _heron()
    q = np.radians([10.0, 30.0, 0.0, 20.0, 40.0, 50.0])
    q[2] = -np.arctan2(760.0, 130.0)  # the forearm in line with the upper arm (see test_jacobian)
    s = assess(ch, q)
    assert s.level == "at" and s.findings[0].kind == "elbow" and s.findings[0].detail == "stretched"
    assert s.findings[0].joints == (2,)
    assert "arm stretched out" in report.singularity_words(ch, s)[1]


@pytest.mark.parametrize("q2, detail", [(0.0, "stretched"), (np.pi, "folded")])
def test_planar_two_link_arm(q2, detail):
    ch = chain_from_dh([DHRow("a", "revolute", a=0.7), DHRow("b", "revolute", a=0.4)])
    s = assess(ch, [0.4, q2])
    assert s.level == "at" and s.manipulability == 0.0
    assert [(f.kind, f.detail) for f in s.findings] == [("elbow", detail)]
    assert assess(ch, [0.4, 1.0]).level == "clear"


def test_a_generic_loss_of_rank_names_the_joints_that_take_part():
    """A lift carrying two swing links (no turning base first: no named kind applies) loses rank with the
    links in line; the joints taking part are the two swings."""
    rows = [
        DHRow("lift", "prismatic", lower=0.0, upper=500.0),
        DHRow("swing 1", "revolute", a=300.0),
        DHRow("swing 2", "revolute", a=200.0),
    ]
    ch = chain_from_dh(rows)
    s = assess(ch, [100.0, 0.4, 0.0])
    assert s.level == "at" and [(f.kind, f.joints) for f in s.findings] == [("generic", (1, 2))]
    assert "loses rank (joints involved: swing 1 and swing 2)" in report.singularity_words(ch, s)[1]
    assert assess(ch, [100.0, 0.4, 1.0]).level == "clear"


def test_every_demo_home_is_clear_and_the_fk_command_says_so(capsys):
    from poser.cli import main

    for p in sorted((ROOT / "demo_arms").glob("*.toml")):
        ch = armfile.load(p).to_chain()
        assert assess(ch, ch.home).level == "clear"
    code = main(["fk", str(ROOT / "demo_arms" / "heron6.toml"), "--joints", "10,20,30,40,0,60", "--json"])
    import json

    out = json.loads(capsys.readouterr().out)
    assert code == 0 and out["singularity"]["level"] == "at"
    kinds = [{"kind": "wrist", "joints": ["J4 forearm roll", "J6 flange"], "detail": None}]
    assert out["singularity"]["kinds"] == kinds
    assert out["manipulability"] == 0.0 and out["manipulability_unit"] == "mm³"


def test_a_cylindrical_arm_with_its_tool_point_on_the_base_axis():
    """Turn, lift, radial slide (RPP) with the slide at 0: the tool point is on joint 1's axis, so joint 1 cannot
    move it and the position Jacobian loses a rank (common practice: the shoulder singularity of a cylindrical
    arm; Spong, Hutchinson & Vidyasagar, *Robot Modeling and Control*, ch. 4)."""
    ch = chain_from_dh([DHRow("turn", "revolute", d=200.0),
                        DHRow("lift", "prismatic", alpha=-np.pi / 2, lower=100.0, upper=800.0),
                        DHRow("reach", "prismatic", lower=-200.0, upper=700.0)])
    s = assess(ch, [0.3, 300.0, 0.0])
    assert s.level == "at"
    assert [(f.kind, f.joints, f.detail) for f in s.findings] == [("shoulder", (0,), "tool")]
    assert "tool point on the base axis (turn cannot move it)" in report.singularity_words(ch, s)[1]
    assert assess(ch, [0.3, 300.0, 250.0]).level == "clear"
