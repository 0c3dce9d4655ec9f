"""The oscillator circuits, one module each, and the registry by name."""

from __future__ import annotations

from core.errors import InputError
from core.model.circuits.astable import ASTABLE
from core.model.circuits.base import Circuit
from core.model.circuits.cmos_astable import CMOS_ASTABLE
from core.model.circuits.divider import DIVIDER
from core.model.circuits.schmitt import SCHMITT

CIRCUITS: dict[str, Circuit] = {c.name: c for c in (SCHMITT, ASTABLE, CMOS_ASTABLE, DIVIDER)}
"""Every circuit by its ``--circuit`` name, in the order menus list them."""
DEFAULT_CIRCUIT: Circuit = SCHMITT
"""The circuit when neither it nor a family is named."""


def circuit_named(name: str) -> Circuit:
    """The circuit called ``name``; InputError naming the known ones otherwise."""
    try:
        return CIRCUITS[name]
    except KeyError:
        raise InputError(f"expected {', '.join(CIRCUITS)}", text=str(name),
                         what="circuit") from None
