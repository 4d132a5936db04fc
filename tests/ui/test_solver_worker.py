"""Nothing frozen: IK on a worker thread, stale results dropped, nothing re-solved for a name, GUI stalls measured.

The stall figures are recorded (``record_property`` and the printed line), never asserted: speed goals live
in benchmarks/gui.py (``gui_stall_max_ms``).
"""

from __future__ import annotations

import threading
import time

import numpy as np
import pytest
from ui_common import DEMO, copy_demo

from poser import armfile
from poser.ui import ikbridge, solver
from poser.ui.state import Target

pytestmark = [pytest.mark.gui]




def test_the_solve_runs_off_the_gui_thread_and_the_window_stays_responsive(make_window, qtbot, monkeypatch):
    win = make_window()
    threads = []
    started = threading.Event()
    release = threading.Event()
    real = ikbridge.solve

    def slow(*a, **k):
        threads.append(threading.current_thread())
        started.set()
        release.wait(5.0)  # a solve that takes as long as we like
        return real(*a, **k)

    monkeypatch.setattr(ikbridge, "solve", slow)
    win.state.set_target(Target(np.array([900.0, -300.0, 900.0]), np.diag([1.0, -1.0, -1.0])))
    qtbot.waitUntil(started.is_set, timeout=3000)
    # the solve is blocked on the worker, yet the GUI thread goes on: a joint moves, the panels follow
    assert threads and threads[0] is not threading.main_thread()
    assert win.solver.pending and win.state.ik is None
    win.state.set_joint_user(0, 12.0)
    assert win.joints.rows[0].spin.value() == pytest.approx(12.0)
    assert win.target.summary.text() == "Solving…"
    release.set()
    qtbot.waitUntil(lambda: win.state.ik is not None, timeout=5000)
    assert not win.solver.pending and win.state.branches


def test_a_result_for_an_older_target_is_dropped(make_window, qtbot, monkeypatch):
    win = make_window()
    gate = threading.Event()
    real = ikbridge.solve
    solved_for = []

    def gated(chain, xyz, R=None, near=None, **k):
        if not solved_for:
            gate.wait(5.0)  # hold the first solve until the target has moved on
        solved_for.append(np.array(xyz))
        return real(chain, xyz, R=R, near=near, **k)

    monkeypatch.setattr(ikbridge, "solve", gated)
    st = win.state
    R = np.diag([1.0, -1.0, -1.0])
    st.set_target(Target(np.array([900.0, -300.0, 900.0]), R))
    qtbot.waitUntil(lambda: win.solver._running is not None, timeout=3000)
    st.set_target(Target(np.array([800.0, 200.0, 700.0]), R))  # typed on while the first one is solved
    win.solver.request()  # no need to wait for the debounce
    gate.set()
    assert win.solver.wait(10.0)
    assert win.solver.dropped >= 1
    np.testing.assert_allclose(st.ik.xyz, [800.0, 200.0, 700.0])  # the result stored is for the present target
    assert len(solved_for) == 2  # the older one was solved (it was running) but never shown


def test_a_result_for_an_older_arm_is_dropped(make_window, qtbot, tmp_path, monkeypatch):
    win = make_window()
    gate = threading.Event()
    real = ikbridge.solve

    def gated(*a, **k):
        gate.wait(5.0)
        return real(*a, **k)

    monkeypatch.setattr(ikbridge, "solve", gated)
    st = win.state
    st.set_target(Target(np.array([500.0, 0.0, 600.0])))
    qtbot.waitUntil(lambda: win.solver._running is not None, timeout=3000)
    win.open_file(copy_demo("quill4.toml", tmp_path))  # four joints now; the six-joint result must not land
    gate.set()
    assert win.solver.wait(10.0)
    assert win.solver.dropped >= 1
    assert st.chain.n == 4
    assert all(b.q.shape == (4,) for b in st.branches)


def test_renaming_the_arm_solves_nothing_and_rebuilds_nothing(make_window, qtbot):
    win = make_window()
    win.set_target_values([900, -300, 900, 180, 0, 0])
    result = win.state.ik
    jobs = []
    start = win.solver._start
    win.solver._start = lambda job: (jobs.append(job), start(job))
    fields = []
    win.state.changed.connect(fields.append)
    ed = win.editor
    ed.name.setText("Heron 6 (cell 4)")
    ed.name.textEdited.emit("Heron 6 (cell 4)")
    qtbot.wait(150)  # longer than the solver's debounce
    assert ed.problems == []
    assert win.state.chain.name == "Heron 6 (cell 4)" and win.state.spec.name == "Heron 6 (cell 4)"
    assert "arm" not in fields and "ik" not in fields
    assert jobs == [] and win.state.ik is result
    assert "Heron 6 (cell 4)" in win.windowTitle()
    # the notes are no kinematics either
    spec = win.state.spec.copy()
    spec.notes = {"cell": "4", "owner": "line B"}
    win.state.set_arm(spec, dirty=True)
    qtbot.wait(150)
    assert jobs == [] and win.state.ik is result and "arm" not in fields


def test_solver_faults_are_said_not_raised(make_window, qtbot, monkeypatch):
    win = make_window()

    def broken(*a, **k):
        raise RuntimeError("numerical trouble")

    monkeypatch.setattr(ikbridge, "solve", broken)
    win.state.set_target(Target(np.array([900.0, 0.0, 900.0])))
    assert win.solver.wait(5.0)
    assert win.solver.last_error == "the solver failed: RuntimeError: numerical trouble"
    assert win.target.summary.text() == win.solver.last_error
    assert win.state.ik is None


def test_compute_gives_the_worker_products_of_every_branch():
    chain = armfile.load(DEMO / "heron6.toml").to_chain()
    job = solver.SolveJob(1, chain, Target(np.array([900.0, -300.0, 900.0]), np.diag([1.0, -1.0, -1.0])),
                          chain.home, 0)
    out = solver.compute(job)
    assert out.error == "" and out.result.branches
    n = len(out.result.branches)
    assert len(out.infos) == len(out.rows) == len(out.drawings[1]) == n
    from poser.core.jacobian import condition_number

    for b, info in zip(out.result.branches, out.infos):
        kappa = condition_number(chain, b.q)
        assert info.condition == pytest.approx(kappa, rel=1e-12) or (np.isinf(kappa) and np.isinf(info.condition))


def _stall(make_window, name, tmp_path, record_property):
    from poser.ui.heartbeat import TARGET_SESSIONS, typing_session

    win = make_window(copy_demo(f"{name}.toml", tmp_path))
    win.render_now()
    t0 = time.perf_counter()
    beat = typing_session(win, TARGET_SESSIONS[name])
    figure = round(beat.max_gap_ms, 1)
    record_property(f"gui_stall_max_ms_{name}", figure)
    print(f"\n{name}: longest GUI stall while typing targets {figure} ms over {len(beat.gaps)} heartbeats, "
          f"{time.perf_counter() - t0:.1f} s")
    # what the session did (not a time): every target was typed, solved and listed
    typed = [float(v) for v in TARGET_SESSIONS[name][-1][:3]]
    np.testing.assert_allclose(win.state.target.xyz, typed)
    assert win.state.ik is not None and not win.solver.pending
    assert len(beat.gaps) > 100  # the heartbeat ran through the session
    return figure


def test_heartbeat_while_typing_targets_on_wren6(make_window, tmp_path, record_property):
    _stall(make_window, "wren6", tmp_path, record_property)


def test_heartbeat_while_typing_targets_on_lark7(make_window, tmp_path, record_property):
    _stall(make_window, "lark7", tmp_path, record_property)


def test_a_window_started_with_a_target_solves_it_on_the_worker(make_window, qtbot, monkeypatch):
    """``poser ARM --target …`` opens the window at once and solves on the worker (a 32-joint arm's solve took
    seconds on the GUI thread before the window showed); snapshots still solve at once (``now``)."""
    win = make_window()
    threads = []
    real = ikbridge.solve

    def spy(*a, **k):
        threads.append(threading.current_thread())
        return real(*a, **k)

    monkeypatch.setattr(ikbridge, "solve", spy)
    win.set_target_values([900, -300, 900, 180, 0, 0], now=False)
    assert win.state.target is not None and not threads  # nothing solved yet, nothing on this thread
    qtbot.waitUntil(lambda: len(win.state.branches) > 0, timeout=5000)
    assert threads and all(t is not threading.main_thread() for t in threads)
    threads.clear()
    win.set_target_values([900, -300, 950, 180, 0, 0])  # now: on this thread, the branches there on return
    assert threads == [threading.main_thread()] and len(win.state.branches) > 0
