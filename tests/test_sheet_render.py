"""The build sheet on paper: PDF (A4 and Letter) and the print dialog.

Outside references: poppler-utils (Debian) reads the PDFs back — ``pdfinfo`` for page
count and size, ``pdftotext`` for the words, ``pdftoppm`` for the ink on each page.
Paper sizes: ISO 216 A4 is 210 × 297 mm = 595.28 × 841.89 pt; ANSI Letter is
8.5 × 11 in = 612 × 792 pt.
"""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

import numpy as np
import pytest
from support.tools import require_tool

from core.design.search import search
from core.design.trim import trim
from core.model.timing import make_oscillator
from core.output.sheet import Sheet, build_sheet
from core.parts.drawer_file import read_drawer
from core.storage.locations import demo_drawer_path
from core.units import format_frequency
from gui.sheet_render import MARGIN_MM, PrintDialog, print_sheet, render_sheet_pdf

PAPER_PT = {"A4": (595.28, 841.89), "Letter": (612.0, 792.0)}


def _sheets() -> dict[str, Sheet]:
    parts = read_drawer(demo_drawer_path()).parts()
    hc = make_oscillator("schmitt", "74HC14", 5.0)
    ne = make_oscillator("555", "NE555", 9.0)
    return {
        "search": build_sheet(hc, search(parts, hc, 1000.0).candidates[0], "1 kHz",
                              stock=parts),
        "trim": build_sheet(hc, trim(parts, hc, (900.0, 1100.0)).candidates[0],
                            "900 Hz … 1.1 kHz", stock=parts),
        "555": build_sheet(ne, search(parts, ne, 440.0, duty_pct=30).candidates[0],
                           "440 Hz, 30 % duty", stock=parts),
    }


@pytest.fixture(scope="module")
def sheets() -> dict[str, Sheet]:
    return _sheets()


def _run(*cmd: str) -> str:
    return subprocess.run(cmd, capture_output=True, text=True, check=True, timeout=60).stdout


def _words(text: str) -> str:
    return re.sub(r"\s+", " ", text)


def _pgm(path: Path) -> np.ndarray:
    """A binary PGM (P5) as a 2-D array (the format pdftoppm -gray writes)."""
    data = path.read_bytes()
    fields = re.match(rb"P5\s+(\d+)\s+(\d+)\s+(\d+)\s", data)
    assert fields is not None
    w, h = int(fields[1]), int(fields[2])
    return np.frombuffer(data[fields.end():fields.end() + w * h], dtype=np.uint8).reshape(h, w)


@pytest.mark.parametrize("page_size", ["A4", "Letter"])
@pytest.mark.parametrize("kind", ["search", "trim", "555"])
def test_pdf_holds_the_whole_sheet(qapp, sheets, tmp_path, kind, page_size):
    for tool in ("pdfinfo", "pdftotext", "pdftoppm"):
        require_tool(tool)
    sheet = sheets[kind]
    pdf = tmp_path / f"{kind}.pdf"
    pages = render_sheet_pdf(sheet, pdf, page_size)
    info = _run("pdfinfo", str(pdf))
    assert int(re.search(r"Pages:\s+(\d+)", info)[1]) == pages
    assert pages <= 3
    w, h = (float(x) for x in re.search(r"Page size:\s+([\d.]+) x ([\d.]+)", info).groups())
    assert (w, h) == pytest.approx(PAPER_PT[page_size], abs=0.5)

    text = _words(_run("pdftotext", str(pdf), "-"))
    for row in sheet.parts:
        assert row.value in text, row
        if row.location:
            assert row.location in text, row
    assert format_frequency(sheet.frequency_hz) in text
    for caution in sheet.cautions:
        assert _words(caution)[:60] in text
    assert "mains" in text and "current-limited" in text
    if kind == "trim":
        assert "Adjustment" in text and "clockwise" in text

    # Ink on every page, and none of it outside the margins (nothing clipped or
    # running off the paper). 36 dpi: 1 mm ≈ 1.4 px.
    _run("pdftoppm", "-gray", "-r", "36", str(pdf), str(tmp_path / "page"))
    images = sorted(tmp_path.glob("page-*.pgm"))
    assert len(images) == pages
    px_per_mm = 36 / 25.4
    for image in images:
        ink = _pgm(image) < 160
        rows, cols = np.nonzero(ink)
        assert len(rows) > 500, f"{image.name} is almost empty"
        slack = (MARGIN_MM - 1.5) * px_per_mm
        assert cols.min() >= slack and rows.min() >= slack
        assert cols.max() <= ink.shape[1] - slack and rows.max() <= ink.shape[0] - slack


def test_print_dialog_prints_or_cancels(qapp, sheets, tmp_path, monkeypatch):
    require_tool("pdftotext")
    from PySide6.QtPrintSupport import QPrinter

    out = tmp_path / "printed.pdf"

    def accept(cls, printer: QPrinter, parent=None) -> bool:
        printer.setOutputFormat(QPrinter.OutputFormat.PdfFormat)
        printer.setOutputFileName(str(out))
        return True

    monkeypatch.setattr(PrintDialog, "ask", classmethod(lambda cls, p, parent=None: False))
    assert print_sheet(sheets["search"]) is False
    assert not out.exists()
    monkeypatch.setattr(PrintDialog, "ask", classmethod(accept))
    assert print_sheet(sheets["search"]) is True
    assert "Parts list" in _run("pdftotext", str(out), "-")


def test_unknown_page_size_is_refused(qapp, sheets, tmp_path):
    from core.errors import InputError

    with pytest.raises(InputError, match="A4 or Letter"):
        render_sheet_pdf(sheets["search"], tmp_path / "x.pdf", "A3")


def test_drawing_a_sheet_keeps_none_and_true_alive(qapp, sheets, tmp_path):
    """PySide6 6.12.0 on Python 3.11 drops a reference to None on every C++ void call
    and to True on every signal emit; the count reaching zero aborts the interpreter
    (pyproject.toml excludes that release). A sheet makes thousands of such calls."""
    import sys

    before = sys.getrefcount(None), sys.getrefcount(True)
    for _ in range(3):
        render_sheet_pdf(sheets["trim"], tmp_path / "x.pdf")
    after = sys.getrefcount(None), sys.getrefcount(True)
    assert after[0] >= before[0] - 50, "the Qt binding is losing references to None"
    assert after[1] >= before[1] - 50, "the Qt binding is losing references to True"


@pytest.mark.parametrize("kind", ["search", "trim", "555"])
def test_page_one_builds_page_two_checks_and_neither_is_near_empty(qapp, sheets, tmp_path,
                                                                   kind):
    require_tool("pdftotext")
    require_tool("pdftoppm")
    pdf = tmp_path / "sheet.pdf"
    assert render_sheet_pdf(sheets[kind], pdf) == 2
    first = _words(_run("pdftotext", "-f", "1", "-l", "1", str(pdf), "-"))
    second = _words(_run("pdftotext", "-f", "2", "-l", "2", str(pdf), "-"))
    assert "Schematic" in first and "Parts list" in first
    assert "Pin hookup" in first + second  # page 1 when it fits (a 555's list is longer)
    assert "Predicted performance" in second and "Cautions" in second
    assert "Predicted performance" not in first
    # Ink reaches at least 70 % of the way down each page's text area (pdftoppm, 36 dpi;
    # the footer sits in the bottom margin band and is left out).
    _run("pdftoppm", "-gray", "-r", "36", str(pdf), str(tmp_path / "page"))
    for image in sorted(tmp_path.glob("page-*.pgm")):
        ink = _pgm(image) < 160
        h = ink.shape[0]
        body = ink[: int(h - (MARGIN_MM + 8) * 36 / 25.4)]
        lowest = np.nonzero(body.any(axis=1))[0].max()
        assert lowest / body.shape[0] > 0.7, f"{image.name} is mostly empty"
