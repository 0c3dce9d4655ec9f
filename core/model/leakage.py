"""Currents on the timing node besides the timing network: leakage and comparator inputs.

A current I drawn from the timing node during a phase that charges C toward a
Thevenin target V through R moves the target to V − I·R (the time constant
stays). When that moves the target past the threshold, the node never crosses
it and the oscillator stops: the data sheets' own rule for the largest timing
resistance (NE555: RA + RB below (VCC − VTH) / I_threshold).

Three such currents are modelled:

* a polarised timing capacitor's leakage, up to the data-sheet limit
  I ≤ max(k C V, floor) (C in µF, V in volts, I in µA with k = 0.01), drawn
  from the node in both phases;
* a CMOS input's leakage, up to ± the table's ``input_leakage_a``;
* a 555's comparator input currents: into THRES (pin 6) at the upper
  threshold, out of TRIG (pin 2) at the lower one.

The nominal prediction leaves them out: typical leakage is far below these
limits, and a comparator draws its input current only near its own crossing.
The worst case holds each at its limit (or the opposite sign) for the whole
phase, a constant current that bounds the real effect.

References: aluminium electrolytic and solid tantalum capacitor data sheets,
DC leakage current rating (the 0.01 CV rule); the CMOS data sheets' input
leakage current II (devices.toml); TI NE555 data sheet, threshold and trigger
currents; Horowitz & Hill, AoE 3rd ed. §2.3.8 (differential pair).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from core.model.devices import DeviceAtSupply
from core.parts.networks import Network

CAPACITOR_LEAKAGE_RULE: dict[str, tuple[float, float]] = {
    "electrolytic": (0.01, 3e-6),
    "tantalum": (0.01, 0.5e-6),
}
"""Leakage limit per dielectric: (k [A/(F·V)], floor [A]); I ≤ max(k C V, floor).

k = 0.01 A/(F·V) is the data sheets' 0.01 µA per µF·V. Aluminium electrolytic:
0.01 CV or 3 µA, whichever is greater (common practice, the usual data-sheet
formula); solid tantalum: 0.01 CV or 0.5 µA (from memory, the usual tantalum
data-sheet formula). V is taken as the supply, the voltage the capacitor sees."""

TRIGGER_SHARE_AT_CROSSING = 0.5
"""Share of the TRIG-at-0-V current the trigger input carries at its crossing: the
comparator's input pair is balanced there, each side carrying half the tail
current (textbook differential pair, AoE §2.3.8)."""


def capacitor_leakage_a(c_f: Any, dielectric: str, supply_v: float) -> Any:
    """Leakage limit [A] of a capacitor of ``c_f`` [F] at ``supply_v`` [V]; 0 if not polarised.

    Film and ceramic capacitors leak through gigaohms and are taken as zero.
    """
    rule = CAPACITOR_LEAKAGE_RULE.get(dielectric)
    if rule is None:
        return np.zeros_like(np.asarray(c_f, dtype=float))[()]
    k, floor = rule
    return np.maximum(k * np.asarray(c_f, dtype=float) * supply_v, floor)[()]


def network_leakage_a(node: Network, supply_v: float) -> float:
    """Leakage limit [A] of a capacitor network at ``supply_v`` [V].

    Parallel parts add; a series string passes at most its leakiest part's
    limit (conservative: each part sees less than the supply).
    """
    if node.part is not None:
        return float(capacitor_leakage_a(node.part.value, node.part.dielectric, supply_v))
    children = [network_leakage_a(n, supply_v) for n in node.series or node.parallel]
    return max(children) if node.series else sum(children)


def node_current_corners(device: DeviceAtSupply, capacitor_leakage: Any = 0.0
                         ) -> tuple[np.ndarray, np.ndarray]:
    """Worst-case currents drawn from the timing node [A], positive out of the node.

    Returns ``(i_high, i_low)``, each with a last axis of two corners: the
    slowest build (most drawn while charging, most pushed in while
    discharging) and the fastest (the reverse). ``capacitor_leakage`` [A]
    broadcasts (one per candidate). The frequency falls with ``i_high`` and
    rises with ``i_low``, so these two corners bound it.
    """
    leak = np.asarray(capacitor_leakage, dtype=float)[..., None]
    cmos = device.input_leakage_a
    threshold = device.threshold_current_a[1]
    trigger = TRIGGER_SHARE_AT_CROSSING * device.trigger_current_a[1]
    slow, fast = np.array([1.0, 0.0]), np.array([0.0, 1.0])
    i_high = slow * (leak + cmos + threshold) - fast * cmos
    i_low = fast * (leak + cmos) - slow * (cmos + trigger)
    return i_high, i_low
