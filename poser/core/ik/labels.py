"""Configuration words, read off the pose through the arm's anatomy (:mod:`poser.core.anatomy`).

* **shoulder front / back**: the wrist point is on the side of the base axis the arm faces, or the
  other; *wrist over the base axis* when it is on the axis (a shoulder singularity), *wrist beside
  the base axis* when a sideways shoulder offset puts it in the plane of the base and shoulder axes;
* **elbow up / down**: the elbow point above or below the line from shoulder to wrist, seen in the
  arm's plane with "forward" the direction from the base axis out to the wrist and "up" the base
  frame's z axis (away from the mounting surface) — so the word stays along a branch when the wrist
  passes over the shoulder, and an arm reaching back over its base is read mirrored; *arm stretched* /
  *arm folded* when the three points are in one line;
  seven-axis arms: *elbow bend positive / negative* (the sign of the elbow's bend about its axis);
* planar arms: *elbow up / down* in a vertical plane, *right- / left-handed arm* (seen from above)
  in a horizontal one;
* **wrist flipped / not flipped**: the sign of the middle wrist joint's bend from where the wrist
  axes line up (*wrist axes aligned* there — a wrist singularity);
* a telescopic boom: *boom forward* / *boom reversed* (sliding towards the target or away from it).

Every word comes from where points are, never from joint numbers, DH signs or offsets (an arm
described with other signs or offsets gets the same words for the same pose), except the two
signs that are the arm's own joint directions (the wrist's and the elbow's bend).
"""

from __future__ import annotations

from math import pi, sin, sqrt

import numpy as np

from poser.core.anatomy import anatomy
from poser.core.transforms import TWO_PI, wrap

__all__ = ["describe", "WORD_TOL", "ALIGNED_TOL"]

WORD_TOL = 1e-6
"""Points within this fraction of the arm's size are in line (stretched, over the axis)."""

ALIGNED_TOL = 1e-7
"""A wrist bend whose sine is below this is aligned (the wrist singularity)."""


def _plan(chain):
    """Per chain: which frames carry the points, their local coordinates, and the constants of the words."""

    def make(c):
        an = anatomy(c)
        if an.kind == "other":
            return None
        pts = [an.shoulder, an.elbow, an.wrist, an.facing]
        idx = [p[0] if p else 0 for p in pts]
        X = np.array([p[1] if p else np.zeros(4) for p in pts])
        axis_frame = None
        if an.elbow_joint is not None and (an.elbow_prismatic or c.n >= 7):
            # the elbow joint's axis direction: z of the frame it moves in (frame index = its index, pre applied)
            pre = c.joints[an.elbow_joint].pre
            axis_frame = (an.elbow_joint, pre[:3, 2].copy())
        return an, idx, X, axis_frame

    return chain.derived("ik_label_plan", make)


def _dot(a, b):
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]


def _sub(a, b):
    return (a[0] - b[0], a[1] - b[1], a[2] - b[2])


def _cross(a, b):
    return (a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0])


def describe(chain, Q, F) -> list[str]:
    """Words for each configuration (without extra-turn words).

    Parameters
    ----------
    Q : ndarray (K, n)
        Joint values, internal units.
    F : ndarray (K, n + 2, 4, 4)
        Their frames (:func:`poser.core.fk.frames`).

    Returns
    -------
    list of K str
    """
    pl = _plan(chain)
    if pl is None:
        return [_fallback(chain, q) for q in Q]
    an, idx, X, axis_frame = pl
    P = np.einsum("kpij,pj->kpi", F[:, idx, :3, :], X).tolist()  # (K, 4, 3): S, E, W, facing
    axes = None
    if axis_frame is not None:
        axes = (F[:, axis_frame[0], :3, :3] @ axis_frame[1]).tolist()
    beta = None
    if an.wrist_joints is not None:
        beta = wrap(Q[:, an.wrist_joints[1]] - an.wrist_straight).tolist()
    tiny = WORD_TOL * chain.scale
    up = an.up.tolist()
    bo, bw = an.base_o.tolist(), an.base_w.tolist()
    seven = chain.n >= 7
    out = []
    for k, (S, E, W, f) in enumerate(P):
        if an.kind == "planar":
            a = an.axis.tolist()
            d, v = _inplane(_sub(W, S), a), _inplane(_sub(E, S), a)
            out.append(_bend(d, v, tiny) or _planar_bend(a, up, d, v))
            continue
        # the wrist point across the base axis, and on which side of it the arm faces
        h0, h1, h2 = W[0] - bo[0], W[1] - bo[1], W[2] - bo[2]
        t = h0 * bw[0] + h1 * bw[1] + h2 * bw[2]
        h0, h1, h2 = h0 - bw[0] * t, h1 - bw[1] * t, h2 - bw[2] * t
        side = h0 * f[0] + h1 * f[1] + h2 * f[2]
        if sqrt(h0 * h0 + h1 * h1 + h2 * h2) <= tiny:
            words = "wrist over the base axis"
        elif abs(side) <= tiny:
            words = "wrist beside the base axis"
        else:
            words = "shoulder front" if side > 0 else "shoulder back"
        if an.elbow is not None and not an.elbow_prismatic:
            d0, d1, d2 = W[0] - S[0], W[1] - S[1], W[2] - S[2]
            v0, v1, v2 = E[0] - S[0], E[1] - S[1], E[2] - S[2]
            dd = d0 * d0 + d1 * d1 + d2 * d2
            vd = v0 * d0 + v1 * d1 + v2 * d2
            t = vd / (dd if dd > 1e-300 else 1e-300)
            p0, p1, p2 = v0 - d0 * t, v1 - d1 * t, v2 - d2 * t  # the elbow off the shoulder–wrist line
            npe = sqrt(p0 * p0 + p1 * p1 + p2 * p2)
            if npe <= tiny:
                bent = "arm stretched" if vd - (v0 * v0 + v1 * v1 + v2 * v2) >= 0 else "arm folded"
            elif seven:
                z = axes[k]
                c0, c1, c2 = _cross((v0, v1, v2), (W[0] - E[0], W[1] - E[1], W[2] - E[2]))
                bent = "elbow bend positive" if c0 * z[0] + c1 * z[1] + c2 * z[2] > 0 else "elbow bend negative"
            else:
                # the side of the shoulder–wrist line the elbow is on, seen across the arm's plane from the
                # side where "forward" (from the base axis out to the wrist) has "up" on its left: continuous
                # along a branch (no flip when the wrist passes over the shoulder), mirrored for an arm
                # reaching back over its base
                fw = (h0, h1, h2) if sqrt(h0 * h0 + h1 * h1 + h2 * h2) > tiny else tuple(f)
                n0, n1, n2 = _cross(up, fw)
                c0, c1, c2 = _cross((v0, v1, v2), (d0, d1, d2))
                sgn = c0 * n0 + c1 * n1 + c2 * n2
                if abs(sgn) <= 1e-9 * npe * sqrt(dd) * sqrt(n0 * n0 + n1 * n1 + n2 * n2):
                    upc = p0 * up[0] + p1 * up[1] + p2 * up[2]  # the arm's plane is across: above or below
                    sgn = upc
                bent = "elbow up" if sgn > 0 else "elbow down"
            words += " · " + bent
        elif an.elbow is not None:
            z = axes[k]
            fwd = z[0] * (W[0] - S[0]) + z[1] * (W[1] - S[1]) + z[2] * (W[2] - S[2]) >= 0
            words += " · boom forward" if fwd else " · boom reversed"
        if beta is not None:
            b = beta[k]
            words += " · " + ("wrist axes aligned" if abs(sin(b)) < ALIGNED_TOL else
                              ("wrist not flipped" if b > 0 else "wrist flipped"))
        out.append(words)
    return out


def _inplane(v, a):
    t = _dot(v, a)
    return (v[0] - a[0] * t, v[1] - a[1] * t, v[2] - a[2] * t)


def _bend(d, v, tiny):
    """"arm stretched" / "arm folded" when the elbow is in line with shoulder and wrist, else None."""
    t = _dot(v, d) / max(_dot(d, d), 1e-300)
    pe = (v[0] - d[0] * t, v[1] - d[1] * t, v[2] - d[2] * t)
    if sqrt(_dot(pe, pe)) > tiny:
        return None
    return "arm stretched" if _dot(v, _sub(d, v)) >= 0 else "arm folded"


def _planar_bend(a, up, d, v):
    u = _inplane(up, a)
    if sqrt(_dot(u, u)) > 0.5:  # a vertical plane: up and down
        t = _dot(v, d) / max(_dot(d, d), 1e-300)
        pe = (v[0] - d[0] * t, v[1] - d[1] * t, v[2] - d[2] * t)
        return "elbow up" if _dot(pe, u) > 0 else "elbow down"
    # a horizontal plane, seen from above (a points up)
    return "right-handed arm" if _dot(_cross(v, d), a) > 0 else "left-handed arm"


def _fallback(chain, q):
    signs = []
    for i, (v, r) in enumerate(zip(q.tolist(), chain.revolute)):
        if r:
            signs.append(f"{chain.names[i]} {'positive' if pi - (pi - v) % TWO_PI >= 0 else 'negative'}")
    return " · ".join(signs[:3]) or "single configuration"
