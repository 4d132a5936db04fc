"""Families of solutions at singular and position-only targets: the verdict is searched over the family.

Facts used (sources beside each test):

* a six-axis arm whose wrist centre lies on the first joint's axis is in a shoulder singularity: any
  value of joint 1 keeps the wrist centre there, so the solutions form a one-parameter family over
  joint 1 (Spong, Hutchinson & Vidyasagar, *Robot Modeling and Control*, ch. 4, "singularities";
  Siciliano et al., *Robotics: Modelling, Planning and Control*, §3.3 — from memory);
* with the wrist axes 4 and 6 aligned (θ5 = 0) only θ4 + θ6 (or θ4 − θ6) is determined: a family over
  θ4 with θ6 following (same sources);
* position only on an arm with more joints than position coordinates: the extra joints, or the tool's
  orientation, are free (common practice; Siciliano et al., §3.5, redundancy).

Every member that a family reports as within limits is checked by forward kinematics (the core's
``chain.fk``, itself checked against an independent symbolic model in tests/core/test_fk.py).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import least_squares

from poser import armfile, report
from poser.core.dh import DHRow, chain_from_dh
from poser.core.ik import solve
from poser.core.ik.closed import plan
from poser.core.lines import chain_lines
from poser.core.transforms import from_xyz_rpy, rotation_error, rpy_to_matrix

ROOT = Path(__file__).resolve().parents[3]
D = np.pi / 180


def _demo(stem):
    return armfile.load(ROOT / "demo_arms" / f"{stem}.toml").to_chain()


def _six_axis_arm():
    """A six-axis arm with a spherical wrist and no offsets (our own numbers), tool 150 mm along J6."""
    R = "revolute"
    rows = [
        DHRow("J1", R, alpha=-90 * D, d=400.0, lower=-170 * D, upper=170 * D),
        DHRow("J2", R, a=450.0, theta=-90 * D, lower=-100 * D, upper=130 * D),
        DHRow("J3", R, alpha=-90 * D, lower=-120 * D, upper=150 * D),
        DHRow("J4", R, alpha=90 * D, d=400.0, lower=-180 * D, upper=180 * D),
        DHRow("J5", R, alpha=-90 * D, lower=-120 * D, upper=120 * D),
        DHRow("J6", R, d=100.0, lower=-360 * D, upper=360 * D),
    ]
    return chain_from_dh(rows, tool=from_xyz_rpy([0.0, 0.0, 150.0], [0.0, 0.0, 0.0]), name="six")


def _reaches(chain, q, xyz, R, tol=1e-6):
    T = chain.fk(np.asarray(q, float))
    ok = np.linalg.norm(T[:3, 3] - xyz) <= tol * chain.scale
    if R is not None:
        ok &= rotation_error(T[:3, :3], R) <= 1e-6
    return bool(ok)


def _within(chain, q):
    return bool(np.all(q >= chain.lower - 1e-9) and np.all(q <= chain.upper + 1e-9))


def test_wrist_centre_on_the_base_axis_is_reachable_through_the_family():
    """Target 250 mm behind the base axis, tool pointing −x: the wrist centre sits exactly on axis 1.

    Fixing joint 1 at its present value (0) needs joint 5 beyond its limit; other values of joint 1 do
    not — the verdict must come from the whole family (the wrong "not reachable" this guards against)."""
    arm = _six_axis_arm()
    xyz = np.array([-250.0, 0.0, 900.0])
    R = rpy_to_matrix(np.array([0.0, -90.0, 0.0]) * D)
    res = solve(arm, xyz, R, near=arm.home)
    assert res.reachable and res.closest is None
    assert not report.ik_message(arm, res).startswith("Not reachable")
    best = res.branches[0]
    fam = best.family
    assert fam is not None and fam.kind == "joint" and fam.joints == (0,) and fam.within_limits
    assert "wrist over the base axis" in best.label
    ranges = fam.ranges[0]
    assert not any(a <= 0.0 <= b for a, b in ranges)  # J1 = 0 is blocked …
    assert any(a <= 100 * D <= b for a, b in ranges)  # … J1 = 100° is not
    assert best.within_limits and _within(arm, best.q) and _reaches(arm, best.q, xyz, R)
    # the representative is the member nearest the present J1 (0): at a boundary of the ranges
    assert min(abs(abs(best.q[0]) - abs(x)) for r in ranges for x in r) < 1e-9
    # asked from a pose with J1 at 100°, the family keeps J1 there
    near = arm.home.copy()
    near[0] = 100 * D
    res2 = solve(arm, xyz, R, near=near)
    assert res2.branches[0].q[0] == pytest.approx(100 * D, abs=1e-12)
    assert _reaches(arm, res2.branches[0].q, xyz, R)
    # every boundary is a real limit edge: just inside, the member keeps J1 there and is within limits; just
    # outside, the nearest member within limits is at the edge
    for a, b in ranges:
        for edge, step in ((a, 1e-4), (b, -1e-4)):
            for x, inside in ((edge + step, True), (edge - step, False)):
                if not (arm.lower[0] < x < arm.upper[0]):
                    continue
                near = arm.home.copy()
                near[0] = x
                got = [bb for bb in solve(arm, xyz, R, near=near).branches if bb.family is not None
                       and bb.family.ranges == fam.ranges]
                assert got and got[0].within_limits and _reaches(arm, got[0].q, xyz, R)
                if inside:
                    assert got[0].q[0] == pytest.approx(x, abs=1e-12)
                else:
                    assert got[0].q[0] == pytest.approx(edge, abs=1e-9)
    words = report.family_words(arm, fam)
    assert words.startswith("J1 free: ") and "deg keep the tool here within limits" in words


def test_heron_wrist_centre_on_the_base_axis_gives_joint_one_families():
    """The same on Heron 6: a wrist centre placed exactly on axis 1 (any tool orientation)."""
    ch = _demo("heron6")
    pl = plan(ch)
    L = chain_lines(ch)
    R = np.array([[0.0, 0.0, -1.0], [0.0, 1.0, 0.0], [1.0, 0.0, 0.0]])
    c, p0, MR = np.array(pl.structure.point), L.p0, L.M[:3, :3]
    xyz = np.array([0.0, 0.0, 1300.0]) - R @ MR.T @ (c - p0)
    res = solve(ch, xyz, R, near=ch.home)
    assert res.reachable
    fams = [b.family for b in res.branches if b.family is not None]
    assert fams and all(f.joints == (0,) for f in fams)
    for b in res.branches:
        assert b.reaches and _reaches(ch, b.q, xyz, R)
        if b.within_limits:
            assert _within(ch, b.q)


def test_wrist_axes_aligned_is_a_family_over_joint_four_with_joint_six_following():
    """θ5 = 0: θ4 free, θ6 follows (Spong et al., ch. 4; Siciliano et al., §3.3 — from memory)."""
    ch = _demo("heron6")
    q = np.radians([10.0, 20.0, 30.0, 40.0, 0.0, 60.0])
    T = ch.fk(q)
    res = solve(ch, T[:3, 3], T[:3, :3], near=q)
    best = res.branches[0]
    fam = best.family
    assert fam is not None and fam.kind == "joint" and fam.joints == (3,) and 5 in fam.follows
    assert fam.ranges[0] == ((ch.lower[3], ch.upper[3]),)  # J6 has turns to spare: every J4 value works
    assert fam.fraction == 1.0
    np.testing.assert_allclose(best.q, q, atol=1e-9)  # the member that keeps J4 where it is
    assert "wrist axes aligned" in best.label
    # other members: J4 anywhere, J6 following, the pose kept
    pl = plan(ch)
    for x in np.radians([-150.0, -20.0, 75.0, 180.0]):
        r = q.copy()
        r[3] = x
        for qq, exact, free in pl.one(T[:3, 3], T[:3, :3], r):
            if exact and free[3]:
                assert qq[3] == pytest.approx(x) and _reaches(ch, qq, T[:3, 3], T[:3, :3])
    assert report.family_words(ch, fam).startswith("J4 forearm roll free: any value from -190 to 190 deg")


def test_position_only_on_a_six_axis_arm_searches_the_tool_orientation():
    """Heron position-only: every configuration is a family over the tool orientation; its verdict is
    "some member within limits" and its representative keeps the present orientation where it can."""
    ch = _demo("heron6")
    q = ch.home + np.radians([5.0, -10.0, 15.0, 10.0, 10.0, 5.0])
    T = ch.fk(q)
    res = solve(ch, T[:3, 3], None, near=q)
    assert res.reachable and res.position_only and res.redundant
    for b in res.branches:
        assert b.family is not None and b.family.kind == "orientation"
        assert b.family.samples > 1000
        if b.family.within_limits:
            assert b.within_limits and _within(ch, b.q)
        assert _reaches(ch, b.q, T[:3, 3], None)
    best = res.branches[0]
    assert rotation_error(ch.fk(best.q)[:3, :3], T[:3, :3]) < 1e-9  # the present orientation kept


def test_position_only_with_the_tool_at_the_wrist_centre_leaves_the_wrist_joints_free():
    # a tool point at the wrist centre (no flange offset, no tool): it lies on all three wrist axes
    R = "revolute"
    rows = [
        DHRow("J1", R, alpha=-90 * D, d=400.0),
        DHRow("J2", R, a=450.0, theta=-90 * D),
        DHRow("J3", R, alpha=-90 * D),
        DHRow("J4", R, alpha=90 * D, d=400.0),
        DHRow("J5", R, alpha=-90 * D),
        DHRow("J6", R),
    ]
    arm = chain_from_dh(rows)
    q = np.radians([20.0, 10.0, 40.0, 30.0, 50.0, 60.0])
    xyz = arm.fk(q)[:3, 3]
    res = solve(arm, xyz, None, near=q)
    assert res.reachable
    best = res.branches[0]
    assert best.family.kind == "joint" and best.family.joints == (3, 4, 5)
    np.testing.assert_allclose(best.q, q, atol=1e-9)


def test_table_arm_position_only_frees_the_gripper_turn():
    """Quill 4's tool point lies on the gripper axis: that joint never moves it (any value keeps the point)."""
    ch = _demo("quill4")
    q = ch.home + np.radians([10.0, -20.0, 0.0, 30.0])
    q[2] = 60.0
    res = solve(ch, ch.fk(q)[:3, 3], None, near=q)
    assert res.reachable and res.branches[0].family.joints == (3,)
    assert res.branches[0].family.ranges == (((ch.lower[3], ch.upper[3]),),)
    assert res.branches[0].q[3] == pytest.approx(q[3])


def test_seven_axis_arm_families_over_the_upper_arm_twist():
    """Lark 7: each configuration is a family over the upper-arm twist (its self-motion), every member exact."""
    ch = _demo("lark7")
    rng = np.random.default_rng(3)
    for q in rng.uniform(ch.lower, ch.upper, size=(4, 7)):
        T = ch.fk(q)
        res = solve(ch, T[:3, 3], T[:3, :3], near=q)
        assert res.reachable and res.redundant and res.solver.startswith("closed-form: upper-arm twist fixed")
        best = res.branches[0]
        assert best.family.joints == (2,) and best.distance == pytest.approx(0.0, abs=1e-6)
        for b in res.branches:
            assert _reaches(ch, b.q, T[:3, 3], T[:3, :3])
            if b.family.within_limits:
                assert b.within_limits
                lo, hi = b.family.ranges[0][0]
                assert ch.lower[2] - 1e-9 <= lo <= hi <= ch.upper[2] + 1e-9


def test_numerical_position_only_verdicts_come_from_a_search_within_limits():
    """Wren 6 (no closed form) position-only: a configuration said to be blocked has no within-limits member
    that an independent bounded least-squares search (scipy.optimize.least_squares) finds either."""
    ch = _demo("wren6")
    xyz = np.array([600.0, 100.0, 500.0])
    res = solve(ch, xyz, None, near=ch.home)
    assert res.reachable
    inside = {b.configuration for b in res.branches if b.within_limits}
    blocked = {b.configuration for b in res.branches if not b.within_limits} - inside
    from poser.core.fk import frames
    from poser.core.ik import labels

    rng = np.random.default_rng(0)
    found = set()
    for q0 in rng.uniform(ch.lower, ch.upper, size=(120, 6)):
        sol = least_squares(lambda q: ch.fk(q)[:3, 3] - xyz, q0, bounds=(ch.lower, ch.upper), xtol=1e-12,
                            ftol=1e-12, gtol=1e-12)
        if np.linalg.norm(sol.fun) < 1e-6 * ch.scale:
            found.add(labels.describe(ch, sol.x[None], frames(ch, sol.x[None]))[0])
    assert not (found & blocked), (found, blocked)
    assert inside


def test_numerical_arm_with_the_tool_axis_on_the_base_axis_gives_one_family_per_configuration():
    """Wren 6 (no closed form) with the tool pointing straight up the base axis: the spindle's axis and the
    base axis are one line, so turning the base by t and the spindle by −t keeps the tool where it is
    (a shoulder-type singularity; Spong et al., ch. 4, from memory).  The solver lands on many members of
    each such family; they must come back as one family per configuration, whose within-limits range is
    the one a brute-force sweep of the base turn finds (every member checked by forward kinematics)."""
    ch = _demo("wren6")
    xyz, R = np.array([0.0, 0.0, 1500.0]), np.eye(3)
    res = solve(ch, xyz, R)
    assert res.reachable and res.complete and res.total == len(res.branches) == 4
    assert len({b.configuration for b in res.branches}) == 4
    for b in res.branches:
        fam = b.family
        assert fam is not None and fam.kind == "joint" and fam.joints == (0,) and fam.follows == (5,)
        assert fam.free == ("base turn", "spindle turn")
        c = b.q[0] + b.q[5]  # the family: joint 1 + joint 6 constant, the rest fixed
        t = np.linspace(ch.lower[0], ch.upper[0], 3301)  # 0.1 degree steps
        Q = np.repeat(b.q[None], len(t), 0)
        Q[:, 0], Q[:, 5] = t, c - t
        T = ch.fk(Q)
        assert np.max(np.linalg.norm(T[:, :3, 3] - xyz, axis=1)) < 1e-5
        assert np.max(rotation_error(T[:, :3, :3], R)) < 1e-8
        # within limits: some whole turn of joint 6 fits its range, the other joints fixed within theirs
        fits6 = np.zeros(len(t), bool)
        for k in (-2, -1, 0, 1, 2):
            v = Q[:, 5] + 2 * np.pi * k
            fits6 |= (v >= ch.lower[5]) & (v <= ch.upper[5])
        rest = all(ch.lower[i] - 1e-9 <= b.q[i] <= ch.upper[i] + 1e-9 for i in (1, 2, 3, 4))
        good = fits6 & rest
        inside = np.zeros(len(t), bool)
        for lo, hi in fam.ranges[0]:
            inside |= (t >= lo - 1e-9) & (t <= hi + 1e-9)
        assert np.array_equal(inside, good)
        assert b.within_limits == bool(good.any())
        assert fam.fraction == pytest.approx(good.mean(), abs=2e-3)
    # the present base turn is kept where the family allows it: the representative keeps joint 1 at 0
    assert [round(float(b.q[0]), 12) for b in res.branches if b.within_limits] == [0.0, 0.0]
