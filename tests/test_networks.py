"""Networks of stock parts: values, quantity rule, completeness of the index.

Reference formulas: series resistances add, parallel conductances add;
parallel capacitances add, series capacitances add reciprocally (Horowitz &
Hill, The Art of Electronics, 3rd ed., §1.2.1 and §1.4.1). The completeness
check enumerates every network of a small drawer with plain nested loops.
"""

from __future__ import annotations

import itertools
import math
from collections import Counter
from collections.abc import Generator
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from core.errors import InputError
from core.parts.index_build import build_drawer_index, build_index, index_of
from core.parts.network_index import RESOLUTION, electrical_key
from core.parts.networks import Network
from core.parts.part import Part
from core.units import Tolerance

FIVE = Tolerance(0.05, 0.05)


def part(kind: str, value: float, quantity: int = 5, line: int = 2,
         tolerance: Tolerance = FIVE) -> Part:
    return Part(kind, value, tolerance, quantity, location=f"bin {line}", line=line)


def test_node_values_follow_the_textbook_rules() -> None:
    # Horowitz & Hill §1.2.1: 10k + 4.7k = 14.7k; 10k ∥ 10k = 5k.
    r1, r2 = Network(part=part("R", 10e3)), Network(part=part("R", 4.7e3, line=3))
    assert Network(series=(r1, r2)).value == pytest.approx(14.7e3, rel=1e-12)
    assert Network(parallel=(r1, r1)).value == pytest.approx(5e3, rel=1e-12)
    # §1.4.1: 22n ∥ 10n = 32n; 22n in series with 22n = 11n.
    c1, c2 = Network(part=part("C", 22e-9)), Network(part=part("C", 10e-9, line=3))
    assert Network(parallel=(c1, c2)).value == pytest.approx(32e-9, rel=1e-12)
    assert Network(series=(c1, c1)).value == pytest.approx(11e-9, rel=1e-12)
    nested = Network(series=(Network(parallel=(r1, r1)), r2))
    assert nested.value == pytest.approx(9.7e3, rel=1e-12)
    # Issue 11 §3: "+" reads as "added", so networks are written with words.
    assert nested.describe() == "(10 kΩ par 10 kΩ) ser 4.7 kΩ"
    assert Network(series=(c1, c2)).describe() == "22 nF ser 10 nF"
    assert nested.to_json() == {"series": [{"parallel": [{"line": 2}, {"line": 2}]},
                                           {"line": 3}]}
    assert nested.part_count == 3
    lo, hi = nested.value_range
    assert lo == pytest.approx(9.7e3 * 0.95, rel=1e-12)
    assert hi == pytest.approx(9.7e3 * 1.05, rel=1e-12)


def test_a_node_is_one_part_or_several_children() -> None:
    r = Network(part=part("R", 1e3))
    with pytest.raises(InputError):
        Network(series=(r,))
    with pytest.raises(InputError):
        Network()


def _series(kind: str, x: float, y: float) -> float:
    """Series resistors add, series capacitors add as reciprocals (Horowitz & Hill, The Art
    of Electronics, 3rd ed., §1.2.1, §1.4.1); in parallel the other way round."""
    return x * y / (x + y) if kind == "C" else x + y


def _parallel(kind: str, x: float, y: float) -> float:
    return x + y if kind == "C" else x * y / (x + y)


def _plain_networks(values: list[float], quantities: list[int], kind: str,
                    max_parts: int, polarised: list[bool] | None = None
                    ) -> list[tuple[float, int]]:
    """Every (value, parts) the drawer can make, by nested loops (no engine code).

    ``polarised`` marks electrolytic lines: no series join may hold one (issue 11 §3,
    common practice, no published source).
    """
    pol = polarised or [False] * len(values)

    def stocked(*lines: int) -> bool:
        return all(quantities[g] >= m for g, m in Counter(lines).items())

    def polar(*lines: int) -> bool:
        return any(pol[g] for g in lines)

    n = len(values)
    out = [(values[a], 1) for a in range(n) if stocked(a)]
    if max_parts >= 2:
        for a, b in itertools.product(range(n), repeat=2):
            if stocked(a, b):
                if not polar(a, b):
                    out.append((_series(kind, values[a], values[b]), 2))
                out.append((_parallel(kind, values[a], values[b]), 2))
    if max_parts >= 3:
        for a, b, c in itertools.product(range(n), repeat=3):
            if not stocked(a, b, c):
                continue
            x, y, z = values[a], values[b], values[c]
            out.append((_parallel(kind, _parallel(kind, x, y), z), 3))
            if not polar(a, b):
                out.append((_parallel(kind, _series(kind, x, y), z), 3))
            if not polar(a, b, c):
                out += [(_series(kind, _series(kind, x, y), z), 3),
                        (_series(kind, _parallel(kind, x, y), z), 3)]
    return out


@pytest.mark.parametrize("kind", ["R", "C"])
@pytest.mark.parametrize("max_parts", [1, 2, 3])
def test_index_reaches_every_network_of_a_small_drawer(kind: str, max_parts: int) -> None:
    values = [100.0, 220.0, 470.0, 1000.0, 3300.0] if kind == "R" else \
        [1e-9, 2.2e-9, 4.7e-9, 10e-9, 33e-9]
    quantities = [1, 2, 3, 1, 2]
    parts = [part(kind, v, q, line=i + 2) for i, (v, q) in enumerate(zip(values, quantities,
                                                                          strict=True))]
    index = index_of(parts, kind, max_parts)  # type: ignore[arg-type]
    for value, count in _plain_networks(values, quantities, kind, max_parts):
        near = np.flatnonzero(np.abs(index.values / value - 1) <= 2 * RESOLUTION)
        assert near.size, f"{value} ({count} parts) missing"
        assert index.part_count[near].min() <= count
    # Every entry recomputes from its concrete network, and respects quantities.
    nodes = [index.nodes([e])[0] for e in range(len(index))]
    for entry, node in enumerate(nodes):
        assert node.value == pytest.approx(index.values[entry], rel=1e-12)
        lo, hi = node.value_range
        assert (lo, hi) == pytest.approx((index.lo[entry], index.hi[entry]), rel=1e-12)
        used = Counter(p.stock_line for p in node.parts())
        assert all(used[p.stock_line] <= p.quantity for p in parts)


def _plain_line_networks(lines: list[tuple[float, float, int]], kind: str,
                         max_parts: int) -> set[tuple[float, int]]:
    """Every (value, parts) from concrete lines (value, tolerance, quantity), by plain loops
    over the lines: the index before it pooled tolerance grades worked this way."""
    values = [v for v, _, _ in lines]
    quantities = [q for _, _, q in lines]
    return {(round(v, 9 - math.floor(math.log10(v))), p)
            for v, p in _plain_networks(values, quantities, kind, max_parts)}


GRADED = [(100.0, 0.01, 1), (100.0, 0.05, 1), (220.0, 0.05, 2), (470.0, 0.001, 1),
          (470.0, 0.02, 2), (1000.0, 0.05, 1), (3300.0, 0.01, 1), (3300.0, 0.05, 1)]


@pytest.mark.parametrize("kind", ["R", "C"])
@pytest.mark.parametrize("look_up", [False, True])
def test_index_over_distinct_values_equals_the_plain_set(kind: str, look_up: bool,
                                                         monkeypatch: pytest.MonkeyPatch
                                                         ) -> None:
    # Tolerance grades of one value pool into one group; the networks are the same set
    # of (value, parts) as plain loops over the concrete lines give, whether the
    # three-part layer is enumerated or looked up from the two-part one.
    scale = 1.0 if kind == "R" else 1e-12
    lines = [(v * scale, t, q) for v, t, q in GRADED]
    parts = [part(kind, v, q, line=i + 2, tolerance=Tolerance(t, t))
             for i, (v, t, q) in enumerate(lines)]
    monkeypatch.setattr("core.parts.index_build._enumeration_cheaper", lambda *_: not look_up)
    index = index_of(parts, kind, 3)  # type: ignore[arg-type]
    assert len(index.groups) == 5
    plain = _plain_line_networks(lines, kind, 3)
    for value, count in plain:
        near = np.flatnonzero(np.abs(index.values / value - 1) <= 2 * RESOLUTION)
        assert near.size and index.part_count[near].min() <= count, (value, count)
    for entry in range(len(index)):
        (node,) = index.nodes([entry])
        v = node.value
        assert (round(v, 9 - math.floor(math.log10(v))), node.part_count) in plain
        assert v == pytest.approx(index.values[entry], rel=1e-12)
        # Closest tolerance first: the index's extremes are those of the lines handed out.
        assert node.value_range == pytest.approx((index.lo[entry], index.hi[entry]),
                                                   rel=1e-12)
        used = Counter(p.stock_line for p in node.parts())
        assert all(used[p.stock_line] <= p.quantity for p in parts)


@settings(max_examples=25, deadline=None, derandomize=True)
@given(st.lists(st.tuples(st.sampled_from([1.0, 1.5, 2.2, 3.3, 4.7, 6.8]),
                          st.integers(0, 4), st.integers(1, 3)), min_size=2, max_size=9),
       st.sampled_from(["R", "C"]))
def test_looked_up_three_part_layer_equals_the_plain_set(lines: list[tuple[float, int, int]],
                                                         kind: str) -> None:
    # The three-part layer filled by look-ups from the two-part one (only free buckets,
    # compacted as they fill; adjacent buckets share an edge) reaches every network that
    # nested loops over the lines reach, with no more parts, and holds nothing else.
    # E6 mantissas (IEC 60063) over five decades, repeats allowed: exact ties included.
    scale = 1.0 if kind == "R" else 1e-12
    values = [m * 10.0 ** d * scale for m, d, _ in lines]
    quantities = [q for _, _, q in lines]
    parts = [part(kind, v, q, line=i + 2) for i, (v, q) in enumerate(zip(values, quantities,
                                                                          strict=True))]
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr("core.parts.index_build._enumeration_cheaper", lambda *_: False)
        index = index_of(parts, kind, 3)  # type: ignore[arg-type]
    plain = _plain_networks(values, quantities, kind, 3)
    for value, count in plain:
        near = np.flatnonzero(np.abs(index.values / value - 1) <= 2 * RESOLUTION)
        assert near.size and index.part_count[near].min() <= count, (value, count)
    reachable = np.sort([v for v, _ in plain])
    for entry in range(len(index)):
        (node,) = index.nodes([entry])
        at = np.searchsorted(reachable, node.value)
        gap = min(abs(reachable[k] / node.value - 1) for k in (at - 1, at)
                  if 0 <= k < len(reachable))
        assert gap <= 1e-12 and node.value == pytest.approx(index.values[entry], rel=1e-12)


def test_two_networks_never_overuse_a_line() -> None:
    # overused() against a plain count of the concrete lines two networks take.
    parts = [part("R", v, q, line=i + 2, tolerance=Tolerance(t, t))
             for i, (v, t, q) in enumerate(GRADED)]
    index = index_of(parts, "R", 3)
    rng = np.random.default_rng(7)
    a, b = (rng.integers(0, len(index), 3000) for _ in range(2))
    flagged = index.overused(a, b)
    for x, y, bad in zip(a, b, flagged, strict=True):
        taken: Counter[int] = Counter()
        index.nodes([int(x)], taken)
        try:
            index.nodes([int(y)], taken)
            fits = True
        except InputError:
            fits = False
        assert bad == (not fits)


def test_a_huge_drawer_is_bounded_and_says_what_it_skipped(
        monkeypatch: pytest.MonkeyPatch) -> None:
    # Issue 10: the work of every search is bounded by design; what is skipped is said.
    monkeypatch.setattr("core.parts.index_build.PAIR_LIMIT", 45)  # ten of the values
    monkeypatch.setattr("core.parts.index_build.THREE_PART_BUDGET", 1000)
    parts = [part("R", 100.0 * 1.05 ** k, 3, line=k + 2) for k in range(40)]
    index = index_of(parts, "R", 3)
    assert any("even spread of 9 of them" in n for n in index.notes)
    assert any("three-part networks" in n and "work limit" in n for n in index.notes)
    pairs = index.usage[index.layers[2]][:, :2]
    assert len(np.unique(pairs)) <= 9
    for entry in range(len(index)):
        (node,) = index.nodes([entry])
        assert node.value == pytest.approx(index.values[entry], rel=1e-12)


def test_equivalent_lines_pool_their_quantity_and_lines_are_shared_out() -> None:
    # Two bins of one 10 kΩ each: 10k + 10k is possible, from both lines.
    parts = [part("R", 10e3, 1, line=2), part("R", 10e3, 1, line=5)]
    index = index_of(parts, "R", 3)
    assert len(index.groups) == 1
    assert index.layers[3].stop == index.layers[3].start  # three would need three parts
    entry = int(np.flatnonzero(np.isclose(index.values, 20e3))[0])
    (node,) = index.nodes([entry])
    assert sorted(p.stock_line for p in node.parts()) == [2, 5]
    # Asking for the same network twice in one candidate runs out of parts.
    taken: Counter[int] = Counter()
    index.nodes([entry], taken)
    with pytest.raises(InputError):
        index.nodes([0], taken)


def test_pots_and_empty_lines_are_not_fixed_resistors() -> None:
    parts = [part("P", 10e3, 3), part("R", 1e3, 0, line=3), part("R", 2e3, 1, line=4)]
    index = index_of(parts, "R", 2)
    assert [index.nodes([e])[0].describe() for e in range(len(index))] == ["2 kΩ"]


def test_overused_counts_across_networks() -> None:
    parts = [part("R", 10e3, 2), part("R", 4.7e3, 1, line=3)]
    index = index_of(parts, "R", 2)
    single_10k = int(np.flatnonzero(index.values == 10e3)[0])
    pair_20k = int(np.flatnonzero(np.isclose(index.values, 20e3))[0])
    single_47 = int(np.flatnonzero(index.values == 4.7e3)[0])
    a = np.array([single_10k, pair_20k, single_47])
    b = np.array([single_10k, single_10k, single_47])
    assert index.overused(a, b).tolist() == [False, True, True]


def progress_and_result(steps: Generator[float, None, Any]) -> tuple[list[float], Any]:
    """Every progress fraction a build generator yields, and what it returns."""
    fractions = []
    while True:
        try:
            fractions.append(next(steps))
        except StopIteration as done:
            return fractions, done.value


def test_build_reports_progress_and_refuses_silly_sizes() -> None:
    fractions, index = progress_and_result(build_index([part("R", 1e3)], "R", 3))
    assert fractions == sorted(fractions) and fractions[-1] == 1.0
    assert len(index) >= 1
    with pytest.raises(InputError):
        index_of([], "R", 4)
    assert len(index_of([], "C", 2)) == 0


@settings(max_examples=30, deadline=None, derandomize=True)
@given(st.lists(st.tuples(st.floats(1.0, 1e7), st.integers(0, 3)), min_size=1, max_size=7),
       st.integers(1, 3))
def test_random_drawers_give_sorted_layers_and_true_values(lines: list[tuple[float, int]],
                                                           max_parts: int) -> None:
    parts = [part("R", v, q, line=i + 2) for i, (v, q) in enumerate(lines)]
    index = index_of(parts, "R", max_parts)
    for layer in index.layers.values():
        assert np.all(np.diff(index.values[layer]) > 0)
    for entry in range(len(index)):
        (node,) = index.nodes([entry])
        assert math.isclose(node.value, index.values[entry], rel_tol=1e-12)
        assert node.part_count == index.part_count[entry]
        used = Counter(p.stock_line for p in node.parts())
        assert all(used[p.stock_line] <= p.quantity for p in parts)
    # No two entries (across layers) closer than the index resolution unless in
    # neighbouring buckets: at most two entries per 2·RESOLUTION window.
    v = np.sort(index.values)
    if len(v) > 2:
        assert np.all(v[2:] / v[:-2] - 1 > RESOLUTION * 0.999)


def test_drawer_index_progress_and_pots() -> None:
    parts = [part("R", 1e3, 2), part("R", 2.2e3, 1, line=3), part("C", 1e-9, 2, line=4),
             part("P", 10e3, 1, line=5), part("P", 10e3, 1, line=6), part("P", 50e3, 0, line=7)]
    fractions, index = progress_and_result(build_drawer_index(parts, 3, 2))
    assert fractions == sorted(fractions) and fractions[0] >= 0 and fractions[-1] == 1.0
    # Equivalent pots are one choice; a pot with quantity 0 is none.
    assert [p.stock_line for p in index.pots] == [5]
    assert index.covers(3, 2) and not index.covers(3, 3)
    assert len(index.capacitors) == 3  # 1n, 1n + 1n (0.5n), 1n ∥ 1n (2n)


def test_chunked_three_part_layer_matches_one_pass(monkeypatch: pytest.MonkeyPatch) -> None:
    parts = [part("R", v, 3, line=i + 2) for i, v in enumerate(
        [100.0, 150.0, 220.0, 330.0, 470.0, 680.0, 1e3, 1.5e3, 2.2e3, 3.3e3, 4.7e3, 6.8e3])]
    whole = index_of(parts, "R", 3)
    monkeypatch.setattr("core.parts.index_build.TRIPLE_CHUNK", 37)
    chunked = index_of(parts, "R", 3)
    for p in (1, 2, 3):
        a, b = whole.values[whole.layers[p]], chunked.values[chunked.layers[p]]
        assert len(a) == len(b)
        # The same buckets; a bucket's representative may differ within the resolution.
        assert np.allclose(a, b, rtol=2 * RESOLUTION, atol=0)


def _series_holds_polarised(node: Network) -> bool:
    """True if any series join of the tree has an electrolytic or tantalum part in it."""
    if node.part is not None:
        return False
    if node.series and any(p.polarised for p in node.parts()):
        return True
    return any(_series_holds_polarised(c) for c in (*node.series, *node.parallel))


@pytest.mark.parametrize("max_parts", [2, 3])
def test_polarised_capacitors_are_never_in_series(max_parts: int) -> None:
    # Issue 11 §3 (common practice, no published source): two capacitors in series
    # share DC by leakage, so an electrolytic one may sit reversed; in parallel it may.
    lines = [(1e-6, 2, "electrolytic"), (100e-9, 2, "film"), (47e-9, 2, "x7r"),
             (10e-6, 1, "tantalum")]
    parts = [Part("C", v, FIVE, q, dielectric=d, line=i + 2)
             for i, (v, q, d) in enumerate(lines)]
    index = index_of(parts, "C", max_parts)
    nodes = [index.nodes([e])[0] for e in range(len(index))]
    assert not any(_series_holds_polarised(n) for n in nodes)
    # Still every practical network is there (plain loops with the same rule).
    values = [v for v, _, _ in lines]
    for value, count in _plain_networks(values, [q for _, q, _ in lines], "C", max_parts,
                                        [d in ("electrolytic", "tantalum") for *_, d in lines]):
        near = np.flatnonzero(np.abs(index.values / value - 1) <= 2 * RESOLUTION)
        assert near.size, f"{value} ({count} parts) missing"
    # 1 µF electrolytic ∥ 100 nF film is practical and kept; 1 µF in series with 100 nF
    # (90.9 nF) is not, and no other network lands there.
    assert np.isclose(index.values, 1.1e-6, rtol=RESOLUTION, atol=0).any()
    assert not np.isclose(index.values, 1e-6 * 100e-9 / 1.1e-6, rtol=RESOLUTION, atol=0).any()


def test_the_steadiest_network_of_a_value_wins_its_bucket() -> None:
    # Issue 11 §3: of two equally good builds prefer the stable dielectric and the
    # smaller spread. Dielectric classes (EIA-198): C0G/film steadier than X7R.
    one = Tolerance(0.01, 0.01)
    ten = Tolerance(0.10, 0.10)
    resistors = [part("R", 15e3, 1, line=2), part("R", 15e3, 1, line=3, tolerance=one),
                 part("R", 150e3, 1, line=4, tolerance=one), part("R", 150e3, 1, line=5)]
    index = index_of(resistors, "R", 2)
    for value, lines in ((15e3, [3]), (150e3, [4]), (165e3, [3, 4])):
        (entry,) = np.flatnonzero(np.isclose(index.values, value, rtol=1e-9))
        (node,) = index.nodes([int(entry)])
        assert sorted(p.stock_line for p in node.parts()) == lines
        # 1 % parts only: the network spreads ±1 % (series values scale with the parts).
        assert index.hi[entry] / index.values[entry] == pytest.approx(1.01, rel=1e-12)
    caps = [Part("C", 100e-9, FIVE, 3, dielectric="x7r", line=2),
            Part("C", 100e-9, ten, 3, dielectric="film", line=3),
            Part("C", 100e-9, FIVE, 3, dielectric="y5v", line=4)]
    index = index_of(caps, "C", 3)
    # The class comes before the spread: a 10 % film beats a 5 % X7R at every size.
    assert {p.dielectric for e in range(len(index)) for p in index.nodes([e])[0].parts()} == {
        "film"}
    assert index.stability.max() == 0
    steadier = index.steadiness(np.arange(len(index)))
    assert steadier == pytest.approx(np.full(len(index), 0.2), rel=1e-12)


def test_an_index_serves_the_same_parts_in_other_places() -> None:
    # A location, note or line-number edit changes nothing electrical: the index built
    # before hands out the current lines; any other change is a different key.
    from dataclasses import replace

    parts = [part("R", 10e3, 2), part("R", 4.7e3, 1, line=3), part("C", 1e-9, 2, line=4)]
    index = index_of(parts, "R", 2)
    moved = [replace(p, location="drawer B", note="checked", line=(p.line or 0) + 10)
             for p in parts]
    assert electrical_key(moved, "R") == electrical_key(parts, "R")
    served = index.over(moved)
    entry = int(np.flatnonzero(np.isclose(served.values, 14.7e3))[0])
    (node,) = served.nodes([entry])
    assert {p.location for p in node.parts()} == {"drawer B"}
    assert sorted(p.stock_line for p in node.parts()) == [12, 13]
    for changed in (replace(parts[0], quantity=1), replace(parts[0], value=12e3),
                    replace(parts[0], tolerance=Tolerance(0.01, 0.01))):
        assert electrical_key([changed, *parts[1:]], "R") != electrical_key(parts, "R")
    # No network takes more than three parts of a line: 5 or 50 in stock builds the same,
    # and the index served over the new count checks it when networks share a line.
    many = [replace(p, quantity=5) for p in parts]
    assert electrical_key(many, "R") != electrical_key(parts, "R")  # 2 -> 5 crosses 3
    more = [replace(p, quantity=50) for p in parts]
    assert electrical_key(more, "R") == electrical_key(many, "R")
    served = index_of(many, "R", 2).over(more)
    assert served.group_quantity.tolist() == [50, 50]
    assert electrical_key([replace(parts[2], quantity=5), *parts[:2]], "R") == \
        electrical_key(parts, "R")
    with pytest.raises(ValueError):
        index.over([replace(parts[0], value=12e3), *parts[1:]])
