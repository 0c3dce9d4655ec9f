"""The ``tickbin`` command line: every result the window can compute, as text or JSON.

Sub-commands live in one module each (``register(commands)`` adds the parser
and a ``run`` function). The window is injected by the launcher in ``gui``,
so ``core`` never imports Qt.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Callable, Sequence

from core import __version__
from core.cli.common import one_line, say_error
from core.errors import TickbinError

WindowLauncher = Callable[[argparse.Namespace], int]
SheetRenderer = Callable[..., int]
"""Draws a ``core.output.sheet.Sheet`` to a PDF file; supplied by gui (Qt does the drawing)."""


class _Parser(argparse.ArgumentParser):
    """argparse that reports a usage error on one line and exits with status 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(2, f"{self.prog}: {one_line(message)} (see {self.prog} --help)\n")


def build_parser() -> argparse.ArgumentParser:
    from core.cli import model_commands, search_commands, sheet_commands, stock_commands
    from core.cli.common import add_json_option, size_arg

    parser = _Parser(prog="tickbin",
                     description="Find the resistors, pots and capacitors in your own drawer "
                     "that make an RC oscillator run at the frequency you need.")
    parser.add_argument("--version", action="version", version=f"tickbin {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for module in (stock_commands, model_commands, search_commands, sheet_commands):
        module.register(commands)
    window = commands.add_parser("gui", help="open the window (the default)")
    window.add_argument("--stock", metavar="FILE", help="drawer file to open")
    window.add_argument("--demo", action="store_true",
                        help="open the bundled demo drawer (a makerspace parts cabinet)")
    window.add_argument("--screenshot", metavar="FILE.png",
                        help="open, run the first search, save a picture and exit")
    window.add_argument("--size", metavar="WxH", type=size_arg,
                        help="with --screenshot: the picture's size in pixels (e.g. 1024x700)")
    add_json_option(window)
    window.set_defaults(run=None)
    return parser


def main(argv: Sequence[str] | None = None, window: WindowLauncher | None = None,
         render_sheet: SheetRenderer | None = None) -> int:
    """Run one command; returns the exit status (0 ok, 2 any error, message on stderr).

    ``window`` and ``render_sheet`` come from gui (see gui/entry.py); commands that
    need them find ``render_sheet`` on ``args``.
    """
    parser = build_parser()
    args = parser.parse_args(argv)
    args.render_sheet = render_sheet
    try:
        if args.command in (None, "gui"):
            return _run_window(args, window)
        return args.run(args)
    except TickbinError as e:
        say_error(str(e))
        return 2
    except BrokenPipeError:  # `tickbin ... | head`: the reader left; not an error of ours
        sys.stderr.close()
        return 0
    except KeyboardInterrupt:
        say_error("interrupted")
        return 2
    except Exception as e:  # last line of defence: no traceback for a person
        return _internal_error(e)


def _run_window(args: argparse.Namespace, window: WindowLauncher | None) -> int:
    """``tickbin`` or ``tickbin gui``; with ``--json``, what was opened (and saved) afterwards."""
    if args.command is None:
        args.stock = args.screenshot = args.size = None
        args.demo = args.json = False
    if args.demo:
        from core.storage.locations import demo_drawer_path

        args.stock = str(demo_drawer_path())
    if args.screenshot is not None and not args.screenshot.strip():
        raise TickbinError("--screenshot needs a file name (FILE.png)")
    if args.size and not args.screenshot:
        raise TickbinError("--size sets the picture's size; give it with --screenshot FILE.png")
    if window is None:
        raise TickbinError("the window is not available in this installation")
    if _no_display():
        if not args.screenshot:
            raise TickbinError("no display to open the window on (DISPLAY is not set); "
                               "every other command works without one (tickbin --help)")
        os.environ["QT_QPA_PLATFORM"] = "offscreen"  # a picture needs no screen
    status = window(args)
    if status == 0 and args.json:
        from core.cli.common import emit

        return emit(args, {"stock": args.stock, "screenshot": args.screenshot}, str)
    return status


def _no_display() -> bool:
    """True on a Linux machine without X11 or Wayland and no Qt platform chosen."""
    return (sys.platform.startswith("linux") and not os.environ.get("QT_QPA_PLATFORM")
            and not os.environ.get("DISPLAY") and not os.environ.get("WAYLAND_DISPLAY"))


def _internal_error(error: Exception) -> int:
    from core.storage.locations import append_error_log

    where = append_error_log(error)
    say_error(f"internal error: {type(error).__name__}: {error} ({where})")
    return 2


if __name__ == "__main__":
    sys.exit(main())
