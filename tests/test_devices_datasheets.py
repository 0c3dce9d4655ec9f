"""The unbuffered-inverter and 4060 entries of the device table against their data sheets.

Every number below is read off the data sheet named beside it (not off devices.toml),
so a changed table entry fails here. Supplies are the ones each data sheet lists.
"""

from __future__ import annotations

import pytest

from core.model.circuits.divider import with_divide_by
from core.model.devices import device_table
from core.model.timing import make_oscillator, times

# ON Semiconductor (Motorola) MC14069UB data sheet, electrical characteristics, 25 °C:
# VDD: (VIL max, VIL typ, VIH typ, VIH min) [V].
MC14069UB_INPUT = {5.0: (1.0, 2.25, 2.75, 4.0), 10.0: (2.0, 4.50, 5.50, 8.0),
                   15.0: (2.5, 6.75, 8.25, 12.5)}
# National CD4069UBC (TL/F/5975) DC electrical characteristics: VIL max, VIH min [V].
CD4069UBC_INPUT = {5.0: (1.0, 4.0), 10.0: (2.0, 8.0), 15.0: (3.0, 12.0)}
# Typical output current at 25 °C, the same in MC14069UB and CD4069UBC:
# VDD: (VO for IOH, VO for IOL, |I| typ [A]).
CD4069UB_DRIVE = {5.0: (4.6, 0.4, 0.88e-3), 10.0: (9.5, 0.5, 2.25e-3),
                  15.0: (13.5, 1.5, 8.8e-3)}
# National CD4069UBC AC electrical characteristics: tPHL = tPLH typ [s].
CD4069UBC_TPD = {5.0: 50e-9, 10.0: 30e-9, 15.0: 25e-9}

# ON Semiconductor MC74HCU04A DC electrical characteristics (Fairchild MM74HCU04
# Rev. 1.4.0 lists the same): VCC: (VIL max, VIH min) [V].
MC74HCU04A_INPUT = {2.0: (0.3, 1.7), 4.5: (0.8, 3.6), 6.0: (1.1, 4.8)}
# Fairchild MM74HCU04 DC electrical characteristics, typ at 25 °C:
# VCC: (VOH, IOH, VOL, IOL).
MM74HCU04_OUTPUT = {4.5: (4.2, -4.0e-3, 0.2, 6.0e-3), 6.0: (5.7, -5.2e-3, 0.2, 7.8e-3)}
# NXP 74HC1GU04 data sheet Table 8, tpd typ (CL = 50 pF) [s].
HC1GU04_TPD = {4.5: 7e-9, 6.0: 6e-9}

# ON Semiconductor MC14060B electrical characteristics, input voltage "for input 11 and
# output 10" (the RC oscillator's inverter), 25 °C: VDD: (VIL max, VIL typ, VIH typ,
# VIH min) [V].
MC14060B_OSC_INPUT = {5.0: (1.0, 2.25, 2.75, 4.0), 10.0: (2.0, 4.50, 5.50, 8.0),
                      15.0: (2.5, 6.75, 8.25, 12.5)}
# Fairchild MM74HC4060 DC electrical characteristics (all inputs but pins 9 and 10):
# VCC: (VIL max, VIH min) [V].
MM74HC4060_INPUT = {2.0: (0.5, 1.5), 4.5: (1.35, 3.15), 6.0: (1.8, 4.2)}
# Philips 74HC/HCT4060 (December 1990), timing component limitations: the "ON"
# resistance in series with Rt, typ [Ω].
PHILIPS_HC4060_R_ON = {2.0: 280.0, 4.5: 130.0, 6.0: 100.0}


def _at(name: str, supply: float):
    return device_table().family(name).at(supply)


@pytest.mark.parametrize("supply", sorted(MC14069UB_INPUT))
def test_cd4069ub_switching_voltage_is_the_mc14069ub_window(supply: float) -> None:
    vil, vil_typ, vih_typ, vih = MC14069UB_INPUT[supply]
    lo, typ, hi = _at("CD4069UB", supply).vt_plus
    # MC14069UB: the switching point lies between VIL max and VIH min.
    assert (lo, hi) == pytest.approx((vil, vih), abs=1e-12)
    # typ: midway between the sheet's typical VIL and VIH (0.45 and 0.55 VDD).
    assert typ == pytest.approx(0.5 * (vil_typ + vih_typ), abs=1e-12)
    # National CD4069UBC's window lies inside it (the table spans both makers).
    n_vil, n_vih = CD4069UBC_INPUT[supply]
    assert lo <= n_vil and n_vih <= hi


@pytest.mark.parametrize("supply", sorted(CD4069UB_DRIVE))
def test_cd4069ub_output_resistance_from_the_typical_drive(supply: float) -> None:
    # MC14069UB / CD4069UBC typical IOH and IOL at the stated output voltages.
    voh, vol, i = CD4069UB_DRIVE[supply]
    d = _at("CD4069UB", supply)
    assert d.r_out_high_ohm == pytest.approx((supply - voh) / i, rel=1e-12)
    assert d.r_out_low_ohm == pytest.approx(vol / i, rel=1e-12)
    # CD4069UBC AC characteristics: typical propagation delay.
    assert (d.delay_lh_s, d.delay_hl_s) == pytest.approx((CD4069UBC_TPD[supply],) * 2)


@pytest.mark.parametrize("supply", sorted(MC74HCU04A_INPUT))
def test_74hcu04_switching_window(supply: float) -> None:
    # MC74HCU04A (and MM74HCU04) DC characteristics: VIL max … VIH min.
    lo, typ, hi = _at("74HCU04", supply).vt_plus
    assert (lo, hi) == pytest.approx(MC74HCU04A_INPUT[supply], abs=1e-12)
    # typ half the supply: from memory (neither sheet gives a typical value).
    assert typ == pytest.approx(supply / 2)


@pytest.mark.parametrize("supply", sorted(MM74HCU04_OUTPUT))
def test_74hcu04_output_resistance_and_delay(supply: float) -> None:
    # MM74HCU04 typical VOH / VOL at the stated currents; 74HC1GU04 typical tpd.
    voh, ioh, vol, iol = MM74HCU04_OUTPUT[supply]
    d = _at("74HCU04", supply)
    assert d.r_out_high_ohm == pytest.approx((supply - voh) / -ioh, rel=1e-12)
    assert d.r_out_low_ohm == pytest.approx(vol / iol, rel=1e-12)
    assert d.delay_s == pytest.approx(HC1GU04_TPD[supply])


@pytest.mark.parametrize("supply", sorted(MC14060B_OSC_INPUT))
def test_cd4060b_switching_voltage_is_the_oscillator_input_window(supply: float) -> None:
    vil, vil_typ, vih_typ, vih = MC14060B_OSC_INPUT[supply]
    lo, typ, hi = _at("CD4060B", supply).vt_plus
    # MC14060B, input 11 / output 10 levels (pin-for-pin replacement for CD4060B).
    assert (lo, hi) == pytest.approx((vil, vih), abs=1e-12)
    assert typ == pytest.approx(0.5 * (vil_typ + vih_typ), abs=1e-12)


@pytest.mark.parametrize("supply", sorted(MM74HC4060_INPUT))
def test_74hc4060_switching_window_and_on_resistance(supply: float) -> None:
    d = _at("74HC4060", supply)
    # MM74HC4060 DC characteristics: VIL max … VIH min.
    assert (d.vt_plus[0], d.vt_plus[2]) == pytest.approx(MM74HC4060_INPUT[supply],
                                                         abs=1e-12)
    # Philips 74HC/HCT4060: typical "ON" resistance in series with Rt.
    assert (d.r_out_high_ohm, d.r_out_low_ohm) == pytest.approx(
        (PHILIPS_HC4060_R_ON[supply],) * 2)


def test_4060_and_unbuffered_hex_pinouts() -> None:
    # Motorola MC54/74HC4060 logic diagram (the MC14060B pinout, pin-for-pin with the
    # CD4060B); TI SN74HC4060 SCLS161D pinout; Philips 74HC4060: pins 11/10/9 = RS/RTC/CTC.
    for name in ("CD4060B", "74HC4060"):
        assert device_table().family(name).package.pins == {
            "rs": 11, "r": 10, "c": 9, "reset": 12, "vcc": 16, "gnd": 8, "q4": 7, "q5": 5,
            "q6": 4, "q7": 6, "q8": 14, "q9": 13, "q10": 15, "q12": 1, "q13": 2, "q14": 3}
    # Nexperia 74HCU04 Rev. 7 Table 2; TI CD4069UB functional diagram: 1A=1 1Y=2 2A=3 2Y=4,
    # GND 7, VCC 14; the free inputs are 5, 9, 11, 13.
    for name in ("CD4069UB", "74HCU04"):
        pkg = device_table().family(name).package
        assert pkg.pins == {"input": 1, "output": 2, "input2": 3, "output2": 4, "vcc": 14,
                            "gnd": 7}
        assert pkg.unused_inputs == (5, 9, 11, 13)


def _oscillator_period(name: str, supply: float, rt: float, rs: float, ct: float) -> float:
    osc = with_divide_by(make_oscillator("divider", name, supply), 16)
    t_high, t_low = times(osc, {"R": rt, "RS": rs, "C": ct})
    return float(t_high + t_low) / 16


def test_4000b_rc_oscillator_formula_and_measured_point() -> None:
    # ON Semiconductor MC14541B data sheet, operating characteristics, the same three-pin
    # 4000B RC oscillator (RS, RTC, CTC) as the CD4060B: f = 1 / (2.3 Rtc Ctc) with
    # RS ≈ 2 Rtc, RS ≥ 10 kΩ, for 1 kHz ≤ f ≤ 100 kHz. The model leaves out the chip's own
    # capacitance, so it runs a few per cent fast of the typical formula.
    for supply in (5.0, 10.0, 15.0):
        for rt, ct in ((10e3, 100e-9), (56e3, 1e-9), (1e6, 1e-9)):
            period = _oscillator_period("CD4060B", supply, rt, 2 * rt, ct)
            assert 1 / period == pytest.approx(1 / (2.3 * rt * ct), rel=0.08)
    # MC14541B Fig. 4 conditions: RTC = 56 kΩ, C = 1000 pF, RS = 120 kΩ, VDD = 10 V gives
    # f = 7.8 kHz at 25 °C (typical).
    assert 1 / _oscillator_period("CD4060B", 10.0, 56e3, 120e3, 1e-9) == pytest.approx(
        7.8e3, rel=0.08)


def test_74hc4060_rc_oscillator_formula() -> None:
    # Philips 74HC/HCT4060 (December 1990), RC oscillator: typical f = 1 / (2.5 Rt Ct),
    # provided R2 ≈ 2 Rt and R2 C2 ≪ Rt Ct, 10 kΩ < Rt < 1 MΩ, Ct > 50 pF. The sheet's
    # constant takes in the chip's own input and stray capacitance, which the model
    # leaves out: it runs 8…17 % fast of this formula, never slow.
    for supply in (2.0, 4.5, 6.0):
        for rt, ct in ((10e3, 1e-9), (100e3, 1e-9), (1e6, 100e-9)):
            f = 1 / _oscillator_period("74HC4060", supply, rt, 2 * rt, ct)
            assert 1.08 <= f * 2.5 * rt * ct <= 1.17


@pytest.mark.parametrize("name", ["CD4069UB", "CD4060B"])
def test_4000b_timing_resistor_top(name: str) -> None:
    # TI CD4045B data sheet, description: an RC oscillator from a 4000B inverter and a
    # CD4069 takes RX up to 10 MΩ (with CX = 50 pF).
    fam = device_table().family(name)
    for supply in fam.supplies_v:
        assert fam.at(supply).r_max_ohm == pytest.approx(10e6)
