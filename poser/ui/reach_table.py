"""The reach study's table: one row per target, sortable, a click makes the row's target the state's target.

:class:`ReachModel` is a ``QAbstractTableModel`` over ``state.studies.reach``; every text is
:mod:`poser.report`'s (the numbers ``poser reach`` prints), and :data:`SORT_ROLE` gives each cell a
number or word to sort by (a margin by its share of the joint's range, so turns and slides compare).
:class:`ReachView` sorts through a ``QSortFilterProxyModel``; choosing a row writes the target to the
state (through :meth:`ReachModel.target_of`), never to another panel.
"""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtCore import QAbstractTableModel, QModelIndex, QSortFilterProxyModel, Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QAbstractItemView, QHeaderView, QTableView

from poser import report
from poser.ui.studies import VERDICT_COLOURS, VERDICT_SYMBOLS

__all__ = ["ReachModel", "ReachView", "COLUMNS", "SORT_ROLE"]

COL_LINE, COL_NAME, COL_VERDICT, COL_BRANCHES, COL_BEST, COL_MARGIN, COL_MANIP, COL_MISS, COL_SPIN = range(9)
COLUMNS = ("line", "name", "verdict", "branches within limits", "best branch", "worst limit margin", "manip.",
           "miss", "spin")
SORT_ROLE = Qt.ItemDataRole.UserRole + 1
_ROOT = QModelIndex()
ORDER = {"reached": 0, "blocked by limits": 1, "out of reach": 2, "fault": 3}


def _none_last(x):
    return math.inf if x is None else float(x)


class ReachModel(QAbstractTableModel):
    """The verdicts of ``state.studies.reach`` as rows (in file order; a view sorts through a proxy)."""

    def __init__(self, state, parent=None):
        super().__init__(parent)
        self.state = state
        self.verdicts: tuple = ()
        state.studies.changed.connect(self._on_studies)
        state.changed.connect(lambda f: self.refill() if f == "arm" else None)
        self.refill()

    def _on_studies(self, field: str) -> None:
        if field in ("reach", "targets"):
            self.refill()

    def refill(self) -> None:
        r = self.state.studies.reach
        self.beginResetModel()
        self.verdicts = tuple(r.study.verdicts) if r is not None else ()
        self.endResetModel()
        self.headerDataChanged.emit(Qt.Orientation.Horizontal, 0, len(COLUMNS) - 1)

    def target_of(self, row: int):
        """The state's :class:`~poser.ui.state.Target` for row ``row``: the target's position and orientation (a
        free-spin target turned by the spin the study chose about tool Z, so the solver finds that branch)."""
        from poser.core.transforms import rot_z
        from poser.ui.state import Target

        v = self.verdicts[row]
        t = v.target
        R = None if t.R is None else (t.R @ rot_z(v.spin) if v.spin is not None else np.array(t.R))
        return Target(np.array(t.xyz, float), R)

    # -- QAbstractTableModel ------------------------------------------------------------------
    def rowCount(self, parent=_ROOT):
        return 0 if parent.isValid() else len(self.verdicts)

    def columnCount(self, parent=_ROOT):
        return 0 if parent.isValid() else len(COLUMNS)

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):
        if orientation != Qt.Orientation.Horizontal or not 0 <= section < len(COLUMNS):
            return None
        chain = self.state.chain
        u = chain.units
        if role == Qt.ItemDataRole.DisplayRole:
            return {COL_MARGIN: "worst limit margin [joint value, % of range]",
                    COL_MANIP: f"manip. [{report.manipulability_unit(chain)}]",
                    COL_MISS: f"miss [{u.length}, {u.angle}]", COL_SPIN: f"spin [{u.angle}]"}.get(section,
                                                                                             COLUMNS[section])
        if role == Qt.ItemDataRole.ToolTipRole:
            return {
                COL_LINE: "the line of the target file the target came from",
                COL_VERDICT: "● reached within limits · ✕ blocked: every branch that reaches it breaks a limit · "
                             "◇ out of reach: no configuration reaches it (the 3D view uses the same shapes)",
                COL_BRANCHES: "branches that reach the target within limits, turn variants included (as poser ik "
                              "counts them)",
                COL_BEST: "the branch with the fewest joint moves from the target before (the first from home), "
                          "so a sequence keeps one branch where it can; '(changed)' when the configuration changes",
                COL_MARGIN: "the chosen branch's joint nearest a limit: its distance to that limit in the joint's "
                            "unit and as a share of its range; sorting goes by the share",
                COL_MANIP: report.manipulability_tip(chain),
                COL_MISS: "not reached: how far the closest approach within limits stays off",
                COL_SPIN: "free-spin targets: the turn about tool Z the study chose",
            }.get(section)
        return None

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid() or not 0 <= index.row() < len(self.verdicts):
            return None
        v = self.verdicts[index.row()]
        c = index.column()
        chain = self.state.chain
        if role == Qt.ItemDataRole.DisplayRole:
            if c == COL_LINE:
                return "" if v.target.line is None else str(v.target.line)
            if c == COL_NAME:
                return report.printable(v.target.name)
            if c == COL_VERDICT:
                return f"{VERDICT_SYMBOLS.get(v.status, '?')} {v.status}"
            if c == COL_BRANCHES:
                return str(v.branches)
            if c == COL_BEST:
                return report.configuration_cell(v)
            if c == COL_MARGIN:
                return report.margin_cell(chain, v)
            if c == COL_MANIP:
                return report.manipulability_figure(chain, v.manipulability)
            if c == COL_MISS:
                return report.miss_text(chain, v.miss) if v.miss is not None else "–"
            if c == COL_SPIN:
                return report.spin_cell(chain, v.spin)
        elif role == SORT_ROLE:
            if c == COL_LINE:
                return _none_last(v.target.line)
            if c == COL_NAME:
                return report.printable(v.target.name).casefold()
            if c == COL_VERDICT:
                return ORDER.get(v.status, 9)
            if c == COL_BRANCHES:
                return int(v.branches)
            if c == COL_BEST:
                return "\uffff" if v.configuration is None else v.configuration
            if c == COL_MARGIN:
                return _none_last(v.margin_fraction)
            if c == COL_MANIP:
                return _none_last(v.manipulability)
            if c == COL_MISS:
                return _none_last(None if v.miss is None else v.miss[0])
            if c == COL_SPIN:
                return _none_last(v.spin)
        elif role == Qt.ItemDataRole.ToolTipRole:
            return report.reach_words(chain, v)
        elif role == Qt.ItemDataRole.ForegroundRole and c == COL_VERDICT:
            return QColor(VERDICT_COLOURS.get(v.status, "#000000"))
        elif role == Qt.ItemDataRole.TextAlignmentRole:
            right = c in (COL_LINE, COL_BRANCHES, COL_MANIP, COL_SPIN)
            return int((Qt.AlignmentFlag.AlignRight if right else Qt.AlignmentFlag.AlignLeft)
                       | Qt.AlignmentFlag.AlignVCenter)
        return None


class ReachView(QTableView):
    """The sortable reach table; selecting a row (click, arrow keys) makes its target the state's target."""

    def __init__(self, state, parent=None):
        super().__init__(parent)
        self.state = state
        self.source = ReachModel(state, self)
        self.proxy = QSortFilterProxyModel(self)
        self.proxy.setSourceModel(self.source)
        self.proxy.setSortRole(SORT_ROLE)
        self.setModel(self.proxy)
        self.setSortingEnabled(True)
        self.sortByColumn(COL_LINE, Qt.SortOrder.AscendingOrder)
        self.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.setWordWrap(False)
        self.setAlternatingRowColors(True)
        self.verticalHeader().setVisible(False)
        self.verticalHeader().setDefaultSectionSize(self.fontMetrics().lineSpacing() + 6)
        hh = self.horizontalHeader()
        hh.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        hh.setStretchLastSection(True)
        self.setAccessibleName("reach study targets")
        self.selectionModel().currentRowChanged.connect(lambda cur, _prev: self._choose(cur))
        self.clicked.connect(self._choose)
        self.source.modelReset.connect(self._fit)

    def _fit(self) -> None:
        self.resizeColumnsToContents()
        for c in range(self.proxy.columnCount()):
            self.setColumnWidth(c, min(self.columnWidth(c), 220))

    def source_row(self, view_row: int) -> int:
        return self.proxy.mapToSource(self.proxy.index(view_row, 0)).row()

    def _choose(self, index) -> None:
        if not index.isValid():
            return
        row = self.proxy.mapToSource(index).row()
        if 0 <= row < len(self.source.verdicts):
            self.state.set_target(self.source.target_of(row), writer=self)
