"""``tickbin sheet`` and ``tickbin netlist`` through the command line (in process, with the
gui's PDF renderer injected the way the installed ``tickbin`` script does it)."""

from __future__ import annotations

import json
import shutil
import subprocess
import sys

import pytest
from support.tools import require_tool

import core.cli
from core.parts.drawer_file import read_drawer
from core.storage.locations import demo_drawer_path
from gui.entry import render_sheet


def _tickbin(capsys, *argv: str, renderer=render_sheet) -> tuple[int, dict | str, str]:
    try:
        code = core.cli.main(list(argv), render_sheet=renderer)
    except SystemExit as e:  # argparse's usage errors
        code = int(e.code or 0)
    out, err = capsys.readouterr()
    if "--json" in argv and code == 0:
        return code, json.loads(out), err
    return code, out, err


@pytest.fixture
def drawer_file(tmp_path):
    path = tmp_path / "drawer.csv"
    shutil.copy(demo_drawer_path(), path)
    return path


def test_sheet_writes_a_pdf_and_reports_it(qapp, capsys, drawer_file, tmp_path):
    out = tmp_path / "sheet.pdf"
    code, result, err = _tickbin(capsys, "sheet", "--stock", str(drawer_file), "--target",
                                 "1kHz", "--out", str(out), "--page-size", "letter", "--json")
    assert code == 0, err
    assert out.read_bytes().startswith(b"%PDF")
    assert result["out"] == str(out) and result["page_size"] == "Letter"
    assert result["pages"] >= 1
    assert result["candidate"]["networks"]
    assert result["taken"] == []
    lines = [p["line"] for p in result["parts"] if p["line"] is not None]
    assert lines and all(isinstance(n, int) for n in lines)


def test_pick_chooses_the_kth_candidate(qapp, capsys, drawer_file, tmp_path):
    base = ["--stock", str(drawer_file), "--target", "2.2kHz", "--json"]
    _, listing, _ = _tickbin(capsys, "search", *base)
    code, result, err = _tickbin(capsys, "sheet", *base, "--pick", "3", "--out",
                                 str(tmp_path / "s.pdf"))
    assert code == 0, err
    assert result["candidate"]["values"] == listing["candidates"][2]["values"]


def test_trim_options_make_a_trim_sheet(qapp, capsys, drawer_file, tmp_path):
    code, result, err = _tickbin(capsys, "sheet", "--stock", str(drawer_file), "--band",
                                 "900..1100", "--out", str(tmp_path / "t.pdf"), "--json")
    assert code == 0, err
    assert "rotation_pct" in result["candidate"]
    assert "trimmer" in result["title"]


def test_take_lowers_the_drawer_file(qapp, capsys, drawer_file, tmp_path):
    before = {p.stock_line: p.quantity for p in read_drawer(drawer_file).parts()}
    code, result, err = _tickbin(capsys, "sheet", "--stock", str(drawer_file), "--target",
                                 "1kHz", "--out", str(tmp_path / "s.pdf"), "--take", "--json")
    assert code == 0, err
    after = {p.stock_line: p.quantity for p in read_drawer(drawer_file).parts()}
    taken = {t["line"]: t["count"] for t in result["taken"]}
    assert taken
    assert after == {line: q - taken.get(line, 0) for line, q in before.items()}
    assert (drawer_file.parent / "drawer.csv.bak").exists()


@pytest.mark.parametrize(("argv", "message"), [
    (["--target", "1k", "--band", "1..2k"], "not both"),
    (["--target", "1k", "--pick", "9999"], "only"),
    (["--target", "1k", "--take"], "--take needs --stock"),
    (["--target", "1k", "--page-size", "A3"], "A4 or Letter"),
])
def test_sheet_errors_are_one_line(qapp, capsys, tmp_path, argv, message):
    code, _, err = _tickbin(capsys, "sheet", *argv, "--out", str(tmp_path / "x.pdf"))
    assert code == 2
    assert message in err and len(err.strip().splitlines()) == 1
    assert "Traceback" not in err


def test_sheet_without_a_renderer_says_so(capsys, tmp_path):
    code, _, err = _tickbin(capsys, "sheet", "--target", "1k", "--out",
                            str(tmp_path / "x.pdf"), renderer=None)
    assert code == 2 and "PDF output needs Qt" in err


def test_nothing_to_build_is_an_error_with_the_reason(qapp, capsys, tmp_path):
    empty = tmp_path / "empty.csv"
    empty.write_text("kind,value,quantity\nR,10k,0\n", encoding="utf-8")
    code, _, err = _tickbin(capsys, "sheet", "--stock", str(empty), "--target", "1k", "--out",
                            str(tmp_path / "x.pdf"))
    assert code == 2 and "no candidate" in err


def test_netlist_command_writes_and_simulates(capsys, drawer_file, tmp_path):
    require_tool("ngspice")
    out = tmp_path / "d.cir"
    code, result, err = _tickbin(capsys, "netlist", "--stock", str(drawer_file), "--circuit",
                                 "555", "--family", "NE555", "--supply", "9V", "--target",
                                 "440", "--out", str(out), "--simulate", "--json")
    assert code == 0, err
    assert out.read_text(encoding="ascii").rstrip().endswith(".end")
    assert abs(result["agreement_pct"]) < 1.0  # the check
    assert result["simulated"]["period_s"] == pytest.approx(result["model"]["period_s"],
                                                            rel=0.01)


def test_installed_command_makes_a_sheet_without_a_display(drawer_file, tmp_path):
    """The console script in a fresh process, no display variables: offscreen Qt."""
    out = tmp_path / "cli.pdf"
    env = {"PATH": "/usr/bin:/bin", "HOME": str(tmp_path), "TICKBIN_DATA_DIR": str(tmp_path)}
    code = ("import sys; from gui.entry import main; sys.argv = ['tickbin', 'sheet', "
            f"'--stock', {str(drawer_file)!r}, '--target', '1k', '--out', {str(out)!r}, "
            "'--json']; main()")
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         env=env, timeout=120, check=False)
    assert run.returncode == 0, run.stderr
    assert json.loads(run.stdout)["pages"] >= 1
    assert out.read_bytes().startswith(b"%PDF")
