"""The geometric subproblems the closed forms are built from, written once for both backends.

Turning a point about a fixed line, or sliding it along one, until it meets a
condition: the classical subproblems of screw-theory kinematics (Paden 1986;
Murray, Li & Sastry, *A Mathematical Introduction to Robotic Manipulation*,
§3.2).  Vectors are 3-tuples of components (floats, or arrays over targets:
see :mod:`.ops`); ``xp`` is the backend.

Each subproblem also says when its angle is **free** — when every value
solves it, because a point lies on the line it turns about (a singular
target: the wrist centre on the base axis, the wrist axes aligned).  The
angle is then the caller's ``free`` value, and the family of solutions it
stands for is found by the caller (:mod:`poser.core.ik.families`).  ``eps``
is the distance (a length, or a number for unit directions) within which a
point counts as on the line.
"""

from __future__ import annotations

__all__ = [
    "dot",
    "cross",
    "add",
    "sub",
    "mul",
    "perp",
    "norm",
    "rot",
    "rot_cs",
    "rot_point",
    "rotate_onto",
    "rotate_to_distance",
    "rotate_to_plane",
    "two_axes",
    "slide_to_distance",
]

EXACT_SLACK = 1e-12
"""How far (relative) an arccos argument may stray beyond ±1 and still count as an exact solution."""


def dot(a, b):
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]


def cross(a, b):
    return (a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0])


def add(a, b):
    return (a[0] + b[0], a[1] + b[1], a[2] + b[2])


def sub(a, b):
    return (a[0] - b[0], a[1] - b[1], a[2] - b[2])


def mul(a, s):
    return (a[0] * s, a[1] * s, a[2] * s)


def perp(a, w):
    """The part of ``a`` across unit direction ``w``."""
    k = dot(a, w)
    return (a[0] - w[0] * k, a[1] - w[1] * k, a[2] - w[2] * k)


def norm(xp, a):
    return xp.sqrt0(a[0] * a[0] + a[1] * a[1] + a[2] * a[2])


def rot_cs(w, c, s, v):
    """Direction ``v`` turned about unit ``w`` by the angle with cosine ``c`` and sine ``s`` (Rodrigues:
    ``v + s (w × v) + (1 - c) w × (w × v)``)."""
    k0, k1, k2 = w[1] * v[2] - w[2] * v[1], w[2] * v[0] - w[0] * v[2], w[0] * v[1] - w[1] * v[0]
    c1 = 1.0 - c
    return (
        v[0] + s * k0 + c1 * (w[1] * k2 - w[2] * k1),
        v[1] + s * k1 + c1 * (w[2] * k0 - w[0] * k2),
        v[2] + s * k2 + c1 * (w[0] * k1 - w[1] * k0),
    )


def rot(xp, w, th, v):
    """Direction ``v`` turned about unit ``w`` by ``th`` radians."""
    return rot_cs(w, xp.cos(th), xp.sin(th), v)


def rot_point(xp, o, w, th, x):
    """Point ``x`` turned about the line through ``o`` along unit ``w`` by ``th``."""
    r = rot(xp, w, th, sub(x, o))
    return (o[0] + r[0], o[1] + r[1], o[2] + r[2])


def rotate_onto(xp, eps, o, w, x, y, free):
    """The angle that turns point ``x`` about the line (o, w) as close as possible to ``y``.

    Returns ``(theta, is_free)``; ``is_free`` where ``x`` or ``y`` lies within
    ``eps`` of the line (every angle is as good), and ``theta`` is then ``free``.
    """
    u = perp(sub(x, o), w)
    v = perp(sub(y, o), w)
    is_free = xp.or_(norm(xp, u) <= eps, norm(xp, v) <= eps)
    theta = xp.atan2(dot(w, cross(u, v)), dot(u, v))
    return xp.where(is_free, free, theta), is_free


def rotate_to_distance(xp, eps, o, w, x, y, delta, free):
    """The two angles that turn point ``x`` about the line (o, w) to the distance ``delta`` from ``y``.

    Returns ``((theta_a, theta_b), exact, is_free)``.  ``exact`` is False where
    no angle reaches ``delta`` (the angles then give the nearest approach);
    ``is_free`` where ``x`` or ``y`` lies within ``eps`` of the line (the
    distance does not depend on the angle; both angles are then ``free``).
    """
    u = sub(x, o)
    v = sub(y, o)
    uw, vw = dot(u, w), dot(v, w)
    up, vp = perp(u, w), perp(v, w)
    nu, nv = norm(xp, up), norm(xp, vp)
    is_free = xp.or_(nu <= eps, nv <= eps)
    dz = uw - vw
    d2 = delta * delta - dz * dz  # the distance needed across the line, squared
    theta0 = xp.atan2(dot(w, cross(up, vp)), dot(up, vp))
    den = 2.0 * nu * nv
    num = nu * nu + nv * nv - d2
    arg = num / xp.safe(xp.where(is_free, 1.0, den))
    scale = 1.0 + delta * delta
    exact = xp.where(
        is_free,
        xp.abs(num) <= 2.0 * eps * (nu + nv + xp.abs(delta)) + EXACT_SLACK * scale,
        xp.and_(xp.abs(arg) <= 1.0 + EXACT_SLACK, d2 >= -EXACT_SLACK * scale),
    )
    phi = xp.where(is_free, 0.0, xp.acos1(arg))
    theta0 = xp.where(is_free, free, theta0)
    return (theta0 - phi, theta0 + phi), exact, is_free


def rotate_to_plane(xp, eps, w, u, v, h, free):
    """The two angles θ with ``(Rot(w, θ) u) · v = h``: turning unit direction ``u`` about ``w``.

    ``v`` is a vector from a point of the line.  Returns
    ``((theta_a, theta_b), exact, is_free)``; ``is_free`` where ``v`` lies
    within ``eps`` of the line (the condition does not depend on θ; both angles
    are then ``free``, and it holds when ``|c| <= eps``).
    """
    wu, wv = dot(w, u), dot(w, v)
    a = dot(v, u) - wu * wv
    b = dot(v, cross(w, u))
    c = h - wu * wv
    is_free = norm(xp, perp(v, w)) <= eps
    r = xp.hypot(a, b)
    arg = c / xp.safe(xp.where(is_free, 1.0, r))
    exact = xp.where(is_free, xp.abs(c) <= eps, xp.abs(arg) <= 1.0 + EXACT_SLACK)
    base = xp.atan2(b, a)
    phi = xp.acos1(arg)
    return (xp.where(is_free, free, base + phi), xp.where(is_free, free, base - phi)), exact, is_free


def two_axes(xp, eps, w1, w2, x, y, free):
    """Angles (θ1, θ2) with ``Rot(w1, θ1) Rot(w2, θ2) x = y`` for two axes through one point.

    ``w1``, ``w2`` are unit directions (not parallel); ``x`` and ``y`` vectors
    of equal length from the common point.  Returns
    ``([(θ1, θ2), (θ1', θ2')], exact, (free1, free2))`` — the two solutions
    (equal when the intermediate vector is unique); ``free1`` where θ1 is
    undetermined (the intermediate vector lies along ``w1``, within ``eps``
    relative to the length of ``x``): θ1 is then ``free[0]`` and θ2 the one that
    goes with it; ``free2`` where θ2 is (``x`` along ``w2``): θ2 is then ``free[1]``.
    """
    c12 = dot(w1, w2)
    den = 1.0 - c12 * c12
    w2x, w1y = dot(x, w2), dot(y, w1)
    alpha = (w1y - c12 * w2x) / den
    beta = (w2x - c12 * w1y) / den
    cr = cross(w1, w2)
    xx = dot(x, x)
    g2 = (xx - alpha * alpha - beta * beta - 2.0 * alpha * beta * c12) / dot(cr, cr)
    exact = g2 >= -1e-10 * xx
    g = xp.sqrt0(g2)
    zero = (0.0, 0.0, 0.0)
    out = []
    flags1 = flags2 = None
    tol = eps * xp.sqrt0(xx)
    free1, free2 = free
    for sg in (1.0, -1.0):
        gs = g * sg
        z = (alpha * w1[0] + beta * w2[0] + gs * cr[0], alpha * w1[1] + beta * w2[1] + gs * cr[1],
             alpha * w1[2] + beta * w2[2] + gs * cr[2])
        t2, f2 = rotate_onto(xp, tol, zero, w2, x, z, free2)
        t1, f1 = rotate_onto(xp, tol, zero, w1, z, y, free1)
        out.append((t1, t2))
        flags1 = f1 if flags1 is None else xp.or_(flags1, f1)
        flags2 = f2 if flags2 is None else xp.or_(flags2, f2)
    return out, exact, (flags1, flags2)


def slide_to_distance(xp, w, x, y, delta):
    """The two slides t with ``|x + t w - y| = delta`` (unit ``w``): ``((t_a, t_b), exact)``."""
    d = sub(x, y)
    b = dot(d, w)
    disc = b * b - dot(d, d) + delta * delta
    exact = disc >= -EXACT_SLACK * (1.0 + delta * delta)
    r = xp.sqrt0(disc)
    return (r - b, -b - r), exact
