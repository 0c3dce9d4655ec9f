"""What to buy: when nothing in the drawer is within accept, the nearest IEC 60063 values
(E12, then E24, then E96) that hit the target together with networks already owned.

Two ways of buying, for every circuit: the capacitor for owned resistors (one
network per resistor role when the circuit has one timing resistor, single
resistors for each enumerated role otherwise, since pairs grow as the square),
and, for a circuit with one timing resistor, that resistor for an owned
capacitor network. A resistor that follows the tuned one (the CMOS astable's
RS) is taken from the drawer by its ratio rule. For a counter the output
stages are tried in turn.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import replace
from typing import Any

import numpy as np

from core.design.inversion import (
    follower_entries,
    frequency_and_duty,
    solve_capacitance,
    tuned_resistance,
)
from core.errors import InputError
from core.model.leakage import capacitor_leakage_a, network_leakage_a
from core.model.spread import worst_case_hz
from core.model.timing import Oscillator
from core.parts.eseries import nearest
from core.parts.network_index import DrawerIndex
from core.units import format_part_value

BUY_SERIES = ("E12", "E24", "E96")
"""IEC 60063 series tried in order when suggesting a part to buy."""
CAPACITOR_SERIES = ("E12", "E24")
"""Capacitors are sold in E6/E12, film and C0G sometimes in E24; an E96 capacitor is
rare, so capacitor suggestions stop at E24 (common practice, no published source)."""
BUY_RANGE = {"R": (1.0, 10e6), "C": (10e-12, 10e-3)}
"""Values one can buy off the shelf [Ω, F] (common practice, no published source)."""
BOUGHT_ELECTROLYTIC_F = 10e-6
"""A capacitor to buy from this value up is taken as an aluminium electrolytic (film and
ceramic parts are rare above it: common practice, no published source)."""
REFERENCE_C_F = 1e-6
"""The capacitance [F] the first guess of a capacitor to buy (and a duty) is worked at."""

Option = tuple[float, int, dict[str, Any]]


def at_stage(osc: Oscillator, divide_by: int) -> Oscillator:
    """The oscillator with its output after a counter dividing by ``divide_by``."""
    return osc if divide_by == osc.divide_by else replace(osc, divide_by=divide_by)


def stage_oscillators(osc: Oscillator, target_hz: float) -> list[Oscillator]:
    """The oscillator at each output ratio its circuit offers whose own frequency
    (``target_hz`` times the ratio) stays within the chip's limit; all ratios when none
    does (the search then says the target is too fast)."""
    ratios = osc.circuit.divide_by
    fits = [n for n in ratios if target_hz * n <= osc.device.f_max_hz] or list(ratios)
    return [at_stage(osc, n) for n in fits]


def suggest(index: DrawerIndex, osc: Oscillator, target_hz: float, accept_pct: float,
            limits: tuple[float, float], max_resistors: int, max_capacitors: int,
            duty_pct: float | None = None, count: int = 3, duty_within: float = 1.0,
            diode: bool = False) -> list[dict[str, Any]]:
    """Parts to buy (nearest IEC 60063 values) that hit the target with parts already owned.

    Tries E12, then E24, then E96 (capacitors: E24 at most) and keeps the first
    series that gives a hit within ``accept_pct`` [%]; with no hit in any, the
    closest proposals of the last round. Each suggestion names what to buy, what
    it pairs with, and its error.
    """
    best: list[dict[str, Any]] = []
    for series in BUY_SERIES:
        c_series = series if series in CAPACITOR_SERIES else CAPACITOR_SERIES[-1]
        options: list[Option] = []
        for stage in stage_oscillators(osc, target_hz):
            buying = _Buying(index, stage, target_hz, limits, max_resistors, diode)
            if not stage.circuit.enumerated:
                options += buying.resistor(max_capacitors, series)
            options += buying.capacitor(c_series, duty_pct, duty_within)
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


class _Buying:
    """One oscillator's ways of buying a part against the drawer's index."""

    def __init__(self, index: DrawerIndex, osc: Oscillator, target_hz: float,
                 limits: tuple[float, float], max_resistors: int, diode: bool) -> None:
        self.index, self.osc, self.target_hz = index, osc, target_hz
        self.limits, self.max_resistors, self.diode = limits, max_resistors, diode

    def _follow(self, owned: dict[str, np.ndarray], values: dict[str, np.ndarray]
                ) -> np.ndarray:
        """Add the follower (if the circuit has one) to ``owned`` and ``values``; the rows
        where the drawer has one."""
        res, follower = self.index.resistors, self.osc.circuit.follower
        r = values[self.osc.circuit.tuned]
        if follower is None:
            return np.ones(r.shape, dtype=bool)
        fe = follower_entries(res, self.osc, np.nan_to_num(r, nan=0.0), self.max_resistors,
                              self.limits)
        owned[follower[0]] = fe
        values[follower[0]] = np.where(fe >= 0, res.values[np.maximum(fe, 0)], np.nan)
        return fe >= 0

    def resistor(self, max_capacitors: int, series: str) -> list[Option]:
        """Buy the tuned resistor for each owned capacitor network."""
        caps, osc = self.index.capacitors, self.osc
        if not len(caps):
            return []
        ce = caps.entries(max_capacitors)
        r = tuned_resistance(osc, self.target_hz, {"C": caps.values[ce]}, self.limits)
        buy = np.clip(nearest(r, series), *BUY_RANGE["R"])
        buy = np.where((buy >= self.limits[0]) & (buy <= self.limits[1]), buy, np.nan)
        owned, values = {"C": ce}, {osc.circuit.tuned: buy, "C": caps.values[ce]}
        ok = self._follow(owned, values)
        f, _ = frequency_and_duty(osc, values, self.diode)
        return self._options("R", np.where(ok, buy, np.nan), owned, values, f, series)

    def capacitor(self, c_series: str, duty_pct: float | None,
                  duty_within: float) -> list[Option]:
        """Buy the capacitor for owned resistors (single ones when several roles are
        enumerated), kept to those within the duty tolerance when a duty is asked."""
        res, osc = self.index.resistors, self.osc
        if not len(res):
            return []
        circuit = osc.circuit
        roles = (*circuit.enumerated, circuit.tuned)
        most = self.max_resistors if len(roles) == 1 else 1
        grid = np.meshgrid(*([res.entries(most, *self.limits)] * len(roles)), indexing="ij")
        owned = {k: g.ravel() for k, g in zip(roles, grid, strict=True)}
        if len(roles) > 1:
            fits = ~res.overused(*owned.values())
            owned = {k: e[fits] for k, e in owned.items()}
        values = {k: res.values[e] for k, e in owned.items()}
        ok = self._follow(owned, values)
        owned = {k: e[ok] for k, e in owned.items()}
        values = {k: v[ok] for k, v in values.items()}
        reference = np.full(len(ok[ok]), REFERENCE_C_F)
        f_ref, duty = frequency_and_duty(osc, {**values, "C": reference}, self.diode)
        if duty_pct is not None:
            keep = np.abs(duty - duty_pct) <= duty_within
            owned = {k: e[keep] for k, e in owned.items()}
            values = {k: v[keep] for k, v in values.items()}
            reference, f_ref = reference[keep], f_ref[keep]
        with np.errstate(invalid="ignore", divide="ignore"):
            c0 = reference * f_ref / self.target_hz  # f ≈ 1/C to start; refined with the model
        c = solve_capacitance(osc, self.target_hz, values, c0, self.diode)
        buy = np.clip(nearest(c, c_series), *BUY_RANGE["C"])
        values["C"] = buy
        f, _ = frequency_and_duty(osc, values, self.diode)
        return self._options("C", buy, owned, values, f, c_series)

    def _options(self, kind: str, buy: np.ndarray, owned: dict[str, np.ndarray],
                 values: dict[str, np.ndarray], f: np.ndarray, series: str) -> list[Option]:
        """The best few (|error|, owned parts, suggestion) of one way of buying.

        ``values`` are every role's values [Ω, F] per option. Options that stop at some
        threshold or leakage corner (nominal part values) are left out.
        """
        index, osc = self.index, self.osc
        error = (f - self.target_hz) / self.target_hz * 100.0
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
                               diode_steered=self.diode, capacitor_leakage_a=leakage)
        role = "C" if kind == "C" else osc.circuit.tuned
        out = []
        for i, networks, runs in zip(rows, nets, np.atleast_1d(low) > 0, strict=True):
            if not runs:
                continue
            option = {
                "buy": {"kind": kind, "role": role, "value": float(buy[i]), "series": series,
                        "text": format_part_value(float(buy[i]), kind)},
                "with": {r: n.to_json() for r, n in networks.items()},
                "with_text": {r: n.describe() for r, n in networks.items()},
                "frequency_hz": float(f[i]),
                "error_pct": float(error[i]),
            }
            if osc.divide_by > 1:
                option["divide_by"] = osc.divide_by
            out.append((abs(float(error[i])), sum(n.part_count for n in networks.values()),
                        option))
        return out
