"""Shared test set-up: offscreen Qt and a private data folder. Shared helpers live in
tests/support (this folder is on sys.path because it holds this conftest)."""

from __future__ import annotations

import os

import pytest
from hypothesis import settings

# Property tests check behaviour, not speed: on a loaded 2-core CI machine a single
# example can exceed hypothesis's default 200 ms deadline, which would fail a good run.
settings.register_profile("tickbin", deadline=None)
settings.load_profile("tickbin")

# Must happen before anything imports Qt.
os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# The helpers assert; have pytest explain their failures as it does in test modules.
pytest.register_assert_rewrite("support")


@pytest.fixture(autouse=True)
def private_data_dir(tmp_path_factory: pytest.TempPathFactory,
                     monkeypatch: pytest.MonkeyPatch) -> None:
    """Calibrations, autosave and logs go to a temporary folder, never the developer's."""
    monkeypatch.setenv("TICKBIN_DATA_DIR", str(tmp_path_factory.mktemp("tickbin-data")))

