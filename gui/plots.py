"""Live plots (pyqtgraph): the waveform, the spread of frequency, the trimmer's curve,
and (``gui.drift_plots``) the frequency against temperature and supply.

Each method takes plain arrays in SI units computed by core; the items keep
their data so tests read it back with ``getData()``. pyqtgraph is imported
only here, and this module is imported only after the window is on screen.
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import TYPE_CHECKING

import numpy as np
from PySide6.QtCore import Qt
from PySide6.QtGui import QColor, QFont, QGuiApplication, QPen
from PySide6.QtWidgets import QGraphicsItem, QHBoxLayout, QStackedWidget, QTabWidget, QWidget

from gui.plot_library import pg

if TYPE_CHECKING:
    from core.model.circuits.base import Circuit

# Our palette: ink for text and axes, a slate blue and a copper for the two traces,
# a sage green for "acceptable", a muted plum for thresholds.
INK = QColor(52, 58, 64)
GRID = 40
CAP = QColor(47, 94, 150)
OUT = QColor(176, 104, 48)
ACCEPT = QColor(96, 150, 110, 60)
ACCEPT_EDGE = QColor(96, 150, 110)
THRESHOLD = QColor(130, 80, 130)
ENVELOPE = QColor(47, 94, 150, 50)

CROWDED_SHARE = 0.1
"""An output level this close to a threshold (a share of the plot's voltage span) leaves no
room for a label above or below the line: a 555's output high (about VCC − 1.7 V, 3.3 V at
5 V: NE555 data sheet, from memory) sits on its 2/3 VCC threshold. Such labels go beside
the traces, on their lines; a rail-to-rail output leaves room near the left."""


def cosmetic_pen(color: QColor, width: float = 1.0,
         style: Qt.PenStyle = Qt.PenStyle.SolidLine) -> QPen:
    """A pen ``width`` logical pixels wide: pyqtgraph's pens are cosmetic (device pixels),
    so without this every line would look half as heavy on a 2× screen."""
    app = QGuiApplication.instance()
    ratio = app.devicePixelRatio() if isinstance(app, QGuiApplication) else 1.0
    return pg.mkPen(color, width=width * ratio, style=style)


def styled_plot(title: str, accessible: str) -> pg.PlotWidget:
    """A plot in our look: white, light grid, our ink, no menu or buttons."""
    widget = pg.PlotWidget(background="w", enableMenu=False)  # no menus: none built
    widget.setAccessibleName(accessible)
    item = widget.getPlotItem()
    item.setTitle(title, color=INK.name(), size="10pt")
    item.showGrid(x=True, y=True, alpha=GRID / 255)
    item.setMenuEnabled(False)
    font = QFont()
    font.setPointSizeF(max(8.0, font.pointSizeF() * 0.9))
    for name in ("left", "bottom"):
        axis = item.getAxis(name)
        axis.setPen(cosmetic_pen(INK))
        axis.setTextPen(cosmetic_pen(INK))
        axis.setStyle(tickFont=font)
        axis.label.setFont(font)
        # Keep the drawn axis as a pixmap: a new trace then repaints without redrawing
        # every tick label (the costliest part of a repaint here).
        axis.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
    item.hideButtons()
    return widget


def compact_tabs(accessible: str) -> QTabWidget:
    """Tabs in our look, small enough that three short names and the drift range field
    stay in view at 1024 px."""
    tabs = QTabWidget()
    tabs.setDocumentMode(True)
    tabs.tabBar().setUsesScrollButtons(False)
    tabs.tabBar().setStyleSheet(
        "QTabBar::tab { padding: 1px 6px; margin-right: 1px; background: #ece9e3;"
        " border: 1px solid #d6d2ca; border-bottom: none; border-top-left-radius: 3px;"
        " border-top-right-radius: 3px; }"
        " QTabBar::tab:selected { background: white; }")
    tabs.setAccessibleName(accessible)
    return tabs


class PlotPanel(QWidget):
    """Waveform on the left (a counter's output in a second tab); on the right, tabs: frequency
    spread (search) or frequency vs rotation (trim), frequency against temperature,
    frequency against supply.

    Making a pyqtgraph plot takes about 25 ms here, so ``build_steps()`` makes
    one per step (the window runs the steps from its event loop) and the trimmer
    plot waits until a trim result needs it.
    """

    def __init__(self, parent: QWidget | None = None, *, remember: bool = True):
        super().__init__(parent)
        self.remember = remember  # the drift ranges typed, between runs
        pg.setConfigOptions(antialias=True)
        self.right = QStackedWidget()
        self.tabs = compact_tabs("plots of the selected candidate")
        self.tabs.addTab(self.right, "Spread")
        # The waveform, and a counter's output beside it in a second tab (the bar shows
        # only then: a single tab hides it).
        self.left = compact_tabs("waveforms of the selected candidate")
        self.left.setTabBarAutoHide(True)
        self._layout = QHBoxLayout(self)
        self._layout.setContentsMargins(0, 0, 0, 0)
        self._layout.setSpacing(8)

    def build_steps(self) -> Iterator[None]:
        """Make the plots, one per step (yields between); ends empty and ready. The window
        shows the panel once it is built, with a result already drawn into it, so each
        plot is first painted once, with its data."""
        self._make_waveform()
        self.left.addTab(self.waveform, "Oscillator")
        self._layout.addWidget(self.left, 1)
        yield
        self._make_spread()
        self.right.addWidget(self.spread)
        self._make_drift()
        self._layout.addWidget(self.tabs, 1)
        self._rotation_made = False  # made when a trim result first needs it
        self._divided_made = False  # made when a counter's result first needs it
        self.clear()

    def _make_waveform(self) -> None:
        self.waveform = styled_plot("Capacitor and output", "waveform plot")
        self.waveform.setLabel("bottom", "Time", units="s")
        self.waveform.setLabel("left", "Voltage", units="V")
        self.out_curve = self.waveform.plot(pen=cosmetic_pen(OUT, width=1.6))
        self.cap_curve = self.waveform.plot(pen=cosmetic_pen(CAP, width=2.0))
        dash = cosmetic_pen(THRESHOLD, width=1.2, style=Qt.PenStyle.DashLine)
        # Labels on a light backing so traces stay legible; texts (the circuit's words)
        # and places are set in show_waveform.
        backing = pg.mkBrush(255, 255, 255, 210)
        self.vt_plus_line, self.vt_minus_line = (
            pg.InfiniteLine(angle=0, pen=dash, label="",
                            labelOpts={"color": THRESHOLD, "fill": backing})
            for _ in range(2))
        for line in (self.vt_plus_line, self.vt_minus_line):
            self.waveform.addItem(line)

    def _make_spread(self) -> None:
        self.spread = styled_plot("Spread over part tolerances", "frequency spread plot")
        self.spread.setLabel("bottom", "Frequency", units="Hz")
        self.spread.setLabel("left", "Share of builds", units="%")
        self.spread.getAxis("left").enableAutoSIPrefix(False)
        self.accept_region = pg.LinearRegionItem(movable=False, brush=pg.mkBrush(ACCEPT),
                                                 pen=cosmetic_pen(ACCEPT_EDGE))
        self.spread.addItem(self.accept_region)
        self.hist_curve = self.spread.plot(stepMode="center", fillLevel=0,
                                           pen=cosmetic_pen(CAP, width=1.2),
                                           brush=pg.mkBrush(CAP.red(), CAP.green(),
                                                            CAP.blue(), 110))
        self.target_line = pg.InfiniteLine(angle=90, pen=cosmetic_pen(INK, width=1.5),
                                           label="target", labelOpts={"position": 0.95,
                                                                      "color": INK})
        self.spread.addItem(self.target_line)

    def _make_drift(self) -> None:
        from gui.drift_plots import DriftPlots

        self.drift = DriftPlots(self.tabs, remember=self.remember)

    def _make_divided(self) -> None:
        if self._divided_made:
            return
        self._divided_made = True
        self.divided = styled_plot("", "counter output plot")
        self.divided.setLabel("bottom", "Time", units="s")
        self.divided.setLabel("left", "Voltage", units="V")
        self.divided_curve = self.divided.plot(pen=cosmetic_pen(OUT, width=1.6))

    def hide_divided(self) -> None:
        """No counter after the oscillator: no second tab."""
        if self._divided_made and self.left.indexOf(self.divided) >= 0:
            self.divided_curve.setData([], [])
            self.left.removeTab(self.left.indexOf(self.divided))

    def show_divided(self, t_s: np.ndarray, v_out: np.ndarray, tab: str, title: str) -> None:
        """A counter's output (t in s, V) in the tab named ``tab`` beside the oscillator's
        waveform."""
        self._make_divided()
        if self.left.indexOf(self.divided) < 0:
            self.left.addTab(self.divided, tab)
        self.left.setTabText(self.left.indexOf(self.divided), tab)
        self.divided_curve.setData(t_s, v_out)
        self.divided.setTitle(title, color=INK.name(), size="10pt")
        self.divided.setXRange(float(t_s[0]), float(t_s[-1]), padding=0.02)
        lo, hi = float(np.min(v_out)), float(np.max(v_out))
        span = hi - lo or 1.0
        self.divided.setYRange(lo - 0.1 * span, hi + 0.1 * span, padding=0)

    def _make_rotation(self) -> None:
        if self._rotation_made:
            return
        self._rotation_made = True
        self.rotation = styled_plot("Frequency against rotation", "trimmer rotation plot")
        self.rotation.setLabel("bottom", "Rotation (%)")
        self.rotation.setLabel("left", "Frequency", units="Hz")
        self.band_region = pg.LinearRegionItem(orientation="horizontal", movable=False,
                                               brush=pg.mkBrush(ACCEPT),
                                               pen=cosmetic_pen(ACCEPT_EDGE))
        self.rotation.addItem(self.band_region)
        self.envelope_low = self.rotation.plot(pen=cosmetic_pen(CAP, width=1,
                                                            style=Qt.PenStyle.DotLine))
        self.envelope_high = self.rotation.plot(pen=cosmetic_pen(CAP, width=1,
                                                             style=Qt.PenStyle.DotLine))
        self.envelope_fill = pg.FillBetweenItem(self.envelope_low, self.envelope_high,
                                                brush=pg.mkBrush(ENVELOPE))
        self.rotation.addItem(self.envelope_fill)
        self.rotation_curve = self.rotation.plot(pen=cosmetic_pen(CAP, width=2))
        turn = cosmetic_pen(INK, width=1, style=Qt.PenStyle.DashLine)
        self.turn_lines = [pg.InfiniteLine(angle=90, pen=turn) for _ in range(2)]
        for line in self.turn_lines:
            self.rotation.addItem(line)
        self.right.addWidget(self.rotation)

    def clear(self, why: str = "") -> None:
        """Empty plots (no candidate selected); ``why`` (a few words) titles the waveform."""
        curves = [self.cap_curve, self.out_curve, self.hist_curve]
        marks = [self.vt_plus_line, self.vt_minus_line, self.target_line, self.accept_region]
        if self._rotation_made:
            curves += [self.rotation_curve, self.envelope_low, self.envelope_high]
            marks += [self.band_region, *self.turn_lines, self.envelope_fill]
            self.right.setCurrentWidget(self.spread)  # no trim design left to show
            self.tabs.setTabText(0, "Spread")
        self.drift.clear()
        self.hide_divided()
        for curve in curves:
            curve.setData([], [])
        for item in marks:
            item.hide()
        self.waveform.setTitle(why or "Select a candidate to see it here", color=INK.name(),
                               size="10pt")
        titles = [self.spread] + ([self.rotation] if self._rotation_made else [])
        for plot in titles:
            plot.setTitle("", color=INK.name(), size="10pt")

    def show_waveform(self, t_s: np.ndarray, v_cap: np.ndarray, v_out: np.ndarray,
                      vt_plus_v: float, vt_minus_v: float, circuit: Circuit,
                      title: str, node: str = "C") -> None:
        """Traces over a few periods; t in s, voltages in V; thresholds as dashed lines,
        labelled in ``circuit``'s words (one line where it switches at one voltage).
        ``v_cap`` is the timing node's voltage; ``node`` names it in the key ("C" where
        the capacitor's other end is grounded)."""
        self.cap_curve.setData(t_s, v_cap)
        self.out_curve.setData(t_s, v_out)
        swing = float(np.ptp(np.concatenate([v_cap, v_out]))) or 1.0
        crowded = any(abs(level - vt) < CROWDED_SHARE * swing
                      for level in (float(np.max(v_out)), float(np.min(v_out)))
                      for vt in (vt_plus_v, vt_minus_v))
        margin = 0.25 if crowded else 0.0  # kept right of the traces, a share of the time
        upper, lower = circuit.threshold_names
        for line, name, off_line in ((self.vt_plus_line, upper, (0.0, 1.0)),
                                     (self.vt_minus_line, lower, (0.0, 0.0))):
            # Beside the traces: centred on the line at the right edge; else just above
            # the upper line (below the lower one), starting at the left edge so a narrow
            # plot never cuts the label.
            line.label.anchors = [(1.0, 0.5)] * 2 if margin else [off_line] * 2
            line.label.setPosition(1.0 if margin else 0.01)
            line.label.setFormat(f"{name}\n{{value:.2f}} V" if margin
                                 else f"{name} {{value:.2f}} V")
        # Show first: a hidden line's label does not follow its value.
        self.vt_plus_line.show()
        self.vt_minus_line.setVisible(not circuit.one_threshold)
        self.vt_plus_line.setValue(vt_plus_v)
        self.vt_minus_line.setValue(vt_minus_v)
        key = (f'<span style="color:{CAP.name()}">━ {node}</span> &nbsp; '
               f'<span style="color:{OUT.name()}">━ out</span>')
        self.waveform.setTitle(f"{title} &nbsp; {key}", color=INK.name(), size="10pt")
        # Room above the highest trace and below the lowest for the threshold labels.
        lo = min(float(np.min(v_cap)), float(np.min(v_out)), vt_minus_v)
        hi = max(float(np.max(v_cap)), float(np.max(v_out)), vt_plus_v)
        span = hi - lo or 1.0
        start, end = float(t_s[0]), float(t_s[-1])
        self.waveform.setXRange(start, end + margin * (end - start), padding=0.02)
        self.waveform.setYRange(lo - 0.06 * span, hi + 0.14 * span, padding=0)

    def show_spread(self, frequencies_hz: np.ndarray, target_hz: float,
                    accept_hz: tuple[float, float], title: str) -> None:
        """Histogram of Monte Carlo frequencies (Hz) as percent of builds per bin."""
        self.right.setCurrentWidget(self.spread)
        self.tabs.setTabText(0, "Spread")
        freqs = np.asarray(frequencies_hz, dtype=float)
        freqs = freqs[np.isfinite(freqs)]
        if freqs.size == 0:
            self.hist_curve.setData([], [])
            return
        lo = min(freqs.min(), accept_hz[0])
        hi = max(freqs.max(), accept_hz[1])
        counts, edges = np.histogram(freqs, bins=60, range=(lo, hi))
        self.hist_curve.setData(edges, 100.0 * counts / freqs.size)
        self.target_line.show()
        self.target_line.setValue(target_hz)
        self.accept_region.setRegion(accept_hz)
        self.accept_region.show()
        self.spread.setTitle(title, color=INK.name(), size="10pt")
        self.spread.getPlotItem().enableAutoRange(axis="x")
        # Head room over the tallest bar for the target's label (drawn near the top).
        self.spread.setYRange(0.0, 100.0 * counts.max() / freqs.size * 1.2, padding=0)

    def show_rotation(self, rotation_pct: np.ndarray, nominal_hz: np.ndarray,
                      low_hz: np.ndarray, high_hz: np.ndarray, band_hz: tuple[float, float],
                      band_turns_pct: tuple[float, float], title: str) -> None:
        """Frequency (Hz) against rotation (%), worst-case envelope shaded, band marked.

        ``band_turns_pct`` are the nominal rotations [%] for the band's two ends
        (dashed lines); the view centres on the band (scroll out to see all).
        """
        self._make_rotation()
        self.right.setCurrentWidget(self.rotation)
        self.tabs.setTabText(0, "Trimmer")
        self.rotation_curve.setData(rotation_pct, nominal_hz)
        self.envelope_low.setData(rotation_pct, low_hz)
        self.envelope_high.setData(rotation_pct, high_hz)
        self.band_region.setRegion(band_hz)
        self.band_region.show()
        self.envelope_fill.show()
        for line, turn in zip(self.turn_lines, band_turns_pct, strict=True):
            line.show()
            line.setValue(turn)
        self.rotation.setTitle(title, color=INK.name(), size="10pt")
        finite = np.concatenate([np.asarray(a, float) for a in (nominal_hz, low_hz, high_hz)])
        finite = finite[np.isfinite(finite)]
        top = min(float(finite.max()), 2.0 * band_hz[1]) if finite.size else 2.0 * band_hz[1]
        self.rotation.setXRange(0.0, 100.0, padding=0.02)
        self.rotation.setYRange(0.0, top, padding=0.05)
