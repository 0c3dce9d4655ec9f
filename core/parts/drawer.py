"""The drawer: the parts a person owns, as read from and written to their CSV file.

Every cell is kept as the text the person wrote, so a bad value is never
lost: it is marked with the reason and waits for correction. Parsed parts
(``Drawer.parts()``) come from the good rows only. Edits go through a few
methods that emit events (for views) and record undo steps (the history lives
here, with the data, not in a view).
"""

from __future__ import annotations

import codecs
import contextlib
import csv
import io
import os
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Literal

from core.errors import DrawerFileError, InputError, LineProblem, TickbinError
from core.parts.tolerances import DEFAULT_TOLERANCE, DIELECTRIC_TOLERANCE
from core.storage.atomic import (
    DiskState,
    FileTooLargeError,
    disk_state,
    drawer_lock,
    read_regular_file,
    same_file,
    write_bytes_atomically,
)
from core.units import (
    Tolerance,
    compatible_text,
    parse_capacitance,
    parse_resistance,
    parse_tolerance,
    parse_voltage,
)

Kind = Literal["R", "P", "C"]

REQUIRED = ("kind", "value", "quantity")
KNOWN = ("kind", "value", "tolerance", "quantity", "location", "taper", "dielectric", "voltage",
         "case", "note")
"""Columns Tickbin interprets; any other column is kept as it is."""
NEW_DRAWER_COLUMNS = ("kind", "value", "tolerance", "quantity", "location", "note")

_HEADER_ALIASES = {"qty": "quantity", "count": "quantity", "tol": "tolerance", "bin": "location",
                   "type": "kind"}
_KIND_WORDS = {"r": "R", "res": "R", "resistor": "R", "p": "P", "pot": "P",
               "potentiometer": "P", "trimmer": "P", "trimpot": "P", "c": "C", "cap": "C",
               "capacitor": "C"}
_TAPERS = {"": "lin", "lin": "lin", "linear": "lin", "b": "lin", "log": "log",
           "logarithmic": "log", "audio": "log", "a": "log"}

MAX_QUANTITY = 1_000_000
MAX_FILE_BYTES = 50 * 1024 * 1024
MAX_LINE_CHARS = 10_000
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")

ELECTROLYTIC = frozenset({"electrolytic", "tantalum"})
DIELECTRIC_STABILITY: dict[str, int] = {
    "c0g": 0, "np0": 0, "film": 0, "x7r": 1, "x5r": 2, "y5v": 3, "z5u": 3, "": 3,
    "tantalum": 4, "electrolytic": 5}
"""How well a capacitor holds its value over temperature, voltage and age, steadiest 0.

Class 1 ceramics (C0G/NP0) and film drift little; X7R, X5R and Y5V/Z5U lose
more with each step down (EIA-198 temperature characteristics: X7R ±15 %
over −55…125 °C, X5R ±15 % over −55…85 °C, Y5V +22/−82 % over −30…85 °C);
an unmarked ceramic is assumed as poor as Y5V; tantalum and aluminium
electrolytics leak and age most (common practice, no published source).
"""
_DIELECTRIC_WORDS = {"elko": "electrolytic", "elcap": "electrolytic", "alu": "electrolytic",
                     "aluminium": "electrolytic", "aluminum": "electrolytic"}


CASES = ("0402", "0603", "0805", "1206", "1210", "1812", "radial")
"""Capacitor cases the ``case`` column names: EIA chip sizes (inch codes) and leaded parts."""
_CASE_WORDS = dict.fromkeys(("leaded", "through-hole", "tht", "axial", "disc", "disk"), "radial")


def case_name(text: str) -> str:
    """A case as typed (``0805``, ``Radial``, ``leaded``) in our name; InputError if unknown."""
    name = text.strip().lower()
    name = _CASE_WORDS.get(name, name)
    if name not in CASES:
        raise InputError("expected a case: " + ", ".join(CASES) + " (leaded parts: radial)",
                         text=text, what="case")
    return name


def dielectric_name(text: str) -> str:
    """A dielectric as the drawer spells it (``C0G``, ``X7R``, ``elko``) in our lower-case name."""
    name = text.strip().lower().replace("-", "")
    return _DIELECTRIC_WORDS.get(name, name)


def parse_dielectrics(text: str) -> frozenset[str]:
    """``film,c0g`` -> the dielectric names it allows (C0G and NP0 are one class)."""
    names = {dielectric_name(word) for word in text.split(",") if word.strip()}
    bad = sorted(n for n in names if n not in DIELECTRIC_TOLERANCE or not n)
    if bad or not names:
        raise InputError("expected dielectrics separated by commas: C0G, NP0, film, X7R, X5R, "
                         "Y5V, Z5U, tantalum, electrolytic", text=text, what="dielectric")
    if names & {"c0g", "np0"}:
        names |= {"c0g", "np0"}
    return frozenset(names)


def dielectric_note(allowed: frozenset[str]) -> str:
    """What a dielectric filter allows, in words for the notes (steadiest first)."""
    shown = ("C0G/NP0" if d in ("c0g", "np0") else d if d in ELECTROLYTIC | {"film"}
             else d.upper() for d in sorted(allowed, key=lambda d: (DIELECTRIC_STABILITY[d], d)))
    return f"capacitors limited to {', '.join(dict.fromkeys(shown))} (--dielectric)"


def with_dielectrics(parts: Iterable[Part], allowed: frozenset[str] | None) -> list[Part]:
    """``parts`` without the capacitors whose dielectric is not ``allowed`` (None: all)."""
    return [p for p in parts if allowed is None or p.kind != "C" or p.dielectric in allowed]


@dataclass(frozen=True)
class Part:
    """One usable stock line: SI value (Ω or F), tolerance, how many are in the drawer.

    ``line`` is the line in the drawer file (header = 1), or None for a row
    not yet saved; ``row`` is its position in the drawer. ``voltage`` is a
    capacitor's rated voltage [V] and ``case`` its case (``CASES``; "" not
    given), from the optional columns of those names. ``marked_value`` is the
    value printed on a part whose ``value`` is what the circuit sees instead (a
    class-2 ceramic under its DC bias, core.model.drift.with_dc_bias); None
    when they are the same.
    """

    kind: Kind
    value: float
    tolerance: Tolerance
    quantity: int
    location: str = ""
    note: str = ""
    taper: Literal["lin", "log"] = "lin"
    dielectric: str = ""
    line: int | None = None
    row: int = 0
    tolerance_given: bool = True
    voltage: float | None = None
    case: str = ""
    marked_value: float | None = None

    @property
    def label_value(self) -> float:
        """The value printed on the part (Ω or F): what to look for in the drawer."""
        return self.value if self.marked_value is None else self.marked_value

    @property
    def polarised(self) -> bool:
        """Electrolytic or tantalum: has a + lead and a voltage rating to respect."""
        return self.kind == "C" and self.dielectric in ELECTROLYTIC

    @property
    def value_range(self) -> tuple[float, float]:
        """(lowest, highest) value within the tolerance (Ω or F)."""
        return (self.value * (1 - self.tolerance.minus), self.value * (1 + self.tolerance.plus))

    @property
    def stock_line(self) -> int:
        """The line to name in output: the file's line, or where it will be once saved."""
        return self.line if self.line is not None else self.row + 2


@dataclass
class Row:
    """A drawer row as text: what the person wrote, cell by cell."""

    cells: dict[str, str] = field(default_factory=dict)
    line: int | None = None

    def get(self, column: str) -> str:
        return self.cells.get(column, "")


def parse_kind(text: str) -> Kind:
    """``R``/``resistor``, ``P``/``pot``/``trimmer``, ``C``/``capacitor``."""
    kind = _KIND_WORDS.get(text.strip().lower())
    if kind is None:
        raise InputError("expected a kind: R (resistor), P (potentiometer/trimmer) or "
                         "C (capacitor)", text=text, what="kind")
    return kind  # type: ignore[return-value]


def parse_quantity_count(text: str) -> int:
    """A whole number of parts, 0 … MAX_QUANTITY."""
    s = compatible_text(text).strip()  # the values' rule: ４ reads as 4
    if not s.isdigit() or not s.isascii():
        raise InputError("expected a whole number of parts (0 or more)", text=text,
                         what="quantity")
    n = int(s)
    if n > MAX_QUANTITY:
        raise InputError(f"more than {MAX_QUANTITY:,} parts on one line is not a drawer",
                         text=text, what="quantity")
    return n


def cell_problems(row: Row) -> dict[str, str]:
    """Reasons per column why ``row`` is not a usable part (empty when it is)."""
    return _parse_row(row, 0)[1]


def _parse_row(row: Row, index: int) -> tuple[Part | None, dict[str, str]]:
    problems: dict[str, str] = {}
    kind: Kind | None = None
    value = None
    try:
        kind = parse_kind(row.get("kind"))
    except InputError as e:
        problems["kind"] = e.reason
    if kind is not None:
        try:
            text = row.get("value")
            value = parse_capacitance(text) if kind == "C" else parse_resistance(text)
        except InputError as e:
            problems["value"] = e.reason
    elif not row.get("value").strip():
        problems["value"] = "empty; expected a value"
    quantity = 0
    try:
        quantity = parse_quantity_count(row.get("quantity"))
    except InputError as e:
        problems["quantity"] = e.reason
    dielectric = dielectric_name(row.get("dielectric"))
    if kind == "C" and dielectric not in DIELECTRIC_TOLERANCE:
        problems["dielectric"] = ("expected C0G, NP0, film, X7R, X5R, Y5V, Z5U, tantalum "
                                  "or electrolytic")
    taper = _TAPERS.get(row.get("taper").strip().lower())
    if taper is None:
        problems["taper"] = "expected lin or log"
    rating = _capacitor_rating(row, kind, problems)
    tolerance_text = row.get("tolerance")
    tolerance = None
    if tolerance_text.strip() and kind is not None:
        try:
            tolerance = parse_tolerance(tolerance_text, kind, value)
        except InputError as e:
            problems["tolerance"] = e.reason
    if problems or kind is None or value is None:
        return None, problems
    given = tolerance is not None
    if tolerance is None:
        tolerance = (DIELECTRIC_TOLERANCE[dielectric] if kind == "C"
                     else DEFAULT_TOLERANCE[kind])
    part = Part(kind=kind, value=value, tolerance=tolerance, quantity=quantity,
                location=row.get("location").strip(), note=row.get("note").strip(),
                taper=taper, dielectric=dielectric if kind == "C" else "",  # type: ignore[arg-type]
                line=row.line, row=index, tolerance_given=given, **rating)
    return part, {}


def _capacitor_rating(row: Row, kind: Kind | None, problems: dict[str, str]
                      ) -> dict[str, Any]:
    """A capacitor's ``voltage`` [V] and ``case`` where the row gives them; a bad cell goes
    into ``problems``. Other kinds keep those cells as text, uninterpreted."""
    out: dict[str, Any] = {}
    if kind != "C":
        return out
    for column, parse in (("voltage", parse_voltage), ("case", case_name)):
        text = row.get(column)
        if text.strip():
            try:
                out[column] = parse(text)
            except InputError as e:
                problems[column] = e.reason
    return out


# ---------------------------------------------------------------- events and undo

Listener = Callable[..., None]


class _Event:
    """A list of callbacks; ``emit`` calls each with the event's arguments."""

    def __init__(self) -> None:
        self._listeners: list[Listener] = []

    def connect(self, fn: Listener) -> None:
        self._listeners.append(fn)

    def disconnect(self, fn: Listener) -> None:
        self._listeners.remove(fn)

    def emit(self, *args: object) -> None:
        for fn in list(self._listeners):
            fn(*args)


@dataclass
class _Step:
    description: str
    undo: list[Callable[[], None]] = field(default_factory=list)
    redo: list[Callable[[], None]] = field(default_factory=list)
    in_file: bool = True
    """False for a setting beside the rows (a pinned part): undoing it leaves the file clean."""


class Drawer:
    """Rows of a drawer file plus the edit history.

    Events (each an object with ``connect``): ``inserting(first, count)``,
    ``inserted(first, count)``, ``removing(first, count)``,
    ``removed(first, count)``, ``changed(row, column)``, ``resetting()``,
    ``reset()``, ``history_changed()``. Views adapt these; they hold no data.
    """

    HISTORY_LIMIT = 200

    def __init__(self, rows: Iterable[Row] = (), columns: Iterable[str] = NEW_DRAWER_COLUMNS,
                 path: Path | None = None, delimiter: str = ","):
        self.columns: list[str] = list(columns)
        self.rows: list[Row] = list(rows)
        self.path = path
        self.delimiter = delimiter
        self.layout: FileLayout | None = None
        """How the file was written (None: not read from a file); see ``write_drawer``."""
        self.disk: DiskState | None = None
        """What the file held when read or last saved, to notice changes by others."""
        self.inserting, self.inserted = _Event(), _Event()
        self.removing, self.removed = _Event(), _Event()
        self.changed, self.resetting, self.reset = _Event(), _Event(), _Event()
        self.history_changed = _Event()
        self._undo: list[_Step] = []
        self._redo: list[_Step] = []
        self._group: _Step | None = None
        self._group_depth = 0
        self._clean_at: int | None = 0
        self._cache: tuple[list[Part], dict[int, dict[str, str]]] | None = None
        self._row_results: dict[tuple[Any, ...], tuple[Part | None, dict[str, str]]] = {}

    # -- reading the data
    def __len__(self) -> int:
        return len(self.rows)

    def parts(self) -> list[Part]:
        """Usable parts, in row order (rows with problems are left out)."""
        return self._parsed()[0]

    def problems(self) -> dict[int, dict[str, str]]:
        """Row index -> {column: reason} for every row that is not a usable part."""
        return self._parsed()[1]

    def _parsed(self) -> tuple[list[Part], dict[int, dict[str, str]]]:
        """Every row parsed; a row whose cells, line and place are as at the last parse
        keeps its result, so an edit of one cell parses one row (a window edit of a large
        drawer must stay well under 100 ms)."""
        if self._cache is None:
            parts, problems = [], {}
            earlier, self._row_results = self._row_results, {}
            for i, row in enumerate(self.rows):
                key = (i, row.line, tuple(row.cells.items()))
                result = earlier.get(key) or _parse_row(row, i)
                self._row_results[key] = result
                part, bad = result
                if part is not None:
                    parts.append(part)
                else:
                    problems[i] = bad
            self._cache = (parts, problems)
        return self._cache

    def line_problems(self) -> list[LineProblem]:
        """Problems as ``FILE:LINE: reason`` entries, one per bad cell."""
        out = []
        name = str(self.path) if self.path else "<drawer>"
        for i, bad in self.problems().items():
            line = self.rows[i].line or i + 2
            for column, reason in bad.items():
                text = self.rows[i].get(column)
                shown = f" {text!r}" if text.strip() else ""
                out.append(LineProblem(name, line, f"{column}{shown}: {reason}"))
        return out

    # -- editing
    @property
    def dirty(self) -> bool:
        """Whether the rows differ from the file: some step that changes the file lies
        between the saved point and now (settings beside the rows do not count)."""
        at, now = self._clean_at, len(self._undo)
        if at is None:
            return True
        between = self._undo[at:now] if at <= now else self._redo[len(self._redo) - (at - now):]
        return any(step.in_file for step in between)

    def mark_clean(self) -> None:
        self._clean_at = len(self._undo)
        self.history_changed.emit()

    def saved_as(self, path: Path, lines: list[int], layout: FileLayout,
                 disk: DiskState) -> None:
        """After a save: rows now start on ``lines`` of ``path``, written as ``layout``."""
        self.path = path
        for row, line in zip(self.rows, lines, strict=True):
            row.line = line
        self.layout, self.disk = layout, disk
        self._cache = None
        self.mark_clean()

    def set_cell(self, row: int, column: str, text: str) -> None:
        """Set one cell's text (any text: a bad value is kept and marked)."""
        old = self.rows[row].get(column)
        if old == text:
            return
        if column not in self.columns:
            self.columns.append(column)

        def apply(value: str) -> Callable[[], None]:
            def go() -> None:
                self.rows[row].cells[column] = value
                self._cache = None
                self.changed.emit(row, column)
            return go

        self._record(f"Edit {column}", apply(old), apply(text))

    def insert_rows(self, first: int, rows: list[Row], description: str = "Add parts") -> None:
        """Insert ``rows`` before index ``first``."""
        if not rows:
            return
        rows = [Row(dict(r.cells), r.line) for r in rows]

        def insert() -> None:
            self.inserting.emit(first, len(rows))
            self.rows[first:first] = [Row(dict(r.cells), r.line) for r in rows]
            self._cache = None
            self.inserted.emit(first, len(rows))

        def remove() -> None:
            self._remove_now(first, len(rows))

        self._record(description, remove, insert)

    def remove_rows(self, indices: Iterable[int], description: str = "Delete parts") -> None:
        """Remove the given rows, as one undo step."""
        with self.edit_group(description):
            for i in sorted(set(indices), reverse=True):
                saved = Row(dict(self.rows[i].cells), self.rows[i].line)

                def remove(i: int = i) -> None:
                    self._remove_now(i, 1)

                def insert(i: int = i, saved: Row = saved) -> None:
                    self.inserting.emit(i, 1)
                    self.rows.insert(i, Row(dict(saved.cells), saved.line))
                    self._cache = None
                    self.inserted.emit(i, 1)

                self._record(description, insert, remove)

    def _remove_now(self, first: int, count: int) -> None:
        self.removing.emit(first, count)
        del self.rows[first:first + count]
        self._cache = None
        self.removed.emit(first, count)

    def replace_rows(self, rows: list[Row], description: str = "Replace parts") -> None:
        """Replace every row at once (sort, restore): one undo step, one reset event."""
        old = [Row(dict(r.cells), r.line) for r in self.rows]
        new = [Row(dict(r.cells), r.line) for r in rows]

        def apply(target: list[Row]) -> Callable[[], None]:
            def go() -> None:
                self.resetting.emit()
                self.rows = [Row(dict(r.cells), r.line) for r in target]
                self._cache = None
                self.reset.emit()
            return go

        self._record(description, apply(old), apply(new))

    @contextlib.contextmanager
    def edit_group(self, description: str) -> Iterator[None]:
        """Make every edit inside the ``with`` block one undo step."""
        if self._group_depth == 0:
            self._group = _Step(description)
        self._group_depth += 1
        try:
            yield
        finally:
            self._group_depth -= 1
            if self._group_depth == 0:
                step, self._group = self._group, None
                if step is not None and step.redo:
                    self._push(step)

    def record_setting(self, description: str, undo: Callable[[], None],
                       redo: Callable[[], None]) -> None:
        """A setting kept beside the rows (the window's pinned parts) as one step of this
        history, so Undo reaches it in turn; it never makes the file unsaved. ``redo``
        runs now."""
        redo()
        self._push(_Step(description, [undo], [redo], in_file=False))

    def _record(self, description: str, undo: Callable[[], None],
                redo: Callable[[], None]) -> None:
        redo()
        if self._group is not None:
            self._group.undo.append(undo)
            self._group.redo.append(redo)
        else:
            self._push(_Step(description, [undo], [redo]))

    def _push(self, step: _Step) -> None:
        self._undo.append(step)
        self._redo.clear()
        if self._clean_at is not None and self._clean_at > len(self._undo) - 1:
            self._clean_at = None  # the saved state can no longer be reached by redo
        if len(self._undo) > self.HISTORY_LIMIT:
            del self._undo[0]
            self._clean_at = None if self._clean_at in (None, 0) else self._clean_at - 1
        self.history_changed.emit()

    def can_undo(self) -> bool:
        return bool(self._undo)

    def can_redo(self) -> bool:
        return bool(self._redo)

    def undo_text(self) -> str:
        return self._undo[-1].description if self._undo else ""

    def redo_text(self) -> str:
        return self._redo[-1].description if self._redo else ""

    def undo(self) -> None:
        if not self._undo:
            return
        step = self._undo.pop()
        for fn in reversed(step.undo):
            fn()
        self._redo.append(step)
        self.history_changed.emit()

    def redo(self) -> None:
        if not self._redo:
            return
        step = self._redo.pop()
        for fn in step.redo:
            fn()
        self._undo.append(step)
        self.history_changed.emit()


# ---------------------------------------------------------------- files

_CP1252_GAPS = frozenset(b"\x81\x8d\x8f\x90\x9d")
"""Bytes Windows-1252 leaves undefined; kept as the same-numbered code point (Latin-1)."""


def _keep_byte(error: UnicodeError) -> tuple[str | bytes, int]:
    """Codec error handler: a cp1252 gap byte and its Latin-1 character map to each other."""
    if isinstance(error, UnicodeDecodeError):
        return "".join(chr(b) for b in error.object[error.start:error.end]), error.end
    if isinstance(error, UnicodeEncodeError):
        text = error.object[error.start:error.end]
        if all(ord(ch) in _CP1252_GAPS for ch in text):
            return bytes(ord(ch) for ch in text), error.end
    raise error


codecs.register_error("tickbin-keep-byte", _keep_byte)


def _encoding_of(data: bytes) -> str:
    """UTF-8 with or without a BOM, else Windows-1252 (what spreadsheets on Windows save)."""
    try:
        data.decode("utf-8")
    except UnicodeDecodeError:
        return "cp1252"
    return "utf-8-sig" if data.startswith(codecs.BOM_UTF8) else "utf-8"


def _decode(data: bytes) -> str:
    # Every byte decodes, and encodes back to itself (see _keep_byte).
    return data.decode(_encoding_of(data), errors="tickbin-keep-byte")


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


@dataclass
class _Record:
    """One CSV record as the file holds it: its text (line ending included) and the
    cell values read from it, by position."""

    raw: str
    cells: list[str]

    @property
    def ending(self) -> str:
        return self.raw[len(self.raw.rstrip("\r\n")):]


@dataclass
class FileLayout:
    """How a drawer file was written, so a save writes back what it does not interpret:
    encoding and BOM, line endings, the header's spelling, comment and blank lines,
    quoting and spacing of every cell that was not edited."""

    encoding: str
    delimiter: str
    newline: str
    header: _Record
    columns: list[str]
    records: dict[int, _Record] = field(default_factory=dict)
    """Data records by the line they start on."""
    notes: list[tuple[int | None, str]] = field(default_factory=list)
    """Comment and blank lines: (line of the record they precede or None at the end, text)."""


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
    header_record = _Record("", [])
    records: dict[int, _Record] = {}
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
                header, header_record = _header(record, name, line), _Record(raw, list(record))
                continue
            cells = _cells(record, header)
            if cells is None:
                problems.append(LineProblem(
                    name, line, f"{len(record)} fields but the header has {len(header)}"))
                continue
            records[line] = _Record(raw, [cells[h] for h in header])
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
    drawer = parse_drawer_text(_decode(data), name)
    drawer.path = p
    drawer.disk = DiskState.of(p, data)
    if drawer.layout is not None:
        drawer.layout.encoding = _encoding_of(data)
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


def _raw_fields(record: _Record, delimiter: str) -> list[str] | None:
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


def _record_text(values: list[str], record: _Record | None, layout: FileLayout) -> str:
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
        layout = FileLayout("utf-8", d, "\n", _Record(head, list(drawer.columns)),
                            list(drawer.columns))
    added = [c for c in drawer.columns if c not in layout.columns]
    columns = layout.columns + added
    header = layout.header
    if added:
        body = header.raw[:len(header.raw) - len(header.ending)]
        header = _Record(d.join([body, *(_field(c, d) for c in added)])
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
        new.records[at] = _Record(text, values)
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
        data = text.encode(layout.encoding, errors="tickbin-keep-byte")
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
