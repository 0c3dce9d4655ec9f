"""Plain brute forces over small drawers, sharing no engine code but the timing model,
and the checks that the search engine's first candidate is never beaten by them.

Series resistors add, parallel ones add as conductances; capacitors the other way round
(Horowitz & Hill, The Art of Electronics, 3rd ed., §1.2.1 and §1.4.1). The ranking is
DESIGN.md's (second round): hits within --accept and --duty-within that oscillate at every
corner first, fewest parts first, then the combined error; the rest by combined error;
builds that stop at some corner last. The test drawers hold no polarised capacitors, so
the capacitor leakage is zero; the chips' own input and comparator currents are in the
model's worst case.
"""

from __future__ import annotations

import itertools
import math
from collections import Counter
from collections.abc import Callable
from typing import Any

import numpy as np

from core.model.spread import worst_case_hz
from core.model.timing import astable_times, schmitt_times
from core.parts.network_index import RESOLUTION
from core.parts.part import Part


def plain_networks(lines: list[Part], max_parts: int,
                   value: Callable[[Part], float] = lambda p: p.value
                   ) -> list[tuple[float, Counter[int], int]]:
    """Every (value, stock lines used, part count) by nested loops over the lines.

    Series resistors add, parallel ones add as conductances; capacitors the
    other way round (Horowitz & Hill §1.2.1, §1.4.1). Shares no engine code.
    ``value`` gives each part's value (nominal unless told otherwise).
    """
    def ser(k: str, x: float, y: float) -> float:
        return x * y / (x + y) if k == "C" else x + y

    def par(k: str, x: float, y: float) -> float:
        return x + y if k == "C" else x * y / (x + y)

    out = []
    for a in lines:
        out.append((value(a), Counter([a.stock_line]), 1))
    if max_parts >= 2:
        for a in lines:
            for b in lines:
                k = a.kind
                use = Counter([a.stock_line, b.stock_line])
                out.append((ser(k, value(a), value(b)), use, 2))
                out.append((par(k, value(a), value(b)), use, 2))
    if max_parts >= 3:
        for a in lines:
            for b in lines:
                for c in lines:
                    k, x, y, z = a.kind, value(a), value(b), value(c)
                    use = Counter([a.stock_line, b.stock_line, c.stock_line])
                    for v in (ser(k, ser(k, x, y), z), par(k, par(k, x, y), z),
                              ser(k, par(k, x, y), z), par(k, ser(k, x, y), z)):
                        out.append((v, use, 3))
    return out


def plain_corners(lines: list[Part], max_parts: int
                  ) -> list[tuple[float, float, float, Counter[int], int]]:
    """Every (value, low, high, stock lines used, part count): low and high with every part
    at the low or high end of its tolerance (IEC 60062), which bound a series or parallel
    value because it rises with every part's value (Horowitz & Hill §1.2.1, §1.4.1)."""
    nominal = plain_networks(lines, max_parts)
    low = plain_networks(lines, max_parts, lambda p: p.value * (1 - p.tolerance.minus))
    high = plain_networks(lines, max_parts, lambda p: p.value * (1 + p.tolerance.plus))
    return [(v, lo[0], hi[0], use, n)
            for (v, use, n), lo, hi in zip(nominal, low, high, strict=True)]


def within_stock(use: Counter[int], parts: list[Part]) -> bool:
    quantity = {p.stock_line: p.quantity for p in parts}
    return all(quantity[line] >= n for line, n in use.items())


Best = tuple[bool, bool, int, float]
"""The ranking key (DESIGN.md, second round): (stops at some corner, not a hit, parts if a
hit, combined error)."""


def combined(error_pct: float, accept: float, duty_error: float | None = None,
             duty_within: float = 1.0) -> float:
    """DESIGN.md, second round: |error| / accept, or the larger of that and
    |duty error| / duty-within; a hit has at most 1."""
    score = abs(error_pct) / accept
    return score if duty_error is None else max(score, abs(duty_error) / duty_within)


def rank_key(stops: bool, error_pct: float, duty_error: float | None, parts: int,
             accept: float, duty_within: float = 1.0) -> Best:
    """DESIGN.md, second round: hits first by (parts, combined error), then the rest by
    combined error; a build that stops at some corner is never a hit and comes last."""
    score = combined(error_pct, accept, duty_error, duty_within)
    hit = score <= 1.0 and not stops
    return (stops, not hit, parts if hit else 0, score)


def plain_stops(osc: Any, rows: list[dict[str, tuple[float, float, float]]],
                diode: bool = False) -> np.ndarray:
    """Whether each build (role -> value, low, high) stops at some tolerance or threshold
    corner: the model's worst case starts at 0 Hz (all rows evaluated at once)."""
    roles = list(rows[0])
    values = {k: np.array([r[k][0] for r in rows]) for k in roles}
    ranges = {k: (np.array([r[k][1] for r in rows]), np.array([r[k][2] for r in rows]))
              for k in roles}
    low, _ = worst_case_hz(osc, values, ranges, diode_steered=diode)
    return ~(np.asarray(low) > 0)


Keep = Callable[[dict[str, tuple[Any, ...]]], bool]
"""Which builds (role -> (value, low, high, lines used, parts)) count; None: all."""


def brute_force_best(parts: list[Part], osc: Any, target: float, max_r: int, max_c: int,
                     accept: float, keep: Keep | None = None) -> tuple[Best | None, bool]:
    """The ranking's best over every combination (``keep`` says which count), and whether
    the target is reached.

    Reached: some build lands within accept, or builds land on both sides of the
    target (DESIGN.md: a target nothing in the drawer reaches gives an empty list).
    """
    res = [p for p in parts if p.kind == "R" and p.quantity > 0]
    caps = [p for p in parts if p.kind == "C" and p.quantity > 0]
    r_nets = [n for n in plain_corners(res, max_r) if within_stock(n[3], parts)
              and osc.device.r_min_ohm <= n[0] <= osc.device.r_max_ohm]
    c_nets = [n for n in plain_corners(caps, max_c) if within_stock(n[3], parts)]
    rows = [{"R": r, "C": c} for r, c in itertools.product(r_nets, c_nets)
            if within_stock(r[3] + c[3], parts)]
    rows = [row for row in rows if keep is None or keep(row)]
    if not rows:
        return None, False
    t_high, t_low = schmitt_times(osc, *(np.array([row[k][0] for row in rows]) for k in "RC"))
    return best_of(osc, rows, t_high, t_low, target, None, accept, 1.0, False)


def best_of(osc: Any, rows: list[dict[str, tuple[Any, ...]]], t_high: np.ndarray,
            t_low: np.ndarray, target: float, duty: float | None, accept: float,
            duty_within: float, diode: bool) -> tuple[Best | None, bool]:
    """The best ranking key over ``rows`` (role -> (value, low, high, lines, parts)) with
    the model's times [s], and whether the target is reached.

    The stopping corners are looked up in key order (without them) until the first
    build that runs at every corner: that one is the best, or, when every build stops,
    the one with the least combined error. Reached: builds that run at every corner land
    within accept or on both sides of the target (DESIGN.md).
    """
    f = 1.0 / (np.asarray(t_high, float) + np.asarray(t_low, float))
    keep = [k for k in range(len(rows)) if math.isfinite(f[k])]
    if not keep:
        return None, False
    signed = {k: (f[k] - target) / target * 100 for k in keep}
    duty_error = {k: None if duty is None else 100 * float(t_high[k]) * f[k] - duty
                  for k in keep}
    parts = {k: sum(v[4] for v in rows[k].values()) for k in keep}
    unstopped = {k: rank_key(False, signed[k], duty_error[k], parts[k], accept, duty_within)
                 for k in keep}

    def first_running(order: list[int]) -> int | None:
        for start in range(0, len(order), 256):
            chunk = order[start:start + 256]
            stops = plain_stops(osc, [{r: v[:3] for r, v in rows[k].items()} for k in chunk],
                                diode)
            running = [k for k, s in zip(chunk, stops, strict=True) if not s]
            if running:
                return running[0]
        return None

    first = first_running(sorted(keep, key=unstopped.__getitem__))
    best = unstopped[first] if first is not None else min(
        rank_key(True, signed[k], duty_error[k], parts[k], accept, duty_within) for k in keep)
    # Reached by builds that run at every corner: one at or above -accept, one at or below.
    by_error = sorted(keep, key=lambda k: abs(signed[k]))
    reached = all(first_running([k for k in by_error if side * signed[k] <= accept])
                  is not None for side in (-1.0, 1.0))
    return best, reached


def reaches(signed_errors: list[float], accept: float) -> bool:
    """Builds within accept, or on both sides of the target (errors in %)."""
    return (any(e >= -accept for e in signed_errors)
            and any(e <= accept for e in signed_errors))


def assert_first_or_empty(result: Any, best: Best | None, reached: bool, accept: float,
                          duty_within: float = 1.0) -> None:
    """An unreached target lists nothing and says so; else the first is never beaten."""
    if best is None or not reached:
        assert result.candidates == [] and result.notes
        if best is not None:
            assert any("no build from the drawer reaches" in n for n in result.notes)
        return
    assert result.candidates
    assert_not_beaten(result.candidates[0], best, accept, duty_within)


def assert_not_beaten(first: Any, best: Best, accept: float, duty_within: float = 1.0,
                      far: float = math.inf, miss_share: float = 1.0) -> None:
    """The engine's first candidate against the brute force's best, in ranking order.

    Slack: the index keeps one network per 0.01 % value bucket (RESOLUTION), so
    a merged twin may be off by that much in frequency (and by at most 50 times
    that in duty points, whose slope in ln R is below 50). Misses whose combined
    error is beyond ``far`` are not compared; near ones may be ``miss_share`` times the best.
    """
    stops, outside, parts, score = best
    slack = (100 * 1.5 * RESOLUTION * (1 + score * accept / 100) / accept
             + (0.0 if first.duty_error_pct is None else
                100 * 50 * RESOLUTION / duty_within))
    mine = combined(first.error_pct, accept, first.duty_error_pct, duty_within)
    assert first.hit == (mine <= 1.0 and not first.stops)
    if not outside and score <= 1.0 - slack:
        assert first.hit
        assert first.part_count <= parts
        if first.part_count == parts:
            assert mine <= score + slack
    elif not stops and score > 1.0 + slack:
        if score <= far:
            assert not first.stops and mine <= score * miss_share + slack
    elif stops:  # every build stops somewhere: the least combined error first
        assert mine <= score + slack
    else:  # brute best sits on the hit boundary: either tier is fair
        assert mine <= max(score, 1.0) + slack


def brute_force_best_555(parts: list[Part], osc: Any, target: float, duty: float | None,
                         max_r: int, accept: float, duty_within: float = 1.0,
                         keep: Keep | None = None) -> tuple[Best | None, bool]:
    """The ranking's best over every RA, RB, C combination (plain loops, no engine code;
    ``keep`` says which count), and whether the target is reached (see ``reaches``)."""
    res = [p for p in parts if p.kind == "R"]
    caps = [p for p in parts if p.kind == "C"]
    r_nets = [n for n in plain_corners(res, max_r) if within_stock(n[3], parts)
              and osc.device.r_min_ohm <= n[0] <= osc.device.r_max_ohm]
    c_nets = [n for n in plain_corners(caps, 2) if within_stock(n[3], parts)]
    diode = duty is not None and duty <= 50
    rows = [{"RA": a, "RB": b, "C": c} for a, b, c in itertools.product(r_nets, r_nets, c_nets)
            if within_stock(a[3] + b[3] + c[3], parts) and (keep is None or keep({
                "RA": a, "RB": b, "C": c}))]
    if not rows:
        return None, False
    t_high, t_low = astable_times(osc, *(np.array([row[k][0] for row in rows])
                                         for k in ("RA", "RB", "C")), diode_steered=diode)
    return best_of(osc, rows, t_high, t_low, target, duty, accept, duty_within, diode)


def plain_follower(r: float, r_nets: list[tuple[Any, ...]], low: float, high: float
                   ) -> tuple[Any, ...] | None:
    """The RS network by our stated rule (core.design.inversion.follower_entries, written
    again with plain loops): within low … high × R, fewest parts, then nearest the
    window's geometric middle in ratio. The window is RS of 2 to 10 times RT: at least
    RS ≈ 2 Rtc (ON Semiconductor MC14541B RC-oscillator note), at most 10 × (from memory)."""
    middle = math.sqrt(low * high) * r
    inside = [n for n in r_nets if low * r <= n[0] <= high * r]
    return min(inside, key=lambda n: (n[4], abs(math.log(n[0] / middle))), default=None)


def brute_force_best_follower(parts: list[Part], oscs: list[Any], target: float, max_r: int,
                              max_c: int, accept: float) -> tuple[Best | None, bool]:
    """The ranking's best over every R, C (RS by the ratio rule) at each oscillator in
    ``oscs`` (a counter's stages: the same chip dividing by each ratio), and whether the
    target is reached at some stage."""
    from core.model.timing import times

    res = [p for p in parts if p.kind == "R" and p.quantity > 0]
    caps = [p for p in parts if p.kind == "C" and p.quantity > 0]
    bests, reached = [], False
    for osc in oscs:
        _, low, high = osc.circuit.follower
        r_nets = [n for n in plain_corners(res, max_r) if within_stock(n[3], parts)
                  and osc.device.r_min_ohm <= n[0] <= osc.device.r_max_ohm]
        c_nets = [n for n in plain_corners(caps, max_c) if within_stock(n[3], parts)]
        rows = []
        for r in r_nets:
            rs = plain_follower(r[0], r_nets, low, high)
            if rs is None or not within_stock(r[3] + rs[3], parts):
                continue
            rows += [{"R": r, "RS": rs, "C": c} for c in c_nets
                     if within_stock(r[3] + rs[3] + c[3], parts)]
        if not rows:
            continue
        t_high, t_low = times(osc, {k: np.array([row[k][0] for row in rows])
                                    for k in ("R", "RS", "C")})
        best, reach = best_of(osc, rows, t_high, t_low, target, None, accept, 1.0, False)
        reached |= reach
        if best is not None:
            bests.append(best)
    return (min(bests) if bests else None), reached
