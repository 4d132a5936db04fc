"""One batched pass over candidate configurations: tool pose, errors, Jacobian, manipulability, label points.

:func:`solve` judges every candidate branch by the same quantities; for a
handful of candidates the cost is the number of numpy calls, not the
arithmetic, so everything is computed for all candidates at once with as
few calls as possible:

* each joint's rigid motion about (or along) its line at q = 0 is the 4 x 4
  matrix ``I + s A1 + c A2`` with ``s = sin q``, ``c = 1 - cos q`` (Rodrigues'
  formula; for a prismatic joint ``s = q`` and ``A2 = 0``) — ``A1``, ``A2``
  are constants of the chain;
* the cumulative motions ``E_1 ... E_k`` take one small matrix product per joint;
* one further product carries every point and direction that is needed —
  the joint lines (for the Jacobian), the tool pose, and the characteristic
  points of :mod:`poser.core.ik._labels` — each attached to its link.

Everything constant is prepared once per chain and cached on it.
"""

from __future__ import annotations

from math import atan2, isfinite, sqrt

import numpy as np

from poser.core.ik import _labels
from poser.core.ik._geometry import _skew, chain_lines

_I4 = np.eye(4)
_matmul = np.matmul


class Frames:
    """The carried quantities of K configurations (views into one array).

    Attributes
    ----------
    X : ndarray (n + 1, K, 4, m)
        Column j of link k (see :class:`Evaluator`) moved by ``E_1 ... E_k``, homogeneous.
    p : ndarray (K, 3)
        Tool position.
    Rt : ndarray (K, 3, 3)
        Tool rotation.
    w, o : ndarray (n, K, 3)
        Direction of and a point on each joint line (world, at the configuration).
    """

    __slots__ = ("X", "ev", "p", "Rt", "w", "o")

    def __init__(self, ev, X):
        self.ev = ev
        self.X = X
        n = ev.n
        self.p = X[n, :, :3, 3]
        self.Rt = X[n, :, :3, :3]
        self.w = X[:n, :, :3, 0]
        self.o = X[:n, :, :3, 1]

    def point(self, name):
        """A carried label point or direction (K, 3) by name ("S", "E", "W", "facing", "wk")."""
        k, c = self.ev.where[name]
        return self.X[k, :, :3, c]


class Evaluator:
    """Constants of one chain for :meth:`frames` and :meth:`metrics`."""

    def __init__(self, chain):
        L = chain_lines(chain)
        n = L.n
        self.n = n
        self.L = L
        self.rev = np.array(L.revolute, bool)
        self.all_rev = bool(self.rev.all())
        A1 = np.zeros((n, 4, 4))
        A2 = np.zeros((n, 4, 4))
        for i in range(n):
            if self.rev[i]:
                K = _skew(L.w[i])
                K2 = K @ K
                A1[i, :3, :3] = K
                A1[i, :3, 3] = -(K @ L.o[i])
                A2[i, :3, :3] = K2
                A2[i, :3, 3] = -(K2 @ L.o[i])
            else:
                A1[i, :3, 3] = L.w[i]
        self.A3 = np.stack([np.broadcast_to(_I4, A1.shape), A1, A2], axis=1).reshape(n, 1, 3, 16)
        # columns carried by each link k (moved by E_1 ... E_k): joint line k (direction, point), and
        # for the last link the tool pose at q = 0; then the label points
        cols = [[np.append(L.w[k], 0.0), np.append(L.o[k], 1.0)] for k in range(n)]
        cols.append([L.M[:, j].copy() for j in range(4)])
        self.where = {}
        pl = _labels.plan(chain)
        pts = [("S", pl.S, 1.0), ("E", pl.E, 1.0), ("W", pl.W, 1.0)]
        if pl.facing is not None:
            pts.append(("facing", (pl.facing, 1), 0.0))
        if pl.E is not None and pl.elbow_joint is not None and pl.elbow_joint < n:
            self.where["wk"] = (pl.elbow_joint, 0)
        for name, pt, h in pts:
            if pt is None:
                continue
            x, k = pt
            self.where[name] = (k, len(cols[k]))
            cols[k].append(np.append(np.asarray(x, float), h))
        # the label vectors (see label_vectors): carried points gathered, then differences
        self.lab = None
        vectors = pl.S is not None and pl.E is not None and pl.W is not None and pl.facing is not None
        if vectors and not pl.planar and not pl.elbow_prismatic and not pl.swivel:
            names = ("S", "E", "W", "facing")
            k = [self.where[nm][0] for nm in names] + [0]
            c = [self.where[nm][1] for nm in names] + [1]
            Mx = np.array(
                [
                    [0.0, 0.0, 1.0, 0.0, -1.0],  # wrist - base axis point
                    [-1.0, 0.0, 1.0, 0.0, 0.0],  # wrist - shoulder
                    [-1.0, 1.0, 0.0, 0.0, 0.0],  # elbow - shoulder
                    [0.0, 0.0, 0.0, 1.0, 0.0],  # facing
                ]
            )
            self.lab = (np.array(k), np.array(c), Mx)
        m = max(len(c) for c in cols)
        G = np.zeros((n + 1, 1, 4, m))
        for k, cs in enumerate(cols):
            for j, c in enumerate(cs):
                G[k, 0, :, j] = c
        self.G = G
        self.square = n == 6

    def frames(self, Q):
        """:class:`Frames` of configurations ``Q`` (K, n), internal units."""
        K, n = Q.shape
        # E_i(q_i) = [1, s, c] @ [I, A1, A2] for every joint and row at once: (n, K, 4, 4)
        SC = np.empty((n, K, 1, 3))
        SC[..., 0] = 1.0
        Qt = Q.T
        SC[..., 0, 1] = np.sin(Qt) if self.all_rev else np.where(self.rev[:, None], np.sin(Qt), Qt)
        SC[..., 0, 2] = 1.0 - np.cos(Qt)
        H = (SC @ self.A3).reshape(n, K, 4, 4)
        # the cumulative motions E_1 ... E_k, k = 0..n
        Cs = np.empty((n + 1, K, 4, 4))
        Cs[0] = _I4
        Cs[1] = H[0]
        for i in range(1, n):
            _matmul(Cs[i], H[i], Cs[i + 1])
        return Frames(self, Cs @ self.G)

    def metrics(self, Q, xyz, R):
        """Position error, orientation error, manipulability (lists of K floats) and the :class:`Frames` of ``Q``.

        The orientation error is :func:`poser.core.transforms.rotation_error` of the tool rotation
        and ``R``; the manipulability :func:`poser.core.jacobian.manipulability` of the Jacobian.
        """
        F = self.frames(Q)
        K = len(Q)
        x, y, z = xyz.tolist()
        P = F.p.tolist()
        perr = [sqrt((a - x) * (a - x) + (b - y) * (b - y) + (c - z) * (c - z)) for a, b, c in P]
        if R is None:
            oerr = [0.0] * K
        else:
            # trace and vee of R^T Rt are linear in Rt: one product for every row
            tv = (F.Rt.reshape(K, 9) @ _rotation_error_matrix(R)).tolist()
            oerr = [atan2(0.5 * sqrt(a * a + b * b + c * c), 0.5 * (t - 1.0)) for t, a, b, c in tv]
        # the Jacobian, transposed: (n, K, 6) then (K, n, 6); rows (w × (p - o), w) for revolute,
        # (w, 0) for prismatic joints
        w = F.w  # (n, K, 3)
        D = F.p - F.o
        lin = ((w[..., :, None] * D[..., None, :]).reshape(self.n, K, 9)) @ _CROSS
        if self.all_rev:
            Jt = np.concatenate([lin, w], axis=-1)
        else:
            rev = self.rev[:, None, None]
            Jt = np.concatenate([np.where(rev, lin, w), np.where(rev, w, 0.0)], axis=-1)
        Jt = Jt.transpose(1, 0, 2)  # (K, n, 6)
        if self.square:
            man = np.linalg.det(Jt).tolist()  # ± the product of the singular values of a square matrix
            man = [abs(m) if isfinite(m) else 0.0 for m in man]
        else:
            man = np.prod(np.linalg.svd(Jt, compute_uv=False), axis=-1).tolist()
            man = [m if isfinite(m) else 0.0 for m in man]
        return perr, oerr, man, F

    def label_vectors(self, F):
        """For the labels: (K, 4, 4) dot products and (K, 4) components along the base axis of the vectors
        wrist − base axis point, wrist − shoulder, elbow − shoulder and the facing direction, or None
        when the chain lacks one of those points."""
        if self.lab is None:
            return None
        k, c, Mx = self.lab
        P = F.X[k, :, :3, c]  # (5, K, 3): shoulder, elbow, wrist, facing, base axis point
        K = P.shape[1]
        A = (Mx @ P.reshape(5, 3 * K)).reshape(4, K, 3).transpose(1, 0, 2)
        return (A @ A.transpose(0, 2, 1)).tolist(), (A @ self.L.w[0]).tolist()


# (w ⊗ D) flattened, times this, is w × D
_CROSS = np.zeros((9, 3))
for _a, _b, _c in ((0, 1, 2), (1, 2, 0), (2, 0, 1)):
    _CROSS[3 * _b + _c, _a] = 1.0
    _CROSS[3 * _c + _b, _a] = -1.0


def _rotation_error_matrix(R):
    """B (9, 4) with ``Rt.reshape(9) @ B`` = (trace, vee) of ``R^T Rt``; R (3, 3).

    With Rd = R^T Rt, Rd[r, s] = sum_k R[k, r] Rt[k, s]: the trace takes R[k, s] for Rt[k, s], and
    vee = (Rd[2, 1] - Rd[1, 2], Rd[0, 2] - Rd[2, 0], Rd[1, 0] - Rd[0, 1]) takes, for Rt[k, s], the
    entries of row k of R given by _VEE_INDEX with the signs of _VEE_SIGN.
    """
    return R.take(_VEE_INDEX) * _VEE_SIGN


# row k of B (for Rt[k, s]): [R[k, s], ±R[k, .], ...] — column 0 the trace, 1-3 the vee
_VEE_INDEX = np.array(
    [
        [3 * k + s, 3 * k + b, 3 * k + c, 3 * k + d]
        for k in range(3)
        for s, b, c, d in ((0, 0, 2, 1), (1, 2, 0, 0), (2, 1, 0, 0))
    ]
)
_VEE_SIGN = np.array([[1.0, 0.0, -1.0, 1.0], [1.0, 1.0, 0.0, -1.0], [1.0, -1.0, 1.0, 0.0]] * 3)


def evaluator(chain) -> Evaluator:
    """The :class:`Evaluator` of ``chain`` (cached on the chain)."""
    return chain.derived("ik_evaluator", Evaluator)
