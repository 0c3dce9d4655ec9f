"""Starting the window: the application object, our look, and the screenshot mode.

Only Qt widgets are imported before the window shows; the plots (pyqtgraph)
and the first search come right after, so the window appears quickly.
"""

from __future__ import annotations

import sys

from PySide6.QtCore import (
    QEventLoop,
    QMessageLogContext,
    Qt,
    QTimer,
    QtMsgType,
    qFormatLogMessage,
    qInstallMessageHandler,
)
from PySide6.QtGui import QGuiApplication
from PySide6.QtWidgets import QApplication

from gui import startup

startup.quicken_import_check()  # before the window's imports (numpy, pyqtgraph, ours)
startup.pause_collection()  # until the first result (MainWindow.finish_startup)

from core.errors import TickbinError  # noqa: E402
from gui import error_hook, settings  # noqa: E402
from gui.main_window import MainWindow  # noqa: E402

SCREENSHOT_SIZE = (1280, 800)
SCREENSHOT_TIMEOUT_MS = 60_000

# Our own calm look: warm light greys, one slate-teal accent, red only for problems.
STYLE_SHEET = """
QMainWindow, QDialog { background: #f2f1ed; }
QFrame#panel { background: #ffffff; border: 1px solid #d8d5cd; border-radius: 6px; }
QLabel#heading { font-weight: 600; color: #2e4a4f; padding-bottom: 2px; }
QLabel#hint { color: #5f6468; }
QLabel#problem { color: #9c2a1f; }
QLineEdit[invalid="true"] { border: 1px solid #b3261e; background: #fdecea; }
QTableView { gridline-color: #e6e3dc; selection-background-color: #cfe3e1;
             selection-color: #1d2b2d; alternate-background-color: #f8f7f4; }
QHeaderView::section { background: #ecebe6; color: #3a3f44; border: none;
                       border-right: 1px solid #dcd9d1; border-bottom: 1px solid #d2cfc7;
                       padding: 3px 6px; }
QToolBar { background: #e8e6e0; border: none; spacing: 4px; padding: 2px 6px; }
QStatusBar { background: #e8e6e0; }
QSplitter::handle { background: transparent; }
"""


OFFSCREEN_NOISE = "This plugin does not support propagateSizeHints()"
"""What Qt's offscreen platform says whenever a shown window with a layout gets size
limits (Qt 6.11): about that platform, not about Tickbin, so it is not passed on."""


def _filter_qt_messages() -> None:
    """Drop OFFSCREEN_NOISE; every other Qt message goes on unchanged (to the handler
    before ours, or to stderr in Qt's own format when that was Qt's default)."""

    def handler(mode: QtMsgType, context: QMessageLogContext, message: str) -> None:
        if message == OFFSCREEN_NOISE:
            return
        if previous is None:
            sys.stderr.write(qFormatLogMessage(mode, context, message) + "\n")
        else:
            previous(mode, context, message)

    previous = qInstallMessageHandler(handler)


def make_application() -> QApplication:
    """The QApplication (created once), with our names and style."""
    app = QApplication.instance()
    if not isinstance(app, QApplication):
        _filter_qt_messages()
        QGuiApplication.setHighDpiScaleFactorRoundingPolicy(
            Qt.HighDpiScaleFactorRoundingPolicy.PassThrough)
        app = QApplication(sys.argv[:1])
    app.setOrganizationName(settings.ORGANIZATION)
    app.setApplicationName(settings.APPLICATION)
    app.setApplicationDisplayName("Tickbin")
    app.setStyle("Fusion")
    app.setStyleSheet(STYLE_SHEET)
    return app


def run_window(stock: str | None = None, screenshot: str | None = None,
               target: dict[str, str] | None = None,
               size: tuple[int, int] | None = None) -> int:
    """Open the window; with ``screenshot``, draw the first result, save a PNG and exit 0.

    ``stock`` is a drawer file (errors in it are shown in the table, but a file
    that cannot be read at all raises TickbinError for the command line).
    A screenshot run ignores and keeps the remembered settings, so pictures are
    reproducible; ``target`` fills the target form first (keys of
    ``TargetForm.state()``, e.g. ``{"mode": "band", "target": "400..480"}``);
    ``size`` is the picture's (width, height) in pixels.
    """
    app = make_application()
    window = MainWindow(stock, remember=screenshot is None)
    if target:
        window.form.restore(target)
    if screenshot:
        return _screenshot(app, window, screenshot, size or SCREENSHOT_SIZE)
    error_hook.install(lambda message: window.tell("Unexpected error", message))
    app.aboutToQuit.connect(window.quitting)
    window.show()
    QTimer.singleShot(0, window.finish_startup)
    return int(app.exec())


def _screenshot(app: QApplication, window: MainWindow, path: str,
                size: tuple[int, int]) -> int:
    window.resize(*size)
    window.show()
    loop = QEventLoop()
    window.sigSearchDone.connect(loop.quit)
    QTimer.singleShot(SCREENSHOT_TIMEOUT_MS, loop.quit)
    window.finish_startup()
    loop.exec()
    app.processEvents()
    picture = window.grab()
    if (picture.width(), picture.height()) != size:
        raise TickbinError(f"the window cannot be drawn at {size[0]}x{size[1]}: its smallest "
                           f"size is {window.minimumSizeHint().width()}x"
                           f"{window.minimumSizeHint().height()}")
    if not picture.save(path, "PNG"):
        raise TickbinError(f"{path}: the screenshot could not be written")
    window.close()
    return 0
