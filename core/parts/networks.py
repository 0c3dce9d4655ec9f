"""Networks of stock parts: every value the drawer can make from one, two or three parts.

A network is a small tree (``Network``) of stock parts in series and in parallel.
``NetworkIndex`` holds every network the drawer can build for one kind of part
as sorted numpy arrays, one layer per part count, so a search looks values up
with ``numpy.searchsorted`` instead of enumerating combinations.

Decisions:

* Lines alike for a network (same kind, value and dielectric, any tolerance)
  are one *group* whose quantity is the sum of the lines; the index is built
  over these distinct values and a network's parts are handed out to concrete
  lines, closest tolerance first, only when a candidate is shown
  (``NetworkIndex.nodes``). So two bins of 10 kΩ, or one value in six
  tolerance grades, never multiply the networks.
* Three-part networks are every triple while the distinct values are few;
  otherwise each one is a two-part network plus a part in series or in
  parallel, found by sorted look-ups for the buckets still free. Pairs and
  look-ups have fixed limits, so a huge drawer costs bounded work and memory
  and the index's ``notes`` say what was left out.
* Values that agree within ``RESOLUTION`` (relative, 0.01 %: far inside any
  resistor's or capacitor's tolerance) are one entry; the network with the
  fewest parts is kept. This bounds the three-resistor layer of a full E24 kit
  (8 × 818 805 combinations) to about 170 000 entries and makes every layer
  sorted for free (entries are kept in bucket order).
* A network never needs more of a group than the drawer holds (quantity rule
  within one network); across the networks of one candidate the search checks
  it with ``NetworkIndex.overused``.

* Only practical networks: a polarised capacitor (electrolytic, tantalum) is
  never in series with another capacitor (``may_join``).
* Where networks of one part count share a bucket, the steadiest wins:
  the best dielectric class of its worst capacitor, then the smallest
  relative spread (``steadiness``), so a 1 % line is not hidden behind a 5 %
  line of the same value.

References: series resistance adds, parallel conductance adds; capacitance
adds in parallel and its reciprocal adds in series (any circuits textbook, e.g.
Horowitz & Hill, The Art of Electronics, 3rd ed., §1.2.1 and §1.4.1).
"""

from __future__ import annotations

import copy
import math
from collections import Counter
from collections.abc import Callable, Generator, Iterable, Iterator
from dataclasses import dataclass
from typing import Any, Literal, TypeVar

import numpy as np

from core.errors import InputError
from core.parts.notation import PARALLEL_WORD, SERIES_WORD
from core.parts.part import DIELECTRIC_STABILITY, Part
from core.units import format_part_value

NetworkKind = Literal["R", "C"]
T = TypeVar("T")

RESOLUTION = 1e-4
"""Relative width of one value bucket: networks closer than this are one entry."""

MAX_PARTS = 3
"""Most parts in one network (the issue asks for up to three)."""

# Topology codes in NetworkIndex.topology; usage columns name the groups a, b, c.
SINGLE, SERIES2, PARALLEL2, SERIES3, PARALLEL3, PAR_THEN_SERIES, SER_THEN_PARALLEL = range(7)
_PART_COUNT = np.array([1, 2, 2, 3, 3, 3, 3], dtype=np.int8)


# ---------------------------------------------------------------- one network

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
    return Network(part=part)


# ---------------------------------------------------------------- the index

def _group_key(part: Part) -> tuple[Any, ...]:
    """Lines alike for a network: kind, value and dielectric (tolerance grades pool)."""
    return (part.kind, part.value, part.dielectric)


def _closest_first(part: Part) -> tuple[float, float, float, int]:
    tol = part.tolerance
    return (max(tol.minus, tol.plus), tol.minus + tol.plus, tol.minus, part.stock_line)


def electrical_key(parts: Iterable[Part], kind: str) -> tuple[Any, ...]:
    """All that the ``kind`` index depends on: value, dielectric and tolerance of each
    stocked line and its quantity up to ``MAX_PARTS`` (no network takes more), not its
    location, note or line number. Editing those, or a quantity above ``MAX_PARTS``,
    rebuilds nothing: ``NetworkIndex.over`` hands out the current lines."""
    return tuple(sorted((p.value, p.dielectric, p.tolerance.minus, p.tolerance.plus,
                         min(p.quantity, MAX_PARTS))
                        for p in parts if p.kind == kind and p.quantity > 0))


def group_parts(parts: Iterable[Part], kind: str) -> list[list[Part]]:
    """Lines of ``kind`` with stock, one group per value and dielectric; groups sorted by value.

    A group's lines are in the order they are handed out: closest tolerance first.
    """
    groups: dict[tuple[Any, ...], list[Part]] = {}
    for part in parts:
        if part.kind == kind and part.quantity > 0:
            groups.setdefault(_group_key(part), []).append(part)
    return [sorted(g, key=_closest_first)
            for _, g in sorted(groups.items(), key=lambda kv: kv[0][1:])]


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


def _practical(kind: str, code: int, polarised: list[np.ndarray]) -> np.ndarray:
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


def _add(x: Any, y: Any) -> Any:
    return x + y


def _reciprocal_add(x: Any, y: Any) -> Any:
    return x * y / (x + y)


def combiners(kind: str) -> tuple[Callable[[Any, Any], Any], Callable[[Any, Any], Any]]:
    """(series, parallel) rules for two values of ``kind``: resistances add in series,
    capacitances in parallel; the other way they add reciprocally (arrays too)."""
    return (_reciprocal_add, _add) if kind == "C" else (_add, _reciprocal_add)


def _group_values(groups: list[list[Part]]) -> np.ndarray:
    """Nominal value of each group (Ω or F)."""
    return np.array([g[0].value for g in groups], dtype=float)


def _group_stability(groups: list[list[Part]]) -> np.ndarray:
    """Dielectric class of each group (0 steadiest, ``DIELECTRIC_STABILITY``); resistors 0."""
    return np.array([DIELECTRIC_STABILITY.get(g[0].dielectric, 0) if g[0].kind == "C" else 0
                     for g in groups], dtype=float)


def steadiness(stability: np.ndarray, lo: np.ndarray, hi: np.ndarray,
               values: np.ndarray) -> np.ndarray:
    """How far a network may stray, lower is better: 10 × the dielectric class of its
    worst capacitor (0 for resistors) plus its relative spread (hi − lo) / value."""
    return 10.0 * stability + (hi - lo) / values


def _group_quantities(groups: list[list[Part]]) -> np.ndarray:
    """Parts in stock per group, over its lines."""
    return np.array([sum(p.quantity for p in g) for g in groups], dtype=np.int64)


def _part_ranges(groups: list[list[Part]]) -> tuple[np.ndarray, np.ndarray]:
    """(low, high) value [Ω or F] of the first, second and third part a network takes from
    each group, shape (groups, 3): the lines are handed out closest tolerance first."""
    lo, hi = np.ones((len(groups), MAX_PARTS)), np.ones((len(groups), MAX_PARTS))
    for g, lines in enumerate(groups):
        units = [p for p in lines for _ in range(min(p.quantity, MAX_PARTS))][:MAX_PARTS]
        units += [units[-1]] * (MAX_PARTS - len(units))
        lo[g], hi[g] = zip(*(p.value_range for p in units), strict=True)
    return lo, hi


def _ranks(usage: np.ndarray) -> np.ndarray:
    """For each part of a network, how many earlier parts come from the same group."""
    ranks = np.zeros(usage.shape, dtype=np.int64)
    for k in range(1, usage.shape[1]):
        ranks[:, k] = (usage[:, :k] == usage[:, k:k + 1]).sum(axis=1)
    return ranks


def within_stock(usage: np.ndarray, quantity: np.ndarray) -> np.ndarray:
    """True where no group is used more often than it has parts (usage -1 = no part)."""
    used = usage >= 0
    have = quantity[np.where(used, usage, 0)]
    ok = np.ones(len(usage), dtype=bool)
    for k in range(usage.shape[1]):
        ok &= ~used[:, k] | ((usage == usage[:, k:k + 1]).sum(axis=1) <= have[:, k])
    return ok


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


class NetworkIndex:
    """Every network of one part kind the drawer can build, as sorted numpy arrays.

    Arrays (one entry per network, layer by layer: all single parts, then all
    pairs, then all triples; sorted by value within a layer):
    ``values`` (Ω or F), ``lo``/``hi`` (value at the parts' tolerance
    extremes, with each group's closest-tolerance lines used first),
    ``stability`` (dielectric class of the worst capacitor, 0 for resistors),
    ``topology`` (codes above), ``usage`` (int32, group index per part, -1
    padded). ``layers[p]`` is the slice of ``p``-part networks. ``notes`` say
    what a very large drawer left out (see ``PAIR_LIMIT``, ``THREE_PART_BUDGET``).
    """

    def __init__(self, kind: NetworkKind, groups: list[list[Part]], topology: np.ndarray,
                 usage: np.ndarray, layer_ends: list[int], max_parts: int,
                 notes: list[str] | None = None):
        self.kind = kind
        self.groups = groups
        self.max_parts = max_parts
        self.notes = list(notes or [])
        self.group_values = _group_values(groups)
        self.group_quantity = _group_quantities(groups)
        self.topology = topology
        self.usage = usage
        used = usage >= 0
        at = (np.where(used, usage, 0), _ranks(usage))  # each part: its group, its rank there
        part_lo, part_hi = _part_ranges(groups)
        self.values = network_values(topology, np.where(used, self.group_values[at[0]], np.nan),
                                     kind)
        self.lo = network_values(topology, np.where(used, part_lo[at], np.nan), kind)
        self.hi = network_values(topology, np.where(used, part_hi[at], np.nan), kind)
        self.stability = np.append(_group_stability(groups), 0.0)[usage].max(axis=1,
                                                                             initial=0.0)
        self.part_count = _PART_COUNT[topology]
        starts = [0, *layer_ends[:-1]]
        self.layers = {p + 1: slice(s, e) for p, (s, e) in enumerate(zip(starts, layer_ends,
                                                                        strict=True))}

    def __len__(self) -> int:
        return len(self.values)

    def over(self, parts: Iterable[Part]) -> NetworkIndex:
        """This index handing out the lines of ``parts``, whose ``electrical_key`` is the
        one it was built for (only locations, notes, line numbers or large quantities
        differ)."""
        groups = group_parts(parts, self.kind)
        if not np.array_equal(_group_values(groups), self.group_values):
            raise ValueError("the index was built for other parts")
        clone = copy.copy(self)
        clone.groups = groups
        clone.group_quantity = _group_quantities(groups)
        return clone

    @property
    def nbytes(self) -> int:
        """Memory held by the index arrays (bytes)."""
        return sum(a.nbytes for a in (self.values, self.lo, self.hi, self.stability,
                                      self.topology, self.usage, self.part_count))

    def steadiness(self, entries: np.ndarray) -> np.ndarray:
        """``steadiness`` of each entry (lower is steadier): the ranking's tie-break."""
        return steadiness(self.stability[entries], self.lo[entries], self.hi[entries],
                          self.values[entries])

    def layer_slices(self, max_parts: int) -> list[slice]:
        """The layers of networks with 1 … ``max_parts`` parts that this index holds."""
        return [self.layers[p] for p in range(1, min(max_parts, self.max_parts) + 1)]

    def entries(self, max_parts: int, lo: float = 0.0, hi: float = np.inf) -> np.ndarray:
        """Indices of the networks with 1 … ``max_parts`` parts valued ``lo`` … ``hi``
        (Ω or F), layer by layer."""
        return np.concatenate([np.arange(s.start, s.stop)[
            (self.values[s] >= lo) & (self.values[s] <= hi)]
            for s in self.layer_slices(max_parts)]).astype(np.int64)

    def nearest(self, targets: np.ndarray, max_parts: int, per_side: int = 2,
                lo: float = 0.0, hi: float = np.inf) -> np.ndarray:
        """Entries next to each target value, in every layer up to ``max_parts`` parts.

        Only entries with ``lo <= value <= hi`` (Ω or F) count. Returns an int
        array (len(targets), layers × 2 × per_side) of entry indices, -1 where
        there is none (NaN targets give only -1).
        """
        targets = np.asarray(targets, dtype=float)
        columns = []
        for layer in self.layer_slices(max_parts):
            vals = self.values[layer]
            first = layer.start + int(np.searchsorted(vals, lo, "left"))
            last = layer.start + int(np.searchsorted(vals, hi, "right"))
            if first >= last:
                continue
            window = self.values[first:last]
            pos = first + np.searchsorted(window, np.nan_to_num(targets, nan=-1.0))
            for offset in range(-per_side, per_side):
                idx = pos + offset
                ok = (idx >= first) & (idx < last) & np.isfinite(targets)
                columns.append(np.where(ok, idx, -1))
        if not columns:
            return np.full((len(targets), 0), -1, dtype=np.int64)
        return np.stack(columns, axis=1)

    def overused(self, *entries: np.ndarray) -> np.ndarray:
        """True where entries used together (e.g. RA and RB) need more of a group than exists.

        Each entry is within stock by itself, so only rows where two of the
        entries share a group need the full count.
        """
        parts = [self.usage[np.asarray(e)] for e in entries]
        shared = np.zeros(len(parts[0]), dtype=bool)
        for x in range(len(parts)):
            for y in range(x + 1, len(parts)):
                for i in range(3):
                    for j in range(3):
                        shared |= (parts[x][:, i] == parts[y][:, j]) & (parts[x][:, i] >= 0)
        bad = np.zeros(len(shared), dtype=bool)
        rows = np.flatnonzero(shared)
        if rows.size:
            use = np.concatenate([p[rows] for p in parts], axis=1)
            bad[rows] = ~within_stock(use, self.group_quantity)
        return bad

    def nodes(self, entries: Iterable[int], taken: Counter[int] | None = None) -> list[Network]:
        """The networks of ``entries`` with concrete stock lines, sharing the quantities.

        ``taken`` (stock line -> parts already used by this candidate) is updated,
        so several networks of one candidate never use more of a line than it has.
        """
        taken = Counter() if taken is None else taken
        out = []
        for entry in entries:
            leaves = []
            for g in self.usage[entry]:
                if g < 0:
                    continue
                part = next((p for p in self.groups[g] if taken[p.stock_line] < p.quantity),
                            None)
                if part is None:
                    raise InputError("a network needs more parts than the drawer holds")
                taken[part.stock_line] += 1
                leaves.append(single(part))
            out.append(_tree(int(self.topology[entry]), leaves))
        return out


def _tree(code: int, leaves: list[Network]) -> Network:
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


# ---------------------------------------------------------------- building

TRIPLE_CHUNK = 300_000
"""Three-part combinations evaluated at once (bounds memory)."""

PAIR_LIMIT = 2_000_000
"""Most pairs of values combined into two-part networks per kind (about 2,000 distinct
values); a larger drawer pairs an even spread of its values, and the index says so."""

THREE_PART_BUDGET = 40_000_000
"""Most three-part evaluations per kind (values of triples, or look-ups into the two-part
networks; about a second); beyond it the three-part layer stops, and the index says so."""

_KIND_WORD = {"R": "resistor", "C": "capacitor"}


def _triples(n: int) -> Iterator[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """Every i ≤ j ≤ k < n (combinations with repetition), in chunks of index arrays."""
    i, j = np.triu_indices(n)
    count = n - j
    ends = np.cumsum(count)
    first = 0
    while first < len(i):
        last = int(np.searchsorted(ends, ends[first] - count[first] + TRIPLE_CHUNK, "right"))
        last = max(last, first + 1)
        ii, jj, cc = i[first:last], j[first:last], count[first:last]
        i3, j3 = np.repeat(ii, cc), np.repeat(jj, cc)
        starts = np.cumsum(cc) - cc
        k3 = j3 + (np.arange(int(cc.sum())) - np.repeat(starts, cc))
        yield i3, j3, k3
        first = last


_TAKEN = 127
"""Bucket code of a network in a closed layer (fewer parts): it stays."""


class _Buckets:
    """One network per value bucket: bucket b holds [v0 (1+ρ)^b, v0 (1+ρ)^(b+1)).

    Layers are filled in order of part count and a bucket taken by a closed
    layer stays taken, so the fewest parts win; within a layer the steadiest
    network wins (``steadiness``), else the first put there. Only practical
    networks go in (``may_join``).
    """

    def __init__(self, groups: list[list[Part]], kind: str, resolution: float):
        values = _group_values(groups)
        self.kind = kind
        if len(values):
            self.v0 = float(values.min()) / (MAX_PARTS + 1)  # below anything reachable
            self.step = math.log1p(resolution)
            count = int(math.log(values.max() * (MAX_PARTS + 1) / self.v0) / self.step) + 2
        else:
            self.v0, self.step, count = 1.0, 1.0, 1
        self.code = np.full(count, -1, dtype=np.int8)  # -1 free, _TAKEN by a closed layer
        self.usage = np.full((count, MAX_PARTS), -1, dtype=np.int32)
        self._winner = np.zeros(count, dtype=np.int64)
        self.layers: list[tuple[np.ndarray, np.ndarray]] = []  # (topology, usage), by value
        self._polarised = np.array([g[0].polarised for g in groups], dtype=bool)
        self._any_polarised = bool(self._polarised.any())  # asked on every put
        self._stability = _group_stability(groups)
        # Steadiness is judged by each group's first (closest) line: cheap, and the same
        # as the full count unless a network takes several parts of one mixed group.
        self._ranges = tuple(np.append(t[:, 0], np.nan) for t in _part_ranges(groups))
        spread = (self._ranges[1][:-1] - self._ranges[0][:-1]) / values
        self._prefer = len(values) > 1 and bool(np.ptp(self._stability) > 0
                                                or np.ptp(spread) > 1e-9)
        self._best = np.full(count if self._prefer else 0, np.inf)  # each winner's steadiness

    def key(self, values: np.ndarray) -> np.ndarray:
        k = np.log(values)  # in place from here: this runs on millions of values
        k -= math.log(self.v0)
        k *= 1.0 / self.step
        return k.astype(np.int64)

    def edges(self, keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(low, high) value of each bucket."""
        return self.v0 * np.exp(keys * self.step), self.v0 * np.exp((keys + 1) * self.step)

    def free(self, keys: np.ndarray) -> np.ndarray:
        """Buckets no network has reached yet."""
        return self.code[keys] < 0

    def put(self, values: np.ndarray, code: int, usage: np.ndarray) -> None:
        """Networks (their values, topology ``code``, group per part) into the buckets."""
        keys = self.key(values)
        ok = self.code[keys] != _TAKEN if self._prefer else self.code[keys] < 0
        if self._any_polarised:
            ok &= _practical(self.kind, code, [self._polarised[usage[:, k]]
                                               for k in range(usage.shape[1])])
        rows = np.flatnonzero(ok)
        if self._prefer:
            use = np.full((rows.size, MAX_PARTS), -1, dtype=np.int32)
            use[:, : usage.shape[1]] = usage[rows]
            codes = np.full(rows.size, code)
            score = steadiness(self._stability[usage[rows]].max(axis=1),
                               *(network_values(codes, t[use], self.kind)
                                 for t in self._ranges), values[rows])
            np.minimum.at(self._best, keys[rows], score)
            rows = rows[score <= self._best[keys[rows]]]
        at = keys[rows]
        self._winner[at] = rows
        first = self._winner[at] == rows
        rows, at = rows[first], at[first]
        self.code[at] = code
        self.usage[at, : usage.shape[1]] = usage[rows]

    def close_layer(self) -> None:
        """The layer's networks in bucket order, which is value order; its buckets taken."""
        keys = np.flatnonzero((self.code >= 0) & (self.code != _TAKEN))
        self.layers.append((self.code[keys], self.usage[keys]))
        self.code[keys] = _TAKEN
        self.usage[keys] = -1
        self._best[:] = np.inf


def _spread(n: int, pairs: int) -> np.ndarray:
    """Indices of an even spread of ``n`` sorted values small enough for ``pairs`` pairs."""
    keep = min(n, int((math.isqrt(8 * pairs + 1) - 1) // 2))
    spread = np.linspace(0, n - 1, keep).round().astype(np.int64)
    return spread[np.diff(spread, prepend=-1) > 0]  # sorted: repeats are neighbours


def _enumerate_triples(buckets: _Buckets, gv: np.ndarray, gq: np.ndarray,
                       kind: str) -> Iterator[float]:
    """Every triple of groups in every three-part shape (cheap while groups are few)."""
    n = len(gv)
    ser, par = combiners(kind)
    total, done = n * (n + 1) * (n + 2) // 6, 0
    for i, j, k in _triples(n):
        done += len(i)
        # i ≤ j ≤ k: a group used twice or three times is always a run of equal indices.
        ok = np.where(i == j, gq[i] >= 2 + (j == k), (j != k) | (gq[j] >= 2))
        use = np.stack([i[ok], j[ok], k[ok]], axis=1).astype(np.int32)
        v = [gv[use[:, col]] for col in range(3)]
        buckets.put(ser(ser(v[0], v[1]), v[2]), SERIES3, use)
        buckets.put(par(par(v[0], v[1]), v[2]), PARALLEL3, use)
        for x, y, z in ((0, 1, 2), (0, 2, 1), (1, 2, 0)):
            order = use[:, [x, y, z]]
            buckets.put(ser(par(v[x], v[y]), v[z]), PAR_THEN_SERIES, order)
            buckets.put(par(ser(v[x], v[y]), v[z]), SER_THEN_PARALLEL, order)
        yield done / total


def _look_up_triples(buckets: _Buckets, gv: np.ndarray, gq: np.ndarray, kind: str,
                     pairs: dict[int, tuple[np.ndarray, np.ndarray]],
                     free: np.ndarray, budget: int) -> Generator[float, None, int]:
    """Fill free buckets with a two-part network and one more part, by sorted look-ups.

    Every three-part network is a two-part one (``pairs``: code -> sorted
    values, their groups) with a part ``c`` in series or in parallel. For each
    part and each bucket still free, the two-part value that would land there
    is looked up in the sorted values. Returns the number of parts tried as
    ``c`` (all of them unless ``budget`` look-ups ran out first).
    """
    series, parallel = combiners(kind)
    t_lo, t_hi = buckets.edges(free)
    shapes = {(SERIES2, True): SERIES3, (PARALLEL2, True): PAR_THEN_SERIES,
              (SERIES2, False): SER_THEN_PARALLEL, (PARALLEL2, False): PARALLEL3}
    for c, vc in enumerate(gv):
        # Drop the buckets filled meanwhile (a filled bucket stays filled), so each part
        # below looks up only free ones; a bucket's upper edge is the next one's lower edge.
        keep = buckets.free(free)
        free, t_lo, t_hi = free[keep], t_lo[keep], t_hi[keep]
        next_free = np.append(np.diff(free) == 1, False)
        for outer_series in (True, False):
            outer = series if outer_series else parallel
            # Adding c raises the value; adding it reciprocally keeps it below c.
            if outer is _add:
                rows = slice(int(np.searchsorted(t_lo, vc, "right")), len(free))
            else:
                rows = slice(0, int(np.searchsorted(t_hi, vc, "left")))
            count = rows.stop - rows.start
            budget -= 2 * count + 1_000  # and a round of numpy calls costs something too
            if budget < 0:
                return c
            lo, hi = t_lo[rows], t_hi[rows]
            want_lo, want_hi = (lo - vc, hi - vc) if outer is _add else (
                lo * vc / (vc - lo), hi * vc / (vc - hi))
            joined = next_free[rows].copy()
            joined[-1:] = False  # the next bucket is not among these rows
            alone = ~joined
            for pair_code, (values, groups) in pairs.items():
                first = np.searchsorted(values, want_lo)
                stop = np.empty_like(first)
                stop[joined] = first[1:][joined[:-1]]
                stop[alone] = np.searchsorted(values, want_hi[alone])
                found = np.flatnonzero(stop > first)
                # Either end of the range of fitting pairs, whichever leaves c in stock
                # (c in stock MAX_PARTS times always is).
                pick = first[found]
                if gq[c] < MAX_PARTS:
                    short = gq[c] < 1 + (groups[pick] == c).sum(axis=1)
                    pick[short] = stop[found[short]] - 1
                    pick = pick[gq[c] >= 1 + (groups[pick] == c).sum(axis=1)]
                use = np.concatenate([groups[pick], np.full((len(pick), 1), c, np.int32)],
                                     axis=1)
                buckets.put(outer(values[pick], vc), shapes[(pair_code, outer_series)], use)
        yield (c + 1) / len(gv)
    return len(gv)


def _enumeration_cheaper(triple_values: int, look_ups: int) -> bool:
    """Enumerate all triples when that is less work than the look-ups (few distinct values
    spread far apart), and within the budget."""
    return triple_values <= min(look_ups, THREE_PART_BUDGET)


def build_index(parts: Iterable[Part], kind: NetworkKind, max_parts: int = 2,
                resolution: float = RESOLUTION) -> Generator[float, None, NetworkIndex]:
    """Build the index of ``kind`` networks with up to ``max_parts`` parts, step by step.

    A generator (the window runs it in a worker and shows progress): it yields
    the fraction done (0…1) and returns the ``NetworkIndex``. Use
    ``NetworkIndex`` via ``index_of`` when no progress is wanted.

    Work and memory are bounded whatever the drawer: each layer holds at most
    one network per bucket, at most ``PAIR_LIMIT`` pairs of values are
    combined, and the three-part layer is enumerated over all triples while
    they are few, else filled by look-ups within ``THREE_PART_BUDGET``.
    """
    if not 1 <= max_parts <= MAX_PARTS:
        raise InputError(f"networks may have 1 to {MAX_PARTS} parts", text=str(max_parts),
                         what="network size")
    groups = group_parts(parts, kind)
    n = len(groups)
    gv, gq = _group_values(groups), _group_quantities(groups)
    buckets = _Buckets(groups, kind, resolution)
    notes: list[str] = []
    word = _KIND_WORD[kind]
    buckets.put(gv, SINGLE, np.arange(n, dtype=np.int32)[:, None])
    buckets.close_layer()
    yield 0.05
    if max_parts >= 2:
        members = _spread(n, PAIR_LIMIT)
        if len(members) < n:
            notes.append(f"{n:,} {word} values: two- and three-part networks are made from "
                         f"an even spread of {len(members):,} of them")
        i, j = (members[x] for x in np.triu_indices(len(members)))
        use = np.stack([i, j], axis=1).astype(np.int32)
        use = use[within_stock(use, gq)]
        del i, j
        ser, par = combiners(kind)
        a, b = gv[use[:, 0]], gv[use[:, 1]]
        pair_values = {SERIES2: ser(a, b), PARALLEL2: par(a, b)}
        del a, b
        for code, values in pair_values.items():
            buckets.put(values, code, use)
        buckets.close_layer()
        yield 0.15
    if max_parts >= 3 and n:
        lowest, highest = buckets.key(np.array([gv.min() / MAX_PARTS, gv.max() * MAX_PARTS]))
        free = lowest + np.flatnonzero(buckets.free(np.arange(lowest, highest + 1)))
        triples = 8 * (n * (n + 1) * (n + 2) // 6)
        if _enumeration_cheaper(triples, 4 * n * len(free)):
            steps: Generator[float, None, Any] = _enumerate_triples(buckets, gv, gq, kind)
            yield from _rescaled(steps, 0.15, 0.75)
        else:
            pairs = {}
            for code, values in pair_values.items():
                order = np.argsort(values)
                pairs[code] = (values[order], use[order])
            del pair_values
            tried = yield from _rescaled(_look_up_triples(buckets, gv, gq, kind, pairs, free,
                                                          THREE_PART_BUDGET), 0.15, 0.75)
            if tried < n:
                notes.append(f"{n:,} {word} values: three-part networks were looked for with "
                             f"{tried:,} of them as the third part (work limit)")
        buckets.close_layer()
    yield 0.9
    layers = buckets.layers
    topology = np.concatenate([t for t, _ in layers])
    usage = np.concatenate([u for _, u in layers])
    layer_ends = [int(e) for e in np.cumsum([len(t) for t, _ in layers])]
    index = NetworkIndex(kind, groups, topology, usage, layer_ends, max_parts, notes)
    yield 1.0
    return index


def run_to_end(steps: Generator[float, None, Any]) -> Any:
    """Drive a progress generator to its end and return its result."""
    while True:
        try:
            next(steps)
        except StopIteration as done:
            return done.value


def index_of(parts: Iterable[Part], kind: NetworkKind, max_parts: int = 2) -> NetworkIndex:
    """``build_index`` without progress reports."""
    return run_to_end(build_index(parts, kind, max_parts))


# ---------------------------------------------------------------- one drawer

@dataclass(frozen=True)
class DrawerIndex:
    """Everything a search needs from one drawer: resistor and capacitor indexes, pots."""

    resistors: NetworkIndex
    capacitors: NetworkIndex
    pots: tuple[Part, ...]

    @property
    def notes(self) -> list[str]:
        """What a very large drawer's networks left out (empty for ordinary drawers)."""
        return [*self.resistors.notes, *self.capacitors.notes]

    def covers(self, max_resistors: int, max_capacitors: int) -> bool:
        """True if this index holds networks as large as a search asks for."""
        return (self.resistors.max_parts >= max_resistors
                and self.capacitors.max_parts >= max_capacitors)


def _rescaled(steps: Generator[float, None, T], start: float,
              width: float) -> Generator[float, None, T]:
    """Re-yield ``steps``' progress mapped onto start … start + width; return its result."""
    while True:
        try:
            fraction = next(steps)
        except StopIteration as done:
            return done.value
        yield start + width * fraction


def build_drawer_index(parts: Iterable[Part], max_resistors: int = 2, max_capacitors: int = 2
                       ) -> Generator[float, None, DrawerIndex]:
    """``build_index`` for resistors and capacitors, yielding overall progress (0…1)."""
    parts = list(parts)
    # Three-resistor layers dominate the work; weigh the progress accordingly.
    share = 0.9 if max_resistors >= 3 else 0.5
    resistors = yield from _rescaled(build_index(parts, "R", max_resistors), 0.0, share)
    capacitors = yield from _rescaled(build_index(parts, "C", max_capacitors), share,
                                      1.0 - share)
    return DrawerIndex(resistors, capacitors, drawer_pots(parts))


def drawer_pots(parts: Iterable[Part]) -> tuple[Part, ...]:
    """The pots in stock, one line per value, tolerance and taper, by value."""
    pots: dict[tuple[Any, ...], Part] = {}
    for part in parts:
        if part.kind == "P" and part.quantity > 0:
            pots.setdefault((part.value, part.tolerance, part.taper), part)
    return tuple(sorted(pots.values(), key=lambda p: p.value))


def drawer_index(parts: Iterable[Part], max_resistors: int = 2,
                 max_capacitors: int = 2) -> DrawerIndex:
    """``build_drawer_index`` without progress reports."""
    return run_to_end(build_drawer_index(parts, max_resistors, max_capacitors))
