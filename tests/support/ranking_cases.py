"""Small drawers of our own for the ranking checks (tests/test_ranking.py and the window's
tests/window/test_gui_ranking.py).

References: the issue's duty case (with 30 % asked, a 28.1 % first row while a 30 % build
exists is wrong: a fact of the trade given in issue 11) and the National DM74LS14 data
sheet (the input sources 0.18 mA at its lower threshold, IT−, which a large R turns into a
node voltage that never falls below a low VT−).
"""

from __future__ import annotations

from core.model.timing import make_oscillator
from core.parts.part import Part
from core.units import Tolerance

ONE = Tolerance(0.01, 0.01)
FIVE = Tolerance(0.05, 0.05)
TEN = Tolerance(0.10, 0.10)


def lines(kind: str, values: list[float], tol: Tolerance, first_line: int,
          quantity: int = 2) -> list[Part]:
    return [Part(kind, v, tol, quantity, location=f"{kind}{k}", line=first_line + k)
            for k, v in enumerate(values)]


# Two single-part builds near 457.5 Hz on a diode-steered NE555 at 9 V (duty 30 % asked):
# 1.6 kΩ / 4.7 kΩ / 470 nF is the closer in frequency but runs at 28.1 %; 8.2 kΩ / 22 kΩ /
# 100 nF runs at 29.9 %, 0.1 % slow. The story: the first row must be the latter.
DUTY_DRAWER = (lines("R", [1.6e3, 4.7e3, 8.2e3, 22e3], ONE, 2)
               + lines("C", [470e-9, 100e-9], FIVE, 10, quantity=1))
CLOSER = {"RA": 1.6e3, "RB": 4.7e3, "C": 470e-9}
TRUER = {"RA": 8.2e3, "RB": 22e3, "C": 100e-9}
TARGET = 457.5
NE555 = make_oscillator("555", "NE555", 9.0)


# A 74LS14 with measured thresholds 1.7 V / 0.3 V: its input current (IT−) through R
# holds the node above 0.3 V once R passes about 700 Ω, so 680 Ω ±5 % stops at its high
# corner although it oscillates nominally (237 Hz with 1 µF).
LS14 = make_oscillator("schmitt", "74LS14", 5.0, vt_plus=1.7, vt_minus=0.3)
STALL_TARGET = 237.1
STALL_DRAWER = (lines("R", [680.0, 470.0, 330.0], FIVE, 2, quantity=1)
                + lines("C", [1e-6, 2.2e-6, 3.3e-6, 1.5e-6], TEN, 6, quantity=1))
