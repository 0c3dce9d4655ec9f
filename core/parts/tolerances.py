"""The tolerance a part is given when its drawer line names none.

One place for these defaults: the drawer reader fills them in for a line
without a tolerance, and predict and calibration use them for parts typed on
the command line.
"""

from __future__ import annotations

from core.units import Tolerance

# Default tolerances when a line gives none (common practice, no published source):
# carbon-film resistors ±5 %, trimmers ±20 %; capacitors by dielectric below.
DEFAULT_TOLERANCE: dict[str, Tolerance] = {
    "R": Tolerance(0.05, 0.05),
    "P": Tolerance(0.20, 0.20),
}
DIELECTRIC_TOLERANCE: dict[str, Tolerance] = {
    "c0g": Tolerance(0.05, 0.05),
    "np0": Tolerance(0.05, 0.05),
    "film": Tolerance(0.05, 0.05),
    "x7r": Tolerance(0.10, 0.10),
    "x5r": Tolerance(0.10, 0.10),
    "y5v": Tolerance(0.20, 0.80),
    "z5u": Tolerance(0.20, 0.80),
    "tantalum": Tolerance(0.10, 0.10),
    "electrolytic": Tolerance(0.20, 0.20),
    "": Tolerance(0.20, 0.20),
}
