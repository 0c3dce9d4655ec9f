"""Periods and frequencies of slow things (2min, 0.5h, 120bpm, 30rpm) wherever one is typed.

Reference: pint's own conversions, from a registry of this test's own (not the program's),
so the program's factors are checked against the unit library itself. A beat or a
revolution is one cycle (common practice, no published source).
"""

from __future__ import annotations

import json

import pint
import pytest
from support.cli import run_tickbin

from core.units import parse_band, parse_quantity

UREG = pint.UnitRegistry()


def pint_period_s(text: str) -> float:
    """Seconds per cycle as pint reads ``text`` (a time, or cycles per time)."""
    q = UREG(text.replace("bpm", " / minute"))
    if q.check("[time]"):
        return float(q.to("second").magnitude)
    return 1.0 / float(q.to("turn / second" if "rpm" in text else "hertz").magnitude)


SLOW = ("2min", "0.5h", "120bpm", "30rpm", "90 min", "1.5 hours")


@pytest.mark.parametrize("text", SLOW)
def test_a_slow_period_or_frequency_parses_as_pint_converts_it(text):
    f = parse_quantity(text, "frequency")
    assert f == pytest.approx(1.0 / pint_period_s(text), rel=1e-12)
    if UREG(text.replace("bpm", " / minute")).check("[time]"):
        assert parse_quantity(text, "period") == pytest.approx(pint_period_s(text), rel=1e-12)
    assert parse_band(f"{text}..1kHz")[0] == pytest.approx(f, rel=1e-12)


def test_search_and_trim_take_them(tmp_path):
    out = json.loads(run_tickbin(tmp_path, "search", "--circuit", "divider", "--family",
                                 "CD4060B", "--supply", "9V", "--target", "2min", "--top", "2",
                                 "--json").stdout)
    assert out["target_hz"] == pytest.approx(1 / pint_period_s("2min"), rel=1e-12)
    assert out["candidates"]
    out = json.loads(run_tickbin(tmp_path, "trim", "--band", "100bpm..140bpm", "--top", "2",
                                 "--json").stdout)
    assert out["band_hz"] == pytest.approx([1 / pint_period_s("100bpm"),
                                            1 / pint_period_s("140bpm")], rel=1e-12)


def test_the_sheet_takes_them(tmp_path):
    pdf = tmp_path / "slow.pdf"
    base = ("sheet", "--circuit", "divider", "--family", "CD4060B", "--supply", "9V",
            "--out", str(pdf), "--json")
    slow = run_tickbin(tmp_path, *base, "--target", "0.5h")
    assert slow.returncode == 0, slow.stderr
    hertz = run_tickbin(tmp_path, *base, "--target", repr(1 / pint_period_s("0.5h")))
    a, b = json.loads(slow.stdout), json.loads(hertz.stdout)
    assert a["candidate"] == b["candidate"]
    assert a["frequency_hz"] == pytest.approx(1 / pint_period_s("0.5h"), rel=0.02)


def test_calibrate_takes_them_on_the_line_and_in_a_file(tmp_path):
    base = ("calibrate", "--r", "1M", "--c", "10u", "--json")
    # 1 MΩ and 10 µF on a 74HC14 run near 0.12 Hz (f ≈ 1 / (0.8 R C), textbook Schmitt RC).
    bpm = json.loads(run_tickbin(tmp_path, *base, "--measured", "7.2bpm").stdout)
    hertz = json.loads(run_tickbin(tmp_path, *base, "--measured",
                                   repr(1 / pint_period_s("7.2bpm"))).stdout)
    assert bpm["vt_plus_v"] == pytest.approx(hertz["vt_plus_v"], rel=1e-12)
    assert bpm["scale"] == pytest.approx(hertz["scale"], rel=1e-12)
    log = tmp_path / "bench.csv"
    log.write_text("r,c,frequency\n1M,10u,8.333s\n1M,10u,7.2bpm\n", encoding="utf-8")
    from_file = json.loads(run_tickbin(tmp_path, "calibrate", "--measurements", str(log),
                                       "--json").stdout)
    two = tmp_path / "two.csv"
    two.write_text(f"r,c,frequency\n1M,10u,{1 / pint_period_s('8.333s')!r}\n"
                   f"1M,10u,{1 / pint_period_s('7.2bpm')!r}\n", encoding="utf-8")
    plain = json.loads(run_tickbin(tmp_path, "calibrate", "--measurements", str(two),
                                   "--json").stdout)
    assert from_file["vt_plus_v"] == pytest.approx(plain["vt_plus_v"], rel=1e-12)
