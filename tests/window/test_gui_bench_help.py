"""Help at the bench: which bins to open, and plain advice when the chip makes the spread.

Reference facts: textbook RC charging, V(t) = V_end + (V_start − V_end) e^(−t/RC),
makes each half-period R C times a logarithm of threshold and output levels, so
with the thresholds fixed the frequency scales as 1 / (R C) and a part
tolerance of ±t moves it by the factor (1 ± t).
"""

from __future__ import annotations

import math
from collections import Counter

import pytest
from PySide6.QtCore import Qt
from support.gui_helpers import QUIET_OFFSCREEN, search_done

from gui.drawer_model import USED_ROLE

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]


def lines_used(candidate) -> Counter:
    """Stock lines and counts, from core's JSON form of the networks (the CLI contract)."""
    counts: Counter = Counter()

    def walk(node):
        if "line" in node:
            counts[node["line"]] += 1
        for child in node.get("series", []) + node.get("parallel", []):
            walk(child)

    for node in candidate.to_json()["networks"].values():
        walk(node)
    return counts


def test_rows_of_the_selected_candidate_are_marked_with_counts(qtbot, window):
    model = window.drawer_model
    qty = model.column_of("quantity")
    for pick in (0, 5):
        window.select_candidate(pick)
        wanted = lines_used(window.selected_candidate())
        marked = {window.drawer.rows[r].line: model.index(r, qty).data(USED_ROLE)
                  for r in range(model.rowCount()) if model.index(r, qty).data(USED_ROLE)}
        assert marked == dict(wanted)
        for row in range(model.rowCount()):
            n = model.index(row, qty).data(USED_ROLE)
            shown = model.index(row, qty).data()
            assert (f"(use {n})" in shown) == bool(n)
            if n:  # the typed quantity itself is untouched for editing
                assert model.index(row, qty).data(Qt.ItemDataRole.EditRole) == (
                    window.drawer.rows[row].get("quantity"))
                assert model.index(row, 0).data(Qt.ItemDataRole.BackgroundRole) is not None
    panel = window.drawer_panel
    panel.kind_filter.setCurrentIndex(panel.kind_filter.findData("used"))
    assert panel.proxy.rowCount() == len(lines_used(window.selected_candidate()))


def test_marks_go_when_rows_move_and_come_back_with_the_next_result(qtbot, window):
    model = window.drawer_model
    from core.parts.drawer import Row

    search_done(qtbot, window, lambda: window.drawer.insert_rows(
        0, [Row({"kind": "R", "value": "1M", "quantity": "1"})]))
    wanted = lines_used(window.selected_candidate())
    qty = model.column_of("quantity")
    marked = {r for r in range(model.rowCount()) if model.index(r, qty).data(USED_ROLE)}
    assert len(marked) == len(wanted)


def test_chip_threshold_spread_is_explained_with_a_way_out(qtbot, window):
    note = window.spread_note
    assert note.isVisibleTo(window)
    text = note.text()
    assert "chip, not your parts" in text and "calibrate" in text and 'href="trim"' in text
    osc = window.current_oscillator()
    (a_lo, _, a_hi), (b_lo, _, b_hi) = osc.device.vt_plus, osc.device.vt_minus
    assert f"{a_lo:.2f}–{a_hi:.2f} V" in text and f"{b_lo:.2f}–{b_hi:.2f} V" in text

    from gui.plot_data import chip_spread

    cand = window.selected_candidate()
    spread = chip_spread(window.search.outcome, cand)
    # Thresholds fixed: f ~ 1/(R C), so the parts alone give about (1 ± tR)(1 ± tC).
    (r_lo, r_hi), (c_lo, c_hi) = (cand.networks[k].value_range for k in ("R", "C"))
    r, c = cand.values["R"], cand.values["C"]
    expected = (r * c) / (r_lo * c_lo) / ((r * c) / (r_hi * c_hi))
    got = spread.parts_hz[1] / spread.parts_hz[0]
    assert math.isclose(got, expected, rel_tol=0.03)  # output resistance, strays: a little
    assert spread.full_hz[1] / spread.full_hz[0] > 3.0  # 74HC14: the chip's range is wide


def test_trim_link_searches_a_band_around_the_target(qtbot, window):
    search_done(qtbot, window, lambda: window.spread_note.linkActivated.emit("trim"))
    target = window.form.target_value()
    assert target.trim and target.band_hz == pytest.approx((950.0, 1050.0))
    assert window.candidates.trim and window.candidates.rowCount() > 0
    assert not window.spread_note.isVisibleTo(window)  # trimming is the remedy itself


def test_calibrate_link_opens_the_dialog_and_a_calibration_removes_the_advice(
        qtbot, window, monkeypatch):
    from core.model.calibration import calibrate, save_calibration
    from gui.calibration_dialog import CalibrationDialog

    opened = []
    monkeypatch.setattr(CalibrationDialog, "exec", lambda self: opened.append(self) or 0)
    window.spread_note.linkActivated.emit("calibrate")
    assert opened
    cand = window.selected_candidate()
    save_calibration(calibrate(window.current_oscillator(), cand.values,
                               cand.frequency_hz * 1.1, None, name="bench-b"))
    search_done(qtbot, window, lambda: window.form.reload_calibrations(select="bench-b"))
    assert not window.spread_note.isVisibleTo(window)


def test_details_link_shows_just_the_rows_to_take(qtbot, window):
    window.details.linkActivated.emit("used")
    proxy = window.drawer_panel.proxy
    assert proxy.rowCount() == len(lines_used(window.selected_candidate()))
    shown = {window.drawer.rows[proxy.mapToSource(proxy.index(r, 0)).row()].line
             for r in range(proxy.rowCount())}
    assert shown == set(lines_used(window.selected_candidate()))
