"""Outside programs the tests call (ngspice, pdftotext, pdftoppm)."""

from __future__ import annotations

import os
import shutil

import pytest


def require_tool(name: str) -> str:
    """Path of an outside program; in CI its absence fails the test, elsewhere it skips."""
    path = shutil.which(name)
    if path is None:
        if os.environ.get("CI"):
            pytest.fail(f"{name} is not installed; .ci/run should have installed it")
        pytest.skip(f"{name} not installed (Debian package; .ci/run installs it)")
    return path
