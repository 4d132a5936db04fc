"""The arm's anatomy: base axis, shoulder, elbow and wrist points, facing and up directions.

Configuration words (:mod:`poser.core.ik.labels`) and the names of
singularities (:mod:`poser.core.singularity`) are read off the pose through
a few characteristic points of the arm, found once from its joint lines
(:mod:`poser.core.lines`) — never from joint numbers, DH signs or offsets:

* the **base axis**: joint 1's line (fixed in the world);
* the **shoulder point** S: on joint 2's line, where it comes nearest the base axis;
* the **elbow point** E: on the elbow joint's line (joint 3; joint 4 on arms of seven or more axes);
* the **wrist point** W: where the last three axes meet (a spherical wrist), else the tool point
  (arms of up to four axes) or a point on the first wrist axis;
* the **facing** direction: across the base axis and the shoulder axis, turning with joint 1; its sign
  is set once from where the arm reaches in its home pose (the wrist point, else the elbow point,
  else the shoulder offset, each only when clearly off the base axis: more than 1 % of the arm's
  size), so that small offsets of either sign do not decide it;
* **up**: the z axis of the arm's base frame (away from the mounting surface: on a ceiling mount
  "up" points to the floor).

Each point is attached to the link that carries it, as local coordinates in
that link's frame, so its world position for any pose is one product with the
pose's frames (:func:`poser.core.fk.frames`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poser.core.lines import chain_lines, common_perpendicular, meeting_point, parallel
from poser.core.transforms import wrap

__all__ = ["Anatomy", "anatomy", "points_at"]

CLEAR_OFFSET = 0.01
"""A point counts as off the base axis, for choosing the facing sign, beyond this fraction of the arm's size."""


@dataclass(frozen=True)
class Anatomy:
    """Characteristic points and directions of an arm (see the module docstring).

    Points and directions are ``(frame index, local homogeneous 4-vector)``: the world position
    for frames ``F`` is ``F[..., k] @ local`` (w = 1 for points, 0 for directions).

    Attributes
    ----------
    kind : {"spatial", "planar", "other"}
        ``spatial``: a turning base whose shoulder axis is not parallel to it; ``planar``: every
        revolute axis parallel (planar and table arms); ``other``: neither (words fall back to joint signs).
    base_o, base_w : ndarray (3,)
        The base axis (joint 1's line), fixed in the world.
    up : ndarray (3,)
        The base frame's z axis.
    shoulder, elbow, wrist, facing : tuple or None
    elbow_joint : int or None
        Index of the elbow joint.
    elbow_prismatic : bool
        The elbow joint slides (a boom).
    wrist_joints : tuple of int or None
        The last three joints when they all turn (a wrist), spherical or not.
    wrist_spherical : bool
        The wrist's three axes meet in one point (the wrist point).
    wrist_straight : float
        Value (rad, in (-π, π]) of the middle wrist joint at which the wrist axes line up,
        the one nearer the middle of its range.
    axis : ndarray (3,) or None
        Planar arms: the common direction of the joint axes, pointed along ``up`` where it can be.
    """

    kind: str
    base_o: np.ndarray
    base_w: np.ndarray
    up: np.ndarray
    shoulder: tuple | None = None
    elbow: tuple | None = None
    wrist: tuple | None = None
    facing: tuple | None = None
    elbow_joint: int | None = None
    elbow_prismatic: bool = False
    wrist_joints: tuple | None = None
    wrist_spherical: bool = False
    wrist_straight: float = 0.0
    axis: np.ndarray | None = None


def anatomy(chain) -> Anatomy:
    """The :class:`Anatomy` of ``chain`` (kept with the chain)."""
    return chain.derived("anatomy", _make)


def points_at(an: Anatomy, F, which: str):
    """World coordinates (..., 3) of an anatomical point or direction ``which`` for frames F (..., n + 2, 4, 4)."""
    k, x = getattr(an, which)
    T = F[..., k, :3, :]
    return T @ x


def _attach(F0, k, x, h=1.0):
    """``(k, local)`` for world point/direction ``x`` carried by frame index ``k`` of frames F0."""
    v = np.append(np.asarray(x, float), h)
    return (int(k), np.linalg.solve(F0[k], v))


def _perp(v, w):
    return v - w * float(w @ v)


def _make(chain) -> Anatomy:
    from poser.core.fk import frames

    L = chain_lines(chain)
    n, o, w, rev = L.n, L.o, L.w, L.revolute
    F0 = frames(chain, np.zeros(n))
    up = np.array(chain.base[:3, 2], float)
    base = dict(base_o=o[0].copy(), base_w=w[0].copy(), up=up)
    rw = [w[i] for i in range(n) if rev[i]]
    if n >= 2 and rev[0] and rev[1] and all(parallel(rw[0], x) for x in rw):
        a = w[0] if float(w[0] @ up) >= 0 else -w[0]
        if n == 2:
            Wk, Wx = n, L.p0.copy()
        else:
            k = 2 if rev[2] else (3 if n > 3 and rev[3] else 2)
            Wk, Wx = k, o[k] + w[k] * float(w[k] @ (L.p0 - o[k]))
        S = o[0] + a * float(a @ (Wx - o[0]))
        E = o[1] + a * float(a @ (Wx - o[1]))
        return Anatomy(
            "planar",
            **base,
            shoulder=_attach(F0, 0, S),
            elbow=_attach(F0, 1, E),
            wrist=_attach(F0, Wk, Wx),
            elbow_joint=1,
            axis=a.copy(),
        )
    if not (n >= 2 and rev[0] and not parallel(w[0], w[1])):
        return Anatomy("other", **base)
    S = common_perpendicular(o[0], w[0], o[1], w[1])[1]
    e = 3 if n >= 7 else 2
    E = None
    if e < n:
        E = common_perpendicular(o[e - 1], w[e - 1], o[e], w[e])[1] if rev[e] else o[e].copy()
    wrist_joints = None
    if n <= 4:
        Wk, Wx = n, L.p0.copy()
    else:
        c = meeting_point(o[n - 3 :], w[n - 3 :], 1e-9 * L.scale) if rev[n - 3 :].all() else None
        if c is not None:
            Wk, Wx = n - 3, c
            wrist_joints = (n - 3, n - 2, n - 1)
        else:
            Wk = min(e + 1, n - 1)
            Wx = common_perpendicular(o[Wk], w[Wk], o[min(Wk + 1, n - 1)], w[min(Wk + 1, n - 1)])[0]
            if rev[n - 3 :].all():
                wrist_joints = (n - 3, n - 2, n - 1)
    # the shoulder and elbow points in the plane the wrist point moves in (a sideways offset moves it)
    u = w[1]
    S = S + u * float(u @ (Wx - S))
    if E is not None and rev[e] and parallel(w[e], u):
        E = E + u * float(u @ (Wx - E))
    # facing: across the base axis and the shoulder axis, its sign from where the arm reaches at home
    Fh = frames(chain, chain.home)
    f = np.cross(w[0], Fh[1, :3, :3] @ np.linalg.solve(F0[1][:3, :3], u))
    f /= np.linalg.norm(f)
    sign = 1.0
    for pt in (_attach(F0, Wk, Wx), _attach(F0, e, E) if E is not None else None, _attach(F0, 1, S)):
        if pt is None:
            continue
        x = (Fh[pt[0]] @ pt[1])[:3] - o[0]
        if abs(float(x @ f)) > CLEAR_OFFSET * L.scale:
            sign = 1.0 if float(x @ f) > 0 else -1.0
            break
    facing = (1, np.linalg.solve(Fh[1], np.append(sign * f, 0.0)))
    straight = 0.0
    if wrist_joints is not None:
        i4, i5, i6 = wrist_joints
        q = np.array(chain.home, float)
        q[i5] = 0.0
        Fq = frames(chain, q)
        from poser.core.jacobian import _axes_from_frames

        _, ax = _axes_from_frames(chain, Fq)
        a4, a5, a6 = ax[i4], ax[i5], ax[i6]
        # the turn about a5 taking a6 onto a4 (aligned) and that plus a half turn (opposed): both singular
        p4, p6 = _perp(a4, a5), _perp(a6, a5)
        t = float(np.arctan2(a5 @ np.cross(p6, p4), p6 @ p4))
        mid = 0.5 * (chain.lower[i5] + chain.upper[i5])
        straight = min((float(wrap(t)), float(wrap(t + np.pi))), key=lambda v: abs(float(wrap(v - mid))))
    return Anatomy(
        "spatial",
        **base,
        shoulder=_attach(F0, 1, S),
        elbow=_attach(F0, e, E) if E is not None else None,
        wrist=_attach(F0, Wk, Wx),
        facing=facing,
        elbow_joint=e if e < n else None,
        elbow_prismatic=bool(e < n and not rev[e]),
        wrist_joints=wrist_joints,
        wrist_spherical=bool(wrist_joints is not None and Wk == n - 3),
        wrist_straight=straight,
    )
