"""Keyboard and help: Tab leaves the tables, redo on both common keys, F1 opens a help page.

Reference: Qt's QKeySequence standard keys (Redo is Ctrl+Shift+Z on X11 and macOS,
Ctrl+Y on Windows; HelpContents is F1), and the common practice (no published source)
that Tab moves focus between controls while the arrow keys move inside a table.
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QKeySequence
from support.gui_helpers import QUIET_OFFSCREEN

from gui.help_dialog import GLOSSARY, help_html

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]


def test_redo_answers_ctrl_y_and_ctrl_shift_z(window):
    keys = {k.toString() for k in window.redo_action.shortcuts()}
    assert {"Ctrl+Y", "Ctrl+Shift+Z"} <= keys
    undo = {k.toString() for k in window.undo_action.shortcuts()}
    assert "Ctrl+Z" in undo and not keys & undo


def test_redo_by_ctrl_y_redoes_an_edit(qtbot, window):
    drawer = window.drawer
    before = len(drawer)
    window.drawer_panel.add_action.trigger()
    assert len(drawer) == before + 1
    window.undo_action.trigger()
    assert len(drawer) == before
    window.activateWindow()
    window.setFocus()
    qtbot.keyClick(window, Qt.Key.Key_Y, Qt.KeyboardModifier.ControlModifier)
    qtbot.waitUntil(lambda: len(drawer) == before + 1, timeout=2000)


def test_tab_leaves_the_drawer_table(qtbot, window):
    table = window.drawer_panel.table
    assert not table.tabKeyNavigation()
    assert not window.candidate_view.tabKeyNavigation()
    window.activateWindow()
    table.setFocus()
    qtbot.waitUntil(table.hasFocus, timeout=2000)
    qtbot.keyClick(table, Qt.Key.Key_Tab)
    qtbot.waitUntil(lambda: not table.hasFocus(), timeout=2000)


def test_f1_opens_the_help_page_with_the_glossary(qtbot, window):
    assert window.help_action.shortcut() == QKeySequence(QKeySequence.StandardKey.HelpContents)
    window.help_action.trigger()
    page = window._help
    assert page is not None and page.isVisible()
    text = page.browser.toPlainText()
    for term in ("VT+", "VT−", "Worst case", "Guaranteed band", "Resolution",
                 "Network notation", "Duty"):
        assert term in text
    assert "mains" in text  # the safety notes are part of the page
    page.close()


def test_every_glossary_entry_is_on_the_page():
    html = help_html()
    assert all(term in html and text in html for term, text in GLOSSARY.items())
