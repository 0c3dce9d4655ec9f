"""Never losing a drawer in the window (issue 7): autosave, crash restore, failed saves,
errors in the worker and anywhere else.

The failures are simulated by monkeypatching the operating-system calls the
atomic save uses (the tests run as root, so a read-only folder cannot be made
with permissions); errno values are the POSIX ones (ENOSPC, EACCES).
"""

from __future__ import annotations

import errno
import shutil
import sys

import pytest
from PySide6.QtCore import QTimer
from PySide6.QtWidgets import QMessageBox
from support.gui_helpers import QUIET_OFFSCREEN, fail_searches, search_done

from core.parts.drawer import Row
from core.parts.drawer_file import read_drawer
from core.storage.locations import data_dir, demo_drawer_path

pytest_plugins = ["support.gui_helpers"]  # fixtures: private_settings, answers, make_window, window
pytestmark = [QUIET_OFFSCREEN, pytest.mark.usefixtures("private_settings")]


@pytest.fixture
def mine(tmp_path):
    path = tmp_path / "mine.csv"
    shutil.copy(demo_drawer_path(), path)
    return path


def crash(window) -> None:
    """What a crash leaves: no clean close, so the session marker stays behind."""
    window.remember = False
    window.close()


def test_autosave_timer_writes_every_minute(qtbot, window):
    timer = window.files.autosave_timer
    assert timer.isActive() and timer.interval() == 60_000
    window.drawer.set_cell(2, "note", "typed a minute ago")
    window.files.autosave_timer.timeout.emit()  # what the timer does each minute
    assert "typed a minute ago" in window.files.autosave.snapshot.read_text(encoding="utf-8")


def test_quit_without_close_keeps_edits_for_next_start(qtbot, answers, make_window, mine):
    first = make_window(stock=str(mine))
    first.drawer.set_cell(0, "location", "moved to B9")
    first.quitting()  # the application quits (logout) without closing the window first
    crash(first)
    answers.append(QMessageBox.StandardButton.Yes)
    second = make_window()
    assert second.drawer.rows[0].get("location") == "moved to B9"


def test_restore_after_crash_gives_back_exactly_what_was_typed(qtbot, answers, make_window,
                                                               mine):
    crashed = make_window(stock=str(mine))
    drawer = crashed.drawer
    drawer.set_cell(0, "value", "4k7x")            # a bad cell, kept as typed
    drawer.set_cell(1, "quantity", "lots")         # another
    drawer.set_cell(2, "note", "=1+2, \"quoted\"")  # formula-like text and quotes
    drawer.insert_rows(3, [Row({"kind": "C", "value": "33nn", "quantity": "2",
                                "location": "bag 7"})])
    drawer.remove_rows([10, 11])
    columns = list(drawer.columns)
    typed = [[r.get(c) for c in columns] for r in drawer.rows]
    crashed.files.autosave_now()
    crash(crashed)

    answers.append(QMessageBox.StandardButton.Yes)
    restored = make_window()
    assert "Restore unsaved edits?" in answers.asked
    assert restored.drawer.columns == columns
    assert [[r.get(c) for c in columns] for r in restored.drawer.rows] == typed
    assert restored.drawer.path == mine and restored.isWindowModified()
    problems = restored.drawer.problems()
    assert "value" in problems[0] and "quantity" in problems[1] and "value" in problems[3]
    assert read_drawer(mine, strict=False).rows[0].get("value") != "4k7x"  # file untouched


def test_declining_the_restore_discards_the_snapshot(qtbot, answers, make_window, mine):
    crashed = make_window(stock=str(mine))
    crashed.drawer.set_cell(0, "note", "never mind")
    crashed.files.autosave_now()
    crash(crashed)
    answers.append(QMessageBox.StandardButton.No)
    fresh = make_window()
    assert fresh.drawer.rows[0].get("note") != "never mind"
    assert not fresh.files.autosave.snapshot.exists()


@pytest.mark.parametrize("where, code", [("tempfile.mkstemp", errno.EACCES),  # read-only
                                         ("os.replace", errno.ENOSPC),         # disk full
                                         ("os.fsync", errno.ENOSPC)])
def test_failed_save_keeps_old_file_edits_and_dirty_marker(qtbot, make_window, mine,
                                                           monkeypatch, where, code):
    import core.storage.atomic

    window = make_window(stock=str(mine))
    before = mine.read_bytes()
    told = []
    monkeypatch.setattr(type(window), "tell", lambda self, title, text: told.append(text))
    window.drawer.set_cell(0, "note", "edit that must survive")

    module, name = where.split(".")
    original = getattr(getattr(core.storage.atomic, module), name)
    folder = str(mine.parent)

    def fail(*args, **kwargs):
        # The drawer's folder fails; elsewhere (the autosave folder) still works, except
        # for fsync, which cannot tell where it writes: then every write fails.
        if name == "fsync" or folder in " ".join(map(str, [*args, *kwargs.values()])):
            raise OSError(code, "simulated failure")
        return original(*args, **kwargs)

    with monkeypatch.context() as patched:  # only around the save: pytest needs these too
        patched.setattr(getattr(core.storage.atomic, module), name, fail)
        saved = window.files.save()
    assert saved is False
    assert mine.read_bytes() == before                     # old file intact
    assert told and "not saved" in told[0] and "unchanged" in told[0]
    assert "still here" in told[0]
    assert window.drawer.rows[0].get("note") == "edit that must survive"
    assert window.isWindowModified() and window.drawer.dirty
    assert "[*]" in window.windowTitle()
    assert not list(mine.parent.glob(".mine.csv.*.tmp"))  # no half-written leftovers
    if name != "fsync":  # ... and in the autosave folder too, when it can be written
        assert "edit that must survive" in window.files.autosave.snapshot.read_text(
            encoding="utf-8")
    assert window.files.save() and read_drawer(mine).rows[0].get("note") == "edit that must survive"


def test_worker_exception_is_caught_logged_and_shown(qtbot, window, monkeypatch):
    fail_searches(monkeypatch, ZeroDivisionError("index divided by nothing"))
    search_done(qtbot, window, window.run_search)
    assert "index divided by nothing" in window.form.message.text()
    assert "ZeroDivisionError" in (data_dir() / "error.log").read_text(encoding="utf-8")
    monkeypatch.undo()
    search_done(qtbot, window, window.run_search)  # and the next search works again
    assert window.candidates.rowCount() > 0


@pytest.mark.qt_no_exception_capture
def test_unhandled_exception_in_a_slot_is_logged_and_window_lives_on(qtbot, window,
                                                                     monkeypatch):
    from gui import error_hook

    monkeypatch.setattr(sys, "excepthook", sys.excepthook)  # restored afterwards
    told = []
    monkeypatch.setattr(type(window), "tell", lambda self, title, text: told.append(text))
    error_hook.install(lambda message: window.tell("Unexpected error", message))  # as app.py
    window.drawer.set_cell(0, "note", "unsaved, must stay")

    def broken_slot():
        raise KeyError("a bug in a slot")

    QTimer.singleShot(0, broken_slot)
    qtbot.waitUntil(lambda: bool(told), timeout=5_000)
    assert "KeyError" in told[0] and "untouched" in told[0]
    assert "a bug in a slot" in (data_dir() / "error.log").read_text(encoding="utf-8")
    assert window.isVisible() and window.drawer.rows[0].get("note") == "unsaved, must stay"
    search_done(qtbot, window, window.run_search)  # still working
    assert window.candidates.rowCount() > 0
