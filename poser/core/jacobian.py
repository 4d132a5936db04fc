"""Geometric Jacobian, the task space an arm controls, manipulability, condition number, limit margins.

The one home of these quantities: the inverse-kinematics solvers, the
command line and the window all call the functions here.

Joint values are in internal units (rad; the arm's length unit).  The
Jacobian maps joint rates to the tool point's linear velocity (rows 0–2,
world axes, length unit per rad or per length unit) and the tool's angular
velocity (rows 3–5, rad per rad; zero for prismatic joints).

Manipulability (Yoshikawa 1985) is the product of the singular values of the
Jacobian restricted to the arm's **task space** — the directions of motion
the arm can control (:func:`task_space`): the full pose for arms that control
all six, the position for a three-axis positioning arm, the in-plane
position (and turn) for a planar arm, position and turn about the common
axis for a table arm.  It is zero exactly at a singularity of that task
space and carries a unit, length^k (:attr:`TaskSpace.unit_power`); where
rows and columns of different kinds make no single power exist, it is
computed with every length divided by the arm's size (:attr:`Chain.scale`)
and has no unit.  The condition number is always dimensionless (lengths
divided by the arm's size).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poser.core.chain import Chain
from poser.core.errors import PoserValueError
from poser.core.fk import frames

__all__ = [
    "jacobian",
    "jacobian_from_frames",
    "joint_axes",
    "TaskSpace",
    "task_space",
    "manipulability",
    "condition_number",
    "task_metrics",
    "singular_values",
    "limit_margins",
]


def _pre(chain: Chain):
    """Stacked ``pre`` transforms (n, 4, 4), or None when every one is the identity (standard DH)."""

    def make(c):
        pre = np.stack([j.pre for j in c.joints])
        return None if np.array_equal(pre, np.broadcast_to(np.eye(4), pre.shape)) else pre

    return chain.derived("jac_pre", make)


def _axes_from_frames(chain: Chain, F):
    """Origins and directions (..., n, 3) of the joint axes from the frames (..., n + 2, 4, 4)."""
    pre = _pre(chain)
    M = F[..., : chain.n, :, :] if pre is None else F[..., : chain.n, :, :] @ pre
    return M[..., :3, 3], M[..., :3, 2]


def joint_axes(chain: Chain, q):
    """World position and direction of every joint's motion axis.

    Parameters
    ----------
    q : array_like, shape (..., n)

    Returns
    -------
    origins : ndarray, shape (..., n, 3)
        A point on each axis (the origin of the frame the joint moves in).
    axes : ndarray, shape (..., n, 3)
        Unit direction of each axis.
    F : ndarray, shape (..., n + 2, 4, 4)
        The frames, as from :func:`poser.core.fk.frames`.
    """
    F = frames(chain, q)
    o, w = _axes_from_frames(chain, F)
    return o, w, F


def jacobian_from_frames(chain: Chain, F):
    """The geometric Jacobian (..., 6, n) at the tool point from frames (..., n + 2, 4, 4) of :func:`frames`."""
    o, w = _axes_from_frames(chain, F)
    p = F[..., chain.n + 1, None, :3, 3]  # (..., 1, 3)
    d = p - o
    w0, w1, w2 = w[..., 0], w[..., 1], w[..., 2]
    d0, d1, d2 = d[..., 0], d[..., 1], d[..., 2]
    J = np.empty(F.shape[:-3] + (6, chain.n))
    J[..., 0, :] = w1 * d2 - w2 * d1
    J[..., 1, :] = w2 * d0 - w0 * d2
    J[..., 2, :] = w0 * d1 - w1 * d0
    J[..., 3, :] = w0
    J[..., 4, :] = w1
    J[..., 5, :] = w2
    pris = chain.derived("jac_prismatic", lambda c: np.flatnonzero(~c.revolute))
    if pris.size:
        J[..., 0:3, pris] = np.swapaxes(w[..., pris, :], -1, -2)
        J[..., 3:6, pris] = 0.0
    return J


def jacobian(chain: Chain, q):
    """Geometric Jacobian at the tool point, in world axes.

    Parameters
    ----------
    chain : Chain
    q : array_like, shape (..., n)

    Returns
    -------
    ndarray, shape (..., 6, n)
        Rows 0–2: linear velocity of the tool point (length unit per rad, or
        per length unit for prismatic joints); rows 3–5: angular velocity
        (rad per rad; zero for prismatic joints).
    """
    return jacobian_from_frames(chain, frames(chain, q))


# -- task space ----------------------------------------------------------------------------------


@dataclass(frozen=True)
class TaskSpace:
    """The directions of tool motion an arm controls, as rows of the world-axis Jacobian.

    Attributes
    ----------
    name : str
        Plain words, e.g. ``"full pose"``, ``"position"``, ``"in-plane position and turn"``.
    rows : ndarray, shape (m, 6)
        Orthonormal rows selecting the task directions from the 6 Jacobian rows (constant in world axes).
    linear : int
        How many of the rows are linear (they come first).
    rank : int
        The rank of ``rows @ J`` at a generic pose (the task's dimension the arm controls).
    unit_power : int or None
        Manipulability is in (length unit)^unit_power; None when it is made dimensionless
        (every length divided by the arm's size) because no single power exists.
    """

    name: str
    rows: np.ndarray
    linear: int
    rank: int
    unit_power: int | None

    def unit(self, length_unit: str) -> str:
        """The manipulability's unit as text, e.g. ``"mm³"``, ``"m²"``, ``"no unit"``."""
        if self.unit_power is None:
            return "no unit (lengths ÷ arm size)"
        if self.unit_power == 0:
            return "no unit"
        if self.unit_power == 1:
            return length_unit
        sup = str(self.unit_power).translate(str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹"))
        return f"{length_unit}{sup}"


def _perp_basis(a):
    x = np.array([1.0, 0.0, 0.0]) if abs(a[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    u = x - a * float(a @ x)
    u /= np.linalg.norm(u)
    return u, np.cross(a, u)


def _make_task_space(chain: Chain) -> TaskSpace:
    n = chain.n
    rng = np.random.default_rng(11)
    span = np.where(chain.revolute, np.minimum(chain.upper - chain.lower, 2 * np.pi), chain.upper - chain.lower)
    Q = chain.lower + rng.random((5, n)) * span
    Js = np.array(jacobian(chain, Q))  # dimensionless: lengths ÷ the arm's size
    Js[..., :3, :] /= chain.scale
    Js[..., :, ~chain.revolute] *= chain.scale

    def generic_rank(rows):
        A = rows @ Js  # (5, m, n)
        s = np.linalg.svd(A, compute_uv=False)
        return int(max(np.sum(sk > 1e-8 * max(sk[0], 1e-300)) for sk in s))

    full = np.eye(6)
    r_full = generic_rank(full)
    rows, linear, name = full, 3, "full pose"
    if r_full < 6:
        o, w, _ = joint_axes(chain, chain.home)
        rev = chain.revolute
        rev_w = w[rev]
        a = rev_w[0] if len(rev_w) else None
        planar = a is not None and all(np.linalg.norm(np.cross(a, x)) < 1e-9 for x in rev_w)
        pris_w = w[~rev]
        along = [abs(float(a @ x)) > 1 - 1e-9 for x in pris_w] if planar else []
        across = [abs(float(a @ x)) < 1e-9 for x in pris_w] if planar else []
        chosen = None
        if planar and all(p or c for p, c in zip(along, across)):
            u, v = _perp_basis(a)
            lin = [u, v] + ([a] if any(along) else [])
            R = np.zeros((len(lin) + 1, 6))
            for k, x in enumerate(lin):
                R[k, :3] = x
            R[len(lin), 3:] = a
            cand = [(R, len(lin))]
            cand.append((R[: len(lin)], len(lin)))  # without the turn (e.g. a planar 2R)
            for Rk, lk in cand:
                if generic_rank(Rk) == r_full and len(Rk) == r_full:
                    chosen = (Rk, lk)
                    break
            if chosen is not None:
                Rk, lk = chosen
                has_turn = len(Rk) > lk
                if lk == 3:
                    name = "position and turn about the joint axes" if has_turn else "position"
                else:
                    name = "in-plane position and turn" if has_turn else "in-plane position"
        if chosen is None:
            pos = np.zeros((3, 6))
            pos[:, :3] = np.eye(3)
            if generic_rank(pos) == r_full:
                chosen = (pos, 3)
                name = "position"
            else:
                chosen = (full, 3)
                name = f"full pose ({r_full} of 6 directions controlled)"
        rows, linear = chosen
    m = len(rows)
    r = generic_rank(rows)
    n_pris = int((~chain.revolute).sum())
    ang = m - linear
    if r == m == n:
        power = linear - n_pris
    elif r == m < n and n_pris in (0, n):  # full row rank: det(D_r) times columns of one kind
        power = linear - (r if n_pris == n else 0)
    elif r == n < m and (ang == 0 or linear == 0):  # full column rank: rows of one kind
        power = (n if ang == 0 else 0) - n_pris
    else:
        power = None
    rows = np.array(rows, float)
    rows.setflags(write=False)
    return TaskSpace(name, rows, int(linear), int(r), power)


def task_space(chain: Chain) -> TaskSpace:
    """The :class:`TaskSpace` of ``chain`` (found once from the Jacobian's generic rank; kept with the chain)."""
    return chain.derived("task_space", _make_task_space)


def _task_jacobian(chain: Chain, q, J):
    if J is None:
        if q is None:
            raise PoserValueError("give q (joint values) or J (a Jacobian), got neither")
        J = jacobian(chain, q)
    J = np.asarray(J, dtype=float)
    if J.ndim < 2 or J.shape[-2:] != (6, chain.n):
        raise PoserValueError(f"J must have shape (..., 6, {chain.n}), got shape {J.shape}")
    ts = task_space(chain)
    return J if ts.rows.shape[0] == 6 else ts.rows @ J


def singular_values(chain: Chain, q=None, *, J=None, scaled: bool = True):
    """Singular values (..., rank) of the task-space Jacobian, largest first.

    ``scaled`` divides every length by the arm's size first (dimensionless
    values, what :func:`condition_number` and the singularity verdicts use).
    """
    A = _task_jacobian(chain, q, J)
    if scaled:
        A = _scale_task(chain, A)
    s = np.linalg.svd(A, compute_uv=False)
    return s[..., : task_space(chain).rank]


def task_metrics(chain: Chain, q=None, *, J=None):
    """Manipulability and condition number together, from one singular value decomposition.

    Returns ``(manipulability, condition)``, each shaped (...) — the numbers :func:`manipulability`
    and :func:`condition_number` give.
    """
    A = _scale_task(chain, _task_jacobian(chain, q, J))
    return _manipulability_of(chain, A), _condition_of(chain, A)


def _manipulability_of(chain: Chain, A):
    """Manipulability from the dimensionless task-space Jacobian ``A`` (..., m, n)."""
    ts = task_space(chain)
    m_rows, n = A.shape[-2:]
    if m_rows == n == ts.rank:  # square: |det A| (the product of its singular values), exact zeros kept
        m = np.abs(np.linalg.det(A))
        bound = np.prod(np.sqrt(np.sum(A * A, axis=-2)), axis=-1)  # Hadamard: |det A| ≤ Π ‖column‖
        singular = ~(m > SINGULAR_RTOL * bound)
    else:
        s = np.linalg.svd(A, compute_uv=False)[..., : ts.rank]
        m = np.prod(s, axis=-1)
        singular = _is_singular(s)
    if ts.unit_power:
        # dimensionless → the arm's units: every homogeneous power scales with the arm's size (see TaskSpace)
        m = m * chain.scale**ts.unit_power
    m = np.where(singular, 0.0, m)  # exactly singular to rounding is exactly 0
    return float(m) if np.ndim(m) == 0 else m


def _condition_of(chain: Chain, A):
    s = np.linalg.svd(A, compute_uv=False)[..., : task_space(chain).rank]
    smax, smin = s[..., 0], s[..., -1]
    with np.errstate(divide="ignore", invalid="ignore"):
        k = np.where(_is_singular(s), np.inf, smax / np.where(smin > 0, smin, 1.0))
    return float(k) if np.ndim(k) == 0 else k


def manipulability(chain: Chain, q=None, *, J=None):
    """Yoshikawa's manipulability over the arm's task space (Yoshikawa 1985).

    The product of the singular values of the task-space Jacobian ``A = rows @ J``: ``|det A|``
    when it is square, else ``sqrt(det(A Aᵀ))`` (at least as many joints as task rows) or
    ``sqrt(det(Aᵀ A))``.  Exactly 0 at a singularity (to rounding).  Unit:
    ``task_space(chain).unit(length)``.

    Parameters
    ----------
    chain : Chain
    q : array_like, shape (..., n), optional
        Joint values (internal units); or give ``J``.
    J : array_like, shape (..., 6, n), optional
        A Jacobian from :func:`jacobian`.

    Returns
    -------
    ndarray or float, shape (...)
    """
    return _manipulability_of(chain, _scale_task(chain, _task_jacobian(chain, q, J)))


def _is_singular(s):
    """True where dimensionless singular values (..., r) (largest first) are singular to rounding."""
    return ~(s[..., -1] > SINGULAR_RTOL * np.maximum(s[..., 0], 1e-300))


SINGULAR_RTOL = 1e-12
"""Smallest over largest dimensionless singular value below which a pose is singular to rounding."""


def _scale_task(chain: Chain, A):
    """``A`` (..., m, n) made dimensionless: linear rows ÷ the arm's size, prismatic columns × it (a copy)."""

    def make(c):
        ts = task_space(c)
        D = np.ones((len(ts.rows), c.n))
        D[: ts.linear, :] /= c.scale
        D[:, ~c.revolute] *= c.scale
        D.setflags(write=False)
        return D

    return A * chain.derived("task_scale", make)


def condition_number(chain: Chain, q=None, *, J=None):
    """Largest over smallest singular value of the dimensionless task-space Jacobian, (...) ≥ 1.

    Lengths are divided by the arm's size, so the figure has no unit and does
    not depend on the arm's length unit; infinite at a singularity.
    """
    return _condition_of(chain, _scale_task(chain, _task_jacobian(chain, q, J)))


def limit_margins(chain: Chain, q):
    """Each joint's distance to its nearer limit.

    Parameters
    ----------
    q : array_like, shape (..., n)
        Internal units.

    Returns
    -------
    margin : ndarray, shape (..., n)
        ``min(q - lower, upper - q)`` in internal units; negative beyond a limit.
    fraction : ndarray, shape (..., n)
        The margin as a fraction of the joint's range (0 at a limit, 0.5 mid-range).
    """
    q = chain.check_q(q)
    margin = np.minimum(q - chain.lower, chain.upper - q)
    return margin, margin / (chain.upper - chain.lower)
