"""Last line of defence in the window: log an unexpected error, tell the person, carry on.

An exception escaping a Qt slot would otherwise print a traceback to a console
the person never sees. The hook writes it to ``<data folder>/error.log`` and
shows one calm message; the window and every unsaved edit stay as they were.
"""

from __future__ import annotations

import sys
import traceback
from collections.abc import Callable
from types import TracebackType

from core.locations import data_dir

Notify = Callable[[str], None]


def log_exception(error: BaseException) -> str:
    """Append the traceback to the error log; return where it went (or why not)."""
    try:
        log = data_dir() / "error.log"
        with log.open("a", encoding="utf-8") as f:
            f.write("".join(traceback.format_exception(error)))
        return str(log)
    except OSError as e:
        return f"(no log written: {e.strerror or e})"


def install(notify: Notify) -> None:
    """Route uncaught exceptions to the log and ``notify(message)``; never exit."""

    def hook(kind: type[BaseException], error: BaseException, tb: TracebackType | None) -> None:
        if issubclass(kind, KeyboardInterrupt):
            sys.__excepthook__(kind, error, tb)
            return
        where = log_exception(error.with_traceback(tb))
        notify(f"Something went wrong inside Tickbin: {kind.__name__}: {error}\n\n"
               f"Your drawer and edits are untouched. Details were written to {where}.")

    sys.excepthook = hook
