"""The closed-form stages, each described once for both backends.

A **positioning stage** is two or three joints that place one point of the
arm (the tool point, a spherical wrist's centre, or a point on the last
axis of a planar arm) at a target position.  A **structure** composes a
stage with what fixes the rest: the tool's turn (planar and table arms), a
spherical wrist (six-axis arms whose last three axes meet).  Which structure
an arm has is read from its joint lines alone (:mod:`.recognise`).

Every function takes the backend ``xp`` (:mod:`.ops`), a :class:`Model` (the
joint lines as tuples), and the target as tuples; it returns a list of
candidates ``(q, exact, free)`` — ``q`` a list of the model's joint values,
``exact`` whether every subproblem was solved exactly, ``free`` a list of
flags: the joints whose value the target leaves free (a family of
solutions; their value is then the one in ``ref``).  Candidates come in a
fixed order (the branch slots), the same for every target and backend.
"""

from __future__ import annotations

from dataclasses import dataclass

from poser.core.ik.closed.subproblems import (
    add,
    cross,
    dot,
    mul,
    norm,
    perp,
    rot,
    rot_cs,
    rot_point,
    rotate_onto,
    rotate_to_distance,
    rotate_to_plane,
    slide_to_distance,
    sub,
    two_axes,
)

__all__ = ["Model", "Structure", "STAGE_BRANCHES", "solve"]

ZERO = (0.0, 0.0, 0.0)
FALSE = False


@dataclass
class Model:
    """Joint lines at q = 0 as tuples (floats for one chain; arrays when they vary per sample).

    Attributes
    ----------
    o, w : list of 3-tuples
        A point on each joint line and its unit direction (world).
    rev : list of bool
    p0 : 3-tuple
        Tool point at q = 0.
    MR : tuple of three 3-tuples
        Tool rotation at q = 0, by rows.
    across : 3-tuple
        A unit direction across the last joint's axis (the reference the last wrist angle is read from).
    eps_len : float
        Lengths within this are zero (1e-9 of the arm's size).
    eps_dir : float
        Unit vectors within this of a line lie on it.
    """

    o: list
    w: list
    rev: list
    p0: tuple
    MR: tuple
    across: tuple
    eps_len: float
    eps_dir: float = 1e-7


@dataclass(frozen=True)
class Structure:
    """A recognised closed-form structure.

    Attributes
    ----------
    kind : {"position", "planar3", "table4", "pieper6"}
        ``position``: the stage alone places the tool point (two- and three-joint arms);
        ``planar3`` / ``table4``: a stage places a point on the turn joint's axis and the
        tool's turn about the common axis fixes that joint; ``pieper6``: a stage places the
        wrist centre and a spherical wrist the tool's orientation.
    stage : str
        ``planar2``, ``lift``, ``elbow``, ``rrp``, ``rpp``, ``ppp``, ``ball``, ``rrr23``, ``rp`` or ``pp``.
    joints : tuple of int
        The stage's joints (model indices).
    point : tuple
        The point (at q = 0) the stage places.
    name : str
        Plain words for the solver line.
    wrist : tuple of int, optional
        The spherical wrist's joints.
    turn : int, optional
        Planar and table arms: the joint the tool's turn fixes.
    axis : tuple, optional
        Planar and table arms: the common axis direction.
    extra : tuple
        Constants of the stage (a meeting point; the order of a cylindrical stage's slides).
    branches : int
        Candidates per target.
    """

    kind: str
    stage: str
    joints: tuple
    point: tuple
    name: str
    wrist: tuple | None = None
    turn: int | None = None
    axis: tuple | None = None
    extra: tuple = ()
    branches: int = 0


STAGE_BRANCHES = {"planar2": 2, "lift": 2, "elbow": 4, "rrp": 4, "rpp": 2, "ppp": 1, "ball": 4, "rrr23": 4,
                  "rp": 2, "pp": 1}


# -- positioning stages ---------------------------------------------------------------------------


def _planar2(xp, m, i, j, x0, P, ref):
    """Two parallel revolute joints i, j placing ``x0`` at ``P`` (both at the same height)."""
    oi, w = m.o[i], m.w[i]
    oj, wj = m.o[j], m.w[j]
    rho = norm(xp, perp(sub(P, oi), w))
    y = add(oi, mul(w, dot(w, sub(x0, oi))))
    (ta, tb), ex, fj = rotate_to_distance(xp, m.eps_len, oj, wj, x0, y, rho, ref[j])
    out = []
    for t in (ta, tb):
        xj = rot_point(xp, oj, wj, t, x0)
        qi, fi = rotate_onto(xp, m.eps_len, oi, w, xj, P, ref[i])
        out.append(((qi, t), ex, (fi, fj)))
    return out


def _stage_planar2(xp, m, st, c0, P, ref):
    i, j = st.joints
    flat = xp.abs(dot(m.w[i], sub(P, c0))) <= m.eps_len  # the target in the plane of motion
    return [(q, xp.and_(ex, flat), f) for q, ex, f in _planar2(xp, m, i, j, c0, P, ref)]


def _stage_lift(xp, m, st, c0, P, ref):
    """Two parallel revolute joints and a slide along them, in any order (the slide commutes with the turns)."""
    r1, r2, p = st.extra
    a, wp = m.w[r1], m.w[p]
    t = dot(a, sub(P, c0)) / dot(a, wp)
    x0 = add(c0, mul(wp, t))
    out = []
    for (q1, q2), ex, (f1, f2) in _planar2(xp, m, r1, r2, x0, P, ref):
        vals = {r1: (q1, f1), r2: (q2, f2), p: (t, FALSE)}
        out.append((tuple(vals[k][0] for k in st.joints), ex, tuple(vals[k][1] for k in st.joints)))
    return out


def _stage_elbow(xp, m, st, c0, P, ref):
    """Revolute base, then two revolute joints with parallel axes (the elbow arm, with any offsets)."""
    i, j, k = st.joints
    o1, w1, o2, u, o3, w3 = m.o[i], m.w[i], m.o[j], m.w[j], m.o[k], m.w[k]
    # joints 2 and 3 keep the point in a plane across their axes: joint 1 must bring the target into it
    h = dot(u, sub(c0, o1))
    (qa, qb), exA, f1 = rotate_to_plane(xp, m.eps_len, w1, u, sub(P, o1), h, ref[i])
    y = add(o2, mul(u, dot(u, sub(c0, o2))))
    out = []
    for q1 in (qa, qb):
        Pp = rot_point(xp, o1, w1, -q1, P)
        rho = norm(xp, perp(sub(Pp, o2), u))
        (t3a, t3b), exB, f3 = rotate_to_distance(xp, m.eps_len, o3, w3, c0, y, rho, ref[k])
        ex = xp.and_(exA, exB)
        for q3 in (t3a, t3b):
            x3 = rot_point(xp, o3, w3, q3, c0)
            q2, f2 = rotate_onto(xp, m.eps_len, o2, u, x3, Pp, ref[j])
            out.append(((q1, q2, q3), ex, (f1, f2, f3)))
    return out


def _stage_rrp(xp, m, st, c0, P, ref):
    """Revolute base, a revolute joint across it, and a slide across the second axis (the boom arm)."""
    i, j, k = st.joints
    o1, w1, o2, u, v = m.o[i], m.w[i], m.o[j], m.w[j], m.w[k]
    h = dot(u, sub(c0, o1))
    (qa, qb), exA, f1 = rotate_to_plane(xp, m.eps_len, w1, u, sub(P, o1), h, ref[i])
    d0 = perp(sub(c0, o2), u)
    out = []
    for q1 in (qa, qb):
        Pp = rot_point(xp, o1, w1, -q1, P)
        rho = norm(xp, perp(sub(Pp, o2), u))
        (ta, tb), exB = slide_to_distance(xp, v, d0, ZERO, rho)
        ex = xp.and_(exA, exB)
        for t in (ta, tb):
            q2, f2 = rotate_onto(xp, m.eps_len, o2, u, add(c0, mul(v, t)), Pp, ref[j])
            out.append(((q1, q2, t), ex, (f1, f2, FALSE)))
    return out


def _stage_rpp(xp, m, st, c0, P, ref):
    """Revolute base and two slides, one with a part along the base axis (the cylindrical arm).

    The turn keeps the height along the base axis and the distance from it: the height fixes one
    slide in terms of the other, the distance the other (two roots: reaching out, or reaching
    back through the axis with the base turned half a turn).
    """
    i = st.joints[0]
    ja, jb = st.extra  # ja: the slide solved from the height; jb: the other
    o1, w1, wa, wb = m.o[i], m.w[i], m.w[ja], m.w[jb]
    aa, ab = dot(w1, wa), dot(w1, wb)
    H = dot(w1, sub(P, c0))
    base = add(sub(c0, o1), mul(wa, H / aa))
    dirv = sub(wb, mul(wa, ab / aa))
    Bp = perp(dirv, w1)
    nb = norm(xp, Bp)
    ub = mul(Bp, 1.0 / nb)
    rho = norm(xp, perp(sub(P, o1), w1))
    (sa, sb), ex = slide_to_distance(xp, ub, perp(base, w1), ZERO, rho)
    out = []
    for s in (sa, sb):
        tb = s / nb
        ta = (H - tb * ab) / aa
        x = add(c0, add(mul(wa, ta), mul(wb, tb)))
        q1, f1 = rotate_onto(xp, m.eps_len, o1, w1, x, P, ref[i])
        vals = {i: (q1, f1), ja: (ta, FALSE), jb: (tb, FALSE)}
        out.append((tuple(vals[k][0] for k in st.joints), ex, tuple(vals[k][1] for k in st.joints)))
    return out


def _stage_ppp(xp, m, st, c0, P, ref):
    """Three slides along independent directions (the Cartesian arm): one linear solve."""
    i, j, k = st.joints
    a, b, c = m.w[i], m.w[j], m.w[k]
    d = sub(P, c0)
    det = dot(a, cross(b, c))
    q = (dot(d, cross(b, c)) / det, dot(a, cross(d, c)) / det, dot(a, cross(b, d)) / det)
    return [(q, True, (FALSE, FALSE, FALSE))]


def _stage_ball(xp, m, st, c0, P, ref):
    """Two revolute joints whose axes meet (a ball-like shoulder), then a third revolute joint."""
    i, j, k = st.joints
    (X,) = st.extra
    o3, w3 = m.o[k], m.w[k]
    rho = norm(xp, sub(P, X))
    (ta, tb), exB, f3 = rotate_to_distance(xp, m.eps_len, o3, w3, c0, X, rho, ref[k])
    out = []
    for q3 in (ta, tb):
        x3 = rot_point(xp, o3, w3, q3, c0)
        sols, exW, (f1, f2) = two_axes(xp, m.eps_dir, m.w[i], m.w[j], sub(x3, X), sub(P, X), (ref[i], ref[j]))
        ex = xp.and_(exB, exW)
        for q1, q2 in sols:
            out.append(((q1, q2, q3), ex, (f1, f2, f3)))
    return out


def _stage_rrr23(xp, m, st, c0, P, ref):
    """A revolute joint, then two revolute joints whose axes meet: the point keeps its distance from
    where they meet, which fixes the first joint; the meeting axes then turn it into place."""
    i, j, k = st.joints
    (Y,) = st.extra
    o1, w1 = m.o[i], m.w[i]
    delta = norm(xp, sub(c0, Y))
    (ta, tb), exA, f1 = rotate_to_distance(xp, m.eps_len, o1, w1, P, Y, delta, -ref[i])
    out = []
    for th in (ta, tb):  # the turn of the target about axis 1 (the joint's value is minus it)
        Pp = rot_point(xp, o1, w1, th, P)
        sols, exW, (f2, f3) = two_axes(xp, m.eps_dir, m.w[j], m.w[k], sub(c0, Y), sub(Pp, Y), (ref[j], ref[k]))
        ex = xp.and_(exA, exW)
        for q2, q3 in sols:
            out.append(((-th, q2, q3), ex, (f1, f2, f3)))
    return out


def _stage_rp(xp, m, st, c0, P, ref):
    """A revolute joint and a slide across its axis (a planar polar arm)."""
    i, j = st.joints
    o1, w1, v = m.o[i], m.w[i], m.w[j]
    rho = norm(xp, perp(sub(P, o1), w1))
    (ta, tb), ex = slide_to_distance(xp, v, perp(sub(c0, o1), w1), ZERO, rho)
    flat = xp.abs(dot(w1, sub(P, c0))) <= m.eps_len
    out = []
    for t in (ta, tb):
        q1, f1 = rotate_onto(xp, m.eps_len, o1, w1, add(c0, mul(v, t)), P, ref[i])
        out.append(((q1, t), xp.and_(ex, flat), (f1, FALSE)))
    return out


def _stage_pp(xp, m, st, c0, P, ref):
    """Two slides: the target's part in their plane (least squares), exact when it lies in it."""
    i, j = st.joints
    a, b = m.w[i], m.w[j]
    d = sub(P, c0)
    gab = dot(a, b)
    det = 1.0 - gab * gab
    ra, rb = dot(a, d), dot(b, d)
    ta = (ra - gab * rb) / det
    tb = (rb - gab * ra) / det
    res = sub(d, add(mul(a, ta), mul(b, tb)))
    return [((ta, tb), norm(xp, res) <= m.eps_len, (FALSE, FALSE))]


_STAGES = {
    "planar2": _stage_planar2,
    "lift": _stage_lift,
    "elbow": _stage_elbow,
    "rrp": _stage_rrp,
    "rpp": _stage_rpp,
    "ppp": _stage_ppp,
    "ball": _stage_ball,
    "rrr23": _stage_rrr23,
    "rp": _stage_rp,
    "pp": _stage_pp,
}


# -- structures -----------------------------------------------------------------------------------


def _mv(R, v):
    """Rows of R (3 row tuples) times v."""
    return (dot(R[0], v), dot(R[1], v), dot(R[2], v))


def _mtv(R, v):
    """Rᵀ v for R given by rows."""
    return (
        R[0][0] * v[0] + R[1][0] * v[1] + R[2][0] * v[2],
        R[0][1] * v[0] + R[1][1] * v[1] + R[2][1] * v[2],
        R[0][2] * v[0] + R[1][2] * v[1] + R[2][2] * v[2],
    )


def _any_perp(w):
    """A unit direction across unit ``w`` (constant floats)."""
    a = (1.0, 0.0, 0.0) if abs(w[0]) < 0.9 else (0.0, 1.0, 0.0)
    v = perp(a, w)
    n = dot(v, v) ** 0.5
    return (v[0] / n, v[1] / n, v[2] / n)


def tool_turn(xp, m, st, R):
    """Planar and table arms: the tool's turn (rad) about the common axis that comes nearest rotation R (rows)."""
    a = st.axis
    x = _any_perp(a)
    # Rd = R · MRᵀ takes the tool's orientation at q = 0 to R; its turn about a moves x to Rd x
    Rx = _mv(R, _mtv(m.MR, x))
    phi, _ = rotate_onto(xp, 0.0, ZERO, a, x, Rx, 0.0)
    return phi


def _position(xp, m, st, P, ref):
    n = len(m.w)
    out = []
    for qs, ex, fs in _STAGES[st.stage](xp, m, st, st.point, P, ref):
        q = [None] * n
        f = [FALSE] * n
        for k, v, fl in zip(st.joints, qs, fs):
            q[k] = v
            f[k] = fl
        out.append((q, ex, f))
    return out


def _turned(xp, m, st, P, phi, ref):
    """Planar 3R / table arm with the tool turned by ``phi`` about the common axis."""
    a = st.axis
    Pc = add(P, rot(xp, a, phi, sub(st.point, m.p0)))
    t = st.turn
    out = []
    for q, ex, f in _position(xp, m, st, Pc, ref):
        acc = phi
        for k, r in enumerate(m.rev):
            if r and k != t:
                acc = acc - dot(a, m.w[k]) * q[k]
        q[t] = acc / dot(a, m.w[t])
        out.append((q, ex, f))
    return out


def _pieper(xp, m, st, P, R, ref):
    """Six axes: the stage places the wrist centre, the spherical wrist turns the tool into R."""
    i4, i5, i6 = st.wrist
    c = st.point
    MR = m.MR
    # Rd = R · MRᵀ: the rotation every joint together must give
    cv = _mtv(MR, sub(c, m.p0))
    C = add(P, _mv(R, cv))
    a6 = m.w[i6]
    x6 = m.across
    y0 = _mv(R, _mtv(MR, a6))  # Rd a6: where the last axis must point
    x0 = _mv(R, _mtv(MR, x6))  # Rd x6: where a direction across it must point
    out = []
    last = None
    for q, exP, f in _position(xp, m, st, C, ref):
        # take both directions back through the stage's turns (R1ᵀ first), successive parallel axes as one turn
        groups = []
        for k in st.joints:
            if not m.rev[k]:
                continue
            if groups and _parallel_const(groups[-1][0], m.w[k]):
                ax, ang = groups[-1]
                groups[-1] = (ax, ang + dot(ax, m.w[k]) * q[k])
            else:
                groups.append((m.w[k], q[k]))
        y, xr = y0, x0
        for g, (ax, ang) in enumerate(groups):
            if g == 0 and last is not None and last[0] is ang:  # candidates come in pairs sharing joint 1
                y, xr = last[1]
                continue
            cs, sn = xp.cos(ang), xp.sin(ang)
            y, xr = rot_cs(ax, cs, -sn, y), rot_cs(ax, cs, -sn, xr)
            if g == 0:
                last = (ang, (y, xr))
        sols, exW, (f4, f5) = two_axes(xp, m.eps_dir, m.w[i4], m.w[i5], a6, y, (ref[i4], ref[i5]))
        ex = xp.and_(exP, exW)
        for t4, t5 in sols:
            c4, s4, c5, s5 = xp.cos(t4), xp.sin(t4), xp.cos(t5), xp.sin(t5)
            z = rot_cs(m.w[i5], c5, -s5, rot_cs(m.w[i4], c4, -s4, xr))
            t6, _ = rotate_onto(xp, 0.0, ZERO, a6, x6, z, 0.0)
            qq = list(q)
            qq[i4], qq[i5], qq[i6] = t4, t5, t6
            ff = list(f)
            ff[i4], ff[i5] = f4, f5
            out.append((qq, ex, ff))
    return out


def _parallel_const(a, b):
    """Whether two constant unit directions are parallel (model constants are floats unless they vary per sample)."""
    if not all(isinstance(v, float) for v in (*a, *b)):
        return False
    c = cross(a, b)
    return (c[0] * c[0] + c[1] * c[1] + c[2] * c[2]) < 1e-24


def solve(xp, m: Model, st: Structure, P, R, ref, phi=None):
    """Candidates ``[(q, exact, free), ...]`` for one target (or arrays of targets) ``P`` with rotation ``R``.

    ``R`` is given by rows (three 3-tuples) or None where the structure needs none (position
    structures; planar and table arms with ``phi`` given).  ``ref`` holds a value for every
    model joint (used where the target leaves a joint free).
    """
    if st.kind == "position":
        return _position(xp, m, st, P, ref)
    if st.kind in ("planar3", "table4"):
        if phi is None:
            phi = tool_turn(xp, m, st, R)
        return _turned(xp, m, st, P, phi, ref)
    return _pieper(xp, m, st, P, R, ref)
