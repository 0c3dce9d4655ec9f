"""How far a built oscillator can land from its prediction: worst case and Monte Carlo.

Worst case: every corner of the part-value ranges (tolerances may be
asymmetric) against every threshold corner of the chip (see
``Oscillator.threshold_corners``) and the two leakage corners of the timing
node (see ``core.model.leakage``). The frequency is monotonic in each part
value and node current, so the corners bound it. A corner that does not
oscillate makes the band start at 0 Hz.

Monte Carlo: part values uniform within their tolerance (manufacturers sort
parts into tolerance bins, so no central peak is promised); thresholds drawn
from a triangular distribution over the table's min/typ/max, independently
(conservative: real VT+ and VT- move together with the process), redrawn
where they break the guaranteed hysteresis (min and, where listed, max). Draws that do not oscillate
count as 0 Hz.

A calibrated oscillator has no threshold spread but the calibration's own
uncertainty (core.model.calibration): the worst case widens by its first-order
limit, and each simulated build is scaled by the sum of the calibration's
uniform error terms, drawn independently.

References: IEC 60062 (tolerance letters and meaning); the device data
sheets in resources/devices.toml (threshold min/typ/max).
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from core.model.circuits.base import Oscillator, frequency
from core.model.leakage import node_current_corners
from core.units import Tolerance


def worst_case_hz(osc: Oscillator, values: Mapping[str, float | np.ndarray],
                  ranges: Mapping[str, tuple[float | np.ndarray, float | np.ndarray]],
                  diode_steered: bool = False, capacitor_leakage_a: float | np.ndarray = 0.0
                  ) -> tuple[float | np.ndarray, float | np.ndarray]:
    """(lowest, highest) frequency [Hz] over every corner of ``ranges``, thresholds and leakage.

    ``values`` are nominal part values [Ω, F]; ``ranges`` gives (low, high) per
    key (keys not in it stay nominal); ``capacitor_leakage_a`` [A] is the timing
    capacitor's leakage limit (core.model.leakage). Arrays broadcast: pass many
    candidates at once and get arrays back. The low end is 0 where some corner
    does not oscillate.
    """
    corners = osc.threshold_corners()
    # Threshold corners × the two leakage corners, along the last axis.
    vt_plus = np.tile([a for a, _ in corners], 2)
    vt_minus = np.tile([b for _, b in corners], 2)
    i_high, i_low = (np.repeat(i, len(corners), axis=-1)
                     for i in node_current_corners(osc.device, capacitor_leakage_a))
    keys = list(ranges)
    lo = hi = None
    stopped = None
    for choice in itertools.product((0, 1), repeat=len(keys)):
        vals = {k: np.asarray(v, dtype=float)[..., None] for k, v in values.items()}
        for k, pick in zip(keys, choice, strict=True):
            vals[k] = np.asarray(ranges[k][pick], dtype=float)[..., None]
        f = frequency(osc, vals, diode_steered, vt_plus, vt_minus, i_high, i_low)
        nan = np.isnan(f)
        f_lo = np.min(np.where(nan, np.inf, f), axis=-1)
        f_hi = np.max(np.where(nan, -np.inf, f), axis=-1)
        any_nan = nan.any(axis=-1)
        lo = f_lo if lo is None else np.minimum(lo, f_lo)
        hi = f_hi if hi is None else np.maximum(hi, f_hi)
        stopped = any_nan if stopped is None else stopped | any_nan
    assert lo is not None and hi is not None and stopped is not None
    low_factor, high_factor = calibration_factors(osc)
    lo = np.where(stopped | ~np.isfinite(lo), 0.0, lo * low_factor)
    hi = np.where(np.isfinite(hi), hi * high_factor, 0.0)
    if lo.ndim == 0:
        return float(lo), float(hi)
    return lo, hi


def calibration_factors(osc: Oscillator) -> tuple[float, float]:
    """(low, high) factors a calibration's uncertainty puts on any frequency [1]."""
    return 1.0 - osc.calibration_limit, 1.0 + osc.calibration_limit


def _calibration_draws(osc: Oscillator, n: int, rng: np.random.Generator) -> np.ndarray:
    """``n`` frequency factors [1] for a calibrated oscillator (see the module)."""
    scale = np.ones(n)
    for half_width in osc.calibration_terms:
        if half_width > 0:
            scale += rng.uniform(-half_width, half_width, n)
    return scale


@dataclass(frozen=True)
class MonteCarlo:
    """Frequencies [Hz] of simulated builds (0 where a build would not oscillate)."""

    frequencies_hz: np.ndarray

    def percentile(self, p: float) -> float:
        """The ``p``-th percentile [Hz] (0 ≤ p ≤ 100)."""
        return float(np.percentile(self.frequencies_hz, p))

    def fraction_within(self, lo_hz: float, hi_hz: float) -> float:
        """Share of builds (0…1) landing within lo_hz…hi_hz [Hz]."""
        f = self.frequencies_hz
        return float(np.mean((f >= lo_hz) & (f <= hi_hz)))

    @property
    def interval_95(self) -> tuple[float, float]:
        """The central 95 % of builds [Hz]."""
        return self.percentile(2.5), self.percentile(97.5)

    @property
    def stopped_fraction(self) -> float:
        """Share of builds that would not oscillate."""
        return float(np.mean(self.frequencies_hz == 0.0))


def _triangular(rng: np.random.Generator, triplet: tuple[float, float, float],
                n: int) -> np.ndarray:
    lo, mode, hi = triplet
    if hi <= lo:
        return np.full(n, mode)
    return rng.triangular(lo, mode, hi, n)


def draw_thresholds(osc: Oscillator, n: int, rng: np.random.Generator
                    ) -> tuple[np.ndarray, np.ndarray]:
    """``n`` (VT+, VT-) draws [V]; fixed thresholds when the oscillator has them given."""
    if osc.thresholds_given:
        return np.full(n, osc.vt_plus_v), np.full(n, osc.vt_minus_v)
    d = osc.device
    a = _triangular(rng, d.vt_plus, n)
    b = _triangular(rng, d.vt_minus, n)
    h, h_max = osc.circuit.hysteresis_limits(d)
    for _ in range(50):
        bad = (a - b < h) | (a - b > h_max)
        if not bad.any():
            break
        k = int(bad.sum())
        a[bad] = _triangular(rng, d.vt_plus, k)
        b[bad] = _triangular(rng, d.vt_minus, k)
    b = np.clip(b, a - h_max, a - h)
    return a, b


def monte_carlo(osc: Oscillator, values: Mapping[str, float],
                tolerances: Mapping[str, Tolerance], n: int = 10_000, seed: int = 0,
                diode_steered: bool = False) -> MonteCarlo:
    """Frequencies of ``n`` simulated builds, seeded (the same seed gives the same draws).

    ``values`` nominal [Ω, F]; ``tolerances`` per key (keys without one stay nominal).
    """
    rng = np.random.default_rng(seed)
    draws = {}
    for k, v in values.items():
        tol = tolerances.get(k)
        draws[k] = (np.full(n, float(v)) if tol is None else
                    rng.uniform(v * (1 - tol.minus), v * (1 + tol.plus), n))
    a, b = draw_thresholds(osc, n, rng)
    f = frequency(osc, draws, diode_steered, a, b) * _calibration_draws(osc, n, rng)
    return MonteCarlo(np.where(np.isnan(f), 0.0, f))
