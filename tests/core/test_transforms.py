"""Rotations, roll-pitch-yaw and rigid transforms (poser.core.transforms).

Reference: ``scipy.spatial.transform.Rotation`` (SciPy), an independent
implementation.  ``from_euler("xyz", ...)`` with lower-case axes is the
extrinsic (fixed-axis) X, then Y, then Z sequence, i.e. Rz(yaw)·Ry(pitch)·Rx(roll)
(SciPy documentation of ``Rotation.from_euler``).  The basic rotation
matrices are those of Spong, Hutchinson & Vidyasagar, *Robot Modeling and
Control*, ch. 2 (from memory).
"""

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from poser.core.errors import PoserValueError
from poser.core.transforms import (
    as_xyz_rpy,
    cos_sin,
    from_rotation_translation,
    from_xyz_rpy,
    invert,
    matrix_to_rpy,
    rot_x,
    rot_y,
    rot_z,
    rotation_error,
    rpy_to_matrix,
    translation,
)


@pytest.mark.parametrize("fn, axis", [(rot_x, "x"), (rot_y, "y"), (rot_z, "z")])
def test_basic_rotations_match_scipy(fn, axis, rng):
    # scipy.spatial.transform.Rotation.from_euler with one axis is the basic rotation.
    angles = rng.uniform(-2 * np.pi, 2 * np.pi, (4, 5))
    R = fn(angles)
    assert R.shape == (4, 5, 3, 3)
    ref = Rotation.from_euler(axis, angles.reshape(-1, 1)).as_matrix().reshape(4, 5, 3, 3)
    np.testing.assert_allclose(R, ref, atol=1e-15)


def test_basic_rotation_by_90_degrees_is_exact():
    # Spong, Hutchinson & Vidyasagar, ch. 2 (from memory): Rz(90°) maps x to y and y to -x.
    np.testing.assert_array_equal(rot_z(np.pi / 2), [[0, -1, 0], [1, 0, 0], [0, 0, 1]])
    np.testing.assert_array_equal(rot_x(-np.pi / 2), [[1, 0, 0], [0, 0, 1], [0, -1, 0]])
    np.testing.assert_array_equal(rot_y(np.pi), [[-1, 0, 0], [0, 1, 0], [0, 0, -1]])
    c, s = cos_sin(np.array([0, np.pi / 2, np.pi, -np.pi / 2, 3 * np.pi / 2]))
    np.testing.assert_array_equal(c, [1, 0, -1, 0, 0])
    np.testing.assert_array_equal(s, [0, 1, 0, -1, -1])
    # values that are merely close to 0 or 1 are left alone
    c, s = cos_sin(1e-7)
    assert c < 1.0 and s == pytest.approx(1e-7)


def test_rpy_to_matrix_matches_scipy_fixed_axes(rng):
    # SciPy: lower-case "xyz" = extrinsic rotations about fixed X, Y, Z = Rz(yaw) Ry(pitch) Rx(roll).
    rpy = rng.uniform(-np.pi, np.pi, (7, 3, 3))
    R = rpy_to_matrix(rpy)
    assert R.shape == (7, 3, 3, 3)
    ref = Rotation.from_euler("xyz", rpy.reshape(-1, 3)).as_matrix().reshape(7, 3, 3, 3)
    np.testing.assert_allclose(R, ref, atol=1e-14)
    # and the composition order written out
    r, p, y = rpy[0, 0]
    np.testing.assert_allclose(R[0, 0], rot_z(y) @ rot_y(p) @ rot_x(r), atol=1e-15)


def test_matrix_to_rpy_matches_scipy_away_from_gimbal_lock(rng):
    R = Rotation.random(500, random_state=np.random.RandomState(3))
    ref = R.as_euler("xyz")  # SciPy: roll, pitch in [-π/2, π/2], yaw
    mine = matrix_to_rpy(R.as_matrix())
    assert mine.shape == (500, 3)
    np.testing.assert_allclose(mine, ref, atol=1e-10)
    assert np.all(np.abs(mine[:, 1]) <= np.pi / 2)


@pytest.mark.parametrize("pitch", [np.pi / 2, -np.pi / 2])
def test_gimbal_lock_returns_an_equivalent_rotation(pitch, rng):
    # At pitch = ±90° roll and yaw are not separable (SciPy warns and sets one angle to 0;
    # Poser puts everything into yaw).  The rotation itself must be reproduced.
    for roll, yaw in rng.uniform(-np.pi, np.pi, (50, 2)):
        R = Rotation.from_euler("xyz", [roll, pitch, yaw]).as_matrix()
        rpy = matrix_to_rpy(R)
        assert rpy[0] == 0.0
        assert rpy[1] == pytest.approx(pitch, abs=1e-12)
        np.testing.assert_allclose(rpy_to_matrix(rpy), R, atol=1e-12)
        np.testing.assert_allclose(Rotation.from_euler("xyz", rpy).as_matrix(), R, atol=1e-12)


def test_rpy_round_trip_near_gimbal_lock(rng):
    # Just short of the lock the split is ill-conditioned but the rotation must survive.
    for eps in (1e-4, 1e-8, 1e-11, 1e-13, 0.0):
        rpy = np.column_stack(
            [rng.uniform(-np.pi, np.pi, 100), np.full(100, np.pi / 2 - eps), rng.uniform(-np.pi, np.pi, 100)]
        )
        R = rpy_to_matrix(rpy)
        np.testing.assert_allclose(rpy_to_matrix(matrix_to_rpy(R)), R, atol=1e-11)


def test_from_xyz_rpy_and_as_xyz_rpy(rng):
    xyz = rng.uniform(-5, 5, (10, 3))
    rpy = np.column_stack([rng.uniform(-3, 3, 10), rng.uniform(-1.5, 1.5, 10), rng.uniform(-3, 3, 10)])
    T = from_xyz_rpy(xyz, rpy)
    assert T.shape == (10, 4, 4)
    np.testing.assert_array_equal(T[:, 3], np.tile([0, 0, 0, 1], (10, 1)))
    np.testing.assert_allclose(T[:, :3, :3], Rotation.from_euler("xyz", rpy).as_matrix(), atol=1e-14)
    np.testing.assert_array_equal(T[:, :3, 3], xyz)
    xyz2, rpy2 = as_xyz_rpy(T)
    np.testing.assert_array_equal(xyz2, xyz)
    np.testing.assert_allclose(rpy2, rpy, atol=1e-12)


def test_translation_and_from_rotation_translation(rng):
    p = rng.normal(size=(2, 3))
    T = translation(p)
    np.testing.assert_array_equal(T[:, :3, :3], np.broadcast_to(np.eye(3), (2, 3, 3)))
    np.testing.assert_array_equal(T[:, :3, 3], p)
    R = Rotation.random(2, random_state=np.random.RandomState(1)).as_matrix()
    T = from_rotation_translation(R, p[0])  # broadcasting one translation over two rotations
    assert T.shape == (2, 4, 4)
    np.testing.assert_array_equal(T[:, :3, 3], np.tile(p[0], (2, 1)))


def test_invert_is_the_inverse(rng):
    T = from_xyz_rpy(rng.normal(size=(6, 3)), rng.uniform(-3, 3, (6, 3)))
    Ti = invert(T)
    np.testing.assert_allclose(T @ Ti, np.broadcast_to(np.eye(4), T.shape), atol=1e-14)
    np.testing.assert_allclose(Ti, np.linalg.inv(T), atol=1e-13)


def test_rotation_error_matches_scipy_magnitude(rng):
    Ra = Rotation.random(200, random_state=np.random.RandomState(5))
    Rb = Rotation.random(200, random_state=np.random.RandomState(6))
    ref = (Rb.inv() * Ra).magnitude()  # SciPy: angle of the relative rotation
    np.testing.assert_allclose(rotation_error(Ra.as_matrix(), Rb.as_matrix()), ref, atol=1e-10)
    # robust at 0 and at π
    I = np.eye(3)
    assert rotation_error(I, I) == 0.0
    assert rotation_error(rot_z(np.pi), I) == pytest.approx(np.pi, abs=1e-15)
    assert rotation_error(rot_x(1e-9), I) == pytest.approx(1e-9, rel=1e-6)


@pytest.mark.parametrize(
    "call, match",
    [
        (lambda: rpy_to_matrix([1.0, 2.0]), r"rpy must have shape \(\.\.\., 3\), got shape \(2,\)"),
        (lambda: rpy_to_matrix(0.5), r"rpy must have shape \(\.\.\., 3\), got shape \(\)"),
        (lambda: from_xyz_rpy(np.zeros(4), np.zeros(3)), r"xyz must have shape \(\.\.\., 3\), got shape \(4,\)"),
        (lambda: as_xyz_rpy(np.eye(3)), r"T must have shape \(\.\.\., 4, 4\), got shape \(3, 3\)"),
        (lambda: invert(np.zeros((2, 4, 3))), r"T must have shape \(\.\.\., 4, 4\), got shape \(2, 4, 3\)"),
        (lambda: matrix_to_rpy(np.eye(4)), r"R must have shape \(\.\.\., 3, 3\), got shape \(4, 4\)"),
        (lambda: from_rotation_translation(np.eye(4), np.zeros(3)), r"R must have shape \(\.\.\., 3, 3\)"),
        (lambda: translation(np.zeros((5, 2))), r"p must have shape \(\.\.\., 3\), got shape \(5, 2\)"),
    ],
)
def test_wrong_shapes_name_the_argument(call, match):
    with pytest.raises(PoserValueError, match=match):
        call()


def test_quaternions_agree_with_scipy_both_ways():
    """Against scipy.spatial.transform.Rotation (a general-purpose library; scalar-last there, w first here)."""
    from scipy.spatial.transform import Rotation

    from poser.core.transforms import matrix_to_quaternion, quaternion_to_matrix

    rots = Rotation.random(500, random_state=3)
    extra = Rotation.from_rotvec([[np.pi, 0, 0], [0, np.pi, 0], [0, 0, np.pi], [0, 0, 0],
                                  [np.pi / np.sqrt(2)] * 2 + [0]])
    for r in (rots, extra):
        R = r.as_matrix()
        xyzw = r.as_quat()
        wxyz = np.concatenate([xyzw[:, 3:], xyzw[:, :3]], axis=1)
        wxyz *= np.where(wxyz[:, :1] < 0, -1.0, 1.0)
        np.testing.assert_allclose(quaternion_to_matrix(wxyz), R, atol=1e-14)
        got = matrix_to_quaternion(R)
        assert np.all(got[:, 0] >= 0)
        # q and -q are one rotation (w = 0 leaves the sign open): compare the rotations and |q·q'| = 1
        np.testing.assert_allclose(np.abs(np.sum(got * wxyz, axis=1)), 1.0, atol=1e-12)
        np.testing.assert_allclose(quaternion_to_matrix(got), R, atol=1e-14)
    with pytest.raises(PoserValueError, match="quat must not be zero"):
        quaternion_to_matrix([0, 0, 0, 0])
    with pytest.raises(PoserValueError, match=r"quat must have shape \(\.\.\., 4\), got shape \(3,\)"):
        quaternion_to_matrix([1, 0, 0])
