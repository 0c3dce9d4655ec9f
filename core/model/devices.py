"""The device table: what each oscillator chip does at a given supply voltage.

The numbers live in ``resources/devices.toml`` (a data file, each entry with its
source); this module reads it, derives output resistances and the TTL input
model from the datasheet's test conditions, and interpolates between the
supplies a datasheet lists. A supply outside a family's range is refused.

References: the datasheets named in devices.toml, per family and supply entry.
"""

from __future__ import annotations

import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field, fields, replace
from functools import cache
from typing import Any, Literal, get_args

from core.errors import InputError, SetupError, TickbinError

CircuitName = Literal["schmitt", "555", "cmos-astable", "divider"]
CIRCUIT_NAMES: tuple[CircuitName, ...] = get_args(CircuitName)
"""The circuits a family may name; core.model.circuits has one object per name (its
registry imports this module, so these names cannot be read from it)."""
Triplet = tuple[float, float, float]

F_MAX_DELAY_SHARE = 0.10
"""f_max is where the two propagation delays reach this share of the period."""


@dataclass(frozen=True)
class Package:
    """Pin hookup for the build sheet: package name and the pin of each role.

    Roles for a Schmitt gate: ``input``, ``output``, ``vcc``, ``gnd`` (and
    ``tie_high`` for a NAND wired as an inverter); for a 555: ``gnd``,
    ``trigger``, ``output``, ``reset``, ``control``, ``threshold``,
    ``discharge``, ``vcc``.
    """

    name: str
    pins: Mapping[str, int]
    unused_inputs: tuple[int, ...] = ()
    notes: tuple[str, ...] = ()
    source: str = ""

    @property
    def input_pin(self) -> int:
        """The timing node's pin (a 555's threshold pin, joined to trigger)."""
        return self.pins.get("input", self.pins.get("threshold", 0))

    @property
    def output_pin(self) -> int:
        return self.pins["output"]

    @property
    def vcc_pin(self) -> int:
        return self.pins["vcc"]

    @property
    def gnd_pin(self) -> int:
        return self.pins["gnd"]


@dataclass(frozen=True)
class _Point:
    """One listed supply voltage, with every number already in model form (SI)."""

    v: float
    vt_plus: Triplet
    vt_minus: Triplet
    hysteresis_min: float
    hysteresis_max: float
    voh_open: float
    vol_open: float
    r_out_high: float
    r_out_low: float
    input_r: float
    input_v_open: float
    input_current: float
    delay_lh: float
    delay_hl: float
    r_min: float
    r_max: float
    discharge_r: float
    output_high_drop: float
    source: str


@dataclass(frozen=True)
class DeviceAtSupply:
    """A family's numbers at one supply voltage, ready for the timing model.

    Voltages [V] are absolute (not fractions of the supply). The output is a
    Thevenin source: ``voh_v`` behind ``r_out_high_ohm`` when high, ``vol_v``
    behind ``r_out_low_ohm`` when low. A TTL input is a Thevenin source too:
    ``input_v_open_v`` behind ``input_r_ohm`` (infinite for CMOS);
    ``input_current_a`` is the datasheet's current at the thresholds (mean,
    negative = out of the pin); ``input_leakage_a`` a CMOS input's leakage
    limit (either sign). For a 555, ``voh_v`` is the supply (RA's end),
    ``discharge_r_ohm`` the pin-7 transistor, ``threshold_current_a`` and
    ``trigger_current_a`` the comparator input currents (typ, max) [A]: into
    pin 6, out of pin 2 (zero where the table lists none: CMOS timers' pA).
    """

    family: Family
    supply_v: float
    vt_plus: Triplet
    vt_minus: Triplet
    hysteresis_min_v: float
    hysteresis_max_v: float
    voh_v: float
    vol_v: float
    r_out_high_ohm: float
    r_out_low_ohm: float
    input_current_a: float
    input_r_ohm: float
    input_v_open_v: float
    input_capacitance_f: float
    input_leakage_a: float
    threshold_current_a: tuple[float, float]
    trigger_current_a: tuple[float, float]
    delay_lh_s: float
    delay_hl_s: float
    r_min_ohm: float
    r_max_ohm: float
    discharge_r_ohm: float
    output_high_v: float
    source: str

    @property
    def circuit(self) -> CircuitName:
        return self.family.circuit

    @property
    def delay_s(self) -> float:
        """Mean propagation delay of the two edges [s]."""
        return 0.5 * (self.delay_lh_s + self.delay_hl_s)

    @property
    def f_max_hz(self) -> float:
        """Frequency where the two edge delays make up F_MAX_DELAY_SHARE of the period [Hz]."""
        delays = self.delay_lh_s + self.delay_hl_s
        return F_MAX_DELAY_SHARE / delays if delays > 0 else math.inf


@dataclass(frozen=True, eq=False)
class Family:
    """One device-table entry (e.g. ``74HC14``); ``at(supply_v)`` gives its numbers.

    Compared and hashed by identity: the table holds one object per family.
    """

    name: str
    circuit: CircuitName
    description: str
    supply_range_v: tuple[float, float]
    source: str
    package: Package
    input_capacitance_f: float
    input_leakage_a: float
    r_range_source: str
    points: tuple[_Point, ...] = field(repr=False)
    span_of: tuple[str, ...] = ()
    threshold_current_a: tuple[float, float] = (0.0, 0.0)
    trigger_current_a: tuple[float, float] = (0.0, 0.0)
    input_clamp_v: float = 0.0

    def __str__(self) -> str:
        return self.name

    @property
    def supplies_v(self) -> tuple[float, ...]:
        """The supply voltages the datasheet lists [V]."""
        return tuple(p.v for p in self.points)

    def at(self, supply_v: float) -> DeviceAtSupply:
        """Numbers at ``supply_v`` [V], interpolated linearly between listed supplies.

        Raises SetupError outside the family's supply range.
        """
        lo, hi = self.supply_range_v
        if not (math.isfinite(supply_v) and lo - 1e-9 <= supply_v <= hi + 1e-9):
            raise SetupError(f"{self.name} runs from {lo:g} V to {hi:g} V; "
                             f"{supply_v:g} V is outside its supply range")
        p = _interpolate(self.points, supply_v)
        return DeviceAtSupply(
            family=self, supply_v=float(supply_v), vt_plus=p.vt_plus, vt_minus=p.vt_minus,
            hysteresis_min_v=p.hysteresis_min, hysteresis_max_v=p.hysteresis_max,
            voh_v=p.voh_open, vol_v=p.vol_open,
            r_out_high_ohm=p.r_out_high, r_out_low_ohm=p.r_out_low,
            input_current_a=p.input_current, input_r_ohm=p.input_r,
            input_v_open_v=p.input_v_open, input_capacitance_f=self.input_capacitance_f,
            input_leakage_a=self.input_leakage_a,
            threshold_current_a=self.threshold_current_a,
            trigger_current_a=self.trigger_current_a, delay_lh_s=p.delay_lh,
            delay_hl_s=p.delay_hl, r_min_ohm=p.r_min, r_max_ohm=p.r_max,
            discharge_r_ohm=p.discharge_r, output_high_v=p.voh_open - p.output_high_drop,
            source=p.source)


def _interpolate(points: tuple[_Point, ...], v: float) -> _Point:
    if len(points) == 1 or v <= points[0].v:
        return replace(points[0], v=v) if len(points) == 1 else points[0]
    if v >= points[-1].v:
        return points[-1]
    i = next(k for k in range(1, len(points)) if points[k].v >= v)
    a, b = points[i - 1], points[i]
    w = (v - a.v) / (b.v - a.v)
    values: dict[str, Any] = {}
    for f in fields(_Point):
        x, y = getattr(a, f.name), getattr(b, f.name)
        if f.name == "source":
            values[f.name] = x if x == y else f"{x}; {y} (interpolated)"
        elif isinstance(x, tuple):
            values[f.name] = tuple(_lerp(p, q, w) for p, q in zip(x, y, strict=True))
        else:
            values[f.name] = _lerp(x, y, w)
    values["v"] = v
    return _Point(**values)


def _lerp(x: float, y: float, w: float) -> float:
    if math.isinf(x) or math.isinf(y):
        return x if x == y else math.inf
    return x + (y - x) * w


class DeviceTable:
    """Every family of the table, looked up by name (case-insensitive)."""

    def __init__(self, families: Mapping[str, Family]):
        self._families = dict(families)
        self._by_key = {name.lower(): fam for name, fam in self._families.items()}

    def families(self, circuit: str | None = None) -> list[str]:
        """Family names, in table order, optionally only those for ``circuit``."""
        return [n for n, f in self._families.items() if circuit in (None, f.circuit)]

    def family(self, name: str) -> Family:
        fam = self._by_key.get(name.strip().lower())
        if fam is None:
            raise InputError(f"unknown family; known: {', '.join(self.families())}",
                             text=name, what="family")
        return fam


# ---------------------------------------------------------------- reading the file

def _triplet(entry: Mapping[str, Any], key: str, where: str) -> Triplet:
    value = entry.get(key)
    if (not isinstance(value, list) or len(value) != 3
            or not all(isinstance(x, int | float) for x in value)):
        raise TickbinError(f"devices.toml: {where}: {key} must be [min, typ, max]")
    lo, typ, hi = (float(x) for x in value)
    if not lo <= typ <= hi:
        raise TickbinError(f"devices.toml: {where}: {key} is not in min <= typ <= max order")
    return lo, typ, hi


def threshold_form(entry: Mapping[str, Any]) -> str:
    """How a supply entry gives its thresholds, read from its own keys: ``fractions`` of
    the supply (a timer's internal divider), ``one`` switching voltage (unbuffered
    inverters), or a ``pair`` VT+/VT- (Schmitt inputs)."""
    if "threshold_fraction" in entry:
        return "fractions"
    return "one" if "switching_v" in entry else "pair"


def _timer_point(entry: Mapping[str, Any], v: float, common: Mapping[str, Any],
                 where: str) -> _Point:
    """A timer's comparator levels are fractions of the supply; its output swings to the
    rails less a drop, and its discharge transistor has an on-resistance."""
    thr = _triplet(entry, "threshold_fraction", where)
    trg = _triplet(entry, "trigger_fraction", where)
    return _Point(vt_plus=tuple(x * v for x in thr),  # type: ignore[arg-type]
                  vt_minus=tuple(x * v for x in trg),  # type: ignore[arg-type]
                  hysteresis_min=(thr[0] - trg[2]) * v, hysteresis_max=math.inf,
                  voh_open=v, vol_open=0.0, r_out_high=0.0, r_out_low=0.0, input_r=math.inf,
                  input_v_open=0.0, input_current=0.0,
                  discharge_r=float(entry["discharge_r_ohm"]),
                  output_high_drop=float(entry.get("output_high_drop_v", 0.0)), **common)


def _point(family: Mapping[str, Any], entry: Mapping[str, Any], where: str) -> _Point:
    v = float(entry["v"])
    r_min, r_max = (float(x) for x in entry["r_range_ohm"])
    delay_lh, delay_hl = (float(x) for x in entry.get("delay_s", (0.0, 0.0)))
    source = str(entry.get("source", family.get("source", "")))
    form = threshold_form(entry)
    if form == "fractions":
        return _timer_point(entry, v, dict(v=v, delay_lh=delay_lh, delay_hl=delay_hl,
                                           r_min=r_min, r_max=r_max, source=source), where)
    if form == "one":
        # One switching voltage: both thresholds carry it; no hysteresis.
        vt_plus = vt_minus = _triplet(entry, "switching_v", where)
    else:
        vt_plus = _triplet(entry, "vt_plus", where)
        vt_minus = _triplet(entry, "vt_minus", where)
    voh_open = float(entry.get("voh_open", v))
    vol_open = float(entry.get("vol_open", 0.0))
    if "r_out_ohm" in entry:
        r_high, r_low = (float(x) for x in entry["r_out_ohm"])
    else:
        voh_open, r_high = _output_line(entry, "voh", voh_open, where)
        vol_open, r_low = _output_line(entry, "vol", vol_open, where)
    # TTL: the input sources a current that falls as the pin voltage rises; two
    # datasheet points (current at VT+ and at VT-) fix a Thevenin source.
    input_r, input_v_open, input_current = math.inf, 0.0, 0.0
    if "input_current_at_thresholds" in entry:
        i_plus, i_minus = (float(x) for x in entry["input_current_at_thresholds"])
        # Current out of the pin = (v_open - V) / r_in.
        input_r = (vt_plus[1] - vt_minus[1]) / ((-i_minus) - (-i_plus))
        input_v_open = vt_plus[1] + (-i_plus) * input_r
        input_current = 0.5 * (i_plus + i_minus)
    point = _Point(v=v, vt_plus=vt_plus, vt_minus=vt_minus,
                   hysteresis_min=float(entry.get("hysteresis_min", 0.0)),
                   hysteresis_max=float(entry.get("hysteresis_max", math.inf)), voh_open=voh_open,
                   vol_open=vol_open, r_out_high=r_high, r_out_low=r_low, input_r=input_r,
                   input_v_open=input_v_open, input_current=input_current, delay_lh=delay_lh,
                   delay_hl=delay_hl, r_min=r_min, r_max=r_max, discharge_r=0.0,
                   output_high_drop=0.0, source=source)
    _check_point(point, where, form == "pair")
    return point


def _output_line(entry: Mapping[str, Any], level: str, v_open: float,
                 where: str) -> tuple[float, float]:
    """(open-circuit level [V], output resistance [Ω]) of one output state.

    ``{level}_test`` = [V, A] is one data-sheet point seen from the given open
    level; ``{level}_curve`` = [[V, A], ...] are points read off a typical
    output-voltage-vs-current curve, fitted by a least-squares line (its
    intercept is the open level, its slope the resistance).
    """
    curve = entry.get(f"{level}_curve")
    if curve is None:
        v, i = (float(x) for x in entry[f"{level}_test"])
        return v_open, abs(v - v_open) / abs(i)
    if len(curve) < 2:
        raise TickbinError(f"devices.toml: {where}: {level}_curve needs two points or more")
    volts = [float(v) for v, _ in curve]
    amps = [abs(float(i)) for _, i in curve]
    mean_i, mean_v = sum(amps) / len(amps), sum(volts) / len(volts)
    slope = (sum((i - mean_i) * (v - mean_v) for i, v in zip(amps, volts, strict=True))
             / sum((i - mean_i) ** 2 for i in amps))
    return mean_v - slope * mean_i, abs(slope)


def _check_point(p: _Point, where: str, hysteresis: bool) -> None:
    """``hysteresis``: the entry gives a VT+/VT- pair (one switching voltage has none)."""
    problems = []
    if not (p.vol_open < p.vt_minus[0] and p.vt_plus[2] < p.voh_open):
        problems.append("thresholds must lie between the output levels")
    if hysteresis and not p.hysteresis_min <= p.vt_plus[1] - p.vt_minus[1] <= p.hysteresis_max:
        problems.append("typ thresholds are outside hysteresis_min … hysteresis_max")
    if hysteresis and (p.vt_plus[2] - p.vt_minus[0] < p.hysteresis_min
                       or p.hysteresis_min <= 0):
        problems.append("no threshold pair meets hysteresis_min")
    if p.r_out_high < 0 or p.r_out_low < 0 or not p.r_min < p.r_max:
        problems.append("output resistance or r_range_ohm out of order")
    if problems:
        raise TickbinError(f"devices.toml: {where}: {'; '.join(problems)}")


def _package(packages: Mapping[str, Any], key: str, where: str) -> Package:
    raw = packages.get(key)
    if raw is None:
        raise TickbinError(f"devices.toml: {where}: unknown package {key!r}")
    return Package(name=raw["name"], pins=dict(raw["pins"]),
                   unused_inputs=tuple(raw.get("unused_inputs", ())),
                   notes=tuple(raw.get("notes", ())), source=raw.get("source", ""))


def _family(name: str, raw: Mapping[str, Any], packages: Mapping[str, Any]) -> Family:
    circuit = raw.get("circuit")
    if circuit not in CIRCUIT_NAMES:
        raise TickbinError(f"devices.toml: {name}: circuit must be one of "
                           f"{', '.join(CIRCUIT_NAMES)}")
    entries = sorted(raw.get("supply", ()), key=lambda e: float(e["v"]))
    if not entries:
        raise TickbinError(f"devices.toml: {name}: no [[supply]] entries")
    if len({threshold_form(e) for e in entries}) > 1:
        raise TickbinError(f"devices.toml: {name}: every [[supply]] entry must give its "
                           "thresholds the same way")
    points = tuple(_point(raw, e, f"{name} at {e['v']} V") for e in entries)
    lo, hi = (float(x) for x in raw["supply_range_v"])
    if len(points) > 1 and not (points[0].v <= lo and hi <= points[-1].v):
        raise TickbinError(f"devices.toml: {name}: listed supplies must span supply_range_v")
    return Family(name=name, circuit=circuit, description=raw.get("description", ""),
                  supply_range_v=(lo, hi), source=raw.get("source", ""),
                  package=_package(packages, raw["package"], name),
                  input_capacitance_f=float(raw.get("input_capacitance_f", 0.0)),
                  input_leakage_a=float(raw.get("input_leakage_a", 0.0)),
                  r_range_source=raw.get("r_range_source", ""), points=points,
                  threshold_current_a=_typ_max(raw, "threshold_current_a", name),
                  trigger_current_a=_typ_max(raw, "trigger_current_a", name),
                  input_clamp_v=float(raw.get("input_clamp_v", 0.0)))


def _typ_max(raw: Mapping[str, Any], key: str, where: str) -> tuple[float, float]:
    """A [typ, max] pair (absent: none listed, taken as zero)."""
    value = raw.get(key, (0.0, 0.0))
    if (not isinstance(value, list | tuple) or len(value) != 2
            or not all(isinstance(x, int | float) for x in value)
            or not 0 <= value[0] <= value[1]):
        raise TickbinError(f"devices.toml: {where}: {key} must be [typ, max], 0 <= typ <= max")
    return float(value[0]), float(value[1])


def _span(name: str, raw: Mapping[str, Any], known: Mapping[str, Family]) -> Family:
    """A family that spans maker variants: widest thresholds, mean of the rest."""
    variants = [known[v] for v in raw["span_of"]]
    supplies = variants[0].supplies_v
    if any(v.supplies_v != supplies for v in variants):
        raise TickbinError(f"devices.toml: {name}: variants must list the same supplies")
    points = []
    for k in range(len(supplies)):
        ps = [v.points[k] for v in variants]
        mean = {f.name: sum(getattr(p, f.name) for p in ps) / len(ps)
                for f in fields(_Point)
                if f.name not in ("vt_plus", "vt_minus", "hysteresis_min", "hysteresis_max",
                                  "source")}
        points.append(_Point(
            **mean,
            vt_plus=_envelope([p.vt_plus for p in ps]),
            vt_minus=_envelope([p.vt_minus for p in ps]),
            hysteresis_min=min(p.hysteresis_min for p in ps),
            hysteresis_max=max(p.hysteresis_max for p in ps),
            source=f"envelope of {', '.join(v.name for v in variants)}"))
    first = variants[0]
    return Family(name=name, circuit=first.circuit, description=raw.get("description", ""),
                  supply_range_v=(max(v.supply_range_v[0] for v in variants),
                                  min(v.supply_range_v[1] for v in variants)),
                  source=raw.get("source", ""), package=first.package,
                  input_capacitance_f=max(v.input_capacitance_f for v in variants),
                  input_leakage_a=max(v.input_leakage_a for v in variants),
                  threshold_current_a=_widest([v.threshold_current_a for v in variants]),
                  trigger_current_a=_widest([v.trigger_current_a for v in variants]),
                  r_range_source=first.r_range_source, points=tuple(points),
                  span_of=tuple(v.name for v in variants))


def _widest(pairs: list[tuple[float, float]]) -> tuple[float, float]:
    return max(p[0] for p in pairs), max(p[1] for p in pairs)


def _envelope(triplets: list[Triplet]) -> Triplet:
    return (min(t[0] for t in triplets), sum(t[1] for t in triplets) / len(triplets),
            max(t[2] for t in triplets))


def load_device_table(text: str) -> DeviceTable:
    """Parse device-table TOML text (see resources/devices.toml for the layout)."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as e:
        raise TickbinError(f"devices.toml: {e}") from None
    packages = data.get("packages", {})
    raw_families = data.get("families", {})
    families: dict[str, Family] = {}
    try:
        for name, raw in raw_families.items():
            if "span_of" not in raw:
                families[name] = _family(name, raw, packages)
        for name, raw in raw_families.items():
            if "span_of" in raw:
                families[name] = _span(name, raw, families)
    except (KeyError, TypeError, ValueError) as e:
        raise TickbinError(f"devices.toml: malformed entry ({type(e).__name__}: {e})") from None
    ordered = {name: families[name] for name in raw_families}
    return DeviceTable(ordered)


@cache
def device_table() -> DeviceTable:
    """The bundled device table, read once."""
    from core.storage.locations import resource

    return load_device_table(resource("devices.toml").read_text(encoding="utf-8"))
