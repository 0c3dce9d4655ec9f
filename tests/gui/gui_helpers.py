"""Window tests: settings in a temporary folder, a fresh window on the demo drawer."""

from __future__ import annotations

from pathlib import Path

import pytest

pytest.importorskip("PySide6")

OFFSCREEN_NOISE = "This plugin does not support propagateSizeHints"
"""Qt's offscreen platform says this whenever a shown window with a layout gets size
limits (Qt 6.11); it is about the test platform, not about Tickbin."""


def pytest_collection_modifyitems(items: list[pytest.Item]) -> None:
    for item in items:
        if "tests/gui/" in item.nodeid.replace("\\", "/"):
            item.add_marker(pytest.mark.qt_log_ignore(OFFSCREEN_NOISE))


@pytest.fixture(autouse=True)
def private_settings(tmp_path: Path, qapp: object) -> Path:
    """QSettings go to ``tmp_path`` so tests never read or write the developer's settings."""
    from PySide6.QtCore import QSettings

    folder = tmp_path / "settings"
    folder.mkdir()
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


def open_window(qtbot, stock=None, remember=True):
    """A shown window after its first search."""
    from gui.main_window import MainWindow

    window = MainWindow(stock, remember=remember)
    qtbot.addWidget(window)
    window.resize(1280, 800)
    window.show()
    with qtbot.waitSignal(window.sigSearchDone, timeout=30_000):
        window.finish_startup()
    return window


@pytest.fixture
def window(qtbot, answers):
    """The window on the bundled demo drawer, first search done."""
    return open_window(qtbot)
