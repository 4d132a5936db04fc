"""The chain as lines in space, and the geometric subproblems the closed forms are built from.

Any chain ``T(q) = head @ M_1(q_1) @ L_1 @ ... @ M_n(q_n) @ tail`` can be
rewritten as a product of exponentials about fixed world lines,

    ``T(q) = E_1(q_1) @ E_2(q_2) @ ... @ E_n(q_n) @ T(0)``,

where ``E_i`` rotates about (revolute) or slides along (prismatic) the line of
joint ``i`` with every joint at zero: through ``o_i`` with direction ``w_i``,
both in world coordinates (``G_i = head @ L_1 @ ... @ L_{i-1}``; ``o_i`` is its
origin, ``w_i`` its z axis).  The base and the tool transforms are then part
of the lines and of ``T(0)``: nothing in the solvers depends on how the arm
was described.

Every function here is vectorised over leading batch dimensions and returns
finite numbers for every finite input (impossible subproblems are answered
with their closest approach and a flag).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

TWO_PI = 2.0 * np.pi


def wrap(a):
    """Angles (...) → (-π, π]."""
    return np.pi - np.mod(np.pi - a, TWO_PI)


@dataclass(frozen=True)
class Lines:
    """The joint lines of a chain at q = 0, in world coordinates.

    Attributes
    ----------
    o : ndarray, shape (n, 3)
        A point on each joint line (arm length unit).
    w : ndarray, shape (n, 3)
        Unit direction of each line.
    revolute : ndarray, shape (n,) of bool
    M : ndarray, shape (4, 4)
        Tool pose at q = 0.
    scale : float
        A characteristic length of the arm (sum of the distances between
        successive joint lines, the tool offset and the prismatic strokes);
        used to make position and orientation errors comparable.
    """

    o: np.ndarray
    w: np.ndarray
    revolute: np.ndarray
    M: np.ndarray
    scale: float

    @property
    def n(self) -> int:
        return len(self.w)

    @property
    def p0(self) -> np.ndarray:
        return self.M[:3, 3]


def chain_lines(chain) -> Lines:
    """Joint lines of ``chain`` at q = 0 (kept with the chain)."""
    return chain.derived("ik_lines", _make_lines)


def _make_lines(chain) -> Lines:
    G = chain._head.copy()
    o, w = [], []
    for i in range(chain.n):
        if i > 0:
            G = G @ chain._links[i - 1]
        o.append(G[:3, 3].copy())
        w.append(G[:3, 2] / np.linalg.norm(G[:3, 2]))
    M = G @ chain._tail
    o = np.array(o)
    w = np.array(w)
    pts = np.vstack([o, M[:3, 3][None]])
    scale = float(np.sum(np.linalg.norm(np.diff(pts, axis=0), axis=1)))
    scale += float(np.sum(np.where(chain.revolute, 0.0, np.abs(chain.upper - chain.lower))))
    scale = max(scale, 1e-9, float(np.max(np.abs(pts))) * 1e-3)
    return Lines(o, w, np.array(chain.revolute), M, scale)


# -- elementary motions --------------------------------------------------------------------------


def cross(a, b):
    """Cross products of (..., 3) arrays (broadcasting), cheaper than ``np.cross`` for small batches."""
    a0, a1, a2 = a[..., 0], a[..., 1], a[..., 2]
    b0, b1, b2 = b[..., 0], b[..., 1], b[..., 2]
    return np.stack([a1 * b2 - a2 * b1, a2 * b0 - a0 * b2, a0 * b1 - a1 * b0], axis=-1)


def _skew(w):
    return np.array([[0.0, -w[2], w[1]], [w[2], 0.0, -w[0]], [-w[1], w[0], 0.0]])


def rot(w, theta):
    """Rotation matrices about unit direction(s) ``w`` (..., 3) by ``theta`` (...) rad → (..., 3, 3).

    Rodrigues' formula ``I + sin θ K + (1 - cos θ) K²`` with ``K`` the cross-product matrix of ``w``.
    """
    w = np.asarray(w, float)
    theta = np.asarray(theta, float)
    s = np.sin(theta)[..., None, None]
    v = (1.0 - np.cos(theta))[..., None, None]
    if w.ndim == 1:
        K = _skew(w)
        return np.eye(3) + s * K + v * (K @ K)
    K = np.zeros(w.shape[:-1] + (3, 3))
    K[..., 0, 1] = -w[..., 2]
    K[..., 0, 2] = w[..., 1]
    K[..., 1, 0] = w[..., 2]
    K[..., 1, 2] = -w[..., 0]
    K[..., 2, 0] = -w[..., 1]
    K[..., 2, 1] = w[..., 0]
    return np.eye(3) + s * K + v * (K @ K)


def mat(v, A):
    """``v @ A`` for points or directions ``v`` (..., 3) and a constant ``A`` (3,) or (3, k).

    Flattened to one 2-D product first: numpy's stacked small-matrix loops
    are several times slower than one BLAS call on (M, 3).
    """
    lead = v.shape[:-1]
    return (v.reshape(-1, 3) @ A).reshape(lead + A.shape[1:])


def _cols(x, shape):
    """``x`` broadcast to ``shape`` (..., 3), as a (3, M) array of columns."""
    return np.broadcast_to(x, shape).reshape(-1, 3).T


def dot(a, b):
    """Dot products over the last axis of (..., 3) arrays (broadcasting)."""
    return np.einsum("...i,...i->...", a, b)


def rotate_point(o, w, theta, x):
    """Rotate point(s) ``x`` (..., 3) about the line through ``o`` along unit ``w`` (3,) by ``theta`` (...)."""
    return o + rotate_vector(w, theta, x - o)


def rotate_vector(w, theta, v):
    """Rotate direction(s) ``v`` (..., 3) about unit ``w`` (3,) by ``theta`` (...).

    Rodrigues: ``v + sin θ (w × v) + (1 - cos θ) w × (w × v)``.
    """
    # Worked on as (3, M) so that every elementwise step runs along the long axis.
    K = _skew(w)
    shape = np.broadcast_shapes(v.shape, np.shape(theta) + (3,))
    vT = np.broadcast_to(v, shape).reshape(-1, 3).T  # (3, M)
    both = np.vstack([K, K @ K]) @ vT  # (6, M): w × v and w × (w × v)
    th = np.broadcast_to(theta, shape[:-1]).reshape(-1)
    both[:3] *= np.sin(th)
    both[3:] *= 1.0 - np.cos(th)
    out = both[:3] + both[3:]
    out += vT
    return out.T.reshape(shape)


def cumulative(lines: Lines, q):
    """Rigid motions ``E_1 ... E_k`` for k = 0..n.

    Parameters
    ----------
    q : ndarray, shape (K, n)

    Returns
    -------
    R : ndarray, shape (K, n + 1, 3, 3)
    t : ndarray, shape (K, n + 1, 3)
        ``x ↦ R[:, k] @ x + t[:, k]`` moves a point attached to link ``k`` at
        q = 0 to where it is at ``q``.
    """
    K = q.shape[0]
    n = lines.n
    Kw, K2w = _axis_matrices(lines)  # (n, 3, 3) each; zero for prismatic joints
    rev = lines.revolute
    s = np.where(rev, np.sin(q), 0.0)[..., None, None]
    c1 = np.where(rev, 1.0 - np.cos(q), 0.0)[..., None, None]
    Rj = np.eye(3) + s * Kw + c1 * K2w  # (K, n, 3, 3): each joint's own rotation
    # its translation: o - Rj o for a revolute joint (a turn about a line through o), q w for a prismatic one
    tj = np.where(rev[:, None], lines.o - np.einsum("knij,nj->kni", Rj, lines.o), q[..., None] * lines.w)
    R = np.empty((K, n + 1, 3, 3))
    t = np.empty((K, n + 1, 3))
    R[:, 0] = np.eye(3)
    t[:, 0] = 0.0
    for i in range(n):
        np.matmul(R[:, i], Rj[:, i], out=R[:, i + 1])
        t[:, i + 1] = np.einsum("kij,kj->ki", R[:, i], tj[:, i]) + t[:, i]
    return R, t


def _axis_matrices(lines: Lines):
    """Cross-product matrices of the joint directions and their squares (zero for prismatic joints)."""
    cached = lines.__dict__.get("_axis_mats")
    if cached is None:
        Kw = np.array([_skew(w) if r else np.zeros((3, 3)) for w, r in zip(lines.w, lines.revolute)])
        cached = (Kw, Kw @ Kw)
        object.__setattr__(lines, "_axis_mats", cached)
    return cached


def pose_and_jacobian(lines: Lines, q, cum=None):
    """Tool pose and geometric Jacobian for a batch of joint values.

    Parameters
    ----------
    q : ndarray, shape (K, n)
    cum : tuple, optional
        ``cumulative(lines, q)`` when already computed.

    Returns
    -------
    p : ndarray, shape (K, 3)
    Rt : ndarray, shape (K, 3, 3)
    J : ndarray, shape (K, 6, n)
        Same convention as :func:`poser.core.jacobian.jacobian`.
    """
    R, t = cumulative(lines, q) if cum is None else cum
    M = lines.M
    p = np.einsum("kij,j->ki", R[:, -1], M[:3, 3]) + t[:, -1]
    Rt = R[:, -1] @ M[:3, :3]
    w = np.einsum("kiab,ib->kia", R[:, :-1], lines.w)  # (K, n, 3)
    o = np.einsum("kiab,ib->kia", R[:, :-1], lines.o) + t[:, :-1]
    rev = lines.revolute[None, :, None]
    lin = np.where(rev, cross(w, p[:, None, :] - o), w)
    ang = np.where(rev, w, 0.0)
    J = np.concatenate([np.swapaxes(lin, 1, 2), np.swapaxes(ang, 1, 2)], axis=1)
    return p, Rt, J


# -- line geometry -------------------------------------------------------------------------------


def parallel(w1, w2, tol=1e-8) -> bool:
    return float(np.linalg.norm(cross(w1, w2))) < tol


def common_perpendicular(o1, w1, o2, w2):
    """Feet of the common perpendicular of two lines: (point on line 1, point on line 2, distance).

    For parallel lines the foot on line 1 is ``o1``.
    """
    d = o2 - o1
    b = float(w1 @ w2)
    den = 1.0 - b * b
    if den < 1e-14:
        f2 = o2 + w2 * float(w2 @ (o1 - o2))
        return o1.copy(), f2, float(np.linalg.norm(f2 - o1))
    s = (float(w1 @ d) - b * float(w2 @ d)) / den
    t = (b * float(w1 @ d) - float(w2 @ d)) / den
    f1 = o1 + s * w1
    f2 = o2 + t * w2
    return f1, f2, float(np.linalg.norm(f2 - f1))


def meeting_point(os, ws, tol):
    """The point where all lines meet, or None.

    Least-squares point closest to every line; accepted when its distance to
    each line is below ``tol``.
    """
    A = np.zeros((3, 3))
    b = np.zeros(3)
    for o, w in zip(os, ws):
        P = np.eye(3) - np.outer(w, w)
        A += P
        b += P @ o
    if np.linalg.cond(A) > 1e10:
        return None
    x = np.linalg.solve(A, b)
    for o, w in zip(os, ws):
        v = x - o
        if np.linalg.norm(v - w * (w @ v)) > tol:
            return None
    return x


# -- subproblems (vectorised) --------------------------------------------------------------------
# Rotations about a fixed line, as in the classical subproblems of screw-theory kinematics.


def sp_rotate_onto(o, w, x, y, free=0.0):
    """Angle that rotates point ``x`` about line (o, w) as close as possible to ``y``.

    Shapes: ``o``, ``w`` (3,); ``x``, ``y`` (..., 3).  Returns (...) radians;
    ``free`` when either point lies on the line (every angle is as good).
    """
    shape = np.broadcast_shapes(np.shape(x), np.shape(y))
    o = np.broadcast_to(np.asarray(o, float), (3,))[:, None]
    uT = _cols(x, shape) - o  # (3, M)
    vT = _cols(y, shape) - o
    # w·(u × v) = -u·(w × v); the parts along w drop out of both
    num = -np.einsum("im,im->m", uT, _skew(w) @ vT)
    den = np.einsum("im,im->m", uT, vT) - (w @ uT) * (w @ vT)
    scale = np.einsum("im,im->m", uT, uT) + np.einsum("im,im->m", vT, vT)
    out = np.where(np.hypot(num, den) <= 1e-20 * scale + 1e-300, free, np.arctan2(num, den))
    return out.reshape(shape[:-1])


def sp_distance(o, w, x, y, delta, free=0.0):
    """Angles that rotate ``x`` about (o, w) to the distance ``delta`` from ``y``.

    ``free`` is returned for both angles when ``x`` or ``y`` lies on the line
    (every angle gives the same distance).

    Returns
    -------
    theta : ndarray, shape (..., 2)
        The two solutions (equal when tangent or clipped).
    exact : ndarray, shape (...) of bool
        False when no rotation reaches ``delta`` exactly; the angles then give
        the closest approach.
    """
    u = x - o
    v = y - o
    uw = mat(u, w)
    vw = mat(v, w)
    d2 = delta**2 - (uw - vw) ** 2
    nu = np.sqrt(np.maximum(dot(u, u) - uw * uw, 0.0))
    nv = np.sqrt(np.maximum(dot(v, v) - vw * vw, 0.0))
    theta0 = np.arctan2(-dot(u, mat(v, _skew(w).T)), dot(u, v) - uw * vw)
    den = 2.0 * nu * nv
    safe = den > 1e-300
    arg = np.where(safe, (nu**2 + nv**2 - d2) / np.where(safe, den, 1.0), 1.0)
    exact = (arg >= -1.0 - 1e-12) & (arg <= 1.0 + 1e-12) & (d2 >= -1e-12 * (1.0 + delta**2))
    phi = np.arccos(np.clip(arg, -1.0, 1.0))
    theta0 = np.where(safe & (den > 1e-20 * (dot(u, u) + dot(v, v))), theta0, free)
    return np.stack([theta0 - phi, theta0 + phi], axis=-1), exact


def sp_plane(o1, w1, u, v, h):
    """Angles ``θ`` with ``(Rot(w1, θ) u) · v = h`` (a cos θ + b sin θ = c).

    Shapes: ``w1``, ``u`` (3,); ``v`` (..., 3); ``h`` scalar.
    Returns angles (..., 2), exact (...) bool, and a flag (...) marking a
    degenerate case (every angle solves it: ``v`` on the line).
    """
    wu = float(w1 @ u)
    wv = mat(v, w1)
    a = mat(v, u) - wu * wv
    b = mat(v, np.cross(w1, u))
    c = h - wu * wv
    r = np.hypot(a, b)
    free = r < 1e-12 * (1.0 + np.abs(h) + np.sqrt(dot(v, v)))
    arg = np.where(free, 0.0, c / np.where(free, 1.0, r))
    exact = (np.abs(arg) <= 1.0 + 1e-12) | (free & (np.abs(c) < 1e-9 * (1.0 + abs(h))))
    base = np.arctan2(b, a)
    phi = np.arccos(np.clip(arg, -1.0, 1.0))
    return np.stack([base + phi, base - phi], axis=-1), exact, free


def sp_two_axes(w1, w2, x, y):
    """Angles (θ1, θ2) with ``Rot(w1, θ1) @ Rot(w2, θ2) @ x = y`` for unit directions.

    Shapes: ``w1``, ``w2`` (3,); ``x``, ``y`` (..., 3) unit vectors.

    Returns
    -------
    theta1, theta2 : ndarray, shape (..., 2)
        Two solutions (equal when the intermediate vector is unique).
    exact : ndarray (...) of bool
    degenerate : ndarray (...) of bool
        True when θ1 is arbitrary (``y`` along ``w1``): θ1 is then 0 and the
        caller may choose it.
    """
    c12 = float(w1 @ w2)
    den = c12 * c12 - 1.0
    w2x = mat(x, w2)
    w1y = mat(y, w1)
    alpha = (c12 * w2x - w1y) / den
    beta = (c12 * w1y - w2x) / den
    cr = np.cross(w1, w2)
    ncr2 = float(cr @ cr)
    g2 = (1.0 - alpha**2 - beta**2 - 2.0 * alpha * beta * c12) / ncr2
    exact = g2 >= -1e-10
    g = np.sqrt(np.clip(g2, 0.0, None))
    z0 = alpha[..., None] * w1 + beta[..., None] * w2
    gc = g[..., None] * cr
    z = np.stack([z0 + gc, z0 - gc], axis=-2)  # (..., 2, 3)
    xb = x[..., None, :]
    yb = y[..., None, :]
    t2 = sp_rotate_onto(0.0, w2, xb, z)
    t1 = sp_rotate_onto(0.0, w1, z, yb)
    z1 = z[..., 0, :]
    zw = mat(z1, w1)
    degenerate = np.sqrt(np.maximum(dot(z1, z1) - zw * zw, 0.0)) < 1e-9
    return t1, t2, exact, degenerate
