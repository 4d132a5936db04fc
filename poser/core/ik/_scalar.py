"""The closed forms of :mod:`poser.core.ik._closed` for one target, in plain Python floats.

For a single target the vectorised code spends most of its time in the
overhead of many tiny numpy calls; the same geometry written with floats
and tuples is several times faster.  Every step mirrors the vectorised
version (same subproblems, same branch order, same choices for free
joints), and the tests check that both give the same joint values.
"""

from __future__ import annotations

from math import acos, atan2, cos, hypot, sin, sqrt

import numpy as np

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
    """Rotate direction ``v`` about unit ``w`` by ``th`` (Rodrigues, written out: this runs dozens of times a solve)."""
    c, s = cos(th), sin(th)
    w0, w1, w2 = w
    v0, v1, v2 = v
    k0, k1, k2 = w1 * v2 - w2 * v1, w2 * v0 - w0 * v2, w0 * v1 - w1 * v0
    c1 = 1.0 - c
    return (
        v0 + s * k0 + c1 * (w1 * k2 - w2 * k1),
        v1 + s * k1 + c1 * (w2 * k0 - w0 * k2),
        v2 + s * k2 + c1 * (w0 * k1 - w1 * k0),
    )


def _rot2(w, th, v, x):
    """:func:`_rot` of two directions by the same turn."""
    c, s = cos(th), sin(th)
    w0, w1, w2 = w
    c1 = 1.0 - c
    v0, v1, v2 = v
    k0, k1, k2 = w1 * v2 - w2 * v1, w2 * v0 - w0 * v2, w0 * v1 - w1 * v0
    a = (
        v0 + s * k0 + c1 * (w1 * k2 - w2 * k1),
        v1 + s * k1 + c1 * (w2 * k0 - w0 * k2),
        v2 + s * k2 + c1 * (w0 * k1 - w1 * k0),
    )
    v0, v1, v2 = x
    k0, k1, k2 = w1 * v2 - w2 * v1, w2 * v0 - w0 * v2, w0 * v1 - w1 * v0
    b = (
        v0 + s * k0 + c1 * (w1 * k2 - w2 * k1),
        v1 + s * k1 + c1 * (w2 * k0 - w0 * k2),
        v2 + s * k2 + c1 * (w0 * k1 - w1 * k0),
    )
    return a, b


def _rot_pt(o, w, th, x):
    o0, o1, o2 = o
    r0, r1, r2 = _rot(w, th, (x[0] - o0, x[1] - o1, x[2] - o2))
    return (o0 + r0, o1 + r1, o2 + r2)


def _mv(M, v):
    return (
        M[0][0] * v[0] + M[0][1] * v[1] + M[0][2] * v[2],
        M[1][0] * v[0] + M[1][1] * v[1] + M[1][2] * v[2],
        M[2][0] * v[0] + M[2][1] * v[1] + M[2][2] * v[2],
    )


def _onto(o, w, x, y, free):
    o0, o1, o2 = o
    u0, u1, u2 = x[0] - o0, x[1] - o1, x[2] - o2
    v0, v1, v2 = y[0] - o0, y[1] - o1, y[2] - o2
    return _onto0(w, u0, u1, u2, v0, v1, v2, free)


def _onto0(w, u0, u1, u2, v0, v1, v2, free):
    """:func:`_onto` about a line through the origin, the points given by their coordinates."""
    w0, w1, w2 = w
    num = w0 * (u1 * v2 - u2 * v1) + w1 * (u2 * v0 - u0 * v2) + w2 * (u0 * v1 - u1 * v0)
    den = (u0 * v0 + u1 * v1 + u2 * v2) - (u0 * w0 + u1 * w1 + u2 * w2) * (v0 * w0 + v1 * w1 + v2 * w2)
    if hypot(num, den) <= 1e-20 * ((u0 * u0 + u1 * u1 + u2 * u2) + (v0 * v0 + v1 * v1 + v2 * v2)) + 1e-300:
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
    if kind == "elbow":
        return _elbow(o, w, c0, P, ref)
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


_ELBOW = {}  # constants of the elbow stage per (o, w, c0): they depend on the chain only


def _elbow_constants(o, w, c0):
    """Everything in the elbow stage that does not depend on the target, computed as the stage would."""
    u = w[1]
    h = _dot(u, _sub(c0, o[0]))
    y = _add(o[1], _mul(u, _dot(u, _sub(c0, o[1]))))
    # _distance(o[2], w[2], c0, y, ...): the two points are fixed, only the distance varies
    U, V = _sub(c0, o[2]), _sub(y, o[2])
    uw, vw = _dot(U, w[2]), _dot(V, w[2])
    nu = sqrt(max(_dot(U, U) - uw * uw, 0.0))
    nv = sqrt(max(_dot(V, V) - vw * vw, 0.0))
    theta0 = atan2(_dot(w[2], _cross(U, V)), _dot(U, V) - uw * vw)
    den = 2.0 * nu * nv
    safe = den > 1e-300
    keep0 = safe and den > 1e-20 * (_dot(U, U) + _dot(V, V))
    return (
        h,
        1.0 + abs(h),
        _dot(w[0], u),
        _cross(w[0], u),
        (uw - vw) ** 2,
        nu * nu + nv * nv,
        den,
        safe,
        theta0 if keep0 else None,
        U,
    )


def _elbow(o, w, c0, P, ref):
    """The elbow stage (:func:`_stage`), its constant parts computed once per chain."""
    key = (tuple(o[:3]), tuple(w[:3]), c0)
    kc = _ELBOW.get(key)
    if kc is None:
        kc = _elbow_constants(o, w, c0)
        if len(_ELBOW) > 256:
            _ELBOW.clear()
        _ELBOW[key] = kc
    h, h1, wu, cu, duv2, nn, den, safe, theta0, U = kc
    o0, o1, o2 = o[0], o[1], o[2]
    w0, u, w2 = w[0], w[1], w[2]
    # _plane(w0, u, P - o0, h)
    v0, v1, v2 = P[0] - o0[0], P[1] - o0[1], P[2] - o0[2]
    wv = w0[0] * v0 + w0[1] * v1 + w0[2] * v2
    a = (v0 * u[0] + v1 * u[1] + v2 * u[2]) - wu * wv
    b = v0 * cu[0] + v1 * cu[1] + v2 * cu[2]
    c = h - wu * wv
    r = hypot(a, b)
    free = r < 1e-12 * (h1 + sqrt(v0 * v0 + v1 * v1 + v2 * v2))
    if free:
        exA = True  # (_plane: the argument is 0 when free)
        q1s = (ref[0], ref[0])
    else:
        arg = c / r
        exA = abs(arg) <= 1.0 + 1e-12
        base = atan2(b, a)
        phi = acos(min(1.0, max(-1.0, arg)))
        q1s = (base + phi, base - phi)
    th0 = ref[2] if theta0 is None else theta0
    ref1 = ref[1]
    out = []
    for q1 in q1s:
        Pp = _rot_pt(o0, w0, -q1, P)
        r0, r1, r2 = Pp[0] - o1[0], Pp[1] - o1[1], Pp[2] - o1[2]
        ru = r0 * u[0] + r1 * u[1] + r2 * u[2]
        rho2 = max((r0 * r0 + r1 * r1 + r2 * r2) - ru * ru, 0.0)
        # _distance(o2, w2, c0, y, sqrt(rho2), ref[2])
        delta = sqrt(rho2)
        d2 = delta * delta - duv2
        arg = (nn - d2) / den if safe else 1.0
        exB = -1.0 - 1e-12 <= arg <= 1.0 + 1e-12 and d2 >= -1e-12 * (1.0 + delta * delta)
        phi = acos(min(1.0, max(-1.0, arg)))
        ok = exA and exB
        for q3 in (th0 - phi, th0 + phi):
            x0, x1, x2 = _rot(w2, q3, U)
            # _onto(o1, u, x3, Pp, ref1) with x3 = o2 + (x0, x1, x2); Pp - o1 is (r0, r1, r2)
            q2 = _onto0(u, (o2[0] + x0) - o1[0], (o2[1] + x1) - o1[1], (o2[2] + x2) - o1[2], r0, r1, r2, ref1)
            out.append(((q1, q2, q3), ok))
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
            c12 = _dot(w[3], w[4])
            cr = _cross(w[3], w[4])
            extra["two_axes"] = (c12, c12 * c12 - 1.0, cr, _dot(cr, cr), _dot(w[5], w[4]))
            extra["rev3"] = tuple(bool(r) for r in L.revolute[:3])
        cached = (o, w, tuple(L.p0.tolist()), extra)
        object.__setattr__(L, "_scalar", cached)
    return cached


def _floats(v):
    """A flat sequence as a list of Python floats."""
    if isinstance(v, np.ndarray) and v.dtype == float:
        return v.tolist()
    return [float(x) for x in v]


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
    P = tuple(_floats(P))
    ref = _floats(ref)
    if st.kind in ("elbow", "rrp_spherical", "rrp_cylindrical"):
        return [(list(q), e) for q, e in _stage(o, w, st.kind, p0, P, ref)]
    if st.kind == "planar2":
        return [(list(q), e) for q, e in _planar2(o, w, 0, 1, p0, P, ref)]
    if R is None:
        return None
    R = R.tolist() if isinstance(R, np.ndarray) and R.dtype == float else [list(map(float, r)) for r in R]
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
    return _pieper(L, st, o, w, ex, P, R, ref)


def _pieper(L, st, o, w, ex, P, R, ref):
    """Six-axis arm with a spherical wrist: the stage places the wrist centre, the wrist the tool axes."""
    Pc = _add(P, _mv(R, ex["cvec"]))
    y0 = _mv(R, ex["a6"])
    x0 = _mv(R, ex["ax"])
    x0_, x1_, x2_ = ex["x"]
    w0, w1, w2, w3, w4, w5 = w[:6]
    r0, r1, r2 = ex["rev3"]
    # constants of the wrist's two-axes subproblem (see _two_axes)
    c12, den, cr, ncr2, w2x = ex["two_axes"]
    cr0, cr1, cr2 = cr
    a0, a1, a2 = w3
    b0, b1, b2 = w4
    e0, e1, e2 = w5
    ee = e0 * e0 + e1 * e1 + e2 * e2
    xx = x0_ * x0_ + x1_ * x1_ + x2_ * x2_
    xw = x0_ * e0 + x1_ * e1 + x2_ * e2
    ref3 = ref[3]
    out = []
    last = None
    for (q1, q2, q3), exP in _stage(o, w, st.stage, ex["c"], Pc, ref):
        y, xr = y0, x0
        if r0:
            # the stage gives its solutions in pairs with the same q1: turn back through joint 1 once a pair
            if last is None or last[0] != q1:
                last = (q1, _rot2(w0, -q1, y, xr))
            y, xr = last[1]
        if r1:
            y, xr = _rot2(w1, -q2, y, xr)
        if r2:
            y, xr = _rot2(w2, -q3, y, xr)
        # _two_axes(w3, w4, w5, y), written out
        y0_, y1_, y2_ = y
        w1y = y0_ * a0 + y1_ * a1 + y2_ * a2
        alpha = (c12 * w2x - w1y) / den
        beta = (c12 * w1y - w2x) / den
        g2 = (1.0 - alpha * alpha - beta * beta - 2.0 * alpha * beta * c12) / ncr2
        exW = g2 >= -1e-10
        g = sqrt(max(g2, 0.0))
        z0, z1, z2 = a0 * alpha + b0 * beta, a1 * alpha + b1 * beta, a2 * alpha + b2 * beta
        # the first intermediate vector, for the degeneracy test
        s0, s1, s2 = z0 + cr0 * g, z1 + cr1 * g, z2 + cr2 * g
        zw = s0 * a0 + s1 * a1 + s2 * a2
        degen = sqrt(max((s0 * s0 + s1 * s1 + s2 * s2) - zw * zw, 0.0)) < 1e-9
        ok = exP and exW
        yy = y0_ * y0_ + y1_ * y1_ + y2_ * y2_
        xr0, xr1, xr2 = xr
        for sg in (g, -g):
            s0, s1, s2 = z0 + cr0 * sg, z1 + cr1 * sg, z2 + cr2 * sg
            ss = s0 * s0 + s1 * s1 + s2 * s2
            # the statements below are _onto0 and _rot written out (same operations, fewer calls)
            if degen:
                t4 = ref3
            else:  # t4 = _onto0(w3, s, y, 0.0)
                num = a0 * (s1 * y2_ - s2 * y1_) + a1 * (s2 * y0_ - s0 * y2_) + a2 * (s0 * y1_ - s1 * y0_)
                den_ = (s0 * y0_ + s1 * y1_ + s2 * y2_) - (s0 * a0 + s1 * a1 + s2 * a2) * w1y
                t4 = 0.0 if hypot(num, den_) <= 1e-20 * (ss + yy) + 1e-300 else atan2(num, den_)
            # t5 = _onto0(w4, w5, s, 0.0)
            num = b0 * (e1 * s2 - e2 * s1) + b1 * (e2 * s0 - e0 * s2) + b2 * (e0 * s1 - e1 * s0)
            den_ = (e0 * s0 + e1 * s1 + e2 * s2) - w2x * (s0 * b0 + s1 * b1 + s2 * b2)
            t5 = 0.0 if hypot(num, den_) <= 1e-20 * (ee + ss) + 1e-300 else atan2(num, den_)
            # zz = _rot(w4, -t5, _rot(w3, -t4, xr))
            c, sn = cos(-t4), sin(-t4)
            k0, k1, k2 = a1 * xr2 - a2 * xr1, a2 * xr0 - a0 * xr2, a0 * xr1 - a1 * xr0
            c1 = 1.0 - c
            v0 = xr0 + sn * k0 + c1 * (a1 * k2 - a2 * k1)
            v1 = xr1 + sn * k1 + c1 * (a2 * k0 - a0 * k2)
            v2 = xr2 + sn * k2 + c1 * (a0 * k1 - a1 * k0)
            c, sn = cos(-t5), sin(-t5)
            k0, k1, k2 = b1 * v2 - b2 * v1, b2 * v0 - b0 * v2, b0 * v1 - b1 * v0
            c1 = 1.0 - c
            u0 = v0 + sn * k0 + c1 * (b1 * k2 - b2 * k1)
            u1 = v1 + sn * k1 + c1 * (b2 * k0 - b0 * k2)
            u2 = v2 + sn * k2 + c1 * (b0 * k1 - b1 * k0)
            # t6 = _onto0(w5, x, zz, 0.0)
            num = e0 * (x1_ * u2 - x2_ * u1) + e1 * (x2_ * u0 - x0_ * u2) + e2 * (x0_ * u1 - x1_ * u0)
            den_ = (x0_ * u0 + x1_ * u1 + x2_ * u2) - xw * (u0 * e0 + u1 * e1 + u2 * e2)
            t6 = 0.0 if hypot(num, den_) <= 1e-20 * (xx + (u0 * u0 + u1 * u1 + u2 * u2)) + 1e-300 else atan2(num, den_)
            out.append(([q1, q2, q3, t4, t5, t6], ok))
    return out
