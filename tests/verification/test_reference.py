"""The reference itself, checked against closed forms before it judges anything."""

from __future__ import annotations

import math

import numpy as np

from . import arms
from . import reference as ref


def test_planar_2r_closed_form():
    # x = a1 cos q1 + a2 cos(q1 + q2), y = a1 sin q1 + a2 sin(q1 + q2): Spong, Hutchinson & Vidyasagar,
    # Robot Modeling and Control, ch. 3, the two-link planar arm (from memory)
    a = arms.planar2()
    rng = np.random.default_rng(0)
    for q in rng.uniform(-3, 3, (20, 2)):
        T = ref.fk(a, q)
        x = 400 * math.cos(q[0]) + 300 * math.cos(q[0] + q[1])
        y = 400 * math.sin(q[0]) + 300 * math.sin(q[0] + q[1])
        assert np.allclose(T[:3, 3], [x, y, 0], atol=1e-9)


def test_standard_and_modified_tables_of_one_arm_agree():
    # The same mechanism written both ways: modified row i takes a_{i-1}, alpha_{i-1} of the standard row
    # i-1, and the standard last row's Tx(a_n) Rx(alpha_n) moves into the tool (Craig, Introduction to
    # Robotics, ch. 3, "Denavit-Hartenberg notation" and the distal variant; from memory).
    s = arms.six_offsets()
    rows = s["joints"]
    m_rows = []
    prev = {"a": 0.0, "alpha": 0.0}
    for j in rows:
        m = dict(j)
        m["a"], m["alpha"] = prev["a"], prev["alpha"]
        prev = j
        m_rows.append(m)
    last = rows[-1]
    assert last["a"] == 0 and last["alpha"] == 0  # so the tool is unchanged
    m = ref.arm(m_rows, convention="modified", tool=s["tool"])
    rng = np.random.default_rng(1)
    Q = rng.uniform(-3, 3, (30, 6))
    assert np.allclose(ref.fk(s, Q), ref.fk(m, Q), atol=1e-9)


def test_search_finds_the_pose_it_came_from():
    a = arms.six_offsets()
    q = ref.to_internal(a, [20, 30, -40, 50, 60, 70])
    T = ref.fk(a, q)
    sols = ref.solve_all(a, T[:3, 3], T[:3, :3], K=150)
    assert any(ref.same(a, q, s) for s in sols)
    # a spherical-wrist six-axis arm has at most 8 distinct solutions (Pieper's decoupling; common practice)
    assert 1 <= len(sols) <= 8
    for s in sols:
        pe, oe = ref.errors(a, s, T[:3, 3], T[:3, :3])
        assert pe < 1e-6 and oe < 1e-9


def test_rotation_error_is_accurate_near_zero():
    R = ref.pose((0, 0, 0), (0.3, -0.2, 1.0))[:3, :3]
    small = ref.pose((0, 0, 0), (1e-10, 0, 0))[:3, :3]
    assert abs(ref.rot_error(R, R @ small) - 1e-10) < 1e-15
    assert abs(ref.rot_error(np.eye(3), ref.pose((0, 0, 0), (0, 0, math.pi))[:3, :3]) - math.pi) < 1e-12


def test_turn_count_brute_force():
    a = arms.wide_turns()
    q = ref.to_internal(a, [30, 10, -20, 40, 35, 25])
    # J1, J3..J6 over ±360°: two turns each fit; J2 one: 2**5
    assert ref.turn_count(a, q) == 32
