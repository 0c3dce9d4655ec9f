"""The drawer editor: the parts table with its filter bar, row actions, kit and paste dialogs.

Every change goes through ``core.parts.drawer.Drawer`` (one undo step per action,
multi-row actions grouped); this module only arranges widgets around the
table model.
"""

from __future__ import annotations

import re
from typing import Any

from PySide6.QtCore import (
    QAbstractItemModel,
    QItemSelectionModel,
    QModelIndex,
    QPersistentModelIndex,
    Qt,
    Signal,
)
from PySide6.QtGui import QAction, QKeySequence, QPainter
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QMenu,
    QPlainTextEdit,
    QSpinBox,
    QStyledItemDelegate,
    QStyleOptionViewItem,
    QTableView,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from core.errors import InputError
from core.parts.drawer import Drawer, Row
from gui.drawer_model import BAD_FOREGROUND, PROBLEM_ROLE, DrawerFilterProxy, DrawerTableModel

_CAPACITOR_TOKEN = re.compile(r"(?:f|[pnuµμ]\d*f?)$", re.IGNORECASE)
_RESISTOR_TOKEN = re.compile(r"(?:ω|ohms?|r\d*|k\d*|m\d*|meg)$", re.IGNORECASE)


def guess_kind(token: str) -> str:
    """``C`` when the unit or prefix says farads (``F``, ``p``, ``n``, ``u``), else ``R``.

    ``100n``, ``2n2``, ``4u7``, ``1uF`` are capacitors; ``4k7``, ``470R``,
    ``10k``, ``22 kΩ`` and bare numbers are resistors (common practice, no
    published source: nobody writes a resistor in nano-ohms).
    """
    t = token.strip().replace(" ", "")
    if _RESISTOR_TOKEN.search(t) and not t.lower().endswith("f"):
        return "R"
    return "C" if _CAPACITOR_TOKEN.search(t) else "R"


def paste_rows(text: str, quantity: str = "1", tolerance: str = "",
               location: str = "") -> list[Row]:
    """One drawer row per value in ``text`` (split on spaces, commas, semicolons, new lines)."""
    tokens = [t for t in re.split(r"[\s,;]+", text) if t]
    return [Row({"kind": guess_kind(t), "value": t, "quantity": quantity,
                 "tolerance": tolerance, "location": location}) for t in tokens]


class PasteDialog(QDialog):
    """A box for a list of values (``10k 22k 4k7 100n 1u``) that become drawer rows."""

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self.setWindowTitle("Paste a list of values")
        self.text = QPlainTextEdit()
        self.text.setPlaceholderText("10k 22k 4k7 100n 1u")
        self.text.setAccessibleName("values to add")
        self.text.setToolTip("Values separated by spaces, commas or new lines. p, n, u or F "
                             "make a capacitor; anything else is a resistor.")
        self.quantity = QLineEdit("1")
        self.quantity.setAccessibleName("quantity of each")
        self.tolerance = QLineEdit()
        self.tolerance.setPlaceholderText("default per kind")
        self.tolerance.setAccessibleName("tolerance of each")
        self.location = QLineEdit()
        self.location.setAccessibleName("location of each")
        self.preview = QLabel()
        self.preview.setWordWrap(True)
        form = QFormLayout()
        form.addRow("Quantity of each", self.quantity)
        form.addRow("Tolerance", self.tolerance)
        form.addRow("Location", self.location)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addWidget(QLabel("Values to add, for example <tt>10k 22k 4k7 100n 1u</tt>:"))
        layout.addWidget(self.text)
        layout.addLayout(form)
        layout.addWidget(self.preview)
        layout.addWidget(buttons)
        self.text.textChanged.connect(self._update_preview)
        self._update_preview()
        self.resize(460, 340)

    def rows(self) -> list[Row]:
        return paste_rows(self.text.toPlainText(), self.quantity.text().strip(),
                          self.tolerance.text().strip(), self.location.text().strip())

    def _update_preview(self) -> None:
        from core.units import capacitor_code_value, format_capacitance

        rows = self.rows()
        kinds = {"R": 0, "C": 0}
        for row in rows:
            kinds[row.get("kind")] += 1
        text = (f"{len(rows)} rows: {kinds['R']} resistors, {kinds['C']} capacitors. Values "
                "the drawer cannot read are added anyway and marked for correction.")
        codes = [(row.get("value"), capacitor_code_value(row.get("value"))) for row in rows
                 if row.get("kind") == "R"]
        codes = [(typed, farads) for typed, farads in codes if farads is not None]
        if codes:
            shown = ", ".join(f"{typed} = {format_capacitance(farads)}?"
                              for typed, farads in codes[:4])
            text += (f"\n⚠ {shown} A bare number like this is usually a capacitor code; "
                     "it is added as a resistor in ohms. Write it as 100n (or set the row's "
                     "kind to C) if it is a capacitor.")
        self.preview.setText(text)


class KitDialog(QDialog):
    """An assortment kit: every IEC 60063 value of a series over a decade range."""

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        from core.parts.eseries import SERIES

        self.setWindowTitle("Add a kit of standard values")
        self.kind = QComboBox()
        self.kind.addItem("Resistors", "R")
        self.kind.addItem("Capacitors", "C")
        self.series = QComboBox()
        self.series.addItems(list(SERIES))
        self.series.setCurrentText("E12")
        self.series.setToolTip("IEC 60063 preferred number series")
        self.low = QLineEdit("10")
        self.high = QLineEdit("1M")
        self.quantity = QSpinBox()
        self.quantity.setRange(0, 10_000)
        self.quantity.setValue(10)
        self.tolerance = QLineEdit("5%")
        self.location = QLineEdit()
        self.dielectric = QComboBox()
        self.dielectric.addItems(["", "C0G", "film", "X7R", "X5R", "Y5V", "electrolytic"])
        self.preview = QLabel()
        self.preview.setWordWrap(True)
        form = QFormLayout()
        for label, widget in (("Kind", self.kind), ("Series", self.series),
                              ("From", self.low), ("To", self.high),
                              ("Quantity of each", self.quantity),
                              ("Tolerance", self.tolerance), ("Location", self.location),
                              ("Dielectric", self.dielectric)):
            widget.setAccessibleName(label)
            form.addRow(label, widget)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                        | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.accept)
        self.buttons.rejected.connect(self.reject)
        layout = QVBoxLayout(self)
        layout.addLayout(form)
        layout.addWidget(self.preview)
        layout.addWidget(self.buttons)
        for signal in (self.kind.currentIndexChanged, self.series.currentIndexChanged,
                       self.low.textChanged, self.high.textChanged):
            signal.connect(self._update_preview)
        self.kind.currentIndexChanged.connect(self._kind_changed)
        self._kind_changed()
        self.resize(420, 0)

    def _kind_changed(self) -> None:
        capacitor = self.kind.currentData() == "C"
        self.dielectric.setEnabled(capacitor)
        self.low.setText("100p" if capacitor else "10")
        self.high.setText("1u" if capacitor else "1M")
        self.tolerance.setText("10%" if capacitor else "5%")

    def values(self) -> list[float]:
        """The kit's values (Ω or F); InputError when the range does not parse."""
        from core.parts.eseries import kit
        from core.units import parse_capacitance, parse_resistance

        parse = parse_capacitance if self.kind.currentData() == "C" else parse_resistance
        return kit(self.series.currentText(), parse(self.low.text()), parse(self.high.text()))

    def rows(self) -> list[Row]:
        from core.units import format_code

        kind = self.kind.currentData()
        cells = {"kind": kind, "quantity": str(self.quantity.value()),
                 "tolerance": self.tolerance.text().strip(),
                 "location": self.location.text().strip()}
        if kind == "C" and self.dielectric.currentText():
            cells["dielectric"] = self.dielectric.currentText()
        return [Row({**cells, "value": format_code(v, kind)}) for v in self.values()]

    def _update_preview(self) -> None:
        from core.units import format_part_value

        ok = self.buttons.button(QDialogButtonBox.StandardButton.Ok)
        try:
            values = self.values()
        except InputError as e:
            self.preview.setText(f"⚠ {e}")
            ok.setEnabled(False)
            return
        kind = self.kind.currentData()
        shown = [format_part_value(v, kind) for v in values]
        if len(shown) > 8:
            shown = [*shown[:4], "…", *shown[-3:]]
        self.preview.setText(f"{len(values)} values: {', '.join(shown)}" if values
                             else "No values of this series in that range.")
        ok.setEnabled(bool(values))


CHOICES = {"kind": ("R", "P", "C"), "taper": ("lin", "log"),
           "dielectric": ("C0G", "film", "X7R", "X5R", "Y5V", "tantalum", "electrolytic")}
"""Suggestions offered while editing these columns (any other text may still be typed)."""


class ChoiceDelegate(QStyledItemDelegate):
    """An editable list for columns with a few usual answers; plain text elsewhere."""

    def __init__(self, model: DrawerTableModel, proxy: DrawerFilterProxy, parent: QWidget):
        super().__init__(parent)
        self.model, self.proxy = model, proxy

    def paint(self, painter: QPainter, option: QStyleOptionViewItem,
              index: QModelIndex | QPersistentModelIndex) -> None:
        """The cell as usual; a bad cell also gets a bar at its left edge, leaving all the
        width to the typed text."""
        super().paint(painter, option, index)
        if index.data(PROBLEM_ROLE):
            bar = option.rect.adjusted(0, 1, 0, -1)
            bar.setWidth(3)
            painter.fillRect(bar, BAD_FOREGROUND)

    def _choices(self, index: QModelIndex | QPersistentModelIndex) -> tuple[str, ...]:
        return CHOICES.get(self.model.column_name(self.proxy.mapToSource(index).column()), ())

    def createEditor(self, parent: QWidget, option: QStyleOptionViewItem,  # noqa: N802
                     index: QModelIndex | QPersistentModelIndex) -> QWidget:
        choices = self._choices(index)
        if not choices:
            return super().createEditor(parent, option, index)
        combo = QComboBox(parent)
        combo.setEditable(True)
        combo.addItems(list(choices))
        return combo

    def setEditorData(self, editor: QWidget,  # noqa: N802
                      index: QModelIndex | QPersistentModelIndex) -> None:
        if isinstance(editor, QComboBox):
            editor.setCurrentText(str(index.data(Qt.ItemDataRole.EditRole) or ""))
        else:
            super().setEditorData(editor, index)

    def setModelData(self, editor: QWidget, model: QAbstractItemModel,  # noqa: N802
                     index: QModelIndex | QPersistentModelIndex) -> None:
        if isinstance(editor, QComboBox):
            model.setData(index, editor.currentText(), Qt.ItemDataRole.EditRole)
        else:
            super().setModelData(editor, model, index)


def sorted_rows(model: DrawerTableModel) -> list[Row]:
    """Rows ordered resistors, pots, capacitors, each by value; rows with problems last."""
    order = {"R": 0, "P": 1, "C": 2}

    def key(item: tuple[int, Row]) -> tuple[int, float, int]:
        i, _ = item
        part = model.part_at(i)
        if part is None:
            return (3, 0.0, i)
        return (order[part.kind], part.value, i)

    return [row for _, row in sorted(enumerate(model.drawer.rows), key=key)]


ALWAYS_SHOWN = ("kind", "value", "tolerance", "quantity", "location")
"""Columns a drawer cannot do without; every other column can be hidden."""
HIDDEN_BY_DEFAULT = ("taper", "dielectric", "voltage")
"""Hidden until the person shows them (header menu): few rows use them, and the
drawer is readable without scrolling sideways. A cell with a problem shows anyway."""


class DrawerPanel(QWidget):
    """The parts table with a filter bar and row actions.

    Signals: ``sigMessage(str)`` a short status text for the window.
    """

    sigMessage = Signal(str)  # noqa: N815 - pyqtgraph-style signal names, see STYLE.md
    sigPin = Signal(int, str)  # noqa: N815

    def __init__(self, model: DrawerTableModel, parent: QWidget | None = None):
        super().__init__(parent)
        self.model = model
        self.proxy = DrawerFilterProxy(self)
        self.proxy.setSourceModel(model)

        self.kind_filter = QComboBox()
        for label, kind in (("All parts", ""), ("Resistors", "R"), ("Potentiometers", "P"),
                            ("Capacitors", "C"), ("Rows to fix", "bad"),
                            ("Used by the candidate", "used")):
            self.kind_filter.addItem(label, kind)
        self.kind_filter.setAccessibleName("show kind")
        self.kind_filter.setToolTip("Show one kind of part, only rows that need fixing, or "
                                    "only the rows the selected candidate takes parts from "
                                    "(tinted, with “use N” beside the quantity)")
        self.kind_filter.currentIndexChanged.connect(
            lambda: self.proxy.set_kind(self.kind_filter.currentData()))
        self.text_filter = QLineEdit()
        self.text_filter.setPlaceholderText("Filter: value, location, note…")
        self.text_filter.setClearButtonEnabled(True)
        self.text_filter.setAccessibleName("filter text")
        self.text_filter.setToolTip("Show rows with this text in any cell")
        self.text_filter.textChanged.connect(self.proxy.set_text)

        self.table = QTableView()
        self.table.setModel(self.proxy)
        self.table.setItemDelegate(ChoiceDelegate(model, self.proxy, self.table))
        self.table.setAccessibleName("parts drawer")
        self.table.setSortingEnabled(True)
        # Tab leaves the table for the next panel; arrow keys move between cells.
        self.table.setTabKeyNavigation(False)
        self.table.horizontalHeader().setSortIndicatorClearable(True)
        self.table.horizontalHeader().setSortIndicator(-1, Qt.SortOrder.AscendingOrder)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.DoubleClicked
                                   | QAbstractItemView.EditTrigger.EditKeyPressed
                                   | QAbstractItemView.EditTrigger.AnyKeyPressed)
        self.table.setAlternatingRowColors(True)
        self.table.setWordWrap(False)
        self.table.verticalHeader().setDefaultSectionSize(
            self.table.fontMetrics().height() + 8)
        header = self.table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setStretchLastSection(True)
        header.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        header.customContextMenuRequested.connect(self._column_menu)
        header.setToolTip("Right-click to show or hide columns")
        self.hidden: set[str] = set(HIDDEN_BY_DEFAULT)
        """Columns the person chose not to see (a column with a problem shows anyway)."""
        self._set_column_widths()
        model.modelReset.connect(self._set_column_widths)
        for signal in (model.dataChanged, model.rowsInserted, model.rowsRemoved):
            signal.connect(self._apply_hidden)

        self.count_label = QLabel()
        self.count_label.setObjectName("hint")
        self.count_label.setTextFormat(Qt.TextFormat.RichText)
        self.count_label.setToolTip("Click “to fix” to show only the rows that need fixing")
        self.count_label.linkActivated.connect(
            lambda _: self.kind_filter.setCurrentIndex(self.kind_filter.findData("bad")))
        for signal in (model.modelReset, model.rowsInserted, model.rowsRemoved,
                       model.dataChanged, self.proxy.layoutChanged, self.proxy.rowsInserted,
                       self.proxy.rowsRemoved, self.proxy.modelReset):
            signal.connect(self._update_count)

        self.add_action = self._action("Add part", "Add an empty row after the current one",
                                       self.add_row, QKeySequence("Ctrl+Shift+N"))
        self.duplicate_action = self._action("Duplicate", "Copy the selected rows",
                                             self.duplicate_rows, QKeySequence("Ctrl+D"))
        self.delete_action = self._action("Delete", "Delete the selected rows",
                                          self.delete_rows, QKeySequence.StandardKey.Delete)
        self.kit_action = self._action("Add kit…", "Add every standard value of an "
                                       "IEC 60063 series over a range", self.add_kit)
        self.paste_action = self._action("Paste values…", "Add rows from a list of values "
                                         "such as 10k 22k 4k7 100n", self.paste_values)
        self.sort_action = self._action("Sort by kind and value",
                                        "Reorder the drawer rows (one undo step)",
                                        self.sort_drawer)
        self.pin_action = self._action("Pin in the search", "Use this part in every "
                                       "candidate and search the rest around it (again: "
                                       "unpin)", self.pin_current, QKeySequence("Ctrl+Shift+P"))
        for action in (self.add_action, self.duplicate_action, self.delete_action,
                       self.pin_action):
            action.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
            self.table.addAction(action)
        self.table.setContextMenuPolicy(Qt.ContextMenuPolicy.ActionsContextMenu)

        bar = QHBoxLayout()
        bar.setContentsMargins(0, 0, 0, 0)
        bar.addWidget(self.kind_filter)
        bar.addWidget(self.text_filter, 1)
        bar.addWidget(self.count_label)
        buttons = QHBoxLayout()
        buttons.setContentsMargins(0, 0, 0, 0)
        for action in (self.add_action, self.duplicate_action, self.delete_action,
                       self.kit_action, self.paste_action):
            button = QToolButton()
            button.setDefaultAction(action)
            button.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextOnly)
            buttons.addWidget(button)
        buttons.addStretch(1)
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        self.empty_hint = QLabel(
            "Your drawer is empty. Add a part, add a whole kit of standard values, or paste "
            "a list such as <tt>10k 22k 4k7 100n 1u</tt> (buttons below); File ▸ Open loads "
            "a drawer file.")
        self.empty_hint.setObjectName("hint")
        self.empty_hint.setWordWrap(True)
        layout.addLayout(bar)
        layout.addWidget(self.empty_hint)
        layout.addWidget(self.table, 1)
        layout.addLayout(buttons)
        self._update_count()

    def _action(self, text: str, tip: str, slot: Any, shortcut: Any = None) -> QAction:
        action = QAction(text, self)
        if shortcut is not None:
            keys = QKeySequence(shortcut).toString(QKeySequence.SequenceFormat.NativeText)
            tip = f"{tip} ({keys})"
        action.setToolTip(tip)
        action.setStatusTip(tip)
        if shortcut is not None:
            action.setShortcut(shortcut)
        action.triggered.connect(slot)
        return action

    @property
    def drawer(self) -> Drawer:
        return self.model.drawer

    def _set_column_widths(self) -> None:
        """Widths from the font (in widths of "M"), so they hold at any scale."""
        em = self.table.fontMetrics().horizontalAdvance("M")
        header = self.table.horizontalHeader()
        # The note is last and stretches; a small start keeps it from forcing a scroll bar.
        widths = {"kind": 2.5, "value": 4.5, "tolerance": 3.5, "quantity": 6, "location": 4.5,
                  "taper": 3, "dielectric": 5, "voltage": 4, "note": 4}
        for column in range(self.model.columnCount()):
            name = self.model.column_name(column)
            heading = str(self.model.headerData(column, Qt.Orientation.Horizontal))
            room = header.fontMetrics().horizontalAdvance(heading) + 24  # + sort arrow
            self.table.setColumnWidth(column, max(room, int(widths.get(name, 8) * em + 12)))
        self._apply_hidden()

    def set_hidden(self, names: set[str]) -> None:
        """Hide these optional columns (see ``OPTIONAL_COLUMNS``; others stay shown)."""
        self.hidden = {n for n in names if n not in ALWAYS_SHOWN}
        self._apply_hidden()

    def _apply_hidden(self, *args: object) -> None:
        problems = self.drawer.problems() if self.model.checking else {}
        bad_columns = {name for cells in problems.values() for name in cells}
        for column in range(self.model.columnCount()):
            name = self.model.column_name(column)
            self.table.setColumnHidden(column, name in self.hidden and name not in bad_columns)

    def _column_menu(self, where: Any) -> None:
        menu = QMenu(self)
        for column in range(self.model.columnCount()):
            name = self.model.column_name(column)
            if name in ALWAYS_SHOWN:
                continue
            action = menu.addAction(str(self.model.headerData(
                column, Qt.Orientation.Horizontal)))
            action.setCheckable(True)
            action.setChecked(name not in self.hidden)
            action.toggled.connect(lambda on, name=name: self.show_column(name, on))
        menu.popup(self.table.horizontalHeader().mapToGlobal(where))

    def show_column(self, name: str, shown: bool) -> None:
        """Show or hide an optional column (the window remembers the choice)."""
        self.set_hidden(self.hidden - {name} if shown else self.hidden | {name})

    def _update_count(self, *args: object) -> None:
        total = len(self.drawer)
        bad = len(self.drawer.problems()) if self.model.checking else 0
        shown = self.proxy.rowCount()
        text = f"{total} rows" if shown == total else f"{shown} of {total} rows"
        if self.kind_filter.currentData() == "used" and not self.model.any_used():
            text = f"no candidate selected, so none of the {total} rows is in use"
        if bad:
            text += f' · <a href="fix">⚠ {bad} to fix</a>'
        self.count_label.setText(text)
        self.empty_hint.setVisible(total == 0)

    # -- selection helpers
    def pin_current(self) -> None:
        """Ask the search to pin (or unpin) the current row's part: ``sigPin(line, words)``."""
        current = self.table.currentIndex()
        if not current.isValid():
            self.sigMessage.emit("Select a part in the drawer to pin it.")
            return
        row = self.proxy.mapToSource(current).row()
        part = next((p for p in self.model.drawer.parts() if p.row == row), None)
        if part is None or part.quantity <= 0:
            self.sigMessage.emit(f"Row {row + 1} is not a part in stock: fix its marked cells "
                                 "or its quantity to pin it.")
            return
        from core.units import format_part_value

        self.sigPin.emit(part.stock_line, format_part_value(part.value, part.kind))

    def selected_rows(self) -> list[int]:
        """Drawer row indices of the selected table rows, in drawer order."""
        rows = {self.proxy.mapToSource(i).row()
                for i in self.table.selectionModel().selectedRows()}
        current = self.table.currentIndex()
        if not rows and current.isValid():
            rows = {self.proxy.mapToSource(current).row()}
        return sorted(rows)

    def select_rows(self, first: int, count: int, column: str = "value") -> None:
        """Select drawer rows ``first`` … and make the ``column`` cell current."""
        selection = self.table.selectionModel()
        selection.clearSelection()
        col = self.model.column_of(column)
        for row in range(first, first + count):
            index = self.proxy.mapFromSource(self.model.index(row, col))
            if index.isValid():
                selection.select(index, QItemSelectionModel.SelectionFlag.Select
                                 | QItemSelectionModel.SelectionFlag.Rows)
        current = self.proxy.mapFromSource(self.model.index(first, col))
        if current.isValid():
            selection.setCurrentIndex(current, QItemSelectionModel.SelectionFlag.NoUpdate)
            self.table.scrollTo(current)

    def scroll_to_row(self, row: int) -> None:
        """Bring drawer row ``row`` into view (selection and filter stay as they are)."""
        index = self.proxy.mapFromSource(self.model.index(row, 0))
        if index.isValid():
            self.table.scrollTo(index)

    # -- row actions (each one undo step in the drawer)
    def add_row(self) -> None:
        rows = self.selected_rows()
        at = rows[-1] + 1 if rows else len(self.drawer)
        kind = self.kind_filter.currentData()
        cells = {"kind": kind if kind in ("R", "P", "C") else "R", "value": "", "quantity": "1"}
        self.drawer.insert_rows(at, [Row(cells)], "Add part")
        self.text_filter.clear()
        self.select_rows(at, 1)
        self.table.edit(self.table.currentIndex())

    def duplicate_rows(self) -> None:
        rows = self.selected_rows()
        if not rows:
            return
        copies = [Row(dict(self.drawer.rows[i].cells)) for i in rows]
        at = rows[-1] + 1
        self.drawer.insert_rows(at, copies, f"Duplicate {len(copies)} row(s)")
        self.select_rows(at, len(copies))

    def delete_rows(self) -> None:
        rows = self.selected_rows()
        if not rows:
            return
        self.drawer.remove_rows(rows, f"Delete {len(rows)} row(s)")
        self.sigMessage.emit(f"Deleted {len(rows)} row(s); Undo brings them back.")

    def add_rows(self, rows: list[Row], description: str) -> None:
        """Append ``rows`` as one undo step and show them."""
        if not rows:
            return
        at = len(self.drawer)
        self.drawer.insert_rows(at, rows, description)
        self.kind_filter.setCurrentIndex(0)
        self.text_filter.clear()
        self.select_rows(at, len(rows))
        bad = sum(1 for i in range(at, at + len(rows)) if i in self.drawer.problems())
        note = f"; {bad} need fixing (marked ⚠)" if bad else ""
        self.sigMessage.emit(f"Added {len(rows)} row(s){note}.")

    def add_kit(self) -> None:
        dialog = KitDialog(self)
        if dialog.exec() == QDialog.DialogCode.Accepted:
            self.add_rows(dialog.rows(), f"Add {dialog.series.currentText()} kit")

    def paste_values(self) -> None:
        dialog = PasteDialog(self)
        if dialog.exec() == QDialog.DialogCode.Accepted:
            self.add_rows(dialog.rows(), "Paste values")

    def sort_drawer(self) -> None:
        self.drawer.replace_rows(sorted_rows(self.model), "Sort by kind and value")
        self.table.horizontalHeader().setSortIndicator(-1, Qt.SortOrder.AscendingOrder)
