"""Layout and keyboard: readable drawer columns, remembered layout, standard shortcuts,
accessible names and tooltips.

Reference: the platform shortcuts are Qt's QKeySequence standard keys (Open, Save,
Save As, Undo, Redo, Delete, Find, Print), which follow each desktop's guidelines.
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtGui import QKeySequence
from PySide6.QtWidgets import (
    QAbstractButton,
    QAbstractSpinBox,
    QComboBox,
    QLineEdit,
    QWidget,
)
from support.gui_helpers import QUIET_OFFSCREEN

from core.parts.drawer import Row

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]


def column_shown(window, name: str) -> bool:
    panel = window.drawer_panel
    return not panel.table.isColumnHidden(window.drawer_model.column_of(name))


def test_drawer_columns_fit_without_scrolling_and_headings_are_whole(window):
    table = window.drawer_panel.table
    header = table.horizontalHeader()
    assert header.length() <= table.viewport().width()
    metrics = header.fontMetrics()
    for column in range(header.count()):
        if table.isColumnHidden(column):
            continue
        heading = str(window.drawer_model.headerData(column, Qt.Orientation.Horizontal))
        assert header.sectionSize(column) >= metrics.horizontalAdvance(heading) + 12, heading


def test_optional_columns_hide_show_and_are_remembered(qtbot, make_window):
    first = make_window()
    assert not column_shown(first, "dielectric") and column_shown(first, "note")
    first.drawer_panel.show_column("dielectric", True)
    first.drawer_panel.show_column("note", False)
    first.drawer_panel.show_column("kind", False)  # a column a drawer needs cannot go
    assert column_shown(first, "dielectric") and not column_shown(first, "note")
    assert column_shown(first, "kind")
    first.main_split.setSizes([600, 680])
    sizes = first.main_split.sizes()
    first.close()
    second = make_window()
    assert column_shown(second, "dielectric") and not column_shown(second, "note")
    assert second.main_split.sizes() == sizes


def test_a_hidden_column_with_a_problem_shows_itself(qtbot, window):
    assert not column_shown(window, "taper")
    window.drawer.insert_rows(0, [Row({"kind": "P", "value": "10k", "quantity": "1",
                                       "taper": "logg"})])
    assert "taper" in window.drawer.problems()[0]
    assert column_shown(window, "taper")
    window.undo_action.trigger()
    assert not column_shown(window, "taper")


def test_header_menu_lists_the_optional_columns(qtbot, window, monkeypatch):
    from PySide6.QtWidgets import QMenu

    menus = []
    monkeypatch.setattr(QMenu, "popup", lambda self, *a: menus.append(self))
    window.drawer_panel._column_menu(window.drawer_panel.table.rect().center())
    names = {a.text(): a.isChecked() for a in menus[0].actions()}
    assert names == {"Taper": False, "Dielectric": False, "Rated V": False, "Note": True}
    next(a for a in menus[0].actions() if a.text() == "Taper").setChecked(True)
    assert column_shown(window, "taper")


def test_standard_shortcuts(window):
    std = QKeySequence.StandardKey
    wanted = {window.files.open_action: std.Open, window.files.save_action: std.Save,
              window.files.save_as_action: std.SaveAs, window.undo_action: std.Undo,
              window.redo_action: std.Redo, window.find_action: std.Find,
              window.drawer_panel.delete_action: std.Delete}
    for action, key in wanted.items():
        assert action.shortcut() == QKeySequence(key) and not action.shortcut().isEmpty()
    printing = [a for a in window.build_menu.actions() if a.shortcut() == QKeySequence(std.Print)]
    assert len(printing) == 1
    window.find_action.trigger()
    assert window.drawer_panel.text_filter.hasFocus()


def test_delete_key_in_the_table_deletes_and_undo_brings_back(qtbot, window):
    panel = window.drawer_panel
    n = len(window.drawer)
    panel.table.setFocus()
    panel.select_rows(3, 2)
    qtbot.keyClick(panel.table, Qt.Key.Key_Delete)
    assert len(window.drawer) == n - 2
    window.undo_action.trigger()
    assert len(window.drawer) == n


def test_every_target_control_has_a_tooltip_and_a_name_and_tabs_in_reading_order(window):
    form = window.form
    kinds = (QComboBox, QLineEdit, QAbstractSpinBox, QAbstractButton)
    controls = [w for w in form.findChildren(QWidget)
                if isinstance(w, kinds) and w.parent() is form]
    assert len(controls) >= 12
    for widget in controls:
        assert widget.toolTip().strip(), widget.accessibleName()
        assert widget.accessibleName().strip()
    order = [form.circuit, form.family, form.supply, form.mode, form.target, form.duty,
             form.duty_within, form.accept, form.max_r, form.max_c, form.calibration,
             form.new_calibration]
    chain, widget = [], form.circuit
    while len(chain) < 40:
        if widget in order and widget not in chain:
            chain.append(widget)
        widget = widget.nextInFocusChain()
        if widget is form.circuit:
            break
    assert chain == order


def test_main_areas_have_accessible_names(window):
    names = {window.drawer_panel.table.accessibleName(), window.candidate_view.accessibleName(),
             window.drawer_panel.text_filter.accessibleName(), window.spread_note.accessibleName(),
             window.plots.waveform.accessibleName(), window.plots.spread.accessibleName()}
    assert names == {"parts drawer", "candidates", "filter text", "advice on the spread",
                     "waveform plot", "frequency spread plot"}


def _fully_inside(widget: QWidget, window) -> bool:
    """The widget's whole rectangle lies inside the window's (nothing cut off)."""
    top_left = widget.mapTo(window, widget.rect().topLeft())
    bottom_right = widget.mapTo(window, widget.rect().bottomRight())
    return window.rect().contains(top_left) and window.rect().contains(bottom_right)


def test_the_window_works_at_1024_by_700(qtbot, window):
    # The smallest common laptop screen a bench computer has (issue 15: 1024 × 700).
    assert window.minimumSizeHint().width() <= 1024
    assert window.minimumSizeHint().height() <= 700
    window.resize(1024, 700)
    qtbot.waitUntil(lambda: window.width() == 1024 and window.height() == 700, timeout=3000)
    form = window.form
    for field in (form.circuit, form.family, form.supply, form.target, form.duty,
                  form.accept, form.max_r, form.max_c, form.dielectric, form.calibration,
                  form.new_calibration):
        assert field.isVisible() and _fully_inside(field, window), field.accessibleName()
        assert field.width() >= field.minimumSizeHint().width(), field.accessibleName()
    view = window.candidate_view
    row = view.verticalHeader().defaultSectionSize()
    shown = (view.viewport().height()) // row
    assert shown >= 3, f"only {shown} candidate rows visible"
    assert window.plot_area.height() >= 180


def test_a_screenshot_has_exactly_the_size_asked(tmp_path):
    from PySide6.QtGui import QImage

    from gui.entry import open_window

    class Args:
        stock = None
        screenshot = str(tmp_path / "small.png")
        size = (1024, 700)

    assert open_window(Args()) == 0
    picture = QImage(str(tmp_path / "small.png"))
    assert (picture.width(), picture.height()) == (1024, 700)
