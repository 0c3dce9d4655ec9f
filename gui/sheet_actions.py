"""The window's build actions: save the sheet as PDF, print it, export the netlist, take parts.

``install(window)`` adds them to the window's Build menu and tool bar (the window calls it
once it is on screen; the sheet, netlist and PDF modules load on first use, so they never
delay the first result). Each action works on the selected candidate; the sheet itself is
built by core.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QLocale, Qt
from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import QFileDialog, QMessageBox, QWidget

from core.errors import TickbinError
from core.storage.atomic import check_output, write_text_atomically

if TYPE_CHECKING:
    from core.output.sheet import Sheet

PDF_FILTER = "PDF files (*.pdf)"
CSV_FILTER = "CSV files (*.csv);;All files (*)"
NETLIST_FILTER = "SPICE netlists (*.cir *.sp *.net);;All files (*)"


def default_page_size() -> str:
    """Letter where the locale measures in inches (US), A4 everywhere else."""
    us = QLocale().measurementSystem() == QLocale.MeasurementSystem.ImperialUSSystem
    return "Letter" if us else "A4"


class SheetActions:
    """The four build actions of one window; dialogs go through ``ask_path`` (tests answer it)."""

    def __init__(self, window: Any):
        self.window = window
        std = QKeySequence.StandardKey
        self.pdf_action = self._action("Build &sheet as PDF…", self.save_pdf, "Ctrl+Shift+E",
                                       "Write the build sheet of the selected candidate to a "
                                       "PDF file")
        self.print_action = self._action("&Print build sheet…", self.print, std.Print,
                                         "Print the build sheet of the selected candidate")
        self.netlist_action = self._action("Export SPICE &netlist…", self.save_netlist, None,
                                           "Write the selected design as a SPICE netlist, to "
                                           "check it in a simulator")
        self.take_action = self._action("&Take these parts from the drawer", self.take, None,
                                        "After building: lower the drawer's quantities by the "
                                        "parts on the sheet and save the drawer (undoable)")
        for action in (self.pdf_action, self.print_action):
            window.add_build_action(action)
        self.candidates_csv_action = self._action(
            "Export &candidates as CSV…", self.save_candidates_csv, None,
            "Write the candidates as listed (in the shown order) to a CSV file")
        self.parts_csv_action = self._action(
            "Export &parts list as CSV…", self.save_parts_csv, None,
            "Write the parts list of the selected candidate's build sheet to a CSV file")
        for action in (self.netlist_action, self.candidates_csv_action, self.parts_csv_action,
                       self.take_action):
            window.add_build_action(action, toolbar=False)

    def _action(self, text: str, slot: Any, shortcut: Any, tip: str) -> QAction:
        action = QAction(text, self.window)
        if shortcut is not None:
            action.setShortcut(QKeySequence(shortcut))
        action.setToolTip(tip)
        action.setStatusTip(tip)
        action.triggered.connect(slot)
        return action

    @classmethod
    def ask_path(cls, parent: QWidget, title: str, start: str, file_filter: str) -> str | None:
        path, _ = QFileDialog.getSaveFileName(parent, title, start, file_filter)
        return path or None

    # -- what the actions work on
    def sheet(self) -> Sheet | None:
        """The sheet of the selected candidate, or None (after telling the person why)."""
        from core.output.sheet import build_sheet, voltage_ratings

        w = self.window
        candidate, osc, target = w.selected_candidate(), w.current_oscillator(), \
            w.current_target()
        if candidate is None or osc is None or target is None:
            w.tell("No candidate selected", "Pick a candidate in the list first; the sheet "
                   "is made for the selected one.")
            return None
        drawer = w.drawer
        return build_sheet(osc, candidate, target.describe(duty=False), stock=drawer.parts(),
                           ratings=voltage_ratings(drawer))

    def _start(self, name: str) -> str:
        path = self.window.drawer.path
        folder = path.parent if path else Path.home()
        return str(folder / name)

    # -- the actions
    def save_pdf(self) -> None:
        from gui.sheet_render import render_sheet_pdf

        sheet = self.sheet()
        if sheet is None:
            return
        path = self.ask_path(self.window, "Save build sheet",
                             self._start(f"{sheet.file_stem()}.pdf"), PDF_FILTER)
        if path is None:
            return
        if not path.lower().endswith(".pdf"):
            path += ".pdf"
        try:
            check_output(path, self.window.drawer.path)
            pages = render_sheet_pdf(sheet, path, default_page_size())
        except TickbinError as e:
            self.window.tell("Build sheet not saved", str(e))
            return
        self.window.say(f"Build sheet saved: {path} ({pages} page{'s' if pages != 1 else ''})")

    def print(self) -> None:
        from gui.sheet_render import print_sheet

        sheet = self.sheet()
        if sheet is not None and print_sheet(sheet, self.window):
            self.window.say("Build sheet sent to the printer.")

    def save_netlist(self) -> None:
        from core.output.netlist import spice_netlist

        w = self.window
        candidate, osc = w.selected_candidate(), w.current_oscillator()
        if candidate is None or osc is None:
            w.tell("No candidate selected", "Pick a candidate in the list first.")
            return
        path = self.ask_path(w, "Export SPICE netlist", self._start("tickbin-netlist.cir"),
                             NETLIST_FILTER)
        if path is None:
            return
        try:
            check_output(path, w.drawer.path)
            write_text_atomically(path, spice_netlist(osc, candidate), backup=False)
        except TickbinError as e:
            w.tell("Netlist not saved", str(e))
            return
        w.say(f"Netlist saved: {path} (check it with: ngspice -b {Path(path).name})")

    def save_candidates_csv(self) -> None:
        from core.output.table import csv_text

        view = self.window.candidate_view.model()  # the order the person sees
        if not view.rowCount():
            self.window.tell("No candidates", "There are no candidates to export.")
            return
        header = [view.headerData(c, Qt.Orientation.Horizontal)
                  for c in range(view.columnCount())]
        rows = [[view.index(r, c).data() for c in range(view.columnCount())]
                for r in range(view.rowCount())]
        self._write_csv("Export candidates", "tickbin-candidates.csv", csv_text(header, rows))

    def save_parts_csv(self) -> None:
        from core.output.table import parts_csv_text

        sheet = self.sheet()
        if sheet is not None:
            self._write_csv("Export parts list", f"{sheet.file_stem()}-parts.csv",
                            parts_csv_text(sheet))

    def _write_csv(self, title: str, name: str, text: str) -> None:
        w = self.window
        path = self.ask_path(w, title, self._start(name), CSV_FILTER)
        if path is None:
            return
        try:
            check_output(path, w.drawer.path)
            write_text_atomically(path, text, backup=False)
        except TickbinError as e:
            w.tell(f"{title}: not saved", str(e))
            return
        w.say(f"Saved {path}.")

    def take(self) -> None:
        from core.output.sheet import take_parts

        w = self.window
        sheet = self.sheet()
        if sheet is None:
            return
        listing = "\n".join(f"  {r.quantity} × {r.value} from {r.location} (line {r.line})"
                            for r in sheet.parts if r.line is not None)
        b = QMessageBox.StandardButton
        answer = w.ask(w, "Take parts from the drawer",
                       f"Lower the drawer's quantities by the parts on the sheet?\n\n{listing}"
                       "\n\nThe drawer is saved afterwards; Undo gives them back.",
                       b.Ok | b.Cancel, b.Ok)
        if answer != b.Ok:
            return
        try:
            taken = take_parts(w.drawer, sheet)
        except TickbinError as e:
            w.tell("Parts not taken", str(e))
            return
        count = sum(t.count for t in taken)
        if w.files.save():
            w.say(f"Took {count} part{'s' if count != 1 else ''} from the drawer and saved it.")
        else:
            w.say(f"Took {count} parts from the drawer; it is not saved yet.")


def install(window: Any) -> SheetActions:
    """Add the build actions to ``window`` (a gui.main_window.MainWindow)."""
    actions = SheetActions(window)
    window.sheet_actions = actions
    return actions
