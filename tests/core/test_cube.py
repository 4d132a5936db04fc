"""The performance-test cube: ISO 9283 positions on a known cube (the layout from memory: P1 at the centre,
P2 … P5 on a diagonal plane 10 % of the diagonal from its corners), the largest cube in regions with a known
answer or bounds, and in an arm's workspace.

Closed forms (elementary geometry): the cube inscribed in a ball of radius R has edge 2R/√3 (its space
diagonal is the ball's diameter).  In a spherical shell R_in ≤ |p| ≤ R_out the cube with one face touching the
inner sphere at its centre, [−s/2, s/2]² × [R_in, R_in + s], fits when (R_in + s)² + s²/2 ≤ R_out²: a lower
bound of the largest; 2R_out/√3 is an upper bound.  The arms are inventions for these checks.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from poser.core import cube as cb
from poser.core.dh import DHRow, chain_from_dh
from poser.core.errors import Cancelled, PoserValueError
from poser.core.transforms import rot_z

pi = math.pi


def test_iso9283_positions_on_a_known_cube():
    P, C = cb.iso9283_positions((0, 0, 0), 100.0)
    # plane "y+": the edges parallel to y at (x, z) = (-50, -50) and (50, 50)
    assert np.allclose(C, [[-50, -50, -50], [-50, 50, -50], [50, 50, 50], [50, -50, 50]])
    assert np.allclose(P[0], 0.0)
    assert np.allclose(P[1:], [[-40, -40, -40], [-40, 40, -40], [40, 40, 40], [40, -40, 40]])
    diag = 100.0 * math.sqrt(3.0)
    assert np.allclose(np.linalg.norm(P[1:] - C, axis=1), 0.1 * diag)  # 10 % of the diagonal from the corners
    assert np.allclose(P[:, 0], P[:, 2])  # all five on the plane x = z
    # P2 … P5 on the plane's diagonals: Pk, P1 and Ck on one line
    for p, c in zip(P[1:], C):
        assert np.linalg.norm(np.cross(p - P[0], c - P[0])) < 1e-9


def test_positions_follow_the_cube_and_every_plane():
    A = rot_z(0.3)
    centre = np.array([800.0, -200.0, 450.0])
    P, C = cb.iso9283_positions(centre, 240.0, A, "x-")
    Pl, Cl = cb.iso9283_positions((0, 0, 0), 240.0, None, "x-")
    assert np.allclose(P, centre + Pl @ A.T) and np.allclose(C, centre + Cl @ A.T)
    corners = cb.cube_corners((0, 0, 0), 240.0)
    for name in cb.PLANES:
        P, C = cb.iso9283_positions((0, 0, 0), 240.0, None, name)
        assert all(np.min(np.linalg.norm(corners - c, axis=1)) < 1e-9 for c in C)  # corners of the cube
        n = np.cross(C[1] - C[0], C[3] - C[0])
        assert np.allclose((P - P[0]) @ n, 0.0)  # a plane through the centre
        assert np.linalg.norm(C[2] - C[0]) == pytest.approx(240.0 * math.sqrt(3))  # its diagonal is the cube's


def test_positions_check_their_arguments():
    with pytest.raises(PoserValueError, match="plane must be one of y\\+, y-, x\\+, x-, z\\+, z-, got 'w'"):
        cb.iso9283_positions((0, 0, 0), 1.0, plane="w")
    with pytest.raises(PoserValueError, match="edge must be a positive length, got -1.0"):
        cb.iso9283_positions((0, 0, 0), -1.0)


def _ball_points(rng, R, count=20000):
    P = rng.normal(size=(count, 3))
    P /= np.linalg.norm(P, axis=1)[:, None]
    return P * (rng.uniform(0, 1, (count, 1)) ** (1 / 3)) * R


def test_the_cube_in_a_ball_is_the_inscribed_cube(rng):
    R = 650.0
    c, a = cb.largest_cube(lambda p: np.linalg.norm(p, axis=1) <= R, _ball_points(rng, R), 2 * R, 1.0)
    assert a == pytest.approx(2 * R / math.sqrt(3), rel=2e-3)
    assert a <= 2 * R / math.sqrt(3) + 1e-9
    assert np.linalg.norm(c) < 2.0


def test_the_cube_in_a_spherical_shell_lies_between_its_bounds(rng):
    R, r = 650.0, 150.0
    P = _ball_points(rng, R)
    P = P[np.linalg.norm(P, axis=1) >= r]

    def inside(p):
        d = np.linalg.norm(p, axis=1)
        return (d <= R) & (d >= r)

    c, a = cb.largest_cube(inside, P, 2 * R, 1.0)
    lower = (-2 * r + math.sqrt(4 * r * r - 6 * (r * r - R * R))) / 3  # (r + s)² + s²/2 = R²
    assert lower - 2.0 <= a <= 2 * R / math.sqrt(3)
    corners = cb.cube_corners(c, a)
    assert np.linalg.norm(corners, axis=1).max() <= R + 1e-9
    nearest = np.clip(np.zeros(3), c - a / 2, c + a / 2)  # the cube's point nearest the centre
    assert np.linalg.norm(nearest) >= r - 1e-9


def elbow_arm():
    # shoulder on the base axis, links 400 and 250 turning fully: a spherical shell 150 … 650 about the shoulder
    return chain_from_dh([DHRow("j1", "revolute", alpha=pi / 2, lower=-pi, upper=pi),
                          DHRow("j2", "revolute", a=400.0, lower=-pi, upper=pi),
                          DHRow("j3", "revolute", a=250.0, lower=-pi, upper=pi)])


def test_the_cube_of_an_arm_sweeping_a_shell():
    arm = elbow_arm()
    k = cb.cube(arm, samples=200_000)
    R, r = 650.0, 150.0
    lower = (-2 * r + math.sqrt(4 * r * r - 6 * (r * r - R * R))) / 3
    h = k.accuracy
    assert 0 < h < 0.05 * R
    assert lower - 3 * h <= k.edge <= 2 * R / math.sqrt(3) + h
    assert np.linalg.norm(k.corners, axis=1).max() <= R + h
    nearest = np.clip(np.zeros(3), k.centre - k.edge / 2, k.centre + k.edge / 2)
    assert np.linalg.norm(nearest) >= r - h
    assert k.positions.shape == (5, 3) and len(k.study.verdicts) == 5
    assert [v.target.name for v in k.study.verdicts] == ["P1", "P2", "P3", "P4", "P5"]
    # a position-only arm reaches every position inside its workspace (the cube lies in it)
    assert k.R is None and k.reached == 5


def test_the_cube_follows_the_base_axes():
    from poser.core.transforms import from_xyz_rpy

    arm = elbow_arm()
    moved = arm.with_base(from_xyz_rpy(np.array([1000.0, 500.0, 0.0]), np.array([0.0, 0.0, 0.5])))
    k = cb.cube(moved, samples=100_000)
    assert np.allclose(k.axes, rot_z(0.5))
    local = (k.corners - [1000.0, 500.0, 0.0]) @ rot_z(0.5)
    assert np.linalg.norm(local, axis=1).max() <= 650.0 + k.accuracy


def test_planar_arms_have_no_cube_and_cancel_stops():
    planar = chain_from_dh([DHRow("j1", "revolute", a=400.0, lower=-pi, upper=pi),
                            DHRow("j2", "revolute", a=250.0, lower=-pi, upper=pi)])
    with pytest.raises(PoserValueError, match="chain must be a spatial arm for a test cube, got a planar arm"):
        cb.cube(planar, samples=5000)
    with pytest.raises(Cancelled):
        cb.cube(elbow_arm(), samples=20_000, progress=lambda f: f < 0.6)
    with pytest.raises(PoserValueError, match="R must be None for an arm that controls only its tool position"):
        cb.cube(elbow_arm(), R=np.eye(3), samples=5000)


def test_a_six_axis_arm_checks_the_orientation_chosen():
    from poser.armfile import load
    from poser.core.fk import fk
    from tests.conftest import DEMO_DIR

    chain = load(DEMO_DIR / "heron6.toml").to_chain()
    with pytest.raises(PoserValueError, match="R must be a 3 x 3 rotation matrix, got shape \\(2, 2\\)"):
        cb.cube(chain, R=np.eye(2), samples=5000)
    k = cb.cube(chain, samples=100_000)
    assert np.allclose(k.R, fk(chain, chain.home)[:3, :3])  # the default: the tool as at home
    assert all(v.target.R is not None and np.allclose(v.target.R, k.R) for v in k.study.verdicts)
    assert k.edge > 0 and np.allclose(k.positions[0], k.centre)
