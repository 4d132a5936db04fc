"""The studies of the window (workspace, reach): their inputs, results and display toggles, and their worker.

:class:`Studies` is a small model of its own, owned by the shared state (``state.studies``): panels read it
and write to it, never to each other.  It emits ``changed(field)`` (:data:`FIELDS`) when something of it
really changes.

Running
    One study runs at a time on a worker thread (a ``QThreadPool`` of one), as the IK solver does
    (:mod:`poser.ui.solver`).  A study asked for while another runs cancels the running one and waits as the
    *next* job; a newer request replaces it (the latest wins).  The core calls back with the share done
    (:mod:`poser.core.progress`); the callback says stop once Cancel was pressed, the core raises
    :class:`~poser.core.errors.Cancelled` and returns nothing.  A result is stored only if it is the newest
    job and still belongs to the state's arm (:attr:`PoseState.arm_generation`); any other is dropped
    (:attr:`Studies.dropped` counts them).  A cancelled or failed study leaves every result as it was.

The arm changes
    Every result belongs to the arm it was computed for: another arm (``arm``) clears them (and drops a study
    in flight) before anything draws them.  The target list stays; when the length unit changes it is read
    again from its file in the new arm's units (as ``poser reach`` reads it for that arm).

The core's functions are reached through this module's names (:data:`CORE`), so tests can hold a study
at a point without timing anything.
"""

from __future__ import annotations

import threading
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from PySide6.QtCore import QObject, QThreadPool, Signal

from poser import report
from poser.core.errors import Cancelled, PoserError

__all__ = ["Studies", "StudyJob", "StudyOutcome", "WorkspaceResult", "ReachResult", "FIELDS", "KINDS", "SHOW",
           "CORE", "compute", "DEFAULT_SAMPLES", "VERDICT_SYMBOLS", "VERDICT_COLOURS"]

WORKSPACE, REACH, PLACEMENT, CUBE = "workspace", "reach", "placement", "cube"
KINDS = (WORKSPACE, REACH, PLACEMENT, CUBE)
"""The studies the window runs."""
TITLES = {WORKSPACE: "Workspace", REACH: "Reach study", PLACEMENT: "Placement search", CUBE: "Test cube"}

FIELDS = ("workspace", "sections", "targets", "reach", "placement", "cube", "show", "running", "progress", "message")
"""Names ``Studies.changed`` carries.

* ``workspace`` — a workspace was stored or cleared (``sections`` follows);
* ``sections`` — the section outlines (another height);
* ``targets`` — a target list was read or dropped (``reach`` is cleared with it);
* ``reach`` — a reach study was stored or cleared;
* ``placement`` — a placement search over the loaded targets was stored or cleared (cleared with the targets);
* ``cube`` — a test cube was stored or cleared;
* ``show`` — a display toggle;
* ``running`` — a study started or ended (:attr:`Studies.running`); ``progress`` — its share done;
* ``message`` — :attr:`Studies.message`, the last words about a study (done, cancelled, failed).
"""

SHOW = {
    "cloud": "workspace point cloud, coloured by manipulability",
    "sections": "workspace section outlines (vertical through the base axis, horizontal at the chosen height)",
    "reach": "reach targets, coloured and shaped by verdict",
    "coverage": "placement coverage map: targets reached from each base position, and the best placement",
    "cube": "the performance-test cube with its test positions P1 … P5",
}
"""The 3D view's study toggles and what each draws."""

DEFAULT_SAMPLES = 200_000
MIN_SAMPLES, MAX_SAMPLES = 1_000, 5_000_000
PROGRESS_STEP = 0.005
"""The worker reports progress to the window at most once per half a percent."""

VERDICT_SYMBOLS = {"reached": "●", "blocked by limits": "✕", "out of reach": "◇", "fault": "?"}
"""The shape of each reach verdict, in the table and in the 3D view (a ball, a cross, a diamond)."""
VERDICT_COLOURS = {"reached": "#2E7D32", "blocked by limits": "#C98A00", "out of reach": "#C62828",
                   "fault": "#6B6F76"}
"""The colour of each reach verdict (the palette's ok, near and at colours; grey for a solver fault)."""


@dataclass(frozen=True)
class WorkspaceResult:
    """A measured workspace and its section outlines, for one arm.

    Attributes
    ----------
    ws : poser.core.workspace.Workspace
    vertical : poser.core.workspace.Section or None
        Through the joint 1 line (spatial arms only).
    horizontal : poser.core.workspace.Section or None
        At world height ``height`` (length unit).
    height : float or None
    arm_generation : int
    words : str
        :func:`poser.report.workspace_lines` (what ``poser workspace`` prints), one line each.
    """

    ws: object
    vertical: object
    horizontal: object
    height: float | None
    arm_generation: int
    words: str


@dataclass(frozen=True)
class ReachResult:
    """A reach study over the loaded target list, for one arm.

    Attributes
    ----------
    study : poser.core.reach.ReachStudy
    file : poser.io.targets.TargetFile
    arm_generation : int
    summary : str
        :func:`poser.report.reach_summary`.
    """

    study: object
    file: object
    arm_generation: int
    summary: str


@dataclass(frozen=True)
class PlacementResult:
    """A placement search over the loaded target list (:class:`poser.core.place.Placement`), for one arm."""

    placement: object
    file: object
    arm_generation: int


@dataclass(frozen=True)
class CubeResult:
    """A performance-test cube (:class:`poser.core.cube.Cube`), for one arm."""

    cube: object
    arm_generation: int


@dataclass(frozen=True)
class StudyJob:
    """One request: which study, its inputs, and what it belongs to (to tell a stale result)."""

    number: int
    kind: str
    chain: object
    params: dict
    arm_generation: int
    cancel: threading.Event = field(default_factory=threading.Event, compare=False)


@dataclass(frozen=True)
class StudyOutcome:
    """What the worker hands back: the result, or that it was cancelled, or the error in words."""

    job: StudyJob
    result: object = None
    cancelled: bool = False
    error: str = ""
    seconds: float = 0.0


def _workspace(chain, samples, progress):
    from poser.core.workspace import workspace

    return workspace(chain, samples, progress=progress)


def _sections(chain, ws, height):
    from poser.core.workspace import section

    if ws.planar:
        return None, None, None
    vertical = section(ws, "vertical", base=chain.base)
    lo, hi = ws.bounds
    h = 0.5 * (lo[2] + hi[2]) if height is None else float(height)
    return vertical, section(ws, "horizontal", height=h), h


def _reach(chain, targets, start, progress):
    from poser.core.reach import reach

    return reach(chain, targets, start, progress=progress)


def _place(chain, targets, ranges, progress):
    from poser.core.place import grid, place

    # one process: the window's worker is a thread of a Qt program, which must not be forked
    return place(chain, targets, grid(chain, **ranges), progress=progress, workers=1)


def _cube(chain, R, options, progress):
    from poser.core.cube import cube

    return cube(chain, R, progress=progress, **options)


CORE = {"workspace": _workspace, "sections": _sections, "reach": _reach, "place": _place, "cube": _cube}
"""The core's studies as the window calls them (tests wrap them to hold a study at a point)."""


def compute(job: StudyJob, progress) -> StudyOutcome:
    """Run one job (any thread; touches no Qt object).  ``progress(fraction)`` returns False to stop."""
    t0 = time.perf_counter()
    chain, p = job.chain, job.params
    try:
        if job.kind == WORKSPACE:
            ws = CORE["workspace"](chain, p["samples"], progress)
            vertical, horizontal, h = CORE["sections"](chain, ws, p.get("height"))
            result = WorkspaceResult(ws, vertical, horizontal, h, job.arm_generation,
                                     "\n".join(report.workspace_lines(chain, ws)))
        elif job.kind == REACH:
            tf = p["file"]
            study = CORE["reach"](chain, tf.targets, p.get("start"), progress)
            result = ReachResult(study, tf, job.arm_generation, report.reach_summary(chain, study, tf.skipped))
        elif job.kind == PLACEMENT:
            result = PlacementResult(CORE["place"](chain, p["file"].targets, p["ranges"], progress), p["file"],
                                     job.arm_generation)
        elif job.kind == CUBE:
            options = {"plane": p["plane"], "ws": p.get("ws"), "samples": p["samples"]}
            result = CubeResult(CORE["cube"](chain, p.get("R"), options, progress), job.arm_generation)
        else:
            raise ValueError(f"kind must be one of {', '.join(KINDS)}, got {job.kind!r}")
    except Cancelled:
        return StudyOutcome(job, cancelled=True, seconds=time.perf_counter() - t0)
    except PoserError as exc:
        return StudyOutcome(job, error=str(exc), seconds=time.perf_counter() - t0)
    except Exception as exc:  # the window must not die on a study's error; say it in words
        return StudyOutcome(job, error=f"{type(exc).__name__}: {exc}", seconds=time.perf_counter() - t0)
    return StudyOutcome(job, result, seconds=time.perf_counter() - t0)


class _Relay(QObject):
    """Carries progress and outcomes from the worker thread to the GUI thread (queued signals)."""

    progress = Signal(int, float)
    done = Signal(object)


class Studies(QObject):
    """The studies' inputs, results, toggles and worker (see the module docstring).

    Signals
    -------
    changed(str)
        A field of :data:`FIELDS` changed.
    """

    changed = Signal(str)

    def __init__(self, state, parent=None):
        super().__init__(parent)
        self.state = state
        self.samples = DEFAULT_SAMPLES
        self.section_height: float | None = None  # None: mid-height of the workspace's bounds
        self._workspace: WorkspaceResult | None = None
        self._targets = None  # poser.io.targets.TargetFile
        self._targets_path: Path | None = None
        self._units_read = None  # (length, angle) unit the list was read in
        self._reach: ReachResult | None = None
        self._placement: PlacementResult | None = None
        self._cube: CubeResult | None = None
        self._show = {k: True for k in SHOW}
        self._message = ("ok", "")
        self._fraction = 0.0
        self.dropped = 0
        """Outcomes thrown away: the arm changed, or a newer study was asked for, while they were computed."""
        self.last_seconds = 0.0
        self._number = 0
        self._running: StudyJob | None = None
        self._next: StudyJob | None = None
        self._silent: set = set()  # jobs stopped by an arm change: their end says nothing
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(1)
        self._relay = _Relay()
        self._relay.progress.connect(self._progress)
        self._relay.done.connect(self._finished)
        state.changed.connect(self._on_state)

    # -- reading --------------------------------------------------------------------------------
    @property
    def workspace(self) -> WorkspaceResult | None:
        """The workspace of the present arm, or None."""
        w = self._workspace
        return w if w is not None and w.arm_generation == self.state.arm_generation else None

    @property
    def reach(self) -> ReachResult | None:
        """The reach study of the present arm over the loaded targets, or None."""
        r = self._reach
        return r if r is not None and r.arm_generation == self.state.arm_generation else None

    @property
    def placement(self) -> PlacementResult | None:
        """The placement search of the present arm over the loaded targets, or None."""
        r = self._placement
        return r if r is not None and r.arm_generation == self.state.arm_generation else None

    @property
    def cube(self) -> CubeResult | None:
        """The test cube of the present arm, or None."""
        r = self._cube
        return r if r is not None and r.arm_generation == self.state.arm_generation else None

    @property
    def targets(self):
        """The loaded target list (:class:`poser.io.targets.TargetFile`) or None."""
        return self._targets

    @property
    def targets_path(self) -> Path | None:
        return self._targets_path

    def shown(self, name: str) -> bool:
        return self._show[name]

    @property
    def running(self) -> str | None:
        """The kind of study running (or waiting to run), or None."""
        job = self._next or self._running
        return None if job is None else job.kind

    @property
    def fraction(self) -> float:
        """Share done (0 … 1) of the running study."""
        return self._fraction

    @property
    def message(self) -> tuple[str, str]:
        """``(level, words)`` about the last study: ``"ok"``, ``"near"`` (cancelled) or ``"at"`` (failed)."""
        return self._message

    def inside(self):
        """Whether the state's target lies inside the computed workspace (bool), or None without either."""
        w, t = self.workspace, self.state.target
        if w is None or t is None:
            return None
        from poser.core.workspace import contains

        return bool(contains(w.ws, np.asarray(t.xyz, float)))

    def inside_words(self) -> tuple[str, str]:
        """``(level, words)`` for the target panel: inside / outside the workspace, or none computed."""
        if self.state.target is None:
            return "ok", ""
        inside = self.inside() if self.workspace is not None else None
        level = "ok" if inside in (True, None) else "at"
        return level, report.inside_workspace_words(self.state.chain, inside)

    # -- writing --------------------------------------------------------------------------------
    def _emit(self, name: str) -> None:
        self.changed.emit(name)

    def _say(self, level: str, text: str) -> None:
        self._message = (level, text)
        self._emit("message")

    def set_show(self, name: str, on: bool) -> bool:
        if name not in self._show:
            raise KeyError(f"name must be one of {', '.join(SHOW)}, got {name!r}")
        if self._show[name] == bool(on):
            return False
        self._show[name] = bool(on)
        self._emit("show")
        return True

    def set_samples(self, samples: int) -> None:
        samples = int(samples)
        if not MIN_SAMPLES <= samples <= MAX_SAMPLES:
            raise ValueError(f"samples must be within {MIN_SAMPLES} … {MAX_SAMPLES}, got {samples}")
        self.samples = samples

    def set_section_height(self, height: float | None) -> bool:
        """The horizontal section's world height (length unit; None: mid-height); re-traced at once."""
        self.section_height = None if height is None else float(height)
        w = self.workspace
        if w is None:
            return False
        vertical, horizontal, h = CORE["sections"](self.state.chain, w.ws, self.section_height)
        self._workspace = WorkspaceResult(w.ws, vertical, horizontal, h, w.arm_generation, w.words)
        self._emit("sections")
        return True

    def load_targets(self, path) -> bool:
        """Read a target CSV in the arm's units; True when read.  A file that cannot be read leaves the loaded
        list as it was and says why; skipped rows are said with their lines."""
        from poser.io.targets import TargetFileError, read_targets

        try:
            tf = read_targets(path, self.state.chain.units)
        except TargetFileError as exc:
            self._say("at", "Target list not read: " + "; ".join(str(p) for p in exc.problems))
            return False
        self._targets, self._targets_path = tf, Path(path)
        self._units_read = (self.state.chain.units.length, self.state.chain.units.angle)
        had = [n for n in ("reach", "placement") if getattr(self, "_" + n) is not None]
        self._reach = self._placement = None
        self._emit("targets")
        for n in had:
            self._emit(n)
        self._say("near" if tf.problems else "ok", self.targets_words())
        return True

    def targets_words(self) -> str:
        """What the loaded list holds, and every problem with its line."""
        tf = self._targets
        if tf is None:
            return "No target list loaded."
        n = len(tf.targets)
        s = (f"{report.printable(self._targets_path.name)}: {n} target{'s' if n != 1 else ''} read, in "
             f"{self.state.chain.units.length} and {self.state.chain.units.angle}")
        if tf.skipped:
            s += f"; {tf.skipped} malformed row{'s' if tf.skipped != 1 else ''} skipped (not checked)"
        s += "."
        if tf.problems:
            s += " " + " ".join(f"{p}." if not str(p).endswith(".") else str(p) for p in tf.problems[:8])
            if len(tf.problems) > 8:
                s += f" … and {len(tf.problems) - 8} more."
        return s

    def run(self, kind: str, **params) -> bool:
        """Ask for a study on the worker: ``run("workspace", samples=N)`` or ``run("reach")`` (the loaded
        targets, from the arm's home).  A study running is cancelled; False when there is nothing to run."""
        st = self.state
        if kind == WORKSPACE:
            params = {"samples": int(params.get("samples", self.samples)), "height": self.section_height}
        elif kind == REACH:
            if self._targets is None or not self._targets.targets:
                self._say("at", "Reach study: load a target list first (Studies ▸ Load targets…)."
                          if self._targets is None else "Reach study: the target list holds no usable target.")
                return False
            params = {"file": self._targets, "start": None}
        elif kind == PLACEMENT:
            if self._targets is None or not self._targets.targets:
                self._say("at", "Placement search: load a target list first (Studies ▸ Load targets…).")
                return False
            ranges = {k: params.get(k) for k in ("x", "y", "z", "yaw", "step", "yaw_step")}
            if ranges["x"] is None or ranges["y"] is None:
                raise ValueError("a placement search needs x and y ranges")
            params = {"file": self._targets, "ranges": ranges}
        elif kind == CUBE:
            w = self.workspace
            params = {"R": params.get("R"), "plane": params.get("plane", "y+"), "samples": self.samples,
                      "ws": None if w is None else w.ws}
        else:
            raise ValueError(f"kind must be one of {', '.join(KINDS)}, got {kind!r}")
        self._number += 1
        job = StudyJob(self._number, kind, st.chain, params, st.arm_generation)
        if self._running is not None:
            self._running.cancel.set()  # it answers an old question now; it stops at its next report
            self._next = job
        else:
            self._start(job)
        self._fraction = 0.0
        self._emit("running")
        self._say("ok", f"{TITLES[kind]}: running…")
        return True

    def cancel(self) -> bool:
        """Stop the running study (and forget the waiting one); every result stays as it was."""
        if self._running is None and self._next is None:
            return False
        if self._running is not None:
            self._running.cancel.set()
        self._next = None
        self._number += 1  # nothing in flight may be stored now
        return True

    def _start(self, job: StudyJob) -> None:
        self._running = job
        relay = self._relay
        last = [-1.0]

        def progress(fraction):
            if job.cancel.is_set():
                return False
            if fraction - last[0] >= PROGRESS_STEP or fraction >= 1.0:
                last[0] = fraction
                relay.progress.emit(job.number, float(fraction))
            return True

        self._pool.start(lambda: relay.done.emit(compute(job, progress)))

    def _progress(self, number: int, fraction: float) -> None:
        if self._running is not None and number == self._running.number and self._next is None:
            self._fraction = fraction
            self._emit("progress")

    def _finished(self, out: StudyOutcome) -> None:
        self._running = None
        if self._next is not None:
            job, self._next = self._next, None
            self._start(job)
        self._store(out)
        if self._running is None:
            self._fraction = 0.0
        self._emit("running")

    def _current(self, job: StudyJob) -> bool:
        return job.number == self._number and job.arm_generation == self.state.arm_generation

    def _store(self, out: StudyOutcome) -> bool:
        title = TITLES[out.job.kind]
        if out.cancelled:
            if self._running is None and out.job.number not in self._silent:
                self._say("near", f"{title} cancelled: nothing changed; the results shown before stay.")
            return False
        if not self._current(out.job):
            self.dropped += 1
            return False
        if out.error:
            self._say("at", f"{title} failed: {out.error}. Nothing changed; the results shown before stay.")
            return False
        self.last_seconds = out.seconds
        if out.job.kind == WORKSPACE:
            self._workspace = out.result
            self._emit("workspace")
            self._emit("sections")
            self._say("ok", f"Workspace measured in {out.seconds:.1f} s (the Workspace tab has its figures).")
        elif out.job.kind == REACH:
            self._reach = out.result
            self._emit("reach")
            self._say("ok", f"Reach study done in {out.seconds:.1f} s: {out.result.summary}")
        elif out.job.kind == PLACEMENT:
            self._placement = out.result
            self._emit("placement")
            pl = out.result.placement
            self._say("ok", f"Placement search done in {out.seconds:.1f} s: {pl.grid.size} placements, the best "
                      f"reaches {pl.best[0].reached} of {pl.targets} targets (the Placement tab lists the best).")
        else:
            self._cube = out.result
            self._emit("cube")
            c = out.result.cube
            self._say("ok", f"Test cube done in {out.seconds:.1f} s: {c.reached} of {len(c.study.verdicts)} "
                      "positions reached within limits (the Cube tab has the figures).")
        return True

    def _on_state(self, field_name: str) -> None:
        if field_name != "arm":
            return
        st = self.state
        running = self._running is not None or self._next is not None
        if self._running is not None:
            self._silent.add(self._running.number)  # its "cancelled" would say the old results stay
        self.cancel()  # a study of the old arm is answered for nobody now
        cleared = [n for n in ("workspace", "reach", "placement", "cube") if getattr(self, "_" + n) is not None]
        self._workspace = self._reach = self._placement = self._cube = None
        if self._targets is not None and self._targets_path is not None and \
                self._units_read != (st.chain.units.length, st.chain.units.angle):
            path = self._targets_path
            self._targets = None
            if self.load_targets(path):
                self._say("near", "Another arm with other units: the target list was read again in "
                          f"{st.chain.units.length} and {st.chain.units.angle}. " + self.targets_words())
            else:
                self._targets_path = None
                self._emit("targets")
        for name in cleared:
            self._emit(name)
            if name == "workspace":
                self._emit("sections")
        if cleared or running:
            self._say("ok", "Another arm: the studies of the previous one were cleared" +
                      (" (the study running was stopped)." if running else ".") + " Run them again for this arm.")

    # -- tests and scripts ----------------------------------------------------------------------
    @property
    def pending(self) -> bool:
        return self._running is not None or self._next is not None

    def wait(self, timeout: float = 60.0) -> bool:
        """Process events until no study runs (tests, scripts); False on timeout."""
        from PySide6.QtCore import QCoreApplication, QEventLoop

        deadline = time.perf_counter() + timeout
        while self.pending and time.perf_counter() < deadline:
            QCoreApplication.processEvents(QEventLoop.ProcessEventsFlag.AllEvents, 20)
            time.sleep(0.002)
        QCoreApplication.processEvents()
        return not self.pending

    def shutdown(self, timeout_ms: int = 10000) -> None:
        """Stop the running study and wait for the worker (before the window goes)."""
        self.cancel()
        self._pool.waitForDone(timeout_ms)
