"""Networks of stock parts: every value the drawer can make from one, two or three parts.

A network is a small tree (``Node``) of stock parts in series and in parallel.
``NetworkIndex`` holds every network the drawer can build for one kind of part
as sorted numpy arrays, one layer per part count, so a search looks values up
with ``numpy.searchsorted`` instead of enumerating combinations.

Decisions:

* Equivalent lines (same kind, value, tolerance, dielectric) are one *group*
  whose quantity is the sum of the lines; the index is built over groups and a
  network's parts are handed out to concrete lines only when a candidate is
  shown (``NetworkIndex.nodes``). So two bins of 10 kΩ never give two copies
  of every network.
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

from collections import Counter
from collections.abc import Callable, Generator, Iterable, Iterator
from dataclasses import dataclass
from typing import Any, Literal, TypeVar

import numpy as np

from core.errors import InputError
from core.parts.drawer import DIELECTRIC_STABILITY, Part
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
class Node:
    """A single stock part, or parts in ``series`` / ``parallel`` (child nodes).

    ``value`` is in Ω for resistors, F for capacitors (series capacitors add
    reciprocally).
    """

    part: Part | None = None
    series: tuple[Node, ...] = ()
    parallel: tuple[Node, ...] = ()

    def __post_init__(self) -> None:
        shapes = (self.part is not None) + bool(self.series) + bool(self.parallel)
        if shapes != 1 or len(self.series) == 1 or len(self.parallel) == 1:
            raise InputError("a network node is one part, or two or more nodes in series "
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

    def to_json(self) -> dict[str, Any]:
        """The contract's NODE: ``{"line": N}``, ``{"series": [...]}``, ``{"parallel": [...]}``."""
        if self.part is not None:
            return {"line": self.part.stock_line}
        key = "series" if self.series else "parallel"
        return {key: [c.to_json() for c in (self.series or self.parallel)]}

    def describe(self, digits: int = 3) -> str:
        """``10 kΩ + 4.7 kΩ``, ``22 nF ∥ 10 nF``, ``(10 kΩ ∥ 10 kΩ) + 4.7 kΩ``."""
        if self.part is not None:
            return format_part_value(self.part.value, self.part.kind, digits)
        sign = " + " if self.series else " ∥ "
        shown = [c.describe(digits) if c.part is not None else f"({c.describe(digits)})"
                 for c in (self.series or self.parallel)]
        return sign.join(shown)


def single(part: Part) -> Node:
    return Node(part=part)


# ---------------------------------------------------------------- the index

def _group_key(part: Part) -> tuple[Any, ...]:
    return (part.kind, part.value, part.tolerance.minus, part.tolerance.plus, part.dielectric)


def group_parts(parts: Iterable[Part], kind: str) -> list[list[Part]]:
    """Lines of ``kind`` with stock, grouped when equivalent; groups sorted by value."""
    groups: dict[tuple[Any, ...], list[Part]] = {}
    for part in parts:
        if part.kind == kind and part.quantity > 0:
            groups.setdefault(_group_key(part), []).append(part)
    return [sorted(g, key=lambda p: p.stock_line)
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
    """Parts in stock per group, over its equivalent lines."""
    return np.array([sum(p.quantity for p in g) for g in groups], dtype=np.int64)


def network_values(topology: np.ndarray, usage: np.ndarray, group_values: np.ndarray,
                   kind: str) -> np.ndarray:
    """Values of networks given by topology codes and group indices (Ω or F).

    ``group_values`` may be nominal values or tolerance extremes; both series
    and parallel combinations rise with every part, so extremes map to extremes.
    """
    padded = np.append(group_values, np.nan)  # index -1 -> NaN, never used by a topology
    a, b, c = (padded[usage[:, k]] for k in range(3))
    ser, par = combiners(kind)
    out = np.empty(len(topology))
    for code, fn in ((SINGLE, lambda: a), (SERIES2, lambda: ser(a, b)),
                     (PARALLEL2, lambda: par(a, b)), (SERIES3, lambda: ser(ser(a, b), c)),
                     (PARALLEL3, lambda: par(par(a, b), c)),
                     (PAR_THEN_SERIES, lambda: ser(par(a, b), c)),
                     (SER_THEN_PARALLEL, lambda: par(ser(a, b), c))):
        m = topology == code
        if m.any():
            out[m] = fn()[m]
    return out


class NetworkIndex:
    """Every network of one part kind the drawer can build, as sorted numpy arrays.

    Arrays (one entry per network, layer by layer: all single parts, then all
    pairs, then all triples; sorted by value within a layer):
    ``values`` (Ω or F), ``lo``/``hi`` (value at the parts' tolerance
    extremes), ``stability`` (dielectric class of the worst capacitor, 0 for
    resistors), ``topology`` (codes above), ``usage`` (int16, group index per
    part, -1 padded). ``layers[p]`` is the slice of ``p``-part networks.
    """

    def __init__(self, kind: NetworkKind, groups: list[list[Part]], values: np.ndarray,
                 topology: np.ndarray, usage: np.ndarray, layer_ends: list[int],
                 max_parts: int):
        self.kind = kind
        self.groups = groups
        self.max_parts = max_parts
        self.group_values = _group_values(groups)
        self.group_lo, self.group_hi = (np.array([g[0].value_range[k] for g in groups],
                                                 dtype=float) for k in (0, 1))
        self.group_quantity = _group_quantities(groups)
        self.values = values
        self.topology = topology
        self.usage = usage
        self.lo = network_values(topology, usage, self.group_lo, kind)
        self.hi = network_values(topology, usage, self.group_hi, kind)
        self.stability = np.append(_group_stability(groups), 0.0)[usage].max(axis=1,
                                                                             initial=0.0)
        self.part_count = _PART_COUNT[topology]
        starts = [0, *layer_ends[:-1]]
        self.layers = {p + 1: slice(s, e) for p, (s, e) in enumerate(zip(starts, layer_ends,
                                                                        strict=True))}

    def __len__(self) -> int:
        return len(self.values)

    @property
    def nbytes(self) -> int:
        """Memory held by the index arrays (bytes)."""
        return sum(a.nbytes for a in (self.values, self.lo, self.hi, self.stability, self.topology,
                                      self.usage, self.part_count))

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
            used = use >= 0
            quantity = self.group_quantity[np.where(used, use, 0)]
            over = np.zeros(rows.size, dtype=bool)
            for k in range(use.shape[1]):
                times = (use == use[:, k:k + 1]).sum(axis=1)
                over |= used[:, k] & (times > quantity[:, k])
            bad[rows] = over
        return bad

    def nodes(self, entries: Iterable[int], taken: Counter[int] | None = None) -> list[Node]:
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


def _tree(code: int, leaves: list[Node]) -> Node:
    if code == SINGLE:
        return leaves[0]
    a, b = leaves[0], leaves[1]
    c = leaves[2] if len(leaves) > 2 else None
    shapes = {
        SERIES2: lambda: Node(series=(a, b)),
        PARALLEL2: lambda: Node(parallel=(a, b)),
        SERIES3: lambda: Node(series=(a, b, c)),
        PARALLEL3: lambda: Node(parallel=(a, b, c)),
        PAR_THEN_SERIES: lambda: Node(series=(Node(parallel=(a, b)), c)),
        SER_THEN_PARALLEL: lambda: Node(parallel=(Node(series=(a, b)), c)),
    }
    return shapes[code]()


# ---------------------------------------------------------------- building

TRIPLE_CHUNK = 300_000
"""Three-part combinations evaluated at once (bounds memory for very large drawers)."""


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


def build_index(parts: Iterable[Part], kind: NetworkKind, max_parts: int = 2,
                resolution: float = RESOLUTION) -> Generator[float, None, NetworkIndex]:
    """Build the index of ``kind`` networks with up to ``max_parts`` parts, step by step.

    A generator (the window runs it in a worker and shows progress): it yields
    the fraction done (0…1) and returns the ``NetworkIndex``. Use
    ``NetworkIndex`` via ``index_of`` when no progress is wanted.
    """
    if not 1 <= max_parts <= MAX_PARTS:
        raise InputError(f"networks may have 1 to {MAX_PARTS} parts", text=str(max_parts),
                         what="network size")
    groups = group_parts(parts, kind)
    n = len(groups)
    gv, gq = _group_values(groups), _group_quantities(groups)
    if n:
        # Bucket b holds values in [v0 (1+ρ)^b, v0 (1+ρ)^(b+1)); v0 below anything reachable.
        v0 = gv.min() / (MAX_PARTS + 1)
        step = np.log1p(resolution)
        buckets = int(np.log(gv.max() * (MAX_PARTS + 1) / v0) / step) + 2
    else:
        v0, step, buckets = 1.0, 1.0, 1
    winner = np.full(buckets, -1, dtype=np.int64)
    occupied = np.zeros(buckets, dtype=bool)
    code_table = np.full(buckets, -1, dtype=np.int8)
    usage_table = np.full((buckets, 3), -1, dtype=np.int16)
    layers: list[tuple[np.ndarray, np.ndarray]] = []  # (topology, usage) per layer, sorted

    polarised = np.array([g[0].polarised for g in groups], dtype=bool)
    stability = _group_stability(groups)
    lo_hi = [np.array([g[0].value_range[k] for g in groups], dtype=float) for k in (0, 1)]
    prefer = n > 1 and (np.ptp(stability) > 0 or np.ptp((lo_hi[1] - lo_hi[0]) / gv) > 0)
    best = np.full(buckets if prefer else 0, np.inf)  # steadiness of each bucket's winner

    def scatter(use: np.ndarray, blocks: list[tuple[int, tuple[int, ...], Any]]) -> None:
        """Put practical networks into the free buckets, the steadiest where they meet;
        ``blocks`` are (code, column order, values())."""
        winner[:] = -1
        rows = len(use)
        for b, (code, order, values_of) in enumerate(blocks):
            values = values_of()
            keys = (np.log(values / v0) / step).astype(np.int64)
            ok = ~occupied[keys]
            if polarised.any():
                ok &= _practical(kind, code, [polarised[use[:, k]] for k in order])
            free = np.flatnonzero(ok)
            if prefer:
                leaves = np.full((free.size, 3), -1, dtype=np.int16)
                leaves[:, : len(order)] = use[free][:, order]
                codes = np.full(free.size, code)
                score = steadiness(stability[leaves[:, : len(order)]].max(axis=1),
                                   *(network_values(codes, leaves, x, kind) for x in lo_hi),
                                   values[free])
                np.minimum.at(best, keys[free], score)
                free = free[score <= best[keys[free]]]
            winner[keys[free]] = b * rows + free
        hit = np.flatnonzero(winner >= 0)
        block, row = np.divmod(winner[hit], rows)
        for b, (code, order, _) in enumerate(blocks):
            m = block == b
            code_table[hit[m]] = code
            usage_table[hit[m], : len(order)] = use[row[m]][:, order]

    def close_layer() -> None:
        """The layer's entries in bucket order, which is value order; its buckets taken."""
        keys = np.flatnonzero(code_table >= 0)
        layers.append((code_table[keys].copy(), usage_table[keys].copy()))
        occupied[keys] = True
        best[:] = np.inf
        code_table[:] = -1
        usage_table[:] = -1

    ser, par = combiners(kind)
    scatter(np.arange(n, dtype=np.int16)[:, None], [(SINGLE, (0,), lambda: gv)])
    close_layer()
    yield 0.05
    if max_parts >= 2:
        i, j = np.triu_indices(n)
        ok = (i != j) | (gq[i] >= 2)
        use = np.stack([i[ok], j[ok]], axis=1).astype(np.int16)
        a, b = gv[use[:, 0]], gv[use[:, 1]]
        scatter(use, [(SERIES2, (0, 1), lambda: ser(a, b)),
                      (PARALLEL2, (0, 1), lambda: par(a, b))])
        close_layer()
        yield 0.15
    if max_parts >= 3:
        total = n * (n + 1) * (n + 2) // 6
        done = 0
        for i, j, k in _triples(n):
            done += len(i)
            ok = np.where(i == j, gq[i] >= 2 + (j == k), (j != k) | (gq[j] >= 2))
            use = np.stack([i[ok], j[ok], k[ok]], axis=1).astype(np.int16)
            del i, j, k, ok
            v = [gv[use[:, col]] for col in range(3)]
            blocks: list[tuple[int, tuple[int, ...], Any]] = [
                (SERIES3, (0, 1, 2), lambda v=v: ser(ser(v[0], v[1]), v[2])),
                (PARALLEL3, (0, 1, 2), lambda v=v: par(par(v[0], v[1]), v[2]))]
            for x, y, z in ((0, 1, 2), (0, 2, 1), (1, 2, 0)):
                blocks.append((PAR_THEN_SERIES, (x, y, z),
                               lambda v=v, x=x, y=y, z=z: ser(par(v[x], v[y]), v[z])))
                blocks.append((SER_THEN_PARALLEL, (x, y, z),
                               lambda v=v, x=x, y=y, z=z: par(ser(v[x], v[y]), v[z])))
            scatter(use, blocks)
            yield 0.15 + 0.75 * done / total
        close_layer()
    yield 0.9
    topology = np.concatenate([t for t, _ in layers]) if layers else np.zeros(0, np.int8)
    usage = (np.concatenate([u for _, u in layers]) if layers
             else np.zeros((0, 3), dtype=np.int16))
    layer_ends = list(np.cumsum([len(t) for t, _ in layers]))
    values = network_values(topology, usage, gv, kind)
    index = NetworkIndex(kind, groups, values, topology, usage, [int(e) for e in layer_ends],
                         max_parts)
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
    pots: dict[tuple[Any, ...], Part] = {}
    for part in parts:
        if part.kind == "P" and part.quantity > 0:
            pots.setdefault((*_group_key(part), part.taper), part)
    return DrawerIndex(resistors, capacitors, tuple(sorted(pots.values(),
                                                           key=lambda p: p.value)))


def drawer_index(parts: Iterable[Part], max_resistors: int = 2,
                 max_capacitors: int = 2) -> DrawerIndex:
    """``build_drawer_index`` without progress reports."""
    return run_to_end(build_drawer_index(parts, max_resistors, max_capacitors))
