"""The 3D view's drawables on their own: body meshes, the label layer, the ghost budget, frame scheduling."""

from __future__ import annotations

import numpy as np
import pytest
from ui_common import HERON, ROOT

from poser import armfile
from poser.ui import geometry
from poser.ui.gl_base import merged_bodies, unit_cylinder

pytestmark = pytest.mark.gui


def test_body_normals_are_the_inverse_transpose_of_each_placement():
    # normals of a surface mapped by A go through inv(A).T (common practice, any affine map)
    rng = np.random.default_rng(3)
    T = geometry.segment_transforms(rng.normal(size=(4, 3)), rng.normal(size=(4, 3)), 0.2)
    verts, faces, normals = merged_bodies(T, 12)
    N = unit_cylinder(12).vertexNormals()
    want = np.einsum("kji,vj->kvi", np.linalg.inv(T[:, :3, :3]), N).reshape(-1, 3)
    want /= np.linalg.norm(want, axis=1, keepdims=True)
    np.testing.assert_allclose(normals, want, atol=1e-12)
    assert faces.max() == len(verts) - 1


def test_every_body_faces_outwards_so_back_faces_can_be_culled():
    # counter-clockwise seen from outside: each face's winding normal points away from the body's axis
    T = geometry.segment_transforms([[0, 0, 0]], [[0, 0, 2]], 0.5)
    for cols in (4, 8, 16):
        verts, faces, _ = merged_bodies(T, cols)
        a, b, c = verts[faces[:, 0]], verts[faces[:, 1]], verts[faces[:, 2]]
        n = np.cross(b - a, c - a)
        centre = (a + b + c) / 3
        out = centre - np.c_[np.zeros((len(centre), 2)), np.clip(centre[:, 2], 0.5, 1.5)]
        caps = np.isclose(centre[:, 2], 0) | np.isclose(centre[:, 2], 2)
        out[caps] = np.c_[np.zeros((caps.sum(), 2)), centre[caps, 2] - 1]
        assert np.all(np.einsum("ij,ij->i", n, out) > 0), cols


def test_the_label_layer_merges_coinciding_labels_of_a_kind(qapp):
    from poser.ui.gl_labels import GLLabelLayer

    layer = GLLabelLayer()
    layer.setData(merge_distance=0.01)
    a = layer.new_label("frame")
    b = layer.new_label("frame")
    c = layer.new_label("axis")
    d = layer.new_label("axis")
    e = layer.new_label("ghost")
    a.setData(pos=(0, 0, 0), text="F4")
    b.setData(pos=(0, 0, 0.001), text="F5")
    c.setData(pos=(1, 0, 0), text="x")
    d.setData(pos=(1, 0, 0.001), text="x")  # the same letter twice at one tip: written once
    e.setData(pos=(0, 0, 0), text="3")  # another kind at the same point is not merged into a frame name
    merged = sorted(text for _, text, _ in layer.merged())
    assert merged == ["3", "F4, F5", "x"]
    b.setVisible(False)
    assert sorted(text for _, text, _ in layer.merged()) == ["3", "F4", "x"]
    from poser.core.errors import PoserValueError

    with pytest.raises(PoserValueError, match="kind must be one of frame, ghost, note, axis, got 'big'"):
        layer.new_label("big")


def test_faint_ghosts_stay_within_the_body_budget(qapp):
    from poser.ui import gl_ghosts

    chain = armfile.load(ROOT / "demo_arms" / "lark7.toml").to_chain()
    rng = np.random.default_rng(1)

    class B:
        def __init__(self, q, ok):
            self.q, self.within_limits = q, ok

    qs = rng.uniform(chain.lower, chain.upper, size=(80, chain.n))
    groups, _ = geometry.ghost_groups(chain, [B(q, k % 3 != 0) for k, q in enumerate(qs)])
    ghosts = gl_ghosts.GLGhosts()
    ghosts.setData(groups=groups, radius=0.02 * chain.scale, strong=len(groups) - 1)
    bodies = sum(len(groups[k].drawing.segments) + chain.n for k in ghosts.solid)
    assert 0 < bodies <= gl_ghosts.BODY_BUDGET
    assert len(ghosts.solid) < sum(g.within_limits for g in groups)  # the rest are left out, in list order
    first = next(k for k, g in enumerate(groups) if g.within_limits)
    assert ghosts.solid == sorted(ghosts.solid) and ghosts.solid[0] == first
    dashes = sum(len(ghosts._dash_of(k, ghosts.radius)) for k in ghosts.dashed)
    assert 0 < dashes <= gl_ghosts.DASH_BUDGET
    assert ghosts.strong == len(groups) - 1 and ghosts.strong not in ghosts.drawn  # drawn anyway
    # a drawing is made only for ghosts that are drawn (or asked for)
    assert any(g._drawing is None for g in groups)


def test_an_update_draws_one_frame_on_the_next_pass_of_the_event_loop(make_window, qtbot):
    win = make_window()
    assert win.render_now()
    glw = win.view.view
    qtbot.wait(50)
    start = glw.frames_rendered
    for _ in range(5):
        glw.update()  # several changes in one pass: one frame
    assert glw.frames_rendered == start
    qtbot.waitUntil(lambda: glw.frames_rendered > start, timeout=2000)
    qtbot.wait(50)
    assert glw.frames_rendered == start + 1


def test_the_view_draws_a_heron_file_as_the_state_says(make_window):
    win = make_window(HERON)
    assert win.render_now()
    d = win.state.drawing()
    np.testing.assert_allclose(win.view.arm.link_transforms[:, :3, 3], d.segments[:, 0], atol=1e-9)
