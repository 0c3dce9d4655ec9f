"""Value parsing and formatting against IEC 60062 and the SI prefixes."""

from __future__ import annotations

import math
import subprocess
import sys

import pytest
from hypothesis import given
from hypothesis import strategies as st

from core.errors import InputError
from core.units import (
    Tolerance,
    format_quantity,
    parse_band,
    parse_capacitance,
    parse_frequency,
    parse_percent,
    parse_quantity,
    parse_resistance,
    parse_tolerance,
    parse_voltage,
)


# IEC 60062:2016 clause 4 (letter and digit code): the multiplier letter marks the
# decimal point; R = 1, K = 10^3, M = 10^6; p, n, µ for capacitors.
@pytest.mark.parametrize(
    ("text", "ohms"),
    [("R47", 0.47), ("4R7", 4.7), ("4K7", 4700), ("47K3", 47300), ("4M7", 4.7e6),
     ("1M0", 1e6), ("4k7", 4700), ("470R", 470), ("10R", 10)],
)
def test_iec60062_resistor_codes(text: str, ohms: float) -> None:
    assert parse_resistance(text) == pytest.approx(ohms, rel=1e-12)


@pytest.mark.parametrize(
    ("text", "farads"),
    [("2n2", 2.2e-9), ("4u7", 4.7e-6), ("4µ7", 4.7e-6), ("1p5", 1.5e-12), ("22n", 22e-9),
     # IEC 60062 clause 5, three-digit code in picofarads: two figures and a power of ten.
     ("103", 10e-9), ("105", 1e-6), ("104", 100e-9), ("471", 470e-12), ("100", 10e-12),
     # third digit 9 means ×0.1 (same clause)
     ("109", 1.0e-12)],
)
def test_iec60062_capacitor_codes(text: str, farads: float) -> None:
    assert parse_capacitance(text) == pytest.approx(farads, rel=1e-12)


@pytest.mark.parametrize(("text", "farads"), [("4.29e-07", 4.29e-7), ("1E-9", 1e-9),
                                              ("2.2e-6", 2.2e-6), ("47e-12", 47e-12)])
def test_a_capacitance_with_an_exponent_and_no_unit_is_farads(text: str, farads: float) -> None:
    # Issue 11 and DESIGN.md: an exponent is unambiguous, so the bare number is in farads
    # (SI base unit, BIPM SI Brochure 9th ed.); without one, "4700" stays a refused code.
    assert parse_capacitance(text) == pytest.approx(farads, rel=1e-12)
    assert parse_quantity(text, "capacitance") == parse_capacitance(text)


# SI prefixes and unit symbols, BIPM SI Brochure 9th ed. table 7.
@pytest.mark.parametrize(
    ("text", "quantity", "si"),
    [("4.7k", "resistance", 4700), ("4.7 kΩ", "resistance", 4700), ("4700", "resistance", 4700),
     ("4,7k", "resistance", 4700), ("22 kohm", "resistance", 22e3), ("1meg", "resistance", 1e6),
     ("100nF", "capacitance", 100e-9), ("0.1 uF", "capacitance", 100e-9),
     ("2.2µ", "capacitance", 2.2e-6), ("2.2 μF", "capacitance", 2.2e-6),
     ("1kHz", "frequency", 1e3), ("38k", "frequency", 38e3), ("440 Hz", "frequency", 440),
     ("2ms", "frequency", 500.0), ("1 s", "frequency", 1.0),
     ("5V", "voltage", 5.0), ("3.3", "voltage", 3.3), ("250us", "period", 250e-6)],
)
def test_si_values(text: str, quantity: str, si: float) -> None:
    assert parse_quantity(text, quantity) == pytest.approx(si, rel=1e-12)


@pytest.mark.parametrize(
    ("text", "quantity", "says"),
    [("-5k", "resistance", "greater than zero"),
     ("0", "resistance", "greater than zero"),
     ("nan", "resistance", "expected a resistance"),
     ("inf", "capacitance", "expected a capacitance"),
     ("1e999", "resistance", "finite"),
     ("10 kV", "resistance", "voltage"),
     ("1/2", "resistance", "expected"),
     ("=1+2", "resistance", "expected"),
     ("__import__('os')", "resistance", "expected"),
     ("4k7k", "resistance", "expected"),
     ("x" * 200, "resistance", "too long"),
     ("10\x00k", "resistance", "control"),
     ("4700", "capacitance", "three-digit code"),
     ("", "voltage", "empty"),
     ("5 Hz", "voltage", "frequency")],
)
def test_refusals_say_what_was_expected(text: str, quantity: str, says: str) -> None:
    with pytest.raises(InputError, match=says):
        parse_quantity(text, quantity)


@pytest.mark.parametrize(
    ("text", "kind", "minus", "plus"),
    [("5%", "R", 5, 5), ("±5%", "R", 5, 5), ("±0,5 %", "R", 0.5, 0.5),
     ("+80/-20%", "C", 20, 80),
     # IEC 60062:2016 table 2, resistor letters.
     ("B", "R", 0.1, 0.1), ("C", "R", 0.25, 0.25), ("D", "R", 0.5, 0.5), ("F", "R", 1, 1),
     ("G", "R", 2, 2), ("J", "R", 5, 5), ("K", "R", 10, 10), ("M", "R", 20, 20),
     # same table, capacitors of 10 pF and above; Z is +80/-20 %.
     ("J", "C", 5, 5), ("K", "C", 10, 10), ("M", "C", 20, 20), ("Z", "C", 20, 80)],
)
def test_tolerances(text: str, kind: str, minus: float, plus: float) -> None:
    tol = parse_tolerance(text, kind)
    assert tol.minus * 100 == pytest.approx(minus)
    assert tol.plus * 100 == pytest.approx(plus)


def test_small_capacitor_letters_are_absolute_picofarads() -> None:
    # IEC 60062 table 2: below 10 pF, C means ±0.25 pF.
    tol = parse_tolerance("C", "C", value=5e-12)
    assert tol.plus == pytest.approx(0.05)


def test_tolerance_refusals() -> None:
    with pytest.raises(InputError, match="IEC 60062"):
        parse_tolerance("Z", "R")
    with pytest.raises(InputError):
        parse_tolerance("lots", "R")
    with pytest.raises(InputError, match="out of range"):
        parse_tolerance("150%", "R")


def test_tolerance_text() -> None:
    assert str(Tolerance(0.05, 0.05)) == "±5%"
    assert str(Tolerance(0.2, 0.8)) == "+80/-20%"


@pytest.mark.parametrize(
    ("value", "quantity", "text"),
    [(4700, "resistance", "4.7 kΩ"), (100e-9, "capacitance", "100 nF"),
     (38e3, "frequency", "38.0 kHz"), (1e6, "resistance", "1 MΩ"),
     (2.2e-6, "capacitance", "2.2 µF"), (999.9, "resistance", "1 kΩ"),
     (0.47, "resistance", "470 mΩ"), (63.3, "frequency", "63.3 Hz"),
     (0.986, "frequency", "0.986 Hz")],
)
def test_engineering_format(value: float, quantity: str, text: str) -> None:
    assert format_quantity(value, quantity) == text


_magnitudes = st.floats(min_value=1e-13, max_value=1e10, allow_nan=False, allow_infinity=False)


@given(_magnitudes, st.sampled_from(["resistance", "capacitance", "frequency", "voltage"]))
def test_format_then_parse_round_trips(value: float, quantity: str) -> None:
    # Format with enough digits to carry the float, parse back: the same value.
    text = format_quantity(value, quantity, digits=15)
    assert parse_quantity(text, quantity) == pytest.approx(value, rel=1e-13)


@given(st.text(max_size=60))
def test_parser_never_crashes(text: str) -> None:
    for quantity in ("resistance", "capacitance", "frequency", "voltage"):
        try:
            value = parse_quantity(text, quantity)
        except InputError:
            continue
        assert math.isfinite(value) and value > 0


def test_band_and_percent() -> None:
    assert parse_band("400..480") == (400, 480)
    assert parse_band("1k..2kHz") == (1000, 2000)
    assert parse_band("480 .. 400") == (400, 480)
    with pytest.raises(InputError, match="band"):
        parse_band("400")
    assert parse_percent("1%") == 1
    assert parse_voltage("12 V") == 12
    with pytest.raises(InputError):
        parse_percent("-3")
    assert parse_frequency("1MHz") == 1e6


# BIPM SI Brochure, 9th ed., table 8 (non-SI units accepted for use with the SI):
# 1 min = 60 s, 1 h = 3600 s. Beats and revolutions per minute count one cycle each
# (common practice, no published source): 120 bpm = 2 Hz, 30 rpm = 0.5 Hz.
@pytest.mark.parametrize(
    ("text", "quantity", "si"),
    [("2min", "period", 120.0), ("0.5h", "period", 1800.0), ("1 hour", "time", 3600.0),
     ("2min", "frequency", 1 / 120.0), ("0.5h", "frequency", 1 / 1800.0),
     ("120bpm", "frequency", 2.0), ("30rpm", "frequency", 0.5), ("30 RPM", "frequency", 0.5)],
)
def test_periods_and_frequencies_of_slow_things(text: str, quantity: str, si: float) -> None:
    assert parse_quantity(text, quantity) == pytest.approx(si, rel=1e-12)  # type: ignore[arg-type]


def test_slow_units_stay_with_their_quantity() -> None:
    for text, quantity in (("2min", "resistance"), ("120bpm", "period"), ("1h", "voltage")):
        with pytest.raises(InputError):
            parse_quantity(text, quantity)  # type: ignore[arg-type]


def test_the_common_units_need_no_unit_library() -> None:
    # Building pint's registry costs about 0.4 s; Ω, F, Hz, s, V and A are SI base units
    # (factor 1), so parsing them must not load pint.
    code = ("import sys\nfrom core.units import parse_quantity\n"
            "for t, q in (('4k7', 'resistance'), ('100nF', 'capacitance'), ('38kHz', "
            "'frequency'), ('2ms', 'frequency'), ('5V', 'voltage'), ('1mA', 'current')):\n"
            "    parse_quantity(t, q)\n"
            "assert 'pint' not in sys.modules\n"
            "parse_quantity('2min', 'period')\nassert 'pint' in sys.modules\n")
    subprocess.run([sys.executable, "-c", code], check=True)


def test_long_periods_read_in_minutes_and_hours():
    # 60 s = 1 min, 3600 s = 1 h (SI brochure, Table 8: non-SI units accepted for use with
    # the SI); three significant figures, zeros kept as for seconds.
    from core.units import format_quantity
    assert format_quantity(120.0, "period") == "2.00 min"
    assert format_quantity(7200.0, "period") == "2.00 h"
    assert format_quantity(59.0, "period") == "59.0 s"
    assert format_quantity(90.0, "time") == "1.50 min"
