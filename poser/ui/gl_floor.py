"""The floor grid at z = 0 with its spacing written beside it."""

from __future__ import annotations

import pyqtgraph.opengl as gl
from PySide6.QtGui import QColor, QFont

from poser.ui import palette
from poser.ui.gl_base import ItemGroup
from poser.ui.gl_label import GLLabel


class GLFloor(ItemGroup):
    """A square grid on the world floor; ``setData(spacing, half_size, unit)``."""

    def __init__(self):
        super().__init__()
        self._grid = self._own(gl.GLGridItem(color=QColor(palette.GRID), antialias=False))
        f = QFont("DejaVu Sans", 10)
        self._label = self._own(GLLabel(pos=(0.0, 0.0, 0.0), text="", color=QColor(palette.MUTED), font=f))
        self.spacing = 1.0
        self.text = ""

    def setData(self, spacing: float, half_size: float, unit: str) -> None:
        cells = max(2, int(round(half_size / spacing)))
        size = 2 * cells * spacing
        # pyqtgraph redraws the lines on each call: the new size with the old spacing (or the other way
        # round) can mean billions of lines when the arm's size changes a lot (1e9 mm after 1 m). Go
        # through a spacing as wide as both sizes, so no step draws more than the final grid.
        big = max(size, *self._grid.size()[:2])
        self._grid.setSpacing(big, big, 1)
        self._grid.setSize(size, size, 1)
        self._grid.setSpacing(spacing, spacing, 1)
        self.spacing = spacing
        self.text = f"grid {spacing:g} {unit}"
        self._label.setData(pos=(0.55 * cells * spacing, -0.55 * cells * spacing, 0.0), text=self.text)
