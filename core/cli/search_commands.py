"""``tickbin search`` and ``tickbin trim``: what the drawer can build, ranked.

Without ``--json`` both print a table with values in engineering notation and
the drawer location (and stock line) of every part used.
"""

from __future__ import annotations

import argparse
from collections import Counter
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from core.cli.circuit_options import add_circuit_options, request_from_args
from core.cli.common import (
    add_json_option,
    arg_type,
    count_arg,
    emit,
    one_line,
    percent_arg,
    value_arg,
)
from core.cli.drift_options import add_drift_options
from core.design.design import Design
from core.design.robust import robust_search
from core.design.search import DUTY_WITHIN_POINTS, Candidate, SearchResult
from core.design.trim import TrimCandidate, TrimResult
from core.model.circuits.divider import tap
from core.model.timing import Oscillator
from core.parts.drawer import Drawer
from core.parts.drawer_file import read_drawer
from core.parts.networks import MAX_PARTS, Network
from core.parts.notation import NOTATION
from core.parts.part import Part, dielectric_note, parse_dielectrics
from core.storage.locations import demo_drawer_path
from core.units import format_frequency, format_signed_pct, parse_band


def register(commands: argparse._SubParsersAction) -> None:
    for name, text, goal, run in (
            ("search", "parts from the drawer that reach a target frequency",
             {"search_required": True}, run_search),
            ("trim", "a pot, a fixed resistor and a capacitor that cover a band at every "
             "tolerance corner", {"trim_required": True}, run_trim)):
        parser = commands.add_parser(name, help=text)
        add_design_options(parser, **goal)
        add_json_option(parser)
        parser.set_defaults(run=run)


def add_design_options(parser: argparse.ArgumentParser, search_required: bool = False,
                       trim_required: bool = False) -> None:
    """Everything that picks a design: --stock, the circuit, the goal, network sizes, --top.

    The goal is the search options with ``--target`` and/or the trim options with
    ``--band`` (both for commands built on either design: sheet, netlist).
    """
    parser.add_argument("--stock", metavar="FILE",
                        help="drawer CSV file (default: the bundled demo drawer)")
    add_circuit_options(parser)
    if not trim_required:
        parser.add_argument("--target", type=value_arg("frequency"), required=search_required,
                            metavar="FREQ",
                            help="the frequency wanted (1kHz, 38k, or a period such as 2ms)")
        parser.add_argument("--accept", type=percent_arg("acceptable error"), default=1.0,
                            metavar="PCT", help="error that counts as a hit (default 1 %%)")
    parser.add_argument("--duty", type=percent_arg("duty cycle", below_100=True),
                        metavar="PCT",
                        help="555 or Schmitt (search; the 555 also on trim): share of the "
                        "period the output is high (default: whatever the parts give; on the "
                        "555 50 %% or less uses a steering diode across RB, on the Schmitt "
                        "inverter two steering diodes set RH and RL)")
    parser.add_argument("--duty-within", type=percent_arg("duty tolerance", up_to_100=True),
                        default=DUTY_WITHIN_POINTS, metavar="POINTS",
                        help="with --duty: duty error in percentage points that counts "
                        f"as a hit (default {DUTY_WITHIN_POINTS:g}; trim: at the band's "
                        "centre)")
    if not search_required:
        parser.add_argument("--band", type=arg_type(parse_band, "band"), required=trim_required,
                            metavar="LO..HI",
                            help="the band the pot must cover (400..480, 1k..1.2kHz)")
    parser.add_argument("--max-resistors", type=count_arg(1, MAX_PARTS), default=2,
                        metavar="N",
                        help=f"most resistors in one network, 1 to {MAX_PARTS} (default 2)")
    parser.add_argument("--max-capacitors", type=count_arg(1, MAX_PARTS), default=2,
                        metavar="N",
                        help=f"most capacitors in one network, 1 to {MAX_PARTS} (default 2)")
    parser.add_argument("--top", type=count_arg(), default=10, metavar="N",
                        help="how many candidates to list (default 10)")
    parser.add_argument("--pin", type=count_arg(2), action="append", metavar="LINE",
                        help="use the part on this drawer line (as candidates report it; "
                        "the header is line 1) in every candidate, on its own in its place, "
                        "and search the rest around it; repeatable, one part per kind")
    parser.add_argument("--dielectric", type=arg_type(parse_dielectrics, "dielectric"),
                        metavar="LIST",
                        help="only capacitors of these dielectrics, e.g. film,c0g (C0G, NP0, "
                        "film, X7R, X5R, Y5V, Z5U, tantalum, electrolytic; default: any)")
    add_drift_options(parser)


def read_stock(args: argparse.Namespace) -> tuple[Drawer, list[str]]:
    """The drawer ``--stock`` names, or the bundled demo drawer and a note saying so."""
    if args.stock is None:
        return read_drawer(demo_drawer_path()), ["no --stock given: used the bundled demo "
                                                 "drawer"]
    return read_drawer(Path(args.stock)), []


def find_designs(args: argparse.Namespace, osc: Oscillator, parts: list[Part],
                 top: int) -> SearchResult | TrimResult:
    """The trim (``--band``) or search (``--target``) the options describe."""
    request = request_from_args(args)
    result = request.run(parts, osc, top=top)
    if isinstance(result, SearchResult) and request.conditions:
        result = robust_search(osc, result, request.conditions)
    if args.dielectric is not None:
        result.notes.insert(0, dielectric_note(args.dielectric))
    return result


def run_search(args: argparse.Namespace) -> int:
    return _run_design(args, _search_text)


def run_trim(args: argparse.Namespace) -> int:
    return _run_design(args, _trim_text)


def _run_design(args: argparse.Namespace, as_text: Callable[..., str]) -> int:
    osc = request_from_args(args).oscillator()
    drawer, notes = read_stock(args)
    result = find_designs(args, osc, drawer.parts(), args.top)
    data = result.to_json()
    data["notes"] = notes + data["notes"]
    for cand, shown in zip(result.candidates, data["candidates"], strict=True):
        marked_values(cand, shown)
    return emit(args, data, lambda d: as_text(d, result, osc))


def marked_values(design: Design, data: dict[str, Any]) -> dict[str, Any]:
    """A design's JSON with ``values`` as printed on the parts (what its NODEs give) and,
    where a class-2 capacitor's DC bias makes the circuit see less, ``effective_values``
    (the values the frequency and worst case were worked out with)."""
    effective = {r: n.value for r, n in design.networks.items() if n.label_value != n.value}
    if effective:
        data["values"].update({r: design.networks[r].label_value for r in effective})
        data["effective_values"] = effective
    return data


# ---------------------------------------------------------------- text tables

def where(node: Network) -> str:
    """Drawer locations of a network's parts: ``B1-06 ×2 (line 11), B2-04 (line 35)``."""
    used = Counter((one_line(p.location) or "no location", p.stock_line) for p in node.parts())
    return ", ".join(f"{loc}{f' ×{n}' if n > 1 else ''} (line {line})"
                     for (loc, line), n in used.items())


def _table(header: list[str], rows: list[list[str]]) -> list[str]:
    widths = [max(len(r[i]) for r in [header, *rows]) for i in range(len(header))]
    return ["  ".join(cell.ljust(w) for cell, w in zip(row, widths, strict=True)).rstrip()
            for row in [header, *rows]]


def _device_line(osc: Oscillator) -> str:
    return f"{osc.family.name} {osc.circuit.oscillator} at {osc.device.supply_v:g} V"


def _band_text(band: tuple[float, float]) -> str:
    return f"{format_frequency(band[0])} … {format_frequency(band[1])}"


def _search_text(data: dict[str, Any], result: SearchResult, osc: Oscillator) -> str:
    out = [f"Target {format_frequency(result.target_hz)}: {_device_line(osc)}"]
    roles = osc.circuit.keys
    with_duty = any(c.duty_asked_pct is not None for c in result.candidates)
    with_tap = any(c.divide_by > 1 for c in result.candidates)
    rows = []
    for k, c in enumerate(result.candidates, 1):
        duty = [f"{c.duty_pct:.1f} %"]
        if with_duty:
            duty.append(f"{c.duty_error_pct:+.1f} pt")
        rows.append([str(k), format_frequency(c.frequency_hz, 4), format_signed_pct(c.error_pct),
                     *duty, _band_text(c.worst_case_hz) + (f" {STOPS_MARK}" if c.stops else ""),
                     str(c.part_count), *(c.networks[r].describe() for r in roles),
                     *([f"{tap(c.divide_by)} (÷{c.divide_by}, oscillator "
                        f"{format_frequency(c.oscillator_hz, 4)})"] if with_tap else [])])
    if rows:
        out.append("")
        out += _table(["#", "frequency", "error", "duty", *(["duty_error"] if with_duty else []),
                       "worst case", "parts", *roles, *(["tap"] if with_tap else [])], rows)
        out += _legend(result.candidates)
        if any(c.stops for c in result.candidates):
            out.append(f"{STOPS_MARK}: stops oscillating at some corner (worst case from 0 Hz); "
                       "never a hit, listed after every build that runs at all corners")
        out.append("")
        out.append("where the parts are:")
        for k, c in enumerate(result.candidates, 1):
            out.append(f"  {k:>2}  " + "; ".join(f"{r}: {where(c.networks[r])}" for r in roles))
        out += _candidate_notes(result.candidates)
    out += _notes(data["notes"])
    if result.suggestions:
        out.append("what to buy:")
        for s in result.suggestions:
            owned = ", ".join(f"{r} = {t}" for r, t in s["with_text"].items())
            out.append(f"  {s['buy']['text']} ({s['buy']['series']}) as {s['buy']['role']}, "
                       f"with {owned}: {format_frequency(s['frequency_hz'], 4)} "
                       f"({format_signed_pct(s['error_pct'])})")
    return "\n".join(out)


def _legend(candidates: Sequence[Candidate | TrimCandidate]) -> list[str]:
    """The notation's legend, one line under a table that shows a combined network."""
    combined = any(n.part_count > 1 for c in candidates for n in c.networks.values())
    return [NOTATION] if combined else []


STOPS_MARK = "(stops)"
"""Marks a build whose worst case starts at 0 Hz in the text table."""


def _candidate_notes(candidates: list[Candidate]) -> list[str]:
    out = []
    for k, c in enumerate(candidates, 1):
        out += [f"  {k:>2}  {n}" for n in c.notes]
    return ["", "notes on the candidates:", *out] if out else []


def _notes(notes: list[str]) -> list[str]:
    return ["", "notes:", *(f"  {n}" for n in notes), ""] if notes else []


def _trim_text(data: dict[str, Any], result: TrimResult, osc: Oscillator) -> str:
    out = [f"Trim {_band_text(result.band_hz)}: {_device_line(osc)}"]
    fixed = [r for r in osc.circuit.keys if r != "C"]  # the trimmed role last among them
    trimmed = osc.circuit.tuned
    with_duty = any(c.duty_pct is not None for c in result.candidates)
    with_tap = any(c.divide_by > 1 for c in result.candidates)
    rows = []
    for k, c in enumerate(result.candidates, 1):
        p = c.networks["P"].parts()[0]
        rows.append([str(k), *(c.networks[r].describe() for r in fixed),
                     f"{c.networks['P'].describe()} {p.taper}", c.networks["C"].describe(),
                     _band_text(c.range_hz), _band_text(c.guaranteed_hz),
                     f"{c.rotation_pct[0]:.0f}–{c.rotation_pct[1]:.0f} %",
                     f"{format_frequency(c.resolution_hz_per_pct)}/%",
                     *([f"{c.duty_pct:.1f} %"] if with_duty else []),
                     *([f"{tap(c.divide_by)} (÷{c.divide_by})"] if with_tap else []),
                     str(c.part_count)])
    if rows:
        out.append("")
        out += _table(["#", *(f"fixed {r}" if r == trimmed else r for r in fixed), "pot", "C",
                       "range (full … zero rotation)", "guaranteed", "rotation", "resolution",
                       *(["duty at centre"] if with_duty else []),
                       *(["tap"] if with_tap else []), "parts"], rows)
        out += _legend(result.candidates)
        out.append("")
        out.append("where the parts are:")
        for k, c in enumerate(result.candidates, 1):
            out.append(f"  {k:>2}  " + "; ".join(f"{r}: {where(c.networks[r])}"
                                                  for r in c.networks))
    out += _notes(data["notes"])
    return "\n".join(out)
