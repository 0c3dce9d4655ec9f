"""Shared test set-up: offscreen Qt, a private data folder, outside tools."""

from __future__ import annotations

import os
import shutil

import pytest

# Must happen before anything imports Qt.
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")


@pytest.fixture(autouse=True)
def private_data_dir(tmp_path_factory: pytest.TempPathFactory,
                     monkeypatch: pytest.MonkeyPatch) -> None:
    """Calibrations, autosave and logs go to a temporary folder, never the developer's."""
    monkeypatch.setenv("TICKBIN_DATA_DIR", str(tmp_path_factory.mktemp("tickbin-data")))


def require_tool(name: str) -> str:
    """Path of an outside program; in CI its absence fails the test, elsewhere it skips."""
    path = shutil.which(name)
    if path is None:
        if os.environ.get("CI"):
            pytest.fail(f"{name} is not installed; .ci/run should have installed it")
        pytest.skip(f"{name} not installed (Debian package; .ci/run installs it)")
    return path
