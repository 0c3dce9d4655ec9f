"""Where Tickbin's files live: bundled resources, and the person's own data folder."""

from __future__ import annotations

import os
import traceback
from pathlib import Path

from core.resources import FOLDER

DATA_DIR_ENV = "TICKBIN_DATA_DIR"
"""Set to move the data folder (tests point it at a temporary directory)."""


def resource(name: str) -> Path:
    """A bundled data file (``devices.toml``, ``demo_drawer.csv``): the same lookup in a
    checkout and an installed wheel, through ``core.resources.FOLDER``."""
    return FOLDER / name


def demo_drawer_path() -> Path:
    """The bundled demo drawer (installed as a plain file, so it has a path)."""
    return resource("demo_drawer.csv")


def data_dir() -> Path:
    """The person's data folder (calibrations, autosave, logs); created on demand."""
    override = os.environ.get(DATA_DIR_ENV)
    if override:
        path = Path(override)
    else:
        import platformdirs

        path = Path(platformdirs.user_data_dir("tickbin", appauthor=False))
    path.mkdir(parents=True, exist_ok=True)
    return path


def append_error_log(error: BaseException) -> str:
    """Append ``error``'s traceback to ``error.log`` in the data folder; say where it went."""
    try:
        log = data_dir() / "error.log"
        with log.open("a", encoding="utf-8") as f:
            f.write("".join(traceback.format_exception(error)))
        return f"details in {log}"
    except OSError as e:
        return f"no log could be written: {e.strerror or e}"
