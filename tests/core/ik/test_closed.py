"""Closed-form inverse kinematics: structure recognition, branch counts, agreement with the numerical solver.

Sources beside each check.  Branch counts for generic targets:

* planar two-link arm: two solutions, elbow up and elbow down — Spong,
  Hutchinson & Vidyasagar, *Robot Modeling and Control*, ch. 5 (inverse
  kinematics of the planar elbow / two-link arm); Siciliano et al.,
  *Robotics: Modelling, Planning and Control*, sec. 2.12.1 (three-link planar
  arm: two solutions for a pose).  From memory.
* three-axis elbow (anthropomorphic) arm, position: four solutions (shoulder
  front/back × elbow up/down) — Siciliano et al., sec. 2.12.4; with a
  shoulder offset still four ("left arm / right arm" × elbow up/down) —
  Spong et al., ch. 5.  From memory.
* six-axis arm whose last three axes meet: up to eight solutions (four for
  the wrist centre × two for the wrist) — Pieper 1968 (*The Kinematics of
  Manipulators under Computer Control*); Craig, *Introduction to Robotics*,
  ch. 4 (a six-axis arm of this kind has eight solutions); Siciliano et al.,
  sec. 2.12.  From memory.
* four-axis table arm (two parallel revolute axes, a vertical slide, a
  gripper turn): two solutions, right- and left-handed — Spong et al., ch. 5
  (SCARA).  From memory.
* spherical two-revolute-one-prismatic arm: two solutions with the slide
  extended (the turret facing the target or turned half a turn with the
  boom pitched over) — Spong et al., ch. 5 (spherical manipulator);
  Siciliano et al., sec. 2.12.3.  From memory.
* the wrist of a six-axis arm: two solutions for the rotation left to it
  (wrist flipped or not) — Siciliano et al., sec. 2.12.5; Spong et al., ch. 5
  (inverse orientation).  From memory.
* cylindrical arm (a turn, a lift and a radial slide): two solutions, the
  second through the base turned half a turn with the radial slide negative
  — geometry of cylindrical coordinates (r and −r with θ + π); Spong et al.,
  ch. 3 (cylindrical manipulator), from memory.
* Cartesian arm (three independent slides): one solution, the linear system
  — common practice.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.core.dh import DHRow, chain_from_dh
from poser.core.ik import solve, solve_batch, structure_of
from poser.core.ik.closed import plan
from poser.core.transforms import from_xyz_rpy

ROOT = Path(__file__).resolve().parents[3]
D = np.pi / 180


def _demo(stem):
    return armfile.load(ROOT / "demo_arms" / f"{stem}.toml").to_chain()


def _configs(res, within=False):
    return {b.configuration for b in res.branches if b.reaches and (b.within_limits or not within)}


def _wide(chain):
    """The same geometry with limits wide enough to keep every branch (±179.9°, slides ±10 m)."""
    from poser.core.chain import Chain, Joint

    joints = [
        Joint(j.name, j.kind, j.pre, j.post, -3.14 if j.is_revolute else -1e4, 3.14 if j.is_revolute else 1e4)
        for j in chain.joints
    ]
    return Chain(joints, chain.base, chain.tool, chain.name, chain.units)


# -- recognition -----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "stem, kind",
    [
        ("heron6", ("pieper6", "elbow")),
        ("planar3", ("planar3", "planar2")),
        ("quill4", ("table4", "lift")),
        ("boom3", ("position", "rrp")),
        ("wren6", None),  # offset wrist: J5 passes 45 mm beside J4 — no closed form
        ("lark7", None),  # seven axes: redundant
    ],
)
def test_demo_arm_structures(stem, kind):
    st = structure_of(_demo(stem))
    assert ((st.kind, st.stage) if st else None) == kind


def test_recognition_ignores_description_base_and_tool():
    """The structure comes from the axes, not from the table: the same arm moved, renamed, re-described."""
    heron = _demo("heron6")
    moved = heron.with_base(from_xyz_rpy([100.0, -40.0, 7.0], [0.3, -0.2, 1.0])).with_tool(
        from_xyz_rpy([5.0, 60.0, 90.0], [0.5, 0.1, -0.4])
    )
    assert structure_of(moved).kind == "pieper6"
    # a planar arm described in the modified convention, in a tilted plane, named like a six-axis arm
    rows = [DHRow("a", "revolute"), DHRow("b", "revolute", a=0.4), DHRow("c", "revolute", a=0.3)]
    ch = chain_from_dh(rows, "modified", base=from_xyz_rpy([0, 0, 1], [0.4, 0.7, 0.1]), name="Heron 6")
    assert structure_of(ch).kind == "planar3"


def test_offset_wrist_of_six_axis_arm_is_not_taken_for_a_spherical_wrist():
    """Moving Heron's J5 axis 1 mm aside breaks Pieper's condition; the solver must notice."""
    rows = [
        DHRow("1", "revolute", a=180, alpha=-90 * D, d=520),
        DHRow("2", "revolute", a=700, theta=-90 * D),
        DHRow("3", "revolute", a=130, alpha=-90 * D),
        DHRow("4", "revolute", alpha=90 * D, d=760),
        DHRow("5", "revolute", a=1.0, alpha=-90 * D),
        DHRow("6", "revolute", d=110),
    ]
    assert structure_of(chain_from_dh(rows)) is None
    rows[4] = DHRow("5", "revolute", alpha=-90 * D)
    assert structure_of(chain_from_dh(rows)).kind == "pieper6"


# -- textbook values -------------------------------------------------------------------------------


def test_planar_two_link_textbook_values():
    """Unit links, target (1, 1): q = (0°, 90°) and (90°, −90°).

    Law of cosines for the elbow, then the shoulder: Spong et al., ch. 5; Craig, ch. 4 (from memory).
    """
    ch = chain_from_dh([DHRow("s", "revolute", a=1.0), DHRow("e", "revolute", a=1.0)])
    assert structure_of(ch).stage == "planar2"
    res = solve(ch, [1.0, 1.0, 0.0])
    Q = sorted(tuple(np.round(b.q / D, 9)) for b in res.branches)
    assert Q == [(0.0, 90.0), (90.0, -90.0)]
    labels = {b.label for b in res.branches}
    assert labels == {"elbow up", "elbow down"} or labels == {"right-handed arm", "left-handed arm"}


def test_planar_two_link_branch_count_and_reach():
    """Two branches inside the annulus |l1 − l2| < r < l1 + l2, one at its edge, none beyond (Spong et al., ch. 5)."""
    ch = chain_from_dh([DHRow("s", "revolute", a=0.7), DHRow("e", "revolute", a=0.4)])
    assert len(solve(ch, [0.5, 0.6, 0.0]).branches) == 2
    edge = solve(ch, [1.1, 0.0, 0.0])
    assert edge.reachable and len({tuple(np.round(b.q, 6)) for b in edge.branches if b.reaches}) == 1
    assert "arm stretched" in edge.branches[0].label
    far = solve(ch, [1.5, 0.0, 0.0])
    assert not far.reachable and far.nearest_point is not None
    assert np.allclose(far.nearest_point, [1.1, 0.0, 0.0], atol=1e-6)


def _elbow_arm(shoulder_offset=0.0):
    rows = [
        DHRow("base", "revolute", alpha=90 * D, d=0.4),
        DHRow("shoulder", "revolute", a=0.5, d=shoulder_offset),
        DHRow("elbow", "revolute", a=0.45),
    ]
    return chain_from_dh(rows, name="elbow")


@pytest.mark.parametrize("offset", [0.0, 0.15], ids=["no-offset", "shoulder-offset"])
def test_elbow_arm_has_four_branches(offset):
    """Anthropomorphic arm, position: 4 solutions.

    Siciliano et al., sec. 2.12.4; with a shoulder offset: Spong et al., ch. 5 (from memory).
    """
    ch = _elbow_arm(offset)
    st = structure_of(ch)
    assert (st.kind, st.stage) == ("position", "elbow") and (("offset" in st.name) == (offset > 0))
    rng = np.random.default_rng(5)
    for q in rng.uniform(-2.5, 2.5, size=(20, 3)):
        if abs(np.sin(q[2])) < 0.2:
            continue  # near the stretched arm the two elbow branches merge
        res = solve(ch, ch.fk(q)[:3, 3])
        assert len(_configs(res)) == 4, [b.label for b in res.branches]
        words = _configs(res)
        assert any("shoulder front" in w for w in words) and any("shoulder back" in w for w in words)
        assert any("elbow up" in w for w in words) and any("elbow down" in w for w in words)


def test_six_axis_spherical_wrist_has_eight_branches():
    """Pieper 1968; Craig ch. 4; Siciliano et al. sec. 2.12: eight solutions for a generic pose."""
    ch = _wide(_demo("heron6"))
    rng = np.random.default_rng(3)
    counts = []
    for q in rng.uniform([-3, -0.3, 0.0, -3, 0.3, -3], [3, 0.3, 0.6, 3, 2.0, 3], size=(15, 6)):
        T = ch.fk(q)
        res = solve(ch, T[:3, 3], T[:3, :3])
        counts.append(len(_configs(res)))
    assert counts == [8] * len(counts)
    # every combination of the three descriptors appears once
    res = solve(ch, *(lambda T: (T[:3, 3], T[:3, :3]))(ch.fk(np.array([0.2, 0.3, 0.4, 0.5, 0.6, 0.7]))))
    words = sorted(_configs(res))
    assert len(words) == 8
    for s in ("shoulder front", "shoulder back"):
        for e in ("elbow up", "elbow down"):
            for w in ("wrist flipped", "wrist not flipped"):
                assert f"{s} · {e} · {w}" in words


def test_table_arm_has_two_branches():
    """Four-axis table arm: right- and left-handed (Spong et al., ch. 5, SCARA; from memory)."""
    ch = _demo("quill4")
    rng = np.random.default_rng(9)
    for q in rng.uniform(ch.lower, ch.upper, size=(15, 4)):
        if abs(np.sin(q[1])) < 0.1:
            continue
        T = ch.fk(q)
        res = solve(ch, T[:3, 3], T[:3, :3])
        assert _configs(res) == {"right-handed arm", "left-handed arm"}
        # the gripper turns ±360°: its extra turns are separate branches, all within limits when they fit
        for b in res.branches:
            if b.turns[3]:
                assert "gripper turn" in b.label and ch.lower[3] <= b.q[3] <= ch.upper[3]


def test_planar_three_link_pose_has_two_branches():
    """Three-link planar arm with the tool orientation given: 2 solutions (Siciliano et al., sec. 2.12.1)."""
    ch = _demo("planar3")
    rng = np.random.default_rng(4)
    for q in rng.uniform(ch.lower, ch.upper, size=(15, 3)):
        if abs(np.sin(q[1])) < 0.1:
            continue
        T = ch.fk(q)
        res = solve(ch, T[:3, 3], T[:3, :3])
        assert len(_configs(res)) == 2
        # Planar 3 hangs on a wall with its joint axes along its base frame's z: "up" is the base frame's z
        # (words do not change with the mounting), so its configurations are seen from along the axes
        assert {c.split(" · ")[0] for c in _configs(res)} == {"right-handed arm", "left-handed arm"}


def test_planar_three_link_position_only_is_a_family():
    """Position only, three links in a plane: a one-parameter family over the tool's turn per elbow (common
    practice: one more joint than the two in-plane coordinates)."""
    ch = _demo("planar3")
    T = ch.fk(np.array([0.3, 0.9, -0.4]))
    res = solve(ch, T[:3, 3])
    assert res.redundant and res.reachable
    fams = [b.family for b in res.branches]
    assert len(fams) == 2 and all(f is not None and f.kind == "turn" for f in fams)
    assert {b.configuration for b in res.branches} == {"right-handed arm", "left-handed arm"}
    for b in res.branches:
        lo, hi = b.family.ranges[0][0]
        assert -np.pi <= lo < hi <= np.pi and 0 < b.family.fraction <= 1


def test_spherical_rrp_two_branches_with_the_slide_out():
    """Two solutions with the slide extended.

    Spong et al., ch. 5 (spherical manipulator); Siciliano et al., sec. 2.12.3 (spherical arm).  From memory.
    """
    ch = _wide(_demo("boom3"))
    rng = np.random.default_rng(8)
    for q in rng.uniform([-2.5, -0.5, 0.1], [2.5, 2.0, 0.9], size=(15, 3)):
        res = solve(ch, ch.fk(q)[:3, 3])
        out = [b for b in res.branches if b.reaches and b.q[2] > -0.35]  # boom end ahead of the pitch axis
        assert len(out) == 2
        assert {b.label.split(" · ")[0] for b in out} == {"shoulder front", "shoulder back"}
        assert all("boom forward" in b.label for b in out)


def test_cylindrical_rrp_two_branches():
    """Two parallel revolute axes and a slide along them: 2 solutions (Spong et al., ch. 5, from memory)."""
    rows = [
        DHRow("swing 1", "revolute", a=0.35, d=0.3),
        DHRow("swing 2", "revolute", a=0.25),
        DHRow("lift", "prismatic", lower=-0.3, upper=0.3),
    ]
    ch = chain_from_dh(rows)
    st = structure_of(ch)
    assert st.stage == "lift" and "cylindrical" in st.name
    res = solve(ch, ch.fk(np.array([0.4, 1.1, 0.1]))[:3, 3])
    assert len(_configs(res)) == 2 and res.reachable


def _cylindrical_arm(reach=(0.1, 0.8)):
    rows = [
        DHRow("turn", "revolute", d=0.3, lower=-170 * D, upper=170 * D),
        DHRow("lift", "prismatic", alpha=-90 * D, lower=0.0, upper=0.6),
        DHRow("reach", "prismatic", lower=reach[0], upper=reach[1]),
    ]
    return chain_from_dh(rows, name="cylinder")


def test_cylindrical_arm_has_two_branches_the_second_beyond_the_slide():
    """A turn, a lift and a radial slide: (θ, z, r) and (θ + π, z, −r); the second is beyond the slide's
    limit and is listed as blocked (cylindrical coordinates; Spong et al., ch. 3, from memory)."""
    ch = _cylindrical_arm()
    st = structure_of(ch)
    assert st.stage == "rpp" and "cylindrical" in st.name
    q = np.array([0.7, 0.25, 0.5])
    res = solve(ch, ch.fk(q)[:3, 3])
    reach = [b for b in res.branches if b.reaches]
    assert len(reach) == 2 and res.reachable
    inside = [b for b in reach if b.within_limits]
    blocked = [b for b in reach if not b.within_limits]
    assert len(inside) == 1 and len(blocked) == 1
    np.testing.assert_allclose(inside[0].q, q, atol=1e-12)
    d = np.angle(np.exp(1j * (blocked[0].q[0] - q[0])))
    assert abs(abs(d) - np.pi) < 1e-9 and blocked[0].q[2] == pytest.approx(-0.5)
    assert blocked[0].violations[0].name == "reach" and blocked[0].violations[0].side == "lower"


def test_cartesian_arm_is_one_linear_solve():
    """Three independent slides: one solution, exact (common practice)."""
    rows = [
        DHRow("x", "prismatic", alpha=-90 * D, theta=-90 * D, lower=0.0, upper=900.0),
        DHRow("y", "prismatic", alpha=-90 * D, theta=-90 * D, lower=0.0, upper=900.0),
        DHRow("z", "prismatic", lower=0.0, upper=900.0),
    ]
    ch = chain_from_dh(rows)
    assert structure_of(ch).stage == "ppp"
    q = np.array([120.0, 450.0, 333.0])
    res = solve(ch, ch.fk(q)[:3, 3])
    assert res.reachable and len(res.branches) == 1
    np.testing.assert_allclose(res.branches[0].q, q, atol=1e-9)


def test_extra_turns_are_separate_branches_within_limits():
    """A joint with a range over 360° yields each turn that fits (common practice for multi-turn axes)."""
    ch = _demo("heron6")  # J6 flange ±350°, J4 ±190°
    q = np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6])
    T = ch.fk(q)
    res = solve(ch, T[:3, 3], T[:3, :3], near=q)
    same = [b for b in res.branches if b.configuration == res.branches[0].configuration]
    six = sorted(round(float(b.q[5]), 9) for b in same if b.turns[3] == 0)
    assert six == pytest.approx([0.6 - 2 * np.pi, 0.6])
    assert all(b.within_limits for b in same)
    assert any("J6 flange -1 turn" in b.label for b in same)


# -- closed form against the numerical solver ------------------------------------------------------


def _key(chain, q):
    return np.where(chain.revolute, np.angle(np.exp(1j * q)), q)


@pytest.mark.parametrize("stem", ["heron6", "quill4", "planar3", "boom3"])
def test_closed_form_and_numerical_agree(stem):
    """The numerical solver, run alone, finds only closed-form branches, and every one of them within limits."""
    ch = _demo(stem)
    rng = np.random.default_rng(21)
    position_only = stem == "boom3"
    for q in rng.uniform(ch.lower, ch.upper, size=(3, ch.n)):
        T = ch.fk(q)
        R = None if position_only else T[:3, :3]
        closed = solve(ch, T[:3, 3], R)
        numeric = solve(ch, T[:3, 3], R, method="numerical", seeds=96)
        assert closed.solver.startswith("closed-form") and numeric.solver == "numerical"
        ck = [_key(ch, b.q) for b in closed.branches if b.reaches]
        nk = [_key(ch, b.q) for b in numeric.branches if b.reaches]
        for k in nk:
            assert min(np.max(np.abs(_key(ch, k - c))) for c in ck) < 1e-5
        for b in closed.branches:
            if b.reaches and b.within_limits:
                assert min(np.max(np.abs(_key(ch, _key(ch, b.q) - k))) for k in nk) < 1e-5


# -- batch -----------------------------------------------------------------------------------------


def test_batch_matches_single_solves():
    ch = _demo("heron6")
    rng = np.random.default_rng(2)
    qs = rng.uniform(ch.lower, ch.upper, size=(50, 6))
    T = ch.fk(qs)
    out = solve_batch(ch, T[:, :3, 3], T[:, :3, :3])
    assert out.q.shape == (50, 8, 6) and out.exact.shape == (50, 8)
    assert np.all(np.isfinite(out.q))
    F = ch.fk(out.q)
    err = np.linalg.norm(F[..., :3, 3] - T[:, None, :3, 3], axis=-1)
    assert np.all(err[out.exact] < 1e-6)
    for k in range(0, 50, 10):
        res = solve(ch, T[k, :3, 3], T[k, :3, :3])
        single = [_key(ch, b.q) for b in res.branches if b.reaches]
        batch = [_key(ch, q) for q, e in zip(out.q[k], out.exact[k]) if e]
        for s in single:
            assert min(np.max(np.abs(_key(ch, s - b))) for b in batch) < 1e-9
    # the generating values are found and reported within limits
    for k in range(50):
        d = np.max(np.abs(_key(ch, out.q[k] - qs[k])), axis=-1)
        j = int(np.argmin(d))
        assert d[j] < 1e-6 and out.within_limits[k, j]


# -- other layouts the recognition must catch -------------------------------------------------------


def _pieper_on(stage_rows):
    wrist = [
        DHRow("w1", "revolute", alpha=-90 * D, d=0.3),
        DHRow("w2", "revolute", alpha=90 * D),
        DHRow("w3", "revolute", d=0.1),
    ]
    return chain_from_dh(stage_rows + wrist, tool=from_xyz_rpy([0.02, 0.0, 0.08], [0.0, 0.3, 0.0]))


@pytest.mark.parametrize(
    "stage, rows, configs",
    [
        # slide on a pitching boom, then a wrist (the classic six-axis slide arm): 4 with the slide out, 8 in all
        (
            "rrp",
            [
                DHRow("1", "revolute", alpha=-90 * D, d=0.4),
                DHRow("2", "revolute", alpha=90 * D, d=0.15),
                DHRow("3", "prismatic", d=0.2, lower=-2.0, upper=2.0),
            ],
            8,
        ),
        # two parallel swings and a lift, then a wrist: 2 × 2
        (
            "lift",
            [
                DHRow("1", "revolute", a=0.4, d=0.3),
                DHRow("2", "revolute", a=0.3),
                DHRow("3", "prismatic", lower=-2.0, upper=2.0),
            ],
            4,
        ),
    ],
)
def test_six_axis_wrist_on_other_positioning_stages(stage, rows, configs):
    """Pieper 1968: any positioning stage with a closed form plus three axes meeting in a point (from memory)."""
    ch = _pieper_on(rows)
    st = structure_of(ch)
    assert st.kind == "pieper6" and st.stage == stage
    rng = np.random.default_rng(12)
    for q in rng.uniform([-2.5, -1.2, 0.1, -2.5, 0.3, -2.5], [2.5, 1.2, 0.8, 2.5, 2.5, 2.5], size=(10, 6)):
        T = ch.fk(q)
        res = solve(ch, T[:3, 3], T[:3, :3], near=q)
        assert res.reachable and res.branches[0].distance == pytest.approx(0.0, abs=1e-7)
        assert len({tuple(np.round(b.q, 6)) for b in res.branches if b.reaches}) == configs
        for b in res.branches:
            if b.reaches:
                F = ch.fk(b.q)
                assert np.allclose(F, T, atol=1e-9)


@pytest.mark.parametrize("n", [2, 3, 4, 5, 6, 7])
def test_random_tables_never_fail(n, random_rows):
    """Random DH tables (many exact 90° twists, so structures occur): closed forms must be right; nothing fails."""
    make_random_rows = random_rows
    rng = np.random.default_rng(100 + n)
    recognised = 0
    for _ in range(60 if n < 5 else 25):
        ch = chain_from_dh(make_random_rows(rng, n))
        st = structure_of(ch)
        q = rng.uniform(ch.lower, ch.upper)
        T = ch.fk(q)
        full = st is not None and st.kind in ("pieper6", "table4", "planar3")
        R = T[:3, :3] if full or (st is None and n >= 6) else None
        res = solve(ch, T[:3, 3], R, near=q, closest=False, seeds=16)
        assert res.status == "solved", res.fault
        for b in res.branches:
            assert np.all(np.isfinite(b.q))
        if st is not None:
            recognised += 1
            # the closed form finds the pose we started from
            assert res.reachable, st.name
            assert res.branches[0].distance == pytest.approx(0.0, abs=1e-6), st.name
    if n <= 3:
        assert recognised > 0


def _random_pieper(rng):
    """A random six-axis arm with intersecting wrist axes at random (not only right-angled) twists."""

    def r(lo=-0.6, hi=0.6):
        return float(rng.uniform(lo, hi))

    def twist():
        return float(rng.choice([-1, 1]) * rng.uniform(30, 150) * D)

    rows = [
        DHRow("1", "revolute", a=r(), alpha=twist(), d=r(), theta=r(-3, 3)),
        DHRow("2", "revolute", a=r(0.3, 0.8), alpha=float(rng.choice([0.0, np.pi])), d=r(), theta=r(-3, 3)),
        DHRow("3", "revolute", a=r(), alpha=twist(), theta=r(-3, 3)),
        DHRow("4", "revolute", alpha=twist(), d=r(0.3, 0.8), theta=r(-3, 3)),
        DHRow("5", "revolute", alpha=twist(), theta=r(-3, 3)),
        DHRow("6", "revolute", alpha=r(-3, 3), a=r(), d=r(), theta=r(-3, 3)),
    ]
    return chain_from_dh(rows, base=from_xyz_rpy(rng.normal(size=3), rng.uniform(-3, 3, 3)))


def test_random_six_axis_arms_with_intersecting_wrist_axes():
    """Pieper 1968: the wrist centre separates position from orientation for any twists (from memory)."""
    rng = np.random.default_rng(31)
    for _ in range(25):
        ch = _random_pieper(rng)
        assert structure_of(ch).kind == "pieper6"
        for q in rng.uniform(-np.pi, np.pi, size=(4, 6)):
            T = ch.fk(q)
            res = solve(ch, T[:3, 3], T[:3, :3], near=q, closest=False)
            assert res.reachable and res.branches[0].distance == pytest.approx(0.0, abs=1e-6)
            reaching = [b for b in res.branches if b.reaches]
            assert len({tuple(np.round(np.angle(np.exp(1j * b.q)), 6)) for b in reaching}) <= 8
            for b in reaching:
                assert np.allclose(ch.fk(b.q), T, atol=1e-8)


def test_random_table_arms():
    rng = np.random.default_rng(32)
    for _ in range(20):
        flips = rng.choice([0.0, np.pi], size=4)
        rows = [
            DHRow("1", "revolute", a=float(rng.uniform(-0.5, 0.5)), alpha=float(flips[0]), d=float(rng.uniform(0, 1))),
            DHRow(
                "2", "revolute", a=float(rng.uniform(0.2, 0.5)), alpha=float(flips[1]), theta=float(rng.uniform(-3, 3))
            ),
            DHRow("3", "prismatic", a=float(rng.uniform(0.1, 0.5)), alpha=float(flips[2]), lower=-1.0, upper=1.0),
            DHRow("4", "revolute", alpha=float(flips[3]), d=float(rng.uniform(-0.2, 0.2)), lower=-3.14, upper=3.14),
        ]
        ch = chain_from_dh(rows, "modified", tool=from_xyz_rpy([0.0, 0.0, float(rng.uniform(0, 0.2))], [0, 0, 1.0]))
        assert structure_of(ch).kind == "table4"
        q = np.array([rng.uniform(-3, 3), rng.uniform(0.3, 2.8), rng.uniform(-0.9, 0.9), rng.uniform(-3, 3)])
        T = ch.fk(q)
        res = solve(ch, T[:3, 3], T[:3, :3], near=q)
        assert res.reachable and res.branches[0].distance == pytest.approx(0.0, abs=1e-6)
        assert len({b.configuration for b in res.branches if b.reaches}) == 2


@pytest.mark.parametrize("stem", ["boom3", "heron6", "planar3", "quill4"])
def test_batch_on_every_closed_form_demo_arm(stem):
    """Every exact batch branch lands on its target (FK round trip); the generating values are always found."""
    from poser.core.transforms import rotation_error

    ch = _demo(stem)
    rng = np.random.default_rng(13)
    qs = rng.uniform(ch.lower, ch.upper, size=(500, ch.n))
    T = ch.fk(qs)
    full = structure_of(ch).kind in ("pieper6", "table4", "planar3")
    out = solve_batch(ch, T[:, :3, 3], T[:, :3, :3] if full else None)
    F = ch.fk(out.q)
    pe = np.linalg.norm(F[..., :3, 3] - T[:, None, :3, 3], axis=-1)
    assert np.all(pe[out.exact] < 1e-6)
    if full:
        assert np.all(rotation_error(F[..., :3, :3], T[:, None, :3, :3])[out.exact] < 1e-8)
    d = np.max(np.abs(_key(ch, out.q - qs[:, None, :])), axis=-1)
    assert np.all(np.min(d, axis=1) < 1e-6)


def test_batch_needs_a_closed_form():
    from poser.core.errors import PoserValueError

    with pytest.raises(PoserValueError, match="closed-form"):
        solve_batch(_demo("wren6"), np.zeros((2, 3)), np.broadcast_to(np.eye(3), (2, 3, 3)))


def _backend_arms():
    return [
        _demo("quill4"),
        _demo("planar3"),
        _demo("heron6"),
        _demo("boom3"),
        _elbow_arm(0.15),
        _elbow_arm(0.0),
        _cylindrical_arm(),
        _pieper_on(
            [
                DHRow("1", "revolute", a=0.4, d=0.3),
                DHRow("2", "revolute", a=0.3),
                DHRow("3", "prismatic", lower=-2, upper=2),
            ]
        ),
        _pieper_on(
            [
                DHRow("1", "revolute", alpha=-90 * D, d=0.4),
                DHRow("2", "revolute", alpha=90 * D, d=0.15),
                DHRow("3", "prismatic", d=0.2, lower=-2.0, upper=2.0),
            ]
        ),
        chain_from_dh([DHRow("s", "revolute", a=0.7), DHRow("e", "revolute", a=0.4)]),
        chain_from_dh([DHRow("a", "revolute", alpha=90 * D), DHRow("b", "prismatic", lower=0.1, upper=0.9)]),
    ]


@pytest.mark.parametrize("k", range(11))
def test_scalar_and_vectorised_backends_agree_on_many_targets(k):
    """The one description of each closed form, generated in plain floats and in numpy, gives the same
    candidates in the same slots on 10⁴ targets per structure — reachable, singular (joints at 0: wrist axes
    aligned, arms on their axis lines) and out of reach (clipped subproblems)."""
    ch = _backend_arms()[k]
    pl = plan(ch)
    st = pl.structure
    rng = np.random.default_rng(55 + k)
    N = 10_000
    qs = rng.uniform(ch.lower, ch.upper, size=(N, ch.n))
    qs[:200] = 0.0
    T = ch.fk(qs)
    T[-300:, :3, 3] *= 10.0
    refs = rng.uniform(-3, 3, size=(N, ch.n))
    R = T[:, :3, :3] if st.kind != "position" else None
    Qv, ev, fv = pl.many(T[:, :3, 3], R, refs)
    worst = 0.0
    for i in range(N):
        single = pl.one(T[i, :3, 3], None if R is None else R[i], refs[i])
        Qs = np.array([q for q, _, _ in single])
        assert Qs.shape == Qv[i].shape
        worst = max(worst, float(np.max(np.abs(np.angle(np.exp(1j * (Qs - Qv[i])))))))
        assert [e for _, e, _ in single] == ev[i].tolist()
        assert [list(f) for _, _, f in single] == fv[i].tolist()
    assert worst < 1e-9
