"""The network index: every network of one part kind a drawer can build, as sorted numpy
arrays one layer per part count, looked up with ``numpy.searchsorted``; a drawer's DrawerIndex.

Decisions:

* Lines alike for a network (same kind, value and dielectric, any tolerance)
  are one *group* whose quantity is the sum of the lines; the index is built
  over these distinct values and a network's parts are handed out to concrete
  lines, closest tolerance first, only when a candidate is shown
  (``NetworkIndex.nodes``). So two bins of 10 kΩ, or one value in six
  tolerance grades, never multiply the networks.
* Values that agree within ``RESOLUTION`` (relative, 0.01 %: far inside any
  resistor's or capacitor's tolerance) are one entry; the network with the
  fewest parts is kept. This bounds the three-resistor layer of a full E24 kit
  (8 × 818 805 combinations) to about 170 000 entries and makes every layer
  sorted for free (entries are kept in bucket order).
* A network never needs more of a group than the drawer holds (quantity rule
  within one network); across the networks of one candidate the search checks
  it with ``NetworkIndex.overused``.
* Where networks of one part count share a bucket, the steadiest wins:
  the best dielectric class of its worst capacitor, then the smallest
  relative spread (``steadiness``), so a 1 % line is not hidden behind a 5 %
  line of the same value.
"""

from __future__ import annotations

import copy
from collections import Counter
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np

from core.errors import InputError
from core.parts.networks import (
    MAX_PARTS,
    PART_COUNT,
    Network,
    NetworkKind,
    network_values,
    single,
    tree,
)
from core.parts.part import DIELECTRIC_STABILITY, Part

RESOLUTION = 1e-4
"""Relative width of one value bucket: networks closer than this are one entry."""


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


def group_values(groups: list[list[Part]]) -> np.ndarray:
    """Nominal value of each group (Ω or F)."""
    return np.array([g[0].value for g in groups], dtype=float)


def group_stability(groups: list[list[Part]]) -> np.ndarray:
    """Dielectric class of each group (0 steadiest, ``DIELECTRIC_STABILITY``); resistors 0."""
    return np.array([DIELECTRIC_STABILITY.get(g[0].dielectric, 0) if g[0].kind == "C" else 0
                     for g in groups], dtype=float)


def steadiness(stability: np.ndarray, lo: np.ndarray, hi: np.ndarray,
               values: np.ndarray) -> np.ndarray:
    """How far a network may stray, lower is better: 10 × the dielectric class of its
    worst capacitor (0 for resistors) plus its relative spread (hi − lo) / value."""
    return 10.0 * stability + (hi - lo) / values


def group_quantities(groups: list[list[Part]]) -> np.ndarray:
    """Parts in stock per group, over its lines."""
    return np.array([sum(p.quantity for p in g) for g in groups], dtype=np.int64)


def part_ranges(groups: list[list[Part]]) -> tuple[np.ndarray, np.ndarray]:
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


class NetworkIndex:
    """Every network of one part kind the drawer can build, as sorted numpy arrays.

    Arrays (one entry per network, layer by layer: all single parts, then all
    pairs, then all triples; sorted by value within a layer):
    ``values`` (Ω or F), ``lo``/``hi`` (value at the parts' tolerance
    extremes, with each group's closest-tolerance lines used first),
    ``stability`` (dielectric class of the worst capacitor, 0 for resistors),
    ``topology`` (codes above), ``usage`` (int32, group index per part, -1
    padded). ``layers[p]`` is the slice of ``p``-part networks. ``notes`` say
    what a very large drawer left out (see core.parts.index_build).
    """

    def __init__(self, kind: NetworkKind, groups: list[list[Part]], topology: np.ndarray,
                 usage: np.ndarray, layer_ends: list[int], max_parts: int,
                 notes: list[str] | None = None):
        self.kind = kind
        self.groups = groups
        self.max_parts = max_parts
        self.notes = list(notes or [])
        self.group_values = group_values(groups)
        self.group_quantity = group_quantities(groups)
        self.topology = topology
        self.usage = usage
        used = usage >= 0
        at = (np.where(used, usage, 0), _ranks(usage))  # each part: its group, its rank there
        part_lo, part_hi = part_ranges(groups)
        self.values = network_values(topology, np.where(used, self.group_values[at[0]], np.nan),
                                     kind)
        self.lo = network_values(topology, np.where(used, part_lo[at], np.nan), kind)
        self.hi = network_values(topology, np.where(used, part_hi[at], np.nan), kind)
        self.stability = np.append(group_stability(groups), 0.0)[usage].max(axis=1,
                                                                             initial=0.0)
        self.part_count = PART_COUNT[topology]
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
        if not np.array_equal(group_values(groups), self.group_values):
            raise ValueError("the index was built for other parts")
        clone = copy.copy(self)
        clone.groups = groups
        clone.group_quantity = group_quantities(groups)
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
            out.append(tree(int(self.topology[entry]), leaves))
        return out


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
