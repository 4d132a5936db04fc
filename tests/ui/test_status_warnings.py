"""Warnings a technician needs in the status bar: a point below the mounting plane (wired to the 3D view's
``geometry.below_mount``), singularities by kind and joints; and each pose's products computed once."""

from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest
from ui_common import ROOT

from poser import report
from poser.ui import geometry, palette, words

pytestmark = pytest.mark.gui


def test_below_the_floor_is_a_warning_in_words_and_colour(make_window):
    win = make_window()
    st = win.state
    st.set_q_user([0, 0, 0, 0, 30, 0])
    assert st.below_mount() == [] and not win.status.mount.isVisibleTo(win.status)
    st.set_q_user([0, 135, 0, 0, 90, 0])  # leaning far forward, wrist bent down: the tool dips under the floor
    found = st.below_mount()
    assert found is st.below_mount()  # once per pose: the views and the status bar share it
    tool = [b for b in found if b.what == "tool"]
    assert tool and tool[0].plane == "floor"
    # the tool's depth is that of its deepest point: at least the tool point's, read from forward kinematics
    tool_z = float(st.tool()[2, 3])
    assert tool_z < 0 and tool[0].depth >= -tool_z - 1e-9
    text = win.status.mount.text()
    assert text.startswith("BELOW THE FLOOR: ")
    assert f"tool {report.length(st.chain, tool[0].depth, 1)} below the floor" in text
    assert win.status.mount.isVisibleTo(win.status)
    assert palette.AT in win.status.mount.styleSheet()
    st.set_q_user([0, 0, 0, 0, 30, 0])
    assert not win.status.mount.isVisibleTo(win.status)


def _below(what, depth, plane):
    return geometry.Below(what, depth, plane, np.zeros(3))


@pytest.mark.parametrize("found, expected", [
    (None, ""), ([], ""),
    ([_below("base", 5.0, "base")], ""),  # below a riser's top only: marked in the view, no status warning
    ([_below("J3 elbow", 12.26, "floor"), _below("tool", 40.0, "floor")],
     "BELOW THE FLOOR: J3 elbow 12.3 mm below the floor, tool 40 mm below the floor"),
    ([_below("J3\telbow", 1.0, "mount")], "BEHIND THE MOUNTING SURFACE: J3\\telbow 1 mm behind the mounting surface"),
])
def test_the_below_mount_words_say_the_views_words(found, expected):
    from poser import armfile

    chain = armfile.load(ROOT / "demo_arms" / "heron6.toml").to_chain()
    assert words.below_mount_words(chain, found) == expected


def test_a_singularity_is_named_with_its_kind_and_joints(make_window):
    win = make_window()
    win.state.set_q_user([0, 30, 20, 0, 0, 0])  # J5 = 0: J4 and J6 on one line
    text = win.status.singular.text()
    assert text.startswith("AT A SINGULARITY: wrist axes aligned (joints 4 and 6)")
    assert report.singularity_words(win.state.chain, win.state.singularity())[1] in win.status.singular.toolTip()
    assert palette.AT in win.status.singular.styleSheet()


def test_a_joint_change_computes_each_product_once(make_window, monkeypatch):
    """With a target, ghosts and every panel live, one joint change: one singularity verdict, one set of limit
    states, one set of frames, whoever reads them."""
    import poser.core.singularity as sing

    win = make_window()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    st = win.state
    counts = {"assess": 0, "limits": 0, "frames": 0}
    real_assess, real_limits = sing.assess, report.limit_states
    real_frames = type(st.chain).frames

    def assess(*a, **k):
        counts["assess"] += 1
        return real_assess(*a, **k)

    def limits(*a, **k):
        counts["limits"] += 1
        return real_limits(*a, **k)

    def frames(self, *a, **k):
        counts["frames"] += 1
        return real_frames(self, *a, **k)

    monkeypatch.setattr(sing, "assess", assess)
    monkeypatch.setattr(report, "limit_states", limits)
    monkeypatch.setattr(type(st.chain), "frames", frames)
    st.set_joint_user(1, 35.0)
    win.render_now()  # the 3D view draws the new pose too
    # at most one set of frames: the Frames panel, a tab behind the Target panel, reads none until raised
    assert counts["assess"] == counts["limits"] == 1 and counts["frames"] <= 1, counts
    win.docks["frames"].raise_()
    st.set_joint_user(1, 36.0)
    assert counts["assess"] == counts["limits"] == 2 and counts["frames"] <= 2, counts
    # the panels read the same objects
    assert win.status.singularity_text()[1].startswith(report.singularity_words(st.chain, st.singularity(), True)[1])
    np.testing.assert_array_equal(win.frames.matrix("tool"), st.frames()[-1])


def test_no_window_module_of_ours_imports_scipy():
    """scipy costs 0.36 s and 45 MiB at start; only the 3D view's geometry module may still pull it in."""
    code = (
        "import sys, traceback\n"
        "class Spy:\n"
        "    def find_spec(self, name, path=None, target=None):\n"
        "        if name == 'scipy' and 'who' not in globals():\n"
        "            globals()['who'] = [f.filename for f in traceback.extract_stack()]\n"
        "        return None\n"
        "sys.meta_path.insert(0, Spy())\n"
        "import poser.ui.state, poser.ui.solver, poser.ui.target_panel, poser.ui.editor, poser.ui.status\n"
        "import poser.ui.joints_panel, poser.ui.frames_panel, poser.ui.main_window, poser.ui.words\n"
        "import poser.ui.tables, poser.ui.files, poser.ui.help, poser.ui.heartbeat\n"
        "who = globals().get('who', [])\n"
        "ours = [f for f in who if '/poser/' in f.replace(chr(92), '/')]\n"
        "print(ours[-1] if ours else 'none')\n"
    )
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, timeout=120,
                       env={**os.environ, "QT_QPA_PLATFORM": "offscreen"})
    assert r.returncode == 0, r.stderr[-800:]
    first = r.stdout.strip()
    # the innermost module of the package on the stack when scipy was first asked for
    assert first == "none" or first.endswith("poser/ui/geometry.py"), first


def test_a_long_singularity_verdict_leaves_the_limit_words_readable(make_window, tmp_path, qtbot):
    """A 32-joint arm at home is singular with a long verdict; the limit words beside it were squeezed to
    "limits: …" at 1280 px.  The verdict shortens (its start, "AT A SINGULARITY", stays; the whole text is in
    its tooltip) and the limit words stay whole."""
    from test_arm_switch import _snake

    win = make_window(_snake(tmp_path), size=(1280, 800))
    qtbot.wait(50)
    bar = win.status
    assert bar.singular.text().startswith("AT A SINGULARITY")
    assert bar.limits.text() == "limits: every joint clear"
    assert not bar.limits.elided, bar.limits.shown_text()
    assert bar.singular.shown_text().startswith("AT A SINGULARITY")
    # a joint at its limit: still named in the bar
    win.state.set_joint_user(3, 120.0)
    qtbot.wait(20)
    assert bar.limits.shown_text().startswith("limits: J4 AT")


def test_a_long_arm_name_is_shortened_in_the_middle_and_keeps_edited(make_window, qtbot):
    """The status bar's arm label has a width limit: a long name is elided in the middle (with '…'), so the
    units and '(edited)' at the end stay readable; the whole text is in the tooltip."""
    win = make_window()
    st = win.state
    spec = st.spec
    import dataclasses

    st.set_arm(dataclasses.replace(spec, name="A very long arm name for a welding cell on the north line " * 2),
               dirty=True)
    qtbot.wait(20)
    label = win.status.arm
    assert st.dirty
    assert label.text().endswith("(edited)")
    assert label.elided and "…" in label.shown_text() and label.shown_text().endswith("(edited)")
    assert label.text() in label.toolTip()
