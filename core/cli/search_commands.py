"""``tickbin search`` and ``tickbin trim``: what the drawer can build, ranked.

Without ``--json`` both print a table with values in engineering notation and
the drawer location (and stock line) of every part used.
"""

from __future__ import annotations

import argparse
from collections import Counter
from collections.abc import Callable
from pathlib import Path
from typing import Any

from core.cli.circuit_options import add_circuit_options, oscillator_from_args
from core.cli.common import add_json_option, emit, value_arg
from core.drawer import Part, read_drawer
from core.errors import InputError
from core.locations import demo_drawer_path
from core.networks import MAX_PARTS, Node
from core.search import Candidate, SearchResult, search
from core.timing import Oscillator
from core.trim import TrimResult, trim
from core.units import format_frequency, parse_band, parse_percent


def register(commands: argparse._SubParsersAction) -> None:
    find = commands.add_parser("search", help="parts from the drawer that reach a target "
                               "frequency")
    _add_stock(find)
    add_circuit_options(find)
    add_goal_options(find, search_required=True)
    _add_sizes(find)
    _add_top(find)
    add_json_option(find)
    find.set_defaults(run=run_search)

    band = commands.add_parser("trim", help="a pot, a fixed resistor and a capacitor that "
                               "cover a band at every tolerance corner")
    _add_stock(band)
    add_circuit_options(band)
    add_goal_options(band, trim_required=True)
    _add_sizes(band)
    _add_top(band)
    add_json_option(band)
    band.set_defaults(run=run_trim)


def add_design_options(parser: argparse.ArgumentParser) -> None:
    """Everything that picks a design, for commands built on one (sheet, netlist).

    The search options with ``--target``, or the trim options with ``--band``.
    """
    _add_stock(parser)
    add_circuit_options(parser)
    add_goal_options(parser)
    _add_sizes(parser)
    _add_top(parser)


def add_goal_options(parser: argparse.ArgumentParser, search_required: bool = False,
                     trim_required: bool = False) -> None:
    """--target, --duty and --accept (search) and/or --band (trim)."""
    if not trim_required:
        parser.add_argument("--target", type=value_arg("frequency"), required=search_required,
                            metavar="FREQ",
                            help="the frequency wanted (1kHz, 38k, or a period such as 2ms)")
        parser.add_argument("--duty", type=_percent("duty cycle", below_100=True),
                            metavar="PCT",
                            help="555 only: share of the period the output is high (default: "
                            "whatever RA and RB give; 50 %% or less uses a steering diode)")
        parser.add_argument("--accept", type=_percent("acceptable error"), default=1.0,
                            metavar="PCT", help="error that counts as a hit (default 1 %%)")
    if not search_required:
        parser.add_argument("--band", type=_band, required=trim_required, metavar="LO..HI",
                            help="the band the pot must cover (400..480, 1k..1.2kHz)")


def _add_stock(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--stock", metavar="FILE",
                        help="drawer CSV file (default: the bundled demo drawer)")


def _add_sizes(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--max-resistors", type=_count, default=2, metavar="N",
                        help=f"most resistors in one network, 1 to {MAX_PARTS} (default 2)")
    parser.add_argument("--max-capacitors", type=_count, default=2, metavar="N",
                        help=f"most capacitors in one network, 1 to {MAX_PARTS} (default 2)")


def _add_top(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--top", type=_positive, default=10, metavar="N",
                        help="how many candidates to list (default 10)")


def _count(text: str) -> int:
    if not (text.strip().isdigit() and 1 <= int(text) <= MAX_PARTS):
        raise argparse.ArgumentTypeError(f"expected a whole number from 1 to {MAX_PARTS}")
    return int(text)


def _positive(text: str) -> int:
    if not (text.strip().isdigit() and int(text) >= 1):
        raise argparse.ArgumentTypeError("expected a whole number of at least 1")
    return int(text)


def _percent(what: str, below_100: bool = False) -> Callable[[str], float]:
    def parse(text: str) -> float:
        try:
            value = parse_percent(text, allow_zero=False, what=what)
        except InputError as e:
            raise argparse.ArgumentTypeError(e.reason) from None
        if below_100 and not value < 100:
            raise argparse.ArgumentTypeError(f"a {what} lies between 0 and 100 %")
        return value

    parse.__name__ = what
    return parse


def _band(text: str) -> tuple[float, float]:
    try:
        return parse_band(text)
    except InputError as e:
        raise argparse.ArgumentTypeError(e.reason) from None


def _stock(args: argparse.Namespace) -> tuple[list[Part], list[str]]:
    """The drawer's parts, and a note when the demo drawer stands in for a missing --stock."""
    if args.stock is None:
        return read_drawer(demo_drawer_path()).parts(), [
            "no --stock given: searched the bundled demo drawer"]
    return read_drawer(Path(args.stock)).parts(), []


def run_search(args: argparse.Namespace) -> int:
    osc = oscillator_from_args(args)
    parts, notes = _stock(args)
    result = search(parts, osc, args.target, duty_pct=args.duty,
                    max_resistors=args.max_resistors, max_capacitors=args.max_capacitors,
                    accept_pct=args.accept, top=args.top)
    data = result.to_json()
    data["notes"] = notes + data["notes"]
    return emit(args, data, lambda d: _search_text(d, result, osc))


def run_trim(args: argparse.Namespace) -> int:
    osc = oscillator_from_args(args)
    parts, notes = _stock(args)
    result = trim(parts, osc, args.band, top=args.top, max_resistors=args.max_resistors,
                  max_capacitors=args.max_capacitors)
    data = result.to_json()
    data["notes"] = notes + data["notes"]
    return emit(args, data, lambda d: _trim_text(d, result, osc))


# ---------------------------------------------------------------- text tables

def where(node: Node) -> str:
    """Drawer locations of a network's parts: ``B1-06 ×2 (line 11), B2-04 (line 35)``."""
    used = Counter((p.location or "no location", p.stock_line) for p in node.parts())
    return ", ".join(f"{loc}{f' ×{n}' if n > 1 else ''} (line {line})"
                     for (loc, line), n in used.items())


def _table(header: list[str], rows: list[list[str]]) -> list[str]:
    widths = [max(len(r[i]) for r in [header, *rows]) for i in range(len(header))]
    return ["  ".join(cell.ljust(w) for cell, w in zip(row, widths, strict=True)).rstrip()
            for row in [header, *rows]]


def _device_line(osc: Oscillator) -> str:
    circuit = "astable" if osc.circuit == "555" else "Schmitt-trigger inverter oscillator"
    return f"{osc.family.name} {circuit} at {osc.device.supply_v:g} V"


def _band_text(band: tuple[float, float]) -> str:
    return f"{format_frequency(band[0])} … {format_frequency(band[1])}"


def _search_text(data: dict[str, Any], result: SearchResult, osc: Oscillator) -> str:
    out = [f"Target {format_frequency(result.target_hz)}: {_device_line(osc)}"]
    roles = ("RA", "RB", "C") if osc.circuit == "555" else ("R", "C")
    rows = []
    for k, c in enumerate(result.candidates, 1):
        rows.append([str(k), format_frequency(c.frequency_hz, 4), _signed_pct(c.error_pct),
                     f"{c.duty_pct:.0f} %", _band_text(c.worst_case_hz), str(c.part_count),
                     *(c.networks[r].describe() for r in roles)])
    if rows:
        out.append("")
        out += _table(["#", "frequency", "error", "duty", "worst case", "parts", *roles], rows)
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
                       f"({_signed_pct(s['error_pct'])})")
    return "\n".join(out)


def _signed_pct(x: float) -> str:
    """``+0.25 %``; an error that rounds to zero shows no sign."""
    text = f"{x:+.2f}"
    return f"{'0.00' if text in ('+0.00', '-0.00') else text} %"


def _candidate_notes(candidates: list[Candidate]) -> list[str]:
    out = []
    for k, c in enumerate(candidates, 1):
        out += [f"  {k:>2}  {n}" for n in c.notes]
    return ["", "notes on the candidates:", *out] if out else []


def _notes(notes: list[str]) -> list[str]:
    return ["", "notes:", *(f"  {n}" for n in notes), ""] if notes else []


def _trim_text(data: dict[str, Any], result: TrimResult, osc: Oscillator) -> str:
    out = [f"Trim {_band_text(result.band_hz)}: {_device_line(osc)}"]
    rows = []
    for k, c in enumerate(result.candidates, 1):
        p = c.networks["P"].parts()[0]
        rows.append([str(k), c.networks["R"].describe(),
                     f"{c.networks['P'].describe()} {p.taper}", c.networks["C"].describe(),
                     _band_text(c.range_hz), _band_text(c.guaranteed_hz),
                     f"{c.rotation_pct[0]:.0f}–{c.rotation_pct[1]:.0f} %",
                     f"{format_frequency(c.resolution_hz_per_pct)}/%", str(c.part_count)])
    if rows:
        out.append("")
        out += _table(["#", "fixed R", "pot", "C", "range (full … zero rotation)",
                       "guaranteed", "rotation", "resolution", "parts"], rows)
        out.append("")
        out.append("where the parts are:")
        for k, c in enumerate(result.candidates, 1):
            out.append(f"  {k:>2}  " + "; ".join(f"{r}: {where(c.networks[r])}"
                                                  for r in ("R", "P", "C")))
    out += _notes(data["notes"])
    return "\n".join(out)
