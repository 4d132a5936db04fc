"""Pure geometry for drawing an arm: no Qt, no OpenGL, testable anywhere.

Lengths are in the arm's own unit; angles in radians unless a function says
otherwise.  Every function takes plain numpy arrays.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from poser.core.chain import Chain
from poser.core.jacobian import joint_axes
from poser.core.transforms import (
    matrix_to_quaternion,
    matrix_to_rpy,
    quaternion_to_matrix,
    rot_axis,
    rotation_vector,
    rpy_to_matrix,
)

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
    "segment_transforms",
    "axis_body_transforms",
    "is_upright",
    "mount_plate",
    "mount_hatch",
    "Plane",
    "mount_planes",
    "PLANE_WORDS",
    "Below",
    "below_mount",
    "below_pieces",
    "coinciding_groups",
    "number_list",
    "place_labels",
    "dash_segments",
    "gizmo_axes",
    "GhostGroup",
    "ghost_groups",
    "strong_group",
    "below_marks",
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
    segment_link : ndarray of int, shape (m,)
        Which part each segment belongs to: 0 the riser under a raised base, ``i`` (1 … n) the link
        that ends at frame ``i`` (it carries joint ``i``'s body), n + 1 the flange and tool.
    """

    segments: np.ndarray
    joint_origins: np.ndarray
    joint_axes: np.ndarray
    kinds: tuple
    frames: np.ndarray
    segment_link: np.ndarray = field(default=None)

    def __post_init__(self):
        if self.segment_link is None:
            self.segment_link = np.zeros(len(self.segments), int)

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


def is_upright(base, tol: float = 1e-6) -> bool:
    """True when the base frame ``base`` (4, 4) stands upright: its z axis is the world's +z."""
    return float(np.asarray(base, float)[2, 2]) >= 1.0 - tol


def arm_drawing(chain: Chain, q) -> ArmDrawing:
    """Segments, joint placements and frames of ``chain`` at joint values ``q`` (n,) internal units.

    An upright base above the floor stands on a riser from the floor; a base mounted any other way
    (on a wall, under a ceiling) has none: it is drawn on its mounting plate (:func:`mount_plate`).
    """
    origins, axes, F = joint_axes(chain, np.asarray(q, float))
    segs, parts = [], []
    prev = F[0, :3, 3]
    if prev[2] > _EPS and is_upright(F[0]):  # a riser from the floor up to a raised upright base
        segs.append((np.array([prev[0], prev[1], 0.0]), prev.copy()))
        parts.append(0)
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
                parts.append(i + 1)
        prev = p
    # the tool: along the last frame's z first (a flange), then to the tool point
    tool = F[-1, :3, 3]
    path = _l_path(prev, tool, F[-2, :3, 2])
    for a, b in zip(path[:-1], path[1:]):
        if np.linalg.norm(b - a) > _EPS:
            segs.append((a, b))
            parts.append(chain.n + 1)
    seg = np.array(segs, float).reshape(-1, 2, 3)
    return ArmDrawing(seg, origins, axes, tuple(chain.kinds), F, np.array(parts, int))


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


def _bases_from_z(z) -> np.ndarray:
    """Right-handed bases (k, 3, 3) whose third columns are the directions of ``z`` (k, 3)."""
    z = np.asarray(z, float).reshape(-1, 3)
    z = z / np.linalg.norm(z, axis=1, keepdims=True)
    x = np.where((np.abs(z[:, 0]) < 0.9)[:, None],
                 np.column_stack([np.zeros(len(z)), -z[:, 2], z[:, 1]]),  # (1, 0, 0) × z
                 np.column_stack([z[:, 2], np.zeros(len(z)), -z[:, 0]]))  # (0, 1, 0) × z
    x /= np.linalg.norm(x, axis=1, keepdims=True)
    y = np.cross(z, x)
    return np.stack([x, y, z], axis=-1)


def segment_transforms(p0, p1, radius: float) -> np.ndarray:
    """:func:`segment_transform` for many segments at once: ``p0``, ``p1`` (k, 3) → (j, 4, 4).

    Segments shorter than 1e-9 are left out (so j <= k).
    """
    p0 = np.asarray(p0, float).reshape(-1, 3)
    d = np.asarray(p1, float).reshape(-1, 3) - p0
    length = np.linalg.norm(d, axis=1)
    keep = length >= _EPS
    p0, d, length = p0[keep], d[keep], length[keep]
    T = np.zeros((len(p0), 4, 4))
    B = _bases_from_z(d) if len(d) else np.zeros((0, 3, 3))
    T[:, :3, :2] = B[:, :, :2] * radius
    T[:, :3, 2] = d
    T[:, :3, 3] = p0
    T[:, 3, 3] = 1.0
    return T


def axis_body_transforms(origins, axes, radius: float, length: float) -> np.ndarray:
    """:func:`axis_body_transform` for many bodies: ``origins``, ``axes`` (k, 3) → (k, 4, 4)."""
    o = np.asarray(origins, float).reshape(-1, 3)
    B = _bases_from_z(axes) if len(o) else np.zeros((0, 3, 3))
    T = np.zeros((len(o), 4, 4))
    T[:, :3, :2] = B[:, :, :2] * radius
    T[:, :3, 2] = B[:, :, 2] * length
    T[:, :3, 3] = o - 0.5 * length * B[:, :, 2]
    T[:, 3, 3] = 1.0
    return T


# -- the mount ----------------------------------------------------------------------------------

MOUNT_PLATE = (0.07, 0.012)
"""Half-width and thickness of the mounting plate, as fractions of the arm's size (``Chain.scale``)."""


def mount_plate(base, scale: float) -> np.ndarray:
    """The 4x4 that maps a unit cylinder (radius 1, z 0 … 1) onto the arm's mounting plate.

    The plate lies on the mounting plane of the base frame ``base`` (4, 4): its top face is the
    plane through the base origin normal to base z, its thickness is behind that plane (in the wall,
    ceiling or floor), and it is centred on the base origin.  Sizes follow ``scale`` (the arm's size).
    """
    base = np.asarray(base, float)
    half, thick = MOUNT_PLATE[0] * scale, MOUNT_PLATE[1] * scale
    T = np.eye(4)
    T[:3, :3] = base[:3, :3] @ np.diag([half, half, thick])
    T[:3, 3] = base[:3, 3] - thick * base[:3, 2]
    return T


def mount_hatch(base, scale: float, lines: int = 7) -> np.ndarray:
    """Line segments (k, 2, 3) marking the surface an arm is mounted on (a square with hatching).

    Drawn for an arm that does not stand on the floor (a wall or ceiling mount): the outline of a
    square of the mounting plane around the plate and diagonal hatch lines inside it, the usual
    mark of a fixed surface.  Empty for an upright base (the floor grid or the riser shows it).
    """
    base = np.asarray(base, float)
    if is_upright(base):
        return np.zeros((0, 2, 3))
    o, x, y = base[:3, 3], base[:3, 0], base[:3, 1]
    h = 2.2 * MOUNT_PLATE[0] * scale
    c = [o + h * (sx * x + sy * y) for sx, sy in ((-1, -1), (1, -1), (1, 1), (-1, 1))]
    segs = [(c[k], c[(k + 1) % 4]) for k in range(4)]
    # hatch lines u - v = t inside the square |u|, |v| <= h
    for t in np.linspace(-2 * h, 2 * h, lines + 2)[1:-1]:
        u0, u1 = max(-h, t - h), min(h, t + h)
        segs.append((o + u0 * x + (u0 - t) * y, o + u1 * x + (u1 - t) * y))
    return np.array(segs, float)


@dataclass(frozen=True)
class Plane:
    """A plane the arm must stay on the near side of.

    ``name`` is ``"floor"`` (world z = 0), ``"base"`` (the mounting plane of an upright base raised
    above the floor: the top of its riser) or ``"mount"`` (the wall or ceiling a base is fixed to);
    ``origin`` (3,) a point on it, ``normal`` (3,) the unit normal pointing to the arm's side.
    """

    name: str
    origin: np.ndarray
    normal: np.ndarray

    def depth(self, points) -> np.ndarray:
        """How far ``points`` (k, 3) lie behind the plane (positive behind, arm length unit)."""
        return -(np.asarray(points, float).reshape(-1, 3) - self.origin) @ self.normal


PLANE_WORDS = {"floor": "below the floor", "base": "below the base plane", "mount": "behind the mounting surface"}
"""Where a point is, for each kind of :class:`Plane` (a view label and the status bar say the same)."""


def mount_planes(chain: Chain) -> list[Plane]:
    """The planes an arm must stay clear of: its mounting plane, and the floor (world z = 0).

    The mounting plane passes through the base origin normal to base z.  For an upright base on the
    floor it is the floor; for an upright base on a riser it is the riser's top (``"base"``) and the
    floor is checked too; a wall or ceiling mount is ``"mount"``, and the floor is checked as well
    unless the base itself is below world z = 0 (then z = 0 is no floor of this arm).
    """
    base = np.asarray(chain.base, float)
    o, z = base[:3, 3].copy(), base[:3, 2].copy()
    up = np.array([0.0, 0.0, 1.0])
    floor = Plane("floor", np.zeros(3), up)
    tol = 1e-9 * chain.scale
    if is_upright(base):
        if abs(o[2]) <= tol:
            return [floor]
        return [floor, Plane("base", o, up)] if o[2] > 0 else [Plane("base", o, up)]
    planes = [Plane("mount", o, z)]
    if o[2] >= -tol:
        planes.append(floor)
    return planes


class Below(tuple):
    """``(what, depth)``: a part of the arm behind a plane, and how far (arm length unit, > 0).

    Also carries ``plane`` (the :class:`Plane` name, see :data:`PLANE_WORDS`) and ``point`` (3,),
    the part's deepest point.  ``what`` is the joint's name for the link that carries its body
    (through ``poser.report.printable``), ``"tool"`` for the flange and tool, ``"base"`` for the base.
    """

    def __new__(cls, what: str, depth: float, plane: str = "floor", point=None):
        self = super().__new__(cls, (str(what), float(depth)))
        self.plane = plane
        self.point = None if point is None else np.asarray(point, float).reshape(3)
        return self

    @property
    def what(self) -> str:
        return self[0]

    @property
    def depth(self) -> float:
        return self[1]

    def __repr__(self):
        return f"Below({self[0]!r}, {self[1]!r}, plane={self.plane!r})"


def _parts(chain: Chain, frames_or_drawing):
    """(name, points (k, 3)) for the base, each link and the tool."""
    from poser.report import printable

    names = ["base"] + [printable(nm) for nm in chain.names] + ["tool"]
    n = chain.n
    if isinstance(frames_or_drawing, ArmDrawing):
        d = frames_or_drawing
        F = d.frames
        pts = [[F[0, :3, 3][None]]] + [[] for _ in range(n + 1)]
        for k in range(1, n + 2):
            sel = d.segment_link == k
            if sel.any():
                pts[k].append(d.segments[sel].reshape(-1, 3))
        for i in range(n):
            pts[i + 1].append(d.joint_origins[i][None])
        pts[n + 1].append(F[-1, :3, 3][None])
    else:
        F = np.asarray(frames_or_drawing, float)
        if F.shape != (n + 2, 4, 4):
            from poser.core.errors import PoserValueError

            raise PoserValueError(f"frames_or_drawing must be an ArmDrawing or frames of shape ({n + 2}, 4, 4), "
                                  f"got shape {F.shape}")
        pts = [[F[k, :3, 3][None]] for k in range(n + 2)]
    return [(names[k], np.concatenate(p)) for k, p in enumerate(pts) if p]


def below_mount(chain: Chain, frames_or_drawing, tol: float | None = None) -> list[Below]:
    """Every part of the arm behind one of its :func:`mount_planes`, base to tool.

    Parameters
    ----------
    chain : Chain
    frames_or_drawing : ArmDrawing or ndarray, shape (n + 2, 4, 4)
        A pose's drawing (its link bars are checked along their whole length, so a link that dips
        under the floor between two joints is found) or its frames (frame origins only).
    tol : float, optional
        Depths up to this are on the plane (default 1e-6 of the arm's size).

    Returns
    -------
    list of Below
        ``(what, depth)`` pairs (depth in the arm's length unit, positive); a part behind the floor is
        reported for the floor, otherwise for the plane it is deepest behind.  Empty when all is clear.
    """
    tol = 1e-6 * chain.scale if tol is None else float(tol)
    planes = sorted(mount_planes(chain), key=lambda p: p.name != "floor")
    out = []
    for name, pts in _parts(chain, frames_or_drawing):
        best = None
        for plane in planes:  # the floor first: below the floor is the one that matters most
            depth = plane.depth(pts)
            k = int(np.argmax(depth))
            if depth[k] > tol:
                best = Below(name, depth[k], plane.name, pts[k])
                break
        if best is not None:
            out.append(best)
    return out


def below_marks(chain: Chain, parts) -> list[tuple[np.ndarray, str, str]]:
    """One mark per plane for :func:`below_mount` ``parts``: ``(deepest point (3,), text, plane name)``.

    The text names the deepest part and its depth in the arm's length unit: ``"tool: 42 mm below the floor"``.
    """
    from poser.report import length

    marks = []
    for plane in PLANE_WORDS:
        these = [b for b in parts if getattr(b, "plane", "floor") == plane]
        if these:
            worst = max(these, key=lambda b: b.depth)
            marks.append((worst.point, f"{worst.what}: {length(chain, worst.depth)} {PLANE_WORDS[plane]}", plane))
    return marks


def below_pieces(chain: Chain, drawing: ArmDrawing, tol: float | None = None) -> list[tuple[str, np.ndarray]]:
    """The pieces of the drawing's link bars behind each plane: ``[(plane name, segments (k, 2, 3))]``.

    Each segment is cut where it crosses the plane; only planes with pieces are listed.
    """
    tol = 1e-6 * chain.scale if tol is None else float(tol)
    segs = drawing.segments[drawing.segment_link > 0]
    out = []
    for plane in mount_planes(chain):
        if not len(segs):
            break
        d0, d1 = plane.depth(segs[:, 0]), plane.depth(segs[:, 1])
        hit = (d0 > tol) | (d1 > tol)
        if not hit.any():
            continue
        a, b, d0, d1 = segs[hit, 0], segs[hit, 1], d0[hit], d1[hit]
        with np.errstate(divide="ignore", invalid="ignore"):
            t = np.where(d0 != d1, d0 / (d0 - d1), 0.0)  # where depth is 0 along a → b
        cross = a + t[:, None] * (b - a)
        start = np.where((d0 > 0)[:, None], a, cross)
        end = np.where((d1 > 0)[:, None], b, cross)
        out.append((plane.name, np.stack([start, end], axis=1)))
    return out


# -- labels ---------------------------------------------------------------------------------------


def coinciding_groups(points, tol: float) -> list[list[int]]:
    """Indices of ``points`` (k, 3) grouped where they lie within ``tol`` of a group's first point."""
    pts = np.asarray(points, float).reshape(-1, 3)
    groups: list[list[int]] = []
    heads: list[np.ndarray] = []
    for i, p in enumerate(pts):
        for g, h in zip(groups, heads):
            if float(np.linalg.norm(p - h)) <= tol:
                g.append(i)
                break
        else:
            groups.append([i])
            heads.append(p)
    return groups


def number_list(numbers) -> str:
    """``[1, 3, 4, 5, 8]`` as ``"1, 3–5, 8"`` (runs of three or more joined by a dash)."""
    nums = sorted(set(int(v) for v in numbers))
    out, k = [], 0
    while k < len(nums):
        j = k
        while j + 1 < len(nums) and nums[j + 1] == nums[j] + 1:
            j += 1
        if j - k >= 2:
            out.append(f"{nums[k]}–{nums[j]}")
        else:
            out.extend(str(v) for v in nums[k:j + 1])
        k = j + 1
    return ", ".join(out)


def place_labels(boxes, width: float, height: float, gap: float = 2.0) -> list[tuple[float, float] | None]:
    """Where to put text labels on a screen so that none overlaps another.

    Parameters
    ----------
    boxes : sequence of (ax, ay, w, h, priority)
        Anchor point (pixels, y down) and label size; a label is wanted just above and to the right of
        its anchor.  Higher ``priority`` places first; equal priorities keep their order.
    width, height : float
        The screen; labels stay inside it.
    gap : float
        Free pixels kept between labels and from the anchor.

    Returns
    -------
    list
        Per box, the top-left corner ``(x, y)`` of its label, or None when no free place was found
        near its anchor (it is left out rather than drawn over another).
    """
    order = sorted(range(len(boxes)), key=lambda k: -boxes[k][4])
    placed: list[tuple[float, float, float, float]] = []
    out: list[tuple[float, float] | None] = [None] * len(boxes)
    for k in order:
        ax, ay, w, h, _ = boxes[k]
        step = h + gap
        spots = [(ax + gap, ay - h - gap), (ax + gap, ay + gap), (ax - w - gap, ay - h - gap), (ax - w - gap, ay + gap)]
        for m in range(1, 4):
            spots += [(ax + gap, ay - h - gap - m * step), (ax + gap, ay + gap + m * step),
                      (ax - w - gap, ay - h - gap - m * step), (ax - w - gap, ay + gap + m * step)]
        for x, y in spots:
            x = min(max(x, gap), max(width - w - gap, gap))
            y = min(max(y, gap), max(height - h - gap, gap))
            if all(x + w + gap <= px or px + pw + gap <= x or y + h + gap <= py or py + ph + gap <= y
                   for px, py, pw, ph in placed):
                placed.append((x, y, w, h))
                out[k] = (x, y)
                break
    return out


def dash_segments(segments, dash: float, gap: float) -> np.ndarray:
    """Segments (m, 2, 3) cut into dashes ``dash`` long with ``gap`` between them: (k, 2, 3).

    The pattern runs on along a polyline of joined segments, so corners do not restart it.
    """
    segs = np.asarray(segments, float).reshape(-1, 2, 3)
    period = dash + gap
    if not len(segs) or not period > 0:
        return np.zeros((0, 2, 3))
    out = []
    phase = 0.0
    for a, b in segs:
        v = b - a
        L = float(np.linalg.norm(v))
        if L < _EPS:
            continue
        u = v / L
        s = -phase
        while s < L:
            s0, s1 = max(s, 0.0), min(s + dash, L)
            if s1 > s0:
                out.append((a + s0 * u, a + s1 * u))
            s += period
        phase = (phase + L) % period
    return np.array(out, float).reshape(-1, 2, 3)


def gizmo_axes(view_rotation) -> list[tuple[int, float, float, float]]:
    """The world axes as the camera sees them, for a small axes gizmo.

    Parameters
    ----------
    view_rotation : array_like, shape (3, 3)
        The rotation from world to eye coordinates (x right, y up, z towards the viewer).

    Returns
    -------
    list of (axis, dx, dy, depth)
        ``axis`` 0, 1, 2 for X, Y, Z; ``dx``, ``dy`` the on-screen direction of the unit axis (y up);
        ``depth`` how far it points towards the viewer.  Sorted far to near (the drawing order).
    """
    R = np.asarray(view_rotation, float).reshape(3, 3)
    rows = [(a, float(R[0, a]), float(R[1, a]), float(R[2, a])) for a in range(3)]
    return sorted(rows, key=lambda r: r[3])


# -- ghosts ---------------------------------------------------------------------------------------


class GhostGroup:
    """Branches drawn as one ghost: they look alike (a joint a full turn apart draws the same) and are
    on the same side of the limits.

    Attributes
    ----------
    q : ndarray, shape (n,)
        The first branch's joint values (internal units).
    frames : ndarray, shape (n + 2, 4, 4)
        Its frames.
    rows : tuple of int
        Branch indices (0-based, the state's order).
    within_limits : bool
    anchor : ndarray, shape (3,)
        Where the ghost's row numbers go.
    drawing : ArmDrawing
        Made when first asked for (a long list draws only some of its ghosts).
    """

    def __init__(self, chain: Chain, q, frames, rows, within_limits: bool, anchor):
        self._chain = chain
        self.q = np.asarray(q, float)
        self.frames = frames
        self.rows = tuple(rows)
        self.within_limits = bool(within_limits)
        self.anchor = np.asarray(anchor, float)
        self._drawing = None

    @property
    def drawing(self) -> ArmDrawing:
        if self._drawing is None:
            self._drawing = arm_drawing(self._chain, self.q)
        return self._drawing

    def __repr__(self):
        return f"GhostGroup(rows={self.rows}, within_limits={self.within_limits})"


def ghost_groups(chain: Chain, branches, tol: float = 1e-6) -> tuple[list[GhostGroup], list[int]]:
    """The ghosts to draw for IK ``branches`` (objects with ``q`` (n,) and ``within_limits``).

    Every branch reaching a target has the same tool point, so row numbers are put where the ghosts
    differ most: at the frame origin (frame 1 … n) whose position varies most from ghost to ghost
    (usually the elbow); with one ghost, the frame farthest from the line from base to tool.
    Frames of all branches are computed in one batch; drawings only when asked for.

    Returns
    -------
    groups : list of GhostGroup
        In the order of their first branch.
    index : list of int
        For each branch, its group.
    """
    branches = list(branches)
    if not branches:
        return [], []
    for r, b in enumerate(branches):
        if np.shape(b.q) != (chain.n,):
            from poser.core.errors import PoserValueError

            raise PoserValueError(f"branch {r}'s q must have shape ({chain.n},) for this arm, got shape "
                                  f"{np.shape(b.q)}")
    Q = np.array([b.q for b in branches], float)
    F = chain.frames(Q).reshape(len(Q), chain.n + 2, 4, 4)
    keys = np.concatenate([F[:, :, :3, 3].reshape(len(Q), -1) / chain.scale, F[:, :, :3, :3].reshape(len(Q), -1)],
                          axis=1)
    inside = np.array([bool(b.within_limits) for b in branches])
    groups: list[GhostGroup] = []
    heads: list[int] = []
    index = []
    for r in range(len(Q)):
        hit = None
        if heads:
            h = np.array(heads)
            same = (inside[h] == inside[r]) & (np.abs(keys[h] - keys[r]).max(axis=1) <= tol)
            if same.any():
                hit = int(np.argmax(same))
        if hit is None:
            heads.append(r)
            groups.append(GhostGroup(chain, Q[r], F[r], (r,), inside[r], F[r, -1, :3, 3]))
            hit = len(groups) - 1
        else:
            groups[hit].rows = groups[hit].rows + (r,)
        index.append(hit)
    if chain.n >= 1:
        P = F[heads][:, 1:-1, :3, 3]  # (groups, n, 3)
        if len(groups) > 1:
            spread = ((P - P.mean(axis=0)) ** 2).sum(axis=(0, 2))
        else:
            a, b = F[heads[0], 0, :3, 3], F[heads[0], -1, :3, 3]
            u = (b - a) / max(float(np.linalg.norm(b - a)), _EPS)
            rel = P[0] - a
            spread = np.linalg.norm(rel - np.outer(rel @ u, u), axis=1)
        k = int(np.argmax(spread))
        for g, p in zip(groups, P):
            g.anchor = p[k].copy()
    return groups, index


def strong_group(index, hovered: int, selected: int) -> int:
    """The ghost group (of :func:`ghost_groups`' ``index``) of the hovered branch, else of the selected one;
    -1 for none."""
    row = hovered if hovered >= 0 else selected
    return index[row] if 0 <= row < len(index) else -1


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
        return rpy_to_matrix(v[:3] * angle_to_rad)
    if mode == "axis-angle":
        axis = v[:3]
        n = np.linalg.norm(axis)
        if n < 1e-12:
            raise ValueError("the rotation axis must not be zero")
        return rot_axis(axis / n, v[3] * angle_to_rad)
    if mode == "quaternion":
        if np.linalg.norm(v[:4]) < 1e-12:
            raise ValueError("the quaternion must not be zero")
        return quaternion_to_matrix(v[:4])
    raise ValueError(f"mode must be one of {', '.join(ORIENTATION_MODES)}, got {mode!r}")


def values_from_rotation(mode: str, R, angle_to_rad: float = 1.0) -> np.ndarray:
    """The values of rotation ``R`` (3, 3) in one notation (inverse of :func:`rotation_from_values`; the
    core's conversions, so the window and the command line print the same angles, gimbal lock included)."""
    R = np.asarray(R, float)
    if mode == "rpy":
        return matrix_to_rpy(R) / angle_to_rad
    if mode == "axis-angle":
        rv = rotation_vector(R)
        ang = float(np.linalg.norm(rv))
        axis = rv / ang if ang > 1e-12 else np.array([0.0, 0.0, 1.0])
        return np.concatenate([axis, [ang / angle_to_rad]])
    if mode == "quaternion":
        return matrix_to_quaternion(R)
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


def interpolate_q(q0, q1, s: float) -> np.ndarray:
    """Joint values a fraction ``s`` (0..1) of the way from ``q0`` to ``q1``, eased in and out."""
    s = min(max(float(s), 0.0), 1.0)
    e = s * s * (3.0 - 2.0 * s)
    q0 = np.asarray(q0, float)
    return q0 + (np.asarray(q1, float) - q0) * e
