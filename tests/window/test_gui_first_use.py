"""What a first real use of the window ran into (issue 15): labels that hold still, file
names a file system takes, messages that say what was done, cells that stay readable.

References: the facts of the trade given in issue 15 (a tool bar that does not move, a
colon is not allowed in a Windows file name, a bipolar 555 wants bulk decoupling); the
window's numbers come from core, checked in the core tests.
"""

from __future__ import annotations

import math

import pytest
from support.gui_helpers import QUIET_OFFSCREEN, search_done

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
        dialog.measured.setText(f"{window.selected_candidate().frequency_hz * 1.05:.6g}Hz")
        dialog.name.setText("bench-msg")
        dialog.save()
        return 1

    monkeypatch.setattr(CalibrationDialog, "exec", run)
    window.new_calibration()
    saved = load_calibration("bench-msg")
    message = window.status_text.text()
    assert f"VT+ {saved.vt_plus_v:.3f} V" in message and f"VT− {saved.vt_minus_v:.3f} V" in message
    assert f"±{saved.uncertainty_pct:.1f} %" in message and math.isfinite(saved.uncertainty_pct)
