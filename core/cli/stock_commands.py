"""``tickbin stock check FILE``: read a drawer file and report what is in it."""

from __future__ import annotations

import argparse
import sys
from collections import Counter
from typing import Any

from core.cli.common import add_json_option, emit, one_line
from core.errors import DrawerFileError
from core.parts.drawer import Drawer
from core.parts.drawer_file import read_drawer
from core.parts.part import Part
from core.units import format_part_value

_KIND_NAMES = {"R": "resistors", "P": "potentiometers", "C": "capacitors"}


def register(commands: argparse._SubParsersAction) -> None:
    stock = commands.add_parser("stock", help="work with a drawer file")
    actions = stock.add_subparsers(dest="stock_action", metavar="ACTION", required=True)
    check = actions.add_parser("check", help="read a drawer file and report problems")
    check.add_argument("file", help="drawer CSV file")
    add_json_option(check)
    check.set_defaults(run=run_check)


def stock_warnings(drawer: Drawer) -> list[str]:
    """What a careful person would want to know about a readable drawer."""
    warnings = []
    bins: dict[tuple[str, float], set[str]] = {}
    for part in drawer.parts():
        bins.setdefault((part.kind, part.value), set()).add(part.location or "(no location)")
        if part.quantity == 0:
            warnings.append(f"line {part.stock_line}: quantity 0 ({_describe(part)}); "
                            "it will not be used")
    for (kind, value), locations in bins.items():
        if len(locations) > 1:
            warnings.append(f"{format_part_value(value, kind)} "
                            f"{_KIND_NAMES[kind][:-1]} in several bins: "
                            f"{', '.join(sorted(locations))}")
    return warnings


def _describe(part: Part) -> str:
    return f"{format_part_value(part.value, part.kind)} in {part.location or '?'}"


def run_check(args: argparse.Namespace) -> int:
    try:
        drawer = read_drawer(args.file)
    except DrawerFileError as e:
        # The drawer issue asks for every bad line on stderr as FILE:LINE: reason (it is
        # newer than the design's one-line rule and says so for this command); --json
        # also gives the list as one object on stdout.
        if args.json:
            emit(args, {"file": str(args.file), "problems": [
                {"file": p.path, "line": p.line, "reason": p.reason} for p in e.problems]},
                 str)
        for problem in e.problems:
            print(one_line(str(problem)), file=sys.stderr)
        return 2
    parts = drawer.parts()
    lines = Counter(p.kind for p in parts)
    pieces = Counter()
    for p in parts:
        pieces[p.kind] += p.quantity
    result = {
        "file": str(args.file),
        "lines": len(parts),
        "counts": {_KIND_NAMES[k]: {"lines": lines[k], "parts": pieces[k]} for k in "RPC"},
        "warnings": stock_warnings(drawer),
    }
    return emit(args, result, _as_text)


def _as_text(result: dict[str, Any]) -> str:
    out = [f"{result['file']}: {result['lines']} stock lines"]
    for name, c in result["counts"].items():
        out.append(f"  {name:<15} {c['lines']:>4} lines {c['parts']:>6} parts")
    if result["warnings"]:
        out.append("warnings:")
        out.extend(f"  {w}" for w in result["warnings"])
    return "\n".join(out)
