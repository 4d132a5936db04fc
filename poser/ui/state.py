"""The one shared state of the posing window.

:class:`PoseState` holds the arm, the joint values, the target, the solved
branches, the selected and hovered branch and the display options.  It emits
``changed(field)`` only when a field really changes.  Panels observe it and
write to it; none talks to another.  A panel that writes back blocks its own
echo (it checks :attr:`PoseState.writer` or compares values).

Joint values are kept in internal units (rad / length unit) as the core
uses them; conversions to the arm's units happen in the panels.
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
from poser.ui import geometry

__all__ = ["PoseState", "Target", "FIELDS", "DEFAULT_OPTIONS"]

FIELDS = ("arm", "q", "target", "ik", "selected", "hovered", "options", "document")
"""Names ``PoseState.changed`` carries."""

DEFAULT_OPTIONS = {
    "show_frames": False,  # a triad at every joint frame
    "show_trail": True,  # the tool point's trail
    "show_ghosts": True,  # IK branches as ghost arms
    "margin": 0.05,  # amber within this fraction of a joint's range from a limit
    "step": 1.0,  # arrow-key nudge of a revolute joint, in the arm's angle unit
    "step_length": 1.0,  # arrow-key nudge of a prismatic joint, in the arm's length unit
    "live_solve": True,
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


class PoseState(QObject):
    """Everything the window shows, in one place (see the module docstring)."""

    changed = Signal(str)

    def __init__(self, spec: ArmSpec, path: str | Path | None = None, parent=None):
        super().__init__(parent)
        self._spec = spec
        self._chain = spec.to_chain()
        self._path = Path(path) if path else None
        self._dirty = False
        self._q = self._chain.home.copy()
        self._target: Target | None = None
        self._ik = None
        self._selected = -1
        self._hovered = -1
        self._options = dict(DEFAULT_OPTIONS)
        self._options.update(default_steps(self._chain.units))
        self._cache: dict = {}
        self.writer: object | None = None  # the panel whose write is being broadcast (for echo guards)

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
        return self._dirty

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

    def drawing(self) -> geometry.ArmDrawing:
        return self._cached("drawing", lambda: geometry.arm_drawing(self._chain, self._q))

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
        return report.limit_states(self._chain, self._q, self._options["margin"])

    # -- writing ----------------------------------------------------------------------
    def _emit(self, field: str, writer=None):
        prev = self.writer
        self.writer = writer
        try:
            self.changed.emit(field)
        finally:
            self.writer = prev

    def _drop_cache(self, keep_scale: bool = True):
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

    def set_ik(self, result, writer=None) -> bool:
        """Store an IK result (or None); clears the selection and the hover."""
        if result is self._ik:
            return False
        self._ik = result
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
        stays; otherwise the arm goes home.  The target stays, the branches go.
        ``path=...`` keeps the current file; ``dirty`` marks unsaved edits.
        Raises :class:`poser.armfile.ArmFileError` for an invalid spec; the state
        is then unchanged.
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
        # the same arm read again from its file is another document: whoever keeps its tables must know
        doc_changed |= getattr(spec, "_doc", None) is not getattr(self._spec, "_doc", None)
        same_arm = chain == self._chain
        self._spec = spec
        if not same_arm:
            old_user = self.q_user if chain.n == self._chain.n else None
            if chain.units != self._chain.units:
                self._options.update(default_steps(chain.units))
            self._chain = chain
            self._drop_cache(keep_scale=False)
            if old_user is not None:
                q = np.clip(chain.q_from_user(old_user), chain.lower, chain.upper)
            else:
                q = chain.home.copy()
            self._q = q
            self._emit("arm", writer)
            self._ik = None
            self._selected = self._hovered = -1
            self._emit("ik", writer)
        if doc_changed:
            self._emit("document", writer)
        return not same_arm or doc_changed

    def mark_saved(self, path) -> None:
        changed = self._dirty or Path(path) != self._path
        self._dirty = False
        self._path = Path(path)
        if changed:
            self._emit("document")
