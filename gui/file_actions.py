"""The window's file actions: new, open, save, save as, import, export, reload, autosave.

Nothing the person typed is lost: a failed save keeps the edits (and autosaves them), a
file changed on disk is reloaded as one undoable step, and unsaved edits survive a crash.
Questions go through the window's ``ask``/``ask_path``/``tell`` (tests answer them).
"""

from __future__ import annotations

import time
from pathlib import Path
from typing import Any

from PySide6.QtCore import QTimer
from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import QMessageBox

from core.errors import DrawerFileError, TickbinError
from core.parts.drawer import Drawer, Row
from core.parts.drawer_file import DrawerChangedError, drawer_csv_text, read_drawer, write_drawer
from core.storage.atomic import write_text_atomically
from core.storage.locations import demo_drawer_path
from gui import settings as keys
from gui.autosave import INTERVAL_MS, Autosave


def demo_drawer() -> Drawer:
    """A copy of the bundled demo drawer: saving asks for a name, the bundled file stays."""
    drawer = read_drawer(demo_drawer_path(), strict=False)
    drawer.path = None
    return drawer


def initial_drawer(stock: str | None, remember: bool) -> tuple[Drawer, str]:
    """The drawer a window opens on: ``stock``, else the remembered one, else the demo;
    and a note for the status bar."""
    if stock and Path(stock).resolve() == demo_drawer_path().resolve():
        return demo_drawer(), "Showing the demo drawer (a copy: Save asks for a name)."
    if stock:
        return read_drawer(stock, strict=False), ""  # errors: the CLI reports and exits
    if remember:
        last = keys.settings().value(keys.LAST_DRAWER, "")
        if last and Path(str(last)).is_file():
            try:
                return read_drawer(str(last), strict=False), ""
            except TickbinError as e:
                return demo_drawer(), f"Last drawer could not be opened ({e}); showing the demo."
    return demo_drawer(), "Showing the demo drawer; File ▸ Open loads your own."


class FileActions:
    """The File menu's actions of one window, its autosave and its crash recovery.

    ``window`` gives ``drawer``, ``drawer_model``, ``drawer_panel``, ``set_drawer``,
    ``say``, ``ask``, ``ask_path``, ``tell``, ``save_settings`` and ``history_changed``.
    """

    def __init__(self, window: Any):
        self.window = window
        self.untitled = "demo drawer (a copy)"
        """Title shown while the drawer has no file."""
        self.autosave = Autosave()
        self.autosave_timer = QTimer(window)
        self.autosave_timer.setInterval(INTERVAL_MS)
        self.autosave_timer.timeout.connect(self.autosave_now)
        std = QKeySequence.StandardKey
        self.new_action = self._action("&New drawer", self.new_drawer, std.New,
                                       "Start an empty drawer")
        self.open_action = self._action("&Open drawer…", self.open_drawer, std.Open,
                                        "Open a drawer file (CSV)")
        self.demo_action = self._action("Open the &demo drawer", self.open_demo, None,
                                        "A makerspace parts cabinet to try things on")
        self.save_action = self._action("&Save", self.save, std.Save, "Save the drawer file")
        self.save_as_action = self._action("Save &as…", self.save_as, std.SaveAs,
                                           "Save the drawer under a new name")
        self.import_action = self._action("&Import CSV…", self.import_csv, None,
                                          "Add the rows of another drawer file to this one")
        self.export_action = self._action("&Export CSV…", self.export_csv, None,
                                          "Write a copy of this drawer; keep working on "
                                          "this file")

    def _action(self, text: str, slot: Any, shortcut: Any, tip: str) -> QAction:
        action = QAction(text, self.window)
        if shortcut is not None:
            action.setShortcut(shortcut)
        action.setStatusTip(tip)
        action.setToolTip(tip)
        action.triggered.connect(lambda checked=False: slot())
        return action

    @property
    def drawer(self) -> Drawer:
        return self.window.drawer

    # ------------------------------------------------------------ asking first
    def maybe_save(self) -> bool:
        """Before the drawer goes away: True when it is saved, discarded or unchanged."""
        if not self.drawer.dirty:
            return True
        b = QMessageBox.StandardButton
        answer = self.window.ask(self.window, "Unsaved changes",
                                 "The drawer has changes that are not saved. Save them?",
                                 b.Save | b.Discard | b.Cancel, b.Save)
        if answer == b.Save:
            return self.save()
        return answer == b.Discard

    def _start_folder(self) -> str:
        return str(self.drawer.path.parent) if self.drawer.path else str(Path.home())

    def _read(self, path: str) -> Drawer | None:
        try:
            return read_drawer(path, strict=False)
        except DrawerFileError as e:
            shown = "\n".join(str(p) for p in e.problems[:12])
            self.window.tell("Cannot open the drawer",
                             f"{path} cannot be read as a drawer:\n\n{shown}")
        except TickbinError as e:
            self.window.tell("Cannot open the drawer", str(e))
        return None

    # ------------------------------------------------------------ opening
    def new_drawer(self) -> None:
        if self.maybe_save():
            self.autosave.discard()
            self.untitled = "new drawer"
            self.window.set_drawer(Drawer())
            self.window.say("New empty drawer: add parts, a kit or paste a list of values.")

    def open_drawer(self, path: str | None = None) -> None:
        w = self.window
        if not self.maybe_save():
            return
        path = path or w.ask_path(w, "Open a drawer", save=False, start=self._start_folder())
        if not path:
            return
        drawer = self._read(path)
        if drawer is not None:
            self.autosave.discard()
            w.set_drawer(drawer)
            bad = len(drawer.problems())
            w.say(f"Opened {path}" + (f"; {bad} row(s) need fixing (marked ⚠)." if bad
                                      else "."))
            w.save_settings()

    def open_demo(self) -> None:
        if self.maybe_save():
            self.autosave.discard()
            self.untitled = "demo drawer (a copy)"
            self.window.set_drawer(demo_drawer())
            self.window.say("Demo drawer opened (a copy: Save asks for a file name).")

    # ------------------------------------------------------------ saving
    def save(self) -> bool:
        if self.drawer.path is None:
            return self.save_as()
        return self._unreadable_cells_ok() and self._write(self.drawer.path)

    def save_as(self) -> bool:
        if not self._unreadable_cells_ok():
            return False
        w = self.window
        path = w.ask_path(w, "Save the drawer as", save=True, start=self._start_folder())
        return bool(path) and self._write(Path(path))

    def _unreadable_cells_ok(self) -> bool:
        """Cells the command line cannot read: name them and ask before saving them.

        The window reads a drawer leniently; ``tickbin search`` and the other commands
        refuse a file with any bad cell, so the person should know before it is written.
        """
        problems = self.drawer.problems()
        if not problems:
            return True
        rows = self.drawer.rows
        cells = [f"{f'line {rows[r].line}' if rows[r].line is not None else f'new row {r + 1}'}"
                 f", {column}: “{rows[r].get(column)}” ({why})"
                 for r, columns in sorted(problems.items()) for column, why in columns.items()]
        more = f"\n… and {len(cells) - 12} more" if len(cells) > 12 else ""
        b = QMessageBox.StandardButton
        answer = self.window.ask(
            self.window, "Save unreadable cells?",
            f"{len(cells)} cell{'s' if len(cells) != 1 else ''} cannot be read "
            "as a part:\n\n" + "\n".join(cells[:12]) + more + "\n\nThe window "
            "keeps them marked, but the command line (tickbin search, sheet, …) "
            "refuses a drawer file with any of them.\nSave: save anyway. "
            "Cancel: fix them first.", b.Save | b.Cancel, b.Cancel)
        if answer == b.Save:
            return True
        self.window.say("Not saved: fix the marked cells (⚠) or save anyway.")
        return False

    def _write(self, path: Path, *, overwrite: bool = False) -> bool:
        w = self.window
        try:
            write_drawer(self.drawer, path, overwrite=overwrite)
        except DrawerChangedError:
            return self._changed_on_disk(path)
        except TickbinError as e:
            # The edits stay in the window (still marked unsaved) and in the autosave.
            self.autosave_now()
            w.tell("Not saved", f"{e}.\n\nYour edits are still here, not lost: try "
                   "Save as… to another folder or drive, or free some space and save "
                   "again.")
            w.say("Not saved: the edits are kept; see the message.")
            return False
        w.drawer_model.refresh_lines()
        self.autosave.discard()
        w.history_changed()
        bad = len(self.drawer.problems())
        w.say(f"Saved {path}" + (f"; {bad} row(s) still need fixing." if bad else "."))
        w.save_settings()
        return True

    def _changed_on_disk(self, path: Path) -> bool:
        """Another program saved the drawer since it was read: reload it, or keep ours."""
        b = QMessageBox.StandardButton
        answer = self.window.ask(
            self.window, "Drawer changed on disk",
            f"{path} was changed on disk after Tickbin read it (another program "
            "or window saved it).\n\nYes: reload it from disk (Undo brings "
            "your edits back).\nNo: keep this window's version and save it "
            f"(the version on disk is kept as {path.name}.bak).\nCancel: "
            "neither, for now.", b.Yes | b.No | b.Cancel, b.Cancel)
        if answer == b.No:
            return self._write(path, overwrite=True)
        if answer == b.Yes:
            self._reload(path)
        else:
            self.window.say("Not saved: the drawer changed on disk; your edits are kept here.")
        return False

    def _reload(self, path: Path) -> None:
        """The file as it is on disk now, as one undoable step over the window's edits."""
        disk = self._read(str(path))
        if disk is None:
            return
        drawer = self.drawer
        for column in disk.columns:
            if column not in drawer.columns:
                drawer.columns.append(column)
        self.window.drawer_model.refresh_columns()
        drawer.replace_rows(disk.rows, "Reload from disk")
        drawer.layout, drawer.disk = disk.layout, disk.disk
        drawer.mark_clean()
        self.window.drawer_model.refresh_lines()
        self.window.say(f"Reloaded {path} from disk; Undo brings your edits back.")

    # ------------------------------------------------------------ other files
    def import_csv(self) -> None:
        w = self.window
        path = w.ask_path(w, "Import rows from a drawer file", save=False,
                          start=self._start_folder())
        if not path:
            return
        other = self._read(path)
        if other is None:
            return
        for column in other.columns:
            if column not in self.drawer.columns:
                self.drawer.columns.append(column)
        w.drawer_model.refresh_columns()
        rows = [Row(dict(r.cells)) for r in other.rows]
        w.drawer_panel.add_rows(rows, f"Import {Path(path).name}")

    def export_csv(self) -> None:
        w = self.window
        path = w.ask_path(w, "Export a copy of the drawer", save=True,
                          start=self._start_folder())
        if not path:
            return
        try:
            write_text_atomically(path, drawer_csv_text(self.drawer))
        except TickbinError as e:
            w.tell("Not exported", str(e))
            return
        w.say(f"Exported a copy to {path}.")

    # ------------------------------------------------------------ autosave and recovery
    def autosave_now(self) -> None:
        """Snapshot unsaved edits (the timer calls this every minute)."""
        if not self.drawer.dirty:
            return
        try:
            self.autosave.save(self.drawer)
        except TickbinError as e:
            self.window.say(f"Autosave failed: {e}")

    def begin(self) -> None:
        """The window is on screen: offer a crashed session's edits, then autosave."""
        self._offer_restore()
        self.autosave.begin_session()
        self.autosave_timer.start()

    def end(self, *, remember: bool) -> None:
        """The window closes: stop autosaving; a remembering window ends its session."""
        self.autosave_timer.stop()
        if remember:
            self.autosave.end_session()
        else:
            self.autosave.release()

    def _offer_restore(self) -> None:
        snapshot = self.autosave.crashed_snapshot()
        if snapshot is None:
            return
        when = time.strftime("%Y-%m-%d %H:%M", time.localtime(snapshot.saved_at))
        name = snapshot.original.name if snapshot.original else "an unsaved drawer"
        b = QMessageBox.StandardButton
        answer = self.window.ask(self.window, "Restore unsaved edits?",
                                 f"Tickbin did not close normally last time. Unsaved edits "
                                 f"to {name} were kept at {when}. Restore them?",
                                 b.Yes | b.No, b.Yes)
        if answer != b.Yes:
            self.autosave.forget_crashed()
            return
        base = None
        if snapshot.original and snapshot.original.is_file():
            base = self._read(str(snapshot.original))
        if base is None:
            base = Drawer(columns=snapshot.drawer.columns)
            self.untitled = "restored drawer (not saved)"
        for column in snapshot.drawer.columns:
            if column not in base.columns:
                base.columns.append(column)
        base.replace_rows(snapshot.drawer.rows, "Restore unsaved edits")
        self.window.set_drawer(base)
        self.autosave_now()  # the edits live in this window's own slot from now on
        self.autosave.forget_crashed()
        self.window.say("Unsaved edits restored; Undo goes back to the file as saved.")
