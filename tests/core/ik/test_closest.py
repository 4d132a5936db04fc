"""Targets the arm cannot reach within limits: one set of figures, and a nearest point that can be reached.

The closest approach puts the position first: among the poses within every joint's limits, the one whose
tool point comes nearest the target, then the nearest orientation there.  The nearest reachable point is
that pose's tool position, stated with its orientation; typed back in as a target it must be reached
(the definition of a reachable point; common practice).  For a planar two-link arm the nearest point of
its workspace to a point beyond reach lies on the outer circle towards it (geometry).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser import armfile, report
from poser.core.dh import DHRow, chain_from_dh
from poser.core.ik import solve
from poser.core.transforms import rotation_error, rpy_to_matrix

ROOT = Path(__file__).resolve().parents[3]
D = np.pi / 180


def _demo(stem):
    return armfile.load(ROOT / "demo_arms" / f"{stem}.toml").to_chain()


CASES = [
    ("heron6", [3000.0, 0.0, 900.0], [180.0, 0.0, 0.0]),
    ("heron6", [0.0, 0.0, 2800.0], None),
    ("wren6", [2000.0, 500.0, 400.0], [90.0, 0.0, 0.0]),
    ("boom3", [2.0, 1.0, 0.3], None),
    ("quill4", [900.0, 200.0, 100.0], [180.0, 0.0, 30.0]),
    ("planar3", [2000.0, 0.0, 1200.0], [0.0, 0.0, 0.0]),
    ("lark7", [1.2, 0.5, 0.4], [180.0, 0.0, 0.0]),
]


@pytest.mark.parametrize("stem, xyz, rpy", CASES, ids=[f"{c[0]}-{i}" for i, c in enumerate(CASES)])
def test_the_figures_agree_and_the_nearest_point_can_be_typed_back(stem, xyz, rpy):
    ch = _demo(stem)
    xyz = np.array(xyz)
    R = None if rpy is None else rpy_to_matrix(ch.units.angle_in(np.array(rpy)))
    res = solve(ch, xyz, R, near=ch.home)
    assert not res.reachable and res.closest is not None and res.closest.within_limits
    c = res.closest
    T = ch.fk(c.q)
    assert np.linalg.norm(T[:3, 3] - xyz) == pytest.approx(c.position_error, abs=1e-9 * ch.scale)
    assert res.nearest_point is not None
    np.testing.assert_allclose(res.nearest_point, T[:3, 3], atol=1e-12 * ch.scale)
    np.testing.assert_allclose(res.nearest_rotation, T[:3, :3], atol=1e-12)
    # the message and the figures say the same distance
    msg = report.ik_message(ch, res)
    assert report.length(ch, c.position_error, 4) in msg
    # typed back in (position and the orientation it assumes), the point is reached within limits
    back = solve(ch, res.nearest_point, res.nearest_rotation, near=c.q)
    assert back.reachable
    assert rotation_error(ch.fk(back.branches[0].q)[:3, :3], res.nearest_rotation) < 1e-6


def test_planar_two_link_arm_nearest_point_on_the_outer_circle():
    ch = chain_from_dh([DHRow("s", "revolute", a=0.7), DHRow("e", "revolute", a=0.4)])
    target = np.array([2.0, 1.0, 0.0])
    res = solve(ch, target)
    np.testing.assert_allclose(res.nearest_point, target / np.linalg.norm(target) * 1.1, atol=1e-6)
    assert res.closest.position_error == pytest.approx(np.linalg.norm(target) - 1.1, abs=1e-6)


def test_a_position_reached_with_the_wrong_orientation_says_so():
    ch = _demo("planar3")  # cannot tilt its tool out of its plane
    T = ch.fk(np.array([0.2, 0.5, 0.3]))
    R = T[:3, :3] @ rpy_to_matrix([0.0, 0.4, 0.0])
    res = solve(ch, T[:3, 3], R)
    assert not res.reachable and res.nearest_point is not None  # the nearest pose: this point, another orientation
    assert res.closest.position_error <= res.tolerance[0]
    assert solve(ch, res.nearest_point, res.nearest_rotation).reachable
    assert "reaches the position but misses the orientation by" in report.ik_message(ch, res)


def test_a_position_reached_with_an_orientation_out_of_reach_still_gives_the_nearest_pose():
    """Heron 6 at 1900, 0, 800 mm with the tool along world x (rpy 0, 0, 0): the point is within reach but no
    pose within the limits has that orientation there.  The closest approach reaches the position; its pose
    is the nearest reachable one, stated, and typed back in it is reached."""
    ch = _demo("heron6")
    xyz, R = np.array([1900.0, 0.0, 800.0]), rpy_to_matrix([0.0, 0.0, 0.0])
    res = solve(ch, xyz, R)
    assert not res.reachable
    assert res.closest.position_error <= res.tolerance[0] < res.closest.orientation_error
    assert res.nearest_point is not None and np.allclose(res.nearest_point, xyz, atol=res.tolerance[0])
    assert solve(ch, res.nearest_point, res.nearest_rotation).reachable
    assert "The nearest reachable point is 1900, 0, 800 mm with the tool at rpy" in report.ik_message(ch, res)
