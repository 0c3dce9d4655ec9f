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

is an integral over Vj; only its end points need a (vectorised, monotone)
Newton solve. The series resistance's share of it is R ln(I − I_drawn) between
the ends, and with no resistor across the diode (the steered Schmitt inverter)
Shockley's law integrates in closed form too. With one (the 555's RB) the rest
is a quadrature: the substitution Vj = Vj∞ + e^s, with Vj∞ where the branch
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
from dataclasses import dataclass, replace
from functools import cache
from typing import Any

import numpy as np

BOLTZMANN_OVER_CHARGE = 8.617333262e-5
"""k / q [V/K] (CODATA 2018, exact since the 2019 SI)."""
SPICE_NOMINAL_K = 300.15
"""27 °C, SPICE's nominal temperature TNOM [K] (ngspice manual)."""
NEWTON_STEP_V = 1e-9
"""A junction solve stops once every Newton step is below this [V]: what is left is at
most (1e-9)² / (2 nVT), about 1e-17 V, below rounding (see ``SteeringBranch._newton``)."""
QUADRATURE_NODES = 12
"""Gauss–Legendre nodes per charge time, an even number (``_pair_integral`` takes them in
pairs): after the substitution the integrand is so smooth that 12 nodes agree with scipy's
adaptive quadrature to about 1e-14 (checked over supplies 2–15 V and RA/RB 1/100…100 in
tests/test_diode.py)."""


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
    """Gauss–Legendre nodes (ascending, symmetric about 1/2) and weights on [0, 1]."""
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

    def _pair(self, vj: Any) -> tuple[Any, Any, Any, Any]:
        """Across diode ∥ resistor: (voltage [V], current [A], and their d/d vj)."""
        d = self.diode
        i_d = d.junction_current(vj)
        g = (i_d + d.saturation_current_a) / d.n_vt  # d i_d / d vj
        dv_pair = 1.0 + g * d.series_resistance_ohm
        v_pair = vj + i_d * d.series_resistance_ohm
        return (v_pair, i_d + v_pair / self.r_across_ohm, dv_pair,
                g + dv_pair / self.r_across_ohm)

    def _current(self, vj: Any) -> tuple[Any, Any]:
        """(branch current [A], its slope d/d vj [S]) at junction ``vj``."""
        _, current, _, d_current = self._pair(vj)
        return current, d_current

    def at_junction(self, vj: Any) -> tuple[Any, Any, Any]:
        """(node voltage [V], branch current [A], d node voltage / d vj) at junction ``vj``."""
        v_pair, current, dv_pair, d_current = self._pair(vj)
        node = self.source_v - current * self.r_series_ohm - v_pair
        return node, current, -(d_current * self.r_series_ohm + dv_pair)

    def _drive_terms(self) -> tuple[Any, Any]:
        """(k_j, k_d): the drive, source − node, is k_j·vj + k_d·i_d, linear in the junction
        voltage and the diode current; the Newton solve for the node needs nothing more."""
        r, rs, r_across = self.r_series_ohm, self.diode.series_resistance_ohm, self.r_across_ohm
        return 1.0 + r / r_across, r + rs + r * rs / r_across

    @staticmethod
    def _newton(residual: Any, start: Any, *given: Any) -> Any:
        """Root of an increasing convex ``residual(vj, *given) -> (value, slope)`` from its
        right, element by element (``start`` and ``given`` broadcast).

        Newton's steps from the right of such a root never overshoot it, so
        the iteration is monotone and safe for every element at once. Both
        residuals here are an exponential in vj/nVT plus a linear part, so their
        curvature over slope is at most 1/nVT and a step δ leaves the root at most
        δ²/(2 nVT) away: once its step is below NEWTON_STEP_V an element is exact to
        rounding and drops out of the iteration (a few elements need twice the steps
        of most).
        """
        shape = np.broadcast_shapes(np.shape(start), *(np.shape(g) for g in given))
        vj = np.array(np.broadcast_to(start, shape), dtype=float)
        flat = vj.reshape(-1)
        given = tuple(np.broadcast_to(np.asarray(g, dtype=float), shape).reshape(-1)
                      for g in given)
        k = np.arange(flat.size)
        for _ in range(200):
            value, slope = residual(flat[k], *(g[k] for g in given))
            step = value / slope
            flat[k] -= step
            k = k[np.abs(step) > NEWTON_STEP_V]
            if not k.size:
                break
        return vj

    def junction_at_node(self, v_node: Any) -> Any:
        """Junction voltage [V] where the node sits at ``v_node`` [V]."""
        d = self.diode
        drive = np.asarray(self.source_v - v_node, dtype=float)
        k_j, k_d = self._drive_terms()

        def residual(vj: Any, drive: Any, k_j: Any, k_d: Any) -> tuple[Any, Any]:
            i_d = d.junction_current(vj)
            return (k_j * vj + k_d * i_d - drive,
                    k_j + k_d * (i_d + d.saturation_current_a) / d.n_vt)

        # Right of the root, for a positive drive: the diode alone through R would
        # already pass the whole drive, and so would the rest alone (drive / k_j).
        with np.errstate(divide="ignore", invalid="ignore"):
            alone = d.n_vt * np.log1p(np.maximum(drive, 0.0)
                                      / (np.asarray(self.r_series_ohm) * d.saturation_current_a))
            start = np.minimum(np.nan_to_num(alone, nan=np.inf), drive / k_j)
            # One Newton step on vj = nVT ln(1 + i_d / IS), i_d = (drive − k_j vj) / k_d: that
            # form is concave and decreasing in vj, so the step stays right of the root,
            # and it is nearly linear where the diode conducts (where the exponential
            # form is steep), leaving the exponential form a few steps.
            log_arg = (drive - k_j * start) / (k_d * d.saturation_current_a)
            value = d.n_vt * np.log1p(log_arg) - start
            slope = -1.0 - d.n_vt * k_j / (k_d * d.saturation_current_a * (1.0 + log_arg))
            start = np.where(drive > 0, start - value / slope, 0.0)
        return self._newton(residual, start, drive, k_j, k_d)

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

        def residual(vj: Any, i: Any, r_across: Any) -> tuple[Any, Any]:
            got, slope = replace(self, r_across_ohm=r_across)._current(vj)
            return got - i, slope

        start = np.where(i > 0, d.n_vt * np.log1p(np.maximum(i, 0.0) / d.saturation_current_a),
                         0.0)
        vj = self._newton(residual, start, i, self.r_across_ohm)
        reachable = np.isfinite(self.r_across_ohm) | (i > -d.saturation_current_a)
        return np.where(reachable, vj, -np.inf)

    def charge_time(self, capacitance_f: Any, drawn_a: Any, v_from: Any, v_to: Any
                    ) -> tuple[Any, Any]:
        """(time [s] for the node to rise from ``v_from`` to ``v_to`` [V], net current there [A]).

        The node holds ``capacitance_f`` [F] and ``drawn_a`` [A] is drawn from
        it (leakage). NaN where the node settles below ``v_to`` and never gets there.

        Over the junction voltage, t = C ∫ (R dI + dV_pair) / (I − I_drawn): the series
        resistor's share is R ln(e0 / e1), e = I − I_drawn at the two ends, and a bare
        diode's pair voltage integrates in closed form too (``_bare_integral``); only a
        resistor across the diode leaves a quadrature (``_pair_integral``).
        """
        given = (capacitance_f, drawn_a, v_from, v_to, self.source_v, self.r_series_ohm,
                 self.r_across_ohm)
        shape = np.broadcast_shapes(*(np.shape(x) for x in given))
        c, drawn, v0, v1, *branch = (np.broadcast_to(np.asarray(x, dtype=float), shape)
                                     for x in given)
        br = SteeringBranch(self.diode, *branch)
        x0, x1 = br.junction_at_node(np.stack([v0, v1]))  # both ends in one solve
        e0, e1 = br._current(np.stack([x0, x1]))[0] - drawn
        bare = np.isinf(br.r_across_ohm)
        pair = np.empty(shape)
        with np.errstate(divide="ignore", invalid="ignore"):
            log_ratio = np.log(e0 / e1)
            if bare.any():
                pair[bare] = br._bare_integral(x0[bare], x1[bare], e1[bare], drawn[bare])
            if not bare.all():
                k = ~bare
                pair[k] = SteeringBranch(self.diode, *(p[k] for p in branch)
                                         )._pair_integral(x0[k], x1[k], drawn[k])
            t = c * ((br.r_series_ohm + np.where(bare, self.diode.series_resistance_ohm, 0.0))
                     * log_ratio + pair)
        return np.where(e1 > 0, t, np.nan), e1

    def _bare_integral(self, x0: Any, x1: Any, e1: Any, drawn: Any) -> Any:
        """∫ dvj / (I − I_drawn) [Ω] from junction ``x1`` up to ``x0`` [V] for a bare diode, in
        closed form (its RS adds RS ln(e0 / e1) to the pair's share, as R does).

        With I = IS (e^(vj/nVT) − 1) and B = IS + I_drawn the integral is
        (nVT / B) ln(1 + B z), z = (1 − e^((x1 − x0)/nVT)) / e1, written so that it
        stays exact as B z → 0.
        """
        d = self.diode
        z = -np.expm1((x1 - x0) / d.n_vt) / e1
        y = (d.saturation_current_a + drawn) * z
        return d.n_vt * z * np.where(y == 0.0, 1.0, np.log1p(y) / y)

    def _pair_integral(self, x0: Any, x1: Any, drawn: Any) -> Any:
        """∫ dV_pair / (I − I_drawn) [Ω] from junction ``x1`` up to ``x0`` [V] with a resistor
        across the diode, by Gauss–Legendre in s = ln(vj − vj∞).

        vj∞ is where the branch carries the drawn current (the phase's asymptote);
        the substitution removes the logarithmic end singularity there, so the
        nodes converge fast. Quantities are taken as steps above vj∞ (expm1), free
        of cancellation.
        """
        d = self.diode
        x_inf = self.junction_for_current(drawn)
        near = x1 - x_inf
        ratio = (x0 - x_inf) / near
        span = np.log(ratio)  # the interval's length in s
        rs_slope = d.series_resistance_ohm / d.n_vt
        at_inf = d.saturation_current_a * np.exp(x_inf / d.n_vt)  # i_d + IS at vj∞
        dv_inf = 1.0 + at_inf * rs_slope  # d V_pair / d vj at vj∞
        di_share = 1.0 + d.series_resistance_ohm / self.r_across_ohm

        def integrand(dx: Any) -> Any:
            di_d = at_inf * np.expm1(dx / d.n_vt)
            return (dv_inf + di_d * rs_slope) * dx / (di_d * di_share + dx / self.r_across_ohm)

        # vj − vj∞ = near · ratio^u at the nodes; they pair up as u and 1 − u (same
        # weight), so one power serves both. A node at a time keeps the arrays in cache.
        u, w = _legendre(QUADRATURE_NODES)
        total = np.zeros(np.shape(near))
        half = QUADRATURE_NODES // 2
        for uk, wk in zip(u[:half], w[:half], strict=True):
            power = np.exp(span * uk)
            total += wk * (integrand(near * power) + integrand(near * (ratio / power)))
        return span * total
