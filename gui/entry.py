"""The ``tickbin`` console script: the command line from core, with the window plugged in.

Qt is imported only when the window is actually opened, so command-line runs
stay quick.
"""

from __future__ import annotations

import argparse
import sys

import core.cli


def open_window(args: argparse.Namespace) -> int:
    from gui.app import run_window

    return run_window(stock=args.stock, screenshot=args.screenshot)


def main() -> None:
    sys.exit(core.cli.main(window=open_window))
