"""Shared test set-up: offscreen Qt and a private data folder. Shared helpers live in
tests/support (this folder is on sys.path because it holds this conftest)."""

from __future__ import annotations

import os

import pytest

# Must happen before anything imports Qt.
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# The helpers assert; have pytest explain their failures as it does in test modules.
pytest.register_assert_rewrite("support")


@pytest.fixture(autouse=True)
def private_data_dir(tmp_path_factory: pytest.TempPathFactory,
                     monkeypatch: pytest.MonkeyPatch) -> None:
    """Calibrations, autosave and logs go to a temporary folder, never the developer's."""
    monkeypatch.setenv("TICKBIN_DATA_DIR", str(tmp_path_factory.mktemp("tickbin-data")))

