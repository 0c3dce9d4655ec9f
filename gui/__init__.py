"""Tickbin window."""

from gui.qt_compat import keep_none_alive

keep_none_alive()  # before any Qt call (see gui/qt_compat.py)
