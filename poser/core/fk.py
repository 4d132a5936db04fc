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

__all__ = ["fk", "frames", "link_transforms", "CHUNK"]

CHUNK = 4096
"""Poses computed together in the batched kernel: small enough that a
chunk's working arrays stay in the CPU cache."""

_PARALLEL_MIN = 4 * CHUNK
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
    _kernel(chain)  # build once, before any worker thread needs it
    starts = range(0, N, CHUNK)
    if N >= _PARALLEL_MIN and _workers() > 1:
        list(_get_pool().map(lambda s: _fk_chunk(chain, flat[s : s + CHUNK], res[s : s + CHUNK]), starts))
    else:
        for s in starts:
            _fk_chunk(chain, flat[s : s + CHUNK], res[s : s + CHUNK])
    return res.reshape(lead + (4, 4)) if out is None else out


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


def link_transforms(chain: Chain, q):
    """Each joint's own transform ``pre_i @ M_i(q_i) @ post_i`` (the A-matrix of DH row i).

    Parameters
    ----------
    q : array_like, shape (..., n)

    Returns
    -------
    ndarray, shape (..., n, 4, 4)
    """
    q = chain.check_q(q)
    M = np.zeros(q.shape + (4, 4))
    M[..., 3, 3] = 1.0
    rev = chain.revolute
    c = np.where(rev, np.cos(q), 1.0)
    s = np.where(rev, np.sin(q), 0.0)
    M[..., 0, 0] = c
    M[..., 1, 1] = c
    M[..., 0, 1] = -s
    M[..., 1, 0] = s
    M[..., 2, 2] = 1.0
    M[..., 2, 3] = np.where(rev, 0.0, q)
    pre = np.stack([j.pre for j in chain.joints])
    post = np.stack([j.post for j in chain.joints])
    return pre @ M @ post


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
        ``n + 1`` the tool coordinate system.
    """
    q = chain.check_q(q)
    A = link_transforms(chain, q)
    out = np.empty(q.shape[:-1] + (chain.n + 2, 4, 4))
    T = np.broadcast_to(chain.base, q.shape[:-1] + (4, 4))
    out[..., 0, :, :] = T
    for i in range(chain.n):
        T = T @ A[..., i, :, :]
        out[..., i + 1, :, :] = T
    out[..., chain.n + 1, :, :] = T @ chain.tool
    return out
