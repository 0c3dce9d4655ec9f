"""The drawer: rows of text cells parsed into parts, events for views, the undo history.

Every cell is kept as the text the person wrote, so a bad value is never
lost: it is marked with the reason and waits for correction. Parsed parts
(``Drawer.parts()``) come from the good rows only. Edits go through a few
methods that emit events (for views) and record undo steps (the history lives
here, with the data, not in a view). Reading and writing the file is
core.parts.drawer_file.
"""

from __future__ import annotations

import contextlib
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from core.errors import InputError, LineProblem
from core.parts.file_layout import FileLayout
from core.parts.part import Kind, Part, case_name, dielectric_name, parse_kind, parse_quantity_count
from core.parts.tolerances import DEFAULT_TOLERANCE, DIELECTRIC_TOLERANCE
from core.storage.atomic import DiskState
from core.units import parse_capacitance, parse_resistance, parse_tolerance, parse_voltage

NEW_DRAWER_COLUMNS = ("kind", "value", "tolerance", "quantity", "location", "note")
_TAPERS = {"": "lin", "lin": "lin", "linear": "lin", "b": "lin", "log": "log",
           "logarithmic": "log", "audio": "log", "a": "log"}


@dataclass
class Row:
    """A drawer row as text: what the person wrote, cell by cell."""

    cells: dict[str, str] = field(default_factory=dict)
    line: int | None = None

    def get(self, column: str) -> str:
        return self.cells.get(column, "")


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

