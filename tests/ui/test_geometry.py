"""Pure helpers behind the window (no display needed)."""

from __future__ import annotations

import numpy as np
import pytest
from ui_common import HERON, ROOT

from poser import armfile
from poser.core.transforms import rpy_to_matrix
from poser.ui import geometry, words


@pytest.fixture(scope="module")
def heron():
    return armfile.load(HERON).to_chain()


def test_segment_transform_maps_the_unit_cylinder_onto_the_segment():
    p0, p1 = np.array([1.0, 2.0, 3.0]), np.array([4.0, -2.0, 3.5])
    T = geometry.segment_transform(p0, p1, 0.2)
    np.testing.assert_allclose((T @ [0, 0, 0, 1])[:3], p0)
    np.testing.assert_allclose((T @ [0, 0, 1, 1])[:3], p1)
    np.testing.assert_allclose(np.linalg.norm(T[:3, 0]), 0.2)
    assert geometry.segment_transform(p0, p0, 0.2) is None


def test_drawing_runs_from_the_floor_to_the_tool_point(heron):
    q = heron.q_from_user(np.array([10, 20, 30, 40, 50, 60.0]))
    d = geometry.arm_drawing(heron, q)
    np.testing.assert_allclose(d.segments[-1, 1], heron.fk(q)[:3, 3], atol=1e-9)
    # Heron's base stands on a 300 mm riser: the first body starts on the floor below the base
    np.testing.assert_allclose(d.segments[0, 0], [0, 0, 0], atol=1e-9)
    np.testing.assert_allclose(d.segments[0, 1], [0, 0, 300], atol=1e-9)
    # consecutive pieces join up
    np.testing.assert_allclose(d.segments[1:, 0], d.segments[:-1, 1], atol=1e-9)
    assert d.kinds == ("revolute",) * 6


def test_prismatic_joints_are_drawn_as_such():
    chain = armfile.load(ROOT / "demo_arms" / "boom3.toml").to_chain()
    d = geometry.arm_drawing(chain, chain.home)
    assert "prismatic" in d.kinds
    np.testing.assert_allclose(np.linalg.norm(d.joint_axes, axis=1), 1.0)


def test_nice_spacing_steps_one_two_five():
    assert geometry.nice_spacing(2000) == 200
    assert geometry.nice_spacing(3.0) == pytest.approx(0.2)
    assert geometry.nice_spacing(45) == 5
    assert geometry.nice_spacing(0) == 1.0


@pytest.mark.parametrize("mode", list(geometry.ORIENTATION_MODES))
def test_orientation_notations_round_trip(mode):
    R = rpy_to_matrix(np.array([0.3, -0.7, 2.1]))
    vals = geometry.values_from_rotation(mode, R, np.pi / 180)
    np.testing.assert_allclose(geometry.rotation_from_values(mode, vals, np.pi / 180), R, atol=1e-12)


def test_rpy_notation_is_the_arm_files_convention():
    # the window's rpy must be the core's (fixed X, Y, Z): compare with poser.core.transforms
    rpy_deg = np.array([10.0, 20.0, 30.0])
    np.testing.assert_allclose(geometry.rotation_from_values("rpy", rpy_deg, np.pi / 180),
                               rpy_to_matrix(np.radians(rpy_deg)), atol=1e-12)


def test_bad_orientation_values_are_refused_in_words():
    with pytest.raises(ValueError, match="axis must not be zero"):
        geometry.rotation_from_values("axis-angle", [0, 0, 0, 30])
    with pytest.raises(ValueError, match="quaternion must not be zero"):
        geometry.rotation_from_values("quaternion", [0, 0, 0, 0])


def test_matrix_text_formats_read_back():
    T = np.array([[0.0, -1, 0, 12.5], [1, 0, 0, -3.25], [0, 0, 1, 700], [0, 0, 0, 1]])
    ns = {"np": np}
    np.testing.assert_allclose(eval(geometry.format_matrix(T, "numpy"), ns), T)
    rows = [[float(v) for v in line.split(",")] for line in geometry.format_matrix(T, "csv").splitlines()]
    np.testing.assert_allclose(rows, T)
    text = geometry.format_matrix(T, "text").splitlines()
    assert len(text) == 4 and text[2].split() == ["0", "0", "1", "700"]


def test_limit_words_say_what_the_colour_says():
    assert words.limit_state(0, -10, 10, 0.05, "deg").level == "ok"
    near = words.limit_state(9.5, -10, 10, 0.05, "deg")
    assert near.level == "near" and near.words == "near upper limit: 0.5 deg left"
    at = words.limit_state(-10, -10, 10, 0.05, "deg")
    assert at.level == "at" and at.words == "AT lower limit"
    beyond = words.limit_state(12, -10, 10, 0.05, "mm")
    assert beyond.level == "beyond" and beyond.words == "BEYOND upper limit by 2 mm"


def test_singularity_is_flagged_at_a_straight_wrist(heron):
    # Heron's wrist axes J4 and J6 line up at J5 = 0: a wrist singularity (common practice)
    _, kappa, _ = geometry.singularity_metrics(heron, np.zeros(6))
    assert words.singularity_words(kappa)[0] == "at"
    _, kappa, _ = geometry.singularity_metrics(heron, heron.q_from_user(np.array([10, 20, 30, 40, 50, 60.0])))
    assert words.singularity_words(kappa)[0] == "ok"


def test_condition_number_does_not_depend_on_the_length_unit():
    spec = armfile.load(ROOT / "demo_arms" / "boom3.toml")
    chain_m = spec.to_chain()
    spec_mm = spec.copy()
    spec_mm._doc = None
    spec_mm.units = type(spec.units)("mm", spec.units.angle)
    spec_mm.base_xyz = tuple(1000 * v for v in spec.base_xyz)
    spec_mm.tool_xyz = tuple(1000 * v for v in spec.tool_xyz)
    for j in spec_mm.joints:
        j.a, j.d = j.a * 1000, j.d * 1000
        if j.type == "prismatic":
            j.min, j.max = j.min * 1000, j.max * 1000
            j.home = None if j.home is None else j.home * 1000
    chain_mm = spec_mm.to_chain()
    q = chain_m.home + 0.2
    q_mm = q.copy()
    q_mm[~chain_m.revolute] *= 1000
    k_m = geometry.singularity_metrics(chain_m, q)[1]
    k_mm = geometry.singularity_metrics(chain_mm, q_mm)[1]
    assert k_mm == pytest.approx(k_m, rel=1e-9)


def test_trail_keeps_a_bounded_history():
    t = geometry.ToolTrail(capacity=3)
    for k in range(5):
        assert t.add([k, 0, 0])
    assert not t.add([4, 0, 0])
    np.testing.assert_array_equal(t.points[:, 0], [2, 3, 4])


def test_look_alike_branches_draw_once(heron):
    q = heron.q_from_user(np.array([10, 20, 30, 40, 50, 60.0]))
    q_turn = q.copy()
    q_turn[5] += 2 * np.pi
    q_other = q.copy()
    q_other[2] += 0.5
    drawings, index = geometry.distinct_drawings(heron, [q, q_turn, q_other])
    assert len(drawings) == 2 and index == [0, 0, 1]


def test_interpolation_eases_from_start_to_end():
    a, b = np.zeros(3), np.array([1.0, 2.0, -4.0])
    np.testing.assert_allclose(geometry.interpolate_q(a, b, 0), a)
    np.testing.assert_allclose(geometry.interpolate_q(a, b, 1), b)
    np.testing.assert_allclose(geometry.interpolate_q(a, b, 0.5), b / 2)


def test_an_unreachable_result_is_explained_with_the_blocking_limit(heron):
    from types import SimpleNamespace as NS

    v = NS(joint=2, name="J3 elbow", side="upper", limit=np.radians(160), value=np.radians(172.5),
           excess=np.radians(12.5))
    closest = NS(q=heron.home, label="shoulder front · elbow down", within_limits=False, violations=(v,),
                 position_error=42.25, orientation_error=0.0, manipulability=1.0, reaches=False)
    result = NS(solver="test", branches=(closest,), reachable=False, closest=closest,
                nearest_point=np.array([1500.0, 0.0, 900.0]), message="", position_only=True, redundant=False)
    level, text = words.ik_summary(heron, result)
    assert level == "at"
    assert text == ("Out of reach. Closest approach: 42.25 mm from the target. "
                    "Blocking limit: J3 elbow: 12.5 deg over upper. Nearest reachable point: 1500, 0, 900 mm.")
    assert words.worst_violation(heron, closest) == "J3 elbow: 12.5 deg over upper"
    moved = heron.home + np.radians([0, 0, 30, 0, -45, 0])
    assert words.largest_move(heron, heron.home, moved) == "J5 wrist bend 45 deg"
