"""The one shared state of the posing window.

:class:`PoseState` holds the arm, the joint values, the target, the solved
branches, the selected and hovered branch and the display options.  It emits
``changed(field)`` only when a field really changes.  Panels observe it and
write to it; none talks to another.  A panel that writes back blocks its own
echo (it checks :attr:`PoseState.writer` or compares values).

Joint values are kept in internal units (rad / length unit) as the core
uses them; conversions to the arm's units happen in the panels.

Each pose's products (frames, Jacobian, singularity verdict, limit states) are
computed once per joint change and shared by every panel (:meth:`PoseState.frames`,
:meth:`PoseState.jacobian`, :meth:`PoseState.singularity`, :meth:`PoseState.limit_states`);
each IK branch's singularity verdict is computed once per result
(:func:`branch_infos`, on the solver's worker thread).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
from PySide6.QtCore import QObject, Signal

from poser import report
from poser.armfile import ArmSpec
from poser.core.chain import Chain
from poser.core.fk import link_transforms
from poser.core.units import LENGTH_UNITS
from poser.ui import geometry

__all__ = ["PoseState", "Target", "BranchInfo", "branch_infos", "ghost_drawings", "same_kinematics", "FIELDS",
           "DEFAULT_OPTIONS"]

FIELDS = ("arm", "q", "target", "ik", "selected", "hovered", "options", "document", "spec")
"""Names ``PoseState.changed`` carries.

* ``arm`` — another kinematic arm (joints, base, tool or units changed): rebuild rows, refit the view;
  the branches are gone by then and the target is already in the new arm's units.
* ``spec`` — the arm description was replaced (every applied edit, also one that changes no kinematics,
  such as the arm's name or an explicit home equal to the default): recovery copies follow it.
* ``document`` — file, dirty flag or unapplied editor problems changed (the title and status bar follow).
"""

DEFAULT_OPTIONS = {
    "show_frames": False,  # a triad at every joint frame
    "show_trail": True,  # the tool point's trail
    "show_ghosts": True,  # IK branches as ghost arms
    "margin": 0.05,  # amber within this fraction of a joint's range from a limit
    "step": 1.0,  # arrow-key nudge of a revolute joint, in the arm's angle unit
    "step_length": 1.0,  # arrow-key nudge of a prismatic joint, in the arm's length unit
    "live_solve": True,
    "ghosts_within_limits_only": False,  # the branch list and the ghosts show only branches within limits
}


STEP_DEFAULTS = {"deg": 1.0, "rad": 0.01, "mm": 1.0, "m": 0.001, "in": 0.05}
"""Arrow-key steps a new arm starts with, by unit."""


def default_steps(units) -> dict:
    """``{"step": …, "step_length": …}`` for an arm's units."""
    return {"step": STEP_DEFAULTS[units.angle], "step_length": STEP_DEFAULTS[units.length]}


@dataclass(frozen=True)
class Target:
    """A target tool pose: position (3,) in the arm's length unit, rotation (3, 3) or None (position only)."""

    xyz: np.ndarray
    R: np.ndarray | None = None

    def same_as(self, other: Target | None) -> bool:
        if other is None:
            return False
        if (self.R is None) != (other.R is None):
            return False
        return np.array_equal(self.xyz, other.xyz) and (self.R is None or np.array_equal(self.R, other.R))

    @property
    def matrix(self) -> np.ndarray:
        T = np.eye(4)
        T[:3, 3] = self.xyz
        if self.R is not None:
            T[:3, :3] = self.R
        return T


@dataclass(frozen=True)
class BranchInfo:
    """One IK branch's pose products, computed once per result.

    Attributes
    ----------
    singularity : poser.core.singularity.Singularity
    level : str
        ``"ok"``, ``"near"`` or ``"at"`` (:func:`poser.report.singularity_words`).
    words : str
        The long verdict in words (:func:`poser.report.singularity_words`).
    condition : float
        Condition number (no unit; ∞ at a singularity), the CLI's ``condition``.
    """

    singularity: object
    level: str
    words: str
    condition: float


def branch_info(chain: Chain, q) -> BranchInfo:
    """:class:`BranchInfo` of joint values ``q`` (n,), internal units."""
    from poser.core.singularity import assess

    s = assess(chain, q)
    level, text = report.singularity_words(chain, s)
    return BranchInfo(s, level, text, float(s.condition))


def branch_infos(chain: Chain, branches) -> tuple:
    """:class:`BranchInfo` of every branch (Qt-free: the solver's worker thread calls it)."""
    return tuple(branch_info(chain, b.q) for b in branches)


def ghost_drawings(chain: Chain, branches):
    """``(groups, index)`` of :func:`poser.ui.geometry.ghost_groups` for the branches' ghosts, every group's
    drawing made (Qt-free: the solver's worker thread calls it).  Branches of another arm (the state clears
    them right after an arm change) give no ghosts."""
    branches = tuple(branches)
    if any(np.shape(b.q) != (chain.n,) for b in branches):
        return [], []
    groups, index = geometry.ghost_groups(chain, branches)
    for g in groups:
        g.drawing  # noqa: B018 - made here, on the worker, not when first drawn
    return groups, index


def same_kinematics(a: Chain, b: Chain) -> bool:
    """True when two chains differ at most in the arm's name (the same joints, base, tool and units)."""
    return (a.joints == b.joints and np.array_equal(a.base, b.base) and np.array_equal(a.tool, b.tool)
            and a.units == b.units)


class PoseState(QObject):
    """Everything the window shows, in one place (see the module docstring).

    Signals
    -------
    changed(str)
        A field of :data:`FIELDS` changed.
    notice(str, str)
        ``(level, words)`` a panel should show once (the status bar does): e.g. the target converted to
        another arm's units.  ``level`` is ``"ok"``, ``"near"`` or ``"at"``.
    """

    changed = Signal(str)
    notice = Signal(str, str)

    def __init__(self, spec: ArmSpec, path: str | Path | None = None, parent=None):
        super().__init__(parent)
        self._spec = spec
        self._chain = spec.to_chain()
        self._path = Path(path) if path else None
        self._dirty = False
        self._q = self._chain.home.copy()
        self._target: Target | None = None
        self._ik = None
        self._infos: tuple | None = None
        self._rows: tuple | None = None
        self._drawings = None
        self._selected = -1
        self._hovered = -1
        self._options = dict(DEFAULT_OPTIONS)
        self._options.update(default_steps(self._chain.units))
        self._cache: dict = {}
        self._unapplied: tuple = ()
        self._arm_generation = 0
        self.writer: object | None = None  # the panel whose write is being broadcast (for echo guards)
        from poser.ui.studies import Studies

        self.studies = Studies(self)  # the studies' own model (poser.ui.studies); it clears itself on "arm"

    # -- reading ------------------------------------------------------------------
    @property
    def spec(self) -> ArmSpec:
        return self._spec

    @property
    def chain(self) -> Chain:
        return self._chain

    @property
    def path(self) -> Path | None:
        return self._path

    @property
    def dirty(self) -> bool:
        """Unsaved edits: applied ones, or an editor edit that is not valid yet (:attr:`unapplied`)."""
        return self._dirty or bool(self._unapplied)

    @property
    def unapplied(self) -> tuple:
        """Problems (:class:`poser.armfile.Problem`) of an editor edit that could not be applied; empty when none.

        While there are any, the editor shows an arm the state does not hold: saving must refuse.
        """
        return self._unapplied

    @property
    def arm_generation(self) -> int:
        """Counts ``arm`` changes (a solve started for one generation is stale in the next)."""
        return self._arm_generation

    @property
    def q(self) -> np.ndarray:
        """Joint values (n,), internal units (a copy)."""
        return self._q.copy()

    @property
    def q_user(self) -> np.ndarray:
        """Joint values (n,) in the arm's units."""
        return self._chain.q_to_user(self._q)

    @property
    def target(self) -> Target | None:
        return self._target

    @property
    def ik(self):
        """The last IK result for the target (``poser.core.ik.IKResult``) or None."""
        return self._ik

    @property
    def branches(self) -> tuple:
        return tuple(self._ik.branches) if self._ik is not None else ()

    def branch_info(self, i: int) -> BranchInfo:
        """Branch ``i``'s singularity verdict and condition number (computed once per result)."""
        if self._infos is None or len(self._infos) != len(self.branches):
            self._infos = branch_infos(self._chain, self.branches)
        return self._infos[i]

    def branch_rows(self) -> tuple:
        """The branch list's texts of every branch (:class:`poser.ui.words.BranchRow`; once per result)."""
        if self._rows is None or len(self._rows) != len(self.branches):
            from poser.ui.words import branch_rows

            if self.branches:
                self.branch_info(0)  # fills every branch's info
            self._rows = branch_rows(self._chain, self._ik, self._infos or ()) if self._ik is not None else ()
        return self._rows

    def ghost_drawings(self):
        """``(groups, index)`` of every branch's ghost (:func:`poser.ui.geometry.ghost_groups`: look-alikes
        merged; ``index[i]`` is branch ``i``'s group), made once per result — on the solver's worker.  The
        3D and the 2D view draw from it."""
        if self._drawings is None or len(self._drawings[1]) != len(self.branches):
            self._drawings = ghost_drawings(self._chain, self.branches)
        return self._drawings

    def shown_branches(self) -> list[int]:
        """Indices of the branches the list and the ghosts show (all, or those within limits that reach,
        with the option ``ghosts_within_limits_only``)."""
        bs = self.branches
        if self._options["ghosts_within_limits_only"]:
            return [i for i, b in enumerate(bs) if b.within_limits and b.reaches]
        return list(range(len(bs)))

    @property
    def selected(self) -> int:
        return self._selected

    @property
    def hovered(self) -> int:
        return self._hovered

    @property
    def options(self) -> dict:
        return dict(self._options)

    def option(self, name):
        return self._options[name]

    def step_of(self, i: int) -> float:
        """Arrow-key step of joint ``i`` in the arm's units."""
        return float(self._options["step" if self._chain.revolute[i] else "step_length"])

    def unit_of(self, i: int) -> str:
        """Unit label of joint ``i``'s value."""
        return self._chain.units.joint_unit(self._chain.kinds[i])

    @property
    def limits_user(self) -> tuple[np.ndarray, np.ndarray]:
        """Lower and upper limits (n,) in the arm's units."""
        return self._chain.q_to_user(self._chain.lower), self._chain.q_to_user(self._chain.upper)

    # -- derived, cached per pose --------------------------------------------------
    def _cached(self, key, make):
        if key not in self._cache:
            self._cache[key] = make()
        return self._cache[key]

    def frames(self) -> np.ndarray:
        """Base, frame 1 … n, tool world poses (n + 2, 4, 4)."""
        return self._cached("frames", lambda: self._chain.frames(self._q))

    def tool(self) -> np.ndarray:
        return self.frames()[-1]

    def link_matrices(self) -> np.ndarray:
        """Each joint's own transform A_i (n, 4, 4)."""
        return self._cached("A", lambda: link_transforms(self._chain, self._q))

    def jacobian(self) -> np.ndarray:
        """The pose's Jacobian (6, n), world axes, at the tool point, from the shared frames."""
        from poser.core.jacobian import jacobian_from_frames

        return self._cached("J", lambda: jacobian_from_frames(self._chain, self.frames()))

    def drawing(self) -> geometry.ArmDrawing:
        return self._cached("drawing", lambda: geometry.arm_drawing(self._chain, self._q))

    def below_mount(self) -> list:
        """The parts of the pose behind the floor or the mount (:func:`poser.ui.geometry.below_mount`), once
        per pose for the views and the status bar."""
        return self._cached("below_mount", lambda: geometry.below_mount(self._chain, self.drawing()))

    def singularity(self):
        """The pose's singularity verdict (:class:`poser.core.singularity.Singularity`: level, condition,
        manipulability, kinds with their joints)."""
        from poser.core.singularity import assess

        return self._cached("singularity", lambda: assess(self._chain, self._q))

    @property
    def scale(self) -> float:
        """The arm's size (:attr:`poser.core.chain.Chain.scale`)."""
        return self._chain.scale

    def limit_states(self) -> list[report.LimitState]:
        """Every joint against its limits with the present margin (computed once per pose and margin)."""
        margin = self._options["margin"]
        return self._cached(("limits", margin), lambda: report.limit_states(self._chain, self._q, margin))

    # -- writing ----------------------------------------------------------------------
    def _emit(self, field: str, writer=None):
        prev = self.writer
        self.writer = writer
        try:
            self.changed.emit(field)
        finally:
            self.writer = prev

    def _drop_cache(self):
        self._cache.clear()

    def set_q(self, q, writer=None) -> bool:
        """Set every joint value (n,), internal units. Returns True when something changed."""
        q = np.array(self._chain.check_q(q), dtype=float).reshape(self._chain.n)
        if not np.all(np.isfinite(q)):
            raise ValueError(f"q must be finite, got {q.tolist()}")
        if np.array_equal(q, self._q):
            return False
        self._q = q
        self._drop_cache()
        self._emit("q", writer)
        return True

    def set_q_user(self, q_user, writer=None) -> bool:
        return self.set_q(self._chain.q_from_user(np.asarray(q_user, float)), writer)

    def set_joint(self, i: int, value: float, writer=None) -> bool:
        """Set joint ``i`` to ``value`` in internal units."""
        q = self._q.copy()
        q[i] = float(value)
        return self.set_q(q, writer)

    def set_joint_user(self, i: int, value: float, writer=None) -> bool:
        """Set joint ``i`` to ``value`` in the arm's units."""
        scale = self._chain.units.angle_to_rad if self._chain.revolute[i] else 1.0
        return self.set_joint(i, float(value) * scale, writer)

    def home(self, writer=None) -> bool:
        return self.set_q(self._chain.home, writer)

    def zero(self, writer=None) -> bool:
        """All joints to 0, clamped into each joint's limits."""
        return self.set_q(np.clip(np.zeros(self._chain.n), self._chain.lower, self._chain.upper), writer)

    def set_target(self, target: Target | None, writer=None) -> bool:
        if target is None and self._target is None:
            return False
        if target is not None and target.same_as(self._target):
            return False
        if target is not None:
            R = None if target.R is None else np.array(target.R, float).reshape(3, 3)
            target = Target(np.array(target.xyz, float).reshape(3), R)
        self._target = target
        self._emit("target", writer)
        self.set_ik(None, writer)
        return True

    def set_ik(self, result, writer=None, infos=None, rows=None, drawings=None) -> bool:
        """Store an IK result (or None); clears the selection and the hover.

        ``infos`` (a :class:`BranchInfo` per branch, from :func:`branch_infos`) and ``rows`` (the branch
        list's texts, :func:`poser.ui.words.branch_rows`) and ``drawings`` (:func:`ghost_drawings`) save
        computing them here: the solver's worker makes all three.
        """
        if result is self._ik:
            return False
        if result is not None and result.branches and len(result.branches[0].q) != self._chain.n:
            raise ValueError(f"the IK result has branches for {len(result.branches[0].q)} joints; "
                             f"the arm has {self._chain.n}")
        self._ik = result
        self._infos = tuple(infos) if infos is not None and result is not None else None
        self._rows = tuple(rows) if rows is not None and result is not None else None
        self._drawings = drawings if drawings is not None and result is not None else None
        self._emit("ik", writer)
        self.select_branch(-1, writer)
        self.hover_branch(-1, writer)
        return True

    def select_branch(self, i: int, writer=None) -> bool:
        i = int(i) if 0 <= int(i) < len(self.branches) else -1
        if i == self._selected:
            return False
        self._selected = i
        self._emit("selected", writer)
        return True

    def hover_branch(self, i: int, writer=None) -> bool:
        i = int(i) if 0 <= int(i) < len(self.branches) else -1
        if i == self._hovered:
            return False
        self._hovered = i
        self._emit("hovered", writer)
        return True

    def set_option(self, name: str, value, writer=None) -> bool:
        if name not in self._options:
            raise KeyError(f"unknown display option {name!r}; known: {', '.join(self._options)}")
        if self._options[name] == value:
            return False
        self._options[name] = value
        self._emit("options", writer)
        return True

    def set_arm(self, spec: ArmSpec, path=..., dirty: bool | None = None, writer=None) -> bool:
        """Show another arm (or an edited one).

        Joint values are kept (clamped to the new limits) when the joint count
        stays; otherwise the arm goes home.  The branches go; a target stays,
        converted to the new arm's length unit (the target's place in the world
        is kept; :attr:`notice` says so).  An arm that differs only in its name
        emits no ``arm`` (nothing is solved or rebuilt again), only ``spec``
        and ``document``.  ``path=...`` keeps the current file; ``dirty``
        marks unsaved edits (``dirty=False`` also forgets :attr:`unapplied`).
        Raises :class:`poser.armfile.ArmFileError` for an invalid spec; the
        state is then unchanged.
        """
        chain = spec.to_chain()  # validates; raises before anything changes
        doc_changed = False
        if path is not ...:
            new_path = Path(path) if path else None
            doc_changed |= new_path != self._path
            self._path = new_path
        if dirty is not None and dirty != self._dirty:
            self._dirty = dirty
            doc_changed = True
        if dirty is False and self._unapplied:
            self._unapplied = ()
            doc_changed = True
        # the same arm read again from its file is another document: whoever keeps its tables must know
        doc_changed |= getattr(spec, "_doc", None) is not getattr(self._spec, "_doc", None)
        spec_changed = spec is not self._spec
        same_arm = same_kinematics(chain, self._chain)
        doc_changed |= chain.name != self._chain.name
        self._spec = spec
        old = self._chain
        self._chain = chain  # the same kinematics under a new name keeps its result and its pose
        if not same_arm:
            old_user = self.q_user if chain.n == old.n else None
            if chain.units != old.units:
                self._options.update(default_steps(chain.units))
            self._drop_cache()
            if old_user is not None:
                q = np.clip(chain.q_from_user(old_user), chain.lower, chain.upper)
            else:
                q = chain.home.copy()
            self._q = q
            had_ik = self._ik is not None
            self._ik = None
            self._infos = self._rows = self._drawings = None
            self._selected = self._hovered = -1
            self._arm_generation += 1
            converted = self._convert_target(old, chain)
            self._emit("arm", writer)
            if converted:
                self._emit("target", writer)
                self.notice.emit("near", converted)
            if had_ik:
                self._emit("ik", writer)
        else:
            self._drop_cache()
        if spec_changed:
            self._emit("spec", writer)
        if doc_changed:
            self._emit("document", writer)
        return not same_arm or doc_changed or spec_changed

    def _convert_target(self, old: Chain, new: Chain) -> str | None:
        """Express the target in ``new``'s length unit (same place in the world); the words saying so, or None."""
        t = self._target
        if t is None or old.units.length == new.units.length:
            return None
        f = LENGTH_UNITS[old.units.length] / LENGTH_UNITS[new.units.length]
        self._target = Target(t.xyz * f, t.R)
        L = new.units.length
        was = ", ".join(report.fmt(v, 4) for v in t.xyz)
        now = ", ".join(report.fmt(v, 6) for v in self._target.xyz)
        return (f"Target converted to the new arm's unit: {was} {old.units.length} is {now} {L} "
                "(the same place; Clear target drops it).")

    def set_unapplied(self, problems, writer=None) -> bool:
        """Record the problems of an editor edit that could not be applied (empty: none); the window is
        dirty while there are any."""
        problems = tuple(problems)
        if problems == self._unapplied:
            return False
        self._unapplied = problems
        self._emit("document", writer)
        return True

    def mark_saved(self, path) -> None:
        changed = self._dirty or Path(path) != self._path
        self._dirty = False
        self._path = Path(path)
        if changed:
            self._emit("document")
