"""The closed forms of :mod:`poser.core.ik._closed` for one target, in plain Python floats.

For a single target the vectorised code spends most of its time in the
overhead of many tiny numpy calls; the same geometry written with floats
and tuples is several times faster.  Every step mirrors the vectorised
version (same subproblems, same branch order, same choices for free
joints), and the tests check that both give the same joint values.
"""

from __future__ import annotations

from math import acos, atan2, cos, hypot, sin, sqrt

from poser.core.ik._closed import Structure, _perp_unit
from poser.core.ik._geometry import Lines, chain_lines


def _dot(a, b):
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]


def _sub(a, b):
    return (a[0] - b[0], a[1] - b[1], a[2] - b[2])


def _add(a, b):
    return (a[0] + b[0], a[1] + b[1], a[2] + b[2])


def _mul(a, s):
    return (a[0] * s, a[1] * s, a[2] * s)


def _cross(a, b):
    return (a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0])


def _rot(w, th, v):
    """Rotate direction ``v`` about unit ``w`` by ``th``."""
    c, s = cos(th), sin(th)
    k = _cross(w, v)
    kk = _cross(w, k)
    c1 = 1.0 - c
    return (v[0] + s * k[0] + c1 * kk[0], v[1] + s * k[1] + c1 * kk[1], v[2] + s * k[2] + c1 * kk[2])


def _rot_pt(o, w, th, x):
    return _add(o, _rot(w, th, _sub(x, o)))


def _mv(M, v):
    return (
        M[0][0] * v[0] + M[0][1] * v[1] + M[0][2] * v[2],
        M[1][0] * v[0] + M[1][1] * v[1] + M[1][2] * v[2],
        M[2][0] * v[0] + M[2][1] * v[1] + M[2][2] * v[2],
    )


def _onto(o, w, x, y, free):
    u = _sub(x, o)
    v = _sub(y, o)
    num = _dot(w, _cross(u, v))
    den = _dot(u, v) - _dot(u, w) * _dot(v, w)
    if hypot(num, den) <= 1e-20 * (_dot(u, u) + _dot(v, v)) + 1e-300:
        return free
    return atan2(num, den)


def _distance(o, w, x, y, delta, free):
    u = _sub(x, o)
    v = _sub(y, o)
    uw, vw = _dot(u, w), _dot(v, w)
    d2 = delta * delta - (uw - vw) ** 2
    nu = sqrt(max(_dot(u, u) - uw * uw, 0.0))
    nv = sqrt(max(_dot(v, v) - vw * vw, 0.0))
    theta0 = atan2(_dot(w, _cross(u, v)), _dot(u, v) - uw * vw)
    den = 2.0 * nu * nv
    safe = den > 1e-300
    arg = (nu * nu + nv * nv - d2) / den if safe else 1.0
    exact = -1.0 - 1e-12 <= arg <= 1.0 + 1e-12 and d2 >= -1e-12 * (1.0 + delta * delta)
    phi = acos(min(1.0, max(-1.0, arg)))
    if not (safe and den > 1e-20 * (_dot(u, u) + _dot(v, v))):
        theta0 = free
    return (theta0 - phi, theta0 + phi), exact


def _plane(w1, u, v, h):
    wu = _dot(w1, u)
    wv = _dot(w1, v)
    a = _dot(v, u) - wu * wv
    b = _dot(v, _cross(w1, u))
    c = h - wu * wv
    r = hypot(a, b)
    free = r < 1e-12 * (1.0 + abs(h) + sqrt(_dot(v, v)))
    arg = 0.0 if free else c / r
    exact = abs(arg) <= 1.0 + 1e-12 or (free and abs(c) < 1e-9 * (1.0 + abs(h)))
    base = atan2(b, a)
    phi = acos(min(1.0, max(-1.0, arg)))
    return (base + phi, base - phi), exact, free


def _two_axes(w1, w2, x, y):
    c12 = _dot(w1, w2)
    den = c12 * c12 - 1.0
    w2x = _dot(x, w2)
    w1y = _dot(y, w1)
    alpha = (c12 * w2x - w1y) / den
    beta = (c12 * w1y - w2x) / den
    cr = _cross(w1, w2)
    g2 = (1.0 - alpha * alpha - beta * beta - 2.0 * alpha * beta * c12) / _dot(cr, cr)
    exact = g2 >= -1e-10
    g = sqrt(max(g2, 0.0))
    z0 = _add(_mul(w1, alpha), _mul(w2, beta))
    zero = (0.0, 0.0, 0.0)
    out = []
    for sg in (g, -g):
        z = _add(z0, _mul(cr, sg))
        out.append((_onto(zero, w1, z, y, 0.0), _onto(zero, w2, x, z, 0.0)))
    z1 = _add(z0, _mul(cr, g))
    zw = _dot(z1, w1)
    degenerate = sqrt(max(_dot(z1, z1) - zw * zw, 0.0)) < 1e-9
    return out, exact, degenerate


# -- stages ---------------------------------------------------------------------------------------


def _planar2(o, w, i, j, x0, P, ref):
    rel = _sub(P, o[i])
    rw = _dot(rel, w[i])
    rho = sqrt(max(_dot(rel, rel) - rw * rw, 0.0))
    y = _add(o[i], _mul(w[i], _dot(_sub(x0, o[i]), w[i])))
    qj, ex = _distance(o[j], w[j], x0, y, rho, ref[j])
    out = []
    for t in qj:
        xj = _rot_pt(o[j], w[j], t, x0)
        out.append(((_onto(o[i], w[i], xj, P, ref[i]), t), ex))
    return out


def _stage(o, w, kind, c0, P, ref):
    """List of ((q1, q2, q3), exact) in the order of the vectorised version."""
    if kind == "rrp_cylindrical":
        t = (_dot(P, w[0]) - _dot(w[0], c0)) / _dot(w[0], w[2])
        x0 = _add(c0, _mul(w[2], t))
        return [((a, b, t), ex) for (a, b), ex in _planar2(o, w, 0, 1, x0, P, ref)]
    u = w[1]
    h = _dot(u, _sub(c0, o[0]))
    q1s, exA, free = _plane(w[0], u, _sub(P, o[0]), h)
    if free:
        q1s = (ref[0], ref[0])
    out = []
    if kind == "elbow":
        y = _add(o[1], _mul(u, _dot(u, _sub(c0, o[1]))))
    else:
        v = w[2]
        d0 = _sub(c0, o[1])
        d0 = _sub(d0, _mul(u, _dot(u, d0)))
        b = _dot(d0, v)
    for q1 in q1s:
        Pp = _rot_pt(o[0], w[0], -q1, P)
        rel = _sub(Pp, o[1])
        ru = _dot(rel, u)
        rho2 = max(_dot(rel, rel) - ru * ru, 0.0)
        if kind == "elbow":
            q3s, exB = _distance(o[2], w[2], c0, y, sqrt(rho2), ref[2])
            for q3 in q3s:
                x3 = _rot_pt(o[2], w[2], q3, c0)
                out.append(((q1, _onto(o[1], u, x3, Pp, ref[1]), q3), exA and exB))
        else:
            disc = b * b - _dot(d0, d0) + rho2
            exB = disc >= -1e-12 * (1.0 + rho2)
            r = sqrt(max(disc, 0.0))
            for t in (-b + r, -b - r):
                x = _add(c0, _mul(v, t))
                out.append(((q1, _onto(o[1], u, x, Pp, ref[1]), t), exA and exB))
    return out


def _tuples(L: Lines, st: Structure):
    cached = L.__dict__.get("_scalar")
    if cached is None:
        o = [tuple(float(x) for x in p) for p in L.o]
        w = [tuple(float(x) for x in p) for p in L.w]
        MRt = L.M[:3, :3].T
        extra = {}
        if st.kind in ("planar3", "table4"):
            x = _perp_unit(st.axis)
            extra = {
                "c": tuple(st.centre.tolist()),
                "a": tuple(st.axis.tolist()),
                "x": tuple(x.tolist()),
                "ax": tuple((MRt @ x).tolist()),
                "s": [float(st.axis @ L.w[i]) for i in range(L.n)],
            }
        if st.kind == "pieper6":
            x = _perp_unit(L.w[5])
            extra = {
                "c": tuple(st.centre.tolist()),
                "cvec": tuple((MRt @ (st.centre - L.p0)).tolist()),
                "a6": tuple((MRt @ L.w[5]).tolist()),
                "x": tuple(x.tolist()),
                "ax": tuple((MRt @ x).tolist()),
            }
        cached = (o, w, tuple(L.p0.tolist()), extra)
        object.__setattr__(L, "_scalar", cached)
    return cached


def solve_single(chain, st: Structure, P, R, ref):
    """Candidate joint values for one target, or None when this structure has no scalar version.

    Parameters
    ----------
    P : sequence of 3 floats
    R : 3 x 3 nested sequence or None
    ref : sequence of n floats

    Returns
    -------
    list of (list of n floats, bool exact), in the order of :func:`_closed.solve_closed`
    """
    L = chain_lines(chain)
    o, w, p0, ex = _tuples(L, st)
    P = tuple(float(v) for v in P)
    ref = [float(v) for v in ref]
    if st.kind in ("elbow", "rrp_spherical", "rrp_cylindrical"):
        return [(list(q), e) for q, e in _stage(o, w, st.kind, p0, P, ref)]
    if st.kind == "planar2":
        return [(list(q), e) for q, e in _planar2(o, w, 0, 1, p0, P, ref)]
    if R is None:
        return None
    R = [list(map(float, r)) for r in R]
    if st.kind in ("planar3", "table4"):
        a, zero = ex["a"], (0.0, 0.0, 0.0)
        phi = _onto(zero, a, ex["x"], _mv(R, ex["ax"]), 0.0)  # the tool's turn about the common axis
        Pc = _add(P, _rot(a, phi, _sub(ex["c"], p0)))
        sg = ex["s"]
        if st.kind == "planar3":
            return [
                ([q1, q2, (phi - sg[0] * q1 - sg[1] * q2) / sg[2]], e)
                for (q1, q2), e in _planar2(o, w, 0, 1, ex["c"], Pc, ref)
            ]
        return [
            ([q1, q2, t, (phi - sg[0] * q1 - sg[1] * q2) / sg[3]], e)
            for (q1, q2, t), e in _stage(o, w, "rrp_cylindrical", ex["c"], Pc, ref)
        ]
    if st.kind != "pieper6":
        return None
    Pc = _add(P, _mv(R, ex["cvec"]))
    y0 = _mv(R, ex["a6"])
    x0 = _mv(R, ex["ax"])
    x = ex["x"]
    out = []
    for (q1, q2, q3), exP in _stage(o, w, st.stage, ex["c"], Pc, ref):
        y, xr = y0, x0
        for i, qi in enumerate((q1, q2, q3)):
            if L.revolute[i]:
                y = _rot(w[i], -qi, y)
                xr = _rot(w[i], -qi, xr)
        sols, exW, degen = _two_axes(w[3], w[4], w[5], y)
        for t4, t5 in sols:
            if degen:
                t4 = ref[3]
            z = _rot(w[4], -t5, _rot(w[3], -t4, xr))
            t6 = _onto((0.0, 0.0, 0.0), w[5], x, z, 0.0)
            out.append(([q1, q2, q3, t4, t5, t6], exP and exW))
    return out
