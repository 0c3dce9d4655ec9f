"""The window's build actions: sheet as PDF, print, netlist, take the parts (offscreen).

The PDF is read back with poppler's ``pdftotext`` (Debian poppler-utils), an outside tool.
"""

from __future__ import annotations

import subprocess
from collections import Counter

from PySide6.QtWidgets import QMessageBox
from support.gui_helpers import QUIET_OFFSCREEN
from support.tools import require_tool

from core.parts.drawer_file import read_drawer

pytest_plugins = ["support.gui_helpers"]
pytestmark = QUIET_OFFSCREEN


def _menu_texts(window) -> list[str]:
    return [a.text() for a in window.build_menu.actions()]


def test_actions_are_in_the_build_menu(window):
    texts = _menu_texts(window)
    for text in ("Build &sheet as PDF…", "&Print build sheet…", "Export SPICE &netlist…",
                 "&Take these parts from the drawer"):
        assert text in texts


def test_sheet_as_pdf_holds_the_selected_candidate(window, tmp_path, monkeypatch):
    require_tool("pdftotext")
    from gui.sheet_actions import SheetActions

    out = tmp_path / "sheet"
    monkeypatch.setattr(SheetActions, "ask_path", classmethod(lambda *a, **k: str(out)))
    window.sheet_actions.pdf_action.trigger()
    pdf = tmp_path / "sheet.pdf"  # the suffix is added
    text = subprocess.run(["pdftotext", str(pdf), "-"], capture_output=True, text=True,
                          check=True).stdout
    candidate = window.selected_candidate()
    for part in {p.location for n in candidate.networks.values() for p in n.parts()}:
        assert part in text
    assert "Cautions" in text


def test_print_goes_to_the_chosen_printer(window, tmp_path, monkeypatch):
    from PySide6.QtPrintSupport import QPrinter

    from gui.sheet_render import PrintDialog

    out = tmp_path / "printed.pdf"

    def accept(cls, printer, parent=None):
        printer.setOutputFormat(QPrinter.OutputFormat.PdfFormat)
        printer.setOutputFileName(str(out))
        return True

    monkeypatch.setattr(PrintDialog, "ask", classmethod(accept))
    window.sheet_actions.print_action.trigger()
    assert out.read_bytes().startswith(b"%PDF")


def test_netlist_export(window, tmp_path, monkeypatch):
    from gui.sheet_actions import SheetActions

    out = tmp_path / "design.cir"
    monkeypatch.setattr(SheetActions, "ask_path", classmethod(lambda *a, **k: str(out)))
    window.sheet_actions.netlist_action.trigger()
    text = out.read_text(encoding="ascii")
    assert ".meas tran period_s" in text and text.rstrip().endswith(".end")


def test_take_parts_lowers_quantities_saves_and_undoes(window, answers, tmp_path,
                                                       monkeypatch):
    from gui.main_window import MainWindow

    saved = tmp_path / "mine.csv"
    monkeypatch.setattr(MainWindow, "ask_path", classmethod(lambda *a, **k: str(saved)))
    before = {p.stock_line: p.quantity for p in window.drawer.parts()}
    sheet = window.sheet_actions.sheet()
    need = Counter(p.stock_line for p in sheet.take)
    answers.append(QMessageBox.StandardButton.Ok)
    window.sheet_actions.take_action.trigger()
    assert "Take parts from the drawer" in answers.asked
    on_disk = {p.stock_line: p.quantity for p in read_drawer(saved).parts()}
    assert on_disk == {line: q - need.get(line, 0) for line, q in before.items()}
    window.undo()  # one step gives them all back
    assert {p.stock_line: p.quantity for p in window.drawer.parts()} == before


def test_take_parts_cancelled_changes_nothing(window, answers):
    before = [r.get("quantity") for r in window.drawer.rows]
    answers.append(QMessageBox.StandardButton.Cancel)
    window.sheet_actions.take_action.trigger()
    assert [r.get("quantity") for r in window.drawer.rows] == before
