"""The target form: which circuit, which chip, what frequency (or band) and how close.

The form only collects text; ``core.units`` parses it. A field that does not
parse is marked (a warning sign in the field and a red edge) with the reason in
its tooltip, and the form reports no target until it is fixed.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QAction
from PySide6.QtWidgets import (
    QComboBox,
    QDoubleSpinBox,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QMenu,
    QPushButton,
    QSpinBox,
    QToolButton,
    QWidget,
)

from core.design.request import Request
from core.errors import InputError, TickbinError

if TYPE_CHECKING:
    from core.model.circuits.base import Circuit

Mode = Literal["frequency", "period", "band"]

MODES: tuple[tuple[str, Mode, str, str], ...] = (
    ("Frequency", "frequency", "1kHz", "The frequency to reach, e.g. 1kHz, 38k, 440 Hz"),
    ("Period", "period", "1ms", "The period to reach, e.g. 2ms, 250us"),
    ("Band (trim)", "band", "900..1100", "A band to cover with a trimmer, e.g. 400..480 "
     "or 1k..1.2kHz: the search then picks a pot, a fixed resistor and a capacitor"),
)
DIELECTRICS = (("C0G/NP0", ("c0g", "np0")), ("film", ("film",)), ("X7R", ("x7r",)),
               ("X5R", ("x5r",)), ("Y5V/Z5U", ("y5v", "z5u")), ("tantalum", ("tantalum",)),
               ("electrolytic", ("electrolytic",)))
"""The capacitor filter's choices, steadiest first, and the drawer names each allows."""
TRIM_SHARE = 0.05
"""Half-width of the band offered for trimming around a frequency target (±5 %, our choice:
wide enough for 5 % parts once the chip is trimmed out, fine enough to set by hand)."""


@dataclass(frozen=True)
class Target(Request):
    """What the person asked for, parsed (SI units: Hz, V, %): core's request, and how the
    target was typed (``mode``)."""

    mode: Mode = "frequency"

    def describe(self, duty: bool = True) -> str:
        """Short words for titles and sheets: ``1.00 kHz ±1 %`` or ``band 400 Hz … 480 Hz``
        (with the duty asked unless ``duty`` is False: a sheet states it beside its own)."""
        from core.units import format_frequency

        if self.band_hz is not None:
            lo, hi = self.band_hz
            return f"band {format_frequency(lo)} … {format_frequency(hi)}"
        assert self.target_hz is not None
        text = f"{format_frequency(self.target_hz)} ±{self.accept_pct:g} %"
        if duty and self.duty_pct is not None:
            text += f", duty {self.duty_pct:g} % ±{self.duty_within:g} points"
        if self.pins:
            text += f", line{'s' if len(self.pins) > 1 else ''} " + \
                ", ".join(map(str, self.pins)) + " pinned"
        return text


class TargetForm(QWidget):
    """Fields for circuit, family, supply, target, duty, accuracy, network size, calibration.

    Signals: ``sigChanged()`` after any edit (the window debounces it),
    ``sigNewCalibration()`` when the person asks to make a calibration.
    """

    sigChanged = Signal()  # noqa: N815
    sigNewCalibration = Signal()  # noqa: N815

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self._problems: dict[str, str] = {}
        self._ranges: dict[str, tuple[float, float]] = {}

        self._circuits: dict[str, Circuit] = {}
        """The circuits offered (filled by ``offer_circuits`` once the models are loaded)."""
        self.circuit = QComboBox()
        self.circuit.setMinimumContentsLength(12)
        self.circuit.setSizeAdjustPolicy(
            QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
        self._list_circuit_names()
        self.family = QComboBox()
        self.family.setMinimumContentsLength(14)  # "CD4060B 5–15 V" whole
        self.family.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToContents)
        self.supply = QLineEdit("5V")
        self.mode = QComboBox()
        for label, key, _, tip in MODES:
            self.mode.addItem(label, key)
            self.mode.setItemData(self.mode.count() - 1, tip, Qt.ItemDataRole.ToolTipRole)
        self.target = QLineEdit("1kHz")
        self.duty = QLineEdit()
        self.duty.setPlaceholderText("any")
        self.duty_within = QDoubleSpinBox()
        self.duty_within.setRange(0.1, 50.0)
        self.duty_within.setDecimals(1)
        self.duty_within.setSingleStep(0.5)
        self.duty_within.setValue(1.0)
        self.duty_within.setPrefix("±")
        self.duty_within.setSuffix(" pt")
        self.accept = QLineEdit("1%")
        self.max_r = QSpinBox()
        self.max_r.setRange(1, 3)
        self.max_r.setValue(2)
        self.max_r.setSuffix(" resistors")
        self.max_c = QSpinBox()
        self.max_c.setRange(1, 3)
        self.max_c.setValue(2)
        self.max_c.setSuffix(" capacitors")
        self.dielectric = QToolButton()
        self.dielectric.setPopupMode(QToolButton.ToolButtonPopupMode.InstantPopup)
        # The arrow is part of the text, so the button's size hint holds it (the style's
        # own menu arrow was drawn over the last letters).
        self.dielectric.setStyleSheet("QToolButton::menu-indicator { image: none; }")
        dielectric_menu = QMenu(self.dielectric)
        self._dielectric_actions: list[tuple[QAction, tuple[str, ...]]] = []
        for text, names in DIELECTRICS:
            action = dielectric_menu.addAction(text)
            action.setCheckable(True)
            action.toggled.connect(self._dielectrics_changed)
            self._dielectric_actions.append((action, names))
        self.dielectric.setMenu(dielectric_menu)
        self.calibration = QComboBox()
        self.calibration.setMinimumContentsLength(12)
        self.new_calibration = QPushButton("From a measurement…")
        self._pins: dict[int, str] = {}
        """Pinned stock lines and their words (a drawer's lines: not remembered)."""
        self.pinned = QLabel()
        self.pinned.setAccessibleName("pinned parts")
        self.unpin = QToolButton()
        self.unpin.setText("✕ Unpin")
        self.unpin.setToolTip("Search the whole drawer again (no part pinned)")
        self.unpin.setAccessibleName("unpin every part")
        self.message = QLabel()
        self.message.setObjectName("problem")
        self.message.setWordWrap(True)

        tips = {
            self.circuit: "The oscillator circuit to build (each names its parts on the "
                          "build sheet)",
            self.family: "The chip and its supply range; thresholds and limits come from the "
                         "device table",
            self.supply: "Supply voltage, e.g. 5V or 3.3 (the family's range is shown beside "
                         "its name)",
            self.mode: "Aim at one frequency, a period, or a band to trim over",
            self.target: MODES[0][3],
            self.duty: "Circuits that can steer their duty (555, Schmitt with steering "
                       "diodes): wanted share of time high, e.g. 60% (empty: any)",
            self.duty_within: "Duty error, in percentage points, that still counts as a hit "
                              "(with a duty asked)",
            self.accept: "Candidates within this error come first, fewest parts first",
            self.max_r: "Most resistors combined (series or parallel) for one resistance",
            self.max_c: "Most capacitors combined (parallel or series) for one capacitance",
            self.dielectric: "Only capacitors of the ticked dielectrics (none ticked: any). "
                             "C0G and film hold their value best",
            self.calibration: "Thresholds measured on your own chip (none: the device "
                              "table's min/typ/max)",
            self.new_calibration: "Make a calibration from a frequency you measured on the "
                                  "bench with known R and C",
        }
        names = {self.circuit: "circuit", self.family: "family", self.supply: "supply voltage",
                 self.mode: "target kind", self.target: "target", self.duty: "duty cycle",
                 self.duty_within: "duty tolerance",
                 self.accept: "acceptable error", self.max_r: "resistors per network",
                 self.max_c: "capacitors per network", self.dielectric: "capacitor dielectrics",
                 self.calibration: "calibration",
                 self.new_calibration: "new calibration"}
        for widget, tip in tips.items():
            widget.setToolTip(tip)
            widget.setAccessibleName(names[widget])
        self._fields: dict[str, QLineEdit] = {"supply": self.supply, "target": self.target,
                                              "duty": self.duty, "accept": self.accept}
        self._base_tips = {key: tips[w] for key, w in self._fields.items()}

        grid = QGridLayout(self)
        grid.setContentsMargins(0, 0, 0, 0)
        grid.setHorizontalSpacing(8)
        grid.setVerticalSpacing(6)

        def label(text: str, buddy: QWidget) -> QLabel:
            lab = QLabel(text)
            lab.setBuddy(buddy)
            lab.setAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
            return lab

        grid.addWidget(label("&Circuit", self.circuit), 0, 0)
        grid.addWidget(self.circuit, 0, 1)
        grid.addWidget(label("&Family", self.family), 0, 2)
        grid.addWidget(self.family, 0, 3)
        grid.addWidget(label("&Supply", self.supply), 0, 4)
        grid.addWidget(self.supply, 0, 5)
        grid.addWidget(label("&Target", self.target), 1, 0)
        target_box = QHBoxLayout()
        target_box.addWidget(self.mode)
        target_box.addWidget(self.target, 1)
        grid.addLayout(target_box, 1, 1)
        grid.addWidget(label("&Duty", self.duty), 1, 2)
        duty_box = QHBoxLayout()
        duty_box.addWidget(self.duty, 1)
        duty_box.addWidget(self.duty_within)
        grid.addLayout(duty_box, 1, 3)
        grid.addWidget(label("&Error within", self.accept), 1, 4)
        grid.addWidget(self.accept, 1, 5)
        # Networks and calibration get rows of their own, so the form fits a 1024 px window.
        grid.addWidget(label("At &most", self.max_r), 2, 0)
        network_box = QHBoxLayout()
        network_box.addWidget(self.max_r)
        network_box.addWidget(self.max_c)
        network_box.addWidget(self.dielectric)
        network_box.addStretch(1)
        grid.addLayout(network_box, 2, 1, 1, 5)
        grid.addWidget(label("Ca&libration", self.calibration), 3, 0)
        calibration_box = QHBoxLayout()
        calibration_box.addWidget(self.calibration, 1)
        calibration_box.addWidget(self.new_calibration)
        grid.addLayout(calibration_box, 3, 1, 1, 5)
        pin_box = QHBoxLayout()
        pin_box.addWidget(self.pinned, 1)
        pin_box.addWidget(self.unpin)
        grid.addLayout(pin_box, 4, 1, 1, 5)
        grid.addWidget(self.message, 5, 0, 1, 6)
        grid.setColumnStretch(1, 3)
        grid.setColumnStretch(3, 3)
        grid.setColumnStretch(5, 2)

        self._dielectrics_changed()
        self.circuit.currentIndexChanged.connect(self._circuit_changed)
        self.family.currentIndexChanged.connect(self._family_changed)
        self.mode.currentIndexChanged.connect(self._mode_changed)
        for edit in self._fields.values():
            edit.textChanged.connect(self._edited)
        for widget in (self.max_r, self.max_c, self.duty_within):
            widget.valueChanged.connect(self._edited)
        self.calibration.currentIndexChanged.connect(self._edited)
        self.new_calibration.clicked.connect(self.sigNewCalibration.emit)
        self._circuit_changed()
        self.reload_calibrations()
        self._show_pins()

    # -- which circuits
    def _list_circuit_names(self) -> None:
        """Before the circuit models are loaded (they need numpy, too slow before the first
        paint): every circuit the device table names, by name, so a remembered one stays."""
        try:
            from core.model.devices import device_table

            table = device_table()
            names = dict.fromkeys(table.family(n).circuit for n in table.families())
        except TickbinError as e:
            self._problems["family"] = str(e)
            names = {}
        for name in names:
            self.circuit.addItem(name, name)

    def offer_circuits(self, circuits: Iterable[Circuit]) -> None:
        """Offer every circuit the search handles (not ``unready``), named in words; the one
        chosen stays chosen where it is still offered."""
        current = self.circuit.currentData()
        self._circuits = {c.name: c for c in circuits if "search" not in c.unready}
        self.circuit.blockSignals(True)
        self.circuit.clear()
        for circuit in self._circuits.values():
            self.circuit.addItem(circuit.short or circuit.title, circuit.name)
            self.circuit.setItemData(self.circuit.count() - 1, circuit.oscillator,
                                     Qt.ItemDataRole.ToolTipRole)
        self.circuit.setCurrentIndex(max(0, self.circuit.findData(current)))
        self.circuit.blockSignals(False)
        self._circuit_changed()

    def chosen_circuit(self) -> Circuit | None:
        """The Circuit chosen (None until ``offer_circuits``)."""
        return self._circuits.get(self.circuit.currentData())

    def duty_offered(self) -> bool:
        """The chosen circuit can aim at a duty: it steers, or has a steered variant."""
        c = self.chosen_circuit()
        return c is not None and (c.steerable or c.steered_variant is not None)

    def band_offered(self) -> bool:
        """The chosen circuit has a part a pot may trim (a band can be searched)."""
        c = self.chosen_circuit()
        return c is not None and bool(c.trimmable)

    # -- dependent fields
    def _circuit_changed(self) -> None:
        circuit = self.circuit.currentData()
        chosen = self.chosen_circuit()
        previous = self.family.currentData()
        self.family.blockSignals(True)
        self.family.clear()
        self._ranges.clear()
        try:
            from core.model.devices import device_table

            table = device_table()
            for name in table.families(circuit):
                family = table.family(name)
                self._ranges[name] = tuple(family.supply_range_v)  # type: ignore[assignment]
                lo, hi = family.supply_range_v
                self.family.addItem(f"{name} {lo:g}–{hi:g} V", name)
                self.family.setItemData(self.family.count() - 1,
                                        f"{name}: supply {lo:g} … {hi:g} V",
                                        Qt.ItemDataRole.ToolTipRole)
        except TickbinError as e:
            self._problems["family"] = str(e)
        wanted = previous if self.family.findData(previous) >= 0 else (
            chosen.default_family if chosen else None)
        self.family.setCurrentIndex(max(0, self.family.findData(wanted)))
        self.family.blockSignals(False)
        self.duty.setEnabled(self.duty_offered())
        self.duty_within.setEnabled(self.duty_offered())
        band = self.mode.model().item(self.mode.findData("band"))  # type: ignore[attr-defined]
        band.setEnabled(chosen is None or self.band_offered())
        self._family_changed()

    def _family_changed(self) -> None:
        self._edited()

    def dielectrics(self) -> frozenset[str] | None:
        """The drawer dielectric names ticked, or None when none are (any capacitor)."""
        names = {n for action, group in self._dielectric_actions if action.isChecked()
                 for n in group}
        return frozenset(names) or None

    def _dielectrics_changed(self, *args: object) -> None:
        ticked = [a.text() for a, _ in self._dielectric_actions if a.isChecked()]
        self.dielectric.setText((", ".join(ticked) if ticked else "any dielectric") + " ▾")
        self._edited()

    def _mode_changed(self) -> None:
        _, _, example, tip = MODES[self.mode.currentIndex()]
        self.target.setPlaceholderText(example)
        self._base_tips["target"] = tip
        self.accept.setEnabled(self.mode.currentData() != "band")
        self._edited()

    def reload_calibrations(self, select: str | None = None) -> None:
        """Refill the calibration list from the data folder (after one was made, renamed or
        deleted); the form changes when ``select`` is given or the chosen one is gone."""
        current = select or self.calibration.currentData()
        self.calibration.blockSignals(True)
        self.calibration.clear()
        self.calibration.addItem("None (device table)", None)
        from core.model.calibration import list_calibrations, load_calibration

        for name in list_calibrations():
            try:
                cal = load_calibration(name)
            except TickbinError as e:
                self.calibration.addItem(f"{name} (unreadable)", name)
                self.calibration.setItemData(self.calibration.count() - 1, str(e),
                                             Qt.ItemDataRole.ToolTipRole)
                continue
            self.calibration.addItem(f"{name} ({cal.family}, {cal.supply_v:g} V)", name)
        index = self.calibration.findData(current)
        self.calibration.setCurrentIndex(max(index, 0))
        self.calibration.blockSignals(False)
        if select or (current is not None and index < 0):
            self._edited()

    def _edited(self, *args: object) -> None:
        self.sigChanged.emit()

    # -- pinned parts
    def pins(self) -> tuple[int, ...]:
        return tuple(self._pins)

    def pin_map(self) -> dict[int, str]:
        """The pinned stock lines and their words (a copy)."""
        return dict(self._pins)

    def set_pins(self, pins: dict[int, str]) -> None:
        """Pin exactly ``pins`` (stock line: words); the window makes it an undo step."""
        if pins != self._pins:
            self._pins = dict(pins)
            self._show_pins()
            self._edited()

    def _show_pins(self) -> None:
        self.pinned.setText("Pinned: " + ", ".join(f"{w} (line {n})" for n, w in
                                                    self._pins.items()))
        for widget in (self.pinned, self.unpin):
            widget.setVisible(bool(self._pins))

    # -- reading the form
    def target_value(self) -> Target | None:
        """The parsed target, or None (bad fields are marked and explained)."""
        from core.units import parse_band, parse_percent, parse_quantity, parse_voltage

        problems: dict[str, str] = {}
        circuit = self.circuit.currentData()
        mode: Mode = self.mode.currentData()

        def parse(key: str, fn: Any, *args: Any) -> Any:
            text = self._fields[key].text()
            try:
                return fn(text, *args)
            except InputError as e:
                problems[key] = e.reason
                return None

        supply = parse("supply", parse_voltage)
        family = self.family.currentData()
        supply_range = self._ranges.get(family)
        if supply is not None and supply_range and not (
                supply_range[0] <= supply <= supply_range[1]):
            problems["supply"] = (f"{family} runs from {supply_range[0]:g} "
                                  f"to {supply_range[1]:g} V")
        target_hz = band = None
        if mode == "band":
            band = parse("target", parse_band)
            chosen = self.chosen_circuit()
            if chosen is not None and not self.band_offered() and band is not None:
                problems["target"] = f"a band to trim is not offered for the {chosen.title}"
        elif mode == "period":
            period = parse("target", parse_quantity, "period")
            target_hz = 1.0 / period if period else None
        else:
            target_hz = parse("target", parse_quantity, "frequency")
        duty = None
        if self.duty_offered() and self.duty.text().strip():
            duty = parse("duty", parse_percent)
            if duty is not None and not 0 < duty < 100:
                problems["duty"] = "a duty cycle lies between 0 and 100 %"
        accept = 1.0
        if mode != "band":
            accept = parse("accept", parse_percent) or 1.0
        if not family:
            problems["family"] = self._problems.get("family", "no device families found")
        self._show_problems(problems)
        if problems:
            return None
        return Target(circuit=circuit, family=family, supply_v=supply,
                      mode=mode, target_hz=target_hz, band_hz=band, duty_pct=duty,
                      accept_pct=accept, max_resistors=self.max_r.value(),
                      max_capacitors=self.max_c.value(),
                      calibration=self.calibration.currentData(),
                      dielectrics=self.dielectrics(),
                      duty_within=self.duty_within.value(), pins=self.pins())

    def _show_problems(self, problems: dict[str, str]) -> None:
        for key, edit in self._fields.items():
            bad = key in problems
            if edit.property("invalid") != bad:
                edit.setProperty("invalid", bad)
                edit.style().unpolish(edit)
                edit.style().polish(edit)
            tip = self._base_tips[key]
            edit.setToolTip(f"⚠ {problems[key]}\n\n{tip}" if bad else tip)
            edit.setAccessibleDescription(f"problem: {problems[key]}" if bad else "")
        words = {"supply": "Supply", "target": "Target", "duty": "Duty", "accept": "Error",
                 "family": "Family"}
        self.message.setText("  ".join(f"⚠ {words[k]}: {v}" for k, v in problems.items()))
        self.message.setVisible(bool(problems))

    def trim_around(self, centre_hz: float, share: float = TRIM_SHARE) -> None:
        """Switch to a band of ±``share`` (fraction) around ``centre_hz`` [Hz] to trim."""
        from core.units import format_frequency

        if not self.band_offered():
            trimmable = [c.name for c in self._circuits.values() if c.trimmable]
            if trimmable:
                self.circuit.setCurrentIndex(self.circuit.findData(trimmable[0]))
        self.mode.setCurrentIndex(self.mode.findData("band"))
        self.target.setText(f"{format_frequency(centre_hz * (1 - share))}.."
                            f"{format_frequency(centre_hz * (1 + share))}")

    def show_error(self, text: str) -> None:
        """A problem found later (no oscillation, supply outside range) shown under the form."""
        self.message.setText(f"⚠ {text}" if text else "")
        self.message.setVisible(bool(text))

    # -- remembering the form
    def state(self) -> dict[str, str]:
        return {"circuit": self.circuit.currentData(), "family": self.family.currentData(),
                "supply": self.supply.text(), "mode": self.mode.currentData(),
                "target": self.target.text(), "duty": self.duty.text(),
                "accept": self.accept.text(), "duty_within": f"{self.duty_within.value():g}",
                "max_r": str(self.max_r.value()),
                "max_c": str(self.max_c.value()),
                "calibration": self.calibration.currentData() or "",
                "dielectrics": ",".join(a.text() for a, _ in self._dielectric_actions
                                        if a.isChecked())}

    def restore(self, state: dict[str, str]) -> None:
        """Fill the fields from ``state()`` output (unknown or bad entries are skipped)."""
        def pick(combo: QComboBox, data: str | None) -> None:
            index = combo.findData(data)
            if index >= 0:
                combo.setCurrentIndex(index)

        pick(self.circuit, state.get("circuit"))
        pick(self.family, state.get("family"))
        pick(self.mode, state.get("mode"))
        for key in ("supply", "target", "duty", "accept"):
            if key in state:
                self._fields[key].setText(str(state[key]))
        for key, spin in (("max_r", self.max_r), ("max_c", self.max_c)):
            if str(state.get(key, "")).isdigit():
                spin.setValue(int(state[key]))
        pick(self.calibration, state.get("calibration") or None)
        if "dielectrics" in state:
            ticked = set(str(state["dielectrics"]).split(","))
            for action, _ in self._dielectric_actions:
                action.setChecked(action.text() in ticked)
        try:
            within = float(state.get("duty_within", "nan"))
        except (TypeError, ValueError):
            within = math.nan
        if math.isfinite(within):  # missing or unreadable: keep the default
            self.duty_within.setValue(within)
