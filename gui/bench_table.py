"""The bench readings of a calibration as an editable table: one row per build.

Columns are the circuit's part keys (R, C; RA, RB, C), the measured frequency
and the duty. Cells keep the text typed; ``core.model.calibration.measurement_from_cells``
reads each row (as ``calibrate --measurements`` reads a file's), and a row that
cannot be read is tinted with its reason in a tooltip. Every edit, insertion,
removal and paste is one step on the model's undo stack. A paste takes a
spreadsheet's block (tabs between cells, one line per row), with or without its
header row, and adds rows as needed.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QBrush, QColor, QUndoCommand, QUndoStack

from core.errors import InputError
from core.model.calibration import READING_COLUMNS, Measurement, measurement_from_cells

Index = QModelIndex | QPersistentModelIndex
PROBLEM = QColor(250, 222, 214)
MAX_CELL = 64
"""Characters kept of a pasted cell (a value or a reading is a few characters)."""


def _one_line(text: str) -> str:
    """A cell's text on one line, control characters dropped, at most MAX_CELL long."""
    return "".join(ch for ch in text.replace("\t", " ") if ch.isprintable()).strip()[:MAX_CELL]


class _Step(QUndoCommand):
    """One undoable change: ``do`` and ``undo`` callables."""

    def __init__(self, text: str, do: Callable[[], None], undo: Callable[[], None]):
        super().__init__(text)
        self._do, self._undo = do, undo

    def redo(self) -> None:
        self._do()

    def undo(self) -> None:
        self._undo()


class BenchTableModel(QAbstractTableModel):
    """Rows of text cells for ``keys`` + frequency + duty; ``undo_stack`` holds every edit.
    ``diode_steered``: the circuit's steering diodes are part of it (readings say so)."""

    def __init__(self, keys: Sequence[str], parent: Any = None, diode_steered: bool = False):
        super().__init__(parent)
        self.keys, self.diode_steered = tuple(keys), diode_steered
        self.columns = (*(k.lower() for k in self.keys), *READING_COLUMNS)
        self.headings = (*self.keys, "Frequency", "Duty")
        self._rows: list[list[str]] = []
        self.undo_stack = QUndoStack(self)

    # -- reading
    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: N802, B008 - Qt's API
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent: Index = QModelIndex()) -> int:  # noqa: N802, B008
        return 0 if parent.isValid() else len(self.columns)

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if role != Qt.ItemDataRole.DisplayRole:
            return None
        if orientation == Qt.Orientation.Horizontal:
            return self.headings[section]
        return str(section + 1)

    def flags(self, index: Index) -> Qt.ItemFlag:
        return super().flags(index) | Qt.ItemFlag.ItemIsEditable

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        text = self._rows[index.row()][index.column()]
        if role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.EditRole):
            return text
        if role in (Qt.ItemDataRole.BackgroundRole, Qt.ItemDataRole.ToolTipRole):
            problem = self.row_problem(index.row())
            if problem is None:
                return None
            return QBrush(PROBLEM) if role == Qt.ItemDataRole.BackgroundRole else problem
        return None

    def rows_text(self) -> list[list[str]]:
        return [list(r) for r in self._rows]

    def _cells(self, row: int) -> dict[str, str]:
        return dict(zip(self.columns, self._rows[row], strict=True))

    def _blank(self, row: int) -> bool:
        return not any(c.strip() for c in self._rows[row])

    def row_problem(self, row: int) -> str | None:
        """Why row ``row`` cannot be read (None if it can, or if it is empty)."""
        if self._blank(row):
            return None
        try:
            measurement_from_cells(self.keys, self._cells(row), self.diode_steered)
        except InputError as e:
            return str(e)
        return None

    def measurements(self) -> tuple[list[Measurement], list[str]]:
        """The readable builds, and one message per unreadable row ("row 2: …")."""
        out, problems = [], []
        for row in range(len(self._rows)):
            if self._blank(row):
                continue
            try:
                out.append(measurement_from_cells(self.keys, self._cells(row),
                                                  self.diode_steered))
            except InputError as e:
                problems.append(f"row {row + 1}: {e}")
        return out, problems

    # -- editing (each public edit is one undo step)
    def setData(self, index: Index, value: Any,  # noqa: N802
                role: int = Qt.ItemDataRole.EditRole) -> bool:
        if role != Qt.ItemDataRole.EditRole or not index.isValid():
            return False
        row, col, new = index.row(), index.column(), _one_line(str(value))
        old = self._rows[row][col]
        if new == old:
            return False
        heading = self.headings[col]
        self.undo_stack.push(_Step(f"Edit {heading} of build {row + 1}",
                                   lambda: self._put(row, col, new),
                                   lambda: self._put(row, col, old)))
        return True

    def _put(self, row: int, col: int, text: str) -> None:
        self._rows[row][col] = text
        self.dataChanged.emit(self.index(row, 0), self.index(row, len(self.columns) - 1))

    def insert_rows(self, first: int, rows: Sequence[Sequence[str]], text: str = "Add builds"
                    ) -> None:
        copies = [self._fit_row(r) for r in rows]
        self.undo_stack.push(_Step(text, lambda: self._insert(first, copies),
                                   lambda: self._remove(first, len(copies))))

    def remove_rows(self, rows: Sequence[int]) -> None:
        """Remove the given rows (one undo step)."""
        self.undo_stack.beginMacro("Delete builds")
        for row in sorted(set(rows), reverse=True):
            saved = [list(self._rows[row])]
            self.undo_stack.push(_Step("Delete build", lambda r=row: self._remove(r, 1),
                                       lambda r=row, s=saved: self._insert(r, s)))
        self.undo_stack.endMacro()

    def set_rows(self, rows: Sequence[Sequence[str]]) -> None:
        """Replace every row (one undo step): a saved calibration's readings."""
        old, new = self.rows_text(), [self._fit_row(r) for r in rows]
        self.undo_stack.push(_Step("Load builds", lambda: self._reset(new),
                                   lambda: self._reset(old)))

    def paste(self, text: str, row: int, col: int) -> None:
        """A spreadsheet's block at (row, col): tab-separated cells, one line per row; a
        first line naming the columns is skipped; rows are added as needed."""
        lines = [line.split("\t") for line in text.replace("\r\n", "\n").split("\n")]
        lines = [cells for cells in lines if any(c.strip() for c in cells)]
        if lines and {c.strip().lower() for c in lines[0]} & {*self.columns, "frequency"} \
                and all(c.strip().lower() in (*self.columns, "") for c in lines[0]):
            lines = lines[1:]
        if not lines:
            return
        self.undo_stack.beginMacro("Paste builds")
        missing = row + len(lines) - len(self._rows)
        if missing > 0:
            self.insert_rows(len(self._rows), [[]] * missing)
        for i, cells in enumerate(lines):
            for j, cell in enumerate(cells[:len(self.columns) - col]):
                self.setData(self.index(row + i, col + j), cell)
        self.undo_stack.endMacro()

    def _fit_row(self, cells: Sequence[str]) -> list[str]:
        row = [_one_line(c) for c in cells][:len(self.columns)]
        return row + [""] * (len(self.columns) - len(row))

    def _insert(self, first: int, rows: list[list[str]]) -> None:
        self.beginInsertRows(QModelIndex(), first, first + len(rows) - 1)
        self._rows[first:first] = [list(r) for r in rows]
        self.endInsertRows()

    def _remove(self, first: int, count: int) -> None:
        self.beginRemoveRows(QModelIndex(), first, first + count - 1)
        del self._rows[first:first + count]
        self.endRemoveRows()

    def _reset(self, rows: list[list[str]]) -> None:
        self.beginResetModel()
        self._rows = [list(r) for r in rows]
        self.endResetModel()
