"""Values written the way a drawer file writes them, and bare numbers that are capacitor codes.

References: IEC 60062:2016 §4 (letter-for-decimal code: 4k7, R47, 2n2) and §5 (three-digit
capacitor code in picofarads: 104 = 10 × 10⁴ pF = 100 nF); IEC 60063 (E24 and E12 values).
"""

from __future__ import annotations

import pytest

from core.parts.eseries import series_values
from core.units import (
    capacitor_code_value,
    format_code,
    format_signed_pct,
    parse_capacitance,
    parse_resistance,
)


@pytest.mark.parametrize(("value", "kind", "code"), [
    # IEC 60062:2016 §4 examples of the letter code.
    (0.47, "R", "R47"), (4.7, "R", "4R7"), (100.0, "R", "100R"), (4700.0, "R", "4k7"),
    (1500.0, "R", "1k5"), (1e6, "R", "1M"), (2.2e6, "R", "2M2"),
    (2.2e-9, "C", "2n2"), (1e-7, "C", "100n"), (4.7e-6, "C", "4u7"), (1e-11, "C", "10p"),
    (6.8e-12, "C", "6p8"),
])
def test_letter_code_as_the_standard_writes_it(value: float, kind: str, code: str) -> None:
    assert format_code(value, kind) == code


@pytest.mark.parametrize("series", ["E12", "E24", "E96"])
def test_every_standard_value_reads_back(series: str) -> None:
    # Round trip over IEC 60063 values from 1 Ω to 10 MΩ and 1 pF to 10 mF.
    for mantissa in series_values(series):
        for decade in range(0, 7):
            ohms = mantissa * 10.0**decade
            assert parse_resistance(format_code(ohms, "R")) == pytest.approx(ohms, rel=1e-9)
        for decade in range(-12, -2):
            farads = mantissa * 10.0**decade
            assert parse_capacitance(format_code(farads, "C")) == pytest.approx(farads,
                                                                                rel=1e-9)


def test_bare_numbers_that_read_as_capacitor_codes() -> None:
    # IEC 60062 §5: two significant digits, then the number of zeros, in picofarads.
    assert capacitor_code_value("104") == pytest.approx(100e-9)
    assert capacitor_code_value("472") == pytest.approx(4.7e-9)
    assert capacitor_code_value("221") == pytest.approx(220e-12)
    # Resistor values people do write bare (E12 values in ohms) are left alone.
    for text in ("100", "220", "470", "680", "4k7", "1000", "10", "104k"):
        assert capacitor_code_value(text) is None


def test_signed_percent_never_shows_minus_zero() -> None:
    assert format_signed_pct(-0.001) == "0.00 %"
    assert format_signed_pct(0.004) == "0.00 %"
    assert format_signed_pct(-1.236) == "-1.24 %"
    assert format_signed_pct(0.25) == "+0.25 %"
