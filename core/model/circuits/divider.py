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
from core.model.circuits.cmos_astable import RS_RATIO_MAX, RS_RATIO_MIN, CmosAstable

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

    def hookup(self, osc: Oscillator) -> tuple[tuple[str, str, str], ...]:
        """The oscillator pins and the chosen counter output."""
        name = tap(osc.divide_by)
        return (*self.pins, (name.lower(), f"{name} output", f"OUT (the oscillator ÷ "
                                                            f"{osc.divide_by})"))

    def builder_notes(self, osc: Oscillator) -> list[str]:
        """Where the output is, and how to check the oscillator without waiting a period."""
        pins = osc.family.package.pins
        name = tap(osc.divide_by)
        return [*self.layout_notes,
                f"Take the output from {name} (pin {pins[name.lower()]}): the oscillator "
                f"divided by {osc.divide_by}, a square wave of exactly 50 % duty. The other "
                "Q outputs are outputs: leave them open.",
                f"To check the oscillator without waiting a whole output period, measure Q4 "
                f"(pin {pins['q4']}): it runs at the oscillator's frequency ÷ 16. Expect the "
                "first output edge only after half an output period once power is applied."]


PINS = (("rs", "φI, oscillator input", "RS from the timing node"),
        ("r", "φO, oscillator output", "R to the timing node"),
        ("c", "φO̅, inverted oscillator output", "C to the timing node"),
        ("reset", "MR, master reset", "GND (held low: always counting)"),
        ("vcc", "VDD, supply", "+ supply; 100 nF to GND right at the pin"),
        ("gnd", "VSS, ground", "supply 0 V"))
"""The oscillator pins of the 16-pin package (from memory: CD4060B pin table)."""

DIVIDER = Divider(name="divider", title="oscillator and binary counter",
                  roles=(Role("R", "R"), Role("RS", "R"), Role("C", "C")),
                  default_family="CD4060B", oscillator="RC oscillator and binary counter",
                  short="divided oscillator",
                  threshold_words="switching voltage {plus:.2f} V ({source})",
                  threshold_names=("switching voltage", ""),
                  pins=PINS, layout_notes=("Keep RS right at φI (pin 11) and the timing node "
                                           "small: the node swings beyond the supply rails.",),
                  one_threshold=True, reversing_c=True,
                  follower=("RS", RS_RATIO_MIN, RS_RATIO_MAX), trimmable=("R",),
                  divide_by=tuple(2 ** n for n in PINNED_STAGES),
                  measure_note="Measure at the chosen Q output.")
