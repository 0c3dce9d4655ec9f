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

import itertools
import math
from collections import Counter
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from core.design.buy import at_stage, stage_oscillators
from core.design.design import Design, pot_resistance, rotation_for_share
from core.design.inversion import (
    follower_entries,
    frequency_and_duty,
    tuned_resistance,
    with_followers,
)
from core.design.robust import drifted_index_ranges, drifted_part_ranges
from core.errors import InputError
from core.model.circuits import CIRCUITS
from core.model.circuits.divider import tap
from core.model.drift import (
    Conditions,
    ageing_words,
    conditions_chip_factor,
    conditions_oscillators,
)
from core.model.spread import calibration_factors
from core.model.timing import Oscillator, resistance_for
from core.parts.index_build import drawer_index
from core.parts.network_index import DrawerIndex, NetworkIndex
from core.parts.networks import Network, single
from core.parts.part import Part
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
    diode_steered: bool = False
    duty_pct: float | None = None
    """The nominal duty [%] at the band's centre (reported with a duty target)."""
    divide_by: int = 1

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
            "diode_steered": self.diode_steered,
            "notes": list(self.notes),
            **({} if self.duty_pct is None else {"duty_pct": self.duty_pct}),
            **({} if self.divide_by == 1 else {"divide_by": self.divide_by,
                                               "tap": tap(self.divide_by)}),
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


Fixed = Mapping[str, Any]
"""The parts that are neither trimmed nor the pot, by role (C; the 555's RA) [Ω, F]."""


def _corner_frequencies(osc: Oscillator, r: np.ndarray, fixed: Fixed,
                        diode: bool = False) -> np.ndarray:
    """Frequency [Hz] at every threshold corner: shape (corners, len(r)); NaN = stops."""
    return np.stack([_frequency(o, r, fixed, diode) for o in _corner_oscillators(osc)])


def _frequency(osc: Oscillator, r: np.ndarray, fixed: Fixed, diode: bool = False
               ) -> np.ndarray:
    """Nominal-model frequency [Hz] with the trimmed role at ``r`` [Ω] and the other parts
    at ``fixed`` (a follower not among them at its preferred ratio to ``r``)."""
    values = {**with_followers(osc, {}, r), **fixed, osc.circuit.tuned: r}
    return frequency_and_duty(osc, values, diode)[0]


def _fixed_corners(ranges: Mapping[str, tuple[Any, Any]]) -> list[dict[str, Any]]:
    """Every combination of the fixed parts' (low, high) ends."""
    keys = list(ranges)
    return [dict(zip(keys, ends, strict=True))
            for ends in itertools.product(*(ranges[k] for k in keys))]


def guaranteed_band(osc: Oscillator, r: tuple[np.ndarray, np.ndarray],
                    p: tuple[np.ndarray, np.ndarray], c: tuple[np.ndarray, np.ndarray],
                    conditions: Conditions | None = None,
                    others: Mapping[str, tuple[np.ndarray, np.ndarray]] | None = None,
                    diode: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """(low, high) [Hz] reachable at every corner, from (low, high) ranges of R, P, C [Ω, F]
    and of any ``others`` (the 555's RA).

    Low: the highest full-rotation frequency over all corners of R, P, C and
    thresholds (at every supply of the ``conditions``); high: the lowest
    zero-rotation frequency; both moved inward by a calibration's uncertainty
    and the chip's own drift. A corner that does not oscillate makes the band
    empty (NaN low end).
    """
    full, zero = [], []
    fixed = _fixed_corners({"C": c, **(others or {})})
    for o in _all_corners(osc, conditions):
        for rv in r:
            for fv in fixed:
                zero.append(_frequency(o, rv, fv, diode))
                full.extend(_frequency(o, rv + pv, fv, diode) for pv in p)
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
         index: DrawerIndex | None = None, conditions: Conditions | None = None,
         duty_pct: float | None = None, duty_within: float = 1.0) -> TrimResult:
    """Trim designs from ``parts`` whose guaranteed band covers ``band_hz`` (lo, hi) [Hz],
    over the ``conditions`` (temperatures, supplies) too where given.

    The pot goes in series with the circuit's trimmed role (its ``tuned`` one: the
    Schmitt inverter's R, the 555's RB); an enumerated role (the 555's RA) is taken
    from the drawer's single resistors. With ``duty_pct`` [%] a design's nominal duty
    at the band's centre must lie within ``duty_within`` points (50 % or less: the
    555's steering diode across RB, as in the search).
    """
    lo_band, hi_band = (float(x) for x in band_hz)
    _check_trim(osc, lo_band, hi_band, top, duty_pct)
    if index is None or not index.covers(max_resistors, max_capacitors):
        index = drawer_index(parts, max_resistors, max_capacitors)
    if osc.divide_by not in osc.circuit.divide_by:  # a counter: every stage in reach
        return _over_stages(parts, osc, (lo_band, hi_band), top, max_resistors,
                            max_capacitors, index, conditions)
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
    diode = duty_pct is not None and duty_pct <= 50.0 and osc.circuit.steerable
    fixed = _fixed_entries(index, osc, max_capacitors, limits)
    corners = _all_corners(osc, conditions)
    (r_lo, r_hi), (c_lo, c_hi) = (drifted_index_ranges(n, conditions) for n in (res, caps))
    low_factor, high_factor = _inward_factors(osc, conditions)

    def ranges(rows: np.ndarray) -> dict[str, tuple[np.ndarray, np.ndarray]]:
        """(low, high) of every fixed part but C for fixed-row ``rows``."""
        return {k: (r_lo[e[rows]], r_hi[e[rows]]) for k, e in fixed.items() if k != "C"}

    every = np.arange(len(fixed["C"]))
    slow = {"C": c_hi[fixed["C"]], **{k: hi for k, (_, hi) in ranges(every).items()}}
    fast = {"C": c_lo[fixed["C"]], **{k: lo for k, (lo, _) in ranges(every).items()}}
    # B: largest fixed R (at its high corner) that still reaches HI at zero rotation with the
    # other parts high and the slowest thresholds; A: total resistance at full rotation (low
    # corners) that gets down to LO at the fastest thresholds.
    b_need = _binding_resistance(corners, hi_band / low_factor, slow, limits, True, diode)
    a_need = _binding_resistance(corners, lo_band / high_factor, fast, limits, False, diode)
    pot_value = np.array([p.value for p in pots])
    pot_lo, pot_hi = drifted_part_ranges("P", pots, conditions)
    # Every (pot, fixed parts) pair; the corner conditions above on each fixed R network:
    # its high value at most B, its low value plus the pot's low value at least A.
    pi, cj = (x.ravel() for x in np.meshgrid(np.arange(len(pots)), every, indexing="ij"))
    re = _finest_fixed_r(res, (r_lo, r_hi), res.entries(max_resistors, *limits),
                         b_need[cj] * (1 - MARGIN), (a_need[cj] - pot_lo[pi]) * (1 + MARGIN),
                         limits[1] - pot_value[pi])
    keep = re >= 0
    for k, e in fixed.items():
        if k != "C":
            keep[keep] = ~res.overused(e[cj[keep]], re[keep])
    pi, cj, re = pi[keep], cj[keep], re[keep]
    row_fixed = {k: e[cj] for k, e in fixed.items()}
    if osc.circuit.follower is not None:
        # Decision where the issue is silent: RS is picked against the largest total
        # (fixed R and the whole pot), so the clamp diodes stay isolated at every rotation.
        fe = follower_entries(res, osc, res.values[re] + pot_value[pi], max_resistors, limits)
        fits = fe >= 0
        fits[fits] = ~res.overused(re[fits], fe[fits])
        pi, re, fe = pi[fits], re[fits], fe[fits]
        row_fixed = {**{k: e[fits] for k, e in row_fixed.items()},
                     osc.circuit.follower[0]: fe}
    others = {k: (r_lo[e], r_hi[e]) for k, e in row_fixed.items() if k != "C"}
    low, high = guaranteed_band(osc, (r_lo[re], r_hi[re]), (pot_lo[pi], pot_hi[pi]),
                                (c_lo[row_fixed["C"]], c_hi[row_fixed["C"]]), conditions,
                                others, diode)
    with np.errstate(invalid="ignore"):
        ok = (low <= lo_band) & (high >= hi_band)
    if not ok.any():
        notes.append(_why_none(pots, lo_band, hi_band))
        return TrimResult((lo_band, hi_band), notes, [])
    rows = _Rows({k: e[ok] for k, e in row_fixed.items()}, re[ok], pi[ok], low[ok], high[ok])
    candidates = _chosen(index, osc, rows, (lo_band, hi_band), top, diode, duty_pct,
                         duty_within)
    if not candidates and duty_pct is not None:
        notes.append(f"no design that covers the band has a duty within {duty_within:g} "
                     f"points of {duty_pct:g} % at the band's centre")
    return TrimResult((lo_band, hi_band), notes, candidates)


def _binding_resistance(corners: list[Oscillator], target_hz: float, fixed: Fixed,
                        limits: tuple[float, float], most: bool, diode: bool = False
                        ) -> np.ndarray:
    """Per row of the other parts ``fixed`` (C; the 555's RA) [Ω, F], the trimmed role's
    resistance [Ω] that gives ``target_hz`` at the binding corner:
    the smallest over ``corners`` (``most``: the most R may be and still reach it at every
    corner), else the largest (the least that gets down to it at every corner); NaN where
    some corner has none.

    One pass: solved at the first corner, then each further corner is checked at the
    answer so far (one cheap evaluation) and solved only where it binds harder. The
    frequency falls with R, so an answer moved for one corner still holds for the
    corners before it: the result is the exact minimum (maximum) over the corners, for
    a fraction of the solves (a supply range brings some 70 corners).
    """
    r = tuned_resistance(corners[0], target_hz, fixed, limits, diode_steered=diode)
    for o in corners[1:]:
        with np.errstate(invalid="ignore"):
            f = _frequency(o, r, fixed, diode)
            binds = (f < target_hz) if most else (f > target_hz)
            binds |= np.isnan(f) & ~np.isnan(r)  # stops there: the solver says
        rows = np.flatnonzero(binds)
        if rows.size:
            new = tuned_resistance(o, target_hz, {k: v[rows] for k, v in fixed.items()},
                                   limits, diode_steered=diode)
            r[rows] = np.fmin(r[rows], new) if most else np.fmax(r[rows], new)
            r[rows[np.isnan(new)]] = np.nan
    return r


@dataclass(frozen=True)
class _Rows:
    """Covering designs as parallel arrays: the fixed parts' entries by role, the trimmed
    role's entry, the pot's position in the drawer's pots, the guaranteed band [Hz]."""

    fixed: dict[str, np.ndarray]
    trimmed: np.ndarray
    pot: np.ndarray
    low: np.ndarray
    high: np.ndarray


def _chosen(index: DrawerIndex, osc: Oscillator, rows: _Rows, band: tuple[float, float],
            top: int, diode: bool, duty_pct: float | None,
            duty_within: float) -> list[TrimCandidate]:
    """The finest ``top`` designs, one per pot and capacitor network (with a duty target,
    only those whose nominal duty at the band's centre is within ``duty_within``)."""
    res, caps, pots = index.resistors, index.capacitors, index.pots
    pot_value = np.array([p.value for p in pots])[rows.pot]
    nominal = {k: (caps if k == "C" else res).values[e] for k, e in rows.fixed.items()}
    f_full = _frequency(osc, res.values[rows.trimmed] + pot_value, nominal, diode)
    f_zero = _frequency(osc, res.values[rows.trimmed], nominal, diode)
    parts_used = (res.part_count[rows.trimmed].astype(int) + 1
                  + sum((caps if k == "C" else res).part_count[e] for k, e in rows.fixed.items()))
    candidates: list[TrimCandidate] = []
    seen: set[tuple[int, int]] = set()
    for i in (int(i) for i in np.lexsort((parts_used, f_zero / f_full))):
        pair = (int(rows.pot[i]), int(rows.fixed["C"][i]))
        if len(candidates) == top:
            break
        if pair in seen:
            continue
        taken: Counter[int] = Counter()
        nets = {k: (caps if k == "C" else res).nodes([int(e[i])], taken)[0]
                for k, e in rows.fixed.items()}
        (nets[osc.circuit.tuned],) = res.nodes([int(rows.trimmed[i])], taken)
        cand = _design(osc, nets, single(pots[int(rows.pot[i])]), band,
                       (float(f_full[i]), float(f_zero[i])),
                       (float(rows.low[i]), float(rows.high[i])), diode)
        if duty_pct is None or abs((cand.duty_pct or 0.0) - duty_pct) <= duty_within:
            seen.add(pair)
            candidates.append(cand)
    return candidates


def _over_stages(parts: list[Part], osc: Oscillator, band: tuple[float, float], top: int,
                 max_resistors: int, max_capacitors: int, index: DrawerIndex,
                 conditions: Conditions | None) -> TrimResult:
    """A counter's trim: the designs of every stage whose oscillator stays within the chip's
    limit at the band's top, finest first (then fewest parts)."""
    results = [trim(parts, stage, band, top, max_resistors, max_capacitors, index, conditions)
               for stage in stage_oscillators(osc, band[1])]
    found = sorted((c for r in results for c in r.candidates),
                   key=lambda c: (c.range_hz[1] / c.range_hz[0], c.part_count))
    # A stage's "none covers" note would deny the other stages' designs: only the notes of
    # stages with designs, unless none has one.
    notes = list(dict.fromkeys(n for r in results if r.candidates or not found
                               for n in r.notes))
    return TrimResult(band, notes, found[:top])


def _check_trim(osc: Oscillator, lo_band: float, hi_band: float, top: int,
                duty_pct: float | None) -> None:
    """InputError naming the first impossible part of a trim request."""
    if not (0 < lo_band < hi_band and math.isfinite(hi_band)):
        raise InputError("a band needs 0 < LO < HI", text=f"{lo_band}..{hi_band}", what="band")
    if not osc.circuit.trimmable:
        names = " or ".join(c.name for c in CIRCUITS.values() if c.trimmable)
        raise InputError(f"trim designs are for circuits a pot can tune (--circuit {names})",
                         text=osc.circuit.name, what="circuit")
    if top < 1:
        raise InputError("--top must be at least 1", text=str(top), what="top")
    if duty_pct is not None and not osc.circuit.steerable:
        raise InputError("a duty target on a trim design is for the 555 astable",
                         text=str(duty_pct), what="duty")


def _fixed_entries(index: DrawerIndex, osc: Oscillator, max_capacitors: int,
                   limits: tuple[float, float]) -> dict[str, np.ndarray]:
    """Index entries of the parts beside the trimmed one, one row per combination: every
    capacitor network, times every single resistor within ``limits`` for each enumerated
    role (the 555's RA; single parts keep the combinations few)."""
    ce = index.capacitors.entries(max_capacitors)
    roles = osc.circuit.enumerated
    if not roles:
        return {"C": ce}
    singles = index.resistors.entries(1, *limits)
    grid = np.meshgrid(*([singles] * len(roles)), ce, indexing="ij")
    return {**{k: g.ravel() for k, g in zip(roles, grid, strict=False)}, "C": grid[-1].ravel()}


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


def _design(osc: Oscillator, nets: dict[str, Network], p_node: Network,
            band: tuple[float, float], range_hz: tuple[float, float],
            guaranteed: tuple[float, float], diode: bool) -> TrimCandidate:
    """A trim design from its networks by role, with rotations, resolution and notes."""
    pot, trimmed = p_node.parts()[0], osc.circuit.tuned
    networks = {k: nets[k] for k in osc.circuit.keys if k != "C"}
    networks.update(P=p_node, C=nets["C"])
    values = {k: n.value if k != "P" else pot.value for k, n in networks.items()}
    cand = TrimCandidate(values, networks, range_hz, guaranteed, (0.0, 0.0), 0.0,
                         trimmed=trimmed, diode_steered=diode, divide_by=osc.divide_by)
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
    duty = None
    if osc.circuit.steerable:
        _, d = frequency_and_duty(osc, cand.values_at(x), diode)
        duty = float(d)
    return replace(cand, rotation_pct=(rot_high, rot_low), resolution_hz_per_pct=resolution,
                   notes=notes, duty_pct=duty)


def frequency_at_rotation(osc: Oscillator, candidate: TrimCandidate, rotation_pct: Any,
                          corner: str | None = None) -> np.ndarray:
    """Frequency [Hz] of a trim design at each rotation [%] (0 = fixed R only).

    ``corner`` None: nominal parts and thresholds; ``"low"``/``"high"``: the
    lowest/highest frequency over every tolerance and threshold corner (the
    edges of the guaranteed band at each rotation). NaN where it stops.
    """
    osc = at_stage(osc, candidate.divide_by) if candidate.divide_by > 1 else osc
    r, p = (candidate.networks[k] for k in (candidate.trimmed, "P"))
    others = {k: n for k, n in candidate.networks.items() if k not in (candidate.trimmed, "P")}
    diode = candidate.diode_steered
    if corner is None:
        total = r.value + pot_resistance(p.value, rotation_pct, candidate.taper)
        return _frequency(osc, total, {k: np.full(np.shape(total), n.value)
                                       for k, n in others.items()}, diode)
    if corner not in ("low", "high"):
        raise InputError("corner is None, 'low' or 'high'", text=str(corner), what="corner")
    (r_lo, r_hi), (p_lo, p_hi) = (n.value_range for n in (r, p))
    slow = corner == "low"  # every part high is the slowest corner (f falls with each)
    total = (r_hi if slow else r_lo) + pot_resistance(p_hi if slow else p_lo, rotation_pct,
                                                      candidate.taper)
    fixed = {k: np.full(np.shape(total), n.value_range[1 if slow else 0])
             for k, n in others.items()}
    f = _corner_frequencies(osc, total, fixed, diode)
    return np.min(f, axis=0) if slow else np.max(f, axis=0)


def rotation_for(osc: Oscillator, candidate: TrimCandidate, frequency_hz: Any) -> np.ndarray:
    """Rotation [%] that gives ``frequency_hz`` [Hz] with nominal parts; NaN outside the range."""
    osc = at_stage(osc, candidate.divide_by) if candidate.divide_by > 1 else osc
    f = np.asarray(frequency_hz, dtype=float)
    others = {k: v for k, v in candidate.values.items() if k not in (candidate.trimmed, "P")}
    total = resistance_for(osc, f, others, candidate.trimmed,
                           diode_steered=candidate.diode_steered)
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
