"""The drawer table model: a faithful adapter over core.parts.drawer.Drawer."""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from support.gui_helpers import QUIET_OFFSCREEN

from core.parts.drawer import Drawer, Row
from core.parts.drawer_file import parse_drawer_text
from gui.drawer_model import PROBLEM_ROLE, DrawerFilterProxy, DrawerTableModel

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]

TEXT = """kind,value,tolerance,quantity,location,note,colour
R,4k7,5%,10,A1,,brown
R,10k,1%,3,A2,metal film,
C,100n,10%,5,B1,,
P,10k,20%,2,C1,trimmer,
"""


def make() -> tuple[Drawer, DrawerTableModel]:
    drawer = parse_drawer_text(TEXT)
    return drawer, DrawerTableModel(drawer)


def test_model_passes_qt_model_tester(qtmodeltester):
    drawer, model = make()
    qtmodeltester.check(model, force_py=True)
    # Still consistent through inserts, removals, edits, resets and undo.
    drawer.insert_rows(1, [Row({"kind": "R", "value": "1k", "quantity": "1"})])
    drawer.set_cell(0, "value", "bogus")
    drawer.remove_rows([2, 3])
    drawer.replace_rows(list(reversed(drawer.rows)))
    for _ in range(4):
        drawer.undo()
    qtmodeltester.check(model, force_py=True)


def test_proxy_passes_qt_model_tester(qtmodeltester):
    _, model = make()
    proxy = DrawerFilterProxy()
    proxy.setSourceModel(model)
    proxy.set_kind("R")
    proxy.sort(model.column_of("value"))
    qtmodeltester.check(proxy, force_py=True)


def test_extra_file_columns_are_shown_after_the_known_ones():
    _, model = make()
    assert model.column_name(0) == "kind"
    assert model.column_name(model.columnCount() - 1) == "colour"


def test_bad_cell_is_marked_kept_and_explained():
    drawer, model = make()
    index = model.index(0, model.column_of("value"))
    assert model.setData(index, "4x7")
    assert model.data(index) == "4x7"  # the text is kept for correction
    assert drawer.rows[0].get("value") == "4x7"
    assert model.data(index, PROBLEM_ROLE)
    assert "not usable" in model.data(index, Qt.ItemDataRole.ToolTipRole)
    # Marked by colour and by an underline, not by colour alone; no icon takes its room.
    assert model.data(index, Qt.ItemDataRole.BackgroundRole) is not None
    assert model.data(index, Qt.ItemDataRole.FontRole).underline()
    assert model.data(index, Qt.ItemDataRole.DecorationRole) is None
    assert len(drawer.parts()) == 3
    drawer.undo()
    assert model.data(index) == "4k7"
    assert model.data(index, PROBLEM_ROLE) is None
    assert len(drawer.parts()) == 4


def test_changing_kind_notifies_the_whole_row(qtbot):
    _, model = make()
    with qtbot.waitSignal(model.dataChanged) as blocker:
        model.setData(model.index(0, model.column_of("kind")), "C")
    top, bottom = blocker.args[:2]
    assert (top.column(), bottom.column()) == (0, model.columnCount() - 1)
    # 4k7 is no capacitance (IEC 60062 uses p, n, u, m for capacitors): value is now bad.
    assert model.data(model.index(0, model.column_of("value")), PROBLEM_ROLE)


def test_filter_by_kind_text_and_problems():
    drawer, model = make()
    proxy = DrawerFilterProxy()
    proxy.setSourceModel(model)
    proxy.set_kind("R")
    assert proxy.rowCount() == 2
    proxy.set_kind("")
    proxy.set_text("trimmer")
    assert proxy.rowCount() == 1
    proxy.set_text("")
    proxy.set_kind("bad")
    assert proxy.rowCount() == 0
    drawer.set_cell(1, "quantity", "many")
    assert proxy.rowCount() == 1


def test_header_sort_uses_parsed_values():
    _, model = make()
    proxy = DrawerFilterProxy()
    proxy.setSourceModel(model)
    proxy.set_kind("R")
    proxy.sort(model.column_of("value"), Qt.SortOrder.DescendingOrder)
    # 10k sorts above 4k7 by value even though "4k7" > "10k" as text.
    assert proxy.index(0, model.column_of("value")).data() == "10k"


def test_new_rows_show_where_they_will_be_saved():
    drawer, model = make()
    drawer.insert_rows(4, [Row({"kind": "C", "value": "1u", "quantity": "2"})])
    assert model.headerData(4, Qt.Orientation.Vertical) == "6"
    assert "not saved" in model.headerData(4, Qt.Orientation.Vertical,
                                           Qt.ItemDataRole.ToolTipRole)


def test_model_with_candidate_marks_passes_qt_model_tester(qtmodeltester):
    from gui.drawer_model import USED_ROLE

    drawer, model = make()
    model.set_used({0: 1, 2: 2})
    qtmodeltester.check(model, force_py=True)
    qty = model.column_of("quantity")
    assert model.index(2, qty).data() == "5 (use 2)"
    assert model.index(2, qty).data(Qt.ItemDataRole.EditRole) == "5"
    assert model.index(1, qty).data(USED_ROLE) == 0
    drawer.remove_rows([3])  # rows move: the marks go until the next result
    assert model.index(2, qty).data(USED_ROLE) == 0
