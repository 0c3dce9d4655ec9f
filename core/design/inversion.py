"""The timing model run backwards: the resistance that puts a circuit on a frequency.

Search, trim and what-to-buy all ask the same two things of the model: the
frequency and duty of many builds at once, and the value of one timing
resistor (the circuit's ``tuned`` role) that hits a frequency with the other
parts given, and the resistor that follows the tuned one (the CMOS astable's
RS). They live here, once, for every circuit.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any

import numpy as np

from core.model.timing import Oscillator, resistance_for, times
from core.parts.network_index import NetworkIndex


def frequency_and_duty(osc: Oscillator, values: Mapping[str, Any], diode_steered: bool = False
                       ) -> tuple[np.ndarray, np.ndarray]:
    """Full-model (frequency [Hz], duty [%]) for arrays of part values by role [Ω, F];
    NaN where the build does not oscillate."""
    t_high, t_low = times(osc, {k: np.asarray(v, dtype=float) for k, v in values.items()},
                          diode_steered)
    period = t_high + t_low
    return 1.0 / period, 100.0 * t_high / period


def with_followers(osc: Oscillator, values: Mapping[str, Any], r: Any) -> dict[str, Any]:
    """``values`` with the tuned role at ``r`` [Ω] and any role that follows it (the CMOS
    astable's RS) at its preferred ratio to it."""
    circuit = osc.circuit
    out = {**values, circuit.tuned: r}
    if circuit.follower is not None:
        role, low, high = circuit.follower
        out[role] = math.sqrt(low * high) * np.asarray(r, dtype=float)
    return out


def tuned_resistance(osc: Oscillator, target_hz: float, values: Mapping[str, Any],
                     limits: tuple[float, float] = (1.0, 1e10), clip: bool = False,
                     diode_steered: bool = False) -> np.ndarray:
    """The circuit's tuned resistor [Ω] that gives ``target_hz`` [Hz] with the other parts
    at ``values`` (arrays broadcast; a follower at its preferred ratio); NaN if none.

    Only builds whose one-evaluation estimate (f nearly proportional to 1/R)
    falls within a factor of two of ``limits`` [Ω] are solved: by a few
    rescaling steps where they converge to 1e-9, else by the model's own
    inverse (``resistance_for``, a bracketed secant). That keeps a search on a
    full capacitor kit within milliseconds. With ``clip`` the answer is moved
    into ``limits`` (an unreachable target gives the nearest allowed R, where
    the closest miss lies).
    """
    shape = np.broadcast_shapes(*(np.shape(v) for v in values.values()))
    values = {k: np.broadcast_to(np.asarray(v, dtype=float), shape) for k, v in values.items()}
    r_ref = math.sqrt(limits[0] * limits[1])

    def f_at(r: np.ndarray) -> np.ndarray:
        return frequency_and_duty(osc, with_followers(osc, values, r), diode_steered)[0]

    f_ref = f_at(np.full(shape, r_ref))
    with np.errstate(invalid="ignore"):
        estimate = r_ref * f_ref / target_hz
    # NaN at r_ref (a TTL input stopping oscillation) still gets the exact inverse.
    maybe = ~(estimate < 0.5 * limits[0]) & ~(estimate > 2.0 * limits[1])
    out = np.full(shape, np.nan)
    # f is close to proportional to 1/R: a few rescaling steps converge where the model
    # is smooth; the model's own inverse settles the rest.
    r = np.where(maybe & np.isfinite(estimate), estimate, np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        for _ in range(4):
            r = r * f_at(r) / target_hz
        done = np.abs(f_at(r) / target_hz - 1.0) < 1e-9
    out[done] = r[done]
    rest = maybe & ~done
    if rest.any():
        out[rest] = _exact(osc, target_hz, {k: v[rest] for k, v in values.items()},
                           diode_steered)
    if clip:
        # No exact answer: the estimate shows the side; no estimate (R too large to
        # oscillate at all) means the smallest allowed R.
        fallback = np.where(np.isnan(estimate), limits[0], estimate)
        out = np.clip(np.where(np.isnan(out), fallback, out), *limits)
    return out


def _exact(osc: Oscillator, target_hz: float, values: Mapping[str, np.ndarray],
           diode_steered: bool) -> np.ndarray:
    """The model's own inverse; a follower is solved as a fixed share of the tuned R by
    scaling it with the tuned role (the period depends on both through R C)."""
    if osc.circuit.follower is None:
        return resistance_for(osc, target_hz, values, osc.circuit.tuned,
                              diode_steered=diode_steered)
    # A follower at a fixed ratio: bisect on log R (monotone, as the rescaling above
    # assumes), 60 halvings of the 1 Ω … 10 GΩ bracket are below 1e-9 relative.
    lo = np.zeros(np.shape(next(iter(values.values()))))
    hi = np.full(lo.shape, math.log(1e10))
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        f = frequency_and_duty(osc, with_followers(osc, values, np.exp(mid)), diode_steered)[0]
        slow = ~(f > target_hz)  # NaN (stopped) counts as too large an R
        hi, lo = np.where(slow, mid, hi), np.where(slow, lo, mid)
    r = np.exp(0.5 * (lo + hi))
    f = frequency_and_duty(osc, with_followers(osc, values, r), diode_steered)[0]
    return np.where(np.abs(f / target_hz - 1.0) < 1e-9, r, np.nan)


def solve_capacitance(osc: Oscillator, target_hz: float, values: Mapping[str, Any],
                      c: np.ndarray, diode_steered: bool = False) -> np.ndarray:
    """C [F] that gives ``target_hz`` with the resistors at ``values``, from a first guess
    ``c``, f being nearly proportional to 1/C."""
    with np.errstate(invalid="ignore", divide="ignore"):
        for _ in range(3):
            f = frequency_and_duty(osc, {**values, "C": c}, diode_steered)[0]
            c = np.where(np.isfinite(f) & (f > 0), c * f / target_hz, np.nan)
    return c


def follower_entries(index: NetworkIndex, osc: Oscillator, r: np.ndarray, max_resistors: int,
                     limits: tuple[float, float]) -> np.ndarray:
    """Per tuned resistance ``r`` [Ω], the drawer network for the circuit's follower (the
    CMOS astable's RS): within its ratio window of ``r`` and ``limits`` [Ω], fewest parts
    first, then nearest (in ratio) the window's geometric middle; -1 where none fits.

    Decision where the issue is silent: RS isolates the input clamp diodes and is not a
    timing knob, so it is picked for its ratio, not for the frequency; the middle of
    the data sheet's window leaves room for both tolerances.
    """
    assert osc.circuit.follower is not None
    _, low, high = osc.circuit.follower
    r = np.asarray(r, dtype=float)
    mid = math.sqrt(low * high) * r
    near = index.nearest(mid, max_resistors, 1, *limits)
    if not near.shape[1]:
        return np.full(r.shape, -1, dtype=np.int64)
    v = index.values[np.maximum(near, 0)]
    inside = (near >= 0) & (v >= low * r[:, None]) & (v <= high * r[:, None])
    with np.errstate(divide="ignore", invalid="ignore"):
        key = np.where(inside, index.part_count[np.maximum(near, 0)] * 100.0
                       + np.abs(np.log(v / mid[:, None])), np.inf)
    best = np.argmin(key, axis=1)
    rows = np.arange(len(r))
    return np.where(np.isfinite(key[rows, best]), near[rows, best], -1)
