"""The window's drift plots, checked through their data against ``tickbin predict``.

predict's ``--temperature`` and ``--supply-range`` figures are themselves checked against
EIA-198, the resistor coefficients and the device table in tests/test_drift.py; here the
window must draw the same figures for the same parts.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from support.cli import run_tickbin
from support.gui_helpers import QUIET_OFFSCREEN, search_done, search_with

pytest_plugins = ["support.gui_helpers"]
pytestmark = QUIET_OFFSCREEN


def _show(qtbot, plots, kind):
    """Bring the ``kind`` tab forward and wait for its curve."""
    with qtbot.waitSignal(plots.drift.sigDrawn, timeout=20_000):
        plots.tabs.setCurrentWidget(plots.drift.pages[kind])
    return plots.drift.items[kind]


def _predict(tmp_path, cand, *extra):
    """predict for the candidate's nominal parts, with its capacitor's dielectric and its
    resistors' tolerance (which sets their temperature coefficient)."""
    (dielectric,) = {p.dielectric for p in cand.networks["C"].parts()}
    (tol,) = {max(p.tolerance.minus, p.tolerance.plus) for p in cand.networks["R"].parts()}
    r = run_tickbin(tmp_path, "predict", "--family", "74HC14", "--supply", "5V",
                    "--r", repr(cand.values["R"]), "--c", repr(cand.values["C"]),
                    "--dielectric", dielectric, "--r-tolerance", f"{100 * tol:g}%",
                    *extra, "--json")
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


def test_temperature_plot_draws_predicts_figures(qtbot, window, tmp_path):
    plots = window.plots
    cand = window.selected_candidate()
    items = _show(qtbot, plots, "temperature")
    x, low = items["low"].getData()
    _, high = items["high"].getData()
    out = _predict(tmp_path, cand, "--temperature=-20..70")
    assert (x[0], x[-1]) == (-20.0, 70.0)  # the default range
    lo, hi = out["temperature_hz"]
    assert float(np.min(low)) == pytest.approx(lo, rel=1e-9)
    assert float(np.max(high)) == pytest.approx(hi, rel=1e-9)
    # At 25 °C the parts are as marked: the band closes on predict's nominal frequency.
    at = int(np.argmin(np.abs(x - 25.0)))
    assert x[at] == 25.0 and low[at] == pytest.approx(out["frequency_hz"], rel=1e-9)
    assert high[at] == pytest.approx(out["frequency_hz"], rel=1e-9)
    # The target and its ±1 % acceptance band are marked.
    assert items["target"].value() == pytest.approx(1000.0)
    assert items["region"].getRegion() == pytest.approx((990.0, 1010.0))
    # A range in °F goes through the unit library: 32..104 °F is 0..40 °C.
    with qtbot.waitSignal(plots.drift.sigDrawn, timeout=20_000):
        plots.drift.range_edit.setText("32..104degF")
        plots.drift.range_edit.editingFinished.emit()
    x, low = items["low"].getData()
    assert x[0] == pytest.approx(0.0, abs=1e-9) and x[-1] == pytest.approx(40.0)
    out = _predict(tmp_path, cand, "--temperature=0..40")
    assert float(np.min(low)) == pytest.approx(out["temperature_hz"][0], rel=1e-9)


def test_supply_plot_draws_predicts_figures(qtbot, window, tmp_path):
    plots = window.plots
    items = _show(qtbot, plots, "supply")
    x, f = items["low"].getData()
    # The family's range by default: 74HC14, 2…6 V (device table).
    assert (x[0], x[-1]) == (2.0, 6.0)
    out = _predict(tmp_path, window.selected_candidate(), "--supply-range=2..6")
    assert [float(np.min(f)), float(np.max(f))] == pytest.approx(out["supply_hz"], rel=1e-9)
    assert items["here"].value() == 5.0
    # Another candidate: the plot follows it.
    with qtbot.waitSignal(plots.drift.sigDrawn, timeout=20_000):
        window.select_candidate(1)
    cand = window.selected_candidate()
    _, f = items["low"].getData()
    out = _predict(tmp_path, cand, "--supply-range=2..6")
    assert [float(np.min(f)), float(np.max(f))] == pytest.approx(out["supply_hz"], rel=1e-9)


def test_a_bad_range_is_named_and_the_plot_emptied(qtbot, window):
    plots = window.plots
    _show(qtbot, plots, "supply")
    with qtbot.waitSignal(plots.drift.sigFailed, timeout=20_000) as failed:
        plots.drift.set_range("supply", "3..9V")
    assert "outside the 74HC14" in failed.args[0]
    assert "⚠" in plots.drift.plots["supply"].getPlotItem().titleLabel.text
    assert len(plots.drift.items["supply"]["low"].getData()[0] or []) == 0
    with qtbot.waitSignal(plots.drift.sigFailed, timeout=20_000) as failed:
        plots.drift.set_range("supply", "lots")
    assert "supply range" in failed.args[0]


def test_ranges_are_remembered(qtbot, window, make_window):
    _show(qtbot, window.plots, "temperature")
    window.plots.drift.set_range("temperature", "0..85")
    again = make_window()
    assert again.plots.drift.ranges["temperature"] == "0..85"
    # A screenshot run neither reads nor writes them (its pictures are the same anywhere).
    from gui.main_window import MainWindow

    shot = MainWindow(None, remember=False)
    qtbot.addWidget(shot)
    shot.show()
    search_done(qtbot, shot, shot.finish_startup)
    assert shot.plots.drift.ranges["temperature"] == "-20..70"
    shot.plots.drift.set_range("temperature", "10..20")
    assert make_window().plots.drift.ranges["temperature"] == "0..85"


def test_trim_design_marks_its_band(qtbot, window):
    search_with(qtbot, window, mode="band", target="900..1100")
    plots = window.plots
    assert plots.tabs.tabText(0) == "Trimmer"
    items = _show(qtbot, plots, "temperature")
    assert items["region"].getRegion() == pytest.approx((900.0, 1100.0))
    assert not items["target"].isVisible()
    _, low = items["low"].getData()
    _, high = items["high"].getData()
    assert np.all(low <= high) and np.all(np.isfinite(low))
    # Nothing to show (a supply that cannot be read): the drift plot empties too.
    search_with(qtbot, window, supply="fifty")
    assert window.candidates.rowCount() == 0
    assert len(items["low"].getData()[0] or []) == 0


def test_a_555_candidate_draws_predicts_figures(qtbot, window, tmp_path):
    # The 555 at 60 % duty (a steering diode where the search picked one): the same parts
    # through predict --circuit 555 over the NE555's whole supply range (4.5…16 V).
    search_with(qtbot, window, circuit="555", family="NE555", target="1kHz", duty="60%")
    cand = window.selected_candidate()
    items = _show(qtbot, window.plots, "supply")
    x, f = items["low"].getData()
    parts = [a for key, v in cand.values.items() for a in (f"--{key.lower()}", repr(v))]
    (dielectric,) = {p.dielectric for p in cand.networks["C"].parts()}
    r = run_tickbin(tmp_path, "predict", "--circuit", "555", "--family", "NE555", "--supply",
                    "5V", *parts, "--dielectric", dielectric,
                    *(["--diode-steered"] if cand.diode_steered else []),
                    f"--supply-range={x[0]:g}..{x[-1]:g}", "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert (x[0], x[-1]) == (4.5, 16.0)
    assert [float(np.min(f)), float(np.max(f))] == pytest.approx(out["supply_hz"], rel=1e-9)
