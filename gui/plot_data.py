"""What the plots show for a candidate, computed by core (timing, spread, trim).

Kept apart from ``gui.plots`` so the numbers are fetched in one place and the
plot panel only draws arrays.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from core.units import Tolerance, format_frequency
from gui.search_worker import Outcome

MC_BUILDS = 10_000
"""Simulated builds per histogram (seeded: the same candidate gives the same picture)."""
ROTATION_POINTS = 101


def network_tolerances(networks: dict[str, Any]) -> dict[str, Tolerance]:
    """Each network's spread as a tolerance about its nominal value (from its parts)."""
    out = {}
    for key, node in networks.items():
        lo, hi = node.value_range()
        value = node.value
        out[key] = Tolerance(max(0.0, 1 - lo / value), max(0.0, hi / value - 1))
    return out


def draw_candidate(plots: Any, outcome: Outcome, candidate: Any) -> None:
    """Fill ``plots`` (a ``gui.plots.PlotPanel``) for one search or trim candidate."""
    if outcome.target.trim:
        _draw_trim(plots, outcome, candidate)
    else:
        _draw_search(plots, outcome, candidate)


def _waveform(plots: Any, osc: Any, values: dict[str, float], diode_steered: bool,
              title: str) -> None:
    from core.timing import waveform

    t, v_cap, v_out = waveform(osc, values, periods=3, diode_steered=diode_steered)
    plots.show_waveform(t, v_cap, v_out, osc.vt_plus_v, osc.vt_minus_v, title)


def _draw_search(plots: Any, outcome: Outcome, cand: Any) -> None:
    from core.spread import monte_carlo

    osc, target = outcome.oscillator, outcome.target
    _waveform(plots, osc, cand.values, cand.diode_steered,
              f"{format_frequency(cand.frequency_hz, 4)}, duty {cand.duty_pct:.1f} %")
    mc = monte_carlo(osc, cand.values, network_tolerances(cand.networks), n=MC_BUILDS,
                     seed=0, diode_steered=cand.diode_steered)
    assert target.target_hz is not None
    f0, share = target.target_hz, target.accept_pct / 100
    accept = (f0 * (1 - share), f0 * (1 + share))
    within = mc.fraction_within(*accept)
    title = f"{within:.0%} of {MC_BUILDS:,} simulated builds within ±{target.accept_pct:g} %"
    if mc.stopped_fraction > 0:
        title += f"; {mc.stopped_fraction:.1%} would not oscillate"
    freqs = mc.frequencies_hz
    plots.show_spread(freqs[freqs > 0], f0, accept, title)


def _draw_trim(plots: Any, outcome: Outcome, cand: Any) -> None:
    from core.trim import frequency_at_rotation, pot_resistance, rotation_for

    osc, target = outcome.oscillator, outcome.target
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
    centre = float(np.sqrt(lo_band * hi_band))
    turn = rotation_for(osc, cand, centre)
    pot = float(pot_resistance(cand.values["P"], turn, cand.taper))
    values = {"R": cand.values["R"] + pot, "C": cand.values["C"]}
    _waveform(plots, osc, values, False,
              f"At {turn:.0f} % rotation: {format_frequency(centre)}")
