"""The drawer as a Qt table: an adapter over ``core.parts.drawer.Drawer``, holding no data.

Every read goes to the drawer's rows, every edit to ``Drawer.set_cell`` (so it
lands in the drawer's undo history), and the drawer's events become the
model's begin/end notifications. A cell the drawer cannot use keeps its text;
the model marks it with a colour *and* a warning icon and puts the reason in
the tooltip.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import (
    QAbstractTableModel,
    QModelIndex,
    QPersistentModelIndex,
    QSortFilterProxyModel,
    Qt,
)
from PySide6.QtGui import QBrush, QColor, QFont

from core.parts.drawer import Drawer
from core.parts.part import Part

DISPLAY_COLUMNS = ("kind", "value", "tolerance", "quantity", "location", "taper",
                   "dielectric", "voltage", "note")
"""Columns always shown, in this order; other columns of the file follow them."""

HEADINGS = {"kind": "Kind", "value": "Value", "tolerance": "Tol.", "quantity": "Qty",
            "location": "Location", "taper": "Taper", "dielectric": "Dielectric",
            "voltage": "Rated V", "note": "Note"}
HINTS = {
    "kind": "R resistor, P potentiometer or trimmer, C capacitor",
    "value": "4.7k, 4k7, 470R, 100n, 2n2, 0.1uF or the code 104",
    "tolerance": "5%, ±1%, +80/-20% or an IEC 60062 letter (F, G, J, K, M)",
    "quantity": "how many are in the drawer (a whole number)",
    "location": "where they live: box, bin, bag",
    "taper": "potentiometers: lin (default) or log",
    "dielectric": "capacitors: C0G, film, X7R, X5R, Y5V, tantalum or electrolytic",
    "voltage": "capacitors: rated voltage (keep it above the supply)",
    "note": "anything you want to remember",
}

SORT_ROLE = Qt.ItemDataRole.UserRole + 1
"""Role giving a sortable key (numbers for value and quantity)."""
PROBLEM_ROLE = Qt.ItemDataRole.UserRole + 2
"""Role giving the reason a cell is bad, or None."""

USED_ROLE = Qt.ItemDataRole.UserRole + 3
"""Role giving how many parts of this row the selected candidate takes (0 if none)."""

BAD_BACKGROUND = QColor(253, 226, 222)
BAD_FOREGROUND = QColor(140, 28, 20)
USED_BACKGROUND = QColor(250, 236, 190)
"""Rows the selected candidate takes parts from: a warm tint, unlike selection or errors."""
MARKING_ROLES = frozenset({
    PROBLEM_ROLE, Qt.ItemDataRole.ToolTipRole, Qt.ItemDataRole.AccessibleDescriptionRole,
    Qt.ItemDataRole.BackgroundRole, Qt.ItemDataRole.ForegroundRole,
    Qt.ItemDataRole.FontRole})
"""Roles that show a bad cell or a used row; the others need no look at the problems."""


class DrawerTableModel(QAbstractTableModel):
    """Rows of the drawer, columns per ``DISPLAY_COLUMNS`` plus the file's own extras.

    ``set_used`` marks the rows a candidate takes parts from (tinted, the count
    beside the quantity), so the person sees which bins to open.
    """

    def __init__(self, drawer: Drawer, parent: Any = None, *, checking: bool = True):
        super().__init__(parent)
        self.checking = checking
        """False until the window is on screen: checking every cell of a large drawer
        can wait until after the first paint (see ``start_checking``)."""
        self._drawer: Drawer | None = None
        self._columns: list[str] = []
        self._by_row: tuple[object, dict[int, Part]] = (None, {})
        self._used: dict[int, int] = {}
        self.set_drawer(drawer)

    # -- the drawer behind the model
    @property
    def drawer(self) -> Drawer:
        assert self._drawer is not None
        return self._drawer

    def set_drawer(self, drawer: Drawer) -> None:
        """Show another drawer (open, restore); the old one is let go."""
        self.beginResetModel()
        if self._drawer is not None:
            self._connect(self._drawer, connect=False)
        self._drawer = drawer
        self._connect(drawer, connect=True)
        self._columns = self._column_list()
        self._used = {}
        self.endResetModel()

    def set_used(self, used: dict[int, int]) -> None:
        """Mark rows a candidate uses: {row index: parts taken}; ``{}`` clears the marks."""
        if used == self._used:
            return
        changed = set(self._used) | set(used)
        self._used = {row: n for row, n in used.items() if 0 <= row < self.rowCount()}
        last = self.columnCount() - 1
        for row in sorted(r for r in changed if 0 <= r < self.rowCount()):
            self.dataChanged.emit(self.index(row, 0), self.index(row, last))

    def any_used(self) -> bool:
        """Whether a candidate is marked (its rows tinted)."""
        return bool(self._used)

    def used(self, row: int) -> int:
        """Parts the selected candidate takes from ``row`` (0 when none)."""
        return self._used.get(row, 0)

    def _connect(self, drawer: Drawer, *, connect: bool) -> None:
        pairs = ((drawer.inserting, self._on_inserting), (drawer.inserted, self._on_inserted),
                 (drawer.removing, self._on_removing), (drawer.removed, self._on_removed),
                 (drawer.changed, self._on_changed), (drawer.resetting, self._on_resetting),
                 (drawer.reset, self._on_reset))
        for event, handler in pairs:
            (event.connect if connect else event.disconnect)(handler)

    def _column_list(self) -> list[str]:
        extras = [c for c in self.drawer.columns if c not in DISPLAY_COLUMNS]
        return [*DISPLAY_COLUMNS, *extras]

    def part_at(self, row: int) -> Part | None:
        """The usable part on ``row``, or None when the row has a problem."""
        parts = self.drawer.parts()
        if self._by_row[0] is not parts:  # core rebuilds the list after every edit
            self._by_row = (parts, {p.row: p for p in parts})
        return self._by_row[1].get(row)

    def start_checking(self) -> None:
        """Mark bad cells from now on (called once the window has painted and warmed up)."""
        if not self.checking:
            self.checking = True
            if self.rowCount():
                self.dataChanged.emit(self.index(0, 0),
                                      self.index(self.rowCount() - 1, self.columnCount() - 1))

    def column_name(self, column: int) -> str:
        return self._columns[column]

    def column_of(self, name: str) -> int:
        return self._columns.index(name)

    def refresh_columns(self) -> None:
        """After columns were added to the drawer (an import): rebuild the header."""
        if self._column_list() != self._columns:
            self.beginResetModel()
            self._columns = self._column_list()
            self.endResetModel()

    def refresh_lines(self) -> None:
        """After a save the rows sit on new file lines: redraw the line numbers."""
        if self.rowCount():
            self.headerDataChanged.emit(Qt.Orientation.Vertical, 0, self.rowCount() - 1)

    # -- drawer events -> Qt notifications
    def _on_inserting(self, first: int, count: int) -> None:
        self._used = {}  # rows shift: the next search result marks them again
        self.beginInsertRows(QModelIndex(), first, first + count - 1)

    def _on_inserted(self, first: int, count: int) -> None:
        self.endInsertRows()
        self.refresh_lines()

    def _on_removing(self, first: int, count: int) -> None:
        self._used = {}
        self.beginRemoveRows(QModelIndex(), first, first + count - 1)

    def _on_removed(self, first: int, count: int) -> None:
        self.endRemoveRows()
        self.refresh_lines()

    def _on_changed(self, row: int, column: str) -> None:
        # A new kind changes how value and tolerance parse: the whole row may change.
        self.dataChanged.emit(self.index(row, 0), self.index(row, self.columnCount() - 1))

    def _on_resetting(self) -> None:
        self.beginResetModel()
        self._used = {}

    def _on_reset(self) -> None:
        self._columns = self._column_list()
        self.endResetModel()

    # -- Qt model interface
    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self.drawer)

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._columns)

    def _problem(self, row: int, column: str) -> str | None:
        if not self.checking:
            return None
        return self.drawer.problems().get(row, {}).get(column)

    def data(self, index: QModelIndex | QPersistentModelIndex,
             role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        row, col = index.row(), index.column()
        # A cheap bounds check: data() runs for every cell at every repaint.
        if not (index.isValid() and 0 <= row < len(self.drawer)
                and 0 <= col < len(self._columns)):
            return None
        column = self._columns[col]
        text = self.drawer.rows[row].get(column)
        if role == Qt.ItemDataRole.EditRole:
            return text
        if role == Qt.ItemDataRole.DisplayRole:
            used = self._used.get(row)
            return f"{text} (use {used})" if used and column == "quantity" else text
        if role == USED_ROLE:
            return self._used.get(row, 0)
        if role == SORT_ROLE:
            return self._sort_key(row, column, text)
        return self._marking(row, column, text, role) if role in MARKING_ROLES else None

    def _marking(self, row: int, column: str, text: str, role: int) -> Any:
        """How a bad cell, or a row the selected candidate takes parts from, is shown."""
        problem = self._problem(row, column)
        if role == PROBLEM_ROLE:
            return problem
        if role == Qt.ItemDataRole.ToolTipRole:
            return self._tooltip(row, column, text, problem)
        if role == Qt.ItemDataRole.AccessibleDescriptionRole:
            return f"problem: {problem}" if problem else None
        if role == Qt.ItemDataRole.BackgroundRole:
            if problem:
                return QBrush(BAD_BACKGROUND)
            return QBrush(USED_BACKGROUND) if row in self._used else None
        if role == Qt.ItemDataRole.ForegroundRole:
            return QBrush(BAD_FOREGROUND) if problem else None
        # FontRole: underlined as well as coloured, so colour is not the only mark; no icon,
        # which would take the room the typed text needs (the delegate adds a side bar).
        return self._underlined() if problem else None

    @staticmethod
    def _underlined() -> QFont:
        font = QFont()
        font.setUnderline(True)
        return font

    def _tooltip(self, row: int, column: str, text: str, problem: str | None) -> str | None:
        if problem:
            shown = f"“{text}”" if text.strip() else "This cell"
            return f"{shown} is not usable: {problem}"
        used = self._used.get(row)
        if used:
            return (f"The selected candidate takes {used} part{'s' if used > 1 else ''} "
                    "from this row")
        return HINTS.get(column)

    def _sort_key(self, row: int, column: str, text: str) -> Any:
        if column in ("value", "quantity"):
            part = self.part_at(row)
            if part is not None:
                return float(part.value if column == "value" else part.quantity)
            return float("inf")  # bad rows sort last, where they are easy to find
        return text.lower()

    def setData(self, index: QModelIndex | QPersistentModelIndex, value: Any,  # noqa: N802
                role: int = Qt.ItemDataRole.EditRole) -> bool:
        """Store the text as typed (trimmed); the drawer marks it if it is bad."""
        if role != Qt.ItemDataRole.EditRole or not index.isValid():
            return False
        text = "" if value is None else str(value).strip()
        self.drawer.set_cell(index.row(), self._columns[index.column()], text)
        return True

    def flags(self, index: QModelIndex | QPersistentModelIndex) -> Qt.ItemFlag:
        if not index.isValid():
            return Qt.ItemFlag.NoItemFlags
        return (Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
                | Qt.ItemFlag.ItemIsEditable | Qt.ItemFlag.ItemNeverHasChildren)

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if orientation == Qt.Orientation.Horizontal:
            if not 0 <= section < len(self._columns):
                return None
            name = self._columns[section]
            if role == Qt.ItemDataRole.DisplayRole:
                return HEADINGS.get(name, name)
            if role == Qt.ItemDataRole.ToolTipRole:
                return HINTS.get(name, f"column “{name}” from your file (kept as it is)")
            return None
        if not 0 <= section < len(self.drawer):
            return None
        line = self.drawer.rows[section].line
        if role == Qt.ItemDataRole.DisplayRole:
            return str(line if line is not None else section + 2)
        if role == Qt.ItemDataRole.ToolTipRole:
            if line is None:
                return f"new row, not saved yet (will be line {section + 2})"
            return f"line {line} of the drawer file"
        if role == Qt.ItemDataRole.ForegroundRole and line is None:
            return QBrush(QColor(30, 110, 90))
        return None


class DrawerFilterProxy(QSortFilterProxyModel):
    """Filter by kind (``"R"``, ``"P"``, ``"C"``, ``"bad"``, ``"used"`` or all) and by text."""

    def __init__(self, parent: Any = None):
        super().__init__(parent)
        self._kind = ""
        self._text = ""
        self.setSortRole(SORT_ROLE)
        self.setDynamicSortFilter(True)

    def set_kind(self, kind: str) -> None:
        """``""`` all rows, ``"R"``/``"P"``/``"C"`` one kind, ``"bad"`` rows with problems,
        ``"used"`` the rows the selected candidate takes parts from."""
        self.beginFilterChange()
        self._kind = kind
        self.endFilterChange(QSortFilterProxyModel.Direction.Rows)

    def set_text(self, text: str) -> None:
        self.beginFilterChange()
        self._text = text.strip().lower()
        self.endFilterChange(QSortFilterProxyModel.Direction.Rows)

    def filterAcceptsRow(self, source_row: int,  # noqa: N802
                         source_parent: QModelIndex | QPersistentModelIndex) -> bool:
        model = self.sourceModel()
        if not isinstance(model, DrawerTableModel):
            return True
        drawer = model.drawer
        row = drawer.rows[source_row]
        if self._kind == "bad":
            if source_row not in drawer.problems():
                return False
        elif self._kind == "used":
            if not model.used(source_row):
                return False
        elif self._kind:
            part = model.part_at(source_row)
            kind = part.kind if part is not None else row.get("kind").strip().upper()[:1]
            if kind != self._kind:
                return False
        if self._text:
            return any(self._text in text.lower() for text in row.cells.values())
        return True
