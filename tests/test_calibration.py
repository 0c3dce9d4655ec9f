"""Calibration: thresholds from bench measurements, least squares, named files."""

from __future__ import annotations

import json
import math
import tomllib
from pathlib import Path

import numpy as np
import pytest

from core.errors import InputError, SetupError
from core.model.calibration import (
    FREQUENCY_READING,
    Measurement,
    _residuals,
    calibrate,
    calibrations_dir,
    delete_calibration,
    fit,
    list_calibrations,
    load_calibration,
    save_calibration,
)
from core.model.spread import monte_carlo, worst_case_hz
from core.model.timing import frequency, make_oscillator, predict, times
from core.units import Tolerance

REF = tomllib.loads((Path(__file__).parent / "data" / "timing_references.toml").read_text(
    encoding="utf-8"))["bench_hex_schmitt_5v"]
BENCH = {"R": REF["r_ohm"], "C": REF["c_f"]}


def hc14(supply: float = 5.0):
    return make_oscillator("schmitt", "74HC14", supply)


def test_bench_calibration_gives_the_known_thresholds():
    # Bench measurement (common practice, no published source): 5 V hex Schmitt
    # inverter, R = 21.7 kΩ, C = 1.00 µF, 63.3 Hz, output high 47 %: calibrating
    # must give thresholds near 2.80 V and 1.90 V.
    f, duty = REF["frequency_hz"], REF["duty_pct"]
    cal = calibrate(hc14(REF["supply_v"]), BENCH, f, duty)
    assert cal.mode == "both"
    assert cal.vt_plus_v == pytest.approx(REF["vt_plus_v"], abs=REF["abs_v"])
    assert cal.vt_minus_v == pytest.approx(REF["vt_minus_v"], abs=REF["abs_v"])
    osc = make_oscillator("schmitt", "74HC14", 5.0, calibration=cal)
    pred = predict(osc, BENCH)
    assert pred.frequency_hz == pytest.approx(f, rel=1e-9)
    assert pred.duty_pct == pytest.approx(duty, abs=1e-7)
    assert cal.scale == pytest.approx(f / predict(hc14(), BENCH).frequency_hz, rel=1e-12)
    assert not any("outside the data sheet" in w for w in cal.warnings)


def test_without_duty_the_table_ratio_is_kept():
    osc = hc14()
    cal = calibrate(osc, BENCH, 63.3)
    assert cal.mode == "ratio"
    assert cal.vt_plus_v / cal.vt_minus_v == pytest.approx(osc.vt_plus_v / osc.vt_minus_v)
    calibrated = make_oscillator("schmitt", "74HC14", 5.0, calibration=cal)
    assert predict(calibrated, BENCH).frequency_hz == pytest.approx(63.3, rel=1e-9)


def test_least_squares_recovers_thresholds_from_noisy_readings():
    truth = hc14().with_thresholds(2.9, 1.75)
    rng = np.random.default_rng(11)
    readings = []
    for r, c in ((4.7e3, 1e-6), (10e3, 470e-9), (47e3, 100e-9), (100e3, 22e-9), (22e3, 1e-6)):
        t_high, t_low = (float(t) for t in times(truth, {"R": r, "C": c}))
        noise = 1 + rng.normal(0, 0.002, 2)  # 0.2 % meter noise
        t_high, t_low = t_high * noise[0], t_low * noise[1]
        readings.append(Measurement({"R": r, "C": c}, 1 / (t_high + t_low),
                                    100 * t_high / (t_high + t_low)))
    cal = fit(hc14(), readings)
    assert cal.vt_plus_v == pytest.approx(2.9, abs=0.02)
    assert cal.vt_minus_v == pytest.approx(1.75, abs=0.02)
    assert cal.residual_pct < 0.5


def test_least_squares_agrees_with_scipy():
    # scipy.optimize.least_squares (a general-purpose reference library) on the
    # same residuals finds the same thresholds.
    optimize = pytest.importorskip("scipy.optimize")
    osc = hc14()
    readings = [Measurement({"R": 21.7e3, "C": 1e-6}, 63.3, 47.0),
                Measurement({"R": 10e3, "C": 1e-6}, 140.0, 46.0),
                Measurement({"R": 47e3, "C": 220e-9}, 131.0)]
    cal = fit(osc, readings)
    ref = optimize.least_squares(lambda p: _residuals(osc, readings, p[0], p[1]),
                                 x0=[osc.vt_plus_v, osc.vt_minus_v], xtol=1e-14, ftol=1e-14,
                                 gtol=1e-14)
    assert cal.vt_plus_v == pytest.approx(ref.x[0], abs=1e-6)
    assert cal.vt_minus_v == pytest.approx(ref.x[1], abs=1e-6)


def test_impossible_measurement_is_refused():
    with pytest.raises(SetupError, match="check the part values"):
        calibrate(hc14(), BENCH, 1.0, 50.0)  # would need thresholds beyond the supply
    with pytest.raises(InputError):
        calibrate(hc14(), BENCH, 63.3, 120.0)


def test_thresholds_outside_the_datasheet_are_flagged():
    cal = calibrate(hc14(), BENCH, 6330.0, 47.0)
    assert any("outside the data sheet" in w for w in cal.warnings)


def test_save_load_list_delete(tmp_path):
    cal = calibrate(hc14(), BENCH, 63.3, 47.0, name="bench-5v")
    path = save_calibration(cal)
    assert path.parent == calibrations_dir()
    assert list_calibrations() == ["bench-5v"]
    back = load_calibration("bench-5v")
    assert (back.vt_plus_v, back.vt_minus_v, back.scale) == (cal.vt_plus_v, cal.vt_minus_v,
                                                              cal.scale)
    assert back.measurements[0].values == BENCH
    osc = make_oscillator("schmitt", "74HC14", 5.0, calibration="bench-5v")
    assert osc.calibration == "bench-5v" and osc.thresholds_given
    assert osc.threshold_corners() == [(cal.vt_plus_v, cal.vt_minus_v)]
    with pytest.raises(InputError, match="bench-5v"):
        load_calibration("other")
    delete_calibration("bench-5v")
    assert list_calibrations() == []
    with pytest.raises(InputError, match="letters, digits"):
        save_calibration(cal, "../escape")


def test_calibration_used_at_another_supply_or_chip():
    cal = calibrate(hc14(), BENCH, 63.3, 47.0, name="bench")
    save_calibration(cal)
    osc = make_oscillator("schmitt", "74HC14", 3.3, calibration="bench")
    table = hc14(3.3)
    # Thresholds keep their measured ratio to the table's typ values.
    assert osc.vt_plus_v / table.vt_plus_v == pytest.approx(cal.vt_plus_v / cal.table_vt_plus_v)
    assert any("3.3 V" in n for n in osc.notes)
    assert any("measured at 5 V" in w for w in predict(osc, BENCH).warnings)
    with pytest.raises(SetupError, match="74HC14"):
        make_oscillator("schmitt", "CD40106B", 5.0, calibration="bench")


def test_555_calibration():
    osc = make_oscillator("555", "NE555", 9.0)
    truth = osc.with_thresholds(6.1, 2.95)
    values = {"RA": 10e3, "RB": 47e3, "C": 10e-9}
    t_high, t_low = (float(t) for t in times(truth, values))
    cal = calibrate(osc, values, 1 / (t_high + t_low), 100 * t_high / (t_high + t_low))
    assert cal.vt_plus_v == pytest.approx(6.1, abs=1e-6)
    assert cal.vt_minus_v == pytest.approx(2.95, abs=1e-6)
    assert math.isfinite(cal.scale)


# ---------------------------------------------------------------- how sure a calibration is

PARTS = {"R": Tolerance(0.01, 0.01), "C": Tolerance(0.05, 0.05)}  # 1 % resistor, 5 % film
DESIGN = {"R": 68e3, "C": 22e-9}  # a later design predicted with the calibration


def test_uncertainty_is_the_hand_propagated_first_order_formula():
    # JCGM 100:2008 (GUM) §4.3.7: a tolerance ±a taken as uniform has u = a / √3; §5.1.2:
    # f ∝ 1 / (R C), so the relative uncertainties of R, C and the reading add in
    # quadrature with unit sensitivity, and their limits add linearly.
    cal = calibrate(hc14(), {"R": 33e3, "C": 470e-9}, 60.0, tolerances=PARTS)
    a = np.array([0.01, 0.05, FREQUENCY_READING])
    assert cal.uncertainty_pct == pytest.approx(100 * math.sqrt(np.sum(a**2) / 3), rel=0.01)
    assert cal.worst_case_pct == pytest.approx(100 * np.sum(a), rel=0.01)
    # The duty reading splits VT+ from VT- but leaves the period, and so a predicted
    # frequency, as sure as before.
    both = calibrate(hc14(), {"R": 33e3, "C": 470e-9}, 60.0, 45.0, tolerances=PARTS)
    assert both.uncertainty_pct == pytest.approx(cal.uncertainty_pct, rel=0.01)
    assert both.vt_plus_sigma_v > 0 and both.vt_minus_sigma_v > 0
    # Wider parts, a less sure calibration, and the advice says what to use instead.
    loose = calibrate(hc14(), {"R": 33e3, "C": 470e-9}, 60.0)  # R ±5 %, C ±20 %
    assert loose.uncertainty_pct > 3 * cal.uncertainty_pct
    assert any("1 % resistors and a C0G or film capacitor" in w for w in loose.warnings)
    assert not any("1 % resistors" in w for w in cal.warnings)


def test_uncertainty_agrees_with_a_monte_carlo_of_the_bench():
    # numpy Monte Carlo (seeded): a chip with known thresholds is measured through parts
    # drawn within their tolerance and a reading within its accuracy; the calibration's
    # error on a later design must spread as uncertainty_pct says and stay within
    # worst_case_pct.
    truth = hc14().with_thresholds(2.85, 1.80)
    nominal = {"R": 33e3, "C": 470e-9}
    rng = np.random.default_rng(7)
    errors, cal = [], None
    for _ in range(250):
        actual = {"R": nominal["R"] * (1 + rng.uniform(-0.01, 0.01)),
                  "C": nominal["C"] * (1 + rng.uniform(-0.05, 0.05))}
        reading = float(frequency(truth, actual)) * (1 + rng.uniform(-FREQUENCY_READING,
                                                                     FREQUENCY_READING))
        cal = calibrate(hc14(), nominal, reading, tolerances=PARTS)
        osc = make_oscillator("schmitt", "74HC14", 5.0, calibration=cal)
        errors.append(float(frequency(osc, DESIGN)) / float(frequency(truth, DESIGN)) - 1)
    assert cal is not None
    errors = np.array(errors)
    assert 100 * np.std(errors) == pytest.approx(cal.uncertainty_pct, rel=0.12)
    assert 100 * np.max(np.abs(errors)) <= cal.worst_case_pct


def test_multi_point_parameter_uncertainty_is_the_least_squares_covariance():
    # With part tolerances negligible and a scatter far above the reading's accuracy, the
    # thresholds' uncertainty is the classical least-squares covariance s² (JᵀJ)⁻¹, which
    # scipy.optimize.curve_fit reports as pcov (absolute_sigma=False).
    optimize = pytest.importorskip("scipy.optimize")
    osc = hc14()
    truth = osc.with_thresholds(2.85, 1.80)
    rng = np.random.default_rng(5)
    parts = [{"R": r, "C": c} for r, c in ((4.7e3, 1e-6), (10e3, 470e-9), (47e3, 100e-9),
                                           (100e3, 22e-9), (22e3, 1e-6), (68e3, 47e-9))]
    readings = [Measurement(v, float(frequency(truth, v)) * (1 + rng.normal(0, 0.03)))
                for v in parts]
    exact = {"R": Tolerance(1e-9, 1e-9), "C": Tolerance(1e-9, 1e-9)}
    cal = fit(osc, readings, tolerances=exact)
    a0, b0 = osc.vt_plus_v, osc.vt_minus_v

    def log_period(index: np.ndarray, s: float) -> np.ndarray:
        return np.array([math.log(1 / float(frequency(osc, parts[int(k)], False, s * a0,
                                                      s * b0))) for k in index])

    measured = np.array([math.log(1 / m.frequency_hz) for m in readings])
    popt, pcov = optimize.curve_fit(log_period, np.arange(len(parts)), measured, p0=[1.0])
    assert cal.vt_plus_v == pytest.approx(popt[0] * a0, rel=1e-6)
    assert cal.vt_plus_sigma_v == pytest.approx(math.sqrt(pcov[0, 0]) * a0, rel=0.02)
    assert cal.vt_minus_sigma_v == pytest.approx(math.sqrt(pcov[0, 0]) * b0, rel=0.02)


def test_a_calibrated_prediction_carries_the_uncertainty_into_its_spread():
    cal = calibrate(hc14(), {"R": 33e3, "C": 470e-9}, 60.0, 45.0, tolerances=PARTS)
    osc = make_oscillator("schmitt", "74HC14", 5.0, calibration=cal)
    assert osc.calibration_sigma == pytest.approx(cal.uncertainty_pct / 100)
    # The same thresholds given by hand: no calibration uncertainty (leakage corners only).
    given = hc14().with_thresholds(cal.vt_plus_v, cal.vt_minus_v)
    # Exact parts: the worst case widens by the calibration's own first-order limit ...
    limit = cal.worst_case_pct / 100
    lo0, hi0 = worst_case_hz(given, DESIGN, {})
    assert worst_case_hz(osc, DESIGN, {}) == pytest.approx((lo0 * (1 - limit),
                                                            hi0 * (1 + limit)), rel=1e-12)
    # ... and the simulated builds spread by its 1 sigma (its uniform terms, summed).
    f = monte_carlo(osc, DESIGN, {}, n=20_000, seed=1).frequencies_hz
    f0 = monte_carlo(given, DESIGN, {}, n=20_000, seed=1).frequencies_hz
    assert np.std(f / f0) == pytest.approx(cal.uncertainty_pct / 100, rel=0.08)
    assert np.all(np.abs(f / f0 - 1) <= limit + 1e-12)
    assert np.ptp(f0) == 0.0


def test_uncertainty_is_saved_and_an_older_file_reads_as_unknown():
    cal = calibrate(hc14(), BENCH, 63.3, 47.0, name="sure", tolerances=PARTS)
    path = save_calibration(cal)
    back = load_calibration("sure")
    assert (back.uncertainty_pct, back.worst_case_pct, back.tolerances_pct["C"]) == (
        cal.uncertainty_pct, cal.worst_case_pct, (5.0, 5.0))
    data = json.loads(path.read_text(encoding="utf-8"))
    for key in ("uncertainty_pct", "worst_case_pct", "tolerances_pct", "vt_plus_sigma_v",
                "vt_minus_sigma_v"):
        del data[key]
    path.write_text(json.dumps(data), encoding="utf-8")
    assert load_calibration("sure").uncertainty_pct == 0.0


# ---------------------------------------------------------------- one switching voltage

def _textbook_ring(vth: float, v: float, r: float, c: float) -> tuple[float, float]:
    """(t_high, t_low) [s] of the two-inverter astable with the input clamps isolated and
    an ideal chip (Philips HEF4069UB data sheet, January 1995, application information Fig. 7):
    OUT high while the node falls from V + Vth to Vth, low while it rises from Vth − V."""
    return r * c * math.log((v + vth) / vth), r * c * math.log((2 * v - vth) / (v - vth))


def test_cmos_astable_calibration_fits_the_switching_voltage():
    # The one parameter fitted is the switching voltage; a frequency and duty made by the
    # textbook formula at Vth = 3.5 V give it back (RS so large the clamps never act).
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0).idealised()
    values = {"R": 100e3, "RS": 1e12, "C": 10e-9}
    t_high, t_low = _textbook_ring(3.5, 10.0, 100e3, 10e-9)
    cal = calibrate(osc, values, 1 / (t_high + t_low), 100 * t_high / (t_high + t_low))
    assert cal.mode == "switching"
    assert cal.vt_plus_v == cal.vt_minus_v == pytest.approx(3.5, abs=1e-6)
    assert not any("fits these readings as well" in w for w in cal.warnings)


def test_frequency_alone_leaves_two_switching_voltages_and_says_so():
    # Textbook period is symmetric about mid-supply: Vth and V − Vth give the same period
    # (swap the two logarithms above), so a frequency alone cannot tell them apart.
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0).idealised()
    values = {"R": 100e3, "RS": 1e12, "C": 10e-9}
    assert sum(_textbook_ring(3.0, 10.0, 1, 1)) == pytest.approx(sum(_textbook_ring(
        7.0, 10.0, 1, 1)))
    cal = calibrate(osc, values, 1 / sum(_textbook_ring(3.0, 10.0, 100e3, 10e-9)))
    assert min(abs(cal.vt_plus_v - 3.0), abs(cal.vt_plus_v - 7.0)) < 1e-4
    twin = 10.0 - cal.vt_plus_v
    assert any(f"{twin:.3g} V fits these readings as well" in w for w in cal.warnings)


def test_divider_calibrates_from_its_divided_output():
    # Read at Q10 (÷1024, TI CD4060B data sheet): the fit works on the oscillator behind
    # the counter; a duty reading is refused (the counter's output is always 50 %).
    from core.model.circuits.divider import with_divide_by
    osc = with_divide_by(make_oscillator("divider", "CD4060B", 9.0), 1024)
    values = {"R": 220e3, "RS": 1e6, "C": 470e-9}
    truth = float(frequency(osc.with_thresholds(5.9, 5.9), values))
    cal = calibrate(osc, values, truth)
    # The table's typical value is mid-supply (4.5 V): the two answers are about as near,
    # and the lower is kept (the near-mirror of 5.9 V about the fastest point).
    assert cal.vt_plus_v < 4.5 and any("5.9 V fits" in w for w in cal.warnings)
    assert float(frequency(osc.with_thresholds(cal.vt_plus_v, cal.vt_plus_v), values)) == \
        pytest.approx(truth, rel=1e-9)
    with pytest.raises(InputError, match="50 %"):
        calibrate(osc, values, truth, 50.0)


def test_switching_calibration_round_trips_through_the_command_line(capsys):
    from core.cli import main
    base = ["--circuit", "cmos-astable", "--family", "CD4069UB", "--supply", "10V",
            "--r", "100k", "--rs", "470k", "--c", "10n", "--json"]
    assert main(["predict", *base, "--threshold", "4V"]) == 0
    made = json.loads(capsys.readouterr().out)
    assert main(["calibrate", *base, "--measured", f"{made['frequency_hz']}Hz", "--duty",
                 f"{made['duty_pct']}", "--save", "ring"]) == 0
    cal = json.loads(capsys.readouterr().out)
    assert cal["mode"] == "switching" and cal["vt_plus_v"] == pytest.approx(4.0, abs=1e-3)
    assert main(["predict", *base, "--calibration", "ring"]) == 0
    used = json.loads(capsys.readouterr().out)
    assert used["frequency_hz"] == pytest.approx(made["frequency_hz"], rel=1e-6)


def test_readings_with_rh_and_rl_columns_calibrate_the_steered_wiring(tmp_path, capsys):
    # Readings made by the steered model (checked against solve_ivp and ngspice in
    # tests/test_steered_schmitt.py) at VT+ 2.8 V, VT- 1.6 V give those thresholds back.
    from core.cli import main
    osc = hc14().with_steering().with_thresholds(2.8, 1.6)
    rows = ["rh,rl,c,frequency,duty"]
    for rh, rl in ((47e3, 10e3), (10e3, 47e3)):
        t_high, t_low = (float(t) for t in times(osc, {"RH": rh, "RL": rl, "C": 10e-9}))
        rows.append(f"{rh:g},{rl:g},10n,{1 / (t_high + t_low):.9g},"
                    f"{100 * t_high / (t_high + t_low):.9g}")
    path = tmp_path / "readings.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    assert main(["calibrate", "--family", "74HC14", "--supply", "5V", "--measurements",
                 str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["vt_plus_v"] == pytest.approx(2.8, abs=1e-4)
    assert data["vt_minus_v"] == pytest.approx(1.6, abs=1e-4)
