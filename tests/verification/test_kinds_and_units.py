"""Singularity kinds `poser fk` names, manipulability in the task space's units, and the same branches for the
same physical arm written in standard or modified DH, in mm or in m.

Sources:

* Manipulability w = √det(J Jᵀ) of the Jacobian over the directions the arm controls, 0 exactly at a
  singularity: Yoshikawa, "Manipulability of robotic mechanisms", IJRR 4(2), 1985 (from memory).  The
  reference's Jacobian (reference.jacobian, central differences of the reference FK) gives the product of
  singular values to compare with; the planar 3R determinant is derived here with sympy.
* Standard and modified DH describe the same arm (Craig, *Introduction to Robotics*, ch. 3; from memory):
  the solutions are the same joint values.  Kinematics is linear in length (common practice): the same arm
  in m has the same joint angles, slides ÷ 1000, manipulability ÷ 1000^k for length^k.
"""

from __future__ import annotations

import numpy as np
import pytest

from . import arms
from . import poserside as ps
from . import reference as ref

R_, P_ = "revolute", "prismatic"

SMALL = {
    "rpp lateral": ref.arm([dict(d=250, min=-170, max=170), dict(type=P_, alpha=-90, a=80, min=50, max=700),
                            dict(type=P_, min=100, max=600)], name="rpp lateral"),
    "ppp": ref.arm([dict(type=P_, alpha=-90, theta=-90, min=0, max=900),
                    dict(type=P_, alpha=-90, theta=-90, min=-200, max=700), dict(type=P_, min=100, max=600)],
                   name="ppp"),
    "rrp +d": ref.arm([dict(a=350, d=300, min=-160, max=160), dict(a=250, d=40, alpha=180, min=-150, max=150),
                       dict(type=P_, min=0, max=250)], name="rrp plus"),
    "rrp -d": ref.arm([dict(a=350, d=300, min=-160, max=160), dict(a=250, d=-40, alpha=180, min=-150, max=150),
                       dict(type=P_, min=0, max=250)], name="rrp minus"),
    "one revolute": ref.arm([dict(a=300, d=100, min=-170, max=170)], name="one revolute"),
    "one slide": ref.arm([dict(type=P_, min=0, max=500)], name="one slide"),
    "turn and slide": ref.arm([dict(alpha=-90, min=-170, max=170), dict(type=P_, min=100, max=600)], name="rp"),
    "two slides": ref.arm([dict(type=P_, alpha=-90, theta=-90, min=0, max=900),
                           dict(type=P_, alpha=-90, theta=-90, min=-200, max=700)], name="pp"),
    "rr spatial": ref.arm([dict(alpha=90, d=200, min=-170, max=170), dict(a=400, min=-120, max=120)], name="rr"),
    "elbow3 offsets": ref.arm([dict(a=100, alpha=-90, d=400, min=-170, max=170),
                               dict(a=450, d=-90, min=-110, max=150), dict(a=380, min=-150, max=150)],
                              name="elbow three"),
    "rrr skew": ref.arm([dict(alpha=90, d=300, min=-170, max=170), dict(a=400, alpha=30, min=-120, max=120),
                         dict(a=300, d=50, min=-150, max=150)], name="rrr skew"),
    "rrpr -d": ref.arm([dict(a=330, d=400, min=-150, max=150), dict(a=270, d=-35, alpha=180, min=-140, max=140),
                        dict(type=P_, min=0, max=220), dict(d=40, min=-400, max=400)], name="rrpr minus"),
}
# the power k of length^k each manipulability has (columns: revolute → a length, slide → none; the rank's rows)
POWER = {"rpp lateral": 1, "ppp": 0, "rrp +d": 2, "rrp -d": 2, "one revolute": 1, "one slide": 0,
         "turn and slide": 1, "two slides": 0, "rr spatial": 2, "elbow3 offsets": 3, "rrr skew": 3, "rrpr -d": 2}


@pytest.mark.parametrize("name", sorted(SMALL))
def test_arms_with_one_to_four_joints_random_targets(name):
    from .compare import compare

    a = SMALL[name]
    lo, hi = ref.limits(a)
    rng = np.random.default_rng(sorted(SMALL).index(name))
    for _ in range(2):
        q = lo + rng.random(len(lo)) * (hi - lo)
        T = ref.fk(a, q)
        R = T[:3, :3] if len(q) >= 3 else None  # a pose the arm can take (it came from its FK)
        problems, res, sols, _ = compare(a, T[:3, 3], R, K=100)
        assert res.reachable
        assert any(ref.same(a, q, b.q) for b in res.branches)
        assert not problems, "\n".join(problems[:6])


@pytest.mark.parametrize("name", sorted(SMALL))
def test_manipulability_is_the_reference_value_with_the_right_power_of_length(name):
    from poser.core.jacobian import manipulability, task_space

    a = SMALL[name]
    am = arms.scaled(a, 1e-3, "m")
    c, cm = ps.chain(a), ps.chain(am)
    ts = task_space(c)
    assert ts.unit_power == POWER[name] and ts.unit("mm") == ({0: "no unit", 1: "mm"}.get(POWER[name])
                                                               or f"mm{'²³'[POWER[name] - 2]}")
    lo, hi = ref.limits(a)
    for q in lo + np.random.default_rng(5).random((3, len(lo))) * (hi - lo):
        w = manipulability(c, q)
        w_ref = np.prod(np.linalg.svd(ts.rows @ ref.jacobian(a, q), compute_uv=False)[:ts.rank])
        assert abs(w - w_ref) <= 1e-6 * w_ref
        qm = np.where(ref.revolute(a), q, q * 1e-3)
        assert abs(manipulability(cm, qm) * 1e3 ** POWER[name] - w) <= 1e-9 * w


def test_planar_3r_manipulability_is_a1_a2_sin_q2_and_zero_stretched():
    # det of the in-plane (x, y, φ) Jacobian of the planar 3R arm, worked out with sympy here
    import sympy as sp

    from poser.core.jacobian import manipulability

    q1, q2, q3, a1, a2, a3 = sp.symbols("q1 q2 q3 a1 a2 a3", real=True)
    x = a1 * sp.cos(q1) + a2 * sp.cos(q1 + q2) + a3 * sp.cos(q1 + q2 + q3)
    y = a1 * sp.sin(q1) + a2 * sp.sin(q1 + q2) + a3 * sp.sin(q1 + q2 + q3)
    det = sp.simplify(sp.Matrix([x, y, q1 + q2 + q3]).jacobian([q1, q2, q3]).det())
    assert sp.simplify(det - a1 * a2 * sp.sin(q2)) == 0
    a = arms.planar3()
    c = ps.chain(a)
    for q2v in (0.0, 1e-4, 30.0, 90.0, 165.0):
        q = ref.to_internal(a, [20, q2v, 40])
        assert abs(manipulability(c, q) - 420 * 330 * abs(np.sin(np.radians(q2v)))) <= 1e-6
    assert manipulability(c, ref.to_internal(a, [20, 0, 40])) == 0.0


@pytest.mark.parametrize("name,q_user,kinds", [
    ("six_round", [20, 40, 30, 10, 0, 15], {"wrist"}),
    ("six_round", [20, 40, 90, 10, 30, 15], {"elbow"}),
    ("six_round", [20, 40, -90, 10, 30, 15], {"elbow"}),
    ("six_round", [10, 90, 90, 20, 0, 30], {"wrist", "elbow", "shoulder"}),
    ("six_round", [10, 40, 30, 20, 30, 30], set()),
    ("elbow3 offsets", [10, 20, 0], {"elbow"}),
    ("rrp +d", [10, 0, 100], {"elbow"}),
    ("rrp +d", [10, 180, 100], {"elbow"}),
    ("rr spatial", [10, 90], {"shoulder"}),
    ("turn and slide", [10, 300], set()),
    ("turn and slide", [10, 0], {"shoulder"}),        # the tool point on axis 1: J1 cannot move it
    ("srs7", [10, 30, 20, 0, 20, 30, 10], {"elbow"}),
    ("srs7", [10, 30, 20, 40, 20, 30, 10], set()),
])
def test_fk_names_the_kind_on_new_arms_and_mounts(name, q_user, kinds):
    make = SMALL.get(name)
    variants = [make] if make else [getattr(arms, name)(), getattr(arms, name)(base=arms.CEILING),
                                    arms.to_modified(getattr(arms, name)()),
                                    arms.scaled(getattr(arms, name)(), 1e-3, "m")]
    for a in variants:
        code, js, err = ps.cli_json(a, "fk", "--joints", ps.csv(q_user))
        assert code == 0
        got = {k["kind"] for k in js["singularity"]["kinds"]}
        assert got == kinds, (a["name"], a["convention"], a["length"])
        assert (js["singularity"]["level"] == "at") == bool(kinds)


@pytest.mark.parametrize("name,q_user", [("stanford_like", [0, 0, 500, 0, 30, 0]), ("six_lateral", "double root")])
def test_shoulder_words_are_true_of_arms_with_a_lateral_offset(name, q_user):
    from scipy.optimize import brentq

    a = getattr(arms, name)()
    if q_user == "double root":  # J2 chosen so that the wrist centre lies on frame 1's x axis: at d2 from axis 1
        def along_x1(j2):
            F = ref.frames(a, ref.to_internal(a, [25, j2, 0, 40, 30, 20])[None])[0]
            return float(np.dot(F[4][:3, 3], F[1][:3, 0]))

        q_user = [25, brentq(along_x1, -60, -40, xtol=1e-14), 0, 40, 30, 20]
    q = ref.to_internal(a, q_user)
    # the reference: singular (the Jacobian loses rank) but the wrist centre is far from axis 1
    assert np.linalg.svd(ref.jacobian(a, q), compute_uv=False)[-1] < 1e-6
    wc = ref.frames(a, q[None])[0, 4 if name == "six_lateral" else 3, :3, 3]
    assert np.hypot(wc[0], wc[1]) > 100
    code, out, err = ps.cli(a, "fk", "--joints", ps.csv(q_user))
    line = next(w for w in out.splitlines() if w.startswith("Singularity:"))
    assert "AT A SINGULARITY" in line
    assert "wrist centre on the base axis" not in line, line


@pytest.mark.parametrize("name", ["six_round", "six_offsets", "six_lateral", "stanford_like", "scara_rrpr",
                                  "scara_rrrp", "five_axis", "planar3", "cylindrical", "cartesian_wrist", "srs7"])
def test_standard_modified_and_metres_give_the_same_branches(name):
    s = getattr(arms, name)()
    variants = [(s, 1.0), (arms.to_modified(s), 1.0), (arms.scaled(s, 1e-3, "m"), 1e-3)]
    lo, hi = ref.limits(s)
    rng = np.random.default_rng(len(name))
    for q in lo + rng.random((2, len(lo))) * (hi - lo):
        T = ref.fk(s, q)
        assert np.allclose(ref.fk(variants[1][0], q), T, atol=1e-9)
        for R in (T[:3, :3], None):
            keys = []
            for a, f in variants:
                res = ps.solve(a, T[:3, 3] * f, R)
                keys.append((res.total, res.reachable, sorted(
                    (b.configuration, b.turns, b.within_limits, b.family is not None,
                     tuple(np.round(np.where(ref.revolute(a), ref.to_user(a, b.q), b.q / f), 5)))
                    for b in res.branches)))
            assert keys[0] == keys[1] == keys[2]


def test_cylindrical_arm_with_the_tool_point_on_axis_1_is_named_like_the_turn_and_slide_arm():
    cyl = ref.arm([dict(d=200, min=-160, max=160), dict(type=P_, alpha=-90, min=100, max=800),
                   dict(type=P_, min=-200, max=700)], name="cylinder through the axis")
    q_user = [10, 300, 0]
    F = ref.frames(cyl, ref.to_internal(cyl, q_user)[None])[0]
    assert np.hypot(F[-1][0, 3], F[-1][1, 3]) < 1e-12  # the reference: the tool point is on axis 1
    code, js, err = ps.cli_json(cyl, "fk", "--joints", ps.csv(q_user))
    assert {k["kind"] for k in js["singularity"]["kinds"]} == {"shoulder"}


def test_two_joint_arm_with_the_target_on_axis_1_gives_a_j1_family():
    a = SMALL["rr spatial"]
    for t in (0.3, -2.0, 2.9):  # the reference: any J1 with J2 = 90 deg puts the tool point at (0, 0, 600)
        assert np.allclose(ref.fk(a, [t, np.pi / 2])[:3, 3], [0, 0, 600], atol=1e-9)
    res = ps.solve(a, [0.0, 0.0, 600.0], None)
    assert res.reachable
    assert len(res.branches) <= 2
    assert all(b.family is not None and b.family.joints == (0,) for b in res.branches)
