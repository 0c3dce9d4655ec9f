"""What the plots show for a candidate, computed by core (timing, spread, trim).

Kept apart from ``gui.plots`` so the numbers are fetched in one place and the
plot panel only draws arrays.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

import numpy as np

from core.model.circuits.divider import tap
from core.units import format_frequency, format_quantity
from gui.drift_plots import drift_subject
from gui.search_worker import Outcome

MC_BUILDS = 10_000
"""Simulated builds per histogram (seeded: the same candidate gives the same picture)."""
ROTATION_POINTS = 101
CHIP_DOMINATES = 2.0
"""The chip's thresholds "dominate" when the whole worst-case band is this many times
wider (on a log scale) than the band the parts alone give (our own rule of thumb)."""
WIDE_BAND = 1.25
"""...and the whole band spans at least this ratio high/low (narrower needs no advice)."""


@dataclass(frozen=True)
class ChipSpread:
    """How much of a candidate's spread is the chip's thresholds rather than the parts.

    ``full_hz`` every corner (parts and thresholds), ``parts_hz`` the parts' corners with
    the thresholds fixed at the model's nominal ones [Hz].
    """

    full_hz: tuple[float, float]
    parts_hz: tuple[float, float]

    @property
    def chip_dominates(self) -> bool:
        full = self.full_hz[1] / self.full_hz[0] if self.full_hz[0] > 0 else np.inf
        parts = self.parts_hz[1] / self.parts_hz[0]
        return bool(full >= WIDE_BAND and np.log(full) >= CHIP_DOMINATES * np.log(parts))


def stage_of(outcome: Outcome, cand: Any) -> Any:
    """The oscillator as ``cand`` is built: after the counter stage its search chose (the
    candidate's ``divide_by``), else the result's own."""
    from core.design.buy import at_stage

    return at_stage(outcome.oscillator, cand.divide_by)


def chip_spread(outcome: Outcome, cand: Any) -> ChipSpread | None:
    """Split a search candidate's spread into chip and parts (None for trim results or
    when the thresholds are already fixed by a calibration or given values)."""
    from core.model.spread import worst_case_hz

    osc, target = stage_of(outcome, cand), outcome.target
    if target.trim or osc.thresholds_given or target.target_hz is None:
        return None
    known = osc.with_thresholds(osc.vt_plus_v, osc.vt_minus_v)
    ranges = {key: node.value_range for key, node in cand.networks.items()}
    parts = worst_case_hz(known, cand.values, ranges, cand.diode_steered)
    if not parts[0] > 0:
        return None
    return ChipSpread(tuple(cand.worst_case_hz), (float(parts[0]), float(parts[1])))


def builds(osc: Any, cand: Any) -> Any:
    """Monte Carlo of ``MC_BUILDS`` builds of a search candidate (core.model.spread.MonteCarlo)."""
    from core.model.spread import monte_carlo

    return monte_carlo(osc, cand.values, cand.tolerances_at(), n=MC_BUILDS,
                       seed=0, diode_steered=cand.diode_steered)


def accept_band(target: Any) -> tuple[float, float]:
    """The acceptance band [Hz] around a frequency target."""
    assert target.target_hz is not None
    f0, share = target.target_hz, target.accept_pct / 100
    return f0 * (1 - share), f0 * (1 + share)


def chip_spread_advice(outcome: Outcome, cand: Any) -> str:
    """Plain words (rich text with two links, ``calibrate`` and ``trim``) when the chip's
    threshold range, not the parts, makes most of the spread; else ``""``."""
    spread = chip_spread(outcome, cand)
    if spread is None or not spread.chip_dominates:
        return ""
    device = outcome.oscillator.device
    (a_lo, _, a_hi), (b_lo, _, b_hi) = device.vt_plus, device.vt_minus
    return (
        f"<b>Most of this spread is the chip, not your parts:</b> with VT+ {a_lo:.2f}–{a_hi:.2f}"
        f" V and VT− {b_lo:.2f}–{b_hi:.2f} V ({device.family.name} data sheet, "
        f"{device.supply_v:g} V) builds land in {_band(spread.full_hz)}; your parts alone, "
        f'{_band(spread.parts_hz)}. <a href="calibrate">Calibrate</a> from one build measured '
        "with 1 % resistors and a C0G or film capacitor" + (
            ', or <a href="trim">trim a band</a>.'
            if outcome.oscillator.circuit.trimmable else "."))


def _band(lo_hi: tuple[float, float]) -> str:
    return f"{format_frequency(lo_hi[0])} … {format_frequency(lo_hi[1])}"


def draw_steps(plots: Any, outcome: Outcome, candidate: Any) -> Iterator[None]:
    """Fill ``plots`` (a ``gui.plots.PlotPanel``) for one candidate, one plot per step.

    The window runs the steps from its event loop so each plot is drawn (and
    painted) in its own short slice instead of one long pause.
    """
    if outcome.target.trim:
        yield from _draw_trim(plots, outcome, candidate)
    else:
        yield from _draw_search(plots, outcome, candidate)


def _waveform(plots: Any, osc: Any, values: dict[str, float], diode_steered: bool,
              title: str) -> None:
    """The timing node (what a scope probe there shows) and the oscillator's output over
    three periods; for a counter, its output below, over two of its own periods."""
    from core.model.timing import output_waveform, waveform

    t, v_cap, v_out = waveform(osc, values, periods=3, diode_steered=diode_steered)
    node = osc.circuit.timing_node_v(osc, v_cap, v_out)
    plots.show_waveform(t, node, v_out, osc.vt_plus_v, osc.vt_minus_v, osc.circuit, title,
                        "C" if node is v_cap else "node")
    if osc.divide_by == 1:
        plots.hide_divided()
        return
    t_q, v_q = output_waveform(osc, values, periods=2, diode_steered=diode_steered)
    period = float(t_q[4] - t_q[0])
    name = tap(osc.divide_by)
    plots.show_divided(t_q, v_q, f"{name} output", f"÷ {osc.divide_by}: period "
                       f"{format_quantity(period, 'period', 4)}, duty 50 %")


def _title(osc: Any, cand: Any) -> str:
    """The waveform's title: the frequency it shows (the oscillator's own before a
    counter, whose output has its own tab)."""
    if osc.divide_by > 1:
        return f"Oscillator {format_frequency(cand.oscillator_hz, 4)}"
    if osc.circuit.one_threshold:  # near 50 % by its symmetry (the table says it): room
        return format_frequency(cand.frequency_hz, 4)  # for the key
    return f"{format_frequency(cand.frequency_hz, 4)}, duty {cand.duty_pct:.1f} %"


def _draw_search(plots: Any, outcome: Outcome, cand: Any) -> Iterator[None]:
    osc, target = stage_of(outcome, cand), outcome.target
    _waveform(plots, osc, cand.values, cand.diode_steered, _title(osc, cand))
    yield
    mc = builds(osc, cand)
    accept = accept_band(target)
    within = mc.fraction_within(*accept)
    title = (f"{100 * within:.0f} % of {MC_BUILDS:,} builds within "
             f"±{target.accept_pct:g} %")
    if mc.stopped_fraction > 0:
        title += f"; {mc.stopped_fraction:.1%} would not oscillate"
    freqs = mc.frequencies_hz
    plots.show_spread(freqs[freqs > 0], target.target_hz, accept, title)
    plots.drift.set_subject(drift_subject(osc, cand, cand.values, target.target_hz, accept))


def _draw_trim(plots: Any, outcome: Outcome, cand: Any) -> Iterator[None]:
    from core.design.trim import frequency_at_rotation, rotation_for

    osc, target = stage_of(outcome, cand), outcome.target
    assert target.band_hz is not None
    lo_band, hi_band = target.band_hz
    rotation = np.linspace(0.0, 100.0, ROTATION_POINTS)
    nominal = frequency_at_rotation(osc, cand, rotation)
    low = frequency_at_rotation(osc, cand, rotation, corner="low")
    high = frequency_at_rotation(osc, cand, rotation, corner="high")
    plots.show_rotation(rotation, nominal, low, high, (lo_band, hi_band),
                        tuple(cand.rotation_pct),
                        f"Band shaded; guaranteed {format_frequency(cand.guaranteed_hz[0])}"
                        f" … {format_frequency(cand.guaranteed_hz[1])}")
    yield
    centre = float(np.sqrt(lo_band * hi_band))
    turn = rotation_for(osc, cand, centre)
    # Before a counter, the oscillator's own frequency (its tab says so; the output's
    # tab shows the band's centre).
    _waveform(plots, osc, cand.values_at(turn), False, f"Pot at {turn:.0f} %: "
              f"{format_frequency(centre * osc.divide_by)}")
    plots.drift.set_subject(drift_subject(osc, cand, cand.values_at(turn), None,
                                          target.band_hz))
