"""One design shape: what a search and a trim both hand on to the sheet, netlist and window.

A design is part values [Ω, F] and the drawer networks that make them, by
role, with notes for the builder. A trim design also holds a pot (the
network ``P``) in series with the fixed resistor it trims: "fixed R plus pot
at a rotation" is worked out here, once, so the model, the sheet, the netlist
and the plots all see one set of values at any rotation.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from core.parts.networks import Network
from core.units import Tolerance

POT = "P"
"""The role key of a design's pot (the contract's JSON key)."""
LOG_TAPER_BASE = 81.0
"""Base of the log taper law r = (b^x − 1)/(b − 1); b = 81 puts 10 % at mid-rotation."""


def pot_resistance(end_to_end_ohm: Any, rotation_pct: Any, taper: str = "lin") -> np.ndarray:
    """Resistance [Ω] between wiper and the tied end at ``rotation_pct`` [%] (0…100).

    Taper laws (rotation x from 0 to 1, resistance as a share of end-to-end):
    linear r = x; logarithmic ("audio") r = (81^x − 1) / 80, an exponential law
    through 0, 10 % at mid-rotation and 100 %: the usual description of an A
    taper (common practice, no published source).
    """
    x = np.clip(np.asarray(rotation_pct, dtype=float) / 100.0, 0.0, 1.0)
    share = x if taper == "lin" else (LOG_TAPER_BASE ** x - 1.0) / (LOG_TAPER_BASE - 1.0)
    return np.asarray(end_to_end_ohm, dtype=float) * share


def rotation_for_share(share: Any, taper: str = "lin") -> np.ndarray:
    """Rotation [%] that puts ``share`` (0…1) of the end-to-end resistance in circuit."""
    s = np.asarray(share, dtype=float)
    if taper == "lin":
        return 100.0 * s
    return 100.0 * np.log1p(s * (LOG_TAPER_BASE - 1.0)) / math.log(LOG_TAPER_BASE)


def network_tolerance(node: Network) -> Tolerance:
    """A network's value range as a tolerance about its nominal value."""
    lo, hi = node.value_range
    v = node.value
    return Tolerance(max(0.0, 1 - lo / v), max(0.0, hi / v - 1))


class Design:
    """Values and networks by role, notes, and (for a trim design) a pot at a rotation.

    Search's ``Candidate`` and trim's ``TrimCandidate`` are designs; code that
    only builds, draws or simulates one asks these methods, never which kind
    it has. Without a pot every rotation gives the fixed values.
    """

    values: dict[str, float]
    networks: dict[str, Network]
    notes: list[str]
    diode_steered: bool = False
    trimmed: str = ""
    """The role the pot is in series with (one of the circuit's ``trimmable``)."""
    divide_by: int = 1
    """A counter's ratio after the oscillator (the divider's stage; 1: none)."""
    divide_by: int = 1
    """A counter's ratio after the oscillator (the divider's chosen stage; 1: none)."""

    @property
    def part_count(self) -> int:
        """Parts over all the networks (the ranking's "fewest parts")."""
        return sum(n.part_count for n in self.networks.values())

    @property
    def has_pot(self) -> bool:
        return POT in self.networks

    @property
    def taper(self) -> str:
        """The pot's taper, ``lin`` or ``log``."""
        return self.networks[POT].parts()[0].taper

    def pot_share(self, rotation_pct: float) -> float:
        """The pot's resistance in circuit [Ω] at ``rotation_pct`` [%] (0 without a pot)."""
        if not self.has_pot:
            return 0.0
        return float(pot_resistance(self.networks[POT].value, rotation_pct, self.taper))

    def values_at(self, rotation_pct: float = 0.0) -> dict[str, float]:
        """The circuit's part values [Ω, F] with the pot folded into the role it trims."""
        if not self.has_pot:
            return {k: float(v) for k, v in self.values.items()}
        values = {k: float(n.value) for k, n in self.networks.items() if k != POT}
        values[self.trimmed] += self.pot_share(rotation_pct)
        return values

    def tolerances_at(self, rotation_pct: float = 0.0) -> dict[str, Tolerance]:
        """Each role's spread about ``values_at`` (the trimmed role: fixed part and pot
        both low, both high)."""
        tol = {k: network_tolerance(n) for k, n in self.networks.items() if k != POT}
        if self.has_pot:
            r, p = self.networks[self.trimmed], self.networks[POT]
            (r_lo, r_hi), (p_lo, p_hi) = r.value_range, p.value_range

            def total(fixed: float, pot: float) -> float:
                return fixed + float(pot_resistance(pot, rotation_pct, self.taper))

            nominal = total(r.value, p.value)
            tol[self.trimmed] = Tolerance(1 - total(r_lo, p_lo) / nominal,
                                     total(r_hi, p_hi) / nominal - 1)
        return tol
