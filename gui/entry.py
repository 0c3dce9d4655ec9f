"""The ``tickbin`` console script: the command line from core, with Qt parts plugged in.

Qt is imported only when the window is opened or a sheet is drawn, so other
command-line runs stay quick.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence

import core.cli


def open_window(args: argparse.Namespace) -> int:
    from gui.platform_check import check_window_platform

    check_window_platform(picture_only=bool(args.screenshot))
    from gui.app import run_window

    return run_window(stock=args.stock, screenshot=args.screenshot, size=args.size)


def render_sheet(*args: object, **kwargs: object) -> int:
    """Draw a build sheet to PDF (gui.sheet_render does the work); returns the page count."""
    from gui.sheet_render import render_sheet_pdf

    return render_sheet_pdf(*args, **kwargs)  # type: ignore[arg-type]


def main(argv: Sequence[str] | None = None) -> None:
    """The console script; ``argv`` (without the program name) defaults to ``sys.argv``."""
    sys.exit(core.cli.main(argv, window=open_window, render_sheet=render_sheet))
