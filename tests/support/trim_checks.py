"""A trim design checked corner by corner with the timing model (no trim code).

The pot at rotation x puts its taper share of P in series with R; series resistance adds
(Horowitz & Hill, The Art of Electronics, 3rd ed., §1.2.1).
"""

from __future__ import annotations

import itertools
import math
from collections import Counter
from typing import Any

import pytest

from core.model.timing import schmitt_times
from core.parts.part import Part
from support.nodes import node_lines, node_value


def f_of(osc: Any, r: float, c: float, vt: tuple[float, float] | None = None) -> float:
    """Frequency [Hz] from the model's two phase times (NaN if it stops)."""
    if vt is None:
        t_high, t_low = schmitt_times(osc, r, c)
    else:
        t_high, t_low = schmitt_times(osc, r, c, vt_plus=vt[0], vt_minus=vt[1])
    return 1.0 / float(t_high + t_low)


def taper_share(x: float, taper: str) -> float:
    """Our stated taper laws: linear, or (81^x − 1)/80 (10 % at mid-rotation)."""
    return x if taper == "lin" else (81.0 ** x - 1.0) / 80.0


def node_range(node: dict[str, Any], by_line: dict[int, Part]) -> tuple[float, float]:
    """Network value with every part low, and with every part high."""
    def at(side: int) -> dict[int, Part]:
        out = {}
        for line, p in by_line.items():
            factor = (1 - p.tolerance.minus) if side == 0 else (1 + p.tolerance.plus)
            out[line] = Part(p.kind, p.value * factor, p.tolerance, p.quantity, line=line)
        return out
    return node_value(node, at(0)), node_value(node, at(1))


def check_trim_candidate(cand: dict[str, Any], parts: list[Part], osc: Any,
                         band: tuple[float, float]) -> None:
    """``parts`` as the circuit sees them (a class-2 ceramic's DC bias applied): the
    values checked are the JSON's ``effective_values`` where it gives them."""
    by_line = {p.stock_line: p for p in parts}
    seen = {**cand["values"], **cand.get("effective_values", {})}
    nets = cand["networks"]
    assert set(nets) == set(cand["values"]) == {"R", "P", "C"}
    assert list(nets["P"]) == ["line"] and by_line[nets["P"]["line"]].kind == "P"
    used = Counter(node_lines(nets["R"]) + node_lines(nets["P"]) + node_lines(nets["C"]))
    assert all(used[line] <= by_line[line].quantity for line in used)
    for role in ("R", "P", "C"):
        assert seen[role] == pytest.approx(node_value(nets[role], by_line), rel=1e-12)
    r_rng, p_rng, c_rng = (node_range(nets[k], by_line) for k in ("R", "P", "C"))
    corners = osc.threshold_corners()
    full, zero = [], []
    for r, p, c, vt in itertools.product(r_rng, p_rng, c_rng, corners):
        full.append(f_of(osc, r + p, c, vt))
        zero.append(f_of(osc, r, c, vt))
    assert all(math.isfinite(f) for f in full + zero)
    lo, hi = band
    # DESIGN.md: low end = highest full-rotation frequency over the corners, high end =
    # lowest zero-rotation frequency; the band must lie inside.
    assert max(full) <= lo * (1 + 1e-12) and min(zero) >= hi * (1 - 1e-12)
    assert cand["guaranteed_hz"] == pytest.approx([max(full), min(zero)], rel=1e-9)
    v = seen
    assert cand["range_hz"] == pytest.approx([f_of(osc, v["R"] + v["P"], v["C"]),
                                              f_of(osc, v["R"], v["C"])], rel=1e-9)
    assert v["R"] > 0
    # Rotation at band high and band low reproduces those frequencies (nominal parts).
    taper = cand["taper"]
    for x_pct, f_band in zip(cand["rotation_pct"], (hi, lo), strict=True):
        r_total = v["R"] + v["P"] * taper_share(x_pct / 100, taper)
        assert f_of(osc, r_total, v["C"]) == pytest.approx(f_band, rel=1e-6)
    assert 0 <= cand["rotation_pct"][0] < cand["rotation_pct"][1] <= 100
