"""Text from a drawer file reaches every sink harmless: netlist, terminal, spreadsheet.

A drawer cell may hold anything a CSV field can: line breaks, terminal escape
sequences, spreadsheet formulas. Each sink gets its own sanitiser; these tests feed
them hostile cells and check the result with the sink's own reader where there is
one (ngspice runs the netlist).
"""

from __future__ import annotations

import json

import pytest
from support.sinks import assert_inert_netlist, make_hostile_drawer, run_ngspice
from support.tools import require_tool

import core.cli
from core.design.search import search
from core.model.timing import make_oscillator
from core.output.netlist import spice_netlist
from core.parts.drawer import read_drawer


@pytest.fixture
def hostile_drawer(tmp_path):
    return make_hostile_drawer(tmp_path)






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
