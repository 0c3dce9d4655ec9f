"""Plain brute forces over small drawers, sharing no engine code, and the checks that the
search engine's first candidate is never beaten by them.

Series resistors add, parallel ones add as conductances; capacitors the other way round
(Horowitz & Hill, The Art of Electronics, 3rd ed., §1.2.1 and §1.4.1).
"""

from __future__ import annotations

from collections import Counter
from typing import Any

import numpy as np

from core.model.timing import schmitt_times
from core.parts.drawer import Part
from core.parts.networks import RESOLUTION


def plain_networks(lines: list[Part], max_parts: int) -> list[tuple[float, Counter[int], int]]:
    """Every (value, stock lines used, part count) by nested loops over the lines.

    Series resistors add, parallel ones add as conductances; capacitors the
    other way round (Horowitz & Hill §1.2.1, §1.4.1). Shares no engine code.
    """
    def ser(k: str, x: float, y: float) -> float:
        return x * y / (x + y) if k == "C" else x + y

    def par(k: str, x: float, y: float) -> float:
        return x + y if k == "C" else x * y / (x + y)

    out = []
    for a in lines:
        out.append((a.value, Counter([a.stock_line]), 1))
    if max_parts >= 2:
        for a in lines:
            for b in lines:
                k = a.kind
                use = Counter([a.stock_line, b.stock_line])
                out.append((ser(k, a.value, b.value), use, 2))
                out.append((par(k, a.value, b.value), use, 2))
    if max_parts >= 3:
        for a in lines:
            for b in lines:
                for c in lines:
                    k, x, y, z = a.kind, a.value, b.value, c.value
                    use = Counter([a.stock_line, b.stock_line, c.stock_line])
                    for v in (ser(k, ser(k, x, y), z), par(k, par(k, x, y), z),
                              ser(k, par(k, x, y), z), par(k, ser(k, x, y), z)):
                        out.append((v, use, 3))
    return out


def within_stock(use: Counter[int], parts: list[Part]) -> bool:
    quantity = {p.stock_line: p.quantity for p in parts}
    return all(quantity[line] >= n for line, n in use.items())


Best = tuple[bool, int, float]
"""The contract's ranking key: (outside accept, parts if inside, |error| in %)."""


def brute_force_best(parts: list[Part], osc: Any, target: float, max_r: int, max_c: int,
                     accept: float) -> tuple[Best | None, bool]:
    """The contract's best over every combination, and whether the target is reached.

    Reached: some build lands within accept, or builds land on both sides of the
    target (DESIGN.md: a target nothing in the drawer reaches gives an empty list).
    """
    res = [p for p in parts if p.kind == "R" and p.quantity > 0]
    caps = [p for p in parts if p.kind == "C" and p.quantity > 0]
    r_nets = [n for n in plain_networks(res, max_r) if within_stock(n[1], parts)
              and osc.device.r_min_ohm <= n[0] <= osc.device.r_max_ohm]
    c_nets = [n for n in plain_networks(caps, max_c) if within_stock(n[1], parts)]
    if not r_nets or not c_nets:
        return None, False
    # R and C networks draw on different stock lines, so every pair is within stock; the
    # model is evaluated for all pairs at once (rows: R networks, columns: C networks).
    t_high, t_low = schmitt_times(osc, np.array([n[0] for n in r_nets])[:, None],
                                  np.array([n[0] for n in c_nets])[None, :])
    f = 1.0 / (t_high + t_low)
    counts = np.add.outer([n[2] for n in r_nets], [n[2] for n in c_nets])
    runs = np.isfinite(f)
    signed = ((f - target) / target * 100)[runs]
    if not signed.size:
        return None, False
    err = np.abs(signed)
    inside = err <= accept
    # The contract's order: inside accept first, then fewest parts, then smallest |error|.
    first = np.lexsort((err, np.where(inside, counts[runs], 0), ~inside))[0]
    best = (not bool(inside[first]), int(counts[runs][first]) if inside[first] else 0,
            float(err[first]))
    return best, reaches(signed.tolist(), accept)


def reaches(signed_errors: list[float], accept: float) -> bool:
    """Builds within accept, or on both sides of the target (errors in %)."""
    return (any(e >= -accept for e in signed_errors)
            and any(e <= accept for e in signed_errors))


def assert_first_or_empty(result: Any, best: Best | None, reached: bool, accept: float) -> None:
    """An unreached target lists nothing and says so; else the first is never beaten."""
    if best is None or not reached:
        assert result.candidates == [] and result.notes
        if best is not None:
            assert any("no build from the drawer reaches" in n for n in result.notes)
        return
    assert result.candidates
    assert_not_beaten(result.candidates[0], best, accept)


def assert_not_beaten(first: Any, best: tuple[bool, int, float], accept: float) -> None:
    """The engine's first candidate against the brute force's best, contract order.

    Slack: the index keeps one network per 0.01 % value bucket (RESOLUTION), so
    a merged twin may be off by that much in frequency.
    """
    outside, parts, err = best
    slack = 100 * 1.5 * RESOLUTION * (1 + err / 100)
    mine = abs(first.error_pct)
    if not outside and err <= accept - slack:
        assert mine <= accept
        assert first.part_count <= parts
        if first.part_count == parts:
            assert mine <= err + slack
    elif outside and err > accept + slack:
        assert mine <= err + slack
    else:  # brute best sits on the accept boundary: either tier is fair
        assert mine <= max(err, accept) + slack
