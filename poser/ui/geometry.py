"""Pure geometry for drawing an arm: no Qt, no OpenGL, testable anywhere.

Lengths are in the arm's own unit; angles in radians unless a function says
otherwise.  Every function takes plain numpy arrays.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.spatial.transform import Rotation

from poser.core.chain import Chain
from poser.core.jacobian import joint_axes

__all__ = [
    "ArmDrawing",
    "arm_drawing",
    "segment_transform",
    "axis_body_transform",
    "nice_spacing",
    "bounds_of",
    "ToolTrail",
    "ORIENTATION_MODES",
    "rotation_from_values",
    "values_from_rotation",
    "format_matrix",
    "interpolate_q",
    "distinct_drawings",
]

_EPS = 1e-9


@dataclass
class ArmDrawing:
    """What to draw for one arm pose.

    Attributes
    ----------
    segments : ndarray, shape (m, 2, 3)
        Link bodies from point to point (zero-length pieces removed).
    joint_origins : ndarray, shape (n, 3)
        A point on each joint's axis where its body is drawn.
    joint_axes : ndarray, shape (n, 3)
        Unit direction of each joint's axis.
    kinds : tuple of str
        ``"revolute"`` or ``"prismatic"`` per joint.
    frames : ndarray, shape (n + 2, 4, 4)
        Base, frame 1 … frame n, tool.
    """

    segments: np.ndarray
    joint_origins: np.ndarray
    joint_axes: np.ndarray
    kinds: tuple
    frames: np.ndarray

    @property
    def points(self) -> np.ndarray:
        """Every point of the drawing, shape (k, 3) (for fitting the view)."""
        return np.concatenate([self.segments.reshape(-1, 3), self.frames[:, :3, 3]])


def _l_path(a, b, z):
    """Points from ``a`` to ``b`` going first along unit ``z`` then straight (an L, as DH offsets are)."""
    along = float(np.dot(b - a, z))
    corner = a + along * z
    pts = [a]
    if np.linalg.norm(corner - a) > _EPS and np.linalg.norm(b - corner) > _EPS:
        pts.append(corner)
    pts.append(b)
    return pts


def arm_drawing(chain: Chain, q) -> ArmDrawing:
    """Segments, joint placements and frames of ``chain`` at joint values ``q`` (n,) internal units."""
    origins, axes, F = joint_axes(chain, np.asarray(q, float))
    segs = []
    prev = F[0, :3, 3]
    if prev[2] > _EPS:  # a riser from the floor up to a raised base
        segs.append((np.array([prev[0], prev[1], 0.0]), prev.copy()))
    for i in range(chain.n):
        o, z = origins[i], axes[i]
        p = F[i + 1, :3, 3]
        path = [prev]
        if np.linalg.norm(o - prev) > _EPS:
            path.append(o)
        path += _l_path(o, p, z)[1:]
        for a, b in zip(path[:-1], path[1:]):
            if np.linalg.norm(b - a) > _EPS:
                segs.append((a, b))
        prev = p
    # the tool: along the last frame's z first (a flange), then to the tool point
    tool = F[-1, :3, 3]
    for a, b in zip(_l_path(prev, tool, F[-2, :3, 2])[:-1], _l_path(prev, tool, F[-2, :3, 2])[1:]):
        if np.linalg.norm(b - a) > _EPS:
            segs.append((a, b))
    seg = np.array(segs, float).reshape(-1, 2, 3)
    return ArmDrawing(seg, origins, axes, tuple(chain.kinds), F)


def _basis_from_z(z):
    """A right-handed basis (3, 3) whose third column is the direction of ``z`` (plain floats: it runs per body)."""
    zx, zy, zz = (float(v) for v in z)
    n = math.sqrt(zx * zx + zy * zy + zz * zz)
    zx, zy, zz = zx / n, zy / n, zz / n
    if abs(zx) < 0.9:  # x = (1, 0, 0) × z
        xx, xy, xz = 0.0, -zz, zy
    else:  # x = (0, 1, 0) × z
        xx, xy, xz = zz, 0.0, -zx
    m = math.sqrt(xx * xx + xy * xy + xz * xz)
    xx, xy, xz = xx / m, xy / m, xz / m
    yx, yy, yz = zy * xz - zz * xy, zz * xx - zx * xz, zx * xy - zy * xx
    return np.array([[xx, yx, zx], [xy, yy, zy], [xz, yz, zz]])


def segment_transform(p0, p1, radius: float) -> np.ndarray | None:
    """The 4x4 that maps a unit cylinder (radius 1, z from 0 to 1) onto the segment p0 → p1.

    Returns None for a segment shorter than 1e-9.
    """
    p0 = np.asarray(p0, float)
    p1 = np.asarray(p1, float)
    d = p1 - p0
    length = float(np.linalg.norm(d))
    if length < _EPS:
        return None
    T = np.eye(4)
    T[:3, :3] = _basis_from_z(d) @ np.diag([radius, radius, length])
    T[:3, 3] = p0
    return T


def axis_body_transform(origin, axis, radius: float, length: float) -> np.ndarray:
    """The 4x4 that maps a unit cylinder onto a body of ``length`` centred on ``origin`` along ``axis``."""
    axis = np.asarray(axis, float)
    T = np.eye(4)
    T[:3, :3] = _basis_from_z(axis) @ np.diag([radius, radius, length])
    T[:3, 3] = np.asarray(origin, float) - 0.5 * length * axis / np.linalg.norm(axis)
    return T


def nice_spacing(extent: float, lines: int = 10) -> float:
    """A 1-2-5 step near ``extent / lines`` (for the floor grid); ``extent`` > 0."""
    if not extent > 0 or not math.isfinite(extent):
        return 1.0
    raw = extent / lines
    exp = math.floor(math.log10(raw))
    base = raw / 10**exp
    step = 1 if base < 1.5 else 2 if base < 3.5 else 5 if base < 7.5 else 10
    return float(step * 10**exp)


def bounds_of(points) -> tuple[np.ndarray, float]:
    """Centre (3,) and radius of the smallest axis-aligned box around ``points`` (k, 3)."""
    pts = np.asarray(points, float).reshape(-1, 3)
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    centre = 0.5 * (lo + hi)
    radius = 0.5 * float(np.linalg.norm(hi - lo))
    return centre, max(radius, _EPS)


class ToolTrail:
    """A bounded history of tool points (arm units) for drawing a trail."""

    def __init__(self, capacity: int = 600):
        self.capacity = int(capacity)
        self._pts = np.zeros((0, 3))

    def add(self, p) -> bool:
        """Append a point unless it equals the last one; returns True when the trail changed."""
        p = np.asarray(p, float).reshape(1, 3)
        if len(self._pts) and np.allclose(self._pts[-1], p[0], atol=1e-12):
            return False
        self._pts = np.concatenate([self._pts, p])[-self.capacity :]
        return True

    def clear(self) -> None:
        self._pts = np.zeros((0, 3))

    @property
    def points(self) -> np.ndarray:
        return self._pts

    def __len__(self):
        return len(self._pts)


# -- orientation in three notations ----------------------------------------------

ORIENTATION_MODES = {
    "rpy": ("roll", "pitch", "yaw"),
    "axis-angle": ("axis x", "axis y", "axis z", "angle"),
    "quaternion": ("w", "x", "y", "z"),
}
"""The orientation notations the target panel offers, with their field labels."""


def rotation_from_values(mode: str, values, angle_to_rad: float = 1.0) -> np.ndarray:
    """A rotation matrix (3, 3) from values in one notation.

    ``rpy``: roll, pitch, yaw about fixed X, Y, Z (the arm file's convention), in an angle
    unit of ``angle_to_rad`` radians.  ``axis-angle``: a direction (any length but zero) and
    an angle.  ``quaternion``: w, x, y, z (any non-zero length; normalised).

    Raises
    ------
    ValueError
        When the values cannot describe a rotation (zero axis, zero quaternion).
    """
    v = np.asarray(values, float)
    if mode == "rpy":
        return Rotation.from_euler("xyz", v[:3] * angle_to_rad).as_matrix()
    if mode == "axis-angle":
        axis = v[:3]
        n = np.linalg.norm(axis)
        if n < 1e-12:
            raise ValueError("the rotation axis must not be zero")
        return Rotation.from_rotvec(axis / n * v[3] * angle_to_rad).as_matrix()
    if mode == "quaternion":
        if np.linalg.norm(v[:4]) < 1e-12:
            raise ValueError("the quaternion must not be zero")
        w, x, y, z = v[:4]
        return Rotation.from_quat([x, y, z, w]).as_matrix()
    raise ValueError(f"mode must be one of {', '.join(ORIENTATION_MODES)}, got {mode!r}")


def values_from_rotation(mode: str, R, angle_to_rad: float = 1.0) -> np.ndarray:
    """The values of rotation ``R`` (3, 3) in one notation (inverse of :func:`rotation_from_values`)."""
    rot = Rotation.from_matrix(np.asarray(R, float))
    if mode == "rpy":
        return rot.as_euler("xyz") / angle_to_rad
    if mode == "axis-angle":
        rv = rot.as_rotvec()
        ang = float(np.linalg.norm(rv))
        axis = rv / ang if ang > 1e-12 else np.array([0.0, 0.0, 1.0])
        return np.concatenate([axis, [ang / angle_to_rad]])
    if mode == "quaternion":
        x, y, z, w = rot.as_quat()
        q = np.array([w, x, y, z])
        return q if w >= 0 else -q
    raise ValueError(f"mode must be one of {', '.join(ORIENTATION_MODES)}, got {mode!r}")


# -- matrices as text ---------------------------------------------------------------


def _num(v: float, digits: int = 6) -> str:
    v = 0.0 if abs(v) < 10 ** (-digits) / 2 else float(v)
    text = f"{v:.{digits}f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def format_matrix(T, style: str = "text", digits: int = 6) -> str:
    """A matrix as text to copy: ``"text"`` (aligned columns), ``"numpy"`` (an array literal) or ``"csv"``."""
    T = np.asarray(T, float)
    cells = [[_num(x, digits) for x in row] for row in T]
    if style == "text":
        # columns aligned on the decimal point, so digits of the same weight sit under each other
        ints = [[c.split(".")[0] for c in row] for row in cells]
        fracs = [[c.split(".")[1] if "." in c else "" for c in row] for row in cells]
        wi = max(len(x) for row in ints for x in row)
        wf = max(len(x) for row in fracs for x in row)

        def cell(i, f):
            return i.rjust(wi) + (("." + f) if f else (" " if wf else "")).ljust(wf + 1 if wf else 0)

        return "\n".join("  ".join(cell(i, f) for i, f in zip(ri, rf)).rstrip() for ri, rf in zip(ints, fracs))
    if style == "numpy":
        rows = ",\n".join("    [" + ", ".join(row) + "]" for row in cells)
        return "np.array([\n" + rows + ",\n])"
    if style == "csv":
        return "\n".join(",".join(row) for row in cells)
    raise ValueError(f"style must be 'text', 'numpy' or 'csv', got {style!r}")


def distinct_drawings(chain: Chain, qs, tol: float = 1e-6):
    """Drawings of configurations ``qs`` with look-alikes merged (a joint a full turn apart draws the same).

    Returns
    -------
    drawings : list of ArmDrawing
    index : list of int
        For each configuration, the index of its drawing.
    """
    drawings: list[ArmDrawing] = []
    keys: list[np.ndarray] = []
    index = []
    scale = chain.scale
    for q in qs:
        d = arm_drawing(chain, q)
        key = np.concatenate([d.frames[:, :3, 3].reshape(-1) / scale, d.frames[:, :3, :3].reshape(-1)])
        hit = next((k for k, other in enumerate(keys) if np.allclose(other, key, atol=tol)), None)
        if hit is None:
            keys.append(key)
            drawings.append(d)
            hit = len(drawings) - 1
        index.append(hit)
    return drawings, index


def interpolate_q(q0, q1, s: float) -> np.ndarray:
    """Joint values a fraction ``s`` (0..1) of the way from ``q0`` to ``q1``, eased in and out."""
    s = min(max(float(s), 0.0), 1.0)
    e = s * s * (3.0 - 2.0 * s)
    q0 = np.asarray(q0, float)
    return q0 + (np.asarray(q1, float) - q0) * e
