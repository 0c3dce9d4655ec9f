"""The Schmitt-trigger inverter oscillator: R from output to input, C from input to ground.

    t_high = R C ln((VOH - VT-) / (VOH - VT+))    output high, C charges
    t_low  = R C ln((VT+ - VOL) / (VT- - VOL))    output low, C discharges

plus output resistance in series with R, input and stray capacitance beside
C, a TTL input's current through R (a Thevenin source at the input) and the
propagation delay on each edge.

With two steering diodes (``STEERED_SCHMITT``: RH, RL, C) the output charges C
through RH and one diode while high and discharges it through RL and the other
while low, so the duty is set by RH : RL. Each diode follows the same Shockley
curve as the 555's steering diode (core.model.diode), integrated exactly.
It is its own ``Circuit`` (not a flag on the plain one) because its parts differ:
every generic piece (values, tolerances, sheet, netlist, search) then follows its
roles without asking which wiring it has.

References: the device data sheets in resources/devices.toml; P. Horowitz and
W. Hill, The Art of Electronics, 3rd ed., §1.4 and §7.1.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, replace

import numpy as np

from core.errors import SetupError
from core.model.circuits.base import (
    ArrayLike,
    Circuit,
    Oscillator,
    Role,
    drawn,
    output_sources,
    thresholds,
    timing_capacitance,
)
from core.model.circuits.phases import Phases, Steered, cycle
from core.model.devices import DeviceAtSupply
from core.model.diode import DIODE_DRIFT_SHARE, SteeringBranch, drop_drift_share
from core.units import format_quantity


def schmitt_phases(osc: Oscillator, r: ArrayLike, c: ArrayLike, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
                  i_low: ArrayLike = 0.0) -> Phases:
    d = osc.device
    r = np.asarray(r, dtype=float)
    ct = timing_capacitance(osc, c)
    voh, roh, vol, rol = output_sources(osc)
    r_high, r_low = r + roh, r + rol
    v_high, v_low = voh, vol
    if math.isfinite(d.input_r_ohm):
        # TTL input: a source v_open behind r_in feeds the node as well.
        ri, vi = d.input_r_ohm, d.input_v_open_v
        v_high = (voh * ri + vi * r_high) / (r_high + ri)
        v_low = (vol * ri + vi * r_low) / (r_low + ri)
        r_high = r_high * ri / (r_high + ri)
        r_low = r_low * ri / (r_low + ri)
    v_high, v_low = drawn(v_high, r_high, i_high), drawn(v_low, r_low, i_low)
    a, b = thresholds(osc, vt_plus, vt_minus)
    return Phases(a, b, v_high, r_high * ct, v_low, r_low * ct, d.delay_lh_s, d.delay_hl_s)


def steered_schmitt_phases(osc: Oscillator, rh: ArrayLike, rl: ArrayLike, c: ArrayLike,
                           vt_plus: ArrayLike = None, vt_minus: ArrayLike = None,
                           i_high: ArrayLike = 0.0, i_low: ArrayLike = 0.0) -> Phases:
    """C charged through RH and a diode, discharged through RL and another (bare diodes:
    each conducts the whole of its phase, the other is reversed)."""
    d = osc.device
    if math.isfinite(d.input_r_ohm):
        raise SetupError(f"the {d.family.name}'s TTL input current would flow through the "
                         "steering diodes, which the model does not cover; use a CMOS family "
                         "(74HC14, CD40106B) for the diode-steered Schmitt oscillator")
    ct = timing_capacitance(osc, c)
    voh, roh, vol, rol = output_sources(osc)
    r_high = np.asarray(rh, dtype=float) + roh
    r_low = np.asarray(rl, dtype=float) + rol
    i_high, i_low = np.asarray(i_high, dtype=float), np.asarray(i_low, dtype=float)
    diode = osc.steering_diode
    high = Steered(SteeringBranch(diode, voh, r_high, math.inf), ct, i_high)
    low = Steered(SteeringBranch(diode, -vol, r_low, math.inf), ct, i_low, falling=True)
    a, b = thresholds(osc, vt_plus, vt_minus)
    return Phases(a, b, drawn(voh, r_high, i_high), r_high * ct, drawn(vol, r_low, i_low),
                  r_low * ct, d.delay_lh_s, d.delay_hl_s, steering=high, steering_low=low)



@dataclass(frozen=True)
class SchmittInverter(Circuit):
    """A Schmitt-trigger inverter with R from output to input and C to ground."""

    def phases(self, osc: Oscillator, values: Mapping[str, ArrayLike],
               diode_steered: bool = False, vt_plus: ArrayLike = None,
               vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
               i_low: ArrayLike = 0.0) -> Phases:
        return schmitt_phases(osc, values["R"], values["C"], vt_plus, vt_minus, i_high, i_low)

    def hysteresis_limits(self, device: DeviceAtSupply) -> tuple[float, float]:
        return device.hysteresis_min_v, device.hysteresis_max_v

    def threshold_corners(self, device: DeviceAtSupply) -> list[tuple[float, float]]:
        """The feasible thresholds form the box min…max of each, cut by the guaranteed
        hysteresis hysteresis_min ≤ VT+ − VT- ≤ hysteresis_max. The period rises with
        VT+ and falls with VT-, so its extremes lie on the polygon's vertices, except
        the fastest point on the minimum-hysteresis edge, which is where the window is
        centred between the output levels (added explicitly)."""
        d = device
        (a_lo, _, a_hi), (b_lo, _, b_hi) = d.vt_plus, d.vt_minus
        h, h_max = self.hysteresis_limits(d)
        candidates = super().threshold_corners(d)
        for width in (h, h_max) if math.isfinite(h_max) else (h,):
            candidates += [(a_lo, a_lo - width), (b_hi + width, b_hi), (a_hi, a_hi - width),
                           (b_lo + width, b_lo)]
        centre = 0.5 * (d.voh_v + d.vol_v + h)
        candidates.append((centre, centre - h))
        eps = 1e-12
        corners: list[tuple[float, float]] = []
        for a, b in candidates:
            inside = (a_lo - eps <= a <= a_hi + eps and b_lo - eps <= b <= b_hi + eps
                      and h - eps <= a - b <= h_max + eps)
            if inside and all(abs(a - p) > 1e-9 or abs(b - q) > 1e-9 for p, q in corners):
                corners.append((a, b))
        return corners

    def why_stopped(self, osc: Oscillator, values: Mapping[str, float],
                    n: Phases) -> str | None:
        d, b = osc.device, float(n.vt_minus)
        if float(n.v_low) < b or not math.isfinite(d.input_r_ohm):
            return None
        _, _, vol, rol = output_sources(osc)
        r_limit = d.input_r_ohm * (b - vol) / (d.input_v_open_v - b) - rol
        return (f"will not oscillate: the {osc.family.name}'s input current through R = "
                f"{format_quantity(values['R'], 'resistance')} holds the input above VT- "
                f"({b:.2f} V); R must stay below about "
                f"{format_quantity(max(r_limit, 0.0), 'resistance')}")


EDGE_POINTS = 8
"""Points along the minimum-hysteresis edge added to the steered circuit's threshold
corners: with RH ≠ RL and the diode drops its fastest point moves off the centre (and
depends on the parts). Sampled this finely, the fastest corner is within 0.03 % of the
edge's true fastest point (tests/test_steered_schmitt.py, against a dense grid); each
point more costs the search about 4 % of its time."""


@dataclass(frozen=True)
class SteeredSchmitt(SchmittInverter):
    """A Schmitt-trigger inverter whose output charges C through RH and one diode and
    discharges it through RL and another."""

    def phases(self, osc: Oscillator, values: Mapping[str, ArrayLike],
               diode_steered: bool = False, vt_plus: ArrayLike = None,
               vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
               i_low: ArrayLike = 0.0) -> Phases:
        """Always steered (``diode_steered`` is implied)."""
        return steered_schmitt_phases(osc, values["RH"], values["RL"], values["C"], vt_plus,
                                      vt_minus, i_high, i_low)

    def threshold_corners(self, device: DeviceAtSupply) -> list[tuple[float, float]]:
        """The plain circuit's corners plus points along the minimum-hysteresis edge."""
        corners = super().threshold_corners(device)
        (a_lo, _, a_hi), (b_lo, _, b_hi) = device.vt_plus, device.vt_minus
        h = device.hysteresis_min_v
        lo, hi = max(a_lo, b_lo + h), min(a_hi, b_hi + h)
        if lo < hi:
            corners += [(a, a - h) for a in np.linspace(lo, hi, EDGE_POINTS + 2)[1:-1]]
        return corners

    def why_stopped(self, osc: Oscillator, values: Mapping[str, float],
                    n: Phases) -> str | None:
        """No input current to hold the node (TTL families are refused)."""
        return None

    def warnings(self, osc: Oscillator, values: Mapping[str, float],
                 diode_steered: bool) -> list[str]:
        """Where the diodes' drop (and so its drift) is a large share of a phase's drive."""
        n = self.phases(osc, values)
        _, _, v_start, v_peak = cycle(n)
        assert n.steering is not None and n.steering_low is not None
        out = []
        for phase, s, v_from, v_source, near, far in (
                ("high", n.steering, v_start, float(n.v_high), n.vt_plus, n.vt_minus),
                ("low", n.steering_low, v_peak, float(n.v_low), n.vt_minus, n.vt_plus)):
            v_pair = float(s.branch.pair_at_node(-v_from if s.falling else v_from)[0])
            share = drop_drift_share(abs(v_source - far) - v_pair,
                                     abs(v_source - near) - v_pair)
            if share > DIODE_DRIFT_SHARE:
                out.append(f"the steering diode's drop (about {float(v_pair):.2f} V) is a large "
                           f"share of the drive in the output-{phase} phase at "
                           f"{osc.supply_v:g} V: its drift of about −2 mV/K moves the "
                           f"{phase} time by {100 * share:.0f} % over 40 K; use a higher "
                           "supply")
        return out


PINS = (("input", "gate input", "timing node: C to GND, R (and pot) from output"),
        ("tie_high", "second NAND input", "VCC (the NAND works as an inverter)"),
        ("output", "gate output", "R (and pot) back to the input; OUT"),
        ("vcc", "supply", "+ supply; 100 nF to GND right at the pin"),
        ("gnd", "ground", "supply 0 V"))
"""The gate's pins for the build sheet (a NAND's second input where the package has one)."""
LAYOUT_NOTES = (
    "Keep the timing leads short: the capacitor right at the input pin, its ground "
    "end straight to the chip's GND pin; route the resistor away from other signals.",
    "Buffer any load through another gate of the same chip (its input on OUT): a "
    "load on the timing output shifts the output levels and with them the frequency.",
)
"""Common practice, no published source."""

SCHMITT = SchmittInverter(name="schmitt", title="Schmitt-trigger inverter",
                          roles=(Role("R", "R"), Role("C", "C")), default_family="74HC14",
                          trimmable=("R",), output_drives_timing=True,
                          oscillator="Schmitt-trigger inverter RC oscillator",
                          short="Schmitt oscillator",
                          threshold_words="VT+ {plus:.2f} V, VT− {minus:.2f} V ({source})",
                          pins=PINS, layout_notes=LAYOUT_NOTES,
                          measure_note="Measure at a buffered output, never with a probe on "
                          "the timing capacitor: a probe's 10–15 pF adds to C.")

STEERED_PINS = (("input", "gate input", "timing node: C to GND; D1 cathode, D2 anode"),
                ("tie_high", "second NAND input", "VCC (the NAND works as an inverter)"),
                ("output", "gate output", "RH and RL back to the timing node; OUT"),
                ("vcc", "supply", "+ supply; 100 nF to GND right at the pin"),
                ("gnd", "ground", "supply 0 V"))
"""The gate's pins for the diode-steered oscillator's build sheet."""

STEERED_SCHMITT = SteeredSchmitt(
    name="schmitt", title="diode-steered Schmitt-trigger inverter",
    roles=(Role("RH", "R"), Role("RL", "R"), Role("C", "C")), default_family="74HC14",
    steerable=True, output_drives_timing=True,
    oscillator="Schmitt-trigger inverter RC oscillator, diode-steered",
    short="Schmitt oscillator", threshold_words=SCHMITT.threshold_words,
    pins=STEERED_PINS, layout_notes=LAYOUT_NOTES, measure_note=SCHMITT.measure_note,
    always_steered=True, drawing="schmitt-steered", tuned="RL")
"""The Schmitt oscillator with two steering diodes: RH sets the high time, RL the low."""
SCHMITT = replace(SCHMITT, steered_variant=STEERED_SCHMITT)
