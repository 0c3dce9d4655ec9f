"""Tables for spreadsheets as CSV text: the candidates as the window lists them, a build
sheet's parts list.

Every cell goes through the drawer export's formula neutraliser, so text that came from
a drawer (a location, a note) never runs as a spreadsheet formula.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Iterable, Sequence

from core.output.sheet import Sheet
from core.parts.drawer_file import neutralise_formula

PARTS_HEADER = ("Ref", "Part", "Value", "Tolerance", "Quantity", "Location", "Line", "Note")


def csv_text(header: Sequence[str], rows: Iterable[Sequence[object]]) -> str:
    """``header`` and ``rows`` as comma-separated text, every cell neutralised."""
    buf = io.StringIO(newline="")
    writer = csv.writer(buf, lineterminator="\n")
    for row in (header, *rows):
        writer.writerow([neutralise_formula(str(cell)) for cell in row])
    return buf.getvalue()


def parts_csv_text(sheet: Sheet) -> str:
    """The sheet's parts list, one row per line of it (drawer line empty where none)."""
    return csv_text(PARTS_HEADER, ((r.refs, r.what, r.value, r.tolerance, r.quantity,
                                    r.location, "" if r.line is None else r.line, r.note)
                                   for r in sheet.parts))
