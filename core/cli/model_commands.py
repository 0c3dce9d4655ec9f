"""``tickbin predict`` and ``tickbin calibrate``: the timing model on the command line."""

from __future__ import annotations

import argparse
import csv
import io
import math
from collections.abc import Callable, Iterator
from typing import Any

from core.cli.circuit_options import add_circuit_options, oscillator_from_args
from core.cli.common import add_json_option, arg_type, emit, percent_arg, value_arg
from core.cli.drift_options import add_drift_options, drift_lines, drift_result
from core.errors import InputError, TickbinError
from core.model.calibration import (
    ADVICE,
    DUTY_READING_POINTS,
    FREQUENCY_READING,
    Calibration,
    Measurement,
    check_name,
    fit,
    list_calibrations,
    measurement_from_cells,
    save_calibration,
)
from core.model.circuits import CIRCUITS
from core.model.circuits.divider import DIVIDER, tap, with_divide_by
from core.model.devices import device_table
from core.model.drift import ageing_note, effective_capacitance
from core.model.spread import monte_carlo
from core.model.timing import Oscillator, default_tolerances, predict
from core.parts.part import case_name
from core.storage.atomic import read_regular_file
from core.units import (
    Tolerance,
    format_part_value,
    format_quantity,
    parse_tolerance,
)

_DIELECTRICS = ("c0g", "np0", "film", "x7r", "x5r", "y5v", "z5u", "tantalum", "electrolytic")


def register(commands: argparse._SubParsersAction) -> None:
    pred = commands.add_parser("predict", help="what given parts will do: frequency, duty, "
                               "worst case")
    add_circuit_options(pred)
    _add_part_options(pred)
    tol = _add_tolerance_options(pred, "capacitor tolerance (default by --dielectric)")
    tol.add_argument("--dielectric", choices=_DIELECTRICS, default="",
                     help="capacitor dielectric: sets its default tolerance and the "
                     "electrolytic warnings")
    tol.add_argument("--c-voltage", type=value_arg("voltage"), metavar="V",
                     help="the capacitor's rated voltage: a class-2 ceramic (X7R, X5R, Y5V, "
                     "Z5U) then loses capacitance under its DC bias (typical curves)")
    tol.add_argument("--case", type=arg_type(case_name, "case"), metavar="CASE",
                     help="the ceramic capacitor's case for its DC-bias loss: 0402, 0603, "
                     "0805 (default), 1206, 1210, 1812, radial")
    add_drift_options(pred)
    pred.add_argument("--draws", type=int, default=10_000, metavar="N",
                      help="Monte Carlo builds for the 95 %% spread (default 10000)")
    add_json_option(pred)
    pred.set_defaults(run=run_predict)

    cal = commands.add_parser(
        "calibrate", help="solve the chip's effective thresholds from a bench measurement",
        description="Solve the chip's effective thresholds from a bench measurement, and "
        "say how sure they are. " + ADVICE[0].upper() + ADVICE[1:] + ".")
    add_circuit_options(cal)
    _add_part_options(cal)
    _add_tolerance_options(cal, "the calibration capacitor's tolerance (default ±20 %%; "
                           "C0G or film: 5%%, 2%% or 1%%)")
    cal.add_argument("--measured", type=value_arg("frequency"), metavar="FREQ",
                     help="the frequency measured on the bench (or its period)")
    cal.add_argument("--duty", type=percent_arg("duty cycle", below_100=True), metavar="PCT",
                     help="the measured share of the period the output is high")
    cal.add_argument("--measurements", metavar="FILE.csv",
                     help="several readings for a least-squares fit: columns r, c (or ra, "
                     "rb, c), frequency and optionally duty")
    cal.add_argument("--save", metavar="NAME", type=arg_type(check_name, "name"),
                     help="store the result as a named calibration (use with --calibration)")
    cal.add_argument("--list", action="store_true", help="list the saved calibrations")
    add_json_option(cal)
    cal.set_defaults(run=run_calibrate)

    dev = commands.add_parser("devices", help="the chips in the device table, with their "
                              "supply ranges and sources")
    dev.add_argument("family", nargs="?", help="show one family's numbers at --supply")
    dev.add_argument("--supply", type=value_arg("voltage"), metavar="V",
                     help="supply for the family's numbers (default: each listed supply)")
    add_json_option(dev)
    dev.set_defaults(run=run_devices)


def _tolerance(kind: str) -> Callable[[str], Tolerance]:
    return arg_type(lambda text: parse_tolerance(text, kind), "tolerance")


def _add_tolerance_options(parser: argparse.ArgumentParser,
                           c_help: str) -> argparse._ArgumentGroup:
    tol = parser.add_argument_group("tolerances")
    tol.add_argument("--r-tolerance", metavar="TOL", type=_tolerance("R"),
                     help="resistor tolerance (5%%, ±1%%, F, J; default ±5 %%)")
    tol.add_argument("--c-tolerance", metavar="TOL", type=_tolerance("C"), help=c_help)
    return tol


def _add_part_options(parser: argparse.ArgumentParser) -> None:
    parts = parser.add_argument_group("parts")
    parts.add_argument("--r", type=value_arg("resistance"), metavar="R",
                       help="timing resistor (Schmitt, cmos-astable)")
    parts.add_argument("--rh", type=value_arg("resistance"), metavar="R",
                       help="diode-steered Schmitt: resistor charging C (through a diode) "
                       "while the output is high")
    parts.add_argument("--rl", type=value_arg("resistance"), metavar="R",
                       help="diode-steered Schmitt: resistor discharging C (through a diode) "
                       "while the output is low")
    parts.add_argument("--rs", type=value_arg("resistance"), metavar="R",
                       help="cmos-astable: resistor from the timing node to the first "
                       "inverter's input")
    parts.add_argument("--c", type=value_arg("capacitance"), metavar="C",
                       help="timing capacitor")
    parts.add_argument("--ra", type=value_arg("resistance"), metavar="R",
                       help="555: resistor from VCC to discharge (pin 7)")
    parts.add_argument("--rb", type=value_arg("resistance"), metavar="R",
                       help="555: resistor from discharge (pin 7) to the timing node")
    parts.add_argument("--divide-by", type=int, metavar="N",
                       help="divider: the counter stage's ratio (a pinned-out power of two)")
    parts.add_argument("--diode-steered", action="store_true",
                       help="555: a diode across RB (charge through RA only)")


def _wired(osc: Oscillator, args: argparse.Namespace) -> Oscillator:
    """The oscillator as the part options wire it: RH/RL pick the diode-steered Schmitt."""
    if getattr(args, "rh", None) is not None or getattr(args, "rl", None) is not None:
        if osc.circuit.steered_variant is None:
            raise InputError(f"--rh and --rl are for the diode-steered Schmitt oscillator; "
                             f"the {osc.circuit.title} takes {osc.circuit.value_flags}")
        osc = osc.with_steering()
    elif args.diode_steered and osc.circuit.steered_variant is not None:
        raise InputError(f"the diode-steered {osc.circuit.title} takes "
                         f"{osc.circuit.steered_variant.value_flags}")
    return osc


def _values(osc: Oscillator, args: argparse.Namespace) -> dict[str, float]:
    given = {k: getattr(args, k.lower()) for k in osc.circuit.keys}
    if any(v is None for v in given.values()):
        raise InputError(f"the {osc.family.name} circuit needs {osc.circuit.value_flags}")
    return {k: float(v) for k, v in given.items() if v is not None}


def _threshold_source(osc: Oscillator) -> str:
    if osc.calibration:
        return f"calibration {osc.calibration}"
    return "given" if osc.thresholds_given else "table typ"


def _describe_values(values: dict[str, float]) -> str:
    return ", ".join(f"{k} = {format_part_value(v, k)}"
                     for k, v in values.items())


# ---------------------------------------------------------------- predict

def _counted(osc: Oscillator, args: argparse.Namespace, needed: bool) -> Oscillator:
    """The oscillator with its counter stage (``--divide-by``), where it has a counter."""
    if args.divide_by is not None and osc.circuit is not DIVIDER:
        raise InputError("--divide-by N goes with --circuit divider")
    if args.divide_by is None:
        if needed and osc.circuit is DIVIDER:
            raise InputError("--circuit divider needs --divide-by N (the counter stage)")
        return osc
    return with_divide_by(osc, args.divide_by)


def run_predict(args: argparse.Namespace) -> int:
    osc = _counted(_wired(oscillator_from_args(args), args), args, needed=True)
    values = _values(osc, args)
    tolerances = default_tolerances(osc, args.dielectric)
    if args.r_tolerance is not None:
        tolerances.update({k: args.r_tolerance for k in values if k != "C"})
    if args.c_tolerance is not None:
        tolerances["C"] = args.c_tolerance
    if not 100 <= args.draws <= 1_000_000:
        raise InputError("--draws must be between 100 and 1000000")
    c_seen, bias_notes = effective_capacitance(osc, values["C"], args.dielectric,
                                               args.c_voltage, args.case)
    seen = {**values, "C": c_seen}
    steered = bool(args.diode_steered) or osc.circuit.always_steered
    pred = predict(osc, seen, tolerances, diode_steered=steered, dielectric=args.dielectric)
    pred.warnings.extend([*bias_notes, *ageing_note(args.dielectric)])
    mc = monte_carlo(osc, seen, tolerances, n=args.draws, seed=0, diode_steered=steered)
    result = pred.to_json()
    result.update({
        "circuit": osc.circuit.name, "family": osc.family.name, "supply_v": osc.supply_v,
        "values": values, "diode_steered": steered,
        "tolerances": {k: [t.minus * 100, t.plus * 100] for k, t in tolerances.items()},
        "vt_plus_v": osc.vt_plus_v, "vt_minus_v": osc.vt_minus_v,
        "thresholds": _threshold_source(osc),
        "calibration_uncertainty_pct": 100 * osc.calibration_sigma,
        "calibration_worst_case_pct": 100 * osc.calibration_limit,
        "spread_95_hz": list(mc.interval_95), "draws": args.draws,
        "within_worst_case_pct": 100 * mc.fraction_within(*pred.worst_case_hz),
    })
    if bias_notes:
        result["effective_c_f"] = c_seen
    drift, drift_warnings = drift_result(args, osc, seen, args.dielectric, tolerances, steered)
    result.update(drift)
    result["warnings"].extend(drift_warnings)
    if osc.circuit is DIVIDER:
        result.update({"divide_by": osc.divide_by, "tap": tap(osc.divide_by),
                       "oscillator_hz": osc.divide_by * pred.frequency_hz})
    return emit(args, result, _predict_text)


def _predict_text(r: dict[str, Any]) -> str:
    f = format_quantity
    circuit = (CIRCUITS[r["circuit"]].oscillator
               + (", diode-steered" if r["diode_steered"] else ""))
    tol = ", ".join(f"{k} ±{t[1]:g}%" if t[0] == t[1] else f"{k} +{t[1]:g}/-{t[0]:g}%"
                    for k, t in r["tolerances"].items())
    spread = (", thresholds min…max" if r["thresholds"] == "table typ" else
              f", calibration ±{r['calibration_worst_case_pct']:.1f} %"
              if r["calibration_worst_case_pct"] > 0 else "")
    sure = (f", ±{r['calibration_uncertainty_pct']:.1f} % 1 sigma"
            if r["calibration_uncertainty_pct"] > 0 else "")
    lo, hi = r["worst_case_hz"]
    s_lo, s_hi = r["spread_95_hz"]
    rows = [
        f"{r['family']} at {r['supply_v']:g} V, {circuit}: {_describe_values(r['values'])}",
        (f"  switching at    {r['vt_plus_v']:.3g} V " if CIRCUITS[r["circuit"]].one_threshold
         else f"  thresholds      VT+ {r['vt_plus_v']:.3g} V, VT- {r['vt_minus_v']:.3g} V ")
        + f"({r['thresholds']}{sure})",
        *([f"  counter         {r['tap']} (÷{r['divide_by']}) of the oscillator's "
           f"{f(r['oscillator_hz'], 'frequency')}"] if "tap" in r else []),
        f"  frequency       {f(r['frequency_hz'], 'frequency')}   "
        f"(period {f(r['period_s'], 'time')})",
        f"  output high     {r['duty_pct']:.1f} %   (t_high {f(r['t_high_s'], 'time')}, "
        f"t_low {f(r['t_low_s'], 'time')})",
        f"  worst case      {f(lo, 'frequency')} … {f(hi, 'frequency')}   ({tol}{spread})",
        f"  95 % of builds  {f(s_lo, 'frequency')} … {f(s_hi, 'frequency')}   "
        f"(Monte Carlo, {r['draws']:,} draws)",
        *drift_lines(r),
    ]
    if r["warnings"]:
        rows.append("warnings:")
        rows.extend(f"  - {w}" for w in r["warnings"])
    return "\n".join(rows)


# ---------------------------------------------------------------- calibrate

MEASUREMENT_FILE_BYTES = 1 << 20
"""A bench log of readings is a few lines; anything larger is the wrong file."""


def _measurement_rows(path: str) -> Iterator[tuple[int, dict[str, str]]]:
    """(line, cells by lower-case header) of a measurements CSV file, UTF-8 (BOM allowed).

    Every problem is one TickbinError naming the file and line.
    """
    data = read_regular_file(path, MEASUREMENT_FILE_BYTES)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as e:
        line = data[:e.start].count(b"\n") + 1
        raise TickbinError(f"{path}:{line}: byte 0x{data[e.start]:02x} is not UTF-8 text; "
                           "save the file as UTF-8") from None
    reader = csv.reader(io.StringIO(text, newline=""))
    header: list[str] | None = None
    end = 0
    try:
        for record in reader:
            line, end = end + 1, reader.line_num  # a quoted field may span lines
            if not any(cell.strip() for cell in record):
                continue
            if header is None:
                header = [cell.strip().lower() for cell in record]
            elif any(cell.strip() for cell in record[len(header):]):
                raise TickbinError(f"{path}:{line}: {len(record)} fields but the header has "
                                   f"{len(header)}")
            else:
                yield line, {h: v.strip() for h, v in zip(header, record, strict=False)}
    except csv.Error as e:
        raise TickbinError(f"{path}:{reader.line_num}: CSV: {e}") from None


def _read_measurements(path: str, osc: Oscillator, steered: bool
                       ) -> tuple[Oscillator, list[Measurement]]:
    """The readings of a file, and the oscillator they were taken on: columns rh and rl
    mean the diode-steered wiring of the circuit."""
    rows = list(_measurement_rows(path))
    if rows and "rh" in rows[0][1] and osc.circuit.steered_variant is not None:
        osc, steered = osc.with_steering(), True
    out = []
    for line, row in rows:
        try:
            out.append(measurement_from_cells(osc.circuit.keys, row, steered))
        except InputError as e:
            raise TickbinError(f"{path}:{line}: {e}") from None
    if not out:
        raise TickbinError(f"{path}: no measurements (header r,c,frequency[,duty])")
    return osc, out


def run_calibrate(args: argparse.Namespace) -> int:
    if args.list:
        return emit(args, {"calibrations": list_calibrations()},
                    lambda r: "\n".join(r["calibrations"]) or "no calibrations saved")
    # A divider read without --divide-by is read at the oscillator pin (φO, 10).
    osc = _counted(_wired(oscillator_from_args(args), args), args, needed=False)
    steered = bool(args.diode_steered) or osc.circuit.always_steered
    if args.measurements:
        if args.measured is not None:
            raise InputError("give --measured or --measurements, not both")
        osc, measurements = _read_measurements(args.measurements, osc, steered)
    else:
        if args.measured is None:
            raise InputError("calibrate needs --measured FREQ (and optionally --duty PCT)")
        measurements = [Measurement(_values(osc, args), args.measured, args.duty, steered)]
    tolerances = {k: t for k, t in (("R", args.r_tolerance), ("C", args.c_tolerance))
                  if t is not None}
    cal = fit(osc, measurements, name=args.save, tolerances=tolerances)
    saved = str(save_calibration(cal)) if args.save else None
    return emit(args, _calibration_json(cal, saved), _calibrate_text)


def _calibration_json(cal: Calibration, saved: str | None) -> dict[str, Any]:
    return {"scale": cal.scale, "vt_plus_v": cal.vt_plus_v, "vt_minus_v": cal.vt_minus_v,
            "mode": cal.mode, "family": cal.family, "supply_v": cal.supply_v,
            "table_vt_plus_v": cal.table_vt_plus_v, "table_vt_minus_v": cal.table_vt_minus_v,
            "residual_pct": cal.residual_pct, "measurements": len(cal.measurements),
            "name": cal.name, "saved": saved, "warnings": list(cal.warnings),
            "uncertainty_pct": cal.uncertainty_pct, "worst_case_pct": cal.worst_case_pct,
            "parameter_sigma": {"vt_plus_v": cal.vt_plus_sigma_v,
                                "vt_minus_v": cal.vt_minus_sigma_v},
            "tolerances": {k: list(v) for k, v in cal.tolerances_pct.items()},
            "reading": {"frequency_pct": 100 * FREQUENCY_READING,
                        "duty_points": DUTY_READING_POINTS}}


_HOW = {"both": "both thresholds solved from frequency and duty",
        "ratio": "the table's VT+/VT- ratio kept, both scaled",
        "switching": "the one switching voltage solved"}


def _calibrate_text(r: dict[str, Any]) -> str:
    sigma = r["parameter_sigma"]
    tol = ", ".join(f"{k} ±{t[1]:g} %" if t[0] == t[1] else f"{k} +{t[1]:g}/-{t[0]:g} %"
                    for k, t in r["tolerances"].items())
    levels = ([("Vsw", "vt_plus")] if r["mode"] == "switching"
              else [("VT+", "vt_plus"), ("VT-", "vt_minus")])
    rows = [
        f"{r['family']} at {r['supply_v']:g} V, {r['measurements']} measurement"
        f"{'s' if r['measurements'] != 1 else ''} ({_HOW[r['mode']]})",
        *(f"  {label:<5} {r[key + '_v']:.3f} ± {sigma[key + '_v']:.3f} V   "
          f"(table {r['table_' + key + '_v']:.3f} V)" for label, key in levels),
        f"  scale {r['scale']:.4f}   (measured ÷ table-model frequency)",
        f"  uncertainty ±{r['uncertainty_pct']:.1f} % (1 sigma), at most "
        f"±{r['worst_case_pct']:.1f} %, in any frequency predicted with it",
        f"              (from {tol} and the reading ±{r['reading']['frequency_pct']:g} %"
        + (f", ±{r['reading']['duty_points']:g} duty point" if r["mode"] == "both" else "")
        + ")",
    ]
    if r["measurements"] > 1:
        rows.append(f"  fit   {r['residual_pct']:.2f} % rms misfit")
    if r["saved"]:
        rows.append(f"saved as {r['name']!r} ({r['saved']}); use --calibration {r['name']}")
    if r["warnings"]:
        rows.append("warnings:")
        rows.extend(f"  - {w}" for w in r["warnings"])
    return "\n".join(rows)


# ---------------------------------------------------------------- devices

def run_devices(args: argparse.Namespace) -> int:
    table = device_table()
    names = [table.family(args.family).name] if args.family else table.families()
    out = []
    for name in names:
        fam = table.family(name)
        supplies = [args.supply] if args.supply is not None else list(fam.supplies_v)
        entry: dict[str, Any] = {
            "family": fam.name, "circuit": fam.circuit, "description": fam.description,
            "supply_range_v": list(fam.supply_range_v), "package": fam.package.name,
            "pins": dict(fam.package.pins), "source": fam.source,
            "span_of": list(fam.span_of)}
        if args.family:
            entry["at"] = [_device_json(fam.at(v)) for v in supplies]
        out.append(entry)
    return emit(args, {"families": out}, _devices_text)


def _device_json(d: Any) -> dict[str, Any]:
    return {"supply_v": d.supply_v, "vt_plus_v": list(d.vt_plus), "vt_minus_v": list(d.vt_minus),
            "hysteresis_min_v": d.hysteresis_min_v,
            "hysteresis_max_v": _finite(d.hysteresis_max_v),
            "r_out_high_ohm": d.r_out_high_ohm, "r_out_low_ohm": d.r_out_low_ohm,
            "delay_s": d.delay_s, "r_min_ohm": d.r_min_ohm, "r_max_ohm": d.r_max_ohm,
            "f_max_hz": _finite(d.f_max_hz), "source": d.source}


def _finite(x: float) -> float | None:
    """JSON has no infinity: an unlisted limit is null."""
    return x if math.isfinite(x) else None


def _devices_text(r: dict[str, Any]) -> str:
    f = format_quantity
    rows = []
    for fam in r["families"]:
        lo, hi = fam["supply_range_v"]
        rows.append(f"{fam['family']:<12} {fam['circuit']:<8} {lo:g}–{hi:g} V  "
                    f"{fam['description']}")
        for d in fam.get("at", ()):
            rows.append(f"  at {d['supply_v']:g} V: VT+ {_triplet(d['vt_plus_v'])}, "
                        f"VT- {_triplet(d['vt_minus_v'])}, R {f(d['r_min_ohm'], 'resistance')}"
                        f" … {f(d['r_max_ohm'], 'resistance')}, delay {f(d['delay_s'], 'time')}")
        if fam.get("at"):
            rows.append(f"  source: {fam['source']}")
    return "\n".join(rows)


def _triplet(values: list[float]) -> str:
    return "/".join(f"{v:.3g}" for v in values) + " V"
