"""Forward-kinematics figures for the default six-axis demo arm (Heron 6).

``fk_alloc_per_s`` is ``fk(q)`` as users call it (allocating its output), N = 10⁶.  Beside it, on one
core and side by side in the same rounds: the same call against a straightforward compiled C kernel
(benchmarks/cref/fk_ref.c: structure of arrays, the C library's SIMD sin/cos, one thread), compiled
here with ``cc -O3 -ffast-math -march=native`` when a C compiler is present (else the comparison is
reported as unavailable).  The ratio is the median over rounds, its spread the min–max.
"""

from __future__ import annotations

import ctypes
import os
import shutil
import statistics
import subprocess
import tempfile
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import _timing
import numpy as np

from poser import armfile
from poser.core import fk as fkmod

ROOT = Path(__file__).resolve().parent.parent




def run(quick=False):
    chain = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    N = 100_000 if quick else 1_000_000
    rng = np.random.default_rng(1)
    q = rng.uniform(chain.lower, chain.upper, size=(N, chain.n))
    out = np.empty((N, 4, 4))
    chain.fk(q[:10_000], out=out[:10_000])  # build the kernel, warm the pool
    t_fk = _timing.best(lambda: chain.fk(q, out=out), 5)

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

    t_trig = _timing.best(lambda: list(pool.map(trig_chunk, chunks)), 5)
    t_trig_flat = _timing.best(lambda: (np.sin(q), np.cos(q)), 3)
    pool.shutdown()

    x = q[0].copy()
    chain.fk(x)
    reps = 20_000 if not quick else 2_000
    t0 = time.perf_counter()
    for _ in range(reps):
        chain.fk(x)
    single = (time.perf_counter() - t0) / reps

    figures = {}
    figures.update(_alloc_figures(chain, q))
    figures.update({
        "fk_batch_per_s": N / t_fk,
        "fk_batch_vs_trig": t_fk / t_trig,
        "fk_batch_vs_trig_one_call": t_fk / t_trig_flat,
        "fk_single_us": single * 1e6,
        "fk_threads": fkmod._workers(),
    })
    goals = {
        "fk_alloc_per_s": "reference: plain fk(q), N = 1e6, allocating its output (default threads)",
        "fk_alloc_one_core_ns": "reference: the same on one core, ns per pose",
        "fk_cref_one_core_ns": "reference: the compiled C kernel on one core, ns per pose",
        "fk_alloc_vs_c": "<= 1.5 (fk(q) / compiled C kernel, one core, side by side; median of rounds)",
        "fk_alloc_vs_c_spread": "min-max of that ratio over the rounds",
        "fk_backend": "the backend large batches took (compiled: numba; numpy: the generated numpy kernel)",
        "fk_batch_per_s": ">= 4e6 poses/s (N = 1e6, six-axis demo arm)",
        "fk_batch_vs_trig": "<= 2 (FK time / numpy's sin+cos time, same chunks and threads; below 1 once the "
                            "compiled backend computes its own sines and cosines)",
        "fk_batch_vs_trig_one_call": "reference: FK time / np.sin + np.cos over the whole (N, n) array",
        "fk_single_us": "<= 30 us (one configuration, tool pose)",
        "fk_threads": "worker threads used by batched FK",
    }
    return figures, goals


def _cref():
    """The compiled C reference kernel (ctypes), or None with the reason."""
    cc = shutil.which("cc") or shutil.which("gcc")
    if cc is None:
        return None, "no C compiler"
    d = tempfile.mkdtemp(prefix="poser-cref-")
    so = os.path.join(d, "fk_ref.so")
    src = str(ROOT / "benchmarks" / "cref" / "fk_ref.c")
    r = subprocess.run([cc, "-O3", "-ffast-math", "-march=native", "-shared", "-fPIC", src, "-o", so, "-lm"],
                       capture_output=True, text=True)
    if r.returncode != 0:
        return None, f"cc failed: {r.stderr.strip()[:200]}"
    return ctypes.CDLL(so), None


def _alloc_figures(chain, q, rounds=5, repeat=3):
    N = len(q)
    fk = chain.fk
    fk(q)  # compile (or load) the compiled backend first
    t_default = _timing.best(lambda: fk(q), repeat)
    out = {"fk_alloc_per_s": N / t_default,
           "fk_backend": "compiled" if fkmod._backend(chain, N) is not None else "numpy"}
    lib, why = _cref()
    workers = fkmod._workers
    fkmod._workers = lambda: 1
    try:
        if lib is None:
            out["fk_alloc_one_core_ns"] = _timing.best(lambda: fk(q), repeat) / N * 1e9
            out["fk_cref_one_core_ns"] = f"unavailable: {why}"
            return out
        qT = np.ascontiguousarray(q.T)
        mats = [np.ascontiguousarray(m) for m in (chain.base[:3], np.stack([j.pre[:3] for j in chain.joints]),
                                                 np.stack([j.post[:3] for j in chain.joints]), chain.tool[:3])]
        rev = np.array(chain.revolute, dtype=np.int32)
        P = ctypes.c_void_p

        def cref():
            res = np.empty((N, 4, 4))
            ptrs = [P(m.ctypes.data) for m in mats]
            lib.fk_ref_soa(ctypes.c_int(chain.n), ctypes.c_long(N), P(qT.ctypes.data), *ptrs, P(rev.ctypes.data),
                           P(res.ctypes.data))
            return res

        assert np.abs(cref() - fk(q)).max() < 1e-9 * chain.scale  # the reference computes the same poses
        ours, theirs, ratios = [], [], []
        for _ in range(rounds):
            a = _timing.best(lambda: fk(q), repeat)
            b = _timing.best(cref, repeat)
            ours.append(a)
            theirs.append(b)
            ratios.append(a / b)
        out["fk_alloc_one_core_ns"] = statistics.median(ours) / N * 1e9
        out["fk_cref_one_core_ns"] = statistics.median(theirs) / N * 1e9
        out["fk_alloc_vs_c"] = statistics.median(ratios)
        out["fk_alloc_vs_c_spread"] = f"{min(ratios):.2f}-{max(ratios):.2f}"
    finally:
        fkmod._workers = workers
    return out
