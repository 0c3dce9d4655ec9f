"""Text from a drawer file reaches every sink harmless: netlist, terminal, spreadsheet.

A drawer cell may hold anything a CSV field can: line breaks, terminal escape
sequences, spreadsheet formulas. Each sink gets its own sanitiser; these tests feed
them hostile cells and check the result with the sink's own reader where there is
one (ngspice runs the netlist).
"""

from __future__ import annotations

import csv
import io
import json
import re
import subprocess
from html import unescape as html_unescape

import pytest
from support.sinks import (
    assert_inert_netlist,
    make_hostile_drawer,
    run_ngspice,
    write_drawer_rows,
)
from support.tools import require_tool

import core.cli
from core.design.search import search
from core.model.timing import make_oscillator
from core.output.netlist import spice_netlist
from core.parts.drawer_file import read_drawer


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


# ---------------------------------------------------------------- terminal

# Escape sequences a terminal acts on (ECMA-48: CSI and OSC; OSC 52 writes the clipboard
# in xterm), the 8-bit CSI, DEL, a carriage return that overwrites the line, a line
# break, LINE SEPARATOR and a right-to-left override (Unicode bidi control).
TERMINAL_HOSTILE = ["A1\x1b[31mred\x1b[0m", "A2\x1b]52;c;ZWNobyBvd25lZA==\x07", "A3\x9b2J\x7f",
                    "A4\roverwritten\nnote: forged", "A5\u2028next\u202egnp"]

ESCAPED = {"A1\\x1b[31mred\\x1b[0m", "A2\\x1b]52;c;ZWNobyBvd25lZA==\\x07", "A3\\x9b2J\\x7f",
           "A4\\roverwritten\\nnote:", "A5\\u2028next\\u202egnp"}


def assert_terminal_safe(text: str) -> None:
    """Only printable characters and the program's own line breaks reach the terminal."""
    bad = {ch for ch in text if ch != "\n" and not ch.isprintable()}
    assert not bad, sorted(bad)
    assert not any(line.startswith("note: forged") for line in text.splitlines())


@pytest.fixture
def terminal_drawer(tmp_path):
    """Every location and note hostile; a quantity-0 line so ``stock check`` names one."""
    path = tmp_path / "drawer.csv"
    rows = [["R", "10k", "10", TERMINAL_HOSTILE[0], TERMINAL_HOSTILE[1]],
            ["R", "2.2k", "10", TERMINAL_HOSTILE[1], ""],
            ["P", "10k", "2", TERMINAL_HOSTILE[2], ""],
            ["C", "100n", "5", TERMINAL_HOSTILE[3], TERMINAL_HOSTILE[4]],
            ["C", "220n", "5", TERMINAL_HOSTILE[2], ""],
            ["C", "22n", "0", TERMINAL_HOSTILE[4], ""],
            ["C", "22n", "3", TERMINAL_HOSTILE[2], ""]]
    write_drawer_rows(path, rows)
    return path


@pytest.mark.parametrize("argv", [
    ["search", "--target", "1kHz"],
    ["trim", "--band", "900..1100", "--family", "74HC14-NXP"],  # one maker: a 10k pot suffices
    ["stock", "check"],
    ["stock", "check", "--json"],
])
def test_terminal_output_escapes_drawer_text(terminal_drawer, capsys, argv):
    if argv[0] == "stock":
        argv = [*argv, str(terminal_drawer)]
    else:
        argv = [*argv, "--stock", str(terminal_drawer)]
    code, out, err = _tickbin(capsys, *argv)
    assert code == 0, err
    assert_terminal_safe(out)
    if "--json" in argv:  # still JSON, and it reads back to the drawer's own text
        assert any(TERMINAL_HOSTILE[4] in w for w in json.loads(out)["warnings"])
    else:
        assert ESCAPED & set(out.split()), out  # the locations are shown, escaped


def test_sheet_text_escapes_drawer_text(qapp, terminal_drawer, capsys, tmp_path):
    from gui.entry import render_sheet

    argv = ["sheet", "--stock", str(terminal_drawer), "--target", "1kHz", "--out",
            str(tmp_path / "s.pdf"), "--take"]
    code = core.cli.main(argv, render_sheet=render_sheet)
    out, err = capsys.readouterr()
    assert code == 0, err
    assert "took" in out
    assert_terminal_safe(out)


def test_saved_calibration_names_are_listed_escaped(capsys):
    from core.model.calibration import calibrations_dir

    folder = calibrations_dir()
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "bench\x1b]0;owned\x07.json").write_text("{}", encoding="utf-8")
    code, out, err = _tickbin(capsys, "calibrate", "--list")
    assert code == 0, err
    assert "bench" in out
    assert_terminal_safe(out)


def test_predict_text_escapes_a_calibration_file(capsys):
    """A calibration file edited by hand (or shared) names itself; predict prints it."""
    from core.model.calibration import calibrations_dir

    code, out, err = _tickbin(capsys, "calibrate", "--family", "74HC14", "--supply", "5V",
                              "--r", "10k", "--c", "100n", "--measured", "760Hz", "--save",
                              "bench", "--json")
    assert code == 0, err
    path = calibrations_dir() / "bench.json"
    data = json.loads(path.read_text(encoding="utf-8"))
    data["name"] = "bench" + TERMINAL_HOSTILE[1]
    data["warnings"] = [TERMINAL_HOSTILE[3]]
    path.write_text(json.dumps(data), encoding="utf-8")
    code, out, err = _tickbin(capsys, "predict", "--family", "74HC14", "--supply", "5V",
                              "--r", "10k", "--c", "100n", "--calibration", "bench")
    assert code == 0, err
    assert "bench" in out
    assert_terminal_safe(out)


# ---------------------------------------------------------------- spreadsheet

@pytest.mark.parametrize("name", ["=HYPERLINK(\"http://example.invalid\",\"x\")",
                                  "+cmd|' /C calc'!A0", "-2+3", "@SUM(A1)"])
def test_spreadsheet_export_neutralises_the_header_too(name):
    """OWASP "CSV Injection": a cell starting = + - @ (tab, CR) is run as a formula by
    spreadsheets; the header row is a row of cells like any other."""
    from core.parts.drawer import Drawer, Row
    from core.parts.drawer_file import drawer_csv_text, parse_drawer_text

    drawer = Drawer([Row({"kind": "R", "value": "1k", "quantity": "1", name: "=1+1"})],
                    columns=["kind", "value", "quantity", name])
    text = drawer_csv_text(drawer)
    for record in csv.reader(io.StringIO(text, newline="")):
        for cell in record:
            assert not cell.startswith(("=", "+", "-", "@", "\t", "\r")), cell
    again = parse_drawer_text(text)
    assert name.lower() in [c.lower() for c in again.columns]  # the prefix comes off again


# ---------------------------------------------------------------- PDF

LONG_LOCATION = "Garage_cabinet3_drawer12_boxA_left_rear"  # no break opportunity (UAX #14)


def test_sheet_pdf_shows_long_locations_whole_and_no_control_characters(qapp, tmp_path):
    """Read back with poppler's ``pdftotext -bbox`` (an outside tool): the long location
    is all there and stays left of the Line column; control characters are gone."""
    require_tool("pdftotext")
    from core.output.sheet import build_sheet
    from gui.sheet_render import render_sheet_pdf

    path = tmp_path / "drawer.csv"
    write_drawer_rows(path, [["R", "10k", "10", LONG_LOCATION, ""],
                             ["C", "100n", "5", "B2\x1b[2J\nsecond\u2028third\x07\x85",
                              "note\x0bone\x1b]0;x\x07"]])
    parts = read_drawer(path).parts()
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    sheet = build_sheet(osc, search(parts, osc, 700.0).candidates[0], "700 Hz", stock=parts)
    pdf = tmp_path / "sheet.pdf"
    render_sheet_pdf(sheet, pdf)
    html = subprocess.run(["pdftotext", "-bbox", str(pdf), "-"], capture_output=True,
                          text=True, check=True, timeout=60).stdout
    words = [(float(x0), float(x1), html_unescape(w)) for x0, x1, w in re.findall(
        r'<word xMin="([\d.]+)" yMin="[\d.]+" xMax="([\d.]+)" yMax="[\d.]+">([^<]*)</word>',
        html)]
    left = min(x0 for x0, _, w in words if w == "Location")
    right = min(x0 for x0, _, w in words if w == "Line")  # the next column
    column = "".join(w for x0, x1, w in words if left <= x0 and x1 <= right)
    assert LONG_LOCATION in column  # wrapped inside its column, not cut off
    assert {"second", "third"} <= {w for _, _, w in words}
    text = subprocess.run(["pdftotext", str(pdf), "-"], capture_output=True, text=True,
                          check=True, timeout=60).stdout
    assert not [ch for ch in text if not (ch.isprintable() or ch in "\n\x0c ")]


# ---------------------------------------------------------------- calibration names

@pytest.mark.parametrize("name", ["bench\n", "bench\r\n", "", "\n", "-bench", "a/b"])
def test_calibration_names_are_refused_whole(name, capsys):
    """A name becomes a file name: letters, digits, _ . - only, nothing after them."""
    from core.errors import InputError
    from core.model.calibration import calibrations_dir, check_name

    with pytest.raises(InputError):
        check_name(name)
    code, _out, err = _tickbin(capsys, "calibrate", "--family", "74HC14", "--supply", "5V",
                              "--r", "10k", "--c", "100n", "--measured", "760Hz",
                              f"--save={name}")
    assert code == 2
    assert "name" in err and len(err.strip().splitlines()) == 1
    assert not any(calibrations_dir().glob("*.json"))


# ---------------------------------------------------------------- small ones

@pytest.mark.parametrize("measured", ["10Hz", "1Hz", "0.001Hz"])
def test_a_far_off_measurement_gets_a_clear_message(measured, capsys):
    """10 kΩ and 100 nF on a 74HC14 at 5 V run near 760 Hz (RC ln ratio of the data
    sheet's thresholds); no thresholds between the rails slow them to ``measured``."""
    code, _out, err = _tickbin(capsys, "calibrate", "--family", "74HC14", "--supply", "5V",
                              "--r", "10k", "--c", "100n", "--measured", measured)
    assert code == 2
    assert "internal error" not in err and "broadcast" not in err
    assert "no thresholds" in err and len(err.strip().splitlines()) == 1


@pytest.mark.parametrize(("content", "line", "words"), [
    (b"r,c,frequency\n10k,100n,760Hz,extra\n", 2, "fields"),
    (b"r,c,frequency\n\n10k,100n,760Hz\n10k,100n,760Hz\xff\n", 4, "UTF-8"),
    (b"r,c,frequency\n10k,100n,\"" + b"7" * 140_000 + b"\"\n", 2, "larger"),
    (b"r,c,frequency\n10k,100n,760Hz\n\n10k,100n\n", 4, "needs frequency"),
])
def test_measurement_files_give_one_line_naming_file_and_line(content, line, words, tmp_path,
                                                                capsys):
    path = tmp_path / "bench.csv"
    path.write_bytes(content)
    code, _out, err = _tickbin(capsys, "calibrate", "--family", "74HC14", "--supply", "5V",
                               "--measurements", str(path))
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and "internal error" not in err
    assert f"{path}:{line}:" in err and words in err


# Unicode Character Database (UnicodeData.txt): U+2126 OHM SIGN decomposes canonically to
# U+03A9 GREEK CAPITAL LETTER OMEGA; U+FF10..U+FF19 FULLWIDTH DIGITs are <wide> 0..9;
# U+00B2 SUPERSCRIPT TWO is <super> 2 (so "10²" must not become 102).
@pytest.mark.parametrize(("text", "ohms"), [("10k\u2126", 1e4), ("4.7 k\u2126", 4.7e3),
                                            ("\uff11\uff10k", 1e4), ("\uff14\uff4b\uff17", 4.7e3),
                                            ("22\u00a0k\u03a9", 2.2e4)])
def test_values_read_compatibility_forms(text, ohms):
    from core.units import parse_resistance

    assert parse_resistance(text) == pytest.approx(ohms, rel=1e-12)


@pytest.mark.parametrize("text", ["10\u00b2k", "\u00bdk", "1\u2080k", "\u0661\u0660k"])
def test_values_refuse_forms_that_change_the_number(text):
    """Superscripts, fractions, subscripts and other scripts' digits are refused: one
    rule for values and quantities (ASCII digits after NFKC)."""
    from core.errors import InputError
    from core.units import parse_resistance

    with pytest.raises(InputError):
        parse_resistance(text)


def test_quantities_follow_the_same_rule_as_values(tmp_path, capsys):
    from core.errors import InputError
    from core.parts.part import parse_quantity_count

    assert parse_quantity_count("\uff11\uff10") == 10
    for text in ("10\u00b2", "\u0661\u0660"):
        with pytest.raises(InputError):
            parse_quantity_count(text)
    path = tmp_path / "drawer.csv"
    write_drawer_rows(path, [["R", "\uff11\uff10k", "\uff13", "A1", ""],
                             ["C", "100n", "\uff12", "A2", ""]])
    code, out, err = _tickbin(capsys, "search", "--stock", str(path), "--target", "700Hz",
                              "--top", "\uff13", "--json")
    assert code == 0, err
    assert len(json.loads(out)["candidates"]) <= 3


@pytest.mark.parametrize("value", [1.3e-20, 7.4e22, 1e30, 2.5e-16])
def test_values_beyond_the_si_prefixes_print_in_exponent_form(value):
    """SI prefixes in use run from p to G here; beyond them a value prints as mantissa
    and exponent, never as a row of zeros (and it reads back)."""
    from core.units import format_quantity, parse_quantity

    for quantity in ("frequency", "time", "resistance"):
        text = format_quantity(value, quantity)
        assert "00000" not in text, text
        number = text.split()[0]
        assert float(number) == pytest.approx(value, rel=5e-3), text
        if quantity != "time":
            assert parse_quantity(text, quantity) == pytest.approx(value, rel=5e-3)


def test_predict_with_an_absurd_resistor_prints_no_row_of_zeros(capsys):
    code, out, err = _tickbin(capsys, "predict", "--family", "74HC14", "--supply", "5V",
                              "--r", "1e30", "--c", "100n")
    assert "0.0000000" not in out + err
    assert code in (0, 2)


def test_an_empty_screenshot_name_is_refused(capsys):
    opened = []
    code = core.cli.main(["gui", "--screenshot", ""], window=opened.append)
    err = capsys.readouterr().err
    assert code == 2 and not opened
    assert "--screenshot" in err and len(err.strip().splitlines()) == 1
