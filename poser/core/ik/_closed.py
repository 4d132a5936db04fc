"""Closed-form inverse kinematics, chosen from the chain's geometry.

:func:`recognise` looks only at the joint lines at q = 0 (see
:mod:`poser.core.ik._geometry`): which are parallel, which meet, which are
perpendicular.  It recognises

* ``planar2`` / ``planar3``: two or three revolute joints with parallel axes;
* a positioning stage of three joints: ``elbow`` (revolute 1, then two
  revolute joints with parallel axes not parallel to the first — the
  anthropomorphic arm, with or without shoulder and lateral offsets),
  ``rrp_spherical`` (revolute, revolute, prismatic across the second axis)
  and ``rrp_cylindrical`` (two parallel revolute joints and a prismatic
  joint along them);
* ``table4``: two parallel revolute joints, a prismatic joint along them and
  a last revolute joint parallel to them (the four-axis table arm);
* ``pieper6``: a positioning stage followed by three revolute joints whose
  lines meet in one point (the wrist centre).

The solvers are vectorised over targets: positions ``(N, 3)`` and world
rotations of the tool ``(N, 3, 3)``; they return candidate joint values
``(N, B, n)`` (finite always) and a flag ``(N, B)`` that is False where a
subproblem had no exact solution and the closest approach was taken.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poser.core.ik._geometry import (
    Lines,
    chain_lines,
    common_perpendicular,
    meeting_point,
    parallel,
    rot,
    rotate_point,
    rotate_vector,
    sp_distance,
    sp_plane,
    sp_rotate_onto,
    sp_two_axes,
)


@dataclass(frozen=True)
class Structure:
    """A recognised structure.

    Attributes
    ----------
    kind : str
        ``planar2``, ``planar3``, ``elbow``, ``rrp_spherical``, ``rrp_cylindrical``, ``table4`` or ``pieper6``.
    name : str
        Plain words for the solver line, e.g. "six-axis arm with intersecting wrist axes".
    stage : str or None
        The positioning stage kind (first three joints) where there is one.
    centre : ndarray (3,) or None
        Wrist centre at q = 0 (``pieper6``) or the point on the last axis
        that the positioning stage places (``planar3``, ``table4``).
    axis : ndarray (3,) or None
        The common direction of a planar or table arm.
    branches : int
        Number of configurations for a generic target.
    """

    kind: str
    name: str
    stage: str | None
    centre: np.ndarray | None
    axis: np.ndarray | None
    branches: int


def _perp_unit(w):
    a = np.array([1.0, 0.0, 0.0]) if abs(w[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    v = a - w * (w @ a)
    return v / np.linalg.norm(v)


def _stage_kind(L: Lines, tol_a: float):
    w, rev = L.w, L.revolute
    if len(w) < 3:
        return None
    if rev[0] and rev[1] and not parallel(w[0], w[1], tol_a):
        if rev[2] and parallel(w[1], w[2], tol_a):
            return "elbow"
        if not rev[2] and abs(float(w[1] @ w[2])) < tol_a:
            return "rrp_spherical"
    if rev[0] and rev[1] and parallel(w[0], w[1], tol_a) and not rev[2] and parallel(w[0], w[2], tol_a):
        return "rrp_cylindrical"
    return None


def _stage_name(L: Lines, kind: str, tol_l: float, c0) -> str:
    if kind == "elbow":
        # an offset: axis 2 passes beside axis 1, or the arm's plane of motion lies beside axis 1
        f1, _, d = common_perpendicular(L.o[0], L.w[0], L.o[1], L.w[1])
        lateral = abs(float(L.w[1] @ (c0 - f1)))
        return "elbow arm with shoulder offset" if max(d, lateral) > tol_l else "elbow arm"
    if kind == "rrp_spherical":
        return "two-revolute-one-prismatic arm, spherical type"
    return "two-revolute-one-prismatic arm, cylindrical type"


def recognise(chain) -> Structure | None:
    """The closed-form structure of ``chain``, or None (cached on the chain)."""
    return chain.derived("ik_structure", _recognise)


def _recognise(chain) -> Structure | None:
    L = chain_lines(chain)
    n, w, o, rev = L.n, L.w, L.o, L.revolute
    tol_a = 1e-9
    tol_l = 1e-9 * L.scale
    all_par = all(parallel(w[0], w[i], tol_a) for i in range(n))
    if n in (2, 3) and rev.all() and all_par:
        if n == 2:
            return Structure("planar2", "planar 2R", None, None, w[0].copy(), 2)
        c = o[2] + w[2] * float(w[2] @ (L.p0 - o[2]))
        return Structure("planar3", "planar 3R", None, c, w[0].copy(), 2)
    if n == 3:
        k = _stage_kind(L, tol_a)
        if k is not None:
            name = "three-axis " + _stage_name(L, k, tol_l, L.p0)
            return Structure(k, name, k, None, None, 2 if k == "rrp_cylindrical" else 4)
        return None
    if n == 4 and all_par and rev[0] and rev[1] and not rev[2] and rev[3]:
        c = o[3] + w[3] * float(w[3] @ (L.p0 - o[3]))
        return Structure("table4", "four-axis table arm", "rrp_cylindrical", c, w[0].copy(), 2)
    if n == 6 and rev[3] and rev[4] and rev[5]:
        k = _stage_kind(L, tol_a)
        if k is None or parallel(w[3], w[4], tol_a) or parallel(w[4], w[5], tol_a):
            return None
        c = meeting_point(o[3:6], w[3:6], max(tol_l, 1e-9))
        if c is None:
            return None
        stage = _stage_name(L, k, tol_l, c)
        _, _, d34 = common_perpendicular(o[2], w[2], o[3], w[3])
        if k == "elbow" and d34 > tol_l:
            stage = stage.replace("with shoulder offset", "with shoulder and forearm offsets")
            if "offsets" not in stage:
                stage += " with forearm offset"
        return Structure(
            "pieper6",
            f"six-axis arm with intersecting wrist axes ({stage})",
            k,
            c,
            None,
            2 * {"rrp_cylindrical": 2}.get(k, 4),
        )
    return None


# -- positioning stages --------------------------------------------------------------------------


def _stage(L: Lines, kind: str, c0, P, ref):
    """Joints 1–3 placing the point ``c0`` (at q = 0) at ``P`` (N, 3) → q (N, B, 3), exact (N, B)."""
    o, w = L.o, L.w
    N = P.shape[0]
    if kind == "rrp_cylindrical":
        s = float(w[0] @ w[2])
        t = (P @ w[0] - float(w[0] @ c0)) / s  # (N,)
        x0 = c0 + t[:, None] * w[2]
        q12, ex = _planar2(L, 0, 1, x0, P, ref)
        q = np.concatenate([q12, np.broadcast_to(t[:, None, None], (N, 2, 1))], axis=-1)
        return q, ex
    u = w[1]
    h = float(u @ (c0 - o[0]))
    q1, exA, free = sp_plane(o[0], w[0], u, P - o[0], h)  # (N, 2)
    q1 = np.where(free[:, None], ref[0], q1)
    Pp = rotate_point(o[0], w[0], -q1, P[:, None, :])  # (N, 2, 3)
    # the point's distance from axis 2, measured across it
    rel = Pp - o[1]
    rho = np.linalg.norm(rel - u * np.sum(rel * u, axis=-1)[..., None], axis=-1)  # (N, 2)
    if kind == "elbow":
        y = o[1] + u * float(u @ (c0 - o[1]))
        q3, exB = sp_distance(o[2], w[2], c0, y, rho, ref[2])  # (N, 2, 2)
        x3 = rotate_point(o[2], w[2], q3, c0)  # (N, 2, 2, 3)
        q2 = sp_rotate_onto(o[1], u, x3, Pp[:, :, None, :], ref[1])
        q = np.stack([np.broadcast_to(q1[:, :, None], q3.shape), q2, q3], axis=-1)
        ex = exA[:, None, None] & exB[..., None]
        return q.reshape(N, 4, 3), np.broadcast_to(ex, (N, 2, 2)).reshape(N, 4)
    # rrp_spherical: slide along v (across u), then turn about axis 2
    v = w[2]
    d0 = c0 - o[1]
    d0 = d0 - u * float(u @ d0)
    b = float(d0 @ v)
    disc = b * b - float(d0 @ d0) + rho**2  # (N, 2)
    exB = disc >= -1e-12 * (1.0 + rho**2)
    r = np.sqrt(np.clip(disc, 0.0, None))
    t = np.stack([-b + r, -b - r], axis=-1)  # (N, 2, 2)
    x = c0 + t[..., None] * v
    q2 = sp_rotate_onto(o[1], u, x, Pp[:, :, None, :], ref[1])
    q = np.stack([np.broadcast_to(q1[:, :, None], t.shape), q2, t], axis=-1)
    ex = exA[:, None, None] & exB[..., None]
    return q.reshape(N, 4, 3), np.broadcast_to(ex, (N, 2, 2)).reshape(N, 4)


def _planar2(L: Lines, i, j, x0, P, ref):
    """Two parallel revolute joints i, j placing ``x0`` (N, 3) at ``P`` (N, 3) → (N, 2, 2), exact (N, 2)."""
    o, w = L.o, L.w
    rel = P - o[i]
    rho = np.linalg.norm(rel - w[i] * (rel @ w[i])[:, None], axis=-1)
    y = o[i] + w[i] * ((x0 - o[i]) @ w[i])[:, None]
    qj, ex = sp_distance(o[j], w[j], x0, y, rho, ref[j])  # (N, 2), (N,)
    xj = rotate_point(o[j], w[j], qj, x0[:, None, :])  # (N, 2, 3)
    qi = sp_rotate_onto(o[i], w[i], xj, P[:, None, :], ref[i])
    return np.stack([qi, qj], axis=-1), np.broadcast_to(ex[:, None], (P.shape[0], 2))


def _turn_about(w, Rd):
    """Angle φ (N,) of the rotation about ``w`` closest to ``Rd`` (N, 3, 3)."""
    x = _perp_unit(w)
    return sp_rotate_onto(0.0, w, x, Rd @ x)


def tool_angle(L: Lines, axis, R):
    """Planar and table arms: the tool's turn about the common axis, (N,) rad, for world rotations R (N, 3, 3)."""
    return _turn_about(axis, R @ L.M[:3, :3].T)


def solve_closed(chain, st: Structure, P, R, ref, phi=None):
    """Candidate joint values for targets.

    Parameters
    ----------
    P : ndarray (N, 3)
        Tool positions.
    R : ndarray (N, 3, 3) or None
        Tool rotations; None for a position-only solve of a structure whose
        position does not need them (planar2, three-axis stages).
    ref : ndarray (n,)
        Values for joints that the target leaves free (the current pose).
    phi : ndarray (N,), optional
        Planar 3R / table arm: the tool angle to use instead of one taken from ``R``.

    Returns
    -------
    q : ndarray (N, B, n)
    exact : ndarray (N, B) of bool
    """
    L = chain_lines(chain)
    w = L.w
    N = P.shape[0]
    k = st.kind
    if k == "planar2":
        return _planar2(L, 0, 1, np.broadcast_to(L.p0, (N, 3)), P, ref)
    if k in ("elbow", "rrp_spherical", "rrp_cylindrical"):
        return _stage(L, k, L.p0, P, ref)
    if k in ("planar3", "table4"):
        a = st.axis
        if phi is None:
            phi = tool_angle(L, a, R)
        Rphi = rot(a, phi)
        Pc = np.einsum("nij,j->ni", Rphi, st.centre - L.p0) + P
        if k == "planar3":
            q12, ex = _planar2(L, 0, 1, np.broadcast_to(st.centre, (N, 3)), Pc, ref)
            s = [float(a @ w[i]) for i in range(3)]
            q3 = (phi[:, None] - s[0] * q12[..., 0] - s[1] * q12[..., 1]) / s[2]
            return np.concatenate([q12, q3[..., None]], axis=-1), ex
        q123, ex = _stage(L, "rrp_cylindrical", st.centre, Pc, ref)
        s = [float(a @ w[i]) for i in range(4)]
        q4 = (phi[:, None] - s[0] * q123[..., 0] - s[1] * q123[..., 1]) / s[3]
        return np.concatenate([q123, q4[..., None]], axis=-1), ex
    # pieper6: the wrist centre fixes joints 1-3; the rotation left over fixes the wrist.
    MR = L.M[:3, :3]
    Rd_c = np.einsum("nij,j->ni", R, MR.T @ (st.centre - L.p0))  # Rd @ (c - p0), Rd = R @ MR.T
    q123, exP = _stage(L, st.stage, st.centre, Rd_c + P, ref)  # (N, B, 3)
    B = q123.shape[1]
    x = _perp_unit(w[5])
    # Rd w6 and Rd x, taken back through joints 1-3 (vectors only: (R1 R2 R3)^T v)
    V = np.stack([R @ (MR.T @ w[5]), R @ (MR.T @ x)], axis=1)  # (N, 2, 3)
    V = np.broadcast_to(V[:, None], (N, B, 2, 3))
    V = _unrotate(L, q123, V, (0, 1, 2))
    y = V[:, :, 0]
    t4, t5, exW, degen = sp_two_axes(w[3], w[4], np.broadcast_to(w[5], y.shape), y)  # (N, B, 2)
    t4 = np.where(degen[..., None], ref[3], t4)
    z = np.broadcast_to(V[:, :, 1:2], (N, B, 2, 3))
    z = rotate_vector(w[3], -t4, z)
    z = rotate_vector(w[4], -t5, z)
    t6 = sp_rotate_onto(0.0, w[5], x, z)
    q = np.empty((N, B, 2, 6))
    q[..., :3] = q123[:, :, None, :]
    q[..., 3] = t4
    q[..., 4] = t5
    q[..., 5] = t6
    ex = np.broadcast_to((exP & exW)[:, :, None], (N, B, 2))
    return q.reshape(N, 2 * B, 6), ex.reshape(N, 2 * B)


def _unrotate(L: Lines, q, V, joints):
    """Apply ``(R_a R_b ...)^T`` for the revolute joints listed to vectors ``V`` (..., k, 3); q (..., n)."""
    i = 0
    joints = [j for j in joints if L.revolute[j]]
    while i < len(joints):
        j = joints[i]
        angle = q[..., j]
        # successive parallel axes combine into one rotation
        while i + 1 < len(joints) and parallel(L.w[j], L.w[joints[i + 1]], 1e-12):
            i += 1
            angle = angle + float(L.w[j] @ L.w[joints[i]]) * q[..., joints[i]]
        V = rotate_vector(L.w[j], -angle[..., None], V)
        i += 1
    return V


__all__ = ["Structure", "recognise", "solve_closed", "tool_angle"]
