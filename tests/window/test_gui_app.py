"""Starting the window (gui/app.py): Qt's offscreen size-hint notice is dropped, every
other Qt message is passed on unchanged."""

from __future__ import annotations

from PySide6.QtCore import qInfo, qInstallMessageHandler, qWarning

from gui.app import OFFSCREEN_NOISE, _filter_qt_messages


def test_filter_drops_only_the_offscreen_notice(qtlog):
    theirs = qInstallMessageHandler(None)  # pytest-qt's recorder, put back below
    qInstallMessageHandler(theirs)
    _filter_qt_messages()  # on top of pytest-qt's, which it must forward to
    try:
        qWarning(OFFSCREEN_NOISE)  # would fail the test (qt_log_level_fail) if passed on
        qInfo("a message of our own")
        qInfo(OFFSCREEN_NOISE + " and more")  # only that exact notice is dropped
    finally:
        qInstallMessageHandler(theirs)
    assert [r.message for r in qtlog.records] == ["a message of our own",
                                                  OFFSCREEN_NOISE + " and more"]
