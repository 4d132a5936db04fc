"""Recovery copies of unsaved edits: where they live, and a writer that keeps one up to date off the GUI thread.

:class:`RecoveryWriter` takes every applied edit (:meth:`~RecoveryWriter.submit`
an :class:`~poser.io.spec.ArmSpec` or a text) and writes the copy on a thread
of its own: at most one write is in flight, a newer edit replaces an older one
still waiting (the latest wins), and writes start at least ``min_interval``
seconds apart — so typing into a large arm costs each keystroke a copy of the
spec, not a save.  The arm is turned into text (:func:`~poser.io.writing.dumps`)
on that thread too.

When a copy cannot be written the writer stays *failed* (:attr:`~RecoveryWriter.failed`,
:attr:`~RecoveryWriter.error`, and the ``on_status`` callback) until a later
write succeeds.
"""

from __future__ import annotations

import hashlib
import os
import threading
import time
from pathlib import Path

from poser.io.errors import ArmFileError, FolderNotWritableError
from poser.io.spec import ArmSpec
from poser.io.writing import dumps, write_text_atomic

__all__ = ["recovery_dir", "recovery_path", "write_atomic", "RecoveryWriter"]


def recovery_dir() -> Path:
    """Where recovery copies live: ``$POSER_RECOVERY_DIR``, else the user's state folder."""
    env = os.environ.get("POSER_RECOVERY_DIR")
    if env:
        return Path(env)
    base = os.environ.get("XDG_STATE_HOME") or os.path.join(os.path.expanduser("~"), ".local", "state")
    return Path(base) / "poser" / "recovery"


def recovery_path(arm_path: Path | None) -> Path:
    """The recovery copy's file name for an arm file (or for an unsaved arm)."""
    key = str(Path(arm_path).resolve()) if arm_path else "untitled"
    stem = Path(arm_path).stem if arm_path else "untitled"
    digest = hashlib.sha1(key.encode("utf-8")).hexdigest()[:10]
    return recovery_dir() / f"{stem}-{digest}.toml"


def write_atomic(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` through a temporary file and a rename, making the folder if needed.

    Raises
    ------
    ArmFileError
        (a :class:`~poser.io.errors.SaveError`) when the folder cannot be made or written.
    """
    path = Path(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise FolderNotWritableError(path, path.parent, exc.strerror or str(exc)) from None
    write_text_atomic(path, text)


class RecoveryWriter:
    """Writes recovery copies on its own thread: coalesced, throttled, failures kept visible.

    Parameters
    ----------
    path : str or os.PathLike, optional
        The recovery file (see :func:`recovery_path`); may be changed later
        with :meth:`set_path`.
    min_interval : float
        Least time between the starts of two writes, seconds.
    on_status : callable, optional
        ``on_status(ok, message)``, called **on the writer's thread** whenever
        the state changes: a write failed (``ok=False``, the reason), failed
        for another reason, or succeeded after failing (``ok=True, None``).
        A Qt window should forward it through a signal.

    Notes
    -----
    Thread-safe: :meth:`submit` may be called from any thread and returns at
    once.
    """

    def __init__(self, path=None, *, min_interval: float = 0.5, on_status=None):
        self._path = Path(path) if path is not None else None
        self.min_interval = float(min_interval)
        self.on_status = on_status
        self._cond = threading.Condition()
        self._pending = None  # (seq, item, path)
        self._submitted = 0
        self._done = 0
        self._busy = False
        self._hurry = 0
        self._closing = False
        self._last_start = -float("inf")
        self._thread: threading.Thread | None = None
        self._error: str | None = None
        self.writes = 0
        """Copies written so far (successful writes)."""

    # -- state ------------------------------------------------------------------------------------
    @property
    def failed(self) -> bool:
        """True from a failed write until a later write succeeds."""
        return self._error is not None

    @property
    def error(self) -> str | None:
        """Why the last write failed (None when it did not)."""
        return self._error

    @property
    def path(self) -> Path | None:
        return self._path

    def set_path(self, path) -> None:
        """Write later copies to ``path`` (a copy already waiting goes there too)."""
        with self._cond:
            self._path = Path(path) if path is not None else None
            if self._pending is not None:
                seq, item, _ = self._pending
                self._pending = (seq, item, self._path)

    # -- work -------------------------------------------------------------------------------------
    def submit(self, arm) -> None:
        """Keep ``arm`` (an :class:`~poser.io.spec.ArmSpec`, copied now, or a text) as the recovery copy.

        Returns at once; the copy is written on the writer's thread.
        """
        item = arm.copy() if isinstance(arm, ArmSpec) else str(arm)
        with self._cond:
            if self._closing:
                raise RuntimeError("this RecoveryWriter is closed")
            self._submitted += 1
            self._pending = (self._submitted, item, self._path)
            if self._thread is None:
                self._thread = threading.Thread(target=self._run, name="poser-recovery", daemon=True)
                self._thread.start()
            self._cond.notify_all()

    def flush(self, timeout: float | None = None) -> bool:
        """Wait until everything submitted so far is written (or has failed); False on timeout."""
        deadline = None if timeout is None else time.monotonic() + timeout
        with self._cond:
            target = self._submitted
            self._hurry += 1
            self._cond.notify_all()
            try:
                while self._done < target:
                    left = None if deadline is None else deadline - time.monotonic()
                    if left is not None and left <= 0:
                        return False
                    self._cond.wait(left)
                return True
            finally:
                self._hurry -= 1

    def discard(self) -> None:
        """Drop a copy still waiting and remove the recovery file (after a save, or when edits are thrown away)."""
        with self._cond:
            if self._pending is not None:
                self._pending = None
                self._done = self._submitted
            while self._busy:
                self._cond.wait()
            path = self._path
            self._cond.notify_all()
        if path is not None:
            try:
                path.unlink()
            except OSError:
                pass

    def close(self, flush: bool = True, timeout: float | None = 5.0) -> None:
        """Stop the thread (writing what is waiting first, when ``flush``)."""
        if flush:
            self.flush(timeout)
        with self._cond:
            self._closing = True
            if not flush:
                self._pending = None
            self._cond.notify_all()
            thread = self._thread
        if thread is not None:
            thread.join(timeout)

    def _run(self) -> None:
        while True:
            with self._cond:
                while True:
                    if self._pending is None:
                        if self._closing:
                            return
                        self._cond.wait()
                        continue
                    wait = self._last_start + self.min_interval - time.monotonic()
                    if wait > 0 and not self._hurry and not self._closing:
                        self._cond.wait(wait)  # throttled; a newer edit may replace the waiting one meanwhile
                        continue
                    break
                seq, item, path = self._pending
                self._pending = None
                self._busy = True
                self._last_start = time.monotonic()
            ok, message = True, None
            try:
                if path is None:
                    ok, message = False, "no recovery file is set (RecoveryWriter.set_path)"
                else:
                    text = item if isinstance(item, str) else dumps(item, path)
                    write_atomic(path, text)
            except ArmFileError as exc:
                ok, message = False, str(exc)
            except OSError as exc:
                ok, message = False, f"{path}: {exc.strerror or exc}"
            except Exception as exc:  # never let the thread die silently
                ok, message = False, f"{type(exc).__name__}: {exc}"
            with self._cond:
                self._busy = False
                self._done = max(self._done, seq)
                changed = (self._error is not None) == ok or (not ok and message != self._error)
                self._error = None if ok else message
                if ok:
                    self.writes += 1
                self._cond.notify_all()
            if changed and self.on_status is not None:
                try:
                    self.on_status(ok, message)
                except Exception:  # a faulty callback must not stop the copies
                    pass
