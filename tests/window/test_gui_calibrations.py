"""The calibrations dialog: bench readings in a table, the fit against ``tickbin calibrate``,
the fit plot through its data, saved calibrations renamed and deleted."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from PySide6.QtCore import Qt
from support.cli import run_tickbin
from support.gui_helpers import QUIET_OFFSCREEN, search_done

pytest_plugins = ["support.gui_helpers"]
pytestmark = QUIET_OFFSCREEN

# Three builds of a 74HC14 oscillator at 5 V on one bench (our own invented readings).
BUILDS = "R\tC\tFrequency\tDuty\n33k\t47n\t1.052kHz\t44%\n10k\t100n\t1.61kHz\t45%\n" \
         "4k7\t220n\t1.47kHz\t\n"


@pytest.fixture
def dialog(qtbot, window):
    from gui.calibration_dialog import CalibrationDialog

    made = CalibrationDialog(window, window.form.target_value(), window.selected_candidate())
    qtbot.addWidget(made)
    return made


def _fitted(qtbot, dialog, action):
    """Do ``action`` and wait for the fit it starts."""
    with qtbot.waitSignal(dialog.job.sigDone, timeout=20_000):
        action()


def _cell(dialog, row, column):
    return dialog.model.index(row, dialog.model.columns.index(column))


def test_fit_is_calibrates_and_the_plot_shows_it(qtbot, dialog, tmp_path):
    dialog.tolerances["R"].setText("1%")
    dialog.tolerances["C"].setText("5%")
    _fitted(qtbot, dialog, lambda: dialog.paste(BUILDS))  # the header line is skipped
    assert dialog.model.rowCount() == 3
    # The same readings through the command line.
    (tmp_path / "bench.csv").write_text(
        "r,c,frequency,duty\n33k,47n,1.052kHz,44%\n10k,100n,1.61kHz,45%\n4k7,220n,1.47kHz,\n",
        encoding="utf-8")
    r = run_tickbin(tmp_path, "calibrate", "--family", "74HC14", "--supply", "5V",
                    "--measurements", "bench.csv", "--r-tolerance", "1%", "--c-tolerance",
                    "5%", "--json")
    assert r.returncode == 0, r.stderr
    cli = json.loads(r.stdout)
    dialog.name.setText("bench-three")
    with qtbot.waitSignal(dialog.accepted, timeout=20_000):
        dialog.save()
    cal = dialog.saved
    assert cal.vt_plus_v == pytest.approx(cli["vt_plus_v"], abs=1e-9)
    assert cal.vt_minus_v == pytest.approx(cli["vt_minus_v"], abs=1e-9)
    assert cal.uncertainty_pct == pytest.approx(cli["uncertainty_pct"], rel=1e-9)
    text = dialog.result_label.text()
    assert f"VT+ {cli['vt_plus_v']:.3f} V" in text
    assert f"±{cli['uncertainty_pct']:.1f} % (1 sigma)" in text
    # Predicted against measured: each build's frequency from core's model with the
    # fitted thresholds (the charge equations of DESIGN.md).
    from core.model.timing import frequency, make_oscillator

    osc = make_oscillator("schmitt", "74HC14", 5.0)
    measured, predicted = dialog.fit_plots.points.getData()
    np.testing.assert_allclose(measured, [1052.0, 1610.0, 1470.0])
    expect = [float(frequency(osc, m.values, False, cli["vt_plus_v"], cli["vt_minus_v"]))
              for m in cal.measurements]
    np.testing.assert_allclose(predicted, expect, rtol=1e-9)
    builds, residual = dialog.fit_plots.residual_points.getData()
    np.testing.assert_allclose(builds, [1, 2, 3])
    np.testing.assert_allclose(residual, 100 * (np.array(expect) / measured - 1), rtol=1e-9)
    # rms of the log misfits of the measured times, as calibrate reports it.
    assert cal.residual_pct == pytest.approx(cli["residual_pct"], rel=1e-6)


def test_one_build_with_its_duty_is_fitted_exactly(qtbot, dialog):
    # Two readings (frequency, duty), two unknowns (VT+, VT−): the fit reproduces the
    # build (textbook: a determined system), so the residual is zero.
    _fitted(qtbot, dialog, lambda: dialog.paste("12k\t470n\t251\t45.5%"))
    _, residual = dialog.fit_plots.residual_points.getData()
    assert abs(residual[0]) < 1e-6
    assert "VT+" in dialog.result_label.text() and "⚠" not in dialog.result_label.text()


def test_bad_cells_name_the_row_and_problem(qtbot, dialog):
    _fitted(qtbot, dialog, lambda: dialog.paste(BUILDS))
    dialog.model.setData(_cell(dialog, 1, "frequency"), "fast")
    text = dialog.result_label.text()
    assert "Row 2: frequency 'fast'" in text and "⚠" in text
    bad = _cell(dialog, 1, "r")
    assert dialog.model.data(bad, Qt.ItemDataRole.BackgroundRole) is not None
    assert "fast" in dialog.model.data(bad, Qt.ItemDataRole.ToolTipRole)
    assert dialog.model.data(_cell(dialog, 0, "r"), Qt.ItemDataRole.BackgroundRole) is None
    dialog.model.setData(_cell(dialog, 2, "duty"), "150%")
    assert "Row 3: duty cycle '150%'" in dialog.result_label.text()
    dialog.save()
    assert dialog.saved_name is None and "⚠" in dialog.result_label.text()
    # A row with parts but no reading says what it needs.
    dialog.model.setData(_cell(dialog, 1, "frequency"), "")
    assert "Row 2: needs frequency" in dialog.result_label.text()


def test_edits_and_pastes_undo_one_step_each(qtbot, dialog):
    model = dialog.model
    before = model.rows_text()
    _fitted(qtbot, dialog, lambda: dialog.paste(BUILDS))
    model.setData(_cell(dialog, 0, "c"), "50n")
    assert model.rows_text()[0][1] == "50n"
    model.undo_stack.undo()
    assert model.rows_text()[0][1] == "47n"
    model.undo_stack.undo()  # the whole paste, added rows included
    assert model.rows_text() == before
    model.undo_stack.redo()
    assert model.rowCount() == 3
    dialog.table.selectRow(1)
    dialog.delete_builds()
    assert model.rowCount() == 2
    model.undo_stack.undo()
    assert model.rows_text()[1][:3] == ["10k", "100n", "1.61kHz"]
    # Control characters from a clipboard never reach a cell.
    dialog.paste("1k\x1b[2J\t10n\t5kHz")
    assert "\x1b" not in model.rows_text()[0][0]


def test_saved_calibrations_rename_show_and_delete(qtbot, window, monkeypatch):
    from core.model.calibration import (
        calibrate,
        list_calibrations,
        load_calibration,
        save_calibration,
    )
    from gui.calibration_dialog import CalibrationDialog

    osc = window.current_oscillator()
    for name, f in (("bench-a", 1050.0), ("bench-b", 990.0)):
        save_calibration(calibrate(osc, {"R": 10e3, "C": 100e-9}, f, 45.0, name=name))
    dialog = CalibrationDialog(window, window.form.target_value(), None)
    qtbot.addWidget(dialog)
    names = dialog.saved_list
    assert names.names == ["bench-a", "bench-b"]
    # Choosing one shows its readings, refitted to the same numbers.
    _fitted(qtbot, dialog, lambda: dialog.select_saved("bench-a"))
    saved = load_calibration("bench-a")
    assert dialog.model.rows_text()[0][2] == "1.05000 kHz" and dialog.name.text() == "bench-a"
    assert dialog._fit[1].vt_plus_v == pytest.approx(saved.vt_plus_v, abs=1e-9)
    assert f"±{saved.uncertainty_pct:.1f} %" in dialog.result_label.text()
    # Renaming onto another name is refused with a message; both files stay.
    assert not names.setData(names.index(0), "bench-b")
    assert "exists already" in dialog.result_label.text()
    assert list_calibrations() == ["bench-a", "bench-b"]
    assert names.setData(names.index(0), "bench-c")
    assert list_calibrations() == ["bench-b", "bench-c"]
    assert load_calibration("bench-c").vt_plus_v == saved.vt_plus_v
    # Deleting asks first.
    answers = [False, True]
    monkeypatch.setattr(CalibrationDialog, "ask", classmethod(lambda cls, *a: answers.pop(0)))
    dialog.select_saved("bench-b")
    dialog.delete_selected()
    assert list_calibrations() == ["bench-b", "bench-c"]
    dialog.delete_selected()
    assert list_calibrations() == ["bench-c"] and names.names == ["bench-c"]


def test_the_window_follows_renames_and_deletions(qtbot, window, monkeypatch):
    from core.model.calibration import calibrate, delete_calibration, save_calibration
    from gui.calibration_dialog import CalibrationDialog

    cand = window.selected_candidate()
    save_calibration(calibrate(window.current_oscillator(), cand.values,
                               cand.frequency_hz * 1.05, None, name="bench-a"))
    search_done(qtbot, window, lambda: window.form.reload_calibrations(select="bench-a"))
    assert window.current_oscillator().calibration == "bench-a"
    # The dialog deletes it and is closed without saving: the form lets go of it.
    monkeypatch.setattr(CalibrationDialog, "exec",
                        lambda self: delete_calibration("bench-a") or 0)
    search_done(qtbot, window, window.new_calibration)
    assert window.form.calibration.currentData() is None
    assert window.current_oscillator().calibration is None


def test_a_new_calibration_is_saved_selected_and_sure_as_its_parts(qtbot, window):
    from core.model.calibration import list_calibrations, load_calibration
    from gui.calibration_dialog import CalibrationDialog

    cand = window.selected_candidate()
    dialog = CalibrationDialog(window, window.form.target_value(), cand)
    qtbot.addWidget(dialog)
    assert dialog.model.rows_text()[0][0]  # prefilled from the selected candidate
    assert dialog.tolerances["R"].text()  # the candidate's parts' tolerances
    # A chip that runs 5 % faster than the table's nominal model predicts, measured
    # with 1 % resistors and a 5 % capacitor.
    dialog.tolerances["R"].setText("1%")
    dialog.tolerances["C"].setText("5%")
    _fitted(qtbot, dialog, lambda: dialog.model.setData(
        _cell(dialog, 0, "frequency"), f"{cand.frequency_hz * 1.05:.6g}Hz"))
    # JCGM 100:2008 (GUM) §4.3.7 and §5.1.2: uniform ±1 %, ±5 % and the ±0.5 % reading
    # add in quadrature, each as half-width / √3.
    sure = 100 * math.sqrt((0.01**2 + 0.05**2 + 0.005**2) / 3)
    assert f"±{sure:.1f} % (1 sigma)" in dialog.result_label.text()
    dialog.name.setText("bench-a")
    dialog.save()  # the fit is current: saved at once
    assert dialog.saved_name == "bench-a" and "bench-a" in list_calibrations()
    assert math.isclose(load_calibration("bench-a").scale, 1.05, rel_tol=0.02)
    assert math.isclose(load_calibration("bench-a").uncertainty_pct, sure, rel_tol=0.02)
    search_done(qtbot, window, lambda: window.form.reload_calibrations(select="bench-a"))
    assert window.current_oscillator().calibration == "bench-a"
    assert window.current_oscillator().thresholds_given


def test_typed_readings_are_not_lost(qtbot, window, monkeypatch):
    from core.model.calibration import calibrate, save_calibration
    from gui.calibration_dialog import CalibrationDialog

    save_calibration(calibrate(window.current_oscillator(), {"R": 10e3, "C": 100e-9}, 1050.0,
                               name="bench-a"))
    dialog = CalibrationDialog(window, window.form.target_value(), None)
    qtbot.addWidget(dialog)
    dialog.show()
    answers, asked = [False, False, True], []

    def ask(cls, parent, title, text):
        asked.append(title)
        return answers.pop(0)

    monkeypatch.setattr(CalibrationDialog, "ask", classmethod(ask))
    _fitted(qtbot, dialog, lambda: dialog.paste(BUILDS))
    typed = dialog.model.rows_text()
    dialog.select_saved("bench-a")  # declined: the typed readings stay
    assert dialog.model.rows_text() == typed and dialog._current_saved() is None
    dialog.reject()  # declined: still open
    assert dialog.isVisible() and dialog.model.rows_text() == typed
    dialog.reject()
    assert not dialog.isVisible()
    assert asked == ["Show a saved calibration", "Close calibrations", "Close calibrations"]
