"""Calibration: the effective thresholds of the chip on the bench, from measurements.

One measurement of a known R and C (frequency, optionally duty) fixes the
thresholds: with the duty both are solved (two equations, two unknowns);
without it the table's VT+/VT- ratio is kept and both are scaled together. A
circuit with one switching voltage (the two-inverter astable, the divider) has
that one voltage fitted; its period is nearly symmetric about mid-supply, so a
frequency alone leaves two answers (the fit keeps the one on the table's side
and says so), and a duty reading at the astable's output settles it.
Several measurements are fitted by least squares on the logarithms of the
measured times (t_high and t_low where the duty is known, else the period).

How sure a calibration is: the calibration parts are only known within their
tolerance and the reading within its accuracy, so the fitted thresholds carry
that error into every prediction made with them. Each tolerance is taken as a
uniform distribution (as the Monte Carlo does for parts: 1 sigma = half-width
/ √3) and propagated to first order through the fit (the least-squares
Jacobians, J_p⁺ J_x). A predicted frequency then carries one uniform error term
per input (``error_terms_pct``, half-widths); ``uncertainty_pct`` is their
combined 1 sigma, ``worst_case_pct`` their sum. With more measurements than
unknowns and a scatter larger than the tolerances explain, all are scaled up by
√(χ² / degrees of freedom) (the Birge ratio). Parts of the same role and value
in several measurements count as one part (their error does not average out).

Calibrations are named and saved as small JSON files in
``core.storage.locations.data_dir() / "calibrations"``; ``--calibration NAME`` (and the
window) use them through ``core.model.timing.make_oscillator``.

References: the charge equations of core.model.timing; K. Levenberg (1944) and
D. Marquardt (1963) for the damped Gauss-Newton step; JCGM 100:2008 (GUM) §5.1
(first-order propagation) and §4.3.7 (uniform distribution, u = a / √3); R. T.
Birge (1932) for scaling by the observed scatter.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import asdict, dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any, NamedTuple

from core.errors import InputError, SetupError, TickbinError
from core.parts.tolerances import DEFAULT_TOLERANCE, DIELECTRIC_TOLERANCE
from core.units import Tolerance, format_quantity

if TYPE_CHECKING:
    import numpy as np

    from core.model.circuits.base import Oscillator
    from core.model.devices import DeviceAtSupply

FORMAT_VERSION = 1
FREQUENCY_READING = 0.005
"""A bench frequency reading is within ±0.5 % (counter, oscilloscope or a multimeter's
Hz range, with its last digit): common practice, no published source."""
DUTY_READING_POINTS = 1.0
"""A duty reading is within ±1 percentage point: common practice, no published source."""
ADVICE = ("calibrate with 1 % resistors and a C0G or film capacitor (or parts measured on "
          "a meter): the calibration can be no surer than the parts it was made with")
_NAME = re.compile(r"[A-Za-z0-9][A-Za-z0-9_.-]{0,63}")  # fullmatch: "$" lets a final "\n" by


@dataclass(frozen=True)
class Measurement:
    """One bench reading: the parts [Ω, F], the frequency [Hz], the duty [%] if measured."""

    values: Mapping[str, float]
    frequency_hz: float
    duty_pct: float | None = None
    diode_steered: bool = False

    def __post_init__(self) -> None:
        if not (math.isfinite(self.frequency_hz) and self.frequency_hz > 0):
            raise InputError("a measured frequency must be above zero")
        if self.duty_pct is not None and not 0 < self.duty_pct < 100:
            raise InputError("a measured duty cycle lies between 0 and 100 %")


@dataclass(frozen=True)
class Calibration:
    """Thresholds [V] that reproduce bench measurements of ``family`` at ``supply_v`` [V].

    ``scale`` is measured frequency ÷ the frequency the table's nominal model
    predicts for the same parts (geometric mean over the measurements; above
    1 the chip runs faster than the table says). ``mode`` is ``"both"`` (duty
    known: both thresholds solved) or ``"ratio"`` (table ratio kept).
    ``residual_pct`` is the rms misfit of the measured times after fitting.
    ``uncertainty_pct`` is the 1-sigma relative uncertainty of a frequency
    predicted with it (from ``tolerances_pct`` of the calibration parts, each
    [minus, plus] in %, and the reading), ``worst_case_pct`` the first-order
    limit of that error, ``error_terms_pct`` the half-widths of the uniform
    errors it is the sum of; ``vt_plus_sigma_v``/``vt_minus_sigma_v`` [V] are the
    fitted thresholds' 1-sigma uncertainties.
    """

    name: str | None
    family: str
    circuit: str
    supply_v: float
    vt_plus_v: float
    vt_minus_v: float
    scale: float
    mode: str
    residual_pct: float
    table_vt_plus_v: float
    table_vt_minus_v: float
    measurements: tuple[Measurement, ...] = field(default=())
    created: str = ""
    warnings: tuple[str, ...] = field(default=())
    tolerances_pct: Mapping[str, tuple[float, float]] = field(default_factory=dict)
    uncertainty_pct: float = 0.0
    worst_case_pct: float = 0.0
    error_terms_pct: tuple[float, ...] = field(default=())
    vt_plus_sigma_v: float = 0.0
    vt_minus_sigma_v: float = 0.0

    def thresholds_for(self, device: DeviceAtSupply) -> tuple[float, float, list[str]]:
        """(VT+, VT-, notes) to use on ``device``: as measured, or moved to another supply.

        At another supply the thresholds keep their measured ratio to the
        table's typ values (CMOS thresholds track the supply).
        """
        if device.family.name.lower() != self.family.lower():
            raise SetupError(f"calibration {self.name!r} was measured on a {self.family}, "
                             f"not a {device.family.name}")
        if math.isclose(device.supply_v, self.supply_v, rel_tol=1e-6):
            return self.vt_plus_v, self.vt_minus_v, []
        plus = device.vt_plus[1] * self.vt_plus_v / self.table_vt_plus_v
        minus = device.vt_minus[1] * self.vt_minus_v / self.table_vt_minus_v
        note = (f"calibration {self.name!r} was measured at {self.supply_v:g} V; its "
                f"thresholds are moved to {device.supply_v:g} V in proportion to the table "
                "(calibrate at this supply for the best accuracy)")
        return plus, minus, [note]

    def to_json(self) -> dict[str, Any]:
        data = asdict(self)
        data["measurements"] = [dict(asdict(m), values=dict(m.values))
                                for m in self.measurements]
        data["tolerances_pct"] = {k: list(v) for k, v in self.tolerances_pct.items()}
        return data


# ---------------------------------------------------------------- solving

def _residuals(osc: Oscillator, measurements: Sequence[Measurement], vt_plus: float,
               vt_minus: float) -> np.ndarray:
    """Log misfits of the measured times (t_high, t_low where the duty is known, else T)."""
    import numpy as np  # loaded on first fit: listing calibrations needs none

    from core.model.circuits.base import times

    out = []
    for m in measurements:
        t_high, t_low = (float(t) for t in times(osc, m.values, m.diode_steered, vt_plus,
                                                 vt_minus))
        period = 1.0 / m.frequency_hz
        if not (math.isfinite(t_high) and math.isfinite(t_low)):
            return _no_fit(measurements)
        if m.duty_pct is None:
            out.append(math.log((t_high + t_low) / period))
        else:
            out.append(math.log(t_high / (period * m.duty_pct / 100)))
            out.append(math.log(t_low / (period * (1 - m.duty_pct / 100))))
    return np.array(out)


def _no_fit(measurements: Sequence[Measurement]) -> np.ndarray:
    """Infinite misfits, as many as ``_residuals`` gives (two per reading with a duty,
    else one), so the solver can compare them with finite ones."""
    import numpy as np  # loaded on first fit: listing calibrations needs none
    return np.full(sum(1 if m.duty_pct is None else 2 for m in measurements), np.inf)


def _least_squares(fun: Callable[[np.ndarray], np.ndarray], p0: np.ndarray) -> np.ndarray:
    """Damped Gauss-Newton (Levenberg-Marquardt) with a numerical Jacobian."""
    import numpy as np  # loaded on first fit: listing calibrations needs none
    p = p0.astype(float)
    r = fun(p)
    cost = float(r @ r)
    lam = 1e-3
    for _ in range(200):
        if cost < 1e-28:
            break
        jac = _jacobian(fun, p)
        if not np.all(np.isfinite(jac)):
            jac = np.nan_to_num(jac, nan=0.0, posinf=0.0, neginf=0.0)
        hess = jac.T @ jac
        grad = jac.T @ r
        improved = False
        for _ in range(30):
            step = np.linalg.solve(hess + lam * (np.diag(np.diag(hess)) + 1e-12 * np.eye(p.size)),
                                   -grad)
            r_new = fun(p + step)
            cost_new = float(r_new @ r_new) if np.all(np.isfinite(r_new)) else math.inf
            if cost_new < cost:
                p, r, cost = p + step, r_new, cost_new
                lam = max(lam / 3, 1e-12)
                improved = True
                break
            lam *= 4
        if not improved or np.max(np.abs(step)) < 1e-13 * (1 + np.max(np.abs(p))):
            break
    return p


def fit(osc: Oscillator, measurements: Sequence[Measurement], name: str | None = None,
        tolerances: Mapping[str, Tolerance] | None = None) -> Calibration:
    """Thresholds that best reproduce ``measurements`` on ``osc``'s chip and supply.

    Both thresholds are fitted when any measurement has a duty, else the
    oscillator's VT+/VT- ratio is kept; a one-threshold circuit (cmos-astable,
    divider) has its one switching voltage fitted (the ``switching`` mode; a
    divider's readings are taken at its output, ``osc.divide_by``). ``tolerances``
    of the calibration parts by letter (``R``, ``C``; default the drawer's defaults:
    R ±5 %, C ±20 %) set how sure the result is. Raises SetupError when no thresholds between the
    output levels come close (the parts or reading are likely wrong).
    """
    osc.circuit.require_designed("calibration")
    import numpy as np  # loaded on first fit: listing calibrations needs none

    from core.model.circuits.base import check_values, frequency, uniform_sum_sigma

    if not measurements:
        raise InputError("a calibration needs at least one measurement")
    ms = [Measurement(check_values(osc, m.values), m.frequency_hz, m.duty_pct,
                      m.diode_steered) for m in measurements]
    a0, b0 = osc.vt_plus_v, osc.vt_minus_v
    d = osc.device
    mode = _mode(osc, ms)

    def thresholds(p: np.ndarray) -> tuple[float, float]:
        if mode == "switching":
            return float(p[0]), float(p[0])
        return (float(p[0]), float(p[1])) if mode == "both" else (float(p[0]) * a0,
                                                                 float(p[0]) * b0)

    def fun(p: np.ndarray, readings: Sequence[Measurement] = ms) -> np.ndarray:
        a, b = thresholds(p)
        if not (d.vol_v < b <= a < d.voh_v and (a > b or mode == "switching")):
            return _no_fit(readings)
        return _residuals(osc, readings, a, b)

    starts = (_switching_starts(fun, d.vol_v, d.voh_v, a0,
                                twins=all(m.duty_pct is None for m in ms))
              if mode == "switching" else [[a0, b0]] if mode == "both" else [[1.0]])
    p_fit = _least_squares(fun, np.array(starts[0]))
    a, b = thresholds(p_fit)
    residual_pct = _misfit_pct(_residuals(osc, ms, a, b))
    if not residual_pct < 1.0 and len(ms) == 1:
        m = ms[0]
        duty = "" if m.duty_pct is None else f" at {m.duty_pct:g} % duty"
        raise SetupError(f"no thresholds between {d.vol_v:g} V and {d.voh_v:g} V make "
                         f"these parts run at {format_quantity(m.frequency_hz, 'frequency')}"
                         f"{duty} on a {d.family.name}; check the part values and the reading")
    if not math.isfinite(residual_pct):
        raise SetupError("no thresholds between the output levels fit these measurements")
    table = [float(frequency(osc, m.values, m.diode_steered, a0, b0)) for m in ms]
    scale = math.exp(float(np.mean([math.log(m.frequency_hz / f) for m, f in zip(ms, table,
                                                                               strict=True)])))
    warnings = _outside_table(osc, a, b)
    if len(ms) > 1 and residual_pct > 2.0:
        warnings.append(f"the measurements disagree with one another by {residual_pct:.1f} % "
                        "rms after fitting; one reading or part value may be off")
    if len(starts) > 1:
        twin = float(_least_squares(fun, np.array(starts[1]))[0])
        if abs(twin - a) > 0.01 * d.supply_v and _misfit_pct(fun(np.array([twin]))) < 1.0:
            warnings.append(f"a switching voltage of {twin:.3g} V fits these readings as well "
                            f"as {a:.3g} V (the period is about the same either side of the "
                            "middle of the supply); "
                            + ("the one nearer the table's typical value is kept"
                               if abs(abs(twin - a0) - abs(a - a0)) > 0.01 * d.supply_v else
                               "the table's typical value lies between them: the lower is kept")
                            + ("" if osc.divide_by > 1 else
                               ". A duty reading at the output settles which"))
    tol = {"R": DEFAULT_TOLERANCE["R"], "C": DIELECTRIC_TOLERANCE[""]}
    tol.update(tolerances or {})
    spread = _propagate(osc, ms, p_fit, fun, thresholds, tol)
    uncertainty = uniform_sum_sigma(spread.terms)
    if max(tol["R"].minus, tol["R"].plus) > 0.01 or max(tol["C"].minus, tol["C"].plus) > 0.05:
        warnings.append(f"with R {tol['R']} and C {tol['C']} parts, predictions made with "
                        f"this calibration are uncertain by ±{100 * uncertainty:.1f} % "
                        f"(1 sigma); {ADVICE}")
    return Calibration(name=name, family=d.family.name, circuit=osc.circuit.name,
                       supply_v=d.supply_v, vt_plus_v=float(a), vt_minus_v=float(b),
                       scale=scale, mode=mode,
                       residual_pct=residual_pct, table_vt_plus_v=a0, table_vt_minus_v=b0,
                       measurements=tuple(ms),
                       created=datetime.now(UTC).isoformat(timespec="seconds"),
                       warnings=tuple(warnings),
                       tolerances_pct={k: (100 * t.minus, 100 * t.plus) for k, t in tol.items()},
                       uncertainty_pct=100 * uncertainty,
                       worst_case_pct=100 * sum(spread.terms),
                       error_terms_pct=tuple(100 * t for t in spread.terms),
                       vt_plus_sigma_v=spread.vt_sigma_v[0], vt_minus_sigma_v=spread.vt_sigma_v[1])


def _mode(osc: Oscillator, ms: Sequence[Measurement]) -> str:
    """What the fit solves: the one ``switching`` voltage (a one-threshold circuit), ``both``
    thresholds (a duty was read), or one factor on the table's pair keeping its ``ratio``."""
    if osc.circuit.one_threshold:
        if osc.divide_by > 1 and any(m.duty_pct is not None for m in ms):
            raise InputError("the counter's output is a 50 % square wave whatever the "
                             "switching voltage: calibrate from the frequency alone")
        return "switching"
    return "both" if any(m.duty_pct is not None for m in ms) else "ratio"


SWITCHING_GRID = 64
"""Switching voltages tried between the output levels before the fit refines the best:
the period is flat at mid-supply, where a gradient step from the table's typical value
(often exactly there) would not move."""


def _switching_starts(fun: Callable[[np.ndarray], np.ndarray], low: float, high: float,
                      typ: float, twins: bool) -> list[list[float]]:
    """Starting points for the one switching voltage [V] from a grid between the output
    levels: the best one; with ``twins`` (frequencies only: the period is about the same
    either side of its shortest point) the best on each side of that point, the table's
    side (``typ``) first."""
    import numpy as np  # loaded on first fit: listing calibrations needs none
    grid = np.linspace(low, high, SWITCHING_GRID + 2)[1:-1]
    rs = [fun(np.array([v])) for v in grid]
    cost = np.array([float(r @ r) for r in rs])
    if not twins:
        return [[float(grid[int(np.argmin(cost))])]]
    # Frequency-only misfits are log(model period / measured): least where it is shortest.
    split = grid[int(np.argmin([float(np.sum(r)) for r in rs]))]
    best = [float(grid[side][np.argmin(cost[side])]) for side in (grid <= split, grid > split)
            if np.any(side & np.isfinite(cost))]
    # Nearer the table's typical value first; where both are about as near, the lower.
    return [[v] for v in sorted(best, key=lambda v: (round(abs(v - typ) / (high - low), 2), v))]


def _misfit_pct(r: np.ndarray) -> float:
    """The rms of the log misfits [%]; inf where some reading is out of reach."""
    import numpy as np  # loaded on first fit: listing calibrations needs none
    return 100 * math.sqrt(float(np.mean(r**2))) if np.all(np.isfinite(r)) else math.inf


def _outside_table(osc: Oscillator, a: float, b: float) -> list[str]:
    """A warning per fitted threshold [V] outside the data sheet's min … max."""
    d = osc.device
    pairs = ((("switching voltage", a, d.vt_plus),) if osc.circuit.one_threshold
             else (("VT+", a, d.vt_plus), ("VT-", b, d.vt_minus)))
    return [f"the fitted {label} ({v:.3g} V) lies outside the data sheet's {lo:.3g} … "
            f"{hi:.3g} V: check the part values, the supply and the reading"
            for label, v, (lo, _, hi) in pairs if not lo <= v <= hi]


class _Spread(NamedTuple):
    """How sure a fit is: the half-widths of the uniform errors a prediction carries
    (relative), and the thresholds' 1-sigma uncertainties [V]."""

    terms: tuple[float, ...]
    vt_sigma_v: tuple[float, float]


def _inputs(ms: Sequence[Measurement], tol: Mapping[str, Tolerance]
            ) -> dict[tuple[Any, ...], float]:
    """The uncertain inputs and the half-width of each (uniform; relative for parts and
    frequencies, points for duties; an asymmetric tolerance counts by its wider side).
    A part of the same role and value in several measurements is one input; each reading
    is its own."""
    out: dict[tuple[Any, ...], float] = {}
    for i, m in enumerate(ms):
        for role, value in m.values.items():
            t = tol[role[0]]
            out[("part", role, value)] = max(t.minus, t.plus)
        out[("frequency", i)] = FREQUENCY_READING
        if m.duty_pct is not None:
            out[("duty", i)] = DUTY_READING_POINTS
    return out


def _perturbed(ms: Sequence[Measurement], key: tuple[Any, ...], h: float
               ) -> list[Measurement]:
    """The measurements with one input moved by ``h`` (relative, or points of duty)."""
    out = []
    for i, m in enumerate(ms):
        values, f, duty = dict(m.values), m.frequency_hz, m.duty_pct
        if key[0] == "part" and values.get(key[1]) == key[2]:
            values[key[1]] *= 1 + h
        elif key == ("frequency", i):
            f *= 1 + h
        elif key == ("duty", i) and duty is not None:
            duty += h
        out.append(Measurement(values, f, duty, m.diode_steered))
    return out


def _propagate(osc: Oscillator, ms: Sequence[Measurement], p: np.ndarray,
               fun: Callable[..., np.ndarray],
               thresholds: Callable[[np.ndarray], tuple[float, float]],
               tol: Mapping[str, Tolerance]) -> _Spread:
    """First-order propagation of the inputs' tolerances through the fit (see the module)."""
    import numpy as np  # loaded on first fit: listing calibrations needs none

    from core.model.circuits.base import frequency

    inputs = _inputs(ms, tol)
    j_p = _jacobian(fun, p)
    j_x = np.column_stack([
        (fun(p, _perturbed(ms, key, 1e-6)) - fun(p, _perturbed(ms, key, -1e-6))) / 2e-6
        for key in inputs])
    limit = np.array(list(inputs.values()))
    sigma = limit / math.sqrt(3)
    if not (np.all(np.isfinite(j_p)) and np.all(np.isfinite(j_x))):
        raise SetupError("the fitted thresholds sit at the edge of what these parts can do, "
                         "so how sure they are cannot be told; check the part values and "
                         "the reading")
    dp_dx = -np.linalg.pinv(j_p) @ j_x  # how the fitted parameters follow each input
    # Sensitivity of a prediction (ln f for the first measurement's parts) to the parameters.
    first = ms[0]

    def ln_f(q: np.ndarray) -> np.ndarray:
        a, b = thresholds(q)
        return np.atleast_1d(np.log(frequency(osc, first.values, first.diode_steered, a, b)))

    g = _jacobian(ln_f, p)[0] @ dp_dx
    cov = (dp_dx * sigma**2) @ dp_dx.T
    scale = 1.0
    r, dof = fun(p), j_p.shape[0] - j_p.shape[1]
    if dof > 0:
        chi2 = float(r @ np.linalg.pinv((j_x * sigma**2) @ j_x.T) @ r)
        scale = math.sqrt(max(1.0, chi2 / dof))
    d_thresholds = _jacobian(lambda q: np.array(thresholds(q)), p)
    vt_cov = d_thresholds @ cov @ d_thresholds.T
    return _Spread(tuple(float(t) for t in scale * np.abs(g) * limit),
                   (scale * math.sqrt(vt_cov[0, 0]), scale * math.sqrt(vt_cov[1, 1])))


def _jacobian(fun: Callable[[np.ndarray], np.ndarray], p: np.ndarray) -> np.ndarray:
    """Central-difference Jacobian of ``fun`` at ``p``."""
    import numpy as np  # loaded on first fit: listing calibrations needs none

    cols = []
    for j in range(p.size):
        h = 1e-7 * max(1.0, abs(p[j]))
        dp = np.zeros_like(p, dtype=float)
        dp[j] = h
        cols.append((fun(p + dp) - fun(p - dp)) / (2 * h))
    return np.column_stack(cols)


def calibrate(osc: Oscillator, values: Mapping[str, float], measured_hz: float,
              duty_pct: float | None = None, *, diode_steered: bool = False,
              name: str | None = None,
              tolerances: Mapping[str, Tolerance] | None = None) -> Calibration:
    """Thresholds from one bench measurement of known parts (see ``fit``)."""
    return fit(osc, [Measurement(values, measured_hz, duty_pct, diode_steered)], name,
               tolerances)


# ---------------------------------------------------------------- files

def calibrations_dir() -> Path:
    from core.storage.locations import data_dir

    path = data_dir() / "calibrations"
    path.mkdir(parents=True, exist_ok=True)
    return path


def check_name(name: str) -> str:
    """A calibration name usable as a file name (letters, digits, ``_ . -``)."""
    if not isinstance(name, str) or not _NAME.fullmatch(name):
        raise InputError("a calibration name uses letters, digits, _ . - (up to 64, "
                         "starting with a letter or digit)", text=str(name), what="name")
    return name


def _path(name: str) -> Path:
    return calibrations_dir() / f"{check_name(name)}.json"


def save_calibration(cal: Calibration, name: str | None = None) -> Path:
    """Write ``cal`` under ``name`` (or its own name); returns the file written."""
    from core.storage.atomic import write_text_atomically

    name = name or cal.name
    if not name:
        raise InputError("a calibration needs a name to be saved")
    data = dict(cal.to_json(), name=check_name(name), format=FORMAT_VERSION)
    path = _path(name)
    write_text_atomically(path, json.dumps(data, indent=2, ensure_ascii=False) + "\n",
                          backup=False)
    return path


def list_calibrations() -> list[str]:
    """Names of the saved calibrations, sorted."""
    return sorted(p.stem for p in calibrations_dir().glob("*.json"))


def load_calibration(name: str) -> Calibration:
    """A saved calibration by name (InputError naming the known ones if absent)."""
    path = _path(name)
    if not path.exists():
        known = ", ".join(list_calibrations()) or "none saved yet"
        raise InputError(f"no such calibration (known: {known})", text=name,
                         what="calibration")
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        ms = tuple(Measurement(values=dict(m["values"]), frequency_hz=float(m["frequency_hz"]),
                               duty_pct=m.get("duty_pct"),
                               diode_steered=bool(m.get("diode_steered", False)))
                   for m in data.get("measurements", ()))
        return Calibration(
            name=data["name"], family=data["family"], circuit=data["circuit"],
            supply_v=float(data["supply_v"]), vt_plus_v=float(data["vt_plus_v"]),
            vt_minus_v=float(data["vt_minus_v"]), scale=float(data["scale"]),
            mode=data["mode"], residual_pct=float(data["residual_pct"]),
            table_vt_plus_v=float(data["table_vt_plus_v"]),
            table_vt_minus_v=float(data["table_vt_minus_v"]), measurements=ms,
            created=data.get("created", ""), warnings=tuple(data.get("warnings", ())),
            tolerances_pct={k: (float(v[0]), float(v[1]))
                            for k, v in data.get("tolerances_pct", {}).items()},
            uncertainty_pct=float(data.get("uncertainty_pct", 0.0)),
            worst_case_pct=float(data.get("worst_case_pct", 0.0)),
            error_terms_pct=tuple(float(t) for t in data.get("error_terms_pct", ())),
            vt_plus_sigma_v=float(data.get("vt_plus_sigma_v", 0.0)),
            vt_minus_sigma_v=float(data.get("vt_minus_sigma_v", 0.0)))
    except (OSError, ValueError, KeyError, TypeError) as e:
        raise TickbinError(f"{path}: not a readable calibration ({e})") from None


def delete_calibration(name: str) -> None:
    """Remove a saved calibration (InputError if there is none by that name)."""
    path = _path(name)
    if not path.exists():
        raise InputError("no such calibration", text=name, what="calibration")
    path.unlink()


def rename_calibration(old: str, new: str) -> Path:
    """Give a saved calibration another name; returns the new file.

    Never loses a file: the new file is written whole (atomically) before the
    old one is removed, so a failure at any moment leaves one or both. An
    existing calibration is never replaced (InputError).
    """
    old_path, new_path = _path(old), _path(new)
    if not old_path.exists():
        raise InputError("no such calibration", text=old, what="calibration")
    if new_path.exists() and not new_path.samefile(old_path):
        raise InputError("a calibration by that name exists already; delete it first or "
                         "choose another name", text=new, what="name")
    written = save_calibration(load_calibration(old), new)
    if not new_path.samefile(old_path):
        try:
            old_path.unlink()
        except OSError as e:
            raise TickbinError(f"{old_path}: saved as {new!r}, but the old file could not "
                               f"be removed ({e.strerror or e}); both are kept") from None
    return written


# ---------------------------------------------------------------- bench readings as text

READING_COLUMNS = ("frequency", "duty")
"""The columns of a bench reading after the circuit's part keys (``r``, ``c`` …)."""


def measurement_from_cells(keys: Sequence[str], cells: Mapping[str, str],
                           diode_steered: bool = False) -> Measurement:
    """One bench reading from text cells by lower-case column: the part keys' names
    (``r``, ``c``; ``ra``, ``rb``, ``c``), ``frequency`` and optionally ``duty``.

    ``calibrate --measurements`` and the window's table read alike; an InputError
    names the column and the problem.
    """
    from core.units import parse_capacitance, parse_frequency, parse_percent, parse_resistance

    names = tuple(k.lower() for k in keys)
    missing = [k for k in (*names, "frequency") if not cells.get(k, "").strip()]
    if missing:
        raise InputError(f"needs {', '.join(missing)}")
    values = {k.upper(): (parse_capacitance if k == "c" else parse_resistance)(cells[k])
              for k in names}
    text = cells.get("duty", "").strip()
    duty = parse_percent(text, allow_zero=False, what="duty cycle") if text else None
    if duty is not None and not duty < 100:
        raise InputError("a measured duty cycle lies between 0 and 100 %", text=text,
                         what="duty cycle")
    return Measurement(values, parse_frequency(cells["frequency"]), duty, diode_steered)


def predicted_hz(osc: Oscillator, cal: Calibration) -> np.ndarray:
    """The frequency [Hz] the calibration's thresholds predict for each of its measurements
    (to set beside what was measured: the fit's residuals)."""
    import numpy as np  # loaded on first fit: listing calibrations needs none

    from core.model.circuits.base import frequency

    return np.array([float(frequency(osc, m.values, m.diode_steered, cal.vt_plus_v,
                                     cal.vt_minus_v)) for m in cal.measurements])
