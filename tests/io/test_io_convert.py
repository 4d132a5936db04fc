"""Converting a whole arm between the DH conventions (poser.io.convert.convert_convention): the same tool pose
for every joint value, both directions, the table back after two conversions, comments kept with the joints.

Reference: Craig, Introduction to Robotics, ch. 3 (from memory) — the two conventions attach frames
differently to one mechanism; only the tool pose and the joint axes are shared.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser.armfile import ArmFileError, convert_convention, dumps, load, loads
from poser.core.errors import PoserValueError
from poser.core.fk import fk
from poser.core.jacobian import jacobian

ROOT = Path(__file__).resolve().parents[2]
DEMO_ARMS = sorted((ROOT / "demo_arms").glob("*.toml"))
OTHER = {"standard": "modified", "modified": "standard"}


def _same_tool_pose(a, b, rng):
    ca, cb = a.to_chain(), b.to_chain()
    q = rng.uniform(ca.lower, ca.upper, (60, ca.n))
    Ta, Tb = fk(ca, q), fk(cb, q)
    scale = max(1.0, float(np.abs(Ta[:, :3, 3]).max()))
    np.testing.assert_allclose(Tb[:, :3, :3], Ta[:, :3, :3], rtol=0, atol=1e-9)
    np.testing.assert_allclose(Tb[:, :3, 3], Ta[:, :3, 3], rtol=0, atol=1e-9 * scale)
    Ja, Jb = jacobian(ca, q), jacobian(cb, q)
    np.testing.assert_allclose(Jb, Ja, rtol=0, atol=1e-9 * scale)  # the joint axes are the same too


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_every_demo_arm_keeps_its_tool_pose_both_ways(path, rng):
    spec = load(path)
    other = convert_convention(spec, OTHER[spec.convention])
    assert other.convention == OTHER[spec.convention]
    _same_tool_pose(spec, other, rng)
    back = convert_convention(other, spec.convention)
    _same_tool_pose(spec, back, rng)
    # names, types, d, theta, limits and homes never change
    keep = ("name", "type", "d", "theta", "min", "max", "home")
    for arm in (other, back):
        assert [[getattr(j, k) for k in keep] for j in arm.joints] == [[getattr(j, k) for k in keep]
                                                                       for j in spec.joints]
    # two conversions give the table back, up to the folding into the tool (standard) or base (modified)
    folded = len(spec.joints) - 1 if spec.convention == "standard" else 0
    for k, (j, b) in enumerate(zip(spec.joints, back.joints)):
        assert (b.a, b.alpha) == ((0, 0) if k == folded else (j.a, j.alpha))
    if (spec.joints[folded].a, spec.joints[folded].alpha) == (0, 0):
        assert back == spec  # nothing was folded: exactly the same arm


def test_a_fold_into_the_tool_and_back_into_the_base(rng):
    spec = load(ROOT / "demo_arms" / "planar3.toml")  # standard; the last row has a = 90 mm
    mod = convert_convention(spec, "modified")
    assert mod.tool_xyz == (90, 0, 0) and mod.tool_rpy == (0, 0, 0)
    assert [j.a for j in mod.joints] == [0, 450, 350]
    spec.joints[0].a, spec.joints[0].alpha = 0, 0
    mod = convert_convention(spec, "modified")
    mod.joints[0].a, mod.joints[0].alpha = 25, 90  # a modified first row that places joint 1
    std = convert_convention(mod, "standard")
    assert std.base_xyz == (25, 0, 1200) and std.base_rpy == (180, 0, 0)  # Rx(90) then Rx(90) more
    _same_tool_pose(mod, std, rng)


def test_the_spec_given_is_not_changed_and_comments_stay_with_their_joints():
    path = ROOT / "demo_arms" / "heron6.toml"
    spec = load(path)
    text = dumps(spec)
    mod = convert_convention(spec, "modified")
    assert dumps(spec) == text and spec.convention == "standard"
    out = dumps(mod)
    assert 'convention = "modified"' in out
    j2 = out[out.index('name = "J2 shoulder"'):]
    j2 = j2[: j2.index("[[joint]]")]
    assert "theta = -90                # upper arm points straight up at J2 = 0" in j2
    assert "a = 180" in j2  # J1's a moved into J2's row
    assert loads(out, "heron6.toml") == mod
    assert sum(line.count("#") for line in out.splitlines()) == sum(line.count("#") for line in text.splitlines())


def test_bad_convention_and_invalid_arm():
    spec = load(ROOT / "demo_arms" / "boom3.toml")
    with pytest.raises(PoserValueError, match="convention must be 'standard' or 'modified', got 'distal'"):
        convert_convention(spec, "distal")
    same = convert_convention(spec, "standard")
    assert same == spec and same is not spec
    spec.joints[0].min = 10
    with pytest.raises(ArmFileError, match="min must be below max"):
        convert_convention(spec, "modified")
