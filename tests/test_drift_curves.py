"""Drift as curves for the window's plots (core.model.drift.temperature_curve, supply_curve):
checked against the textbook RC law and against ``predict``'s own drift figures."""

from __future__ import annotations

import json

import numpy as np
import pytest
from support.cli import run_tickbin

from core.model import drift
from core.model.timing import frequency, make_oscillator


def test_temperature_curve_of_an_ideal_schmitt_follows_one_over_rc():
    # Textbook: f = 1 / (R C k) for the ideal circuit, so at each temperature the
    # frequency scales with 1 / ((1 + ΔR/R)(1 + ΔC/C)); EIA-198 C0G ±30 ppm/K and
    # metal film ±50 ppm/K (from memory, as in core.model.drift).
    osc = make_oscillator("schmitt", "74HC14", 5.0).idealised()
    values = {"R": 10e3, "C": 10e-9}
    f0 = float(frequency(osc, values))
    curve = drift.temperature_curve(osc, values, -20.0, 70.0,
                                    drift.part_envelopes(values, "c0g", "metal film"))
    assert curve.x[0] == -20.0 and curve.x[-1] == 70.0 and np.all(np.diff(curve.x) > 0)
    k = np.abs(curve.x - 25.0)
    np.testing.assert_allclose(curve.low_hz, f0 / ((1 + 50e-6 * k) * (1 + 30e-6 * k)),
                               rtol=1e-12)
    np.testing.assert_allclose(curve.high_hz, f0 / ((1 - 50e-6 * k) * (1 - 30e-6 * k)),
                               rtol=1e-12)


def _predict(tmp_path, *argv):
    r = run_tickbin(tmp_path, "predict", *argv, "--json")
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


@pytest.mark.parametrize("dielectric", ["x7r", "electrolytic", "film"])
def test_temperature_curve_extremes_are_predicts_figures(tmp_path, dielectric):
    # The same parts through predict --temperature (carbon film: the default ±5 %).
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    values = {"R": 33e3, "C": 47e-9}
    out = _predict(tmp_path, "--r", "33k", "--c", "47n", "--dielectric", dielectric,
                   "--temperature=-20..70")
    curve = drift.temperature_curve(osc, values, -20.0, 70.0,
                                    drift.part_envelopes(values, dielectric, "carbon film"))
    lo, hi = out["temperature_hz"]
    assert float(curve.low_hz.min()) == pytest.approx(lo, rel=1e-12)
    assert float(curve.high_hz.max()) == pytest.approx(hi, rel=1e-12)


def test_a_chip_drift_keeps_the_curve_inside_predicts_band(tmp_path):
    # TI NE555 data sheet (from memory): 150 ppm/°C timing drift. predict takes it at
    # the range's farthest temperature for every part corner; the curve takes it at each
    # temperature, so it lies inside that band and meets it on a range symmetric about
    # 25 °C where the parts' extremes sit at the ends.
    osc = make_oscillator("555", "NE555", 9.0)
    values = {"RA": 1e3, "RB": 10e3, "C": 100e-9}
    envelopes = drift.part_envelopes(values, "c0g", "metal film")
    for text, (lo_c, hi_c) in (("-20..70", (-20.0, 70.0)), ("0..85", (0.0, 85.0))):
        out = _predict(tmp_path, "--circuit", "555", "--family", "NE555", "--supply", "9V",
                       "--ra", "1k", "--rb", "10k", "--c", "100n", "--dielectric", "c0g",
                       "--r-tolerance", "1%", f"--temperature={text}")
        curve = drift.temperature_curve(osc, values, lo_c, hi_c, envelopes)
        lo, hi = out["temperature_hz"]
        assert lo * (1 - 1e-12) <= curve.low_hz.min() and curve.high_hz.max() <= hi * (1 + 1e-12)
        assert float(curve.low_hz.min()) == pytest.approx(lo, rel=1e-12)
        assert float(curve.high_hz.max()) == pytest.approx(hi, rel=1e-12)


@pytest.mark.parametrize(("circuit", "family", "supply", "parts", "span"), [
    ("schmitt", "74HC14", "5V", (("--r", "33k"), ("--c", "47n")), "2..6"),
    ("555", "NE555", "5V", (("--ra", "1k"), ("--rb", "10k"), ("--c", "100n")), "4.5..16"),
])
def test_supply_curve_extremes_are_predicts_figures(tmp_path, circuit, family, supply, parts,
                                                    span):
    from core.units import parse_capacitance, parse_resistance, parse_voltage

    osc = make_oscillator(circuit, family, parse_voltage(supply))
    values = {flag[2:].upper(): (parse_capacitance if flag == "--c" else parse_resistance)(v)
              for flag, v in parts}
    out = _predict(tmp_path, "--circuit", circuit, "--family", family, "--supply", supply,
                   *(a for pair in parts for a in pair), f"--supply-range={span}")
    lo_v, hi_v = (float(v) for v in span.split(".."))
    curve = drift.supply_curve(osc, values, lo_v, hi_v)
    assert curve.x[0] == lo_v and curve.x[-1] == hi_v
    assert [float(curve.low_hz.min()), float(curve.high_hz.max())] == pytest.approx(
        out["supply_hz"], rel=1e-12)
    # At the supply the parts were predicted for, the curve passes through predict's own
    # frequency (the device table's thresholds at that supply).
    at = np.flatnonzero(np.isclose(curve.x, parse_voltage(supply)))
    assert at.size == 1  # a listed supply is always on the grid
    assert curve.low_hz[at[0]] == pytest.approx(out["frequency_hz"], rel=1e-12)
