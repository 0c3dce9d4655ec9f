"""The oscillator-and-counter chip (CD4060B, 74HC4060) against outside sources.

References named beside each check: the 4060 data sheets (pinned-out stages: Motorola
MC54/74HC4060 logic diagram, TI SN74HC4060 SCLS161D; Qn = oscillator / 2^n, a ripple
counter), the 4000B RC-oscillator note (ON Semiconductor MC14541B) and the two-inverter
astable's textbook period.
"""

from __future__ import annotations

import math

import pytest

from core.errors import InputError
from core.model.circuits.divider import tap, with_divide_by
from core.model.timing import make_oscillator, predict, times


def test_stage_divides_the_oscillator_with_an_even_duty() -> None:
    # CD4060B data sheet: a ripple counter, Qn toggles once per 2^(n-1) oscillator
    # cycles, so Qn runs at f_osc / 2^n with 50 % duty (textbook binary counter).
    osc = make_oscillator("divider", "CD4060B", 10.0)
    bare = make_oscillator("cmos-astable", "CD4069UB", 10.0)
    values = {"R": 100e3, "RS": 470e3, "C": 10e-9}
    q10 = with_divide_by(osc, 1024)
    t_high, t_low = (float(t) for t in times(q10, values))
    assert t_high == pytest.approx(t_low, rel=1e-12)
    # The built-in oscillator is the two-inverter astable: ≈ ln 9 R C at half the supply
    # (textbook; MC14541B RC-oscillator note, f ≈ 1 / (2.3 Rtc Ctc) with RS ≈ 2 Rtc).
    t_osc = (t_high + t_low) / 1024
    assert t_osc == pytest.approx(math.log(9) * 100e3 * 10e-9, rel=0.01)
    osc_high, osc_low = (float(t) for t in times(bare.idealised(), values))
    assert t_osc == pytest.approx(osc_high + osc_low, rel=0.01)


def test_only_pinned_stages() -> None:
    # MC54/74HC4060 logic diagram, TI SN74HC4060 pinout: Q4…Q10 and Q12…Q14, no Q11.
    osc = make_oscillator("divider", "74HC4060", 5.0)
    with pytest.raises(InputError, match=r"Q10.*Q12"):
        with_divide_by(osc, 2048)
    with pytest.raises(InputError):
        with_divide_by(osc, 8)
    assert [tap(2 ** n) for n in (4, 10, 14)] == ["Q4", "Q10", "Q14"]


def test_minutes_long_periods_from_a_film_capacitor() -> None:
    # The reason for the divider: a 2-minute period from Q14 with a small film
    # capacitor (period = 16384 × ln 9 R C at half the supply; textbook).
    osc = with_divide_by(make_oscillator("divider", "CD4060B", 9.0), 16384)
    pred = predict(osc, {"R": 330e3, "RS": 1.5e6, "C": 10e-9}, dielectric="film")
    assert 100 < pred.period_s < 140


def test_supply_range_keeps_the_stage() -> None:
    # DESIGN.md "Second round": frequency_hz is the divided output, so supply_hz is too
    # (the oscillator scales with the supply as the two-inverter astable; textbook ln 9 RC
    # at half the supply, the table's typ at every listed supply).
    from core.model.drift import at_supply

    q14 = with_divide_by(make_oscillator("divider", "CD4060B", 9.0), 16384)
    values = {"R": 330e3, "RS": 1e12, "C": 10e-9}  # the clamp isolated
    for supply in (5.0, 15.0):
        t_high, t_low = times(at_supply(q14, supply).idealised(), values)
        assert float(t_high + t_low) == pytest.approx(
            16384 * math.log(9) * 330e3 * 10e-9, rel=0.01)
