"""Autosave: one snapshot slot per window and drawer, and noticing windows that crashed.

Each window owns the files ``w<pid>-<n>.lock`` and ``w<pid>-<n>-<drawer>.json`` in
``<data folder>/autosave`` (``<drawer>``: a hash of the drawer's file name). The window
holds its lock file locked while it is open, and the operating system lets go when its
process ends however it ends: a snapshot whose lock nobody holds belonged to a window
that did not close cleanly, and is offered for restore. A live window's snapshot is
never offered and never deleted by another window. Snapshots hold the cells as JSON
(not CSV), so a cell over the reader's limits or with a NUL restores exactly.
No Qt here: plain files, written atomically.
"""

from __future__ import annotations

import contextlib
import hashlib
import itertools
import json
import os
import re
import time
from dataclasses import dataclass
from pathlib import Path

from core.parts.drawer import Drawer, Row
from core.storage.atomic import try_lock, write_text_atomically
from core.storage.locations import data_dir

INTERVAL_MS = 60_000
"""How often the window saves a snapshot of unsaved edits."""
FORMAT_VERSION = 2

_INSTANCES = itertools.count(1)
_SNAPSHOT = re.compile(r"^(w\d+-\d+)-[0-9a-f]{12}\.json$")


@dataclass(frozen=True)
class Snapshot:
    """What an earlier session left: the drawer's rows, its file (if any), when saved."""

    drawer: Drawer
    original: Path | None
    saved_at: float


def _drawer_key(path: Path | None) -> str:
    name = str(path.resolve()) if path is not None else ""
    return hashlib.sha256(name.encode("utf-8", "surrogatepass")).hexdigest()[:12]


def _snapshot_drawer(data: dict) -> Drawer:
    columns = [str(c) for c in data["columns"]]
    rows = [Row({c: str(v) for c, v in zip(columns, cells, strict=True)},
                int(line) if line is not None else None)
            for cells, line in zip(data["rows"], data["lines"], strict=True)]
    return Drawer(rows, columns)


class Autosave:
    """This window's snapshot slot and lock, and the slots crashed windows left behind."""

    def __init__(self, folder: Path | None = None):
        self.folder = folder or data_dir() / "autosave"
        self.owner = f"w{os.getpid()}-{next(_INSTANCES)}"
        self.snapshot = self.folder / f"{self.owner}-{_drawer_key(None)}.json"
        """This window's snapshot of the drawer it shows (moves with the drawer)."""
        self._lock: int | None = None
        self._claimed: list[tuple[Path, int]] = []
        self._offered: Path | None = None

    # -- this window's slot
    def begin_session(self) -> None:
        """Hold this window's lock for as long as it is open."""
        self.folder.mkdir(parents=True, exist_ok=True)
        if self._lock is None:
            self._lock = try_lock(self.folder / f"{self.owner}.lock")

    def save(self, drawer: Drawer) -> None:
        """Snapshot the drawer's cells (even bad ones, exactly) and where it belongs."""
        self.folder.mkdir(parents=True, exist_ok=True)
        target = self.folder / f"{self.owner}-{_drawer_key(drawer.path)}.json"
        columns = list(drawer.columns)
        data = {"format": FORMAT_VERSION,
                "original": str(drawer.path) if drawer.path else None,
                "saved_at": time.time(), "columns": columns,
                "rows": [[row.get(c) for c in columns] for row in drawer.rows],
                "lines": [row.line for row in drawer.rows]}
        write_text_atomically(target, json.dumps(data, ensure_ascii=False), backup=False)
        if target != self.snapshot:  # the window shows another drawer now
            self.discard()
            self.snapshot = target

    def discard(self) -> None:
        """Nothing of this window's to restore (saved, or the edits were let go)."""
        with contextlib.suppress(OSError):
            self.snapshot.unlink()

    def release(self) -> None:
        """Let go of the lock, keeping the snapshot: what a crash leaves behind."""
        if self._lock is not None:
            os.close(self._lock)
            self._lock = None

    def end_session(self) -> None:
        """A clean exit: nothing of this window's to restore next time."""
        self.discard()
        if self._lock is not None:
            with contextlib.suppress(OSError):
                (self.folder / f"{self.owner}.lock").unlink()
        self.release()
        self.forget_crashed()

    # -- what crashed windows left
    def crashed_snapshot(self) -> Snapshot | None:
        """The newest snapshot whose window ended without closing cleanly, else None.

        It stays claimed by this window (its lock held) until ``forget_crashed``, so
        two windows starting together never offer the same snapshot.
        """
        self.forget_crashed()
        found: list[tuple[float, Path, Snapshot]] = []
        try:
            names = sorted(os.listdir(self.folder))
        except OSError:
            return None
        for name in names:
            match = _SNAPSHOT.match(name)
            if match is None or match.group(1) == self.owner:
                continue
            lock = self.folder / f"{match.group(1)}.lock"
            held = next((fd for p, fd in self._claimed if p == lock), None)
            if held is None:
                with contextlib.suppress(OSError):
                    held = try_lock(lock)
                if held is None:
                    continue  # a live window's snapshot: not ours to offer or delete
                self._claimed.append((lock, held))
            try:
                data = json.loads((self.folder / name).read_text(encoding="utf-8"))
                snap = Snapshot(_snapshot_drawer(data),
                                Path(data["original"]) if data.get("original") else None,
                                float(data.get("saved_at", 0.0)))
            except (OSError, ValueError, KeyError, TypeError):
                continue
            found.append((snap.saved_at, self.folder / name, snap))
        if not found:
            self.forget_crashed(delete=False)
            return None
        found.sort(key=lambda f: f[0])
        self._offered = found[-1][1]
        return found[-1][2]

    def forget_crashed(self, *, delete: bool = True) -> None:
        """The offered snapshot was restored or declined: delete it, let go of the rest."""
        offered = self._offered
        if delete and offered is not None:
            with contextlib.suppress(OSError):
                offered.unlink()
            owner = _SNAPSHOT.match(offered.name)
            if owner is not None and not any(
                    p.name.startswith(owner.group(1) + "-") for p in self.folder.glob("*.json")):
                with contextlib.suppress(OSError):
                    (self.folder / f"{owner.group(1)}.lock").unlink()
        self._offered = None
        for _, fd in self._claimed:
            os.close(fd)
        self._claimed = []
