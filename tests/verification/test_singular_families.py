"""Singular targets: the wrist centre on axis 1 (J1 free) and aligned wrist axes (θ5 = 0: J4/J6 trade).

Singular configurations of the six-axis arm with a spherical wrist: Spong, Hutchinson & Vidyasagar,
*Robot Modeling and Control*, ch. 4 (§ "Singularities": the decoupling into arm and wrist singularities,
the wrist singular when z3 and z5 line up, the arm singular when the wrist centre lies on z0); from memory.
The reference: the free joint pinned to a value (limits [v − 1e-7, v + 1e-7] in arm units) and a bounded
search over the other joints; a within-limits solution with that value exists exactly when the value lies
in the within-limits range Poser's families report.
"""

from __future__ import annotations

import numpy as np

from . import arms
from . import poserside as ps
from . import reference as ref

# six_offsets, tool z along −x: the wrist centre (245 mm behind the tool point) lies exactly on axis 1
BEHIND = (np.array([-245.0, 0.0, 1000.0]), ref.pose((0, 0, 0), np.radians([0, -90, 0]))[:3, :3])


def _union(result, joint):
    spans = []
    for b in result.branches:
        f = b.family
        assert f is not None and joint in f.joints, f"branch {b.label!r} is not a family over joint {joint}"
        spans += [(float(np.degrees(lo)), float(np.degrees(hi))) for lo, hi in f.ranges[list(f.joints).index(joint)]]
    return spans


def _exists_within_limits(a, joint, v, xyz, R, K=30):
    pinned = ref.with_limits(a, joint, v - 1e-7, v + 1e-7)
    return ref.solve_bounded(pinned, xyz, R, K=K)


def test_shoulder_family_ranges_match_the_reference():
    a = arms.six_offsets()
    xyz, R = BEHIND
    res = ps.solve(a, xyz, R)
    assert res.reachable
    spans = _union(res, 0)
    for b in res.branches:  # each representative reaches (reference FK) and is within limits
        pe, oe = ref.errors(a, b.q, xyz, R)
        assert pe < 1e-6 * ref.size(a) and oe < 1e-6 and b.within_limits
    for v in np.arange(-164.5, 165.0, 23.7):
        sols = _exists_within_limits(a, 0, v, xyz, R)
        assert bool(sols) == any(lo - 1e-6 <= v <= hi + 1e-6 for lo, hi in spans), v
        # the member the reference found is what Poser gives when asked near it
        again = ps.solve(a, xyz, R, near=sols[0])
        assert ref.same(a, again.branches[0].q, sols[0], 1e-6)


def test_shoulder_family_with_a_narrow_window_is_reachable():
    # J4 limited to [-40.44, -40.04] deg: only J1 in about [20.37, 20.63] (elbow up) and [-151.6, -151.3]
    # (elbow down) keeps every joint within limits
    a = ref.with_limits(arms.six_offsets(), 3, -40.44, -40.04)
    xyz, R = BEHIND
    inside = ref.solve_bounded(a, xyz, R, K=200)
    assert inside, "the reference finds within-limits solutions"
    assert any(19.9 < ref.to_user(a, s)[0] < 21.0 for s in inside)
    res = ps.solve(a, xyz, R)
    assert res.reachable


def _wrist_singular_target(a):
    q = ref.to_internal(a, [30, 10, -20, 40, 0, 25])
    T = ref.fk(a, q)
    return T[:3, 3], T[:3, :3]


def test_wrist_family_ranges_match_the_reference():
    a = ref.with_limits(arms.six_offsets(), 5, -60, 100)  # J6 narrower: J4 is limited by J6 following it
    xyz, R = _wrist_singular_target(a)
    res = ps.solve(a, xyz, R)
    assert res.reachable
    fams = [b for b in res.branches if b.family is not None]
    assert len(fams) == 1 and fams[0].family.joints == (3,) and 5 in fams[0].family.follows
    spans = [(float(np.degrees(lo)), float(np.degrees(hi))) for lo, hi in fams[0].family.ranges[0]]
    # J4 + J6 = 65° along the family: J6 in [-60, 100] leaves J4 in [-35, 125] (and J4 within ±185)
    assert len(spans) == 1 and abs(spans[0][0] + 35) < 1e-6 and abs(spans[0][1] - 125) < 1e-6
    for v in np.arange(-180.0, 185.0, 19.3):
        pinned = ref.with_limits(a, 3, v - 1e-7, v + 1e-7)
        sols = [s for s in ref.solve_bounded(pinned, xyz, R, K=30) if abs(s[4]) < 1e-6]
        assert bool(sols) == any(lo - 1e-6 <= v <= hi + 1e-6 for lo, hi in spans), v


def test_wrist_family_with_a_narrow_window_is_reachable():
    a = ref.with_limits(arms.six_offsets(), 5, 24.6, 24.9)
    xyz, R = _wrist_singular_target(a)
    inside = ref.solve_bounded(a, xyz, R, K=200)
    assert inside and all(40.0 < ref.to_user(a, s)[3] < 40.5 for s in inside)
    assert ps.solve(a, xyz, R).reachable


def test_seven_axis_target_from_a_within_limits_pose_is_reachable():
    a = ref.with_limits(arms.srs7(), 0, 12.2, 12.4)
    q = ref.to_internal(a, [12.3, 35.7, 20.45, -60.2, 30.6, 45.1, 10.0])
    assert ref.fits_limits(a, q)
    T = ref.fk(a, q)
    assert ps.solve(a, T[:3, 3], T[:3, :3]).reachable


def test_seven_axis_random_targets_reachable_with_correct_members():
    from .compare import check_branch

    a = arms.srs7()
    lo, hi = ref.limits(a)
    rng = np.random.default_rng(12)
    for _ in range(4):
        q = lo + rng.random(7) * (hi - lo)
        T = ref.fk(a, q)
        res = ps.solve(a, T[:3, 3], T[:3, :3])
        assert res.reachable and res.redundant
        for b in res.branches:
            assert not check_branch(a, b, T[:3, 3], T[:3, :3], res.tolerance)
