"""`poser ik --json` against the API, exit codes, determinism, turn-variant counts by brute force,
manipulability against a closed form, and the singularity kinds `poser fk` names."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from . import arms
from . import poserside as ps
from . import reference as ref


def _target(a, q_user):
    T = ref.fk(a, ref.to_internal(a, q_user))
    return T[:3, 3], np.degrees(ref.rpy_of(T[:3, :3]))


CASES = [
    ("six_offsets", [30, 10, -20, 40, 35, 25], 0),       # ordinary, reachable
    ("six_offsets", None, 1),                             # far beyond reach
    ("six_offsets", "behind", 0),                         # the wrist centre on axis 1: J1 family
    ("stanford_like", [10, 120, 500, 20, 30, 40], 1),     # reachable only beyond J2's limit
    ("scara_rrpr", [30, 40, 100, 200], 0),
]


@pytest.mark.parametrize("name,q_user,code", CASES)
def test_cli_json_gives_the_api_numbers_and_exit_code(name, q_user, code):
    a = getattr(arms, name)()
    if q_user is None:
        xyz, rpy = np.array([3000.0, 0.0, 0.0]), np.array([0.0, 0.0, 0.0])
    elif q_user == "behind":
        xyz, rpy = np.array([-245.0, 0.0, 1000.0]), np.array([0.0, -90.0, 0.0])
    else:
        xyz, rpy = _target(a, q_user)
    got, js, err = ps.cli_json(a, "ik", "--xyz", ps.csv(xyz), "--rpy", ps.csv(rpy))
    assert got == code, err
    R = ref.pose((0, 0, 0), np.radians(rpy))[:3, :3]
    res = ps.solve(a, xyz, R)
    assert js["reachable"] == res.reachable == (code == 0)
    inside = ref.solve_bounded(a, xyz, R, K=60)  # the reference's verdict
    assert bool(inside) == (code == 0) or q_user == "behind"
    assert js["branch_count"] == res.total and js["unlisted"] == res.unlisted and js["listed"] == len(res.branches)
    for jb, b in zip(js["branches"], res.branches):
        assert np.allclose(jb["joints"], ref.to_user(a, b.q), atol=1e-7)
        assert jb["within_limits"] == b.within_limits and jb["configuration"] == b.configuration
        assert [v["index"] for v in jb["violations"]] == [v.joint for v in b.violations]
        assert ("family" in jb) and ((jb["family"] is None) == (b.family is None))
    if res.nearest_point is not None:
        assert np.allclose(js["nearest_point"], res.nearest_point, atol=1e-7)
        Rn = ref.pose((0, 0, 0), np.radians(js["nearest_rpy"]))[:3, :3]
        assert ref.rot_error(Rn, res.nearest_rotation) < 1e-9


def test_bad_input_exits_2():
    a = arms.six_offsets()
    for args in (["--xyz", "1,2"], ["--xyz", "1,2,nan"], ["--xyz", "1,2,3", "--near", "1,2"],
                 ["--xyz", "1,2,3", "--rpy", "1,x,3"]):
        code, out, err = ps.cli(a, "ik", *args)
        assert code == 2 and err.strip(), args


def test_the_same_call_twice_gives_the_same_answer():
    a = arms.five_axis()  # solved numerically
    xyz, rpy = _target(a, [20, 30, -40, 50, 60])
    first = ps.cli(a, "ik", "--xyz", ps.csv(xyz), "--rpy", ps.csv(rpy), "--json")
    assert first == ps.cli(a, "ik", "--xyz", ps.csv(xyz), "--rpy", ps.csv(rpy), "--json")
    r1, r2 = (ps.solve(a, xyz + 500.0, None) for _ in range(2))  # out of reach, position only
    assert np.array_equal(r1.closest.q, r2.closest.q) and np.array_equal(r1.nearest_point, r2.nearest_point)


def _all_variants(a, s):
    lo, hi = ref.limits(a)
    rev = ref.revolute(a)
    opts = []
    for i, v in enumerate(s):
        if rev[i]:
            ks = range(math.ceil((lo[i] - 1e-9 - v) / ref.TWO_PI), math.floor((hi[i] + 1e-9 - v) / ref.TWO_PI) + 1)
            opts.append([v + k * ref.TWO_PI for k in ks])
        else:
            opts.append([v])
    return [np.array(p) for p in itertools.product(*opts)]


def test_turn_variants_counted_and_nearest_kept_on_wide_joints():
    a = arms.six_plain()
    for i, (lo, hi) in {0: (-720, 720), 2: (-360, 360), 3: (-720, 720), 5: (-720, 720)}.items():
        a = ref.with_limits(a, i, lo, hi)
    q = ref.to_internal(a, [30, 10, -20, 40, 35, 25])
    T = ref.fk(a, q)
    sols = ref.solve_all(a, T[:3, 3], T[:3, :3], K=200)
    assert len(sols) == 8
    every = [v for s in sols for v in _all_variants(a, s)]
    assert len(every) == sum(ref.turn_count(a, s) for s in sols) == 1024
    rng = np.random.default_rng(4)
    for near in [q + np.radians([720, 0, -360, -720, 0, 720])] + list(rng.uniform(-15, 15, (3, 6))):
        res = ps.solve(a, T[:3, 3], T[:3, :3], near=near)
        assert res.total == 1024 and res.unlisted == 1024 - len(res.branches)
        best = min(np.linalg.norm(v - near) for v in every)
        assert abs(np.linalg.norm(res.branches[0].q - near) - best) < 1e-9


def test_table_arm_with_a_3600_degree_turn():
    a = ref.with_limits(arms.scara_rrpr(), 3, -3600, 3600)
    q = ref.to_internal(a, [30, 40, 100, 3000.5])
    T = ref.fk(a, q)
    sols = ref.solve_all(a, T[:3, 3], T[:3, :3], K=100)
    res = ps.solve(a, T[:3, 3], T[:3, :3], near=q)
    assert res.total == sum(ref.turn_count(a, s) for s in sols) == 40
    assert np.allclose(res.branches[0].q, q)


def test_planar_2r_manipulability_is_the_closed_form():
    # w = |a1 a2 sin q2| for the planar 2R arm: Yoshikawa, "Manipulability of robotic mechanisms",
    # IJRR 4(2), 1985 (from memory)
    from poser.core.jacobian import manipulability

    mm = arms.planar2()
    m = ref.arm([dict(a=0.4, min=-170, max=170), dict(a=0.3, min=-160, max=160)], length="m")
    for q2 in (0.0, 30.0, 90.0, 160.0):
        q = ref.to_internal(mm, [20.0, q2])
        w = 400 * 300 * abs(math.sin(math.radians(q2)))
        assert abs(manipulability(ps.chain(mm), q) - w) < 1e-6
        assert abs(manipulability(ps.chain(m), q) * 1e6 - w) < 1e-6


@pytest.mark.parametrize("name,q_user,kinds", [
    ("six_offsets", [0, 10, -20, 40, 0, 25], {"wrist"}),          # θ5 = 0: z4 and z6 in line
    ("six_plain", [10, 30, 90, 0, 30, 0], {"elbow"}),             # forearm in line with the upper arm
    ("six_plain", [0, 90, 90, 0, 30, 0], {"elbow", "shoulder"}),  # stretched straight up: on axis 1 too
    ("planar2", [10, 0], {"elbow"}),
    ("stanford_like", [0, 20, 500, 0, 0, 0], {"wrist"}),
    ("planar2", [10, 90], set()),
])
def test_fk_names_the_singularity_the_geometry_has(name, q_user, kinds):
    a = getattr(arms, name)()
    code, js, err = ps.cli_json(a, "fk", "--joints", ps.csv(q_user))
    assert code == 0
    assert {k["kind"] for k in js["singularity"]["kinds"]} == kinds
    assert (js["singularity"]["level"] == "at") == bool(kinds)


def test_shortened_listings_keep_the_variant_at_near_and_count_the_rest():
    a = arms.six_plain()
    for i, (lo, hi) in {0: (-720, 720), 2: (-360, 360), 3: (-720, 720), 5: (-720, 720)}.items():
        a = ref.with_limits(a, i, lo, hi)
    q = ref.to_internal(a, [30, 10, -20, 40, 35, 25])
    T = ref.fk(a, q)
    near = q + np.radians([360, 0, 360, -720, 0, -720])  # a within-limits turn variant of the same pose
    assert ref.fits_limits(a, near)
    for opts, listed in (({"max_variants": 4}, 32), ({"max_variants": 1}, 8), ({"max_branches": 3}, 3)):
        res = ps.solve(a, T[:3, 3], T[:3, :3], near=near, **opts)
        assert res.total == 1024 and len(res.branches) == listed and res.unlisted == 1024 - listed
        assert np.allclose(res.branches[0].q, near)
