"""Inverse-kinematics figures (a script's figures, never timed tests).

* ``ik_closed_single_us``: one :func:`poser.core.ik.solve` call on Heron 6 with a reachable full pose —
  every branch, extra turns, families, limit verdicts, errors, manipulability and words (what the window
  asks for while the user types), median over targets.
* ``ik_unreachable_ms``: one ``solve`` on Heron 6 for targets out of reach: the closest approach within
  limits and the nearest reachable point included, median.
* ``ik_closed_core_single_us``: the closed form alone for one target (``solve_batch`` with N = 1).
* ``ik_closed_batch_per_s``: targets per second through ``solve_batch`` (all eight branches each).
* ``ik_batch_vs_fk``: batched IK time per target ÷ batched FK time per pose, measured side by side in one
  run on the same machine (Heron 6, 200 000 targets / poses, best of three each).
* ``ik_numeric_single_ms``: one ``solve`` on Wren 6 (offset wrist, no closed form), median.
* ``ik_numeric_branches_found``: the fraction of the branches a long run (2048 starts) finds that the
  default run finds, over the same targets (reaching branches, turn variants counted once).
"""

from __future__ import annotations

import time
from pathlib import Path

import _timing
import numpy as np

from poser import armfile
from poser.core.ik import solve, solve_batch
from poser.core.transforms import rpy_to_matrix

ROOT = Path(__file__).resolve().parent.parent




def _keys(chain, res):
    return {tuple(np.round(np.angle(np.exp(1j * b.q)), 5)) for b in res.branches if b.reaches}


def run(quick=False):
    heron = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    wren = armfile.load(ROOT / "demo_arms" / "wren6.toml").to_chain()
    rng = np.random.default_rng(5)

    qs = rng.uniform(heron.lower, heron.upper, size=(200 if quick else 2000, 6))
    T = heron.fk(qs)
    solve(heron, T[0, :3, 3], T[0, :3, :3])  # kernels are generated once per chain
    single = _timing.median_time(lambda k: solve(heron, T[k, :3, 3], T[k, :3, :3], near=qs[k]), range(len(qs)))
    core = _timing.median_time(lambda k: solve_batch(heron, T[k : k + 1, :3, 3], T[k : k + 1, :3, :3]), range(len(qs)))

    far = rng.normal(size=(20 if quick else 100, 3))
    far = far / np.linalg.norm(far, axis=1, keepdims=True) * rng.uniform(2300.0, 4000.0, size=(len(far), 1))
    Rf = rpy_to_matrix(rng.uniform(-np.pi, np.pi, size=(len(far), 3)))
    solve(heron, far[0], Rf[0])
    unreachable = _timing.median_time(lambda k: solve(heron, far[k], Rf[k], near=heron.home), range(len(far)))

    N = 20_000 if quick else 200_000
    qb = rng.uniform(heron.lower, heron.upper, size=(N, 6))
    Tb = heron.fk(qb)
    P = np.ascontiguousarray(Tb[:, :3, 3])
    R = np.ascontiguousarray(Tb[:, :3, :3])
    solve_batch(heron, P[:1000], R[:1000])
    best_ik = best_fk = float("inf")
    for _ in range(2 if quick else 3):
        t = time.perf_counter()
        solve_batch(heron, P, R)
        best_ik = min(best_ik, time.perf_counter() - t)
        t = time.perf_counter()
        heron.fk(qb)
        best_fk = min(best_fk, time.perf_counter() - t)

    qw = rng.uniform(wren.lower, wren.upper, size=(8 if quick else 30, 6))
    Tw = wren.fk(qw)
    solve(wren, Tw[0, :3, 3], Tw[0, :3, :3])
    numeric = _timing.median_time(lambda k: solve(wren, Tw[k, :3, 3], Tw[k, :3, :3]), range(len(qw)))
    found = total = 0
    for k in range(min(len(qw), 4 if quick else 12)):
        long = _keys(wren, solve(wren, Tw[k, :3, 3], Tw[k, :3, :3], seeds=512 if quick else 2048))
        short = _keys(wren, solve(wren, Tw[k, :3, 3], Tw[k, :3, :3]))
        found += len(long & short)
        total += len(long)

    figures = {
        "ik_closed_single_us": single * 1e6,
        "ik_unreachable_ms": unreachable * 1e3,
        "ik_closed_core_single_us": core * 1e6,
        "ik_closed_batch_per_s": N / best_ik,
        "ik_batch_vs_fk": best_ik / best_fk,
        "ik_numeric_single_ms": numeric * 1e3,
        "ik_numeric_branches_found": found / max(total, 1),
    }
    goals = {
        "ik_closed_single_us": "<= 150 (all branches, Heron 6, one solve() call, median)",
        "ik_unreachable_ms": "<= 5 (closest approach and nearest point, Heron 6, median)",
        "ik_closed_core_single_us": "(closed form alone for one target; for reference)",
        "ik_closed_batch_per_s": ">= 200,000 (all branches, batched targets)",
        "ik_batch_vs_fk": "<= 10 (batched IK per target / batched FK per pose, one run)",
        "ik_numeric_single_ms": "<= 25 (all branches, Wren 6, median)",
        "ik_numeric_branches_found": "1.0 (share of a 2048-start run's branches the default run finds, Wren 6)",
    }
    return figures, goals


if __name__ == "__main__":
    figs, gls = run()
    for k, v in figs.items():
        print(f"{k:28s} {v:14,.3f}   {gls[k]}")
