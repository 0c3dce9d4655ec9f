"""``tickbin stock check`` and the command line's error rules (DESIGN.md contract)."""

from __future__ import annotations

import json
from pathlib import Path

from support.cli import run_tickbin

from core.cli import main
from core.storage.locations import demo_drawer_path


def test_check_demo_json(capsys) -> None:
    assert main(["stock", "check", str(demo_drawer_path()), "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert result["counts"]["resistors"]["lines"] > 10
    assert result["counts"]["capacitors"]["parts"] > 0


def test_check_bad_file_lists_each_line(tmp_path: Path, capsys) -> None:
    p = tmp_path / "bad.csv"
    p.write_text("kind,value,quantity\nR,10k,3\nR,xx,2\nC,1n,-4\n", encoding="utf-8")
    assert main(["stock", "check", str(p)]) == 2
    out, err = capsys.readouterr()
    # Drawer issue: "bad lines: exit status 2, one line each on stderr as FILE:LINE: reason".
    err = err.strip().splitlines()
    assert len(err) == 2
    assert err[0].startswith(f"{p}:3: value 'xx'")
    assert err[1].startswith(f"{p}:4: quantity")
    assert out == ""


def test_warnings_for_zero_and_duplicate_bins(tmp_path: Path, capsys) -> None:
    p = tmp_path / "d.csv"
    p.write_text("kind,value,quantity,location\nR,10k,3,A1\nR,10000,2,A7\nC,1n,0,B\n",
                 encoding="utf-8")
    assert main(["stock", "check", str(p), "--json"]) == 0
    warnings = json.loads(capsys.readouterr().out)["warnings"]
    assert any("quantity 0" in w for w in warnings)
    assert any("several bins" in w and "A1" in w and "A7" in w for w in warnings)


def test_errors_are_one_line_without_traceback(tmp_path: Path) -> None:
    missing = run_tickbin(tmp_path, "stock", "check", str(tmp_path / "nope.csv"))
    assert missing.returncode == 2
    assert "nope.csv" in missing.stderr and "Traceback" not in missing.stderr
    assert len(missing.stderr.strip().splitlines()) == 1
    usage = run_tickbin(tmp_path, "stock", "frobnicate")
    assert usage.returncode == 2 and len(usage.stderr.strip().splitlines()) == 1

