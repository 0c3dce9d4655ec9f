"""Where Tickbin's files live: bundled resources, and the person's own data folder."""

from __future__ import annotations

import os
import traceback
from importlib import resources
from importlib.abc import Traversable
from pathlib import Path

DATA_DIR_ENV = "TICKBIN_DATA_DIR"
"""Set to move the data folder (tests point it at a temporary directory)."""


def resource(name: str) -> Traversable:
    """A bundled data file (``devices.toml``, ``demo_drawer.csv``), installed as core.resources."""
    return resources.files("core.resources").joinpath(name)


def demo_drawer_path() -> Path:
    """The bundled demo drawer as a file path (it is installed as a plain file)."""
    return Path(str(resource("demo_drawer.csv")))


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
