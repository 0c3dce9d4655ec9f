"""The two-inverter CMOS astable: unbuffered inverters (74HCU04, CD4069UB).

R runs from the first inverter's output to the timing node, C from the second
inverter's output (OUT) to the node, RS from the node to the first inverter's
input. When the input crosses the switching voltage Vth both outputs flip and
C carries the step onto the node, so the node swings beyond the rails by the
output step. With the input clamp diodes isolated (RS large):

    T = R C [ln((2 Vdd − Vth)/(Vdd − Vth)) + ln((Vdd + Vth)/Vth)]   (≈ 2.2 R C at Vdd/2)

(Philips HEF4069UB data sheet, application information; the 4000B RC-oscillator note,
f ≈ 1/(2.3 Rtc Ctc) with RS ≈ 2 Rtc: ON Semiconductor MC14541B data sheet; Philips
74HC4060: f ≈ 1/(2.5 Rt Ct) with R2 ≈ 2 Rt).
With RS small the clamp diodes (a fixed forward drop, ``input_clamp_v`` in the
table) pull the node back toward the rail through RS while it is beyond it, and
the period falls toward 1.4 R C.

The model tracks the capacitor's own voltage w = V(OUT) − V(node), which is
continuous across the edges: the high phase (OUT high, first output low) runs
toward VOH − VOL until w reaches VOH − Vth, the low phase toward VOL − VOH
until w reaches VOL − Vth. Output resistance is in series with R; the step
through C is taken as instant (the output's resistance times C is far below
R C); the input's own capacitance sits behind RS and is left out.
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
    output_sources,
    thresholds,
    timing_capacitance,
)
from core.model.circuits.phases import Clamp, Phases
from core.model.devices import DeviceAtSupply
from core.units import format_quantity

RS_RATIO_MIN = 2.0
"""RS at least this many times R keeps the clamp diodes out of the timing (RS ≈ 2 Rtc: ON
Semiconductor MC14541B RC-oscillator note; Philips 74HC4060: R2 ≈ 2 Rt)."""
RS_RATIO_MAX = 10.0
"""The top of that window (from memory): a search picks RS within RS_RATIO_MIN … RS_RATIO_MAX
× R."""


def cmos_astable_phases(osc: Oscillator, r: ArrayLike, rs: ArrayLike, c: ArrayLike,
                        threshold: ArrayLike = None, i_high: ArrayLike = 0.0,
                        i_low: ArrayLike = 0.0) -> Phases:
    """The capacitor voltage w = V(OUT) − V(node) as two phases with the input clamp."""
    d = osc.device
    r = np.asarray(r, dtype=float)
    rs = np.asarray(rs, dtype=float)
    ct = timing_capacitance(osc, c)
    voh, roh, vol, rol = output_sources(osc)
    vth, _ = thresholds(osc, threshold, None)
    vd = osc.family.input_clamp_v
    # OUT high: the first output is low, the node falls toward VOL through R.
    r_fall, r_rise = r + rol, r + roh
    node_fall = drawn(vol, r_fall, i_high)
    node_rise = drawn(voh, r_rise, i_low)
    # Beyond a rail the clamp diode joins the node to rail ± Vd through RS.
    top, bottom = d.supply_v + vd, -vd
    fall_par, rise_par = r_fall * rs / (r_fall + rs), r_rise * rs / (r_rise + rs)
    clamp = Clamp(below=voh - top,
                  v_high=voh - (node_fall * rs + top * r_fall) / (r_fall + rs),
                  tau_high=fall_par * ct,
                  above=vol - bottom,
                  v_low=vol - (node_rise * rs + bottom * r_rise) / (r_rise + rs),
                  tau_low=rise_par * ct)
    return Phases(voh - vth, vol - vth, voh - node_fall, r_fall * ct, vol - node_rise,
                  r_rise * ct, d.delay_lh_s, d.delay_hl_s, clamp=clamp)


@dataclass(frozen=True)
class CmosAstable(Circuit):
    """Two unbuffered CMOS inverters in a ring with R, RS and C."""

    def phases(self, osc: Oscillator, values: Mapping[str, ArrayLike],
               diode_steered: bool = False, vt_plus: ArrayLike = None,
               vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
               i_low: ArrayLike = 0.0) -> Phases:
        """``vt_plus`` is the switching voltage (one threshold; ``vt_minus`` is unused)."""
        return cmos_astable_phases(osc, values["R"], values["RS"], values["C"], vt_plus,
                                   i_high, i_low)

    def hysteresis_limits(self, device: DeviceAtSupply) -> tuple[float, float]:
        """One switching voltage: the pair's difference means nothing here."""
        return -math.inf, math.inf

    def threshold_corners(self, device: DeviceAtSupply) -> list[tuple[float, float]]:
        """The period is longest at either end of the switching voltage's spread and
        shortest near the middle of the output swing (added where inside the spread)."""
        lo, _, hi = device.vt_plus
        corners = [(lo, lo), (hi, hi)]
        centre = 0.5 * (device.voh_v + device.vol_v)
        if lo < centre < hi:
            corners.append((centre, centre))
        return corners

    def timing_node_v(self, osc: Oscillator, v_cap: np.ndarray, v_out: np.ndarray
                      ) -> np.ndarray:
        """C hangs from OUT: the node is OUT's level less the capacitor's voltage."""
        return np.where(v_out > 0.5 * osc.supply_v, osc.device.voh_v, osc.device.vol_v) - v_cap

    def warnings(self, osc: Oscillator, values: Mapping[str, float],
                 diode_steered: bool) -> list[str]:
        fq = format_quantity
        if values["RS"] >= RS_RATIO_MIN * values["R"]:
            return []
        return [f"RS = {fq(values['RS'], 'resistance')} is below {RS_RATIO_MIN:g} × R: the "
                "first inverter's input clamp diodes conduct through RS while the node is "
                "beyond the rails, which shortens the period toward 1.4 R C and ties it to "
                "the diodes' drop; use RS of 2 to 10 times R"]


PINS = (("input", "first inverter input", "RS from the timing node"),
        ("output", "first inverter output", "R to the timing node; the second inverter's "
         "input"),
        ("input2", "second inverter input", "the first inverter's output"),
        ("output2", "second inverter output", "C to the timing node; OUT"),
        ("vcc", "supply", "+ supply; 100 nF to GND right at the pin"),
        ("gnd", "ground", "supply 0 V"))
"""The two gates' pins for the build sheet."""
LAYOUT_NOTES = (
    "Keep RS right at the first inverter's input pin and the timing node small: the "
    "node swings beyond the supply rails.",
    "Use unbuffered inverters (the U in 74HCU04, CD4069UB); buffered ones work but "
    "their threshold and gain differ.",
)
"""Common practice, no published source."""

CMOS_ASTABLE = CmosAstable(name="cmos-astable", title="two-inverter CMOS astable",
                           roles=(Role("R", "R"), Role("RS", "R"), Role("C", "C")),
                           default_family="CD4069UB",
                           oscillator="two-inverter CMOS astable", short="CMOS astable",
                           threshold_words="switching voltage {plus:.2f} V ({source})",
                           threshold_names=("switching voltage", ""),
                           pins=PINS, layout_notes=LAYOUT_NOTES, one_threshold=True,
                           reversing_c=True, follower=("RS", RS_RATIO_MIN, RS_RATIO_MAX),
                           trimmable=("R",),
                           measure_note="Measure at OUT (the second inverter's output), "
                           "never with a probe on the timing node.")
