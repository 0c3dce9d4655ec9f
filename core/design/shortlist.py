"""Which combinations of drawer networks are worth the full model, for any circuit.

The circuit's shape decides (core.model.circuits.base.Circuit): with an
enumerated resistor role (the 555's RA, the steered Schmitt's RH) every pair of
it with a capacitor network gets the tuned resistor's neighbours (RB, RL) that
matter; otherwise every capacitor network gets the tuned resistor's neighbours
(and the follower the drawer offers for each: the CMOS astable's RS). A
counter's output ratios (the divider's pinned-out stages) each get their own
shortlist, joined with the ratio per row.

555 and steered Schmitt: for every (RA network, C network) pair the RB
neighbours that matter are looked up (next to the RB that hits the frequency,
the smallest RB, and with a duty target the two RB that put the duty at its
tolerance edges). Pairs are taken in tiers of rising part count, stopping once
enough hits are known that no later tier could outrank, within
``COMBINATION_BUDGET``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from core.design.buy import stage_oscillators, suggest
from core.design.inversion import follower_entries, frequency_and_duty, tuned_resistance
from core.model.timing import Oscillator, times
from core.parts.network_index import DrawerIndex
from core.units import format_frequency, format_resistance

PER_SIDE = 2
"""Index neighbours taken on each side of the ideal value, per layer."""


@dataclass(frozen=True)
class Goal:
    """What one search asks, and what follows from it (resistor limits, steering)."""

    osc: Oscillator
    target_hz: float
    duty_pct: float | None
    accept_pct: float
    duty_within: float
    top: int
    max_resistors: int
    max_capacitors: int

    @property
    def limits(self) -> tuple[float, float]:
        """The resistor networks allowed [Ω] (the device table's range)."""
        return float(self.osc.device.r_min_ohm), float(self.osc.device.r_max_ohm)

    @property
    def diode(self) -> bool:
        """The 555's steering diode across RB. Decision where the issue is silent: a duty
        of 50 % or less uses the diode-steered astable (the plain one cannot reach 50 %
        with RA > 0). A circuit whose diodes are its own (RH, RL) needs no flag."""
        return (self.duty_pct is not None and self.duty_pct <= 50.0
                and not self.osc.circuit.always_steered)

    def opening_notes(self, index: DrawerIndex) -> list[str]:
        device, (lo, hi) = self.osc.device, self.limits
        notes = [f"resistor networks limited to {format_resistance(lo)} … "
                 f"{format_resistance(hi)} for {device.family.name} at "
                 f"{device.supply_v:g} V", *index.notes]
        fastest = self.target_hz * min(self.osc.circuit.divide_by)
        if fastest > device.f_max_hz:
            notes.append(f"{format_frequency(fastest)} is above what the {device.family.name} "
                         f"does well (about {format_frequency(device.f_max_hz)}, where the "
                         "propagation delays become a tenth of the period)")
        return notes

    def suggest(self, index: DrawerIndex) -> list[dict[str, Any]]:
        return suggest(index, self.osc, self.target_hz, self.accept_pct, self.limits,
                       self.max_resistors, self.max_capacitors, self.duty_pct,
                       duty_within=self.duty_within, diode=self.diode)


@dataclass
class Shortlist:
    """Candidate combinations as parallel arrays (one element per combination)."""

    entries: dict[str, np.ndarray]  # role -> index entry (into resistors or capacitors)
    frequency_hz: np.ndarray
    duty_pct: np.ndarray
    error_pct: np.ndarray
    parts: np.ndarray
    r_sum: np.ndarray
    c_values: np.ndarray
    duty_error: np.ndarray | None = None
    """Predicted minus asked duty [points]; None without a duty target."""
    diode_steered: bool = False
    divide_by: np.ndarray | None = None
    """A counter's output ratio per combination (None: no counter)."""

    def stages(self, rows: np.ndarray) -> list[tuple[int, np.ndarray]]:
        """(output ratio, the positions in ``rows`` at it) for each ratio among ``rows``."""
        if self.divide_by is None:
            return [(1, np.arange(len(rows)))]
        at = self.divide_by[rows]
        return [(int(n), np.flatnonzero(at == n)) for n in np.unique(at)]


def _joined(lists: list[Shortlist], ratios: list[int]) -> Shortlist | None:
    """One shortlist from one per output ratio, each row keeping its ratio."""
    if not lists:
        return None
    first = lists[0]

    def cat(name: str) -> np.ndarray:
        return np.concatenate([getattr(x, name) for x in lists])

    return Shortlist({k: np.concatenate([x.entries[k] for x in lists]) for k in first.entries},
                      cat("frequency_hz"), cat("duty_pct"), cat("error_pct"), cat("parts"),
                      cat("r_sum"), cat("c_values"),
                      None if first.duty_error is None else cat("duty_error"),
                      first.diode_steered,
                      np.concatenate([np.full(len(x.error_pct), n)
                                      for x, n in zip(lists, ratios, strict=True)]))


def shortlist_for(index: DrawerIndex, goal: Goal, notes: list[str]) -> Shortlist | None:
    """The combinations worth the full model, for every output ratio the circuit offers:
    with enumerated resistor roles (the 555's RA) every pair with C and the tuned
    resistor's neighbours, else the tuned resistor's neighbours for every C."""
    found, ratios = [], []
    for osc in stage_oscillators(goal.osc, goal.target_hz):
        if osc.circuit.enumerated:
            s = _shortlist_pairs(index, osc, goal.target_hz, goal.duty_pct, goal.max_resistors,
                                 goal.max_capacitors, goal.limits, notes, goal.top,
                                 goal.accept_pct, goal.duty_within, goal.diode)
        else:
            s = _shortlist_tuned(index, osc, goal.target_hz, goal.max_resistors,
                                 goal.max_capacitors, goal.limits, notes)
        if s is not None:
            found.append(s)
            ratios.append(osc.divide_by)
    if len(goal.osc.circuit.divide_by) == 1:
        return found[0] if found else None
    return _joined(found, ratios)


NO_FOLLOWER_NOTE = ("no resistor network in the drawer lies within {low:g} … {high:g} × "
                    "{tuned} for {role} (it keeps the input clamp diodes out of the timing)")


def _shortlist_tuned(index: DrawerIndex, osc: Oscillator, target_hz: float,
                     max_resistors: int, max_capacitors: int, limits: tuple[float, float],
                     notes: list[str]) -> Shortlist | None:
    """For every capacitor network, the tuned resistor's neighbours in the index (and
    the follower the drawer offers for each)."""
    res, caps, circuit = index.resistors, index.capacitors, osc.circuit
    ce = caps.entries(max_capacitors)
    cv = caps.values[ce]
    r_ideal = tuned_resistance(osc, target_hz, {"C": cv}, limits, clip=True)
    near = res.nearest(r_ideal, max_resistors, PER_SIDE, *limits)
    rows, cols = np.nonzero(near >= 0)
    if not rows.size:
        return None
    re, ce = near[rows, cols], ce[rows]
    entries = {circuit.tuned: re}
    if circuit.follower is not None:
        role, low, high = circuit.follower
        fe = follower_entries(res, osc, res.values[re], max_resistors, limits)
        fits = (fe >= 0) & ~res.overused(re, np.maximum(fe, 0))
        if not fits.any():
            notes.append(NO_FOLLOWER_NOTE.format(low=low, high=high, tuned=circuit.tuned,
                                                 role=role))
            return None
        re, ce, fe = re[fits], ce[fits], fe[fits]
        entries = {circuit.tuned: re, role: fe}
    entries["C"] = ce
    values = {k: (caps if k == "C" else res).values[e] for k, e in entries.items()}
    f, duty = frequency_and_duty(osc, values)
    ok = np.isfinite(f)
    if not ok.any():
        return None
    entries = {k: e[ok] for k, e in entries.items()}
    f, duty = f[ok], duty[ok]
    resistors = [e for k, e in entries.items() if k != "C"]
    return Shortlist(entries, f, duty, (f - target_hz) / target_hz * 100.0,
                      sum(res.part_count[e].astype(int) for e in resistors)
                      + caps.part_count[entries["C"]],
                      res.values[entries[circuit.tuned]], caps.values[entries["C"]])


def _pair(osc: Oscillator, ra: Any, rb: Any, c: Any) -> dict[str, Any]:
    """Part values by role for the pair strategy: the enumerated resistor (the 555's RA),
    the tuned one (RB) and C."""
    return {osc.circuit.enumerated[0]: ra, osc.circuit.tuned: rb, "C": c}


def _astable_rb(osc: Oscillator, target_hz: float, ra: np.ndarray, c: np.ndarray,
                diode: bool) -> np.ndarray:
    """RB [Ω] giving ``target_hz`` [Hz] with RA [Ω] and C [F] (full model); ≤ 0 or NaN if none.

    Both time constants are linear in RB and the charge levels depend on RA
    only, so the period is affine in RB up to the small edge-delay terms: an
    affine fit through two evaluations and one secant step are exact enough.
    """
    want = 1.0 / target_hz

    def period(rb: np.ndarray) -> np.ndarray:
        t_high, t_low = times(osc, _pair(osc, ra, rb, c), diode)
        return t_high + t_low

    with np.errstate(invalid="ignore", divide="ignore"):
        rb1 = np.maximum(ra, 1e3)
        rb2 = 2.0 * rb1
        p1, p2 = period(rb1), period(rb2)
        rb3 = rb1 + (want - p1) * (rb2 - rb1) / (p2 - p1)
        p3 = period(np.where(rb3 > 0, rb3, rb1))
        return np.where(rb3 > 0, rb3 + (want - p3) * (rb3 - rb2) / (p3 - p2), rb3)


def _duty_rb(osc: Oscillator, ra: np.ndarray, duty_pct: float, diode: bool) -> np.ndarray:
    """RB [Ω] for a duty cycle [%] with RA [Ω] (inf where out of reach).

    Plain astable: the ideal formula. Diode-steered: the ideal formula refined on the
    full model, whose high time depends on the diode's real drop (a 35 % longer high
    time than ln2 RA C at 5 V): t_low is nearly proportional to RB and t_high nearly
    independent of it, so RB ← RB · t_high (1 − d) / (d t_low) converges in a few steps.

    References: NE555 data sheet (TI SLFS022), astable: duty = (RA + RB)/(RA + 2 RB);
    diode-steered (t_high = ln2 RA C): duty = RA / (RA + RB).
    """
    d = duty_pct / 100.0
    with np.errstate(divide="ignore", invalid="ignore"):
        if not (diode or osc.circuit.always_steered):
            return np.where(d > 0.5, ra * (1.0 - d) / max(2.0 * d - 1.0, 1e-12), np.inf)
        rb = ra * (1.0 - d) / d
        for _ in range(3):
            t_high, t_low = times(osc, _pair(osc, ra, rb, 1e-6), True)
            rb = rb * t_high * (1.0 - d) / (d * t_low)
        return np.where(np.isfinite(rb) & (rb > 0), rb, np.inf)


def _lowest_steered_duty(osc: Oscillator, limits: tuple[float, float]) -> float:
    """The smallest duty [%] the diode-steered astable reaches within the resistor limits
    (RA at its smallest, RB at its largest)."""
    t_high, t_low = times(osc, _pair(osc, limits[0], limits[1], 1e-6), True)
    return float(100.0 * t_high / (t_high + t_low))


COMBINATION_BUDGET = 2_500_000
"""Most RA, RB, C combinations one 555 search evaluates (well under a second); larger tiers are
skipped, with a note."""


def _shortlist_pairs(index: DrawerIndex, osc: Oscillator, target_hz: float,
                     duty_pct: float | None, max_resistors: int, max_capacitors: int,
                     limits: tuple[float, float], notes: list[str], top: int,
                     accept_pct: float, duty_within: float, diode: bool) -> Shortlist | None:
    """RA, RB, C combinations: for every (RA, C) pair, the RB neighbours that matter.

    Those are the RB values next to the one that hits the frequency and, with a
    duty target, next to the two that put the duty at the edges of its
    tolerance. Pairs are taken in tiers of rising part count and the search
    stops once enough hits are found that no later tier can outrank.
    """
    res, caps = index.resistors, index.capacitors
    if diode:
        notes.append(f"a duty of {duty_pct:g} % needs the diode-steered astable (a diode "
                     "across RB): RA sets the high time, RB the low time")
        lowest = _lowest_steered_duty(osc, limits)
        if duty_pct < lowest:
            notes.append(f"a duty of {duty_pct:g} % is out of reach: with RA at least "
                         f"{format_resistance(limits[0])} and RB at most "
                         f"{format_resistance(limits[1])} the diode-steered astable at "
                         f"{osc.supply_v:g} V stays above {lowest:.1f} %")
    r_layers = [(p, s) for p, s in res.layers.items() if p <= max_resistors]
    c_layers = [(p, s) for p, s in caps.layers.items() if p <= max_capacitors]
    tiers = sorted(((pa, sa, pc, sc) for pa, sa in r_layers for pc, sc in c_layers),
                   key=lambda t: (t[0] + t[2], t[0]))
    budget = COMBINATION_BUDGET
    targets = 2 * PER_SIDE + 2 + (0 if duty_pct is None else 4)  # see _rb_neighbours
    per_pair = targets * len(res.layer_slices(max_resistors))
    found: list[tuple[np.ndarray, ...]] = []
    skipped = False
    for level in sorted({pa + pc for pa, _, pc, _ in tiers}):
        for _, sa, _, sc in (t for t in tiers if t[0] + t[2] == level):
            a_all = np.arange(sa.start, sa.stop)
            a_all = a_all[(res.values[a_all] >= limits[0]) & (res.values[a_all] <= limits[1])]
            c_all = np.arange(sc.start, sc.stop)
            cost = a_all.size * c_all.size * per_pair
            if cost > budget:
                skipped = True
                continue
            budget -= cost
            a, cc = (x.ravel() for x in np.meshgrid(a_all, c_all, indexing="ij"))
            found.append(_rb_neighbours(index, osc, target_hz, duty_pct, diode, a, cc,
                                        max_resistors, limits, duty_within))
        if found and _enough(index, found, target_hz, level + 1, top, accept_pct, duty_pct,
                             duty_within):
            break
    if skipped:
        notes.append("the drawer is large: some combinations of multi-part RA and C "
                     "networks were not searched (fewer-part ones were)")
    if not found:
        return None
    ra, rb, cc, f, duty = (np.concatenate(x) for x in zip(*found, strict=True))
    if not ra.size:
        return None
    return Shortlist(_pair(osc, ra, rb, cc), f, duty,
                      (f - target_hz) / target_hz * 100.0,
                      res.part_count[ra].astype(int) + res.part_count[rb] + caps.part_count[cc],
                      res.values[ra] + res.values[rb], caps.values[cc],
                      None if duty_pct is None else duty - duty_pct, diode)


def _rb_neighbours(index: DrawerIndex, osc: Oscillator, target_hz: float,
                   duty_pct: float | None, diode: bool, a: np.ndarray, cc: np.ndarray,
                   max_resistors: int, limits: tuple[float, float],
                   duty_within: float) -> tuple[np.ndarray, ...]:
    """(RA, RB, C entries, frequency [Hz], duty [%]) for the RB values that matter."""
    res, caps = index.resistors, index.capacitors
    va, vc = res.values[a], caps.values[cc]
    # The smallest RB allowed too: f peaks at a small RB (see below), so a target out
    # of reach is missed least there.
    wanted = [_astable_rb(osc, target_hz, va, vc, diode), np.full(va.shape, limits[0])]
    if duty_pct is not None:
        # The duty depends on RA alone (C cancels): solved once per distinct RA.
        distinct, at = np.unique(va, return_inverse=True)
        wanted += [_duty_rb(osc, distinct, duty_pct + side * duty_within, diode)[at]
                   for side in (-1.0, 1.0)]
    # Duty is monotone in RB, so the two entries bracketing its edges suffice; frequency
    # is not quite (a small RB discharges C below the trigger level during the edge
    # delay), so the frequency target gets two entries a side.
    columns = [res.nearest(np.clip(np.nan_to_num(w, nan=limits[0]), *limits), max_resistors,
                           PER_SIDE if k == 0 else 1, *limits) for k, w in enumerate(wanted)]
    # Each row is one (RA, C) pair; drop RB entries listed twice within a row.
    near = np.sort(np.concatenate(columns, axis=1), axis=1)
    near[:, 1:][near[:, 1:] == near[:, :-1]] = -1
    rows, cols = np.nonzero(near >= 0)
    ra, rb, cc = a[rows], near[rows, cols], cc[rows]
    fits = ~res.overused(ra, rb)
    ra, rb, cc = ra[fits], rb[fits], cc[fits]
    f, duty = frequency_and_duty(osc, _pair(osc, res.values[ra], res.values[rb],
                                            caps.values[cc]), diode)
    ok = np.isfinite(f)
    return ra[ok], rb[ok], cc[ok], f[ok], duty[ok]


def _enough(index: DrawerIndex, found: list[tuple[np.ndarray, ...]], target_hz: float,
            max_parts: int, top: int, accept_pct: float, duty_pct: float | None,
            duty_within: float) -> bool:
    """True if ``top`` hits with at most ``max_parts`` parts are already known.

    Every pair in a later tier has more parts than that, so it cannot outrank them.
    """
    res, caps = index.resistors, index.capacitors
    count = 0
    for ra, rb, cc, f, duty in found:
        hit = np.abs(f - target_hz) <= accept_pct / 100.0 * target_hz
        if duty_pct is not None:
            hit &= np.abs(duty - duty_pct) <= duty_within
        parts = res.part_count[ra].astype(int) + res.part_count[rb] + caps.part_count[cc]
        count += int(np.count_nonzero(hit & (parts <= max_parts)))
    return count >= top
