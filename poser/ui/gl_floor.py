"""The floor grid at z = 0 with its spacing written beside it."""

from __future__ import annotations

import pyqtgraph.opengl as gl
from PySide6.QtGui import QColor

from poser.ui import palette
from poser.ui.gl_base import ItemGroup, as_size
from poser.ui.gl_labels import label_font


class GLFloor(ItemGroup):
    """A square grid on the world floor; ``setData(spacing=, half_size=, unit=)`` (positional too).

    ``layer`` (a :class:`~poser.ui.gl_labels.GLLabelLayer`) receives the grid's label; without one the
    text is kept in :attr:`text` only.
    """

    def __init__(self, layer=None):
        super().__init__()
        self._grid = self._own(gl.GLGridItem(color=QColor(palette.GRID), antialias=False))
        self._label = None
        if layer is not None:
            self._label = self._own_label(layer.new_label("note", palette.MUTED, label_font(10, bold=False)))
        self.spacing = 1.0
        self.half_size = 1.0
        self.text = ""

    def setData(self, spacing: float, half_size: float, unit: str) -> None:
        spacing = as_size("spacing", spacing)
        half_size = as_size("half_size", half_size)
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
        self.half_size = cells * spacing
        self.text = f"grid {spacing:g} {unit}"
        if self._label is not None:
            self._label.setData(pos=(0.55 * cells * spacing, -0.55 * cells * spacing, 0.0), text=self.text)
