"""The two-inverter CMOS astable (core/model/circuits/cmos_astable.py) against outside sources.

References named beside each check: the textbook period of the two-inverter
astable (ln 9 R C ≈ 2.2 R C at half the supply), the CD4060B data sheet's RC
oscillator note (from memory), and scipy's ODE solver integrating the timing
node itself, jumps and input clamp diodes included.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from core.errors import InputError
from core.model.timing import make_oscillator, predict, times

integrate = pytest.importorskip("scipy.integrate")


def _period(osc, r: float, rs: float, c: float) -> float:
    t_high, t_low = times(osc, {"R": r, "RS": rs, "C": c})
    return float(t_high + t_low)


def test_textbook_period_with_the_clamp_isolated() -> None:
    # Textbook two-inverter astable: T = RC[ln((2V-Vt)/(V-Vt)) + ln((V+Vt)/Vt)],
    # = ln 9 RC ≈ 2.197 RC at Vt = V/2 (CD4069UB/CD4060B application notes; from memory).
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0).idealised()
    r, c = 100e3, 10e-9
    assert _period(osc, r, 1e12, c) == pytest.approx(math.log(9) * r * c, rel=1e-6)
    vt = 3.0
    fixed = osc.with_thresholds(vt, vt)
    expected = r * c * (math.log((20 - vt) / (10 - vt)) + math.log((10 + vt) / vt))
    assert _period(fixed, r, 1e12, c) == pytest.approx(expected, rel=1e-6)


def test_small_rs_drops_the_period_toward_1_4_rc() -> None:
    # With RS -> 0 the clamp pins the node at the rail plus a diode drop, so each half
    # is RC ln((V + Vd)/Vt): 2 ln 2 RC ≈ 1.39 RC for an ideal clamp (textbook; from memory).
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0).idealised()
    r, c, vd = 100e3, 10e-9, osc.family.input_clamp_v
    assert _period(osc, r, 1.0, c) == pytest.approx(2 * r * c * math.log((10 + vd) / 5),
                                                    rel=1e-3)
    periods = [_period(osc, r, k * r, c) for k in (0.01, 0.1, 1, 2, 10, 1e4)]
    assert periods == sorted(periods)


def test_data_sheet_rs_relation_and_formula() -> None:
    # CD4060B data sheet, RC oscillator: f ≈ 1 / (2.3 RTC CTC) with RS about 2…10 × RTC
    # (from memory). At RS = 10 R the model is within 5 % of it (the 2.3 is approximate).
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0)
    r, c = 100e3, 10e-9
    assert _period(osc, r, 10 * r, c) == pytest.approx(2.3 * r * c, rel=0.05)
    # Below RS = 2 R the builder is told why the period is short.
    assert any("below 2 × R" in w for w in predict(osc, {"R": r, "RS": r, "C": c}).warnings)
    assert not any("below 2 × R" in w
                   for w in predict(osc, {"R": r, "RS": 5 * r, "C": c}).warnings)


def _simulate(osc, r: float, rs: float, c: float, vth: float, cycles: int = 4
              ) -> tuple[float, float]:
    """Steady (t_high, t_low) of OUT by event-driven integration of the node voltage.

    C d(v − V_OUT)/dt = (V_A − v)/(R + r_out) + clamp current through RS, where the
    clamp diode joins the first input to the rail ± Vd while v is beyond it. At a
    crossing of vth (the input is v when no clamp conducts) the outputs flip after the
    propagation delay and the node jumps by OUT's step.
    """
    d = osc.device
    ct = c + osc.stray_capacitance_f
    top, bottom = d.supply_v + osc.family.input_clamp_v, -osc.family.input_clamp_v

    def rhs(out_high: bool):
        v_a, r_a = (d.vol_v, r + d.r_out_low_ohm) if out_high else (d.voh_v,
                                                                   r + d.r_out_high_ohm)

        def f(_t: float, y: np.ndarray) -> list[float]:
            v = y[0]
            clamp = (top - v) / rs if v > top else (bottom - v) / rs if v < bottom else 0.0
            return [((v_a - v) / r_a + clamp) / ct]
        return f

    t, v, out_high, edges = 0.0, d.voh_v - d.vol_v + vth, True, []
    step = d.voh_v - d.vol_v
    for _ in range(2 * cycles):
        def crossing(_t: float, y: np.ndarray) -> float:
            return y[0] - vth
        crossing.terminal = True  # type: ignore[attr-defined]
        crossing.direction = -1.0 if out_high else 1.0  # type: ignore[attr-defined]
        sol = integrate.solve_ivp(rhs(out_high), (t, t + 50 * r * ct), [v], events=crossing,
                                  method="DOP853", rtol=1e-11, atol=1e-12)
        assert sol.t_events[0].size == 1
        t, v = float(sol.t_events[0][0]), float(sol.y_events[0][0][0])
        delay = d.delay_hl_s if out_high else d.delay_lh_s
        if delay > 0:
            hold = integrate.solve_ivp(rhs(out_high), (t, t + delay), [v], method="DOP853",
                                       rtol=1e-11, atol=1e-12)
            v, t = float(hold.y[0, -1]), t + delay
        out_high = not out_high
        v += step if out_high else -step
        edges.append(t)
    return edges[-2] - edges[-3], edges[-1] - edges[-2]


@pytest.mark.parametrize(("family", "supply", "rs_ratio", "vth"),
                         [("CD4069UB", 10.0, 10.0, None), ("CD4069UB", 5.0, 0.3, 1.8),
                          ("74HCU04", 4.5, 1.0, 3.0), ("74HCU04", 2.0, 0.05, None)])
def test_against_scipy_ode(family: str, supply: float, rs_ratio: float,
                           vth: float | None) -> None:
    # scipy.integrate.solve_ivp (reference library) on the node itself: period and duty
    # within 1e-6 (the issue asks 0.5 %; the two agree to about 1e-10).
    osc = make_oscillator("cmos-astable", family, supply)
    if vth is not None:
        osc = osc.with_thresholds(vth, vth)
    r, c = 47e3, 22e-9
    t_high, t_low = (float(x) for x in times(osc, {"R": r, "RS": rs_ratio * r, "C": c}))
    sim_high, sim_low = _simulate(osc, r, rs_ratio * r, c, osc.vt_plus_v)
    assert t_high + t_low == pytest.approx(sim_high + sim_low, rel=1e-6)
    assert t_high == pytest.approx(sim_high, rel=1e-6)
    assert t_low == pytest.approx(sim_low, rel=1e-6)


def test_threshold_is_one_voltage() -> None:
    # One switching voltage: two different ones are refused (common practice, no
    # published source: an unbuffered inverter has no hysteresis).
    osc = make_oscillator("cmos-astable", "74HCU04", 5.0)
    with pytest.raises(InputError):
        osc.with_thresholds(3.0, 2.0)


def test_worst_case_spans_the_switching_voltage() -> None:
    # The period is shortest at half the supply and longest at either end of the
    # data sheet's VIL…VIH window (CD4069UB data sheet input levels, from memory).
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0)
    r, c = 100e3, 10e-9
    pred = predict(osc, {"R": r, "RS": 10 * r, "C": c})
    lo_vt = 1.0 / _period(osc.with_thresholds(2.0, 2.0), r, 10 * r, c)
    mid = 1.0 / _period(osc.with_thresholds(5.0, 5.0), r, 10 * r, c)
    assert pred.worst_case_hz[0] <= lo_vt * 0.96
    assert pred.worst_case_hz[1] >= mid * 1.04
