"""Pinned parts: every candidate uses the pinned part on its own in its place, and the first
candidate is the best of every drawer build that does (plain loops, tests/support)."""

from __future__ import annotations

from collections import Counter

import pytest
from support.brute_force import (
    assert_first_or_empty,
    brute_force_best,
    brute_force_best_555,
)
from support.cli import run_tickbin

from core.design.request import Request
from core.errors import InputError
from core.parts.drawer_file import read_drawer
from core.storage.locations import demo_drawer_path

R_10K, C_22N, C_104, C_10U = 11, 34, 36, 41
"""Lines of the bundled demo drawer (header = line 1): 10k, 22n film, 100n X7R, 10 µF."""


@pytest.fixture(scope="module")
def parts():
    return read_drawer(demo_drawer_path()).parts()


def alone(role: str, line: int):
    """A brute-force build counts when ``role`` is exactly the one part on ``line``."""
    return lambda row: row[role][3] == Counter({line: 1}) and row[role][4] == 1


def uses(network, line: int) -> bool:
    """The network is the one part on ``line`` (DESIGN.md's {"line": N})."""
    return network.part is not None and network.part.stock_line == line


@pytest.mark.parametrize(("target", "role", "line", "most"), [
    (1000.0, "C", C_22N, 2), (1000.0, "C", C_104, 1), (440.0, "R", R_10K, 1),
    (25.0, "C", C_10U, 1)])
def test_schmitt_pin_is_in_every_candidate_and_the_first_is_the_best(parts, target, role,
                                                                       line, most):
    request = Request(circuit="schmitt", family="74HC14", supply_v=5.0, target_hz=target,
                      max_resistors=most, max_capacitors=most, top=10, pins=(line,))
    osc = request.oscillator()
    result = request.run(parts, osc)
    assert result.candidates
    assert all(uses(c.networks[role], line) for c in result.candidates)
    best, reached = brute_force_best(parts, osc, target, most, most, 1.0,
                                     keep=alone(role, line))
    assert_first_or_empty(result, best, reached, 1.0)


def test_555_pinned_capacitor(parts):
    request = Request(circuit="555", family="NE555", supply_v=9.0, target_hz=2000.0,
                      max_resistors=1, max_capacitors=1, top=10, pins=(C_104,))
    osc = request.oscillator()
    result = request.run(parts, osc)
    assert result.candidates and all(uses(c.networks["C"], C_104) for c in result.candidates)
    best, reached = brute_force_best_555(parts, osc, 2000.0, None, 1, 1.0,
                                         keep=alone("C", C_104))
    assert_first_or_empty(result, best, reached, 1.0)


@pytest.mark.parametrize(("circuit", "pins", "says"), [
    ("schmitt", (1,), "line 1 holds no usable part (the header is line 1"),
    ("schmitt", (999,), "line 999 holds no usable part"),
    ("555", (R_10K,), "the 555 timer has 2 resistor places (RA, RB)"),
    ("schmitt", (R_10K, 10), "another line is pinned as its resistor already"),
    ("schmitt-duty", (R_10K,), "has 2 resistor places (RH, RL)"),
    ("schmitt", (24,), "has no place for a pot here"),  # line 24: a 1k trimmer
    ("schmitt", (2,), "100 Ω is outside the 1 kΩ … 2.2 MΩ"),  # 74HC14: R from 1 kΩ
])
def test_a_pin_that_cannot_be_used_says_why_in_one_line(parts, circuit, pins, says):
    duty = 40.0 if circuit.endswith("-duty") else None  # two steering diodes: RH, RL
    request = Request(circuit=circuit.removesuffix("-duty"), target_hz=1000.0, pins=pins,
                      duty_pct=duty)
    with pytest.raises(InputError, match="--pin") as caught:
        request.run(parts, request.oscillator())
    assert says in str(caught.value) and "\n" not in str(caught.value)


def test_a_line_out_of_stock_cannot_be_pinned(tmp_path):
    drawer = tmp_path / "d.csv"
    drawer.write_text("kind,value,quantity\nR,10k,0\nR,22k,3\nC,100n,2\n", encoding="utf-8")
    out = run_tickbin(tmp_path, "search", "--stock", str(drawer), "--target", "1kHz",
                      "--pin", "2")
    assert out.returncode == 2 and out.stderr.count("\n") == 1
    assert "line 2 has none in stock" in out.stderr and "Traceback" not in out.stderr


def test_the_command_line_pins(tmp_path):
    import json

    out = run_tickbin(tmp_path, "search", "--target", "1kHz", "--pin", str(C_22N), "--json")
    assert out.returncode == 0, out.stderr
    candidates = json.loads(out.stdout)["candidates"]
    assert candidates and all(c["networks"]["C"] == {"line": C_22N} for c in candidates)


def test_what_to_buy_never_replaces_the_pinned_part(parts):
    from core.design.search import search

    pinned = Request(circuit="schmitt", target_hz=1000.0, pins=(R_10K,))
    osc = pinned.oscillator()
    around, _ = pinned.pinned(parts, list(parts), osc, None)
    # The search alone, around the pinned 10k, would buy a resistor in its place.
    assert any(s["buy"]["kind"] == "R" for s in search(around, osc, 1000.0).suggestions)
    result = pinned.run(parts, osc)
    assert all(s["buy"]["kind"] != "R" for s in result.suggestions)
    assert not any(n.startswith("buying") and "kΩ" in n for n in result.notes)
