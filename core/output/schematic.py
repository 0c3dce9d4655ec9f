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


def extent(node: NetworkTree, axis: Axis, kinds: dict[int, str]) -> _Extent:
    if node.part is not None:
        return _leaf_extent(axis, kinds.get(id(node)) == "P")
    if node.series:
        parts = [extent(n, axis, kinds) for n in node.series]
        return _Extent(sum(p.length for p in parts), max(p.near for p in parts),
                       max(p.far for p in parts))
    parts = [extent(n, axis, kinds) for n in node.parallel]
    reach = parts[0].far + sum(p.near + p.far for p in parts[1:])
    return _Extent(max(p.length for p in parts) + 2 * STUB, parts[0].near, reach)


class Pen:
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
        return at(extent(node, axis, kinds).length, 0.0)

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
                s += extent(child, axis, kinds).length
            return
        ext = extent(node, axis, kinds)
        end = s + ext.length
        offset = 0.0
        branches = list(node.parallel)
        offsets = []
        for i, child in enumerate(branches):
            ce = extent(child, axis, kinds)
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


def row_extent(row: Row, kinds: dict[int, str]) -> _Extent:
    exts = [extent(x.node, "h", kinds) if isinstance(x, NetworkDrawing)
            else _leaf_extent("h", False) for x in row]
    return _Extent(sum(e.length for e in exts), max(e.near for e in exts),
                   max(e.far for e in exts))


def draw_row(sheet: Schematic, pen: Pen, row: Row, start: Point, kinds: dict[int, str],
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


def part_maps(networks: list[NetworkDrawing]) -> tuple[dict[int, str], dict[int, str]]:
    kinds, values = {}, {}
    for net in networks:
        for leaf in _leaves(net.node):
            kinds[id(leaf)] = net.kind
            values[id(leaf)] = net.value_text(leaf.part)
    return kinds, values
