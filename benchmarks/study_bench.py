"""Study figures (a script's figures, never timed tests), Heron 6, each the median of several runs in one process
(the first call, which generates and loads the arm's kernels, is made before and not counted), with the
fastest and slowest run beside it (``_min``, ``_max``).

* ``workspace_1e6_s``: :func:`poser.core.workspace.workspace` with 10⁶ joint samples (volume refined, sections'
  grids, dexterity of the kept points).
* ``reach_1e4_s``: :func:`poser.core.reach.reach` over 10⁴ targets with a tool orientation (poses of random
  joint values within limits, so every one is reachable), as a sequence from home.
* ``place_1e3x1e3_s``: :func:`poser.core.place.place` of 10³ placements (10 x × 10 y × 10 yaw) × 10³ targets
  with orientation (poses near home), work split over the machine's cores as ``poser place`` does by default
  (worker processes started within the timed call).
"""

from __future__ import annotations

import math
import statistics
import time
from pathlib import Path

import numpy as np

from poser import armfile

ROOT = Path(__file__).resolve().parent.parent

GOALS = {"workspace_1e6_s": "goal ≤ 1 s", "reach_1e4_s": "goal ≤ 0.5 s", "place_1e3x1e3_s": "goal ≤ 10 s"}


def _runs(fn, count):
    times = []
    for _ in range(count):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return times


def _figures(name, times):
    return {name: statistics.median(times), f"{name}_min": min(times), f"{name}_max": max(times),
            f"{name}_runs": len(times)}


def run(quick=False):
    from poser.core import place as pl
    from poser.core.reach import Target, reach
    from poser.core.workspace import sample_joints, workspace

    heron = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    figs: dict = {}
    goals = dict(GOALS)

    n_ws = 100_000 if quick else 1_000_000
    workspace(heron, n_ws)
    figs.update(_figures("workspace_1e6_s", _runs(lambda: workspace(heron, n_ws), 2 if quick else 5)))

    rng = np.random.default_rng(3)
    n_r = 1000 if quick else 10_000
    Q = rng.uniform(heron.lower, heron.upper, size=(n_r, 6))
    T = heron.fk(Q)
    targets = [Target(f"t{i}", T[i, :3, 3], T[i, :3, :3]) for i in range(n_r)]
    reach(heron, targets[:100])
    figs.update(_figures("reach_1e4_s", _runs(lambda: reach(heron, targets), 2 if quick else 5)))

    n_t = 100 if quick else 1000
    Qp = sample_joints(heron, n_t, seed=9, boundary_share=0.0)
    Qp = heron.home + 0.5 * (Qp - heron.home)
    Tp = heron.fk(Qp)
    ptargets = [Target(f"p{i}", Tp[i, :3, 3], Tp[i, :3, :3]) for i in range(n_t)]
    g = pl.grid(heron, (-450, 450), (-450, 450), yaw=(-math.radians(45), math.radians(45)), step=100,
                yaw_step=math.radians(10))
    assert g.size == 1000
    pl.place(heron, ptargets[:20], pl.grid(heron, (0, 100), (0, 100), step=100), workers=1)
    figs.update(_figures("place_1e3x1e3_s", _runs(lambda: pl.place(heron, ptargets, g), 1 if quick else 3)))
    if quick:
        for k in list(figs):
            if k.endswith("_s"):
                goals[k] = f"{goals.get(k, '')} (quick: smaller problem)"
    return figs, goals


if __name__ == "__main__":
    f, g = run()
    for k, v in f.items():
        print(k, round(v, 3) if isinstance(v, float) else v, g.get(k, ""))
