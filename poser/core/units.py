"""Units of length and angle.

The core keeps lengths in the arm's own length unit (kinematics is linear in
length, so nothing is converted) and angles in radians.  What a user sees or
types is in the arm's units; :class:`Units` converts joint values between the
two at the edges (command line, window).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from poser.core.errors import PoserValueError

LENGTH_UNITS = {"mm": 1e-3, "m": 1.0, "in": 0.0254}
"""Length units an arm may use, with their size in metres."""

ANGLE_UNITS = {"deg": math.pi / 180.0, "rad": 1.0}
"""Angle units an arm may use, with their size in radians."""


@dataclass(frozen=True)
class Units:
    """The arm's units: ``length`` in :data:`LENGTH_UNITS`, ``angle`` in :data:`ANGLE_UNITS`."""

    length: str = "mm"
    angle: str = "deg"

    def __post_init__(self):
        if self.length not in LENGTH_UNITS:
            raise PoserValueError(f"length unit must be one of {sorted(LENGTH_UNITS)}, got {self.length!r}")
        if self.angle not in ANGLE_UNITS:
            raise PoserValueError(f"angle unit must be one of {sorted(ANGLE_UNITS)}, got {self.angle!r}")

    @property
    def angle_to_rad(self) -> float:
        """Factor taking an angle in this unit to radians."""
        return ANGLE_UNITS[self.angle]

    def angle_in(self, value):
        """Angle(s) in this unit → radians."""
        return np.asarray(value, dtype=float) * self.angle_to_rad if self.angle != "rad" else np.asarray(value, float)

    def angle_out(self, value):
        """Angle(s) in radians → this unit."""
        return np.degrees(value) if self.angle == "deg" else np.asarray(value, dtype=float)

    def joint_unit(self, kind: str) -> str:
        """Unit label of a joint value: the angle unit for revolute, the length unit for prismatic."""
        return self.angle if kind == "revolute" else self.length

    def metres(self, length):
        """Length(s) in this unit → metres."""
        return np.asarray(length, dtype=float) * LENGTH_UNITS[self.length]
