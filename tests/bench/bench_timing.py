"""Timing-model benchmark: prints figures, asserts nothing.

Run: python tests/bench/bench_timing.py (named bench_* so pytest does not collect it).
"""

from __future__ import annotations

import time
from collections.abc import Callable

import numpy as np

from core.model.spread import monte_carlo, worst_case_hz
from core.model.timing import (
    astable_times,
    make_oscillator,
    predict,
    resistance_for,
    schmitt_times,
)
from core.units import Tolerance


def _median_ms(fn: Callable[[], object], repeat: int = 20) -> float:
    fn()
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return 1e3 * float(np.median(times))


def main() -> None:
    rng = np.random.default_rng(0)
    hc = make_oscillator("schmitt", "74HC14", 5.0)
    ls = make_oscillator("schmitt", "74LS14", 5.0)
    ne = make_oscillator("555", "NE555", 9.0)
    r = rng.uniform(1e3, 1e6, 1_000_000)
    c = rng.uniform(1e-9, 1e-6, 1_000_000)
    tol = {"R": Tolerance(0.05, 0.05), "C": Tolerance(0.10, 0.10)}
    tol555 = {"RA": Tolerance(0.05, 0.05), "RB": Tolerance(0.05, 0.05), "C": tol["C"]}
    caps = np.geomspace(100e-12, 10e-6, 1000)
    n = 10_000
    rr, cc = r[:n], c[:n]
    rows = [
        ("schmitt_times, 1 000 000 (R, C), 74HC14", lambda: schmitt_times(hc, r, c), 5),
        ("schmitt_times, 1 000 000 (R, C), 74LS14", lambda: schmitt_times(ls, r, c), 5),
        ("astable_times, 1 000 000 (RA, RB, C)", lambda: astable_times(ne, r, 2 * r, c), 5),
        ("resistance_for (R of a Schmitt), 1000 capacitors",
         lambda: resistance_for(hc, 1e3, {"C": caps}, "R"), 20),
        ("monte_carlo, 10 000 draws, 74HC14",
         lambda: monte_carlo(hc, {"R": 21.7e3, "C": 1e-6}, tol, n=10_000), 20),
        ("monte_carlo, 10 000 draws, NE555",
         lambda: monte_carlo(ne, {"RA": 10e3, "RB": 22e3, "C": 10e-9}, tol555, n=10_000), 20),
        ("worst_case_hz, 10 000 candidates at once",
         lambda: worst_case_hz(hc, {"R": rr, "C": cc}, {"R": (0.95 * rr, 1.05 * rr),
                                                       "C": (0.9 * cc, 1.1 * cc)}), 20),
        ("predict, one circuit", lambda: predict(hc, {"R": 21.7e3, "C": 1e-6}), 50),
    ]
    for label, fn, repeat in rows:
        print(f"{label:<48} {_median_ms(fn, repeat):9.2f} ms (median)")


if __name__ == "__main__":
    main()
