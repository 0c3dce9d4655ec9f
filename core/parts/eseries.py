"""IEC 60063 preferred number series (E3 … E192) and kits built from them.

References: IEC 60063:2015, "Preferred number series for resistors and
capacitors", tables 1 and 2. E3–E24 are two-figure values listed in the
standard (several differ from plain rounding of 10^(i/24)); E48–E192 are
10^(i/192) rounded to three figures, except 9.20 where rounding gives 9.19.
"""

from __future__ import annotations

import math
from functools import cache
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from core.errors import InputError
from core.preferred_numbers import E24_FIGURES

_E24 = tuple(figures / 10 for figures in E24_FIGURES)

SERIES = ("E3", "E6", "E12", "E24", "E48", "E96", "E192")


@cache
def series_values(name: str) -> tuple[float, ...]:
    """The mantissas of one decade of ``name`` (``"E12"``), from 1.0 up to below 10."""
    key = name.strip().upper()
    if key not in SERIES:
        raise InputError(f"unknown series; expected one of {', '.join(SERIES)}",
                         text=name, what="series")
    n = int(key[1:])
    if n <= 24:
        return _E24[:: 24 // n]
    e192 = [round(10 ** (i / 192), 2) for i in range(192)]
    e192[e192.index(9.19)] = 9.20
    return tuple(e192[:: 192 // n])


def _decade_values(name: str, lo: float, hi: float) -> np.ndarray:
    mant = np.array(series_values(name))
    first = math.floor(math.log10(lo)) - 1
    last = math.ceil(math.log10(hi)) + 1
    decades = 10.0 ** np.arange(first, last + 1)
    values = (mant[None, :] * decades[:, None]).ravel()
    # Round to the series' own precision so 4.7 × 1e3 is exactly 4700.
    digits = 2 if int(name.strip().upper()[1:]) <= 24 else 3
    return np.array([float(f"{v:.{digits}g}") for v in values])


def kit(name: str, lo: float, hi: float) -> list[float]:
    """Every value of series ``name`` in [lo, hi] (SI units), for a drawer kit."""
    if not (0 < lo <= hi) or not math.isfinite(hi):
        raise InputError("a kit's range must satisfy 0 < low ≤ high", what="kit range",
                         text=f"{lo}..{hi}")
    values = _decade_values(name, lo, hi)
    tol = 1e-9
    keep = values[(values >= lo * (1 - tol)) & (values <= hi * (1 + tol))]
    return [float(v) for v in keep]


def neighbours(value: float, name: str) -> tuple[float, float]:
    """The nearest values of series ``name`` at or below and at or above ``value``."""
    if not (value > 0 and math.isfinite(value)):
        raise InputError("needs a value above zero", what="value", text=str(value))
    values = _decade_values(name, value, value)
    i = int(np.searchsorted(values, value * (1 - 1e-12)))
    above = float(values[i])
    below = above if math.isclose(above, value, rel_tol=1e-9) else float(values[i - 1])
    return below, above


def nearest(value: ArrayLike, name: str) -> Any:
    """The value(s) of series ``name`` closest to ``value`` on a log scale.

    Takes one value or a numpy array (NaN stays NaN); returns the same shape.
    """
    x = np.asarray(value, dtype=float)
    finite = np.isfinite(x) & (x > 0)
    if not finite.any():
        if x.ndim == 0:
            raise InputError("needs a value above zero", what="value", text=str(value))
        return np.full(x.shape, np.nan)
    table = _decade_values(name, float(x[finite].min()), float(x[finite].max()))
    safe = np.where(finite, x, table[1])
    pos = np.clip(np.searchsorted(table, safe), 1, len(table) - 1)
    below, above = table[pos - 1], table[pos]
    out = np.where(np.log(safe / below) <= np.log(above / safe), below, above)
    out = np.where(finite, out, np.nan)
    return float(out) if out.ndim == 0 else out
