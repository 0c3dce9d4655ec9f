"""The DESIGN.md command-line contract, driven through ``tickbin``'s entry point.

Every check runs the console script's entry point (``gui.entry.main``) in this
process from a temporary folder, exactly as the contract spells the command, and
reads only what it prints (``support.cli``); the window and a handful of commands
run through the installed script in a fresh process, which must print the same.
Drawers are our own invented ones (written here as CSV) and the bundled demo.
Where the expected answer needs the timing model (the brute-force ranking and
the trim corners), the test evaluates ``core.model.timing`` directly, never the
search or trim code. Outside sources are named beside each check.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import subprocess
import sys
from collections import Counter
from pathlib import Path
from types import SimpleNamespace
from typing import Any

import numpy as np
import pytest
from support.brute_force import assert_first_or_empty, brute_force_best, rank_key
from support.cli import run_tickbin
from support.nodes import node_lines, node_value
from support.trim_checks import check_trim_candidate

from core.model.drift import with_dc_bias
from core.model.timing import make_oscillator
from core.parts.part import Part
from core.storage.locations import demo_drawer_path
from core.units import Tolerance

TICKBIN = shutil.which("tickbin") or str(Path(sys.executable).with_name("tickbin"))
DEMO = str(demo_drawer_path())
SCHMITT = ("--circuit", "schmitt", "--family", "74HC14", "--supply", "5V")
NE555 = ("--circuit", "555", "--family", "NE555", "--supply", "9V")

ONE, FIVE, TEN = Tolerance(0.01, 0.01), Tolerance(0.05, 0.05), Tolerance(0.10, 0.10)
# A small invented drawer (a repair bench's parts box). Each row: kind, value as written
# (several spellings the contract allows), the value in SI worked out by hand, tolerance
# text and meaning, quantity, location. Line numbers: header = 1, first row = 2.
BOX = [
    ("R", "1k", 1e3, "1%", ONE, 2, "A1"),
    ("R", "2k2", 2.2e3, "1%", ONE, 1, "A2"),            # IEC 60062 letter for the point
    ("R", "4.7 kΩ", 4.7e3, "±1%", ONE, 2, "A3"),
    ("R", "10000", 10e3, "F", ONE, 1, "A4"),             # IEC 60062 letter F = ±1 %
    ("R", "22k", 22e3, "1%", ONE, 3, "A5"),
    ("R", "47K", 47e3, "1%", ONE, 1, "A6"),
    ("R", "100k", 100e3, "1%", ONE, 2, "A7"),
    ("C", "1n", 1e-9, "5%", FIVE, 2, "B1"),
    ("C", "4n7", 4.7e-9, "J", FIVE, 1, "B2"),            # J = ±5 %
    ("C", "10nF", 10e-9, "5%", FIVE, 1, "B3"),
    ("C", "473", 47e-9, "5%", FIVE, 2, "B4"),            # three-digit pF code: 47 000 pF
    ("C", "0.1uF", 100e-9, "5%", FIVE, 1, "B5"),
    ("P", "10k", 10e3, "10%", TEN, 1, "C1"),
    ("P", "50k", 50e3, "10%", TEN, 1, "C2"),
]
BOX_PARTS = [Part(kind, si, tol, qty, location=loc, line=i + 2)  # type: ignore[arg-type]
             for i, (kind, _, si, _, tol, qty, loc) in enumerate(BOX)]
BY_LINE = {p.stock_line: p for p in BOX_PARTS}


# ---------------------------------------------------------------- running the script

def tickbin(cwd: Path, *argv: str) -> subprocess.CompletedProcess[str]:
    """In this process (``support.cli``): quick, and the same code the script runs."""
    return run_tickbin(cwd, *argv)


def installed_tickbin(cwd: Path, *argv: str) -> subprocess.CompletedProcess[str]:
    """Through the installed console script, in a fresh process."""
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen")
    return subprocess.run([TICKBIN, *argv], capture_output=True, text=True, cwd=cwd, env=env,
                          timeout=180)


def _no_nan(name: str) -> None:
    raise AssertionError(f"JSON carries {name}, which the JSON standard does not allow")


def run_json(cwd: Path, *argv: str) -> dict[str, Any]:
    """Exit 0 and exactly one JSON object on stdout (RFC 8259: no NaN or Infinity)."""
    return json_of(tickbin(cwd, *argv, "--json"))


def json_of(done: subprocess.CompletedProcess[str]) -> dict[str, Any]:
    assert done.returncode == 0, done.stderr
    assert "Traceback" not in done.stderr
    data = json.loads(done.stdout, parse_constant=_no_nan)  # a second object would not parse
    assert isinstance(data, dict)
    assert done.stdout.endswith("\n") and done.stdout.count("\n") == 1
    return data


def run_error(cwd: Path, *argv: str) -> str:
    """Exit 2, one line on stderr, no traceback; returns that line."""
    done = tickbin(cwd, *argv)
    assert done.returncode == 2, (done.stdout, done.stderr)
    err = done.stderr
    assert "Traceback" not in err and err.endswith("\n") and len(err.splitlines()) == 1, err
    return err.strip()


def write_box(folder: Path, rows: list[tuple[Any, ...]] = BOX, name: str = "box.csv") -> Path:
    lines = ["kind,value,tolerance,quantity,location,note"]
    lines += [f"{k},\"{v}\",{t},{q},{loc}," for k, v, _, t, _, q, loc in rows]
    path = folder / name
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def farads(c: float) -> str:
    """A capacitance for the command line: a bare number would read as a pF code."""
    return f"{c!r}F"


def is_number(x: Any) -> bool:
    return isinstance(x, int | float) and not isinstance(x, bool) and math.isfinite(x)


# ---------------------------------------------------------------- NODE helpers

def check_networks(cand: dict[str, Any], by_line: dict[int, Part], roles: tuple[str, ...],
                   max_parts: dict[str, int] | None = None) -> Counter[int]:
    """Values recompute from the NODEs, lines name the right kind, the quantity rule holds."""
    assert set(cand["values"]) == set(cand["networks"]) == set(roles)
    used: Counter[int] = Counter()
    for role in roles:
        node = cand["networks"][role]
        lines = node_lines(node)
        want = {"C": "C", "P": "P"}.get(role, "R")
        assert {by_line[line].kind for line in lines} == {want}, (role, node)
        assert is_number(cand["values"][role])
        assert cand["values"][role] == pytest.approx(node_value(node, by_line), rel=1e-12)
        if max_parts and role in max_parts:
            assert len(lines) <= max_parts[role]
        used.update(lines)
    # DESIGN.md: never more parts of a line than its quantity, over all the networks.
    assert all(used[line] <= by_line[line].quantity for line in used), used
    return used


def check_search_json(data: dict[str, Any], target: float, roles: tuple[str, ...],
                      by_line: dict[int, Part], accept: float = 1.0, duty: float | None = None,
                      duty_within: float = 1.0) -> None:
    assert set(data) >= {"limits", "notes", "candidates"}
    assert set(data["limits"]) >= {"r_min_ohm", "r_max_ohm"}
    assert all(is_number(v) for v in data["limits"].values())
    assert isinstance(data["notes"], list) and all(isinstance(n, str) for n in data["notes"])
    r_min, r_max = data["limits"]["r_min_ohm"], data["limits"]["r_max_ohm"]
    keys = []
    for cand in data["candidates"]:
        assert set(cand) >= {"frequency_hz", "error_pct", "duty_pct", "values", "networks",
                             "worst_case_hz"}
        for k in ("frequency_hz", "error_pct", "duty_pct"):
            assert is_number(cand[k])
        used = check_networks(cand, by_line, roles)
        assert cand["error_pct"] == pytest.approx(
            (cand["frequency_hz"] - target) / target * 100, rel=1e-9, abs=1e-9)
        lo, hi = cand["worst_case_hz"]
        assert is_number(lo) and is_number(hi)
        assert lo <= cand["frequency_hz"] <= hi
        assert 0 < cand["duty_pct"] < 100
        for role in roles:
            if role != "C":
                assert r_min <= cand["values"][role] <= r_max
        duty_error = None if duty is None else cand["duty_pct"] - duty
        if duty is not None:
            assert cand["duty_error_pct"] == pytest.approx(duty_error, abs=1e-9)
        keys.append(rank_key(not lo > 0, cand["error_pct"], duty_error, sum(used.values()),
                             accept, duty_within))
    # Ranking (DESIGN.md, second round): hits (within --accept and --duty-within) first,
    # fewest parts, then the combined error; the rest by combined error; builds that stop
    # at some corner last.
    assert keys == sorted(keys)


# ---------------------------------------------------------------- predict

def test_predict_schmitt_keys_types_and_bench_fact(tmp_path: Path) -> None:
    r = run_json(tmp_path, "predict", *SCHMITT, "--r", "21.7k", "--c", "1u")
    assert set(r) >= {"frequency_hz", "period_s", "duty_pct", "t_high_s", "t_low_s",
                      "worst_case_hz"}
    for k in ("frequency_hz", "period_s", "duty_pct", "t_high_s", "t_low_s"):
        assert is_number(r[k]) and r[k] > 0
    assert isinstance(r["worst_case_hz"], list) and len(r["worst_case_hz"]) == 2
    lo, hi = r["worst_case_hz"]
    assert lo < r["frequency_hz"] < hi
    assert r["period_s"] == pytest.approx(1 / r["frequency_hz"], rel=1e-12)
    assert r["t_high_s"] + r["t_low_s"] == pytest.approx(r["period_s"], rel=1e-12)
    assert r["duty_pct"] == pytest.approx(100 * r["t_high_s"] / r["period_s"], rel=1e-12)
    # Bench measurement (common practice, no published source): 21.7 kΩ and 1.00 µF on a
    # 5 V hex Schmitt inverter ran at 63.3 Hz, inside the 74HC14's worst-case band.
    assert lo < 63.3 < hi
    # Rule of thumb of the trade (no published source): f ≈ 1.2 … 1.5 / (R C) at 5 V CMOS.
    assert 1.2 <= r["frequency_hz"] * 21.7e3 * 1e-6 <= 1.5


def test_predict_555_against_the_ne555_datasheet(tmp_path: Path) -> None:
    # TI NE555 data sheet (SLFS022), astable: f = 1.44 / ((RA + 2 RB) C),
    # duty = (RA + RB) / (RA + 2 RB). The data sheet's 1.44 is 1/ln 2 rounded.
    ra, rb, c = 10e3, 47e3, 100e-9
    r = run_json(tmp_path, "predict", *NE555, "--ra", "10k", "--rb", "47k", "--c", "100n")
    assert r["frequency_hz"] == pytest.approx(1.44 / ((ra + 2 * rb) * c), rel=0.02)
    assert r["duty_pct"] == pytest.approx(100 * (ra + rb) / (ra + 2 * rb), abs=1.0)
    lo, hi = r["worst_case_hz"]
    assert lo < r["frequency_hz"] < hi
    # Thresholds given as exactly 2/3 and 1/3 of the supply: the data sheet's ln 2 law.
    r = run_json(tmp_path, "predict", *NE555, "--ra", "10k", "--rb", "47k", "--c", "100n",
                 "--vt-plus", "6V", "--vt-minus", "3V")
    assert r["frequency_hz"] == pytest.approx(1 / (math.log(2) * (ra + 2 * rb) * c), rel=0.005)


def test_given_thresholds_are_used_exactly_with_no_threshold_spread(tmp_path: Path) -> None:
    # Charge equation of DESIGN.md (Horowitz & Hill, AoE 3rd ed., §1.4): with VOH ≈ 5 V,
    # VOL ≈ 0 V, VT+ = 3 V, VT- = 2 V, T = R C (ln(3/2) + ln(3/2)). R = 100 kΩ keeps the
    # output resistance, and C = 10 nF the input and stray capacitance, below 0.2 %.
    given = ("--vt-plus", "3V", "--vt-minus", "2V")
    exact = ("--r-tolerance", "0%", "--c-tolerance", "0%")
    r = run_json(tmp_path, "predict", *SCHMITT, "--r", "100k", "--c", "10n", *given, *exact)
    assert r["frequency_hz"] == pytest.approx(1 / (100e3 * 10e-9 * 2 * math.log(1.5)),
                                              rel=0.005)
    assert r["duty_pct"] == pytest.approx(50.0, abs=0.5)
    # Exact parts and given thresholds: only the input leakage (±0.1 µA, devices.toml)
    # is left; I R = ±10 mV on each target, so hi/lo = ln(2.99/1.99) / ln(3.01/2.01).
    lo, hi = r["worst_case_hz"]
    assert lo < r["frequency_hz"] < hi
    assert hi / lo == pytest.approx(math.log(2.99 / 1.99) / math.log(3.01 / 2.01), rel=1e-3)
    # The table's thresholds with exact parts: the band is the threshold spread alone.
    table = run_json(tmp_path, "predict", *SCHMITT, "--r", "100k", "--c", "10n", *exact)
    lo, hi = table["worst_case_hz"]
    assert lo < 0.95 * table["frequency_hz"] and hi > 1.05 * table["frequency_hz"]
    # Given thresholds with toleranced parts: the band is exactly the part corners (each
    # with its leakage corner).
    tol = run_json(tmp_path, "predict", *SCHMITT, "--r", "100k", "--c", "10n", *given,
                   "--r-tolerance", "1%", "--c-tolerance", "5%")
    slow = run_json(tmp_path, "predict", *SCHMITT, "--r", "101k", "--c", "10.5n", *given,
                    *exact)
    fast = run_json(tmp_path, "predict", *SCHMITT, "--r", "99k", "--c", "9.5n", *given, *exact)
    assert tol["worst_case_hz"] == pytest.approx(
        [slow["worst_case_hz"][0], fast["worst_case_hz"][1]], rel=1e-9)
    assert tol["vt_plus_v"] == 3.0 and tol["vt_minus_v"] == 2.0


@pytest.mark.parametrize(("spelled", "same_as"), [
    (("--r", "21700", "--c", "1µF", "--supply", "5"), ("--r", "21.7k", "--c", "1u")),
    (("--r", "21k7", "--c", "105", "--supply", "5 V"), ("--r", "21.7 kΩ", "--c", "1 uF")),
])
def test_values_parse_like_the_csv(tmp_path: Path, spelled: tuple[str, ...],
                                   same_as: tuple[str, ...]) -> None:
    # IEC 60062: 21k7 = 21.7 kΩ, code 105 = 10 × 10^5 pF = 1 µF.
    a = run_json(tmp_path, "predict", "--circuit", "schmitt", "--family", "74HC14", *spelled)
    b = run_json(tmp_path, "predict", *SCHMITT, *same_as)
    assert a["values"] == b["values"] == {"R": 21.7e3, "C": 1e-6}
    assert a["frequency_hz"] == b["frequency_hz"]


# ---------------------------------------------------------------- calibrate

def test_calibrate_with_duty_solves_both_thresholds(tmp_path: Path) -> None:
    cal = run_json(tmp_path, "calibrate", *SCHMITT, "--r", "21.7k", "--c", "1u",
                   "--measured", "63.3Hz", "--duty", "47")
    assert set(cal) >= {"scale", "vt_plus_v", "vt_minus_v"}
    assert all(is_number(cal[k]) for k in ("scale", "vt_plus_v", "vt_minus_v"))
    # Bench fact of the timing-model issue (common practice, no published source):
    # thresholds near 2.80 V and 1.90 V.
    assert cal["vt_plus_v"] == pytest.approx(2.80, abs=0.05)
    assert cal["vt_minus_v"] == pytest.approx(1.90, abs=0.05)
    # Those thresholds reproduce the measurement through predict.
    r = run_json(tmp_path, "predict", *SCHMITT, "--r", "21.7k", "--c", "1u",
                 "--vt-plus", repr(cal["vt_plus_v"]), "--vt-minus", repr(cal["vt_minus_v"]))
    assert r["frequency_hz"] == pytest.approx(63.3, rel=1e-4)
    assert r["duty_pct"] == pytest.approx(47.0, abs=0.01)


def test_calibrate_without_duty_keeps_the_table_ratio(tmp_path: Path) -> None:
    table = run_json(tmp_path, "predict", *SCHMITT, "--r", "21.7k", "--c", "1u")
    cal = run_json(tmp_path, "calibrate", *SCHMITT, "--r", "21.7k", "--c", "1u",
                   "--measured", "63.3Hz")
    assert cal["vt_plus_v"] / cal["vt_minus_v"] == pytest.approx(
        table["vt_plus_v"] / table["vt_minus_v"], rel=1e-9)
    assert cal["scale"] == pytest.approx(63.3 / table["frequency_hz"], rel=1e-6)
    r = run_json(tmp_path, "predict", *SCHMITT, "--r", "21.7k", "--c", "1u",
                 "--vt-plus", repr(cal["vt_plus_v"]), "--vt-minus", repr(cal["vt_minus_v"]))
    assert r["frequency_hz"] == pytest.approx(63.3, rel=1e-4)
    # "2ms as a period where a frequency is asked": 15.8 ms is 63.29 Hz.
    by_period = run_json(tmp_path, "calibrate", *SCHMITT, "--r", "21.7k", "--c", "1u",
                         "--measured", "15.8ms")
    r = run_json(tmp_path, "predict", *SCHMITT, "--r", "21.7k", "--c", "1u", "--vt-plus",
                 repr(by_period["vt_plus_v"]), "--vt-minus", repr(by_period["vt_minus_v"]))
    assert r["period_s"] == pytest.approx(15.8e-3, rel=1e-4)


def test_calibrate_says_how_sure_it_is(tmp_path: Path) -> None:
    # Calibration parts' tolerances and the ±0.5 % reading (common practice, no published
    # source), each uniform with u = half-width / √3, added in quadrature: JCGM 100:2008
    # (GUM) §4.3.7 and §5.1.2 (f ∝ 1 / (R C): unit sensitivities).
    bench = (*SCHMITT, "--r", "33k", "--c", "470n", "--measured", "60Hz")
    loose = run_json(tmp_path, "calibrate", *bench)  # defaults: R ±5 %, C ±20 %
    sure = run_json(tmp_path, "calibrate", *bench, "--r-tolerance", "1%", "--c-tolerance",
                    "5%", "--save", "film")
    for cal, r, c in ((loose, 0.05, 0.20), (sure, 0.01, 0.05)):
        assert cal["uncertainty_pct"] == pytest.approx(
            100 * math.sqrt((r**2 + c**2 + 0.005**2) / 3), rel=0.01)
        assert cal["worst_case_pct"] == pytest.approx(100 * (r + c + 0.005), rel=0.01)
    assert any("1 % resistors and a C0G or film capacitor" in w for w in loose["warnings"])
    # A prediction with the calibration carries it into its worst case.
    design = ("--r", "68k", "--c", "22n", "--r-tolerance", "0.1%", "--c-tolerance", "0.1%")
    with_cal = run_json(tmp_path, "predict", "--calibration", "film", *design)
    by_hand = run_json(tmp_path, "predict", *SCHMITT, *design, "--vt-plus",
                       repr(with_cal["vt_plus_v"]), "--vt-minus", repr(with_cal["vt_minus_v"]))
    assert with_cal["calibration_uncertainty_pct"] == pytest.approx(sure["uncertainty_pct"])
    limit = sure["worst_case_pct"] / 100
    lo, hi = by_hand["worst_case_hz"]
    assert with_cal["worst_case_hz"] == pytest.approx([lo * (1 - limit), hi * (1 + limit)])


# ---------------------------------------------------------------- search

def candidates_of(data: dict[str, Any]) -> SimpleNamespace:
    """The JSON result in the shape tests/test_search.py's brute-force checks read."""
    return SimpleNamespace(notes=data["notes"], candidates=[
        SimpleNamespace(error_pct=c["error_pct"], duty_error_pct=c.get("duty_error_pct"),
                        hit=c["hit"], stops=not c["worst_case_hz"][0] > 0,
                        part_count=sum(len(node_lines(n)) for n in c["networks"].values()))
        for c in data["candidates"]])


@pytest.mark.parametrize(("target", "options", "max_r", "max_c", "accept"), [
    ("1kHz", (), 2, 2, 1.0),
    ("2ms", ("--accept", "5"), 2, 2, 5.0),                    # a period: 500 Hz
    ("38k", ("--max-resistors", "3", "--accept", "0.05"), 3, 2, 0.05),
    ("440", ("--max-resistors", "1", "--max-capacitors", "1"), 1, 1, 1.0),
])
def test_search_schmitt_contract_and_ranking(tmp_path: Path, target: str,
                                             options: tuple[str, ...], max_r: int, max_c: int,
                                             accept: float) -> None:
    box = write_box(tmp_path)
    data = run_json(tmp_path, "search", "--stock", str(box), *SCHMITT, "--target", target,
                    *options)
    f_target = {"1kHz": 1000.0, "2ms": 500.0, "38k": 38e3, "440": 440.0}[target]
    check_search_json(data, f_target, ("R", "C"), BY_LINE, accept)
    assert 1 <= len(data["candidates"]) <= 10
    for cand in data["candidates"]:
        check_networks(cand, BY_LINE, ("R", "C"), {"R": max_r, "C": max_c})
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    best, reached = brute_force_best(BOX_PARTS, osc, f_target, max_r, max_c, accept)
    assert reached
    assert_first_or_empty(candidates_of(data), best, reached, accept)


def test_search_top_and_period_target(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    top3 = run_json(tmp_path, "search", "--stock", str(box), *SCHMITT, "--target", "500Hz",
                    "--top", "3")
    assert len(top3["candidates"]) == 3
    period = run_json(tmp_path, "search", "--stock", str(box), *SCHMITT, "--target", "2ms",
                      "--top", "3")
    assert period["candidates"] == top3["candidates"]


def test_search_with_given_thresholds_spreads_by_part_tolerances_only(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    given = ("--vt-plus", "2.8", "--vt-minus", "1.9")
    data = run_json(tmp_path, "search", "--stock", str(box), *SCHMITT, "--target", "1k",
                    *given, "--top", "2")
    # Every resistor in the box is ±1 % and every capacitor ±5 %, so any series or parallel
    # network of them spans exactly value × (1 ± tolerance): predict must give the same band.
    for cand in data["candidates"]:
        v = cand["values"]
        r = run_json(tmp_path, "predict", *SCHMITT, "--r", repr(v["R"]), "--c", farads(v["C"]),
                     *given, "--r-tolerance", "1%", "--c-tolerance", "5%")
        assert cand["frequency_hz"] == pytest.approx(r["frequency_hz"], rel=1e-9)
        assert cand["worst_case_hz"] == pytest.approx(r["worst_case_hz"], rel=1e-9)


def test_search_555_contract(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    data = run_json(tmp_path, "search", "--stock", str(box), *NE555, "--target", "1kHz")
    check_search_json(data, 1000.0, ("RA", "RB", "C"), BY_LINE)
    assert data["candidates"]
    for cand in data["candidates"]:
        v = cand["values"]
        # NE555 data sheet (TI SLFS022): f = 1.44 / ((RA + 2 RB) C), duty (RA+RB)/(RA+2RB);
        # the model adds the discharge transistor and edge delays (a few per cent at most).
        assert cand["frequency_hz"] == pytest.approx(1.44 / ((v["RA"] + 2 * v["RB"]) * v["C"]),
                                                     rel=0.03)
        assert cand["duty_pct"] == pytest.approx(
            100 * (v["RA"] + v["RB"]) / (v["RA"] + 2 * v["RB"]), abs=1.5)


def test_search_555_duty_and_every_option(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    data = run_json(tmp_path, "search", "--stock", str(box), *NE555, "--target", "1kHz",
                    "--duty", "70", "--max-resistors", "3", "--max-capacitors", "1",
                    "--accept", "2", "--duty-within", "1.5", "--top", "4")
    check_search_json(data, 1000.0, ("RA", "RB", "C"), BY_LINE, accept=2.0, duty=70.0,
                      duty_within=1.5)
    assert 1 <= len(data["candidates"]) <= 4
    for cand in data["candidates"]:
        check_networks(cand, BY_LINE, ("RA", "RB", "C"), {"RA": 3, "RB": 3, "C": 1})
    first = data["candidates"][0]
    assert abs(first["error_pct"]) <= 2.0 and abs(first["duty_pct"] - 70.0) <= 1.5
    low = run_json(tmp_path, "search", "--stock", str(box), *NE555, "--target", "1kHz",
                   "--duty", "30", "--top", "2")
    assert low["candidates"] and any("diode" in n for n in low["notes"])
    check_search_json(low, 1000.0, ("RA", "RB", "C"), BY_LINE, duty=30.0)


def test_search_on_the_demo_drawer(tmp_path: Path) -> None:
    from core.parts.drawer_file import read_drawer

    parts = read_drawer(DEMO).parts()
    data = run_json(tmp_path, "search", "--stock", DEMO, *SCHMITT, "--target", "1kHz")
    check_search_json(data, 1000.0, ("R", "C"), {p.stock_line: p for p in parts})
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    # The demo's ceramics have rated voltages: brute force over what the circuit sees.
    best, reached = brute_force_best(with_dc_bias(parts, osc), osc, 1000.0, 2, 2, 1.0)
    assert_first_or_empty(candidates_of(data), best, reached, 1.0)


# ---------------------------------------------------------------- trim

def test_trim_contract_with_given_thresholds(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    data = run_json(tmp_path, "trim", "--stock", str(box), *SCHMITT, "--band", "1k..1.2kHz",
                    "--vt-plus", "2.8", "--vt-minus", "1.9", "--top", "3")
    assert set(data) >= {"notes", "candidates"}
    assert 1 <= len(data["candidates"]) <= 3
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.8, vt_minus=1.9)
    ratios = []
    for cand in data["candidates"]:
        assert set(cand) >= {"values", "networks", "range_hz", "guaranteed_hz",
                             "rotation_pct"}
        assert set(cand["networks"]["P"]) == {"line"}
        check_networks(cand, BY_LINE, ("R", "P", "C"))
        assert all(is_number(x) for k in ("range_hz", "guaranteed_hz", "rotation_pct")
                   for x in cand[k])
        # Corner by corner with the timing model (tests/test_trim.py): guaranteed band covers
        # 1000..1200 Hz, range_hz is [full rotation, zero rotation], rotation_pct is
        # [at band high, at band low], R is never zero.
        check_trim_candidate(cand, BOX_PARTS, osc, (1000.0, 1200.0))
        f_full, f_zero = cand["range_hz"]
        lo, hi = cand["guaranteed_hz"]
        assert f_full <= lo <= 1000.0 < 1200.0 <= hi <= f_zero
        ratios.append(f_zero / f_full)
    assert ratios == sorted(ratios)  # finest adjustment first
    # The same through predict: zero rotation is R alone, full rotation R + P.
    first = data["candidates"][0]["values"]
    zero = run_json(tmp_path, "predict", *SCHMITT, "--r", repr(first["R"]), "--c",
                    farads(first["C"]), "--vt-plus", "2.8", "--vt-minus", "1.9")
    full = run_json(tmp_path, "predict", *SCHMITT, "--r", repr(first["R"] + first["P"]), "--c",
                    farads(first["C"]), "--vt-plus", "2.8", "--vt-minus", "1.9")
    assert data["candidates"][0]["range_hz"] == pytest.approx(
        [full["frequency_hz"], zero["frequency_hz"]], rel=1e-9)


def test_trim_on_the_demo_drawer_with_the_table_spread(tmp_path: Path) -> None:
    from core.parts.drawer_file import read_drawer

    parts = read_drawer(DEMO).parts()
    by_line = {p.stock_line: p for p in parts}
    data = run_json(tmp_path, "trim", "--stock", DEMO, *SCHMITT, "--band", "900..1100")
    assert data["candidates"]
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    for cand in data["candidates"]:
        check_networks(cand, by_line, ("R", "P", "C"))
        check_trim_candidate(cand, with_dc_bias(parts, osc), osc, (900.0, 1100.0))
    ratios = [c["range_hz"][1] / c["range_hz"][0] for c in data["candidates"]]
    assert ratios == sorted(ratios)


# ---------------------------------------------------------------- empty results

@pytest.mark.parametrize("circuit", [SCHMITT, NE555])
def test_a_target_nothing_reaches_is_an_empty_list_with_notes(tmp_path: Path,
                                                              circuit: tuple[str, ...]) -> None:
    # 50 MHz is far beyond either chip (74HC14 propagation delay ~10 ns per edge).
    data = run_json(tmp_path, "search", "--stock", DEMO, *circuit, "--target", "50MHz")
    assert data["candidates"] == []
    assert data["notes"] and any("50.0 MHz" in n for n in data["notes"])


def test_drawers_without_capacitors_or_pots_give_empty_lists(tmp_path: Path) -> None:
    no_caps = write_box(tmp_path, [row for row in BOX if row[0] != "C"], "no_caps.csv")
    data = run_json(tmp_path, "search", "--stock", str(no_caps), *SCHMITT, "--target", "1k")
    assert data["candidates"] == [] and any("capacitor" in n for n in data["notes"])
    no_pots = write_box(tmp_path, [row for row in BOX if row[0] != "P"], "no_pots.csv")
    data = run_json(tmp_path, "trim", "--stock", str(no_pots), *SCHMITT, "--band", "1k..1.2k")
    assert data["candidates"] == [] and any("potentiometer" in n for n in data["notes"])
    # A band far wider than any pot in the box can sweep.
    box = write_box(tmp_path)
    data = run_json(tmp_path, "trim", "--stock", str(box), *SCHMITT, "--band", "10..100k")
    assert data["candidates"] == [] and data["notes"]


# ---------------------------------------------------------------- sheet, netlist, stock, gui

def test_sheet_pick_and_out(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    found = run_json(tmp_path, "search", "--stock", str(box), *SCHMITT, "--target", "1kHz")
    out = tmp_path / "second.pdf"
    sheet = run_json(tmp_path, "sheet", "--stock", str(box), *SCHMITT, "--target", "1kHz",
                     "--pick", "2", "--out", str(out))
    assert out.read_bytes()[:5] == b"%PDF-"  # ISO 32000-1 §7.5.2: the file header
    second = found["candidates"][1]
    assert sheet["candidate"]["values"] == second["values"]
    assert sheet["candidate"]["networks"] == second["networks"]
    trim_pdf = tmp_path / "trim.pdf"
    done = tickbin(tmp_path, "sheet", "--stock", str(box), *SCHMITT, "--band", "1k..1.2k",
                   "--vt-plus", "2.8", "--vt-minus", "1.9", "--out", str(trim_pdf))
    assert done.returncode == 0, done.stderr
    assert trim_pdf.read_bytes()[:5] == b"%PDF-"


def test_netlist_out(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    out = tmp_path / "design.cir"
    data = run_json(tmp_path, "netlist", "--stock", str(box), *SCHMITT, "--target", "1kHz",
                    "--out", str(out))
    text = out.read_text(encoding="utf-8").lower()
    # SPICE decks: a title line first, ".tran" for a transient run, ".end" last
    # (ngspice manual, ch. 2 and 11).
    assert ".tran" in text and text.rstrip().endswith(".end")
    assert data["model"]["frequency_hz"] == pytest.approx(data["candidate"]["frequency_hz"],
                                                          rel=1e-12)


def test_stock_check_text_and_json(tmp_path: Path) -> None:
    box = write_box(tmp_path)
    data = run_json(tmp_path, "stock", "check", str(box))
    assert data["lines"] == len(BOX)
    assert data["counts"]["resistors"] == {"lines": 7, "parts": 12}
    assert data["counts"]["capacitors"] == {"lines": 5, "parts": 7}
    assert data["counts"]["potentiometers"] == {"lines": 2, "parts": 2}
    done = tickbin(tmp_path, "stock", "check", str(box))
    assert done.returncode == 0 and str(box) in done.stdout and "resistors" in done.stdout
    with pytest.raises(json.JSONDecodeError):
        json.loads(done.stdout)  # without --json: readable text, not JSON


def window_picture(path: Path, size: tuple[int, int]) -> np.ndarray:
    """The PNG's pixels (0xAARRGGBB), after checking it is the window drawn, not blank."""
    from PySide6.QtGui import QImage

    image = QImage(str(path))  # Qt's PNG reader (the format: ISO/IEC 15948)
    assert not image.isNull()
    assert (image.width(), image.height()) == size
    image = image.convertToFormat(QImage.Format.Format_ARGB32)
    # A copy: the array must outlive the QImage that owns the memory.
    rows = np.frombuffer(image.constBits(), dtype=np.uint32).reshape(size[1], -1)
    pixels = rows[:, :size[0]].copy()
    # A drawn window (tables, text, plots, anti-aliased edges) has many colours, none of
    # them filling the picture, and dark text on light ground.
    colours, counts = np.unique(pixels, return_counts=True)
    assert len(colours) > 50 and counts.max() < 0.9 * pixels.size
    grey = ((pixels >> 16 & 0xFF) + (pixels >> 8 & 0xFF) + (pixels & 0xFF)) / 3
    assert grey.min() < 80 and grey.max() > 200 and grey.std() > 10
    return pixels


def test_gui_screenshot_offscreen(qapp, tmp_path: Path) -> None:
    size = ("--size", "1200x760")
    box = write_box(tmp_path)
    shot = tmp_path / "window.png"
    done = installed_tickbin(tmp_path, "gui", "--stock", str(box), "--screenshot", str(shot),
                             *size)
    assert done.returncode == 0, done.stderr
    assert done.stderr == ""  # Qt's offscreen size-hint notice is filtered (gui/app.py)
    boxed = window_picture(shot, (1200, 760))
    demo = tmp_path / "demo.png"
    data = json_of(installed_tickbin(tmp_path, "gui", "--screenshot", str(demo), *size,
                                     "--json"))
    assert data["screenshot"] == str(demo)
    # The demo drawer's window is another picture: what is drawn follows what is open.
    shown = window_picture(demo, (1200, 760))
    assert np.count_nonzero(shown != boxed) > 0.05 * boxed.size


@pytest.mark.parametrize("argv", [
    ("--version",),
    ("search", "--stock", DEMO, *NE555, "--target", "1kHz", "--json"),
    ("stock", "check", DEMO),
    ("predict", *SCHMITT, "--r", "ten", "--c", "1n"),             # a bad value: exit 2
    ("search", "--target", "1k", "--no-such-option"),             # a usage error: exit 2
])
def test_the_installed_script_prints_what_the_in_process_run_prints(
        tmp_path: Path, argv: tuple[str, ...]) -> None:
    # The checks here call the script's entry point in this process; the console script in
    # a fresh process must give the same exit status and the same bytes on both streams.
    script = installed_tickbin(tmp_path, *argv)
    here = tickbin(tmp_path, *argv)
    assert (script.returncode, script.stdout, script.stderr) == (
        here.returncode, here.stdout, here.stderr)
    assert script.stdout or script.stderr


# ---------------------------------------------------------------- errors

def test_bad_drawer_lines_name_file_and_line(tmp_path: Path) -> None:
    bad = tmp_path / "bad.csv"
    bad.write_text("kind,value,quantity\nR,10k,2\nR,ten,1\nC,1n,x\n", encoding="utf-8")
    err = run_error(tmp_path, "search", "--stock", str(bad), "--target", "1k")
    assert f"{bad}:3" in err
    # stock check lists every bad line on stderr, one each (the drawer issue, newer than
    # DESIGN.md's one-line rule, says so for this command); --json adds one object.
    done = tickbin(tmp_path, "stock", "check", str(bad))
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert [ln.split(": ")[0] for ln in done.stderr.splitlines()] == [f"{bad}:3", f"{bad}:4"]
    done = tickbin(tmp_path, "stock", "check", str(bad), "--json")
    assert done.returncode == 2 and done.stderr.count("\n") == 2
    problems = json.loads(done.stdout)["problems"]
    assert [p["line"] for p in problems] == [3, 4]
    assert all(p["file"] == str(bad) and p["reason"] for p in problems)


@pytest.mark.parametrize(("argv", "words"), [
    (("search", "--stock", "nope.csv", "--target", "1k"), "nope.csv"),
    (("stock", "check", "nope.csv"), "nope.csv"),
    # A record separator in a file name is a line break to str.splitlines (Python docs):
    # shown escaped, the message stays one line.
    (("search", "--stock", "odd\x1ename\u2028.csv", "--target", "1k"),
     "odd\\x1ename\\u2028.csv"),
    (("predict", "--family", "74HC14", "--supply", "12V", "--r", "10k", "--c", "1n"), "12 V"),
    (("predict", *NE555[:4], "--supply", "3V", "--ra", "1k", "--rb", "1k", "--c", "1n"), "3 V"),
    (("predict", "--family", "74LS14", "--supply", "5V", "--r", "1M", "--c", "100n"),
     "will not oscillate"),
    (("predict", *SCHMITT, "--r", "ten", "--c", "1n"), "--r"),
    (("predict", *SCHMITT, "--r", "10k", "--c", "1n", "--supply", "5X"), "--supply"),
    (("predict", *SCHMITT, "--r", "-10k", "--c", "1n"), "--r"),
    (("predict", "--family", "74XX99", "--r", "10k", "--c", "1n"), "74XX99"),
    (("calibrate", *SCHMITT, "--r", "21.7k", "--c", "1u", "--measured", "1MHz"), "1.00 MHz"),
    (("search", "--stock", DEMO, "--target", "fast"), "--target"),
    (("trim", "--stock", DEMO, "--band", "480"), "--band"),
    (("sheet", "--stock", "tiny.csv", "--target", "1k", "--accept", "50", "--pick", "2",
      "--out", "x.pdf"), "--pick 2"),
])
def test_errors_exit_2_with_one_line(tmp_path: Path, argv: tuple[str, ...], words: str) -> None:
    # One resistor and one capacitor: a single candidate to pick from.
    (tmp_path / "tiny.csv").write_text("kind,value,quantity\nR,1k,1\nC,1u,1\n",
                                       encoding="utf-8")
    err = run_error(tmp_path, *argv)
    assert words in err
    err = run_error(tmp_path, *argv, "--json")
    assert words in err
