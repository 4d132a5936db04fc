"""The results of inverse kinematics: what a branch, a family and a whole solve carry.

Plain data (frozen dataclasses), built through their constructors.  Joint
values and limits are in internal units (rad for revolute joints, the arm's
length unit for prismatic ones); lengths in the arm's length unit.  No
sentences: :mod:`poser.report` words a result for the command line and the
window alike.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Violation", "Family", "Branch", "IKResult", "BatchResult", "SOLVED", "FAULT", "default_tolerance",
           "POSITION_TOLERANCE", "ORIENTATION_TOLERANCE"]

POSITION_TOLERANCE = 1e-6
"""A pose reaches a target when its tool point is within this fraction of the arm's size (:attr:`Chain.scale`)."""
ORIENTATION_TOLERANCE = 1e-6
"""… and its tool orientation within this angle (rad)."""


def default_tolerance(chain) -> tuple[float, float]:
    """(position in the arm's length unit, orientation in rad) within which a pose reaches a target:
    the defaults of :func:`poser.core.ik.solve`, the reach study and the digits Poser prints."""
    return POSITION_TOLERANCE * chain.scale, ORIENTATION_TOLERANCE

SOLVED = "solved"
FAULT = "fault"


@dataclass(frozen=True)
class Violation:
    """A joint beyond one of its limits (internal units; ``excess`` > 0)."""

    joint: int
    name: str
    side: str  # "lower" | "upper"
    limit: float
    value: float
    excess: float


@dataclass(frozen=True)
class Family:
    """A branch that is a whole family of solutions (self-motion): the target leaves something free.

    Attributes
    ----------
    kind : {"joint", "turn", "orientation", "self-motion"}
        ``joint``: the value of one or more joints is free (a singular target: joint 1 with the wrist
        centre on its axis, the first wrist joint with the wrist axes aligned — the last one follows —,
        the upper-arm twist of a seven-axis arm); ``turn``: the tool's turn about the axes of a planar
        or table arm (a position-only target); ``orientation``: the tool's whole orientation (a
        position-only target on an arm that could set it); ``self-motion``: a redundant arm's motion
        found by the numerical solver.
    free : tuple of str
        What is free, in words: joint names, ``"tool turn"`` or ``"tool orientation"``.
    joints : tuple of int
        The joints whose values parametrise the family (for ``joint``).
    follows : tuple of int
        The other joints that move along the family.
    ranges : tuple of tuple, or None
        For each parameter joint (``joint``) or the turn (``turn``): the intervals ``(lo, hi)`` (internal
        units; the joint's own values) over which members stay within every joint's limits; empty when
        none does.  None where the family has more than one dimension that is not a joint (orientation).
    fraction : float
        The fraction of the members sampled that stay within limits (0 to 1).
    samples : int
        How many members were examined.
    complete : bool
        False when the search was cut short (a time guard); then ``ranges`` may miss members.
    """

    kind: str
    free: tuple
    joints: tuple = ()
    follows: tuple = ()
    ranges: tuple | None = None
    fraction: float = 0.0
    samples: int = 0
    complete: bool = True

    @property
    def within_limits(self) -> bool:
        """Some member of the family stays within every joint's limits."""
        return self.fraction > 0.0


@dataclass(frozen=True)
class Branch:
    """One inverse-kinematics solution (or the representative of a family of them).

    Attributes
    ----------
    q : ndarray, shape (n,)
        Joint values, internal units (read-only).
    label : str
        Configuration words and extra turns, e.g. "shoulder front · elbow up · wrist not flipped · J6 +1 turn".
    configuration : str
        The words without extra turns: turn variants of one configuration share it.
    turns : tuple of int
        Extra full turns per joint relative to the value in (-180°, 180°].
    within_limits : bool
        Every joint within its limits (for a family: its representative, chosen within limits where any member is).
    violations : tuple of Violation
    position_error : float
        Distance of the tool point from the target, arm length unit.
    orientation_error : float
        Angle between the tool orientation and the target's, rad (0.0 for position-only).
    manipulability : float
        :func:`poser.core.jacobian.manipulability` (unit ``task_space(chain).unit(length)``; 0 at a
        singularity).  Its condition number: :func:`poser.core.jacobian.condition_number` of ``q``.
    distance : float or None
        Joint-space distance from ``near`` (revolute in rad and prismatic in length units, each
        part separately: see :attr:`distance_parts`); None without ``near``.
    distance_parts : tuple of float or None
        (revolute part in rad, prismatic part in length unit) of the distance from ``near``.
    reaches : bool
        Both errors within tolerance.
    family : Family or None
        None for an isolated solution.
    variants : int
        How many turn variants within limits its configuration has (itself included; 1 without extra turns).
    """

    q: np.ndarray
    label: str
    configuration: str
    turns: tuple
    within_limits: bool
    violations: tuple
    position_error: float
    orientation_error: float
    manipulability: float
    distance: float | None
    reaches: bool
    distance_parts: tuple | None = None
    family: Family | None = None
    variants: int = 1


@dataclass(frozen=True)
class IKResult:
    """Everything :func:`poser.core.ik.solve` found for one target.

    Attributes
    ----------
    status : {"solved", "fault"}
        ``fault``: the solver broke on this input (a defect); there is no verdict on reach, and
        ``fault`` says what broke.
    solver : str
        ``"closed-form: <structure>"`` or ``"numerical"`` (``"none"`` on a fault).
    branches : tuple of Branch
        Reaching and within limits first, then reaching beyond a limit, then the configurations
        that do not reach; within each group nearest ``near`` (or home) first.
    reachable : bool
        Some branch reaches within tolerance and within limits.
    closest : Branch or None
        The closest approach within limits when not reachable: the nearest position first, then
        the nearest orientation there.
    nearest_point : ndarray (3,) or None
        The tool position of ``closest`` when it misses the position (it is reachable within limits).
    nearest_rotation : ndarray (3, 3) or None
        The tool orientation at ``nearest_point`` (typing both back in reaches).
    position_only : bool
    redundant : bool
        The arm has more joints than the task needs: branches are families.
    tolerance : tuple of float
        (position in length unit, orientation in rad).
    complete : bool
        False when a time guard cut the search (the result may miss branches).
    total : int
        Every branch found, turn variants counted exactly (listed or not).
    unlisted : int
        How many of them are not in ``branches`` (a listing shortened; the nearest to ``near`` stay).
    fault : str or None
        What broke, when ``status`` is ``"fault"``.
    xyz, R : ndarray
        The target as solved (R None for position-only).
    """

    status: str
    solver: str
    branches: tuple
    reachable: bool
    closest: Branch | None
    nearest_point: np.ndarray | None
    nearest_rotation: np.ndarray | None
    position_only: bool
    redundant: bool
    tolerance: tuple
    complete: bool = True
    total: int = 0
    unlisted: int = 0
    fault: str | None = None
    xyz: np.ndarray | None = None
    R: np.ndarray | None = None

    @property
    def method(self) -> str:
        """``"closed form"``, ``"numerical"`` or ``"none"``."""
        return "closed form" if self.solver.startswith("closed") else self.solver


@dataclass(frozen=True)
class BatchResult:
    """Closed-form branches for many targets (no labels, no extra turns, no families).

    Attributes
    ----------
    q : ndarray (N, B, n)
        Joint values, internal units; revolute values moved into their range by full turns where possible.
    exact : ndarray (N, B) of bool
        Every subproblem had an exact solution (the branch reaches the target).
    within_limits : ndarray (N, B) of bool
    free : ndarray (N, B, n) of bool
        Joints the target leaves free (their value is then the one from ``near``: a family).
    """

    q: np.ndarray
    exact: np.ndarray
    within_limits: np.ndarray
    free: np.ndarray
