"""One batched pass over candidate configurations: tool pose, errors, Jacobian, manipulability, label points.

:func:`solve` judges every candidate branch by the same quantities; for a
handful of candidates the cost is the number of numpy calls, not the
arithmetic, so everything is computed for all candidates at once with as
few calls as possible:

* each joint's rigid motion about (or along) its line at q = 0 is the 4 x 4
  matrix ``(I + A2) + sin q A1 - cos q A2`` (Rodrigues' formula; for a
  prismatic joint ``I + q A1``) — ``A1``, ``A2`` are constants of the chain,
  so one 2-D product of the rows ``[1, sin q, cos q]`` with a constant matrix
  gives every joint's motion for every candidate;
* the cumulative motions ``C_k = E_1 ... E_k`` take one small matrix product
  per joint, on their top rows only, in the order x, y, z, x, y;
* one further 2-D product carries every column that is needed — the joint
  directions, tool point minus each joint's point (for the Jacobian), the
  tool pose, the characteristic points of :mod:`poser.core.ik._labels` and
  the differences the labels are made of — each a sum of vectors attached
  to links; the repeated rows x, y make the cross products of the Jacobian
  products of shifted views.

Everything constant is prepared once per chain and cached on it.
"""

from __future__ import annotations

from math import atan2, isfinite, sqrt

import numpy as np

from poser.core.ik import _labels
from poser.core.ik._geometry import _skew, chain_lines

_I4 = np.eye(4)
_matmul = np.matmul
try:  # the determinant kernel np.linalg.det calls, without its argument checks (J is (K, 6, 6) float)
    from numpy.linalg._umath_linalg import det as _det
except ImportError:  # pragma: no cover - other numpy layouts
    _det = np.linalg.det


class Frames:
    """The carried quantities of K configurations (views into one array).

    Attributes
    ----------
    Y : ndarray (K, 5, m)
        Column j of :attr:`Evaluator.G` moved by the configurations, world coordinates; rows 0-2 are
        x, y, z and rows 3, 4 repeat x, y (``Y[:, 1:4]`` and ``Y[:, 2:5]`` are the cyclic shifts a
        cross product takes).
    p : ndarray (K, 3)
        Tool position.
    Rt : ndarray (K, 3, 3)
        Tool rotation.
    w : ndarray (K, 3, n)
        Direction of each joint line (world, at the configuration), one column per joint.
    """

    __slots__ = ("Y", "ev", "p", "Rt", "w")

    def __init__(self, ev, Y):
        self.ev = ev
        self.Y = Y
        n = ev.n
        self.w = Y[:, :3, :n]
        self.p = Y[:, :3, 2 * n]
        self.Rt = Y[:, :3, 2 * n + 1 : 2 * n + 4]

    def point(self, name):
        """A carried label point or direction (K, 3) by name ("S", "E", "W", "facing", "wk")."""
        return self.Y[:, :3, self.ev.where[name]]


class Evaluator:
    """Constants of one chain for :meth:`frames` and :meth:`metrics`.

    The motion of a configuration is carried as the top rows of ``C_k = E_1 ... E_k`` (k = 0..n)
    in the row order x, y, z, x, y (one product per joint, on 5 x 4 blocks); one further product
    with the constant matrix :attr:`G` ((n + 1) * 4, m) gives every carried column at once.  A
    column of ``G`` may take vectors from several links: differences such as tool point minus a
    joint's point come out of that product directly.
    """

    def __init__(self, chain):
        L = chain_lines(chain)
        n = L.n
        self.n = n
        self.L = L
        self.rev = np.array(L.revolute, bool)
        self.all_rev = bool(self.rev.all())
        self.pris = np.flatnonzero(~self.rev)
        # E_i(q_i) = (I + A2) + sin q_i A1 - cos q_i A2 (Rodrigues' formula) for a revolute joint, I + q_i A1
        # for a prismatic one: row [1, sin q (or q), cos q] of every joint times B ((2n + 1), n * 16)
        B = np.zeros((2 * n + 1, n, 16))
        for i in range(n):
            A1 = np.zeros((4, 4))
            A2 = np.zeros((4, 4))
            if self.rev[i]:
                K = _skew(L.w[i])
                K2 = K @ K
                A1[:3, :3] = K
                A1[:3, 3] = -(K @ L.o[i])
                A2[:3, :3] = K2
                A2[:3, 3] = -(K2 @ L.o[i])
            else:
                A1[:3, 3] = L.w[i]
            B[0, i] = (_I4 + A2).ravel()
            B[1 + i, i] = A1.ravel()
            B[1 + n + i, i] = -A2.ravel()
        self.B = B.reshape(2 * n + 1, n * 16)
        # the first rows (x, y, z, x, y) of C_0 = I
        self.C0 = np.array([[1.0, 0, 0, 0], [0, 1.0, 0, 0], [0, 0, 1.0, 0], [1.0, 0, 0, 0], [0, 1.0, 0, 0]])
        # the carried columns, each a list of (link k, homogeneous 4-vector) moved by C_k and summed:
        # joint directions w_i (n), tool point minus joint point p - o_i (n), the tool pose at q = 0
        # (point, then x, y, z axes), then the label points
        cols = [[(k, np.append(L.w[k], 0.0))] for k in range(n)]
        cols += [[(n, L.M[:, 3].copy()), (k, -np.append(L.o[k], 1.0))] for k in range(n)]
        cols += [[(n, L.M[:, j].copy())] for j in (3, 0, 1, 2)]
        self.where = {}
        pl = _labels.plan(chain)
        pts = [("S", pl.S, 1.0), ("E", pl.E, 1.0), ("W", pl.W, 1.0)]
        if pl.facing is not None:
            pts.append(("facing", (pl.facing, 1), 0.0))
        for name, pt, h in pts:
            if pt is None:
                continue
            x, k = pt
            self.where[name] = len(cols)
            cols.append([(k, np.append(np.asarray(x, float), h))])
        if pl.E is not None and pl.elbow_joint is not None and pl.elbow_joint < n:
            self.where["wk"] = pl.elbow_joint  # the direction of the elbow joint's line
        # the label vectors (see label_vectors): wrist - base axis point, wrist - shoulder,
        # elbow - shoulder, facing, base axis direction
        self.lab = None
        vectors = pl.S is not None and pl.E is not None and pl.W is not None and pl.facing is not None
        if vectors and not pl.planar and not pl.elbow_prismatic and not pl.swivel:
            col = {nm: cols[self.where[nm]][0] for nm in ("S", "E", "W", "facing")}
            neg = lambda kx: (kx[0], -kx[1])  # noqa: E731
            self.lab = len(cols)
            cols.append([col["W"], (0, -np.append(L.o[0], 1.0))])
            cols.append([col["W"], neg(col["S"])])
            cols.append([col["E"], neg(col["S"])])
            cols.append([col["facing"]])
            cols.append([(0, np.append(L.w[0], 0.0))])
        G = np.zeros((n + 1, 4, len(cols)))
        for j, parts in enumerate(cols):
            for k, v in parts:
                G[k, :, j] += v
        self.G = G.reshape((n + 1) * 4, len(cols))
        self.square = n == 6

    def frames(self, Q):
        """:class:`Frames` of configurations ``Q`` (K, n), internal units."""
        K, n = Q.shape
        Z = np.empty((K, 2 * n + 1))
        Z[:, 0] = 1.0
        np.sin(Q, out=Z[:, 1 : n + 1])
        np.cos(Q, out=Z[:, n + 1 :])
        if not self.all_rev:
            Z[:, 1 + self.pris] = Q[:, self.pris]
        H = (Z @ self.B).reshape(K, n, 4, 4)
        # C_{k+1} = C_k E_{k+1}, top rows only (the bottom row of every E is 0, 0, 0, 1)
        C = np.empty((n + 1, K, 5, 4))
        C[0] = self.C0
        for i in range(n):
            _matmul(C[i], H[:, i], C[i + 1])
        # (one copy into the layout of the product: cheaper than products on strided blocks)
        return Frames(self, (C.transpose(1, 2, 0, 3).reshape(K * 5, (n + 1) * 4) @ self.G).reshape(K, 5, -1))

    def metrics(self, Q, xyz, R):
        """Position error, orientation error, manipulability (lists of K floats) and the :class:`Frames` of ``Q``.

        The orientation error is :func:`poser.core.transforms.rotation_error` of the tool rotation
        and ``R``; the manipulability :func:`poser.core.jacobian.manipulability` of the Jacobian.
        """
        F = self.frames(Q)
        K = len(Q)
        n = self.n
        x, y, z = xyz.tolist()
        P = F.p.tolist()
        perr = [sqrt((a - x) * (a - x) + (b - y) * (b - y) + (c - z) * (c - z)) for a, b, c in P]
        if R is None:
            oerr = [0.0] * K
        else:
            # trace and vee of R^T Rt are linear in Rt: one product for every row
            tv = (F.Rt.reshape(K, 9) @ _rotation_error_matrix(R)).tolist()
            oerr = [atan2(0.5 * sqrt(a * a + b * b + c * c), 0.5 * (t - 1.0)) for t, a, b, c in tv]
        # the Jacobian (K, 6, n): columns (w × (p - o), w) for revolute, (w, 0) for prismatic joints;
        # the cross product from the cyclically shifted rows of the carried columns
        Y, n2 = F.Y, 2 * n
        J = np.concatenate([Y[:, 1:4, :n] * Y[:, 2:5, n:n2] - Y[:, 2:5, :n] * Y[:, 1:4, n:n2], F.w], axis=1)
        if not self.all_rev:
            J[:, :3, self.pris] = F.w[:, :, self.pris]
            J[:, 3:, self.pris] = 0.0
        if self.square:
            man = _det(J).tolist()  # ± the product of the singular values of a square matrix
            man = [abs(m) if isfinite(m) else 0.0 for m in man]
        else:
            man = np.prod(np.linalg.svd(J, compute_uv=False), axis=-1).tolist()
            man = [m if isfinite(m) else 0.0 for m in man]
        return perr, oerr, man, F

    def label_vectors(self, F):
        """For the labels: the (K, 5, 5) dot products (nested lists) of the vectors wrist − base axis point,
        wrist − shoulder, elbow − shoulder, the facing direction and the base axis direction, or None
        when the chain lacks one of those points."""
        if self.lab is None:
            return None
        A = F.Y[:, :3, self.lab : self.lab + 5]  # (K, 3, 5)
        return (A.transpose(0, 2, 1) @ A).tolist()


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
