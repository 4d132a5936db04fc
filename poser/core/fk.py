"""Forward kinematics: tool poses and every frame's pose, single and batched.

Joint values are in internal units (radians for revolute joints, the arm's
length unit for prismatic ones); see :meth:`poser.core.chain.Chain.q_from_user`.
"""

from __future__ import annotations

import os
import threading
from concurrent.futures import ThreadPoolExecutor

import numpy as np

from poser.core._fkkernel import build_kernel, build_scalar_kernel
from poser.core.chain import Chain
from poser.core.errors import PoserValueError

__all__ = ["fk", "frames", "link_transforms", "CHUNK", "COMPILED_MIN"]

CHUNK = 4096
"""Poses computed together in the batched kernel: small enough that a
chunk's working arrays stay in the CPU cache."""

_PARALLEL_MIN = 4 * CHUNK
"""Batches of the numpy backend at least this large are split over the worker threads."""
COMPILED_MIN = 16384
"""From this many poses on, batched FK uses the compiled backend where numba is installed (smaller
batches — a window's ghosts, one IK solve — never wait for numba to load or compile)."""
COMPILED_CHUNK = 65536
"""Poses per task of the compiled backend (the tasks share the worker threads)."""
_pool: ThreadPoolExecutor | None = None


def _workers() -> int:
    return max(1, min(4, os.cpu_count() or 1))


def _get_pool() -> ThreadPoolExecutor:
    global _pool
    if _pool is None:
        _pool = ThreadPoolExecutor(max_workers=_workers(), thread_name_prefix="poser-fk")
    return _pool


def fk(chain: Chain, q, out=None):
    """Tool pose(s) in world coordinates.

    Parameters
    ----------
    chain : Chain
    q : array_like, shape (..., n)
        Joint values, internal units (rad; length unit).
    out : ndarray, shape (..., 4, 4), optional
        Where to write the result: C-contiguous float64 with the leading
        shape of ``q``.  Returned when given.

    Returns
    -------
    ndarray, shape (..., 4, 4)
        ``base @ A_1(q_1) @ ... @ A_n(q_n) @ tool``; lengths in the arm's unit.
    """
    q = chain.check_q(q)
    lead = q.shape[:-1]
    if out is not None and not (
        isinstance(out, np.ndarray)
        and out.shape == lead + (4, 4)
        and out.dtype == np.float64
        and out.flags.c_contiguous
        and out.flags.writeable
    ):
        got = f"shape {out.shape}, dtype {out.dtype}" if isinstance(out, np.ndarray) else type(out).__name__
        raise PoserValueError(f"out must be a writeable C-contiguous float64 array of shape {lead + (4, 4)}, got {got}")
    if q.ndim == 1:
        if out is None:
            return _fk_single(chain, q)
        out[...] = _fk_single(chain, q)
        return out
    flat = np.ascontiguousarray(q.reshape(-1, chain.n))
    N = flat.shape[0]
    if out is None:
        res = np.empty((N, 4, 4))
    else:
        res = out.reshape(N, 4, 4)  # a view: out is C-contiguous
    compiled = _backend(chain, N)
    if compiled is not None:
        step = COMPILED_CHUNK

        def run(s):
            compiled(flat[s : s + step], res[s : s + step])
    else:
        _kernel(chain)  # build once, before any worker thread needs it
        step = CHUNK

        def run(s):
            _fk_chunk(chain, flat[s : s + step], res[s : s + step])
    starts = range(0, N, step)
    if N >= (4 * step if compiled is not None else _PARALLEL_MIN) and _workers() > 1:
        list(_get_pool().map(run, starts))
    else:
        for s in starts:
            run(s)
    return res.reshape(lead + (4, 4)) if out is None else out


def _backend(chain: Chain, N: int):
    """The one choice of backend for a batch of ``N`` poses: the compiled kernel
    (:mod:`poser.core._compiled`) from :data:`COMPILED_MIN` poses on where it is available, else
    None — the generated numpy kernel.  It depends only on ``N`` and the installation, so the same
    input always goes the same way."""
    if N < COMPILED_MIN:
        return None
    from poser.core import _compiled

    return _compiled.fk_kernel(chain)


def _fk_single(chain: Chain, q) -> np.ndarray:
    """One configuration through the chain's generated scalar kernel."""
    kernel = chain.derived("fk_scalar", _make_scalar)[0]
    return np.array(kernel(q.tolist()) + ((0.0, 0.0, 0.0, 1.0),))


def _make_scalar(c: Chain):
    return build_scalar_kernel(c._head, c._links, c._tail, c.revolute)


def _make_kernel(c: Chain):
    return build_kernel(c._head, c._links, c._tail, c.revolute)


def kernel_source(chain: Chain) -> str:
    """The Python source of the chain's generated batched FK kernel (for reading and debugging)."""
    return chain.derived("fk_kernel", _make_kernel)[1]


def _kernel(chain: Chain):
    """The chain's batched kernel, generated once per chain."""
    return chain.derived("fk_kernel", _make_kernel)[0]


_scratch = threading.local()


def _fk_chunk(chain: Chain, q, out):
    """Tool poses of one chunk through the chain's generated kernel (see :mod:`poser.core._fkkernel`).

    Scratch arrays are kept per thread and reused, so a chunk allocates nothing.
    """
    kernel = _kernel(chain)
    m = q.shape[0]
    key = (kernel.nbuf, kernel.nrev, chain.n, m)
    bufs = getattr(_scratch, "bufs", None)
    if bufs is None or bufs[0] != key:
        bufs = (
            key,
            np.empty((kernel.nbuf, m)),
            np.empty((kernel.nrev, m)),
            np.empty((kernel.nrev, m)),
            np.empty((chain.n, m)),
        )
        _scratch.bufs = bufs
    _, b, C, S, qT = bufs
    np.copyto(qT, q.T)
    kernel(qT, out, b, C, S)


def _link_plan(c: Chain) -> np.ndarray:
    """Constants ``B`` (2n + 1, 16 n) with ``A(q) = Z(q) @ B``, ``Z = [1, s_1 … s_n, c_1 … c_n]``.

    A revolute joint's motion is ``Rz(q) = M0 + sin q M1 + cos q M2``, so its
    A-matrix ``pre Rz(q) post`` is linear in (1, sin q, cos q); a prismatic
    joint's ``pre Tz(q) post`` is linear in (1, q) (its slot of ``s`` holds q,
    of ``c`` holds 0).  One matrix product then gives every A-matrix of every
    configuration.
    """
    n = c.n
    M0 = np.diag([0.0, 0.0, 1.0, 1.0])
    M1 = np.zeros((4, 4))
    M1[0, 1], M1[1, 0] = -1.0, 1.0
    M2 = np.diag([1.0, 1.0, 0.0, 0.0])
    E = np.zeros((4, 4))
    E[2, 3] = 1.0
    B = np.zeros((2 * n + 1, n, 4, 4))
    for i, j in enumerate(c.joints):
        if j.is_revolute:
            B[0, i] = j.pre @ M0 @ j.post
            B[1 + i, i] = j.pre @ M1 @ j.post
            B[1 + n + i, i] = j.pre @ M2 @ j.post
        else:
            B[0, i] = j.pre @ j.post
            B[1 + i, i] = j.pre @ E @ j.post
    B = B.reshape(2 * n + 1, n * 16)
    B.setflags(write=False)
    return B


def link_transforms(chain: Chain, q):
    """Each joint's own transform ``pre_i @ M_i(q_i) @ post_i`` (the A-matrix of DH row i).

    Parameters
    ----------
    q : array_like, shape (..., n)
        Joint values, internal units (rad; length unit).

    Returns
    -------
    ndarray, shape (..., n, 4, 4)
    """
    q = chain.check_q(q)
    lead = q.shape[:-1]
    n = chain.n
    Q = q.reshape(-1, n)
    K = Q.shape[0]
    Z = np.empty((K, 2 * n + 1))
    Z[:, 0] = 1.0
    rev = chain.revolute
    if rev.all():
        np.sin(Q, out=Z[:, 1 : n + 1])
        np.cos(Q, out=Z[:, n + 1 :])
    else:
        Z[:, 1 : n + 1] = np.where(rev, np.sin(Q), Q)
        Z[:, n + 1 :] = np.where(rev, np.cos(Q), 0.0)
    A = Z @ chain.derived("fk_link_plan", _link_plan)
    return A.reshape(lead + (n, 4, 4))


def frames(chain: Chain, q):
    """World pose of every frame: base, frame 1 … frame n, tool.

    Parameters
    ----------
    q : array_like, shape (..., n)
        Joint values, internal units.

    Returns
    -------
    ndarray, shape (..., n + 2, 4, 4)
        Index 0 is the base coordinate system (world → base), index ``i`` the
        world pose of frame ``i`` (DH frame ``i`` for a DH arm), index
        ``n + 1`` the tool coordinate system.  The tool frame equals
        :func:`fk` to rounding.
    """
    q = chain.check_q(q)
    lead = q.shape[:-1]
    n = chain.n
    A = link_transforms(chain, q.reshape(-1, n))  # (K, n, 4, 4)
    K = A.shape[0]
    out = np.empty((K, n + 2, 4, 4))
    out[:, 0] = chain.base
    np.matmul(chain.base, A[:, 0], out=out[:, 1])
    for i in range(1, n):
        np.matmul(out[:, i], A[:, i], out=out[:, i + 1])
    np.matmul(out[:, n], chain.tool, out=out[:, n + 1])
    return out.reshape(lead + (n + 2, 4, 4))
