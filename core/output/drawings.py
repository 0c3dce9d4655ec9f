"""Each circuit's schematic: its layout on the grid from the design's networks and the
family's package pins, with the parts around the chip (decoupling, control, diodes).

``DRAWINGS`` holds one drawing per ``Circuit.drawing_id``; the grid primitives and
the layout of a parts network live in core.output.schematic.

References: IEC 60617 (graphical symbols); the device data sheets' pin tables in
resources/devices.toml; NE555 data sheet application circuits (control pin to ground).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

from core.design.design import Design
from core.errors import SetupError
from core.model.circuits.base import Oscillator
from core.model.circuits.divider import tap
from core.model.diode import SMALL_SIGNAL_DIODE
from core.output.schematic import (
    GATE,
    LEAF,
    Box,
    Component,
    DiodeDrawing,
    Ground,
    Inverter,
    Item,
    Junction,
    Label,
    NetworkDrawing,
    Pen,
    Point,
    Row,
    Schematic,
    Supply,
    Terminal,
    Wire,
    draw_row,
    extent,
    part_maps,
    row_extent,
)
from core.units import format_capacitance, format_part_value

DECOUPLING_F = 100e-9
"""Supply decoupling at the chip (common practice, no published source: 100 nF ceramic)."""
CONTROL_F = 10e-9
"""555 control-voltage pin to ground (NE555 data sheet application circuits: 0.01 µF)."""
STEERING_DIODE = SMALL_SIGNAL_DIODE.name
"""The steering diodes the sheet lists (the model's diode)."""


# ---------------------------------------------------------------- layouts on the grid

def schmitt_schematic(feedback: Sequence[Row], capacitor: NetworkDrawing, *, gate_ref: str,
                      input_pin: str, output_pin: str, vcc_pin: str, gnd_pin: str,
                      supply_text: str, decoupling_text: str,
                      gate_note: str = "") -> Schematic:
    """Inverter with feedback rows from the input (left) to the output and C to ground.

    ``feedback`` holds rows drawn one above the other between input and output,
    each parts in series: the fixed resistor network, then the pot for a trim
    design; or, diode-steered, the diode and RH in one row, the other diode and
    RL in the next. The chip's supply pins are drawn as a separate unit with its
    decoupling capacitor, as is usual for multi-gate packages.
    """
    sheet = Schematic()
    pen = Pen(sheet, {})
    kinds, values = part_maps([x for row in feedback for x in row
                           if isinstance(x, NetworkDrawing)] + [capacitor])
    items = sheet.items
    extents = [row_extent(row, kinds) for row in feedback]
    c_ext = extent(capacitor.node, "v", kinds)

    gate_x = max(3.0, c_ext.far + 1.5)
    out_gate = gate_x + GATE
    x_out = max(out_gate + 2.0, max(e.length for e in extents) + 2.0)
    # Feedback rows: from the input node up, across, down to the output node; each row
    # hangs on the bus wires of the one below it.
    y, prev = -3.5, 0.0
    for row, ext in zip(feedback, extents, strict=True):
        y -= ext.near
        start = (x_out - ext.length) / 2
        items.append(Wire(((0.0, prev), (0.0, y), (start, y))))
        point = draw_row(sheet, pen, row, (start, y), kinds, values)
        items.append(Wire((point, (x_out, y), (x_out, prev))))
        if prev != 0.0:
            items += [Junction((0.0, prev)), Junction((x_out, prev))]
        prev = y
        y -= ext.far + 1.0
    # Gate, with its pin numbers on the leads.
    items.append(Wire(((0.0, 0.0), (gate_x, 0.0))))
    items.append(Inverter((gate_x, 0.0)))
    items.append(Label((gate_x + 0.5, -0.3), input_pin, "center", "top"))
    items.append(Label((out_gate - 0.5, -0.3), output_pin, "center", "top"))
    items.append(Label((gate_x + GATE / 2 - 0.3, 2.4), gate_ref, "center", "bottom"))
    if gate_note:  # e.g. a NAND gate's second input tied high
        items.append(Label((gate_x + GATE / 2 - 0.3, 3.6), gate_note, "center", "bottom"))
    items.append(Wire(((out_gate, 0.0), (x_out + 4.0, 0.0))))
    items.append(Junction((0.0, 0.0)))
    items.append(Junction((x_out, 0.0)))
    sheet.terminals.update({"in": (gate_x, 0.0), "out": (out_gate, 0.0)})
    items.append(Terminal((x_out + 4.0, 0.0)))
    items.append(Label((x_out + 4.8, 0.0), "OUT", "right", "middle", "normal"))
    # Timing capacitor to ground.
    end = pen.network(capacitor, (0.0, 0.0), "v", 1, kinds, values)
    items.append(Ground(end))
    _power_unit(sheet, x_out + 11.0, gate_ref.split(" ")[0].rstrip("abcdef") or "U1",
                vcc_pin, gnd_pin, supply_text, decoupling_text, pen)
    return sheet


def _power_unit(sheet: Schematic, x: float, chip: str, vcc_pin: str, gnd_pin: str,
                supply_text: str, decoupling_text: str, pen: Pen) -> None:
    """The chip's supply pins with the decoupling capacitor right beside them."""
    items = sheet.items
    items.append(Box((x, -3.0), (x + 5.0, 3.0), chip))
    top, bottom = (x + 2.5, -3.0), (x + 2.5, 3.0)
    items.append(Wire((top, (x + 2.5, -6.0))))
    items.append(Wire((bottom, (x + 2.5, 6.0))))
    items.append(Label((x + 2.8, -3.3), vcc_pin, "right", "top"))
    items.append(Label((x + 2.8, 3.3), gnd_pin, "right", "bottom"))
    items.append(Supply((x + 2.5, -6.0), supply_text))
    items.append(Ground((x + 2.5, 6.0)))
    cx = x + 8.0
    items.append(Wire(((x + 2.5, -4.5), (cx, -4.5), (cx, -2.5))))
    ref = pen.ref("C")
    items.append(Component("capacitor", (cx, -2.5), (cx, 2.5), ref=ref))
    items.append(Wire(((cx, 2.5), (cx, 4.5), (x + 2.5, 4.5))))
    items.append(Junction((x + 2.5, -4.5)))
    items.append(Junction((x + 2.5, 4.5)))
    sheet.support["decoupling"] = ref
    items.append(Label((cx + 1.2, -0.1), ref, "right", "top"))
    items.append(Label((cx + 1.2, 0.1), decoupling_text, "right", "bottom"))


def _cap_to_ground(sheet: Schematic, pen: Pen, top: Point, role: str, text: str) -> None:
    """A support capacitor from ``top`` down to ground, its reference and value beside it;
    ``role`` names it in ``sheet.support`` (decoupling, control)."""
    x, y = top
    ref = pen.ref("C")
    sheet.items += [Component("capacitor", (x, y), (x, y + 5.0), ref=ref), Ground((x, y + 5.0)),
                    Label((x + 1.2, y + 2.4), ref, "right", "top"),
                    Label((x + 1.2, y + 2.6), text, "right", "bottom")]
    sheet.support[role] = ref


def _chip_pin(items: list[Item], outer: Point, inner: Point, number: str, name: str,
              h: str, v: str) -> None:
    """A pin lead from ``outer`` to the chip body at ``inner``: its number beside the lead,
    its name inside the body (``h``/``v``: which side of ``inner`` the name lies on)."""
    items.append(Wire((outer, inner)))
    mid = ((outer[0] + inner[0]) / 2, (outer[1] + inner[1]) / 2)
    if outer[1] == inner[1]:
        items.append(Label((mid[0], mid[1] - 0.3), number, "center", "top"))
    else:
        items.append(Label((mid[0] + 0.3, mid[1]), number, "right", "middle"))
    inset = {"right": (0.4, 0.0), "left": (-0.4, 0.0), "top": (0.0, -0.4),
             "bottom": (0.0, 0.4)}[h if h != "center" else v]
    items.append(Label((inner[0] + inset[0], inner[1] + inset[1]), name, h,  # type: ignore[arg-type]
                       v))  # type: ignore[arg-type]


def astable_schematic(ra: Sequence[NetworkDrawing], rb: Sequence[NetworkDrawing],
                      capacitor: NetworkDrawing, *, pins: dict[str, str], chip: str,
                      supply_text: str, decoupling_text: str, control_text: str,
                      diode_text: str | None) -> Schematic:
    """555 astable: RA from the supply to DIS, RB from DIS to THR/TRIG, C to ground.

    ``ra`` and ``rb`` are each a network, or a network and then a trim design's pot in
    series. ``pins`` maps role (gnd, trig, out, reset, ctrl, thr, dis, vcc) to the pin
    number. With ``diode_text`` a steering diode (anode at DIS) bypasses RB while
    charging, so RA alone sets the high time.
    """
    sheet = Schematic()
    pen = Pen(sheet, {})
    kinds, values = part_maps([*ra, *rb, capacitor])
    items = sheet.items
    exts = [extent(n.node, "v", kinds) for n in (*ra, *rb, capacitor)]
    reach = max(e.far for e in exts)

    def column(nets: Sequence[NetworkDrawing], start: Point) -> Point:
        for net in nets:
            start = pen.network(net, start, "v", 1, kinds, values)
        return start

    # Column: supply rail at y = 0, RA, DIS node, RB, THR node, C, ground.
    items.append(Supply((0.0, -1.5), supply_text))
    items.append(Wire(((0.0, -1.5), (0.0, 1.0))))
    y_dis = column(ra, (0.0, 1.0))[1]
    y_thr = column(rb, (0.0, y_dis))[1]
    c_end = pen.network(capacitor, (0.0, y_thr), "v", 1, kinds, values)
    items.append(Ground(c_end))
    items.append(Junction((0.0, y_dis)))
    items.append(Junction((0.0, y_thr)))
    sheet.terminals.update({"vcc": (0.0, -1.5), "dis": (0.0, y_dis), "thr": (0.0, y_thr)})
    x_pin = reach + 3.0
    if diode_text is not None:
        xd = reach + 1.5
        x_pin = xd + 8.0
        d_end = min(y_dis + LEAF, y_thr)
        items.append(Component("diode", (xd, y_dis), (xd, d_end), ref="D1"))
        if d_end < y_thr:
            items.append(Wire(((xd, d_end), (xd, y_thr))))
        items.append(Junction((xd, y_dis)))
        items.append(Junction((xd, y_thr)))
        sheet.support["diode"] = "D1"
        items.append(Label((xd + 1.2, y_dis + LEAF / 2 - 0.1), "D1", "right", "top"))
        items.append(Label((xd + 1.2, y_dis + LEAF / 2 + 0.1), diode_text, "right", "bottom"))
    bx0 = x_pin + 2.0
    bx1 = bx0 + 15.0
    y_trig = y_thr + 2.0
    by0 = min(y_dis - 3.0, 1.0 + 2.0)
    by0 = max(by0, 2.0)
    by1 = max(y_trig + 2.0, by0 + 10.0)
    items.append(Box((bx0, by0), (bx1, by1), chip))

    names = {"gnd": "GND", "trig": "TRIG", "out": "OUT", "reset": "RESET",
             "ctrl": "CV", "thr": "THR", "dis": "DIS", "vcc": "VCC"}

    def pin(outer: Point, inner: Point, role: str, h: str, v: str) -> None:
        _chip_pin(items, outer, inner, pins[role], names[role], h, v)

    # Left side: DIS, THR, TRIG.
    items.append(Wire(((0.0, y_dis), (x_pin, y_dis))))
    pin((x_pin, y_dis), (bx0, y_dis), "dis", "right", "middle")
    items.append(Wire(((0.0, y_thr), (x_pin, y_thr), (x_pin, y_trig))))
    items.append(Junction((x_pin, y_thr)))
    pin((x_pin, y_thr), (bx0, y_thr), "thr", "right", "middle")
    pin((x_pin, y_trig), (bx0, y_trig), "trig", "right", "middle")
    # Top: VCC and RESET to the rail (RESET held high: always running).
    x_vcc, x_rst = bx0 + 4.0, bx0 + 10.0
    rail = -1.5
    items.append(Wire(((0.0, rail), (x_rst, rail))))
    items.append(Junction((0.0, rail)))
    items.append(Junction((x_vcc, rail)))
    pin((x_vcc, rail), (x_vcc, by0), "vcc", "center", "bottom")
    pin((x_rst, rail), (x_rst, by0), "reset", "center", "bottom")
    # Bottom: GND to ground, CV decoupled to ground.
    x_gnd, x_cv = bx0 + 4.0, bx0 + 10.0
    pin((x_gnd, by1 + 2.0), (x_gnd, by1), "gnd", "center", "top")
    items.append(Ground((x_gnd, by1 + 2.0)))
    pin((x_cv, by1 + 2.0), (x_cv, by1), "ctrl", "center", "top")
    _cap_to_ground(sheet, pen, (x_cv, by1 + 2.0), "control", control_text)
    # Right: OUT.
    y_out = (by0 + by1) / 2
    pin((bx1 + 2.0, y_out), (bx1, y_out), "out", "left", "middle")
    items.append(Wire(((bx1 + 2.0, y_out), (bx1 + 5.0, y_out))))
    items.append(Terminal((bx1 + 5.0, y_out)))
    items.append(Label((bx1 + 5.8, y_out), "OUT", "right", "middle", "normal"))
    # Decoupling right at the VCC pin: from the rail's end to ground.
    xd = bx1 + 3.0
    items.append(Wire(((x_rst, rail), (xd, rail), (xd, rail + 1.0))))
    _cap_to_ground(sheet, pen, (xd, rail + 1.0), "decoupling", decoupling_text)
    return sheet


def _hanging_row(sheet: Schematic, pen: Pen, net: NetworkDrawing, x0: float, x1: float,
                 y: float, grow: int, kinds: dict[int, str], values: dict[int, str]) -> None:
    """``net`` on a row at ``y`` between the verticals x0 and x1 that drop to the gate row
    (y = 0); parallel branches grow away from it (``grow``)."""
    ext = extent(net.node, "h", kinds)
    start = x0 + (x1 - x0 - ext.length) / 2
    sheet.items.append(Wire(((x0, 0.0), (x0, y), (start, y))))
    end = pen.network(net, (start, y), "h", grow, kinds, values)
    sheet.items.append(Wire((end, (x1, y), (x1, 0.0))))


def cmos_astable_schematic(r: NetworkDrawing, rs: NetworkDrawing, capacitor: NetworkDrawing,
                           *, pins: dict[str, str], chip: str, supply_text: str,
                           decoupling_text: str) -> Schematic:
    """Two unbuffered inverters in a ring: RS from the timing node to the first input, R
    from the first output back to the node (above), C from the second output to it (below).

    ``pins`` maps input, output, input2, output2, vcc, gnd to pin numbers.
    """
    sheet = Schematic()
    pen = Pen(sheet, {})
    kinds, values = part_maps([rs, r, capacitor])
    items = sheet.items
    rs_len = extent(rs.node, "h", kinds).length
    # Gate row at y = 0: node X, RS, U1a, node A, U1b, node B (OUT).
    g1 = rs_len + 3.0
    a_node = g1 + GATE + 1.5
    g2 = a_node + 1.5
    b_node = g2 + GATE + 1.5
    items.append(Wire(((0.0, 0.0), (1.0, 0.0))))
    end = pen.network(rs, (1.0, 0.0), "h", -1, kinds, values)
    items.append(Wire((end, (g1, 0.0))))
    unit = chip.split(" ")[0]
    for x, ref, pin_in, pin_out in ((g1, f"{unit}a {chip.split(' ', 1)[-1]}", "input",
                                     "output"), (g2, f"{unit}b", "input2", "output2")):
        items.append(Inverter((x, 0.0), schmitt=False))
        items.append(Label((x + 0.5, -0.3), pins[pin_in], "center", "top"))
        items.append(Label((x + GATE - 0.5, -0.3), pins[pin_out], "center", "top"))
        items.append(Label((x + GATE / 2 - 0.3, 2.4), ref, "center", "bottom"))
    items.append(Wire(((g1 + GATE, 0.0), (g2, 0.0))))
    items.append(Wire(((g2 + GATE, 0.0), (b_node + 4.0, 0.0))))
    items.append(Terminal((b_node + 4.0, 0.0)))
    items.append(Label((b_node + 4.8, 0.0), "OUT", "right", "middle", "normal"))
    # R above (first output back to the node), C below (second output to the node).
    r_ext = extent(r.node, "h", kinds)
    c_ext = extent(capacitor.node, "h", kinds)
    _hanging_row(sheet, pen, r, 0.0, a_node, -(3.5 + r_ext.near), -1, kinds, values)
    _hanging_row(sheet, pen, capacitor, 0.0, b_node, 4.5 + c_ext.near, 1, kinds, values)
    items += [Junction((0.0, 0.0)), Junction((a_node, 0.0)), Junction((b_node, 0.0))]
    sheet.terminals.update({"node": (0.0, 0.0), "in": (g1, 0.0), "a": (a_node, 0.0),
                            "out": (b_node, 0.0)})
    _power_unit(sheet, b_node + 11.0, unit, pins["vcc"], pins["gnd"], supply_text,
                decoupling_text, pen)
    return sheet


def divider_schematic(r: NetworkDrawing, rs: NetworkDrawing, capacitor: NetworkDrawing, *,
                      pins: dict[str, str], chip: str, tap: str, supply_text: str,
                      decoupling_text: str) -> Schematic:
    """The oscillator-and-counter chip: RS, R and C from one timing node to its three
    oscillator pins, the reset pin to ground, the chosen counter output to OUT.

    ``pins`` maps rs, r, c, reset, vcc, gnd and ``tap`` (the output, e.g. ``q10``) to
    pin numbers; ``tap`` is the output's name (``Q10``).
    """
    sheet = Schematic()
    pen = Pen(sheet, {})
    kinds, values = part_maps([rs, r, capacitor])
    items = sheet.items
    nets = (("rs", "φI", rs), ("r", "φO", r), ("c", "φO̅", capacitor))
    exts = [extent(n.node, "h", kinds) for _, _, n in nets]
    length = max(e.length for e in exts)
    bx0 = length + 4.0
    bx1 = bx0 + 14.0
    # One row per oscillator pin, each network from the node bus (x = 0) to its pin.
    rows, y = [], 0.0
    for (role, name, net), ext in zip(nets, exts, strict=True):
        y += ext.far if rows else 0.0
        rows.append(y)
        start = 2.0 + (length - ext.length) / 2
        items.append(Wire(((0.0, y), (start, y))))
        end = pen.network(net, (start, y), "h", -1, kinds, values)
        _chip_pin(items, (bx0 - 2.0, y), (bx0, y), pins[role], name, "right", "middle")
        items.append(Wire((end, (bx0 - 2.0, y))))
        y += ext.near + 1.5
    items.append(Wire(((0.0, rows[0]), (0.0, rows[-1]))))
    items.append(Junction((0.0, rows[1])))
    items.append(Label((-0.4, rows[1]), "timing node", "left", "middle"))
    by0, by1 = rows[0] - 4.0, max(rows[-1] + 4.0, rows[0] + 12.0)
    items.append(Box((bx0, by0), (bx1, by1), chip))
    # Top: VDD from the rail, decoupled at the pin; bottom: VSS and the reset to ground.
    x_vdd, rail = bx0 + 4.0, by0 - 3.0
    items.append(Supply((x_vdd, rail), supply_text))
    _chip_pin(items, (x_vdd, rail), (x_vdd, by0), pins["vcc"], "VDD", "center", "bottom")
    xd = bx1 + 3.0
    items.append(Wire(((x_vdd, rail), (xd, rail), (xd, rail + 1.0))))
    items.append(Junction((x_vdd, rail)))
    _cap_to_ground(sheet, pen, (xd, rail + 1.0), "decoupling", decoupling_text)
    for x, role, name in ((bx0 + 4.0, "gnd", "VSS"), (bx0 + 10.0, "reset", "MR")):
        _chip_pin(items, (x, by1 + 2.0), (x, by1), pins[role], name, "center", "top")
        items.append(Ground((x, by1 + 2.0)))
    # Right: the chosen counter output.
    y_out = rows[1]
    _chip_pin(items, (bx1 + 2.0, y_out), (bx1, y_out), pins["tap"], tap, "left", "middle")
    items.append(Wire(((bx1 + 2.0, y_out), (bx1 + 8.0, y_out))))
    items.append(Terminal((bx1 + 8.0, y_out)))
    items.append(Label((bx1 + 8.8, y_out), "OUT", "right", "middle", "normal"))
    sheet.terminals.update({"node": (0.0, rows[1]), "rs": (bx0, rows[0]), "r": (bx0, rows[1]),
                            "c": (bx0, rows[2]), "out": (bx1 + 8.0, y_out)})
    return sheet


# ---------------------------------------------------------------- from a design

def value_text(part: Any) -> str:
    """A part's value as the sheet prints it (``4.7 kΩ``, ``100 nF``)."""
    return format_part_value(part.label_value, part.kind)


def _drawings(design: Design, *roles: str) -> list[NetworkDrawing]:
    """Each role's network to draw, a trim design's pot after the role it trims."""
    out = []
    for role in roles:
        out.append(NetworkDrawing(design.networks[role], role, value_text))
        if design.has_pot and role == design.trimmed:
            out.append(NetworkDrawing(design.networks["P"], "P", value_text))
    return out


def _pin_texts(osc: Oscillator) -> dict[str, str]:
    return {role: str(pin) for role, pin in osc.family.package.pins.items()}


def _astable_drawing(osc: Oscillator, design: Design, supply_text: str) -> Schematic:
    family = osc.family
    pins = family.package.pins
    roles = {"gnd": "gnd", "trig": "trigger", "out": "output", "reset": "reset",
             "ctrl": "control", "thr": "threshold", "dis": "discharge", "vcc": "vcc"}
    sheet = astable_schematic(
        _drawings(design, "RA"), _drawings(design, "RB"), *_drawings(design, "C"),
        pins={role: str(pins[key]) for role, key in roles.items()},
        chip=f"U1 {family.name}", supply_text=supply_text,
        decoupling_text=format_capacitance(DECOUPLING_F),
        control_text=format_capacitance(CONTROL_F),
        diode_text=STEERING_DIODE if design.diode_steered else None)
    if design.diode_steered:
        sheet.hookup["D1"] = (f"anode to DIS ({pins['discharge']}), cathode to THR "
                              f"({pins['threshold']})")
    return sheet


def _schmitt_gate(osc: Oscillator, feedback: list[list[NetworkDrawing | DiodeDrawing]],
                  design: Design, supply_text: str) -> Schematic:
    family = osc.family
    pins = family.package.pins
    return schmitt_schematic(
        feedback, *_drawings(design, "C"), gate_ref=f"U1a {family.name}",
        input_pin=str(pins["input"]), output_pin=str(pins["output"]),
        vcc_pin=str(pins["vcc"]), gnd_pin=str(pins["gnd"]), supply_text=supply_text,
        decoupling_text=format_capacitance(DECOUPLING_F),
        gate_note=f"NAND: pin {pins['tie_high']} to VCC" if "tie_high" in pins else "")


def _schmitt_drawing(osc: Oscillator, design: Design, supply_text: str) -> Schematic:
    """R (and a trim design's pot) from the output back to the input, C to ground."""
    return _schmitt_gate(osc, [_drawings(design, "R")], design, supply_text)


def _steered_schmitt_drawing(osc: Oscillator, design: Design, supply_text: str) -> Schematic:
    """D1 and RH (charging C while the output is high) above D2 and RL (discharging it)."""
    d1, d2 = (DiodeDrawing("D1", STEERING_DIODE, forward=False),
              DiodeDrawing("D2", STEERING_DIODE, forward=True))
    sheet = _schmitt_gate(osc, [[d2, *_drawings(design, "RL")], [d1, *_drawings(design, "RH")]],
                          design, supply_text)
    node = osc.family.package.pins["input"]
    sheet.hookup.update({"D1": f"cathode to the timing node (pin {node}), anode to RH",
                         "D2": f"anode to the timing node (pin {node}), cathode to RL"})
    return sheet


def _cmos_astable_drawing(osc: Oscillator, design: Design, supply_text: str) -> Schematic:
    return cmos_astable_schematic(
        *_drawings(design, "R", "RS", "C"), pins=_pin_texts(osc),
        chip=f"U1 {osc.family.name}", supply_text=supply_text,
        decoupling_text=format_capacitance(DECOUPLING_F))


def _divider_drawing(osc: Oscillator, design: Design, supply_text: str) -> Schematic:
    name = tap(osc.divide_by)
    pins = _pin_texts(osc)
    if name.lower() not in pins:
        raise SetupError(f"a {osc.family.name} build needs its counter stage (--divide-by N)")
    return divider_schematic(
        *_drawings(design, "R", "RS", "C"), pins={**pins, "tap": pins[name.lower()]},
        chip=f"U1 {osc.family.name}", tap=name, supply_text=supply_text,
        decoupling_text=format_capacitance(DECOUPLING_F))


DRAWINGS: dict[str, Callable[[Oscillator, Design, str], Schematic]] = {
    "schmitt": _schmitt_drawing, "schmitt-steered": _steered_schmitt_drawing,
    "555": _astable_drawing, "cmos-astable": _cmos_astable_drawing,
    "divider": _divider_drawing}
"""Each circuit's schematic from its networks and the family's package pins, by the
circuit's drawing id (``Circuit.drawing_id``)."""
