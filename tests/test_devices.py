"""The device table: sources, datasheet numbers, interpolation, refusal, pin hookup."""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import numpy as np
import pytest

from core.errors import InputError, SetupError, TickbinError
from core.model.circuits import CIRCUITS, circuit_named
from core.model.devices import CIRCUIT_NAMES, Family, device_table, load_device_table
from core.model.spread import monte_carlo
from core.model.timing import make_oscillator
from core.storage.locations import resource

REQUIRED_FAMILIES = ("74HC14", "74HCT14", "74AHC14", "74LVC14A", "74LS14", "7414",
                     "CD40106B", "CD4093B", "NE555", "TLC555")


REFERENCES = tomllib.loads((Path(__file__).parent / "data" / "timing_references.toml").read_text(
    encoding="utf-8"))
HC1G14 = REFERENCES["hc1g14_thresholds"]
MC74HC14A = REFERENCES["mc74hc14a_limits"]


def _raw() -> dict:
    return tomllib.loads(resource("devices.toml").read_text(encoding="utf-8"))


def test_every_family_the_issue_lists_is_in_the_table():
    names = device_table().families()
    for name in REQUIRED_FAMILIES:
        assert name in names
    assert set(device_table().families("555")) >= {"NE555", "TLC555"}
    assert "74HC14" not in device_table().families("555")


def test_every_entry_names_its_source():
    # Binding rule of the customer: every entry carries its source or "from memory".
    raw = _raw()
    for name, fam in raw["families"].items():
        assert fam.get("source", "").strip(), name
        for entry in fam.get("supply", ()):
            assert entry.get("source", "").strip(), (name, entry["v"])
        if "span_of" not in fam:
            assert fam.get("r_range_source", "").strip(), name
    for name, pkg in raw["packages"].items():
        assert pkg.get("source", "").strip(), name


@pytest.mark.parametrize(("supply", "vt_plus", "vt_minus"), list(zip(
    # NXP 74HC1G14 data sheet, static characteristics, -40…85 °C (min/typ/max).
    HC1G14["supplies_v"], HC1G14["vt_plus"], HC1G14["vt_minus"], strict=True)))
def test_74hc14_thresholds_at_listed_supplies_are_the_datasheet_values(supply, vt_plus,
                                                                       vt_minus):
    d = device_table().family("74HC14-NXP").at(supply)
    assert d.vt_plus == pytest.approx(vt_plus, abs=1e-12)
    assert d.vt_minus == pytest.approx(vt_minus, abs=1e-12)


def test_ls14_numbers_and_the_derived_ttl_input_model():
    # National DM74LS14: VT+ 1.4/1.6/1.9, VT- 0.5/0.8/1.0, IT+ -0.14 mA, IT- -0.18 mA.
    d = device_table().family("74LS14").at(5.0)
    assert d.vt_plus == (1.4, 1.6, 1.9)
    assert d.vt_minus == (0.5, 0.8, 1.0)
    # The Thevenin input reproduces both datasheet currents (out of the pin = negative).
    for v, current in ((1.6, -0.14e-3), (0.8, -0.18e-3)):
        assert -(d.input_v_open_v - v) / d.input_r_ohm == pytest.approx(current, rel=1e-9)
    # VOH 3.4 V typ at -0.4 mA through the output resistance from the open level (the
    # line fitted to the VOH-IOH curve passes within 20 mV of the data-sheet point).
    assert d.voh_v - 0.4e-3 * d.r_out_high_ohm == pytest.approx(3.4, abs=0.02)


def test_ttl_output_resistance_from_the_output_curves():
    # National/Fairchild DM74LS14: VOL 0.25 V typ at 4 mA and 0.35 V at 8 mA fix the low
    # side exactly (25 Ω behind 0.15 V).
    ref = REFERENCES["dm74ls14_output"]
    d = device_table().family("74LS14").at(5.0)
    for vol, i_ol in ref["vol_typ"]:
        assert d.vol_v + i_ol * d.r_out_low_ohm == pytest.approx(vol, abs=1e-9)
    # Issue 11 (fact of the trade): a TTL high output's typical resistance is nearer
    # 50 Ω than 250 Ω; a line through VOH typ and an assumed open level is not.
    for name in ("74LS14", "7414"):
        r_high = device_table().family(name).at(5.0).r_out_high_ohm
        assert 25.0 <= r_high <= 80.0, name
    # DM74LS14 short-circuit current IOS -20 ... -100 mA: the Thevenin high level
    # shorted to ground must fall inside it.
    i_short = -d.voh_v / d.r_out_high_ohm
    assert ref["ios_a"][1] <= i_short <= ref["ios_a"][0]


def test_a_curve_needs_two_points():
    text = _one_family_toml('voh_curve = [[3.4, -0.4e-3]]\nvol_test = [0.2, 4e-3]')
    with pytest.raises(TickbinError, match="voh_curve"):
        load_device_table(text)


def test_74hc14_hysteresis_window():
    # NXP 74HC1G14 static characteristics: VH 0.2…1.0 V at 2 V, 0.4…1.4 V at 4.5 V,
    # 0.6…1.6 V at 6 V.
    fam = device_table().family("74HC14-NXP")
    window = [(fam.at(v).hysteresis_min_v, fam.at(v).hysteresis_max_v) for v in (2.0, 4.5, 6.0)]
    assert window == [(0.2, 1.0), (0.4, 1.4), (0.6, 1.6)]


@pytest.mark.parametrize("k", range(3))
def test_mc74hc14a_limits_are_the_datasheet_values(k):
    # ON Semiconductor MC74HC14A, DC characteristics, guaranteed limits (<= 85 °C).
    d = device_table().family("MC74HC14A").at(MC74HC14A["supplies_v"][k])
    assert (d.vt_plus[0], d.vt_plus[2]) == pytest.approx(MC74HC14A["vt_plus"][k], abs=1e-12)
    assert (d.vt_minus[0], d.vt_minus[2]) == pytest.approx(MC74HC14A["vt_minus"][k],
                                                           abs=1e-12)
    assert (d.hysteresis_min_v, d.hysteresis_max_v) == pytest.approx(
        MC74HC14A["hysteresis"][k], abs=1e-12)
    # The data sheet's own note: VH max = VT+ max - VT- min.
    assert d.hysteresis_max_v == pytest.approx(d.vt_plus[2] - d.vt_minus[0])


def assert_spans_its_makers(name: str, makers: set[str]) -> Family:
    """The generic entry admits every maker's chip: thresholds and hysteresis window."""
    table = device_table()
    span = table.family(name)
    assert set(span.span_of) == makers
    for supply in span.supplies_v:
        s = span.at(supply)
        for maker in span.span_of:
            v = table.family(maker).at(supply)
            assert s.vt_plus[0] <= v.vt_plus[0] and v.vt_plus[2] <= s.vt_plus[2]
            assert s.vt_minus[0] <= v.vt_minus[0] and v.vt_minus[2] <= s.vt_minus[2]
            assert s.hysteresis_min_v <= v.hysteresis_min_v
            assert v.hysteresis_max_v <= s.hysteresis_max_v
    return span


def test_74hc14_spans_the_makers():
    # Issue 11: one maker allows VT- down to 0.9 V and hysteresis up to 2.25 V at 4.5 V
    # (ON Semi MC74HC14A); the generic 74HC14 must admit every maker's chip.
    span = assert_spans_its_makers("74HC14", {"74HC14-NXP", "MC74HC14A"})
    at_45 = span.at(4.5)
    assert at_45.vt_minus[0] == pytest.approx(0.9)
    assert at_45.hysteresis_max_v == pytest.approx(2.25)
    # A threshold corner with the ON Semi chip's widest window is in the worst case.
    corners = make_oscillator("schmitt", span, 4.5).threshold_corners()
    assert max(a - b for a, b in corners) == pytest.approx(2.25)


def test_74ahc14_has_a_hysteresis_maximum():
    # TI SN74AHC14 electrical characteristics, ΔVT min/max (from memory).
    ref = REFERENCES["sn74ahc14_hysteresis"]
    fam = device_table().family("74AHC14")
    for supply, window in zip(ref["supplies_v"], ref["hysteresis"], strict=True):
        d = fam.at(supply)
        assert (d.hysteresis_min_v, d.hysteresis_max_v) == pytest.approx(window)


def test_ne555_threshold_spread_matches_the_datasheet_timing_error():
    # TI NE555 switching characteristics (from memory): astable initial error 2.25 % typ,
    # read as one sigma (common practice, no published source); monostable 3 % max.
    ref = REFERENCES["ne555_timing_error"]
    osc = make_oscillator("555", "NE555", 9.0)
    values = {"RA": 10e3, "RB": 10e3, "C": 100e-9}
    f = monte_carlo(osc, values, {}, n=40_000, seed=3).frequencies_hz
    assert 100 * np.std(f) / np.mean(f) == pytest.approx(ref["astable_typ_pct"], rel=0.15)
    # A monostable's t = R C ln(1 / (1 - threshold)): the table's threshold range must
    # reach the data sheet's 3 % maximum timing error.
    lo, typ, hi = device_table().family("NE555").at(9.0).vt_plus
    mono = [math.log(1 / (1 - x / 9.0)) for x in (lo, typ, hi)]
    assert 100 * max(mono[1] / mono[0] - 1, mono[2] / mono[1] - 1) >= ref["monostable_max_pct"]


def test_hef40106b_datasheet_thresholds():
    # Philips HEF40106B data sheet, DC characteristics: 5/10/15 V.
    fam = device_table().family("HEF40106B")
    assert fam.at(10.0).vt_plus == (3.7, 5.8, 7.0)
    assert fam.at(15.0).vt_minus == (4.0, 6.5, 10.1)


def test_interpolation_between_listed_supplies_is_linear():
    fam = device_table().family("74HC14")
    lo, hi, mid = fam.at(4.5), fam.at(6.0), fam.at(5.25)
    for k in range(3):
        assert mid.vt_plus[k] == pytest.approx(0.5 * (lo.vt_plus[k] + hi.vt_plus[k]))
        assert mid.vt_minus[k] == pytest.approx(0.5 * (lo.vt_minus[k] + hi.vt_minus[k]))
    assert mid.r_out_high_ohm == pytest.approx(0.5 * (lo.r_out_high_ohm + hi.r_out_high_ohm))
    assert lo.r_out_high_ohm > hi.r_out_high_ohm  # CMOS drives harder at higher supply


@pytest.mark.parametrize(("family", "supply"), [("74HC14", 9.0), ("74HC14", 1.5),
                                                 ("74LVC14A", 5.0), ("74LS14", 3.3),
                                                 ("NE555", 3.0), ("CD40106B", 20.0)])
def test_supply_outside_the_family_range_is_refused(family, supply):
    with pytest.raises(SetupError, match="supply range"):
        device_table().family(family).at(supply)


def test_family_lookup_is_case_insensitive_and_names_the_known_ones():
    assert device_table().family("74hc14").name == "74HC14"
    with pytest.raises(InputError, match="74HC14"):
        device_table().family("74XX99")


def test_cd40106b_spans_the_makers():
    # HEF40106B vs CD40106BC at 5 V differ markedly (issue 3): the generic entry
    # must cover both makers' min…max.
    span = assert_spans_its_makers("CD40106B", {"HEF40106B", "CD40106BC", "CD40106B-TI"})
    assert span.at(5.0).vt_plus[2] == 4.3  # CD40106BC's max
    assert span.at(5.0).vt_plus[0] == 2.0  # HEF40106B's min


def test_pin_hookup():
    # Standard 74xx14 DIP-14 pinout (from memory): gate 1 in 1, out 2, VCC 14, GND 7.
    pkg = device_table().family("74HC14").package
    assert (pkg.name, pkg.input_pin, pkg.output_pin, pkg.vcc_pin, pkg.gnd_pin) == (
        "DIP-14", 1, 2, 14, 7)
    # 555 DIP-8 (from memory): 1 GND, 2 TRIG, 3 OUT, 4 RESET, 5 CONT, 6 THRES, 7 DISCH, 8 VCC.
    pins = device_table().family("NE555").package.pins
    assert pins == {"gnd": 1, "trigger": 2, "output": 3, "reset": 4, "control": 5,
                    "threshold": 6, "discharge": 7, "vcc": 8}
    nand = device_table().family("CD4093B").package
    assert nand.pins["tie_high"] == 2 and nand.output_pin == 3


@pytest.mark.parametrize("name", device_table().families())
def test_every_family_is_physically_consistent_across_its_range(name):
    fam = device_table().family(name)
    lo, hi = fam.supply_range_v
    for supply in (lo, 0.5 * (lo + hi), hi):
        d = fam.at(supply)
        one = circuit_named(fam.circuit).one_threshold  # one switching voltage: VT+ = VT-
        assert d.vol_v < d.vt_minus[1] <= d.vt_plus[1] < d.voh_v
        assert (d.vt_minus[1] == d.vt_plus[1]) == one
        assert d.r_min_ohm < d.r_max_ohm
        assert d.f_max_hz > 0 and math.isfinite(d.f_max_hz)
        osc = make_oscillator(fam.circuit, fam, supply)
        corners = osc.threshold_corners()
        assert corners
        for a, b in corners:
            # Physics: VT+ above VT-, at least the guaranteed hysteresis, within min…max.
            assert a == b if one else a > b
            if fam.circuit == "schmitt":
                assert d.hysteresis_min_v - 1e-9 <= a - b <= d.hysteresis_max_v + 1e-9
            assert d.vt_plus[0] - 1e-9 <= a <= d.vt_plus[2] + 1e-9
            assert d.vt_minus[0] - 1e-9 <= b <= d.vt_minus[2] + 1e-9


def _one_family_toml(output_lines: str, name: str = "ONE",
                     vt_plus: str = "[1.0, 1.5, 2.0]") -> str:
    return f"""
[packages.p]
name = "DIP-14"
pins = {{ input = 1, output = 2, vcc = 14, gnd = 7 }}
[families.{name}]
circuit = "schmitt"
supply_range_v = [4.5, 5.5]
package = "p"
[[families.{name}.supply]]
v = 5.0
vt_plus = {vt_plus}
vt_minus = [0.5, 0.6, 0.7]
hysteresis_min = 0.1
{output_lines}
r_range_ohm = [1e3, 1e6]
"""


def test_a_malformed_table_is_refused_with_the_entry_named():
    text = _one_family_toml("r_out_ohm = [50.0, 50.0]", "BAD", "[1.0, 0.9, 2.0]")
    with pytest.raises(TickbinError, match="BAD"):
        load_device_table(text)


# Unbuffered inverters: the switching windows are checked against their data sheets in
# tests/test_devices_datasheets.py; here the guaranteed drive. CD4069UB sink current at
# 25 °C (ON Semiconductor MC14069UB electrical characteristics): (supply, VOL, IOL typ,
# IOL min).
CD4069UB_SINK = [(5.0, 0.4, 0.88e-3, 0.51e-3), (10.0, 0.5, 2.25e-3, 1.3e-3),
                 (15.0, 1.5, 8.8e-3, 3.4e-3)]


@pytest.mark.parametrize(("supply", "vol", "i_typ", "i_min"), CD4069UB_SINK)
def test_cd4069ub_output_resistance_is_the_drive_table(supply, vol, i_typ, i_min):
    # The table's output resistance is VOL / IOL typical, and meets the guaranteed IOL.
    d = device_table().family("CD4069UB").at(supply)
    assert d.r_out_low_ohm == pytest.approx(vol / i_typ, rel=0.02)
    assert d.r_out_low_ohm * i_min <= vol


# Fairchild MM74HCU04 DC electrical characteristics, 25 °C guaranteed limits:
# (supply, IOH, VOH min, IOL, VOL max).
@pytest.mark.parametrize(("supply", "i_high", "voh_min", "i_low", "vol_max"),
                         [(4.5, 4.0e-3, 3.98, 6.0e-3, 0.26), (6.0, 5.2e-3, 5.48, 7.8e-3, 0.26)])
def test_74hcu04_output_meets_the_drive_table(supply, i_high, voh_min, i_low, vol_max):
    d = device_table().family("74HCU04").at(supply)
    assert d.voh_v - i_high * d.r_out_high_ohm >= voh_min
    assert d.vol_v + i_low * d.r_out_low_ohm <= vol_max


def test_families_may_name_exactly_the_registered_circuits():
    # Project structure, no published source: devices.toml's circuit names are checked
    # against CIRCUIT_NAMES, which cannot be read from the registry (it imports devices).
    assert set(CIRCUIT_NAMES) == set(CIRCUITS)
