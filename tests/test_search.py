"""Search: the engine's first candidate against a plain brute force, properties, known answers.

Outside references named at each check: the NE555 data sheet's astable
formula, a bench measurement (common practice, no published source), IEC
60063 for what-to-buy values, and series/parallel rules (Horowitz & Hill,
The Art of Electronics, 3rd ed., §1.2.1 and §1.4.1) in the brute force.
"""

from __future__ import annotations

import math
from collections import Counter
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from support.brute_force import (
    assert_first_or_empty,
    assert_not_beaten,
    brute_force_best,
    brute_force_best_555,
    rank_key,
)
from support.nodes import node_lines, node_value

from core.design.search import _rank_order, build_steadiness, search
from core.model.timing import astable_times, make_oscillator, predict, schmitt_times
from core.parts.eseries import kit
from core.parts.index_build import drawer_index
from core.parts.part import Part
from core.units import Tolerance, format_frequency

FIVE = Tolerance(0.05, 0.05)
TEN = Tolerance(0.10, 0.10)
E12_R = kit("E12", 1e3, 1e6)
E12_C = kit("E12", 1e-9, 10e-6)


def drawer(resistors: list[tuple[float, int]], capacitors: list[tuple[float, int]],
           pots: list[tuple[float, int]] = ()) -> list[Part]:
    """Parts on consecutive stock lines (header = line 1)."""
    parts = []
    for kind, lines, tol in (("R", resistors, FIVE), ("C", capacitors, TEN), ("P", pots, TEN)):
        for value, qty in lines:
            parts.append(Part(kind, value, tol, qty, location=f"{kind}{len(parts)}",
                              line=len(parts) + 2))
    return parts















SMALL = drawer([(1e3, 2), (2.2e3, 1), (4.7e3, 3), (15e3, 1), (68e3, 2), (330e3, 1)],
               [(1e-9, 1), (4.7e-9, 2), (22e-9, 1), (100e-9, 2)])


@pytest.mark.parametrize("target", [63.3, 440.0, 1000.0, 12_345.0, 38_000.0, 0.5])
@pytest.mark.parametrize("max_r", [1, 2, 3])
def test_first_candidate_is_never_beaten_by_brute_force(target: float, max_r: int) -> None:
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    result = search(SMALL, osc, target, max_resistors=max_r, max_capacitors=2)
    best, reached = brute_force_best(SMALL, osc, target, max_r, 2, 1.0)
    assert best is not None
    # 0.5 Hz is beyond the drawer's slowest build (330 kΩ with 2 × 100 nF): an empty list.
    assert reached == (target != 0.5)
    assert_first_or_empty(result, best, reached, 1.0)


@settings(max_examples=25, deadline=None, derandomize=True)
@given(st.lists(st.tuples(st.sampled_from(E12_R), st.integers(0, 3)), min_size=1, max_size=5),
       st.lists(st.tuples(st.sampled_from(E12_C), st.integers(0, 2)), min_size=1, max_size=3),
       st.floats(1.0, 5.0), st.integers(1, 3), st.integers(1, 2),
       st.sampled_from(["74HC14", "CD40106B", "74LS14"]), st.sampled_from([0.5, 1.0, 5.0]))
def test_brute_force_on_random_drawers(rs: list[tuple[float, int]],
                                       cs: list[tuple[float, int]], log_target: float,
                                       max_r: int, max_c: int, family: str,
                                       accept: float) -> None:
    parts = drawer(rs, cs)
    osc = make_oscillator("schmitt", family, 5.0)
    target = 10.0 ** log_target
    result = search(parts, osc, target, max_resistors=max_r, max_capacitors=max_c,
                    accept_pct=accept)
    best, reached = brute_force_best(parts, osc, target, max_r, max_c, accept)
    assert_first_or_empty(result, best, reached, accept)


# ---------------------------------------------------------------- properties





def check_candidate_json(cand: dict[str, Any], parts: list[Part], roles: tuple[str, ...]) -> None:
    by_line = {p.stock_line: p for p in parts}
    assert set(cand["values"]) == set(roles) == set(cand["networks"])
    used: Counter[int] = Counter()
    for role in roles:
        net = cand["networks"][role]
        assert cand["values"][role] == pytest.approx(node_value(net, by_line), rel=1e-12)
        kinds = {by_line[line].kind for line in node_lines(net)}
        assert kinds == {"C" if role == "C" else "R"}
        used.update(node_lines(net))
    assert all(used[line] <= by_line[line].quantity for line in used)
    lo, hi = cand["worst_case_hz"]
    assert lo <= cand["frequency_hz"] <= hi


@settings(max_examples=25, deadline=None, derandomize=True)
@given(st.lists(st.tuples(st.sampled_from(E12_R), st.integers(1, 3)), min_size=1, max_size=6),
       st.lists(st.tuples(st.sampled_from(E12_C), st.integers(1, 3)), min_size=1, max_size=4),
       st.floats(0.5, 5.0), st.integers(1, 3), st.integers(1, 3),
       st.sampled_from([None, 30.0, 50.0, 75.0]), st.booleans())
def test_candidates_recompute_from_their_networks(rs: list[tuple[float, int]],
                                                  cs: list[tuple[float, int]],
                                                  log_target: float, max_r: int, max_c: int,
                                                  duty: float | None, astable: bool) -> None:
    parts = drawer(rs, cs)
    target = 10.0 ** log_target
    if astable:
        osc = make_oscillator("555", "NE555", 9.0)
        result = search(parts, osc, target, duty_pct=duty, max_resistors=max_r,
                        max_capacitors=max_c)
        roles: tuple[str, ...] = ("RA", "RB", "C")
    else:
        osc = make_oscillator("schmitt", "74HC14", 5.0)
        result = search(parts, osc, target, max_resistors=max_r, max_capacitors=max_c)
        roles = ("R", "C")
    data = result.to_json()
    assert data["limits"]["r_min_ohm"] == osc.device.r_min_ohm
    for cand in data["candidates"]:
        check_candidate_json(cand, parts, roles)
        v = cand["values"]
        if astable:
            t_high, t_low = astable_times(osc, v["RA"], v["RB"], v["C"],
                                          diode_steered=cand["diode_steered"])
            assert cand["diode_steered"] == (duty is not None and duty <= 50)
        else:
            t_high, t_low = schmitt_times(osc, v["R"], v["C"])
        f = 1.0 / float(t_high + t_low)
        assert cand["frequency_hz"] == pytest.approx(f, rel=1e-9)
        assert cand["error_pct"] == pytest.approx((f - target) / target * 100, rel=1e-9,
                                                  abs=1e-9)
        assert cand["duty_pct"] == pytest.approx(100 * float(t_high) / (1 / f), rel=1e-9)
        for role in roles:
            assert osc.device.r_min_ohm <= v[role] <= osc.device.r_max_ohm or role == "C"
    # Ranking order (DESIGN.md, second round): hits by (parts, combined error), then the
    # rest by combined error, builds stopping at some corner last.
    asked = duty if astable else None
    keys = []
    for c in data["candidates"]:
        duty_error = c.get("duty_error_pct")
        assert (duty_error is None) == (asked is None)
        if asked is not None:
            assert duty_error == pytest.approx(c["duty_pct"] - asked, abs=1e-9)
        stops = not c["worst_case_hz"][0] > 0
        keys.append(rank_key(stops, c["error_pct"], duty_error, c["part_count"], 1.0))
        assert c["hit"] == (not keys[-1][1])
    assert keys == sorted(keys)
    assert len(data["candidates"]) <= 10


def test_list_is_varied_not_near_copies_of_one_capacitor() -> None:
    # A full E24 resistor kit and three capacitors: many R values sit next to the
    # ideal one for each capacitor; the list must not be ten of those.
    parts = drawer([(v, 5) for v in kit("E24", 1e3, 1e6)],
                   [(10e-9, 5), (33e-9, 5), (100e-9, 5)])
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    result = search(parts, osc, 1234.0, max_resistors=3, max_capacitors=1, top=6)
    caps = [c.values["C"] for c in result.candidates[:3]]
    assert len(set(caps)) == 3
    assert len(result.candidates) == 6


# ---------------------------------------------------------------- known answers

def test_555_datasheet_formula() -> None:
    # NE555 data sheet (Texas Instruments SLFS022), astable operation:
    # f = 1.44 / ((RA + 2 RB) C), duty = (RA + RB) / (RA + 2 RB).
    ra, rb, c = 6.8e3, 33e3, 10e-9
    f_sheet = 1.44 / ((ra + 2 * rb) * c)
    parts = drawer([(ra, 1), (rb, 1), (330.0, 1), (2.2e6, 1)], [(c, 1), (47e-6, 1)])
    osc = make_oscillator("555", "NE555", 9.0)
    result = search(parts, osc, f_sheet, max_resistors=1, max_capacitors=1)
    first = result.candidates[0]
    assert first.values == {"RA": ra, "RB": rb, "C": c}
    assert first.frequency_hz == pytest.approx(f_sheet, rel=0.02)
    assert first.duty_pct == pytest.approx(100 * (ra + rb) / (ra + 2 * rb), abs=1.0)
    assert not first.diode_steered


def test_555_duty_below_half_uses_the_steering_diode() -> None:
    parts = drawer([(v, 2) for v in kit("E12", 1e3, 1e6)], [(v, 2) for v in E12_C])
    osc = make_oscillator("555", "NE555", 9.0)
    result = search(parts, osc, 1000.0, duty_pct=25.0)
    assert any("diode" in n for n in result.notes)
    first = result.candidates[0]
    assert first.diode_steered and abs(first.duty_pct - 25.0) <= 2.0
    assert abs(first.error_pct) <= 1.0


def test_bench_fact_21k7_and_1uf_at_63hz() -> None:
    # Bench measurement (common practice, no published source): a 5 V hex
    # Schmitt-inverter oscillator with R = 21.7 kΩ and C = 1.00 µF ran at
    # 63.3 Hz; calibrating on it gives thresholds near 2.80 V and 1.90 V.
    parts = drawer([(10e3, 3), (1.5e3, 2), (220.0, 2), (47e3, 1)],
                   [(1e-6, 2), (470e-9, 1), (10e-9, 1)])
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.80, vt_minus=1.90)
    result = search(parts, osc, 63.3, max_resistors=3, max_capacitors=1)
    with_1u = [c for c in result.candidates if c.values["C"] == 1e-6]
    assert with_1u, "a 1 µF build must be listed"
    # 10k + 10k + 1.5k = 21.5 kΩ is the closest the drawer makes to 21.7 kΩ.
    assert with_1u[0].values["R"] == pytest.approx(21.7e3, rel=0.012)
    assert abs(with_1u[0].error_pct) <= 1.0
    # With the table's own threshold spread the worst case must contain the bench reading.
    # (A drawer of just those two parts runs 2 % slow with the table's typical thresholds,
    # so it does not reach 63.3 Hz and lists nothing; predict gives the same worst case.)
    table = make_oscillator("schmitt", "74HC14", 5.0)
    lo, hi = predict(table, {"R": 21.7e3, "C": 1e-6}, {"R": FIVE, "C": TEN}).worst_case_hz
    assert lo <= 63.3 <= hi
    plain = search(drawer([(21.7e3, 1)], [(1e-6, 1)]), table, 63.3)
    assert plain.candidates == [] and any("runs slower" in n for n in plain.notes)


def test_nothing_within_accept_suggests_iec_60063_values() -> None:
    parts = drawer([(10e3, 1)], [(1e-9, 1)])
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    result = search(parts, osc, 1000.0)
    assert any("nothing in the drawer is within" in n for n in result.notes)
    assert result.suggestions
    for s in result.suggestions:
        series = s["buy"]["series"]
        kind = s["buy"]["kind"]
        lo, hi = (1.0, 10e6) if kind == "R" else (10e-12, 10e-3)
        # IEC 60063:2015 table values (core.parts.eseries reproduces the tables).
        assert any(math.isclose(s["buy"]["value"], v, rel_tol=1e-9) for v in kit(series, lo, hi))
        r = s["buy"]["value"] if kind == "R" else 10e3
        c = s["buy"]["value"] if kind == "C" else 1e-9
        t_high, t_low = schmitt_times(osc, r, c)
        f = 1 / float(t_high + t_low)
        assert s["error_pct"] == pytest.approx((f - 1000.0) / 10.0, rel=1e-9)
    # E12 first: the first suggestion comes from the first series with a hit.
    order = ["E12", "E24", "E96"]
    assert order.index(result.suggestions[0]["buy"]["series"]) >= 0
    assert abs(result.suggestions[0]["error_pct"]) <= 1.0


def test_capacitors_to_buy_stop_at_e24() -> None:
    # Capacitors are stocked in E6/E12, some film and C0G in E24; E96 capacitors are rare
    # (common practice, no published source). One 33 kΩ and 100 nF miss 440 Hz by 7 %.
    parts = drawer([(33e3, 1), (10e3, 2)], [(100e-9, 2)])
    result = search(parts, make_oscillator("schmitt", "74HC14", 5.0), 440.0)
    assert result.suggestions
    for s in result.suggestions:
        assert s["buy"]["kind"] == "R" or s["buy"]["series"] in ("E12", "E24")


def test_empty_drawer_and_impossible_targets_give_notes() -> None:
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    empty = search(drawer([], [(1e-9, 1)]), osc, 1000.0)
    assert empty.candidates == [] and any("no resistors" in n for n in empty.notes)
    # Far too fast for the chip: nothing reaches it, so nothing is listed (DESIGN.md:
    # an empty list), and the notes say why, naming the closest build.
    fast = search(drawer([(1e3, 1)], [(1e-9, 1)]), osc, 1e9)
    assert fast.candidates == []
    assert any("above what the 74HC14 does well" in n for n in fast.notes)
    assert any("nothing in the drawer is within ±1 %" in n for n in fast.notes)
    f_closest = 1.0 / float(sum(schmitt_times(osc, 1e3, 1e-9)))
    assert any(f"every one runs slower (the closest at {format_frequency(f_closest)})" in n
               for n in fast.notes)


def test_limits_respected_and_reported() -> None:
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    parts = drawer([(100.0, 5), (10e6, 5), (10e3, 1)], [(v, 1) for v in E12_C])
    result = search(parts, osc, 1000.0, max_resistors=1, max_capacitors=1)
    assert result.to_json()["limits"] == {"r_min_ohm": osc.device.r_min_ohm,
                                          "r_max_ohm": osc.device.r_max_ohm}
    assert {c.values["R"] for c in result.candidates} == {10e3}
    assert np.all([c.part_count == 2 for c in result.candidates])


@settings(max_examples=20, deadline=None, derandomize=True)
@given(st.lists(st.tuples(st.sampled_from(E12_R), st.integers(1, 3)), min_size=2, max_size=5),
       st.lists(st.tuples(st.sampled_from(E12_C), st.integers(1, 2)), min_size=1, max_size=3),
       st.floats(1.0, 4.0), st.integers(1, 2), st.sampled_from([None, 30.0, 70.0]))
def test_555_brute_force_on_random_drawers(rs: list[tuple[float, int]],
                                           cs: list[tuple[float, int]], log_target: float,
                                           max_r: int, duty: float | None) -> None:
    parts = drawer(rs, cs)
    osc = make_oscillator("555", "NE555", 9.0)
    target = 10.0 ** log_target
    result = search(parts, osc, target, duty_pct=duty, max_resistors=max_r)
    best, reached = brute_force_best_555(parts, osc, target, duty, max_r, 1.0)
    assert best is not None
    if not reached:
        assert result.candidates == []
        assert any("no build from the drawer reaches" in n for n in result.notes)
        return
    # Misses: the engine looks next to the RB that would hit and at the smallest RB.
    # Far misses (combined error beyond 20) are left out on purpose (when RA and RB compete
    # for one stock line the engine's closest far miss may be farther), and a near miss
    # may be 2 % (relative) farther: with RB far below RA the model's frequency peaks
    # (C is discharged below the trigger level during the edge delay), and an
    # unreachable target is missed least at that peak, between the two places.
    assert result.candidates
    assert_not_beaten(result.candidates[0], best, 1.0, far=20.0, miss_share=1.02)


def test_of_two_equally_good_builds_the_steadier_ranks_first() -> None:
    # Issue 11 §3 (a fact of the trade): when two builds are equally good, prefer the
    # stable dielectric and the smaller spread. Film holds its value better than X7R
    # (EIA-198 class 2 X7R: ±15 % over temperature); errors that print alike (0.01 %)
    # are equally good, a clearly smaller error still wins.
    parts = [Part("R", 10e3, Tolerance(0.05, 0.05), 1, line=2),
             Part("R", 22e3, Tolerance(0.01, 0.01), 1, line=3),
             Part("C", 100e-9, Tolerance(0.10, 0.10), 1, dielectric="x7r", line=4),
             Part("C", 47e-9, Tolerance(0.05, 0.05), 1, dielectric="film", line=5)]
    index = drawer_index(parts, 1, 1)
    r10, r22 = (int(np.flatnonzero(index.resistors.values == v)[0]) for v in (10e3, 22e3))
    c100, c47 = (int(np.flatnonzero(index.capacitors.values == v)[0]) for v in (100e-9, 47e-9))
    entries = {"R": np.array([r10, r22, r10]), "C": np.array([c100, c47, c47])}
    steady = build_steadiness(index, entries)
    assert steady[1] < steady[2] < steady[0]  # 1 % + film, 5 % + film, 5 % + X7R
    parts_used = np.array([2, 2, 2])
    # Combined errors at the default 1 % accept are the errors in per cent.
    order = _rank_order(np.array([0.101, 0.104, 0.3]), parts_used, steadiness=steady)
    assert order.tolist() == [1, 0, 2]
    order = _rank_order(np.array([0.101, 0.12, 0.3]), parts_used, steadiness=steady)
    assert order.tolist() == [0, 1, 2]
