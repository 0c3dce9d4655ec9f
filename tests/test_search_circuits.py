"""Search for the circuits of the second round: the two-inverter CMOS astable, the
oscillator-and-counter chip and the Schmitt inverter with two steering diodes.

Outside references named at each check: series/parallel rules (Horowitz & Hill, The
Art of Electronics, 3rd ed., §1.2.1 and §1.4.1) in the brute forces; the 4000B
RC-oscillator formula and its RS/RT relation (ON Semiconductor MC14541B data sheet:
f = 1 / (2.3 Rtc Ctc), RS ≈ 2 Rtc; RS ≤ 10 Rtc from memory); the DESIGN.md ranking
(second round); IEC 60062 tolerance corners.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import replace

import numpy as np
import pytest
from support.brute_force import (
    assert_first_or_empty,
    best_of,
    brute_force_best_follower,
    plain_corners,
    within_stock,
)
from support.cli import run_tickbin

from core.design.search import search
from core.model.circuits.divider import PINNED_STAGES
from core.model.timing import frequency, make_oscillator, times
from core.parts.part import Part
from core.units import Tolerance

FIVE = Tolerance(0.05, 0.05)
ONE = Tolerance(0.01, 0.01)


def drawer(resistors: list[float], capacitors: list[float], qty: int = 2,
           r_tol: Tolerance = FIVE, c_tol: Tolerance = FIVE) -> list[Part]:
    """Film capacitors and resistors on consecutive stock lines (header = line 1)."""
    parts = [Part("R", v, r_tol, qty, location=f"R{k}", line=k + 2)
             for k, v in enumerate(resistors)]
    return parts + [Part("C", v, c_tol, qty, dielectric="film", location=f"C{k}",
                         line=len(parts) + k + 2) for k, v in enumerate(capacitors)]


SMALL = drawer([10e3, 22e3, 47e3, 100e3, 220e3, 470e3], [10e-9, 47e-9, 220e-9])


@pytest.mark.parametrize("target", [150.0, 800.0, 2.5e3, 9e3])
def test_cmos_astable_first_candidate_is_never_beaten(target: float) -> None:
    # Brute force over every R and C network with RS by the stated ratio rule (plain
    # loops; series/parallel per Horowitz & Hill §1.2.1, §1.4.1), ranked as DESIGN.md.
    osc = make_oscillator("cmos-astable", "CD4069UB", 5.0)
    result = search(SMALL, osc, target, max_resistors=2, max_capacitors=2)
    best, reached = brute_force_best_follower(SMALL, [osc], target, 2, 2, 1.0)
    assert_first_or_empty(result, best, reached, 1.0)
    for c in result.candidates:
        # RS ≈ 2 Rtc at least (MC14541B RC-oscillator note); at most 10 × R (from memory).
        assert 2.0 * c.values["R"] <= c.values["RS"] <= 10.0 * c.values["R"]


def stage_oscillators(osc: object, target: float) -> list[object]:
    """Every pinned-out stage (MC54/74HC4060 logic diagram, SN74HC4060 pinout: Q4–Q10 and
    Q12–Q14, no Q11) whose oscillator frequency stays within the chip's limit."""
    return [replace(osc, divide_by=2 ** n) for n in PINNED_STAGES
            if target * 2 ** n <= osc.device.f_max_hz]


@pytest.mark.parametrize("period_s", [1.0, 60.0, 120.0])
def test_divider_first_candidate_is_never_beaten(period_s: float) -> None:
    # The same brute force at every pinned-out stage; the best over all stages.
    osc = make_oscillator("divider", "CD4060B", 9.0)
    target = 1.0 / period_s
    result = search(SMALL, osc, target, max_resistors=2, max_capacitors=2)
    best, reached = brute_force_best_follower(SMALL, stage_oscillators(osc, target), target,
                                              2, 2, 1.0)
    assert reached and result.candidates
    assert_first_or_empty(result, best, reached, 1.0)


def test_divider_candidates_report_their_stage() -> None:
    osc = make_oscillator("divider", "CD4060B", 9.0)
    result = search(SMALL, osc, 1.0 / 120.0, top=5)
    assert result.candidates
    for c in result.candidates:
        data = c.to_json()
        n = data["divide_by"]
        # A pinned-out stage only (MC54/74HC4060 logic diagram: Q11 is not pinned out).
        assert n in [2 ** k for k in PINNED_STAGES] and data["tap"] == f"Q{int(math.log2(n))}"
        assert data["tap"] != "Q11"
        assert data["oscillator_hz"] == pytest.approx(n * data["frequency_hz"], rel=1e-12)
        # A binary counter's output is a square wave (each stage toggles once per cycle
        # of the one before: textbook ripple counter).
        assert data["duty_pct"] == pytest.approx(50.0)
        # MC14541B data sheet, 4000B RC oscillator: f ≈ 1 / (2.3 Rtc Ctc) with RS ≈ 2 Rtc
        # (the search's RS of 2 to 10 × RT, the top from memory); the model's own
        # threshold and clamp details stay within 10 %.
        rt, ct = data["values"]["R"], data["values"]["C"]
        assert data["oscillator_hz"] == pytest.approx(1.0 / (2.3 * rt * ct), rel=0.10)
        # The oscillator stays within the chip's own limit at this supply.
        assert data["oscillator_hz"] <= osc.device.f_max_hz


def test_divider_worst_case_spans_every_corner() -> None:
    # IEC 60062: each part anywhere within its tolerance; the switching voltage anywhere
    # in the table's spread. The reported band holds every corner the model gives.
    osc = make_oscillator("divider", "CD4060B", 9.0)
    result = search(SMALL, osc, 1.0 / 60.0, top=3)
    for c in result.candidates:
        stage = replace(osc, divide_by=c.divide_by)
        lo, _, hi = osc.device.vt_plus
        ranges = [c.networks[k].value_range for k in ("R", "RS", "C")]
        for (r, rs, cap), vt in itertools.product(itertools.product(*ranges),
                                                   np.linspace(lo, hi, 7)):
            f = float(frequency(stage, {"R": r, "RS": rs, "C": cap}, vt_plus=vt,
                                vt_minus=vt))
            assert c.worst_case_hz[0] * (1 - 1e-9) <= f <= c.worst_case_hz[1] * (1 + 1e-9)


def test_minutes_typed_as_a_period(tmp_path: object) -> None:
    # 2 min is a period of 120 s: a target of 1/120 Hz (SI: 1 min = 60 s).
    out = run_tickbin(tmp_path, "search", "--circuit", "divider", "--family", "CD4060B",
                      "--supply", "9V", "--target", "2min", "--top", "2", "--json")
    assert out.returncode == 0, out.stderr
    import json

    data = json.loads(out.stdout)
    assert data["target_hz"] == pytest.approx(1.0 / 120.0)
    assert {"divide_by", "tap", "oscillator_hz"} <= set(data["candidates"][0])


def brute_force_steered(parts: list[Part], osc: object, target: float, duty: float,
                        accept: float, within: float) -> tuple[object, bool]:
    """Every RH, RL, C combination (single parts; plain loops), ranked as DESIGN.md."""
    res = [n for n in plain_corners([p for p in parts if p.kind == "R"], 1)
           if osc.device.r_min_ohm <= n[0] <= osc.device.r_max_ohm]
    caps = plain_corners([p for p in parts if p.kind == "C"], 1)
    rows = [{"RH": a, "RL": b, "C": c} for a, b, c in itertools.product(res, res, caps)
            if within_stock(a[3] + b[3] + c[3], parts)]
    t_high, t_low = times(osc, {k: np.array([r[k][0] for r in rows]) for k in ("RH", "RL", "C")})
    return best_of(osc, rows, t_high, t_low, target, duty, accept, within, False)


@pytest.mark.parametrize(("target", "duty"), [(1e3, 25.0), (300.0, 70.0), (2e3, 50.0)])
def test_steered_schmitt_with_duty_is_never_beaten(target: float, duty: float) -> None:
    # DESIGN.md, second round: with --duty a hit is within accept and duty-within; brute
    # force over single parts (Horowitz & Hill §1.4.1 for the RC charge in the model).
    parts = drawer([4.7e3, 10e3, 15e3, 22e3, 33e3, 47e3, 68e3], [10e-9, 47e-9, 100e-9],
                   qty=1)
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    result = search(parts, osc, target, duty_pct=duty, max_resistors=1, max_capacitors=1,
                    accept_pct=2.0, duty_within=2.0)
    best, reached = brute_force_steered(parts, osc.with_steering(), target, duty, 2.0, 2.0)
    assert_first_or_empty(result, best, reached, 2.0, 2.0)
    for c in result.candidates:
        assert set(c.values) == {"RH", "RL", "C"}
