"""The build sheet as plain data: everything a person needs at the bench, without the program.

``build_sheet`` gathers it for one chosen candidate (search or trim); the
window and ``tickbin sheet`` hand it to the renderer in gui, which only lays
it out. ``take_parts`` takes the sheet's parts out of the drawer as one undo
step once the circuit is built.
"""

from __future__ import annotations

import datetime as _dt
import re
from collections import Counter
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from core.design.design import Design
from core.design.robust import network_envelope
from core.design.trim import (
    TrimCandidate,
    design_band,
    frequency_at_rotation,
    start_rotation,
)
from core.errors import InputError
from core.model.circuits.divider import tap
from core.model.drift import Conditions, capacitor_notes, supply_hz, temperature_hz
from core.model.spread import monte_carlo
from core.model.timing import Oscillator, predict, waveform
from core.output.drawings import (
    CONTROL_F,
    DECOUPLING_F,
    DRAWINGS,
    STEERING_DIODE,
    value_text,
)
from core.output.schematic import Schematic
from core.parts.drawer import Drawer
from core.parts.networks import Network
from core.parts.notation import NOTATION
from core.parts.part import Part
from core.units import (
    format_capacitance,
    format_part_value,
    format_quantity,
    format_resistance,
    format_signed_pct,
    parse_voltage,
)

BULK_DECOUPLING_F = 10e-6
"""Beside the 100 nF at a bipolar 555, which draws a current spike at each output edge
(common practice, no published source: 10 µF; the device table's pin notes ask for it)."""
MONTE_CARLO_DRAWS = 10_000
TITLE_START = "Build sheet: "
CHECK_ROTATIONS = (0.0, 25.0, 50.0, 75.0, 100.0)
"""Pot rotations [%] whose nominal frequency the trim sheet lists, to find one's place."""


@dataclass(frozen=True)
class PartRow:
    """One line of the parts list, ticked off while building."""

    refs: str
    """Reference designators on the schematic (``R1, R2``)."""
    what: str
    value: str
    tolerance: str
    quantity: int
    location: str
    """Drawer location; empty when the part is not in the drawer."""
    line: int | None
    """Stock line in the drawer file, or None for parts the drawer does not hold."""
    note: str = ""


@dataclass(frozen=True)
class PinRow:
    pin: str
    function: str
    connect: str


@dataclass(frozen=True)
class Waveform:
    """The timing node's voltage and the output over a few periods (s, V), with the
    thresholds (V) and the legend to print under the plot."""

    t_s: np.ndarray
    v_cap_v: np.ndarray
    v_out_v: np.ndarray
    upper_v: float
    lower_v: float
    supply_v: float
    legend: str = ("black: timing capacitor voltage · grey: output · dashed: switching "
                   "thresholds")


@dataclass(frozen=True)
class Sheet:
    """Everything printed on a build sheet, as text and numbers (no layout)."""

    title: str
    date: str
    summary: list[tuple[str, str]]
    """Target, circuit, family, supply, package: (label, text)."""
    schematic: Schematic
    package: str
    pins: list[PinRow]
    parts: list[PartRow]
    predictions: list[tuple[str, str]]
    frequency_hz: float
    """The predicted frequency (at the starting rotation for a trim design), Hz."""
    worst_case_hz: tuple[float, float]
    """Lowest and highest frequency over every tolerance and threshold corner [Hz]."""
    interval_95_hz: tuple[float, float]
    """Where the central 95 % of Monte Carlo builds land [Hz]."""
    waveform: Waveform
    adjustment: list[str]
    build_notes: list[str]
    warnings: list[str]
    cautions: list[str]
    take: tuple[Part, ...] = field(default=())
    """Drawer parts used by the sheet, repeated as often as used (see take_parts)."""

    def file_stem(self) -> str:
        """A file name for the sheet without a suffix: ``tickbin-sheet-1.00-khz-1-schmitt-
        oscillator`` (letters, digits, dots and hyphens only, so it is valid on every
        file system; a colon, for one, is not)."""
        words = re.findall(r"[a-z0-9.]+", self.title.removeprefix(TITLE_START).lower())
        return "-".join(["tickbin-sheet", *words])

    def to_json(self) -> dict[str, Any]:
        """The sheet's facts for ``--json`` output (no drawing data)."""
        return {
            "title": self.title,
            "date": self.date,
            "frequency_hz": self.frequency_hz,
            "worst_case_hz": list(self.worst_case_hz),
            "interval_95_hz": list(self.interval_95_hz),
            "parts": [{"refs": r.refs, "what": r.what, "value": r.value,
                       "tolerance": r.tolerance, "quantity": r.quantity,
                       "location": r.location, "line": r.line} for r in self.parts],
            "predictions": dict(self.predictions),
            "warnings": list(self.warnings),
        }


def _hz(value: float) -> str:
    return format_quantity(value, "frequency")


def _describe(part: Part) -> str:
    if part.kind == "R":
        return "resistor"
    if part.kind == "P":
        return f"potentiometer, {'log' if part.taper == 'log' else 'linear'}"
    d = part.dielectric
    shown = d.upper() if any(ch.isdigit() for ch in d) else d  # X7R, C0G; film, tantalum
    return f"capacitor, {shown}" if d else "capacitor"


def voltage_ratings(drawer: Drawer) -> dict[int, str]:
    """Stock line -> the text of the drawer's ``voltage`` column, where filled in."""
    out = {}
    for part in drawer.parts():
        text = drawer.rows[part.row].get("voltage").strip()
        if text:
            out[part.stock_line] = text
    return out


def _find_in_stock(stock: Sequence[Part], farads: float, used: Counter[int],
                   polarised: bool = False) -> Part | None:
    """A capacitor of this value with a piece left after the timing parts (non-polarised
    unless ``polarised`` allows an electrolytic)."""
    for part in stock:
        if (part.kind == "C" and (polarised or not part.polarised)
                and abs(part.value / farads - 1) < 0.02
                and part.quantity - used[part.stock_line] > 0):
            return part
    return None


def _support_row(refs: str, what: str, farads: float, stock: Sequence[Part],
                 used: Counter[int], take: list[Part], polarised: bool = False,
                 note: str = "") -> PartRow:
    part = _find_in_stock(stock, farads, used, polarised)
    if part is None:
        return PartRow(refs, what, format_capacitance(farads), "", 1, "", None,
                       "; ".join(x for x in ("not in the drawer", note) if x))
    used[part.stock_line] += 1
    take.append(part)
    if part.polarised:
        note = "; ".join(x for x in ("+ lead to VCC, rated above the supply", note) if x)
    return PartRow(refs, what, format_capacitance(farads), str(part.tolerance), 1, part.location,
                   part.stock_line, note)


def _next_ref(schematic: Schematic, letter: str) -> str:
    """The first reference with ``letter`` that the schematic does not use (C4 after C3)."""
    used = [*(p.ref for p in schematic.placed), *schematic.support.values()]
    numbers = [int(r[len(letter):]) for r in used
               if r.startswith(letter) and r[len(letter):].isdigit()]
    return f"{letter}{max(numbers, default=0) + 1}"


def _parts_list(osc: Oscillator, schematic: Schematic, networks: Mapping[str, Network],
                stock: Sequence[Part], steered: bool) -> tuple[list[PartRow], list[Part]]:
    """Rows in reference order (one per stock line and role) and the drawer parts used."""
    refs: dict[tuple[int, str], list[str]] = {}
    first: dict[tuple[int, str], Part] = {}
    for placed in schematic.placed:
        part: Part = placed.part  # type: ignore[assignment]
        key = (part.stock_line, placed.role)
        refs.setdefault(key, []).append(placed.ref)
        first.setdefault(key, part)
    take = [p for node in networks.values() for p in node.parts()]
    used = Counter(p.stock_line for p in take)
    rows = []
    for key, part in first.items():
        several = len(osc.circuit.resistors) > 1  # name the role among alike resistors
        role = f" ({key[1]})" if several and key[1] != "C" else ""
        note = "; ".join(x for x in ("+ lead to the timing node" if part.polarised else "",
                                     part.note) if x)
        rows.append(PartRow(", ".join(refs[key]), _describe(part) + role,
                            value_text(part), str(part.tolerance), len(refs[key]),
                            part.location or "—", key[0], note))
    family = osc.family
    rows.append(PartRow("U1", family.description, family.name, "", 1, "", None,
                        family.package.name))
    support = schematic.support
    around = [_support_row(support["decoupling"], "decoupling, ceramic", DECOUPLING_F, stock,
                           used, take)]
    if "control" in support:
        around.append(_support_row(support["control"], "control pin, ceramic", CONTROL_F,
                                   stock, used, take))
        pins = family.package.pins
        if "bipolar" in family.description:
            around.append(_support_row(_next_ref(schematic, "C"), "bulk decoupling",
                                       BULK_DECOUPLING_F, stock, used, take, polarised=True,
                                       note=f"VCC ({pins['vcc']}) to GND ({pins['gnd']}) beside "
                                       f"{support['decoupling']}; not drawn"))
    around += [PartRow(ref, "small-signal diode", STEERING_DIODE, "", 1, "", None, note)
               for ref, note in schematic.hookup.items()]
    rows += sorted(around, key=lambda r: (r.refs[0], int(r.refs[1:])))
    return rows, take


def build_sheet(osc: Oscillator, candidate: Design, target: str, *,
                stock: Sequence[Part] = (), ratings: Mapping[int, str] | None = None,
                today: _dt.date | None = None, conditions: Conditions | None = None) -> Sheet:
    """The build sheet for ``candidate`` on ``osc``.

    ``target`` is the person's target as text (``1 kHz``, ``900 Hz … 1.1 kHz``; the duty
    asked comes from the candidate and is stated beside the predicted one);
    ``stock`` the drawer's parts, to find the decoupling capacitors in it;
    ``ratings`` stock line -> voltage rating text (``voltage_ratings``), used
    to check polarised capacitors against the supply; ``conditions`` the
    temperature and supply ranges the build must work over (their drift lines).
    """
    osc.circuit.require_designed("a build sheet")
    trim = candidate.has_pot
    family = osc.family
    package = family.package
    supply = osc.supply_v
    supply_text = format_quantity(supply, "voltage")
    networks: dict[str, Network] = dict(candidate.networks)
    steered = candidate.diode_steered
    schematic = DRAWINGS[osc.circuit.drawing_id](osc, candidate, f"+{supply_text}")
    rows, take = _parts_list(osc, schematic, networks, stock, steered)

    extra = {"diode_steered": True} if steered else {}
    dielectric = _common_dielectric(networks["C"])
    predictions: list[tuple[str, str]] = []
    adjustment: list[str] = []
    if trim:
        start = start_rotation(osc, candidate)
        model_values, model_tol = candidate.values_at(start), candidate.tolerances_at(start)
        frequency = float(frequency_at_rotation(osc, candidate, start))
        prediction = predict(osc, model_values, model_tol, dielectric=dielectric)
        adjustment = _adjustment(osc, candidate, start, frequency, refs_of(schematic, "P"))
        full, zero = candidate.range_hz
        g_lo, g_hi = candidate.guaranteed_hz
        predictions += [
            ("Adjustable range (nominal parts)", f"{_hz(full)} (full rotation) … {_hz(zero)} "
                                                 "(zero rotation)"),
            ("Reached by every build", f"{_hz(g_lo)} … {_hz(g_hi)} (every tolerance and "
                                       "threshold corner)"),
            ("Frequency at the starting position", f"{_hz(frequency)} at {start:.0f} % "
                                                   "rotation"),
            ("Along the travel (nominal)", ", ".join(
                f"{x:.0f} %: {_hz(float(f))}" for x, f in zip(
                    CHECK_ROTATIONS, frequency_at_rotation(osc, candidate,
                                                           np.array(CHECK_ROTATIONS)),
                    strict=True))),
        ]
    else:
        model_values, model_tol = candidate.values_at(), candidate.tolerances_at()
        prediction = predict(osc, model_values, model_tol, dielectric=dielectric, **extra)
        frequency = float(candidate.frequency_hz)
        predictions += [("Predicted frequency", _hz(frequency)),
                        ("Error against target", format_signed_pct(float(candidate.error_pct)))]
    predictions.append(("Period", format_quantity(prediction.period_s, "period")))
    if osc.divide_by > 1:
        predictions.append(("Oscillator (before the counter)",
                            f"{_hz(frequency * osc.divide_by)}, divided by {osc.divide_by} "
                            f"at {tap(osc.divide_by)}"))
    asked = None if trim else candidate.duty_asked_pct
    duty_text = f"{prediction.duty_pct:.1f} %"
    if asked is not None:
        duty_text += f" (asked {asked:g} %, {prediction.duty_pct - asked:+.1f} points)"
    predictions.append(("Duty cycle (output high)", duty_text))
    lo, hi = prediction.worst_case_hz
    where = " at the starting position" if trim else ""
    predictions.append((f"Worst case{where}", f"{_hz(lo)} … {_hz(hi)} (every tolerance "
                                              "and threshold corner)"))
    predictions += _drift_rows(osc, candidate, model_values, conditions or Conditions(),
                               steered)
    mc = monte_carlo(osc, model_values, model_tol, n=MONTE_CARLO_DRAWS, seed=0, **extra)
    m_lo, m_hi = mc.interval_95
    predictions.append((f"95 % of builds{where}", f"{_hz(m_lo)} … {_hz(m_hi)} (Monte Carlo, "
                                                  f"{MONTE_CARLO_DRAWS:,} draws)"))
    wave = _waveform(osc, model_values, steered)

    summary = [
        ("Target", target + ("" if asked is None else f", duty {asked:g} %")),
        ("Circuit", osc.circuit.oscillator + (" (diode-steered)" if steered and not
                                              osc.circuit.always_steered else "")),
        ("Chip", f"{family.name} — {family.description}"),
        ("Supply", f"{supply_text} (range {family.supply_range_v[0]:g}–"
                   f"{family.supply_range_v[1]:g} V)"),
        ("Thresholds", _threshold_text(osc)),
    ]
    combined = [(role, node) for role, node in networks.items() if node.part_count > 1]
    if combined:
        summary += [("Networks", "; ".join(
            f"{role} = {node.describe()} = {format_part_value(node.label_value, node.kind)}"
            for role, node in combined)), ("Notation", NOTATION)]
    # A trim candidate's notes restate its rotations, which the adjustment covers; what
    # its capacitors do (DC bias, ageing) still goes on the sheet.
    notes = capacitor_notes(osc, (p for n in networks.values() for p in n.parts())) if trim \
        else list(candidate.notes)
    warnings = list(dict.fromkeys([*prediction.warnings, *notes]))
    # The title states the duty the build will give, never only the one asked for.
    title = (f"{TITLE_START}{target} "
             f"{osc.circuit.short}"
             f"{' with trimmer' if trim else ''}")
    if asked is not None:
        title += f", duty {prediction.duty_pct:.1f} % (asked {asked:g} %)"
    return Sheet(
        title=title,
        date=(today or _dt.date.today()).isoformat(),
        summary=summary,
        schematic=schematic,
        package=package.name,
        pins=_pin_rows(osc, package),
        parts=rows,
        predictions=predictions,
        frequency_hz=frequency,
        worst_case_hz=(float(lo), float(hi)),
        interval_95_hz=(m_lo, m_hi),
        waveform=wave,
        adjustment=adjustment,
        build_notes=_build_notes(osc, package, networks, trim),
        warnings=warnings,
        cautions=_cautions(osc, take, ratings or {}),
        take=tuple(take),
    )


def _waveform(osc: Oscillator, values: Mapping[str, float], steered: bool) -> Waveform:
    """Three periods of the oscillator at its timing node (before any counter)."""
    t, v_cap, v_out = waveform(osc, values, periods=3, diode_steered=steered)
    node = osc.circuit.timing_node_v(osc, np.asarray(v_cap), np.asarray(v_out))
    legend = Waveform.legend
    if node is not v_cap:
        legend = ("black: timing node (it swings beyond the supply) · grey: output · dashed: "
                  "switching voltage")
    if osc.divide_by > 1:
        legend += (f"; the oscillator before the counter: the output at "
                   f"{tap(osc.divide_by)} is {osc.divide_by} times slower")
    return Waveform(np.asarray(t), node, np.asarray(v_out), osc.vt_plus_v, osc.vt_minus_v,
                    osc.supply_v, legend)


def _drift_rows(osc: Oscillator, candidate: Any,
                model_values: Mapping[str, float], conditions: Conditions, steered: bool
                ) -> list[tuple[str, str]]:
    """The drift lines: nominal parts over the temperature and supply ranges, and the
    worst case (or the trim's guaranteed band) over them (core.model.drift)."""
    if not conditions:
        return []
    rows = []
    if conditions.temperature_c is not None:
        lo_c, hi_c = conditions.temperature_c
        envelopes = {k: network_envelope(k, n) for k, n in candidate.networks.items()}
        lo, hi = temperature_hz(osc, model_values, lo_c, hi_c, envelopes, steered)
        rows.append((f"Nominal parts over {lo_c:g}…{hi_c:g} °C", f"{_hz(lo)} … {_hz(hi)}"))
    if conditions.supply_v is not None:
        lo_v, hi_v = conditions.supply_v
        lo, hi = supply_hz(osc, model_values, lo_v, hi_v, steered)
        rows.append((f"Nominal parts over {lo_v:g}…{hi_v:g} V", f"{_hz(lo)} … {_hz(hi)}"))
    if candidate.has_pot:  # a trim design: the band it guarantees
        lo, hi = candidate.guaranteed_hz
        rows.append((f"Reached by every build over {conditions.describe()}",
                     f"{_hz(lo)} … {_hz(hi)}"))
    else:
        lo, hi = candidate.worst_case_hz
        rows.append((f"Worst case over {conditions.describe()}",
                     f"{_hz(lo)} … {_hz(hi)} (tolerances, thresholds and drift)"))
    return rows


def refs_of(schematic: Schematic, kind: str) -> str:
    """The references of the drawn parts of one kind (``P1``)."""
    return ", ".join(p.ref for p in schematic.placed
                     if p.part.kind == kind)  # type: ignore[attr-defined]


def _common_dielectric(node: Network) -> str:
    """The capacitors' dielectric when they share one (for the model's warnings)."""
    kinds = {p.dielectric for p in node.parts()}
    return kinds.pop() if len(kinds) == 1 else ""


def _adjustment(osc: Oscillator, candidate: TrimCandidate, start: float, f_start: float,
                pot_ref: str) -> list[str]:
    """The bench procedure for a trim design (common practice, no published source)."""
    lo, hi = design_band(osc, candidate)
    rot_high, rot_low = candidate.rotation_pct
    package = osc.family.package
    pot = candidate.networks["P"].parts()[0]
    resolution = _hz(candidate.resolution_hz_per_pct)
    taper = (" It is a log-taper pot: the frequency moves slowly near zero rotation and "
             "quickly near full rotation." if candidate.taper == "log" else "")
    return [
        f"Before fitting {pot_ref} ({format_resistance(pot.value)}), check it with an "
        "ohmmeter between pin 1 and the wiper (pin 2): the reading should rise as you turn "
        "clockwise. If it falls, your part is wired the other way round and every direction "
        "below swaps.",
        f"Set {pot_ref} to about {start:.0f} % of its travel, counted from the pin-1 end "
        "(fully anticlockwise = 0 %; a 25-turn trimmer moves 4 % per turn). A nominal build "
        f"then runs near {_hz(f_start)}, the middle of the band.",
        "Turning clockwise puts more resistance in circuit and lowers the frequency; turning "
        f"anticlockwise raises it. With nominal parts the band's top, {_hz(hi)}, is near "
        f"{rot_high:.0f} % and its bottom, {_hz(lo)}, near {rot_low:.0f} %; your parts' "
        f"tolerances move these points, but every build reaches the whole band.{taper}",
        f"Measure at OUT (pin {package.pins['output']})"
        + (" or at a spare gate driven from it" if package.unused_inputs else "")
        + ", never on the timing capacitor. A frequency counter with 1 s gate time reads to "
        "1 Hz (10 s to 0.1 Hz). On an oscilloscope, trigger on the rising edge, read the "
        "period T between two rising edges (or over ten periods, then divide) and take "
        "f = 1/T.",
        f"Fine-tune: expect about {resolution} per 1 % of rotation near the band centre. "
        "Approach the target from one side in small steps, wait a few seconds after each, "
        "give the circuit a minute to warm up before the last step, and read again after "
        "removing the probe.",
        "When it is set, mark the position, or fix the screw with a dab of paint if the "
        "board will be moved.",
    ]


def _pin_rows(osc: Oscillator, package: Any) -> list[PinRow]:
    rows = [PinRow(str(package.pins[key]), name, connect)
            for key, name, connect in osc.circuit.hookup(osc) if key in package.pins]
    if package.unused_inputs:
        rows.append(PinRow(", ".join(str(p) for p in package.unused_inputs),
                           "unused gate inputs", "GND or VCC (never leave them open)"))
    rows.sort(key=lambda r: int(r.pin.split(",")[0]))
    return rows


def _threshold_text(osc: Oscillator) -> str:
    source = (f"calibration “{osc.calibration}”" if osc.calibration else
              "given; no threshold spread" if osc.thresholds_given else "device table, typical")
    return osc.circuit.threshold_words.format(plus=osc.vt_plus_v, minus=osc.vt_minus_v,
                                              source=source)


def _build_notes(osc: Oscillator, package: Any, networks: Mapping[str, Network],
                 trim: bool) -> list[str]:
    """What an experienced builder would tell a newcomer (common practice, no published source)."""
    notes = [n[:1].upper() + n[1:] for n in package.notes]
    notes += osc.circuit.builder_notes(osc)
    if osc.circuit.measure_note and not trim:  # else the adjustment says where to measure
        notes.append(osc.circuit.measure_note)
    caps = [p for p in networks["C"].parts()]
    if any(p.dielectric in ("x7r", "x5r", "y5v", "z5u") for p in caps):
        notes.append("The timing capacitor is a high-k ceramic (X7R/X5R/Y5V): its value moves "
                     "with temperature and DC voltage. Film or C0G holds the frequency better.")
    if any(p.polarised for p in caps):
        notes.append("An electrolytic timing capacitor leaks and ages; expect the frequency to "
                     "wander more than the tolerance band suggests.")
    return notes


def _cautions(osc: Oscillator, take: Iterable[Part], ratings: Mapping[int, str]
              ) -> list[str]:
    """Safety first (common practice, no published source; mains: local codes apply)."""
    supply = osc.supply_v
    out = [
        f"Power the circuit from a low-voltage, current-limited supply: a bench supply set to "
        f"{format_quantity(supply, 'voltage')} with its current limit at about 50 mA, or a "
        "battery with a fuse. Check the supply polarity before connecting the chip.",
        "Electrolytic and tantalum capacitors are polarised: the + lead goes to the more "
        "positive node (on this sheet, towards the timing node or the supply, never to GND), "
        "and the voltage rating must exceed the supply with margin. Reversed or over-voltage, "
        "they can vent or burst.",
    ]
    if osc.circuit.reversing_c:
        out.append("The timing capacitor's voltage reverses every cycle in this circuit: it "
                   "must be non-polarised (film or C0G). An electrolytic or tantalum there "
                   "is reverse-biased half of the time and can fail.")
    for part in dict.fromkeys(p for p in take if p.polarised):
        text = ratings.get(part.stock_line, "")
        where = f"line {part.stock_line}, {part.location or 'no location'}"
        try:
            rated = parse_voltage(text) if text else None
        except InputError:
            rated = None
        if rated is None:
            out.append(f"{format_capacitance(part.value)} {part.dielectric} ({where}): the "
                       "drawer gives no voltage rating; read it off the can before fitting it.")
        elif rated < 1.5 * supply:
            out.append(f"{format_capacitance(part.value)} {part.dielectric} ({where}) is rated "
                       f"{text}: too close to the {format_quantity(supply, 'voltage')} supply; "
                       "use a higher-rated one.")
        else:
            out.append(f"{format_capacitance(part.value)} {part.dielectric} ({where}) is rated "
                       f"{text}: fine for this supply; mind the polarity.")
    out.append("This sheet does not cover mains-connected designs. For anything connected to "
               "the mains, local codes and licensed practice apply.")
    return out


# ---------------------------------------------------------------- taking the parts

@dataclass(frozen=True)
class Taken:
    """Parts taken from one stock line."""

    line: int
    location: str
    value: str
    count: int
    before: int
    after: int

    def to_json(self) -> dict[str, Any]:
        return {"line": self.line, "location": self.location, "value": self.value,
                "count": self.count, "before": self.before, "after": self.after}


def take_parts(drawer: Drawer, used: Sheet | Design) -> list[Taken]:
    """Lower the drawer's quantities by the parts a build used, as one undo step.

    ``used`` is the build sheet (its timing parts and the decoupling
    capacitors it found in the drawer) or just a candidate (its networks).
    Nothing changes unless every line still holds enough: InputError names
    the line that does not, or that changed since the search. The caller
    saves the drawer (``core.parts.drawer_file.write_drawer``).
    """
    parts = list(used.take) if isinstance(used, Sheet) else [
        p for node in used.networks.values() for p in node.parts()]
    counts = Counter(p.stock_line for p in parts)
    current = {p.stock_line: p for p in drawer.parts()}
    plan: list[tuple[Part, int]] = []
    for line, count in counts.items():
        wanted = next(p for p in parts if p.stock_line == line)
        text = value_text(wanted)
        have = current.get(line)
        if have is None or have.kind != wanted.kind or have.value != wanted.label_value:
            raise InputError(f"stock line {line} no longer holds the {text} the design uses; "
                             "the drawer changed since the search: search again")
        if have.quantity < count:
            raise InputError(f"stock line {line} ({text}, {have.location or 'no location'}) "
                             f"has {have.quantity} left; the build uses {count}")
        plan.append((have, count))
    with drawer.edit_group("Take parts for the build"):
        for have, count in plan:
            drawer.set_cell(have.row, "quantity", str(have.quantity - count))
    return [Taken(p.stock_line, p.location, value_text(p), n, p.quantity,
                  p.quantity - n) for p, n in plan]
