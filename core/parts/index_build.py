"""Building the network index layer by layer with bounded work (value buckets, pairs, triples
by enumeration or by look-ups), with progress, for one kind or a whole drawer.

Decisions:

* Three-part networks are every triple while the distinct values are few;
  otherwise each one is a two-part network plus a part in series or in
  parallel, found by sorted look-ups for the buckets still free. Pairs and
  look-ups have fixed limits, so a huge drawer costs bounded work and memory
  and the index's ``notes`` say what was left out.
* Only practical networks: a polarised capacitor (electrolytic, tantalum) is
  never in series with another capacitor (``core.parts.networks.may_join``).
"""

from __future__ import annotations

import math
from collections.abc import Generator, Iterable, Iterator
from typing import Any, TypeVar

import numpy as np

from core.errors import InputError
from core.parts.network_index import (
    RESOLUTION,
    DrawerIndex,
    NetworkIndex,
    group_parts,
    group_quantities,
    group_stability,
    group_values,
    part_ranges,
    steadiness,
    within_stock,
)
from core.parts.networks import (
    MAX_PARTS,
    PAR_THEN_SERIES,
    PARALLEL2,
    PARALLEL3,
    SER_THEN_PARALLEL,
    SERIES2,
    SERIES3,
    SINGLE,
    NetworkKind,
    add,
    combiners,
    network_values,
    practical,
)
from core.parts.part import Part

T = TypeVar("T")

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
        values = group_values(groups)
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
        self._stability = group_stability(groups)
        # Steadiness is judged by each group's first (closest) line: cheap, and the same
        # as the full count unless a network takes several parts of one mixed group.
        self._ranges = tuple(np.append(t[:, 0], np.nan) for t in part_ranges(groups))
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
            ok &= practical(self.kind, code, [self._polarised[usage[:, k]]
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
            if outer is add:
                rows = slice(int(np.searchsorted(t_lo, vc, "right")), len(free))
            else:
                rows = slice(0, int(np.searchsorted(t_hi, vc, "left")))
            count = rows.stop - rows.start
            budget -= 2 * count + 1_000  # and a round of numpy calls costs something too
            if budget < 0:
                return c
            lo, hi = t_lo[rows], t_hi[rows]
            want_lo, want_hi = (lo - vc, hi - vc) if outer is add else (
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
    gv, gq = group_values(groups), group_quantities(groups)
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
