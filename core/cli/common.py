"""What every sub-command shares: circuit options, value arguments, output."""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Callable
from typing import Any

from core.errors import InputError
from core.units import Quantity, parse_quantity


def value_arg(quantity: Quantity) -> Callable[[str], float]:
    """An argparse ``type`` that parses like the drawer file (``21.7k``, ``1u``, ``5V``)."""

    def parse(text: str) -> float:
        try:
            return parse_quantity(text, quantity)
        except InputError as e:
            raise argparse.ArgumentTypeError(e.reason) from None

    parse.__name__ = quantity
    return parse


def add_json_option(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--json", action="store_true",
                        help="print exactly one JSON object on stdout")


def emit(args: argparse.Namespace, result: dict[str, Any],
         as_text: Callable[[dict[str, Any]], str]) -> int:
    """Print ``result`` as JSON (``--json``) or as readable text; return the exit status."""
    if getattr(args, "json", False):
        json.dump(result, sys.stdout, ensure_ascii=False, allow_nan=False)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(as_text(result).rstrip("\n") + "\n")
    return 0
