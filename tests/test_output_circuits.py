"""Build sheets and netlists of the circuits issue 13 adds: the diode-steered Schmitt
oscillator, the two-inverter CMOS astable and the oscillator with a binary counter.

Outside references: the CD4060B / 74HC4060 and CD4069UB / 74HCU04 pinouts (Motorola
MC54/74HC4060 logic diagram, TI SN74HC4060 SCLS161D, Nexperia 74HCU04 Rev. 7 Table 2, TI
CD4069UB functional diagram), ngspice simulating the exported
netlists, and the facts of the trade issue 13 names for the sheet (the 4060's reset
held low, unused inputs tied, decoupling).
"""

from __future__ import annotations

import datetime as dt
import json

import pytest
from support.designs import ngspice_run, one_part_design
from support.tools import require_tool

from core.model.circuits.divider import with_divide_by
from core.model.timing import make_oscillator
from core.output.netlist import spice_netlist
from core.output.sheet import build_sheet

TODAY = dt.date(2026, 12, 1)


def divider(family: str = "CD4060B", supply: float = 9.0, n: int = 1024):
    return with_divide_by(make_oscillator("divider", family, supply), n)


DIVIDER_VALUES = {"R": 220e3, "RS": 1e6, "C": 470e-9}
RING_VALUES = {"R": 100e3, "RS": 470e3, "C": 10e-9}


def _pins(sheet) -> dict[str, tuple[str, str]]:
    return {row.pin: (row.function, row.connect) for row in sheet.pins}


def test_divider_sheet_names_the_tap_pin_and_holds_reset_low():
    osc = divider()
    sheet = build_sheet(osc, one_part_design(osc, DIVIDER_VALUES), "4 mHz", today=TODAY)
    pins = _pins(sheet)
    # 4060 pinout (MC54/74HC4060 logic diagram, pin-for-pin with the CD4060B): Q10 on
    # 15, reset on 12, Osc In 11, Osc Out 1 10, Osc Out 2 9, VSS 8, VDD 16.
    assert pins["15"][0] == "Q10 output"
    assert pins["12"][1].startswith("GND")
    assert "RS" in pins["11"][1] and "R to" in pins["10"][1] and "C to" in pins["9"][1]
    assert {"8", "16"} <= set(pins)
    notes = " ".join(sheet.build_notes)
    assert "Q10 (pin 15)" in notes and "Q4 (pin 7)" in notes and "MR (12) to VSS" in notes
    osc_row = dict(sheet.predictions)["Oscillator (before the counter)"]
    assert "divided by 1024 at Q10" in osc_row
    # The capacitor's voltage reverses every cycle: the cautions say non-polarised.
    assert any("non-polarised" in c for c in sheet.cautions)
    assert any("current limit" in c for c in sheet.cautions)


def test_74hc4060_takes_the_same_pins():
    osc = divider("74HC4060", 5.0, 16)
    sheet = build_sheet(osc, one_part_design(osc, {"R": 10e3, "RS": 47e3, "C": 1e-9}), "x",
                        today=TODAY)
    # Q4 is pin 7 (MC54/74HC4060 logic diagram; TI SN74HC4060 QD on 7).
    assert _pins(sheet)["7"][0] == "Q4 output"


def test_cmos_astable_sheet_ties_the_unused_inputs_and_joins_the_gates():
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0)
    sheet = build_sheet(osc, one_part_design(osc, RING_VALUES), "460 Hz", today=TODAY)
    pins = _pins(sheet)
    # CD4069UB pinout (TI CD4069UB functional diagram): A=1 G=2, B=3 H=4, VSS=7, VDD=14;
    # the other inverters' inputs 5, 9, 11, 13 must not float (CMOS input, common practice).
    assert pins["5, 9, 11, 13"][1].startswith("GND or VCC")
    assert "RS" in pins["1"][1] and "C to the timing node" in pins["4"][1]
    assert any("join pin 2 to pin 3" in n for n in sheet.build_notes)
    refs = {row.refs: row for row in sheet.parts}
    assert refs["C2"].what.startswith("decoupling")
    assert any("non-polarised" in c for c in sheet.cautions)


def test_steered_sheet_lists_both_diodes_with_their_hookup():
    osc = make_oscillator("schmitt", "74HC14", 5.0).with_steering()
    sheet = build_sheet(osc, one_part_design(osc, {"RH": 47e3, "RL": 10e3, "C": 10e-9}), "4 kHz",
                        today=TODAY)
    diodes = {r.refs: r for r in sheet.parts if r.what == "small-signal diode"}
    assert set(diodes) == {"D1", "D2"}
    assert diodes["D1"].note.startswith("cathode to the timing node (pin 1)")
    assert diodes["D2"].note.startswith("anode to the timing node (pin 1)")
    assert dict(sheet.summary)["Circuit"].count("diode-steered") == 1
    assert not any("non-polarised" in c for c in sheet.cautions)


def _agreement(osc, values) -> float:
    sim, model, _ = ngspice_run(osc, one_part_design(osc, values))
    return 100 * (sim["period_s"] / model.period_s - 1)


@pytest.mark.spice
@pytest.mark.parametrize(("family", "supply", "values"), [
    ("CD4069UB", 10.0, RING_VALUES),
    ("74HCU04", 5.0, {"R": 10e3, "RS": 4.7e3, "C": 1e-9}),     # RS < R: the clamps conduct
    ("CD4069UB", 5.0, {"R": 47e3, "RS": 470e3, "C": 100e-9}),
    ("74HCU04", 3.0, {"R": 100e3, "RS": 22e3, "C": 10e-9}),
])
def test_cmos_astable_netlist_matches_ngspice(family, supply, values):
    # Issue 13: period within 0.5 % of ngspice for the same device parameters.
    osc = make_oscillator("cmos-astable", family, supply)
    assert abs(_agreement(osc, values)) < 0.5


@pytest.mark.spice
@pytest.mark.parametrize(("family", "supply", "n", "values"), [
    ("CD4060B", 9.0, 1024, DIVIDER_VALUES),
    ("74HC4060", 5.0, 16, {"R": 10e3, "RS": 47e3, "C": 1e-9}),
])
def test_divider_netlist_simulates_the_oscillator_and_scales_by_the_counter(
        family, supply, n, values):
    osc = divider(family, supply, n)
    text = spice_netlist(osc, one_part_design(osc, values))
    assert "The counter is not simulated" in text and f"PARAM='{n} * osc_period_s'" in text
    assert abs(_agreement(osc, values)) < 0.5


def test_ring_netlist_starts_beyond_the_rail():
    # The node jumps past the supply by the output step through C (textbook two-inverter
    # astable): the netlist's start point is above VDD, the first input clamped.
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0)
    text = spice_netlist(osc, one_part_design(osc, RING_VALUES))
    ic = next(line for line in text.splitlines() if line.startswith(".ic"))
    node = float(ic.split("v(tn)=")[1].split()[0])
    assert 10.0 < node < 20.0


def test_ring_sheet_plots_the_timing_node_beyond_the_rails():
    # The node jumps by the output step through C (textbook two-inverter astable): from
    # Vth + VDD down to Vth, then to Vth − VDD and up again.
    osc = make_oscillator("cmos-astable", "CD4069UB", 10.0)
    wave = build_sheet(osc, one_part_design(osc, RING_VALUES), "x", today=TODAY).waveform
    assert wave.v_cap_v.max() == pytest.approx(10.0 + osc.vt_plus_v, abs=0.3)
    assert wave.v_cap_v.min() == pytest.approx(osc.vt_plus_v - 10.0, abs=0.3)
    assert "timing node" in wave.legend


@pytest.mark.spice
def test_divider_netlist_from_the_command_line_uses_the_chosen_stage(tmp_path, capsys):
    # issue 13's example: a two-minute period from the demo drawer; the netlist simulates
    # the oscillator and scales by the stage the search chose (DESIGN.md, second round).
    require_tool("ngspice")
    from core.cli import main
    out = tmp_path / "d.cir"
    assert main(["netlist", "--circuit", "divider", "--family", "CD4060B", "--supply", "9V",
                 "--target", "2min", "--out", str(out), "--simulate", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    n = data["candidate"]["divide_by"]
    assert f"PARAM='{n} * osc_period_s'" in out.read_text()
    assert abs(data["agreement_pct"]) < 0.5 and data["warnings"] == []
    assert data["simulated"]["period_s"] == pytest.approx(120, rel=0.05)


def test_steered_sheet_from_the_command_line_lists_both_diodes(tmp_path, capsys):
    from core.cli import main
    from gui.entry import render_sheet
    out = tmp_path / "s.pdf"
    assert main(["sheet", "--circuit", "schmitt", "--target", "1kHz", "--duty", "30", "--out",
                 str(out), "--json"], render_sheet=render_sheet) == 0
    data = json.loads(capsys.readouterr().out)
    refs = {p["refs"]: p for p in data["parts"]}
    assert refs["D1"]["value"] == refs["D2"]["value"] == "1N4148"
    assert set(data["candidate"]["values"]) == {"RH", "RL", "C"}


@pytest.fixture(scope="module")
def trim_555():
    from core.design.trim import trim
    from core.parts.drawer_file import read_drawer
    from core.storage.locations import demo_drawer_path
    osc = make_oscillator("555", "NE555", 9.0)
    (design,) = trim(read_drawer(demo_drawer_path()).parts(), osc, (900.0, 1100.0),
                     top=1).candidates
    return osc, design


def test_555_trim_sheet_draws_the_pot_in_series_with_rb(trim_555):
    # The pot sits in series with the role the design trims (RB): between DIS and THR the
    # drawing holds RB plus the whole pot (series resistances add, Horowitz & Hill §1.2.1).
    from core.output import schematic as sch
    osc, design = trim_555
    assert design.trimmed == "RB"
    sheet = build_sheet(osc, design, "900 Hz … 1.10 kHz", today=TODAY)
    drawing = sheet.schematic
    pots = [i for i in drawing.items if isinstance(i, sch.Component) and i.symbol == "pot"]
    assert len(pots) == 1
    refs = {p.ref: p.role for p in drawing.placed}
    assert refs[pots[0].ref] == "P" and sum(role == "RB" for role in refs.values()) >= 1
    # Pin 3 is the 555's output (NE555 data sheet pin table): the procedure measures there.
    assert any("Measure at OUT (pin 3), never" in step for step in sheet.adjustment)


@pytest.mark.spice
def test_555_trim_netlist_matches_ngspice(trim_555):
    osc, design = trim_555
    sim, model, text = ngspice_run(osc, design)
    assert "then the pot" in text and "RP1 " in text
    assert sim["period_s"] == pytest.approx(model.period_s, rel=5e-3)
