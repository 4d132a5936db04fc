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
    from poser.core.singularity import assess

    q = heron.q_from_user(np.array([10, 20, 30, 40, 0, 60.0]))
    level, text = words.singularity_words(heron, assess(heron, q))
    assert level == "at" and "wrist axes aligned" in text and "J4 forearm roll" in text and "J6 flange" in text
    q = heron.q_from_user(np.array([10, 20, 30, 40, 50, 60.0]))
    assert words.singularity_words(heron, assess(heron, q))[0] == "ok"


def test_condition_number_does_not_depend_on_the_length_unit():
    from poser.core.jacobian import condition_number

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
    assert condition_number(chain_mm, q_mm) == pytest.approx(condition_number(chain_m, q), rel=1e-9)


def test_trail_keeps_a_bounded_history():
    t = geometry.ToolTrail(capacity=3)
    for k in range(5):
        assert t.add([k, 0, 0])
    assert not t.add([4, 0, 0])
    np.testing.assert_array_equal(t.points[:, 0], [2, 3, 4])


def test_interpolation_eases_from_start_to_end():
    a, b = np.zeros(3), np.array([1.0, 2.0, -4.0])
    np.testing.assert_allclose(geometry.interpolate_q(a, b, 0), a)
    np.testing.assert_allclose(geometry.interpolate_q(a, b, 1), b)
    np.testing.assert_allclose(geometry.interpolate_q(a, b, 0.5), b / 2)


def test_an_unreachable_result_is_explained_with_the_blocking_limit(heron):
    from poser.core.ik import solve

    # Heron reaching far below itself: only branches beyond a limit reach (the solver names the worst)
    q = heron.q_from_user(np.array([10, 130, 170, 20, 30, 0.0]))  # J3 at 170 deg: beyond its 160 deg limit
    T = heron.fk(q)
    res = solve(heron, T[:3, 3], T[:3, :3])
    level, text = words.ik_summary(heron, res)
    blocked = [b for b in res.branches if b.reaches and not b.within_limits]
    assert blocked and "breaks a joint limit" in text or res.reachable
    b = blocked[0]
    assert words.worst_violation(heron, b).split(":")[0] in text or res.reachable
    moved = heron.home + np.radians([0, 0, 30, 0, -45, 0])
    assert words.largest_move(heron, heron.home, moved) == "J5 wrist bend by 45 deg"


# -- mounts, parts behind the floor, labels, ghosts (the 3D view's Qt-free helpers) -----------------


def _remounted(xyz, rpy):
    spec = armfile.load(HERON)
    spec = spec.copy()
    spec.base_xyz, spec.base_rpy = tuple(xyz), tuple(rpy)
    return spec.to_chain()


@pytest.fixture(scope="module")
def ceiling():
    """Heron 6 hung from a ceiling 2.5 m up: base z points down."""
    return _remounted((0, 0, 2500), (180, 0, 0))


@pytest.fixture(scope="module")
def planar():
    return armfile.load(ROOT / "demo_arms" / "planar3.toml").to_chain()


def test_only_an_upright_raised_base_stands_on_a_riser(heron, ceiling, planar):
    assert geometry.is_upright(heron.base) and not geometry.is_upright(ceiling.base)
    assert not geometry.is_upright(planar.base)
    for chain in (ceiling, planar):
        d = geometry.arm_drawing(chain, chain.home)
        assert 0 not in d.segment_link  # no riser
        np.testing.assert_allclose(d.segments[0, 0], chain.base[:3, 3], atol=1e-9)  # starts at the mount
    d = geometry.arm_drawing(heron, heron.home)
    assert list(d.segment_link[:1]) == [0] and d.segment_link[-1] == heron.n + 1
    assert np.all(np.diff(d.segment_link) >= 0)  # base to tool


def test_a_ceiling_arms_plate_lies_on_its_mounting_plane(ceiling):
    P = geometry.mount_plate(ceiling.base, ceiling.scale)
    top = (P @ [0, 0, 1, 1])[:3]  # centre of the plate's top face (unit cylinder z = 1)
    np.testing.assert_allclose(top, [0, 0, 2500], atol=1e-9)
    normal = P[:3, 2] / np.linalg.norm(P[:3, 2])
    np.testing.assert_allclose(normal, ceiling.base[:3, 2], atol=1e-12)
    np.testing.assert_allclose(normal, [0, 0, -1], atol=1e-12)  # base z of rpy (180, 0, 0) is world −z
    bottom = (P @ [0, 0, 0, 1])[:3]
    assert bottom[2] > 2500  # the plate's thickness is in the ceiling, not under it
    assert np.linalg.norm(P[:3, 0]) == pytest.approx(geometry.MOUNT_PLATE[0] * ceiling.scale)
    hatch = geometry.mount_hatch(ceiling.base, ceiling.scale)
    assert len(hatch) > 4
    np.testing.assert_allclose(hatch[..., 2], 2500, atol=1e-9)  # on the ceiling plane
    assert len(geometry.mount_hatch(np.eye(4), 1000.0)) == 0  # an upright base gets none


def test_the_planes_an_arm_must_stay_clear_of(heron, ceiling, planar):
    assert [p.name for p in geometry.mount_planes(heron)] == ["floor", "base"]
    assert [p.name for p in geometry.mount_planes(ceiling)] == ["mount", "floor"]
    assert [p.name for p in geometry.mount_planes(_remounted((0, 0, 0), (0, 0, 0)))] == ["floor"]
    wall = geometry.mount_planes(planar)[0]
    np.testing.assert_allclose(wall.normal, planar.base[:3, 2])
    np.testing.assert_allclose(wall.origin, [0, 0, 1200])
    assert set(geometry.PLANE_WORDS) == {p.name for c in (heron, ceiling) for p in geometry.mount_planes(c)}


def test_below_mount_finds_a_link_under_the_floor_with_its_depth(heron):
    q = heron.q_from_user(np.array([0, 110, 20, 0, 60, 0.0]))  # leaning far forward and down
    d = geometry.arm_drawing(heron, q)
    parts = geometry.below_mount(heron, d)
    floor = dict(parts)
    F = heron.frames(q)
    wrist = F[4, :3, 3]  # Heron's wrist centre (frames 4 and 5)
    assert wrist[2] < 0
    assert floor["J4 forearm roll"] == pytest.approx(-wrist[2])  # the forearm ends at the wrist centre
    tool = heron.fk(q)[:3, 3]
    flange, z6 = F[6, :3, 3], F[6, :3, 2]
    corner = flange + np.dot(tool - flange, z6) * z6  # the tool is drawn along the flange's z, then across
    assert floor["tool"] == pytest.approx(max(-tool[2], -flange[2], -corner[2]))  # its deepest point
    assert all(b.plane == "floor" for b in parts) and all(b.depth > 0 for b in parts)
    assert "J1 turret" not in floor and "base" not in floor
    # the same pose from its frames alone: frame origins only
    by_frames = dict(geometry.below_mount(heron, F))
    assert by_frames["J4 forearm roll"] == pytest.approx(-wrist[2])
    assert by_frames["tool"] == pytest.approx(-tool[2])
    # ready pose: nothing below
    assert geometry.below_mount(heron, geometry.arm_drawing(heron, heron.home)) == []


def test_below_the_riser_top_is_its_own_plane(heron):
    q = heron.q_from_user(np.array([0, 100, 40, 0, 60, 0.0]))
    parts = geometry.below_mount(heron, geometry.arm_drawing(heron, q))
    assert parts and {b.plane for b in parts} == {"base"}
    wrist = heron.frames(q)[4, :3, 3]
    assert 0 < wrist[2] < 300
    assert dict(parts)["J4 forearm roll"] == pytest.approx(300 - wrist[2])
    marks = geometry.below_marks(heron, parts)
    assert len(marks) == 1 and marks[0][2] == "base"
    assert marks[0][1] == f"J4 forearm roll: {300 - wrist[2]:.3f}".rstrip("0").rstrip(".") \
        + " mm below the base plane"


def test_a_ceiling_arm_reaching_up_is_behind_its_mount(ceiling):
    # J2 = 110 deg swings the upper arm up past the base plane (towards the ceiling: base z is world −z)
    q = ceiling.q_from_user(np.array([0, 110, 20, 0, 60, 0.0]))
    parts = geometry.below_mount(ceiling, geometry.arm_drawing(ceiling, q))
    assert parts and {b.plane for b in parts} == {"mount"}
    wrist = ceiling.frames(q)[4, :3, 3]
    assert dict(parts)["J4 forearm roll"] == pytest.approx(wrist[2] - 2500)


def test_below_pieces_are_cut_at_the_plane(heron):
    q = heron.q_from_user(np.array([0, 110, 20, 0, 60, 0.0]))
    d = geometry.arm_drawing(heron, q)
    pieces = dict(geometry.below_pieces(heron, d))
    floor = pieces["floor"]
    assert len(floor) and np.all(floor[..., 2] <= 1e-9)
    assert np.isclose(floor[..., 2], 0, atol=1e-9).any()  # a piece starts where its link crosses the floor
    assert np.all(pieces["base"][..., 2] <= 300 + 1e-9)


def test_below_mount_refuses_frames_of_another_shape(heron):
    from poser.core.errors import PoserValueError

    with pytest.raises(PoserValueError, match=r"shape \(8, 4, 4\), got shape \(3, 4, 4\)"):
        geometry.below_mount(heron, np.tile(np.eye(4), (3, 1, 1)))


def test_coinciding_points_group_and_numbers_list_as_runs():
    pts = [[0, 0, 0], [5, 0, 0], [0, 0, 1e-4], [5, 1e-4, 0], [9, 9, 9]]
    assert geometry.coinciding_groups(pts, 1e-3) == [[0, 2], [1, 3], [4]]
    assert geometry.number_list([1, 3, 4, 5, 8, 2]) == "1–5, 8"
    assert geometry.number_list([7, 11]) == "7, 11"
    assert geometry.number_list([4, 5]) == "4, 5"
    assert geometry.number_list([]) == ""


def _overlap(a, b):
    return a[0] < b[0] + b[2] and b[0] < a[0] + a[2] and a[1] < b[1] + b[3] and b[1] < a[1] + a[3]


def test_labels_at_one_point_are_placed_apart_most_important_first():
    boxes = [(100, 100, 40, 14, 10), (100, 100, 40, 14, 40), (102, 101, 30, 14, 20), (500, 300, 50, 14, 0)]
    spots = geometry.place_labels(boxes, 640, 480)
    assert spots[1] == (102.0, 84.0)  # the highest priority gets the wanted place: above right of its point
    rects = [(x, y, b[2], b[3]) for (x, y), b in zip(spots, boxes)]
    assert not any(_overlap(rects[i], rects[j]) for i in range(4) for j in range(i + 1, 4))
    for x, y, w, h in rects:
        assert 0 <= x and x + w <= 640 and 0 <= y and y + h <= 480
    # no room left near a crowded point: the least important label is left out, never drawn over another
    crowd = [(50, 50, 200, 30, 10 - k) for k in range(40)]
    out = geometry.place_labels(crowd, 300, 200)
    assert out[0] is not None and None in out
    placed = [(x, y, 200, 30) for s in out if s is not None for x, y in [s]]
    assert not any(_overlap(placed[i], placed[j]) for i in range(len(placed)) for j in range(i + 1, len(placed)))


def test_dashes_follow_the_path_with_their_pattern():
    segs = np.array([[[0, 0, 0], [10, 0, 0]], [[10, 0, 0], [10, 10, 0]]], float)
    dashes = geometry.dash_segments(segs, 2.0, 1.0)
    lengths = np.linalg.norm(dashes[:, 1] - dashes[:, 0], axis=1)
    # 20 long with a period of 3: dashes cover 2/3 of it, give or take a cut dash at each end
    assert lengths.sum() == pytest.approx(14.0, abs=2.0)
    assert np.all(lengths <= 2.0 + 1e-12)
    on_path = (np.isclose(dashes[..., 1], 0) | np.isclose(dashes[..., 0], 10))
    assert on_path.all()


def test_the_gizmo_turns_the_world_axes_as_the_camera_does():
    # a camera looking along world −x with z up (a front view): +y to the right, +z up, +x at the viewer
    R = np.array([[0.0, 1.0, 0.0], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0]])  # world → eye rows: right, up, towards
    axes = {a: (dx, dy, depth) for a, dx, dy, depth in geometry.gizmo_axes(R)}
    assert axes[1][:2] == (1.0, 0.0) and axes[2][:2] == (0.0, 1.0) and axes[0][2] == 1.0
    assert [a for a, *_ in geometry.gizmo_axes(R)][-1] == 0  # nearest is drawn last


def test_batched_body_transforms_match_the_single_ones():
    rng = np.random.default_rng(7)
    p0, p1 = rng.normal(size=(5, 3)), rng.normal(size=(5, 3))
    p1[2] = p0[2]  # a zero-length piece is left out
    T = geometry.segment_transforms(p0, p1, 0.3)
    single = [geometry.segment_transform(a, b, 0.3) for a, b in zip(p0, p1)]
    np.testing.assert_allclose(T, [s for s in single if s is not None], atol=1e-12)
    o, z = rng.normal(size=(4, 3)), rng.normal(size=(4, 3))
    np.testing.assert_allclose(geometry.axis_body_transforms(o, z, 0.2, 1.5),
                               [geometry.axis_body_transform(a, b, 0.2, 1.5) for a, b in zip(o, z)], atol=1e-12)


class _Branch:
    def __init__(self, q, within=True):
        self.q, self.within_limits = np.asarray(q, float), within


def test_ghost_groups_merge_look_alikes_on_the_same_side_of_the_limits(heron):
    q = heron.q_from_user(np.array([10, 20, 30, 40, 50, 60.0]))
    turned = q.copy()
    turned[5] += 2 * np.pi
    elbow = heron.q_from_user(np.array([10, 60, -40, 40, 50, 60.0]))
    branches = [_Branch(q), _Branch(elbow), _Branch(turned), _Branch(turned, within=False)]
    groups, index = geometry.ghost_groups(heron, branches)
    assert index == [0, 1, 0, 2]
    assert groups[0].rows == (0, 2) and groups[2].rows == (3,) and not groups[2].within_limits
    # row numbers sit where the ghosts differ most: not on the shared tool point
    for g in groups[:2]:
        assert np.linalg.norm(g.anchor - g.drawing.frames[-1, :3, 3]) > 0.1 * heron.scale
    assert np.linalg.norm(groups[0].anchor - groups[1].anchor) > 0.1 * heron.scale
    from poser.core.errors import PoserValueError

    with pytest.raises(PoserValueError, match=r"branch 0's q must have shape \(6,\)"):
        geometry.ghost_groups(heron, [_Branch(np.zeros(4))])


def test_the_strong_ghost_is_the_hovered_else_the_selected_branchs_and_another_arms_give_none(heron, planar):
    from poser.ui.state import ghost_drawings

    groups, index = ghost_drawings(heron, [_Branch(heron.home)])
    assert index == [0] and groups[0].drawing is groups[0].drawing  # made once, on the worker
    assert geometry.strong_group(index, -1, 0) == 0 and geometry.strong_group(index, -1, -1) == -1
    assert geometry.strong_group(index, 5, -1) == -1
    assert ghost_drawings(planar, [_Branch(heron.home)]) == ([], [])  # a Heron result while Planar 3 is shown

