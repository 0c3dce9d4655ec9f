"""Draws a ``core.output.sheet.Sheet`` on paper: a PDF file or the system printer.

All content comes from core; this module only lays it out top to bottom,
breaking pages between blocks, and draws the schematic primitives. Black on
white with grey fills only, so it prints well on any printer.
"""

from __future__ import annotations

import math
import sys
import unicodedata
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from PySide6.QtCore import QMarginsF, QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFont,
    QFontMetricsF,
    QGuiApplication,
    QPagedPaintDevice,
    QPageLayout,
    QPageSize,
    QPainter,
    QPainterPath,
    QPdfWriter,
    QPen,
    QPolygonF,
)

from core.errors import InputError, TickbinError
from core.output import schematic as sch
from core.output.sheet import Sheet
from core.storage.atomic import atomic_output
from core.units import format_quantity

PAGE_SIZES = {"a4": QPageSize.PageSizeId.A4, "letter": QPageSize.PageSizeId.Letter}
MARGIN_MM = 15.0
RESOLUTION_DPI = 600
UNIT_MM = 2.6
"""Schematic grid unit at full size (shrunk if the drawing is wider than the page)."""
FONT_FAMILY = "DejaVu Sans"
"""Has Ω, µ, ∥, … and ☐; Qt falls back to any sans-serif font when missing."""





if TYPE_CHECKING:
    from PySide6.QtPrintSupport import QPrinter
    from PySide6.QtWidgets import QWidget

_GREY = QColor(110, 110, 110)
_LIGHT = QColor(232, 232, 232)


def page_size_id(name: str) -> QPageSize.PageSizeId:
    try:
        return PAGE_SIZES[name.lower()]
    except KeyError:
        raise InputError("expected A4 or Letter", text=name, what="page size") from None


_APP: list[object] = []


def _application() -> None:
    """A Qt application for fonts and painting; from the command line an offscreen one,
    so a sheet can be made on a machine without a display. (A widgets application,
    so the window or a test can still open dialogs in the same process.)"""
    from PySide6.QtWidgets import QApplication

    if QGuiApplication.instance() is None:
        _APP.append(QApplication([sys.argv[0] if sys.argv else "tickbin", "-platform",
                                  "offscreen"]))


def render_sheet_pdf(sheet: Sheet, path: str | Path, page_size: str = "A4") -> int:
    """Write ``sheet`` to a PDF file; returns the number of pages.

    Drawn into a temporary file beside ``path`` and renamed over it when complete
    (``core.storage.atomic``), so a kill mid-way never leaves a cut or empty PDF.
    """
    _application()
    size = page_size_id(page_size)
    with atomic_output(path) as tmp:
        writer = QPdfWriter(str(tmp))
        writer.setResolution(RESOLUTION_DPI)
        writer.setTitle(sheet.title)
        writer.setCreator("Tickbin")
        writer.setPageLayout(QPageLayout(QPageSize(size),
                                         QPageLayout.Orientation.Portrait,
                                         QMarginsF(MARGIN_MM, MARGIN_MM, MARGIN_MM, MARGIN_MM),
                                         QPageLayout.Unit.Millimeter))
        try:
            pages = render_sheet(sheet, writer)
        except TickbinError:
            raise TickbinError(f"{path}: the PDF could not be written") from None
        del writer  # flushes and closes the file
        if not tmp.stat().st_size:
            raise TickbinError(f"{path}: the PDF could not be written")
    return pages


def render_sheet(sheet: Sheet, device: QPagedPaintDevice) -> int:
    """Draw ``sheet`` on a PDF writer or printer (already set up); returns pages drawn."""
    painter = QPainter()
    if not painter.begin(device):
        raise TickbinError("cannot draw on the output device (is the file writable?)")
    try:
        flow = _Flow(painter, device, sheet)
        flow.run()
        return flow.page
    finally:
        painter.end()


class PrintDialog:
    """The system print dialog, behind one class method so tests can answer it."""

    @classmethod
    def ask(cls, printer: QPrinter, parent: QWidget | None = None) -> bool:
        """Let the person choose printer and paper; True when they press Print."""
        from PySide6.QtPrintSupport import QPrintDialog

        dialog = QPrintDialog(printer, parent)
        dialog.setWindowTitle("Print build sheet")
        return dialog.exec() == QPrintDialog.DialogCode.Accepted


def print_sheet(sheet: Sheet, parent: QWidget | None = None) -> bool:
    """Print ``sheet`` through the system print dialog; False when the person cancels.

    For the window's "Print build sheet…" action (``parent``: the main window).
    """
    from PySide6.QtPrintSupport import QPrinter

    printer = QPrinter(QPrinter.PrinterMode.HighResolution)
    # The job's name, and the print dialog's "print to file" name (Qt adds ".pdf").
    printer.setDocName(sheet.file_stem())
    printer.setPageMargins(QMarginsF(MARGIN_MM, MARGIN_MM, MARGIN_MM, MARGIN_MM),
                           QPageLayout.Unit.Millimeter)
    if not PrintDialog.ask(printer, parent):
        return False
    render_sheet(sheet, printer)
    return True


# ---------------------------------------------------------------- page flow

def _font(size: float, bold: bool = False) -> QFont:
    f = QFont(FONT_FAMILY)
    f.setStyleHint(QFont.StyleHint.SansSerif)
    f.setPointSizeF(size)
    f.setBold(bold)
    return f


BENCH_RECORD = ("Supply at the chip's pins", "Frequency measured", "Duty cycle measured",
                "Room temperature", "Chip marking and maker", "Built by, date",
                "Changes from this sheet")
"""What a builder writes down at the bench, to compare with the prediction and to calibrate
from later (common practice, no published source)."""


class _Flow:
    """Blocks from top to bottom in millimetres; a block that does not fit starts a page."""

    BODY, SMALL, HEAD, TITLE = 8.5, 7.5, 11.0, 15.0

    def __init__(self, painter: QPainter, device: QPagedPaintDevice, sheet: Sheet):
        self.p = painter
        self.device = device
        self.sheet = sheet
        self.scale = device.logicalDpiX() / 25.4  # device pixels per mm
        rect = device.pageLayout().paintRectPixels(device.logicalDpiX())
        self.width = rect.width() / self.scale
        self.height = rect.height() / self.scale - 8.0  # room for the footer
        self.y = 0.0
        self.page = 1
        painter.scale(self.scale, self.scale)  # from here on: millimetres

    # -- primitives in mm
    # Text is measured and drawn in device pixels (fonts are sized for the device's
    # resolution, so they must not go through the millimetre scale).
    def _wrapping(self, text: str, width: float, font: QFont) -> tuple[float, Qt.TextFlag]:
        """(height [mm], wrap flag) of ``text`` in ``width`` [mm]: at word boundaries, or
        anywhere when one word (a long drawer location) would not fit the column."""
        fm = QFontMetricsF(font, self.device)
        k = self.scale
        box = QRectF(0, 0, width * k, 1e6)
        r = fm.boundingRect(box, int(_WRAP), text)
        if r.width() > width * k + 0.5:
            r = fm.boundingRect(box, int(_WRAP_ANYWHERE), text)
            return r.height() / k, _WRAP_ANYWHERE
        return r.height() / k, _WRAP

    def text_height(self, text: str, width: float, font: QFont) -> float:
        return self._wrapping(sheet_text(text), width, font)[0]

    def draw_text(self, x: float, y: float, width: float, text: str, font: QFont,
                  align: Qt.AlignmentFlag = Qt.AlignmentFlag.AlignLeft,
                  colour: QColor | None = None) -> float:
        """Draw ``text`` wrapped into ``width`` [mm] at (x, y) [mm]; returns its height."""
        k = self.scale
        text = sheet_text(text)
        h, wrap = self._wrapping(text, width, font)
        self.p.save()
        self.p.resetTransform()
        self.p.setFont(font)
        self.p.setPen(colour or Qt.GlobalColor.black)
        self.p.drawText(QRectF(x * k, y * k, width * k, h * k + 2), wrap | align, text)
        self.p.restore()
        return h

    def need(self, height: float) -> None:
        if self.y + height > self.height and self.y > 0:
            self.new_page()

    def new_page(self) -> None:
        self.footer()
        self.device.newPage()
        self.page += 1
        self.y = 0.0

    def footer(self) -> None:
        self.draw_text(0, self.height + 3.0, self.width,
                       f"Tickbin build sheet · {self.sheet.date} · page {self.page}",
                       _font(self.SMALL), Qt.AlignmentFlag.AlignRight, _GREY)

    # -- blocks
    def run(self) -> None:
        s = self.sheet
        self.title()
        self.key_values(s.summary, 34.0)
        self.heading("Schematic")
        self.schematic()
        self.table("Parts list",
                   ["", "Ref", "Part", "Value", "Tol.", "Qty", "Location", "Line", "Note"],
                   [["", r.refs, r.what, r.value, r.tolerance, str(r.quantity), r.location,
                     "" if r.line is None else str(r.line), r.note] for r in s.parts],
                   [7.0, 14.0, 40.0, 18.0, 13.0, 9.0, 17.0, 10.0, None], tick_boxes=True)
        self.table(f"Pin hookup ({s.package})", ["Pin", "Function", "Connect to"],
                   [[r.pin, r.function, r.connect] for r in s.pins], [30, 40, None])
        if self.page == 1:  # page 1 builds it; page 2 checks and adjusts it
            self.new_page()
        self.heading("Predicted performance", keep=50)
        self.key_values(s.predictions, 70.0)
        self.plot()
        if s.adjustment:
            self.heading("Adjustment", keep=25)
            self.items(s.adjustment, numbered=True)
        self.heading("Build notes", keep=20)
        self.items(s.build_notes)
        if s.warnings:
            self.heading("Notes from the model", keep=20)
            self.items(s.warnings)
        self.heading("Cautions", keep=30)
        self.items(s.cautions, boxed=True)
        self.bench_record()
        self.footer()

    def bench_record(self) -> None:
        """Lines to write the bench measurements on, in what the last page leaves (never a
        page of their own): as many of ``BENCH_RECORD`` as fit, at least three."""
        row, head = 8.0, 14.0
        fit = min(len(BENCH_RECORD), int((self.height - self.y - head) // row))
        if fit < 3:
            return
        self.heading("Bench record", keep=0)
        body, x = _font(self.BODY), 62.0
        for what in BENCH_RECORD[:fit]:
            self.draw_text(0, self.y + row - 5.0, x - 2.0, what, body)
            self.p.setPen(QPen(_GREY, 0.2))
            self.p.drawLine(QPointF(x, self.y + row - 1.0), QPointF(self.width, self.y + row - 1.0))
            self.y += row

    def title(self) -> None:
        h = self.draw_text(0, self.y, self.width * 0.78, self.sheet.title, _font(self.TITLE, True))
        self.draw_text(self.width * 0.78, self.y + 1.0, self.width * 0.22, self.sheet.date,
                       _font(self.BODY), Qt.AlignmentFlag.AlignRight)
        self.y += h + 1.5
        self.rule(0.5)
        self.y += 3.0

    def rule(self, weight: float) -> None:
        self.p.setPen(QPen(Qt.GlobalColor.black, weight))
        self.p.drawLine(QPointF(0, self.y), QPointF(self.width, self.y))

    def heading(self, text: str, keep: float = 15.0) -> None:
        self.y += 2.5
        self.need(8.0 + keep)
        h = self.draw_text(0, self.y, self.width, text, _font(self.HEAD, True))
        self.y += h + 0.6
        self.p.setPen(QPen(_GREY, 0.25))
        self.p.drawLine(QPointF(0, self.y), QPointF(self.width, self.y))
        self.y += 1.6

    def key_values(self, pairs: Sequence[tuple[str, str]], key_width: float) -> None:
        body, bold = _font(self.BODY), _font(self.BODY, True)
        for key, value in pairs:
            h = max(self.text_height(key, key_width - 2, bold),
                    self.text_height(value, self.width - key_width, body))
            self.need(h + 0.8)
            self.draw_text(0, self.y, key_width - 2, key, bold)
            self.draw_text(key_width, self.y, self.width - key_width, value, body)
            self.y += h + 0.8

    def table(self, title: str, header: list[str], rows: list[list[str]],
              widths: list[float | None], tick_boxes: bool = False) -> None:
        """A titled table, kept on one page with its title wherever it fits.

        ``widths`` in mm, None sharing what is left; ``tick_boxes`` draws an empty
        box in the first column of every row (ticked off by hand while building).
        """
        fixed = sum(w for w in widths if w is not None)
        free = [i for i, w in enumerate(widths) if w is None]
        col = [w if w is not None else (self.width - fixed) / len(free) for w in widths]
        body, bold = _font(self.BODY), _font(self.BODY, True)
        cells = [header, *rows]
        heights = [max(max((self.text_height(c, w - 2.0, bold if i == 0 else body)
                            for c, w in zip(row, col, strict=True) if c), default=0.0),
                       4.6 if tick_boxes and i else 0.0)
                   for i, row in enumerate(cells)]
        self.heading(title, keep=min(sum(h + 1.6 for h in heights), self.height - 20.0))
        for i, (row, h) in enumerate(zip(cells, heights, strict=True)):
            self.need(h + 1.6)
            if i == 0:
                self.p.fillRect(QRectF(0, self.y, self.width, h + 1.2), _LIGHT)
            elif tick_boxes:
                self.p.setPen(QPen(Qt.GlobalColor.black, 0.3))
                self.p.setBrush(Qt.BrushStyle.NoBrush)
                self.p.drawRect(QRectF(1.5, self.y + 0.6, 3.8, 3.8))
            x = 0.0
            for c, w in zip(row, col, strict=True):
                if c:
                    self.draw_text(x + 1.0, self.y + 0.6, w - 2.0, c, bold if i == 0 else body)
                x += w
            self.y += h + 1.2
            self.p.setPen(QPen(_GREY, 0.15))
            self.p.drawLine(QPointF(0, self.y), QPointF(self.width, self.y))
            self.y += 0.4

    def items(self, texts: Sequence[str], numbered: bool = False, boxed: bool = False) -> None:
        body = _font(self.BODY)
        indent = 6.0
        for i, text in enumerate(texts, start=1):
            h = self.text_height(text, self.width - indent - 2.0, body)
            self.need(h + 1.0)
            mark = f"{i}." if numbered else "•"
            if boxed:
                self.p.fillRect(QRectF(0, self.y - 0.3, 1.2, h + 0.6), Qt.GlobalColor.black)
                mark = "!"
            self.draw_text(2.0, self.y, indent, mark, _font(self.BODY, boxed))
            self.draw_text(indent + 1.0, self.y, self.width - indent - 2.0, text, body)
            self.y += h + 1.0

    # -- the waveform
    def plot(self) -> None:
        w = self.sheet.waveform
        height, left, bottom = 38.0, 13.0, 8.0
        self.y += 2.0
        self.need(height + 2.0)
        box = QRectF(left, self.y, self.width - left - 2.0, height - bottom)
        t0, t1 = float(w.t_s[0]), float(w.t_s[-1])
        # The supply's span, widened where the node swings beyond the rails.
        v_bottom = min(0.0, float(w.v_cap_v.min()) * 1.08)
        v_top = max(w.supply_v, float(w.v_cap_v.max())) * 1.08

        def pt(t: float, v: float) -> QPointF:
            return QPointF(box.left() + (t - t0) / (t1 - t0) * box.width(),
                           box.bottom() - (v - v_bottom) / (v_top - v_bottom) * box.height())

        small = _font(self.SMALL)
        self.p.setPen(QPen(Qt.GlobalColor.black, 0.25))
        self.p.setBrush(Qt.BrushStyle.NoBrush)
        self.p.drawRect(box)
        for v, name in ((0.0, "0 V"), (w.supply_v, format_quantity(w.supply_v, "voltage"))):
            y = pt(t0, v).y()
            self.draw_text(0, y - 1.6, left - 1.5, name, small, Qt.AlignmentFlag.AlignRight)
        for v, name in ((w.upper_v, f"{w.upper_v:.2f} V"), (w.lower_v, f"{w.lower_v:.2f} V")):
            self.p.setPen(QPen(_GREY, 0.2, Qt.PenStyle.DashLine))
            self.p.drawLine(pt(t0, v), pt(t1, v))
            self.draw_text(0, pt(t0, v).y() - 1.6, left - 1.5, name, small,
                           Qt.AlignmentFlag.AlignRight, _GREY)
        step = _nice_step((t1 - t0) / 6)
        t = math.ceil(t0 / step) * step
        while t <= t1 + step * 1e-6:
            x = pt(t, 0).x()
            self.p.setPen(QPen(Qt.GlobalColor.black, 0.2))
            self.p.drawLine(QPointF(x, box.bottom()), QPointF(x, box.bottom() + 1.0))
            label_x = min(max(x - 10, 0.0), self.width - 20.0)  # stay inside the margins
            align = (Qt.AlignmentFlag.AlignHCenter if label_x == x - 10 else
                     Qt.AlignmentFlag.AlignLeft if label_x > x - 10 else
                     Qt.AlignmentFlag.AlignRight)
            self.draw_text(label_x, box.bottom() + 1.2, 20, format_quantity(t, "time"), small,
                           align)
            t += step
        for values, pen in ((w.v_out_v, QPen(_GREY, 0.35)),
                            (w.v_cap_v, QPen(Qt.GlobalColor.black, 0.5))):
            path = QPainterPath(pt(float(w.t_s[0]), float(values[0])))
            for t, v in zip(w.t_s[1:], values[1:], strict=True):
                path.lineTo(pt(float(t), float(v)))
            self.p.setPen(pen)
            self.p.drawPath(path)
        self.draw_text(box.left(), box.bottom() + 4.6, box.width(), w.legend, small,
                       Qt.AlignmentFlag.AlignHCenter, _GREY)
        self.y += height + 1.0

    # -- the schematic
    def schematic(self) -> None:
        s = self.sheet.schematic
        x0, y0, x1, y1 = s.bounds()
        unit = min(UNIT_MM, (self.width - 30.0) / max(x1 - x0, 1.0))
        pad = 3.0  # grid units of room around the geometry for labels and symbols
        height = (y1 - y0 + 2 * pad) * unit
        self.need(height)
        ox = (self.width - (x1 - x0) * unit) / 2 - 6.0
        origin = QPointF(ox - x0 * unit, self.y + pad * unit - y0 * unit)
        _Schematic(self, unit, origin).draw(s)
        self.y += height


_WRAP = Qt.TextFlag.TextWordWrap
_WRAP_ANYWHERE = Qt.TextFlag.TextWrapAnywhere
_BIDI_CONTROLS = frozenset("\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e"
                           "\u2066\u2067\u2068\u2069")


def sheet_text(text: str) -> str:
    """Text as the sheet prints it, the one filter for everything drawn: each line break
    (LF to U+2029) becomes a space; other control characters and bidi overrides from a
    drawer cell are dropped, so they draw no empty boxes and reorder nothing."""
    return "".join(ch for ch in " ".join(text.splitlines())
                   if unicodedata.category(ch) != "Cc" and ch not in _BIDI_CONTROLS)


def _nice_step(raw: float) -> float:
    exp = math.floor(math.log10(raw))
    for m in (1, 2, 5, 10):
        if m * 10**exp >= raw:
            return m * 10**exp
    return 10 ** (exp + 1)


class _Schematic:
    """Maps grid units to mm and draws each primitive (IEC 60617-style symbols)."""

    def __init__(self, flow: _Flow, unit: float, origin: QPointF):
        self.f = flow
        self.p = flow.p
        self.u = unit
        self.o = origin

    def pt(self, xy: sch.Point) -> QPointF:
        return QPointF(self.o.x() + xy[0] * self.u, self.o.y() + xy[1] * self.u)

    def pen(self, weight: float = 0.3) -> None:
        self.p.setPen(QPen(Qt.GlobalColor.black, weight, Qt.PenStyle.SolidLine,
                           Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin))
        self.p.setBrush(Qt.BrushStyle.NoBrush)

    def draw(self, s: sch.Schematic) -> None:
        for item in s.items:
            self.pen()
            if isinstance(item, sch.Wire):
                self.p.drawPolyline(QPolygonF([self.pt(q) for q in item.points]))
            elif isinstance(item, sch.Junction):
                self.p.setBrush(QBrush(Qt.GlobalColor.black))
                self.p.drawEllipse(self.pt(item.at), 0.18 * self.u, 0.18 * self.u)
            elif isinstance(item, sch.Component):
                self.component(item)
            elif isinstance(item, sch.Inverter):
                self.inverter(item)
            elif isinstance(item, sch.Box):
                self.box(item)
            elif isinstance(item, sch.Supply):
                c = self.pt(item.at)
                self.p.drawLine(QPointF(c.x() - 0.8 * self.u, c.y()),
                                QPointF(c.x() + 0.8 * self.u, c.y()))
                self.f.draw_text(c.x() - 15, c.y() - 1.2 - 3.4, 30, item.text,
                                 _font(_Flow.SMALL + 0.5), Qt.AlignmentFlag.AlignHCenter)
            elif isinstance(item, sch.Ground):
                c = self.pt(item.at)
                self.p.drawLine(c, QPointF(c.x(), c.y() + 0.8 * self.u))
                for i, half in enumerate((0.8, 0.5, 0.2)):
                    y = c.y() + (0.8 + i * 0.3) * self.u
                    self.p.drawLine(QPointF(c.x() - half * self.u, y),
                                    QPointF(c.x() + half * self.u, y))
            elif isinstance(item, sch.Terminal):
                self.p.setBrush(QBrush(Qt.GlobalColor.white))
                self.p.drawEllipse(self.pt(item.at), 0.35 * self.u, 0.35 * self.u)
            elif isinstance(item, sch.Label):
                self.label(item)

    def label(self, item: sch.Label) -> None:
        font = _font(_Flow.SMALL if item.size == "small" else _Flow.BODY)
        fm = QFontMetricsF(font, self.f.device)
        w = fm.horizontalAdvance(item.text) / self.f.scale
        h = fm.height() / self.f.scale
        c = self.pt(item.at)
        x = {"left": c.x() - w, "center": c.x() - w / 2, "right": c.x()}[item.h]
        y = {"top": c.y() - h, "middle": c.y() - h / 2, "bottom": c.y()}[item.v]
        self.f.draw_text(x, y, w + 1.0, item.text, font)

    def component(self, item: sch.Component) -> None:
        a, b = self.pt(item.a), self.pt(item.b)
        dx, dy = b.x() - a.x(), b.y() - a.y()
        length = math.hypot(dx, dy)
        ux, uy = dx / length, dy / length  # along
        nx, ny = -uy, ux  # across

        def at(s: float, t: float) -> QPointF:
            """``s`` mm along from a, ``t`` grid units across."""
            return QPointF(a.x() + ux * s + nx * t * self.u, a.y() + uy * s + ny * t * self.u)

        mid = length / 2
        if item.symbol in ("resistor", "pot"):
            body = 2.6 * self.u / 2
            self.p.drawLine(a, at(mid - body, 0))
            self.p.drawLine(at(mid + body, 0), b)
            self.p.drawPolygon(QPolygonF([at(mid - body, -0.45), at(mid + body, -0.45),
                                          at(mid + body, 0.45), at(mid - body, 0.45)]))
            if item.wiper is not None:
                w = self.pt(item.wiper)
                tip = at(mid, 0.5 if (w.x() - a.x()) * nx + (w.y() - a.y()) * ny > 0 else -0.5)
                self.p.drawLine(w, tip)
                self.arrow_head(w, tip)
        elif item.symbol in ("capacitor", "electrolytic"):
            gap = 0.22 * self.u
            self.p.drawLine(a, at(mid - gap, 0))
            self.p.drawLine(at(mid + gap, 0), b)
            self.pen(0.55)
            self.p.drawLine(at(mid - gap, -0.95), at(mid - gap, 0.95))
            if item.symbol == "electrolytic":
                self.p.setBrush(QBrush(Qt.GlobalColor.black))
                self.p.drawPolygon(QPolygonF([at(mid + gap, -0.95), at(mid + gap + 0.25 * self.u,
                                                                         -0.95),
                                              at(mid + gap + 0.25 * self.u, 0.95),
                                              at(mid + gap, 0.95)]))
                plus = at(mid - gap - 1.8, 1.3)  # beside the + plate, away from the labels
                self.f.draw_text(plus.x() - 2, plus.y() - 1.5, 4, "+", _font(_Flow.SMALL),
                                 Qt.AlignmentFlag.AlignHCenter)
            else:
                self.p.drawLine(at(mid + gap, -0.95), at(mid + gap, 0.95))
        elif item.symbol == "diode":
            half = 0.8 * self.u
            self.p.drawLine(a, at(mid - half, 0))
            self.p.drawLine(at(mid + half, 0), b)
            self.p.drawPolygon(QPolygonF([at(mid - half, -0.7), at(mid - half, 0.7),
                                          at(mid + half, 0)]))
            self.p.drawLine(at(mid + half, -0.7), at(mid + half, 0.7))

    def arrow_head(self, tail: QPointF, tip: QPointF) -> None:
        dx, dy = tip.x() - tail.x(), tip.y() - tail.y()
        n = math.hypot(dx, dy) or 1.0
        ux, uy = dx / n, dy / n
        size = 0.45 * self.u
        bx, by = tip.x() - ux * size, tip.y() - uy * size
        left = QPointF(bx - uy * size * 0.5, by + ux * size * 0.5)
        right = QPointF(bx + uy * size * 0.5, by - ux * size * 0.5)
        self.p.setBrush(QBrush(Qt.GlobalColor.black))
        self.p.drawPolygon(QPolygonF([tip, left, right]))

    def inverter(self, item: sch.Inverter) -> None:
        x, y = item.at
        g = sch.GATE
        self.p.drawLine(self.pt((x, y)), self.pt((x + 1.0, y)))
        self.p.drawPolygon(QPolygonF([self.pt((x + 1.0, y - 2.0)), self.pt((x + 1.0, y + 2.0)),
                                      self.pt((x + g - 1.8, y))]))
        self.p.drawEllipse(self.pt((x + g - 1.45, y)), 0.35 * self.u, 0.35 * self.u)
        self.p.drawLine(self.pt((x + g - 1.1, y)), self.pt((x + g, y)))
        if not item.schmitt:
            return
        # Hysteresis mark (IEC 60617-12): a small loop inside the triangle.
        cx = x + 2.55
        loop = [(cx - 0.75, y + 0.45), (cx + 0.25, y + 0.45), (cx + 0.25, y - 0.45),
                (cx + 0.75, y - 0.45), (cx - 0.25, y - 0.45), (cx - 0.25, y + 0.45)]
        self.pen(0.2)
        self.p.drawPolyline(QPolygonF([self.pt(q) for q in loop]))

    def box(self, item: sch.Box) -> None:
        r = QRectF(self.pt(item.top_left), self.pt(item.bottom_right))
        self.pen(0.4)
        self.p.drawRect(r)
        self.f.draw_text(r.left(), r.center().y() - 2.0, r.width(), item.title,
                         _font(_Flow.BODY, True), Qt.AlignmentFlag.AlignHCenter)
