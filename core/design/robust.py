"""Search and trim answers re-checked where the build must work (core.model.drift).

With a temperature or supply range, a search candidate's worst case spans
it as well (each network's tolerance stretched by its parts' drift, every
supply corner, the chip's own drift), and among candidates the ranking
leaves tied (same part count, same error to 0.01 %) the steadier comes
first. A trim design must cover its band over the range too: the trim engine
(core/design/trim.py) takes every index entry's range stretched by its parts'
drift (``drifted_index_ranges``), every supply corner and the chip's own drift
into its corner conditions, so it finds the finest design that still covers.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from core.design.search import Candidate, SearchResult
from core.model.drift import (
    CAPACITOR_DRIFT,
    POT_DRIFT,
    RESISTOR_DRIFT,
    Conditions,
    Envelope,
    ageing_words,
    condition_factors,
    drift_worst_case,
    resistor_kind,
    widest,
)
from core.model.leakage import network_leakage_a
from core.model.timing import Oscillator
from core.parts.network_index import NetworkIndex
from core.parts.networks import Network
from core.parts.part import Part


def part_envelope(role: str, part: Part) -> Envelope:
    """A stock part's drift: its dielectric's, the pot's, or the resistor type its
    tolerance suggests (``resistor_kind``)."""
    if role == "P":
        return POT_DRIFT
    if role == "C":
        return CAPACITOR_DRIFT[part.dielectric]
    return RESISTOR_DRIFT[resistor_kind(100 * max(part.tolerance.minus, part.tolerance.plus))]


def network_envelope(role: str, node: Network) -> Envelope:
    """The drift of a network: the widest of its parts' (a series or parallel
    combination's relative change lies between its parts' changes)."""
    envs = list({id(e): e for e in (part_envelope(role, p) for p in node.parts())}.values())
    return envs[0] if len(envs) == 1 else widest(
        *envs, source="; ".join(dict.fromkeys(e.source for e in envs)))


def drifted_index_ranges(index: NetworkIndex, conditions: Conditions | None
                         ) -> tuple[np.ndarray, np.ndarray]:
    """(low, high) value [Ω, F] of every index entry, stretched by its parts' drift over
    the conditions' temperatures (the index's own ranges without them).

    A group pools lines of one value and dielectric: its factors span all its lines'.
    """
    if not conditions:
        return index.lo, index.hi
    factors = np.array([_span(index.kind, group, conditions)
                        for group in index.groups]).reshape(-1, 2)
    used = index.usage >= 0
    at = np.where(used, index.usage, 0)
    low = np.where(used, factors[at, 0], np.inf).min(axis=1)
    high = np.where(used, factors[at, 1], -np.inf).max(axis=1)
    return index.lo * low, index.hi * high


def drifted_part_ranges(role: str, parts: tuple[Part, ...], conditions: Conditions | None
                        ) -> tuple[np.ndarray, np.ndarray]:
    """(low, high) value [Ω, F] of each part, stretched by its drift over the conditions."""
    lo, hi = (np.array([p.value_range[k] for p in parts]) for k in (0, 1))
    if not conditions:
        return lo, hi
    factors = np.array([_span(role, [p], conditions) for p in parts])
    return lo * factors[:, 0], hi * factors[:, 1]


def _span(role: str, lines: list[Part], conditions: Conditions) -> tuple[float, float]:
    """The lowest and highest factor [1] any of ``lines`` reaches over the conditions."""
    spans = [condition_factors(part_envelope(role, p), conditions) for p in lines]
    return min(a for a, _ in spans), max(b for _, b in spans)


def _envelopes(networks: dict[str, Network]) -> dict[str, Envelope]:
    return {role: network_envelope(role, node) for role, node in networks.items()}


def _ranges(networks: dict[str, Network]) -> dict[str, tuple[float, float]]:
    return {role: node.value_range for role, node in networks.items()}


def robust_candidate(osc: Oscillator, cand: Candidate, conditions: Conditions) -> Candidate:
    """``cand`` with its worst case over ``conditions`` as well."""
    lo, hi = drift_worst_case(osc, cand.values, _ranges(cand.networks), conditions,
                              _envelopes(cand.networks), diode_steered=cand.diode_steered,
                              capacitor_leakage_a=network_leakage_a(cand.networks["C"],
                                                                    osc.supply_v))
    return replace(cand, worst_case_hz=(lo, hi))


def _spread(c: Candidate) -> float:
    lo, hi = c.worst_case_hz
    return (hi - lo) / c.frequency_hz


def robust_search(osc: Oscillator, result: SearchResult, conditions: Conditions
                  ) -> SearchResult:
    """``result`` with worst cases over ``conditions``; a steadier build wins a tie."""
    if not conditions:
        return result
    cands = [robust_candidate(osc, c, conditions) for c in result.candidates]
    tied = [(c.part_count, round(abs(c.error_pct), 2)) for c in cands]
    run = [0]
    for i in range(1, len(cands)):
        run.append(run[-1] + (tied[i] != tied[i - 1]))
    order = sorted(range(len(cands)), key=lambda i: (run[i], _spread(cands[i])))
    notes = [*result.notes, f"worst cases cover {conditions.describe()} ("
             "figures: EIA-198 codes, typical film and electrolytic curves, resistor TCR)",
             ageing_words()]
    return replace(result, candidates=[cands[i] for i in order], notes=notes)
