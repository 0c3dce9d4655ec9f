"""Drawer files as people really have them, and saves that fail (hardening issue)."""

from __future__ import annotations

import errno
import math
import os
import time
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import core.parts.drawer_file as drawer_module
import core.storage.atomic as atomic_module
from core.errors import DrawerFileError, LineProblem, TickbinError
from core.parts.drawer import Drawer, Row
from core.parts.drawer_file import (
    MAX_LINE_CHARS,
    drawer_csv_text,
    parse_drawer_text,
    read_drawer,
    write_drawer,
)

PLAIN = "kind,value,quantity,location\nR,4k7,3,A1\nC,100n,2,B2\n"


def values(path: Path) -> list[tuple[str, float, int]]:
    return [(p.kind, p.value, p.quantity) for p in read_drawer(path).parts()]


EXPECTED = [("R", 4700.0, 3), ("C", pytest.approx(100e-9), 2)]


@pytest.mark.parametrize(
    "data",
    [PLAIN.encode("utf-8"),
     b"\xef\xbb\xbf" + PLAIN.encode("utf-8"),                  # UTF-8 with BOM (Excel)
     PLAIN.replace("\n", "\r\n").encode("utf-8"),              # CRLF
     PLAIN.replace(",", ";").encode("utf-8"),                  # semicolon (European Excel)
     PLAIN.replace(",", "\t").encode("utf-8"),                 # tab
     "kind;value;quantity;location\nR;4,7k;3;A1\nC;0,1µF;2;B2\n".encode("cp1252"),
     b"\n\nkind,value,quantity,location\n\nR,4k7,3,A1\n\n\nC,100n,2,B2\n\n",
     b'"kind","value","quantity","location"\n"R","4k7","3","A1"\n"C","100n","2","B2"\n'],
    ids=["utf8", "bom", "crlf", "semicolon", "tab", "cp1252-decimal-comma", "blank-lines",
         "quoted"],
)
def test_files_people_have(tmp_path: Path, data: bytes) -> None:
    p = tmp_path / "d.csv"
    p.write_bytes(data)
    assert values(p) == EXPECTED


def test_multi_line_note_survives(tmp_path: Path) -> None:
    d = Drawer([Row({"kind": "R", "value": "1k", "quantity": "1", "note": "top shelf\r\nleft"})])
    out = write_drawer(d, tmp_path / "n.csv")
    assert read_drawer(out).rows[0].get("note") == "top shelf\nleft"


def test_cp1252_text_is_kept(tmp_path: Path) -> None:
    p = tmp_path / "d.csv"
    p.write_bytes("kind,value,quantity,location\nR,4k7,3,Schublade ä 5 Ω\n".encode("cp1252",
                                                                                 "replace"))
    assert read_drawer(p).parts()[0].location.startswith("Schublade ä")


@pytest.mark.parametrize(
    ("data", "says"),
    [(b"kind,value,quantity\nR,1k,\x00\x01\x02\n", "binary"),
     (b"kind,value\nR,1k\n", "lacks the column quantity"),
     (b'"kind,value,quantity\nR,1k,1\n', "unclosed quote"),  # found by the CLI fuzz test
     (b"kind,value,quantity\nR,1k,1,2,3\n", "5 fields but the header has 3"),
     (b"kind,value,quantity\nR,1k,3.5\n", "whole number"),
     (b"kind,value,quantity\nR,1k,99999999\n", "not a drawer"),
     (b"kind,value,quantity\nR,1k,-2\n", "whole number"),
     (b"kind,value,quantity\nR,=1+2,1\n", "expected a resistance"),
     (b"kind,value,quantity\nR,1k," + b"9" * (MAX_LINE_CHARS + 5) + b"\n", "longer than")],
)
def test_refused_with_file_and_line(tmp_path: Path, data: bytes, says: str) -> None:
    p = tmp_path / "bad.csv"
    p.write_bytes(data)
    with pytest.raises(DrawerFileError, match=says) as info:
        read_drawer(p)
    assert str(info.value).startswith(f"{p}:")


def test_a_nul_byte_is_reported_on_its_own_line(tmp_path: Path) -> None:
    # Issue 11: a NUL on line 3 was reported as "line 1: binary data".
    p = tmp_path / "nul.csv"
    p.write_bytes(b"kind,value,quantity\nR,1k,2\nR,2k\x002,1\nR,3k,1\n")
    with pytest.raises(DrawerFileError, match="binary") as info:
        read_drawer(p)
    assert str(info.value).startswith(f"{p}:3:")


def test_oversized_file_is_refused(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(drawer_module, "MAX_FILE_BYTES", 100)
    p = tmp_path / "big.csv"
    p.write_text("kind,value,quantity\n" + "R,1k,1\n" * 50)
    with pytest.raises(DrawerFileError, match="at most"):
        read_drawer(p)


def test_hundred_thousand_lines_load_in_bounded_time(tmp_path: Path) -> None:
    p = tmp_path / "huge.csv"
    body = "".join(f"R,{v},{i % 40},A{i % 97}\n"
                   for i, v in zip(range(100_000), ["10k", "4k7", "1M", "220R"] * 25_000,
                                   strict=True))
    p.write_text("kind,value,quantity,location\n" + body)
    start = time.perf_counter()
    assert len(read_drawer(p).parts()) == 100_000
    elapsed = time.perf_counter() - start
    # Generous bound for a loaded 2-core CI machine; typically about 1.5 s here.
    assert elapsed < 30, elapsed


def _drawer(tmp_path: Path) -> tuple[Drawer, Path]:
    p = tmp_path / "keep.csv"
    p.write_text(PLAIN)
    d = read_drawer(p)
    d.set_cell(0, "quantity", "9")
    return d, p


def test_failed_save_full_disk_keeps_old_file(tmp_path: Path,
                                              monkeypatch: pytest.MonkeyPatch) -> None:
    d, p = _drawer(tmp_path)

    def full(_fd: int) -> None:
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(atomic_module.os, "fsync", full)
    with pytest.raises(TickbinError, match=r"not saved.*previous file is unchanged"):
        write_drawer(d)
    assert p.read_text() == PLAIN
    assert [f.name for f in tmp_path.iterdir()] == ["keep.csv"]  # no temporary left behind
    assert d.dirty  # the edit is still there to save elsewhere


def test_failed_save_read_only_folder_keeps_old_file(tmp_path: Path,
                                                     monkeypatch: pytest.MonkeyPatch) -> None:
    d, p = _drawer(tmp_path)

    def refuse(*_args: object, **_kwargs: object) -> tuple[int, str]:
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(atomic_module.tempfile, "mkstemp", refuse)
    with pytest.raises(TickbinError, match="Permission denied"):
        write_drawer(d)
    assert p.read_text() == PLAIN and d.dirty


def test_save_keeps_previous_as_backup(tmp_path: Path) -> None:
    d, p = _drawer(tmp_path)
    write_drawer(d)
    assert (tmp_path / "keep.csv.bak").read_text() == PLAIN
    assert "R,4k7,9,A1" in p.read_text()


@pytest.mark.parametrize("text", ["=cmd|'/c calc'!A0", "+1+2", "-2+3", "@SUM(A1)", "\tx",
                                  "\rx"])
def test_formula_cells_neutralised_on_export(tmp_path: Path, text: str) -> None:
    # OWASP "CSV injection": prefix cells starting = + - @ tab CR so spreadsheets show text.
    # The export for spreadsheets, not the person's own file (written as typed).
    d = Drawer([Row({"kind": "R", "value": "1k", "quantity": "1", "note": text})])
    out = tmp_path / "x.csv"
    out.write_bytes(drawer_csv_text(d).encode())
    raw = out.read_bytes().decode()
    cell = raw.splitlines()[1].split(",")[-1]
    assert not cell.startswith(("=", "+", "-", "@", "\t", "\r"))
    if text.strip() != text:
        assert cell == text.strip()  # leading tab or CR: whitespace, trimmed away
    else:
        assert cell == "'" + text
    assert read_drawer(out).rows[0].get("note") == text.strip()


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(st.binary(max_size=400),  # and bytes after a good header, so rows get read
                 st.binary(max_size=300).map(lambda b: b"kind,value,quantity,location\n" + b)))
def test_random_bytes_are_read_or_refused_naming_file_and_line(
        tmp_path_factory: pytest.TempPathFactory, data: bytes) -> None:
    # The hardening rule: bad input gets one clear message naming file, line and problem.
    path = tmp_path_factory.mktemp("fuzz") / "fuzz.csv"
    path.write_bytes(data)
    # Lines the file has, however a reader splits them (str.splitlines knows the most
    # breaks; cp1252 turns no byte into one that latin-1 does not).
    lines = max(len(data.decode(codec, errors="replace").splitlines())
                for codec in ("utf-8", "latin-1")) + 1

    def names_a_line(problem: LineProblem) -> bool:
        return problem.path == str(path) and 1 <= problem.line <= lines and bool(problem.reason)

    try:
        drawer = read_drawer(path, strict=False)
    except DrawerFileError as e:
        assert e.problems and all(names_a_line(p) for p in e.problems)
        assert str(e).startswith(f"{path}:{e.problems[0].line}: ")
        return
    # Read: each row is a usable part or has its problems, and each problem names a line.
    parts = drawer.parts()
    assert len(parts) + len(drawer.problems()) == len(drawer.rows)
    for part in parts:
        assert part.kind in ("R", "C", "P") and math.isfinite(part.value) and part.value > 0
        assert part.quantity >= 0
    problems = drawer.line_problems()
    assert all(names_a_line(p) for p in problems)
    # The command line's strict read refuses exactly the files with a bad line.
    if problems:
        with pytest.raises(DrawerFileError) as refused:
            read_drawer(path)
        assert refused.value.problems == problems
    else:
        assert read_drawer(path).parts() == parts


@settings(max_examples=100, deadline=None)
@given(st.lists(st.lists(st.text(max_size=12), max_size=6), max_size=8))
def test_random_tables_never_crash_the_reader(table: list[list[str]]) -> None:
    text = "kind,value,quantity\n" + "\n".join(",".join(r) for r in table)
    try:
        drawer = parse_drawer_text(text, "fuzz.csv")
    except DrawerFileError:
        return
    for part in drawer.parts():
        assert part.value > 0 and part.quantity >= 0
