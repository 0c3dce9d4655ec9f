"""Search the drawer: which networks of stock parts put an oscillator on a target frequency.

The shortlist (core/design/shortlist.py) picks, for the circuit's shape, the
combinations of drawer networks worth the full model: the tuned resistor's
neighbours in the sorted index, one layer per part count, so the fewest-parts
answer is never hidden behind denser three-resistor values. Only those are
evaluated with the full model, whose frequency is what a candidate reports.

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

What to buy (core/design/buy.py): when nothing is within accept, the nearest
IEC 60063 values that hit the target together with networks already owned.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from core.design.buy import at_stage
from core.design.design import Design
from core.design.shortlist import Goal, Shortlist, shortlist_for
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
from core.parts.index_build import drawer_index
from core.parts.network_index import DrawerIndex, NetworkIndex
from core.parts.networks import Network
from core.parts.part import Part
from core.units import format_frequency, format_signed_pct

NEAR_COPY = 0.02
"""Two candidates whose R and C both agree within this fraction are near-copies."""
DUTY_WITHIN_POINTS = 1.0
"""Default duty tolerance [percentage points] (DESIGN.md ``--duty-within``)."""
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


def _oscillating_first(index: DrawerIndex, osc: Oscillator, s: Shortlist, score: np.ndarray,
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


def _worst_low(index: DrawerIndex, osc: Oscillator, s: Shortlist,
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
    goal = Goal(osc, target_hz, duty_pct, accept_pct, duty_within, top, max_resistors,
                 max_capacitors)
    notes = goal.opening_notes(index)
    if not len(index.resistors) or not len(index.capacitors):
        missing = "resistors" if not len(index.resistors) else "capacitors"
        notes.append(f"the drawer has no {missing} in stock, so nothing can be built")
        return SearchResult(target_hz, goal.limits, notes, [])
    shortlist = shortlist_for(index, goal, notes)
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
            notes.append(buy_note(suggestions[0]))
    return SearchResult(target_hz, goal.limits, notes, candidates, suggestions)


def buy_note(suggestion: dict[str, Any]) -> str:
    """The note that names the best part to buy (``suggest``'s first answer)."""
    return (f"buying {suggestion['buy']['text']} ({suggestion['buy']['series']}) would give "
            f"{format_signed_pct(suggestion['error_pct'])} with parts you have")


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


def _why_no_hit(goal: Goal, shortlist: Shortlist, candidates: list[Candidate],
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


def _candidates(index: DrawerIndex, osc: Oscillator, target_hz: float, s: Shortlist,
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
