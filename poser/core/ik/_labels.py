"""Plain-language names of arm configurations.

The words come from where a few characteristic points of the arm are, not
from joint numbers:

* the *shoulder* is in front of or behind the base axis: is the wrist point
  on the side of the base axis the arm faces (the side it reaches to with
  every joint at zero)?
* the *elbow* is up or down: is the elbow above or below the straight line
  from shoulder to wrist, "above" meaning along the base axis; an arm whose
  joints all have parallel axes is instead right- or left-handed (seen along
  the axes from above) or, in a vertical plane, elbow up or down;
* the *wrist* is flipped or not by the sign of the middle wrist joint; at
  zero the wrist axes are aligned (a singularity);
* a seven-axis arm's elbow turns about the shoulder–wrist line: the swivel
  angle, measured from the plane through that line and the base axis;
* a prismatic boom points towards the target or away from it.

Each descriptor is computed only where the chain has the parts it needs.
"""

from __future__ import annotations

from dataclasses import dataclass
from math import pi, sin, sqrt

import numpy as np

from poser.core.ik._geometry import (
    TWO_PI,
    Lines,
    chain_lines,
    common_perpendicular,
    cross,
    meeting_point,
    parallel,
    wrap,
)

_UP = np.array([0.0, 0.0, 1.0])


@dataclass
class _Plan:
    planar: bool
    axis: np.ndarray | None
    S: tuple | None  # (point at q = 0, link index)
    E: tuple | None
    W: tuple | None
    elbow_joint: int | None
    elbow_prismatic: bool
    facing: np.ndarray | None
    wrist_joint: int | None
    swivel: bool


def _perp(v, w):
    return v - w * float(w @ v)


def plan(chain) -> _Plan:
    """What the labels of ``chain`` are built from (kept with the chain)."""
    return chain.derived("ik_label_plan", _make_plan)


def _make_plan(chain) -> _Plan:
    L = chain_lines(chain)
    n, o, w, rev = L.n, L.o, L.w, L.revolute
    tiny = 1e-6 * L.scale
    all_par = n >= 2 and all(parallel(w[0], w[i], 1e-9) for i in range(n) if rev[i])
    if all_par and n >= 2 and rev[0] and rev[1]:
        a = w[0]
        if n == 2:
            W = (L.p0.copy(), n)
        else:
            k = 2 if rev[2] else (3 if n > 3 and rev[3] else 2)
            W = (o[k] + w[k] * float(w[k] @ (L.p0 - o[k])), k)
        S = (o[0] + a * float(a @ (W[0] - o[0])), 0)
        E = (o[1] + a * float(a @ (W[0] - o[1])), 1)
        p = _Plan(True, a.copy(), S, E, W, 1, False, None, None, False)
    else:
        S = E = W = None
        elbow = None
        if n >= 3 and rev[0] and not parallel(w[0], w[1], 1e-9):
            f1, f2, _ = common_perpendicular(o[0], w[0], o[1], w[1])
            S = (f2, 1)
            elbow = 3 if n >= 7 else 2
            if elbow < n:
                e1, e2, _ = common_perpendicular(o[elbow - 1], w[elbow - 1], o[elbow], w[elbow])
                E = (e2 if rev[elbow] else o[elbow].copy(), elbow)
            if n <= 4:
                W = (L.p0.copy(), n)
            else:
                c = meeting_point(o[n - 3 :], w[n - 3 :], 1e-9 * L.scale) if rev[n - 3 :].all() else None
                if c is not None:
                    W = (c, n - 3)
                else:
                    # the foot on the first wrist axis: a point of the forearm, moved by the joints before it
                    g1, _, _ = common_perpendicular(o[elbow + 1], w[elbow + 1], o[elbow + 2], w[elbow + 2])
                    W = (g1, elbow + 1)
        if S is not None and W is not None:
            # shoulder and elbow points in the plane the wrist point moves in (a sideways offset moves it)
            u = w[1]
            S = (S[0] + u * float(u @ (W[0] - S[0])), S[1])
            if E is not None and rev[elbow] and parallel(w[elbow], u, 1e-9):
                E = (E[0] + u * float(u @ (W[0] - E[0])), E[1])
        facing = None
        if S is not None:
            # the direction the arm faces: towards the wrist at q = 0, across the base axis and within
            # the plane the upper arm swings in (a sideways shoulder offset does not count)
            side = _perp(w[1], w[0])
            side = side / np.linalg.norm(side)
            for cand in (W[0] - o[0], S[0] - o[0], (E[0] - o[0]) if E else np.zeros(3)):
                f = _perp(_perp(cand, w[0]), side)
                if np.linalg.norm(f) > tiny:
                    facing = f / np.linalg.norm(f)
                    break
            if facing is None:
                facing = cross(w[0], w[1])
                facing /= np.linalg.norm(facing)
        wrist = None
        if n >= 5 and rev[n - 3 :].all():
            wrist = n - 2
        p = _Plan(
            False,
            None,
            S,
            E,
            W,
            elbow,
            bool(elbow is not None and elbow < n and not rev[elbow]),
            facing,
            wrist,
            n >= 7 and S is not None and E is not None,
        )
    return p


def describe(chain, Q, fmt_angle, frames=None) -> list[str]:
    """Words for each configuration in ``Q`` (K, n) (without extra-turn words).

    ``frames`` is ``evaluator(chain).frames(Q)`` (:mod:`poser.core.ik._evaluate`) when already computed.
    """
    if getattr(Q, "ndim", 0) != 2:
        Q = np.atleast_2d(Q)
    pl = plan(chain)
    L: Lines = chain_lines(chain)
    if pl.S is None or pl.W is None:
        return [_fallback(chain, q) for q in Q]
    if frames is None:
        from poser.core.ik._evaluate import evaluator

        frames = evaluator(chain).frames(np.asarray(Q, float))
    tiny = 1e-6 * L.scale
    lv = frames.ev.label_vectors(frames)
    if lv is not None:
        return _describe_arm(pl, Q, tiny, lv)
    S, W = frames.point("S"), frames.point("W")
    E = frames.point("E") if pl.E is not None else None
    cols = []  # one list of words per descriptor, each K long
    if pl.planar:
        a = pl.axis
        up = _perp(_UP, a)
        d = W - S
        v = E - S
        cr = (cross(v, d) @ a).tolist()
        nd = np.sqrt(np.sum(d * d, axis=1))
        # distance of the elbow from the shoulder–wrist line
        off = (np.abs(cross(v, d) @ a) / np.maximum(nd, 1e-300)).tolist()
        out_ = (np.sum(v * (d - v), axis=1) >= 0).tolist()
        if np.linalg.norm(up) > 0.5:
            pe = v - d * (np.sum(v * d, axis=1) / np.maximum(nd * nd, 1e-300))[:, None]
            side = (pe @ up > 0).tolist()
            bent = ["elbow up" if x else "elbow down" for x in side]
        else:
            sg = float(np.sign(a @ _UP) or 1.0)
            bent = ["right-handed arm" if c * sg > 0 else "left-handed arm" for c in cr]
        cols.append(
            [("arm stretched" if o_ else "arm folded") if f <= tiny else b for f, o_, b in zip(off, out_, bent)]
        )
        return [" · ".join(ws) for ws in zip(*cols)]
    w0 = L.w[0]
    o0 = L.o[0]
    facing = frames.point("facing")
    rel = W - o0
    off_axis = (np.linalg.norm(rel - np.outer(rel @ w0, w0), axis=1) <= tiny).tolist()
    front = (np.sum(facing * rel, axis=1) >= 0).tolist()
    cols.append(
        [
            "wrist over the base axis" if o_ else ("shoulder front" if f else "shoulder back")
            for o_, f in zip(off_axis, front)
        ]
    )
    if E is not None and not pl.elbow_prismatic:
        d = W - S
        v = E - S
        dd = np.maximum(np.sum(d * d, axis=1), 1e-300)
        pe = v - d * (np.sum(v * d, axis=1) / dd)[:, None]
        npe = np.linalg.norm(pe, axis=1)
        straight = (npe <= tiny).tolist()
        out_ = (np.sum(v * (d - v), axis=1) >= 0).tolist()
        if pl.swivel:
            dh = d / np.sqrt(dd)[:, None]
            ref = w0 - dh * (dh @ w0)[:, None]
            weak = np.linalg.norm(ref, axis=1) < 1e-9
            ref = np.where(weak[:, None], facing - dh * np.sum(facing * dh, axis=1)[:, None], ref)
            ang = np.arctan2(np.sum(cross(ref, pe) * dh, axis=1), np.sum(ref * pe, axis=1))
            bent = [f"elbow swivel {fmt_angle(x)}" for x in ang]
        else:
            upc = pe @ w0
            sgn = np.where(np.abs(upc) > 1e-3 * npe, upc, np.sum(pe * facing, axis=1))
            bent = ["elbow up" if x else "elbow down" for x in (sgn > 0).tolist()]
        cols.append(
            [("arm stretched" if o_ else "arm folded") if st_ else b for st_, o_, b in zip(straight, out_, bent)]
        )
    elif E is not None:
        wk = frames.point("wk")
        fwd = (np.sum(wk * (W - S), axis=1) >= 0).tolist()
        cols.append(["boom forward" if f else "boom reversed" for f in fwd])
    if pl.wrist_joint is not None:
        v = wrap(Q[:, pl.wrist_joint])
        aligned = (np.abs(np.sin(v)) < 1e-6).tolist()
        pos = (v > 0).tolist()
        cols.append(
            [
                "wrist axes aligned" if al else ("wrist not flipped" if p_ else "wrist flipped")
                for al, p_ in zip(aligned, pos)
            ]
        )
    return [" · ".join(ws) for ws in zip(*cols)]


def _describe_arm(pl, Q, tiny, dots):
    """:func:`describe` for an arm with shoulder, elbow and wrist points (no swivel), row by row in floats.

    ``dots`` (K, 5, 5) are the dot products of rel = wrist - base axis point, d = wrist - shoulder,
    v = elbow - shoulder, the facing direction and the base axis direction (the last column: the
    components along the base axis) (:meth:`poser.core.ik._evaluate.Evaluator.label_vectors`); the
    words are those of the vector form.
    """
    wj = pl.wrist_joint
    qw = Q[:, wj].tolist() if wj is not None else None
    out = []
    for k, g in enumerate(dots):
        g0, g1, g2 = g[0], g[1], g[2]
        rw = g0[4]
        # the wrist point's distance from the base axis; on which side of it
        if sqrt(max(g0[0] - rw * rw, 0.0)) <= tiny:
            words = "wrist over the base axis"
        else:
            words = "shoulder front" if g0[3] >= 0 else "shoulder back"
        # pe = v - d (v·d / d·d): the elbow's offset from the shoulder–wrist line
        vd = g1[2]
        t = vd / max(g1[1], 1e-300)
        npe = sqrt(max(g2[2] - vd * t, 0.0))
        if npe <= tiny:
            words += " · arm stretched" if vd - g2[2] >= 0 else " · arm folded"  # v·(d - v)
        else:
            upc = g2[4] - t * g1[4]  # pe along the base axis, else towards the facing direction
            sgn = upc if abs(upc) > 1e-3 * npe else g2[3] - t * g1[3]
            words += " · elbow up" if sgn > 0 else " · elbow down"
        if wj is not None:
            v = pi - (pi - qw[k]) % TWO_PI
            if abs(sin(v)) < 1e-6:
                words += " · wrist axes aligned"
            else:
                words += " · wrist not flipped" if v > 0 else " · wrist flipped"
        out.append(words)
    return out


def _fallback(chain, q):
    signs = []
    for i, (v, r) in enumerate(zip(q, chain.revolute)):
        if r:
            signs.append(f"{chain.names[i]} {'positive' if wrap(v) >= 0 else 'negative'}")
    return " · ".join(signs[:3]) or "single configuration"
