"""Frequency against temperature and against supply for the selected candidate.

Two tabs beside the spread plot. Core computes the curves
(``core.model.drift.temperature_curve``/``supply_curve``, the same figures as
``predict --temperature``/``--supply-range``) in a worker thread (a supply sweep
with a steering diode takes longer than a frame); this module only draws them.
Each plot is made the first time its tab is shown. The ranges are typed in the
field at the tabs' right (°C unless a unit is given; the family's supply range
by default) and remembered between runs (not by a screenshot run).
"""

from __future__ import annotations

import contextlib
import json
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
from PySide6.QtCore import QObject, Qt, Signal
from PySide6.QtWidgets import QLineEdit, QTabWidget, QVBoxLayout, QWidget

from core.units import format_frequency
from gui.background import LatestJob
from gui.plot_library import pg
from gui.plots import ACCEPT, ACCEPT_EDGE, CAP, ENVELOPE, INK, cosmetic_pen, styled_plot

DEFAULT_TEMPERATURE = "-20..70"
"""°C: a build in a case indoors, a shed or a car in spring (our choice; any range can be
typed)."""
KINDS = ("temperature", "supply")


@dataclass(frozen=True)
class DriftSubject:
    """What to plot: a design's nominal part values [Ω, F] on ``osc``, each role's
    temperature envelope, and the target to mark (a frequency [Hz] with its acceptance
    band, or a trim band)."""

    osc: Any
    values: Mapping[str, float]
    envelopes: Mapping[str, Any]
    diode_steered: bool = False
    target_hz: float | None = None
    band_hz: tuple[float, float] | None = None


def _curve_work(kind: str, subject: DriftSubject, text: str) -> Callable[[], Any]:
    """The core computation for one plot (runs in the worker; no Qt)."""
    from core.model.drift import supply_curve, temperature_curve
    from core.units import parse_temperature_range, parse_voltage_range

    def work() -> Any:
        if kind == "temperature":
            lo, hi = parse_temperature_range(text)
            return kind, subject, temperature_curve(subject.osc, subject.values, lo, hi,
                                                    subject.envelopes, subject.diode_steered)
        lo, hi = parse_voltage_range(text) if text.strip() else subject.osc.family.supply_range_v
        return kind, subject, supply_curve(subject.osc, subject.values, lo, hi,
                                           subject.diode_steered)
    return work


class DriftPlots(QObject):
    """The temperature and supply tabs of ``tabs`` and the range field in its corner.

    Signals: ``sigDrawn(kind)`` once a curve for the current subject is drawn,
    ``sigFailed(message)`` when it cannot be (the message also titles the plot).
    """

    sigDrawn = Signal(str)  # noqa: N815
    sigFailed = Signal(str)  # noqa: N815

    def __init__(self, tabs: QTabWidget, *, remember: bool = True):
        super().__init__(tabs)
        self.tabs, self.remember = tabs, remember
        self.subject: DriftSubject | None = None
        self.plots: dict[str, Any] = {}
        self.items: dict[str, dict[str, Any]] = {}
        self.pages: dict[str, QWidget] = {}
        for kind, label in zip(KINDS, ("Temp.", "Supply"), strict=True):
            page = QWidget()
            QVBoxLayout(page).setContentsMargins(0, 0, 0, 0)
            self.pages[kind] = page
            tabs.addTab(page, label)
            tabs.setTabToolTip(tabs.count() - 1, f"Frequency against {kind} (nominal parts)")
        self.ranges = {"temperature": DEFAULT_TEMPERATURE, "supply": ""}
        if remember:
            self._restore()
        self.range_edit = QLineEdit()
        self.range_edit.setAccessibleName("drift range")
        self.range_edit.setFixedWidth(78)
        self.range_edit.editingFinished.connect(self._range_typed)
        tabs.setCornerWidget(self.range_edit, Qt.Corner.TopRightCorner)
        self.range_edit.hide()
        self.job = LatestJob(self)
        self.job.sigDone.connect(self._draw)
        self.job.sigFailed.connect(self._failed)
        tabs.currentChanged.connect(self._tab_changed)

    # -- state
    def current_kind(self) -> str | None:
        page = self.tabs.currentWidget()
        return next((k for k, p in self.pages.items() if p is page), None)

    def set_subject(self, subject: DriftSubject | None) -> None:
        """A new candidate (None: nothing selected); the visible drift plot follows it."""
        self.subject = subject
        self.job.cancel()
        kind = self.current_kind()
        if kind is not None:
            self._refresh(kind)

    def _restore(self) -> None:
        from gui.settings import DRIFT_RANGES, settings

        stored = settings().value(DRIFT_RANGES)
        if isinstance(stored, str):
            with contextlib.suppress(ValueError, TypeError, AttributeError):
                self.ranges.update({k: str(v) for k, v in json.loads(stored).items()
                                    if k in KINDS})

    def _remember(self) -> None:
        from gui.settings import DRIFT_RANGES, settings

        settings().setValue(DRIFT_RANGES, json.dumps(self.ranges))

    def set_range(self, kind: str, text: str) -> None:
        """Plot ``kind`` over ``text`` (``-20..70``, ``32..104degF``, ``3..4.5V``; an empty
        supply range is the family's)."""
        self.ranges[kind] = text
        if self.remember:
            self._remember()
        if self.current_kind() == kind:
            self.range_edit.setText(text)
            self._refresh(kind)

    def _range_typed(self) -> None:
        kind = self.current_kind()
        if kind is not None and self.range_edit.text() != self.ranges[kind]:
            self.set_range(kind, self.range_edit.text())

    def _tab_changed(self, *args: object) -> None:
        kind = self.current_kind()
        self.range_edit.setVisible(kind is not None)
        if kind is None:
            return
        self.range_edit.setText(self.ranges[kind])
        self.range_edit.setPlaceholderText("full range" if kind == "supply" else "")
        self.range_edit.setToolTip(
            "Temperatures to plot, °C unless a unit is given: -20..70, 32..104degF"
            if kind == "temperature" else
            "Supplies to plot, e.g. 3..4.5V for a battery; empty: the family's range")
        self._refresh(kind)

    # -- drawing
    def _refresh(self, kind: str) -> None:
        self._ensure_plot(kind)
        if self.subject is None:
            self._clear(kind, "Select a candidate to see it here")
            return
        self.job.submit(_curve_work(kind, self.subject, self.ranges[kind]))

    def _ensure_plot(self, kind: str) -> None:
        if kind in self.plots:
            return
        title = ("Frequency against temperature" if kind == "temperature"
                 else "Frequency against supply")
        plot = styled_plot(title, f"frequency against {kind} plot")
        plot.setLabel("bottom", "Temperature" if kind == "temperature" else "Supply",
                      units="°C" if kind == "temperature" else "V")
        plot.getAxis("bottom").enableAutoSIPrefix(False)
        plot.setLabel("left", "Frequency", units="Hz")
        region = pg.LinearRegionItem(orientation="horizontal", movable=False,
                                     brush=pg.mkBrush(ACCEPT), pen=cosmetic_pen(ACCEPT_EDGE))
        target = pg.InfiniteLine(angle=0, pen=cosmetic_pen(INK, width=1.5))
        here = pg.InfiniteLine(angle=90, pen=cosmetic_pen(INK, width=1,
                                                          style=Qt.PenStyle.DashLine))
        low = plot.plot(pen=cosmetic_pen(CAP, width=2))
        high = plot.plot(pen=cosmetic_pen(CAP, width=2))
        fill = pg.FillBetweenItem(low, high, brush=pg.mkBrush(ENVELOPE))
        for item in (region, target, here, fill):
            plot.addItem(item)
        self.items[kind] = {"region": region, "target": target, "here": here, "low": low,
                            "high": high, "fill": fill}
        self.plots[kind] = plot
        self.pages[kind].layout().addWidget(plot)

    def _clear(self, kind: str, why: str) -> None:
        items = self.items[kind]
        for key in ("low", "high"):
            items[key].setData([], [])
        for key in ("region", "target", "here", "fill"):
            items[key].hide()
        self.plots[kind].setTitle(why, color=INK.name(), size="10pt")

    def clear(self) -> None:
        """No candidate: empty drift plots (those made so far)."""
        self.set_subject(None)

    def _failed(self, message: str) -> None:
        kind = self.current_kind()
        if kind is not None:
            self._clear(kind, f"⚠ {message}")
        self.sigFailed.emit(message)

    def _draw(self, answer: tuple[str, DriftSubject, Any]) -> None:
        kind, subject, curve = answer
        if subject is not self.subject or kind not in self.plots:
            return
        items = self.items[kind]
        items["low"].setData(curve.x, curve.low_hz, connect="finite")
        items["high"].setData(curve.x, curve.high_hz, connect="finite")
        items["fill"].setVisible(kind == "temperature")
        self._mark(kind, subject)
        self.plots[kind].setTitle(self._title(kind, curve), color=INK.name(),
                                  size="10pt")
        self.plots[kind].getPlotItem().enableAutoRange()
        self.sigDrawn.emit(kind)

    def _mark(self, kind: str, subject: DriftSubject) -> None:
        items = self.items[kind]
        band = subject.band_hz
        items["region"].setVisible(band is not None)
        if band is not None:
            items["region"].setRegion(band)
        items["target"].setVisible(subject.target_hz is not None)
        if subject.target_hz is not None:
            items["target"].setValue(subject.target_hz)
        items["here"].show()
        items["here"].setValue(25.0 if kind == "temperature" else subject.osc.supply_v)

    @staticmethod
    def _title(kind: str, curve: Any) -> str:
        lo_x, hi_x = float(curve.x[0]), float(curve.x[-1])
        unit = "°C" if kind == "temperature" else "V"
        finite = np.concatenate([curve.low_hz, curve.high_hz])
        finite = finite[np.isfinite(finite)]
        if finite.size < 2 * curve.x.size:
            return f"{lo_x:g}…{hi_x:g} {unit}: stops at some {kind}s"
        return (f"{lo_x:g}…{hi_x:g} {unit}: {format_frequency(float(finite.min()))} … "
                f"{format_frequency(float(finite.max()))}")


def drift_subject(osc: Any, design: Any, values: Mapping[str, float],
                  target_hz: float | None, band_hz: tuple[float, float] | None
                  ) -> DriftSubject:
    """The drift plots' subject for a search or trim design with ``values`` (a trim design:
    the pot folded in at its rotation; its role drifts as the widest of fixed part and pot)."""
    from core.design.robust import network_envelope
    from core.model.drift import widest

    networks = design.networks
    envelopes = {role: network_envelope(role, node) for role, node in networks.items()}
    if "P" in envelopes:
        pot = envelopes.pop("P")
        envelopes[design.trimmed] = widest(envelopes[design.trimmed], pot,
                                           source="fixed part and pot")
    return DriftSubject(osc, dict(values), envelopes, bool(design.diode_steered), target_hz,
                        band_hz)
