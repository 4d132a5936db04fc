"""How close a pose is to a singularity, and which kind it is.

The verdict comes from the dimensionless condition number of the task-space
Jacobian (:func:`poser.core.jacobian.condition_number`): *at* a singularity
when it is infinite (to rounding), *near* one above :data:`NEAR_CONDITION`.
The kind is read off the arm's anatomy (:mod:`poser.core.anatomy`), with the
joints involved:

* ``wrist`` — the wrist axes are aligned: the first and last wrist joints turn about one line,
  only their sum (or difference) is determined;
* ``shoulder`` — the wrist point is on the base axis, so joint 1 cannot move it (detail ``"axis"``);
  or, with a sideways shoulder offset, in the plane of the base axis and the shoulder axis, where
  joint 1 moves it only along a direction the other joints also give (``"plane"``); or, on arms
  without a shoulder (a cylindrical arm), the tool point is on the base axis (``"tool"``; arms of up to
  four joints, whose wrist point is the tool point, give ``"tool"`` and ``"tool plane"``);
* ``elbow`` — shoulder, elbow and wrist points in one line: the arm is stretched out or folded
  back (the edge of the workspace);
* ``generic`` — any other loss of rank; the joints are those that take part in the lost motion
  (the right singular vector of the smallest singular value).

Facts of the trade (Siciliano et al., *Robotics: Modelling, Planning and Control*, §3.3;
Spong, Hutchinson & Vidyasagar, *Robot Modeling and Control*, ch. 4).  No sentences here:
:mod:`poser.report` words these findings.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poser.core.anatomy import anatomy, points_at
from poser.core.fk import frames
from poser.core.jacobian import (
    _axes_from_frames,
    _is_singular,
    _scale_task,
    jacobian_from_frames,
    manipulability,
    task_space,
)

__all__ = ["Singularity", "Finding", "assess", "NEAR_CONDITION"]

NEAR_CONDITION = 80.0
"""Above this dimensionless condition number a pose is near a singularity (small tool moves need large joint moves)."""

AT_MEASURE = 1e-6
"""A geometric measure (sine of an angle, or a distance ÷ the arm's size) below this is exactly singular."""

NEAR_MEASURE = 0.05
"""A geometric measure below this names the kind of a nearby singularity."""


@dataclass(frozen=True)
class Finding:
    """One kind of singularity found at a pose.

    Attributes
    ----------
    kind : {"wrist", "shoulder", "elbow", "generic"}
    joints : tuple of int
        The joints involved (0-based).
    measure : float
        How far from exact: sine of the wrist bend, or a distance ÷ the arm's size (0 = exact);
        for ``generic`` the smallest dimensionless singular value over the largest.
    detail : str
        ``"stretched"`` / ``"folded"`` for the elbow, else ``""``.
    """

    kind: str
    joints: tuple
    measure: float
    detail: str = ""


@dataclass(frozen=True)
class Singularity:
    """The singularity verdict of one pose.

    Attributes
    ----------
    level : {"clear", "near", "at"}
    condition : float
        Dimensionless condition number of the task-space Jacobian (inf at a singularity).
    manipulability : float
        :func:`poser.core.jacobian.manipulability`, in ``task_space(chain).unit(length)``.
    findings : tuple of Finding
        The kinds present (empty when clear), nearest first.
    """

    level: str
    condition: float
    manipulability: float
    findings: tuple


def _measures(chain, F):
    """(kind, joints, measure, detail) for each anatomical kind the arm has, at frames F (n + 2, 4, 4)."""
    an = anatomy(chain)
    out = []
    L = chain.scale
    if an.kind == "other":
        if chain.n >= 2 and chain.revolute[0]:  # e.g. a cylindrical arm: the tool point on the base axis
            h = F[-1, :3, 3] - an.base_o
            h = h - an.base_w * float(an.base_w @ h)
            out.append(("shoulder", (0,), float(np.linalg.norm(h)) / L, "tool"))
        return out
    W = points_at(an, F, "wrist")
    if an.wrist_spherical:
        i4, i5, i6 = an.wrist_joints
        _, ax = _axes_from_frames(chain, F)
        out.append(("wrist", (i4, i6), float(np.linalg.norm(np.cross(ax[i4], ax[i6]))), ""))
    if an.kind == "spatial":
        h = W - an.base_o
        h = h - an.base_w * float(an.base_w @ h)
        f = points_at(an, F, "facing")
        # on the axis, or (a sideways shoulder offset) beside it in the plane of the base and shoulder axes
        side = "axis" if float(np.linalg.norm(h)) <= NEAR_MEASURE * L else "plane"
        if chain.n <= 4:  # no wrist: the point is the tool's
            side = "tool" if side == "axis" else "tool plane"
        out.append(("shoulder", (0,), abs(float(h @ f)) / L, side))
    if an.elbow is not None and not an.elbow_prismatic:
        S, E = points_at(an, F, "shoulder"), points_at(an, F, "elbow")
        d, v = W - S, E - S
        if an.axis is not None:  # planar: in the plane of motion (a slide along the axes moves W out of it)
            d, v = d - an.axis * float(an.axis @ d), v - an.axis * float(an.axis @ v)
        dd = float(d @ d)
        if dd > 1e-24 * L * L:
            pe = v - d * (float(v @ d) / dd)
            folded = float(v @ (d - v)) < 0
            joints = (an.elbow_joint,) if an.kind == "spatial" else (1,)
            out.append(("elbow", joints, float(np.linalg.norm(pe)) / L, "folded" if folded else "stretched"))
    return out


def assess(chain, q) -> Singularity:
    """The singularity verdict of one pose ``q`` (n,), internal units."""
    q = np.asarray(chain.check_q(q), float).reshape(chain.n)
    F = frames(chain, q)
    J = jacobian_from_frames(chain, F)
    A = _scale_task(chain, task_space(chain).rows @ J)
    U, s, Vt = np.linalg.svd(A)
    r = task_space(chain).rank
    s = s[:r]
    singular = bool(_is_singular(s))
    cond = float("inf") if singular else float(s[0] / s[-1])
    man = manipulability(chain, J=J)
    level = "at" if singular else ("near" if cond > NEAR_CONDITION else "clear")
    findings = []
    if level != "clear":
        limit = AT_MEASURE if level == "at" else NEAR_MEASURE
        for kind, joints, m, detail in sorted(_measures(chain, F), key=lambda x: x[2]):
            if m <= limit:
                findings.append(Finding(kind, tuple(int(j) for j in joints), m, detail))
        if not findings:
            v = np.abs(Vt[r - 1]) if r <= Vt.shape[0] else np.abs(Vt[-1])
            joints = tuple(int(i) for i in np.flatnonzero(v >= 0.3 * v.max()))
            findings.append(Finding("generic", joints, float(s[-1] / s[0]) if s[0] > 0 else 0.0))
    return Singularity(level, cond, float(man), tuple(findings))
