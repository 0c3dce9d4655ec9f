"""The window's unhandled-exception hook logs and keeps going (hardening issue)."""

from __future__ import annotations

import sys

import pytest

from core.storage.locations import data_dir
from gui import error_hook


def test_hook_logs_and_notifies(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(sys, "excepthook", sys.excepthook)  # restored after the test
    messages: list[str] = []
    error_hook.install(messages.append)
    try:
        raise RuntimeError("worker fell over")
    except RuntimeError as e:
        sys.excepthook(type(e), e, e.__traceback__)
    assert "worker fell over" in messages[0] and "untouched" in messages[0]
    log = (data_dir() / "error.log").read_text()
    assert "Traceback" in log and "RuntimeError: worker fell over" in log
