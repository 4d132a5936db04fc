"""The serial chain: one geometric model for every arm description.

Each joint ``i`` (base first) contributes

    ``pre_i @ M_i(q_i) @ post_i``

where ``pre_i`` and ``post_i`` are fixed rigid transforms and ``M_i`` is a
rotation about the local z axis by ``q_i`` radians (revolute) or a
translation along it by ``q_i`` length units (prismatic).  The world pose of
frame ``i`` is

    ``F_i = base @ pre_1 @ M_1 @ post_1 @ ... @ pre_i @ M_i @ post_i``

and the tool pose is ``F_n @ tool``.  A standard (distal) DH row maps to
``pre = I``, ``post = Rz(θ) Tz(d) Tx(a) Rx(α)``; a modified (proximal) row to
``pre = Rx(α_{i-1}) Tx(a_{i-1})``, ``post = Rz(θ) Tz(d)``; a URDF joint to
``pre = origin @ (axis → z)``, ``post = (z → axis)``.  Frame ``i`` is then
exactly the DH frame ``i`` of either convention.

Units: lengths are in the arm's own length unit, angles in radians.  Joint
limits and home values are stored in those internal units too.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.units import Units

__all__ = ["Joint", "Chain", "REVOLUTE", "PRISMATIC"]

REVOLUTE = "revolute"
PRISMATIC = "prismatic"
JOINT_KINDS = (REVOLUTE, PRISMATIC)


def _check_transform(name, T):
    T = np.array(T, dtype=float)
    if T.shape != (4, 4):
        raise PoserValueError(f"{name} must be a 4x4 transform, got shape {T.shape}")
    if not np.all(np.isfinite(T)):
        raise PoserValueError(f"{name} must be finite, got {T.tolist()}")
    R = T[:3, :3]
    if not np.allclose(R.T @ R, np.eye(3), atol=1e-9) or np.linalg.det(R) < 0:
        raise PoserValueError(f"{name} must have a proper rotation in its upper-left 3x3 block")
    if not np.array_equal(T[3], [0.0, 0.0, 0.0, 1.0]):
        raise PoserValueError(f"{name} must have last row [0, 0, 0, 1], got {T[3].tolist()}")
    T.setflags(write=False)
    return T


@dataclass(frozen=True)
class Joint:
    """One joint of a serial chain.

    Attributes
    ----------
    name : str
    kind : {"revolute", "prismatic"}
    pre, post : ndarray, shape (4, 4)
        Fixed transforms before and after the joint's motion along/about z.
    lower, upper : float
        Limits in internal units (rad or length unit), ``lower < upper``.
    home : float
        Home value in internal units.
    """

    name: str
    kind: str
    pre: np.ndarray = field(default_factory=lambda: np.eye(4))
    post: np.ndarray = field(default_factory=lambda: np.eye(4))
    lower: float = -np.pi
    upper: float = np.pi
    home: float = 0.0

    def __post_init__(self):
        if self.kind not in JOINT_KINDS:
            raise PoserValueError(f"joint {self.name!r}: kind must be 'revolute' or 'prismatic', got {self.kind!r}")
        object.__setattr__(self, "pre", _check_transform(f"joint {self.name!r} pre", self.pre))
        object.__setattr__(self, "post", _check_transform(f"joint {self.name!r} post", self.post))
        for attr in ("lower", "upper", "home"):
            v = float(getattr(self, attr))
            if not np.isfinite(v):
                raise PoserValueError(f"joint {self.name!r}: {attr} must be finite, got {v}")
            object.__setattr__(self, attr, v)
        if not self.lower < self.upper:
            raise PoserValueError(
                f"joint {self.name!r}: lower limit must be below upper, got {self.lower} >= {self.upper}"
            )

    @property
    def is_revolute(self) -> bool:
        return self.kind == REVOLUTE

    def __eq__(self, other):
        if not isinstance(other, Joint):
            return NotImplemented
        return (
            self.name == other.name
            and self.kind == other.kind
            and np.array_equal(self.pre, other.pre)
            and np.array_equal(self.post, other.post)
            and (self.lower, self.upper, self.home) == (other.lower, other.upper, other.home)
        )

    __hash__ = None


def _physical_size(base, head, links, tail) -> float:
    """See :attr:`Chain.scale`: the base origin → each joint line's nearest point → the tool point path."""
    G = head
    p = np.array(base[:3, 3], float)
    total = 0.0
    for i in range(len(links) + 1):
        if i > 0:
            G = G @ links[i - 1]
        o, w = G[:3, 3], G[:3, 2] / np.linalg.norm(G[:3, 2])
        nearest = o + w * float((p - o) @ w)
        total += float(np.linalg.norm(nearest - p))
        p = nearest
    tool = (G @ tail)[:3, 3]
    return total + float(np.linalg.norm(tool - p))


class Chain:
    """A serial chain of revolute and prismatic joints with base and tool transforms.

    Parameters
    ----------
    joints : sequence of Joint
        Base first; at least one.
    base : array_like, shape (4, 4), optional
        World → base coordinate system.  Identity by default.
    tool : array_like, shape (4, 4), optional
        Last link frame (mechanical interface) → tool coordinate system.
    name : str
    units : Units
        The units the arm's values are shown and typed in.
    """

    def __init__(self, joints: Sequence[Joint], base=None, tool=None, name: str = "arm", units: Units | None = None):
        joints = tuple(joints)
        if not joints:
            raise PoserValueError("joints must hold at least one joint, got none")
        for j in joints:
            if not isinstance(j, Joint):
                raise PoserValueError(f"joints must be Joint objects, got {type(j).__name__}")
        self.joints = joints
        self.base = _check_transform("base", np.eye(4) if base is None else base)
        self.tool = _check_transform("tool", np.eye(4) if tool is None else tool)
        self.name = str(name)
        self.units = units or Units()
        n = len(joints)
        self.n = n
        self.kinds = tuple(j.kind for j in joints)
        self._names = tuple(j.name for j in joints)
        self.revolute = np.array([j.is_revolute for j in joints])
        self.revolute.setflags(write=False)
        self.lower = np.array([j.lower for j in joints])
        self.upper = np.array([j.upper for j in joints])
        self.home = np.array([j.home for j in joints])
        for a in (self.lower, self.upper, self.home):
            a.setflags(write=False)
        # Merged constants for tool-pose-only kinematics:
        # T = head @ M_1 @ link_1 @ M_2 @ ... @ link_{n-1} @ M_n @ tail
        self._head = self.base @ joints[0].pre
        self._links = tuple(joints[i].post @ joints[i + 1].pre for i in range(n - 1))
        self._tail = joints[-1].post @ self.tool
        self._derived: dict = {}
        size = _physical_size(self.base, self._head, self._links, self._tail)
        size += sum(max(abs(j.lower), abs(j.upper)) for j in joints if not j.is_revolute)
        self.scale = size if size > 1e-12 else 1.0
        """The arm's size (its length unit): the length of the path from the base origin through
        each joint's line in turn (to its point nearest the path so far) to the tool point, with every
        joint at zero, plus each prismatic joint's largest extent.  It depends only on where the
        joint lines and the tool are, never on how the arm is described (DH convention, frame
        placement): the same physical arm has the same size.  The one characteristic length of Poser:
        it makes lengths and angles comparable (tolerances, condition numbers, dimensionless errors)
        and sizes what the window draws.  Never zero."""

    def derived(self, key: str, make):
        """A value computed once from this chain by ``make(chain)`` and kept with it.

        A chain is not changed after it is made (its arrays are read-only), so
        generated kernels, solver plans and other data derived from it live as
        long as the chain.  ``key`` names the value (e.g. ``"fk_kernel"``).
        """
        try:
            return self._derived[key]
        except KeyError:
            value = self._derived[key] = make(self)
            return value

    # -- convenience -------------------------------------------------------
    @property
    def names(self) -> tuple[str, ...]:
        """The joints' names, base first."""
        return self._names

    def check_q(self, q, name: str = "q") -> np.ndarray:
        """Validate joint values ``q`` shaped (..., n); return them as a float array."""
        arr = np.asarray(q, dtype=float)
        if arr.ndim == 0 or arr.shape[-1] != self.n:
            raise PoserValueError(f"{name} must have shape (..., {self.n}), got shape {arr.shape}")
        return arr

    def q_from_user(self, q_user):
        """Joint values in the arm's units (deg or rad; length) → internal units (rad; length)."""
        q = self.check_q(q_user, "q_user").copy()
        q[..., self.revolute] *= self.units.angle_to_rad
        return q

    def q_to_user(self, q):
        """Joint values in internal units → the arm's units."""
        q = self.check_q(q).copy()
        q[..., self.revolute] /= self.units.angle_to_rad
        return q

    def joint_to_user(self, i: int, value):
        """One value of joint ``i`` in internal units → the arm's units."""
        return value / self.units.angle_to_rad if self.revolute[i] else value

    def with_tool(self, tool) -> Chain:
        return Chain(self.joints, self.base, tool, self.name, self.units)

    def with_base(self, base) -> Chain:
        return Chain(self.joints, base, self.tool, self.name, self.units)

    def __eq__(self, other):
        if not isinstance(other, Chain):
            return NotImplemented
        return (
            self.joints == other.joints
            and np.array_equal(self.base, other.base)
            and np.array_equal(self.tool, other.tool)
            and self.name == other.name
            and self.units == other.units
        )

    __hash__ = None

    def __repr__(self):
        kinds = "".join("R" if r else "P" for r in self.revolute)
        return f"<Chain {self.name!r} {kinds} units={self.units.length},{self.units.angle}>"

    # -- kinematics (see poser.core.fk / poser.core.jacobian) -----------------
    def fk(self, q, out=None):
        """Tool pose(s) in world coordinates; see :func:`poser.core.fk.fk`."""
        from poser.core.fk import fk

        return fk(self, q, out=out)

    def frames(self, q):
        """Every frame's world pose; see :func:`poser.core.fk.frames`."""
        from poser.core.fk import frames

        return frames(self, q)

    def jacobian(self, q):
        """Geometric Jacobian at the tool point; see :func:`poser.core.jacobian.jacobian`."""
        from poser.core.jacobian import jacobian

        return jacobian(self, q)
