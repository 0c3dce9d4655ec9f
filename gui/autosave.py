"""Autosave of the open drawer, and noticing that the last session did not end cleanly.

A marker file exists while a window is open and is removed on a clean exit;
finding it at start-up together with a snapshot means the program stopped
with unsaved edits, and the window offers to restore them. Files live in
``<data folder>/autosave``. No Qt here: plain files, written atomically.
"""

from __future__ import annotations

import contextlib
import json
import os
import time
from dataclasses import dataclass
from pathlib import Path

from core.parts.drawer import Drawer, drawer_csv_text, parse_drawer_text
from core.storage.atomic import write_text_atomically
from core.storage.locations import data_dir

INTERVAL_MS = 60_000
"""How often the window saves a snapshot of unsaved edits."""


@dataclass(frozen=True)
class Snapshot:
    """What an earlier session left: the drawer's rows, its file (if any), when saved."""

    drawer: Drawer
    original: Path | None
    saved_at: float


class Autosave:
    """Snapshot file, its description and the session marker, in one folder."""

    def __init__(self, folder: Path | None = None):
        self.folder = folder or data_dir() / "autosave"
        self.snapshot = self.folder / "drawer.csv"
        self.meta = self.folder / "drawer.json"
        self.marker = self.folder / "session-open"

    def crashed_snapshot(self) -> Snapshot | None:
        """The snapshot of a session that ended without closing cleanly, else None."""
        if not (self.marker.exists() and self.snapshot.exists()):
            return None
        try:
            meta = json.loads(self.meta.read_text(encoding="utf-8"))
            drawer = parse_drawer_text(self.snapshot.read_text(encoding="utf-8"),
                                       str(self.snapshot))
        except (OSError, ValueError):
            return None
        original = Path(meta["original"]) if meta.get("original") else None
        return Snapshot(drawer, original, float(meta.get("saved_at", 0.0)))

    def begin_session(self) -> None:
        self.folder.mkdir(parents=True, exist_ok=True)
        self.marker.write_text(str(os.getpid()), encoding="utf-8")

    def save(self, drawer: Drawer) -> None:
        """Snapshot the drawer's rows (even bad cells) and where it belongs."""
        self.folder.mkdir(parents=True, exist_ok=True)
        write_text_atomically(self.snapshot, drawer_csv_text(drawer), backup=False)
        meta = {"original": str(drawer.path) if drawer.path else None,
                "saved_at": time.time()}
        write_text_atomically(self.meta, json.dumps(meta), backup=False)

    def discard(self) -> None:
        for path in (self.snapshot, self.meta):
            with contextlib.suppress(OSError):
                path.unlink()

    def end_session(self) -> None:
        """A clean exit: nothing to restore next time."""
        self.discard()
        with contextlib.suppress(OSError):
            self.marker.unlink()
