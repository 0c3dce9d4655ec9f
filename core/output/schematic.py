"""The build sheet's schematic as drawing primitives on a grid, laid out from the networks.

Core decides *what* is drawn and where (grid units, y grows downwards); the
renderer in gui only maps grid units to millimetres and draws each primitive.
The timing networks are drawn exactly as the candidate wires them: a series
node becomes parts in a row, a parallel node parts side by side between two
bus wires, recursively.

References: IEC 60617 (graphical symbols for diagrams: resistor box,
capacitor plates, variable resistor, Schmitt-trigger hysteresis mark, ground).
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal, Protocol

Point = tuple[float, float]
Axis = Literal["h", "v"]

LEAF = 5.0
"""Length of one two-terminal part with its leads, grid units."""
STUB = 1.0
"""Wire between a parallel group's bus and its branches, grid units."""
GATE = 7.0
"""Inverter symbol from input terminal to output terminal, grid units."""


class NetworkTree(Protocol):
    """What the layout needs of ``core.parts.networks.Network``."""

    part: object | None
    series: tuple[NetworkTree, ...]
    parallel: tuple[NetworkTree, ...]


@dataclass(frozen=True)
class Wire:
    points: tuple[Point, ...]


@dataclass(frozen=True)
class Junction:
    at: Point


@dataclass(frozen=True)
class Component:
    """A two-terminal symbol between ``a`` and ``b`` (body centred, leads to the ends).

    ``symbol``: resistor, capacitor, electrolytic (+ at ``a``), diode (anode ``a``),
    pot (variable resistor; the wiper arrow starts at ``wiper``).
    """

    symbol: Literal["resistor", "capacitor", "electrolytic", "diode", "pot"]
    a: Point
    b: Point
    wiper: Point | None = None
    ref: str = ""


@dataclass(frozen=True)
class Label:
    """Text beside ``at``: ``h``/``v`` name the side of the point the text lies on."""

    at: Point
    text: str
    h: Literal["left", "center", "right"] = "center"
    v: Literal["top", "middle", "bottom"] = "middle"
    size: Literal["small", "normal"] = "small"


@dataclass(frozen=True)
class Inverter:
    """An inverter, input terminal at ``at``, output ``GATE`` units to the right; ``schmitt``
    draws the hysteresis mark (a plain unbuffered inverter has none)."""

    at: Point
    schmitt: bool = True


@dataclass(frozen=True)
class Box:
    """A chip body (the 555): a rectangle with a title inside."""

    top_left: Point
    bottom_right: Point
    title: str


@dataclass(frozen=True)
class Supply:
    """Positive supply: a bar at ``at`` with its voltage above."""

    at: Point
    text: str


@dataclass(frozen=True)
class Ground:
    at: Point


@dataclass(frozen=True)
class Terminal:
    """An open circle where a wire leaves the board (the output)."""

    at: Point


Item = Wire | Junction | Component | Label | Inverter | Box | Supply | Ground | Terminal


@dataclass(frozen=True)
class Placed:
    """One drawn part of a network and the reference printed beside it."""

    ref: str
    part: object
    role: str
    """The candidate's network key the part belongs to (R, P, C, RA, RB)."""


@dataclass
class Schematic:
    items: list[Item] = field(default_factory=list)
    placed: list[Placed] = field(default_factory=list)
    """Every network part drawn, in reference order (R1, R2, ... C1, ...)."""
    support: dict[str, str] = field(default_factory=dict)
    """References of the parts around the networks: decoupling, control, diode."""
    terminals: dict[str, Point] = field(default_factory=dict)
    """Where the circuit's named nodes are drawn (Schmitt: in, out; 555: vcc, dis, thr)."""
    hookup: dict[str, str] = field(default_factory=dict)
    """How a support part is connected, by reference (a diode's anode and cathode)."""

    def bounds(self) -> tuple[float, float, float, float]:
        """Geometry bounds (x0, y0, x1, y1) in grid units, text not included."""
        xs, ys = [], []
        for p in self.points():
            xs.append(p[0])
            ys.append(p[1])
        return min(xs), min(ys), max(xs), max(ys)

    def points(self) -> Iterator[Point]:
        for item in self.items:
            if isinstance(item, Wire):
                yield from item.points
            elif isinstance(item, Component):
                yield item.a
                yield item.b
            elif isinstance(item, Box):
                yield item.top_left
                yield item.bottom_right
            elif isinstance(item, Inverter):
                yield item.at
                yield (item.at[0] + GATE, item.at[1] + 2.0)
                yield (item.at[0] + GATE, item.at[1] - 2.0)
            else:
                yield item.at


# ---------------------------------------------------------------- networks

@dataclass(frozen=True)
class _Extent:
    """A network's size: ``length`` along its axis, ``near``/``far`` across it (≥ 0).

    ``far`` is the side parallel branches grow towards.
    """

    length: float
    near: float
    far: float


def _leaf_extent(axis: Axis, pot: bool) -> _Extent:
    # Horizontal: reference above, value below. Vertical: both to the right.
    if axis == "h":
        return _Extent(LEAF, 2.4 if pot else 2.3, 2.8 if pot else 2.3)
    return _Extent(LEAF, 2.2 if pot else 1.0, 6.5)


def _extent(node: NetworkTree, axis: Axis, kinds: dict[int, str]) -> _Extent:
    if node.part is not None:
        return _leaf_extent(axis, kinds.get(id(node)) == "P")
    if node.series:
        parts = [_extent(n, axis, kinds) for n in node.series]
        return _Extent(sum(p.length for p in parts), max(p.near for p in parts),
                       max(p.far for p in parts))
    parts = [_extent(n, axis, kinds) for n in node.parallel]
    reach = parts[0].far + sum(p.near + p.far for p in parts[1:])
    return _Extent(max(p.length for p in parts) + 2 * STUB, parts[0].near, reach)


class _Pen:
    """Lays out networks in local (along, across) coordinates and maps them to the page."""

    def __init__(self, sheet: Schematic, counters: dict[str, int]):
        self.s = sheet
        self.counters = counters
        self.role = ""

    def ref(self, kind: str) -> str:
        self.counters[kind] = self.counters.get(kind, 0) + 1
        return f"{kind}{self.counters[kind]}"

    def network(self, net: NetworkDrawing, start: Point, axis: Axis, grow: int,
                kinds: dict[int, str], values: dict[int, str]) -> Point:
        """Draw ``net`` from ``start`` along ``axis``; parallel branches go ``grow`` (±1).

        Returns the far terminal.
        """
        node = net.node
        self.role = net.role
        def at(s: float, t: float) -> Point:
            return (start[0] + s, start[1] + grow * t) if axis == "h" else \
                (start[0] + grow * t, start[1] + s)

        self._draw(node, 0.0, 0.0, at, axis, grow, kinds, values)
        return at(_extent(node, axis, kinds).length, 0.0)

    def _draw(self, node: NetworkTree, s: float, t: float, at, axis: Axis, grow: int,
              kinds: dict[int, str], values: dict[int, str]) -> None:
        items = self.s.items
        if node.part is not None:
            kind = kinds[id(node)]
            ref = self.ref(kind)
            self.s.placed.append(Placed(ref, node.part, self.role))
            a, b = at(s, t), at(s + LEAF, t)
            value = values[id(node)]
            if kind == "P":
                # Wiper arrow from the near side; the wiper is tied to end 3 (at b), so
                # the part is a variable resistor between pin 1 (a) and the wiper.
                w = at(s + LEAF / 2, t - 1.6 * grow)
                corner = at(s + LEAF - 0.3, t - 1.6 * grow)
                items.append(Component("pot", a, b, wiper=w, ref=ref))
                items.append(Wire((w, corner, at(s + LEAF - 0.3, t))))
                items.append(Junction(at(s + LEAF - 0.3, t)))
                # Pin 1 beside its end, clear of the lead (a vertical lead runs through
                # where a horizontal pot's label sits).
                items.append(Label(at(s + 0.5, t - 0.4 * grow), "1", "center", "top")
                             if axis == "h" else
                             Label(at(s + 1.0, t - 0.5 * grow), "1", "left", "middle"))
                items.append(Label(at(s + LEAF / 2 - 0.4, t - 1.4 * grow), "2", "left",
                                   "middle"))
            else:
                polarised = bool(getattr(node.part, "polarised", False))
                symbol = "resistor" if kind != "C" else \
                    "electrolytic" if polarised else "capacitor"
                items.append(Component(symbol, a, b, ref=ref))
            mid = s + LEAF / 2
            if axis == "h":
                if kind == "P":
                    items.append(Label(at(mid, t + 1.0 * grow), f"{ref}  {value}", "center",
                                       "bottom"))
                else:
                    items.append(Label(at(mid, t - 1.0 * grow), ref, "center", "top"))
                    items.append(Label(at(mid, t + 1.0 * grow), value, "center", "bottom"))
            else:
                x, y = at(s + LEAF / 2, t)
                items.append(Label((x + 1.2, y - 0.1), ref, "right", "top"))
                items.append(Label((x + 1.2, y + 0.1), value, "right", "bottom"))
            return
        if node.series:
            for child in node.series:
                self._draw(child, s, t, at, axis, grow, kinds, values)
                s += _extent(child, axis, kinds).length
            return
        ext = _extent(node, axis, kinds)
        end = s + ext.length
        offset = 0.0
        branches = list(node.parallel)
        offsets = []
        for i, child in enumerate(branches):
            ce = _extent(child, axis, kinds)
            if i:
                offset += ce.near
            offsets.append(offset)
            items.append(Wire((at(s, t + offset), at(s + STUB, t + offset))))
            self._draw(child, s + STUB, t + offset, at, axis, grow, kinds, values)
            items.append(Wire((at(s + STUB + ce.length, t + offset), at(end, t + offset))))
            offset += ce.far
        last = offsets[-1]
        items.append(Wire((at(s, t), at(s, t + last))))
        items.append(Wire((at(end, t), at(end, t + last))))
        for o in offsets[:-1]:
            items.append(Junction(at(s, t + o)))
            items.append(Junction(at(end, t + o)))


def _leaves(node: NetworkTree) -> Iterator[NetworkTree]:
    if node.part is not None:
        yield node
    for child in (*node.series, *node.parallel):
        yield from _leaves(child)


# ---------------------------------------------------------------- circuits

@dataclass(frozen=True)
class NetworkDrawing:
    """A network to draw: the node, its role (R, P, C, RA, RB) and each part's label."""

    node: NetworkTree
    role: str
    value_text: Callable[[Any], str]

    @property
    def kind(self) -> str:
        """The reference letter: C, P, else R (RA, RB, RH, RL, RS are resistors)."""
        return self.role if self.role in ("C", "P") else "R"


@dataclass(frozen=True)
class DiodeDrawing:
    """A diode in a row of a drawing: its reference, its label, and whether its anode is
    at the row's start (``forward``) or at its end."""

    ref: str
    text: str
    forward: bool


Row = Sequence["NetworkDrawing | DiodeDrawing"]


def _row_extent(row: Row, kinds: dict[int, str]) -> _Extent:
    exts = [_extent(x.node, "h", kinds) if isinstance(x, NetworkDrawing)
            else _leaf_extent("h", False) for x in row]
    return _Extent(sum(e.length for e in exts), max(e.near for e in exts),
                   max(e.far for e in exts))


def _draw_row(sheet: Schematic, pen: _Pen, row: Row, start: Point, kinds: dict[int, str],
              values: dict[int, str]) -> Point:
    """Networks and diodes in series along +x from ``start`` (parallel branches grow up);
    the row's far end. A diode is also listed in the sheet's support parts."""
    point = start
    for x in row:
        if isinstance(x, NetworkDrawing):
            point = pen.network(x, point, "h", -1, kinds, values)
            continue
        end = (point[0] + LEAF, point[1])
        a, b = (point, end) if x.forward else (end, point)
        sheet.items.append(Component("diode", a, b, ref=x.ref))
        mid = point[0] + LEAF / 2
        sheet.items.append(Label((mid, point[1] - 1.0), x.ref, "center", "top"))
        sheet.items.append(Label((mid, point[1] + 1.0), x.text, "center", "bottom"))
        sheet.support[f"diode {x.ref}"] = x.ref
        point = end
    return point


def _maps(networks: list[NetworkDrawing]) -> tuple[dict[int, str], dict[int, str]]:
    kinds, values = {}, {}
    for net in networks:
        for leaf in _leaves(net.node):
            kinds[id(leaf)] = net.kind
            values[id(leaf)] = net.value_text(leaf.part)
    return kinds, values


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
    pen = _Pen(sheet, {})
    kinds, values = _maps([x for row in feedback for x in row
                           if isinstance(x, NetworkDrawing)] + [capacitor])
    items = sheet.items
    extents = [_row_extent(row, kinds) for row in feedback]
    c_ext = _extent(capacitor.node, "v", kinds)

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
        point = _draw_row(sheet, pen, row, (start, y), kinds, values)
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
                supply_text: str, decoupling_text: str, pen: _Pen) -> None:
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


def _cap_to_ground(sheet: Schematic, pen: _Pen, top: Point, role: str, text: str) -> None:
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
    pen = _Pen(sheet, {})
    kinds, values = _maps([*ra, *rb, capacitor])
    items = sheet.items
    exts = [_extent(n.node, "v", kinds) for n in (*ra, *rb, capacitor)]
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


def _hanging_row(sheet: Schematic, pen: _Pen, net: NetworkDrawing, x0: float, x1: float,
                 y: float, grow: int, kinds: dict[int, str], values: dict[int, str]) -> None:
    """``net`` on a row at ``y`` between the verticals x0 and x1 that drop to the gate row
    (y = 0); parallel branches grow away from it (``grow``)."""
    ext = _extent(net.node, "h", kinds)
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
    pen = _Pen(sheet, {})
    kinds, values = _maps([rs, r, capacitor])
    items = sheet.items
    rs_len = _extent(rs.node, "h", kinds).length
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
    r_ext = _extent(r.node, "h", kinds)
    c_ext = _extent(capacitor.node, "h", kinds)
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
    pen = _Pen(sheet, {})
    kinds, values = _maps([rs, r, capacitor])
    items = sheet.items
    nets = (("rs", "φI", rs), ("r", "φO", r), ("c", "φO̅", capacitor))
    exts = [_extent(n.node, "h", kinds) for _, _, n in nets]
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
