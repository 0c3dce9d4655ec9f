"""Timing of RC relaxation oscillators from the charging physics.

Both circuits are the same picture: a timing capacitor charges toward one
Thevenin source while the output is high and toward another while it is low,
and the chip flips its output a propagation delay after the capacitor voltage
crosses a threshold. Each phase is then an exact exponential segment, so
periods have a closed form (no curve fits, no stepping), vectorised over
numpy arrays of part values.

Schmitt-trigger inverter (R from output to input, C from input to ground)::

    t_high = R C ln((VOH - VT-) / (VOH - VT+))    output high, C charges
    t_low  = R C ln((VT+ - VOL) / (VT- - VOL))    output low, C discharges

plus output resistance in series with R, input and stray capacitance beside
C, a TTL input's current through R (a Thevenin source at the input), and the
propagation delay on each edge (the capacitor overshoots the threshold while
the output has not yet switched).

555 astable: t_high = ln2 (RA + RB) C, t_low = ln2 RB C, generalised to the
actual threshold/trigger levels, the discharge transistor's on-resistance,
and the diode-steered variant (charge through RA and a diode, discharge
through RB).

References: NE555 and TLC555 data sheets (astable operation); the device
data sheets in resources/devices.toml; P. Horowitz and W. Hill, The Art of
Electronics, 3rd ed., §1.4 (RC charging) and §7.1 (relaxation oscillators).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

from core.errors import InputError, SetupError
from core.model.devices import Circuit, DeviceAtSupply, Family, device_table
from core.model.diode import SMALL_SIGNAL_DIODE, Diode, SteeringBranch
from core.units import Tolerance, format_quantity

if TYPE_CHECKING:
    from core.model.calibration import Calibration

DEFAULT_STRAY_F = 5e-12
"""Stray capacitance at the timing node on a breadboard or perfboard [F]
(common practice, no published source)."""

VALUE_KEYS: dict[str, tuple[str, ...]] = {"schmitt": ("R", "C"), "555": ("RA", "RB", "C")}
"""The part values each circuit needs, as keys of ``values``."""
DEFAULT_FAMILY: dict[str, str] = {"schmitt": "74HC14", "555": "NE555"}

ArrayLike = Any


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

    def with_thresholds(self, vt_plus_v: float, vt_minus_v: float) -> Oscillator:
        """The same oscillator with fixed thresholds [V] (no threshold spread)."""
        _check_thresholds(self.device, vt_plus_v, vt_minus_v)
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
        """(VT+, VT-) pairs [V] whose extremes bound the frequency over the table's spread.

        The feasible thresholds form the box min…max of each, cut by the
        guaranteed hysteresis hysteresis_min ≤ VT+ − VT- ≤ hysteresis_max. The period rises with
        VT+ and falls with VT-, so its extremes lie on the polygon's vertices,
        except the fastest point on the minimum-hysteresis edge, which is where
        the window is centred between the output levels (added explicitly).
        """
        if self.thresholds_given:
            return [(self.vt_plus_v, self.vt_minus_v)]
        d = self.device
        (a_lo, _, a_hi), (b_lo, _, b_hi) = d.vt_plus, d.vt_minus
        if self.circuit == "555":
            return [(a, b) for a in (a_lo, a_hi) for b in (b_lo, b_hi)]
        h, h_max = d.hysteresis_min_v, d.hysteresis_max_v
        candidates = [(a, b) for a in (a_lo, a_hi) for b in (b_lo, b_hi)]
        for width in (h, h_max) if math.isfinite(h_max) else (h,):
            candidates += [(a_lo, a_lo - width), (b_hi + width, b_hi), (a_hi, a_hi - width),
                           (b_lo + width, b_lo)]
        centre = 0.5 * (d.voh_v + d.vol_v + h)
        candidates.append((centre, centre - h))
        eps = 1e-12
        corners: list[tuple[float, float]] = []
        for a, b in candidates:
            inside = (a_lo - eps <= a <= a_hi + eps and b_lo - eps <= b <= b_hi + eps
                      and h - eps <= a - b <= h_max + eps)
            if inside and all(abs(a - p) > 1e-9 or abs(b - q) > 1e-9 for p, q in corners):
                corners.append((a, b))
        return corners


def uniform_sum_sigma(half_widths: tuple[float, ...]) -> float:
    """1 sigma of a sum of independent uniform errors ±h (JCGM 100:2008 §4.3.7: h / √3)."""
    return math.sqrt(sum(h * h for h in half_widths) / 3)


def _check_thresholds(device: DeviceAtSupply, vt_plus: float, vt_minus: float) -> None:
    if not (math.isfinite(vt_plus) and math.isfinite(vt_minus)):
        raise InputError("thresholds must be finite voltages")
    if vt_plus <= vt_minus:
        raise InputError(f"VT+ ({vt_plus:.3g} V) must be above VT- ({vt_minus:.3g} V)")
    if not device.vol_v < vt_minus or not vt_plus < device.voh_v:
        raise SetupError(f"thresholds {vt_plus:.3g} V / {vt_minus:.3g} V must lie between "
                         f"the output levels {device.vol_v:.3g} V and {device.voh_v:.3g} V "
                         f"of the {device.family.name} at {device.supply_v:g} V")


def make_oscillator(circuit: str, family: str | Family, supply_v: float,
                    vt_plus: float | None = None, vt_minus: float | None = None,
                    calibration: str | Calibration | None = None, *,
                    stray_capacitance_f: float = DEFAULT_STRAY_F,
                    load_ohm: float | None = None) -> Oscillator:
    """An oscillator for ``family`` at ``supply_v`` [V].

    ``vt_plus``/``vt_minus`` [V] override the table (both or neither);
    ``calibration`` is a saved calibration's name (or the object) whose
    thresholds are used instead.
    """
    if circuit not in VALUE_KEYS:
        raise InputError("expected schmitt or 555", text=str(circuit), what="circuit")
    fam = family if isinstance(family, Family) else device_table().family(family)
    if fam.circuit != circuit:
        raise InputError(f"{fam.name} is a {_circuit_word(fam.circuit)}; use --circuit "
                         f"{fam.circuit} (or a {_circuit_word(circuit)} family: "
                         f"{', '.join(device_table().families(circuit))})",
                         text=fam.name, what="family")
    if stray_capacitance_f < 0 or not math.isfinite(stray_capacitance_f):
        raise InputError("stray capacitance must be zero or more")
    if load_ohm is not None and not load_ohm > 0:
        raise InputError("a load must be a resistance above zero")
    device = fam.at(supply_v)
    osc = Oscillator(circuit=fam.circuit, device=device, vt_plus_v=device.vt_plus[1],
                     vt_minus_v=device.vt_minus[1], stray_capacitance_f=stray_capacitance_f,
                     load_ohm=load_ohm)
    if (vt_plus is None) != (vt_minus is None):
        raise InputError("give both thresholds (--vt-plus and --vt-minus) or neither")
    if calibration is not None:
        if vt_plus is not None:
            raise InputError("give thresholds or a calibration, not both")
        from core.model.calibration import Calibration, load_calibration

        cal = calibration if isinstance(calibration, Calibration) else load_calibration(
            calibration)
        plus, minus, notes = cal.thresholds_for(device)
        osc = replace(osc.with_thresholds(plus, minus), calibration=cal.name,
                      calibration_terms=tuple(t / 100 for t in cal.error_terms_pct),
                      notes=tuple(notes))
    elif vt_plus is not None and vt_minus is not None:
        osc = osc.with_thresholds(vt_plus, vt_minus)
    return osc


def _circuit_word(circuit: str) -> str:
    return "Schmitt-trigger inverter" if circuit == "schmitt" else "555 timer"


# ---------------------------------------------------------------- the two-phase model

class _Steered(NamedTuple):
    """A charge through a steering diode: the branch, the node's capacitance [F] and the
    current drawn from the node [A] (broadcast like the node's arrays)."""

    branch: SteeringBranch
    capacitance: Any
    drawn: Any


class _Node(NamedTuple):
    """The timing node as two Thevenin phases: targets [V], time constants [s], delays [s].

    With ``steering`` the charge runs through a diode wherever it conducts;
    (``v_high``, ``tau_high``) are then the diode-off phase (C through RA + RB).
    """

    vt_plus: Any
    vt_minus: Any
    v_high: Any
    tau_high: Any
    v_low: Any
    tau_low: Any
    delay_lh: float
    delay_hl: float
    steering: _Steered | None = None


DIODE_OFF_SHARE = 1e-6
"""Below this relative effect on the charge time the steering diode counts as off and
the closed form (C through RA + RB) is used."""


def _diode_conducts(n: _Node, v_start: Any) -> np.ndarray:
    """Where the steering diode changes the charge time by more than DIODE_OFF_SHARE.

    Upper bound of its share: the diode's current at RB's drop at the start of the
    charge (largest there; the diode only lowers it), against RB's current, times
    RB's share of the charging resistance.
    """
    s = n.steering
    assert s is not None
    br = s.branch
    with np.errstate(all="ignore"):
        v_rb = br.r_across_ohm * (br.source_v - v_start) / (br.r_series_ohm + br.r_across_ohm)
        share = (br.diode.junction_current(v_rb) * br.r_across_ohm / v_rb
                 * br.r_across_ohm / (br.r_series_ohm + br.r_across_ohm))
    return np.asarray(share > DIODE_OFF_SHARE)


def _cycle(n: _Node) -> tuple[np.ndarray, np.ndarray, Any, Any]:
    """Steady-state (t_high, t_low) [s] and the turning voltages (v_start, v_peak) [V].

    After the node crosses VT- the output stays low for delay_lh, so the next
    charge starts below VT- (at ``v_start``); likewise it overshoots VT+ to
    ``v_peak``. Times are NaN where a phase does not pass its threshold.
    """
    a, b = n.vt_plus, n.vt_minus
    with np.errstate(all="ignore"):
        v_start = n.v_low + (b - n.v_low) * np.exp(-n.delay_lh / n.tau_low)
        v_peak = n.v_high - (n.v_high - a) * np.exp(-n.delay_hl / n.tau_high)
        t_high = np.where(n.v_high > a, n.tau_high * np.log((n.v_high - v_start)
                                                             / (n.v_high - a)), np.nan)
        t_high = t_high + n.delay_hl
        if n.steering is not None:
            t_high, v_peak = _steered_charge(n, v_start, t_high, v_peak)
        t_low = n.tau_low * np.log((v_peak - n.v_low) / (b - n.v_low)) + n.delay_lh
    ok = (n.v_low < b) & (a > b) & np.isfinite(t_high)
    return np.where(ok, t_high, np.nan), np.where(ok, t_low, np.nan), v_start, v_peak


def _steered_charge(n: _Node, v_start: Any, t_high: Any, v_peak: Any) -> tuple[Any, Any]:
    """The charge time [s] and peak [V] where the steering diode conducts (integrated);
    the closed form elsewhere. Over the delay after VT+ the node rises at its current slope."""
    s = n.steering
    assert s is not None
    br = s.branch
    src, r_ser, r_acr, ct, drawn, v0, a, t_out, peak = (
        np.array(x, dtype=float) for x in np.broadcast_arrays(
            br.source_v, br.r_series_ohm, br.r_across_ohm, s.capacitance, s.drawn, v_start,
            n.vt_plus, t_high, v_peak))
    on = np.broadcast_to(_diode_conducts(n, v_start), src.shape)
    if on.any():
        branch = SteeringBranch(br.diode, src[on], r_ser[on], r_acr[on])
        t, net = branch.charge_time(ct[on], drawn[on], v0[on], a[on])
        t_out[on] = t + n.delay_hl
        peak[on] = a[on] + net * n.delay_hl / ct[on]
    return t_out, peak


def _phase_times(n: _Node) -> tuple[np.ndarray, np.ndarray]:
    """Steady-state (t_high, t_low) [s]; NaN where a target does not pass its threshold."""
    t_high, t_low, _, _ = _cycle(n)
    return t_high, t_low


def _output_sources(osc: Oscillator) -> tuple[float, float, float, float]:
    """Output high/low as (V, R) Thevenin pairs, with any load to ground folded in."""
    d = osc.device
    voh, roh, vol, rol = d.voh_v, d.r_out_high_ohm, d.vol_v, d.r_out_low_ohm
    if osc.load_ohm is not None:
        rl = osc.load_ohm
        voh, roh = voh * rl / (rl + roh), roh * rl / (rl + roh)
        vol, rol = vol * rl / (rl + rol), rol * rl / (rl + rol)
    return voh, roh, vol, rol


def _timing_capacitance(osc: Oscillator, c: ArrayLike) -> np.ndarray:
    """The timing capacitor [F] plus the chip's input and the layout's stray capacitance."""
    return np.asarray(c, dtype=float) + osc.device.input_capacitance_f + osc.stray_capacitance_f


def _thresholds(osc: Oscillator, vt_plus: ArrayLike, vt_minus: ArrayLike) -> tuple[Any, Any]:
    """(VT+, VT-) [V]: the given arrays, else the oscillator's own."""
    return (osc.vt_plus_v if vt_plus is None else np.asarray(vt_plus, dtype=float),
            osc.vt_minus_v if vt_minus is None else np.asarray(vt_minus, dtype=float))


def _schmitt_node(osc: Oscillator, r: ArrayLike, c: ArrayLike, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
                  i_low: ArrayLike = 0.0) -> _Node:
    d = osc.device
    r = np.asarray(r, dtype=float)
    ct = _timing_capacitance(osc, c)
    voh, roh, vol, rol = _output_sources(osc)
    r_high, r_low = r + roh, r + rol
    v_high, v_low = voh, vol
    if math.isfinite(d.input_r_ohm):
        # TTL input: a source v_open behind r_in feeds the node as well.
        ri, vi = d.input_r_ohm, d.input_v_open_v
        v_high = (voh * ri + vi * r_high) / (r_high + ri)
        v_low = (vol * ri + vi * r_low) / (r_low + ri)
        r_high = r_high * ri / (r_high + ri)
        r_low = r_low * ri / (r_low + ri)
    v_high, v_low = _drawn(v_high, r_high, i_high), _drawn(v_low, r_low, i_low)
    a, b = _thresholds(osc, vt_plus, vt_minus)
    return _Node(a, b, v_high, r_high * ct, v_low, r_low * ct, d.delay_lh_s, d.delay_hl_s)


def _drawn(v_target: Any, r: Any, current: ArrayLike) -> Any:
    """A Thevenin phase's target [V] with ``current`` [A] drawn from the node: V − I·R."""
    return v_target - np.asarray(current, dtype=float) * r


def _astable_node(osc: Oscillator, ra: ArrayLike, rb: ArrayLike, c: ArrayLike,
                  diode_steered: bool, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
                  i_low: ArrayLike = 0.0) -> _Node:
    d = osc.device
    ra = np.asarray(ra, dtype=float)
    rb = np.asarray(rb, dtype=float)
    ct = _timing_capacitance(osc, c)
    v = d.supply_v
    # Charge: C through RA + RB (with the steering diode across RB where it conducts).
    v_high, r_high = _drawn(v, ra + rb, i_high), ra + rb
    steering = (_Steered(SteeringBranch(osc.steering_diode, v, ra, rb), ct,
                         np.asarray(i_high, dtype=float)) if diode_steered else None)
    # Discharge: pin 7 pulls down through r_dis while RA still feeds it from the supply.
    rd = d.discharge_r_ohm
    v_low = _drawn(v * rd / (ra + rd), rb + ra * rd / (ra + rd), i_low)
    r_low = rb + ra * rd / (ra + rd)
    a, b = _thresholds(osc, vt_plus, vt_minus)
    return _Node(a, b, v_high, r_high * ct, v_low, r_low * ct, d.delay_lh_s, d.delay_hl_s,
                 steering)


def schmitt_times(osc: Oscillator, r: ArrayLike, c: ArrayLike, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None) -> tuple[np.ndarray, np.ndarray]:
    """(t_high, t_low) [s] of the Schmitt inverter oscillator, broadcast over r [Ω] and c [F].

    ``vt_plus``/``vt_minus`` [V] override the oscillator's thresholds (arrays
    broadcast too). NaN where the circuit will not oscillate.

    References: DESIGN.md charge equations; Horowitz & Hill, AoE 3rd ed. §1.4.
    """
    return _phase_times(_schmitt_node(osc, r, c, vt_plus, vt_minus))


def astable_times(osc: Oscillator, ra: ArrayLike, rb: ArrayLike, c: ArrayLike,
                  diode_steered: bool = False, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None) -> tuple[np.ndarray, np.ndarray]:
    """(t_high, t_low) [s] of the 555 astable, broadcast over ra, rb [Ω] and c [F].

    NaN where it will not oscillate (steering diode drop too large for the
    supply, or RA too small for the discharge transistor).

    References: TI NE555 data sheet, astable operation (t_H = 0.693 (RA + RB) C,
    t_L = 0.693 RB C); TLC555 data sheet, astable operation.
    """
    return _phase_times(_astable_node(osc, ra, rb, c, diode_steered, vt_plus, vt_minus))


def _node(osc: Oscillator, values: Mapping[str, ArrayLike], diode_steered: bool,
          vt_plus: ArrayLike = None, vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
          i_low: ArrayLike = 0.0) -> _Node:
    if osc.circuit == "schmitt":
        return _schmitt_node(osc, values["R"], values["C"], vt_plus, vt_minus, i_high, i_low)
    return _astable_node(osc, values["RA"], values["RB"], values["C"], diode_steered,
                         vt_plus, vt_minus, i_high, i_low)


def times(osc: Oscillator, values: Mapping[str, ArrayLike], diode_steered: bool = False,
          vt_plus: ArrayLike = None, vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
          i_low: ArrayLike = 0.0) -> tuple[np.ndarray, np.ndarray]:
    """(t_high, t_low) [s] for either circuit; ``values`` keyed as VALUE_KEYS [Ω, F].

    ``i_high``/``i_low`` [A] are currents drawn from the timing node while the
    output is high/low (leakage, comparator inputs; core.model.leakage);
    negative pushes current in. All arguments broadcast.
    """
    return _phase_times(_node(osc, values, diode_steered, vt_plus, vt_minus, i_high, i_low))


def frequency(osc: Oscillator, values: Mapping[str, ArrayLike], diode_steered: bool = False,
              vt_plus: ArrayLike = None, vt_minus: ArrayLike = None, i_high: ArrayLike = 0.0,
              i_low: ArrayLike = 0.0) -> np.ndarray:
    """Frequency [Hz] for either circuit; NaN where it will not oscillate."""
    t_high, t_low = times(osc, values, diode_steered, vt_plus, vt_minus, i_high, i_low)
    return 1.0 / (t_high + t_low)


ROOT_STEPS = 60
"""Most steps of the bracketed secant in ``schmitt_resistance_for`` (it needs about eight)."""


def schmitt_resistance_for(osc: Oscillator, frequency_hz: ArrayLike, c: ArrayLike,
                           r_bounds: tuple[float, float] = (1.0, 1e10)) -> np.ndarray:
    """R [Ω] giving exactly ``frequency_hz`` [Hz] with capacitor ``c`` [F] (nominal model).

    Vectorised over both (broadcast). The period rises monotonically with R
    and nearly in proportion, so a secant on log R, kept inside a bracket that
    shrinks with every step (a bisection step wherever the secant leaves it or
    the circuit stops), converges in a few steps everywhere; NaN where no R
    within ``r_bounds`` reaches the frequency (too fast for the chip, or the
    TTL input current stops oscillation first).
    """
    target = 1.0 / np.asarray(frequency_hz, dtype=float)
    c = np.asarray(c, dtype=float)
    shape = np.broadcast_shapes(target.shape, c.shape)
    log_target = np.log(np.broadcast_to(target, shape)).ravel()
    c = np.broadcast_to(c, shape).ravel()

    def excess(x: np.ndarray, rows: np.ndarray) -> np.ndarray:
        """log(period / target) at R = e^x; +inf where it does not oscillate."""
        t_high, t_low = schmitt_times(osc, np.exp(x), c[rows])
        with np.errstate(invalid="ignore", divide="ignore"):
            g = np.log(t_high + t_low) - log_target[rows]
        return np.where(np.isnan(g), np.inf, g)

    every = np.arange(log_target.size)
    lo = np.full(log_target.size, math.log(r_bounds[0]))
    hi = np.full(log_target.size, math.log(r_bounds[1]))
    g_lo, g_hi = excess(lo, every), excess(hi, every)
    x, g = lo.copy(), g_lo.copy()  # the latest point of the secant, per row
    x_new = np.where(np.isfinite(g_hi), lo - g_lo * (hi - lo) / (g_hi - g_lo), 0.5 * (lo + hi))
    active = np.flatnonzero((g_lo < 0) & (g_hi > 0))
    widths = [hi - lo] * 3  # bracket widths of the last three steps
    for _ in range(ROOT_STEPS):
        if not active.size:
            break
        xa = x_new[active]
        ga = excess(xa, active)
        above = ga > 0
        hi[active] = np.where(above, xa, hi[active])
        lo[active] = np.where(above, lo[active], xa)
        g_lo[active] = np.where(above, g_lo[active], ga)
        with np.errstate(invalid="ignore", divide="ignore"):
            secant = xa - ga * (xa - x[active]) / (ga - g[active])
        x[active], g[active] = xa, ga
        # The secant where it stays inside and the bracket keeps shrinking (halved within
        # three steps), else bisection: never slower than bisection by much.
        width = hi - lo
        shrinking = width[active] <= 0.5 * widths[0][active]
        widths = [*widths[1:], width]
        inside = np.isfinite(secant) & (secant > lo[active]) & (secant < hi[active])
        x_new[active] = np.where(inside & shrinking, secant, 0.5 * (lo[active] + hi[active]))
        # Done when on the root, or the bracket is down to rounding (near the R where a TTL
        # input stops the oscillation the period is steep: that takes the full bracket).
        settled = (np.abs(ga) < 1e-13) | (hi[active] - lo[active] <= 1e-15 * np.abs(xa))
        active = active[~settled]
    # The latest point, or the bracket's low end where that is closer (a steep period).
    r = np.exp(np.where(np.abs(g_lo) < np.abs(g), lo, x)).reshape(shape)
    t_high, t_low = schmitt_times(osc, r, c.reshape(shape))
    hit = np.abs((t_high + t_low) / np.broadcast_to(target, shape) - 1.0) < 1e-9
    return np.where(hit, r, np.nan)


# ---------------------------------------------------------------- prediction

@dataclass(frozen=True)
class Prediction:
    """What a circuit will do: nominal timing, worst-case band, practitioner warnings."""

    frequency_hz: float
    period_s: float
    duty_pct: float
    t_high_s: float
    t_low_s: float
    worst_case_hz: tuple[float, float]
    warnings: list[str] = field(default_factory=list)

    def to_json(self) -> dict[str, Any]:
        return {"frequency_hz": self.frequency_hz, "period_s": self.period_s,
                "duty_pct": self.duty_pct, "t_high_s": self.t_high_s, "t_low_s": self.t_low_s,
                "worst_case_hz": list(self.worst_case_hz), "warnings": list(self.warnings)}


def check_values(osc: Oscillator, values: Mapping[str, float]) -> dict[str, float]:
    """The circuit's part values as floats; InputError if one is missing or not positive."""
    keys = VALUE_KEYS[osc.circuit]
    missing = [k for k in keys if k not in values]
    if missing:
        raise InputError(f"the {_circuit_word(osc.circuit)} needs {', '.join(keys)}; "
                         f"missing {', '.join(missing)}")
    out = {k: float(values[k]) for k in keys}
    bad = [k for k, v in out.items() if not (math.isfinite(v) and v > 0)]
    if bad:
        raise InputError(f"{', '.join(bad)} must be above zero")
    return out


def default_tolerances(osc: Oscillator, dielectric: str = "") -> dict[str, Tolerance]:
    """Tolerances when none are given: the drawer's defaults (core.parts.drawer)."""
    from core.parts.drawer import DEFAULT_TOLERANCE, DIELECTRIC_TOLERANCE

    tol = {k: DEFAULT_TOLERANCE["R"] for k in VALUE_KEYS[osc.circuit] if k != "C"}
    tol["C"] = DIELECTRIC_TOLERANCE.get(dielectric, DIELECTRIC_TOLERANCE[""])
    return tol


def predict(osc: Oscillator, values: Mapping[str, float],
            tolerances: Mapping[str, Tolerance] | None = None, *, diode_steered: bool = False,
            dielectric: str = "") -> Prediction:
    """Nominal timing, worst case and warnings for one set of part values.

    ``values``: schmitt ``R`` [Ω], ``C`` [F]; 555 ``RA``, ``RB`` [Ω], ``C`` [F].
    ``tolerances`` per key (missing keys: the drawer's defaults, with the
    capacitor's by ``dielectric``). Raises SetupError when the nominal circuit
    will not oscillate, saying why.
    """
    from core.model.leakage import capacitor_leakage_a
    from core.model.spread import worst_case_hz

    vals = check_values(osc, values)
    t_high, t_low = (float(t) for t in times(osc, vals, diode_steered))
    if not (math.isfinite(t_high) and math.isfinite(t_low)):
        raise SetupError(why_no_oscillation(osc, vals, diode_steered))
    tol = default_tolerances(osc, dielectric)
    tol.update(tolerances or {})
    ranges = {k: (v * (1 - tol[k].minus), v * (1 + tol[k].plus)) for k, v in vals.items()}
    lo, hi = worst_case_hz(osc, vals, ranges, diode_steered=diode_steered,
                           capacitor_leakage_a=capacitor_leakage_a(vals["C"], dielectric,
                                                                   osc.supply_v))
    period = t_high + t_low
    pred = Prediction(frequency_hz=1.0 / period, period_s=period,
                      duty_pct=100.0 * t_high / period, t_high_s=t_high, t_low_s=t_low,
                      worst_case_hz=(float(lo), float(hi)))
    pred.warnings.extend(practitioner_warnings(osc, vals, pred, dielectric=dielectric,
                                               diode_steered=diode_steered))
    return pred


def why_no_oscillation(osc: Oscillator, values: Mapping[str, float],
                       diode_steered: bool = False) -> str:
    """One sentence on why these values give no oscillation."""
    d, name = osc.device, osc.family.name
    n = _node(osc, values, diode_steered)
    a, b = float(n.vt_plus), float(n.vt_minus)
    if osc.circuit == "schmitt" and float(n.v_low) >= b and math.isfinite(d.input_r_ohm):
        _, _, vol, rol = _output_sources(osc)
        r_limit = d.input_r_ohm * (b - vol) / (d.input_v_open_v - b) - rol
        return (f"will not oscillate: the {name}'s input current through R = "
                f"{format_quantity(values['R'], 'resistance')} holds the input above VT- "
                f"({b:.2f} V); R must stay below about "
                f"{format_quantity(max(r_limit, 0.0), 'resistance')}")
    if osc.circuit == "555" and float(n.v_low) >= b:
        return ("will not oscillate: RA is so small that the discharge transistor cannot pull "
                "the capacitor below the trigger level; use RA of at least "
                f"{format_quantity(d.r_min_ohm, 'resistance')}")
    return (f"will not oscillate: the output levels ({float(n.v_low):.2f} V … "
            f"{float(n.v_high):.2f} V) do not pass both thresholds ({b:.2f} V, {a:.2f} V)")


def practitioner_warnings(osc: Oscillator, values: Mapping[str, float], pred: Prediction, *,
                          dielectric: str = "", diode_steered: bool = False) -> list[str]:
    """What an experienced builder would point out about this circuit."""
    from core.model.leakage import capacitor_leakage_a
    from core.parts.drawer import ELECTROLYTIC

    d, name = osc.device, osc.family.name
    fq = format_quantity
    out: list[str] = list(osc.notes)
    c = values["C"]
    if osc.circuit == "schmitt":
        r_total, r_label = values["R"], f"R = {fq(values['R'], 'resistance')}"
        r_low_check = values["R"]
    else:
        r_total = values["RA"] + values["RB"]
        r_label = f"RA + RB = {fq(r_total, 'resistance')}"
        r_low_check = values["RA"]
    span = f"{fq(d.r_min_ohm, 'resistance')} … {fq(d.r_max_ohm, 'resistance')}"
    if r_low_check < d.r_min_ohm:
        what = "RA" if osc.circuit == "555" else "R"
        out.append(f"{what} = {fq(r_low_check, 'resistance')} is below the {name}'s sensible "
                   f"range ({span}): the output (or discharge) current is high and its "
                   "resistance takes a visible share of the timing")
    if r_total > d.r_max_ohm:
        out.append(f"{r_label} is above the {name}'s sensible range ({span}): input and "
                   "capacitor leakage become comparable to the charging current; use a "
                   "larger capacitor and a smaller resistor")
    hysteresis = osc.vt_plus_v - osc.vt_minus_v
    if dielectric in ELECTROLYTIC:
        leakage = float(capacitor_leakage_a(c, dielectric, d.supply_v))
        if leakage * r_total > d.voh_v - osc.vt_plus_v:
            out.append(f"{dielectric} timing capacitor with {r_label}: its allowed leakage (up "
                       f"to {fq(leakage, 'current')}) through the resistor would hold the "
                       "timing node below the upper threshold, so the oscillator can stop; "
                       "use a film capacitor and a smaller resistor")
        elif leakage * r_total > 0.05 * hysteresis:
            out.append(f"electrolytic timing capacitor with {r_label}: its leakage (up to "
                       f"{fq(leakage, 'current')}) through the resistor shifts the timing by a "
                       "noticeable share; prefer a film capacitor or a smaller resistor")
        out.append("electrolytic capacitor: + lead to the timing node, − to ground; voltage "
                   f"rating at least {d.supply_v:g} V (better twice that)")
    if diode_steered and osc.circuit == "555":
        out.extend(_steering_warnings(osc, values))
    if c < 100e-12:
        out.append(f"C = {fq(c, 'capacitance')} is below about 100 pF: the input "
                   f"({fq(d.input_capacitance_f, 'capacitance')}) and stray "
                   f"({fq(osc.stray_capacitance_f, 'capacitance')}) capacitance are a large "
                   "share of it, so the frequency depends on the layout")
    delay_share = (d.delay_lh_s + d.delay_hl_s) / pred.period_s
    if pred.frequency_hz > 0.5 * d.f_max_hz:
        out.append(f"at {fq(pred.frequency_hz, 'frequency')} the propagation delays "
                   f"({fq(d.delay_s, 'time')} per edge) are {100 * delay_share:.0f} % of the "
                   f"period, near the {name}'s limit; they vary with temperature and load, "
                   "so expect a larger error")
    if osc.load_ohm is not None and osc.circuit == "schmitt":
        out.append(f"a load of {fq(osc.load_ohm, 'resistance')} on the timing output shifts "
                   "the output levels and the frequency; drive the load from a spare gate "
                   "of the same package fed by the timing output")
    if pred.worst_case_hz[0] == 0.0:
        out.append("at some tolerance, threshold or leakage corners the circuit does not "
                   "oscillate; the worst-case band starts at 0 Hz")
    return out


STEERING_SHARE_MIN = 0.5
"""Below this share of the charging current (at the start of the charge) the steering
diode does not steer: C charges mostly through RA + RB (common practice, no published
source)."""
DIODE_DRIFT_V = 0.08
"""A silicon diode's forward drop moves about −2 mV/K (textbook silicon junction; the
1N4148 data sheet's forward-voltage curves over temperature): 80 mV over a 40 K swing."""
DIODE_DRIFT_SHARE = 0.05
"""Warn when that drift moves the high time by more than this share (common practice,
no published source)."""


def _steering_warnings(osc: Oscillator, values: Mapping[str, float]) -> list[str]:
    """Where a steering diode across RB makes little sense, and why."""
    fq = format_quantity
    n = _node(osc, values, True)
    assert n.steering is not None
    _, _, v_start, _ = _cycle(n)
    v_pair, share = (float(x) for x in n.steering.branch.pair_at_node(v_start))
    # Sensitivity of t_high ∝ ln((V − Vd − VT-)/(V − Vd − VT+)) to the diode's drop.
    a, b = osc.vt_plus_v, osc.vt_minus_v
    far, near = osc.supply_v - v_pair - b, osc.supply_v - v_pair - a
    drift = (DIODE_DRIFT_V * (1 / near - 1 / far) / math.log(far / near) if near > 0
             else math.inf)
    if drift > DIODE_DRIFT_SHARE:
        return [f"at {osc.supply_v:g} V the steering diode's drop (about {v_pair:.2f} V) is a "
                f"large share of the {osc.supply_v - a:.2f} V between the supply and the upper "
                "threshold: its drift of about −2 mV/K moves the high time by "
                + (f"{100 * drift:.0f} % over 40 K" if math.isfinite(drift) else "a large share")
                + "; use a higher supply or no diode"]
    if share < STEERING_SHARE_MIN:
        return [f"with RA = {fq(values['RA'], 'resistance')} and RB = "
                f"{fq(values['RB'], 'resistance')} the steering diode hardly conducts (RB "
                f"drops only {v_pair:.2f} V, below the diode's knee): C charges through "
                "RA + RB, so the diode does not set the duty; use a larger RB or leave the "
                "diode out"]
    return []


# ---------------------------------------------------------------- waveform

def waveform(osc: Oscillator, values: Mapping[str, float], periods: int = 3,
             points: int = 600, diode_steered: bool = False
             ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(t [s], capacitor voltage [V], output voltage [V]) over ``periods`` steady periods.

    Starts where the output has just gone high. Exact exponential segments; a
    charge through a conducting steering diode follows its integrated curve.
    """
    vals = check_values(osc, values)
    n = _node(osc, vals, diode_steered)
    t_high, t_low, v_start, v_peak = (float(x) for x in _cycle(n))
    if not (math.isfinite(t_high) and math.isfinite(t_low)):
        raise SetupError(why_no_oscillation(osc, vals, diode_steered))
    vh, vl, th, tl = float(n.v_high), float(n.v_low), float(n.tau_high), float(n.tau_low)
    period = t_high + t_low
    t = np.linspace(0.0, periods * period, points)
    phase = np.mod(t, period)
    high = phase < t_high
    if n.steering is not None and _diode_conducts(n, v_start):
        s = n.steering
        v_grid = np.linspace(v_start, float(n.vt_plus), 200)
        t_grid, _ = s.branch.charge_time(s.capacitance, s.drawn, v_start, v_grid)
        charge = np.interp(phase, np.append(t_grid, t_high), np.append(v_grid, v_peak))
    else:
        charge = vh - (vh - v_start) * np.exp(-phase / th)
    v_cap = np.where(high, charge, vl + (v_peak - vl) * np.exp(-(phase - t_high) / tl))
    d = osc.device
    low_level = 0.0 if osc.circuit == "555" else d.vol_v
    v_out = np.where(high, d.output_high_v, low_level)
    return t, v_cap, v_out
