"""Turn variants: every one within limits is found and counted exactly; listings keep the nearest.

A revolute joint's value is known up to whole turns, so a joint with more than a full turn of range
gives, for each configuration, every turn that fits as a separate branch; with several such joints
the variants multiply (common practice for multi-turn axes: a controller distinguishes q and q + 360°).
"""

from __future__ import annotations

import itertools
import math
from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.core.chain import Chain, Joint
from poser.core.ik import solve, turns

ROOT = Path(__file__).resolve().parents[3]
D = np.pi / 180
TWO_PI = 2 * np.pi


def _demo(stem):
    return armfile.load(ROOT / "demo_arms" / f"{stem}.toml").to_chain()


def _with_limits(chain, limits):
    joints = []
    for j, (lo, hi) in zip(chain.joints, limits):
        joints.append(Joint(j.name, j.kind, j.pre, j.post, lo, hi, min(max(j.home, lo), hi)))
    return Chain(joints, chain.base, chain.tool, chain.name, chain.units)


def test_five_joints_of_plus_minus_360_give_256_branches_all_counted_and_listed():
    heron = _demo("heron6")
    arm = _with_limits(heron, [(-2 * np.pi, 2 * np.pi)] * 5 + [(-np.pi, np.pi)])
    q = np.radians([30.0, 40.0, 20.0, 200.0, -250.0, 40.0])  # two joints beyond ±180°: extra turns
    T = arm.fk(q)
    res = solve(arm, T[:3, 3], T[:3, :3], near=q)
    configs = {b.configuration for b in res.branches}
    assert len(configs) == 8
    assert res.total == 256 and res.unlisted == 0 and len(res.branches) == 256
    assert all(b.variants == 32 for b in res.branches)
    assert all(b.within_limits and b.reaches for b in res.branches)
    assert res.branches[0].distance == pytest.approx(0.0, abs=1e-9)  # the joint values that made the target
    np.testing.assert_allclose(res.branches[0].q, q, atol=1e-9)
    assert len({tuple(np.round(b.q, 9)) for b in res.branches}) == 256


def test_a_3600_degree_joint_gives_20_turns_per_configuration_and_keeps_the_present_one():
    quill = _demo("quill4")
    lim = [(quill.lower[i], quill.upper[i]) for i in range(3)] + [(-3600 * D, 3600 * D)]
    arm = _with_limits(quill, lim)
    q = np.array([20 * D, 60 * D, 40.0, 3000 * D])
    T = arm.fk(q)
    res = solve(arm, T[:3, 3], T[:3, :3], near=q)
    assert res.total == 40 and res.unlisted == 0 and len(res.branches) == 40
    np.testing.assert_allclose(res.branches[0].q, q, atol=1e-9)
    assert "gripper turn +8 turns" in res.branches[0].label
    short = solve(arm, T[:3, 3], T[:3, :3], near=q, max_variants=4)
    assert len(short.branches) == 8 and short.unlisted == 32 and short.total == 40
    np.testing.assert_allclose(short.branches[0].q, q, atol=1e-9)  # the present one is always kept
    # the four listed per configuration are the four nearest the present J4
    same = [b for b in short.branches if b.configuration == short.branches[0].configuration]
    d = sorted(abs(b.q[3] - q[3]) for b in same)
    assert d == pytest.approx([0.0, TWO_PI, TWO_PI, 2 * TWO_PI])


def test_a_bounded_range_keeps_the_work_bounded():
    """±100 turns on the last joint: 201 variants per configuration counted, 64 listed (no enumeration)."""
    quill = _demo("quill4")
    arm = _with_limits(quill, [(quill.lower[i], quill.upper[i]) for i in range(3)] + [(-200 * np.pi, 200 * np.pi)])
    q = np.array([20 * D, 60 * D, 40.0, 0.5])
    T = arm.fk(q)
    res = solve(arm, T[:3, 3], T[:3, :3], near=q)
    assert res.total == 2 * 200 and len(res.branches) == 2 * 64 and res.unlisted == 2 * (200 - 64)


def _enumerate(chain, row, tol):
    """Every turn combination of the wide joints, tested one by one (the brute force the counts must match)."""
    wide = [i for i in range(chain.n) if chain.revolute[i] and chain.upper[i] - chain.lower[i] > TWO_PI + 1e-9]
    ranges = []
    for i in wide:
        ks = [k for k in range(-300, 301) if chain.lower[i] - tol[i] <= row[i] + k * TWO_PI <= chain.upper[i] + tol[i]]
        ranges.append(ks)
    return math.prod(len(r) for r in ranges), wide, ranges


@pytest.mark.parametrize("seed", range(6))
def test_counts_match_a_brute_force_enumeration_including_values_on_the_limits(seed):
    rng = np.random.default_rng(seed)
    heron = _demo("heron6")
    lim = []
    for _ in range(6):
        lo = -rng.uniform(0.5, 6.0) * np.pi
        hi = rng.uniform(0.5, 6.0) * np.pi
        lim.append((lo, hi))
    arm = _with_limits(heron, lim)
    tol = turns.tolerances(arm)
    rows = rng.uniform(-np.pi, np.pi, size=(40, 6))
    # values exactly on a limit (shifted by whole turns into (-π, π]) and a hair inside or out
    for k in range(6):
        lo = lim[k][0]
        v = lo - TWO_PI * math.floor((lo + np.pi) / TWO_PI)
        rows[k, k] = v
        rows[6 + k, k] = math.nextafter(v, -math.inf)
    placed = turns.place(arm, rows)
    _, _, _, counts, ok = turns.expand(arm, placed, np.zeros(6), [10**6] * len(rows))
    for r, c, o in zip(placed, counts, ok):
        brute, wide, ranges = _enumerate(arm, r, tol)
        narrow_ok = all(arm.lower[i] - tol[i] <= r[i] <= arm.upper[i] + tol[i] for i in range(6) if i not in wide)
        assert o == narrow_ok
        assert c == (brute if narrow_ok else 0)
    rows_e, tt, src, counts, ok = turns.expand(arm, placed[:5], np.zeros(6), [10**6] * 5)
    for k in range(5):
        listed = {t for t, s in zip(tt, src) if s == k}
        _, wide, ranges = _enumerate(arm, placed[k], tol)
        if ok[k]:
            expect = {tuple(dict(zip(wide, combo)).get(i, 0) for i in range(6)) for combo in itertools.product(*ranges)}
            assert listed == expect
