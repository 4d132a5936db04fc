"""IK branches as translucent ghost arms; the hovered or selected one is drawn stronger.

Every faint ghost goes into one :class:`~poser.ui.gl_arm.GLArm` (three meshes in all, however many
branches there are), so a dozen branches cost software OpenGL little more than one.
"""

from __future__ import annotations

import numpy as np

from poser.ui import geometry, palette
from poser.ui.gl_arm import GLArm
from poser.ui.gl_base import ItemGroup

MAX_GHOSTS = 24


def combine(drawings) -> geometry.ArmDrawing | None:
    """One drawing holding the bodies of several (frames are the first one's); None for none."""
    drawings = list(drawings)
    if not drawings:
        return None
    return geometry.ArmDrawing(
        segments=np.concatenate([d.segments for d in drawings]).reshape(-1, 2, 3),
        joint_origins=np.concatenate([d.joint_origins for d in drawings]).reshape(-1, 3),
        joint_axes=np.concatenate([d.joint_axes for d in drawings]).reshape(-1, 3),
        kinds=tuple(k for d in drawings for k in d.kinds),
        frames=drawings[0].frames,
    )


class GLGhosts(ItemGroup):
    """``setData(drawings, radius, strong)``: faint ghosts for all, a strong one for index ``strong``."""

    def __init__(self):
        super().__init__()
        ghost = {"link": palette.GHOST, "revolute": palette.GHOST, "prismatic": palette.GHOST}
        strong = {"link": palette.GHOST_HOVER, "revolute": palette.GHOST_HOVER, "prismatic": palette.GHOST_HOVER}
        self._faint = GLArm(alpha=0.22, axes=False, colours=ghost)
        self._strong = GLArm(alpha=0.55, axes=False, colours=strong)
        self.items += self._faint.items + self._strong.items
        self.count = 0
        self.strong = -1

    def add_to(self, view) -> None:
        super().add_to(view)
        self._faint._view = view
        self._strong._view = view

    def set_visible(self, on: bool) -> None:
        self._visible = bool(on)
        self._faint.set_visible(on and self.count > (1 if self.strong >= 0 else 0))
        self._strong.set_visible(on and self.strong >= 0)

    def setData(self, drawings, radius: float, strong: int = -1) -> None:
        drawings = list(drawings)[:MAX_GHOSTS]
        self.count = len(drawings)
        self.strong = strong if 0 <= strong < len(drawings) else -1
        faint = combine(d for k, d in enumerate(drawings) if k != self.strong)
        if faint is not None:
            self._faint.setData(faint, radius * 0.9)
        if self.strong >= 0:
            self._strong.setData(drawings[self.strong], radius * 0.95)
        self.set_visible(self._visible)
