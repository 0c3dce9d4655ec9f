"""IEC 60063 preferred number series."""

from __future__ import annotations

import math

import numpy as np
import pytest

from core.errors import InputError
from core.parts.eseries import kit, nearest, neighbours, series_values

# IEC 60063:2015 table 1, E24 column.
E24 = [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7,
       5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1]


def test_e24_is_the_published_list() -> None:
    assert list(series_values("E24")) == E24


@pytest.mark.parametrize("value", [2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2])
def test_e24_exceptions_to_rounding(value: float) -> None:
    # IEC 60063: these E24 values are not what rounding 10^(i/24) to two figures gives.
    i = E24.index(value)
    assert round(10 ** (i / 24), 1) != value
    assert value in series_values("E24")


def test_e12_e6_e3_are_every_nth_e24_value() -> None:
    # IEC 60063: E12 is every 2nd E24 value, E6 every 4th, E3 every 8th.
    assert list(series_values("E12")) == E24[::2]
    assert list(series_values("E6")) == E24[::4]
    assert list(series_values("E3")) == [1.0, 2.2, 4.7]
    assert list(series_values("E12")) == [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6,
                                         6.8, 8.2]


def test_e192_rounding_rule_and_its_exception() -> None:
    # IEC 60063 table 2: E192 is 10^(i/192) to three figures, except 9.20 (rounding: 9.19).
    e192 = series_values("E192")
    assert len(e192) == 192
    for i, v in enumerate(e192):
        expected = 9.20 if i == 185 else round(10 ** (i / 192), 2)
        assert v == pytest.approx(expected), i
    assert round(10 ** (185 / 192), 2) == 9.19
    assert 9.19 not in e192


def test_e96_e48_are_every_nth_e192_value() -> None:
    e192 = series_values("E192")
    assert series_values("E96") == e192[::2]
    assert series_values("E48") == e192[::4]
    # IEC 60063 table 2, a few E96 entries (from the published list).
    for v in (1.0, 1.02, 1.05, 4.99, 9.09, 9.76):
        assert v in series_values("E96")


def test_kit_spans_decades() -> None:
    # A full E24 kit from 1 Ω to 10 MΩ: 7 decades × 24 + the closing 10 MΩ = 169 values.
    values = kit("E24", 1, 10e6)
    assert len(values) == 169
    assert values[0] == 1 and values[-1] == 10e6
    assert 4700 in kit("E12", 1e3, 1e4)
    assert kit("E6", 1e-9, 1e-8) == pytest.approx([1e-9, 1.5e-9, 2.2e-9, 3.3e-9, 4.7e-9,
                                                   6.8e-9, 1e-8])


def test_neighbours_and_nearest() -> None:
    assert neighbours(21.7e3, "E12") == (18e3, 22e3)
    assert neighbours(4700, "E12") == (4700, 4700)
    assert nearest(21.7e3, "E24") == 22e3
    assert nearest(1.05e3, "E6") == 1e3
    assert math.isclose(nearest(9.2e-9, "E192"), 9.2e-9)


def test_nearest_over_an_array_keeps_nan() -> None:
    # E24 (IEC 60063): 21.7 k -> 22 k, 1.05 k -> 1.1 k (log midpoint of 1.0 and 1.1 is 1.049).
    got = nearest(np.array([21.7e3, np.nan, 1.05e3, 47e-9]), "E24")
    assert got[[0, 2, 3]] == pytest.approx([22e3, 1.1e3, 47e-9])
    assert np.isnan(got[1])


def test_bad_series_name() -> None:
    with pytest.raises(InputError, match="E12"):
        series_values("E13")
