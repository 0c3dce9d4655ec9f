"""The build sheet's content (core only): schematic, parts list, predictions, procedure,
notes, cautions; and taking the parts out of the drawer.

The schematic check is independent of the network code: it rebuilds the circuit from the
drawn wires and symbols and solves it with Kirchhoff's laws (effective resistance from the
pseudo-inverse of the network's Laplacian; D. J. Klein and M. Randić, "Resistance
distance", J. Math. Chem. 12 (1993) 81-95). Capacitors combine like conductances, so the
same solve gives the capacitance between two nodes (any circuits textbook).
"""

from __future__ import annotations

import datetime as dt
import shutil
from collections import Counter

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from core.design.search import Candidate, search
from core.design.trim import frequency_at_rotation, trim
from core.errors import InputError
from core.model.timing import make_oscillator
from core.output import drawings
from core.output import schematic as sch
from core.output.sheet import build_sheet, start_rotation, take_parts, voltage_ratings
from core.parts.drawer_file import parse_drawer_text, read_drawer, write_drawer
from core.parts.networks import Network
from core.parts.part import Part
from core.storage.locations import demo_drawer_path
from core.units import Tolerance, format_frequency, format_quantity

TODAY = dt.date(2026, 12, 1)


# ---------------------------------------------------------------- reading the drawing back

def _key(p: sch.Point) -> tuple[float, float]:
    return (round(p[0], 6), round(p[1], 6))


def _on_segment(r, p, q) -> bool:
    (x, y), (x1, y1), (x2, y2) = r, p, q
    cross = (x2 - x1) * (y - y1) - (y2 - y1) * (x - x1)
    inside = min(x1, x2) - 1e-9 <= x <= max(x1, x2) + 1e-9 and \
        min(y1, y2) - 1e-9 <= y <= max(y1, y2) + 1e-9
    return abs(cross) < 1e-9 and inside


def _drawn_points(drawing: sch.Schematic) -> set:
    """Every point a wire, a part's pin, a ground or supply symbol or a terminal sits on."""
    points = set()
    for item in drawing.items:
        if isinstance(item, sch.Wire):
            points.update(_key(p) for p in item.points)
        elif isinstance(item, sch.Component):
            points.update((_key(item.a), _key(item.b)))
        elif isinstance(item, sch.Ground | sch.Supply):
            points.add(_key(item.at))
    points.update(_key(p) for p in drawing.terminals.values())
    return points


def _nets(drawing: sch.Schematic):
    """Union-find of drawn points: wires join their points and any point lying on them."""
    points = _drawn_points(drawing)
    parent = {p: p for p in points}

    def find(p):
        while parent[p] != p:
            parent[p] = parent[parent[p]]
            p = parent[p]
        return p

    def union(a, b):
        parent[find(a)] = find(b)

    for item in drawing.items:
        if isinstance(item, sch.Wire):
            for p, q in zip(item.points, item.points[1:], strict=False):
                for r in points:
                    if _on_segment(r, p, q):
                        union(r, _key(p))
    grounds = [_key(i.at) for i in drawing.items if isinstance(i, sch.Ground)]
    for g in grounds[1:]:
        union(g, grounds[0])  # every ground symbol is the same node
    return find, grounds[0]


def _between(drawing: sch.Schematic, values: dict[str, float], symbols: set[str],
             a: sch.Point, b: sch.Point, capacitive: bool = False) -> float:
    """Effective resistance (or capacitance) between drawn points a and b."""
    find, _ = _nets(drawing)
    edges = [(find(_key(i.a)), find(_key(i.b)), values[i.ref]) for i in drawing.items
             if isinstance(i, sch.Component) and i.symbol in symbols and i.ref in values]
    nodes = sorted({n for e in edges for n in e[:2]} | {find(_key(a)), find(_key(b))})
    index = {n: k for k, n in enumerate(nodes)}
    lap = np.zeros((len(nodes), len(nodes)))
    for u, v, x in edges:
        g = x if capacitive else 1.0 / x
        i, j = index[u], index[v]
        lap[i, i] += g
        lap[j, j] += g
        lap[i, j] -= g
        lap[j, i] -= g
    e = np.zeros(len(nodes))
    e[index[find(_key(a))]] += 1
    e[index[find(_key(b))]] -= 1
    r = float(e @ np.linalg.pinv(lap) @ e)
    return 1.0 / r if capacitive else r


def _ground_point(drawing: sch.Schematic) -> sch.Point:
    return next(i.at for i in drawing.items if isinstance(i, sch.Ground))


# ---------------------------------------------------------------- random networks

_line = iter(range(2, 10**6))


def _part(kind: str, value: float, polarised: bool = False) -> Part:
    return Part(kind=kind, value=value, tolerance=Tolerance(0.05, 0.05), quantity=9,  # type: ignore[arg-type]
                location="A1", line=next(_line), dielectric="electrolytic" if polarised else "")


def _tree(kind: str):
    scale = 1e-12 if kind == "C" else 1.0
    leaf = st.floats(10.0, 1e6).map(lambda v: Network(part=_part(kind, v * scale)))
    pair = st.lists(leaf, min_size=2, max_size=2)
    two = st.one_of(pair.map(lambda c: Network(series=tuple(c))),
                    pair.map(lambda c: Network(parallel=tuple(c))))
    three = st.tuples(two, leaf).flatmap(lambda t: st.sampled_from([
        Network(series=t), Network(parallel=t),
        Network(series=(t[1], t[0])), Network(parallel=(t[1], t[0]))]))
    return st.one_of(leaf, two, three)


def _text(part) -> str:
    return format_quantity(part.value, "capacitance" if part.kind == "C" else "resistance")


def _values(drawing: sch.Schematic) -> dict[str, float]:
    return {p.ref: p.part.value for p in drawing.placed}


@settings(max_examples=40, deadline=None)
@given(r=_tree("R"), c=_tree("C"), pot=st.booleans())
def test_schmitt_schematic_wires_each_network_as_the_candidate(r, c, pot):
    feedback = [sch.NetworkDrawing(r, "R", _text)]
    if pot:
        feedback.append(sch.NetworkDrawing(Network(part=_part("P", 1e4)), "P", _text))
    drawing = drawings.schmitt_schematic([feedback], sch.NetworkDrawing(c, "C", _text),
                                         gate_ref="U1a X", input_pin="1", output_pin="2",
                                         vcc_pin="14", gnd_pin="7", supply_text="+5 V",
                                         decoupling_text="100 nF")
    values = _values(drawing)
    t = drawing.terminals
    # Kirchhoff on the drawing; a pot at full rotation is its whole end-to-end value.
    r_drawn = _between(drawing, values, {"resistor", "pot"}, t["out"], t["in"])
    assert r_drawn == pytest.approx(r.value + (1e4 if pot else 0.0), rel=1e-9)
    c_drawn = _between(drawing, values, {"capacitor", "electrolytic"}, t["in"],
                       _ground_point(drawing), capacitive=True)
    assert c_drawn == pytest.approx(c.value, rel=1e-9)
    # Every part drawn once, references unique.
    assert len(drawing.placed) == r.part_count + c.part_count + pot
    assert len({p.ref for p in drawing.placed}) == len(drawing.placed)


@settings(max_examples=25, deadline=None)
@given(ra=_tree("R"), rb=_tree("R"), c=_tree("C"), diode=st.booleans())
def test_555_schematic_wires_each_network_as_the_candidate(ra, rb, c, diode):
    pins = dict(gnd="1", trig="2", out="3", reset="4", ctrl="5", thr="6", dis="7", vcc="8")
    drawing = drawings.astable_schematic([sch.NetworkDrawing(ra, "RA", _text)],
                                    [sch.NetworkDrawing(rb, "RB", _text)],
                                    sch.NetworkDrawing(c, "C", _text),
                                    pins=pins, chip="U1 NE555",
                                    supply_text="+9 V", decoupling_text="100 nF",
                                    control_text="10 nF", diode_text="1N4148" if diode else None)
    values = _values(drawing)
    t = drawing.terminals
    assert _between(drawing, values, {"resistor"}, t["vcc"], t["dis"]) == \
        pytest.approx(ra.value, rel=1e-9)
    assert _between(drawing, values, {"resistor"}, t["dis"], t["thr"]) == \
        pytest.approx(rb.value, rel=1e-9)
    assert _between(drawing, values, {"capacitor", "electrolytic"}, t["thr"],
                    _ground_point(drawing), capacitive=True) == pytest.approx(c.value, rel=1e-9)
    find, _ = _nets(drawing)
    if diode:
        d = next(i for i in drawing.items if isinstance(i, sch.Component) and i.symbol == "diode")
        # Anode on DIS, cathode on THR: charging current bypasses RB (NE555 data sheet,
        # application "50 % duty cycle" / diode across RB).
        assert find(_key(d.a)) == find(_key(t["dis"]))
        assert find(_key(d.b)) == find(_key(t["thr"]))


@settings(max_examples=20, deadline=None)
@given(ra=_tree("R"), rb=_tree("R"), c=_tree("C"))
def test_555_schematic_puts_a_trim_pot_in_series_with_rb(ra, rb, c):
    pot = Network(part=_part("P", 1e4))
    pins = dict(gnd="1", trig="2", out="3", reset="4", ctrl="5", thr="6", dis="7", vcc="8")
    drawing = drawings.astable_schematic([sch.NetworkDrawing(ra, "RA", _text)],
                                    [sch.NetworkDrawing(rb, "RB", _text),
                                     sch.NetworkDrawing(pot, "P", _text)],
                                    sch.NetworkDrawing(c, "C", _text), pins=pins,
                                    chip="U1 NE555", supply_text="+9 V",
                                    decoupling_text="100 nF", control_text="10 nF",
                                    diode_text=None)
    values = _values(drawing)
    t = drawing.terminals
    # Series resistances add (Horowitz & Hill §1.2.1): RB and the whole pot.
    assert _between(drawing, values, {"resistor", "pot"}, t["dis"], t["thr"]) == \
        pytest.approx(rb.value + 1e4, rel=1e-9)
    assert _between(drawing, values, {"resistor", "pot"}, t["vcc"], t["dis"]) == \
        pytest.approx(ra.value, rel=1e-9)


def _diodes(drawing: sch.Schematic) -> dict[str, sch.Component]:
    return {i.ref: i for i in drawing.items if isinstance(i, sch.Component)
            and i.symbol == "diode"}


@settings(max_examples=25, deadline=None)
@given(rh=_tree("R"), rl=_tree("R"), c=_tree("C"))
def test_steered_schmitt_schematic_steers_each_phase_through_its_resistor(rh, rl, c):
    rows = [[sch.DiodeDrawing("D2", "1N4148", forward=True), sch.NetworkDrawing(rl, "RL", _text)],
            [sch.DiodeDrawing("D1", "1N4148", forward=False),
             sch.NetworkDrawing(rh, "RH", _text)]]
    drawing = drawings.schmitt_schematic(rows, sch.NetworkDrawing(c, "C", _text), gate_ref="U1a X",
                                    input_pin="1", output_pin="2", vcc_pin="14", gnd_pin="7",
                                    supply_text="+5 V", decoupling_text="100 nF")
    values = _values(drawing)
    t = drawing.terminals
    find, _ = _nets(drawing)
    d = _diodes(drawing)
    # D1 conducts from the output into the node (its cathode on the input), D2 from the
    # node out (anode on the input); each diode's other end reaches the output only
    # through its own resistor (Kirchhoff, with the diode's end as a node).
    assert find(_key(d["D1"].b)) == find(_key(t["in"]))
    assert find(_key(d["D2"].a)) == find(_key(t["in"]))
    assert _between(drawing, values, {"resistor"}, d["D1"].a, t["out"]) == \
        pytest.approx(rh.value, rel=1e-9)
    assert _between(drawing, values, {"resistor"}, d["D2"].b, t["out"]) == \
        pytest.approx(rl.value, rel=1e-9)
    assert set(drawing.support) >= {"diode D1", "diode D2", "decoupling"}


def _ring_values(r, rs, c):
    return [sch.NetworkDrawing(n, role, _text) for n, role in ((r, "R"), (rs, "RS"), (c, "C"))]


def _wired_between(drawing: sch.Schematic, expected: dict[tuple[str, str], object]) -> None:
    """Each network drawn between the two named terminals, by Kirchhoff on the drawing."""
    values = _values(drawing)
    t = drawing.terminals
    for (a, b), net in expected.items():
        cap = net.parts()[0].kind == "C"
        symbols = {"capacitor", "electrolytic"} if cap else {"resistor"}
        assert _between(drawing, values, symbols, t[a], t[b], capacitive=cap) == \
            pytest.approx(net.value, rel=1e-9)


@settings(max_examples=25, deadline=None)
@given(r=_tree("R"), rs=_tree("R"), c=_tree("C"))
def test_cmos_astable_schematic_wires_r_rs_and_c_as_the_circuit(r, rs, c):
    pins = dict(input="1", output="2", input2="3", output2="4", vcc="14", gnd="7")
    drawing = drawings.cmos_astable_schematic(*_ring_values(r, rs, c), pins=pins, chip="U1 X",
                                         supply_text="+9 V", decoupling_text="100 nF")
    # Issue 13: R from the first output to the node, C from the second output (OUT) to
    # the node, RS from the node to the first input.
    _wired_between(drawing, {("a", "node"): r, ("node", "in"): rs, ("out", "node"): c})
    plain = [i for i in drawing.items if isinstance(i, sch.Inverter)]
    assert len(plain) == 2 and not any(i.schmitt for i in plain)


@settings(max_examples=25, deadline=None)
@given(r=_tree("R"), rs=_tree("R"), c=_tree("C"))
def test_divider_schematic_wires_each_network_to_its_oscillator_pin(r, rs, c):
    pins = dict(rs="11", r="10", c="9", reset="12", vcc="16", gnd="8", tap="15")
    drawing = drawings.divider_schematic(*_ring_values(r, rs, c), pins=pins, chip="U1 X",
                                    tap="Q10", supply_text="+9 V", decoupling_text="100 nF")
    _wired_between(drawing, {("r", "node"): r, ("rs", "node"): rs, ("c", "node"): c})
    # The reset pin's lead ends on a ground symbol (CD4060B data sheet: MR high clears
    # the counter and stops the oscillator).
    mr = next(i.at for i in drawing.items if isinstance(i, sch.Label) and i.text == "MR")
    assert any(isinstance(i, sch.Ground) and abs(i.at[0] - mr[0]) < 1e-9
               for i in drawing.items)


# ---------------------------------------------------------------- whole sheets

@pytest.fixture(scope="module")
def demo_parts() -> list[Part]:
    return read_drawer(demo_drawer_path()).parts()


@pytest.fixture(scope="module")
def hc14():
    return make_oscillator("schmitt", "74HC14", 5.0)


def test_search_sheet_lists_every_part_with_its_drawer_place(demo_parts, hc14):
    cand = search(demo_parts, hc14, 1000.0).candidates[0]
    sheet = build_sheet(hc14, cand, "1 kHz", stock=demo_parts, today=TODAY)
    used = Counter(p.stock_line for n in cand.networks.values() for p in n.parts())
    rows = {r.line: r for r in sheet.parts if r.line in used}
    assert set(rows) == set(used)
    for line, count in used.items():
        part = next(p for p in demo_parts if p.stock_line == line)
        assert rows[line].quantity == count
        assert rows[line].location == part.location
        assert rows[line].tolerance == str(part.tolerance)
    refs = [r.refs for r in sheet.parts]
    assert "U1" in refs and any(r.what.startswith("decoupling") for r in sheet.parts)
    assert sheet.date == "2026-12-01"
    assert dict(sheet.summary)["Target"] == "1 kHz"
    assert "74HC14" in dict(sheet.summary)["Chip"]
    assert sheet.frequency_hz == pytest.approx(cand.frequency_hz)
    shown = dict(sheet.predictions)
    assert shown["Predicted frequency"] == format_frequency(cand.frequency_hz)
    # The waveform spans exactly three periods of the predicted frequency and switches at
    # the thresholds (the capacitor stays between them, plus the delay overshoot).
    w = sheet.waveform
    assert w.t_s[-1] == pytest.approx(3 / cand.frequency_hz, rel=1e-9)
    assert w.v_cap_v.max() == pytest.approx(w.upper_v, abs=0.01)
    assert w.v_cap_v.min() == pytest.approx(w.lower_v, abs=0.01)
    # Everything the sheet takes from the drawer is listed with a line and location.
    taken = Counter(p.stock_line for p in sheet.take)
    listed = {r.line: r.quantity for r in sheet.parts if r.line is not None}
    assert dict(taken) == listed


def test_monte_carlo_interval_lies_inside_the_worst_case(demo_parts, hc14):
    cand = search(demo_parts, hc14, 4700.0).candidates[0]
    sheet = build_sheet(hc14, cand, "4.7 kHz", stock=demo_parts, today=TODAY)
    # Every Monte Carlo draw lies inside the corners (the frequency is monotonic in each
    # part value), so its central 95 % must too.
    (w_lo, w_hi), (m_lo, m_hi) = sheet.worst_case_hz, sheet.interval_95_hz
    assert w_lo <= m_lo < m_hi <= w_hi
    assert m_lo < cand.frequency_hz < m_hi
    text = dict(sheet.predictions)
    assert text["Worst case"].startswith(f"{format_frequency(w_lo)} … {format_frequency(w_hi)}")
    mc = next(k for k in text if k.startswith("95 %"))
    assert text[mc].startswith(f"{format_frequency(m_lo)} … {format_frequency(m_hi)}")


def test_trim_sheet_gives_the_adjustment_procedure(demo_parts, hc14):
    cand = trim(demo_parts, hc14, (900.0, 1100.0)).candidates[0]
    sheet = build_sheet(hc14, cand, "900 Hz … 1.1 kHz", stock=demo_parts, today=TODAY)
    start = start_rotation(hc14, cand)
    rot_high, rot_low = cand.rotation_pct
    assert min(rot_high, rot_low) < start < max(rot_high, rot_low)
    # Starting point: the middle of the band (900 … 1100 Hz).
    assert float(frequency_at_rotation(hc14, cand, start)) == pytest.approx(1000.0, rel=0.01)
    # More resistance lowers an RC oscillator's frequency (f ∝ 1/RC, textbook), so turning
    # towards full rotation must lower it: the sheet must say so.
    assert float(frequency_at_rotation(hc14, cand, start + 5)) < sheet.frequency_hz
    steps = " ".join(sheet.adjustment)
    for phrase in (f"{start:.0f} %", "clockwise", "lowers the frequency", "raises it",
                   "frequency counter", "oscilloscope", "per 1 % of rotation", "pin 1"):
        assert phrase in steps, phrase
    assert format_frequency(cand.resolution_hz_per_pct) in steps
    pot_rows = [r for r in sheet.parts if r.refs.startswith("P")]
    assert len(pot_rows) == 1 and "potentiometer" in pot_rows[0].what


def test_build_notes_and_cautions_say_what_a_practitioner_would(demo_parts, hc14):
    cand = search(demo_parts, hc14, 1000.0).candidates[0]
    sheet = build_sheet(hc14, cand, "1 kHz", stock=demo_parts, today=TODAY)
    notes = " ".join(sheet.build_notes).lower()
    # Facts of the trade from the issue (common practice, no published source).
    for phrase in ("unused inputs", "100 nf", "short", "buffer"):
        assert phrase in notes, phrase
    cautions = " ".join(sheet.cautions).lower()
    for phrase in ("current-limited", "low-voltage", "polarised", "voltage rating", "mains",
                   "local codes", "licensed"):
        assert phrase in cautions, phrase


def test_polarised_timing_capacitor_is_checked_against_its_rating():
    text = ("kind,value,tolerance,quantity,location,dielectric,voltage\n"
            "R,10k,5%,4,A1,,\nC,10u,20%,2,B1,electrolytic,6.3V\nC,22u,20%,2,B2,electrolytic,\n")
    drawer = parse_drawer_text(text)
    parts = drawer.parts()
    osc = make_oscillator("schmitt", "CD40106B", 10.0)
    for cap, expect in ((parts[1], "too close"), (parts[2], "no voltage rating")):
        cand = Candidate("schmitt", {"R": 1e4, "C": cap.value},
                         {"R": Network(part=parts[0]), "C": Network(part=cap)}, 1.0, 0.0, 50.0,
                         (0.9, 1.1))
        sheet = build_sheet(osc, cand, "1 Hz", stock=parts, ratings=voltage_ratings(drawer),
                            today=TODAY)
        assert any(expect in c for c in sheet.cautions)
        row = next(r for r in sheet.parts if r.line == cap.stock_line)
        assert "+ lead" in row.note
        assert any(isinstance(i, sch.Component) and i.symbol == "electrolytic"
                   for i in sheet.schematic.items)


def test_555_sheet_uses_the_dip8_pinout_and_the_steering_diode(demo_parts):
    osc = make_oscillator("555", "NE555", 9.0)
    cand = search(demo_parts, osc, 440.0, duty_pct=30).candidates[0]
    assert cand.diode_steered
    sheet = build_sheet(osc, cand, "440 Hz", stock=demo_parts, today=TODAY)
    pins = {r.pin: r.function for r in sheet.pins}
    # The 555's DIP-8 pinout (NE555 data sheet, pin configuration).
    assert pins == {"1": "GND", "2": "TRIG", "3": "OUT", "4": "RESET", "5": "CV", "6": "THR",
                    "7": "DIS", "8": "VCC"}
    support = sheet.schematic.support
    rows = {r.refs: r for r in sheet.parts}
    assert rows[support["control"]].value == "10 nF"
    assert rows[support["decoupling"]].value == "100 nF"
    assert rows[support["diode"]].value == "1N4148"
    assert any("(RA)" in r.what for r in sheet.parts)


# ---------------------------------------------------------------- taking the parts

def _demo_copy(tmp_path):
    path = tmp_path / "drawer.csv"
    shutil.copy(demo_drawer_path(), path)
    return read_drawer(path)


def test_take_parts_is_one_undo_step_and_saves(tmp_path, hc14):
    drawer = _demo_copy(tmp_path)
    parts = drawer.parts()
    cand = search(parts, hc14, 1000.0).candidates[0]
    sheet = build_sheet(hc14, cand, "1 kHz", stock=parts, today=TODAY)
    before = {p.stock_line: p.quantity for p in parts}
    taken = take_parts(drawer, sheet)
    need = Counter(p.stock_line for p in sheet.take)
    after = {p.stock_line: p.quantity for p in drawer.parts()}
    for line, q in before.items():
        assert after[line] == q - need.get(line, 0)
    assert {t.line: t.count for t in taken} == dict(need)
    write_drawer(drawer)
    reread = {p.stock_line: p.quantity for p in read_drawer(drawer.path).parts()}
    assert reread == after
    drawer.undo()  # one step gives everything back
    assert {p.stock_line: p.quantity for p in drawer.parts()} == before
    drawer.redo()
    assert {p.stock_line: p.quantity for p in drawer.parts()} == after


def test_take_parts_refuses_when_the_drawer_runs_short_or_changed(tmp_path, hc14):
    drawer = _demo_copy(tmp_path)
    parts = drawer.parts()
    cand = search(parts, hc14, 1000.0).candidates[0]
    line = cand.networks["C"].parts()[0].stock_line
    row = next(p.row for p in parts if p.stock_line == line)
    drawer.set_cell(row, "quantity", "0")
    before = [r.get("quantity") for r in drawer.rows]
    with pytest.raises(InputError, match=f"line {line}.*has 0 left"):
        take_parts(drawer, cand)
    assert [r.get("quantity") for r in drawer.rows] == before  # nothing taken
    drawer.set_cell(row, "value", "1u")
    with pytest.raises(InputError, match="changed since the search"):
        take_parts(drawer, cand)


def test_take_parts_counts_a_line_used_twice():
    drawer = parse_drawer_text("kind,value,quantity,location\nR,10k,9,A1\nC,100n,8,B1\n")
    r, c = drawer.parts()
    cand = Candidate("schmitt", {"R": 2e4, "C": 1e-7},
                     {"R": Network(series=(Network(part=r), Network(part=r))),
                      "C": Network(part=c)},
                     1.0, 0.0, 50.0, (0.9, 1.1))
    taken = take_parts(drawer, cand)
    assert {t.line: (t.count, t.before, t.after) for t in taken} == {2: (2, 9, 7), 3: (1, 8, 7)}
    assert [row.get("quantity") for row in drawer.rows] == ["7", "7"]


def test_sheet_writes_combined_networks_with_the_legend(demo_parts, hc14):
    # Issue 11 §3: a network is written "ser"/"par", never "+", with the legend on the
    # sheet. Series resistances add (Horowitz & Hill §1.2.1), so R's value is the sum.
    cand = next(c for c in trim(demo_parts, hc14, (400.0, 480.0)).candidates
                if c.networks["R"].series)
    sheet = build_sheet(hc14, cand, "400 Hz … 480 Hz", stock=demo_parts, today=TODAY)
    summary = dict(sheet.summary)
    a, b = (p.value for p in cand.networks["R"].parts())
    assert summary["Networks"].startswith(f"R = {format_quantity(a, 'resistance')} ser "
                                          f"{format_quantity(b, 'resistance')} = "
                                          f"{format_quantity(a + b, 'resistance')}")
    assert summary["Notation"].startswith("ser = in series, par = in parallel")
    single = next(c for c in search(demo_parts, hc14, 1000.0, max_resistors=1,
                                    max_capacitors=1).candidates)
    assert "Notation" not in dict(build_sheet(hc14, single, "1 kHz", today=TODAY).summary)


def test_bipolar_555_sheet_lists_the_bulk_capacitor_its_notes_ask_for(demo_parts):
    # A bipolar 555 draws a current spike at each output edge: 100 nF plus about 10 µF at
    # the supply pins (common practice, no published source; the device table's note).
    osc = make_oscillator("555", "NE555", 9.0)
    cand = search(demo_parts, osc, 1000.0).candidates[0]
    sheet = build_sheet(osc, cand, "1 kHz", stock=demo_parts, today=TODAY)
    assert any("10 µF" in note for note in sheet.build_notes)
    bulk = [r for r in sheet.parts if r.value == "10 µF"]
    assert len(bulk) == 1 and bulk[0].refs not in {p.ref for p in sheet.schematic.placed}
    assert bulk[0].refs not in sheet.schematic.support.values()
    # A CMOS 555 draws no such spike: its parts list has none.
    cmos = make_oscillator("555", "TLC555", 9.0)
    cand = search(demo_parts, cmos, 1000.0).candidates[0]
    sheet = build_sheet(cmos, cand, "1 kHz", stock=demo_parts, today=TODAY)
    assert not [r for r in sheet.parts if r.value == "10 µF"]
