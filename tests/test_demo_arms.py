"""The demo arms start in a ready pose: every home lies within its limits and is clearly not singular.

A singular home (wrist axes lined up, arm stretched out, wrist centre on the base axis) makes the first
thing a user sees a degenerate case: jogging in some direction is impossible and inverse kinematics has
a continuum of answers there (common practice: robots are parked away from singularities).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser.armfile import load
from poser.core.jacobian import singular_values
from poser.core.singularity import assess

DEMO_ARMS = sorted((Path(__file__).resolve().parents[1] / "demo_arms").glob("*.toml"))


def smallest_singular_value(chain, q) -> float:
    """Smallest dimensionless singular value of the task-space Jacobian (lengths ÷ the arm's size)."""
    return float(singular_values(chain, q)[-1])


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_every_demo_home_is_a_ready_pose(path):
    spec = load(path)
    chain = spec.to_chain()
    assert np.all(chain.lower <= chain.home) and np.all(chain.home <= chain.upper)
    assert smallest_singular_value(chain, chain.home) > 0.05
    assert assess(chain, chain.home).level == "clear"


def test_the_measure_sees_the_singular_poses_the_homes_avoid():
    heron = load(DEMO_ARMS[0].parent / "heron6.toml").to_chain()
    assert smallest_singular_value(heron, np.zeros(6)) < 1e-9  # J5 = 0: wrist axes J4 and J6 in line
    planar = load(DEMO_ARMS[0].parent / "planar3.toml").to_chain()
    assert smallest_singular_value(planar, np.zeros(3)) < 1e-9  # stretched out
