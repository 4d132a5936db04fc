"""Configuration words: the same physical configuration gets the same words, whatever the mount."""

from __future__ import annotations

import numpy as np
import pytest

from . import arms
from . import poserside as ps
from . import reference as ref


def _words(a, q):
    T = ref.fk(a, q)
    res = ps.solve(a, T[:3, 3], T[:3, :3])
    match = [b.configuration for b in res.branches if ref.same(a, b.q, q)]
    assert match, "the pose the target came from is not a branch"
    return match[0]


@pytest.mark.parametrize("name", ["six_offsets", "six_plain", "six_lateral", "stanford_like", "scara_rrpr",
                                  "planar2"])
def test_floor_ceiling_and_wall_mounts_give_the_same_words(name):
    make = getattr(arms, name)
    mounted = [make(), make(base=arms.CEILING), make(base=arms.WALL)]
    lo, hi = ref.limits(mounted[0])
    rng = np.random.default_rng(3)
    for _ in range(6):
        q = lo + rng.random(len(lo)) * (hi - lo)
        words = {_words(a, q) for a in mounted}
        assert len(words) == 1, words


def test_shoulder_word_changes_where_the_wrist_centre_crosses_the_base_axis():
    a = arms.six_offsets()
    for j2, side in ((-70, "back"), (-55, "back"), (-50, "front"), (-10, "front")):
        q = ref.to_internal(a, [0, j2, 0, 0, 30, 0])
        wc = ref.frames(a, q[None])[0, 4, :3, 3]  # frame 4's origin is the wrist centre of this arm
        assert (wc[0] > 0) == (side == "front")  # facing +x at J1 = 0
        assert f"shoulder {side}" in _words(a, q)


def test_elbow_word_is_constant_along_a_branch():
    a = arms.six_offsets()
    words, sides = set(), set()
    for j2 in np.arange(-50.0, -29.0, 2.0):  # wrist centre in front of the base axis all along (x > 0)
        q = ref.to_internal(a, [0, j2, 0, 0, 30, 0])
        F = ref.frames(a, q[None])[0]
        sh, el, wc = F[1, :3, 3], F[2, :3, 3], F[4, :3, 3]
        assert wc[0] > 0
        z2 = F[1, :3, 2]  # joint 2's axis
        sides.add(bool(np.dot(np.cross(el - sh, wc - sh), z2) > 0))
        w = _words(a, q)
        assert "shoulder front" in w
        words.add([p for p in w.split(" · ") if p.startswith("elbow")][0])
    assert len(sides) == 1  # the reference: the elbow never changes side of the shoulder-wrist line
    assert len(words) == 1, words
