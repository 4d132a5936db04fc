"""Inverse-kinematics figures: closed form on Heron 6 (single and batched), numerical on Wren 6.

* ``ik_closed_single_us``: one :func:`poser.core.ik.solve` call on Heron 6
  with a full pose — every branch, extra turns, limit verdicts, errors,
  manipulability and labels (what the window asks for while the user types).
* ``ik_closed_core_single_us``: the closed form alone for one target (all
  eight branches, :func:`poser.core.ik.solve_batch` with N = 1).
* ``ik_closed_batch_per_s``: targets per second through ``solve_batch``
  (all eight branches each, vectorised over targets).
* ``ik_numeric_single_ms``: one ``solve`` call on Wren 6 (offset wrist, no
  closed form): all branches from the numerical solver.
"""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np

from poser import armfile
from poser.core.ik import solve, solve_batch

ROOT = Path(__file__).resolve().parent.parent


def _median_time(fn, items):
    times = []
    for it in items:
        t = time.perf_counter()
        fn(it)
        times.append(time.perf_counter() - t)
    return float(np.median(times))


def run(quick=False):
    heron = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    wren = armfile.load(ROOT / "demo_arms" / "wren6.toml").to_chain()
    rng = np.random.default_rng(5)

    qs = rng.uniform(heron.lower, heron.upper, size=(200 if quick else 2000, 6))
    T = heron.fk(qs)
    solve(heron, T[0, :3, 3], T[0, :3, :3])  # caches per chain
    single = _median_time(lambda k: solve(heron, T[k, :3, 3], T[k, :3, :3], near=qs[k]), range(len(qs)))
    core = _median_time(lambda k: solve_batch(heron, T[k : k + 1, :3, 3], T[k : k + 1, :3, :3]), range(len(qs)))

    N = 20_000 if quick else 200_000
    qb = rng.uniform(heron.lower, heron.upper, size=(N, 6))
    Tb = heron.fk(qb)
    P = np.ascontiguousarray(Tb[:, :3, 3])
    R = np.ascontiguousarray(Tb[:, :3, :3])
    solve_batch(heron, P[:1000], R[:1000])
    best = float("inf")
    for _ in range(2 if quick else 3):
        t = time.perf_counter()
        solve_batch(heron, P, R)
        best = min(best, time.perf_counter() - t)

    qw = rng.uniform(wren.lower, wren.upper, size=(10 if quick else 40, 6))
    Tw = wren.fk(qw)
    solve(wren, Tw[0, :3, 3], Tw[0, :3, :3])
    numeric = _median_time(lambda k: solve(wren, Tw[k, :3, 3], Tw[k, :3, :3]), range(len(qw)))

    figures = {
        "ik_closed_single_us": single * 1e6,
        "ik_closed_core_single_us": core * 1e6,
        "ik_closed_batch_per_s": N / best,
        "ik_numeric_single_ms": numeric * 1e3,
    }
    goals = {
        "ik_closed_single_us": "<= 200 (all branches, Heron 6, one solve() call, median)",
        "ik_closed_core_single_us": "(closed form alone for one target; for reference)",
        "ik_closed_batch_per_s": ">= 200,000 (all branches, batched targets)",
        "ik_numeric_single_ms": "<= 50 (all branches, Wren 6, median)",
    }
    return figures, goals


if __name__ == "__main__":
    figs, gls = run()
    for k, v in figs.items():
        print(f"{k:26s} {v:14,.1f}   {gls[k]}")
