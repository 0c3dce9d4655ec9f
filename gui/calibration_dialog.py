"""A small dialog that turns one bench measurement into a saved calibration.

The person built the circuit with known parts, measured its frequency (and
perhaps its duty); ``core.model.calibration.calibrate`` finds thresholds that
reproduce it, and ``save_calibration`` keeps them in the data folder. The
parts' tolerances say how sure the result is; the dialog shows that before
saving.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLabel,
    QLineEdit,
    QVBoxLayout,
    QWidget,
)

from core.errors import InputError, TickbinError
from core.model.calibration import ADVICE, Calibration
from gui.target_form import Target


class CalibrationDialog(QDialog):
    """Fields for the parts used, the measured frequency and duty, and a name."""

    def __init__(self, parent: QWidget | None, target: Target | None, candidate: Any = None):
        super().__init__(parent)
        self.setWindowTitle("Calibration from a bench measurement")
        self.target = target
        self.saved_name: str | None = None
        self.saved: Calibration | None = None
        layout = QVBoxLayout(self)
        intro = QLabel("Build the circuit with parts you know, measure its frequency "
                       "with a frequency counter or oscilloscope, and enter it here. "
                       "Tickbin fits the thresholds of <i>your</i> chip. "
                       f"{ADVICE[0].upper()}{ADVICE[1:]}.")
        intro.setWordWrap(True)
        layout.addWidget(intro)
        self.buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Save
                                        | QDialogButtonBox.StandardButton.Cancel)
        self.buttons.accepted.connect(self.save)
        self.buttons.rejected.connect(self.reject)
        self.result_label = QLabel()
        self.result_label.setWordWrap(True)
        self.fields: dict[str, QLineEdit] = {}
        if target is None:
            layout.addWidget(QLabel("Fix the target form first: the calibration belongs to "
                                    "its circuit, family and supply."))
            self.buttons.button(QDialogButtonBox.StandardButton.Save).setEnabled(False)
            layout.addWidget(self.buttons)
            return
        form = QFormLayout()
        from core.model.circuits import CIRCUITS
        from core.units import format_part_value

        circuit = CIRCUITS[target.circuit]
        form.addRow("Chip", QLabel(f"{target.family} at {target.supply_v:g} V "
                                   f"({circuit.short})"))
        values = dict(getattr(candidate, "values", {}) or {})
        for key in circuit.keys:
            edit = QLineEdit()
            if key in values:
                edit.setText(format_part_value(values[key], key[0], 4))
            edit.setAccessibleName(f"{key} used")
            edit.setToolTip("The measured value of the part (a meter reading beats the "
                            "marking)")
            self.fields[key] = edit
            form.addRow(f"{key} used", edit)
        self.measured = QLineEdit()
        self.measured.setPlaceholderText("e.g. 1.013kHz")
        self.measured.setAccessibleName("measured frequency")
        self.tolerances: dict[str, QLineEdit] = {}
        known = _part_tolerances(candidate)
        for kind, label, default in (("R", "Resistor tolerance", "±5 %"),
                                     ("C", "Capacitor tolerance", "±20 %")):
            edit = QLineEdit(known.get(kind, ""))
            edit.setPlaceholderText(f"{default} if empty")
            edit.setAccessibleName(label.lower())
            edit.setToolTip("The tolerance of the parts used (1%, ±5%, F, J); it sets how "
                            "sure the calibration is")
            self.tolerances[kind] = edit
            form.addRow(label, edit)
        self.duty = QLineEdit()
        self.duty.setPlaceholderText("optional, e.g. 47%")
        self.duty.setAccessibleName("measured duty")
        self.duty.setToolTip("With the duty both thresholds are fitted; without it their "
                             "ratio stays as in the table")
        self.name = QLineEdit(f"my-{target.family.lower()}-{target.supply_v:g}V")
        self.name.setAccessibleName("calibration name")
        form.addRow("Measured frequency", self.measured)
        form.addRow("Measured duty", self.duty)
        form.addRow("Name", self.name)
        layout.addLayout(form)
        layout.addWidget(self.result_label)
        layout.addWidget(self.buttons)
        for edit in (*self.fields.values(), *self.tolerances.values(), self.measured,
                     self.duty):
            edit.editingFinished.connect(self.preview)
        self.resize(440, 0)

    def _fit(self) -> Calibration:
        """The calibration the fields describe (InputError/TickbinError if they cannot)."""
        assert self.target is not None
        from core.model.calibration import calibrate
        from core.model.timing import make_oscillator
        from core.units import (
            parse_capacitance,
            parse_frequency,
            parse_percent,
            parse_resistance,
            parse_tolerance,
        )

        values = {key: (parse_capacitance if key == "C" else parse_resistance)(edit.text())
                  for key, edit in self.fields.items()}
        measured = parse_frequency(self.measured.text())
        duty = parse_percent(self.duty.text()) if self.duty.text().strip() else None
        tolerances = {kind: parse_tolerance(edit.text(), kind)
                      for kind, edit in self.tolerances.items() if edit.text().strip()}
        osc = make_oscillator(self.target.circuit, self.target.family, self.target.supply_v)
        return calibrate(osc, values, measured, duty, tolerances=tolerances)

    def preview(self) -> None:
        """Once the parts and the reading are in: the thresholds and how sure they are."""
        if not self.measured.text().strip():
            return
        try:
            cal = self._fit()
        except (InputError, TickbinError) as e:
            self.result_label.setText(f"⚠ {e}")
            return
        self.result_label.setText(_fitted(cal))

    def save(self) -> None:
        """Fit, save and close; problems stay in the dialog for correction."""
        from core.model.calibration import check_name, save_calibration

        try:
            cal = self._fit()
            name = check_name(self.name.text().strip())
            save_calibration(cal, name)
        except (InputError, TickbinError) as e:
            self.result_label.setText(f"⚠ {e}")
            return
        self.saved_name = name
        self.saved = cal
        self.accept()

    def fitted_text(self) -> str:
        """The saved calibration's thresholds and uncertainty in words ("" before saving)."""
        return _fitted(self.saved) if self.saved is not None else ""


def _fitted(cal: Calibration) -> str:
    return (f"VT+ {cal.vt_plus_v:.3f} V, VT− {cal.vt_minus_v:.3f} V. A frequency predicted "
            f"with this calibration is uncertain by ±{cal.uncertainty_pct:.1f} % (1 sigma), "
            f"at most ±{cal.worst_case_pct:.1f} %.")


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
