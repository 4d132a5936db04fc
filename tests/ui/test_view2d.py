"""The 2D three-view (no OpenGL) shows the 3D view's warnings where a flat drawing can: ghosts for every row
(dashed beyond the limits, numbered), the nearest reachable point, parts under the floor, the mount."""

from __future__ import annotations

import numpy as np
import pytest
from PySide6.QtCore import Qt
from test_fallback import run_offscreen
from test_view3d import aim, remounted
from ui_common import HERON

from poser import armfile
from poser.ui import geometry

pytestmark = pytest.mark.gui


@pytest.fixture
def flat(make_window, monkeypatch):
    monkeypatch.setenv("POSER_NO_GL", "1")

    def make(path=None):
        win = make_window(path)
        assert win.view.kind == "2d"
        return win

    return make


def drawn(item):
    x, _ = item.getData()
    return x is not None and len(x) > 0 and np.isfinite(x).any()


def test_ghosts_are_numbered_dashed_beyond_limits_and_any_row_highlights(flat):
    win = flat()
    result = aim(win, (900, -300, 900), (180, 0, 0))
    side = win.view._items[1]
    lines = [g for g in side["ghosts"] if drawn(g)]
    styles = {g.opts["pen"].style() for g in lines}
    assert styles == {Qt.PenStyle.SolidLine, Qt.PenStyle.DashLine}  # not only by colour
    labels = [t.toPlainText() for t in side["ghost_labels"] if t.isVisible()]
    assert labels and all(t[0].isdigit() for t in labels)
    last = len(result.branches) - 1
    win.state.hover_branch(last)
    wide = [g for g in side["ghosts"] if drawn(g) and g.opts["pen"].width() == 4]
    assert len(wide) == 1
    want = win.state.chain.fk(result.branches[last].q)[:3, 3]
    x, z = wide[0].getData()
    assert (x[-1], z[-1]) == pytest.approx((want[0], want[2]))


def test_the_nearest_reachable_point_is_marked_with_a_line_from_the_target(flat):
    win = flat()
    front = win.view._items[0]
    assert not drawn(front["nearest_line"])
    result = aim(win, (2600, 600, 1800), (0, 90, 0))
    p = result.nearest_point
    x, y = front["nearest"].getData()
    assert (x[0], y[0]) == pytest.approx((p[1], p[2]))  # front view: y across, z up
    lx, ly = front["nearest_line"].getData()
    assert (lx[0], ly[0]) == pytest.approx((600, 1800)) and (lx[-1], ly[-1]) == pytest.approx((p[1], p[2]))


def test_parts_under_the_floor_are_red_with_their_depth_and_the_mount_is_drawn(flat, tmp_path):
    win = flat()
    side = win.view._items[1]
    assert not drawn(side["below"]) and "floor" in side
    win.state.set_q_user([0, 110, 20, 0, 60, 0])
    x, z = side["below"].getData()
    assert np.nanmax(z) <= 300 + 1e-9 and np.nanmin(z) < 0
    marks = [t.toPlainText() for t in side["below_labels"] if t.isVisible()]
    assert any(m.endswith("mm below the floor") for m in marks), marks
    # the mount plate: a square around the base origin, seen edge-on from the side
    mx, mz = side["mount"].getData()
    np.testing.assert_allclose(mz, 300, atol=1e-9)
    win.state.set_arm(armfile.load(remounted(tmp_path, "c.toml", (0, 0, 2500), (180, 0, 0))))
    mx, mz = side["mount"].getData()
    np.testing.assert_allclose(mz, 2500, atol=1e-9)
    assert drawn(side["hatch"])


SCRIPT = r"""
import sys
import numpy as np
from PySide6.QtWidgets import QApplication
app = QApplication([])
from poser import armfile
from poser.ui.main_window import MainWindow
win = MainWindow(armfile.load(sys.argv[1]), sys.argv[1], interactive=False)
win.resize(1280, 800)
win.show()
app.processEvents()
win.state.set_q_user([0, 110, 20, 0, 60, 0])
app.processEvents()
side = win.view._items[1]
print("kind", win.view.kind)
print("marks", "|".join(t.toPlainText() for t in side["below_labels"] if t.isVisible()))
x, z = side["below"].getData()
print("below-min-z", round(float(np.nanmin(z)), 3))
"""


def test_the_offscreen_fallback_warns_of_parts_under_the_floor(tmp_path):
    r = run_offscreen(["-c", SCRIPT, str(HERON)], tmp_path)
    assert r.returncode == 0, r.stderr
    out = dict(line.split(" ", 1) for line in r.stdout.strip().splitlines())
    assert out["kind"] == "2d"
    chain = armfile.load(HERON).to_chain()
    q = chain.q_from_user(np.array([0, 110, 20, 0, 60, 0.0]))
    parts = geometry.below_mount(chain, geometry.arm_drawing(chain, q))
    assert out["marks"] == geometry.below_marks(chain, parts)[0][1]
    assert float(out["below-min-z"]) == pytest.approx(min(-b.depth for b in parts), abs=1e-3)
