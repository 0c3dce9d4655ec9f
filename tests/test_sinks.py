"""Text from a drawer file reaches every sink harmless: netlist, terminal, spreadsheet.

A drawer cell may hold anything a CSV field can: line breaks, terminal escape
sequences, spreadsheet formulas. Each sink gets its own sanitiser; these tests feed
them hostile cells and check the result with the sink's own reader where there is
one (ngspice runs the netlist).
"""

from __future__ import annotations

import csv
import json
import subprocess

import pytest
from conftest import require_tool

import core.cli
from core.design.search import search
from core.model.timing import make_oscillator
from core.output.netlist import spice_netlist
from core.parts.drawer import read_drawer


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


@pytest.fixture
def hostile_drawer(tmp_path):
    return make_hostile_drawer(tmp_path)


def assert_inert_netlist(text: str) -> None:
    """No card can start inside a drawer string: plain printable ASCII lines only."""
    for line in text.splitlines():  # splits at every break Python knows, LF to U+2029
        assert not line.lstrip().lower().startswith((".control", "shell", ".endc")), line
        assert all(" " <= ch <= "~" for ch in line), repr(line)


def run_ngspice(path) -> subprocess.CompletedProcess:
    return subprocess.run([require_tool("ngspice"), "-b", str(path)], capture_output=True,
                          text=True, timeout=120, check=False, cwd=path.parent)


def test_drawer_text_never_becomes_an_ngspice_command(hostile_drawer, tmp_path):
    drawer_path, marker = hostile_drawer
    parts = read_drawer(drawer_path).parts()
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    cand = search(parts, osc, 700.0).candidates[0]
    text = spice_netlist(osc, cand)
    assert "A1" in text  # the location is still there, as a comment
    assert_inert_netlist(text)
    cir = tmp_path / "design.cir"
    cir.write_text(text, encoding="ascii")
    run = run_ngspice(cir)
    assert run.returncode == 0, run.stderr
    assert "period_s" in run.stdout
    assert not marker.exists()


def _tickbin(capsys, *argv: str) -> tuple[int, str, str]:
    try:
        code = core.cli.main(list(argv))
    except SystemExit as e:
        code = int(e.code or 0)
    out, err = capsys.readouterr()
    return code, out, err


def test_netlist_simulate_runs_no_drawer_text(hostile_drawer, tmp_path, capsys):
    require_tool("ngspice")
    drawer_path, marker = hostile_drawer
    cir = tmp_path / "out.cir"
    code, out, err = _tickbin(capsys, "netlist", "--stock", str(drawer_path), "--target",
                              "700Hz", "--out", str(cir), "--simulate", "--json")
    assert code == 0, err
    assert json.loads(out)["simulated"]["frequency_hz"] > 0
    assert_inert_netlist(cir.read_text(encoding="ascii"))
    assert not marker.exists()
    run = run_ngspice(cir)  # the README's way: ngspice -b on the exported file
    assert run.returncode == 0, run.stderr
    assert not marker.exists()
