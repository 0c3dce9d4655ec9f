"""Event-driven integration of a timing node with scipy's solve_ivp (the reference the
two-phase model is checked against): the output flips a propagation delay after the node
crosses a threshold."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from scipy import integrate

NodeRate = Callable[[bool], Callable[[float, np.ndarray], list[float]]]
"""``rate(high)`` gives dV/dt of the node while the output is high (or low)."""


def steady_times(rate: NodeRate, v0: float, vt_plus: float, vt_minus: float,
                 delay_hl: float, delay_lh: float, span: float, edges: int = 6
                 ) -> tuple[float, float]:
    """(t_high, t_low) [s] of the last whole cycle, starting with the output high at ``v0``;
    ``span`` [s] bounds the search for each crossing."""
    t, y, high, times = 0.0, v0, True, []
    for _ in range(edges):
        level = vt_plus if high else vt_minus

        def crossing(_t: float, yy: np.ndarray, level: float = level) -> float:
            return yy[0] - level
        crossing.terminal = True  # type: ignore[attr-defined]
        sol = integrate.solve_ivp(rate(high), (t, t + span), [y], events=crossing,
                                  method="DOP853", rtol=1e-10, atol=1e-13)
        assert sol.t_events[0].size == 1, "no threshold crossing: the model says it runs"
        t, y = float(sol.t_events[0][0]), float(sol.y_events[0][0][0])
        delay = delay_hl if high else delay_lh
        if delay > 0:
            hold = integrate.solve_ivp(rate(high), (t, t + delay), [y], method="DOP853",
                                       rtol=1e-10, atol=1e-13)
            t, y = t + delay, float(hold.y[0, -1])
        times.append(t)
        high = not high
    return times[-2] - times[-3], times[-1] - times[-2]
