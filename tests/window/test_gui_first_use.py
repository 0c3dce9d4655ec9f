"""What a first real use of the window ran into (issue 15): labels that hold still, file
names a file system takes, messages that say what was done, cells that stay readable.

References: the facts of the trade given in issue 15 (a tool bar that does not move, a
colon is not allowed in a Windows file name, a bipolar 555 wants bulk decoupling); the
window's numbers come from core, checked in the core tests.
"""

from __future__ import annotations

import math

import pytest
from support.gui_helpers import QUIET_OFFSCREEN, search_done, search_with

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]


def value_index(window, row):
    model = window.drawer_model
    return model.index(row, model.column_of("value"))


def test_undo_and_redo_labels_keep_their_length(qtbot, window):
    widths = []
    for action in (window.undo_action, window.redo_action):
        button = window.toolbar.widgetForAction(action)
        widths.append(button.sizeHint().width())
    search_done(qtbot, window, lambda: window.drawer_model.setData(value_index(window, 0),
                                                                   "3.9k"))
    window.undo_action.trigger()  # now both have a step to name
    for action, width in zip((window.undo_action, window.redo_action), widths, strict=True):
        assert action.text().replace("&", "") in ("Undo", "Redo")
        assert window.toolbar.widgetForAction(action).sizeHint().width() == width
    # What the step is stays one hover away.
    assert window.redo_action.toolTip().startswith("Redo ") and len(
        window.redo_action.toolTip()) > len("Redo ")


def test_print_dialog_offers_a_file_name_without_a_colon(window, monkeypatch):
    from gui.sheet_render import PrintDialog

    names = []
    monkeypatch.setattr(PrintDialog, "ask",
                        classmethod(lambda cls, printer, parent=None:
                                    names.append(printer.docName()) or False))
    window.sheet_actions.print_action.trigger()
    # Windows refuses < > : " / \ | ? * in file names (Microsoft, "Naming Files, Paths,
    # and Namespaces"); a space is legal but awkward in a terminal.
    assert names and names[0].startswith("tickbin-sheet-")
    assert not set(names[0]) & set('<>:"/\\|?* ')
    assert "khz" in names[0]  # the target is in it (the demo search is 1 kHz)


def test_a_saved_calibration_says_its_thresholds(qtbot, window, monkeypatch):
    from core.model.calibration import load_calibration
    from gui.calibration_dialog import CalibrationDialog

    def run(dialog):
        frequency = dialog.model.index(0, dialog.model.columns.index("frequency"))
        dialog.model.setData(frequency, f"{window.selected_candidate().frequency_hz * 1.05:.6g}Hz")
        dialog.name.setText("bench-msg")
        dialog.save()
        qtbot.waitUntil(lambda: dialog.saved_name is not None, timeout=20_000)
        return 1

    monkeypatch.setattr(CalibrationDialog, "exec", run)
    window.new_calibration()
    saved = load_calibration("bench-msg")
    message = window.status_text.text()
    assert f"VT+ {saved.vt_plus_v:.3f} V" in message and f"VT− {saved.vt_minus_v:.3f} V" in message
    assert f"±{saved.uncertainty_pct:.1f} %" in message and math.isfinite(saved.uncertainty_pct)


def test_no_candidate_clears_the_old_rotation_plot(qtbot, window):
    search_with(qtbot, window, mode="band", target="900..1100")
    plots = window.plots
    assert plots.right.currentWidget() is plots.rotation
    search_with(qtbot, window, supply="fifty")  # a supply that cannot be read
    assert window.candidates.rowCount() == 0
    assert plots.right.currentWidget() is plots.spread
    assert plots.rotation_curve.getData()[0] is None or not len(plots.rotation_curve.getData()[0])
    assert not plots.envelope_fill.isVisible() and not plots.band_region.isVisible()


def test_used_filter_without_a_candidate_says_why_it_is_empty(qtbot, window):
    panel = window.drawer_panel
    panel.kind_filter.setCurrentIndex(panel.kind_filter.findData("used"))
    assert "of" in panel.count_label.text()  # the demo's best candidate uses some rows
    search_with(qtbot, window, supply="fifty")
    text = panel.count_label.text()
    assert "no candidate" in text and f"{len(window.drawer)} rows" in text


def test_a_bad_cell_shows_its_typed_text_whole(qtbot, window):
    from PySide6.QtGui import QFontMetrics
    from PySide6.QtWidgets import QStyle, QStyleOptionViewItem

    panel = window.drawer_panel
    index = value_index(window, 0)
    search_done(qtbot, window, lambda: window.drawer_model.setData(index, "10kk"))
    shown = panel.proxy.mapFromSource(index)
    option = QStyleOptionViewItem()
    panel.table.itemDelegate().initStyleOption(option, shown)
    option.rect = panel.table.visualRect(shown)
    assert option.text == "10kk"
    assert not option.features & QStyleOptionViewItem.ViewItemFeature.HasDecoration
    room = panel.table.style().subElementRect(QStyle.SubElement.SE_ItemViewItemText, option,
                                              panel.table)
    assert QFontMetrics(option.font).horizontalAdvance("10kk") <= room.width()


def test_saving_unreadable_cells_names_them_and_asks(qtbot, make_window, answers, tmp_path,
                                                     monkeypatch):
    import shutil

    from PySide6.QtWidgets import QMessageBox

    from core.parts.drawer_file import read_drawer
    from core.storage.locations import demo_drawer_path
    from gui.main_window import MainWindow

    path = tmp_path / "drawer.csv"
    shutil.copy(demo_drawer_path(), path)
    window = make_window(str(path))
    texts = []
    b = QMessageBox.StandardButton

    def ask(cls, parent, title, text, buttons, default):
        texts.append(text)
        return answers.pop(0)

    monkeypatch.setattr(MainWindow, "ask", classmethod(ask))
    search_done(qtbot, window, lambda: window.drawer_model.setData(value_index(window, 0),
                                                                   "10kk"))
    line = window.drawer.rows[0].line
    answers.append(b.Cancel)
    assert not window.files.save()
    assert f"line {line}, value: “10kk”" in texts[0] and "command line" in texts[0]
    assert "10kk" not in path.read_text(encoding="utf-8")
    answers.append(b.Save)
    assert window.files.save()
    assert read_drawer(path, strict=False).rows[0].get("value") == "10kk"


def _columns_read_whole(window) -> None:
    """Every heading and every cell but the last column's (its places are whole in the
    tooltip) fits its column."""
    from PySide6.QtCore import Qt

    view = window.candidate_view
    header = view.horizontalHeader()
    model = view.model()
    metrics = view.fontMetrics()
    padding = 2 * view.style().pixelMetric(view.style().PixelMetric.PM_FocusFrameHMargin) + 2
    for column in range(model.columnCount() - 1):
        heading = str(model.headerData(column, Qt.Orientation.Horizontal))
        assert header.sectionSize(column) >= header.fontMetrics().horizontalAdvance(heading) \
            + padding, heading
        for row in range(model.rowCount()):
            text = str(model.index(row, column).data())
            assert metrics.horizontalAdvance(text) + padding <= header.sectionSize(column), (
                heading, text)


@pytest.mark.parametrize("width", [1024, 1600])
def test_candidate_columns_fit_each_kind_of_result(qtbot, window, width):
    window.resize(width, 900)
    qtbot.waitUntil(lambda: window.width() == width)
    _columns_read_whole(window)
    supply = window.form.supply.text()
    search_with(qtbot, window, mode="band", target="900..1100")
    assert window.candidates.trim
    _columns_read_whole(window)
    search_with(qtbot, window, supply="fifty")  # an empty result between two kinds
    search_with(qtbot, window, mode="target", target="1kHz", supply=supply)
    assert not window.candidates.trim
    _columns_read_whole(window)
    search_with(qtbot, window, circuit="555")
    assert "RA" in window.candidates.headings()
    _columns_read_whole(window)
    search_with(qtbot, window, circuit="schmitt")
    _columns_read_whole(window)


def test_every_candidates_heading_has_a_tooltip(qtbot, window):
    from PySide6.QtCore import Qt

    def tips() -> None:
        model = window.candidate_view.model()
        for column in range(model.columnCount()):
            tip = model.headerData(column, Qt.Orientation.Horizontal, Qt.ItemDataRole.ToolTipRole)
            assert tip and tip.strip(), model.headerData(column, Qt.Orientation.Horizontal)

    tips()
    search_with(qtbot, window, mode="band", target="900..1100")
    tips()


def test_clicking_a_heading_sorts_and_the_selection_follows(qtbot, window):
    from PySide6.QtCore import QPoint, Qt

    from gui.candidates_model import CANDIDATE_ROLE

    view = window.candidate_view
    model = view.model()
    column = window.candidates.headings().index("Frequency")
    window.select_candidate(2)
    chosen = window.selected_candidate()
    header = view.horizontalHeader()
    qtbot.mouseClick(header.viewport(), Qt.MouseButton.LeftButton,
                     pos=QPoint(header.sectionViewportPosition(column) + 5, 5))
    shown = [model.index(r, 0).data(CANDIDATE_ROLE) for r in range(model.rowCount())]
    frequencies = [c.frequency_hz for c in shown]
    assert frequencies == sorted(frequencies) and shown != [
        window.candidates.candidate(r) for r in range(model.rowCount())]
    # The same candidate stays chosen, wherever the sort put it.
    assert window.selected_candidate() is chosen
    view.setCurrentIndex(model.index(0, 0))
    assert window.selected_candidate() is shown[0]
    # The vertical header still gives each candidate's rank.
    rank = [window.candidates.candidate(r) for r in range(model.rowCount())].index(shown[0])
    assert model.headerData(0, Qt.Orientation.Vertical) == str(rank + 1)


def test_candidates_and_parts_list_export_as_csv_with_formulas_neutralised(
        qtbot, window, tmp_path, monkeypatch):
    import csv

    from gui.sheet_actions import SheetActions

    out = {}

    def ask_path(cls, parent, title, start, file_filter):
        out[title] = tmp_path / start.rsplit("/", 1)[-1]
        return str(out[title])

    monkeypatch.setattr(SheetActions, "ask_path", classmethod(ask_path))
    # A drawer cell that a spreadsheet would run (OWASP, "CSV Injection": cells starting
    # with = + - @ are formulas; a leading apostrophe makes them text).
    from gui.candidates_model import used_rows

    row = min(used_rows(window.selected_candidate()))
    model = window.drawer_model
    search_done(qtbot, window, lambda: model.setData(
        model.index(row, model.column_of("location")), "=1+2"))
    window.sheet_actions.candidates_csv_action.trigger()
    with open(out["Export candidates"], newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    view = window.candidate_view.model()
    assert rows[0] == window.candidates.headings()
    assert len(rows) == 1 + view.rowCount()
    assert rows[1][0] == view.index(0, 0).data()  # as shown, first row first
    window.sheet_actions.parts_csv_action.trigger()
    with open(out["Export parts list"], newline="", encoding="utf-8") as f:
        parts = list(csv.reader(f))
    assert parts[0][:3] == ["Ref", "Part", "Value"]
    assert "'=1+2" in [r[5] for r in parts[1:]] and "=1+2" not in [r[5] for r in parts[1:]]


def test_two_candidates_side_by_side(qtbot, window, monkeypatch):
    from PySide6.QtCore import QPoint
    from PySide6.QtWidgets import QMenu, QWidget

    menus = []
    monkeypatch.setattr(QMenu, "popup", lambda self, *a: menus.append(self))
    view = window.candidate_view
    window.select_candidate(0)
    window.search.candidate_menu(QPoint(5, view.rowViewportPosition(2) + 3))  # right-click row 3
    (action,) = menus[0].actions()
    assert "candidate 1" in action.text()
    action.trigger()
    dialog = next(w for w in window.findChildren(QWidget) if w.objectName() == ""
                  and w.windowTitle() == "Candidates 1 and 3 side by side")
    rows = {heading: (a, b) for heading, a, b in dialog.texts()}
    first, third = window.candidates.candidate(0), window.candidates.candidate(2)
    model = window.candidates
    column = model.headings().index("Frequency")
    assert rows["Frequency"] == (model.index(0, column).data(), model.index(2, column).data())
    assert first.frequency_hz != third.frequency_hz
    # Each one's parts with their drawer places.
    assert "Parts" in rows and "line" in rows["Parts"][0] and "line" in rows["Parts"][1]
    dialog.close()


def test_a_bad_cell_is_marked_once_the_first_result_is_shown(qtbot, make_window, tmp_path):
    """Cells are checked after the first result (marking them redraws the whole drawer
    table), but they are checked: a quantity that is not a count shows its problem."""
    from gui.drawer_model import PROBLEM_ROLE

    stock = tmp_path / "stock.csv"
    stock.write_text("kind,value,tolerance,quantity\nR,10k,1%,5\nR,22k,1%,lots\n"
                     "C,100n,5%,3\n", encoding="utf-8")
    window = make_window(str(stock))
    model = window.drawer_model
    assert model.checking
    problem = model.index(1, model.column_of("quantity")).data(PROBLEM_ROLE)
    assert problem and "whole number" in problem
    assert model.index(0, model.column_of("quantity")).data(PROBLEM_ROLE) is None
