"""Timing of RC relaxation oscillators from the charging physics.

Each circuit (core/model/circuits, one module per circuit) builds its timing
node as two phases: the capacitor charges toward one Thevenin source while
the output is high and toward another while it is low, and the chip flips
its output a propagation delay after the capacitor voltage crosses a
threshold. Each phase is an exact exponential segment, so periods have a
closed form (no curve fits, no stepping), vectorised over numpy arrays of
part values. This module predicts from those phases: times, frequency, the
resistor for a frequency, warnings and the waveform, for any circuit.

References: NE555 and TLC555 data sheets (astable operation); the device
data sheets in resources/devices.toml; P. Horowitz and W. Hill, The Art of
Electronics, 3rd ed., §1.4 (RC charging) and §7.1 (relaxation oscillators).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from core.errors import InputError, SetupError
from core.model.calibration import Calibration, load_calibration
from core.model.circuits import ASTABLE, SCHMITT, circuit_named
from core.model.circuits.base import (
    DEFAULT_STRAY_F,
    ArrayLike,
    Oscillator,
    check_values,
    times,
)
from core.model.circuits.base import frequency as frequency  # predict's callers use it here
from core.model.circuits.phases import cycle, diode_conducts, phase_times
from core.model.devices import Family, device_table
from core.model.leakage import capacitor_leakage_a
from core.model.spread import worst_case_hz
from core.parts.part import ELECTROLYTIC
from core.parts.tolerances import DEFAULT_TOLERANCE, DIELECTRIC_TOLERANCE
from core.units import Tolerance, format_quantity


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
    wanted = circuit_named(circuit)
    fam = family if isinstance(family, Family) else device_table().family(family)
    if fam.circuit != circuit:
        raise InputError(f"{fam.name} is a {circuit_named(fam.circuit).title}; use --circuit "
                         f"{fam.circuit} (or a {wanted.title} family: "
                         f"{', '.join(device_table().families(circuit))})",
                         text=fam.name, what="family")
    if stray_capacitance_f < 0 or not math.isfinite(stray_capacitance_f):
        raise InputError("stray capacitance must be zero or more")
    if load_ohm is not None and not load_ohm > 0:
        raise InputError("a load must be a resistance above zero")
    device = fam.at(supply_v)
    osc = Oscillator(circuit=wanted, device=device, vt_plus_v=device.vt_plus[1],
                     vt_minus_v=device.vt_minus[1], stray_capacitance_f=stray_capacitance_f,
                     load_ohm=load_ohm)
    if (vt_plus is None) != (vt_minus is None):
        raise InputError("give both thresholds (--vt-plus and --vt-minus) or neither")
    if calibration is not None:
        if vt_plus is not None:
            raise InputError("give thresholds or a calibration, not both")
        cal = calibration if isinstance(calibration, Calibration) else load_calibration(
            calibration)
        plus, minus, notes = cal.thresholds_for(device)
        osc = replace(osc.with_thresholds(plus, minus), calibration=cal.name,
                      calibration_terms=tuple(t / 100 for t in cal.error_terms_pct),
                      notes=tuple(notes))
    elif vt_plus is not None and vt_minus is not None:
        osc = osc.with_thresholds(vt_plus, vt_minus)
    return osc


# ---------------------------------------------------------------- the two-phase model


def schmitt_times(osc: Oscillator, r: ArrayLike, c: ArrayLike, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None) -> tuple[np.ndarray, np.ndarray]:
    """(t_high, t_low) [s] of the Schmitt inverter oscillator, broadcast over r [Ω] and c [F].

    ``vt_plus``/``vt_minus`` [V] override the oscillator's thresholds (arrays
    broadcast too). NaN where the circuit will not oscillate.

    References: DESIGN.md charge equations; Horowitz & Hill, AoE 3rd ed. §1.4.
    """
    return phase_times(SCHMITT.phases(osc, {"R": r, "C": c}, False, vt_plus, vt_minus))


def astable_times(osc: Oscillator, ra: ArrayLike, rb: ArrayLike, c: ArrayLike,
                  diode_steered: bool = False, vt_plus: ArrayLike = None,
                  vt_minus: ArrayLike = None) -> tuple[np.ndarray, np.ndarray]:
    """(t_high, t_low) [s] of the 555 astable, broadcast over ra, rb [Ω] and c [F].

    NaN where it will not oscillate (steering diode drop too large for the
    supply, or RA too small for the discharge transistor).

    References: TI NE555 data sheet, astable operation (t_H = 0.693 (RA + RB) C,
    t_L = 0.693 RB C); TLC555 data sheet, astable operation.
    """
    return phase_times(ASTABLE.phases(osc, {"RA": ra, "RB": rb, "C": c}, diode_steered,
                                      vt_plus, vt_minus))


ROOT_STEPS = 60
"""Most steps of the bracketed secant in ``resistance_for`` (it needs about eight)."""


def resistance_for(osc: Oscillator, frequency_hz: ArrayLike, values: Mapping[str, ArrayLike],
                   role: str, r_bounds: tuple[float, float] = (1.0, 1e10),
                   diode_steered: bool = False) -> np.ndarray:
    """The resistance [Ω] of ``role`` giving exactly ``frequency_hz`` [Hz] with the other
    parts at ``values`` [Ω, F] (nominal model).

    Vectorised over everything (broadcast). The period rises monotonically with a
    timing resistor and nearly in proportion, so a secant on log R, kept inside a
    bracket that shrinks with every step (a bisection step wherever the secant leaves
    it or the circuit stops), converges in a few steps everywhere; NaN where no R
    within ``r_bounds`` reaches the frequency (too fast for the chip, or the TTL
    input current stops oscillation first).
    """
    target = 1.0 / np.asarray(frequency_hz, dtype=float)
    shape = np.broadcast_shapes(target.shape, *(np.shape(v) for v in values.values()))
    log_target = np.log(np.broadcast_to(target, shape)).ravel()
    others = {k: np.broadcast_to(np.asarray(v, dtype=float), shape).ravel()
              for k, v in values.items()}

    def period(r: np.ndarray, rows: np.ndarray | slice) -> np.ndarray:
        t_high, t_low = times(osc, {**{k: v[rows] for k, v in others.items()}, role: r},
                              diode_steered)
        return t_high + t_low

    def excess(x: np.ndarray, rows: np.ndarray) -> np.ndarray:
        """log(period / target) at R = e^x; +inf where it does not oscillate."""
        with np.errstate(invalid="ignore", divide="ignore"):
            g = np.log(period(np.exp(x), rows)) - log_target[rows]
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
    r = np.exp(np.where(np.abs(g_lo) < np.abs(g), lo, x))
    hit = np.abs(period(r, slice(None)) / np.exp(log_target) - 1.0) < 1e-9
    return np.where(hit, r, np.nan).reshape(shape)


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


def default_tolerances(osc: Oscillator, dielectric: str = "") -> dict[str, Tolerance]:
    """Tolerances when none are given: the drawer's defaults (core.parts.tolerances)."""
    tol = {k: DEFAULT_TOLERANCE["R"] for k in osc.circuit.resistors}
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
    n = osc.circuit.phases(osc, values, diode_steered)
    a, b = float(n.vt_plus), float(n.vt_minus)
    own = osc.circuit.why_stopped(osc, values, n)
    if own is not None:
        return own
    return (f"will not oscillate: the output levels ({float(n.v_low):.2f} V … "
            f"{float(n.v_high):.2f} V) do not pass both thresholds ({b:.2f} V, {a:.2f} V)")


def practitioner_warnings(osc: Oscillator, values: Mapping[str, float], pred: Prediction, *,
                          dielectric: str = "", diode_steered: bool = False) -> list[str]:
    """What an experienced builder would point out about this circuit."""
    d, name = osc.device, osc.family.name
    fq = format_quantity
    out: list[str] = list(osc.notes)
    c = values["C"]
    resistors = osc.circuit.resistors
    r_total = sum(values[k] for k in resistors)
    r_label = f"{' + '.join(resistors)} = {fq(r_total, 'resistance')}"
    what = resistors[0]  # the one the output (or discharge) current flows through
    r_low_check = values[what]
    span = f"{fq(d.r_min_ohm, 'resistance')} … {fq(d.r_max_ohm, 'resistance')}"
    if r_low_check < d.r_min_ohm:
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
    out.extend(osc.circuit.warnings(osc, values, diode_steered))
    if c < 100e-12:
        out.append(f"C = {fq(c, 'capacitance')} is below about 100 pF: the input "
                   f"({fq(d.input_capacitance_f, 'capacitance')}) and stray "
                   f"({fq(osc.stray_capacitance_f, 'capacitance')}) capacitance are a large "
                   "share of it, so the frequency depends on the layout")
    # The edge delays belong to the oscillator, before any counter.
    f_osc = pred.frequency_hz * osc.divide_by
    delay_share = (d.delay_lh_s + d.delay_hl_s) * f_osc
    if f_osc > 0.5 * d.f_max_hz:
        out.append(f"at {fq(f_osc, 'frequency')} the propagation delays "
                   f"({fq(d.delay_s, 'time')} per edge) are {100 * delay_share:.0f} % of the "
                   f"period, near the {name}'s limit; they vary with temperature and load, "
                   "so expect a larger error")
    if osc.load_ohm is not None and osc.circuit.output_drives_timing:
        out.append(f"a load of {fq(osc.load_ohm, 'resistance')} on the timing output shifts "
                   "the output levels and the frequency; drive the load from a spare gate "
                   "of the same package fed by the timing output")
    if pred.worst_case_hz[0] == 0.0:
        out.append("at some tolerance, threshold or leakage corners the circuit does not "
                   "oscillate; the worst-case band starts at 0 Hz")
    return out


# ---------------------------------------------------------------- waveform

def _clamped(t: np.ndarray, start: float, level: float, clamp_target: float,
             clamp_tau: float, target: float, tau: float) -> np.ndarray:
    """One phase [V] from ``start`` at t = 0 [s] that runs toward ``clamp_target`` with
    ``clamp_tau`` until it passes ``level`` (the clamp diodes conduct till then; no such
    segment where it starts there), then toward ``target`` with ``tau``
    (core.model.circuits.phases.clamped_times gives the same times)."""
    t_clamp = clamp_tau * math.log((clamp_target - start) / (clamp_target - level))
    clamped = clamp_target - (clamp_target - start) * np.exp(-t / clamp_tau)
    free = target - (target - level) * np.exp(-(t - t_clamp) / tau)
    return np.where(t < t_clamp, clamped, free)


def waveform(osc: Oscillator, values: Mapping[str, float], periods: int = 3,
             points: int = 600, diode_steered: bool = False
             ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(t [s], capacitor voltage [V], output voltage [V]) over ``periods`` steady periods.

    Starts where the output has just gone high. Exact exponential segments; a
    charge through a conducting steering diode follows its integrated curve.
    """
    vals = check_values(osc, values)
    n = osc.circuit.phases(osc, vals, diode_steered)
    t_high, t_low, v_start, v_peak = (float(x) for x in cycle(n))
    if not (math.isfinite(t_high) and math.isfinite(t_low)):
        raise SetupError(why_no_oscillation(osc, vals, diode_steered))
    vh, vl, th, tl = float(n.v_high), float(n.v_low), float(n.tau_high), float(n.tau_low)
    period = t_high + t_low
    t = np.linspace(0.0, periods * period, points)
    phase = np.mod(t, period)
    high = phase < t_high
    if n.steering is not None and diode_conducts(n, v_start):
        s = n.steering
        v_grid = np.linspace(v_start, float(n.vt_plus), 200)
        t_grid, _ = s.branch.charge_time(s.capacitance, s.drawn, v_start, v_grid)
        charge = np.interp(phase, np.append(t_grid, t_high), np.append(v_grid, v_peak))
    else:
        charge = vh - (vh - v_start) * np.exp(-phase / th)
    discharge = vl + (v_peak - vl) * np.exp(-(phase - t_high) / tl)
    if n.clamp is not None:
        k = n.clamp
        charge = _clamped(phase, v_start, max(v_start, float(k.below)), float(k.v_high),
                          float(k.tau_high), vh, th)
        discharge = _clamped(phase - t_high, v_peak, min(v_peak, float(k.above)),
                             float(k.v_low), float(k.tau_low), vl, tl)
    if n.steering_low is not None:
        s = n.steering_low
        v_grid = np.linspace(v_peak, float(n.vt_minus), 200)
        t_grid, _ = s.time(v_peak, v_grid)
        discharge = np.interp(phase - t_high, np.append(t_grid, t_low), np.append(v_grid, v_start))
    v_cap = np.where(high, charge, discharge)
    d = osc.device
    v_out = np.where(high, d.output_high_v, osc.circuit.output_low_v(d))
    return t, v_cap, v_out


def output_waveform(osc: Oscillator, values: Mapping[str, float], periods: int = 2,
                    diode_steered: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """(t [s], output [V]) at the output pin over ``periods`` periods, starting high: its
    edges as corner points (a counter's output is its own, slower square wave)."""
    vals = check_values(osc, values)
    t_high, t_low = (float(x) for x in times(osc, vals, diode_steered))
    if not (math.isfinite(t_high) and math.isfinite(t_low)):
        raise SetupError(why_no_oscillation(osc, vals, diode_steered))
    d = osc.device
    high, low = d.output_high_v, osc.circuit.output_low_v(d)
    starts = np.arange(periods) * (t_high + t_low)
    t = np.stack([starts, starts + t_high, starts + t_high, starts + t_high + t_low,
                  starts + t_high + t_low], axis=1).ravel()
    v = np.tile([high, high, low, low, high], periods)
    return t, v
