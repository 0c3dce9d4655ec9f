"""The timing models against datasheet formulas, textbook facts and facts of the trade."""

from __future__ import annotations

import math
import tomllib
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from core.errors import InputError, SetupError
from core.model.devices import device_table
from core.model.spread import worst_case_hz
from core.model.timing import (
    astable_times,
    make_oscillator,
    predict,
    resistance_for,
    schmitt_times,
    waveform,
)
from core.units import Tolerance

RNG_SEED = 20261201
REF = tomllib.loads((Path(__file__).parent / "data" / "timing_references.toml").read_text(
    encoding="utf-8"))


def hc14(supply: float = 5.0):
    return make_oscillator("schmitt", "74HC14", supply)


# ---------------------------------------------------------------- ideal formulas

def test_idealised_schmitt_is_exactly_the_charge_equation():
    # DESIGN.md / issue 3: t_high = RC ln((VOH-VT-)/(VOH-VT+)), t_low = RC ln((VT+-VOL)/(VT--VOL)).
    rng = np.random.default_rng(RNG_SEED)
    osc = hc14().idealised()
    r = 10 ** rng.uniform(3, 6, 50)
    c = 10 ** rng.uniform(-10, -5, 50)
    b = rng.uniform(0.5, 2.0, 50)
    a = b + rng.uniform(0.2, 2.5, 50)
    t_high, t_low = schmitt_times(osc, r, c, a, b)
    np.testing.assert_allclose(t_high, r * c * np.log((5 - b) / (5 - a)), rtol=1e-12)
    np.testing.assert_allclose(t_low, r * c * np.log(a / b), rtol=1e-12)


@pytest.mark.parametrize(("share", "time_constants", "rel"), [
    # Textbook RC fact (e.g. Horowitz & Hill, AoE 3rd ed. §1.4.2): a capacitor
    # charging through R reaches 63.2 % of the step after one time constant and
    # about 99.3 % after five.
    (REF["rc_step"]["one_tau"], 1.0, 1e-3),
    (REF["rc_step"]["five_tau"], 5.0, 1e-2),
])
def test_textbook_rc_step(share, time_constants, rel):
    osc = hc14().idealised()
    start = 1.0
    end = start + share * (5.0 - start)
    t_high, _ = schmitt_times(osc, 10e3, 100e-9, vt_plus=end, vt_minus=start)
    assert float(t_high) == pytest.approx(time_constants * 10e3 * 100e-9, rel=rel)


def test_waveform_follows_the_rc_curve():
    # Textbook RC fact: after one time constant the charge has covered 63.2 % of the step.
    osc = hc14().idealised().with_thresholds(4.0, 1.0)
    r, c = 10e3, 100e-9
    t, v_cap, v_out = waveform(osc, {"R": r, "C": c}, periods=1, points=200_001)
    k = int(np.searchsorted(t, r * c))
    assert v_out[k] == 5.0  # still the charging (output high) phase
    assert (v_cap[k] - 1.0) / (5.0 - 1.0) == pytest.approx(1 - math.exp(-1), abs=1e-4)
    assert v_cap.max() == pytest.approx(4.0, abs=1e-3)
    assert v_cap.min() == pytest.approx(1.0, abs=1e-3)


@pytest.mark.parametrize("family", ["74HC14", "74HCT14", "74AHC14"])
def test_rule_of_thumb_for_5v_cmos(family):
    # Rule of thumb of the trade (common practice, no published source): a 5 V CMOS
    # Schmitt-inverter oscillator runs at roughly f ≈ 1.2 … 1.5 / (R C).
    rule = REF["rule_of_thumb_5v_cmos"]
    osc = make_oscillator("schmitt", family, 5.0)
    for r, c in ((10e3, 1e-6), (100e3, 10e-9), (1e6, 100e-9)):
        t_high, t_low = schmitt_times(osc, r, c)
        assert rule["f_rc_low"] <= r * c / float(t_high + t_low) <= rule["f_rc_high"]


# ---------------------------------------------------------------- the bench fact

BENCH_REF = REF["bench_hex_schmitt_5v"]
BENCH = {"R": BENCH_REF["r_ohm"], "C": BENCH_REF["c_f"]}
BENCH_HZ = BENCH_REF["frequency_hz"]


@pytest.mark.parametrize("tolerance", [0.01, 0.05])
def test_bench_measurement_lies_in_the_74hc14_worst_case_band(tolerance):
    # Bench measurement (common practice, no published source): a 5 V hex
    # Schmitt-inverter oscillator, R = 21.7 kΩ, C = 1.00 µF, ran at 63.3 Hz.
    osc = hc14()
    tol = Tolerance(tolerance, tolerance)
    pred = predict(osc, BENCH, {"R": tol, "C": tol})
    lo, hi = pred.worst_case_hz
    assert lo < BENCH_HZ < hi
    # Even with no part tolerance the threshold spread alone must contain it.
    ranges = {k: (v, v) for k, v in BENCH.items()}
    lo, hi = worst_case_hz(osc, BENCH, ranges)
    assert lo < BENCH_HZ < hi
    # And the nominal model is close (a few per cent) to the bench.
    assert pred.frequency_hz == pytest.approx(BENCH_HZ, rel=0.05)


# ---------------------------------------------------------------- 555

def test_ne555_datasheet_frequency_and_duty_formulas():
    # TI NE555 data sheet, astable operation: f = 1.44 / ((RA + 2 RB) C),
    # duty (output high) = (RA + RB) / (RA + 2 RB).
    rng = np.random.default_rng(RNG_SEED)
    osc = make_oscillator("555", "NE555", 9.0)
    ra = 10 ** rng.uniform(3.3, 6, 40)
    rb = 10 ** rng.uniform(3.3, 6, 40)
    c = 10 ** rng.uniform(-8, -5, 40)
    t_high, t_low = astable_times(osc, ra, rb, c)
    k = REF["ne555_astable"]["frequency_constant"]
    np.testing.assert_allclose(1 / (t_high + t_low), k / ((ra + 2 * rb) * c), rtol=0.01)
    np.testing.assert_allclose(t_high / (t_high + t_low), (ra + rb) / (ra + 2 * rb),
                               atol=0.005)


def test_tlc555_worked_example():
    # TI TLC555 data sheet, astable example: RA = 5 kΩ, RB = 3 kΩ, C = 0.15 µF;
    # with the datasheet formulas that is 1.44 / (11 kΩ · 0.15 µF) = 873 Hz, 72.7 % high.
    ex = REF["tlc555_example"]
    ra, rb, c = ex["ra_ohm"], ex["rb_ohm"], ex["c_f"]
    osc = make_oscillator("555", "TLC555", 5.0)
    pred = predict(osc, {"RA": ra, "RB": rb, "C": c})
    assert pred.frequency_hz == pytest.approx(1.44 / ((ra + 2 * rb) * c), rel=0.01)
    assert pred.duty_pct == pytest.approx(100 * (ra + rb) / (ra + 2 * rb), abs=0.5)
    assert pred.t_high_s == pytest.approx(0.693 * (ra + rb) * c, rel=0.01)
    # The discharge transistor (about 14 Ω, fed from RA as well) adds about 1 % to t_low.
    assert pred.t_low_s == pytest.approx(0.693 * rb * c, rel=0.02)


def test_diode_steered_555_reaches_any_duty():
    # Diode across RB: charge through RA and the diode, discharge through RB, so
    # t_high ≈ RA C ln((V - Vd - VT-)/(V - Vd - VT+)) and t_low ≈ ln2 RB C
    # (charge equation of the NE555 data sheet with the diode drop subtracted; Vd from
    # the 1N4148 curve at the mid-charge current, about 0.6 V near 1 mA; RB's own share
    # of the current, Vd / RB, is a further 1-2 %).
    osc = make_oscillator("555", "NE555", 12.0).idealised()
    v, a, b = 12.0, osc.vt_plus_v, osc.vt_minus_v
    vd = float(osc.steering_diode.voltage((v - 0.6 - (a + b) / 2) / 10e3))
    t_high, t_low = astable_times(osc, 10e3, 47e3, 10e-9, diode_steered=True)
    assert float(t_high) == pytest.approx(10e3 * 10e-9 * math.log((v - vd - b) / (v - vd - a)),
                                          rel=0.03)
    assert float(t_low) == pytest.approx(47e3 * 10e-9 * math.log(a / b))
    assert float(t_high / (t_high + t_low)) < 0.25  # below 50 %: impossible without the diode
    plain_high, plain_low = astable_times(osc, 10e3, 47e3, 10e-9)
    assert float(plain_high / (plain_high + plain_low)) > 0.5


def test_steering_warnings_name_the_low_supply_and_a_diode_that_never_conducts():
    # Physics: at 1.5 V the diode's ~0.4 V takes most of the 0.5 V between supply and
    # threshold, so C charges mostly through RB and the diode's −2 mV/K drift dominates
    # (textbook silicon junction); with RA = 100 kΩ, RB = 1 kΩ, RB drops only ~30 mV and
    # the diode never turns on (issue 11).
    low = predict(make_oscillator("555", "LMC555", 1.5), {"RA": 10e3, "RB": 10e3, "C": 10e-9},
                  diode_steered=True)
    assert any("higher supply or no diode" in w for w in low.warnings)
    off = predict(make_oscillator("555", "NE555", 5.0), {"RA": 100e3, "RB": 1e3, "C": 10e-9},
                  diode_steered=True)
    assert any("hardly conducts" in w for w in off.warnings)
    fine = predict(make_oscillator("555", "NE555", 12.0), {"RA": 10e3, "RB": 47e3, "C": 10e-9},
                   diode_steered=True)
    assert not any("diode" in w for w in fine.warnings)


def test_discharge_resistance_lengthens_the_low_time():
    osc = make_oscillator("555", "NE555", 5.0)
    ideal = osc.idealised()
    _, t_low = astable_times(osc, 10e3, 1e3, 1e-6)
    _, t_low_ideal = astable_times(ideal, 10e3, 1e3, 1e-6)
    assert float(t_low) > float(t_low_ideal) * 1.01  # 19 Ω on 1 kΩ: about 2 %


# ---------------------------------------------------------------- real-part effects

def test_ttl_input_current_stops_oscillation_at_large_r():
    # DM74LS14 input current at threshold (-0.18 mA at VT-) through R holds the
    # input up: oscillation stops near a few kΩ (issue 3; common practice keeps
    # R at a few hundred ohms for TTL Schmitt oscillators).
    osc = make_oscillator("schmitt", "74LS14", 5.0)
    r = np.array([330.0, 1e3, 2.2e3, 4.7e3, 10e3])
    t_high, t_low = schmitt_times(osc, r, 100e-9)
    assert np.isfinite(t_high[:3]).all() and np.isnan(t_low[3:]).all()
    with pytest.raises(SetupError, match="will not oscillate"):
        predict(osc, {"R": 4.7e3, "C": 100e-9})
    with pytest.raises(SetupError, match="will not oscillate"):
        predict(make_oscillator("schmitt", "7414", 5.0), {"R": 2.2e3, "C": 100e-9})


def test_output_resistance_is_in_series_with_r():
    osc = hc14()
    d = osc.device
    bare = osc.idealised()
    only_rout = replace(bare, device=replace(bare.device, r_out_high_ohm=d.r_out_high_ohm,
                                             r_out_low_ohm=d.r_out_low_ohm))
    t_high, t_low = schmitt_times(only_rout, 1e3, 1e-6)
    ref_high, _ = schmitt_times(bare, 1e3 + d.r_out_high_ohm, 1e-6)
    _, ref_low = schmitt_times(bare, 1e3 + d.r_out_low_ohm, 1e-6)
    assert float(t_high) == pytest.approx(float(ref_high), rel=1e-12)
    assert float(t_low) == pytest.approx(float(ref_low), rel=1e-12)


def test_propagation_delay_sets_a_floor_under_the_period():
    osc = hc14()
    d = osc.device
    t_high, t_low = schmitt_times(osc, 1.0, 1e-15)
    assert float(t_high + t_low) >= d.delay_lh_s + d.delay_hl_s


def test_broadcasting_over_r_and_c():
    osc = hc14()
    t_high, t_low = schmitt_times(osc, np.array([[1e3], [1e4], [1e5]]),
                                  np.array([1e-9, 1e-8, 1e-7, 1e-6]))
    assert t_high.shape == t_low.shape == (3, 4)
    f = 1 / (t_high + t_low)
    assert (np.diff(f, axis=0) < 0).all() and (np.diff(f, axis=1) < 0).all()


@settings(max_examples=60, deadline=None)
@given(freq=st.floats(1.0, 200e3), c=st.floats(1e-9, 10e-6),
       family=st.sampled_from(["74HC14", "74LS14", "CD40106B", "74LVC14A"]))
def test_resistance_for_inverts_the_model(freq, c, family):
    fam = device_table().family(family)
    osc = make_oscillator("schmitt", fam, fam.supplies_v[0])
    r = float(resistance_for(osc, freq, {"C": c}, "R"))
    if math.isnan(r):
        # Only when no R can do it: the TTL input limit, or faster than R → 1 Ω allows.
        t_high, t_low = schmitt_times(osc, np.array([1.0, 1e10]), c)
        too_fast = float(t_high[0] + t_low[0]) > 1 / freq
        assert too_fast or family == "74LS14"
        return
    t_high, t_low = schmitt_times(osc, r, c)
    assert 1 / float(t_high + t_low) == pytest.approx(freq, rel=1e-8)


@pytest.mark.parametrize("family", ["74HC14", "CD40106B", "74LVC14A"])
def test_resistance_for_agrees_with_scipy_brentq(family):
    # Reference: scipy.optimize.brentq on the same model's period, solved per value; the
    # vectorised bracketed secant must land on the same R within 1e-9.
    from scipy.optimize import brentq

    fam = device_table().family(family)
    osc = make_oscillator("schmitt", fam, fam.supplies_v[0])
    rng = np.random.default_rng(3)
    freq, c = 10 ** rng.uniform(0, 5, 40), 10 ** rng.uniform(-10, -5, 40)
    r = resistance_for(osc, freq, {"C": c}, "R")
    for f, cap, got in zip(freq, c, r, strict=True):
        def excess(log_r, f=f, cap=cap):
            t_high, t_low = schmitt_times(osc, math.exp(log_r), cap)
            return math.log(float(t_high + t_low) * f)

        if excess(0.0) >= 0 or excess(math.log(1e10)) <= 0:
            assert math.isnan(got)
            continue
        want = math.exp(brentq(excess, 0.0, math.log(1e10), xtol=1e-14, rtol=1e-15))
        assert got == pytest.approx(want, rel=1e-9)


def test_resistance_for_is_vectorised():
    osc = hc14()
    c = np.array([1e-9, 10e-9, 100e-9])
    r = resistance_for(osc, 1e3, {"C": c}, "R")
    assert r.shape == (3,)
    assert (np.diff(r) < 0).all()
    assert np.isnan(resistance_for(osc, 1e9, {"C": 1e-9}, "R"))  # beyond any 74HC14


# ---------------------------------------------------------------- set-up errors

def test_oscillator_setup_errors():
    with pytest.raises(InputError, match="--circuit 555"):
        make_oscillator("schmitt", "NE555", 5.0)
    with pytest.raises(InputError, match="both thresholds"):
        make_oscillator("schmitt", "74HC14", 5.0, vt_plus=3.0)
    with pytest.raises(InputError, match="above VT-"):
        make_oscillator("schmitt", "74HC14", 5.0, vt_plus=1.0, vt_minus=2.0)
    with pytest.raises(SetupError, match="output levels"):
        make_oscillator("schmitt", "74HC14", 5.0, vt_plus=5.5, vt_minus=2.0)
    with pytest.raises(InputError, match="missing C"):
        predict(hc14(), {"R": 1e3})
    with pytest.raises(InputError, match="above zero"):
        predict(hc14(), {"R": -1e3, "C": 1e-9})


def test_given_thresholds_remove_the_threshold_spread():
    # Idealised: no input leakage either, so nothing is left to spread.
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.8, vt_minus=1.9).idealised()
    assert osc.threshold_corners() == [(2.8, 1.9)]
    none = Tolerance(0.0, 0.0)
    lo, hi = predict(osc, BENCH, {"R": none, "C": none}).worst_case_hz
    assert lo == pytest.approx(hi)


# ---------------------------------------------------------------- warnings

def _warnings(osc, values, **kw):
    return " | ".join(predict(osc, values, **kw).warnings)


def test_practitioner_warnings():
    osc = hc14()
    assert _warnings(osc, {"R": 47e3, "C": 100e-9}) == ""
    assert "below the 74HC14's sensible range" in _warnings(osc, {"R": 100.0, "C": 1e-6})
    assert "above the 74HC14's sensible range" in _warnings(osc, {"R": 10e6, "C": 1e-6})
    electrolytic = _warnings(osc, {"R": 470e3, "C": 10e-6}, dielectric="electrolytic")
    assert "leakage" in electrolytic and "+ lead" in electrolytic
    assert "100 pF" in _warnings(osc, {"R": 47e3, "C": 47e-12})
    assert "propagation delays" in _warnings(osc, {"R": 1e3, "C": 100e-12})
    loaded = make_oscillator("schmitt", "74HC14", 5.0, load_ohm=1e3)
    assert "spare gate" in _warnings(loaded, {"R": 47e3, "C": 100e-9})
    near_limit = _warnings(make_oscillator("schmitt", "74LS14", 5.0),
                           {"R": 2.2e3, "C": 100e-9})
    assert "does not oscillate" in near_limit


def test_a_load_on_the_timing_output_changes_the_frequency():
    values = {"R": 1e3, "C": 100e-9}
    free = predict(make_oscillator("schmitt", "74LS14", 5.0), values).frequency_hz
    loaded = predict(make_oscillator("schmitt", "74LS14", 5.0, load_ohm=1e3),
                     values).frequency_hz
    assert loaded != pytest.approx(free, rel=0.01)


def test_a_huge_resistor_leaves_the_leakage_bound_in_place() -> None:
    # As R grows the resistor's own current vanishes and a leakage corner that helps both
    # phases sets a constant-current ramp, t = C·ΔV / I (textbook: an RC charge with a
    # parallel current source, R → ∞). So the fastest corner stops moving with R; before
    # the log1p form, R ≥ 1e24 Ω rounded each phase's log to zero and the worst case
    # jumped to the chip's propagation-delay limit (44 MHz).
    from core.model.spread import worst_case_hz

    osc = make_oscillator("schmitt", "74HC14", 5.0)
    highs = []
    for r in (1e15, 1e24, 1e30):
        lo, hi = worst_case_hz(osc, {"R": r, "C": 100e-9},
                               {"R": (0.95 * r, 1.05 * r), "C": (80e-9, 120e-9)})
        assert lo == 0.0  # some leakage corner stops it (the opposite ramp)
        highs.append(hi)
    assert highs[1] == pytest.approx(highs[0], rel=1e-6)
    assert highs[2] == pytest.approx(highs[0], rel=1e-6)
    assert 0 < highs[0] < 10.0
