"""Random reachable targets (FK of random joint values within limits) on invented arms of every structure.

Each Poser branch must reach by the reference FK with the right limit verdict; every distinct solution
the reference search finds (modulo 2π) must be a Poser branch; ``reachable`` must agree.
"""

from __future__ import annotations

import numpy as np
import pytest

from . import arms
from . import reference as ref
from .compare import compare

ARMS = ["six_offsets", "six_plain", "six_lateral", "six_modified_m_rad", "stanford_like", "cartesian_wrist",
        "cylindrical", "scara_rrpr", "scara_rrrp", "planar2", "planar3", "five_axis"]
MOUNTS = {"floor": None, "ceiling": arms.CEILING, "wall": arms.WALL}


@pytest.mark.parametrize("mount", sorted(MOUNTS))
@pytest.mark.parametrize("name", ARMS)
def test_random_reachable_targets(name, mount):
    a = getattr(arms, name)(base=MOUNTS[mount]) if MOUNTS[mount] else getattr(arms, name)()
    lo, hi = ref.limits(a)
    rng = np.random.default_rng([ARMS.index(name), len(mount)])
    for _ in range(2):
        q = lo + rng.random(len(lo)) * (hi - lo)
        T = ref.fk(a, q)
        problems, res, sols, _ = compare(a, T[:3, 3], T[:3, :3], K=160)
        assert res.reachable
        assert any(ref.same(a, q, b.q) for b in res.branches), "the pose the target came from is missing"
        assert not problems, "\n".join(problems)
