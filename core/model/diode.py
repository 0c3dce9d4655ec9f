"""A silicon diode's I–V curve, and a resistor–diode branch charging the timing node.

The diode is the DC part of the SPICE diode model: Shockley's law for the
junction plus an ohmic series resistance,

    I = IS (exp(Vj / (N VT)) − 1),     V = Vj + I RS,     VT = k T / q,

so a netlist with the same ``.model`` line simulates the same curve.

A steering branch is a source behind a series resistance feeding the timing
node through the diode, with (optionally) a resistor across the diode: the
555's RA from VCC, then RB with the steering diode across it. Every quantity
of the branch is explicit in the junction voltage Vj (diode current, the drop
across the pair, the branch current, the node voltage), so the charge time

    t = ∫ C dV / (I(V) − I_drawn)

is a quadrature over Vj; only its end points need a (vectorised, monotone)
Newton solve. The substitution Vj = Vj∞ + e^s, with Vj∞ where the branch
current equals the drawn current (the phase's asymptote), removes the
logarithmic end singularity, so Gauss–Legendre converges fast. A branch
discharging the node through a diode is the mirror image (voltages measured
down from the source).

References: W. Shockley (1949), the ideal diode law; ngspice User's Manual
(version 39), §7.2 "Diodes" (IS, N, RS; TNOM = 27 °C); Horowitz & Hill, AoE
3rd ed., §1.6 (diodes), §1.4 (RC charging).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cache
from typing import Any

import numpy as np

BOLTZMANN_OVER_CHARGE = 8.617333262e-5
"""k / q [V/K] (CODATA 2018, exact since the 2019 SI)."""
SPICE_NOMINAL_K = 300.15
"""27 °C, SPICE's nominal temperature TNOM [K] (ngspice manual)."""
QUADRATURE_NODES = 12
"""Gauss–Legendre nodes per charge time: after the substitution the integrand is so
smooth that 12 nodes agree with scipy's adaptive quadrature to about 1e-14 (checked
over supplies 2–15 V and RA/RB 1/100…100 in tests/test_diode.py)."""


@dataclass(frozen=True)
class Diode:
    """Shockley diode with series resistance: IS [A], N, RS [Ω] at ``temperature_k`` [K]."""

    name: str
    saturation_current_a: float
    emission_coefficient: float
    series_resistance_ohm: float
    source: str
    temperature_k: float = SPICE_NOMINAL_K

    @property
    def n_vt(self) -> float:
        """N k T / q [V]: the junction voltage per e-fold of current."""
        return self.emission_coefficient * BOLTZMANN_OVER_CHARGE * self.temperature_k

    def junction_current(self, v_junction: Any) -> Any:
        """Current [A] at the junction voltage ``v_junction`` [V] (Shockley)."""
        return self.saturation_current_a * np.expm1(np.asarray(v_junction) / self.n_vt)

    def voltage(self, current: Any) -> Any:
        """Terminal voltage [V] at a forward ``current`` [A] (above −IS), RS included."""
        i = np.asarray(current, dtype=float)
        return self.n_vt * np.log1p(i / self.saturation_current_a) + i * self.series_resistance_ohm

    def spice_model(self) -> str:
        """The ``.model`` line with the same DC parameters (capacitances left out, as here)."""
        return (f".model {self.name.lower()} d is={self.saturation_current_a:.6g} "
                f"n={self.emission_coefficient:.6g} rs={self.series_resistance_ohm:.6g}")


SMALL_SIGNAL_DIODE = Diode(
    name="1N4148", saturation_current_a=2.52e-9, emission_coefficient=1.752,
    series_resistance_ohm=0.568,
    source="from memory: the 1N4148 (1N914) SPICE .model card widely distributed with "
           "SPICE libraries under the maker ON Semiconductor (IS=2.52n RS=.568 N=1.752 "
           "CJO=4p M=.4 TT=20n); DC parameters only")
"""The steering diode the build sheet lists (a 1N4148 small-signal silicon diode)."""

DIODE_DRIFT_V = 0.08
"""A silicon diode's forward drop moves about −2 mV/K (textbook silicon junction; the
1N4148 data sheet's forward-voltage curves over temperature): 80 mV over a 40 K swing."""
DIODE_DRIFT_SHARE = 0.05
"""Warn when that drift moves a phase's time by more than this share (common practice,
no published source)."""


def drop_drift_share(far_v: float, near_v: float) -> float:
    """The share by which a phase's time t ∝ ln(far/near) moves when the diode's drop
    drifts by DIODE_DRIFT_V; ``far_v``/``near_v`` [V] are the drive (source − drop −
    threshold) at the start and at the end of the phase (inf where it never arrives)."""
    if not near_v > 0:
        return math.inf
    return DIODE_DRIFT_V * (1 / near_v - 1 / far_v) / math.log(far_v / near_v)


@cache
def _legendre(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss–Legendre nodes and weights on [0, 1]."""
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * (x + 1.0), 0.5 * w


@dataclass(frozen=True)
class SteeringBranch:
    """A source behind a series resistance, then a diode (with a resistor across it), to C.

    ``source_v`` [V], ``r_series_ohm`` [Ω] and ``r_across_ohm`` [Ω] (``inf``
    for a bare diode) broadcast like numpy arrays. Current flows toward the
    node, anode on the source side.
    """

    diode: Diode
    source_v: Any
    r_series_ohm: Any
    r_across_ohm: Any

    def _slopes(self, vj: Any) -> tuple[Any, Any, Any]:
        """(diode current [A], d/d vj of the voltage across and of the current through
        diode ∥ resistor): all the charge integral needs at its nodes."""
        d = self.diode
        i_d = d.junction_current(vj)
        g = (i_d + d.saturation_current_a) / d.n_vt  # d i_d / d vj
        dv_pair = 1.0 + g * d.series_resistance_ohm
        return i_d, dv_pair, g + dv_pair / self.r_across_ohm

    def _pair(self, vj: Any) -> tuple[Any, Any, Any, Any]:
        """Across diode ∥ resistor: (voltage [V], current [A], and their d/d vj)."""
        i_d, dv_pair, d_current = self._slopes(vj)
        v_pair = vj + i_d * self.diode.series_resistance_ohm
        return v_pair, i_d + v_pair / self.r_across_ohm, dv_pair, d_current

    def _node_slope(self, dv_pair: Any, d_current: Any) -> Any:
        """d node voltage / d vj from the pair's slopes (``_slopes``)."""
        return -(d_current * self.r_series_ohm + dv_pair)

    def _current(self, vj: Any) -> tuple[Any, Any]:
        """(branch current [A], its slope d/d vj [S]) at junction ``vj``."""
        _, current, _, d_current = self._pair(vj)
        return current, d_current

    def at_junction(self, vj: Any) -> tuple[Any, Any, Any]:
        """(node voltage [V], branch current [A], d node voltage / d vj) at junction ``vj``."""
        v_pair, current, dv_pair, d_current = self._pair(vj)
        node = self.source_v - current * self.r_series_ohm - v_pair
        return node, current, self._node_slope(dv_pair, d_current)

    def _newton(self, residual: Any, start: Any) -> Any:
        """Root of an increasing convex ``residual(vj) -> (value, slope)`` from its right.

        Newton's steps from the right of such a root never overshoot it, so
        the iteration is monotone and safe for every element at once.
        """
        vj = np.asarray(start, dtype=float)
        for _ in range(200):
            value, slope = residual(vj)
            step = value / slope
            vj = vj - step
            if not np.any(np.abs(step) > 1e-13):
                break
        return vj

    def junction_at_node(self, v_node: Any) -> Any:
        """Junction voltage [V] where the node sits at ``v_node`` [V]."""
        d = self.diode
        drive = np.asarray(self.source_v - v_node, dtype=float)

        def residual(vj: Any) -> tuple[Any, Any]:
            node, _, slope = self.at_junction(vj)
            return v_node - node, -slope

        # Right of the root: the diode alone through RS would already pass the
        # whole drive (or the drive itself, which is smaller then).
        with np.errstate(divide="ignore", invalid="ignore"):
            alone = d.n_vt * np.log1p(np.maximum(drive, 0.0)
                                      / (np.asarray(self.r_series_ohm) * d.saturation_current_a))
        start = np.maximum(np.minimum(np.nan_to_num(alone, nan=np.inf), drive), 0.0)
        return self._newton(residual, start)

    def pair_at_node(self, v_node: Any) -> tuple[Any, Any]:
        """(voltage across diode ∥ resistor [V], the diode's share of the current) at
        node voltage ``v_node`` [V]."""
        vj = self.junction_at_node(v_node)
        v_pair, current, _, _ = self._pair(vj)
        return v_pair, self.diode.junction_current(vj) / current

    def junction_for_current(self, current: Any) -> Any:
        """Junction voltage [V] where the branch carries ``current`` [A] (−inf if never)."""
        d = self.diode
        i = np.asarray(current, dtype=float)

        def residual(vj: Any) -> tuple[Any, Any]:
            got, slope = self._current(vj)
            return got - i, slope

        start = np.where(i > 0, d.n_vt * np.log1p(np.maximum(i, 0.0) / d.saturation_current_a),
                         0.0)
        vj = self._newton(residual, start)
        reachable = np.isfinite(self.r_across_ohm) | (i > -d.saturation_current_a)
        return np.where(reachable, vj, -np.inf)


    def charge_time(self, capacitance_f: Any, drawn_a: Any, v_from: Any, v_to: Any
                    ) -> tuple[Any, Any]:
        """(time [s] for the node to rise from ``v_from`` to ``v_to`` [V], net current there [A]).

        The node holds ``capacitance_f`` [F] and ``drawn_a`` [A] is drawn from
        it (leakage). NaN where the node settles below ``v_to`` and never gets there.
        """
        d = self.diode
        x0, x1 = self.junction_at_node(v_from), self.junction_at_node(v_to)
        drawn = np.asarray(drawn_a, dtype=float)
        x_inf = self.junction_for_current(drawn)
        reaches = x1 > x_inf
        # Measure from the asymptote (or, without one, from just below the end).
        x_ref = np.where(np.isfinite(x_inf), x_inf, x1 - d.n_vt)
        i_ref, _ = self._current(x_ref)
        excess_ref = np.where(np.isfinite(x_inf), 0.0, i_ref - drawn)
        with np.errstate(divide="ignore", invalid="ignore"):
            s0, s1 = np.log(x0 - x_ref), np.log(x1 - x_ref)
        u, w = _legendre(QUADRATURE_NODES)
        s = s1[..., None] + (s0 - s1)[..., None] * u
        dx = np.exp(s)
        ref = x_ref[..., None]
        wide = SteeringBranch(d, *(np.asarray(p, dtype=float)[..., None] for p in
                                   (self.source_v, self.r_series_ohm, self.r_across_ohm)))
        slope = wide._node_slope(*wide._slopes(ref + dx)[1:])
        # Branch current above the reference without cancellation: expm1 of the step.
        di_d = d.saturation_current_a * np.exp(ref / d.n_vt) * np.expm1(dx / d.n_vt)
        dv_pair = dx + di_d * d.series_resistance_ohm
        excess = di_d + dv_pair / wide.r_across_ohm + excess_ref[..., None]
        integrand = np.asarray(capacitance_f, dtype=float)[..., None] * (-slope) * dx / excess
        t = (s0 - s1) * np.sum(w * integrand, axis=-1)
        i_end, _ = self._current(x1)
        return np.where(reaches, t, np.nan), i_end - drawn
