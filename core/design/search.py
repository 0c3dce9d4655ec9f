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
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from core.design.design import Design
from core.errors import InputError
from core.model.leakage import capacitor_leakage_a, network_leakage_a
from core.model.spread import worst_case_hz
from core.model.timing import (
    Oscillator,
    Prediction,
    astable_times,
    practitioner_warnings,
    schmitt_resistance_for,
    schmitt_times,
    times,
)
from core.parts.drawer import Part
from core.parts.eseries import nearest
from core.parts.networks import DrawerIndex, Network, NetworkIndex, drawer_index
from core.units import format_frequency, format_part_value, format_resistance, format_signed_pct

NEAR_COPY = 0.02
"""Two candidates whose R and C both agree within this fraction are near-copies."""
DUTY_WITHIN_POINTS = 1.0
"""Default duty tolerance [percentage points] (DESIGN.md ``--duty-within``)."""
PER_SIDE = 2
"""Index neighbours taken on each side of the ideal value, per layer."""
RANK_DEPTH = 200
"""Ranked combinations per requested candidate kept for the variety pass."""
LN2 = math.log(2.0)


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


# ---------------------------------------------------------------- model helpers

def schmitt_frequency(osc: Oscillator, r: Any, c: Any) -> tuple[np.ndarray, np.ndarray]:
    """Full-model (frequency [Hz], duty [%]) for R [Ω] and C [F] arrays; NaN if no oscillation."""
    return _frequency_and_duty(*schmitt_times(osc, np.asarray(r, float), np.asarray(c, float)))


def astable_frequency(osc: Oscillator, ra: Any, rb: Any, c: Any,
                      diode_steered: bool) -> tuple[np.ndarray, np.ndarray]:
    """Full-model (frequency [Hz], duty [%]) of the 555 astable for RA, RB [Ω], C [F]."""
    return _frequency_and_duty(*astable_times(osc, np.asarray(ra, float), np.asarray(rb, float),
                                              np.asarray(c, float), diode_steered=diode_steered))


def _frequency_and_duty(t_high: np.ndarray, t_low: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(frequency [Hz], duty [%]) from the output-high and output-low times [s]."""
    period = t_high + t_low
    return 1.0 / period, 100.0 * t_high / period


def schmitt_resistance(osc: Oscillator, target_hz: float, c: np.ndarray,
                       limits: tuple[float, float] = (1.0, 1e10),
                       clip: bool = False) -> np.ndarray:
    """R [Ω] that gives ``target_hz`` [Hz] with each C [F] (full nominal model); NaN if none.

    Only capacitors whose one-evaluation estimate (f nearly proportional to
    1/R) falls within a factor of two of ``limits`` [Ω] are solved: by a few
    rescaling steps where they converge to 1e-9, else by the model's own
    inverse (``schmitt_resistance_for``, a bracketed secant). That keeps a search on a
    full capacitor kit within milliseconds. With ``clip`` the answer is moved
    into ``limits`` (an unreachable target gives the nearest allowed R, where
    the closest miss lies).
    """
    c = np.asarray(c, dtype=float)
    r_ref = math.sqrt(limits[0] * limits[1])
    f_ref, _ = schmitt_frequency(osc, np.full(c.shape, r_ref), c)
    with np.errstate(invalid="ignore"):
        estimate = r_ref * f_ref / target_hz
    # NaN at r_ref (a TTL input stopping oscillation) still gets the exact inverse.
    maybe = ~(estimate < 0.5 * limits[0]) & ~(estimate > 2.0 * limits[1])
    out = np.full(c.shape, np.nan)
    # f is close to proportional to 1/R: a few rescaling steps converge where the model
    # is smooth; the model's own inverse settles the rest.
    r = np.where(maybe & np.isfinite(estimate), estimate, np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        for _ in range(4):
            f, _ = schmitt_frequency(osc, r, c)
            r = r * f / target_hz
        f, _ = schmitt_frequency(osc, r, c)
        done = np.abs(f / target_hz - 1.0) < 1e-9
    out[done] = r[done]
    rest = maybe & ~done
    if rest.any():
        out[rest] = schmitt_resistance_for(osc, target_hz, c[rest])
    if clip:
        # No exact answer: the estimate shows the side; no estimate (R too large to
        # oscillate at all) means the smallest allowed R.
        fallback = np.where(np.isnan(estimate), limits[0], estimate)
        out = np.clip(np.where(np.isnan(out), fallback, out), *limits)
    return out


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
                        for e in caps])
    low, _ = worst_case_hz(osc, values, ranges, diode_steered=s.diode_steered,
                           capacitor_leakage_a=leakage[at])
    return np.asarray(low, dtype=float)


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

    ``duty_pct`` [%] only for the 555 (None: whatever RA and RB give);
    ``accept_pct`` [%] the error counted as a hit, ``duty_within`` [points] the
    duty error counted as a hit; ``index`` a prebuilt ``DrawerIndex`` of these
    parts (built here when missing or too small).
    """
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
        raise InputError("--duty applies to the 555 astable; a Schmitt inverter's duty follows "
                         "from its thresholds", text=str(duty_pct), what="duty")
    osc.circuit.require_designed("search")
    if index is None or not index.covers(max_resistors, max_capacitors):
        index = drawer_index(parts, max_resistors, max_capacitors)
    device = osc.device
    limits = (float(device.r_min_ohm), float(device.r_max_ohm))
    notes = [f"resistor networks limited to {format_resistance(limits[0])} … "
             f"{format_resistance(limits[1])} for {device.family.name} at "
             f"{device.supply_v:g} V", *index.notes]
    if target_hz > device.f_max_hz:
        notes.append(f"{format_frequency(target_hz)} is above what the {device.family.name} "
                     f"does well (about {format_frequency(device.f_max_hz)}, where the "
                     "propagation delays become a tenth of the period)")
    if not len(index.resistors) or not len(index.capacitors):
        missing = "resistors" if not len(index.resistors) else "capacitors"
        notes.append(f"the drawer has no {missing} in stock, so nothing can be built")
        return SearchResult(target_hz, limits, notes, [])
    if osc.circuit.name == "555":
        shortlist = _shortlist_555(index, osc, target_hz, duty_pct, max_resistors,
                                   max_capacitors, limits, notes, top, accept_pct, duty_within)
    else:
        shortlist = _shortlist_schmitt(index, osc, target_hz, max_resistors, max_capacitors,
                                       limits)
    if shortlist is None:
        notes.append(f"no network of up to {max_resistors} resistors and {max_capacitors} "
                     f"capacitors reaches {format_frequency(target_hz)} inside the "
                     "resistor range (or the circuit would not oscillate)")
        return SearchResult(target_hz, limits, notes, [],
                            suggest(index, osc, target_hz, accept_pct, limits, max_resistors,
                                    max_capacitors, duty_pct, duty_within=duty_within))
    err = shortlist.error_pct
    reached = _reaches(err, accept_pct)
    candidates: list[Candidate] = []
    stalled = False
    if reached:
        score = combined_error(err, accept_pct, shortlist.duty_error, duty_within)
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
        wanted = ("" if duty_pct is None else
                  f" at {duty_pct:g} ± {duty_within:g} points of duty")
        closest = int(np.argmin(np.abs(err)))
        best_error = candidates[0].error_pct if candidates else float(err[closest])
        notes.append(f"nothing in the drawer is within ±{accept_pct:g} % of "
                     f"{format_frequency(target_hz)}{wanted} and oscillates at every corner; "
                     f"the closest is {format_signed_pct(best_error)}")
        if stalled:
            notes.append(f"the builds that reach {format_frequency(target_hz)} (the closest "
                         f"{format_signed_pct(float(err[closest]))}) stop oscillating at "
                         "some tolerance, threshold or leakage corner, and none that runs at "
                         "every corner reaches it, so none is listed")
        elif reached and np.any((score <= 1.0) & (low == 0.0)):
            notes.append(f"builds within ±{accept_pct:g} %{wanted} exist but stop oscillating "
                         "at some tolerance, threshold or leakage corner, so none counts as "
                         "a hit; they come after every build that runs at all corners")
        elif not reached:
            side = "faster" if best_error > 0 else "slower"
            notes.append(f"no build from the drawer reaches {format_frequency(target_hz)}: "
                         f"every one runs {side} (the closest at "
                         f"{format_frequency(float(shortlist.frequency_hz[closest]))}), so "
                         "none is listed")
        suggestions = suggest(index, osc, target_hz, accept_pct, limits, max_resistors,
                              max_capacitors, duty_pct, duty_within=duty_within)
        if suggestions:
            first = suggestions[0]
            notes.append(f"buying {first['buy']['text']} ({first['buy']['series']}) would give "
                         f"{format_signed_pct(first['error_pct'])} with parts you have")
    return SearchResult(target_hz, limits, notes, candidates, suggestions)


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


def _shortlist_schmitt(index: DrawerIndex, osc: Oscillator, target_hz: float,
                       max_resistors: int, max_capacitors: int,
                       limits: tuple[float, float]) -> _Shortlist | None:
    res, caps = index.resistors, index.capacitors
    ce = caps.entries(max_capacitors)
    cv = caps.values[ce]
    r_ideal = schmitt_resistance(osc, target_hz, cv, limits, clip=True)
    near = res.nearest(r_ideal, max_resistors, PER_SIDE, *limits)
    rows, cols = np.nonzero(near >= 0)
    if not rows.size:
        return None
    re, ce = near[rows, cols], ce[rows]
    f, duty = schmitt_frequency(osc, res.values[re], caps.values[ce])
    ok = np.isfinite(f)
    if not ok.any():
        return None
    re, ce, f, duty = re[ok], ce[ok], f[ok], duty[ok]
    return _Shortlist({"R": re, "C": ce}, f, duty, (f - target_hz) / target_hz * 100.0,
                      res.part_count[re].astype(int) + caps.part_count[ce],
                      res.values[re], caps.values[ce])


def _astable_rb(osc: Oscillator, target_hz: float, ra: np.ndarray, c: np.ndarray,
                diode: bool) -> np.ndarray:
    """RB [Ω] giving ``target_hz`` [Hz] with RA [Ω] and C [F] (full model); ≤ 0 or NaN if none.

    Both time constants are linear in RB and the charge levels depend on RA
    only, so the period is affine in RB up to the small edge-delay terms: an
    affine fit through two evaluations and one secant step are exact enough.
    """
    want = 1.0 / target_hz

    def period(rb: np.ndarray) -> np.ndarray:
        t_high, t_low = astable_times(osc, ra, rb, c, diode_steered=diode)
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
        if not diode:
            return np.where(d > 0.5, ra * (1.0 - d) / max(2.0 * d - 1.0, 1e-12), np.inf)
        rb = ra * (1.0 - d) / d
        for _ in range(3):
            t_high, t_low = astable_times(osc, ra, rb, 1e-6, diode_steered=True)
            rb = rb * t_high * (1.0 - d) / (d * t_low)
        return np.where(np.isfinite(rb) & (rb > 0), rb, np.inf)


def _lowest_steered_duty(osc: Oscillator, limits: tuple[float, float]) -> float:
    """The smallest duty [%] the diode-steered astable reaches within the resistor limits
    (RA at its smallest, RB at its largest)."""
    t_high, t_low = astable_times(osc, limits[0], limits[1], 1e-6, diode_steered=True)
    return float(100.0 * t_high / (t_high + t_low))


COMBINATION_BUDGET = 2_500_000
"""Most RA, RB, C combinations one 555 search evaluates (well under a second); larger tiers are
skipped, with a note."""


def _shortlist_555(index: DrawerIndex, osc: Oscillator, target_hz: float,
                   duty_pct: float | None, max_resistors: int, max_capacitors: int,
                   limits: tuple[float, float], notes: list[str], top: int,
                   accept_pct: float, duty_within: float) -> _Shortlist | None:
    """RA, RB, C combinations: for every (RA, C) pair, the RB neighbours that matter.

    Those are the RB values next to the one that hits the frequency and, with a
    duty target, next to the two that put the duty at the edges of its
    tolerance. Pairs are taken in tiers of rising part count and the search
    stops once enough hits are found that no later tier can outrank.
    """
    res, caps = index.resistors, index.capacitors
    diode = duty_pct is not None and duty_pct <= 50.0
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
    return _Shortlist({"RA": ra, "RB": rb, "C": cc}, f, duty,
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
    f, duty = astable_frequency(osc, res.values[ra], res.values[rb], caps.values[cc], diode)
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
    low, high = worst_case_hz(osc, values, ranges, diode_steered=s.diode_steered,
                              capacitor_leakage_a=leakage)
    t_high, t_low = times(osc, values, s.diode_steered)
    out = []
    for k, (i, networks) in enumerate(zip(picked, chosen, strict=True)):
        period = float(t_high[k] + t_low[k])
        prediction = Prediction(1.0 / period, period, 100.0 * float(t_high[k]) / period,
                                float(t_high[k]), float(t_low[k]),
                                (float(low[k]), float(high[k])))
        vals = {r: float(values[r][k]) for r in roles}
        c_parts = networks["C"].parts()
        dielectric = next((p.dielectric for p in c_parts if p.polarised), c_parts[0].dielectric)
        notes = practitioner_warnings(osc, vals, prediction, dielectric=dielectric,
                                      diode_steered=s.diode_steered)
        stops = bool(stops_at_a_corner(prediction.worst_case_hz[0]))
        if stops:
            notes.insert(0, STOPS_NOTE)
        if s.diode_steered:
            notes.append("diode-steered astable: a diode across RB (anode at pin 7) so RA "
                         "alone charges C")
        out.append(Candidate(osc.circuit.name, vals, networks, prediction.frequency_hz,
                             (prediction.frequency_hz - target_hz) / target_hz * 100.0,
                             prediction.duty_pct, prediction.worst_case_hz, s.diode_steered,
                             notes, duty_pct, bool(score[i] <= 1.0) and not stops))
    # The shortlist's screen used the index's value ranges; the concrete lines decide.
    order = sorted(range(len(out)),
                   key=lambda k: (out[k].stops, float(score[picked[k]]) if out[k].stops else 0))
    return [out[k] for k in order]


STOPS_NOTE = ("stops at a corner: some combination of part tolerances, thresholds and "
              "leakage within their limits does not oscillate, so this build is never a hit "
              "and comes after every build that oscillates at all corners")


# ---------------------------------------------------------------- what to buy

BUY_SERIES = ("E12", "E24", "E96")
CAPACITOR_SERIES = ("E12", "E24")
"""Capacitors are sold in E6/E12, film and C0G sometimes in E24; an E96 capacitor is
rare, so capacitor suggestions stop at E24 (common practice, no published source)."""
"""IEC 60063 series tried in order when suggesting a part to buy."""
BUY_RANGE = {"R": (1.0, 10e6), "C": (10e-12, 10e-3)}
"""Values one can buy off the shelf [Ω, F] (common practice, no published source)."""


def _solve_capacitance(frequency: Callable[[np.ndarray], np.ndarray], target_hz: float,
                       c: np.ndarray) -> np.ndarray:
    """C [F] that gives ``target_hz``, from a first guess, f being nearly proportional to 1/C."""
    with np.errstate(invalid="ignore", divide="ignore"):
        for _ in range(3):
            f = frequency(c)
            c = np.where(np.isfinite(f) & (f > 0), c * f / target_hz, np.nan)
    return c


def suggest(index: DrawerIndex, osc: Oscillator, target_hz: float, accept_pct: float,
            limits: tuple[float, float], max_resistors: int, max_capacitors: int,
            duty_pct: float | None = None, count: int = 3,
            duty_within: float = DUTY_WITHIN_POINTS) -> list[dict[str, Any]]:
    """Parts to buy (nearest IEC 60063 values) that hit the target with parts already owned.

    Tries E12, then E24, then E96 (capacitors: E24 at most) and keeps the first
    series that gives a hit within ``accept_pct`` [%]; with no hit in any, the
    closest proposals of the last round.
    Schmitt: buy the resistor for an owned capacitor network, or the capacitor
    for an owned resistor network. 555: buy the capacitor for owned single RA
    and RB. Each suggestion names what to buy, what it pairs with, and its error.
    """
    res, caps = index.resistors, index.capacitors
    diode = duty_pct is not None and duty_pct <= 50.0
    best: list[dict[str, Any]] = []
    for series in BUY_SERIES:
        c_series = series if series in CAPACITOR_SERIES else CAPACITOR_SERIES[-1]
        options: list[tuple[float, int, dict[str, Any]]] = []
        if osc.circuit.name == "schmitt" and len(caps):
            ce = caps.entries(max_capacitors)
            r = schmitt_resistance(osc, target_hz, caps.values[ce], limits)
            buy = np.clip(nearest(r, series), *BUY_RANGE["R"])
            buy = np.where((buy >= limits[0]) & (buy <= limits[1]), buy, np.nan)
            f, _ = schmitt_frequency(osc, buy, caps.values[ce])
            options += _options(index, osc, "R", buy, {"C": ce},
                                {"R": buy, "C": caps.values[ce]}, f, target_hz, series)
        if osc.circuit.name == "schmitt" and len(res):
            re = res.entries(max_resistors, *limits)
            rv = res.values[re]
            c0 = 1.0 / (target_hz * rv)  # f ≈ 1/(RC) to start; refined with the model
            c = _solve_capacitance(lambda c, rv=rv: schmitt_frequency(osc, rv, c)[0],
                                   target_hz, c0)
            buy = np.clip(nearest(c, c_series), *BUY_RANGE["C"])
            f, _ = schmitt_frequency(osc, rv, buy)
            options += _options(index, osc, "C", buy, {"R": re}, {"R": rv, "C": buy}, f,
                                target_hz, c_series)
        if osc.circuit.name == "555" and len(res):
            singles = res.entries(1, *limits)
            ra, rb = (a.ravel() for a in np.meshgrid(singles, singles, indexing="ij"))
            fits = ~res.overused(ra, rb)
            ra, rb = ra[fits], rb[fits]
            va, vb = res.values[ra], res.values[rb]
            if duty_pct is not None:
                _, duty = astable_frequency(osc, va, vb, np.full(va.shape, 1e-6), diode)
                keep = np.abs(duty - duty_pct) <= duty_within
                ra, rb, va, vb = ra[keep], rb[keep], va[keep], vb[keep]
            c0 = 1.0 / (target_hz * LN2 * (va + (1.0 if diode else 2.0) * vb))
            c = _solve_capacitance(
                lambda c, va=va, vb=vb: astable_frequency(osc, va, vb, c, diode)[0],
                target_hz, c0)
            buy = np.clip(nearest(c, c_series), *BUY_RANGE["C"])
            f, _ = astable_frequency(osc, va, vb, buy, diode)
            options += _options(index, osc, "C", buy, {"RA": ra, "RB": rb},
                                {"RA": va, "RB": vb, "C": buy}, f, target_hz, c_series, diode)
        options.sort(key=lambda o: (o[0] > accept_pct, o[1] if o[0] <= accept_pct else 0, o[0]))
        chosen: list[dict[str, Any]] = []
        seen: set[tuple[str, float]] = set()
        for _, _, option in options:
            key = (option["buy"]["kind"], option["buy"]["value"])
            if key not in seen:
                seen.add(key)
                chosen.append(option)
            if len(chosen) == count:
                break
        best = chosen
        if chosen and abs(chosen[0]["error_pct"]) <= accept_pct:
            break
    return best


BOUGHT_ELECTROLYTIC_F = 10e-6
"""A capacitor to buy from this value up is taken as an aluminium electrolytic (film and
ceramic parts are rare above it: common practice, no published source)."""


def _options(index: DrawerIndex, osc: Oscillator, kind: str, buy: np.ndarray,
             owned: dict[str, np.ndarray], values: dict[str, np.ndarray], f: np.ndarray,
             target_hz: float, series: str,
             diode: bool = False) -> list[tuple[float, int, dict[str, Any]]]:
    """The best few (|error|, owned parts, suggestion) of one way of buying.

    ``values`` are every role's values [Ω, F] per option. Options that stop at some
    threshold or leakage corner (nominal part values) are left out.
    """
    error = (f - target_hz) / target_hz * 100.0
    ok = np.flatnonzero(np.isfinite(error) & np.isfinite(buy))
    ok = ok[np.argsort(np.abs(error[ok]), kind="stable")][:20]
    rows, nets = [], []
    for i in ok:
        taken: Counter[int] = Counter()
        networks = {}
        try:
            for role, entries in owned.items():
                net_index = index.capacitors if role == "C" else index.resistors
                (networks[role],) = net_index.nodes([int(entries[i])], taken)
        except InputError:
            continue
        rows.append(int(i))
        nets.append(networks)
    if not rows:
        return []
    leakage = np.array([network_leakage_a(n["C"], osc.supply_v) if "C" in n else
                        float(capacitor_leakage_a(buy[i], "electrolytic" if buy[i]
                                                  >= BOUGHT_ELECTROLYTIC_F else "",
                                                  osc.supply_v))
                        for i, n in zip(rows, nets, strict=True)])
    low, _ = worst_case_hz(osc, {k: v[rows] for k, v in values.items()}, {},
                           diode_steered=diode, capacitor_leakage_a=leakage)
    out = []
    for i, networks, runs in zip(rows, nets, np.atleast_1d(low) > 0, strict=True):
        if not runs:
            continue
        role = "C" if kind == "C" else "R"
        out.append((abs(float(error[i])), sum(n.part_count for n in networks.values()), {
            "buy": {"kind": kind, "role": role, "value": float(buy[i]), "series": series,
                    "text": format_part_value(float(buy[i]), kind)},
            "with": {r: n.to_json() for r, n in networks.items()},
            "with_text": {r: n.describe() for r, n in networks.items()},
            "frequency_hz": float(f[i]),
            "error_pct": float(error[i]),
        }))
    return out
