"""Two candidates side by side: every column of the candidates table, then each one's
parts and drawer bins, so a choice between close candidates is made on one screen."""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QAbstractItemView,
    QDialog,
    QDialogButtonBox,
    QHeaderView,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from gui.candidates_model import CandidatesModel, parts_list


def comparison(model: CandidatesModel, ranks: tuple[int, int]) -> list[tuple[str, str, str]]:
    """(heading, first, second) rows: the table's columns, then one row per network's
    parts with their drawer places."""
    a, b = (model.candidate(r) for r in ranks)
    rows = [(model.headerData(c, Qt.Orientation.Horizontal),
             str(model.index(ranks[0], c).data()), str(model.index(ranks[1], c).data()))
            for c in range(model.columnCount())]
    parts_a, parts_b = parts_list(a), parts_list(b)
    for i in range(max(len(parts_a), len(parts_b))):
        rows.append(("Parts" if i == 0 else "", parts_a[i] if i < len(parts_a) else "",
                     parts_b[i] if i < len(parts_b) else ""))
    return rows


class CompareDialog(QDialog):
    """Candidates of rank ``ranks`` (0: the best) in two columns; read only."""

    def __init__(self, parent: QWidget | None, model: CandidatesModel,
                 ranks: tuple[int, int]):
        super().__init__(parent)
        self.setWindowTitle(f"Candidates {ranks[0] + 1} and {ranks[1] + 1} side by side")
        rows = comparison(model, ranks)
        self.table = QTableWidget(len(rows), 2, self)
        self.table.setAccessibleName("candidates compared")
        self.table.setHorizontalHeaderLabels([f"Candidate {r + 1}" for r in ranks])
        self.table.setVerticalHeaderLabels([heading for heading, _, _ in rows])
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setWordWrap(True)
        for row, (_, first, second) in enumerate(rows):
            for column, text in enumerate((first, second)):
                item = QTableWidgetItem(text)
                item.setToolTip(text)
                self.table.setItem(row, column, item)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
        self.table.resizeRowsToContents()
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close, self)
        buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addWidget(self.table)
        layout.addWidget(buttons)
        self.resize(760, 420)

    def texts(self) -> list[tuple[str, str, str]]:
        """What the dialog shows, row by row (heading, first, second)."""
        return [(self.table.verticalHeaderItem(r).text(), self.table.item(r, 0).text(),
                 self.table.item(r, 1).text()) for r in range(self.table.rowCount())]


def compare(parent: Any, model: CandidatesModel, ranks: tuple[int, int]) -> CompareDialog:
    """Open the comparison without blocking the window (it stays usable beside it)."""
    dialog = CompareDialog(parent, model, ranks)
    dialog.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
    dialog.show()
    return dialog
