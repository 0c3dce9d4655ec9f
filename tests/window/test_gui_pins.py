"""Pinning a drawer part from the window: every candidate uses it, the form shows it, and
unpinning is visible and searches the whole drawer again."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from support.gui_helpers import QUIET_OFFSCREEN, search_done

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]

C_22N = 34
"""The demo drawer's 22 nF film capacitor (file line; the header is line 1)."""


def pin_row(qtbot, window, line: int) -> None:
    panel = window.drawer_panel
    source = panel.model.index(line - 2, 0)  # a saved row sits on line row + 2
    panel.table.setCurrentIndex(panel.proxy.mapFromSource(source))
    search_done(qtbot, window, panel.pin_action.trigger)


def test_pin_from_the_drawer_and_unpin_visibly(qtbot, window):
    panel = window.drawer_panel
    assert panel.pin_action in panel.table.actions()  # the table's context menu
    assert panel.table.contextMenuPolicy() == Qt.ContextMenuPolicy.ActionsContextMenu
    assert panel.pin_action.shortcut().toString() == "Ctrl+Shift+P"
    pin_row(qtbot, window, C_22N)
    form = window.form
    assert form.pinned.isVisibleTo(window) and "line 34" in form.pinned.text()
    assert "22" in form.pinned.text()
    model = window.candidates
    shown = [model.candidate(i) for i in range(model.rowCount())]
    assert shown and all(c.networks["C"].part.stock_line == C_22N for c in shown)
    assert "line 34 pinned" in window.status_text.text()
    search_done(qtbot, window, form.unpin.click)
    assert not form.pinned.isVisibleTo(window) and form.pins() == ()
    shown = [model.candidate(i) for i in range(model.rowCount())]
    assert any(c.networks["C"].part is None or c.networks["C"].part.stock_line != C_22N
               for c in shown)


def test_pinning_again_unpins(qtbot, window):
    pin_row(qtbot, window, C_22N)
    pin_row(qtbot, window, C_22N)
    assert window.form.pins() == () and not window.form.pinned.isVisibleTo(window)
    assert "pinned" not in window.status_text.text()


def test_a_pin_that_does_not_fit_is_said_under_the_form(qtbot, window):
    from support.gui_helpers import search_with

    search_with(qtbot, window, circuit="555")
    pin_row(qtbot, window, 11)  # a 10k resistor: the 555 has two resistor places
    assert "2 resistor places" in window.form.message.text()
    assert window.candidates.rowCount() == 0


def test_a_pin_is_undone_and_redone_and_never_marks_the_file_unsaved(qtbot, window):
    form = window.form
    assert not window.isWindowModified()
    pin_row(qtbot, window, C_22N)
    assert form.pins() == (C_22N,) and not window.isWindowModified()
    assert window.undo_action.isEnabled() and "Pin line 34" in window.undo_action.toolTip()
    search_done(qtbot, window, window.undo_action.trigger)
    assert form.pins() == () and not form.pinned.isVisibleTo(window)
    search_done(qtbot, window, window.redo_action.trigger)
    assert form.pins() == (C_22N,) and form.pinned.isVisibleTo(window)
    search_done(qtbot, window, form.unpin.click)
    assert form.pins() == ()
    search_done(qtbot, window, window.undo_action.trigger)  # Undo brings the pin back
    assert form.pins() == (C_22N,) and not window.isWindowModified()
