"""The 555 astable: RA from the supply to discharge, RB on to the timing node, C to ground.

t_high = ln2 (RA + RB) C, t_low = ln2 RB C, generalised to the actual
threshold/trigger levels, the discharge transistor's on-resistance, and the
diode-steered variant (charge through RA and a diode across RB, discharge
through RB).

References: TI NE555 data sheet, astable operation (t_H = 0.693 (RA + RB) C,
t_L = 0.693 RB C); TLC555 data sheet, astable operation.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from core.model.circuits.base import (
    ArrayLike,
    Circuit,
    Oscillator,
    Role,
    drawn,
    thresholds,
    timing_capacitance,
)
from core.model.circuits.phases import Phases, Steered, cycle
from core.model.devices import DeviceAtSupply
from core.model.diode import DIODE_DRIFT_SHARE, SteeringBranch, drop_drift_share
from core.units import format_quantity


def astable_phases(osc: Oscillator, ra: ArrayLike, rb: ArrayLike, c: ArrayLike,
                  diode_steered: bool, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
                  i_low: ArrayLike = 0.0) -> Phases:
    d = osc.device
    ra = np.asarray(ra, dtype=float)
    rb = np.asarray(rb, dtype=float)
    ct = timing_capacitance(osc, c)
    v = d.supply_v
    # Charge: C through RA + RB (with the steering diode across RB where it conducts).
    v_high, r_high = drawn(v, ra + rb, i_high), ra + rb
    steering = (Steered(SteeringBranch(osc.steering_diode, v, ra, rb), ct,
                         np.asarray(i_high, dtype=float)) if diode_steered else None)
    # Discharge: pin 7 pulls down through r_dis while RA still feeds it from the supply.
    rd = d.discharge_r_ohm
    v_low = drawn(v * rd / (ra + rd), rb + ra * rd / (ra + rd), i_low)
    r_low = rb + ra * rd / (ra + rd)
    a, b = thresholds(osc, vt_plus, vt_minus)
    return Phases(a, b, v_high, r_high * ct, v_low, r_low * ct, d.delay_lh_s, d.delay_hl_s,
                 steering)


STEERING_SHARE_MIN = 0.5
"""Below this share of the charging current (at the start of the charge) the steering
diode does not steer: C charges mostly through RA + RB (common practice, no published
source)."""




def steering_warnings(osc: Oscillator, values: Mapping[str, float]) -> list[str]:
    """Where a steering diode across RB makes little sense, and why."""
    fq = format_quantity
    n = astable_phases(osc, values["RA"], values["RB"], values["C"], True)
    assert n.steering is not None
    _, _, v_start, _ = cycle(n)
    v_pair, share = (float(x) for x in n.steering.branch.pair_at_node(v_start))
    # Sensitivity of t_high ∝ ln((V − Vd − VT-)/(V − Vd − VT+)) to the diode's drop.
    a, b = osc.vt_plus_v, osc.vt_minus_v
    drift = drop_drift_share(osc.supply_v - v_pair - b, osc.supply_v - v_pair - a)
    if drift > DIODE_DRIFT_SHARE:
        return [f"at {osc.supply_v:g} V the steering diode's drop (about {v_pair:.2f} V) is a "
                f"large share of the {osc.supply_v - a:.2f} V between the supply and the upper "
                "threshold: its drift of about −2 mV/K moves the high time by "
                + (f"{100 * drift:.0f} % over 40 K" if math.isfinite(drift) else "a large share")
                + "; use a higher supply or no diode"]
    if share < STEERING_SHARE_MIN:
        return [f"with RA = {fq(values['RA'], 'resistance')} and RB = "
                f"{fq(values['RB'], 'resistance')} the steering diode hardly conducts (RB "
                f"drops only {v_pair:.2f} V, below the diode's knee): C charges through "
                "RA + RB, so the diode does not set the duty; use a larger RB or leave the "
                "diode out"]
    return []



@dataclass(frozen=True)
class Astable555(Circuit):
    """A 555 timer as an astable multivibrator, optionally diode-steered."""

    def phases(self, osc: Oscillator, values: Mapping[str, ArrayLike],
               diode_steered: bool = False, vt_plus: ArrayLike = None,
               vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
               i_low: ArrayLike = 0.0) -> Phases:
        return astable_phases(osc, values["RA"], values["RB"], values["C"], diode_steered,
                              vt_plus, vt_minus, i_high, i_low)

    def why_stopped(self, osc: Oscillator, values: Mapping[str, float],
                    n: Phases) -> str | None:
        if float(n.v_low) < float(n.vt_minus):
            return None
        return ("will not oscillate: RA is so small that the discharge transistor cannot pull "
                "the capacitor below the trigger level; use RA of at least "
                f"{format_quantity(osc.device.r_min_ohm, 'resistance')}")

    def warnings(self, osc: Oscillator, values: Mapping[str, float],
                 diode_steered: bool) -> list[str]:
        return steering_warnings(osc, values) if diode_steered else []

    def output_low_v(self, device: DeviceAtSupply) -> float:
        return 0.0


PINS = (("gnd", "GND", "supply 0 V"),
        ("trigger", "TRIG", "timing node (join to THR, 6)"),
        ("output", "OUT", "output; buffer heavy loads"),
        ("reset", "RESET", "VCC (held high: always running)"),
        ("control", "CV", "10 nF to GND"),
        ("threshold", "THR", "timing node: C to GND, RB to DIS"),
        ("discharge", "DIS", "between RA and RB"),
        ("vcc", "VCC", "+ supply; 100 nF to GND right at the pin"))
"""The timer's pins for the build sheet (NE555 data sheet pin functions)."""
LAYOUT_NOTES = (
    "Keep the timing capacitor and RB close to pins 2 and 6, and its ground lead "
    "short to pin 1.",
    "Drive loads from pin 3 through a series resistor; a relay or motor needs a "
    "flyback diode across it.",
)
"""Common practice, no published source."""

ASTABLE = Astable555(name="555", title="555 timer",
                     roles=(Role("RA", "R"), Role("RB", "R"), Role("C", "C")),
                     default_family="NE555", steerable=True, tuned="RB", trimmable=("RB",),
                     oscillator="555 astable",
                     short="555 astable",
                     threshold_words="comparators at {plus:.2f} V and {minus:.2f} V",
                     threshold_names=("threshold", "trigger"),
                     pins=PINS, layout_notes=LAYOUT_NOTES)
