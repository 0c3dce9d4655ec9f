"""``tickbin predict`` and ``tickbin calibrate`` per the DESIGN.md contract."""

from __future__ import annotations

import json
import math

import pytest

from core.cli import main
from core.model.devices import device_table

PREDICT_KEYS = {"frequency_hz", "period_s", "duty_pct", "t_high_s", "t_low_s", "worst_case_hz"}
CALIBRATE_KEYS = {"scale", "vt_plus_v", "vt_minus_v"}


def run_json(capsys, *argv: str) -> dict:
    assert main([*argv, "--json"]) == 0
    out = capsys.readouterr().out
    assert out.count("\n") == 1  # exactly one JSON object
    return json.loads(out)


def run_error(capsys, *argv: str) -> str:
    try:
        status = main(list(argv))
    except SystemExit as e:  # argparse usage errors exit from inside parse_args
        status = e.code
    assert status == 2
    captured = capsys.readouterr()
    err = captured.err.strip()
    assert "\n" not in err and "Traceback" not in err and captured.out == ""
    return err


def test_predict_schmitt_contract(capsys):
    r = run_json(capsys, "predict", "--circuit", "schmitt", "--family", "74HC14",
                 "--supply", "5V", "--r", "21.7k", "--c", "1u")
    assert set(r) >= PREDICT_KEYS
    assert r["period_s"] == pytest.approx(1 / r["frequency_hz"])
    assert r["t_high_s"] + r["t_low_s"] == pytest.approx(r["period_s"])
    assert r["duty_pct"] == pytest.approx(100 * r["t_high_s"] / r["period_s"])
    lo, hi = r["worst_case_hz"]
    # Bench measurement (common practice, no published source): 63.3 Hz lies in the band.
    assert lo < 63.3 < hi
    assert lo < r["spread_95_hz"][0] < r["frequency_hz"] < r["spread_95_hz"][1] < hi


def test_predict_555_contract(capsys):
    # TI TLC555 data sheet astable example: RA = 5 kΩ, RB = 3 kΩ, C = 0.15 µF
    # (f = 1.44/((RA + 2 RB) C) = 873 Hz, duty (RA + RB)/(RA + 2 RB) = 72.7 %).
    r = run_json(capsys, "predict", "--circuit", "555", "--family", "TLC555", "--supply", "5V",
                 "--ra", "5k", "--rb", "3k", "--c", "0.15u")
    assert set(r) >= PREDICT_KEYS
    assert r["frequency_hz"] == pytest.approx(872.7, rel=0.01)
    assert r["duty_pct"] == pytest.approx(72.7, abs=0.5)


@pytest.mark.parametrize("family", device_table().families())
def test_predict_answers_for_every_family(family, capsys):
    fam = device_table().family(family)
    d = fam.at(fam.supply_range_v[1])
    r_ohm = math.sqrt(d.r_min_ohm * d.r_max_ohm) if fam.circuit == "schmitt" else 10e3
    if fam.name in ("74LS14", "7414"):
        r_ohm = d.r_min_ohm
    parts = {"schmitt": ["--r", f"{r_ohm:.6g}"], "555": ["--ra", "10k", "--rb", "22k"],
             "cmos-astable": ["--r", "100k", "--rs", "470k"],
             "divider": ["--r", "100k", "--rs", "470k", "--divide-by", "16"]}[fam.circuit]
    r = run_json(capsys, "predict", "--circuit", fam.circuit, "--family", family,
                 "--supply", f"{fam.supply_range_v[1]}V", *parts, "--c", "10n")
    assert r["frequency_hz"] > 0 and r["worst_case_hz"][0] <= r["frequency_hz"]
    assert r["frequency_hz"] <= r["worst_case_hz"][1]


def test_predict_readable_table(capsys):
    assert main(["predict", "--family", "74HC14", "--r", "100", "--c", "1u"]) == 0
    out = capsys.readouterr().out
    for word in ("frequency", "worst case", "95 % of builds", "warnings:", "sensible range"):
        assert word in out


@pytest.mark.parametrize(("argv", "message"), [
    (["predict", "--family", "74LS14", "--r", "10k", "--c", "100n"], "will not oscillate"),
    (["predict", "--family", "74HC14", "--supply", "12V", "--r", "10k", "--c", "1n"],
     "supply range"),
    (["predict", "--family", "74HC14", "--r", "10k"], "--r R --c C"),
    (["predict", "--circuit", "schmitt", "--family", "NE555", "--r", "1k", "--c", "1n"],
     "--circuit 555"),
    (["predict", "--family", "nosuch", "--r", "1k", "--c", "1n"], "unknown family"),
    (["predict", "--family", "74HC14", "--r", "1k", "--c", "1n", "--vt-plus", "2"],
     "both thresholds"),
    (["predict", "--family", "74HC14", "--r", "banana", "--c", "1n"], "resistance"),
    (["predict", "--family", "74HC14", "--r", "1k", "--c", "1n", "--calibration", "none"],
     "no such calibration"),
    (["calibrate", "--family", "74HC14", "--r", "1k", "--c", "1n"], "--measured"),
    (["calibrate", "--family", "74HC14", "--r", "21.7k", "--c", "1u", "--measured", "63.3",
      "--duty", "150"], "duty"),
])
def test_errors_are_one_line_with_status_2(argv, message, capsys):
    assert message in run_error(capsys, *argv)


def test_given_thresholds_are_used_exactly(capsys):
    r = run_json(capsys, "predict", "--family", "74HC14", "--r", "21.7k", "--c", "1u",
                 "--vt-plus", "2.8", "--vt-minus", "1.9", "--stray", "0")
    assert (r["vt_plus_v"], r["vt_minus_v"], r["thresholds"]) == (2.8, 1.9, "given")
    # Textbook charge equation with the bench thresholds: ~63 Hz, 47 % high.
    assert r["frequency_hz"] == pytest.approx(63.3, rel=0.01)
    assert r["duty_pct"] == pytest.approx(47.0, abs=0.5)


def test_calibrate_contract_save_and_reuse(capsys):
    # Bench measurement (common practice, no published source): thresholds near 2.80/1.90 V.
    r = run_json(capsys, "calibrate", "--circuit", "schmitt", "--family", "74HC14",
                 "--supply", "5V", "--r", "21.7k", "--c", "1.00u", "--measured", "63.3",
                 "--duty", "47", "--save", "bench")
    assert set(r) >= CALIBRATE_KEYS
    assert r["vt_plus_v"] == pytest.approx(2.80, abs=0.03)
    assert r["vt_minus_v"] == pytest.approx(1.90, abs=0.03)
    assert r["saved"]
    assert run_json(capsys, "calibrate", "--list")["calibrations"] == ["bench"]
    p = run_json(capsys, "predict", "--family", "74HC14", "--r", "21.7k", "--c", "1u",
                 "--calibration", "bench")
    assert p["frequency_hz"] == pytest.approx(63.3, rel=1e-6)
    assert p["thresholds"] == "calibration bench"
    ratio = run_json(capsys, "calibrate", "--family", "74HC14", "--r", "21.7k", "--c", "1u",
                     "--measured", "15.8ms")  # a period where a frequency is asked
    assert ratio["mode"] == "ratio" and ratio["scale"] > 0


def test_calibrate_text_and_measurement_file(tmp_path, capsys):
    csv = tmp_path / "bench.csv"
    csv.write_text("r,c,frequency,duty\n21.7k,1u,63.3,47\n10k,1u,137Hz,\n47k,220n,131,\n")
    assert main(["calibrate", "--family", "74HC14", "--measurements", str(csv)]) == 0
    out = capsys.readouterr().out
    assert "3 measurements" in out and "VT+" in out and "rms misfit" in out
    bad = tmp_path / "bad.csv"
    bad.write_text("r,c,frequency\n21.7k,1u,\n")
    assert f"{bad}:2" in run_error(capsys, "calibrate", "--family", "74HC14",
                                   "--measurements", str(bad))


def test_a_calibration_brings_its_chip_and_supply(capsys):
    run_json(capsys, "calibrate", "--family", "CD40106B", "--supply", "9V", "--r", "100k",
             "--c", "10n", "--measured", "1.1k", "--save", "cd9")
    r = run_json(capsys, "predict", "--calibration", "cd9", "--r", "100k", "--c", "10n")
    assert (r["family"], r["supply_v"]) == ("CD40106B", 9.0)
    assert r["frequency_hz"] == pytest.approx(1100.0, rel=1e-6)
    moved = run_json(capsys, "predict", "--calibration", "cd9", "--supply", "12V", "--r", "100k",
                     "--c", "10n")
    assert any("measured at 9 V" in w for w in moved["warnings"])
    assert "74HC14" in run_error(capsys, "predict", "--calibration", "cd9", "--family",
                                 "74HC14", "--r", "1k", "--c", "1n")


def test_devices_lists_the_table(capsys):
    r = run_json(capsys, "devices")
    assert [f["family"] for f in r["families"]] == device_table().families()
    one = run_json(capsys, "devices", "74HC14", "--supply", "4.5V")["families"][0]
    # NXP 74HC1G14 static characteristics at 4.5 V.
    assert one["at"][0]["vt_plus_v"] == [1.7, 2.36, 3.15]
    assert one["pins"]["input"] == 1
    assert "supply range" in run_error(capsys, "devices", "74HC14", "--supply", "9V")


def test_predict_divider_keys(capsys) -> None:
    # DESIGN.md "Second round": divide_by, tap and oscillator_hz; frequency_hz is the
    # divided output (the contract).
    r = run_json(capsys, "predict", "--circuit", "divider", "--family", "CD4060B",
                 "--supply", "10V", "--r", "100k", "--rs", "470k", "--c", "10n",
                 "--divide-by", "1024")
    assert r["divide_by"] == 1024 and r["tap"] == "Q10"
    assert r["oscillator_hz"] == pytest.approx(1024 * r["frequency_hz"], rel=1e-12)
    lo, hi = r["worst_case_hz"]
    assert lo < r["frequency_hz"] < hi
