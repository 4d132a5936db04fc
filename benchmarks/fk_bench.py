"""Forward-kinematics figures for the default six-axis demo arm (Heron 6)."""

from __future__ import annotations

import threading
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import numpy as np

from poser import armfile
from poser.core import fk as fkmod

ROOT = Path(__file__).resolve().parent.parent


def _best(fn, repeat):
    best = float("inf")
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t)
    return best


def run(quick=False):
    chain = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    N = 100_000 if quick else 1_000_000
    rng = np.random.default_rng(1)
    q = rng.uniform(chain.lower, chain.upper, size=(N, chain.n))
    out = np.empty((N, 4, 4))
    chain.fk(q[:10_000], out=out[:10_000])  # build the kernel, warm the pool
    t_fk = _best(lambda: chain.fk(q, out=out), 5)

    # The floor: only the sines and cosines of the same N x n values, computed the
    # way the kernel computes them (cache-sized chunks, same threads) and, for
    # reference, as two whole-array numpy calls on one thread.
    C = fkmod.CHUNK
    pool = ThreadPoolExecutor(fkmod._workers())
    chunks = [np.ascontiguousarray(q[s : s + C].T) for s in range(0, N, C)]

    scratch = threading.local()

    def trig_chunk(x):
        # preallocated outputs per thread, as the kernel has: no allocation in the floor either
        bufs = getattr(scratch, "bufs", None)
        if bufs is None or bufs[0].shape != x.shape:
            bufs = scratch.bufs = (np.empty_like(x), np.empty_like(x))
        np.cos(x, out=bufs[0])
        np.sin(x, out=bufs[1])

    t_trig = _best(lambda: list(pool.map(trig_chunk, chunks)), 5)
    t_trig_flat = _best(lambda: (np.sin(q), np.cos(q)), 3)
    pool.shutdown()

    x = q[0].copy()
    chain.fk(x)
    reps = 20_000 if not quick else 2_000
    t0 = time.perf_counter()
    for _ in range(reps):
        chain.fk(x)
    single = (time.perf_counter() - t0) / reps

    figures = {
        "fk_batch_per_s": N / t_fk,
        "fk_batch_vs_trig": t_fk / t_trig,
        "fk_batch_vs_trig_one_call": t_fk / t_trig_flat,
        "fk_single_us": single * 1e6,
        "fk_threads": fkmod._workers(),
    }
    goals = {
        "fk_batch_per_s": ">= 4e6 poses/s (N = 1e6, six-axis demo arm)",
        "fk_batch_vs_trig": "<= 2 (FK time / sin+cos time, same chunks and threads)",
        "fk_batch_vs_trig_one_call": "reference: FK time / np.sin + np.cos over the whole (N, n) array",
        "fk_single_us": "<= 30 us (one configuration, tool pose)",
        "fk_threads": "worker threads used by batched FK",
    }
    return figures, goals
