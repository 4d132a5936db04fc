"""Position-only targets: a six-axis arm leaves the tool orientation free (a family); 2- and 3-joint arms not."""

from __future__ import annotations

import numpy as np
import pytest

from . import arms
from . import poserside as ps
from . import reference as ref
from .compare import compare


@pytest.mark.parametrize("name", ["planar2", "cylindrical"])
def test_position_only_on_arms_without_orientation(name):
    a = getattr(arms, name)()
    lo, hi = ref.limits(a)
    rng = np.random.default_rng(11)
    for _ in range(3):
        q = lo + rng.random(len(lo)) * (hi - lo)
        problems, res, sols, _ = compare(a, ref.fk(a, q)[:3, 3], None, K=120)
        assert res.reachable and res.position_only
        assert not problems, "\n".join(problems)


def test_position_only_six_axis_ordinary_target():
    a = arms.six_plain()
    q = ref.to_internal(a, [20, -30, 120, 0, 0, 0])
    xyz = ref.fk(a, q)[:3, 3]
    res = ps.solve(a, xyz, None)
    assert res.reachable and res.position_only
    for b in res.branches:
        assert ref.errors(a, b.q, xyz)[0] < 1e-6 * ref.size(a)
        assert b.family is not None and b.family.kind == "orientation"
        assert b.within_limits == ref.fits_limits(a, b.q)


def test_position_only_with_narrow_wrist_limits():
    a = arms.six_offsets()
    for i in (3, 4, 5):
        a = ref.with_limits(a, i, -5, 5)
    q = ref.to_internal(a, [30, 10, -20, 2, -3, 1])  # within limits
    xyz = ref.fk(a, q)[:3, 3]
    res = ps.solve(a, xyz, None)
    # Poser's own closest approach reaches the target within its tolerance ...
    assert res.closest is None or res.closest.position_error <= res.tolerance[0]
    # ... so the verdict must be "reachable"
    assert res.reachable


def test_position_only_farthest_point_is_reachable():
    a = arms.six_plain()
    q = ref.to_internal(a, [20, 0, 90, 0, 0, 0])  # stretched horizontally, tool along the arm: within limits
    xyz = ref.fk(a, q)[:3, 3]
    assert ref.fits_limits(a, q)
    res = ps.solve(a, xyz, None)
    assert res.reachable


def test_position_only_nearest_point_typed_back_is_reachable():
    a = arms.six_offsets()
    res = ps.solve(a, [3000.0, 500.0, 800.0], None)
    assert not res.reachable and res.nearest_point is not None
    # the reference agrees the point is reachable: the closest approach's own pose
    assert ref.errors(a, res.closest.q, res.nearest_point)[0] < 1e-9 * ref.size(a)
    assert ps.solve(a, res.nearest_point, None).reachable


def test_far_target_nearest_point_with_its_rotation_is_reachable():
    a = arms.six_offsets()
    R = ref.pose((0, 0, 0), (0, np.pi / 2, 0))[:3, :3]
    problems, res, _, _ = compare(a, [3000.0, 500.0, 800.0], R, K=100)
    assert not res.reachable and not problems, "\n".join(problems)
    assert ps.solve(a, res.nearest_point, res.nearest_rotation).reachable


def test_position_only_lists_each_configuration_once():
    from collections import Counter

    a = arms.six_offsets()
    q = ref.to_internal(a, [-148.1, -51.75, 148.921, -73.201, 21.667, 343.52])
    xyz = ref.fk(a, q)[:3, 3]
    res = ps.solve(a, xyz, None)
    assert res.reachable
    for b in res.branches:
        assert ref.errors(a, b.q, xyz)[0] < 1e-6 * ref.size(a)
    rows = Counter((b.configuration, b.turns) for b in res.branches)
    assert all(c == 1 for c in rows.values()), rows.most_common(1)


def test_planar_2r_within_tolerance_beyond_the_boundary_is_reachable():
    a = arms.planar2()
    for eps in (0.0, 1e-9, 1e-6):  # the tolerance is 1e-6 of the arm's size: 7e-4 mm
        xyz = (700 + eps) * np.array([np.cos(np.radians(20)), np.sin(np.radians(20)), 0])
        assert ps.solve(a, xyz, None).reachable


@pytest.mark.parametrize("eps", [1e-9, 1e-6])
def test_planar_3r_within_tolerance_beyond_the_boundary_is_reachable(eps):
    a = arms.planar3()
    xyz = (840 + eps) * np.array([np.cos(np.radians(20)), np.sin(np.radians(20)), 0])
    stretched = ref.to_internal(a, [20, 0, 0])  # the reference: this pose misses by eps only, within limits
    assert ref.errors(a, stretched, xyz)[0] <= eps * 1.001
    res = ps.solve(a, xyz, None)
    assert eps < res.tolerance[0]
    assert res.reachable


def test_planar_3r_nearest_point_typed_back_is_reachable():
    a = arms.planar3()
    res = ps.solve(a, [2500.0, 300.0, 0.0], None)
    assert not res.reachable and res.nearest_point is not None
    best, _ = ref.closest_bounded(a, [2500.0, 300.0, 0.0], None, K=60)
    assert res.closest.position_error <= best + 1e-6 * ref.size(a)
    assert ps.solve(a, res.nearest_point, None).reachable
