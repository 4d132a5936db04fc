"""Placement search: cases whose answer is known by construction, the same figures however the work is split
(this process, worker processes, a dask.distributed local cluster), progress and cancel, errors.

The arms are inventions for these checks.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from poser.core import place as pl
from poser.core.dh import DHRow, chain_from_dh
from poser.core.errors import Cancelled, PoserValueError
from poser.core.fk import fk
from poser.core.reach import Target, reach

pi = math.pi
STROKE = 100.0


def pri(name, **k):
    return DHRow(name, "prismatic", **k)


def box_arm():
    """Three slides of STROKE each: with the base at (X, Y, Z) the tool point reaches exactly the box
    [X, X + STROKE] × [Y, Y + STROKE] × [Z, Z + STROKE] (the slides move world z, x and y in turn)."""
    return chain_from_dh([pri("s1", alpha=-pi / 2, theta=-pi / 2, lower=0, upper=STROKE),
                          pri("s2", alpha=-pi / 2, theta=pi / 2, lower=0, upper=STROKE),
                          pri("s3", lower=0, upper=STROKE)])


def test_the_box_arm_reaches_its_box():
    arm = box_arm()
    q = np.array([10.0, 20.0, 30.0])
    assert np.allclose(fk(arm, q)[:3, 3], [20.0, 30.0, 10.0])


def test_only_the_constructed_base_reaches_every_corner_of_a_box():
    # Eight targets on the corners of a stroke-sized box at (230, -140, 0): a base anywhere else leaves a
    # corner outside the slides' strokes, so the one grid node at (230, -140) reaches all eight.
    arm = box_arm()
    X0, Y0 = 230.0, -140.0
    corners = [Target(f"c{i}", (X0 + STROKE * a, Y0 + STROKE * b, STROKE * c))
               for i, (a, b, c) in enumerate(np.ndindex(2, 2, 2))]
    g = pl.grid(arm, (150, 300), (-200, -100), step=10)
    res = pl.place(arm, corners, g, workers=1)
    assert g.size == 16 * 11
    best = res.best[0]
    assert best.reached == 8 and np.allclose(best.xyz, [X0, Y0, 0.0])
    assert int((res.reached == 8).sum()) == 1
    assert best.margin == pytest.approx(0.0, abs=1e-12)  # every corner puts each slide at an end
    # every other node misses a corner: a shift of one step (10) in x leaves half the corners out
    i = int(np.flatnonzero(np.all(np.isclose(g.bases()[:, :3, 3], [X0 + 10, Y0, 0]), axis=1))[0])
    assert res.reached[i] == 4
    assert res.coverage().shape == (11, 16) and res.coverage().max() == 8


def test_margin_decides_between_placements_that_reach_alike():
    # One target at (500, 500, 50): every base within a stroke of it reaches it; the largest worst limit
    # margin (half the range) has each slide mid-stroke: base (450, 450, 0).
    arm = box_arm()
    g = pl.grid(arm, (380, 520), (380, 520), step=10)
    res = pl.place(arm, [Target("mid", (500, 500, 50))], g, workers=1, top=3)
    assert np.allclose(res.best[0].xyz, [450, 450, 0]) and res.best[0].margin == pytest.approx(0.5)
    assert all(b.margin == pytest.approx(0.4) for b in res.best[1:])  # the next ring is one step off
    assert len(res.best) == 3 and res.best[0].manipulability == pytest.approx(1.0)  # slides: ‖J‖ stays 1


def test_yaw_turns_the_workspace_about_world_z():
    # Turned by 90° about Z the box arm's box [0, 100]² turns to [-100, 0] × [0, 100]: from base x = 330
    # (yaw 90°) it covers the same corners as base x = 230 at yaw 0; at yaw 0 its box [330, 430] keeps only
    # the four corners at x = 330.
    arm = box_arm()
    corners = [Target(f"c{i}", (230 + STROKE * a, -140 + STROKE * b, STROKE * c))
               for i, (a, b, c) in enumerate(np.ndindex(2, 2, 2))]
    g = pl.grid(arm, (330, 330), (-140, -140), yaw=(0.0, pi / 2), yaw_step=pi / 2)
    res = pl.place(arm, corners, g, workers=1, top=2)
    assert res.best[0].reached == 8 and res.best[0].yaw == pytest.approx(pi / 2)
    assert res.reached.tolist() == [4, 8]


def heron_case():
    from poser.armfile import load
    from tests.conftest import DEMO_DIR

    chain = load(DEMO_DIR / "heron6.toml").to_chain()
    rng = np.random.default_rng(7)
    lo, hi = chain.lower, chain.upper
    Q = chain.home + 0.4 * (rng.random((40, 6)) - 0.5) * (hi - lo)
    T = fk(chain, Q)
    targets = [Target(f"t{i}", T[i, :3, 3], T[i, :3, :3], free_spin=(i % 10 == 3)) for i in range(len(Q))]
    targets.append(Target("far", (9000.0, 0.0, 0.0), np.eye(3)))
    return chain, targets


def test_the_arm_where_it_stands_reaches_targets_made_from_its_poses():
    chain, targets = heron_case()
    x0, y0 = chain.base[0, 3], chain.base[1, 3]
    g = pl.grid(chain, (x0 - 200, x0 + 200), (y0 - 200, y0 + 200), step=200)
    res = pl.place(chain, targets, g, workers=1)
    home = int(np.flatnonzero(np.all(np.isclose(g.bases()[:, :3, 3], chain.base[:3, 3]), axis=1))[0])
    assert res.reached[home] == len(targets) - 1  # all but the one 9 m away
    assert res.best[0].reached == len(targets) - 1
    # the reach study of the best placement agrees on the count
    study = reach(chain.with_base(res.best[0].base), targets)
    assert study.reached >= res.best[0].reached


def test_the_same_figures_in_this_process_over_processes_and_over_dask():
    chain, targets = heron_case()
    g = pl.grid(chain, (-300, 300), (-300, 300), step=300)
    one = pl.place(chain, targets, g, workers=1)
    procs = pl.place(chain, targets, g, workers=2, chunk=3)
    from distributed import Client, LocalCluster

    with LocalCluster(n_workers=2, processes=False, threads_per_worker=1, dashboard_address=None) as cluster, \
            Client(cluster) as client:
        dsk = pl.place(chain, targets, g, scheduler=client, chunk=2)
    for other in (procs, dsk):
        assert np.array_equal(one.reached, other.reached)
        assert np.array_equal(one.margin, other.margin)
        assert [b.index for b in one.best] == [b.index for b in other.best]
        assert [b.manipulability for b in one.best] == [b.manipulability for b in other.best]


def test_progress_rises_and_cancel_raises():
    arm = box_arm()
    g = pl.grid(arm, (0, 400), (0, 400), step=10)
    seen = []
    pl.place(arm, [Target("a", (100, 100, 50))], g, workers=1, chunk=64, progress=lambda f: seen.append(f))
    assert seen[0] == 0.0 and seen[-1] == 1.0 and seen == sorted(seen) and len(seen) > 5

    def stop(f):
        return f < 0.3

    with pytest.raises(Cancelled):
        pl.place(arm, [Target("a", (100, 100, 50))], g, workers=1, chunk=64, progress=stop)


@pytest.mark.parametrize("call,match", [
    (lambda a: pl.grid(a, (10, 0), (0, 1)), "x range must run from low to high, got 10.0..0.0"),
    (lambda a: pl.grid(a, (0, 10), (0, 1), step=-1), "x step must be a positive number, got -1"),
    (lambda a: pl.grid(a, (0, 1e6), (0, 1e6), step=0.1), "x range 0.0..1000000.0 at step 0.1 must give at most"),
    (lambda a: pl.grid(a, (0, 1000), (0, 1000), z=(0, 1000), step=1), "at most 10000000 placements"),
    (lambda a: pl.place(a, [], pl.grid(a, (0, 1), (0, 1))), "targets must hold at least one target, got none"),
    (lambda a: pl.place(a, [(1, 2, 3)], pl.grid(a, (0, 1), (0, 1))), "targets must be Target objects, got tuple"),
    (lambda a: pl.place(a, [Target("a", (1, 2, 3))], "grid"), "grid must be a Grid"),
    (lambda a: pl.place(a, [Target("a", (1, 2, 3))], pl.grid(a, (0, 1), (0, 1)), top=0), "top must be at least 1"),
])
def test_errors_name_the_argument(call, match):
    with pytest.raises(PoserValueError, match=match.replace("(", r"\(").replace(")", r"\)").replace(".", r"\.")):
        call(box_arm())
