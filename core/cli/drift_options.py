"""``--temperature`` and ``--supply-range``: how far a build drifts (core.model.drift).

``add_drift_options(parser)`` adds both to a sub-command; ``drift_result``
gives predict's ``temperature_hz`` and ``supply_hz`` keys and their text lines.
"""

from __future__ import annotations

import argparse
from collections.abc import Mapping
from typing import Any

from core.cli.common import arg_type
from core.model.drift import (
    chip_factor,
    out_of_rating,
    part_envelopes,
    resistor_kind,
    supply_hz,
    temperature_hz,
)
from core.model.timing import Oscillator
from core.units import (
    Tolerance,
    format_quantity,
    parse_temperature_range,
    parse_voltage_range,
)


def add_drift_options(parser: argparse.ArgumentParser) -> None:
    group = parser.add_argument_group("drift")
    group.add_argument("--temperature", metavar="LO..HI",
                       type=arg_type(parse_temperature_range, "temperature range"),
                       help="temperatures the build must work over (°C unless a unit is "
                       "given: --temperature=-10..50, --temperature=32..104degF)")
    group.add_argument("--supply-range", metavar="LO..HI",
                       type=arg_type(parse_voltage_range, "supply range"),
                       help="supplies the build must work over, e.g. a battery's "
                       "--supply-range=3.6..4.5V")


def resistor_of(tolerances: Mapping[str, Tolerance]) -> str:
    """The resistor type the timing resistors' tolerance suggests (core.model.drift)."""
    r = [t for k, t in tolerances.items() if k not in ("C", "P")]
    return resistor_kind(100 * max((max(t.minus, t.plus) for t in r), default=0.05))


def drift_result(args: argparse.Namespace, osc: Oscillator, values: Mapping[str, float],
                 dielectric: str, tolerances: Mapping[str, Tolerance],
                 diode_steered: bool = False) -> tuple[dict[str, Any], list[str]]:
    """predict's drift keys for the options given (none when neither is), and warnings."""
    out: dict[str, Any] = {}
    warnings: list[str] = []
    if args.temperature is not None:
        lo_c, hi_c = args.temperature
        envelopes = part_envelopes(values, dielectric, resistor_of(tolerances))
        out["temperature_c"] = [lo_c, hi_c]
        out["temperature_hz"] = list(temperature_hz(osc, values, lo_c, hi_c, envelopes,
                                                    diode_steered))
        out["temperature_sources"] = {k: e.source for k, e in envelopes.items()}
        out["temperature_chip_pct"] = 100 * chip_factor(osc, lo_c, hi_c)
        warnings = out_of_rating(envelopes, lo_c, hi_c)
    if args.supply_range is not None:
        out["supply_range_v"] = list(args.supply_range)
        out["supply_hz"] = list(supply_hz(osc, values, *args.supply_range, diode_steered))
    return out, warnings


def drift_lines(r: Mapping[str, Any]) -> list[str]:
    """The text lines for predict's drift keys."""
    f = format_quantity
    rows = []
    if "temperature_hz" in r:
        (lo_c, hi_c), (lo, hi) = r["temperature_c"], r["temperature_hz"]
        chip = (f", chip ±{r['temperature_chip_pct']:.2g} %" if r["temperature_chip_pct"]
                else ", chip: no drift figure")
        label = f"{lo_c:g}…{hi_c:g} °C"
        rows.append(f"  {label:<16}{f(lo, 'frequency')} … {f(hi, 'frequency')}"
                    f"   (nominal parts over temperature{chip})")
    if "supply_hz" in r:
        (lo_v, hi_v), (lo, hi) = r["supply_range_v"], r["supply_hz"]
        label = f"{lo_v:g}…{hi_v:g} V"
        rows.append(f"  {label:<16}{f(lo, 'frequency')} … {f(hi, 'frequency')}"
                    "   (nominal parts over the supply range)")
    return rows
