"""One batched evaluation of candidate configurations: errors, manipulability, words.

Every candidate branch is judged by the same quantities from their one homes:
the frames (:func:`poser.core.fk.frames`), the Jacobian
(:func:`poser.core.jacobian.jacobian_from_frames`), manipulability
(:func:`poser.core.jacobian.manipulability`), the orientation
error (:func:`poser.core.transforms.rotation_error`) and the configuration
words (:func:`poser.core.ik.labels.describe`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poser.core.fk import frames
from poser.core.ik import labels
from poser.core.jacobian import jacobian_from_frames, manipulability
from poser.core.transforms import rotation_error

__all__ = ["Evaluation", "evaluate", "orientation_errors"]


@dataclass(frozen=True)
class Evaluation:
    """The quantities of K configurations (each a list of K Python floats or strings)."""

    position_error: list
    orientation_error: list
    manipulability: list
    words: list
    tool: np.ndarray  # (K, 4, 4)


def orientation_errors(chain, Q, R):
    """Angle (K,) rad between the tool orientation of configurations Q (K, n) and R (3, 3)."""
    return rotation_error(frames(chain, Q)[:, -1, :3, :3], R)


def evaluate(chain, Q, xyz, R) -> Evaluation:
    """Evaluate configurations ``Q`` (K, n) against the target ``xyz`` (3,), ``R`` (3, 3) or None."""
    F = frames(chain, Q)
    T = F[:, -1]
    pe = np.sqrt(np.sum((T[:, :3, 3] - xyz) ** 2, axis=1))
    oe = np.zeros(len(Q)) if R is None else rotation_error(T[:, :3, :3], R)
    man = manipulability(chain, J=jacobian_from_frames(chain, F))
    return Evaluation(pe.tolist(), oe.tolist(), np.atleast_1d(man).tolist(), labels.describe(chain, Q, F), T)
