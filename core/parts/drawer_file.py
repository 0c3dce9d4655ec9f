"""The drawer's CSV file: reading it (delimiter, header, comments, size limits), writing it
back as it was read apart from the edits, and the export copy for spreadsheets."""

from __future__ import annotations

import csv
import io
import os
from collections.abc import Iterator
from pathlib import Path

from core.errors import DrawerFileError, LineProblem, TickbinError
from core.parts.drawer import Drawer, Row
from core.parts.file_layout import KEEP_BYTE, FileLayout, FileRecord, decode, encoding_of
from core.storage.atomic import (
    DiskState,
    FileTooLargeError,
    disk_state,
    drawer_lock,
    read_regular_file,
    same_file,
    write_bytes_atomically,
)

REQUIRED = ("kind", "value", "quantity")
_HEADER_ALIASES = {"qty": "quantity", "count": "quantity", "tol": "tolerance", "bin": "location",
                   "type": "kind"}
MAX_FILE_BYTES = 50 * 1024 * 1024
MAX_LINE_CHARS = 10_000
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def _sniff_delimiter(header: str) -> str:
    counts = {d: header.count(d) for d in (",", ";", "\t")}
    best = max(counts, key=lambda d: counts[d])
    return best if counts[best] else ","


def _unneutralise(text: str) -> str:
    """Undo what ``neutralise_formula`` did on export ('=x -> =x)."""
    if len(text) > 1 and text[0] == "'" and text[1] in _FORMULA_START:
        return text[1:]
    return text


def neutralise_formula(text: str) -> str:
    """A cell safe for spreadsheets: trimmed, one newline style, never run as a formula.

    OWASP's CSV-injection advice: a cell starting with = + - @ tab or CR gets a
    leading apostrophe. Use for every text cell Tickbin exports to a CSV file
    (not in the person's own drawer file, which is written as they wrote it).
    """
    text = text.replace("\r\n", "\n").replace("\r", "\n").strip()
    return "'" + text if text.startswith(_FORMULA_START) else text


def _is_note(line: str) -> bool:
    """A blank line or a ``#`` comment line (between records only)."""
    stripped = line.strip()
    return not stripped or stripped.startswith("#")


def _screen_lines(lines: list[str], name: str) -> str:
    """The delimiter the header line uses; DrawerFileError for binary data, an empty file
    or over-long lines (all of them listed)."""
    binary = next((i for i, ln in enumerate(lines) if "\x00" in ln), None)
    if binary is not None:
        raise DrawerFileError([LineProblem(name, binary + 1,
                                           "binary data (a NUL byte), not a CSV text file")])
    first = next((i for i, ln in enumerate(lines) if not _is_note(ln)), None)
    if first is None:
        raise DrawerFileError([LineProblem(name, 1, "empty file; expected a header line "
                                           "with kind,value,quantity")])
    problems = [LineProblem(name, i + 1, f"line longer than {MAX_LINE_CHARS:,} characters")
                for i, ln in enumerate(lines) if len(ln) > MAX_LINE_CHARS]
    if problems:
        raise DrawerFileError(problems)
    return _sniff_delimiter(lines[first])


def _header(record: list[str], name: str, line: int) -> list[str]:
    """The column names of a header record (aliases resolved); DrawerFileError when a
    required column is missing or one is named twice."""
    header = [_HEADER_ALIASES.get(h.strip().lower(), h.strip().lower())
              for h in map(_unneutralise, record)]
    missing = [c for c in REQUIRED if c not in header]
    if missing:
        why = ("; an unclosed quote joins the lines from here on"
               if any("\n" in h for h in header) else
               "; a drawer file needs kind, value and quantity")
        raise DrawerFileError([LineProblem(
            name, line, f"header lacks the column{'s' if len(missing) > 1 else ''}"
            f" {', '.join(missing)}{why}")])
    if len(set(header)) != len(header):
        raise DrawerFileError([LineProblem(name, line, "header names a column twice")])
    return header


def _cells(record: list[str], header: list[str]) -> dict[str, str] | None:
    """A data record's cells by column; None when it has more filled fields than the
    header has columns (empty fields past the header are allowed)."""
    if len(record) > len(header) and any(cell.strip() for cell in record[len(header):]):
        return None
    return {h: _unneutralise(record[i].strip()) if i < len(record) else ""
            for i, h in enumerate(header)}


class _Records:
    """CSV records read one at a time from the file's physical lines, remembering where
    each starts, so its exact text (line ending included) is kept."""

    def __init__(self, text: str, delimiter: str):
        self.physical = io.StringIO(text, newline="").readlines()
        self.at = 0
        self.line = 1
        """The line the record being read starts on (for a CSV error's message)."""
        self.reader = csv.reader(self._feed(), delimiter=delimiter)

    def _feed(self) -> Iterator[str]:
        while self.at < len(self.physical):
            self.at += 1
            yield self.physical[self.at - 1]

    def __iter__(self) -> Iterator[tuple[int, str, list[str] | None]]:
        """(line, raw text, record) per record; record None for a comment or blank line."""
        while self.at < len(self.physical):
            start = self.at
            self.line = start + 1
            if _is_note(self.physical[start]):
                self.at += 1
                yield start + 1, self.physical[start], None
                continue
            record = next(self.reader)
            yield start + 1, "".join(self.physical[start:self.at]), record


def parse_drawer_text(text: str, name: str = "<drawer>") -> Drawer:
    """Rows from CSV text; structural problems (header, field counts) raise at once.

    Value problems are kept in the rows (see ``Drawer.problems``). Lines
    starting with ``#`` (between records) are comments: kept, never read as parts.
    """
    delimiter = _screen_lines(text.splitlines(), name)
    header: list[str] | None = None
    header_record = FileRecord("", [])
    records: dict[int, FileRecord] = {}
    notes: list[tuple[int | None, str]] = []
    pending: list[str] = []
    rows: list[Row] = []
    problems: list[LineProblem] = []
    source = _Records(text, delimiter)
    try:
        for line, raw, record in source:
            if record is None or not any(cell.strip() for cell in record):
                pending.append(raw)  # a comment, a blank line or a line of empty cells
                continue
            notes += [(line, kept) for kept in pending]
            pending = []
            if header is None:
                header, header_record = _header(record, name, line), FileRecord(raw, list(record))
                continue
            cells = _cells(record, header)
            if cells is None:
                problems.append(LineProblem(
                    name, line, f"{len(record)} fields but the header has {len(header)}"))
                continue
            records[line] = FileRecord(raw, [cells[h] for h in header])
            rows.append(Row(cells, line))
    except csv.Error as e:
        raise DrawerFileError([LineProblem(name, source.line, f"CSV: {e}")]) from None
    if problems:
        raise DrawerFileError(problems)
    if header is None:  # e.g. one unterminated quote swallowed the whole file
        raise DrawerFileError([LineProblem(name, 1, "no header line with kind,value,quantity "
                                           "found (an unclosed quote?)")])
    drawer = Drawer(rows, header, delimiter=delimiter)
    drawer.layout = FileLayout("utf-8", delimiter, header_record.ending or "\n", header_record,
                               list(header), records,
                               notes + [(None, kept) for kept in pending])
    return drawer


def read_drawer(path: str | os.PathLike[str], *, strict: bool = True) -> Drawer:
    """Read a drawer file (an ordinary file of at most ``MAX_FILE_BYTES``).

    With ``strict`` (the command line), a file with any bad line is refused as a
    whole, listing every bad line; without it (the window), bad cells stay in the
    rows, marked, for the person to correct. The drawer remembers the file's
    layout (``FileLayout``) and state on disk (``DiskState``) for the save.
    """
    p = Path(path)
    name = str(path)
    try:
        data = read_regular_file(p, MAX_FILE_BYTES)
    except FileTooLargeError:
        raise DrawerFileError([LineProblem(
            name, 1, f"file is larger than {MAX_FILE_BYTES / 2**20:g} MiB; a drawer file may "
            "be at most that")]) from None
    drawer = parse_drawer_text(decode(data), name)
    drawer.path = p
    drawer.disk = DiskState.of(p, data)
    if drawer.layout is not None:
        drawer.layout.encoding = encoding_of(data)
    if strict:
        problems = drawer.line_problems()
        if problems:
            raise DrawerFileError(problems)
    return drawer


def drawer_csv_text(drawer: Drawer) -> str:
    """The drawer as CSV text for export (a copy for spreadsheets, not the person's own
    file): columns in the drawer's order, formula cells (header included) neutralised."""
    buf = io.StringIO(newline="")
    writer = csv.writer(buf, delimiter=drawer.delimiter, lineterminator="\n")
    writer.writerow([neutralise_formula(c) for c in drawer.columns])
    for row in drawer.rows:
        writer.writerow([neutralise_formula(row.get(c)) for c in drawer.columns])
    return buf.getvalue()


def _field(text: str, delimiter: str) -> str:
    """One cell written anew as CSV: quoted only when it must be, line breaks inside
    it as LF (what spreadsheets write inside a quoted cell)."""
    if not text:
        return ""
    buf = io.StringIO(newline="")
    csv.writer(buf, delimiter=delimiter, lineterminator="\r\n").writerow(
        [text.replace("\r\n", "\n").replace("\r", "\n")])
    return buf.getvalue()[:-2]


def _raw_fields(record: FileRecord, delimiter: str) -> list[str] | None:
    """The record's fields as written (quotes and spaces included), or None when
    splitting them does not give back exactly the values that were read."""
    body = record.raw[:len(record.raw) - len(record.ending)]
    fields, start, quoted = [], 0, False
    for i, ch in enumerate(body):
        if ch == '"':
            quoted = not quoted
        elif ch == delimiter and not quoted:
            fields.append(body[start:i])
            start = i + 1
    fields.append(body[start:])
    for raw, cell in zip(fields, record.cells, strict=False):
        parsed = next(csv.reader(io.StringIO(raw, newline=""), delimiter=delimiter), [""])
        if len(parsed) > 1 or _unneutralise((parsed or [""])[0].strip()) != cell:
            return None
    return fields


def _record_text(values: list[str], record: FileRecord | None, layout: FileLayout) -> str:
    """A row's record: the original text when nothing changed, else only the edited
    cells written anew (others exactly as they were)."""
    d = layout.delimiter
    if record is not None:
        known = len(record.cells)
        if values[:known] == record.cells and not any(values[known:]):
            return record.raw
        fields = _raw_fields(record, d)
        if fields is not None:
            out = [fields[i] if i < min(known, len(fields)) and v == record.cells[i]
                   else _field(v, d) for i, v in enumerate(values)]
            out += fields[len(values):]  # empty fields past the header, as written
            return d.join(out) + (record.ending or layout.newline)
    return d.join(_field(v, d) for v in values) + (record.ending if record else layout.newline)


def _notes_by_record(drawer: Drawer, layout: FileLayout) -> dict[int | None, list[str]]:
    """Comment and blank lines by the line of the kept record they go before: -1 before
    the header, None at the end (their record was deleted and none follows)."""
    kept = sorted(r.line for r in drawer.rows if r.line in layout.records)
    notes: dict[int | None, list[str]] = {}
    for line, note in layout.notes:
        if line is not None and line not in layout.records:
            where: int | None = -1  # before the header
        else:
            where = next((k for k in kept if line is not None and k >= line), None)
        notes.setdefault(where, []).append(note)
    return notes


def drawer_file_text(drawer: Drawer) -> tuple[str, FileLayout, list[int]]:
    """The drawer file's new text, its layout and the line each row starts on.

    What the program does not interpret is written back as it was read (see
    ``FileLayout``); a drawer not read from a file is plain CSV. Cells are
    written as the person typed them (no formula prefix: that is for exports).
    Comment lines go before the record they preceded, or the next one kept.
    """
    layout = drawer.layout
    d = drawer.delimiter if layout is None else layout.delimiter
    if layout is None:
        head = d.join(_field(c, d) for c in drawer.columns) + "\n"
        layout = FileLayout("utf-8", d, "\n", FileRecord(head, list(drawer.columns)),
                            list(drawer.columns))
    added = [c for c in drawer.columns if c not in layout.columns]
    columns = layout.columns + added
    header = layout.header
    if added:
        body = header.raw[:len(header.raw) - len(header.ending)]
        header = FileRecord(d.join([body, *(_field(c, d) for c in added)])
                         + (header.ending or layout.newline), header.cells + added)
    notes = _notes_by_record(drawer, layout)
    new = FileLayout(layout.encoding, d, layout.newline, header, columns)
    out: list[str] = []
    waiting: list[str] = []
    count = 1

    def put(text: str) -> int:
        nonlocal count
        if out and not out[-1].endswith(("\n", "\r")):
            out[-1] += layout.newline
        out.append(text)
        at = count
        count += len(io.StringIO(text, newline="").readlines())
        return at

    def put_notes(key: int | None) -> None:
        for note in notes.pop(key, []):
            put(note)
            waiting.append(note)

    def put_record(text: str) -> int:
        at = put(text)
        new.notes += [(at, note) for note in waiting]
        waiting.clear()
        return at

    put_notes(-1)
    put_record(header.raw)
    lines: list[int] = []
    for row in drawer.rows:
        record = layout.records.get(row.line) if row.line is not None else None
        if record is not None:
            put_notes(row.line)
        values = [row.get(c) for c in columns]
        text = _record_text(values, record, new)
        at = put_record(text)
        new.records[at] = FileRecord(text, values)
        lines.append(at)
    for key in list(notes):
        put_notes(key)
    new.notes += [(None, note) for note in waiting]
    return "".join(out), new, lines


class DrawerChangedError(TickbinError):
    """The drawer file changed on disk since it was read: saving would lose that change."""

    def __init__(self, path: Path):
        self.path = path
        super().__init__(f"{path}: changed on disk since it was read (another program or "
                         "Tickbin run saved it); nothing was written: read it again and "
                         "redo the change")


def write_drawer(drawer: Drawer, path: str | os.PathLike[str] | None = None, *,
                 overwrite: bool = False) -> Path:
    """Save atomically, the previous file kept as ``.bak``; the drawer becomes clean.

    Saving over the file the drawer was read from holds the drawer lock and
    raises ``DrawerChangedError`` when that file changed on disk since (unless
    ``overwrite``), so no other program's update is lost. A cp1252 file whose new
    text holds a character cp1252 lacks is written as UTF-8 with a BOM.
    """
    target = Path(path) if path is not None else drawer.path
    if target is None:
        raise TickbinError("no file name to save the drawer to")
    text, layout, lines = drawer_file_text(drawer)
    try:
        data = text.encode(layout.encoding, errors=KEEP_BYTE)
    except UnicodeEncodeError:
        layout.encoding = "utf-8-sig"
        data = text.encode(layout.encoding)
    with drawer_lock(target):
        if (not overwrite and drawer.disk is not None and drawer.path is not None
                and same_file(target, drawer.path)
                and not drawer.disk.same_content(disk_state(target, MAX_FILE_BYTES))):
            raise DrawerChangedError(target)
        real = write_bytes_atomically(target, data, backup=True)
        state = DiskState.of(real, data)
    drawer.saved_as(target, lines, layout, state)
    return target
