"""The closed-form timing against scipy's ODE solver (a general-purpose reference library).

scipy.integrate.solve_ivp integrates the node equation C dV/dt = Σ currents
with threshold events that switch the output, step by step, knowing nothing of
our logarithms; period and duty must agree with the model to 0.1 %.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
import pytest

from core.model.timing import astable_times, make_oscillator, schmitt_times

integrate = pytest.importorskip("scipy.integrate")

Rhs = Callable[[float, bool], Callable[[float, np.ndarray], list[float]]]


def _simulate(rhs: Rhs, v0: float, vt_plus: float, vt_minus: float, delay_up: float,
              delay_down: float, span: float, cycles: int = 4) -> tuple[float, float]:
    """Steady (t_high, t_low) by event-driven integration; output starts high at v0.

    ``rhs(t, high)`` gives dV/dt for the output state; after a threshold event
    the output keeps its state for the propagation delay, then switches.
    """
    t, v, high = 0.0, v0, True
    edges = []
    for _ in range(2 * cycles):
        level = vt_plus if high else vt_minus

        def crossing(_t: float, y: np.ndarray, level: float = level) -> float:
            return y[0] - level

        crossing.terminal = True  # type: ignore[attr-defined]
        crossing.direction = 1.0 if high else -1.0  # type: ignore[attr-defined]
        sol = integrate.solve_ivp(rhs(t, high), (t, t + span), [v], events=crossing,
                                  method="DOP853", rtol=1e-11, atol=1e-14)
        assert sol.t_events[0].size == 1, "no threshold crossing: model says it oscillates"
        t, v = float(sol.t_events[0][0]), float(sol.y_events[0][0][0])
        delay = delay_down if high else delay_up
        if delay > 0:
            hold = integrate.solve_ivp(rhs(t, high), (t, t + delay), [v], method="DOP853",
                                       rtol=1e-11, atol=1e-14)
            v = float(hold.y[0, -1])
            t += delay
        edges.append(t)
        high = not high
    # edges alternate: high→low, low→high, ...; take the last whole cycle.
    t_high = edges[-2] - edges[-3]
    t_low = edges[-1] - edges[-2]
    return t_high, t_low


def _schmitt_rhs(osc, r: float, c: float) -> Rhs:
    d = osc.device
    ct = c + d.input_capacitance_f + osc.stray_capacitance_f

    def make(_t0: float, high: bool) -> Callable[[float, np.ndarray], list[float]]:
        source, r_total = ((d.voh_v, r + d.r_out_high_ohm) if high
                           else (d.vol_v, r + d.r_out_low_ohm))

        def f(_t: float, y: np.ndarray) -> list[float]:
            current = (source - y[0]) / r_total
            if math.isfinite(d.input_r_ohm):
                current += (d.input_v_open_v - y[0]) / d.input_r_ohm  # TTL input current
            return [current / ct]
        return f
    return make


CASES = np.random.default_rng(3).uniform(size=(12, 4))


@pytest.mark.parametrize("u", CASES[:8])
def test_ideal_schmitt_against_solve_ivp(u):
    # C dV/dt = (Vout − V)/R with Vout switched at the thresholds; random R, C, thresholds.
    osc = make_oscillator("schmitt", "74HC14", 5.0).idealised()
    r = 10 ** (3 + 3 * u[0])
    c = 10 ** (-9 + 3 * u[1])
    b = 0.3 + 2.0 * u[2]
    a = b + 0.2 + (4.7 - b - 0.2) * u[3]
    model_high, model_low = (float(x) for x in schmitt_times(osc, r, c, a, b))
    ref_high, ref_low = _simulate(_schmitt_rhs(osc, r, c), b, a, b, 0.0, 0.0, 50 * r * c)
    assert model_high + model_low == pytest.approx(ref_high + ref_low, rel=1e-3)
    assert model_high / (model_high + model_low) == pytest.approx(
        ref_high / (ref_high + ref_low), rel=1e-3)


@pytest.mark.parametrize(("family", "supply", "r", "c"), [
    ("74HC14", 2.0, 4.7e3, 220e-12),     # output resistance, delay, input capacitance
    ("74LS14", 5.0, 1.5e3, 1e-9),        # TTL input current through R
    ("7414", 5.0, 470.0, 4.7e-9),
    ("CD40106B", 5.0, 10e3, 100e-12),    # slow 4000-series delay at a small C
])
def test_real_schmitt_against_solve_ivp(family, supply, r, c):
    osc = make_oscillator("schmitt", family, supply)
    d = osc.device
    model_high, model_low = (float(x) for x in schmitt_times(osc, r, c))
    ref_high, ref_low = _simulate(_schmitt_rhs(osc, r, c), osc.vt_minus_v, osc.vt_plus_v,
                                  osc.vt_minus_v, d.delay_lh_s, d.delay_hl_s, 1e-2)
    assert model_high + model_low == pytest.approx(ref_high + ref_low, rel=1e-3)
    assert model_high / (model_high + model_low) == pytest.approx(
        ref_high / (ref_high + ref_low), rel=1e-3)


@pytest.mark.parametrize("u", CASES[8:11])
def test_555_against_solve_ivp(u):
    # Network equations written out for the 555 (not the Thevenin shortcut the model
    # uses): while discharging, pin 7 sits at x where (V − x)/RA + (Vc − x)/RB = x/r_dis.
    # The diode-steered astable is checked the same way in tests/test_diode.py.
    osc = make_oscillator("555", "NE555", 5.0 + 10 * u[0])
    d = osc.device
    v, rd = d.supply_v, d.discharge_r_ohm
    ra = 10 ** (3 + 2 * u[1])
    rb = 10 ** (3 + 2 * u[2])
    c = 10 ** (-9 + 3 * u[3])
    ct = c + d.input_capacitance_f + osc.stray_capacitance_f

    def rhs(_t0: float, high: bool) -> Callable[[float, np.ndarray], list[float]]:
        def f(_t: float, y: np.ndarray) -> list[float]:
            vc = y[0]
            if high:
                current = (v - vc) / (ra + rb)
            else:
                x = (v / ra + vc / rb) / (1 / ra + 1 / rb + 1 / rd)
                current = (x - vc) / rb
            return [current / ct]
        return f

    model_high, model_low = (float(t) for t in astable_times(osc, ra, rb, c))
    ref_high, ref_low = _simulate(rhs, osc.vt_minus_v, osc.vt_plus_v, osc.vt_minus_v,
                                  d.delay_lh_s, d.delay_hl_s, 1.0)
    assert model_high + model_low == pytest.approx(ref_high + ref_low, rel=1e-3)
    assert model_high / (model_high + model_low) == pytest.approx(
        ref_high / (ref_high + ref_low), rel=1e-3)
