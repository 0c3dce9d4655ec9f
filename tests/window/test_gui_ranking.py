"""The window's part of the ranking: the duty tolerance field, the duty-error column and
the mark on builds that stop at some corner (issue 11, §2 and §4).

Reference values: core's own search on the same drawer (the ranking itself is checked
against a brute force in tests/test_ranking.py); here we check that the window asks for
the same thing and shows what core computed.
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from support.gui_helpers import QUIET_OFFSCREEN, search_done, search_with
from support.ranking_cases import LS14, STALL_DRAWER, STALL_TARGET

from core.design.search import search
from core.model.drift import with_dc_bias
from core.model.timing import make_oscillator
from gui.candidates_model import STOPS_MARK, STOPS_TIP, CandidatesModel

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]


def column(model: CandidatesModel, heading: str) -> int:
    return model.headings().index(heading)


def test_duty_tolerance_reaches_the_search_and_the_duty_error_is_shown(qtbot, window):
    form = window.form
    assert form.duty_within.value() == 1.0  # DESIGN.md: --duty-within defaults to 1
    search_with(qtbot, window, circuit="555", duty="30%")
    assert form.duty_within.isEnabled()
    search_done(qtbot, window, lambda: form.duty_within.setValue(3.0))
    osc = make_oscillator("555", "NE555", 5.0)
    # The demo's ceramics have rated voltages: the window searches what the circuit sees.
    expected = search(with_dc_bias(window.drawer.parts(), osc), osc, 1000.0, duty_pct=30.0,
                      duty_within=3.0, top=20)
    model = window.candidates
    shown = [model.candidate(i) for i in range(model.rowCount())]
    assert [c.values for c in shown] == [c.values for c in expected.candidates]
    col = column(model, "Duty error")
    for row, cand in enumerate(shown):
        assert model.data(model.index(row, col)) == f"{cand.duty_error_pct:+.1f} pt"
    assert form.state()["duty_within"] == "3"
    form.duty_within.setValue(1.0)
    form.restore({**form.state(), "duty_within": "2.5"})
    assert form.duty_within.value() == 2.5
    form.restore({**form.state(), "duty_within": "not a number"})
    assert form.duty_within.value() == 2.5
    search_with(qtbot, window, duty="", circuit="schmitt")
    assert form.duty_within.isEnabled()  # two steering diodes set a Schmitt's duty too
    assert "Duty error" not in window.candidates.headings()  # no duty asked


def test_a_build_that_stops_is_marked_with_a_reason(qtmodeltester):
    result = search(STALL_DRAWER, LS14, STALL_TARGET, max_resistors=1, max_capacitors=1,
                    accept_pct=5.0, top=20)
    model = CandidatesModel()
    model.set_result(result.candidates, trim=False)
    qtmodeltester.check(model, force_py=True)
    col = column(model, "Worst case")
    rows = {row: model.candidate(row) for row in range(model.rowCount())}
    stopping = [row for row, c in rows.items() if c.stops]
    assert stopping and len(stopping) < len(rows)
    for row, cand in rows.items():
        text = model.data(model.index(row, col))
        tip = model.data(model.index(row, col), Qt.ItemDataRole.ToolTipRole)
        assert (STOPS_MARK in text) == cand.stops
        assert (STOPS_TIP in tip) == cand.stops
    tip = model.headerData(col, Qt.Orientation.Horizontal, Qt.ItemDataRole.ToolTipRole)
    assert STOPS_MARK in tip
