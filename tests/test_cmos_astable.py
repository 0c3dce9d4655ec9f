"""The two-inverter CMOS astable (core/model/circuits/cmos_astable.py) against outside sources.

References named beside each check: the textbook period of the two-inverter
astable (ln 9 R C ≈ 2.2 R C at half the supply), the 4000B RC-oscillator note (ON
Semiconductor MC14541B data sheet, operating characteristics: f = 1 / (2.3 Rtc Ctc),
RS ≈ 2 Rtc), and scipy's ODE solver integrating the timing
node itself, jumps and input clamp diodes included.
"""

from __future__ import annotations

import math
import re
import subprocess
from dataclasses import replace

import numpy as np
import pytest
from support.tools import require_tool

from core.errors import InputError
from core.model.timing import make_oscillator, predict, times, waveform

integrate = pytest.importorskip("scipy.integrate")


def _period(osc, r: float, rs: float, c: float) -> float:
    t_high, t_low = times(osc, {"R": r, "RS": rs, "C": c})
    return float(t_high + t_low)


def test_textbook_period_with_the_clamp_isolated() -> None:
    # Textbook two-inverter astable: T = RC[ln((2V-Vt)/(V-Vt)) + ln((V+Vt)/Vt)],
    # = ln 9 RC ≈ 2.197 RC at Vt = V/2 (Philips HEF4069UB data sheet, January 1995,
    # application information Fig. 7: Tp = T1 + T2 with these two logarithms).
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
    # ON Semiconductor MC14541B data sheet, operating characteristics (the 4000B RC
    # oscillator the CD4060B shares): f = 1 / (2.3 Rtc Ctc) with RS ≈ 2 Rtc; the upper
    # bound RS ≤ 10 R is from memory. At RS = 10 R the model is within 5 % of it.
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


@pytest.mark.parametrize("rs_ratio", [10.0, 2.0, 0.3])
def test_waveform_follows_scipy_through_the_clamp(rs_ratio: float) -> None:
    # scipy.integrate.solve_ivp (reference library) on the node from the waveform's own
    # first sample: the plotted node (core.model.timing.waveform, via timing_node_v)
    # follows it through the clamped start of each phase and the free run after.
    osc = make_oscillator("cmos-astable", "CD4069UB", 9.0)
    d, r, c = osc.device, 47e3, 22e-9
    rs, ct = rs_ratio * r, c + osc.stray_capacitance_f
    top, bottom = d.supply_v + osc.family.input_clamp_v, -osc.family.input_clamp_v
    t, v_cap, v_out = waveform(osc, {"R": r, "RS": rs, "C": c}, periods=1, points=4001)
    node = osc.circuit.timing_node_v(osc, v_cap, v_out)[:-1]  # the last: the next period
    t, high = t[:-1], v_out[:-1] > 0.5 * d.supply_v
    for phase, v_a, r_a in ((high, d.vol_v, r + d.r_out_low_ohm),
                            (~high, d.voh_v, r + d.r_out_high_ohm)):
        ts = t[phase]

        def f(_t: float, y: np.ndarray, v_a: float = v_a, r_a: float = r_a) -> list[float]:
            v = y[0]
            clamp = (top - v) / rs if v > top else (bottom - v) / rs if v < bottom else 0.0
            return [((v_a - v) / r_a + clamp) / ct]

        sol = integrate.solve_ivp(f, (ts[0], ts[-1]), [node[phase][0]], t_eval=ts,
                                  method="DOP853", rtol=1e-10, atol=1e-12)
        np.testing.assert_allclose(node[phase], sol.y[0], atol=1e-4 * d.supply_v)


def test_threshold_is_one_voltage() -> None:
    # One switching voltage: two different ones are refused (common practice, no
    # published source: an unbuffered inverter has no hysteresis).
    osc = make_oscillator("cmos-astable", "74HCU04", 5.0)
    with pytest.raises(InputError):
        osc.with_thresholds(3.0, 2.0)


def test_worst_case_spans_the_switching_voltage() -> None:
    # The period is shortest at half the supply and longest at either end of the
    # data sheet's VIL…VIH window (MC14069UB input levels, tests/test_devices_datasheets.py).
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0)
    r, c = 100e3, 10e-9
    pred = predict(osc, {"R": r, "RS": 10 * r, "C": c})
    lo_vt = 1.0 / _period(osc.with_thresholds(2.0, 2.0), r, 10 * r, c)
    mid = 1.0 / _period(osc.with_thresholds(5.0, 5.0), r, 10 * r, c)
    assert pred.worst_case_hz[0] <= lo_vt * 0.96
    assert pred.worst_case_hz[1] >= mid * 1.04


SPICE = """* two-inverter CMOS astable: switch inverters, clamp diodes behind RS
Vdd vdd 0 DC {v}
S1l o1 0 in1 0 inv
S1h vdd o1 inv1 0 inv
Einv1 inv1 0 vdd in1 1
S2l o2 0 o1 0 inv
S2h vdd o2 inv2 0 inv
Einv2 inv2 0 vdd o1 1
R1 o1 tn {r}
C1 o2 tn {c}
RS tn in1 {rs}
Vhi hi vdd DC {vd_fixed}
Dhi in1 hi clamp
Vlo 0 lo DC {vd_fixed}
Dlo lo in1 clamp
.model clamp d is=1e-14 n=0.2
.model inv sw vt={vth} vh=10m ron={ron} roff=1e12
.ic v(tn)=0 v(in1)=0 v(o1)={v} v(o2)=0 v(hi)={hi} v(lo)={lo} v(inv1)={v} v(inv2)=0
.tran 0.5u {stop} 0 0.5u uic
.meas tran rise2 when v(o2)={vth} rise=2
.meas tran rise3 when v(o2)={vth} rise=3
.end
"""


@pytest.mark.spice
def test_against_ngspice(tmp_path) -> None:
    # ngspice (reference simulator): inverters as voltage-controlled switches (their
    # on-resistance the table's output resistance), clamp diodes as a 0.5 V source plus
    # a sharp diode (about 0.1 V more at the few µA RS passes: 0.6 V, the table's drop).
    # Period within 0.5 % (the issue's bar; the switches' ±10 mV hysteresis, which
    # ngspice needs to converge, accounts for about 0.2 %).
    exe = require_tool("ngspice")
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0, stray_capacitance_f=0.0)
    osc = replace(osc, device=replace(osc.device, delay_lh_s=0.0, delay_hl_s=0.0))
    r, rs, c = 100e3, 1e6, 10e-9
    d = osc.device
    path = tmp_path / "astable.cir"
    path.write_text(SPICE.format(v=10, r=r, c=c, rs=rs, vd_fixed=0.5, vth=osc.vt_plus_v,
                                 ron=d.r_out_high_ohm, hi=10.5, lo=-0.5, stop=6 * r * c))
    run = subprocess.run([exe, "-b", str(path)], capture_output=True, text=True,
                         timeout=120, cwd=tmp_path)
    found = dict(re.findall(r"^(rise2|rise3)\s*=\s*([-+0-9.eE]+)", run.stdout, re.M))
    assert len(found) == 2, run.stdout[-2000:] + run.stderr[-2000:]
    simulated = float(found["rise3"]) - float(found["rise2"])
    assert _period(osc, r, rs, c) == pytest.approx(simulated, rel=5e-3)
