"""Inverse kinematics: every branch that puts the tool at a target, with its limits, families and name.

    result = solve(chain, xyz, R=None, near=None)

``xyz`` is the world position of the tool point (arm length unit), ``R`` the
world orientation of the tool coordinate system (3 x 3) or None for a
position-only solve, ``near`` the present joint values (internal units).  The
result (:class:`IKResult`) lists every distinct branch (:class:`Branch`):
joint values, limit verdict with the violations, position and orientation
error, manipulability, configuration words, distance from ``near``, and — for
a family of solutions (:class:`Family`: a singular target, a position-only
target, a redundant arm) — what is free and over which range it stays within
limits.  :func:`solve_batch` is the vectorised closed form for many targets.

Modules: :mod:`.result` (the types), :mod:`.pipeline` (``solve``),
:mod:`.closed` (structure recognition and the closed forms, one description
generated into a plain-float and a numpy kernel), :mod:`.numeric` (damped
least squares), :mod:`.families`, :mod:`.turns` (placing values in range,
turn variants, the limit verdict), :mod:`.evaluate`, :mod:`.labels`,
:mod:`.closest` (the closest approach within limits).
"""

from __future__ import annotations

from poser.core.ik.batch import BATCH_CHUNK, solve_batch
from poser.core.ik.closed import recognise as structure_of
from poser.core.ik.pipeline import OPTIONS, solve
from poser.core.ik.result import FAULT, SOLVED, BatchResult, Branch, Family, IKResult, Violation

__all__ = ["solve", "solve_batch", "structure_of", "IKResult", "Branch", "Family", "Violation", "BatchResult",
           "OPTIONS", "SOLVED", "FAULT", "BATCH_CHUNK"]
