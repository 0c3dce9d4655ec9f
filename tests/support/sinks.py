"""A hostile drawer (line breaks, terminal escapes, ngspice commands in its cells) and the
checks that a netlist built from it stays inert."""

from __future__ import annotations

import csv
import subprocess

from support.tools import require_tool


def hostile_location(marker: str) -> str:
    """A location cell that, copied raw into a netlist, makes ngspice run ``touch marker``.

    ngspice runs a ``.control`` block in batch mode and its ``shell`` command runs a
    program (ngspice User's Manual, §16.4 "Interactive interpreter", commands shell and
    .control). Each kind of line break a reader might honour is tried: LF, CR, CR LF,
    VT, FF, the file separators, NEL, LINE and PARAGRAPH SEPARATOR.
    """
    breaks = ["\n", "\r", "\r\n", "\x0b", "\x0c", "\x1c", "\x85", "\u2028", "\u2029"]
    return "A1" + "".join(f"{b}.control{b}shell touch {marker}{b}.endc{b}" for b in breaks)


def write_drawer_rows(path, rows: list[list[str]]) -> None:
    with open(path, "w", encoding="utf-8", newline="") as f:
        csv.writer(f).writerows([["kind", "value", "quantity", "location", "note"], *rows])


def make_hostile_drawer(tmp_path) -> tuple:
    """(drawer file, marker file): the only resistor sits at the hostile location, so
    every design uses it; the marker appears if ngspice ever runs the location."""
    marker = tmp_path / "x"
    path = tmp_path / "drawer.csv"
    write_drawer_rows(path, [["R", "10k", "10", hostile_location(str(marker)),
                              "\x1b]0;owned\x07"],
                             ["C", "100n", "5", "B2\x1b[2J\x9b31m", ""]])
    return path, marker


def assert_inert_netlist(text: str) -> None:
    """No card can start inside a drawer string: plain printable ASCII lines only."""
    for line in text.splitlines():  # splits at every break Python knows, LF to U+2029
        assert not line.lstrip().lower().startswith((".control", "shell", ".endc")), line
        assert all(" " <= ch <= "~" for ch in line), repr(line)


def run_ngspice(path) -> subprocess.CompletedProcess:
    return subprocess.run([require_tool("ngspice"), "-b", str(path)], capture_output=True,
                          text=True, timeout=120, check=False, cwd=path.parent)
