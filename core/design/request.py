"""One request: what a person asks core to design, built alike by the window and the command line.

The target form (gui/target_form.py) and the command line's options
(core/cli/circuit_options.py, search_commands.py) each fill a ``Request``; core
resolves it into an oscillator and runs the search (``target_hz``) or the trim
(``band_hz``) it describes. Defaults that depend on each other are settled
here once: the family's circuit, the circuit's default family, and a saved
calibration's family and supply. The engines are imported on first use: the
window builds requests before its first paint, when numpy is not loaded yet.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

from core.errors import InputError, TickbinError

if TYPE_CHECKING:
    from core.design.search import SearchResult
    from core.design.trim import TrimResult
    from core.model.circuits.base import Oscillator
    from core.model.drift import Conditions
    from core.parts.network_index import DrawerIndex
    from core.parts.part import Part

DEFAULT_SUPPLY_V = 5.0
"""The supply [V] when neither the person nor a calibration names one."""


@dataclass(frozen=True)
class Request:
    """A design request in SI units (Hz, V, %, F, Ω).

    ``circuit``/``family``/``supply_v`` None: settled as the command line
    documents (the family's circuit, the circuit's default family, the
    calibration's family and supply, else DEFAULT_SUPPLY_V). A ``band_hz``
    asks for a trim design, else ``target_hz`` for a search; ``dielectrics``
    (lower-case drawer names) restricts the capacitors, None allows any;
    ``stray_capacitance_f`` None is the model's breadboard default, ``duty_within``
    [percentage points] None the search's. ``conditions`` (temperatures, supplies)
    a trim design must cover its band over; None: as built. ``pins``: stock lines (the
    drawer file's line numbers, header = 1, as candidates report them) whose part every
    candidate uses, each on its own in its role; the rest is searched around them.
    """

    circuit: str | None = None
    family: str | None = None
    supply_v: float | None = None
    target_hz: float | None = None
    band_hz: tuple[float, float] | None = None
    duty_pct: float | None = None
    duty_within: float | None = None
    accept_pct: float = 1.0
    max_resistors: int = 2
    max_capacitors: int = 2
    top: int = 10
    calibration: str | None = None
    vt_plus_v: float | None = None
    vt_minus_v: float | None = None
    stray_capacitance_f: float | None = None
    load_ohm: float | None = None
    dielectrics: frozenset[str] | None = None
    conditions: Conditions | None = None
    pins: tuple[int, ...] = ()

    @property
    def trim(self) -> bool:
        """A band to cover with a pot rather than a frequency to hit."""
        return self.band_hz is not None

    def oscillator(self) -> Oscillator:
        """The oscillator the request describes (InputError/SetupError if impossible)."""
        from core.model.calibration import load_calibration
        from core.model.circuits import CIRCUITS, DEFAULT_CIRCUIT
        from core.model.devices import device_table
        from core.model.timing import make_oscillator

        family_name, supply, cal = self.family, self.supply_v, None
        if self.calibration is not None:
            cal = load_calibration(self.calibration)
            family_name = family_name or cal.family
            supply = supply if supply is not None else cal.supply_v
        if family_name is None:
            family_name = (CIRCUITS[self.circuit] if self.circuit else
                           DEFAULT_CIRCUIT).default_family
        family = device_table().family(family_name)
        stray = {} if self.stray_capacitance_f is None else {
            "stray_capacitance_f": self.stray_capacitance_f}
        osc = make_oscillator(self.circuit or family.circuit, family,
                              DEFAULT_SUPPLY_V if supply is None else supply,
                              vt_plus=self.vt_plus_v, vt_minus=self.vt_minus_v,
                              calibration=cal, load_ohm=self.load_ohm, **stray)
        # A duty target on a search is the Schmitt inverter's diode-steered wiring (RH, RL,
        # C); a trim keeps the plain one, and calibrate's --duty is a measured duty.
        searching = self.target_hz is not None and not self.trim
        return osc.with_steering() if searching and self.duty_pct is not None else osc

    def usable(self, parts: tuple[Part, ...] | list[Part]) -> tuple[Part, ...]:
        """The drawer's parts this request may use (the dielectric filter applied), each
        class-2 ceramic with a rated voltage at the capacitance it has under the DC bias
        of this request's circuit (``core.model.drift.with_dc_bias``). A circuit whose
        timing capacitor's voltage reverses (``Circuit.reversing_c``) never gets a
        polarised one: it would be reverse-biased half of every cycle."""
        from core.model.drift import with_dc_bias
        from core.parts.part import with_dielectrics

        kept = with_dielectrics(parts, self.dielectrics)
        if not any(p.kind == "C" and (p.polarised or p.voltage is not None) for p in kept):
            return tuple(kept)  # nothing depends on the circuit: no oscillator to build
        try:
            osc = self.oscillator()
        except TickbinError:
            return tuple(kept)  # running the request reports why
        if osc.circuit.reversing_c:
            kept = [p for p in kept if not (p.kind == "C" and p.polarised)]
        if not any(p.kind == "C" and p.voltage is not None for p in kept):
            return tuple(kept)
        return tuple(with_dc_bias(kept, osc))

    def run(self, parts: tuple[Part, ...] | list[Part], osc: Oscillator,
            index: DrawerIndex | None = None, top: int | None = None
            ) -> SearchResult | TrimResult:
        """The trim or search this request asks for, over the usable ``parts``."""
        from core.design.search import search
        from core.design.trim import trim
        from core.model.drift import capacitor_notes

        usable, top = list(self.usable(parts)), self.top if top is None else top
        if self.pins:
            wired = osc.with_steering() if self.duty_pct is not None and not self.trim else osc
            usable, index = self.pinned(parts, usable, wired, index)
        result: SearchResult | TrimResult
        if self.band_hz is not None:
            result = trim(usable, osc, self.band_hz, top=top, max_resistors=self.max_resistors,
                          max_capacitors=self.max_capacitors, index=index,
                          conditions=self.conditions, duty_pct=self.duty_pct,
                          **({} if self.duty_within is None else
                             {"duty_within": self.duty_within}))
        elif self.target_hz is None:
            raise InputError("a request needs a target frequency or a band")
        else:
            within = {} if self.duty_within is None else {"duty_within": self.duty_within}
            result = search(usable, osc, self.target_hz, duty_pct=self.duty_pct,
                            max_resistors=self.max_resistors,
                            max_capacitors=self.max_capacitors, accept_pct=self.accept_pct,
                            top=top, index=index, **within)
            if self.pins:
                result = _buying_around_pins(result, {p.kind for p in usable
                                                      if p.stock_line in self.pins})
        for cand in result.candidates:
            cand.notes.extend(capacitor_notes(osc, (p for n in cand.networks.values()
                                                    for p in n.parts())))
        return result

    def pinned(self, parts: tuple[Part, ...] | list[Part], usable: list[Part],
               osc: Oscillator, index: DrawerIndex | None
               ) -> tuple[list[Part], DrawerIndex | None]:
        """``usable`` with each pinned part (one of it) the only part of its kind, and
        ``index`` with those kinds' networks rebuilt from it; InputError naming the line
        when it holds no usable part or ``osc``'s circuit has no single place for it."""
        from core.parts.index_build import drawer_index
        from core.parts.network_index import DrawerIndex
        from core.units import format_resistance

        circuit, device = osc.circuit, osc.device

        chosen: dict[str, Part] = {}
        for line in self.pins:
            part = _pinned_part(line, parts, usable)
            word = _KIND_WORDS[part.kind]
            roles = [r.key for r in circuit.roles if r.kind == part.kind]
            if part.kind == "P":
                roles = ["P"] if self.trim else []
            if len(roles) != 1 or part.kind in chosen:
                where = (f"the {circuit.title} has no place for a {word} here" if not roles
                         else f"the {circuit.title} has {len(roles)} {word} places "
                         f"({', '.join(roles)}): pin a part of another kind" if len(roles) > 1
                         else f"another line is pinned as its {word} already")
                raise InputError(f"line {line} cannot be pinned: {where}", text=str(line),
                                 what="--pin")
            if (part.kind == "R" and not self.trim  # a trim's fixed R has a pot beside it
                    and not device.r_min_ohm <= part.value <= device.r_max_ohm):
                raise InputError(
                    f"line {line} cannot be pinned: {format_resistance(part.value)} is outside "
                    f"the {format_resistance(device.r_min_ohm)} … "
                    f"{format_resistance(device.r_max_ohm)} a timing resistor of the "
                    f"{device.family.name} may have", text=str(line), what="--pin")
            chosen[part.kind] = replace(part, quantity=1)
        kept = [p for p in usable if p.kind not in chosen] + list(chosen.values())
        if index is None:
            return kept, None
        own = drawer_index(chosen.values(), self.max_resistors, self.max_capacitors)
        return kept, DrawerIndex(own.resistors if "R" in chosen else index.resistors,
                                 own.capacitors if "C" in chosen else index.capacitors,
                                 own.pots if "P" in chosen else index.pots)


_KIND_WORDS = {"R": "resistor", "C": "capacitor", "P": "pot"}


def _buying_around_pins(result: SearchResult, kinds: set[str]) -> SearchResult:
    """What to buy without replacing a pinned part: suggestions buying a part of a pinned
    kind are dropped, and the note names the best one left."""
    from core.design.search import buy_note

    kept = [s for s in result.suggestions if s["buy"]["kind"] not in kinds]
    if kept == result.suggestions:
        return result
    notes = [n for n in result.notes if n != buy_note(result.suggestions[0])]
    return replace(result, notes=[*notes, buy_note(kept[0])] if kept else notes,
                   suggestions=kept)


def _pinned_part(line: int, parts: tuple[Part, ...] | list[Part], usable: list[Part]) -> Part:
    """The usable part on stock ``line``; InputError saying why there is none."""
    found = next((p for p in usable if p.stock_line == line), None)
    if found is not None and found.quantity > 0:
        return found
    listed = next((p for p in parts if p.stock_line == line), None)
    why = (f"line {line} holds no usable part (the header is line 1; a line with a bad "
           "cell is no part)" if listed is None else
           f"line {line} has none in stock" if listed.quantity <= 0 else
           f"line {line}'s capacitor is not among the dielectrics asked")
    raise InputError(why, text=str(line), what="--pin")
