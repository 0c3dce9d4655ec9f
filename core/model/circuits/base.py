"""The circuit object and the oscillator that carries it.

A ``Circuit`` is everything that makes one oscillator circuit differ from
another: its part roles, the two phases of its timing node, where its threshold
spread peaks, why it stops, what a builder should be told, its pin hookup and
its netlist elements (as data; core.output renders them). An ``Oscillator`` is
a chip of a family at a supply, with thresholds, wired as one circuit. Adding a
circuit means one module beside this one, its entry in ``CIRCUITS``
(core/model/circuits/__init__.py) and its device-table entries.
"""

from __future__ import annotations

import math
from abc import ABC, abstractmethod
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from core.errors import InputError, SetupError
from core.model.circuits.phases import Phases, phase_times
from core.model.devices import DeviceAtSupply, Family
from core.model.diode import SMALL_SIGNAL_DIODE, Diode

ArrayLike = Any

DEFAULT_STRAY_F = 5e-12
"""Stray capacitance at the timing node on a breadboard or perfboard [F]
(common practice, no published source)."""



@dataclass(frozen=True)
class Role:
    """A part's place in a circuit: its key in ``values`` and its kind ("R" or "C")."""

    key: str
    kind: str


@dataclass(frozen=True)
class Circuit(ABC):
    """One oscillator circuit, as data and the few methods that differ per circuit.

    ``name`` is the command line's ``--circuit`` word; ``title`` names it in a
    sentence; ``roles`` are its parts in order; ``trimmable`` the roles a pot
    may be put in series with; ``steerable`` whether a steering diode (and so a
    duty target) applies; ``output_drives_timing`` whether the timing resistor
    hangs on the output pin (a load there then moves the frequency).
    ``oscillator`` names the whole oscillator, ``short`` in a heading;
    ``threshold_words`` formats the thresholds (``plus``, ``minus`` [V] and
    where they come from, ``source``). As data for core.output: ``pins``, the
    pin hookup (package role, pin name, what it connects to), and
    ``layout_notes``, what a builder should know about the layout, and
    ``measure_note``, where to measure (when no adjustment procedure says it).
    ``threshold_names``: the trade's words for the upper and lower switching levels (plot
    labels; the first alone where ``one_threshold``).
    ``one_threshold``: the circuit switches at one voltage (``--threshold``), carried
    as VT+ = VT-. ``unready``: the commands that do not handle the circuit yet
    (``search``, ``a build sheet``, ``the netlist``, ``calibration``; predict always
    does; ``require_designed`` says so). ``reversing_c``: the timing capacitor's
    voltage changes sign each cycle, so it must not be polarised.
    ``steered_variant``: the same circuit wired with steering diodes where that changes
    its parts (the Schmitt inverter's RH, RL, C); a duty target or RH/RL pick it.
    ``always_steered``: its steering diodes are part of the circuit (no
    ``--diode-steered``). ``drawing``: which schematic and netlist elements core.output draws for it
    (default: ``name``).
    For the search (core.design): ``tuned`` is the resistor role solved for the
    frequency; ``follower`` (role, least, most ratio) a resistor chosen within a
    ratio window of the tuned one rather than for the timing; the roles neither
    tuned nor following nor C are enumerated from the drawer; ``divide_by`` the
    output ratios the circuit offers (a counter's pinned-out stages).
    """

    name: str
    title: str
    roles: tuple[Role, ...]
    default_family: str
    trimmable: tuple[str, ...] = ()
    steerable: bool = False
    output_drives_timing: bool = False
    oscillator: str = ""
    short: str = ""
    threshold_words: str = ""
    threshold_names: tuple[str, str] = ("VT+", "VT−")
    pins: tuple[tuple[str, str, str], ...] = ()
    layout_notes: tuple[str, ...] = ()
    measure_note: str = ""
    one_threshold: bool = False
    unready: tuple[str, ...] = ()
    reversing_c: bool = False
    steered_variant: Circuit | None = None
    always_steered: bool = False
    drawing: str = ""

    @property
    def drawing_id(self) -> str:
        """The key core.output draws this circuit by (its schematic, its netlist)."""
        return self.drawing or self.name
    tuned: str = "R"
    follower: tuple[str, float, float] | None = None
    divide_by: tuple[int, ...] = (1,)

    @property
    def keys(self) -> tuple[str, ...]:
        """The part values the circuit needs, as keys of ``values``."""
        return tuple(r.key for r in self.roles)

    @property
    def value_flags(self) -> str:
        """The command line's flags for the part values: ``--r R --c C``."""
        return " ".join(f"--{r.key.lower()} {r.kind}" for r in self.roles)

    @property
    def enumerated(self) -> tuple[str, ...]:
        """The resistor roles a search takes from the drawer as they are (the 555's RA)."""
        follower = self.follower[0] if self.follower else ""
        return tuple(k for k in self.resistors if k not in (self.tuned, follower))

    @property
    def resistors(self) -> tuple[str, ...]:
        """The resistor roles in order; the first meets the output (or discharge) current."""
        return tuple(r.key for r in self.roles if r.kind == "R")

    @abstractmethod
    def phases(self, osc: Oscillator, values: Mapping[str, ArrayLike],
               diode_steered: bool = False, vt_plus: ArrayLike = None,
               vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
               i_low: ArrayLike = 0.0) -> Phases:
        """The timing node's two phases for ``values`` [Ω, F] (all broadcast)."""

    def require_designed(self, what: str) -> None:
        """SetupError where ``what`` (search, sheet, ...) does not know this circuit yet."""
        if what in self.unready:
            raise SetupError(f"{what} does not handle the {self.title} yet; 'tickbin predict "
                             f"--circuit {self.name} {self.value_flags}' does")

    def hookup(self, osc: Oscillator) -> tuple[tuple[str, str, str], ...]:
        """The pin hookup for this oscillator (package role, pin name, what it connects to):
        ``pins``, unless the circuit adds a pin that depends on the build (a counter tap)."""
        return self.pins

    def builder_notes(self, osc: Oscillator) -> list[str]:
        """What a builder should know about the layout of this oscillator."""
        return list(self.layout_notes)

    def output_times(self, osc: Oscillator, t_high: ArrayLike, t_low: ArrayLike
                     ) -> tuple[Any, Any]:
        """(t_high, t_low) [s] at the output from the timing node's phases (the same,
        unless a counter follows the oscillator)."""
        return t_high, t_low

    def hysteresis_limits(self, device: DeviceAtSupply) -> tuple[float, float]:
        """The least and most VT+ − VT- [V] the table guarantees (none by default)."""
        return 0.0, math.inf

    def threshold_corners(self, device: DeviceAtSupply) -> list[tuple[float, float]]:
        """(VT+, VT-) pairs [V] whose extremes bound the frequency: the min/max box."""
        (a_lo, _, a_hi), (b_lo, _, b_hi) = device.vt_plus, device.vt_minus
        return [(a, b) for a in (a_lo, a_hi) for b in (b_lo, b_hi)]

    def why_stopped(self, osc: Oscillator, values: Mapping[str, float],
                    n: Phases) -> str | None:
        """A circuit's own reason these values give no oscillation, if it has one."""
        return None

    def warnings(self, osc: Oscillator, values: Mapping[str, float],
                 diode_steered: bool) -> list[str]:
        """What a builder should know about this circuit beyond the common checks."""
        return []

    def timing_node_v(self, osc: Oscillator, v_cap: np.ndarray, v_out: np.ndarray
                      ) -> np.ndarray:
        """The timing node's voltage [V] from the waveform's capacitor voltage and output
        (the same where C goes to ground)."""
        return v_cap

    def output_low_v(self, device: DeviceAtSupply) -> float:
        """The output pin's low level [V] (the waveform's low)."""
        return device.vol_v


@dataclass(frozen=True)
class Oscillator:
    """A chip at a supply, with the thresholds the model uses.

    ``vt_plus_v``/``vt_minus_v`` [V] are the nominal thresholds (the table's
    typ unless given or calibrated); ``thresholds_given`` means a person or a
    calibration fixed them, so no threshold spread is applied. A calibration's
    own uncertainty takes its place: ``calibration_terms`` are the half-widths of
    the uniform relative errors it carries into any frequency (see
    core.model.calibration).
    ``stray_capacitance_f`` [F] sits beside the timing capacitor;
    ``load_ohm`` [Ω] is a load from the timing output to ground, if any;
    ``steering_diode`` is the 555 steering diode's model (Shockley curve).
    ``circuit`` is the circuit object (core.model.circuits), not its name.
    ``divide_by`` is a counter's ratio after the oscillator (1: none).
    """

    circuit: Circuit
    device: DeviceAtSupply
    vt_plus_v: float
    vt_minus_v: float
    thresholds_given: bool = False
    calibration: str | None = None
    calibration_terms: tuple[float, ...] = ()
    stray_capacitance_f: float = DEFAULT_STRAY_F
    load_ohm: float | None = None
    steering_diode: Diode = SMALL_SIGNAL_DIODE
    notes: tuple[str, ...] = field(default=())
    divide_by: int = 1

    @property
    def family(self) -> Family:
        return self.device.family

    @property
    def supply_v(self) -> float:
        return self.device.supply_v

    @property
    def calibration_sigma(self) -> float:
        """1 sigma of the calibration's relative frequency error (0 without one)."""
        return uniform_sum_sigma(self.calibration_terms)

    @property
    def calibration_limit(self) -> float:
        """First-order limit of the calibration's relative frequency error."""
        return sum(self.calibration_terms)

    def with_steering(self) -> Oscillator:
        """The oscillator wired with steering diodes where that is another circuit (the
        Schmitt inverter's RH, RL, C); unchanged where the diode is a flag (the 555)."""
        variant = self.circuit.steered_variant
        return self if variant is None else replace(self, circuit=variant)

    def with_thresholds(self, vt_plus_v: float, vt_minus_v: float) -> Oscillator:
        """The same oscillator with fixed thresholds [V] (no threshold spread)."""
        check_thresholds(self.device, vt_plus_v, vt_minus_v, self.circuit.one_threshold)
        return replace(self, vt_plus_v=float(vt_plus_v), vt_minus_v=float(vt_minus_v),
                       thresholds_given=True)

    def idealised(self) -> Oscillator:
        """The textbook circuit: same levels and thresholds, but no output resistance,
        input current or leakage, input or stray capacitance, discharge resistance or
        delay."""
        device = replace(self.device, r_out_high_ohm=0.0, r_out_low_ohm=0.0,
                         input_r_ohm=math.inf, input_current_a=0.0, input_capacitance_f=0.0,
                         input_leakage_a=0.0, threshold_current_a=(0.0, 0.0),
                         trigger_current_a=(0.0, 0.0), delay_lh_s=0.0, delay_hl_s=0.0,
                         discharge_r_ohm=0.0)
        return replace(self, device=device, stray_capacitance_f=0.0, load_ohm=None)

    def threshold_corners(self) -> list[tuple[float, float]]:
        """(VT+, VT-) pairs [V] whose extremes bound the frequency over the table's spread
        (only the given pair when thresholds are fixed)."""
        if self.thresholds_given:
            return [(self.vt_plus_v, self.vt_minus_v)]
        return self.circuit.threshold_corners(self.device)


def uniform_sum_sigma(half_widths: tuple[float, ...]) -> float:
    """1 sigma of a sum of independent uniform errors ±h (JCGM 100:2008 §4.3.7: h / √3)."""
    return math.sqrt(sum(h * h for h in half_widths) / 3)


def check_thresholds(device: DeviceAtSupply, vt_plus: float, vt_minus: float,
                     one_threshold: bool = False) -> None:
    if not (math.isfinite(vt_plus) and math.isfinite(vt_minus)):
        raise InputError("thresholds must be finite voltages")
    if one_threshold and vt_plus != vt_minus:
        raise InputError("the circuit switches at one voltage: give --threshold")
    if vt_plus == vt_minus and not one_threshold:
        raise InputError("--threshold is for circuits with one switching voltage "
                         "(cmos-astable, divider); this one takes --vt-plus and --vt-minus")
    if vt_plus <= vt_minus and not one_threshold:
        raise InputError(f"VT+ ({vt_plus:.3g} V) must be above VT- ({vt_minus:.3g} V)")
    if not device.vol_v < vt_minus or not vt_plus < device.voh_v:
        raise SetupError(f"thresholds {vt_plus:.3g} V / {vt_minus:.3g} V must lie between "
                         f"the output levels {device.vol_v:.3g} V and {device.voh_v:.3g} V "
                         f"of the {device.family.name} at {device.supply_v:g} V")


def output_sources(osc: Oscillator) -> tuple[float, float, float, float]:
    """Output high/low as (V, R) Thevenin pairs, with any load to ground folded in."""
    d = osc.device
    voh, roh, vol, rol = d.voh_v, d.r_out_high_ohm, d.vol_v, d.r_out_low_ohm
    if osc.load_ohm is not None:
        rl = osc.load_ohm
        voh, roh = voh * rl / (rl + roh), roh * rl / (rl + roh)
        vol, rol = vol * rl / (rl + rol), rol * rl / (rl + rol)
    return voh, roh, vol, rol


def timing_capacitance(osc: Oscillator, c: ArrayLike) -> np.ndarray:
    """The timing capacitor [F] plus the chip's input and the layout's stray capacitance."""
    return np.asarray(c, dtype=float) + osc.device.input_capacitance_f + osc.stray_capacitance_f


def thresholds(osc: Oscillator, vt_plus: ArrayLike, vt_minus: ArrayLike) -> tuple[Any, Any]:
    """(VT+, VT-) [V]: the given arrays, else the oscillator's own."""
    return (osc.vt_plus_v if vt_plus is None else np.asarray(vt_plus, dtype=float),
            osc.vt_minus_v if vt_minus is None else np.asarray(vt_minus, dtype=float))


def drawn(v_target: Any, r: Any, current: ArrayLike) -> Any:
    """A Thevenin phase's target [V] with ``current`` [A] drawn from the node: V − I·R."""
    return v_target - np.asarray(current, dtype=float) * r


def check_values(osc: Oscillator, values: Mapping[str, float]) -> dict[str, float]:
    """The circuit's part values as floats; InputError if one is missing or not positive."""
    keys = osc.circuit.keys
    missing = [k for k in keys if k not in values]
    if missing:
        raise InputError(f"the {osc.circuit.title} needs {', '.join(keys)}; "
                         f"missing {', '.join(missing)}")
    out = {k: float(values[k]) for k in keys}
    bad = [k for k, v in out.items() if not (math.isfinite(v) and v > 0)]
    if bad:
        raise InputError(f"{', '.join(bad)} must be above zero")
    return out


def times(osc: Oscillator, values: Mapping[str, ArrayLike], diode_steered: bool = False,
          vt_plus: ArrayLike = None, vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
          i_low: ArrayLike = 0.0) -> tuple[np.ndarray, np.ndarray]:
    """(t_high, t_low) [s] for either circuit; ``values`` keyed as the circuit's roles [Ω, F].

    ``i_high``/``i_low`` [A] are currents drawn from the timing node while the
    output is high/low (leakage, comparator inputs; core.model.leakage);
    negative pushes current in. All arguments broadcast.
    """
    if not (diode_steered or osc.circuit.always_steered):
        return _times(osc, values, diode_steered, vt_plus, vt_minus, i_high, i_low)
    # The diode's charge integral holds QUADRATURE_NODES values per build: taken a slice
    # of builds at a time, its arrays stay in cache and memory stays bounded.
    given = [*values.values(), vt_plus, vt_minus, i_high, i_low]
    shape = np.broadcast_shapes(*(np.shape(x) for x in given if x is not None))
    size = math.prod(shape)
    if size <= STEERED_SLICE:
        return _times(osc, values, diode_steered, vt_plus, vt_minus, i_high, i_low)

    def flat(x: Any) -> Any:
        return x if x is None or not np.ndim(x) else np.broadcast_to(x, shape).reshape(-1)

    def part(x: Any, k: slice) -> Any:
        return x if x is None or not np.ndim(x) else x[k]

    keys, (*v, a, b, ih, il) = list(values), [flat(x) for x in given]
    t_high, t_low = np.empty(size), np.empty(size)
    for start in range(0, size, STEERED_SLICE):
        k = slice(start, start + STEERED_SLICE)
        t_high[k], t_low[k] = _times(osc, {r: part(x, k) for r, x in zip(keys, v, strict=True)},
                                     diode_steered, part(a, k), part(b, k), part(ih, k),
                                     part(il, k))
    return t_high.reshape(shape), t_low.reshape(shape)


STEERED_SLICE = 16384
"""Builds per slice of a diode-steered evaluation (fastest of 4096…32768 on the demo
drawer's duty searches, about a million builds each; memory stays in the megabytes)."""


def _times(osc: Oscillator, values: Mapping[str, ArrayLike], diode_steered: bool,
           vt_plus: ArrayLike, vt_minus: ArrayLike, i_high: ArrayLike, i_low: ArrayLike
           ) -> tuple[np.ndarray, np.ndarray]:
    """``times`` for one slice of builds."""
    t_high, t_low = phase_times(osc.circuit.phases(osc, values, diode_steered, vt_plus,
                                                   vt_minus, i_high, i_low))
    return osc.circuit.output_times(osc, t_high, t_low)


def frequency(osc: Oscillator, values: Mapping[str, ArrayLike], diode_steered: bool = False,
              vt_plus: ArrayLike = None, vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
              i_low: ArrayLike = 0.0) -> np.ndarray:
    """Frequency [Hz] for either circuit; NaN where it will not oscillate."""
    t_high, t_low = times(osc, values, diode_steered, vt_plus, vt_minus, i_high, i_low)
    return 1.0 / (t_high + t_low)
