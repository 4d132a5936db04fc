"""The shared state on its own: change signals only on real changes, no window needed."""

from __future__ import annotations

import numpy as np
import pytest
from ui_common import HERON

from poser import armfile
from poser.ui.state import PoseState, Target


@pytest.fixture
def state(qapp):
    return PoseState(armfile.load(HERON), HERON)


def record(state):
    seen = []
    state.changed.connect(lambda f: seen.append((f, state.writer)))
    return seen


def test_change_is_emitted_only_when_a_value_really_changes(state):
    seen = record(state)
    assert state.set_q(state.q) is False
    assert seen == []
    q = state.q
    q[1] += 0.1
    assert state.set_q(q, writer="me") is True
    assert seen == [("q", "me")]
    assert state.set_q(q) is False
    assert state.set_option("margin", 0.05) is False  # the default
    assert state.set_option("margin", 0.1) is True
    assert [f for f, _ in seen] == ["q", "options"]


def test_joint_values_in_user_units_round_trip(state):
    state.set_joint_user(2, 45.0)
    assert state.q[2] == pytest.approx(np.pi / 4)
    assert state.q_user[2] == pytest.approx(45.0)


def test_frames_follow_q_and_match_the_core(state):
    state.set_q_user([10, 20, 30, 40, 50, 60])
    np.testing.assert_allclose(state.tool(), state.chain.fk(state.q), atol=1e-9)
    state.set_joint_user(0, -30)
    np.testing.assert_allclose(state.tool(), state.chain.fk(state.q), atol=1e-9)


def test_target_and_branch_selection(state):
    seen = record(state)
    t = Target(np.array([900.0, 0.0, 900.0]))
    assert state.set_target(t) is True
    assert state.set_target(Target(np.array([900.0, 0.0, 900.0]))) is False
    assert [f for f, _ in seen][:1] == ["target"]
    # without a result nothing can be selected
    assert state.select_branch(0) is False
    assert state.selected == -1
    assert state.set_target(None) is True
    assert state.target is None


def test_an_invalid_arm_is_refused_and_nothing_changes(state):
    before = state.chain
    q = state.q
    bad = state.spec.copy()
    bad.joints[1].min = 500.0  # above max
    with pytest.raises(armfile.ArmFileError, match="min must be below max"):
        state.set_arm(bad, dirty=True)
    assert state.chain == before
    np.testing.assert_array_equal(state.q, q)
    assert state.dirty is False


def test_an_edited_arm_keeps_the_pose_and_marks_the_document(state):
    seen = record(state)
    state.set_q_user([10, 20, 30, 40, 50, 60])
    edited = state.spec.copy()
    edited.joints[1].a = 750.0
    assert state.set_arm(edited, dirty=True) is True
    assert state.dirty
    np.testing.assert_allclose(state.q_user, [10, 20, 30, 40, 50, 60])
    assert {"arm", "document"} <= {f for f, _ in seen}


def test_limit_states_use_the_margin_option(state):
    lo, hi = state.limits_user
    q = state.q_user
    q[2] = hi[2] - 0.02 * (hi[2] - lo[2])  # 2 % from the upper limit
    state.set_q_user(q)
    assert state.limit_states()[2].level == "near"
    state.set_option("margin", 0.01)
    assert state.limit_states()[2].level == "ok"
