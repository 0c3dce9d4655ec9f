"""A class-2 ceramic's DC bias in the drawer, the search, the trim and the sheet."""

from __future__ import annotations

import json

import numpy as np
import pytest
from support.cli import run_tickbin

from core.design.request import Request
from core.errors import DrawerFileError
from core.model import drift
from core.model.timing import frequency, make_oscillator
from core.parts.drawer_file import parse_drawer_text, read_drawer, write_drawer
from core.parts.part import CASES, Part
from core.units import Tolerance

HEADER = "kind,value,tolerance,quantity,dielectric,voltage,case\n"


def _drawer(tmp_path, rows, header=HEADER):
    path = tmp_path / "drawer.csv"
    path.write_bytes((header + "\n".join(rows) + "\n").encode())
    return path


def test_the_drawer_reads_voltage_and_case_and_writes_them_back_unchanged(tmp_path):
    path = _drawer(tmp_path, ["C,1u,10%,5,X5R,6.3V,0603", "C,1u,10%,5,X7R,25 V,Radial",
                              "C,10n,5%,5,C0G,,", "R,10k,1%,5,,,"])
    before = path.read_bytes()
    drawer = read_drawer(path)
    x5r, x7r, c0g, r = drawer.parts()
    assert (x5r.voltage, x5r.case) == (6.3, "0603")
    assert (x7r.voltage, x7r.case) == (25.0, "radial")
    assert (c0g.voltage, c0g.case) == (None, "")
    assert (r.voltage, r.case) == (None, "")
    drawer.set_cell(3, "quantity", "4")
    write_drawer(drawer)
    # Only the edited cell is written anew: the case column and every other byte stay.
    assert path.read_bytes() == before.replace(b"R,10k,1%,5,", b"R,10k,1%,4,")
    # The DC-bias table knows every case the drawer accepts.
    assert set(drift.DC_BIAS_LOSS_AT_RATED) == set(CASES)


def test_a_bad_case_or_voltage_names_its_line(tmp_path):
    path = _drawer(tmp_path, ["C,1u,10%,5,X5R,6.3V,tiny", "C,1u,10%,5,X5R,lots,0603"])
    with pytest.raises(DrawerFileError) as err:
        read_drawer(path)
    text = "\n".join(str(p) for p in err.value.problems)
    assert "drawer.csv:2: case 'tiny': expected a case" in text
    assert "drawer.csv:3: voltage 'lots'" in text
    assert not parse_drawer_text(HEADER + "C,1u,10%,5,X5R,6.3V,tiny\n").parts()


def test_the_capacitor_swing_comes_from_the_circuits_thresholds():
    # NXP 74HC1G14 table (device table): the node swings between VT- and VT+.
    schmitt = make_oscillator("schmitt", "74HC14", 5.0)
    assert drift.capacitor_swing_v(schmitt) == pytest.approx((schmitt.vt_minus_v,
                                                              schmitt.vt_plus_v))
    # TI NE555 data sheet: the capacitor runs between VCC/3 and 2VCC/3.
    lo, hi = drift.capacitor_swing_v(make_oscillator("555", "NE555", 9.0))
    assert (lo, hi) == pytest.approx((3.0, 6.0), rel=0.03)
    # The CMOS astable's capacitor reverses on every edge (textbook two-inverter astable).
    lo, hi = drift.capacitor_swing_v(make_oscillator("cmos-astable", "CD4069UB", 10.0))
    assert lo < 0 < hi


def test_typical_dc_bias_over_the_swing():
    # Makers' typical DC-bias curves (from memory): a 1 µF X5R 0603 rated 6.3 V keeps
    # roughly 55–75 % at 3.3 V; the same in a 1206 case or at a 25 V rating keeps more;
    # class 1 (C0G) and film do not change.
    assert 0.55 < float(drift.dc_bias_factor("x5r", 3.3, 6.3, "0603")) < 0.75
    assert drift.dc_bias_factor("x5r", 3.3, 6.3, "1206") > drift.dc_bias_factor(
        "x5r", 3.3, 6.3, "0603")
    assert drift.dc_bias_factor("x5r", 3.3, 25.0, "0603") > drift.dc_bias_factor(
        "x5r", 3.3, 6.3, "0603")
    osc = make_oscillator("555", "NE555", 9.0)
    # The charge between the thresholds is ∫ C(V) dV (textbook): the mean over the swing.
    lo, hi = drift.capacitor_swing_v(osc)
    volts = np.linspace(lo, hi, 2001)
    mean = float(np.mean(drift.dc_bias_factor("x7r", volts, 16.0, "0805")))
    assert drift.swing_bias_factor(osc, "x7r", 16.0, "0805") == pytest.approx(mean, rel=1e-4)
    parts = [Part("C", 1e-6, Tolerance(0.1, 0.1), 5, dielectric="x7r", voltage=16.0,
                  case="0805", line=2),
             Part("C", 1e-6, Tolerance(0.1, 0.1), 5, dielectric="c0g", voltage=16.0, line=3),
             Part("C", 1e-6, Tolerance(0.1, 0.1), 5, dielectric="x7r", line=4)]
    x7r, c0g, unrated = drift.with_dc_bias(parts, osc)
    assert x7r.value == pytest.approx(1e-6 * mean, rel=1e-4) and x7r.label_value == 1e-6
    assert c0g is parts[1] and unrated is parts[2]
    # Applying it twice changes nothing (the window hands on parts already biased).
    assert drift.with_dc_bias([x7r], osc)[0] == x7r


def test_search_reckons_with_the_dc_bias(tmp_path):
    # An ideal RC relaxation oscillator runs at f ∝ 1/C (textbook): a class-2 capacitor
    # that loses capacitance under its bias runs faster by the same factor.
    stock = _drawer(tmp_path, ["R,10k,1%,5,,,", "C,1u,10%,5,X5R,6.3V,0603"])
    plain = _drawer(tmp_path / "..", ["R,10k,1%,5,,,", "C,1u,10%,5,X5R,,"])
    base = ("search", "--target", "70", "--accept", "90", "--max-capacitors", "1", "--json")
    biased = json.loads(run_tickbin(tmp_path, *base, "--stock", str(stock)).stdout)
    marked = json.loads(run_tickbin(tmp_path, *base, "--stock", str(plain)).stdout)
    b, m = biased["candidates"][0], marked["candidates"][0]
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    factor = drift.swing_bias_factor(osc, "x5r", 6.3, "0603")
    assert b["values"]["C"] == 1e-6  # as printed on the part: what its NODE gives
    assert b["effective_values"]["C"] == pytest.approx(1e-6 * factor)
    assert "effective_values" not in m
    seen = {**b["values"], **b["effective_values"]}
    assert b["frequency_hz"] == pytest.approx(float(frequency(osc, seen)))
    assert b["frequency_hz"] / m["frequency_hz"] == pytest.approx(1 / factor, rel=0.01)
    # Every corner scales with it: the worst case moves by the same factor.
    assert b["worst_case_hz"][0] / m["worst_case_hz"][0] == pytest.approx(1 / factor, rel=0.01)
    assert any("less capacitance" in n and "0603" in n and "line 3" in n for n in b["notes"])
    assert not any("less capacitance" in n for n in m["notes"])
    text = run_tickbin(tmp_path, *base[:-1], "--stock", str(stock)).stdout
    assert "1 µF" in text  # the value printed on the part, not the one it has in the circuit


def test_a_steady_capacitor_beats_a_biased_one(tmp_path):
    # Same marked value in X5R (rated 6.3 V, 0603) and film: the X5R runs fast by its
    # DC-bias loss (typical curves), the film holds its value and comes first.
    stock = _drawer(tmp_path, ["R,10k,1%,5,,,", "C,1u,10%,5,X5R,6.3V,0603",
                               "C,1u,5%,5,film,63V,"])
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    target = float(frequency(osc, {"R": 10e3, "C": 1e-6}))
    out = json.loads(run_tickbin(tmp_path, "search", "--stock", str(stock), "--target",
                                 f"{target:.6g}", "--accept", "50", "--json").stdout)
    first = out["candidates"][0]
    assert first["networks"]["C"] == {"line": 4}
    assert abs(first["error_pct"]) < 0.01


def test_trim_and_sheet_use_the_biased_value(tmp_path):
    stock = _drawer(tmp_path, ["R,15k,1%,5,,,", "R,12k,1%,5,,,", "P,10k,10%,2,,,",
                               "C,100n,10%,5,X7R,10V,0603"])
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.6, vt_minus=1.7)
    factor = drift.swing_bias_factor(osc, "x7r", 10.0, "0603")
    out = json.loads(run_tickbin(tmp_path, "trim", "--stock", str(stock), "--band", "700..800",
                                 "--vt-plus", "2.6", "--vt-minus", "1.7", "--json").stdout)
    for cand in out["candidates"]:
        c_parts = (len(cand["networks"]["C"].get("parallel", cand["networks"]["C"].get(
            "series", [0]))))
        ratio = cand["effective_values"]["C"] / (1e-7 * factor)  # two in parallel or series
        assert ratio == pytest.approx(c_parts) or ratio == pytest.approx(1 / c_parts)
        assert any("less capacitance" in n for n in cand["notes"])
    # The sheet (data) states it for a trim design and for a search design.
    from core.output.sheet import build_sheet

    trim_request = Request(band_hz=(700.0, 800.0), vt_plus_v=2.6, vt_minus_v=1.7)
    trimmed = trim_request.run(read_drawer(stock).parts(), osc).candidates[0]
    sheet = build_sheet(osc, trimmed, "700 Hz … 800 Hz")
    assert any("less capacitance" in w for w in sheet.warnings)
    assert any("X7R ages" in w for w in sheet.warnings)
    assert not any("turn the pot" in w for w in sheet.warnings)

    parts = read_drawer(stock).parts()
    request = Request(target_hz=float(frequency(osc, {"R": 15e3, "C": 1e-7 * factor})),
                      vt_plus_v=2.6, vt_minus_v=1.7, accept_pct=5)
    result = request.run(parts, osc)
    sheet = build_sheet(osc, result.candidates[0], "target")
    assert any("less capacitance" in w for w in sheet.warnings)
    assert any(row.value == "100 nF" for row in sheet.parts)
