"""The steering diode: its Shockley curve, and the diode-steered 555 that follows it.

Outside references: the 1N4148 data sheet's forward voltage; scipy's adaptive
quadrature (quad) and ODE solver (solve_ivp) on the node equation written out
with scipy's own root finder for the diode; ngspice simulating the exported
netlist with the same diode parameters; the check values of issue 11.
"""

from __future__ import annotations

import json
import math
from collections.abc import Callable

import numpy as np
import pytest
from support.designs import ngspice_run, one_part_design
from support.ode import steady_times
from support.tools import require_tool

from core.model.diode import SMALL_SIGNAL_DIODE, SteeringBranch
from core.model.timing import astable_times, make_oscillator, predict, waveform

D = SMALL_SIGNAL_DIODE
integrate = pytest.importorskip("scipy.integrate")
optimize = pytest.importorskip("scipy.optimize")

# Supplies 3-15 V and RA/RB from 1/100 to 100 (issue 11); the TLC555 below 4.5 V.
GRID = [(v, ra, rb) for v in (3.0, 5.0, 9.0, 15.0)
        for ra, rb in ((1e3, 100e3), (4.7e3, 47e3), (10e3, 10e3), (47e3, 4.7e3), (100e3, 1e3))]


def test_forward_voltage_matches_the_data_sheet():
    # 1N4148 data sheets: VF 0.62-0.72 V at 5 mA and at most 1 V at 10 mA (from memory,
    # Vishay 1N4148 electrical characteristics).
    assert 0.62 <= float(D.voltage(5e-3)) <= 0.72
    assert float(D.voltage(10e-3)) <= 1.0
    # The inverse is Shockley's law itself: I = IS (exp(Vj / (N VT)) - 1).
    i = np.array([1e-9, 1e-6, 1e-3, 1e-2])
    vj = D.voltage(i) - i * D.series_resistance_ohm
    assert D.junction_current(vj) == pytest.approx(i, rel=1e-12)
    # k T / q at 27 °C (SPICE's TNOM): 25.865 mV (CODATA k/e).
    assert D.n_vt / D.emission_coefficient == pytest.approx(0.025865, rel=1e-4)


def _rb_pair_voltage(i_total: float, rb: float) -> float:
    """Voltage across RB ∥ diode carrying ``i_total``, solved with scipy's brentq."""
    nvt, is_, rs = D.n_vt, D.saturation_current_a, D.series_resistance_ohm

    def diode_current(v: float) -> float:
        if v <= 0:
            return is_ * math.expm1(v / nvt)
        return optimize.brentq(lambda i: v - nvt * math.log1p(i / is_) - i * rs,
                               0.0, v / rs, xtol=1e-30, rtol=1e-15)

    return optimize.brentq(lambda v: v / rb + diode_current(v) - i_total, -1.0, 20.0,
                           xtol=1e-15, rtol=1e-15)


def _charge_current(v: float, ra: float, rb: float) -> Callable[[float], float]:
    """Current through RA into the node at voltage vc: VCC - vc = I RA + V_pair(I)."""
    def current(vc: float) -> float:
        return optimize.brentq(lambda i: v - vc - i * ra - _rb_pair_voltage(i, rb),
                               0.0, (v - vc) / ra, xtol=1e-18, rtol=1e-14)
    return current


@pytest.mark.parametrize(("v", "ra", "rb"), GRID[::3])
@pytest.mark.parametrize("drawn", [0.0, 1e-6])
def test_charge_time_matches_scipy_quadrature(v, ra, rb, drawn):
    # t = ∫ C dV / (I(V) - I_drawn) from VCC/3 to 2 VCC/3 (scipy.integrate.quad).
    c = 10e-9
    current = _charge_current(v, ra, rb)
    ref = integrate.quad(lambda x: c / (current(x) - drawn), v / 3, 2 * v / 3,
                         epsabs=0, epsrel=1e-11, limit=200)[0]
    t, _ = SteeringBranch(D, v, ra, rb).charge_time(c, drawn, v / 3, 2 * v / 3)
    assert float(t) == pytest.approx(ref, rel=1e-9)


def _series_current(drive: float, r: float) -> float:
    """Current [A] through R and a bare diode in series with ``drive`` [V] across both
    (scipy's brentq on drive = I R + Vd(I), Shockley with RS)."""
    return optimize.brentq(lambda i: i * r + float(D.voltage(i)) - drive, 0.0, drive / r,
                           xtol=1e-22, rtol=1e-14)


@pytest.mark.parametrize(("v", "r"), [(3.0, 10e3), (5.0, 1e3), (5.0, 100e3), (15.0, 2.2e6)])
@pytest.mark.parametrize("drawn", [0.0, 1e-6, -D.saturation_current_a, -1e-7])
def test_bare_diode_charge_time_matches_scipy_quadrature(v, r, drawn):
    # A resistor and a bare diode in series (each phase of the steered Schmitt): the
    # closed form against t = ∫ C dV / (I(V) - I_drawn) from V/3 to 2V/3 by
    # scipy.integrate.quad. A drawn current of -IS is the closed form's B = 0 case.
    c = 10e-9
    ref = integrate.quad(lambda x: c / (_series_current(v - x, r) - drawn), v / 3,
                         2 * v / 3, epsabs=0, epsrel=1e-11, limit=200)[0]
    t, net = SteeringBranch(D, v, r, math.inf).charge_time(c, drawn, v / 3, 2 * v / 3)
    assert float(t) == pytest.approx(ref, rel=1e-9)
    assert float(net) == pytest.approx(_series_current(v - 2 * v / 3, r) - drawn, rel=1e-9)


def test_charge_that_never_arrives_is_nan():
    # 10 µA drawn through RA + RB = 1.01 MΩ: the node settles near 5 - 10 V, below 2/3 VCC.
    t, _ = SteeringBranch(D, 5.0, 1e6, 10e3).charge_time(10e-9, 10e-6, 5 / 3, 10 / 3)
    assert np.isnan(t)


def _simulate_555(osc, ra: float, rb: float, c: float) -> tuple[float, float]:
    """Steady (t_high, t_low) by solve_ivp with threshold events, the diode solved by brentq."""
    d = osc.device
    v, rd = d.supply_v, d.discharge_r_ohm
    ct = c + d.input_capacitance_f + osc.stray_capacitance_f
    charge = _charge_current(v, ra, rb)

    def rhs(high: bool) -> Callable[[float, np.ndarray], list[float]]:
        def f(_t: float, y: np.ndarray) -> list[float]:
            vc = y[0]
            if high:
                return [charge(vc) / ct]
            x = (v / ra + vc / rb) / (1 / ra + 1 / rb + 1 / rd)  # pin 7 while discharging
            return [(x - vc) / rb / ct]
        return f

    return steady_times(rhs, osc.vt_minus_v, osc.vt_plus_v, osc.vt_minus_v, d.delay_hl_s,
                        d.delay_lh_s, 100 * (ra + rb) * ct)


@pytest.mark.parametrize(("v", "ra", "rb"), GRID[::2])
def test_diode_steered_555_matches_solve_ivp(v, ra, rb):
    # Issue 11 asks for 0.5 %; the integration agrees far closer.
    osc = make_oscillator("555", "TLC555" if v < 4.5 else "NE555", v)
    c = 10e-9
    model_high, model_low = (float(t) for t in astable_times(osc, ra, rb, c, True))
    ref_high, ref_low = _simulate_555(osc, ra, rb, c)
    assert model_high + model_low == pytest.approx(ref_high + ref_low, rel=1e-4)
    assert model_high / (model_high + model_low) == pytest.approx(
        ref_high / (ref_high + ref_low), rel=1e-4)


def test_closed_form_where_the_diode_stays_off_and_integral_agree():
    # RA = 1 MΩ, RB = 100 Ω: RB's drop stays near 0.3 mV, far below the diode's knee, so
    # the model keeps the closed form (C through RA + RB); scipy agrees.
    osc = make_oscillator("555", "NE555", 9.0)
    plain = [float(t) for t in astable_times(osc, 1e6, 100.0, 10e-9)]
    steered = [float(t) for t in astable_times(osc, 1e6, 100.0, 10e-9, True)]
    assert steered == pytest.approx(plain, rel=1e-12)
    ref = _simulate_555(osc, 1e6, 100.0, 10e-9)
    assert sum(steered) == pytest.approx(sum(ref), rel=1e-4)


def _old_closed_form(osc, ra: float, rb: float, c: float) -> float:
    """The previous model: a fixed 0.6 V drop, RB's share ignored (issue 11's "today")."""
    d = osc.device
    v, a, b = d.supply_v, osc.vt_plus_v, osc.vt_minus_v
    ct = c + d.input_capacitance_f + osc.stray_capacitance_f
    t_high = ra * ct * math.log((v - 0.6 - b) / (v - 0.6 - a))
    t_low = float(astable_times(osc, ra, rb, c, True)[1])
    return 1.0 / (t_high + t_low)


@pytest.mark.parametrize(("family", "v", "ra", "rb", "issue_pct"), [
    ("NE555", 5.0, 10e3, 10e3, -4.0),     # issue 11: off by −4 %
    ("NE555", 5.0, 100e3, 1e3, -25.0),    # issue 11: −25 %, the diode never turns on
])
def test_issue_check_values_of_the_old_closed_form(family, v, ra, rb, issue_pct):
    osc = make_oscillator("555", family, v)
    c = 10e-9
    model_high, model_low = (float(t) for t in astable_times(osc, ra, rb, c, True))
    off_pct = 100.0 * (_old_closed_form(osc, ra, rb, c) * (model_high + model_low) - 1.0)
    # The issue's figures are rounded to whole per cent; the 1N4148 card used gives
    # −3.6 % and −25.4 %.
    assert off_pct == pytest.approx(issue_pct, abs=1.0)


def test_tlc555_at_3v_old_closed_form_was_off_by_several_per_cent():
    # Issue 11: "−8 % for a TLC555 at 3 V" (parts not given). With RA = RB the old form
    # is off by 5-12 % from 1 kΩ to 10 kΩ, so that figure lies inside this span.
    osc = make_oscillator("555", "TLC555", 3.0)
    offs = []
    for r in (1e3, 10e3):
        high, low = (float(t) for t in astable_times(osc, r, r, 10e-9, True))
        offs.append(100.0 * (_old_closed_form(osc, r, r, 10e-9) * (high + low) - 1.0))
    assert offs[1] < -8.0 < offs[0] < -4.0


def test_waveform_follows_the_integrated_charge():
    osc = make_oscillator("555", "NE555", 5.0)
    values = {"RA": 10e3, "RB": 10e3, "C": 10e-9}
    t, v_cap, _ = waveform(osc, values, periods=1, points=2001, diode_steered=True)
    pred = predict(osc, values, diode_steered=True)
    rise = np.argmax(v_cap >= osc.vt_plus_v)
    assert t[rise] == pytest.approx(pred.t_high_s - osc.device.delay_hl_s, rel=2e-3)


@pytest.mark.spice
@pytest.mark.parametrize(("v", "ra", "rb"), GRID[1::3])
def test_diode_steered_netlist_matches_ngspice(v, ra, rb):
    # ngspice integrates the netlist (RB present, a SPICE diode with the same IS, N, RS
    # across it): period within 0.5 % of the model (issue 11).
    osc = make_oscillator("555", "TLC555" if v < 4.5 else "NE555", v)
    sim, model, text = ngspice_run(osc, one_part_design(osc, {"RA": ra, "RB": rb, "C": 10e-9},
                                                       steered=True))
    assert "D1 dis tn 1n4148" in text and ".model 1n4148 d is=2.52e-09" in text
    assert sim["period_s"] == pytest.approx(model.period_s, rel=5e-3)
    assert sim["duty_pct"] == pytest.approx(model.duty_pct, abs=0.5)


def test_netlist_simulate_reports_agreement_and_warns_above_one_per_cent(tmp_path, capsys):
    # ngspice against the model for a diode-steered design from the demo drawer: the JSON
    # carries "simulated" and "agreement_pct" (DESIGN.md, second round), within 1 %.
    require_tool("ngspice")
    from core.cli import main
    from core.output.netlist import simulation_warnings
    from core.storage.locations import demo_drawer_path

    out = tmp_path / "d.cir"
    code = main(["netlist", "--stock", str(demo_drawer_path()), "--circuit", "555", "--family",
                 "NE555", "--supply", "9V", "--target", "440Hz", "--duty", "30", "--out",
                 str(out), "--simulate", "--json"])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    assert data["candidate"]["diode_steered"] is True
    assert "D1 dis tn 1n4148" in out.read_text()
    assert abs(data["agreement_pct"]) <= 1.0 and data["warnings"] == []
    assert data["simulated"]["frequency_hz"] > 0
    # Issue 11's rule: a warning above 1 %, none at or below it.
    assert simulation_warnings(1.0) == [] and len(simulation_warnings(-1.2)) == 1


def test_steered_search_aims_rb_at_the_duty_with_the_real_diode():
    # With the diode's real drop the high time at 5 V is about 35 % longer than ln2 RA C,
    # so RB from the ideal duty = RA / (RA + RB) lands near 37 % for a 30 % request
    # (NE555 data sheet's diode-steered duty vs the integrated model checked above
    # against scipy); the search aims RB with the model and lands within 2 points.
    from core.design.search import search
    from core.parts.drawer_file import read_drawer
    from core.storage.locations import demo_drawer_path

    osc = make_oscillator("555", "NE555", 5.0)
    ra = 10e3
    rb_ideal = ra * 0.7 / 0.3
    high, low = (float(t) for t in astable_times(osc, ra, rb_ideal, 10e-9, True))
    assert 100 * high / (high + low) > 34.0
    parts = read_drawer(demo_drawer_path()).parts()
    first = search(parts, osc, 440.0, duty_pct=30.0).candidates[0]
    assert first.diode_steered and abs(first.duty_pct - 30.0) <= 2.0


def test_many_steered_builds_in_slices_match_scipy_and_bounded_memory():
    """A search's worth of diode-steered builds is evaluated a slice at a time: every slice
    gives the times scipy's ODE solver does, and no array grows with the build count."""
    import tracemalloc

    from core.model.circuits.base import STEERED_SLICE
    from core.model.timing import times

    osc = make_oscillator("555", "NE555", 9.0)
    rng = np.random.default_rng(7)

    def peak_bytes(n: int) -> tuple[int, dict[str, np.ndarray], tuple[np.ndarray, ...]]:
        values = {"RA": 10 ** rng.uniform(3, 5, n), "RB": 10 ** rng.uniform(3, 5, n),
                  "C": 1e-7}
        tracemalloc.start()
        out = times(osc, values, True)
        peak = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
        return peak, values, out

    small, _, _ = peak_bytes(2 * STEERED_SLICE)
    n = 12 * STEERED_SLICE + 17
    large, values, (t_high, t_low) = peak_bytes(n)
    # Per build only the two answers (16 bytes) may add to the peak; one evaluation of
    # every build at once held 12 quadrature nodes in several arrays (hundreds of bytes).
    assert large - small < 32 * (n - 2 * STEERED_SLICE)
    # scipy's solve_ivp on the same circuit (as above), builds at slice edges.
    for k in (0, STEERED_SLICE - 1, STEERED_SLICE, n - 1):
        ref_high, ref_low = _simulate_555(osc, values["RA"][k], values["RB"][k], 1e-7)
        assert t_high[k] == pytest.approx(ref_high, rel=1e-4)
        assert t_low[k] == pytest.approx(ref_low, rel=1e-4)


def test_node_slope_is_the_node_voltage_derivative():
    # at_junction's slope (what the Newton solves for the node rest on) is the derivative
    # of the node voltage (central difference, the derivative's definition).
    rng = np.random.default_rng(16)
    n = 2000
    r_series = 10 ** rng.uniform(2, 7, n)
    r_across = np.where(rng.random(n) < 0.3, math.inf, 10 ** rng.uniform(2, 7, n))
    br = SteeringBranch(D, 10 ** rng.uniform(0.3, 1.2, n), r_series, r_across)
    vj = rng.uniform(0.05, 0.75, n)
    _, _, slope = br.at_junction(vj)
    h = 1e-6
    central = (br.at_junction(vj + h)[0] - br.at_junction(vj - h)[0]) / (2 * h)
    np.testing.assert_allclose(slope, central, rtol=1e-5)
    assert np.all(slope < 0)  # the node falls as more current flows through the branch
