"""The timing node as two exact exponential phases, and its steady cycle.

Every circuit reduces to this picture: the timing capacitor charges toward one
Thevenin source while the output is high and toward another while it is low, and
the output flips a propagation delay after a threshold is crossed. A circuit
module (schmitt.py, astable.py) builds the two phases; this module turns them
into times and turning voltages, vectorised over numpy arrays.

References: P. Horowitz and W. Hill, The Art of Electronics, 3rd ed., §1.4 (RC
charging) and §7.1 (relaxation oscillators).
"""

from __future__ import annotations

from typing import Any, NamedTuple

import numpy as np

from core.model.diode import SteeringBranch


class Steered(NamedTuple):
    """A charge through a steering diode: the branch, the node's capacitance [F] and the
    current drawn from the node [A] (broadcast like the node's arrays).

    ``falling``: the branch pulls the node down (a discharge through a diode to the
    output's low level); its ``branch`` is then written in mirrored voltages (−V), so
    the same rising-charge integral serves. ``time`` and ``net_current`` take and give
    real voltages and currents.
    """

    branch: SteeringBranch
    capacitance: Any
    drawn: Any
    falling: bool = False

    def time(self, v_from: Any, v_to: Any) -> tuple[Any, Any]:
        """(time [s] from ``v_from`` to ``v_to`` [V], net current into the node there [A])."""
        sign = -1.0 if self.falling else 1.0
        t, net = self.branch.charge_time(self.capacitance, sign * np.asarray(self.drawn),
                                         sign * np.asarray(v_from), sign * np.asarray(v_to))
        return t, sign * net

    def net_current(self, v_node: Any) -> Any:
        """Net current into the node [A] at node voltage ``v_node`` [V]."""
        sign = -1.0 if self.falling else 1.0
        br = self.branch
        _, current, _ = br.at_junction(br.junction_at_node(sign * np.asarray(v_node)))
        return sign * (current - sign * np.asarray(self.drawn))


class Clamp(NamedTuple):
    """Input clamp diodes fed through a resistor: while the capacitor voltage is beyond
    a level the phase runs toward another Thevenin source (both ends broadcast).

    In the high phase the node runs toward ``v_high`` [V] with ``tau_high`` [s]
    until it rises past ``below`` [V]; in the low phase toward ``v_low`` with
    ``tau_low`` until it falls past ``above``. Where the phase starts inside the
    level, the clamp never conducts.
    """

    below: Any
    v_high: Any
    tau_high: Any
    above: Any
    v_low: Any
    tau_low: Any


class Phases(NamedTuple):
    """The timing node as two Thevenin phases: targets [V], time constants [s], delays [s].

    With ``steering`` the charge runs through a diode wherever it conducts;
    (``v_high``, ``tau_high``) are then the diode-off phase (C through RA + RB).
    With ``steering_low`` the discharge runs through a bare diode (always conducting);
    (``v_low``, ``tau_low``) are then its zero-drop limit, used only to tell whether the
    phase can pass its threshold.
    With ``clamp`` each phase starts with a clamped segment where it starts beyond
    the clamp's level (core.model.circuits.cmos_astable).
    """

    vt_plus: Any
    vt_minus: Any
    v_high: Any
    tau_high: Any
    v_low: Any
    tau_low: Any
    delay_lh: float
    delay_hl: float
    steering: Steered | None = None
    clamp: Clamp | None = None
    steering_low: Steered | None = None


DIODE_OFF_SHARE = 1e-6
"""Below this relative effect on the charge time the steering diode counts as off and
the closed form (C through RA + RB) is used."""


def diode_conducts(n: Phases, v_start: Any) -> np.ndarray:
    """Where the steering diode changes the charge time by more than DIODE_OFF_SHARE.

    Upper bound of its share: the diode's current at RB's drop at the start of the
    charge (largest there; the diode only lowers it), against RB's current, times
    RB's share of the charging resistance.
    A bare diode (no resistor across it) carries the whole charge: it always conducts.
    """
    s = n.steering
    assert s is not None
    br = s.branch
    with np.errstate(all="ignore"):
        v_rb = br.r_across_ohm * (br.source_v - v_start) / (br.r_series_ohm + br.r_across_ohm)
        share = (br.diode.junction_current(v_rb) * br.r_across_ohm / v_rb
                 * br.r_across_ohm / (br.r_series_ohm + br.r_across_ohm))
    return np.asarray((share > DIODE_OFF_SHARE) | np.isinf(br.r_across_ohm))


def log_ratio(far: Any, start: Any, end: Any) -> Any:
    """ln((far − start)/(far − end)): the time constants an exponential toward ``far``
    takes from ``start`` to ``end``. Written with log1p so it stays exact when ``far`` is
    huge (a leakage current through a gigantic R), where the plain ratio rounds to 1."""
    return np.log1p((end - start) / (far - end))


def cycle(n: Phases) -> tuple[np.ndarray, np.ndarray, Any, Any]:
    """Steady-state (t_high, t_low) [s] and the turning voltages (v_start, v_peak) [V].

    After the node crosses VT- the output stays low for delay_lh, so the next
    charge starts below VT- (at ``v_start``); likewise it overshoots VT+ to
    ``v_peak``. Times are NaN where a phase does not pass its threshold.
    """
    a, b = n.vt_plus, n.vt_minus
    low = n.steering_low
    with np.errstate(all="ignore"):
        v_start = b + (b - n.v_low) * np.expm1(-n.delay_lh / n.tau_low)
        if low is not None:  # over the delay the node falls on at its slope at VT-
            v_start = b + low.net_current(b) * n.delay_lh / low.capacitance
        v_peak = a - (n.v_high - a) * np.expm1(-n.delay_hl / n.tau_high)
        t_high = np.where(n.v_high > a, n.tau_high * log_ratio(n.v_high, v_start, a), np.nan)
        t_high = t_high + n.delay_hl
        if n.steering is not None:
            t_high, v_peak = steered_charge(n, v_start, t_high, v_peak)
        t_low = n.tau_low * log_ratio(n.v_low, v_peak, b) + n.delay_lh
        if low is not None:
            t_low = low.time(v_peak, b)[0] + n.delay_lh
        if n.clamp is not None:
            t_high, t_low = clamped_times(n, v_start, v_peak)
    ok = (n.v_low < b) & (a > b) & np.isfinite(t_high)
    return np.where(ok, t_high, np.nan), np.where(ok, t_low, np.nan), v_start, v_peak


def clamped_times(n: Phases, v_start: Any, v_peak: Any) -> tuple[Any, Any]:
    """(t_high, t_low) [s] with the clamp: a clamped segment up to its level (where the
    phase starts beyond it), then the plain exponential on to the threshold."""
    k = n.clamp
    assert k is not None
    from_high = np.maximum(v_start, k.below)
    from_low = np.minimum(v_peak, k.above)
    t_high = (k.tau_high * log_ratio(k.v_high, v_start, from_high)
              + n.tau_high * log_ratio(n.v_high, from_high, n.vt_plus) + n.delay_hl)
    t_low = (k.tau_low * log_ratio(k.v_low, v_peak, from_low)
             + n.tau_low * log_ratio(n.v_low, from_low, n.vt_minus) + n.delay_lh)
    return np.where(n.v_high > n.vt_plus, t_high, np.nan), t_low


def steered_charge(n: Phases, v_start: Any, t_high: Any, v_peak: Any) -> tuple[Any, Any]:
    """The charge time [s] and peak [V] where the steering diode conducts (integrated);
    the closed form elsewhere. Over the delay after VT+ the node rises at its current slope."""
    s = n.steering
    assert s is not None
    br = s.branch
    src, r_ser, r_acr, ct, drawn, v0, a, t_out, peak = (
        np.array(x, dtype=float) for x in np.broadcast_arrays(
            br.source_v, br.r_series_ohm, br.r_across_ohm, s.capacitance, s.drawn, v_start,
            n.vt_plus, t_high, v_peak))
    on = np.broadcast_to(diode_conducts(n, v_start), src.shape)
    if on.any():
        branch = SteeringBranch(br.diode, src[on], r_ser[on], r_acr[on])
        t, net = Steered(branch, ct[on], drawn[on], s.falling).time(v0[on], a[on])
        t_out[on] = t + n.delay_hl
        peak[on] = a[on] + net * n.delay_hl / ct[on]
    return t_out, peak


def phase_times(n: Phases) -> tuple[np.ndarray, np.ndarray]:
    """Steady-state (t_high, t_low) [s]; NaN where a target does not pass its threshold."""
    t_high, t_low, _, _ = cycle(n)
    return t_high, t_low
