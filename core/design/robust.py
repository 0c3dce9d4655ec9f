"""Search and trim answers re-checked where the build must work (core.model.drift).

With a temperature or supply range, a search candidate's worst case spans
it as well (each network's tolerance stretched by its parts' drift, every
supply corner, the chip's own drift), and among candidates the ranking
leaves tied (same part count, same error to 0.01 %) the steadier comes
first. A trim design must cover its band over the range too; one that no
longer does is dropped, with a note.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from core.design.search import Candidate, SearchResult
from core.design.trim import TrimCandidate, TrimResult, guaranteed_band
from core.model.drift import (
    CAPACITOR_DRIFT,
    POT_DRIFT,
    RESISTOR_DRIFT,
    Conditions,
    Envelope,
    conditions_chip_factor,
    conditions_oscillators,
    drift_worst_case,
    drifted_ranges,
    resistor_kind,
    widest,
)
from core.model.leakage import network_leakage_a
from core.model.timing import Oscillator
from core.parts.networks import Network


def network_envelope(role: str, node: Network) -> Envelope:
    """The drift of a network: the widest of its parts' (a series or parallel
    combination's relative change lies between its parts' changes)."""
    parts = node.parts()
    if role == "P":
        return POT_DRIFT
    if role == "C":
        envs = [CAPACITOR_DRIFT[p.dielectric] for p in parts]
    else:
        envs = [RESISTOR_DRIFT[resistor_kind(100 * max(p.tolerance.minus, p.tolerance.plus))]
                for p in parts]
    return envs[0] if len({id(e) for e in envs}) == 1 else widest(
        *envs, source="; ".join(dict.fromkeys(e.source for e in envs)))


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
             "figures: EIA-198 codes, typical film and electrolytic curves, resistor TCR)"]
    return replace(result, candidates=[cands[i] for i in order], notes=notes)


def robust_band(osc: Oscillator, cand: TrimCandidate, conditions: Conditions
                ) -> tuple[float, float]:
    """The band ``cand`` reaches at every corner and over ``conditions`` [Hz]."""
    ranges = drifted_ranges(_ranges(cand.networks), conditions, _envelopes(cand.networks))
    r, p, c = ((np.array([ranges[k][0]]), np.array([ranges[k][1]])) for k in ("R", "P", "C"))
    ends = [guaranteed_band(o, r, p, c) for o in conditions_oscillators(osc, conditions)]
    chip = conditions_chip_factor(osc, conditions)
    low = max(float(lo[0]) for lo, _ in ends) * (1 + chip)
    high = min(float(hi[0]) for _, hi in ends) * (1 - chip)
    return low, high


ROBUST_DEPTH = 5
"""How many times more trim designs to check when a range may drop some."""


def robust_trim(osc: Oscillator, result: TrimResult, conditions: Conditions,
                top: int) -> TrimResult:
    """The first ``top`` of ``result``'s designs that still cover the band over
    ``conditions``."""
    if not conditions:
        return result
    lo, hi = result.band_hz
    kept = []
    for cand in result.candidates:
        low, high = robust_band(osc, cand, conditions)
        if low <= lo and high >= hi:  # NaN (a corner stops) fails both
            kept.append(replace(cand, guaranteed_hz=(low, high)))
    notes = [*result.notes, f"guaranteed bands cover {conditions.describe()}"]
    dropped = len(result.candidates) - len(kept)
    kept = kept[:top]
    if dropped:
        notes.append(f"{dropped} design(s) left out: they no longer cover the band over "
                     f"{conditions.describe()}")
    return replace(result, candidates=kept, notes=notes)
