"""The same arm, target and options give the same result on every run: budgets are counts, not times.

Twenty solves in a row of each case must agree to the last bit (joint values, words, verdicts, closest
approach, nearest reachable point) — on closed-form arms, on the family searches and on the numerical
solver, reachable and unreachable alike.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.core.ik import solve
from poser.core.transforms import rpy_to_matrix

ROOT = Path(__file__).resolve().parents[3]
D = np.pi / 180


def _demo(stem):
    return armfile.load(ROOT / "demo_arms" / f"{stem}.toml").to_chain()


def _fingerprint(res):
    def br(b):
        if b is None:
            return None
        fam = None if b.family is None else (b.family.kind, b.family.joints, b.family.ranges, b.family.fraction)
        return (b.q.tobytes(), b.label, b.within_limits, b.position_error, b.orientation_error, b.manipulability, fam)

    return (
        res.status, res.solver, res.reachable, res.total, res.unlisted, res.complete,
        tuple(br(b) for b in res.branches), br(res.closest),
        None if res.nearest_point is None else res.nearest_point.tobytes(),
    )


CASES = [
    ("heron6", [900.0, -300.0, 900.0], [180.0, 0.0, 0.0]),
    ("heron6", [3000.0, 0.0, 900.0], [180.0, 0.0, 0.0]),  # out of reach
    ("heron6", [700.0, 200.0, 600.0], None),  # position only: orientation families
    ("wren6", [600.0, 100.0, 500.0], [180.0, 30.0, 0.0]),  # numerical
    ("wren6", [600.0, 100.0, 500.0], None),  # numerical family
    ("lark7", [0.4, 0.2, 0.6], [180.0, 0.0, 90.0]),  # families over the upper-arm twist
    ("planar3", [700.0, 0.0, 1500.0], None),  # turn families
    ("boom3", [0.5, 0.3, 1.2], None),
]


@pytest.mark.parametrize("stem, xyz, rpy", CASES, ids=[f"{c[0]}-{i}" for i, c in enumerate(CASES)])
def test_twenty_solves_agree_to_the_last_bit(stem, xyz, rpy):
    ch = _demo(stem)
    R = None if rpy is None else rpy_to_matrix(ch.units.angle_in(np.array(rpy)))
    first = _fingerprint(solve(ch, xyz, R, near=ch.home))
    for _ in range(19):
        assert _fingerprint(solve(ch, xyz, R, near=ch.home)) == first


def test_a_time_guard_that_cuts_the_search_says_so():
    """A caller that must stay responsive may bound the numerical search by time: the result then says it was
    cut (never looks complete); without the guard there is no clock at all."""
    from poser import report

    ch = _demo("wren6")
    R = rpy_to_matrix(np.radians([180.0, 30.0, 0.0]))
    cut = solve(ch, [600.0, 100.0, 500.0], R, near=ch.home, time_guard=1e-9)
    assert not cut.complete
    assert "cut short" in report.ik_message(ch, cut)
    full = solve(ch, [600.0, 100.0, 500.0], R, near=ch.home)
    assert full.complete and len(full.branches) >= len(cut.branches)
