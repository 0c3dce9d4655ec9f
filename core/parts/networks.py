"""One network of stock parts: a small tree of parts in series and in parallel, its topology
codes and the series/parallel rules for scalars and arrays.

The index of every network a drawer can build is core.parts.network_index
(built by core.parts.index_build).

References: series resistance adds, parallel conductance adds; capacitance
adds in parallel and its reciprocal adds in series (any circuits textbook, e.g.
Horowitz & Hill, The Art of Electronics, 3rd ed., §1.2.1 and §1.4.1).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

from core.errors import InputError
from core.parts.notation import PARALLEL_WORD, SERIES_WORD
from core.parts.part import Part
from core.units import format_part_value

NetworkKind = Literal["R", "C"]

MAX_PARTS = 3
"""Most parts in one network (the issue asks for up to three)."""

# Topology codes in NetworkIndex.topology; usage columns name the groups a, b, c.
SINGLE, SERIES2, PARALLEL2, SERIES3, PARALLEL3, PAR_THEN_SERIES, SER_THEN_PARALLEL = range(7)
PART_COUNT = np.array([1, 2, 2, 3, 3, 3, 3], dtype=np.int8)
"""Parts in a network of each topology code."""


@dataclass(frozen=True)
class Network:
    """A single stock part, or parts in ``series`` / ``parallel`` (child nodes).

    ``value`` is in Ω for resistors, F for capacitors (series capacitors add
    reciprocally).
    """

    part: Part | None = None
    series: tuple[Network, ...] = ()
    parallel: tuple[Network, ...] = ()

    def __post_init__(self) -> None:
        shapes = (self.part is not None) + bool(self.series) + bool(self.parallel)
        if shapes != 1 or len(self.series) == 1 or len(self.parallel) == 1:
            raise InputError("a network is one part, or two or more networks in series "
                             "or in parallel")

    @property
    def kind(self) -> str:
        return self.parts()[0].kind

    def _combine(self, leaf_value: Any) -> float:
        """Value with each part's value taken from ``leaf_value(part)`` (SI)."""
        if self.part is not None:
            return float(leaf_value(self.part))
        children = [c._combine(leaf_value) for c in (self.series or self.parallel)]
        additive = bool(self.series) != (self.kind == "C")
        return sum(children) if additive else 1.0 / sum(1.0 / x for x in children)

    @property
    def value(self) -> float:
        """Nominal value of the network (Ω or F)."""
        return self._combine(lambda p: p.value)

    @property
    def label_value(self) -> float:
        """The value from the values printed on the parts (Ω or F); ``value`` differs where
        a part's is what the circuit sees instead (``Part.marked_value``)."""
        return self._combine(lambda p: p.label_value)

    @property
    def value_range(self) -> tuple[float, float]:
        """(lowest, highest) value with every part at its tolerance extreme.

        Series and parallel values rise with every part, so the extremes are
        all parts low and all parts high.
        """
        return (self._combine(lambda p: p.value_range[0]),
                self._combine(lambda p: p.value_range[1]))

    def parts(self) -> list[Part]:
        """Every part used, repeated as often as it is used."""
        if self.part is not None:
            return [self.part]
        return [p for c in (self.series or self.parallel) for p in c.parts()]

    @property
    def part_count(self) -> int:
        return len(self.parts())

    @property
    def electrical(self) -> tuple[Any, ...]:
        """The network's shape and each part's electrical content (kind, value, tolerance,
        taper, dielectric), not where the part is, how many there are or its line: equal
        for networks that behave alike."""
        if self.part is not None:
            p = self.part
            return (p.kind, p.value, p.tolerance, p.taper, p.dielectric)
        return (bool(self.series),
                tuple(c.electrical for c in (self.series or self.parallel)))

    def to_json(self) -> dict[str, Any]:
        """The contract's NODE: ``{"line": N}``, ``{"series": [...]}``, ``{"parallel": [...]}``."""
        if self.part is not None:
            return {"line": self.part.stock_line}
        key = "series" if self.series else "parallel"
        return {key: [c.to_json() for c in (self.series or self.parallel)]}

    def describe(self, digits: int = 3) -> str:
        """``10 kΩ ser 4.7 kΩ``, ``22 nF par 10 nF``, ``(10 kΩ par 10 kΩ) ser 4.7 kΩ``
        (``NOTATION``)."""
        if self.part is not None:
            return format_part_value(self.part.label_value, self.part.kind, digits)
        sign = f" {SERIES_WORD} " if self.series else f" {PARALLEL_WORD} "
        shown = [c.describe(digits) if c.part is not None else f"({c.describe(digits)})"
                 for c in (self.series or self.parallel)]
        return sign.join(shown)


def single(part: Part) -> Network:
    """A network of one part."""
    return Network(part=part)


def tree(code: int, leaves: list[Network]) -> Network:
    """The network of topology ``code`` over ``leaves`` (single parts, in usage order)."""
    if code == SINGLE:
        return leaves[0]
    a, b = leaves[0], leaves[1]
    c = leaves[2] if len(leaves) > 2 else None
    shapes = {
        SERIES2: lambda: Network(series=(a, b)),
        PARALLEL2: lambda: Network(parallel=(a, b)),
        SERIES3: lambda: Network(series=(a, b, c)),
        PARALLEL3: lambda: Network(parallel=(a, b, c)),
        PAR_THEN_SERIES: lambda: Network(series=(Network(parallel=(a, b)), c)),
        SER_THEN_PARALLEL: lambda: Network(parallel=(Network(series=(a, b)), c)),
    }
    return shapes[code]()


def may_join(kind: str, in_series: bool, polarised_x: np.ndarray,
             polarised_y: np.ndarray) -> np.ndarray:
    """Whether two networks (True where one holds a polarised capacitor) may be joined.

    Capacitors in series share their DC voltage by their leakage currents, not
    by design, so a polarised one can end up reversed at the inner node, where
    no "+ lead to the timing node" rule reaches (common practice, no published
    source). In parallel, every + lead sits on the same node.
    """
    banned = (polarised_x | polarised_y) if kind == "C" and in_series else False
    return ~np.broadcast_to(banned, np.broadcast(polarised_x, polarised_y).shape)


def practical(kind: str, code: int, polarised: list[np.ndarray]) -> np.ndarray:
    """``may_join`` applied to every join of a topology; ``polarised`` per leaf, in order."""
    if code in (SINGLE, PARALLEL2, PARALLEL3):
        return np.ones(len(polarised[0]), dtype=bool)
    a, b = polarised[0], polarised[1]
    if code == SERIES2:
        return may_join(kind, True, a, b)
    # SERIES3: (a, b) in series, then c; PAR_THEN_SERIES: (a ∥ b) then c in series;
    # SER_THEN_PARALLEL: (a, b) in series, c across them.
    inner = may_join(kind, code != PAR_THEN_SERIES, a, b)
    return inner & may_join(kind, code != SER_THEN_PARALLEL, a | b, polarised[2])


def add(x: Any, y: Any) -> Any:
    """Two values that add (resistors in series, capacitors in parallel)."""
    return x + y


def reciprocal_add(x: Any, y: Any) -> Any:
    """Two values whose reciprocals add (resistors in parallel, capacitors in series)."""
    return x * y / (x + y)


def combiners(kind: str) -> tuple[Callable[[Any, Any], Any], Callable[[Any, Any], Any]]:
    """(series, parallel) rules for two values of ``kind``: resistances add in series,
    capacitances in parallel; the other way they add reciprocally (arrays too)."""
    return (reciprocal_add, add) if kind == "C" else (add, reciprocal_add)


def network_values(topology: np.ndarray, slots: np.ndarray, kind: str) -> np.ndarray:
    """Values of networks given by topology codes and each part's value (Ω or F).

    ``slots`` (networks × 3, NaN where unused) may hold nominal values or
    tolerance extremes; both series and parallel combinations rise with every
    part, so extremes map to extremes.
    """
    ser, par = combiners(kind)
    shapes: dict[int, Callable[[Any, Any, Any], Any]] = {
        SINGLE: lambda a, b, c: a, SERIES2: lambda a, b, c: ser(a, b),
        PARALLEL2: lambda a, b, c: par(a, b), SERIES3: lambda a, b, c: ser(ser(a, b), c),
        PARALLEL3: lambda a, b, c: par(par(a, b), c),
        PAR_THEN_SERIES: lambda a, b, c: ser(par(a, b), c),
        SER_THEN_PARALLEL: lambda a, b, c: par(ser(a, b), c)}
    out = np.empty(len(topology))
    # Not np.unique here or below: it imports numpy.ma, about 40 ms of a command's start.
    for code in np.flatnonzero(np.bincount(topology, minlength=1)):
        m = topology == code
        out[m] = shapes[int(code)](*(slots[m, k] for k in range(MAX_PARTS)))
    return out
