"""``tickbin sheet`` and ``tickbin netlist``: one chosen design, on paper or for a simulator.

Both take the search options (``--target``) or the trim options (``--band``)
and ``--pick K`` for the K-th candidate. The PDF is drawn by gui (Qt), which
main() injects as ``args.render_sheet``; core never imports Qt.
"""

from __future__ import annotations

import argparse
import contextlib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from core.cli.circuit_options import oscillator_from_args
from core.cli.common import add_json_option, count_arg, emit, percent_arg
from core.cli.search_commands import (
    add_design_options,
    find_designs,
    marked_values,
    read_stock,
)
from core.design.design import Design
from core.errors import InputError, SetupError, TickbinError
from core.model.circuits.divider import with_divide_by
from core.model.drift import Conditions
from core.model.timing import Oscillator
from core.output.netlist import (
    model_prediction,
    simulate,
    simulation_warnings,
    spice_netlist,
)
from core.output.sheet import build_sheet, take_parts, voltage_ratings
from core.parts.drawer import Drawer
from core.parts.drawer_file import write_drawer
from core.storage.atomic import check_output, drawer_lock, write_text_atomically
from core.storage.locations import demo_drawer_path
from core.units import format_frequency, format_quantity

PAGE_SIZES = ("A4", "Letter")


def register(commands: argparse._SubParsersAction) -> None:
    sheet = commands.add_parser("sheet", help="a build sheet (PDF) for one candidate, to "
                                "print and take to the bench")
    add_design_options(sheet)
    _add_pick(sheet)
    sheet.add_argument("--out", required=True, metavar="FILE.pdf", help="PDF file to write")
    sheet.add_argument("--page-size", type=_page_size, default="A4", metavar="A4|Letter",
                       help="paper size (default A4)")
    sheet.add_argument("--take", action="store_true",
                       help="after writing the sheet, take its parts out of the drawer file "
                       "(lowers the quantities; the previous file is kept as FILE.bak)")
    add_json_option(sheet)
    sheet.set_defaults(run=run_sheet)

    net = commands.add_parser("netlist", help="a SPICE netlist of one candidate, to check "
                              "it in a simulator")
    add_design_options(net)
    _add_pick(net)
    net.add_argument("--out", required=True, metavar="FILE.cir", help="netlist file to write")
    net.add_argument("--rotation", metavar="PCT",
                     type=percent_arg("rotation", allow_zero=True, up_to_100=True),
                     help="trim designs: pot rotation to simulate (default: the middle of "
                     "the band, as on the sheet)")
    net.add_argument("--simulate", action="store_true",
                     help="also run it in ngspice (batch mode) and compare with the model")
    add_json_option(net)
    net.set_defaults(run=run_netlist)


def _add_pick(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--pick", type=count_arg(), default=1, metavar="K",
                        help="use the K-th candidate of the list (default 1, the best)")


def _page_size(text: str) -> str:
    for name in PAGE_SIZES:
        if text.strip().lower() == name.lower():
            return name
    raise argparse.ArgumentTypeError("expected A4 or Letter")


@dataclass
class Picked:
    """The design a command works on, with where it came from."""

    osc: Oscillator
    drawer: Drawer
    candidate: Design
    target: str
    notes: list[str]


def design_from_args(args: argparse.Namespace) -> Picked:
    """Run the search or trim the options describe and pick the ``--pick``-th candidate."""
    if (args.target is None) == (args.band is None):
        raise InputError("give --target FREQ (a fixed design) or --band LO..HI (a trim "
                         "design), not both")
    osc = oscillator_from_args(args)
    drawer, notes = read_stock(args)
    result = find_designs(args, osc, drawer.parts(), max(args.top, args.pick))
    if args.band is not None:
        target = f"{format_frequency(args.band[0])} … {format_frequency(args.band[1])}"
    else:
        target = target_text(args.target)
    notes += result.notes
    found = result.candidates
    if not found:
        raise SetupError(f"no candidate to use: {'; '.join(result.notes)}")
    if args.pick > len(found):
        raise InputError(f"--pick {args.pick}: there {'is' if len(found) == 1 else 'are'} "
                         f"only {len(found)} candidate{'s' if len(found) != 1 else ''}")
    picked = found[args.pick - 1]
    if picked.divide_by > 1:  # the counter stage the search chose for this design
        osc = with_divide_by(osc, picked.divide_by)
    return Picked(osc, drawer, picked, target, notes)


def target_text(hertz: float) -> str:
    """A target as the sheet states it: a slow one as its period too (``2.00 min period,
    0.00833 Hz``), as it was likely asked."""
    if hertz >= 1.0:
        return format_frequency(hertz)
    return f"{format_quantity(1.0 / hertz, 'period')} period, {format_frequency(hertz)}"


def output_path(args: argparse.Namespace) -> Path:
    """``--out`` as a path: an ordinary file (or a new one), never the drawer itself."""
    check_output(args.out, args.stock or demo_drawer_path())
    return Path(args.out)


def run_sheet(args: argparse.Namespace) -> int:
    renderer = getattr(args, "render_sheet", None)
    if renderer is None:
        raise TickbinError("PDF output needs Qt (PySide6), which this installation lacks")
    if args.take and args.stock is None:
        raise InputError("--take needs --stock FILE: the bundled demo drawer is not yours "
                         "to change")
    # --take is a read-modify-write: other runs on the same drawer wait for it, and a
    # change made meanwhile by another program is refused by write_drawer.
    out = output_path(args)
    with drawer_lock(args.stock) if args.take else contextlib.nullcontext():
        design = design_from_args(args)
        drawer = design.drawer
        sheet = build_sheet(design.osc, design.candidate, design.target, stock=drawer.parts(),
                            ratings=voltage_ratings(drawer),
                            conditions=Conditions(args.temperature, args.supply_range))
        pages = renderer(sheet, out, page_size=args.page_size)
        taken = []
        if args.take:
            taken = [t.to_json() for t in take_parts(drawer, sheet)]
            write_drawer(drawer)
    result = {
        "out": str(out),
        "pages": pages,
        "page_size": args.page_size,
        "title": sheet.title,
        "frequency_hz": sheet.frequency_hz,
        "candidate": marked_values(design.candidate, design.candidate.to_json()),
        "parts": sheet.to_json()["parts"],
        "taken": taken,
        "notes": design.notes,
    }
    return emit(args, result, _sheet_text)


def _sheet_text(result: dict[str, Any]) -> str:
    out = [f"wrote {result['out']} ({result['pages']} page{'s' if result['pages'] != 1 else ''}"
           f", {result['page_size']}): {result['title']}",
           f"predicted {format_frequency(result['frequency_hz'])}"]
    for p in result["parts"]:
        where = f"{p['location']} (line {p['line']})" if p["line"] is not None else "—"
        out.append(f"  [ ] {p['refs']:<8} {p['value']:<10} ×{p['quantity']}  {where}")
    for t in result["taken"]:
        out.append(f"took {t['count']} × {t['value']} from {t['location'] or 'line'} "
                   f"(line {t['line']}): {t['before']} → {t['after']} left")
    out += [f"note: {n}" for n in result["notes"]]
    return "\n".join(out)


def run_netlist(args: argparse.Namespace) -> int:
    out = output_path(args)
    design = design_from_args(args)
    if args.rotation is not None and not design.candidate.has_pot:
        raise InputError("--rotation applies to trim designs (--band)")
    text = spice_netlist(design.osc, design.candidate, rotation_pct=args.rotation,
                         title=f"Tickbin design for {design.target}")
    write_text_atomically(out, text, backup=False)
    pred = model_prediction(design.osc, design.candidate, args.rotation)
    model = {"frequency_hz": pred.frequency_hz, "period_s": pred.period_s,
             "duty_pct": pred.duty_pct}
    result: dict[str, Any] = {"out": str(out), "circuit": design.osc.circuit.name,
                              "family": design.osc.family.name, "model": model,
                              "candidate": marked_values(design.candidate,
                                                         design.candidate.to_json()),
                              "notes": design.notes}
    if args.simulate:
        measured = simulate(text)
        result["simulated"] = measured
        result["agreement_pct"] = 100.0 * (measured["period_s"] / pred.period_s - 1.0)
        result["warnings"] = simulation_warnings(result["agreement_pct"])
    return emit(args, result, _netlist_text)


def _netlist_text(result: dict[str, Any]) -> str:
    m = result["model"]
    out = [f"wrote {result['out']}: {result['family']} {result['circuit']}, model "
           f"{format_frequency(m['frequency_hz'])}, duty {m['duty_pct']:.1f} %",
           f"check it: ngspice -b {result['out']}"]
    if "simulated" in result:
        s = result["simulated"]
        out.append(f"ngspice: {format_frequency(s['frequency_hz'])}, duty {s['duty_pct']:.1f} %"
                   f" (period {result['agreement_pct']:+.3f} % against the model)")
    out += [f"warning: {w}" for w in result.get("warnings", [])]
    out += [f"note: {n}" for n in result["notes"]]
    return "\n".join(out)

