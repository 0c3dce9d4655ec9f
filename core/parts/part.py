"""A stock part: its kind, value, tolerance, dielectric and case, and how those cells read."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import Literal

from core.errors import InputError
from core.parts.tolerances import DIELECTRIC_TOLERANCE
from core.units import Tolerance, compatible_text

Kind = Literal["R", "P", "C"]

_KIND_WORDS = {"r": "R", "res": "R", "resistor": "R", "p": "P", "pot": "P",
               "potentiometer": "P", "trimmer": "P", "trimpot": "P", "c": "C", "cap": "C",
               "capacitor": "C"}

MAX_QUANTITY = 1_000_000

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

