"""Search the drawer: which networks of stock parts put an oscillator on a target frequency.

For each capacitor network the timing model is inverted for the resistance
that hits the target, and its neighbours are looked up in the sorted resistor
index (one layer per part count, so the fewest-parts answer is never hidden
behind denser three-resistor values). Only the shortlist is evaluated with
the full model, whose frequency is what a candidate reports.

Ranking (DESIGN.md contract, second round): a candidate's combined error is
|error| / ``accept_pct``, or with a duty target the larger of that and
|duty error| / ``duty_within`` (duty points). Hits (combined error ≤ 1) come
first, fewest parts first, then smallest combined error; the rest follow by
combined error. A build that stops oscillating at any tolerance, threshold or
leakage corner (its worst case starts at 0 Hz) is never a hit and comes after
every build that oscillates at all corners. The list is then kept varied: one
candidate per capacitor network and no two with both values within
``NEAR_COPY`` of each other, unless the drawer offers too few different
builds to fill the list.

555: for every (RA network, C network) pair the RB neighbours that matter
are looked up (next to the RB that hits the frequency, the smallest RB, and
with a duty target the two RB that put the duty at its tolerance edges).
Pairs are taken in tiers of rising part count, stopping once enough hits are
known that no later tier could outrank, within ``COMBINATION_BUDGET``.
Decision where the issue is silent: a duty of 50 % or less uses the
diode-steered astable (the plain one cannot reach 50 % with RA > 0).

What to buy (``suggest``): when nothing is within accept, the nearest IEC
60063 values (E12, then E24, then E96) that hit the target together with
networks already in the drawer.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from core.design.buy import at_stage, stage_oscillators, suggest
from core.design.design import Design
from core.design.inversion import follower_entries, frequency_and_duty, tuned_resistance
from core.errors import InputError
from core.model.circuits.divider import tap
from core.model.leakage import network_leakage_a
from core.model.spread import worst_case_hz
from core.model.timing import (
    Oscillator,
    Prediction,
    practitioner_warnings,
    times,
)
from core.parts.drawer import Part
from core.parts.networks import DrawerIndex, Network, NetworkIndex, drawer_index
from core.units import format_frequency, format_resistance, format_signed_pct

NEAR_COPY = 0.02
"""Two candidates whose R and C both agree within this fraction are near-copies."""
DUTY_WITHIN_POINTS = 1.0
"""Default duty tolerance [percentage points] (DESIGN.md ``--duty-within``)."""
PER_SIDE = 2
"""Index neighbours taken on each side of the ideal value, per layer."""
RANK_DEPTH = 200
"""Ranked combinations per requested candidate kept for the variety pass."""


@dataclass(frozen=True)
class Candidate(Design):
    """One build from the drawer: values [Ω, F], their networks, and what it will do.

    ``frequency_hz`` is the full model's; ``error_pct`` is (f − target)/target × 100;
    ``worst_case_hz`` spans every tolerance and threshold corner; ``duty_asked_pct``
    the duty target [%] (None: any); ``hit`` whether it counts as a hit in the ranking.
    """

    circuit: str
    values: dict[str, float]
    networks: dict[str, Network]
    frequency_hz: float
    error_pct: float
    duty_pct: float
    worst_case_hz: tuple[float, float]
    diode_steered: bool = False
    notes: list[str] = field(default_factory=list)
    duty_asked_pct: float | None = None
    hit: bool = False
    divide_by: int = 1

    @property
    def oscillator_hz(self) -> float:
        """The oscillator's own frequency [Hz] ahead of any counter."""
        return self.frequency_hz * self.divide_by

    @property
    def duty_error_pct(self) -> float | None:
        """Predicted minus asked duty [percentage points]; None without a duty target."""
        return None if self.duty_asked_pct is None else self.duty_pct - self.duty_asked_pct

    @property
    def stops(self) -> bool:
        """True when some corner does not oscillate (the worst case starts at 0 Hz)."""
        return bool(stops_at_a_corner(self.worst_case_hz[0]))

    def to_json(self) -> dict[str, Any]:
        out = {
            "frequency_hz": self.frequency_hz,
            "error_pct": self.error_pct,
            "duty_pct": self.duty_pct,
            "values": dict(self.values),
            "networks": {k: n.to_json() for k, n in self.networks.items()},
            "worst_case_hz": list(self.worst_case_hz),
            "part_count": self.part_count,
            "diode_steered": self.diode_steered,
            "hit": self.hit,
            "notes": list(self.notes),
        }
        if self.duty_asked_pct is not None:
            out["duty_error_pct"] = self.duty_error_pct
        if self.divide_by > 1:
            out.update(divide_by=self.divide_by, tap=tap(self.divide_by),
                       oscillator_hz=self.oscillator_hz)
        return out


def stops_at_a_corner(worst_low_hz: Any) -> Any:
    """True where a worst case's low end [Hz] is 0 or NaN: some corner does not oscillate."""
    return ~(np.asarray(worst_low_hz) > 0.0)


@dataclass(frozen=True)
class SearchResult:
    """Ranked candidates, the resistor range allowed, notes and what to buy."""

    target_hz: float
    limits: tuple[float, float]
    notes: list[str]
    candidates: list[Candidate]
    suggestions: list[dict[str, Any]] = field(default_factory=list)

    def to_json(self) -> dict[str, Any]:
        return {
            "target_hz": self.target_hz,
            "limits": {"r_min_ohm": self.limits[0], "r_max_ohm": self.limits[1]},
            "notes": list(self.notes),
            "candidates": [c.to_json() for c in self.candidates],
            "suggestions": list(self.suggestions),
        }


def combined_error(error_pct: Any, accept_pct: float, duty_error: Any = None,
                   duty_within: float = DUTY_WITHIN_POINTS) -> np.ndarray:
    """The ranking's combined error: |error| / accept, or with a duty target the larger
    of that and |duty error| / duty_within; a hit has at most 1 (DESIGN.md, second round).

    ``error_pct`` [%], ``accept_pct`` [%], ``duty_error`` and ``duty_within`` [points].
    """
    score = np.abs(np.asarray(error_pct, dtype=float)) / accept_pct
    if duty_error is not None:
        score = np.maximum(score, np.abs(np.asarray(duty_error, dtype=float)) / duty_within)
    return score


def _rank_order(score: np.ndarray, parts: np.ndarray, keep: int | None = None,
                steadiness: np.ndarray | None = None) -> np.ndarray:
    """Indices in contract order: hits (combined error ``score`` ≤ 1) by (parts, score),
    then the rest by score.

    With ``keep`` only that many leading indices are returned (found by
    partitioning first, so a million combinations rank in milliseconds).
    ``steadiness`` (``build_steadiness``) breaks ties between builds whose
    combined errors agree to 0.01 (0.01 % at the default 1 % accept): the steadier first.
    """
    within = score <= 1.0
    # One float key: hits sort by (parts, score) below every miss.
    key = np.where(within, parts * 2.0 + score, (parts.max(initial=0) + 2) * 2.0 + score)
    tie = np.zeros(len(score)) if steadiness is None else steadiness
    if keep is not None and keep < len(key):
        head = np.argpartition(key, keep)[:keep]
        return head[np.lexsort((score[head], tie[head], np.round(score[head], 2),
                                np.where(within, parts, 0)[head], ~within[head]))]
    return np.lexsort((score, tie, np.round(score, 2), np.where(within, parts, 0), ~within))


def build_steadiness(index: DrawerIndex, entries: dict[str, np.ndarray]) -> np.ndarray:
    """Per build, the sum of its networks' ``steadiness`` (dielectric class of the
    capacitor, relative spread of every network): lower is the steadier build."""
    return sum((index.capacitors if role == "C" else index.resistors).steadiness(e)
               for role, e in entries.items())


STOP_CHECK_LIMIT = 50_000
"""Most shortlist combinations whose worst case is checked for a stopping corner."""


def _oscillating_first(index: DrawerIndex, osc: Oscillator, s: _Shortlist, score: np.ndarray,
                       top: int, steadiness: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(order, low): the rank order with every build that stops at some corner moved after
    all that oscillate at every corner (those by combined error), and the worst case's low
    end [Hz] for the rows checked (NaN elsewhere).

    The head of the order is checked first; it grows until ``top`` different capacitor
    networks oscillate at every corner (what the variety pass needs) or the whole
    shortlist (at most ``STOP_CHECK_LIMIT`` rows) has been checked.
    """
    n = len(score)
    low = np.full(n, np.nan)
    depth = RANK_DEPTH * top
    while True:
        order = _rank_order(score, s.parts, keep=depth, steadiness=steadiness)
        todo = order[np.isnan(low[order])]
        if todo.size:
            low[todo] = _worst_low(index, osc, s, todo)
        stops = stops_at_a_corner(low[order])
        running = order[~stops]
        # Distinct capacitor networks by a set: np.unique imports numpy.ma (40 ms at start).
        if (len(set(s.entries["C"][running].tolist())) >= top or len(order) >= n
                or depth >= STOP_CHECK_LIMIT):
            break
        depth = min(4 * depth, STOP_CHECK_LIMIT)
    stopping = order[stops]
    stopping = stopping[np.argsort(score[stopping], kind="stable")]
    return np.concatenate([running, stopping]), low


def _worst_low(index: DrawerIndex, osc: Oscillator, s: _Shortlist,
               rows: np.ndarray) -> np.ndarray:
    """The worst case's low end [Hz] (0 where some corner stops) for the shortlist ``rows``,
    all at once, from the networks' value ranges in the index and each capacitor network's
    leakage limit."""
    values: dict[str, np.ndarray] = {}
    ranges: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    for role, entries in s.entries.items():
        net = index.capacitors if role == "C" else index.resistors
        e = entries[rows]
        values[role], ranges[role] = net.values[e], (net.lo[e], net.hi[e])
    caps, at = np.unique(s.entries["C"][rows], return_inverse=True)
    leakage = np.array([network_leakage_a(index.capacitors.nodes([int(e)])[0], osc.supply_v)
                        for e in caps])[at]
    low = np.empty(len(rows))
    for n, k in s.stages(rows):
        low[k], _ = worst_case_hz(at_stage(osc, n), {r: v[k] for r, v in values.items()},
                                  {r: (lo[k], hi[k]) for r, (lo, hi) in ranges.items()},
                                  diode_steered=s.diode_steered, capacitor_leakage_a=leakage[k])
    return low


def _varied(order: np.ndarray, c_entry: np.ndarray, r_values: np.ndarray,
            c_values: np.ndarray, top: int) -> list[int]:
    """Pick ``top`` candidates in rank order, skipping near-copies; refill if too few."""
    chosen: list[int] = []
    seen_c: set[int] = set()
    for i in order:
        if len(chosen) == top:
            break
        if int(c_entry[i]) in seen_c:
            continue
        near = any(abs(r_values[i] / r_values[j] - 1) < NEAR_COPY
                   and abs(c_values[i] / c_values[j] - 1) < NEAR_COPY for j in chosen)
        if near:
            continue
        chosen.append(int(i))
        seen_c.add(int(c_entry[i]))
    if len(chosen) < top:
        rank = {int(i): k for k, i in enumerate(order)}
        taken = set(chosen)
        rest = [int(i) for i in order if int(i) not in taken][: top - len(chosen)]
        chosen = sorted(chosen + rest, key=rank.__getitem__)
    return chosen


# ---------------------------------------------------------------- search

def search(parts: list[Part], osc: Oscillator, target_hz: float, duty_pct: float | None = None,
           max_resistors: int = 2, max_capacitors: int = 2, accept_pct: float = 1.0,
           top: int = 10, index: DrawerIndex | None = None,
           duty_within: float = DUTY_WITHIN_POINTS) -> SearchResult:
    """Rank builds from ``parts`` for ``target_hz`` [Hz] on oscillator ``osc``.

    ``duty_pct`` [%] only for a circuit with steering (None: whatever the parts
    give); ``accept_pct`` [%] the error counted as a hit, ``duty_within``
    [points] the duty error counted as a hit; ``index`` a prebuilt
    ``DrawerIndex`` of these parts (built here when missing or too small).
    """
    if duty_pct is not None:
        osc = osc.with_steering()  # the Schmitt inverter's RH, RL, C
    _check_goal(osc, target_hz, duty_pct, accept_pct, duty_within, top)
    osc.circuit.require_designed("search")
    if index is None or not index.covers(max_resistors, max_capacitors):
        index = drawer_index(parts, max_resistors, max_capacitors)
    goal = _Goal(osc, target_hz, duty_pct, accept_pct, duty_within, top, max_resistors,
                 max_capacitors)
    notes = goal.opening_notes(index)
    if not len(index.resistors) or not len(index.capacitors):
        missing = "resistors" if not len(index.resistors) else "capacitors"
        notes.append(f"the drawer has no {missing} in stock, so nothing can be built")
        return SearchResult(target_hz, goal.limits, notes, [])
    shortlist = _shortlist(index, goal, notes)
    if shortlist is None:
        notes.append(f"no network of up to {max_resistors} resistors and {max_capacitors} "
                     f"capacitors reaches {format_frequency(target_hz)} inside the "
                     "resistor range (or the circuit would not oscillate)")
        return SearchResult(target_hz, goal.limits, notes, [], goal.suggest(index))
    err = shortlist.error_pct
    reached = _reaches(err, accept_pct)
    candidates: list[Candidate] = []
    stalled = False
    score = combined_error(err, accept_pct, shortlist.duty_error, duty_within)
    low = np.full(len(err), np.nan)
    if reached:
        order, low = _oscillating_first(index, osc, shortlist, score, top,
                                        build_steadiness(index, shortlist.entries))
        # Only builds that run at every corner count as reaching the target.
        stalled = not _reaches(err[low > 0], accept_pct)
        if not stalled:
            picked = _varied(order, shortlist.entries["C"], shortlist.r_sum,
                             shortlist.c_values, top)
            candidates = _candidates(index, osc, target_hz, shortlist, picked, score,
                                     duty_pct)
    suggestions: list[dict[str, Any]] = []
    if not any(c.hit for c in candidates):
        notes += _why_no_hit(goal, shortlist, candidates, score, low, reached, stalled)
        suggestions = goal.suggest(index)
        if suggestions:
            first = suggestions[0]
            notes.append(f"buying {first['buy']['text']} ({first['buy']['series']}) would give "
                         f"{format_signed_pct(first['error_pct'])} with parts you have")
    return SearchResult(target_hz, goal.limits, notes, candidates, suggestions)


def _check_goal(osc: Oscillator, target_hz: float, duty_pct: float | None, accept_pct: float,
                duty_within: float, top: int) -> None:
    """InputError naming the first impossible part of the goal."""
    if not accept_pct > 0:
        raise InputError("the acceptable error must be above zero", text=str(accept_pct),
                         what="accept")
    if not 0 < duty_within <= 100:
        raise InputError("the duty tolerance lies between 0 and 100 points",
                         text=str(duty_within), what="duty tolerance")
    if not (target_hz > 0 and math.isfinite(target_hz)):
        raise InputError("the target frequency must be above zero", text=str(target_hz),
                         what="target")
    if top < 1:
        raise InputError("--top must be at least 1", text=str(top), what="top")
    if duty_pct is not None and not 0 < duty_pct < 100:
        raise InputError("a duty cycle lies between 0 and 100 %", text=str(duty_pct),
                         what="duty")
    if duty_pct is not None and not osc.circuit.steerable:
        raise InputError(f"--duty applies to the 555 astable and the Schmitt inverter (with "
                         f"two steering diodes); the {osc.circuit.title}'s duty follows from "
                         "its circuit", text=str(duty_pct), what="duty")


@dataclass(frozen=True)
class _Goal:
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


def _why_no_hit(goal: _Goal, shortlist: _Shortlist, candidates: list[Candidate],
                score: np.ndarray, low: np.ndarray, reached: bool, stalled: bool) -> list[str]:
    """The notes that say why nothing is a hit."""
    target, accept, err = format_frequency(goal.target_hz), goal.accept_pct, shortlist.error_pct
    wanted = ("" if goal.duty_pct is None else
              f" at {goal.duty_pct:g} ± {goal.duty_within:g} points of duty")
    closest = int(np.argmin(np.abs(err)))
    best_error = candidates[0].error_pct if candidates else float(err[closest])
    notes = [f"nothing in the drawer is within ±{accept:g} % of {target}{wanted} and "
             f"oscillates at every corner; the closest is {format_signed_pct(best_error)}"]
    if stalled:
        notes.append(f"the builds that reach {target} (the closest "
                     f"{format_signed_pct(float(err[closest]))}) stop oscillating at "
                     "some tolerance, threshold or leakage corner, and none that runs at "
                     "every corner reaches it, so none is listed")
    elif reached and np.any((score <= 1.0) & (low == 0.0)):
        notes.append(f"builds within ±{accept:g} %{wanted} exist but stop oscillating "
                     "at some tolerance, threshold or leakage corner, so none counts as "
                     "a hit; they come after every build that runs at all corners")
    elif not reached:
        side = "faster" if best_error > 0 else "slower"
        notes.append(f"no build from the drawer reaches {target}: every one runs {side} (the "
                     f"closest at {format_frequency(float(shortlist.frequency_hz[closest]))}), "
                     "so none is listed")
    return notes


def _reaches(error_pct: np.ndarray, accept_pct: float) -> bool:
    """DESIGN.md: a target is reached when builds land within accept or on both sides of it
    (otherwise every build misses on the same side and the list is empty)."""
    return bool(np.any(error_pct >= -accept_pct) and np.any(error_pct <= accept_pct))


@dataclass
class _Shortlist:
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


def _joined(lists: list[_Shortlist], ratios: list[int]) -> _Shortlist | None:
    """One shortlist from one per output ratio, each row keeping its ratio."""
    if not lists:
        return None
    first = lists[0]

    def cat(name: str) -> np.ndarray:
        return np.concatenate([getattr(x, name) for x in lists])

    return _Shortlist({k: np.concatenate([x.entries[k] for x in lists]) for k in first.entries},
                      cat("frequency_hz"), cat("duty_pct"), cat("error_pct"), cat("parts"),
                      cat("r_sum"), cat("c_values"),
                      None if first.duty_error is None else cat("duty_error"),
                      first.diode_steered,
                      np.concatenate([np.full(len(x.error_pct), n)
                                      for x, n in zip(lists, ratios, strict=True)]))


def _shortlist(index: DrawerIndex, goal: _Goal, notes: list[str]) -> _Shortlist | None:
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
                     notes: list[str]) -> _Shortlist | None:
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
    return _Shortlist(entries, f, duty, (f - target_hz) / target_hz * 100.0,
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
                     accept_pct: float, duty_within: float, diode: bool) -> _Shortlist | None:
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
    return _Shortlist(_pair(osc, ra, rb, cc), f, duty,
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
        wanted += [_duty_rb(osc, va, duty_pct + side * duty_within, diode)
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


def _candidates(index: DrawerIndex, osc: Oscillator, target_hz: float, s: _Shortlist,
                picked: list[int], score: np.ndarray,
                duty_pct: float | None) -> list[Candidate]:
    """Candidates with concrete stock lines, nominal timing, worst case and warnings.

    The worst case spans every corner of the networks' value ranges, the
    thresholds and the leakage, evaluated for all picked candidates at once.
    ``score`` is the combined error per shortlist row; a hit also oscillates at
    every corner. ``duty_pct`` is the duty asked.
    """
    chosen = []
    for i in picked:
        taken: Counter[int] = Counter()
        networks: dict[str, Network] = {}
        for role, entries in s.entries.items():
            net_index: NetworkIndex = index.capacitors if role == "C" else index.resistors
            (networks[role],) = net_index.nodes([int(entries[i])], taken)
        chosen.append(networks)
    if not chosen:
        return []
    roles = list(chosen[0])
    values = {r: np.array([n[r].value for n in chosen]) for r in roles}
    ranges = {r: tuple(np.array(x) for x in zip(*(n[r].value_range for n in chosen),
                                                  strict=True)) for r in roles}
    leakage = np.array([network_leakage_a(n["C"], osc.supply_v) for n in chosen])
    low, high, t_high, t_low = (np.empty(len(chosen)) for _ in range(4))
    ratio = np.ones(len(chosen), dtype=int)
    for n, k in s.stages(np.asarray(picked)):
        stage, at_k = at_stage(osc, n), {r: v[k] for r, v in values.items()}
        low[k], high[k] = worst_case_hz(stage, at_k, {r: (lo[k], hi[k]) for r, (lo, hi)
                                                      in ranges.items()},
                                        diode_steered=s.diode_steered,
                                        capacitor_leakage_a=leakage[k])
        t_high[k], t_low[k] = times(stage, at_k, s.diode_steered)
        ratio[k] = n
    out = []
    for k, (i, networks) in enumerate(zip(picked, chosen, strict=True)):
        period = float(t_high[k] + t_low[k])
        prediction = Prediction(1.0 / period, period, 100.0 * float(t_high[k]) / period,
                                float(t_high[k]), float(t_low[k]),
                                (float(low[k]), float(high[k])))
        vals = {r: float(values[r][k]) for r in roles}
        c_parts = networks["C"].parts()
        dielectric = next((p.dielectric for p in c_parts if p.polarised), c_parts[0].dielectric)
        notes = practitioner_warnings(at_stage(osc, int(ratio[k])), vals, prediction,
                                      dielectric=dielectric, diode_steered=s.diode_steered)
        stops = bool(stops_at_a_corner(prediction.worst_case_hz[0]))
        if stops:
            notes.insert(0, STOPS_NOTE)
        if s.diode_steered:
            notes.append("diode-steered astable: a diode across RB (anode at pin 7) so RA "
                         "alone charges C")
        out.append(Candidate(osc.circuit.name, vals, networks, prediction.frequency_hz,
                             (prediction.frequency_hz - target_hz) / target_hz * 100.0,
                             prediction.duty_pct, prediction.worst_case_hz, s.diode_steered,
                             notes, duty_pct, bool(score[i] <= 1.0) and not stops,
                             int(ratio[k])))
    # The shortlist's screen used the index's value ranges; the concrete lines decide.
    order = sorted(range(len(out)),
                   key=lambda k: (out[k].stops, float(score[picked[k]]) if out[k].stops else 0))
    return [out[k] for k in order]


STOPS_NOTE = ("stops at a corner: some combination of part tolerances, thresholds and "
              "leakage within their limits does not oscillate, so this build is never a hit "
              "and comes after every build that oscillates at all corners")
