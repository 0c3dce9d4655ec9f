"""Ranked candidates as a read-only Qt table over a core search or trim result.

The model keeps a reference to core's candidate list and formats it with
``core.units``; it computes nothing itself.
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Callable, Sequence
from typing import Any

from PySide6.QtCore import QAbstractTableModel, QModelIndex, QPersistentModelIndex, Qt
from PySide6.QtGui import QBrush, QColor

from core.parts.notation import NOTATION
from core.units import format_frequency, format_quantity, format_signed_pct

CANDIDATE_ROLE = Qt.ItemDataRole.UserRole + 10
"""Role giving the core candidate object of a row."""

SORT_ROLE = Qt.ItemDataRole.UserRole + 11
"""Role giving the number a column sorts by (a value, not its text)."""

_ROLES_ANSWERED = frozenset(int(role) for role in (
    Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.AccessibleTextRole, CANDIDATE_ROLE,
    SORT_ROLE, Qt.ItemDataRole.ToolTipRole, Qt.ItemDataRole.ForegroundRole,
    Qt.ItemDataRole.TextAlignmentRole))
"""Roles ``data`` answers; the view asks for many more (fonts, sizes, icons) per cell,
and sizing the columns to a new result asks every cell."""

GOOD = QColor(40, 110, 70)
FAR = QColor(150, 90, 30)

NETWORK_HEADINGS = {"R": "Resistor", "RA": "RA", "RB": "RB", "C": "Capacitor",
                    "P": "Pot"}


def place(part: Any) -> str:
    """``B1-06, line 11`` (or just ``line 11`` when the drawer names no location)."""
    return f"{part.location}, line {part.stock_line}" if part.location else (
        f"line {part.stock_line}")


def used_rows(candidate: Any) -> dict[int, int]:
    """How many parts a candidate takes from each drawer row: {row index: count}."""
    counts: Counter[int] = Counter(p.row for node in candidate.networks.values()
                                   for p in node.parts())
    return dict(counts)


def where(networks: dict[str, Any]) -> str:
    """Where every part lives: ``B1-06, line 11 ×2; B2-01, line 30``."""
    counts: Counter[Any] = Counter(p for node in networks.values() for p in node.parts())
    ordered = sorted(counts.items(), key=lambda kv: kv[0].stock_line)
    return "; ".join(place(p) + (f" ×{n}" if n > 1 else "") for p, n in ordered)


def parts_list(candidate: Any) -> list[str]:
    """One line per network: its value, then each part with tolerance, location and line."""
    from core.units import format_part_value

    lines = []
    for key, node in candidate.networks.items():
        counts: Counter[Any] = Counter(node.parts())
        shown = []
        for part, n in counts.items():
            text = (f"{n} × " if n > 1 else "") + (
                f"{format_part_value(part.value, part.kind)} {part.tolerance} from {place(part)}")
            if part.kind == "P":
                text += f" ({part.taper})"
            if part.polarised:
                text += " — polarised: + lead to the positive side, rating above the supply"
            shown.append(text)
        heading = NETWORK_HEADINGS.get(key, key)
        lines.append(f"{heading} {node.describe()}: " + "; ".join(shown))
    return lines


def _band(lo_hi: Sequence[float]) -> str:
    lo, hi = lo_hi
    return f"{format_frequency(lo)} … {format_frequency(hi)}"


Column = tuple[str, str, Callable[[Any], str]]

SLOW_HZ = 0.1
"""Below this a clock is set by its period (a 2 min timer), so the period is shown too."""


def _frequency(hertz: float) -> str:
    text = format_frequency(hertz, 4)
    return f"{text} ({format_quantity(1.0 / hertz, 'period', 4)})" if 0 < hertz < SLOW_HZ else text


SORT_KEYS: dict[str, Callable[[Any], float]] = {
    "Frequency": lambda c: c.frequency_hz,
    "Error": lambda c: abs(c.error_pct),  # nearest the target first, either side
    "Duty": lambda c: c.duty_pct,
    "Duty error": lambda c: abs(c.duty_error_pct),
    # Narrowest first; a candidate that may stop at some corner last.
    "Worst case": lambda c: math.inf if c.stops else c.worst_case_hz[1] / c.worst_case_hz[0],
    "Guaranteed": lambda c: c.guaranteed_hz[1] / c.guaranteed_hz[0],
    "Nominal range": lambda c: c.range_hz[1] / c.range_hz[0],
    "Rotation at band": lambda c: abs(c.rotation_pct[1] - c.rotation_pct[0]),
    "Resolution": lambda c: c.resolution_hz_per_pct,
    "Oscillator": lambda c: c.to_json()["oscillator_hz"],
    "Divide by": lambda c: c.to_json()["divide_by"],
}
"""What a column sorts by where its text would sort wrongly; networks sort by value."""
NETWORK_OF = {**{heading: key for key, heading in NETWORK_HEADINGS.items()}, "Fixed R": "R"}


STOPS_MARK = "⚠ stops"
STOPS_TIP = ("Stops oscillating at some tolerance, threshold or leakage corner: the worst "
             "case starts at 0 Hz. Never counted as a hit; listed after every build that "
             "runs at all corners.")


def _worst_case(c: Any) -> str:
    return f"{STOPS_MARK}  {_band(c.worst_case_hz)}" if c.stops else _band(c.worst_case_hz)


COUNTER_COLUMNS: tuple[tuple[str, str, str, Callable[[Any], str]], ...] = (
    ("oscillator_hz", "Oscillator", "The oscillator's own frequency, before the counter",
     lambda v: format_frequency(v, 4)),
    ("divide_by", "Divide by", "The counter's ratio: the oscillator over the output",
     lambda v: f"÷{v:g}"),
    ("tap", "Tap", "The counter output to take the signal from (its pin on the sheet)", str),
)
"""Columns a circuit with a counter adds, by the command line's JSON keys (DESIGN.md): shown
when the candidates carry them, whatever the circuit."""


def _counter_columns(sample: dict[str, Any]) -> list[Column]:
    return [(heading, tip, lambda c, key=key, fmt=fmt: fmt(c.to_json()[key]))
            for key, heading, tip, fmt in COUNTER_COLUMNS if key in sample]


def _search_columns(keys: Sequence[str], with_duty: bool,
                    sample: dict[str, Any] | None = None) -> list[Column]:
    cols: list[Column] = [
        ("Frequency", "Predicted frequency with the nominal model (with its period when "
         "slower than one cycle in ten seconds)", lambda c: _frequency(c.frequency_hz)),
        ("Error", "(predicted − target) / target", lambda c: format_signed_pct(c.error_pct)),
        ("Duty", "Share of each period the output is high",
         lambda c: f"{c.duty_pct:.1f} %"),
    ]
    cols[2:2] = _counter_columns(sample or {})  # after the output's frequency and error
    if with_duty:
        cols.append(("Duty error", "Predicted minus asked duty, in percentage points",
                     lambda c: f"{c.duty_error_pct:+.1f} pt"))
    cols.append(("Worst case", "Frequency band over every tolerance, threshold and leakage "
                 f"corner; {STOPS_MARK} marks a build that stops at some corner",
                 _worst_case))
    for key in keys:
        cols.append((NETWORK_HEADINGS.get(key, key),
                     f"The {key} network from your drawer\n{NOTATION}",
                     lambda c, key=key: c.networks[key].describe()))
    cols.append(("From the drawer", "Where each part lives and its line in the drawer file",
                 lambda c: where(c.networks)))
    return cols


TRIM_HEADINGS = {"R": ("Fixed R", "Fixed resistor in series with the pot"),
                 "C": ("Capacitor", "Timing capacitor")}
"""Trim columns named otherwise than in a search (the Schmitt's R is the pot's fixed part)."""


def _trim_columns(keys: Sequence[str]) -> list[Column]:
    roles: list[Column] = [
        (*TRIM_HEADINGS.get(key, (NETWORK_HEADINGS.get(key, key), f"The {key} network")),
         lambda c, key=key: c.networks[key].describe()) for key in keys if key != "P"]
    return [
        ("Pot", "The potentiometer or trimmer (end-to-end value)",
         lambda c: c.networks["P"].describe()),
        *[(heading, f"{tip}\n{NOTATION}", fmt) for heading, tip, fmt in roles],
        ("Guaranteed", "Band reached at every tolerance corner",
         lambda c: _band(c.guaranteed_hz)),
        ("Nominal range", "Frequency at full rotation … at zero rotation",
         lambda c: _band(c.range_hz)),
        ("Rotation at band", "Pot rotation for the band's high … low end (nominal)",
         lambda c: f"{c.rotation_pct[0]:.0f} % … {c.rotation_pct[1]:.0f} %"),
        ("Resolution", "Frequency change per percent of rotation",
         lambda c: f"{format_frequency(c.resolution_hz_per_pct)}/%"),
        ("From the drawer", "Where each part lives and its line in the drawer file",
         lambda c: where(c.networks)),
    ]


class CandidatesModel(QAbstractTableModel):
    """Rows are candidates, best first; ``set_result`` swaps in a new core result."""

    def __init__(self, parent: Any = None):
        super().__init__(parent)
        self._candidates: list[Any] = []
        self._answers: dict[tuple[int, int, int], Any] = {}
        self._columns: list[Column] = _search_columns(("R", "C"), False)
        self.trim = False

    def set_result(self, candidates: Sequence[Any], trim: bool) -> None:
        """Show ``candidates`` (core Candidate or TrimCandidate objects)."""
        self.beginResetModel()
        self._answers.clear()
        self._candidates = list(candidates)
        self.trim = trim
        keys = list(self._candidates[0].networks) if self._candidates else ["R", "C"]
        if trim:
            self._columns = _trim_columns(keys)
        else:
            with_duty = any(c.duty_asked_pct is not None for c in self._candidates)
            sample = self._candidates[0].to_json() if self._candidates else {}
            self._columns = _search_columns(keys, with_duty, sample)
        self.endResetModel()

    def headings(self) -> list[str]:
        return [heading for heading, _, _ in self._columns]

    def candidate(self, row: int) -> Any:
        return self._candidates[row] if 0 <= row < len(self._candidates) else None

    def rowCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._candidates)

    def columnCount(self, parent: QModelIndex | QPersistentModelIndex = QModelIndex()) -> int:  # noqa: B008, N802
        return 0 if parent.isValid() else len(self._columns)

    def data(self, index: QModelIndex | QPersistentModelIndex,
             role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if (role not in _ROLES_ANSWERED or not index.isValid()
                or index.row() >= len(self._candidates)):
            return None
        key = (index.row(), index.column(), int(role))
        if key not in self._answers:  # each cell is asked many times; a result is fixed
            self._answers[key] = self._answer(*key)
        return self._answers[key]

    def _answer(self, row: int, column: int, role: int) -> Any:
        cand = self._candidates[row]
        heading, _, fmt = self._columns[column]
        if role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.AccessibleTextRole):
            return fmt(cand)
        if role == CANDIDATE_ROLE:
            return cand
        if role == SORT_ROLE:
            return self._sort_key(cand, heading, fmt)
        stops = not self.trim and cand.stops
        if role == Qt.ItemDataRole.ToolTipRole:
            notes = list(getattr(cand, "notes", []) or [])
            if stops and heading == "Worst case":
                notes = [STOPS_TIP]
            return "\n".join([fmt(cand), *notes]) if notes else fmt(cand)
        if role == Qt.ItemDataRole.ForegroundRole and (
                heading in ("Error", "Duty error") or (stops and heading == "Worst case")):
            return QBrush(GOOD if not self.trim and cand.hit else FAR)
        if role == Qt.ItemDataRole.TextAlignmentRole and heading in (
                "Frequency", "Error", "Duty", "Duty error"):
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        return None

    @staticmethod
    def _sort_key(cand: Any, heading: str, fmt: Callable[[Any], str]) -> Any:
        if heading in SORT_KEYS:
            return float(SORT_KEYS[heading](cand))
        if heading in NETWORK_OF and NETWORK_OF[heading] in cand.networks:
            return float(cand.networks[NETWORK_OF[heading]].value)
        return fmt(cand)

    def headerData(self, section: int, orientation: Qt.Orientation,  # noqa: N802
                   role: int = Qt.ItemDataRole.DisplayRole) -> Any:
        if orientation == Qt.Orientation.Vertical:
            if role == Qt.ItemDataRole.DisplayRole and 0 <= section < len(self._candidates):
                return str(section + 1)
            return None
        if not 0 <= section < len(self._columns):
            return None
        heading, tip, _ = self._columns[section]
        if role == Qt.ItemDataRole.DisplayRole:
            return heading
        if role == Qt.ItemDataRole.ToolTipRole:
            return tip
        return None

    def flags(self, index: QModelIndex | QPersistentModelIndex) -> Qt.ItemFlag:
        if not index.isValid():
            return Qt.ItemFlag.NoItemFlags
        return (Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable
                | Qt.ItemFlag.ItemNeverHasChildren)
