"""The oscillator-and-counter chip (CD4060B, 74HC4060): the two-inverter astable built
in, followed by a 14-stage binary ripple counter with only some stages pinned out.

The oscillator is the same circuit as core.model.circuits.cmos_astable (R, RS, C on
pins 10, 11 and 9); stage Qn divides its frequency by 2^n with an exact 50 % duty
(each stage toggles once per cycle of the one before). The CD4060B and 74HC4060
pin out Q4 to Q10 and Q12 to Q14; Q11 is not (from memory: the TI CD4060B and the
Nexperia 74HC4060 data sheets' pin tables and functional diagrams).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

from core.errors import InputError
from core.model.circuits.base import ArrayLike, Oscillator, Role
from core.model.circuits.cmos_astable import LAYOUT_NOTES, CmosAstable

PINNED_STAGES = (4, 5, 6, 7, 8, 9, 10, 12, 13, 14)
"""The counter stages the package pins out (from memory: CD4060B and 74HC4060 pinouts,
Q11 missing)."""


def tap(divide_by: int) -> str:
    """The output's name for a ratio: 1024 -> "Q10"."""
    return f"Q{int(divide_by).bit_length() - 1}"


def with_divide_by(osc: Oscillator, divide_by: int) -> Oscillator:
    """The oscillator with its output taken at the stage dividing by ``divide_by``;
    InputError naming the pinned-out ratios otherwise."""
    ratios = [2 ** n for n in PINNED_STAGES]
    if divide_by not in ratios:
        listed = ", ".join(f"{r} ({tap(r)})" for r in ratios)
        raise InputError(f"the {osc.family.name} pins out only {listed}",
                         text=str(divide_by), what="divide-by")
    return replace(osc, divide_by=int(divide_by))


@dataclass(frozen=True)
class Divider(CmosAstable):
    """The built-in two-inverter oscillator and its binary counter."""

    def output_times(self, osc: Oscillator, t_high: ArrayLike, t_low: ArrayLike
                     ) -> tuple[Any, Any]:
        half = 0.5 * osc.divide_by * (t_high + t_low)
        return half, half


PINS = (("rs", "φI (11)", "RS from the timing node"),
        ("r", "φO (10)", "R to the timing node"),
        ("c", "φO̅ (9)", "C to the timing node"),
        ("reset", "MR (12)", "GND (held low: always counting)"),
        ("vcc", "VDD (16)", "+ supply; 100 nF to GND right at the pin"),
        ("gnd", "VSS (8)", "supply 0 V"))
"""The oscillator pins of the 16-pin package (from memory: CD4060B pin table)."""

DIVIDER = Divider(name="divider", title="oscillator and binary counter",
                  roles=(Role("R", "R"), Role("RS", "R"), Role("C", "C")),
                  default_family="CD4060B", oscillator="RC oscillator and binary counter",
                  short="divided oscillator",
                  threshold_words="switching voltage {plus:.2f} V ({source})",
                  pins=PINS, layout_notes=(*LAYOUT_NOTES[:1],
                                           "Hold the reset pin (MR, 12) low: high, it stops "
                                           "the oscillator and clears the counter."),
                  one_threshold=True, designed=False,
                  measure_note="Measure at the chosen Q output.")
