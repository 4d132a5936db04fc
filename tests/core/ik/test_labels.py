"""Configuration words come from the pose, not from how the arm is described.

Two descriptions of the same physical arm — with a small offset of either sign, mounted elsewhere, its
DH axes reversed — give the same shoulder and elbow words for the same pose.  "Up" is the base
frame's z axis, so an arm hung from the ceiling keeps the words it has on the floor (common practice:
configuration flags belong to the arm, not to the cell).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.core.dh import DHRow, chain_from_dh
from poser.core.fk import frames
from poser.core.ik import labels, solve
from poser.core.transforms import from_xyz_rpy

ROOT = Path(__file__).resolve().parents[3]
D = np.pi / 180


def _words(chain, Q):
    Q = np.atleast_2d(Q)
    return labels.describe(chain, Q, frames(chain, Q))


def _rrp(d2):
    """A turret, a pitching boom beside it by d2 (mm) and a slide: the lateral offset's sign must not matter."""
    rows = [
        DHRow("turret", "revolute", alpha=-90 * D, d=600.0),
        DHRow("pitch", "revolute", alpha=90 * D, d=d2, theta=90 * D),
        DHRow("slide", "prismatic", d=350.0, lower=0.0, upper=900.0),
    ]
    return chain_from_dh(rows)


def test_the_sign_of_a_small_sideways_offset_does_not_change_the_words():
    a, b = _rrp(+1.0), _rrp(-1.0)
    rng = np.random.default_rng(2)
    Q = rng.uniform([-3, -1.2, 50.0], [3, 2.5, 800.0], size=(200, 3))
    assert _words(a, Q) == _words(b, Q)
    words = set(_words(a, Q))
    assert any("shoulder front" in w for w in words) and any("shoulder back" in w for w in words)


def test_a_ceiling_mount_keeps_the_floor_words():
    heron = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    ceiling = heron.with_base(from_xyz_rpy([0.0, 0.0, 2500.0], [np.pi, 0.0, 0.0]))
    wall = heron.with_base(from_xyz_rpy([0.0, 1000.0, 1200.0], [np.pi / 2, 0.0, 0.0]))
    rng = np.random.default_rng(4)
    Q = rng.uniform(heron.lower, heron.upper, size=(200, 6))
    assert _words(heron, Q) == _words(ceiling, Q) == _words(wall, Q)


def test_a_reversed_shoulder_axis_gives_the_same_shoulder_and_elbow_words():
    """Heron described with joint 2 turning the other way (its DH z axis reversed, its values negated)."""
    spec = armfile.load(ROOT / "demo_arms" / "heron6.toml")
    heron = spec.to_chain()
    rows = []
    for i, j in enumerate(spec.joints):
        a, alpha, d, theta = j.a, j.alpha * D, j.d, j.theta * D
        lo, hi = j.min * D, j.max * D
        if i == 0:
            alpha = alpha + np.pi  # z1 reversed
        if i == 1:
            theta, lo, hi = -theta, -hi, -lo  # joint 2 measured the other way, about the reversed axis
            alpha = alpha + np.pi  # z2 back as it was
            d = -d
        rows.append(DHRow(j.name, j.type, a=a, alpha=alpha, d=d, theta=theta, lower=lo, upper=hi))
    base = from_xyz_rpy(np.array(spec.base_xyz), np.array(spec.base_rpy) * D)
    tool = from_xyz_rpy(np.array(spec.tool_xyz), np.array(spec.tool_rpy) * D)
    other = chain_from_dh(rows, base=base, tool=tool)
    rng = np.random.default_rng(9)
    Q = rng.uniform(heron.lower, heron.upper, size=(100, 6))
    Q2 = Q.copy()
    Q2[:, 1] = -Q[:, 1]
    np.testing.assert_allclose(other.fk(Q2), heron.fk(Q), atol=1e-9)  # the same physical arm
    w1 = [w.split(" · ")[:2] for w in _words(heron, Q)]
    w2 = [w.split(" · ")[:2] for w in _words(other, Q2)]
    assert w1 == w2


def test_every_six_axis_configuration_word_appears_once_for_a_generic_target():
    """Shoulder front/back × elbow up/down × wrist flipped or not: the eight branches of a six-axis arm
    with a spherical wrist (Pieper 1968; Craig, Introduction to Robotics, ch. 4 — from memory)."""
    heron = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    from poser.core.chain import Chain, Joint

    wide = Chain([Joint(j.name, j.kind, j.pre, j.post, -3.14, 3.14) for j in heron.joints], heron.base, heron.tool)
    T = wide.fk(np.array([0.2, 0.3, 0.4, 0.5, 0.6, 0.7]))
    res = solve(wide, T[:3, 3], T[:3, :3])
    assert sorted({b.configuration for b in res.branches}) == sorted(
        f"{s} · {e} · {w}" for s in ("shoulder front", "shoulder back") for e in ("elbow up", "elbow down")
        for w in ("wrist flipped", "wrist not flipped")
    )


@pytest.mark.parametrize("d2", [0.0, 150.0])
def test_words_at_the_special_places(d2):
    """On the base axis, stretched, folded: the words say so."""
    rows = [
        DHRow("base", "revolute", alpha=90 * D, d=400.0),
        DHRow("shoulder", "revolute", a=500.0, d=d2),
        DHRow("elbow", "revolute", a=450.0),
    ]
    ch = chain_from_dh(rows)
    assert "arm stretched" in _words(ch, [0.3, 0.5, 0.0])[0]
    assert "arm folded" in _words(ch, [0.3, 0.5, np.pi])[0]
    if d2 == 0.0:
        # the wrist point straight above the base: shoulder 90°, elbow folded back onto the axis
        res = solve(ch, [0.0, 0.0, 900.0])
        assert all("wrist over the base axis" in b.label for b in res.branches)
