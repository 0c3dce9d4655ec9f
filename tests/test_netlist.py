"""SPICE netlists of chosen designs, checked in ngspice (Debian package ``ngspice``, batch mode).

ngspice is the outside reference: it integrates the netlist's circuit numerically (its own
transient solver, hysteresis switches and ``.meas`` lines), independent of the model's
closed-form phases. The issue's check: the simulated period matches the model within 1 %.
"""

from __future__ import annotations

import re
import subprocess

import pytest
from support.tools import require_tool

from core.design.search import search
from core.design.trim import trim
from core.model.timing import make_oscillator
from core.output.netlist import model_prediction, simulate, spice_netlist
from core.parts.drawer_file import read_drawer
from core.parts.part import Part
from core.storage.locations import demo_drawer_path

pytestmark = pytest.mark.spice

PERIOD_RTOL = 0.01  # the acceptance figure
DUTY_ATOL_POINTS = 1.0


@pytest.fixture(scope="module")
def parts() -> list[Part]:
    return read_drawer(demo_drawer_path()).parts()


@pytest.fixture(scope="module")
def ngspice() -> str:
    return require_tool("ngspice")


def _check(osc, cand, ngspice, rotation=None):
    text = spice_netlist(osc, cand, rotation_pct=rotation)
    sim = simulate(text, ngspice)
    model = model_prediction(osc, cand, rotation)
    assert sim["period_s"] == pytest.approx(model.period_s, rel=PERIOD_RTOL)
    assert sim["duty_pct"] == pytest.approx(model.duty_pct, abs=DUTY_ATOL_POINTS)
    return text, sim, model


@pytest.mark.parametrize(("family", "supply", "target"), [
    ("74HC14", 5.0, 1000.0),      # CMOS, the common case
    ("74HC14", 5.0, 150e3),       # fast: output resistance and delays matter
    ("74LS14", 5.0, 20e3),        # TTL: the input's Thevenin source through R
    ("CD40106B", 10.0, 100.0),    # slow 4000-series at 10 V
    ("74LVC14A", 3.3, 10e3),
])
def test_schmitt_netlist_simulates_to_the_model(parts, ngspice, family, supply, target):
    osc = make_oscillator("schmitt", family, supply)
    cand = search(parts, osc, target).candidates[0]
    text, _, _ = _check(osc, cand, ngspice)
    # The timing network is written part by part, as built.
    elements = [ln.split()[0] for ln in text.splitlines() if re.match(r"^[RC]\d+ ", ln)]
    assert len(elements) == sum(n.part_count for n in cand.networks.values())
    assert ".model hysteresis sw" in text


def test_given_thresholds_and_a_load_are_in_the_netlist(parts, ngspice):
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=3.0, vt_minus=1.5)
    cand = search(parts, osc, 2000.0).candidates[0]
    text, _, _ = _check(osc, cand, ngspice)
    assert "vt=2.25 vh=0.75" in text  # sw model: centre and half-width of the window
    loaded = make_oscillator("schmitt", "74HC14", 5.0, load_ohm=2200.0)
    cand = search(parts, loaded, 2000.0).candidates[0]
    text, _, _ = _check(loaded, cand, ngspice)
    assert "Rload out 0 2200" in text


@pytest.mark.parametrize("rotation", [None, 0.0, 100.0])
def test_trim_netlist_at_the_start_and_both_ends(parts, ngspice, rotation):
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    cand = trim(parts, osc, (900.0, 1100.0)).candidates[0]
    text, sim, _ = _check(osc, cand, ngspice, rotation)
    assert "RP1 " in text
    if rotation is not None:
        # range_hz is (full rotation, zero rotation), nominal.
        expected = cand.range_hz[0] if rotation == 100.0 else cand.range_hz[1]
        assert sim["frequency_hz"] == pytest.approx(expected, rel=PERIOD_RTOL)


@pytest.mark.parametrize(("family", "supply", "duty"), [
    ("NE555", 9.0, None), ("NE555", 5.0, 70.0), ("NE555", 9.0, 30.0), ("TLC555", 5.0, None)])
def test_555_netlist_simulates_to_the_model(parts, ngspice, family, supply, duty):
    osc = make_oscillator("555", family, supply)
    cand = search(parts, osc, 440.0, duty_pct=duty).candidates[0]
    text, sim, _ = _check(osc, cand, ngspice)
    # The NE555 data sheet's astable formula f = 1.44 / ((RA + 2 RB) C) holds for the
    # plain circuit with ideal levels; the simulated design must be near it (within the
    # discharge transistor's and the real levels' few per cent).
    if not cand.diode_steered:
        ra, rb, c = (cand.values[k] for k in ("RA", "RB", "C"))
        assert sim["frequency_hz"] == pytest.approx(1.44 / ((ra + 2 * rb) * c), rel=0.05)
    else:
        assert "D1 " in text


def test_netlist_runs_cleanly_in_batch_mode(parts, ngspice, tmp_path):
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    cand = search(parts, osc, 1000.0).candidates[0]
    path = tmp_path / "design.cir"
    path.write_text(spice_netlist(osc, cand), encoding="ascii")  # plain ASCII throughout
    run = subprocess.run([ngspice, "-b", str(path)], capture_output=True, text=True,
                         timeout=120, check=False)
    assert run.returncode == 0
    assert "error" not in run.stdout.lower() + run.stderr.lower()
    assert re.search(r"^period_s\s*=", run.stdout, re.MULTILINE)
