"""Last line of defence in the window: log an unexpected error, tell the person, carry on.

An exception escaping a Qt slot would otherwise print a traceback to a console
the person never sees. The hook writes it to ``<data folder>/error.log`` and
shows one calm message; the window and every unsaved edit stay as they were.
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from types import TracebackType

from core.storage.locations import append_error_log

Notify = Callable[[str], None]


def install(notify: Notify) -> None:
    """Route uncaught exceptions to the log and ``notify(message)``; never exit."""

    def hook(kind: type[BaseException], error: BaseException, tb: TracebackType | None) -> None:
        if issubclass(kind, KeyboardInterrupt):
            sys.__excepthook__(kind, error, tb)
            return
        where = append_error_log(error.with_traceback(tb))
        notify(f"Something went wrong inside Tickbin: {kind.__name__}: {error}\n\n"
               f"Your drawer and edits are untouched ({where}).")

    sys.excepthook = hook
