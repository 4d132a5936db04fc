"""The chain as lines in space: every joint's axis at q = 0, in world coordinates.

Any chain ``T(q) = head @ M_1(q_1) @ L_1 @ ... @ M_n(q_n) @ tail`` is also a
product of exponentials about fixed world lines,

    ``T(q) = E_1(q_1) @ E_2(q_2) @ ... @ E_n(q_n) @ T(0)``,

where ``E_i`` turns about (revolute) or slides along (prismatic) the line of
joint ``i`` with every joint at zero: through ``o_i`` along ``w_i``.  The
base and the tool are part of the lines and of ``T(0)``, so nothing that
works on lines depends on how the arm was described (DH convention, offsets,
signs).  Every frame obeys the same rule: ``F_k(q) = E_1 … E_k F_k(0)``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Lines", "chain_lines", "parallel", "common_perpendicular", "meeting_point", "nearest_point"]


@dataclass(frozen=True)
class Lines:
    """The joint lines of a chain at q = 0, in world coordinates.

    Attributes
    ----------
    o : ndarray, shape (n, 3)
        A point on each joint line (arm length unit): the origin of the frame the joint moves in.
    w : ndarray, shape (n, 3)
        Unit direction of each line (the joint's positive direction).
    revolute : ndarray, shape (n,) of bool
    M : ndarray, shape (4, 4)
        Tool pose at q = 0.
    scale : float
        The arm's size (:attr:`poser.core.chain.Chain.scale`).
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
        """Tool point at q = 0."""
        return self.M[:3, 3]


def chain_lines(chain) -> Lines:
    """Joint lines of ``chain`` at q = 0 (kept with the chain)."""
    return chain.derived("lines", _make_lines)


def _make_lines(chain) -> Lines:
    G = chain._head.copy()
    o, w = [], []
    for i in range(chain.n):
        if i > 0:
            G = G @ chain._links[i - 1]
        o.append(G[:3, 3].copy())
        w.append(G[:3, 2] / np.linalg.norm(G[:3, 2]))
    M = G @ chain._tail
    arrays = [np.array(o), np.array(w), np.array(chain.revolute), M]
    for a in arrays:
        a.setflags(write=False)
    return Lines(*arrays, chain.scale)


def parallel(w1, w2, tol=1e-9) -> bool:
    """Whether unit directions ``w1`` and ``w2`` (3,) are parallel (or opposite) within ``tol`` (sine of the angle)."""
    return float(np.linalg.norm(np.cross(w1, w2))) < tol


def common_perpendicular(o1, w1, o2, w2):
    """Feet of the common perpendicular of two lines: (point on line 1, point on line 2, distance).

    For parallel lines the foot on line 1 is ``o1``.
    """
    d = o2 - o1
    b = float(w1 @ w2)
    den = 1.0 - b * b
    if den < 1e-14:
        f2 = o2 + w2 * float(w2 @ (o1 - o2))
        return np.array(o1, float), f2, float(np.linalg.norm(f2 - o1))
    s = (float(w1 @ d) - b * float(w2 @ d)) / den
    t = (b * float(w1 @ d) - float(w2 @ d)) / den
    f1 = o1 + s * w1
    f2 = o2 + t * w2
    return f1, f2, float(np.linalg.norm(f2 - f1))


def nearest_point(os, ws):
    """The point nearest every line (least squares: the sum of squared distances is least), or None
    when the lines are (nearly) parallel and no such single point exists."""
    A = np.zeros((3, 3))
    b = np.zeros(3)
    for o, w in zip(os, ws):
        P = np.eye(3) - np.outer(w, w)
        A += P
        b += P @ o
    if np.linalg.cond(A) > 1e10:
        return None
    return np.linalg.solve(A, b)


def meeting_point(os, ws, tol):
    """The point where all lines meet (within ``tol`` of each), or None.

    :func:`nearest_point`, accepted when its distance to each line is at most ``tol``.
    """
    x = nearest_point(os, ws)
    if x is None:
        return None
    for o, w in zip(os, ws):
        v = x - o
        if np.linalg.norm(v - w * (w @ v)) > tol:
            return None
    return x
