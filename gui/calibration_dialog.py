"""Calibrations: the saved ones (rename, delete) and a new one from bench readings.

The person built the circuit with known parts, once or several times, and
measured each build's frequency (and perhaps its duty). The table holds one
row per build (``gui.bench_table``); ``core.model.calibration.fit`` finds the
thresholds that best reproduce them all (in a worker thread: a fit over several
builds takes longer than a frame), the plots set each build's predicted
frequency against its measured one and show the residuals, and
``save_calibration`` keeps the result in the data folder. Choosing a saved
calibration shows its readings, fit, thresholds and uncertainty; renaming one
(edit its name in the list) never loses its file.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import (
    QAbstractListModel,
    QItemSelectionModel,
    QModelIndex,
    QPersistentModelIndex,
    Qt,
    Signal,
)
from PySide6.QtGui import QAction, QGuiApplication, QKeySequence
from PySide6.QtWidgets import (
    QAbstractItemView,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QListView,
    QMessageBox,
    QPushButton,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from core.errors import TickbinError
from core.model.calibration import ADVICE, Calibration
from core.model.circuits import DEFAULT_CIRCUIT
from gui.background import LatestJob
from gui.bench_table import BenchTableModel
from gui.target_form import Target

Index = QModelIndex | QPersistentModelIndex


@dataclass(frozen=True)
class Chip:
    """The circuit, family and supply [V] a calibration belongs to."""

    circuit: str
    family: str
    supply_v: float

    def oscillator(self) -> Any:
        from core.model.timing import make_oscillator

        return make_oscillator(self.circuit, self.family, self.supply_v)


class SavedCalibrations(QAbstractListModel):
    """The saved calibrations by name; editing a name renames the file
    (``core.model.calibration.rename_calibration``). Signals: ``sigProblem(message)``."""

    sigProblem = Signal(str)  # noqa: N815

    def __init__(self, parent: Any = None):
        super().__init__(parent)
        self.names: list[str] = []
        self._labels: dict[str, str] = {}
        self.reload()

    def reload(self) -> None:
        from core.model.calibration import list_calibrations, load_calibration

        self.beginResetModel()
        self.names = list_calibrations()
        self._labels = {}
        for name in self.names:
            try:
                cal = load_calibration(name)
                self._labels[name] = f"{name}  ({cal.family}, {cal.supply_v:g} V)"
            except TickbinError:
                self._labels[name] = f"{name}  (unreadable)"
        self.endResetModel()

    def rowCount(self, parent: Index = QModelIndex()) -> int:  # noqa: N802, B008 - Qt's API
        return 0 if parent.isValid() else len(self.names)

    def flags(self, index: Index) -> Qt.ItemFlag:
        return super().flags(index) | Qt.ItemFlag.ItemIsEditable

    def data(self, index: Index, role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if not index.isValid():
            return None
        name = self.names[index.row()]
        if role == Qt.ItemDataRole.DisplayRole:
            return self._labels[name]
        if role == Qt.ItemDataRole.EditRole:
            return name
        return None

    def setData(self, index: Index, value: Any,  # noqa: N802
                role: int = Qt.ItemDataRole.EditRole) -> bool:
        from core.model.calibration import rename_calibration

        old, new = self.names[index.row()], str(value).strip()
        if role != Qt.ItemDataRole.EditRole or new == old:
            return False
        try:
            rename_calibration(old, new)
        except TickbinError as e:
            self.sigProblem.emit(str(e))
            return False
        self.reload()
        return True


class CalibrationDialog(QDialog):
    """Saved calibrations on the left; the bench readings, fit and name on the right.

    ``saved_name``/``saved`` name the calibration saved (None until then).
    """

    def __init__(self, parent: QWidget | None, target: Target | None, candidate: Any = None):
        super().__init__(parent)
        self.setWindowTitle("Calibrations from bench measurements")
        self.saved_name: str | None = None
        self.saved: Calibration | None = None
        self.chip = (Chip(target.circuit or DEFAULT_CIRCUIT.name, target.family or "",
                          target.supply_v)
                     if target is not None and target.family and target.supply_v else None)
        self._fit: tuple[Any, Calibration] | None = None
        self._save_after_fit = False
        self.job = LatestJob(self)
        self.job.sigDone.connect(self._fitted)
        self.job.sigFailed.connect(self._fit_failed)
        layout = QHBoxLayout(self)
        layout.addLayout(self._saved_column(), 1)
        layout.addLayout(self._new_column(), 3)
        self.model = BenchTableModel(())
        self._use_chip(self.chip)
        self._prefill(candidate)
        self._add_edit_actions()
        screen = QGuiApplication.primaryScreen().availableGeometry()
        self.resize(min(960, screen.width() - 40), min(620, screen.height() - 60))

    # -- building
    def _saved_column(self) -> QVBoxLayout:
        column = QVBoxLayout()
        column.addWidget(QLabel("<b>Saved calibrations</b>"))
        self.saved_list = SavedCalibrations(self)
        self.saved_list.sigProblem.connect(lambda text: self._say(f"⚠ {text}"))
        self.list_view = QListView()
        self.list_view.setModel(self.saved_list)
        self.list_view.setAccessibleName("saved calibrations")
        self.list_view.setEditTriggers(QAbstractItemView.EditTrigger.EditKeyPressed
                                       | QAbstractItemView.EditTrigger.DoubleClicked)
        # Selection, not the current item: focus alone makes the first item current.
        self.list_view.selectionModel().selectionChanged.connect(self._saved_chosen)
        column.addWidget(self.list_view, 1)
        buttons = QHBoxLayout()
        rename = QPushButton("Rename")
        rename.setToolTip("Give the selected calibration another name (F2)")
        rename.clicked.connect(lambda: self.list_view.edit(self.list_view.currentIndex()))
        self.delete_button = QPushButton("Delete…")
        self.delete_button.clicked.connect(self.delete_selected)
        buttons.addWidget(rename)
        buttons.addWidget(self.delete_button)
        column.addLayout(buttons)
        return column

    def _new_column(self) -> QVBoxLayout:
        column = QVBoxLayout()
        intro = QLabel("Build the circuit with parts you know (once or several times), "
                       "measure each build's frequency with a counter or oscilloscope and "
                       "enter one row per build; paste rows from a spreadsheet with "
                       f"{QKeySequence(QKeySequence.StandardKey.Paste).toString()}. "
                       f"{ADVICE[0].upper()}{ADVICE[1:]}.")
        intro.setWordWrap(True)
        column.addWidget(intro)
        self.chip_label = QLabel()
        column.addWidget(self.chip_label)
        self.table = QTableView()
        self.table.setAccessibleName("bench measurements")
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
        self.table.verticalHeader().setDefaultSectionSize(22)
        column.addWidget(self.table, 2)
        rows = QHBoxLayout()
        for text, slot in (("Add build", self.add_build), ("Delete builds", self.delete_builds)):
            button = QPushButton(text)
            button.clicked.connect(slot)
            rows.addWidget(button)
        rows.addStretch(1)
        self.tolerances: dict[str, QLineEdit] = {}
        for kind, label, default in (("R", "R tolerance", "±5 %"),
                                     ("C", "C tolerance", "±20 %")):
            edit = QLineEdit()
            edit.setPlaceholderText(default)
            edit.setMaximumWidth(80)
            edit.setAccessibleName(label.lower())
            edit.setToolTip("The tolerance of the parts used (1%, ±5%, F, J); it sets how "
                            "sure the calibration is")
            edit.editingFinished.connect(self.refit)
            self.tolerances[kind] = edit
            rows.addWidget(QLabel(label))
            rows.addWidget(edit)
        column.addLayout(rows)
        column.addWidget(self._fit_plots(), 2)
        self.result_label = QLabel()
        self.result_label.setWordWrap(True)
        self.result_label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        column.addWidget(self.result_label)
        form = QFormLayout()
        self.name = QLineEdit()
        self.name.setAccessibleName("calibration name")
        form.addRow("Name", self.name)
        column.addLayout(form)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Save
                                        | QDialogButtonBox.StandardButton.Close)
        self.buttons.accepted.connect(self.save)
        self.buttons.rejected.connect(self.reject)
        column.addWidget(self.buttons)
        return column

    def _fit_plots(self) -> QWidget:
        from gui.fit_plots import FitPlots

        self.fit_plots = FitPlots()
        return self.fit_plots

    def _add_edit_actions(self) -> None:
        for key, slot in ((QKeySequence.StandardKey.Undo, lambda: self.model.undo_stack.undo()),
                          (QKeySequence.StandardKey.Redo, lambda: self.model.undo_stack.redo()),
                          (QKeySequence.StandardKey.Paste, self.paste),
                          (QKeySequence.StandardKey.Delete, self.clear_cells)):
            action = QAction(self.table)
            action.setShortcut(key)
            action.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
            action.triggered.connect(slot)
            self.table.addAction(action)

    def _use_chip(self, chip: Chip | None, rows: list[list[str]] | None = None) -> None:
        """Readings for ``chip``: a fresh table with its circuit's columns."""
        from core.model.circuits import CIRCUITS

        self.chip = chip
        save = self.buttons.button(QDialogButtonBox.StandardButton.Save)
        save.setEnabled(chip is not None)
        if chip is None:
            self.chip_label.setText("Fix the target form first: a new calibration belongs to "
                                    "its circuit, family and supply.")
            return
        circuit = CIRCUITS[chip.circuit]
        self.chip_label.setText(f"<b>{chip.family}</b> at {chip.supply_v:g} V "
                                f"({circuit.short})")
        self.model = BenchTableModel(circuit.keys, self, circuit.always_steered)
        self.model.dataChanged.connect(self.refit)
        self.model.rowsInserted.connect(self.refit)
        self.model.rowsRemoved.connect(self.refit)
        self.model.modelReset.connect(self.refit)
        self.table.setModel(self.model)
        self.model.insert_rows(0, rows or [[]])
        self.model.undo_stack.clear()  # the starting rows are no edit to undo

    def _prefill(self, candidate: Any) -> None:
        from core.units import format_part_value

        if self.chip is None:
            return
        values = dict(getattr(candidate, "values", {}) or {})
        self.model.set_rows([[format_part_value(values[k], k[0], 4) if k in values else ""
                              for k in self.model.keys]])
        self.model.undo_stack.clear()
        for kind, text in _part_tolerances(candidate).items():
            self.tolerances[kind].setText(text)
        self.name.setText(f"my-{self.chip.family.lower()}-{self.chip.supply_v:g}V")

    # -- the table
    def add_build(self) -> None:
        self.model.insert_rows(self.model.rowCount(), [[]], "Add build")
        self.table.setCurrentIndex(self.model.index(self.model.rowCount() - 1, 0))

    def delete_builds(self) -> None:
        rows = {i.row() for i in self.table.selectionModel().selectedIndexes()}
        if rows:
            self.model.remove_rows(sorted(rows))

    def clear_cells(self) -> None:
        indexes = self.table.selectionModel().selectedIndexes()
        self.model.undo_stack.beginMacro("Clear cells")
        for index in indexes:
            self.model.setData(index, "")
        self.model.undo_stack.endMacro()

    def paste(self, text: str | None = None) -> None:
        """A spreadsheet's rows at the current cell (the clipboard unless ``text``)."""
        at = self.table.currentIndex()
        text = QGuiApplication.clipboard().text() if text is None else text
        self.model.paste(text, max(at.row(), 0), max(at.column(), 0))

    # -- fitting
    def _inputs(self) -> tuple[Any, ...]:
        """What a fit depends on; InputError/TickbinError if the readings cannot be used."""
        from core.units import parse_tolerance

        if self.chip is None:
            raise TickbinError("fix the target form first")
        measurements, problems = self.model.measurements()
        if problems:
            raise TickbinError("; ".join(p[0].upper() + p[1:] for p in problems))
        if not measurements:
            raise TickbinError("enter at least one build: its parts and measured frequency")
        tolerances = tuple((kind, parse_tolerance(edit.text(), kind))
                           for kind, edit in self.tolerances.items() if edit.text().strip())
        return self.chip, tuple(measurements), tolerances

    def refit(self, *args: object) -> None:
        """Fit the readings again (in the worker); problems are named at once."""
        try:
            inputs = self._inputs()
        except TickbinError as e:
            self.job.cancel()
            self._fit = None
            self.fit_plots.clear()
            self._say(f"⚠ {e}" if self.model.measurements()[1] or self.chip is None
                      else str(e))
            return
        if self._fit is not None and self._fit[0] == inputs:
            return
        self.job.submit(lambda: _fit_work(inputs))

    def _fitted(self, answer: tuple[Any, Calibration, Any]) -> None:
        inputs, cal, predicted = answer
        self._fit = (inputs, cal)
        self.fit_plots.show_fit(cal, predicted)
        self._say(_fitted(cal))
        if self._save_after_fit:
            self._save_after_fit = False
            self._store(cal)

    def _fit_failed(self, message: str) -> None:
        self._fit = None
        self._save_after_fit = False
        self.fit_plots.clear()
        self._say(f"⚠ {message}")

    def _say(self, text: str) -> None:
        self.result_label.setText(text)

    # -- saving, renaming, deleting
    def save(self) -> None:
        """Save the fit under the name (after the running fit if one is running); problems
        stay in the dialog for correction."""
        from core.model.calibration import check_name

        try:
            inputs = self._inputs()
            name = check_name(self.name.text().strip())
        except TickbinError as e:
            self._say(f"⚠ {e}")
            return
        loaded = self._current_saved()
        if name in self.saved_list.names and name != loaded and not self.ask(
                self, "Replace calibration", f"A calibration named “{name}” exists. "
                "Replace it with this one?"):
            return
        if self._fit is not None and self._fit[0] == inputs:
            self._store(self._fit[1])
        else:
            self._save_after_fit = True
            self.job.submit(lambda: _fit_work(inputs))

    def _store(self, cal: Calibration) -> None:
        from core.model.calibration import save_calibration

        name = self.name.text().strip()
        try:
            save_calibration(cal, name)
        except TickbinError as e:
            self._say(f"⚠ {e}")
            return
        self.saved_name, self.saved = name, cal
        self.accept()

    def fitted_text(self) -> str:
        """The saved calibration's thresholds and uncertainty in words ("" before saving)."""
        return _fitted(self.saved) if self.saved is not None else ""

    def _current_saved(self) -> str | None:
        """The saved calibration selected in the list (None: a new one)."""
        rows = self.list_view.selectionModel().selectedRows()
        return self.saved_list.names[rows[0].row()] if rows else None

    def select_saved(self, name: str) -> None:
        """Show the saved calibration ``name`` (its readings, fit and numbers)."""
        row = self.saved_list.names.index(name)
        self.list_view.selectionModel().setCurrentIndex(
            self.saved_list.index(row), QItemSelectionModel.SelectionFlag.ClearAndSelect)

    def _saved_chosen(self, *args: object) -> None:
        from core.model.calibration import load_calibration

        name = self._current_saved()
        if name is None:
            return
        if self._unsaved() and not self.ask(
                self, "Show a saved calibration",
                f"Show “{name}” in place of the readings you typed? They are not saved."):
            selection = self.list_view.selectionModel()
            selection.blockSignals(True)
            selection.clearSelection()
            selection.blockSignals(False)
            return
        try:
            cal = load_calibration(name)
        except TickbinError as e:
            self._say(f"⚠ {e}")
            return
        self._use_chip(Chip(cal.circuit, cal.family, cal.supply_v), _reading_rows(cal))
        for kind, edit in self.tolerances.items():
            minus, plus = cal.tolerances_pct.get(kind, (0.0, 0.0))
            edit.setText(f"{max(minus, plus):g}%" if plus or minus else "")
        self.name.setText(name)
        self.refit()

    def delete_selected(self) -> None:
        from core.model.calibration import delete_calibration

        name = self._current_saved()
        if name is None or not self.ask(self, "Delete calibration",
                                        f"Delete the calibration “{name}”? Predictions "
                                        "made with it can no longer be repeated."):
            return
        try:
            delete_calibration(name)
        except TickbinError as e:
            self._say(f"⚠ {e}")
        self.saved_list.reload()

    @classmethod
    def ask(cls, parent: QWidget, title: str, text: str) -> bool:
        """A yes/no question (tests replace this)."""
        answer = QMessageBox.question(parent, title, text)
        return answer == QMessageBox.StandardButton.Yes

    def _unsaved(self) -> bool:
        """Readings typed since the table was filled (a saved or a new calibration)."""
        return not self.model.undo_stack.isClean()

    def reject(self) -> None:
        """Close; typed readings not saved are kept unless the person lets them go."""
        if self.isVisible() and self._unsaved() and not self.ask(
                self, "Close calibrations", "Close without saving the readings you typed?"):
            return
        super().reject()

    def done(self, result: int) -> None:
        """Closing: the fit running is no longer wanted."""
        self.job.cancel()
        self.job.wait()
        super().done(result)


def _fit_work(inputs: tuple[Any, ...]) -> tuple[Any, Calibration, Any]:
    """The fit and each build's predicted frequency (runs in the worker; no Qt)."""
    from core.model.calibration import fit, predicted_hz

    chip, measurements, tolerances = inputs
    osc = chip.oscillator()
    cal = fit(osc, measurements, tolerances=dict(tolerances))
    return inputs, cal, predicted_hz(osc, cal)


def _reading_rows(cal: Calibration) -> list[list[str]]:
    """A saved calibration's readings as table text (six figures: the fit repeats)."""
    from core.model.circuits import CIRCUITS
    from core.units import format_frequency, format_part_value

    keys = CIRCUITS[cal.circuit].keys
    return [[*(format_part_value(m.values[k], k[0], 6) for k in keys),
             format_frequency(m.frequency_hz, 6),
             "" if m.duty_pct is None else f"{m.duty_pct:g}%"] for m in cal.measurements]


def _fitted(cal: Calibration) -> str:
    text = (f"VT+ {cal.vt_plus_v:.3f} V, VT− {cal.vt_minus_v:.3f} V. A frequency predicted "
            f"with this calibration is uncertain by ±{cal.uncertainty_pct:.1f} % (1 sigma), "
            f"at most ±{cal.worst_case_pct:.1f} %.")
    if len(cal.measurements) > 1:
        text += f" The builds differ from the fit by {cal.residual_pct:.2f} % rms."
    # The advice on tolerances is in the dialog's introduction already.
    return " ".join([text, *(f"⚠ {w}" for w in cal.warnings if ADVICE not in w)])


def _part_tolerances(candidate: Any) -> dict[str, str]:
    """The widest tolerance of the candidate's resistors and of its capacitor, as text."""
    from core.design.design import network_tolerance

    networks = getattr(candidate, "networks", None) or {}
    widest: dict[str, float] = {}
    for key, node in networks.items():
        tol = network_tolerance(node)
        if key[0] in "RC":
            widest[key[0]] = max(widest.get(key[0], 0.0), tol.minus, tol.plus)
    return {kind: f"{100 * w:.3g}%" for kind, w in widest.items()}
