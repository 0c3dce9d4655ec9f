"""Options every circuit-aware sub-command shares, and the oscillator they describe.

``add_circuit_options(parser)`` adds --circuit, --family, --supply, --vt-plus,
--vt-minus, --calibration, --stray and --load; ``oscillator_from_args(args)``
turns them into a ``core.model.timing.Oscillator`` (predict, calibrate, search, trim,
sheet and netlist all use it).
"""

from __future__ import annotations

import argparse

from core.cli.common import value_arg
from core.model.calibration import load_calibration
from core.model.circuits import CIRCUITS, DEFAULT_CIRCUIT
from core.model.circuits.base import DEFAULT_STRAY_F, Oscillator
from core.model.devices import device_table
from core.model.timing import make_oscillator

DEFAULT_SUPPLY_V = 5.0


def add_circuit_options(parser: argparse.ArgumentParser) -> None:
    group = parser.add_argument_group("circuit")
    group.add_argument("--circuit", choices=tuple(CIRCUITS),
                       help="Schmitt-trigger inverter or 555 astable (default: the family's; "
                       "else schmitt)")
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


def oscillator_from_args(args: argparse.Namespace) -> Oscillator:
    """The oscillator the circuit options describe (InputError/SetupError if impossible)."""
    circuit, family_name, supply = args.circuit, args.family, args.supply
    calibration = None
    if args.calibration is not None:
        calibration = load_calibration(args.calibration)
        family_name = family_name or calibration.family
        supply = supply if supply is not None else calibration.supply_v
    if family_name is None:
        family_name = (CIRCUITS[circuit] if circuit else DEFAULT_CIRCUIT).default_family
    family = device_table().family(family_name)
    if circuit is None:
        circuit = family.circuit
    return make_oscillator(circuit, family, DEFAULT_SUPPLY_V if supply is None else supply,
                           vt_plus=args.vt_plus, vt_minus=args.vt_minus,
                           calibration=calibration, stray_capacitance_f=args.stray,
                           load_ohm=args.load)
