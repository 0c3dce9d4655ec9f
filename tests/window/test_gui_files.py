"""The window never loses a person's work to another program or window (issue 10): a drawer
changed on disk is not overwritten without asking, and every window has its own autosave.
"""

from __future__ import annotations

import shutil

import pytest
from PySide6.QtWidgets import QMessageBox
from support.gui_helpers import QUIET_OFFSCREEN

from core.parts.drawer_file import read_drawer
from core.storage.locations import demo_drawer_path

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]

ADDED = b"R,3k3,5%,7,added by another program,,,,\n"


@pytest.fixture
def mine(tmp_path):
    path = tmp_path / "mine.csv"
    shutil.copy(demo_drawer_path(), path)
    return path


def _edit_then_change_on_disk(window, mine) -> int:
    window.drawer.set_cell(0, "note", "typed in the window")
    with mine.open("ab") as f:
        f.write(ADDED)
    return len(window.drawer.rows)


def test_save_over_a_changed_file_asks_and_reload_keeps_the_edits_in_undo(
        qtbot, answers, make_window, mine):
    window = make_window(str(mine))
    rows = _edit_then_change_on_disk(window, mine)
    answers.append(QMessageBox.StandardButton.Yes)  # reload from disk
    assert not window.files.save()
    assert answers.asked[-1] == "Drawer changed on disk"
    assert mine.read_bytes().endswith(ADDED)  # the other program's line is still there
    assert len(window.drawer.rows) == rows + 1
    assert window.drawer.rows[-1].get("location") == "added by another program"
    assert not window.isWindowModified()
    window.undo_action.trigger()  # the window's edits come back
    assert window.drawer.rows[0].get("note") == "typed in the window"


def test_keeping_the_window_version_saves_it_and_backs_up_the_other(qtbot, answers,
                                                                  make_window, mine):
    window = make_window(str(mine))
    _edit_then_change_on_disk(window, mine)
    answers.append(QMessageBox.StandardButton.No)  # keep this window's version
    assert window.files.save()
    assert read_drawer(mine).rows[0].get("note") == "typed in the window"
    assert (mine.parent / "mine.csv.bak").read_bytes().endswith(ADDED)


def test_cancel_keeps_both(qtbot, answers, make_window, mine):
    window = make_window(str(mine))
    _edit_then_change_on_disk(window, mine)
    answers.append(QMessageBox.StandardButton.Cancel)
    assert not window.files.save()
    assert mine.read_bytes().endswith(ADDED)
    assert window.isWindowModified()
    assert window.drawer.rows[0].get("note") == "typed in the window"


def _crash(window) -> None:
    """What a crash leaves: no clean close; the process's lock on the slot goes away."""
    window.remember = False
    window.close()


def test_two_windows_never_take_each_others_autosave(qtbot, answers, make_window, mine):
    first = make_window(str(mine))
    first.drawer.set_cell(0, "note", "live edits of the first window")
    first.files.autosave_now()
    second = make_window(str(mine))  # the same drawer, at the same time
    assert "Restore unsaved edits?" not in answers.asked  # the first one is alive
    second.drawer.set_cell(1, "note", "edits of the second window")
    second.files.autosave_now()
    assert first.files.autosave.snapshot != second.files.autosave.snapshot  # one slot per window
    assert first.files.autosave.snapshot.exists() and second.files.autosave.snapshot.exists()
    second.close()  # a clean exit deletes its own snapshot only
    assert not second.files.autosave.snapshot.exists()
    assert "live edits of the first window" in first.files.autosave.snapshot.read_text(
        encoding="utf-8")
    _crash(first)
    answers.append(QMessageBox.StandardButton.Yes)
    third = make_window()
    assert answers.asked.count("Restore unsaved edits?") == 1
    assert third.drawer.rows[0].get("note") == "live edits of the first window"
    assert not first.files.autosave.snapshot.exists()  # restored: now in the third's own slot
    assert "live edits of the first window" in third.files.autosave.snapshot.read_text(
        encoding="utf-8")


def test_a_snapshot_over_the_readers_limits_still_restores(qtbot, answers, make_window,
                                                             mine):
    from core.parts.drawer_file import MAX_LINE_CHARS

    crashed = make_window(str(mine))
    long_note = "x" * (MAX_LINE_CHARS + 10)
    crashed.drawer.set_cell(0, "note", "a NUL \x00 inside")
    crashed.drawer.set_cell(1, "note", long_note)
    crashed.drawer.set_cell(2, "location", 'quote " and, comma\nnew line')
    crashed.files.autosave_now()
    _crash(crashed)
    answers.append(QMessageBox.StandardButton.Yes)
    restored = make_window()
    assert "Restore unsaved edits?" in answers.asked
    rows = restored.drawer.rows
    assert rows[0].get("note") == "a NUL \x00 inside"
    assert rows[1].get("note") == long_note
    assert rows[2].get("location") == 'quote " and, comma\nnew line'
    assert restored.isWindowModified()


@pytest.mark.parametrize("action", ["pdf_action", "netlist_action"])
def test_sheet_or_netlist_over_the_drawer_itself_is_refused(qtbot, answers, make_window, mine,
                                                            monkeypatch, action):
    from gui.sheet_actions import SheetActions

    window = make_window(str(mine))
    before = mine.read_bytes()
    link = mine.parent / "drawer-link.pdf"
    link.symlink_to(mine)
    monkeypatch.setattr(SheetActions, "ask_path", classmethod(lambda *a, **k: str(link)))
    told = []
    monkeypatch.setattr(type(window), "tell", lambda self, title, text: told.append(text))
    getattr(window.sheet_actions, action).trigger()
    assert told and "is the drawer file itself" in told[0]
    assert mine.read_bytes() == before
