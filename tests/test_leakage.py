"""Leakage and comparator input currents on the timing node, in the worst case.

Checks against the data-sheet leakage formula worked by hand, the NE555 data
sheet's own largest-resistance rule, and scipy's ODE solver for a finite case.
"""

from __future__ import annotations

import csv
import json
import math

import numpy as np
import pytest

from core.cli import main
from core.model.leakage import capacitor_leakage_a, network_leakage_a, node_current_corners
from core.model.spread import worst_case_hz
from core.model.timing import make_oscillator, predict
from core.parts.drawer_file import read_drawer
from core.parts.networks import Network
from core.parts.part import Part
from core.storage.locations import resource
from core.units import Tolerance

NONE = Tolerance(0.0, 0.0)


def test_electrolytic_leakage_limit_is_the_data_sheet_formula():
    # Aluminium electrolytic data sheets: I <= 0.01 C V (µA, µF, V) or 3 µA, whichever is
    # greater (common practice, the usual data-sheet formula). 940 µF at 5 V: 47 µA, the
    # figure quoted in issue 11.
    assert capacitor_leakage_a(940e-6, "electrolytic", 5.0) == pytest.approx(47e-6)
    assert capacitor_leakage_a(10e-6, "electrolytic", 5.0) == pytest.approx(3e-6)  # floor
    # Solid tantalum: 0.01 CV or 0.5 µA (from memory, the usual tantalum data-sheet formula).
    assert capacitor_leakage_a(47e-6, "tantalum", 5.0) == pytest.approx(2.35e-6)
    assert capacitor_leakage_a(1e-6, "tantalum", 5.0) == pytest.approx(0.5e-6)
    assert capacitor_leakage_a(1e-6, "film", 5.0) == 0.0


def _cap(value: float, dielectric: str) -> Network:
    return Network(part=Part(kind="C", value=value, tolerance=Tolerance(0.2, 0.2), quantity=1,
                          line=2, dielectric=dielectric))


def test_network_leakage_adds_in_parallel_and_takes_the_leakiest_in_series():
    big, film = _cap(1000e-6, "electrolytic"), _cap(1e-6, "film")
    assert network_leakage_a(Network(parallel=(big, film)), 5.0) == pytest.approx(50e-6)
    assert network_leakage_a(Network(parallel=(big, big)), 5.0) == pytest.approx(100e-6)
    assert network_leakage_a(Network(series=(big, film)), 5.0) == pytest.approx(50e-6)


def test_leakage_beyond_the_threshold_margin_stops_that_corner():
    # Hand formula: the charge phase aims at VOH − I R. With VOH = 5 V, VT+ = 2.8 V,
    # R = 1 MΩ and the 100 µF electrolytic's limit I = max(0.01·100·5 µA, 3 µA) = 5 µA,
    # VOH − I R = 0 V < VT+: the slowest corner never reaches the threshold.
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.8, vt_minus=1.9).idealised()
    values = {"R": 1e6, "C": 100e-6}
    pred = predict(osc, values, {"R": NONE, "C": NONE}, dielectric="electrolytic")
    assert 5.0 - 5e-6 * 1e6 < 2.8
    assert pred.worst_case_hz[0] == 0.0
    assert pred.worst_case_hz[1] > pred.frequency_hz  # the leakage speeds the discharge
    assert any("can stop" in w for w in pred.warnings)
    assert any("leakage corners" in w for w in pred.warnings)
    # The same parts with a film capacitor: no leakage, a closed band.
    film = predict(osc, values, {"R": NONE, "C": NONE}, dielectric="film")
    assert film.worst_case_hz == pytest.approx((film.frequency_hz, film.frequency_hz))


def _hand_frequency(r: float, c: float, i_high: float, i_low: float) -> float:
    """Ideal Schmitt RC with constant currents drawn from the node (textbook RC charge)."""
    voh, vol, a, b = 5.0, 0.0, 2.8, 1.9
    t_high = r * c * math.log((voh - i_high * r - b) / (voh - i_high * r - a))
    t_low = r * c * math.log((a - vol + i_low * r) / (b - vol + i_low * r))
    return 1.0 / (t_high + t_low)


def test_finite_leakage_band_matches_the_hand_formula_and_scipy():
    integrate = pytest.importorskip("scipy.integrate")
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.8, vt_minus=1.9).idealised()
    r, c = 100e3, 100e-6
    leak = 5e-6  # 0.01 · 100 µF · 5 V = 5 µA
    lo, hi = predict(osc, {"R": r, "C": c}, {"R": NONE, "C": NONE},
                     dielectric="electrolytic").worst_case_hz
    # Slowest: the leakage opposes the charge; fastest: it helps the discharge.
    assert lo == pytest.approx(_hand_frequency(r, c, leak, 0.0), rel=1e-9)
    assert hi == pytest.approx(_hand_frequency(r, c, 0.0, leak), rel=1e-9)

    # scipy: C dV/dt = (Vout − V)/R − I, one charge from VT- to VT+, one discharge back.
    def phase(v_out: float, v0: float, level: float, current: float) -> float:
        def crossing(_t: float, y: np.ndarray) -> float:
            return y[0] - level
        crossing.terminal = True  # type: ignore[attr-defined]
        sol = integrate.solve_ivp(lambda _t, y: [((v_out - y[0]) / r - current) / c],
                                  (0.0, 100 * r * c), [v0], events=crossing, rtol=1e-10,
                                  atol=1e-12, method="DOP853")
        return float(sol.t_events[0][0])

    slow = phase(5.0, 1.9, 2.8, leak) + phase(0.0, 2.8, 1.9, 0.0)
    assert lo == pytest.approx(1.0 / slow, rel=1e-6)


def test_ne555_threshold_current_sets_the_largest_total_resistance():
    # TI NE555 data sheet: the threshold current (250 nA max) sets the largest RA + RB,
    # 20 MΩ at 15 V: (VCC − 2/3 VCC) / 250 nA = 5 V / 250 nA. Below it the slowest
    # corner still oscillates, above it that corner stops.
    osc = make_oscillator("555", "NE555", 15.0)
    i_high, i_low = node_current_corners(osc.device)
    assert i_high.max() == pytest.approx(250e-9)
    # The trigger input at its crossing: half its 2 µA (TRIG at 0 V), pushed into the node.
    assert i_low.min() == pytest.approx(-1e-6)
    tol = {k: NONE for k in ("RA", "RB", "C")}
    below = predict(osc, {"RA": 18e6, "RB": 1e6, "C": 10e-9}, tol).worst_case_hz
    above = predict(osc, {"RA": 20e6, "RB": 1e6, "C": 10e-9}, tol).worst_case_hz
    assert below[0] > 0.0 and above[0] == 0.0
    assert above[1] > 0.0


def test_ne555_trigger_current_stops_a_huge_rb():
    # While discharging, the trigger input pushes up to 1 µA into the node; through
    # RB = 6.8 MΩ that is 6.8 V against the 5 V lower threshold at 15 V: it stops.
    osc = make_oscillator("555", "NE555", 15.0)
    tol = {k: NONE for k in ("RA", "RB", "C")}
    assert predict(osc, {"RA": 10e3, "RB": 6.8e6, "C": 1e-9}, tol).worst_case_hz[0] == 0.0
    assert predict(osc, {"RA": 10e3, "RB": 3.3e6, "C": 1e-9}, tol).worst_case_hz[0] > 0.0


def test_cmos_input_leakage_widens_the_band_both_ways():
    # 74HC14: input leakage up to ±0.1 µA (devices.toml, NXP data sheet at 25 °C); with
    # R = 10 MΩ that is ±1 V on the charge targets, which the band must show.
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.8, vt_minus=1.9)
    values = {"R": 10e6, "C": 1e-9}
    without = worst_case_hz(osc.idealised(), values, {})
    lo, hi = worst_case_hz(osc, values, {})
    assert lo < 0.8 * without[0] and hi > 1.2 * without[1]


def _lines(node: dict) -> list[int]:
    if "line" in node:
        return [node["line"]]
    return [n for child in node.get("series", []) + node.get("parallel", [])
            for n in _lines(child)]


def test_search_marks_a_stopping_electrolytic_design(capsys):
    # Issue 11: at 0.001 Hz the demo drawer offered 1.47 MΩ with a 940 µF electrolytic
    # that may leak 47 µA: 69 V across R, far past the threshold margin. The hand formula
    # (data-sheet limit max(0.01 C V, 3 µA), C in µF, V in volts) says such builds stop:
    # the model's worst case must start at 0 Hz for every demo electrolytic it condemns,
    # and the search must list none of them.
    path = resource("demo_drawer.csv")
    rows = list(csv.reader(path.read_text(encoding="utf-8").splitlines()))
    header = [h.strip().lower() for h in rows[0]]
    cells = [dict(zip(header, row, strict=False)) for row in rows[1:]]
    electrolytics = [n for n, row in enumerate(cells, start=2)
                     if row.get("dielectric", "").lower() == "electrolytic"]
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    margin = osc.device.voh_v - osc.device.vt_plus[0]  # the widest charge margin
    parts = {p.line: p for p in read_drawer(path).parts()}
    checked = 0
    for line in electrolytics:
        c = parts[line].value
        for r in (1e5, 4.7e5, 1.47e6, 2.2e6):
            limit_a = max(0.01 * c * 5.0, 3e-6)
            if limit_a * r > margin:
                low, _ = worst_case_hz(osc, {"R": r, "C": c}, {}, capacitor_leakage_a=limit_a)
                assert low == 0.0, (r, c)
                checked += 1
    assert checked
    code = main(["search", "--stock", str(path), "--target", "0.001Hz", "--top", "10",
                 "--json"])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    for cand in data["candidates"]:
        if any(n in electrolytics for n in _lines(cand["networks"]["C"])):
            c, r = cand["values"]["C"], cand["values"]["R"]
            assert max(0.01 * c * 5.0, 3e-6) * r <= margin, cand["values"]
