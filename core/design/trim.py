"""Trim designs: a fixed resistor network in series with a pot, so a band is always reachable.

The pot is a variable resistor (wiper tied to one end) in series with a fixed
resistance R, never zero, which protects the output at zero rotation. A
design is returned only if its *guaranteed* band covers LO..HI: the band
reached at every tolerance corner (fixed parts, the pot's end-to-end value,
the capacitor, and the device table's thresholds unless they were given).
Its low end is the highest full-rotation frequency over the corners, its high
end the lowest zero-rotation frequency (DESIGN.md contract). Designs are
ranked finest adjustment first (smallest nominal range_hz[1] / range_hz[0]),
then fewest parts.

The pot's taper laws and "fixed R plus pot at a rotation" live with the
design shape (core/design/design.py); real log pots are often two straight
segments meeting near 10–15 % at mid-rotation.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from core.design.design import Design, pot_resistance, rotation_for_share
from core.design.inversion import frequency_and_duty, tuned_resistance
from core.design.robust import drifted_index_ranges, drifted_part_ranges
from core.errors import InputError
from core.model.drift import (
    Conditions,
    ageing_words,
    conditions_chip_factor,
    conditions_oscillators,
)
from core.model.spread import calibration_factors
from core.model.timing import Oscillator, resistance_for
from core.parts.drawer import Part
from core.parts.networks import DrawerIndex, Network, NetworkIndex, drawer_index, single
from core.units import format_frequency

MARGIN = 1e-7
"""Relative margin on the corner conditions, far above the 1e-9 to which the needed
resistances are solved, so a network picked by them passes the full corner check."""


@dataclass(frozen=True)
class TrimCandidate(Design):
    """A trim design: fixed R, pot P, capacitor C (values [Ω, F]) and what it reaches.

    ``range_hz`` (at full rotation, at zero rotation) is nominal;
    ``guaranteed_hz`` holds at every corner; ``rotation_pct`` (at band high,
    at band low) is nominal; ``resolution_hz_per_pct`` is the frequency change
    per percent of rotation at the band centre.
    """

    values: dict[str, float]
    networks: dict[str, Network]
    range_hz: tuple[float, float]
    guaranteed_hz: tuple[float, float]
    rotation_pct: tuple[float, float]
    resolution_hz_per_pct: float
    notes: list[str] = field(default_factory=list)
    trimmed: str = "R"

    def to_json(self) -> dict[str, Any]:
        return {
            "values": dict(self.values),
            "networks": {k: n.to_json() for k, n in self.networks.items()},
            "range_hz": list(self.range_hz),
            "guaranteed_hz": list(self.guaranteed_hz),
            "rotation_pct": list(self.rotation_pct),
            "resolution_hz_per_pct": self.resolution_hz_per_pct,
            "part_count": self.part_count,
            "taper": self.taper,
            "notes": list(self.notes),
        }


@dataclass(frozen=True)
class TrimResult:
    """Trim designs, finest first, and notes saying what was searched or why nothing fits."""

    band_hz: tuple[float, float]
    notes: list[str]
    candidates: list[TrimCandidate]

    def to_json(self) -> dict[str, Any]:
        return {"band_hz": list(self.band_hz), "notes": list(self.notes),
                "candidates": [c.to_json() for c in self.candidates]}


def _corner_oscillators(osc: Oscillator) -> list[Oscillator]:
    if osc.thresholds_given:
        return [osc]
    return [osc.with_thresholds(a, b) for a, b in osc.threshold_corners()]


def _corner_frequencies(osc: Oscillator, r: np.ndarray, c: np.ndarray) -> np.ndarray:
    """Frequency [Hz] at every threshold corner: shape (corners, len(r)); NaN = stops."""
    return np.stack([_frequency(o, r, c) for o in _corner_oscillators(osc)])


def _frequency(osc: Oscillator, r: np.ndarray, c: np.ndarray) -> np.ndarray:
    """Nominal-model frequency [Hz] with the trimmed role at ``r`` [Ω] and C at ``c`` [F]."""
    return frequency_and_duty(osc, {osc.circuit.tuned: r, "C": c})[0]


def guaranteed_band(osc: Oscillator, r: tuple[np.ndarray, np.ndarray],
                    p: tuple[np.ndarray, np.ndarray], c: tuple[np.ndarray, np.ndarray],
                    conditions: Conditions | None = None) -> tuple[np.ndarray, np.ndarray]:
    """(low, high) [Hz] reachable at every corner, from (low, high) ranges of R, P, C [Ω, F].

    Low: the highest full-rotation frequency over all corners of R, P, C and
    thresholds (at every supply of the ``conditions``); high: the lowest
    zero-rotation frequency; both moved inward by a calibration's uncertainty
    and the chip's own drift. A corner that does not oscillate makes the band
    empty (NaN low end).
    """
    full, zero = [], []
    for o in _all_corners(osc, conditions):
        for rv in r:
            for cv in c:
                zero.append(_frequency(o, rv, cv))
                full.extend(_frequency(o, rv + pv, cv) for pv in p)
    full_f, zero_f = np.stack(full), np.stack(zero)
    stops = np.isnan(full_f).any(axis=0) | np.isnan(zero_f).any(axis=0)
    low_factor, high_factor = _inward_factors(osc, conditions)
    low = np.where(stops, np.nan, np.max(full_f, axis=0) * high_factor)
    high = np.where(stops, np.nan, np.min(zero_f, axis=0) * low_factor)
    return low, high


def _all_corners(osc: Oscillator, conditions: Conditions | None) -> list[Oscillator]:
    """The threshold corners at every supply the conditions span."""
    return [c for o in conditions_oscillators(osc, conditions or Conditions())
            for c in _corner_oscillators(o)]


def _inward_factors(osc: Oscillator, conditions: Conditions | None) -> tuple[float, float]:
    """(low, high) factors [1] on the guaranteed band's (high, low) ends: a calibration's
    uncertainty and the chip's own drift over the conditions."""
    low_factor, high_factor = calibration_factors(osc)
    chip = conditions_chip_factor(osc, conditions or Conditions())
    return low_factor * (1 - chip), high_factor * (1 + chip)


def trim(parts: list[Part], osc: Oscillator, band_hz: tuple[float, float], top: int = 10,
         max_resistors: int = 2, max_capacitors: int = 2,
         index: DrawerIndex | None = None, conditions: Conditions | None = None) -> TrimResult:
    """Trim designs from ``parts`` whose guaranteed band covers ``band_hz`` (lo, hi) [Hz],
    over the ``conditions`` (temperatures, supplies) too where given."""
    lo_band, hi_band = (float(x) for x in band_hz)
    if not (0 < lo_band < hi_band and math.isfinite(hi_band)):
        raise InputError("a band needs 0 < LO < HI", text=f"{lo_band}..{hi_band}", what="band")
    if not osc.circuit.trimmable:
        raise InputError("trim designs are for the Schmitt inverter oscillator "
                         "(--circuit schmitt)", text=osc.circuit.name, what="circuit")
    if top < 1:
        raise InputError("--top must be at least 1", text=str(top), what="top")
    if index is None or not index.covers(max_resistors, max_capacitors):
        index = drawer_index(parts, max_resistors, max_capacitors)
    device = osc.device
    limits = (float(device.r_min_ohm), float(device.r_max_ohm))
    notes = [f"{format_frequency(lo_band)} … {format_frequency(hi_band)} must be reachable at "
             "every tolerance corner" + ("" if osc.thresholds_given else
                                         " and threshold corner of the device table"),
             *index.notes]
    res, caps, pots = index.resistors, index.capacitors, index.pots
    missing = [w for w, have in (("potentiometers", pots), ("fixed resistors", len(res)),
                                 ("capacitors", len(caps))) if not have]
    if missing:
        notes.append(f"the drawer has no {' or '.join(missing)} in stock")
        return TrimResult((lo_band, hi_band), notes, [])
    if conditions:
        notes += [f"guaranteed bands cover {conditions.describe()}", ageing_words()]
    ce = caps.entries(max_capacitors)
    corners = _all_corners(osc, conditions)
    (r_lo, r_hi), (c_lo, c_hi) = (drifted_index_ranges(n, conditions) for n in (res, caps))
    low_factor, high_factor = _inward_factors(osc, conditions)
    # B: largest fixed R (at its high corner) that still reaches HI at zero rotation with C
    # high and the slowest thresholds; A: total resistance at full rotation (low corners)
    # that gets down to LO at the fastest thresholds.
    b_need = _binding_resistance(corners, hi_band / low_factor, c_hi[ce], limits, most=True)
    a_need = _binding_resistance(corners, lo_band / high_factor, c_lo[ce], limits, most=False)
    pot_value = np.array([p.value for p in pots])
    pot_lo, pot_hi = drifted_part_ranges("P", pots, conditions)
    # Every (pot, capacitor) pair; the corner conditions above on each fixed R network:
    # its high value at most B, its low value plus the pot's low value at least A.
    pi, cj = (x.ravel() for x in np.meshgrid(np.arange(len(pots)), np.arange(ce.size),
                                             indexing="ij"))
    re = _finest_fixed_r(res, (r_lo, r_hi), res.entries(max_resistors, *limits),
                         b_need[cj] * (1 - MARGIN), (a_need[cj] - pot_lo[pi]) * (1 + MARGIN),
                         limits[1] - pot_value[pi])
    pi, cj = pi[re >= 0], cj[re >= 0]
    re = re[re >= 0]
    ce_sel = ce[cj]
    low, high = guaranteed_band(osc, (r_lo[re], r_hi[re]), (pot_lo[pi], pot_hi[pi]),
                                (c_lo[ce_sel], c_hi[ce_sel]), conditions)
    with np.errstate(invalid="ignore"):
        ok = (low <= lo_band) & (high >= hi_band)
    if not ok.any():
        notes.append(_why_none(pots, lo_band, hi_band))
        return TrimResult((lo_band, hi_band), notes, [])
    re, pi, ce_sel, low, high = re[ok], pi[ok], ce_sel[ok], low[ok], high[ok]
    f_full = _frequency(osc, res.values[re] + pot_value[pi], caps.values[ce_sel])
    f_zero = _frequency(osc, res.values[re], caps.values[ce_sel])
    parts_used = res.part_count[re].astype(int) + 1 + caps.part_count[ce_sel]
    # One design per pot and capacitor network (the finest fixed R for that pair).
    chosen = [int(i) for i in np.lexsort((parts_used, f_zero / f_full))[:top]]
    candidates = []
    for i in chosen:
        taken: Counter[int] = Counter()
        (r_node,) = res.nodes([int(re[i])], taken)
        (c_node,) = caps.nodes([int(ce_sel[i])], taken)
        pot = pots[int(pi[i])]
        candidates.append(_design(osc, r_node, single(pot), c_node, (lo_band, hi_band),
                                  (float(f_full[i]), float(f_zero[i])),
                                  (float(low[i]), float(high[i]))))
    return TrimResult((lo_band, hi_band), notes, candidates)


def _binding_resistance(corners: list[Oscillator], target_hz: float, c: np.ndarray,
                        limits: tuple[float, float], most: bool) -> np.ndarray:
    """Per capacitor [F], the resistance [Ω] that gives ``target_hz`` at the binding corner:
    the smallest over ``corners`` (``most``: the most R may be and still reach it at every
    corner), else the largest (the least that gets down to it at every corner); NaN where
    some corner has none.

    One pass: solved at the first corner, then each further corner is checked at the
    answer so far (one cheap evaluation) and solved only where it binds harder. The
    frequency falls with R, so an answer moved for one corner still holds for the
    corners before it: the result is the exact minimum (maximum) over the corners, for
    a fraction of the solves (a supply range brings some 70 corners).
    """
    r = tuned_resistance(corners[0], target_hz, {"C": c}, limits)
    for o in corners[1:]:
        with np.errstate(invalid="ignore"):
            f = _frequency(o, r, c)
            binds = (f < target_hz) if most else (f > target_hz)
            binds |= np.isnan(f) & ~np.isnan(r)  # stops there: the solver says
        rows = np.flatnonzero(binds)
        if rows.size:
            new = tuned_resistance(o, target_hz, {"C": c[rows]}, limits)
            r[rows] = np.fmin(r[rows], new) if most else np.fmax(r[rows], new)
            r[rows[np.isnan(new)]] = np.nan
    return r


def _finest_fixed_r(res: NetworkIndex, ranges: tuple[np.ndarray, np.ndarray],
                    entries: np.ndarray, most: np.ndarray, least: np.ndarray,
                    top_value: np.ndarray) -> np.ndarray:
    """Per (pot, capacitor) pair, the fixed R entry with the largest nominal value whose own
    corners (``ranges``: low and high value of every entry [Ω]) fit: high value ≤ ``most``,
    low value ≥ ``least``, nominal ≤ ``top_value`` [Ω]; -1 where none does.

    A larger R with the same pot is a finer adjustment, so the finest covering
    design of a pair is this one. Each pair steps down the value-sorted entries
    from its upper bound until one fits; no entry below ``least`` can.
    """
    order = entries[np.argsort(res.values[entries], kind="stable")]
    v, lo, hi = res.values[order], ranges[0][order], ranges[1][order]
    found = np.full(len(most), -1, dtype=np.int64)
    with np.errstate(invalid="ignore"):
        pos = np.searchsorted(v, np.fmin(most, top_value), "right") - 1
        todo = np.flatnonzero((pos >= 0) & (least <= most))
    while todo.size:
        k = pos[todo]
        fits = (hi[k] <= most[todo]) & (lo[k] >= least[todo])
        found[todo[fits]] = order[k[fits]]
        pos[todo] -= 1
        todo = todo[~fits & (k > 0)]
        todo = todo[v[pos[todo]] >= least[todo]]
    return found


def _why_none(pots: tuple[Part, ...], lo: float, hi: float) -> str:
    return (f"no pot in the drawer ({len(pots)} line{'s' if len(pots) != 1 else ''}) with a "
            f"fixed resistor and capacitor covers {format_frequency(lo)} … "
            f"{format_frequency(hi)} at every corner; a wider band needs a larger pot, a "
            "narrower spread needs closer-tolerance parts or --vt-plus/--vt-minus from a "
            "calibration")


def _design(osc: Oscillator, r_node: Network, p_node: Network, c_node: Network,
            band: tuple[float, float], range_hz: tuple[float, float],
            guaranteed: tuple[float, float]) -> TrimCandidate:
    pot, trimmed = p_node.parts()[0], osc.circuit.tuned
    values = {trimmed: r_node.value, "P": pot.value, "C": c_node.value}
    networks = {trimmed: r_node, "P": p_node, "C": c_node}
    cand = TrimCandidate(values, networks, range_hz, guaranteed, (0.0, 0.0), 0.0,
                         trimmed=trimmed)
    centre = 0.5 * (band[0] + band[1])
    rot_high, rot_low, x = (float(r) for r in rotation_for(osc, cand, np.array(
        [band[1], band[0], centre])))
    f_a, f_b = frequency_at_rotation(osc, cand, np.array([max(x - 0.5, 0.0),
                                                          min(x + 0.5, 100.0)]))
    step = min(x + 0.5, 100.0) - max(x - 0.5, 0.0)
    resolution = abs(float(f_a - f_b)) / step
    notes = [f"turn the pot to about {rot_high:.0f} % for {format_frequency(band[1])} and "
             f"{rot_low:.0f} % for {format_frequency(band[0])} (nominal parts); measure and "
             "trim on the bench"]
    if pot.taper == "log":
        notes.append("log-taper pot: the frequency changes slowly near zero rotation and "
                     "quickly near full rotation")
    return replace(cand, rotation_pct=(rot_high, rot_low), resolution_hz_per_pct=resolution,
                   notes=notes)


def frequency_at_rotation(osc: Oscillator, candidate: TrimCandidate, rotation_pct: Any,
                          corner: str | None = None) -> np.ndarray:
    """Frequency [Hz] of a trim design at each rotation [%] (0 = fixed R only).

    ``corner`` None: nominal parts and thresholds; ``"low"``/``"high"``: the
    lowest/highest frequency over every tolerance and threshold corner (the
    edges of the guaranteed band at each rotation). NaN where it stops.
    """
    r, p, c = (candidate.networks[k] for k in (candidate.trimmed, "P", "C"))
    if corner is None:
        total = r.value + pot_resistance(p.value, rotation_pct, candidate.taper)
        return _frequency(osc, total, np.full(np.shape(total), c.value))
    if corner not in ("low", "high"):
        raise InputError("corner is None, 'low' or 'high'", text=str(corner), what="corner")
    (r_lo, r_hi), (p_lo, p_hi), (c_lo, c_hi) = (n.value_range for n in (r, p, c))
    slow = corner == "low"
    total = (r_hi if slow else r_lo) + pot_resistance(p_hi if slow else p_lo, rotation_pct,
                                                      candidate.taper)
    f = _corner_frequencies(osc, total, np.full(np.shape(total), c_hi if slow else c_lo))
    return np.min(f, axis=0) if slow else np.max(f, axis=0)


def rotation_for(osc: Oscillator, candidate: TrimCandidate, frequency_hz: Any) -> np.ndarray:
    """Rotation [%] that gives ``frequency_hz`` [Hz] with nominal parts; NaN outside the range."""
    f = np.asarray(frequency_hz, dtype=float)
    total = resistance_for(osc, f, {"C": candidate.values["C"]}, candidate.trimmed)
    share = (total - candidate.values[candidate.trimmed]) / candidate.values["P"]
    share = np.where((share >= -1e-9) & (share <= 1 + 1e-9), np.clip(share, 0.0, 1.0), np.nan)
    rotation = rotation_for_share(share, candidate.taper)
    return rotation if rotation.ndim else float(rotation)


def design_band(osc: Oscillator, candidate: TrimCandidate) -> tuple[float, float]:
    """The band the design was found for (low, high) [Hz], from its rotations."""
    rot_high, rot_low = candidate.rotation_pct
    f = frequency_at_rotation(osc, candidate, np.array([rot_low, rot_high]))
    return float(f[0]), float(f[1])


def start_rotation(osc: Oscillator, candidate: TrimCandidate) -> float:
    """Rotation [%] that puts a nominal build in the middle of its band."""
    lo, hi = design_band(osc, candidate)
    return float(rotation_for(osc, candidate, 0.5 * (lo + hi)))
