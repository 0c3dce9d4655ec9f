"""One error hierarchy for everything a person can get wrong.

Messages are built from stored fields so the command line and the window can
both say *where* (file, line, column) and *what* without parsing text.
"""

from __future__ import annotations

from dataclasses import dataclass


class TickbinError(Exception):
    """Base of every error Tickbin raises on purpose; never shown as a traceback."""


class InputError(TickbinError, ValueError):
    """Something a person typed or saved cannot be used.

    ``what`` is the field (``"resistance"``, ``"quantity"``), ``text`` what was
    given, ``reason`` what was expected instead.
    """

    def __init__(self, reason: str, *, text: str | None = None, what: str | None = None):
        self.reason = reason
        self.text = text
        self.what = what
        super().__init__(self._message())

    def _message(self) -> str:
        if self.text is None:
            return self.reason
        shown = self.text if len(self.text) <= 40 else self.text[:37] + "..."
        label = f"{self.what} " if self.what else ""
        return f"{label}{shown!r}: {self.reason}"


@dataclass(frozen=True)
class LineProblem:
    """One bad line of a file: printed as ``FILE:LINE: reason``."""

    path: str
    line: int
    reason: str

    def __str__(self) -> str:
        return f"{self.path}:{self.line}: {self.reason}"


class DrawerFileError(TickbinError, ValueError):
    """A drawer file was refused; ``problems`` lists every bad line found."""

    def __init__(self, problems: list[LineProblem]):
        self.problems = list(problems)
        first = self.problems[0] if self.problems else "unreadable drawer file"
        more = len(self.problems) - 1
        suffix = f" (and {more} more bad line{'s' if more > 1 else ''})" if more > 0 else ""
        super().__init__(f"{first}{suffix}")


class SetupError(TickbinError, ValueError):
    """A circuit that cannot work as asked (supply outside range, no oscillation)."""
