"""Recovery copies (poser.io.recovery.RecoveryWriter): every applied edit, written off the calling thread,
coalesced and throttled, and a failure that stays reported until a write succeeds.

Nothing here waits on a clock: writes are held back with events and released, and the throttle is checked
with an interval far longer than any test.
"""

from __future__ import annotations

import threading
from pathlib import Path

import pytest

from poser.armfile import load, loads
from poser.io import recovery
from poser.io.recovery import RecoveryWriter

ROOT = Path(__file__).resolve().parents[2]
HERON = ROOT / "demo_arms" / "heron6.toml"


@pytest.fixture
def gate(monkeypatch):
    """Holds every write until released; counts writes in flight at once."""
    state = {"open": threading.Event(), "started": threading.Event(), "in_flight": 0, "most": 0, "texts": []}
    lock = threading.Lock()
    real = recovery.write_atomic

    def held(path, text):
        with lock:
            state["in_flight"] += 1
            state["most"] = max(state["most"], state["in_flight"])
        state["started"].set()
        state["open"].wait(30)
        try:
            real(path, text)
            state["texts"].append(text)
        finally:
            with lock:
                state["in_flight"] -= 1

    monkeypatch.setattr(recovery, "write_atomic", held)
    return state


def test_every_applied_edit_is_kept_also_those_that_do_not_move_the_arm(tmp_path):
    path = tmp_path / "rec" / "heron.toml"
    w = RecoveryWriter(path, min_interval=0.0)
    spec = load(HERON)
    spec.name = "Heron renamed"  # no kinematic change
    spec.joints[4].home = 30  # an explicit home equal to nothing the arm showed before
    spec.notes["checked by"] = "night shift"
    w.submit(spec)
    assert w.flush(30)
    again = loads(path.read_text(), str(path))
    assert again == spec
    assert "# upper arm points straight up at J2 = 0" in path.read_text()  # comments kept in the copy too
    w.close()


def test_submit_returns_while_the_copy_is_written_on_another_thread(tmp_path, gate):
    path = tmp_path / "copy.toml"
    w = RecoveryWriter(path, min_interval=0.0)
    w.submit("first")
    assert gate["started"].wait(30)  # the writer thread is inside the write, held
    w.submit("second")  # returns at once although a write is in flight
    assert not path.exists()
    gate["open"].set()
    assert w.flush(30)
    assert path.read_text() == "second"
    w.close()


def test_edits_are_coalesced_the_latest_wins_one_write_in_flight(tmp_path, gate):
    path = tmp_path / "copy.toml"
    w = RecoveryWriter(path, min_interval=0.0)
    w.submit("edit 0")
    assert gate["started"].wait(30)
    threads = [threading.Thread(target=lambda k=k: [w.submit(f"t{k} edit {i}") for i in range(200)]) for k in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    w.submit("final")
    gate["open"].set()
    assert w.flush(30)
    assert path.read_text() == "final"
    assert gate["most"] == 1  # never two writes at once
    assert gate["texts"][0] == "edit 0" and gate["texts"][-1] == "final"
    assert len(gate["texts"]) == 2  # 802 edits while one write was held: that one, then only the latest
    w.close()


def test_writes_are_throttled(tmp_path):
    path = tmp_path / "copy.toml"
    w = RecoveryWriter(path, min_interval=3600.0)
    w.submit("one")
    assert w.flush(30) and path.read_text() == "one" and w.writes == 1
    w.submit("two")
    w.submit("three")
    assert w.writes == 1 and path.read_text() == "one"  # the next write waits for the interval
    assert w.flush(30)  # unless someone needs it now
    assert w.writes == 2 and path.read_text() == "three"
    w.close()


def test_the_spec_is_copied_when_it_is_submitted(tmp_path, gate):
    path = tmp_path / "copy.toml"
    w = RecoveryWriter(path, min_interval=0.0)
    spec = load(HERON)
    spec.joints[0].max = 160
    w.submit(spec)
    spec.joints[0].max = 10  # changed after the submit, while the copy is still being written
    gate["open"].set()
    assert w.flush(30)
    assert loads(path.read_text()).joints[0].max == 160
    w.close()


def test_a_failure_is_reported_until_a_write_succeeds(tmp_path):
    folder = tmp_path / "rec"
    folder.mkdir()
    calls = []
    w = RecoveryWriter(folder / "copy.toml", min_interval=0.0, on_status=lambda ok, msg: calls.append((ok, msg)))
    w.submit("good")
    assert w.flush(30) and not w.failed and w.error is None and calls == []
    folder.chmod(0o555)  # the folder becomes unwritable
    try:
        w.submit("lost?")
        assert w.flush(30)
        assert w.failed
        assert "cannot save in the folder" in w.error and "no permission to add files" in w.error
        assert calls == [(False, w.error)]
        w.submit("still failing")
        assert w.flush(30) and w.failed and len(calls) == 1  # the same failure is not announced again
    finally:
        folder.chmod(0o755)
    w.submit("back")
    assert w.flush(30)
    assert not w.failed and w.error is None and calls[-1] == (True, None)
    assert (folder / "copy.toml").read_text() == "back"
    w.close()


def test_a_folder_replaced_by_a_file_is_a_failure_too(tmp_path):
    folder = tmp_path / "rec"
    w = RecoveryWriter(folder / "copy.toml", min_interval=0.0)
    folder.write_text("not a folder")
    w.submit("x")
    assert w.flush(30) and w.failed and str(folder) in w.error
    folder.unlink()
    w.submit("y")
    assert w.flush(30) and not w.failed and (folder / "copy.toml").read_text() == "y"  # the folder is made
    w.close()


def test_an_invalid_arm_is_a_reported_failure_not_a_dead_thread(tmp_path):
    w = RecoveryWriter(tmp_path / "copy.toml", min_interval=0.0)
    spec = load(HERON)
    spec.joints[0].min = 500
    w.submit(spec)
    assert w.flush(30) and w.failed and "min must be below max" in w.error
    w.submit("valid text")
    assert w.flush(30) and not w.failed
    w.close()


def test_discard_drops_what_waits_and_removes_the_copy(tmp_path):
    path = tmp_path / "copy.toml"
    w = RecoveryWriter(path, min_interval=3600.0)
    w.submit("one")
    assert w.flush(30) and path.exists()
    w.submit("two")  # waiting for the interval
    w.discard()
    assert not path.exists()
    assert w.flush(1)  # nothing left to write
    assert not path.exists()
    w.close()


def test_set_path_moves_the_next_copies(tmp_path):
    w = RecoveryWriter(tmp_path / "a.toml", min_interval=0.0)
    w.submit("a")
    assert w.flush(30)
    w.set_path(tmp_path / "b.toml")
    w.submit("b")
    assert w.flush(30)
    assert (tmp_path / "a.toml").read_text() == "a" and (tmp_path / "b.toml").read_text() == "b"
    w.close()
    with pytest.raises(RuntimeError, match="closed"):
        w.submit("late")


def test_the_window_finds_recovery_paths_in_one_place():
    from poser.ui import files

    assert files.recovery_path is recovery.recovery_path and files.recovery_dir is recovery.recovery_dir
