"""Window test helpers: settings in a temporary folder, a fresh window on the demo drawer.

Window test modules load the fixtures with ``pytest_plugins = ["support.gui_helpers"]``,
mark themselves ``QUIET_OFFSCREEN`` and import the plain helpers (``search_done`` ...)
from here.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

pytest.importorskip("PySide6")

from gui.app import OFFSCREEN_NOISE

QUIET_OFFSCREEN = pytest.mark.qt_log_ignore(re.escape(OFFSCREEN_NOISE))
"""pytest-qt records Qt's messages with a handler of its own during each test, in place
of the filter gui.app installs, so window tests still ignore that notice this way."""


def search_done(qtbot, window, action) -> None:
    """Do ``action`` and wait for the search it starts to finish."""
    with qtbot.waitSignal(window.sigSearchDone, timeout=30_000):
        action()


def search_with(qtbot, window, **fields: str) -> None:
    """Set target-form fields in the order given and wait for the search they start.

    A combo box is set to the item carrying that data, a line edit to that text.
    """
    from PySide6.QtWidgets import QComboBox

    def fill() -> None:
        for name, value in fields.items():
            widget = getattr(window.form, name)
            if isinstance(widget, QComboBox):
                widget.setCurrentIndex(widget.findData(value))
            else:
                widget.setText(value)

    search_done(qtbot, window, fill)


def fail_searches(monkeypatch: pytest.MonkeyPatch, error: Exception) -> None:
    """Make the worker raise ``error`` in every search (``monkeypatch.undo()`` ends it)."""
    import gui.search_worker as worker

    def boom(*args, **kwargs):
        raise error

    monkeypatch.setattr(worker, "compute", boom)


@pytest.fixture
def private_settings(tmp_path_factory: pytest.TempPathFactory, qapp: object) -> Path:
    """QSettings go to a temporary folder so tests never touch the developer's settings.

    Window tests use it through ``make_window``; other gui test modules name it in
    ``pytestmark = [..., pytest.mark.usefixtures("private_settings")]``.
    """
    from PySide6.QtCore import QSettings

    folder = tmp_path_factory.mktemp("settings")
    for scope in (QSettings.Scope.UserScope, QSettings.Scope.SystemScope):
        QSettings.setPath(QSettings.Format.IniFormat, scope, str(folder))
    return folder


class Answers(list):
    """Answers to give, in order; ``asked`` records the titles of every question."""

    def __init__(self) -> None:
        super().__init__()
        self.asked: list[str] = []


@pytest.fixture
def answers(monkeypatch: pytest.MonkeyPatch) -> Answers:
    """Replace the window's questions: pop answers from this list (default: Discard)."""
    from PySide6.QtWidgets import QMessageBox

    from gui.main_window import MainWindow

    queue = Answers()
    asked = queue.asked

    def ask(cls, parent, title, text, buttons, default):
        asked.append(title)
        return queue.pop(0) if queue else QMessageBox.StandardButton.Discard

    monkeypatch.setattr(MainWindow, "ask", classmethod(ask))
    monkeypatch.setattr(MainWindow, "tell", lambda self, title, text: asked.append(title))
    return queue


@pytest.fixture
def make_window(qtbot, answers, private_settings):
    """``make_window(stock=None)``: a shown window after its first search."""
    from gui.main_window import MainWindow

    def make(stock: str | None = None):
        window = MainWindow(stock)
        qtbot.addWidget(window)
        window.resize(1280, 800)
        window.show()
        search_done(qtbot, window, window.finish_startup)
        return window

    return make


@pytest.fixture
def window(make_window):
    """The window on the bundled demo drawer, first search done."""
    return make_window()
