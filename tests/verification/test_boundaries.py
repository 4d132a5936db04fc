"""Targets on the edges: double roots, the stretched arm at the workspace boundary ± 1e-9, just out of reach."""

from __future__ import annotations

from collections import Counter

import numpy as np
import pytest
from scipy.optimize import brentq

from . import arms
from . import poserside as ps
from . import reference as ref
from .compare import check_branch, compare


def _lateral_double_root(a):
    """six_lateral posed with the wrist centre at exactly d2 = 140 mm from axis 1 (the two J1 roots merge)."""
    base = ref.frames(a, np.zeros((1, 6)))[0, 0]
    inv = np.linalg.inv(base)

    def along_x1(j2):
        F = ref.frames(a, ref.to_internal(a, [25, j2, 0, 40, 30, 20])[None])[0]
        return float(np.dot((inv @ F[4][:, 3])[:3], (inv @ F[1])[:3, 0]))

    j2 = brentq(along_x1, -60, -40, xtol=1e-14)
    q = ref.to_internal(a, [25, j2, 0, 40, 30, 20])
    wc = (inv @ ref.frames(a, q[None])[0, 4][:, 3])[:3]
    assert abs(np.hypot(wc[0], wc[1]) - 140) < 1e-9
    return ref.fk(a, q)


def test_lateral_offset_double_root_on_the_floor():
    a = arms.six_lateral()
    T = _lateral_double_root(a)
    res = ps.solve(a, T[:3, 3], T[:3, :3])
    assert res.reachable and res.total == 6
    rows = Counter((b.configuration, b.turns) for b in res.branches)
    assert all(c == 1 for c in rows.values())


def test_lateral_offset_double_root_on_a_wall_mount():
    a = arms.six_lateral(base=arms.WALL)
    T = _lateral_double_root(a)
    res = ps.solve(a, T[:3, 3], T[:3, :3])
    rows = Counter((b.configuration, b.turns) for b in res.branches)
    assert all(c == 1 for c in rows.values()), rows.most_common(1)
    assert res.total == 6


@pytest.mark.parametrize("eps", [-1e-9, 0.0, 1e-9])
def test_stretched_arm_at_the_boundary(eps):
    # six_plain: shoulder at z = 400, upper arm 500 + forearm 450; tool axis along the stretched arm (+x)
    a = arms.six_plain()
    R = ref.pose((0, 0, 0), (0, np.pi / 2, 0))[:3, :3]
    xyz = np.array([950 + eps + 80, 0, 400])
    res = ps.solve(a, xyz, R)
    assert res.reachable
    assert ref.solve_bounded(a, xyz, R, K=60)
    for b in res.branches:
        assert not check_branch(a, b, xyz, R, res.tolerance)
        assert "stretched" in b.configuration


def test_just_beyond_the_boundary_is_out_of_reach_with_the_right_closest_approach():
    a = arms.six_plain()
    R = ref.pose((0, 0, 0), (0, np.pi / 2, 0))[:3, :3]
    xyz = np.array([950 + 80 + 0.01, 0, 400])  # 10 µm beyond: far over the 1.4 µm tolerance
    problems, res, _, _ = compare(a, xyz, R, K=80)
    assert not res.reachable and not problems, "\n".join(problems)
    assert abs(res.closest.position_error - 0.01) < 1e-6


@pytest.mark.parametrize("mount", [None, arms.CEILING, arms.WALL])
def test_round_number_target_over_the_base_axis(mount):
    # six_plain: tool straight up over the base, wrist centre on axis 1 at round-number coordinates
    a = arms.six_plain(base=mount) if mount else arms.six_plain()
    base = ref.pose(a["base"][0], np.radians(a["base"][1]))
    xyz = (base @ np.array([0, 0, 1200.0, 1]))[:3]
    R = base[:3, :3]
    res = ps.solve(a, xyz, R)
    assert res.reachable
    assert all(b.family is not None and 0 in b.family.joints for b in res.branches)
    for b in res.branches:
        assert not check_branch(a, b, xyz, R, res.tolerance)


@pytest.mark.parametrize("name", ["cylindrical", "stanford_like"])
def test_target_within_tolerance_beyond_a_slide_limit(name):
    a = getattr(arms, name)()
    if name == "cylindrical":
        q_user, R = [-90, 100, 700], None  # radial slide at its 700 mm maximum
    else:
        q_user = [10, 30, 950, 0, 0, 0]  # boom slide at its 950 mm maximum
    q = ref.to_internal(a, q_user)
    T = ref.fk(a, q)
    along = T[:3, 2] if name == "stanford_like" else np.array([1.0, 0, 0])
    R = None if name == "cylindrical" else T[:3, :3]
    xyz = T[:3, 3] + 1e-6 * along
    assert ref.fits_limits(a, q) and ref.errors(a, q, xyz, R)[0] < 1.01e-6  # the reference: q within limits reaches
    res = ps.solve(a, xyz, R)
    assert 1e-6 < res.tolerance[0]
    assert res.closest is None or not res.closest.reaches or res.reachable
    assert res.reachable
