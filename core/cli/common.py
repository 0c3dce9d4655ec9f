"""What every sub-command shares: circuit options, value arguments, output."""

from __future__ import annotations

import argparse
import json
import sys
import unicodedata
from collections.abc import Callable
from typing import Any, TypeVar

from core.errors import InputError
from core.units import Quantity, compatible_text, parse_percent, parse_quantity

T = TypeVar("T")


def arg_type(parse: Callable[[str], T], name: str) -> Callable[[str], T]:
    """An argparse ``type`` from a core parser: its InputError becomes a one-line usage error."""

    def convert(text: str) -> T:
        try:
            return parse(text)
        except InputError as e:
            raise argparse.ArgumentTypeError(e.reason) from None

    convert.__name__ = name
    return convert


def value_arg(quantity: Quantity) -> Callable[[str], float]:
    """An argparse ``type`` that parses like the drawer file (``21.7k``, ``1u``, ``5V``)."""
    return arg_type(lambda text: parse_quantity(text, quantity), quantity)


def percent_arg(what: str, *, allow_zero: bool = False, below_100: bool = False,
                up_to_100: bool = False) -> Callable[[str], float]:
    """An argparse ``type`` for a percentage [%] (``1%``, ``0.5``); optionally under 100."""

    def parse(text: str) -> float:
        value = parse_percent(text, allow_zero=allow_zero, what=what)
        if (below_100 and not value < 100) or (up_to_100 and not value <= 100):
            raise InputError(f"a {what} lies between 0 and 100 %", text=text, what=what)
        return value

    return arg_type(parse, what)


def size_arg(text: str) -> tuple[int, int]:
    """An argparse ``type`` for a picture size ``WxH`` in pixels (each 200 to 8000)."""
    width, sep, height = text.strip().lower().partition("x")
    if not (sep and width.isascii() and width.isdigit() and height.isascii()
            and height.isdigit() and 200 <= int(width) <= 8000 and 200 <= int(height) <= 8000):
        raise argparse.ArgumentTypeError("expected WIDTHxHEIGHT in pixels, each 200 to 8000, "
                                         "e.g. 1024x700")
    return int(width), int(height)


def count_arg(low: int = 1, high: int | None = None) -> Callable[[str], int]:
    """An argparse ``type`` for a whole number from ``low`` (to ``high``)."""
    expected = (f"expected a whole number from {low} to {high}" if high is not None
                else f"expected a whole number of at least {low}")

    def parse(text: str) -> int:
        s = compatible_text(text).strip()
        if not (s.isascii() and s.isdigit() and low <= int(s)
                and (high is None or int(s) <= high)):
            raise argparse.ArgumentTypeError(expected)
        return int(s)

    parse.__name__ = "count"
    return parse


def _shown(ch: str) -> str:
    """``ch`` as a terminal may print it: control characters (C0, C1, DEL), line and
    paragraph separators and format characters (bidi overrides) become escapes."""
    if ch.isprintable() or unicodedata.category(ch) == "Zs":
        return ch
    return ch.encode("unicode_escape").decode("ascii")


def one_line(text: str) -> str:
    """``text`` with control characters and line separators (a file name or a drawer cell
    may carry them) shown as escapes, so it stays one line and never drives the terminal."""
    return "".join(map(_shown, text))


def _one_line_strings(data: Any) -> Any:
    """``data`` with every string in it made ``one_line``: a cell's line break cannot
    forge a line of the text output."""
    if isinstance(data, str):
        return one_line(data)
    if isinstance(data, dict):
        return {k: _one_line_strings(v) for k, v in data.items()}
    if isinstance(data, list | tuple):
        return [_one_line_strings(v) for v in data]
    return data


def say_error(message: str) -> None:
    """The contract's one error line on stderr: ``tickbin: message``."""
    print(f"tickbin: {one_line(message)}", file=sys.stderr)


def add_json_option(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--json", action="store_true",
                        help="print exactly one JSON object on stdout")


def emit(args: argparse.Namespace, result: dict[str, Any],
         as_text: Callable[[dict[str, Any]], str]) -> int:
    """Print ``result`` as JSON (``--json``) or as readable text; return the exit status.

    The one way results reach the terminal: whatever a drawer cell or file name holds
    is printed escaped, never as a control sequence.
    """
    if getattr(args, "json", False):
        # JSON escapes C0 controls itself; C1, DEL and U+2028/2029 it leaves raw.
        text = json.dumps(result, ensure_ascii=False, allow_nan=False)
        sys.stdout.write("".join(ch if _shown(ch) == ch else json.dumps(ch)[1:-1]
                                 for ch in text) + "\n")
    else:
        text = as_text(_one_line_strings(result)).rstrip("\n")
        sys.stdout.write("\n".join(map(one_line, text.split("\n"))) + "\n")
    return 0
