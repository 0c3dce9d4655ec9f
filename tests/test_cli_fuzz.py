"""Random text in every command-line option: a clean result or one clean error line.

Hardening issue: "every command-line error exits with status 2 and one clear line",
never a traceback. The options are read from the parser itself, so a new option is
fuzzed as soon as it exists.
"""

from __future__ import annotations

import argparse
import json
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from core.cli import build_parser, main
from core.storage.locations import demo_drawer_path
from gui.entry import render_sheet

DEMO = str(demo_drawer_path())
SCHMITT = ["--circuit", "schmitt", "--family", "74HC14", "--supply", "5V"]

# A valid call of each sub-command (DESIGN.md contract); one option at a time is replaced.
BASE: dict[str, list[str]] = {
    "predict": [*SCHMITT, "--r", "10k", "--c", "100n"],
    "calibrate": [*SCHMITT, "--r", "21.7k", "--c", "1u", "--measured", "63.3"],
    "search": ["--stock", DEMO, *SCHMITT, "--target", "1kHz", "--top", "3"],
    "trim": ["--stock", DEMO, *SCHMITT, "--band", "400..480", "--top", "2"],
    "netlist": ["--stock", DEMO, *SCHMITT, "--target", "1kHz"],
    "sheet": ["--stock", DEMO, *SCHMITT, "--target", "1kHz"],
}

_junk = st.one_of(
    st.text(max_size=30),
    st.sampled_from(["", "-1", "0", "nan", "inf", "1e999", "=1+2", "1/2", "10 kV", "..",
                     "5..", "abc", "\x00", "1" * 80, "-5V", "1kHz..", "1u", "2ms", "9999999"]),
)


def _options(command: str) -> list[str]:
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    if command not in sub.choices:
        pytest.fail(f"sub-command {command!r} missing from the command line")
    return [a.option_strings[-1] for a in sub.choices[command]._actions
            if a.option_strings and a.nargs != 0 and a.dest not in ("help", "out")]


def _run(argv: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    try:
        status = main(argv, render_sheet=render_sheet)
    except SystemExit as e:  # argparse usage errors
        status = int(e.code or 0)
    out, err = capsys.readouterr()
    return status, out, err


@pytest.mark.parametrize("command", sorted(BASE))
@settings(max_examples=25, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(data=st.data())
def test_every_option_takes_any_text(command: str, data: st.DataObject,
                                     capsys: pytest.CaptureFixture[str],
                                     tmp_path: Path) -> None:
    option = data.draw(st.sampled_from(_options(command)), label="option")
    junk = data.draw(_junk, label="text")
    argv = [command, *BASE[command]]
    if option in argv:
        argv[argv.index(option) + 1] = junk
    else:
        argv += [option, junk]
    if command in ("netlist", "sheet"):
        argv += ["--out", str(tmp_path / ("x.cir" if command == "netlist" else "x.pdf"))]
    status, out, err = _run([*argv, "--json"], capsys)
    assert "Traceback" not in err
    if status == 0:
        json.loads(out)  # exactly one JSON object
    else:
        assert status == 2
        assert len(err.strip().splitlines()) == 1, err


@settings(max_examples=40, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.binary(max_size=300))
def test_any_file_given_as_the_drawer(data: bytes, tmp_path: Path,
                                      capsys: pytest.CaptureFixture[str]) -> None:
    p = tmp_path / "fuzz.csv"
    p.write_bytes(data)
    status, out, err = _run(["search", "--stock", str(p), *SCHMITT, "--target", "1k",
                             "--json"], capsys)
    assert "Traceback" not in err
    assert status in (0, 2)
    if status == 2:
        assert str(p) in err and len(err.strip().splitlines()) == 1
    else:
        json.loads(out)
