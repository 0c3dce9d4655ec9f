"""``tickbin search`` and ``tickbin trim`` against the DESIGN.md command-line contract."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import pytest

from core.cli import main
from core.parts.drawer_file import read_drawer
from core.storage.locations import demo_drawer_path

DEMO = str(demo_drawer_path())
NODE_KEYS = ({"line"}, {"series"}, {"parallel"})


def run_json(capsys: pytest.CaptureFixture[str], *argv: str) -> dict[str, Any]:
    assert main([*argv, "--json"]) == 0
    out = capsys.readouterr().out
    assert out.count("\n") == 1  # exactly one JSON object
    return json.loads(out)


def assert_node(node: dict[str, Any]) -> None:
    assert set(node) in NODE_KEYS
    if "line" not in node:
        for child in next(iter(node.values())):
            assert_node(child)


def test_search_json_has_every_contract_key(capsys: pytest.CaptureFixture[str]) -> None:
    data = run_json(capsys, "search", "--stock", DEMO, "--circuit", "schmitt", "--family",
                    "74HC14", "--supply", "5V", "--target", "1kHz")
    assert {"limits", "notes", "candidates"} <= set(data)
    assert set(data["limits"]) == {"r_min_ohm", "r_max_ohm"}
    assert data["candidates"] and len(data["candidates"]) <= 10
    for cand in data["candidates"]:
        assert {"frequency_hz", "error_pct", "duty_pct", "values", "networks",
                "worst_case_hz"} <= set(cand)
        assert set(cand["values"]) == set(cand["networks"]) == {"R", "C"}
        for node in cand["networks"].values():
            assert_node(node)
        assert len(cand["worst_case_hz"]) == 2


def test_search_555_uses_ra_rb_c_and_every_option(capsys: pytest.CaptureFixture[str]) -> None:
    data = run_json(capsys, "search", "--stock", DEMO, "--circuit", "555", "--family", "NE555",
                    "--supply", "9V", "--target", "2ms", "--duty", "30", "--max-resistors", "3",
                    "--max-capacitors", "1", "--accept", "0.5", "--top", "4")
    assert len(data["candidates"]) == 4
    assert any("diode" in n for n in data["notes"])
    for cand in data["candidates"]:
        assert set(cand["values"]) == {"RA", "RB", "C"}
        assert cand["diode_steered"] is True
        assert "line" in cand["networks"]["C"]  # --max-capacitors 1


def test_empty_result_exits_zero_with_notes(tmp_path: Path,
                                            capsys: pytest.CaptureFixture[str]) -> None:
    stock = tmp_path / "caps_only.csv"
    stock.write_text("kind,value,quantity\nC,100n,3\n", encoding="utf-8")
    data = run_json(capsys, "search", "--stock", str(stock), "--target", "1k")
    assert data["candidates"] == [] and any("no resistors" in n for n in data["notes"])
    data = run_json(capsys, "trim", "--stock", str(stock), "--band", "400..480")
    assert data["candidates"] == [] and any("no potentiometers" in n for n in data["notes"])


def test_trim_json_has_every_contract_key(capsys: pytest.CaptureFixture[str]) -> None:
    data = run_json(capsys, "trim", "--stock", DEMO, "--circuit", "schmitt", "--family",
                    "74HC14", "--supply", "5V", "--band", "900..1100", "--top", "3")
    assert {"notes", "candidates"} <= set(data)
    assert 1 <= len(data["candidates"]) <= 3
    pots = {p.stock_line for p in read_drawer(DEMO).parts() if p.kind == "P"}
    for cand in data["candidates"]:
        assert {"values", "networks", "range_hz", "guaranteed_hz", "rotation_pct"} <= set(cand)
        assert set(cand["values"]) == set(cand["networks"]) == {"R", "P", "C"}
        assert set(cand["networks"]["P"]) == {"line"} and cand["networks"]["P"]["line"] in pots
        lo, hi = cand["guaranteed_hz"]
        assert lo <= 900 and hi >= 1100


def test_text_tables_name_locations(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["search", "--stock", DEMO, "--target", "38k", "--top", "3"]) == 0
    out = capsys.readouterr().out
    assert "kHz" in out and "B1-" in out and "B2-" in out and "line " in out
    assert main(["trim", "--stock", DEMO, "--band", "400..480", "--top", "2"]) == 0
    out = capsys.readouterr().out
    assert "B3-" in out and "Hz/%" in out


def test_search_without_stock_uses_the_demo_drawer(capsys: pytest.CaptureFixture[str]) -> None:
    data = run_json(capsys, "search", "--target", "440")
    assert data["notes"][0].startswith("no --stock given")


@pytest.mark.parametrize("argv", [
    # --duty is for the 555 and the Schmitt inverter with steering diodes (issue 13)
    ["search", "--stock", DEMO, "--target", "1k", "--duty", "30", "--circuit", "cmos-astable"],
    ["search", "--stock", DEMO, "--target", "fast"],
    ["search", "--stock", DEMO, "--target", "1k", "--max-resistors", "4"],
    ["search", "--stock", DEMO, "--target", "1k", "--top", "0"],
    ["trim", "--stock", DEMO, "--band", "480"],
    # every circuit trims since issue 13; a duty on a trim is the 555's
    ["trim", "--stock", DEMO, "--band", "400..480", "--duty", "30"],
])
def test_bad_options_exit_2_with_one_line(argv: list[str],
                                          capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as stop:
        status = main(argv)
        raise SystemExit(status)
    assert stop.value.code == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err


def test_bad_stock_file_names_file_and_line(tmp_path: Path,
                                            capsys: pytest.CaptureFixture[str]) -> None:
    stock = tmp_path / "bad.csv"
    stock.write_text("kind,value,quantity\nR,10k,2\nR,ten,1\n", encoding="utf-8")
    assert main(["search", "--stock", str(stock), "--target", "1k"]) == 2
    err = capsys.readouterr().err
    assert f"{stock}:3" in err and err.count("\n") == 1


def _dielectrics(data: dict[str, Any]) -> set[str]:
    """Dielectrics of every capacitor the candidates use, read back from the drawer."""
    by_line = {p.stock_line: p for p in read_drawer(demo_drawer_path()).parts()}

    def lines(node: dict[str, Any]) -> list[int]:
        return [node["line"]] if "line" in node else [
            x for child in next(iter(node.values())) for x in lines(child)]

    return {by_line[n].dielectric for c in data["candidates"] for n in lines(
        c["networks"]["C"])}


@pytest.mark.parametrize("command", [["search", "--target", "2.2kHz"],
                                     ["trim", "--band", "400..480"]])
def test_dielectric_list_restricts_the_capacitors(command: list[str],
                                                  capsys: pytest.CaptureFixture[str]) -> None:
    # Issue 11 §3: --dielectric film,c0g leaves only film and C0G/NP0 capacitors.
    data = run_json(capsys, *command, "--stock", DEMO, "--dielectric", "film,NP0", "--top",
                    "10")
    assert data["candidates"] and _dielectrics(data) <= {"film", "c0g", "np0"}
    assert any("film" in n and "C0G" in n for n in data["notes"])
    everything = run_json(capsys, *command, "--stock", DEMO, "--top", "10")
    assert _dielectrics(everything) - {"film", "c0g", "np0"}  # the filter did something


def test_text_tables_carry_the_notation_legend(capsys: pytest.CaptureFixture[str]) -> None:
    # Issue 11 §3: "+" reads as "added"; networks are written "ser"/"par" with a legend
    # line under the table. 10 kΩ and 4.7 kΩ in series make 14.7 kΩ; 47 nF and 1 µF in
    # series make 45 nF (Horowitz & Hill §1.2.1, §1.4.1).
    assert main(["trim", "--stock", DEMO, "--band", "400..480", "--top", "3"]) == 0
    out = capsys.readouterr().out
    table = out.split("\n\n")[1].splitlines()
    assert " ser " in "\n".join(table) or " par " in "\n".join(table)
    assert table[-1] == ("ser = in series, par = in parallel: 10 kΩ ser 4.7 kΩ is 14.7 kΩ, "
                         "47 nF ser 1 µF is 45 nF")
    assert " + " not in "\n".join(table[1:-1])


def test_bad_dielectric_list_exits_2_with_one_line(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit) as stop:
        main(["search", "--stock", DEMO, "--target", "1k", "--dielectric", "film,paper"])
    assert stop.value.code == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--dielectric" in err and "C0G" in err
