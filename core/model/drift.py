"""How a built oscillator drifts: temperature, supply, DC bias and age of its parts.

The tolerance band says where a new build lands at room temperature; this
module says where that same build goes when it warms up, when its battery
sags, and what a class-2 ceramic capacitor does under its own DC voltage and
with age. Every figure below names its source or says "from memory".

Temperature: each part's relative change (ΔC/C, ΔR/R) against temperature is
an envelope, a table of (°C, lowest, highest) points interpolated linearly, so
its extremes over a range lie on the range's ends or the table's points.
Temperatures are in °C (the trade's datum, 25 °C the reference); coefficients
are per kelvin. The frequency falls with every R and C, so the slowest build
at a temperature has every part at its envelope's top and the fastest at its
bottom.

References: EIA-198 (ceramic dielectric class codes); the device data sheets
named per family; P. Horowitz and W. Hill, The Art of Electronics, 3rd ed.,
§1.2.2 and §1.4.1 (resistor and capacitor types).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from core.errors import InputError, SetupError
from core.model.timing import Oscillator, frequency, make_oscillator
from core.parts.part import Part
from core.units import Tolerance, format_part_value

REFERENCE_C = 25.0
"""The temperature [°C] at which values, tolerances and data-sheet typicals are given."""


@dataclass(frozen=True)
class Envelope:
    """A part's relative change against temperature: (°C, lowest, highest) points."""

    points: tuple[tuple[float, float, float], ...]
    source: str
    ageing_pct_per_decade: float = 0.0
    """Capacitance lost per decade of hours after soldering [%] (class-2 ceramics)."""

    @property
    def rated_c(self) -> tuple[float, float]:
        """The temperature range [°C] the envelope covers (its rated range)."""
        return self.points[0][0], self.points[-1][0]

    def change(self, temp_c: float | np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(lowest, highest) relative change [1] at ``temp_c`` [°C]; held at the ends outside."""
        t, lo, hi = (np.array(col, dtype=float) for col in zip(*self.points, strict=True))
        return np.interp(temp_c, t, lo), np.interp(temp_c, t, hi)


def coefficient(ppm_lo: float, ppm_hi: float, rated_c: tuple[float, float],
                source: str) -> Envelope:
    """A linear temperature coefficient between ``ppm_lo`` and ``ppm_hi`` [ppm/K]."""
    def at(t: float) -> tuple[float, float, float]:
        a, b = ppm_lo * 1e-6 * (t - REFERENCE_C), ppm_hi * 1e-6 * (t - REFERENCE_C)
        return (t, min(a, b), max(a, b))
    return Envelope((at(rated_c[0]), at(REFERENCE_C), at(rated_c[1])), source)


def class_limit(minus_pct: float, plus_pct: float, rated_c: tuple[float, float],
                source: str) -> Envelope:
    """An EIA-198 class-2 code: the change stays within −minus…+plus % over ``rated_c``.

    The standard bounds the change anywhere in the rated range, not its shape;
    we let the limit grow linearly from 0 at 25 °C to the full limit at the
    range's ends (our assumption: typical curves stay well inside it near room
    temperature, from memory of makers' typical curves).
    """
    lo_c, hi_c = rated_c
    return Envelope(((lo_c, -minus_pct / 100, plus_pct / 100), (REFERENCE_C, 0.0, 0.0),
                     (hi_c, -minus_pct / 100, plus_pct / 100)), source)


def widest(*envelopes: Envelope, source: str) -> Envelope:
    """The envelope holding all of ``envelopes`` (a part that may be any one of them)."""
    temps = sorted({p[0] for e in envelopes for p in e.points})
    changes = [e.change(np.array(temps)) for e in envelopes]
    lo = np.min([c[0] for c in changes], axis=0)
    hi = np.max([c[1] for c in changes], axis=0)
    return Envelope(tuple((t, float(a), float(b)) for t, a, b in zip(temps, lo, hi,
                                                                     strict=True)), source,
                    max(e.ageing_pct_per_decade for e in envelopes))


AGEING_PCT_PER_DECADE: dict[str, float] = {"x7r": 1.5, "x5r": 3.0, "y5v": 6.0, "z5u": 6.0,
                                           "": 6.0}
"""Class-2 capacitance lost per decade of hours since the last heating above the Curie
point (soldering, or a de-ageing bake) [%]. Typical, from memory of makers' ageing notes:
X7R about 1–2 %, X5R 2–5 %, Y5V and Z5U 5–7 % per decade; an unmarked ceramic is taken
as Y5V. Class 1 (C0G), film and electrolytics do not age this way."""
AGEING_REFERENCE_H = 1000.0
"""Hours after the last heating at which a class-2 capacitor's marked value and tolerance
hold (the referee time of makers' data sheets, from memory)."""
AGEING_LIFE_H = (1.0, 87_660.0)
"""The life a worst case over conditions covers [h]: from an hour after soldering (the
bench check) to ten years of service (our decision: what a builder expects a finished
build to stay within)."""


_EIA = "EIA-198 class code"
POLYESTER = coefficient(200, 600, (-55, 105), "polyester (PET) film: +200…+600 ppm/K, "
                        "typical, from memory of film capacitor data sheets")
POLYPROPYLENE = coefficient(-300, -100, (-55, 105), "polypropylene film: −100…−300 ppm/K, "
                            "typical, from memory of film capacitor data sheets")
CAPACITOR_DRIFT: dict[str, Envelope] = {
    "c0g": coefficient(-30, 30, (-55, 125), f"{_EIA} C0G: 0 ± 30 ppm/K, −55…125 °C"),
    "x7r": replace(class_limit(15, 15, (-55, 125), f"{_EIA} X7R: ±15 % over −55…125 °C"),
                   ageing_pct_per_decade=AGEING_PCT_PER_DECADE["x7r"]),
    "x5r": replace(class_limit(15, 15, (-55, 85), f"{_EIA} X5R: ±15 % over −55…85 °C"),
                   ageing_pct_per_decade=AGEING_PCT_PER_DECADE["x5r"]),
    "y5v": replace(class_limit(82, 22, (-30, 85), f"{_EIA} Y5V: +22/−82 % over −30…85 °C"),
                   ageing_pct_per_decade=AGEING_PCT_PER_DECADE["y5v"]),
    "z5u": replace(class_limit(56, 22, (10, 85), f"{_EIA} Z5U: +22/−56 % over +10…85 °C"),
                   ageing_pct_per_decade=AGEING_PCT_PER_DECADE["z5u"]),
    # A drawer says "film" without the plastic: the envelope of both common ones.
    "film": widest(POLYESTER, POLYPROPYLENE, source="film of unknown plastic: the envelope "
                   "of polyester (PET) and polypropylene, −55…105 °C (typical, from memory)"),
    "electrolytic": Envelope(((-40, -0.30, -0.10), (-25, -0.20, -0.05), (REFERENCE_C, 0, 0),
                              (85, 0.02, 0.10), (105, 0.03, 0.12)),
                             "aluminium electrolytic: typical capacitance-against-"
                             "temperature curves, from memory of makers' data sheets "
                             "(−10…−30 % at −40 °C, up to +12 % at 105 °C)"),
    "tantalum": Envelope(((-55, -0.10, -0.04), (REFERENCE_C, 0, 0), (85, 0.04, 0.08),
                          (125, 0.06, 0.12)),
                         "solid tantalum: typical curves, from memory of makers' data "
                         "sheets (about −10 % at −55 °C, +12 % at 125 °C)"),
}
CAPACITOR_DRIFT["np0"] = CAPACITOR_DRIFT["c0g"]
# An unmarked ceramic is assumed as poor as Y5V (as in core.parts.part's stability ranks).
CAPACITOR_DRIFT[""] = replace(CAPACITOR_DRIFT["y5v"],
                              source="unmarked ceramic taken as Y5V: " +
                              CAPACITOR_DRIFT["y5v"].source)

RESISTOR_DRIFT: dict[str, Envelope] = {
    "metal film": coefficient(-50, 50, (-55, 155), "metal film: ±50 ppm/K, typical data-sheet "
                              "TCR class, from memory"),
    "carbon film": coefficient(-500, -200, (-55, 155), "carbon film: −200…−500 ppm/K, "
                               "typical, from memory (higher values drift more)"),
}
POT_DRIFT = coefficient(-100, 100, (-55, 125), "cermet trimmer: ±100 ppm/K, typical, "
                        "from memory of trimmer data sheets")

CHIP_DRIFT_PPM_PER_K: dict[str, tuple[float, str]] = {
    "NE555": (150.0, "TI NE555 data sheet, electrical characteristics: astable timing "
              "interval drift 150 ppm/°C typical (from memory)"),
}
"""The chip's own frequency drift ± [ppm/K] where its data sheet gives one. None is
given for the Schmitt inverters (their data sheets give threshold limits over
−40…85 °C, already in the worst case, and no coefficient) nor for the CMOS 555s:
those chips add no drift here."""


def resistor_kind(tolerance_pct: float) -> str:
    """Metal film at 2 % or better, else carbon film (common practice, no published source)."""
    return "metal film" if tolerance_pct <= 2.0 + 1e-9 else "carbon film"


def part_envelopes(values: Mapping[str, float], dielectric: str,
                   resistor: str = "carbon film") -> dict[str, Envelope]:
    """The temperature envelope of each part key (``R``, ``RA``, ``RB``, ``P``, ``C``)."""
    if dielectric not in CAPACITOR_DRIFT:
        raise InputError(f"no temperature data for the dielectric {dielectric!r}")
    return {k: CAPACITOR_DRIFT[dielectric] if k == "C" else POT_DRIFT if k == "P"
            else RESISTOR_DRIFT[resistor] for k in values}


def _temperatures(lo_c: float, hi_c: float, envelopes: Mapping[str, Envelope]) -> np.ndarray:
    """The range's ends and every table point inside it: where the extremes can lie."""
    inside = [p[0] for e in envelopes.values() for p in e.points if lo_c < p[0] < hi_c]
    return np.unique(np.array([lo_c, hi_c, *inside], dtype=float))


def chip_factor(osc: Oscillator, lo_c: float, hi_c: float) -> float:
    """The chip's own relative frequency drift ± [1] over lo_c…hi_c [°C] (0 if none given)."""
    ppm = CHIP_DRIFT_PPM_PER_K.get(osc.family.name, (0.0, ""))[0]
    return ppm * 1e-6 * max(abs(lo_c - REFERENCE_C), abs(hi_c - REFERENCE_C))


def temperature_hz(osc: Oscillator, values: Mapping[str, float], lo_c: float, hi_c: float,
                   envelopes: Mapping[str, Envelope], diode_steered: bool = False
                   ) -> tuple[float, float]:
    """(lowest, highest) frequency [Hz] of the nominal parts over lo_c…hi_c [°C].

    Nominal thresholds; each part at its envelope's top (slowest) or bottom
    (fastest) at every table temperature in the range; the chip's own drift on top.
    """
    temps = _temperatures(lo_c, hi_c, envelopes)
    slow, fast = {}, {}
    for k, v in values.items():
        lo, hi = envelopes[k].change(temps)
        slow[k], fast[k] = v * (1.0 + hi), v * (1.0 + lo)
    chip = chip_factor(osc, lo_c, hi_c)
    f_slow = frequency(osc, slow, diode_steered)
    f_fast = frequency(osc, fast, diode_steered)
    if np.isnan(f_slow).any() or np.isnan(f_fast).any():
        return 0.0, float(np.nanmax(f_fast)) * (1 + chip)
    return float(f_slow.min()) * (1 - chip), float(f_fast.max()) * (1 + chip)


def out_of_rating(envelopes: Mapping[str, Envelope], lo_c: float, hi_c: float) -> list[str]:
    """Warnings for parts taken outside the temperatures their figures cover."""
    out = []
    for k, e in envelopes.items():
        a, b = e.rated_c
        if lo_c < a - 1e-9 or hi_c > b + 1e-9:
            out.append(f"{k}: {lo_c:g}…{hi_c:g} °C goes beyond the {a:g}…{b:g} °C its "
                       f"figures cover ({e.source}); the drift there is held at the ends")
    return out


# ---------------------------------------------------------------- supply

def at_supply(osc: Oscillator, supply_v: float) -> Oscillator:
    """The same chip and thresholds at ``supply_v`` [V].

    Table thresholds are interpolated over supply by the device table; a
    calibration gives its own for the new supply; thresholds typed in by hand
    scale with the supply (CMOS and 555 thresholds are ratios of the supply,
    common practice, no published source).
    """
    new = make_oscillator(osc.circuit.name, osc.family, supply_v, calibration=osc.calibration,
                          stray_capacitance_f=osc.stray_capacitance_f, load_ohm=osc.load_ohm)
    if osc.thresholds_given and osc.calibration is None:
        scale = supply_v / osc.supply_v
        new = new.with_thresholds(osc.vt_plus_v * scale, osc.vt_minus_v * scale)
    return replace(new, circuit=osc.circuit, steering_diode=osc.steering_diode,
                   divide_by=osc.divide_by)


def check_supply_range(osc: Oscillator, lo_v: float, hi_v: float) -> None:
    """SetupError unless lo_v…hi_v [V] lies inside the family's supply range."""
    a, b = osc.family.supply_range_v
    if lo_v < a - 1e-9 or hi_v > b + 1e-9:
        raise SetupError(f"supply range {lo_v:g}…{hi_v:g} V goes outside the "
                         f"{osc.family.name}'s {a:g}…{b:g} V")


def supply_oscillators(osc: Oscillator, lo_v: float, hi_v: float) -> list[Oscillator]:
    """The oscillator at the range's ends, every listed supply inside and a fine grid.

    Between listed supplies the table is linear but the frequency is not, so a
    grid of 16 steps catches a bend.
    """
    check_supply_range(osc, lo_v, hi_v)
    listed = [v for v in osc.family.supplies_v if lo_v < v < hi_v]
    grid = np.unique(np.concatenate([np.linspace(lo_v, hi_v, 17), listed]))
    return [at_supply(osc, float(v)) for v in grid]


def supply_hz(osc: Oscillator, values: Mapping[str, float], lo_v: float, hi_v: float,
              diode_steered: bool = False) -> tuple[float, float]:
    """(lowest, highest) frequency [Hz] of the nominal parts for supplies lo_v…hi_v [V]."""
    f = supply_curve(osc, values, lo_v, hi_v, diode_steered).low_hz
    if np.isnan(f).any():
        return 0.0, float(np.nanmax(f)) if not np.isnan(f).all() else 0.0
    return float(f.min()), float(f.max())


# ---------------------------------------------------------------- worst case

@dataclass(frozen=True)
class Conditions:
    """Where a build must keep working: temperatures [°C] and supplies [V] (None: as built)."""

    temperature_c: tuple[float, float] | None = None
    supply_v: tuple[float, float] | None = None

    def __bool__(self) -> bool:
        return self.temperature_c is not None or self.supply_v is not None

    def describe(self) -> str:
        """The conditions in words, for notes."""
        parts = []
        if self.temperature_c is not None:
            parts.append(f"{self.temperature_c[0]:g}…{self.temperature_c[1]:g} °C")
        if self.supply_v is not None:
            parts.append(f"a {self.supply_v[0]:g}…{self.supply_v[1]:g} V supply")
        return " and ".join(parts)


def conditions_oscillators(osc: Oscillator, conditions: Conditions) -> list[Oscillator]:
    """The oscillators a supply range spans (just ``osc`` without one)."""
    if conditions.supply_v is None:
        return [osc]
    return supply_oscillators(osc, *conditions.supply_v)


def ageing_span(pct_per_decade: float) -> tuple[float, float]:
    """(oldest, youngest) capacitance over ``AGEING_LIFE_H`` relative to the marked value
    at ``AGEING_REFERENCE_H`` [1] (log-linear ageing)."""
    rate = pct_per_decade / 100
    young, old = AGEING_LIFE_H
    return (1.0 - rate * math.log10(old / AGEING_REFERENCE_H),
            1.0 + rate * math.log10(AGEING_REFERENCE_H / young))


def ageing_words() -> str:
    """How the worst case over conditions takes ageing, for notes."""
    young, old = AGEING_LIFE_H
    return (f"with conditions, class-2 ceramics (X7R, X5R, Y5V, Z5U) also age: their range "
            f"spans {young:g} h to {old / 8766:g} years after soldering, from the value "
            f"marked for {AGEING_REFERENCE_H:g} h (typical rates per decade of hours, from "
            "memory; C0G and film do not age)")


def condition_factors(envelope: Envelope, conditions: Conditions) -> tuple[float, float]:
    """The lowest and highest factor [1] a part reaches where the build must work: its
    temperature drift over the range, and a class-2 capacitor's ageing over the life
    ``AGEING_LIFE_H`` (both only with conditions given)."""
    lo = hi = 1.0
    if conditions.temperature_c is not None:
        temps = _temperatures(*conditions.temperature_c, {"": envelope})
        a, b = envelope.change(temps)
        lo, hi = 1.0 + float(a.min()), 1.0 + float(b.max())
    if conditions and envelope.ageing_pct_per_decade:
        oldest, youngest = ageing_span(envelope.ageing_pct_per_decade)
        lo, hi = lo * oldest, hi * youngest
    return lo, hi


def drifted_ranges(ranges: Mapping[str, tuple[float, float]], conditions: Conditions,
                   envelopes: Mapping[str, Envelope]) -> dict[str, tuple[float, float]]:
    """Tolerance ranges stretched by each part's drift over the conditions (temperature
    range, and a class-2 capacitor's ageing: ``condition_factors``)."""
    out = {}
    for k, (lo, hi) in ranges.items():
        f_lo, f_hi = condition_factors(envelopes[k], conditions)
        out[k] = (lo * f_lo, hi * f_hi)
    return out


def conditions_chip_factor(osc: Oscillator, conditions: Conditions) -> float:
    """The chip's own drift ± [1] over the conditions' temperatures (0 without them)."""
    return 0.0 if conditions.temperature_c is None else chip_factor(osc, *conditions.temperature_c)


def drift_worst_case(osc: Oscillator, values: Mapping[str, float],
                     ranges: Mapping[str, tuple[float, float]], conditions: Conditions,
                     envelopes: Mapping[str, Envelope], **kwargs: Any) -> tuple[float, float]:
    """``worst_case_hz`` over the conditions too: every supply corner, each part's range
    stretched by its temperature drift, and the chip's own drift on the ends."""
    from core.model.spread import worst_case_hz

    stretched = drifted_ranges(ranges, conditions, envelopes)
    ends = [worst_case_hz(o, values, stretched, **kwargs)
            for o in conditions_oscillators(osc, conditions)]
    chip = conditions_chip_factor(osc, conditions)
    return (float(min(lo for lo, _ in ends)) * (1 - chip),
            float(max(hi for _, hi in ends)) * (1 + chip))


# ---------------------------------------------------------------- DC bias and age

CLASS_2 = frozenset({"x7r", "x5r", "y5v", "z5u", ""})

DC_BIAS_LOSS_AT_RATED: dict[str, float] = {
    "0402": 0.75, "0603": 0.65, "0805": 0.55, "1206": 0.45, "1210": 0.35, "1812": 0.30,
    "radial": 0.25,
}
"""X7R/X5R capacitance lost at the rated DC voltage, by case [1] (``core.parts.part.CASES``).
Typical, from memory of makers' typical DC-bias characteristic curves for general-purpose
X7R/X5R MLCCs (Murata, TDK, KEMET data sheets and their online characteristic charts):
smaller cases hold thinner layers at the same rating and lose more. Y5V and Z5U lose
``HIGH_K_LOSS_AT_RATED`` whatever the case (from memory). Real parts of one value and case
differ by maker and layer count; these are typical curves, not limits."""
HIGH_K_LOSS_AT_RATED = 0.80
DEFAULT_CASE = "0805"
"""Case assumed when the drawer does not give one (common practice, no published source:
the commonest hand-soldered chip size)."""
# Shape of the typical curve: loss as a share of the loss at rated voltage against
# V / V_rated (from memory of makers' typical curves: flat at first, steepening).
_BIAS_SHAPE = ((0.0, 0.0), (0.25, 0.2), (0.5, 0.5), (1.0, 1.0))



def dc_bias_factor(dielectric: str, bias_v: float | np.ndarray, rated_v: float | np.ndarray,
                   case: str = DEFAULT_CASE) -> np.ndarray:
    """Effective capacitance / marked capacitance [1] at ``bias_v`` [V] DC (typical curves).

    1 for class 1, film and electrolytics (their DC-bias change is small). The
    curve is symmetric: a ceramic loses as much at −V as at +V.
    """
    if dielectric not in CLASS_2:
        return np.ones_like(np.asarray(bias_v, dtype=float))
    full = (DC_BIAS_LOSS_AT_RATED[case or DEFAULT_CASE] if dielectric in ("x7r", "x5r")
            else HIGH_K_LOSS_AT_RATED)
    x, share = zip(*_BIAS_SHAPE, strict=True)
    ratio = np.clip(np.abs(np.asarray(bias_v, dtype=float)) / rated_v, 0.0, 1.0)
    return 1.0 - full * np.interp(ratio, x, share)


def ageing_factor(dielectric: str, hours: float | np.ndarray) -> np.ndarray:
    """Capacitance after ``hours`` [h] / capacitance at 1 h [1] (log-linear ageing)."""
    rate = AGEING_PCT_PER_DECADE.get(dielectric, 0.0) / 100
    return 1.0 - rate * np.log10(np.maximum(np.asarray(hours, dtype=float), 1.0))


def ageing_note(dielectric: str) -> list[str]:
    """What a class-2 capacitor loses with age, in words (nothing for the others)."""
    rate = AGEING_PCT_PER_DECADE.get(dielectric) if dielectric in CLASS_2 else None
    if not rate:
        return []
    shown = dielectric.upper() or "unmarked ceramic"
    return [f"{shown} ages: about −{rate:g} % capacitance per decade of hours after "
            f"soldering ({100 * (1 - float(ageing_factor(dielectric, 1e3))):.1f} % by "
            f"1000 h, {100 * (1 - float(ageing_factor(dielectric, 1e5))):.1f} % by "
            "100 000 h; typical, from memory), so the frequency creeps up by as much"]


def capacitor_swing_v(osc: Oscillator) -> tuple[float, float]:
    """The voltage [V] across the timing capacitor at the two ends of its swing.

    Taken from the circuit's own phases: its two thresholds (VT- … VT+ at the
    Schmitt inverter's node, VCC/3 … 2VCC/3 at the 555's, the capacitor's own
    voltage for the CMOS astable, which swings through zero). The thresholds do
    not depend on the part values, so any positive values serve.
    """
    values = {key: 1e-8 if key == "C" else 1e4 for key in osc.circuit.keys}
    n = osc.circuit.phases(osc, values)
    ends = (float(n.vt_minus), float(n.vt_plus))
    return min(ends), max(ends)


def swing_bias_factor(osc: Oscillator, dielectric: str, rated_v: float, case: str) -> float:
    """Effective / marked capacitance [1] over the capacitor's swing (``capacitor_swing_v``).

    The charge a capacitor takes from one threshold to the other is ∫ C(V) dV, so
    the capacitance that sets the time is the curve's mean over the swing (exact
    for a constant charging current, and close for an RC charge over part of
    the supply).
    """
    lo, hi = capacitor_swing_v(osc)
    # The curve is piecewise linear in |V|: the trapezoid rule over its corners is exact.
    corners = rated_v * np.array([x for x, _ in _BIAS_SHAPE])
    volts = np.unique(np.clip(np.concatenate([[lo, hi], corners, -corners]), lo, hi))
    if hi - lo < 1e-12:
        return float(dc_bias_factor(dielectric, lo, rated_v, case))
    factor = dc_bias_factor(dielectric, volts, rated_v, case)
    return float(np.sum(np.diff(volts) * (factor[1:] + factor[:-1]) / 2) / (hi - lo))


def with_dc_bias(parts: Iterable[Part], osc: Oscillator) -> list[Part]:
    """``parts`` with each class-2 ceramic capacitor that has a rated voltage at the
    capacitance it has over its swing in ``osc`` (typical DC-bias curves); the value
    printed on it kept as ``marked_value``. Other parts are passed on unchanged."""
    out = []
    for p in parts:
        if p.kind == "C" and p.dielectric in CLASS_2 and p.voltage is not None:
            factor = swing_bias_factor(osc, p.dielectric, p.voltage, p.case)
            p = replace(p, value=p.label_value * factor, marked_value=p.label_value)
        out.append(p)
    return out


def bias_notes(osc: Oscillator, parts: Iterable[Part]) -> list[str]:
    """One note per capacitor line whose value the DC bias lowered (``with_dc_bias``)."""
    lines = {p.stock_line: p for p in parts if p.marked_value is not None}
    return [bias_note(osc, p, f" (line {line})") for line, p in lines.items()]


def capacitor_notes(osc: Oscillator, parts: Iterable[Part]) -> list[str]:
    """What a design's capacitors do beyond their tolerance: each DC-bias loss
    (``bias_notes``) and each class-2 dielectric's ageing (``ageing_note``)."""
    parts = list(parts)
    ageing = [n for d in dict.fromkeys(p.dielectric for p in parts if p.kind == "C")
              for n in ageing_note(d)]
    return [*bias_notes(osc, parts), *ageing]


def bias_note(osc: Oscillator, part: Part, where: str = "") -> str:
    """What the DC bias does to ``part`` (from ``with_dc_bias``), in words."""
    lo, hi = capacitor_swing_v(osc)
    marked = part.label_value
    return (f"C: {format_part_value(marked, 'C')} {part.dielectric.upper() or 'unmarked ceramic'}"
            f" {part.case or DEFAULT_CASE + ' (case assumed)'} rated {part.voltage:g} V{where} "
            f"swings {lo:.2g}…{hi:.2g} V: about {100 * (1 - part.value / marked):.1f} % less "
            f"capacitance, so {format_part_value(part.value, 'C')} in the timing (typical "
            "DC-bias curve, from memory of makers' curves); C0G or film does not lose it")


def effective_capacitance(osc: Oscillator, c_f: float, dielectric: str,
                          rated_v: float | None, case: str | None) -> tuple[float, list[str]]:
    """The capacitance [F] the circuit sees under its DC bias, and notes saying so."""
    if dielectric not in CLASS_2 or rated_v is None:
        return c_f, []
    if not (math.isfinite(rated_v) and rated_v > 0):
        raise InputError("a capacitor's rated voltage must be above zero")
    part = Part("C", c_f, Tolerance(0.0, 0.0), 1, dielectric=dielectric, voltage=rated_v,
                case=case or "")
    (seen,) = with_dc_bias([part], osc)
    return seen.value, [bias_note(osc, seen)]


# ---------------------------------------------------------------- curves for plots

TEMPERATURE_POINTS = 61
"""Temperatures per curve, besides the envelopes' own table points (a smooth line)."""


@dataclass(frozen=True)
class DriftCurve:
    """Frequency [Hz] of the nominal parts against a condition ``x`` (°C or V).

    At each ``x`` the build lies between ``low_hz`` and ``high_hz`` (equal
    where only the chip's table moves, as over supply); NaN where it stops.
    """

    x: np.ndarray
    low_hz: np.ndarray
    high_hz: np.ndarray


def temperature_curve(osc: Oscillator, values: Mapping[str, float], lo_c: float, hi_c: float,
                      envelopes: Mapping[str, Envelope], diode_steered: bool = False
                      ) -> DriftCurve:
    """``temperature_hz`` as a curve: the band at each temperature in lo_c…hi_c [°C].

    The grid holds the range's ends and every table point inside it, so where
    the chip has no drift figure the curve's extremes are ``temperature_hz``'s
    exactly; the chip's own drift is taken at each temperature (ppm/K × |T − 25 °C|)
    where ``temperature_hz`` bounds it by the range's farthest end, so with
    one the curve lies inside that band.
    """
    temps = np.union1d(np.linspace(lo_c, hi_c, TEMPERATURE_POINTS),
                       _temperatures(lo_c, hi_c, envelopes))
    slow, fast = {}, {}
    for k, v in values.items():
        lo, hi = envelopes[k].change(temps)
        slow[k], fast[k] = v * (1.0 + hi), v * (1.0 + lo)
    ppm = CHIP_DRIFT_PPM_PER_K.get(osc.family.name, (0.0, ""))[0]
    chip = ppm * 1e-6 * np.abs(temps - REFERENCE_C)
    return DriftCurve(temps, frequency(osc, slow, diode_steered) * (1 - chip),
                      frequency(osc, fast, diode_steered) * (1 + chip))


def supply_curve(osc: Oscillator, values: Mapping[str, float], lo_v: float, hi_v: float,
                 diode_steered: bool = False) -> DriftCurve:
    """Frequency at each supply ``supply_hz`` looks at (lo_v…hi_v [V]); its extremes are
    ``supply_hz``'s."""
    oscs = supply_oscillators(osc, lo_v, hi_v)
    f = np.array([float(frequency(o, values, diode_steered)) for o in oscs])
    return DriftCurve(np.array([o.supply_v for o in oscs]), f, f)
