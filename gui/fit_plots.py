"""How well a calibration fits its bench readings: predicted against measured, residuals.

Each build is a point: its measured frequency across, the frequency the fitted
thresholds predict for its parts up (on the diagonal when the fit is exact),
and beside it the residual per build in percent. The items keep their data so
tests read it back with ``getData()``.
"""

from __future__ import annotations

from typing import Any

import numpy as np
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QHBoxLayout, QWidget

from gui.plot_library import pg
from gui.plots import CAP, INK, cosmetic_pen, styled_plot


class FitPlots(QWidget):
    """Predicted against measured frequency (left) and residuals in % by build (right)."""

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        layout = QHBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        self.fit = styled_plot("Predicted against measured", "calibration fit plot")
        self.fit.setLabel("bottom", "Measured", units="Hz")
        self.fit.setLabel("left", "Predicted", units="Hz")
        self.diagonal = self.fit.plot(pen=cosmetic_pen(INK, width=1, style=Qt.PenStyle.DashLine))
        self.points = self.fit.plot(pen=None, symbol="o", symbolSize=7,
                                    symbolBrush=pg.mkBrush(CAP), symbolPen=cosmetic_pen(CAP))
        self.residuals = styled_plot("Residuals", "calibration residuals plot")
        self.residuals.setLabel("bottom", "Build")
        self.residuals.setLabel("left", "Predicted − measured", units="%")
        self.residuals.getAxis("left").enableAutoSIPrefix(False)
        self.residuals.addItem(pg.InfiniteLine(angle=0, pos=0.0, pen=cosmetic_pen(INK, width=1)))
        self.residual_bars = pg.BarGraphItem(x=[], height=[], width=0.5,
                                             brush=pg.mkBrush(CAP), pen=cosmetic_pen(CAP))
        self.residuals.addItem(self.residual_bars)
        self.residual_points = self.residuals.plot(pen=None, symbol="o", symbolSize=6,
                                                   symbolBrush=pg.mkBrush(CAP))
        layout.addWidget(self.fit, 1)
        layout.addWidget(self.residuals, 1)

    def show_fit(self, cal: Any, predicted_hz: np.ndarray) -> None:
        """``cal``'s measured frequencies [Hz] against ``predicted_hz``, and the residuals."""
        measured = np.array([m.frequency_hz for m in cal.measurements])
        predicted = np.asarray(predicted_hz, dtype=float)
        self.points.setData(measured, predicted)
        ends = np.array([min(measured.min(), predicted.min()),
                         max(measured.max(), predicted.max())])
        self.diagonal.setData(ends, ends)
        builds = np.arange(1, measured.size + 1, dtype=float)
        residual = 100.0 * (predicted / measured - 1.0)
        self.residual_bars.setOpts(x=builds, height=residual)
        self.residual_points.setData(builds, residual)
        # At least ±2 % of frequency and ±0.5 % of residual in view: one build, or a fit
        # that is exact, would otherwise zoom in on rounding.
        centre, half = ends.mean(), max(0.6 * (ends[1] - ends[0]), 0.02 * ends[1])
        self.fit.setXRange(centre - half, centre + half, padding=0)
        self.fit.setYRange(centre - half, centre + half, padding=0)
        limit = max(1.3 * float(np.max(np.abs(residual))), 0.5)
        self.residuals.getAxis("bottom").setTicks([[(b, f"{b:.0f}") for b in builds]])
        self.residuals.setXRange(0.5, measured.size + 0.5, padding=0)
        self.residuals.setYRange(-limit, limit, padding=0)

    def clear(self) -> None:
        self.points.setData([], [])
        self.diagonal.setData([], [])
        self.residual_bars.setOpts(x=[], height=[])
        self.residual_points.setData([], [])
