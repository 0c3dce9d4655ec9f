"""Window tests: settings in a temporary folder, a fresh window on the demo drawer."""

from __future__ import annotations

from pathlib import Path

import pytest

pytest.importorskip("PySide6")


@pytest.fixture(autouse=True)
def private_settings(tmp_path: Path, qapp: object) -> Path:
    """QSettings go to ``tmp_path`` so tests never read or write the developer's settings."""
    from PySide6.QtCore import QSettings

    folder = tmp_path / "settings"
    folder.mkdir()
    for scope in (QSettings.Scope.UserScope, QSettings.Scope.SystemScope):
        QSettings.setPath(QSettings.Format.IniFormat, scope, str(folder))
    return folder
