"""A table that asks for little height, so a panel in a scroll area grows it instead of scrolling past it."""

from __future__ import annotations

from PySide6.QtCore import QSize
from PySide6.QtWidgets import QTableWidget


class CompactTable(QTableWidget):
    """QTableWidget whose preferred height is ``rows`` rows (Qt's default is 192 px).

    A panel with wrapped labels inside a resizable QScrollArea is given its preferred height for
    the width (height-for-width), not its minimum; a table preferring 192 px then pushes the
    controls below it out of sight.  With a small preference the table still takes every spare
    pixel (it has the layout's stretch), and scrolls its own rows.
    """

    def __init__(self, rows: int, columns: int, preferred_rows: int = 4, parent=None):
        super().__init__(rows, columns, parent)
        self.preferred_rows = preferred_rows

    def sizeHint(self) -> QSize:
        hint = super().sizeHint()
        header = self.horizontalHeader().sizeHint().height()
        rows = self.preferred_rows * self.verticalHeader().defaultSectionSize()
        hint.setHeight(header + rows + 2 * self.frameWidth())
        return hint
