"""The inverse-kinematics result: fields, ordering, limits, singular and boundary targets, unreachable targets.

Facts of the trade used here (common practice): an arm stretched out or
folded back lies on the boundary of its workspace and is singular there; a
six-axis arm whose wrist axes 4 and 6 line up is in a wrist singularity and
only the sum (or difference) of those two joints is determined; a wrist
centre on the base axis leaves the base joint undetermined (Siciliano et al.,
*Robotics: Modelling, Planning and Control*, sec. 3.3; Spong, Hutchinson &
Vidyasagar, *Robot Modeling and Control*, ch. 4 — from memory).  The nearest
point of a planar two-link arm's workspace to a point beyond its reach lies
on the circle of radius l1 + l2 towards that point (geometry).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from poser import armfile, report
from poser.core.chain import Chain
from poser.core.dh import DHRow, chain_from_dh
from poser.core.errors import PoserValueError
from poser.core.ik import Branch, Family, IKResult, Violation, solve
from poser.core.transforms import rpy_to_matrix

ROOT = Path(__file__).resolve().parents[3]
DEMO = sorted((ROOT / "demo_arms").glob("*.toml"))
D = np.pi / 180


def _demo(stem):
    return armfile.load(ROOT / "demo_arms" / f"{stem}.toml").to_chain()


def _with_limits(chain, i, lo, hi):
    joints = list(chain.joints)
    joints[i] = dataclasses.replace(joints[i], lower=lo, upper=hi, home=min(max(joints[i].home, lo), hi))
    return Chain(joints, chain.base, chain.tool, chain.name, chain.units)


_CHAINS = {}


def res_chain(res):
    return _CHAINS[id(res)]


def _all_finite(res: IKResult, chain=None):
    if chain is not None:
        _CHAINS[id(res)] = chain
    for b in list(res.branches) + ([res.closest] if res.closest else []):
        assert np.all(np.isfinite(b.q))
        for v in (b.position_error, b.orientation_error, b.manipulability):
            assert np.isfinite(v)
        assert b.label and b.configuration
        assert b.distance is None or np.isfinite(b.distance)
    if res.nearest_point is not None:
        assert np.all(np.isfinite(res.nearest_point))
    assert res.status == "solved" and res.fault is None
    assert report.ik_message(res_chain(res), res)


# -- the result ------------------------------------------------------------------------------------


def test_result_fields_and_types():
    ch = _demo("heron6")
    q = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6])
    T = ch.fk(q)
    res = solve(ch, T[:3, 3], T[:3, :3], near=q)
    assert isinstance(res, IKResult) and res.solver.startswith("closed-form: ")
    assert res.status == "solved" and res.complete and res.fault is None
    assert res.reachable and not res.position_only and not res.redundant
    assert res.closest is None and res.nearest_point is None and res.nearest_rotation is None
    assert res.total == len(res.branches) + res.unlisted
    for b in res.branches:
        assert isinstance(b, Branch) and b.q.shape == (6,) and not b.q.flags.writeable
        assert all(isinstance(v, Violation) for v in b.violations)
        assert b.within_limits == (not b.violations)
        assert b.family is None or isinstance(b.family, Family)
        assert b.distance == pytest.approx(float(np.linalg.norm(b.q - q)))
        assert b.distance_parts[0] == pytest.approx(b.distance) and b.distance_parts[1] == 0.0
    with pytest.raises(dataclasses.FrozenInstanceError):
        res.branches[0].label = "x"


def test_ordering_reaching_within_limits_first_then_by_distance():
    ch = _demo("heron6")
    q = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6])
    T = ch.fk(q)
    res = solve(ch, T[:3, 3], T[:3, :3], near=q)
    groups = [(not (b.reaches and b.within_limits), not b.reaches) for b in res.branches]
    assert groups == sorted(groups)
    first = [b.distance for b in res.branches if b.reaches and b.within_limits]
    # nearest first (ties within rounding: fewer extra turns first)
    assert all(a <= b + 1e-9 for a, b in zip(first, first[1:])) and first[0] == pytest.approx(0.0, abs=1e-9)
    # without `near` the order is stable from call to call
    a = solve(ch, T[:3, 3], T[:3, :3])
    b = solve(ch, T[:3, 3], T[:3, :3])
    assert [x.label for x in a.branches] == [x.label for x in b.branches]
    assert all(x.distance is None for x in a.branches)


def test_position_only_has_no_orientation_error():
    ch = _demo("boom3")
    T = ch.fk(np.array([0.3, 0.4, 0.5]))
    res = solve(ch, T[:3, 3])
    assert res.position_only and res.reachable
    assert all(b.orientation_error == 0.0 for b in res.branches)


@pytest.mark.parametrize(
    "kwargs, word",
    [
        (dict(xyz=[1, 2]), "xyz"),
        (dict(xyz=[np.nan, 0, 0]), "xyz"),
        (dict(xyz=[1, 2, 3], R=np.ones((3, 3))), "R"),
        (dict(xyz=[1, 2, 3], R=np.eye(2)), "R"),
        (dict(xyz=[1, 2, 3], near=[0, 0]), "near"),
        (dict(xyz=[1, 2, 3], bogus=1), "options"),
        (dict(xyz=[1, 2, 3], method="guess"), "method"),
    ],
)
def test_bad_arguments_name_themselves(kwargs, word):
    with pytest.raises(PoserValueError, match=word):
        solve(_demo("planar3"), **kwargs)


@pytest.mark.parametrize("path", DEMO, ids=[p.stem for p in DEMO])
def test_never_raises_never_nan(path):
    """Odd targets on every arm: far away, at the base, huge, tiny; always a finite, labelled answer."""
    ch = _demo(path.stem)
    rng = np.random.default_rng(17)
    targets = [np.zeros(3), np.array([1e9, -1e9, 1e9]), np.array([1e-12, 0, 0]), ch.fk(ch.home)[:3, 3]]
    targets += list(rng.normal(size=(4, 3)) * 3 * np.abs(ch.fk(ch.home)[:3, 3]).max())
    for i, xyz in enumerate(targets):
        R = rpy_to_matrix(rng.uniform(-np.pi, np.pi, 3)) if i % 2 else None
        res = solve(ch, xyz, R, near=ch.home)
        _all_finite(res, ch)
        assert res.reachable or res.closest is not None


# -- singular and boundary targets -----------------------------------------------------------------


def test_stretched_arm_at_the_workspace_boundary():
    """Heron with the forearm in line with the upper arm (boundary of the workspace, common practice)."""
    ch = _demo("heron6")
    # J3 value that puts the wrist centre (frame 4) farthest from the shoulder axis (frame 1)
    q3 = np.linspace(-np.pi, np.pi, 4001)
    Q = np.zeros((len(q3), 6))
    Q[:, 2] = q3
    F = ch.frames(Q)
    v = q3[int(np.argmax(np.linalg.norm(F[:, 4, :3, 3] - F[:, 1, :3, 3], axis=1)))]
    from scipy.optimize import minimize_scalar

    def minus_reach(x):
        f = ch.frames(np.array([0, 0, x, 0, 0, 0]))
        return -np.linalg.norm(f[4, :3, 3] - f[1, :3, 3])

    v = minimize_scalar(minus_reach, bracket=(v - 0.01, v, v + 0.01), tol=1e-12).x
    q = np.array([0.3, 0.2, v, 0.1, 0.7, 0.2])
    T = ch.fk(q)
    res = solve(ch, T[:3, 3], T[:3, :3], near=q)
    _all_finite(res, ch)
    assert res.reachable
    assert any("arm stretched" in b.label for b in res.branches if b.reaches)


def test_wrist_axes_aligned():
    """J5 = 0 lines up J4 and J6: only their sum is fixed; the branch keeps J4 at its current value."""
    ch = _demo("heron6")
    q = np.array([0.2, 0.1, 0.4, 0.5, 0.0, -0.3])
    T = ch.fk(q)
    near = q + np.array([0, 0, 0, 0.2, 0, -0.2])
    res = solve(ch, T[:3, 3], T[:3, :3], near=near)
    _all_finite(res, ch)
    assert res.reachable
    best = res.branches[0]
    assert "wrist axes aligned" in best.label
    assert best.q[3] == pytest.approx(near[3])
    assert best.q[3] + best.q[5] == pytest.approx(q[3] + q[5])


def test_wrist_centre_on_the_base_axis():
    """An elbow arm without shoulder offset, wrist centre on the base axis: J1 is free; the current value is kept."""
    rows = [
        DHRow("base", "revolute", alpha=90 * D, d=0.4),
        DHRow("shoulder", "revolute", a=0.5),
        DHRow("elbow", "revolute", a=0.45),
    ]
    ch = chain_from_dh(rows)
    res = solve(ch, [0.0, 0.0, 0.9], near=np.array([0.7, 0.3, 0.2]))
    _all_finite(res, ch)
    assert res.reachable
    assert all(b.q[0] == pytest.approx(0.7) for b in res.branches if b.reaches)
    assert all("wrist over the base axis" in b.label for b in res.branches if b.reaches)


def test_folded_planar_arm_at_the_inner_boundary():
    ch = chain_from_dh([DHRow("s", "revolute", a=0.6), DHRow("e", "revolute", a=0.4)])
    res = solve(ch, [0.2, 0.0, 0.0])
    _all_finite(res, ch)
    assert res.reachable and "arm folded" in res.branches[0].label
    res = solve(ch, [0.0, 0.0, 0.0])  # closer than |l1 - l2|: out of reach on the inside
    _all_finite(res, ch)
    assert not res.reachable
    assert np.linalg.norm(res.nearest_point) == pytest.approx(0.2, abs=1e-6)


def test_redundant_arm_at_a_singular_pose():
    """Lark 7 stretched straight up (every joint at zero) is singular; the solver stays finite and reaches."""
    ch = _demo("lark7")
    T = ch.fk(np.zeros(7))
    res = solve(ch, T[:3, 3], T[:3, :3], near=np.zeros(7))
    _all_finite(res, ch)
    assert res.reachable and res.redundant and res.solver.startswith("closed-form: upper-arm twist fixed")
    assert "families" in report.ik_message(ch, res)
    assert all(b.family is not None and b.family.kind == "joint" for b in res.branches)


# -- unreachable targets ---------------------------------------------------------------------------


def test_out_of_reach_gives_closest_approach_and_nearest_point():
    """Planar two-link arm: the nearest reachable point lies on the outer circle towards the target (geometry)."""
    ch = chain_from_dh([DHRow("s", "revolute", a=0.7), DHRow("e", "revolute", a=0.4)])
    target = np.array([2.0, 1.0, 0.0])
    res = solve(ch, target)
    assert not res.reachable
    assert res.closest is not None and res.closest.within_limits
    expected = target / np.linalg.norm(target) * 1.1
    assert np.allclose(res.nearest_point, expected, atol=1e-6)
    assert res.closest.position_error == pytest.approx(np.linalg.norm(target) - 1.1, abs=1e-6)
    msg = report.ik_message(ch, res)
    assert "Out of reach" in msg and "nearest reachable point" in msg


def test_out_of_plane_target_of_a_planar_arm():
    ch = _demo("planar3")  # moves in the world x-z plane
    res = solve(ch, [500.0, 80.0, 1300.0])
    assert not res.reachable
    assert res.nearest_point[1] == pytest.approx(0.0, abs=1e-6)
    assert np.linalg.norm(res.nearest_point - [500.0, 0.0, 1300.0]) < 1e-3


def test_blocking_limit_is_named():
    """A target reachable only beyond a limit: not reachable, the limit that blocks is named."""
    ch = chain_from_dh([DHRow("shoulder", "revolute", a=0.7), DHRow("elbow", "revolute", a=0.4)])
    ch = _with_limits(ch, 0, -0.5, 0.5)
    # straight up: both branches need the shoulder near +60° … +90°
    res = solve(ch, [0.0, 0.9, 0.0])
    assert not res.reachable
    reaching = [b for b in res.branches if b.reaches]
    assert len(reaching) == 2 and not any(b.within_limits for b in reaching)
    v = reaching[0].violations[0]
    assert v.name == "shoulder" and v.side == "upper" and v.excess > 0 and v.limit == 0.5
    msg = report.ik_message(ch, res)
    assert "shoulder" in msg and "upper limit" in msg
    assert res.closest is not None and res.closest.within_limits
    assert res.closest.q[0] == pytest.approx(0.5, abs=1e-6)


def test_one_branch_blocked_other_reaches():
    ch = _demo("boom3")
    res = solve(ch, [0.5, 0.3, 1.2])  # needs the boom pitched below its lower limit, facing the target
    msg = report.ik_message(ch, res)
    assert "boom pitch" in msg and "lower limit" in msg


def test_unreachable_orientation_of_a_planar_arm():
    """A planar arm cannot tilt its tool out of its plane: position reachable, orientation not."""
    ch = _demo("planar3")
    T = ch.fk(np.array([0.2, 0.5, 0.3]))
    R = T[:3, :3] @ rpy_to_matrix([0.0, 0.4, 0.0])
    res = solve(ch, T[:3, 3], R)
    assert not res.reachable
    assert res.closest is not None and res.closest.orientation_error > 0.1
    # the nearest reachable pose: the position itself, with the orientation the closest approach has
    assert res.nearest_point is not None and np.allclose(res.nearest_point, T[:3, 3], atol=res.tolerance[0])
    assert solve(ch, res.nearest_point, res.nearest_rotation).reachable
    assert "orientation" in report.ik_message(ch, res)


@pytest.mark.parametrize("stem", ["heron6", "quill4", "wren6", "lark7"])
def test_position_only_without_current_pose_finds_the_family(stem):
    """Position only, no `near`: the home orientation may not fit; the family is searched and representatives given."""
    ch = _demo(stem)
    rng = np.random.default_rng(41)
    for q in rng.uniform(ch.lower, ch.upper, size=(6, ch.n)):
        res = solve(ch, ch.fk(q)[:3, 3])
        _all_finite(res, ch)
        assert res.reachable and res.redundant and res.position_only
        assert len({b.configuration for b in res.branches}) <= 8


_ARMS = {p.stem: None for p in DEMO}


def _cached_demo(stem):
    if _ARMS.get(stem) is None:
        _ARMS[stem] = _demo(stem)
    return _ARMS[stem]


def test_any_finite_target_gives_a_finite_answer():
    """Property: for any finite target (position, orientation, current pose) on any demo arm, no exception, no NaN."""
    from hypothesis import given, settings
    from hypothesis import strategies as hs

    coord = hs.floats(-1e5, 1e5, allow_nan=False)
    angle = hs.floats(-np.pi, np.pi, allow_nan=False)

    @settings(max_examples=60, deadline=None, derandomize=True)
    @given(
        hs.sampled_from(sorted(_ARMS)),
        hs.tuples(coord, coord, coord),
        hs.one_of(hs.none(), hs.tuples(angle, angle, angle)),
        hs.booleans(),
    )
    def check(stem, xyz, rpy, with_near):
        ch = _cached_demo(stem)
        R = None if rpy is None else rpy_to_matrix(np.array(rpy))
        near = 0.5 * (ch.lower + ch.upper) if with_near else None
        res = solve(ch, np.array(xyz), R, near)
        _all_finite(res, ch)
        assert res.reachable or res.closest is not None

    check()


def test_numerical_search_finds_every_branch_within_limits():
    """Wren 6 (no closed form): the default seeds find every within-limits branch a search from 8x more seeds finds."""
    ch = _demo("wren6")
    rng = np.random.default_rng(8)

    def keys(res):
        return {tuple(np.round(np.angle(np.exp(1j * b.q)), 4)) for b in res.branches if b.reaches and b.within_limits}

    for q in rng.uniform(ch.lower, ch.upper, size=(4, 6)):
        T = ch.fk(q)
        default = solve(ch, T[:3, 3], T[:3, :3])
        wide = solve(ch, T[:3, 3], T[:3, :3], seeds=512)
        assert keys(wide) and keys(wide) <= keys(default)
