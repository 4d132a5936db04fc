"""Exact singular and degenerate targets on an arm the project has not seen (six_round), on three mounts.

Singular configurations of the six-axis arm with a spherical wrist (the wrist singular when θ5 = 0 puts
z3 and z5 in line, the arm singular with the wrist centre on z0 or the elbow stretched or folded):
Spong, Hutchinson & Vidyasagar, *Robot Modeling and Control*, ch. 4, § "Singularities" (from memory).
Every reference solution (a brute-force search, reference.py) must be a branch or a member of a family,
within limits when the reference says so; ``reachable`` must agree.
"""

from __future__ import annotations

import copy

import numpy as np
import pytest

from . import arms
from . import poserside as ps
from . import reference as ref
from .compare import compare_families

MOUNTS = {"floor": None, "ceiling": arms.CEILING, "wall": arms.WALL}

EXACT = {
    "wrist": [20, 40, 30, 10, 0, 15],            # θ5 = 0
    "stretched": [30, 45, 90, 20, 40, 10],       # J3 = 90: upper arm and forearm in line
    "folded": [30, 45, -90, 20, 40, 10],         # J3 = −90: forearm back along the upper arm
    "stretched+wrist": [30, 45, 90, 0, 0, 0],
    "on axis+stretched": [10, 90, 90, 0, 30, 0],  # straight up: the wrist centre on axis 1
    "all three": [10, 90, 90, 20, 0, 30],
}


def _mounted(mount):
    return arms.six_round(base=MOUNTS[mount]) if MOUNTS[mount] else arms.six_round()


@pytest.mark.parametrize("mount", sorted(MOUNTS))
@pytest.mark.parametrize("case", sorted(EXACT))
def test_exact_singular_targets_every_solution_is_a_branch_or_a_member(case, mount):
    a = _mounted(mount)
    q = ref.to_internal(a, EXACT[case])
    T = ref.fk(a, q)
    problems, res = compare_families(a, T[:3, 3], T[:3, :3], K=100)
    assert res.reachable
    assert not problems, "\n".join(problems[:8])
    if "wrist" in case or "axis" in case or case == "all three":  # a joint is free there: a family
        assert any(b.family is not None and b.family.kind == "joint" for b in res.branches)


@pytest.mark.parametrize("mount", sorted(MOUNTS))
@pytest.mark.parametrize("xyz,rpy", [
    ((0, 0, 1200), (0, 0, 0)),      # over the base, tool up: the wrist centre on axis 1 at 1100
    ((0, 0, 1600), (0, 0, 0)),      # the farthest point straight up: on axis 1 and stretched
    ((800, 0, 0), (0, 180, 0)),     # on the x axis, tool down
    ((-500, 0, 350), (0, -90, 0)),  # behind the base at shoulder height, tool pointing back
])
def test_round_number_targets_on_the_axes(xyz, rpy, mount):
    a = _mounted(mount)
    base = ref.pose(a["base"][0], np.radians(a["base"][1]))
    T = base @ ref.pose(xyz, np.radians(rpy))  # the same target in the arm's base frame on every mount
    problems, res = compare_families(a, T[:3, 3], T[:3, :3], K=100)
    assert not problems, "\n".join(problems[:8])


@pytest.mark.parametrize("name", ["six_round", "six_modified_m_rad", "scara_rrpr", "cylindrical", "planar3",
                                  "five_axis", "stanford_like", "srs7"])
def test_a_limit_exactly_at_the_solution_value_is_within(name):
    # a limit is inclusive: a value equal to it is within (common practice)
    base_arm = getattr(arms, name)()
    rng = np.random.default_rng(3)
    lo, hi = ref.limits(base_arm)
    for trial in range(4):
        q_user = np.round(ref.to_user(base_arm, lo + rng.random(len(lo)) * (hi - lo)), 1)
        a = copy.deepcopy(base_arm)
        j = trial % len(q_user)
        a["joints"][j]["min" if trial % 2 else "max"] = float(q_user[j])
        q = ref.to_internal(a, q_user)
        T = ref.fk(a, q)
        R = T[:3, :3] if len(q) >= 6 else None
        res = ps.solve(a, T[:3, 3], R, near=q)
        hit = [b for b in res.branches if ref.same(a, b.q, q, 1e-7)]
        assert res.reachable and hit and hit[0].within_limits, (name, j, q_user.tolist())


@pytest.mark.parametrize("mount", [None, arms.CEILING, ((250, -120, 900), (30, 45, 60))])
def test_a_bent_offset_tool_on_any_mount(mount):
    from .compare import compare

    tool = ((120, -40, 200), (10, 35, -20))  # off the flange axis and bent: the wrist centre is not on the tool axis
    a = arms.six_round(tool=tool, base=mount) if mount else arms.six_round(tool=tool)
    lo, hi = ref.limits(a)
    for q in lo + np.random.default_rng(9).random((2, 6)) * (hi - lo):
        T = ref.fk(a, q)
        problems, res, sols, _ = compare(a, T[:3, 3], T[:3, :3], K=100)
        assert res.reachable and any(ref.same(a, q, b.q) for b in res.branches)
        assert not problems, "\n".join(problems[:6])


@pytest.mark.parametrize("q_user", [[20, 30, 0, 40, 50], [0, 30, 0, 60, 0]])
def test_numerically_solved_arm_at_an_exactly_stretched_elbow_lists_each_solution_once(q_user):
    a = arms.five_axis()
    q = ref.to_internal(a, q_user)
    T = ref.fk(a, q)
    sols = ref.solve_all(a, T[:3, 3], T[:3, :3], K=150)
    assert len(sols) == 2
    res = ps.solve(a, T[:3, 3], T[:3, :3])
    expected = sum(max(1, ref.turn_count(a, s)) for s in sols)  # beyond-limits solutions count once
    assert res.total == expected
    assert any(ref.same(a, q, b.q, 1e-7) for b in res.branches)
