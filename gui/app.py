"""The Tickbin main window (placeholder until the window issue lands)."""

from __future__ import annotations

import sys


def run_window(stock: str | None = None, screenshot: str | None = None) -> int:
    """Open the window; with ``screenshot``, save a picture of it and exit."""
    from PySide6.QtWidgets import QApplication, QLabel

    app = QApplication.instance() or QApplication(sys.argv[:1])
    label = QLabel("Tickbin")
    label.resize(1200, 750)
    label.show()
    if screenshot:
        app.processEvents()
        label.grab().save(screenshot)
        return 0
    return app.exec()
