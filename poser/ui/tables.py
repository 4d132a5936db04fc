"""Tables of the window: a compact table widget, and the branch list's model (one model, any number of rows).

:class:`BranchModel` is the branch list: a ``QAbstractItemModel`` over the
state's IK result, grouped into a tree — one top row per configuration
(its best branch), the configuration's turn variants as its children.  A
family (:class:`poser.core.ik.Family`) is one row.  Texts come from
:mod:`poser.report` (the CLI's functions and digits) and are made once per
result (:func:`poser.ui.words.branch_rows`, on the solver's worker thread);
the largest move from the present pose is the only text that follows the
arm, computed for the rows Qt asks for and announced per column
(:meth:`BranchModel.moves_changed`), so no other cell is rewritten.
"""

from __future__ import annotations

from PySide6.QtCore import QAbstractItemModel, QModelIndex, QSize, Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QTableWidget

from poser import report
from poser.ui import palette
from poser.ui.words import group_branches, move_cell, variant_label

__all__ = ["CompactTable", "BranchModel", "COLUMNS"]


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


# -- the model ------------------------------------------------------------------------------------------------

COLUMNS = ("#", "branch / joints", "limits", "manip.", "move")
"""Column titles (units are added: ``branch / joints [deg]``, ``manip. [mm³]``).  Every row has two lines:
the label over the joint values, the verdict over its reason, the figure over its singularity words."""
COL_NUMBER, COL_LABEL, COL_LIMITS, COL_MANIP, COL_MOVE = range(len(COLUMNS))
_TOP = 0  # internalId of a top-level row; children carry their group's index + 1
_ROOT = QModelIndex()

_RIGHT = Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignTop
_LEFT = Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop
_HOVER_SHADE = QColor(palette.GHOST_HOVER)
_HOVER_SHADE.setAlpha(40)  # the hovered ghost's colour, faint: the row and its ghost go together


class BranchModel(QAbstractItemModel):
    """The state's branches as a tree: configurations at the top, their other turn variants below.

    ``Qt.UserRole`` of any index gives the branch's index in ``state.branches``.
    """

    BRANCH = Qt.ItemDataRole.UserRole

    def __init__(self, state, parent=None):
        super().__init__(parent)
        self.state = state
        self.rows: tuple = ()
        self.groups: list[list[int]] = []
        self._where: dict = {}  # branch index → (group, position in the group)
        self._moves: dict = {}
        self.hovered = -1  # the branch under the pointer (its row is shaded: the ghost in the view is this one)
        self.header_tips = {
            COL_NUMBER: "branch number (the same as poser ik's and the ghost's label); '+8' under it: eight more "
                        "branches of this configuration (turn variants), listed when the row is opened "
                        "(Right arrow, or click the triangle)",
            COL_LIMITS: "yes when every joint is inside its limits; otherwise NO and the joint furthest beyond a limit",
            COL_MOVE: "largest move: the largest single joint move from the present pose (turns and slides apart "
                      "on an arm with both joint kinds)",
        }

    # -- filling ----------------------------------------------------------------------------------------
    def reset(self, rows, shown) -> None:
        """Show ``rows`` (:func:`branch_rows` of the state's result) for the branch indices ``shown``."""
        self.beginResetModel()
        self.rows = tuple(rows)
        self.groups = group_branches(self.state.branches, shown) if self.rows else []
        self._where = {i: (g, k) for g, members in enumerate(self.groups) for k, i in enumerate(members)}
        self._moves = {}
        self.hovered = int(self.state.hovered)
        self.endResetModel()

    def set_hovered(self, branch: int) -> None:
        """Shade the row of ``branch`` (-1: none); only the rows whose shade changes are announced."""
        old, self.hovered = self.hovered, int(branch)
        for b in {old, self.hovered} - {-1}:
            first = self.index_of(b, 0)
            if first.isValid():
                self.dataChanged.emit(first, self.index_of(b, len(COLUMNS) - 1), [Qt.ItemDataRole.BackgroundRole])

    def moves_changed(self) -> None:
        """The present pose moved: only the largest-move column changes (no other cell is announced)."""
        self._moves = {}
        if not self.groups:
            return
        self.dataChanged.emit(self.index(0, COL_MOVE), self.index(len(self.groups) - 1, COL_MOVE),
                              [Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.ToolTipRole])
        for g, members in enumerate(self.groups):
            if len(members) > 1:
                parent = self.index(g, 0)
                self.dataChanged.emit(self.index(0, COL_MOVE, parent), self.index(len(members) - 2, COL_MOVE, parent),
                                      [Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.ToolTipRole])

    # -- lookups ------------------------------------------------------------------------------------------
    def branch_of(self, index: QModelIndex) -> int:
        """The branch index (into ``state.branches``) of a model index; -1 for none."""
        if not index.isValid():
            return -1
        gid = index.internalId()
        if gid == _TOP:
            return self.groups[index.row()][0]
        return self.groups[gid - 1][index.row() + 1]

    def index_of(self, branch: int, column: int = 0) -> QModelIndex:
        """The model index of branch ``branch`` (invalid when it is filtered out)."""
        where = self._where.get(branch)
        if where is None:
            return QModelIndex()
        g, k = where
        if k == 0:
            return self.index(g, column)
        return self.index(k - 1, column, self.index(g, 0))

    # -- QAbstractItemModel -----------------------------------------------------------------------------------
    def index(self, row, column, parent=_ROOT):
        if not self.hasIndex(row, column, parent):
            return QModelIndex()
        if not parent.isValid():
            return self.createIndex(row, column, _TOP)
        return self.createIndex(row, column, parent.row() + 1)

    def parent(self, *args):
        if not args:  # QObject.parent()
            return super().parent()
        index = args[0]
        if not index.isValid() or index.internalId() == _TOP:
            return QModelIndex()
        return self.createIndex(index.internalId() - 1, 0, _TOP)

    def rowCount(self, parent=_ROOT):
        if not parent.isValid():
            return len(self.groups)
        if parent.internalId() == _TOP and parent.column() == 0:
            return len(self.groups[parent.row()]) - 1
        return 0

    def columnCount(self, parent=_ROOT):
        return len(COLUMNS)

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):
        if orientation != Qt.Orientation.Horizontal:
            return None
        chain = self.state.chain
        if role == Qt.ItemDataRole.DisplayRole:
            if section == COL_MANIP:
                return f"manip. [{report.manipulability_unit(chain)}]"
            if section == COL_LABEL:
                return f"branch / joints [{joint_units(chain)}]"
            return COLUMNS[section]
        if role == Qt.ItemDataRole.ToolTipRole:
            if section == COL_MANIP:
                return report.manipulability_tip(chain) + " 'singular' or 'near singular' under the figure."
            if section == COL_LABEL:
                return ("how the arm is set up in this branch, and under it every joint's value in the arm's units ("
                        + ", ".join(f"{report.printable(n)} [{chain.units.joint_unit(k)}]"
                                    for n, k in zip(chain.names, chain.kinds))
                        + "); Ctrl+C or 'Copy joints' copies them as one line")
            return self.header_tips.get(section)
        return None

    def flags(self, index):
        if not index.isValid():
            return Qt.ItemFlag.NoItemFlags
        return Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable

    def _move(self, i: int) -> tuple[str, str]:
        if i not in self._moves:
            st = self.state
            self._moves[i] = move_cell(st.chain, st.q, st.branches[i].q)
        return self._moves[i]

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        i = self.branch_of(index)
        if role == self.BRANCH:
            return i
        if not 0 <= i < len(self.rows):
            return None
        row = self.rows[i]
        c = index.column()
        if role == Qt.ItemDataRole.DisplayRole:
            if c == COL_NUMBER:
                g, k = self._where[i]
                more = len(self.groups[g]) - 1
                return f"{row.number}\n+{more}" if k == 0 and more else f"{row.number}\n"
            if c == COL_LABEL:
                if self._where[i][1]:  # a turn variant under its configuration: what differs first
                    return f"{variant_label(row)}\n{row.joints}"
                return f"{row.label}\n{row.joints}"
            if c == COL_LIMITS:
                verdict, _, why = row.limits.partition(": ")
                return f"{verdict}\n{why}"
            if c == COL_MANIP:
                figure, _, words = row.manip.partition(" ")
                return f"{figure}\n{words}"
            if c == COL_MOVE:
                cell = self._move(i)[0]
                return cell.replace("; ", "\n") if "; " in cell else f"{cell}\n"
        elif role == Qt.ItemDataRole.ToolTipRole:
            if c == COL_NUMBER:
                g, k = self._where[i]
                more = len(self.groups[g]) - 1
                return f"branch {row.number}" + (f"; {more} more branches of this configuration below it (open the "
                                                 "row: Right arrow)" if k == 0 and more else "")
            if c == COL_LABEL:
                return f"{row.label_tip}\n\njoints:\n{row.joints_tip}"
            return {COL_LIMITS: row.limits_tip, COL_MANIP: row.manip_tip}.get(c) or \
                f"largest joint move from the present pose: {self._move(i)[1]}"
        elif role == Qt.ItemDataRole.ForegroundRole:
            if c == COL_LIMITS:
                return QColor(palette.OK if row.within else palette.AT)
            if c == COL_LABEL and not row.reaches:
                return QColor(palette.AT)
            if c == COL_MANIP and row.level != "ok":
                return QColor(palette.LEVEL_COLOURS[row.level])
        elif role == Qt.ItemDataRole.TextAlignmentRole:
            return _RIGHT if c in (COL_MANIP, COL_MOVE) else _LEFT
        elif role == Qt.ItemDataRole.BackgroundRole and i == self.hovered:
            return _HOVER_SHADE
        return None


def joint_units(chain) -> str:
    """``"deg"``, or ``"deg, mm"`` on an arm with both joint kinds (angle first)."""
    units = [chain.units.angle] if chain.revolute.any() else []
    if (~chain.revolute).any():
        units.append(chain.units.length)
    return ", ".join(units)
