"""Options every circuit-aware sub-command shares, and the oscillator they describe.

``add_circuit_options(parser)`` adds --circuit, --family, --supply, --vt-plus,
--vt-minus, --threshold, --calibration, --stray and --load; ``request_from_args(args)`` turns
them (and a design command's goal) into the ``core.design.request.Request`` the
window builds too, and ``oscillator_from_args(args)`` into its oscillator
(predict, calibrate, search, trim, sheet and netlist all use it).
"""

from __future__ import annotations

import argparse

from core.cli.common import value_arg
from core.design.request import DEFAULT_SUPPLY_V, Request
from core.errors import InputError
from core.model.circuits import CIRCUITS
from core.model.circuits.base import DEFAULT_STRAY_F, Oscillator
from core.model.drift import Conditions


def add_circuit_options(parser: argparse.ArgumentParser) -> None:
    group = parser.add_argument_group("circuit")
    group.add_argument("--circuit", choices=tuple(CIRCUITS),
                       help="Schmitt-trigger inverter, 555 astable or two-inverter CMOS "
                       "astable (default: the family's; else schmitt)")
    group.add_argument("--family", metavar="NAME",
                       help="device table entry, e.g. 74HC14, CD40106B, NE555, TLC555 "
                       f"(default {' or '.join(c.default_family for c in CIRCUITS.values())})")
    group.add_argument("--supply", type=value_arg("voltage"), metavar="V",
                       help=f"supply voltage (default {DEFAULT_SUPPLY_V:g} V, or the "
                       "calibration's)")
    group.add_argument("--vt-plus", type=value_arg("voltage"), metavar="V",
                       help="rising input threshold to use instead of the table's "
                       "(with --vt-minus; no threshold spread then)")
    group.add_argument("--vt-minus", type=value_arg("voltage"), metavar="V",
                       help="falling input threshold to use instead of the table's")
    group.add_argument("--threshold", type=value_arg("voltage"), metavar="V",
                       help="cmos-astable, divider: the inverter's switching voltage instead "
                       "of the table's (no threshold spread then)")
    group.add_argument("--calibration", metavar="NAME",
                       help="use the thresholds of a calibration saved with "
                       "'tickbin calibrate --save NAME' (its chip and supply unless given)")
    group.add_argument("--stray", type=_capacitance_or_zero, default=DEFAULT_STRAY_F,
                       metavar="C", help="stray capacitance at the timing node "
                       f"(default {DEFAULT_STRAY_F * 1e12:g} pF, a breadboard)")
    group.add_argument("--load", type=value_arg("resistance"), metavar="R",
                       help="a load from the timing output to ground (Schmitt)")


def _capacitance_or_zero(text: str) -> float:
    if text.strip() in ("0", "0F", "0 F", "0pF", "0p"):
        return 0.0
    return value_arg("capacitance")(text)


def request_from_args(args: argparse.Namespace) -> Request:
    """The request the options describe: the circuit options, and the goal (target or band,
    duty, accept, network sizes, --top, --dielectric) where the command has one."""
    def goal(name: str, default: object = None) -> object:
        value = getattr(args, name, None)
        return default if value is None else value

    vt_plus, vt_minus = args.vt_plus, args.vt_minus
    if args.threshold is not None:
        if vt_plus is not None or vt_minus is not None:
            raise InputError("give --threshold or --vt-plus/--vt-minus, not both")
        vt_plus = vt_minus = args.threshold  # one switching voltage: VT+ = VT-
    return Request(circuit=args.circuit, family=args.family, supply_v=args.supply,
                   calibration=args.calibration, vt_plus_v=vt_plus,
                   vt_minus_v=vt_minus, stray_capacitance_f=args.stray,
                   load_ohm=args.load, target_hz=goal("target"),  # type: ignore[arg-type]
                   band_hz=goal("band"), duty_pct=goal("duty"),  # type: ignore[arg-type]
                   duty_within=goal("duty_within"),  # type: ignore[arg-type]
                   accept_pct=goal("accept", 1.0),  # type: ignore[arg-type]
                   max_resistors=goal("max_resistors", 2),  # type: ignore[arg-type]
                   max_capacitors=goal("max_capacitors", 2),  # type: ignore[arg-type]
                   top=goal("top", 10), dielectrics=goal("dielectric"),  # type: ignore[arg-type]
                   pins=tuple(goal("pin", ())),  # type: ignore[arg-type]
                   conditions=Conditions(goal("temperature"),  # type: ignore[arg-type]
                                         goal("supply_range")))  # type: ignore[arg-type]


def oscillator_from_args(args: argparse.Namespace) -> Oscillator:
    """The oscillator the circuit options describe (InputError/SetupError if impossible)."""
    return request_from_args(args).oscillator()
