"""The 3D view under real use: gizmo, lettered triads, orthographic views, gentle camera, labels that do
not pile up, the arm on its mount, ghosts for every row, the nearest reachable point, parts under the floor."""

from __future__ import annotations

import shutil

import numpy as np
import pytest
from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtGui import QWheelEvent
from PySide6.QtTest import QTest
from PySide6.QtWidgets import QApplication
from ui_common import HERON, ROOT, wide_heron

from poser import armfile
from poser.core.transforms import rpy_to_matrix
from poser.ui import geometry, view3d
from poser.ui.state import DEFAULT_OPTIONS, Target

pytestmark = pytest.mark.gui

WITHIN_ONLY = view3d.GHOSTS_WITHIN_ONLY


def rendered(win):
    assert win.render_now()
    return win.view


def aim(win, xyz, rpy_deg=None):
    """Set a target and store the solver's answer at once (the window's own solver, without its debounce)."""
    st = win.state
    R = None if rpy_deg is None else rpy_to_matrix(np.radians(rpy_deg))
    st.set_target(Target(np.array(xyz, float), R))
    assert win.solver.solve_now()
    return st.ik


def overlapping(placed):
    rects = [p.rect for p in placed]
    return [(placed[i].text, placed[j].text) for i in range(len(rects)) for j in range(i + 1, len(rects))
            if rects[i].intersects(rects[j])]


def numbers_on(texts) -> set[int]:
    """Row numbers written on ghost labels ("1–6", "7, 11")."""
    numbers = set()
    for text in texts:
        for part in text.split(", "):
            lo, _, hi = part.partition("–")
            numbers |= set(range(int(lo), int(hi or lo) + 1))
    return numbers


def remounted(tmp_path, name, xyz, rpy):
    spec = armfile.load(HERON).copy()
    spec.base_xyz, spec.base_rpy = tuple(xyz), tuple(rpy)
    path = tmp_path / name
    armfile.save(spec, path)
    return path


# -- gizmo, letters, projection, camera -----------------------------------------------------------


def test_the_gizmo_shows_x_y_z_turning_with_the_camera(make_window):
    view = rendered(make_window())
    assert view.gizmo in view.view.items and view.gizmo.visible()
    view.set_view("front")  # looking along −x: y to the right, z up, x at the viewer
    letters = {letter: (x1, y1) for letter, x1, y1, *_ in view.gizmo.layout()}
    assert sorted(letters) == ["X", "Y", "Z"]
    cx, cy = view.gizmo.centre()
    assert letters["Y"][0] - cx == pytest.approx(view.gizmo.length, abs=1e-6)
    assert cy - letters["Z"][1] == pytest.approx(view.gizmo.length, abs=1e-6)
    assert np.hypot(letters["X"][0] - cx, letters["X"][1] - cy) < 1e-6
    # the gizmo is a corner overlay: it stays in the bottom-left corner whatever the camera does
    view.set_view("top")
    letters = {letter: (x1, y1) for letter, x1, y1, *_ in view.gizmo.layout()}
    assert letters["X"][0] > cx and letters["Y"][1] < cy  # x to the right, y up the screen, seen from above
    assert cx < 0.25 * view.view.width() and cy > 0.75 * view.view.height()


def test_triads_carry_axis_letters_not_only_colours(make_window):
    win = make_window()
    view = rendered(win)
    view.labels.layout()
    texts = [p.text for p in view.labels.placed]
    assert "base" in texts and "tool" in texts
    letters = [lab for lab in view.triads._letters if lab.visible()]
    assert [lab.text for lab in letters] == ["x", "y", "z"] * 2
    T = win.state.tool()
    size = 0.11 * win.state.scale
    for a, lab in enumerate(letters[3:]):  # the tool's letters sit at its axis tips
        np.testing.assert_allclose(lab.pos, T[:3, 3] + 1.08 * size * T[:3, a], atol=1e-9)


def test_the_orthographic_toggle_sets_the_projection_and_keys_work(make_window, qtbot):
    view = rendered(make_window())
    glw = view.view
    vp = (0, 0, glw.width(), glw.height())

    def last_row():
        m = glw.projectionMatrix(vp, vp)
        return [m.row(3).x(), m.row(3).y(), m.row(3).z(), m.row(3).w()]

    assert last_row() == [0.0, 0.0, -1.0, 0.0]  # perspective divides by depth
    qtbot.mouseClick(view.buttons["ortho"], Qt.MouseButton.LeftButton)
    assert view.ortho and view.buttons["ortho"].isChecked()
    assert last_row() == [0.0, 0.0, 0.0, 1.0]  # orthographic: an affine projection
    view.set_view("front")
    # at the centre both projections show the same width (switching keeps the arm's size)
    m = glw.projectionMatrix(vp, vp)
    half_width = 1.0 / m.row(0).x()
    dist = view.camera()[2]
    assert half_width == pytest.approx(dist * np.tan(np.radians(glw.opts["fov"] / 2)))
    # the fitted arm fills the view without spilling out of it
    pts = view._fit_points()
    M = np.array((m * glw.viewMatrix()).data()).reshape(4, 4).T
    ndc = (np.c_[pts, np.ones(len(pts))] @ M.T)[:, :2]
    assert np.abs(ndc).max() < 1.0 and np.abs(ndc).max() > 0.5
    QTest.keyClick(glw, Qt.Key.Key_O)  # the key gives perspective back
    assert not view.ortho and last_row() == [0.0, 0.0, -1.0, 0.0]


def test_orbit_and_zoom_take_gentle_steps_and_arrow_keys_orbit(make_window):
    view = rendered(make_window())
    glw = view.view
    elev0, azim0, dist0 = view.camera()
    centre = QPoint(glw.width() // 2, glw.height() // 2)
    QTest.mousePress(glw, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, centre)
    for dx in range(10, 110, 10):
        QTest.mouseMove(glw, centre + QPoint(dx, 0))
    QTest.mouseRelease(glw, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, centre + QPoint(100, 0))
    elev1, azim1, _ = view.camera()
    assert azim0 - azim1 == pytest.approx(100 * view3d.ORBIT_PER_PIXEL, abs=1e-6)  # 35 deg for 100 pixels
    assert view3d.ORBIT_PER_PIXEL < 1.0  # pyqtgraph turns a degree per pixel
    wheel = QWheelEvent(QPointF(centre), QPointF(glw.mapToGlobal(centre)), QPoint(0, 0), QPoint(0, 120),
                        Qt.MouseButton.NoButton, Qt.KeyboardModifier.NoModifier, Qt.ScrollPhase.NoScrollPhase, False)
    QApplication.sendEvent(glw, wheel)
    assert view.camera()[2] == pytest.approx(dist0 * view3d.ZOOM_PER_NOTCH)
    assert 0.999 ** 120 < view3d.ZOOM_PER_NOTCH < 1  # a smaller step than pyqtgraph's (11 % per notch)
    QTest.keyClick(glw, Qt.Key.Key_Left)
    assert view.camera()[1] == pytest.approx(azim1 + view3d.KEY_ORBIT[0])
    QTest.keyClick(glw, Qt.Key.Key_Up, Qt.KeyboardModifier.ShiftModifier)
    assert view.camera()[0] == pytest.approx(elev1 - view3d.KEY_ORBIT[1])
    d = view.camera()[2]
    QTest.keyClick(glw, Qt.Key.Key_Minus)
    assert view.camera()[2] == pytest.approx(d / view3d.KEY_ZOOM)
    QTest.keyClick(glw, Qt.Key.Key_Plus)
    assert view.camera()[2] == pytest.approx(d)


# -- labels ----------------------------------------------------------------------------------------


def test_coinciding_frame_labels_merge_and_no_label_covers_another(make_window):
    win = make_window()
    win.state.set_option("show_frames", True)
    view = rendered(win)
    placed = view.labels.layout()
    texts = [p.text for p in placed if p.kind == "frame"]
    # Heron's frames 4 and 5 share the wrist centre (a spherical wrist): one label names both
    F = win.state.frames()
    assert np.allclose(F[4, :3, 3], F[5, :3, 3])
    assert "F4, F5" in texts and "F4" not in texts and "F5" not in texts
    assert {"F1", "F2", "F3", "F6", "base", "tool"} <= set(texts)
    assert overlapping(placed) == []
    for p in placed:
        assert 0 <= p.x and p.x + p.w <= view.view.width() and 0 <= p.y and p.y + p.h <= view.view.height()


# -- mounts ----------------------------------------------------------------------------------------


def test_a_ceiling_arm_hangs_from_a_plate_at_its_base(make_window, tmp_path):
    win = make_window(remounted(tmp_path, "ceiling.toml", (0, 0, 2500), (180, 0, 0)))
    view = rendered(win)
    chain = win.state.chain
    P = view.mount.plate
    np.testing.assert_allclose((P @ [0, 0, 1, 1])[:3], chain.base[:3, 3], atol=1e-9)  # top face on the base origin
    np.testing.assert_allclose(P[:3, 2] / np.linalg.norm(P[:3, 2]), chain.base[:3, 2], atol=1e-12)
    np.testing.assert_allclose(chain.base[:3, 2], [0, 0, -1], atol=1e-12)
    assert view.mount._plate.visible() and view.mount._hatch.visible()  # the ceiling is marked too
    d = win.state.drawing()
    assert d.segments[..., 2].min() > 0  # no post from the floor
    assert 0 not in d.segment_link
    # the floor grid stays at world z = 0
    np.testing.assert_allclose(np.array(view.floor._grid.transform().data()).reshape(4, 4).T, np.eye(4))


def test_a_wall_arm_is_on_its_wall_and_a_floor_arm_on_its_riser(make_window):
    win = make_window(ROOT / "demo_arms" / "planar3.toml")
    view = rendered(win)
    chain = win.state.chain
    P = view.mount.plate
    np.testing.assert_allclose((P @ [0, 0, 1, 1])[:3], [0, 0, 1200], atol=1e-9)
    np.testing.assert_allclose(P[:3, 2] / np.linalg.norm(P[:3, 2]), chain.base[:3, 2], atol=1e-12)
    assert abs(chain.base[2, 2]) < 1e-12  # the wall: base z is level
    assert view.mount._hatch.visible()
    assert win.state.drawing().segments[..., 2].min() > 1000  # nothing reaches down to the floor
    win.open_file(HERON) if hasattr(win, "open_file") else win.state.set_arm(armfile.load(HERON))
    d = win.state.drawing()
    assert d.segment_link[0] == 0 and d.segments[0, 0, 2] == 0  # Heron stands on its 300 mm riser
    assert not view.mount._hatch.visible()


def test_the_view_fits_the_arm_when_the_arm_changes(make_window, tmp_path):
    win = make_window()
    view = rendered(win)
    centre0 = np.array(list(view.view.opts["center"].toTuple()))
    dist0 = view.camera()[2]
    small = tmp_path / "planar3.toml"
    shutil.copy(ROOT / "demo_arms" / "planar3.toml", small)
    win.state.set_arm(armfile.load(small), path=small)
    centre1 = np.array(list(view.view.opts["center"].toTuple()))
    expect, radius = geometry.bounds_of(view._fit_points())
    np.testing.assert_allclose(centre1, expect, atol=1e-3)
    assert view.camera()[2] < dist0 and not np.allclose(centre0, centre1)
    pts = win.state.drawing().points
    assert np.linalg.norm(pts - centre1, axis=1).max() <= radius + 1e-9


# -- ghosts ----------------------------------------------------------------------------------------


def test_every_branch_row_highlights_its_ghost_even_in_a_long_list(make_window, tmp_path):
    win = make_window(wide_heron(tmp_path))
    view = rendered(win)
    st = win.state
    result = aim(win, (900, -300, 900), (180, 0, 0))
    n = len(result.branches)
    groups, index = view.ghost_groups, view.ghost_index
    assert n > 30 and len(index) == n
    ghosts = view.ghosts
    assert len(ghosts.drawn) <= len(groups)  # faint ghosts for the groups the frame budget allows (test_gl_items)
    for row in range(n):
        st.hover_branch(row)
        g = groups[index[row]]
        assert ghosts.strong == index[row], row
        arm = ghosts._strong if g.within_limits else ghosts._strong_out
        assert arm.links.visible(), row
        # the highlighted bodies are this branch's: its last link ends at its tool point
        T = arm.link_transforms[-1]
        np.testing.assert_allclose(T[:3, 2] + T[:3, 3], st.chain.fk(st.branches[row].q)[:3, 3], atol=1e-6)
        assert row + 1 in numbers_on(ghosts.label_texts()), row  # and its number is written on it
    st.hover_branch(-1)
    # selecting scrolls the list: keep the pointer off it, or the row that comes under it is hovered
    from PySide6.QtGui import QCursor

    QCursor.setPos(win.mapToGlobal(win.rect().bottomRight()) + QPoint(50, 50))
    st.select_branch(n - 1)
    assert st.hovered == -1 and ghosts.strong == index[n - 1]


def test_ghosts_carry_row_numbers_and_beyond_limit_ones_are_dashed(make_window):
    win = make_window()
    view = rendered(win)
    result = aim(win, (900, -300, 900), (180, 0, 0))
    assert len(result.branches) >= 10
    ghosts = view.ghosts
    groups = view.ghost_groups
    inside = [k for k, g in enumerate(groups) if g.within_limits]
    beyond = [k for k, g in enumerate(groups) if not g.within_limits]
    assert inside and beyond
    assert set(ghosts.solid) == set(inside) and set(ghosts.dashed) == set(beyond)  # the other style
    assert ghosts._dashes.visible() and ghosts._faint.links.visible()
    assert numbers_on(ghosts.label_texts()) == set(range(1, len(result.branches) + 1))  # every row, on its ghost
    # a beyond-limit row, hovered: thin bodies and heavy dashes, not the within-limits look
    row = next(r for r, b in enumerate(result.branches) if not b.within_limits)
    win.state.hover_branch(row)
    assert ghosts._strong_out.links.visible() and ghosts._strong_dashes.visible()
    assert not ghosts._strong.links.visible()
    assert np.linalg.norm(ghosts._strong_out.link_transforms[0][:3, 0]) == pytest.approx(0.5 * view.radius)
    row = next(r for r, b in enumerate(result.branches) if b.within_limits)
    win.state.hover_branch(row)
    assert ghosts._strong.links.visible() and not ghosts._strong_dashes.visible()


def test_the_within_limits_filter_hides_the_other_ghosts(make_window, monkeypatch):
    # the option belongs to the target panel; until it is there the view reads it with a default
    monkeypatch.setitem(DEFAULT_OPTIONS, WITHIN_ONLY, False)
    win = make_window()
    view = rendered(win)
    result = aim(win, (900, -300, 900), (180, 0, 0))
    ghosts = view.ghosts
    assert ghosts.dashed
    win.state.set_option(WITHIN_ONLY, True)
    assert ghosts.dashed == [] and not ghosts._dashes.visible()
    assert all(view.ghost_groups[k].within_limits for k in ghosts.drawn)
    row = next(r for r, b in enumerate(result.branches) if not b.within_limits)
    win.state.hover_branch(row)  # a row pointed at is still shown
    assert ghosts._strong_out.links.visible()


def test_a_joint_change_leaves_the_ghost_meshes_alone(make_window):
    win = make_window()
    view = rendered(win)
    aim(win, (900, -300, 900), (180, 0, 0))
    ghosts = view.ghosts
    mesh = ghosts._faint.links.opts["meshdata"]
    groups = view.ghost_groups
    win.state.set_q_user([20, 30, 20, 30, -40, 10])
    win.state.hover_branch(2)
    assert ghosts._faint.links.opts["meshdata"] is mesh  # neither the pose nor the hover rebuilt them
    assert view.ghost_groups is groups


def test_a_stale_result_after_an_arm_change_draws_no_ghosts(qtbot):
    """The state emits "arm" before it drops the old branches: the view must not draw them on the new arm."""
    from poser.core.ik import solve
    from poser.ui.state import PoseState
    from poser.ui.view3d import View3D

    st = PoseState(armfile.load(HERON))
    view = View3D(st)
    qtbot.addWidget(view)
    R = rpy_to_matrix(np.radians([180.0, 0, 0]))
    st.set_target(Target(np.array([900.0, -300, 900]), R))
    st.set_ik(solve(st.chain, np.array([900.0, -300, 900]), R))
    assert view.ghost_groups
    seen = []
    st.changed.connect(lambda f: seen.append((f, len(view.ghost_groups), view.ghosts.visible())))
    st.set_arm(armfile.load(ROOT / "demo_arms" / "quill4.toml"))  # 4 joints: the branches had 6
    assert seen[0] == ("arm", 0, False)
    assert view.ghost_groups == [] and not view.ghosts.visible()


# -- the nearest reachable point, parts below the floor ----------------------------------------------


def test_the_nearest_reachable_point_is_shown_only_when_there_is_one(make_window):
    win = make_window()
    view = rendered(win)
    assert not view.nearest.visible()
    result = aim(win, (2600, 600, 1800), (0, 90, 0))  # out of reach
    assert result.nearest_point is not None
    assert view.nearest.visible()
    np.testing.assert_allclose(view.nearest.point, result.nearest_point)
    line = view.nearest._line.pos
    assert np.linalg.norm(line[0] - win.state.target.xyz) < 1e-9  # from the target …
    assert np.linalg.norm(line[-1] - result.nearest_point) < 0.1 * win.state.scale  # … dashed to the point
    placed = {p.text for p in view.labels.layout()}
    assert "nearest reachable" in placed
    aim(win, (900, -300, 900), (180, 0, 0))  # reachable
    assert win.state.ik.nearest_point is None and not view.nearest.visible()
    win.state.set_target(None)
    assert not view.nearest.visible()


def test_a_pose_under_the_floor_is_drawn_as_a_warning(make_window):
    win = make_window()
    view = rendered(win)
    assert view.below_parts == [] and view.below.shown == []
    win.state.set_q_user([0, 110, 20, 0, 60, 0])
    parts = geometry.below_mount(win.state.chain, win.state.drawing())
    assert view.below_parts == parts and parts
    assert "floor" in view.below.shown and view.below._bars["floor"].visible()
    depth = max(b.depth for b in parts if b.plane == "floor")
    texts = [p.text for p in view.labels.layout()]
    assert any(t.endswith(f"{depth:.2f} mm below the floor") for t in texts), texts
    assert overlapping(view.labels.placed) == []
    win.state.home()
    assert view.below.shown == [] and not view.below._bars["floor"].visible()


def test_gl_items_refuse_bad_data_in_words(make_window):
    from poser.core.errors import PoserValueError

    view = make_window(show=False).view
    with pytest.raises(PoserValueError, match="GLArm.setData takes drawing, radius; got missing radius"):
        view.arm.setData(drawing=view.state.drawing())
    with pytest.raises(PoserValueError, match="radius must be a positive finite number, got -1.0"):
        view.arm.setData(drawing=view.state.drawing(), radius=-1)
    with pytest.raises(PoserValueError, match=r"frames must have shape \(\.\.\., 4, 4\), got shape \(3,\)"):
        view.triads.setData(frames=np.zeros(3), labels=[], size=1.0)
    with pytest.raises(PoserValueError, match="labels must name each of the 2 frames, got 1"):
        view.triads.setData(frames=np.tile(np.eye(4), (2, 1, 1)), labels=["a"], size=1.0)
    with pytest.raises(PoserValueError, match="unknown colour"):
        view.mount.setData(base=np.eye(4), scale=1.0, colour="red")
    with pytest.raises(PoserValueError, match="strong must be -1 or a group index below 0, got 3"):
        view.ghosts.setData(groups=[], radius=1.0, strong=3)
    with pytest.raises(PoserValueError, match="point must be finite"):
        view.nearest.setData(point=[np.nan, 0, 0], target=[0, 0, 0], size=1.0)


def test_labels_and_gizmo_are_painted_whole_after_culled_bodies(make_window):
    """A culled ghost mesh drawn last left face culling on, and the painter's plates and the gizmo's lines
    went missing (Planar 3 with a position target: two see-through ghosts, no dashed ones)."""
    from PySide6.QtGui import QColor

    win = make_window(ROOT / "demo_arms" / "planar3.toml")
    view = rendered(win)
    aim(win, (500, 0, 900))
    assert view.ghosts.solid and not view.ghosts.dashed
    assert win.render_now()
    img = view.view.grabFramebuffer()
    dpr = img.width() / view.view.width()
    cx, cy = view.gizmo.centre()
    for letter, x1, y1, *_ in view.gizmo.layout():
        colour = QColor({"X": "#D1404F", "Y": "#2F9A45", "Z": "#2D67D2"}[letter])
        if np.hypot(x1 - cx, y1 - cy) < 10:
            continue
        hits = 0
        for t in np.linspace(0.3, 0.9, 7):  # along the axis line
            px = img.pixelColor(int((cx + t * (x1 - cx)) * dpr), int((cy + t * (y1 - cy)) * dpr))
            off = abs(px.red() - colour.red()) + abs(px.green() - colour.green()) + abs(px.blue() - colour.blue())
            hits += off < 90
        assert hits >= 4, letter
    plate = next(p for p in view.labels.layout() if p.text == "target")
    px = img.pixelColor(int((plate.x + 1.5) * dpr), int((plate.y + plate.h / 2) * dpr))
    assert px.red() >= 240 and px.green() >= 240  # the pale plate, not the scene behind it


def test_a_target_typed_out_of_sight_brings_itself_into_the_view(make_window):
    win = make_window(ROOT / "demo_arms" / "wren6.toml")
    view = rendered(win)
    far = np.array([0.0, 0.0, 6000.0])  # far above the arm: out of the fitted view
    assert not view.in_view(far)
    win.set_target_values([*far.tolist(), 0, 0, 0])
    assert view.in_view(far)
    # the arm is still in the view, the target with it
    assert all(view.in_view(p) for p in win.state.drawing().frames[:, :3, 3])
    # a target already in sight does not move the camera
    cam = view.camera()
    win.set_target_values([300, 0, 900, 0, 0, 0])
    assert view.camera() == cam


def test_the_view_menu_switches_the_projection_with_the_view_button(make_window):
    win = make_window()
    view = rendered(win)
    act = win.ortho_action
    assert not act.isChecked() and not view.view.ortho
    act.trigger()
    assert view.view.ortho and view.buttons["ortho"].isChecked()
    view.buttons["ortho"].click()
    assert not view.view.ortho and not act.isChecked()
