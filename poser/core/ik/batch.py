"""The closed form for many targets at once: vectorised over targets, in cache-sized chunks over threads."""

from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.ik import closed, turns
from poser.core.ik.result import BatchResult

__all__ = ["solve_batch", "BATCH_CHUNK"]

BATCH_CHUNK = 4096
"""Targets solved together (small enough that a chunk's arrays stay in the CPU cache)."""

_pool: ThreadPoolExecutor | None = None


def _workers() -> int:
    return max(1, min(4, os.cpu_count() or 1))


def solve_batch(chain, xyz, R=None, near=None) -> BatchResult:
    """Closed-form branches for many targets at once, vectorised over targets.

    Parameters
    ----------
    chain : Chain
        Must have a closed-form structure (see :func:`poser.core.ik.structure_of`).
    xyz : array_like, shape (N, 3)
    R : array_like, shape (N, 3, 3), optional
        Needed for six-axis and table arms and for planar 3R.
    near : array_like, shape (n,), optional
        Values for joints a target leaves free (default home).

    Returns
    -------
    BatchResult
    """
    global _pool
    plan = closed.plan(chain)
    if plan is None:
        raise PoserValueError(f"chain {chain.name!r} has no closed-form structure; use solve() per target")
    st = plan.structure
    P = np.asarray(xyz, dtype=float)
    if P.ndim != 2 or P.shape[1] != 3:
        raise PoserValueError(f"xyz must have shape (N, 3), got shape {P.shape}")
    needs_R = st.kind != "position"
    if R is None and needs_R:
        raise PoserValueError(f"R must be given (shape (N, 3, 3)) for a {st.name}")
    if R is not None:
        R = np.asarray(R, dtype=float)
        if R.shape != (P.shape[0], 3, 3):
            raise PoserValueError(f"R must have shape ({P.shape[0]}, 3, 3), got shape {R.shape}")
    ref = np.asarray(chain.home if near is None else near, dtype=float)
    if ref.shape != (chain.n,):
        raise PoserValueError(f"near must have shape ({chain.n},), got shape {ref.shape}")
    N = P.shape[0]
    B = st.branches
    Q = np.empty((N, B, chain.n))
    ex = np.empty((N, B), bool)
    fr = np.empty((N, B, chain.n), bool)
    inside = np.empty((N, B), bool)
    Rn = R if needs_R else None

    def chunk(s):
        e = min(N, s + BATCH_CHUNK)
        q, x, f = plan.candidates(P[s:e], None if Rn is None else Rn[s:e], ref)
        Q[s:e] = q
        turns.place_inplace(chain, Q[s:e])
        ex[s:e], fr[s:e], inside[s:e] = x, f, turns.fits(chain, Q[s:e])

    starts = range(0, N, BATCH_CHUNK)
    if N >= 4 * BATCH_CHUNK and _workers() > 1:
        if _pool is None:
            _pool = ThreadPoolExecutor(max_workers=_workers(), thread_name_prefix="poser-ik")
        list(_pool.map(chunk, starts))
    else:
        for s in starts:
            chunk(s)
    return BatchResult(Q, ex, inside, fr)
