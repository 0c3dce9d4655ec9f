"""Trim for the circuits of the second round: the 555 (RA, RB, P, C: the pot in series
with RB), the two-inverter CMOS astable (R, RS, P, C) and the divider (its stage).

Each design is checked corner by corner with the timing model only (no trim code):
every part at either end of its tolerance (IEC 60062), every comparator-level corner
of the device table, the pot at zero and full rotation (series resistance adds:
Horowitz & Hill, The Art of Electronics, 3rd ed., §1.2.1). The NE555 data sheet's
astable formula (t_H = 0.693 (RA + RB) C, t_L = 0.693 RB C) is the model's
idealised form and gives the rough check of the rotation.
"""

from __future__ import annotations

import itertools
import math

import pytest

from core.design.trim import trim
from core.model.timing import make_oscillator, times
from core.parts.part import Part
from core.units import Tolerance

FIVE = Tolerance(0.05, 0.05)
TEN = Tolerance(0.10, 0.10)
TWENTY = Tolerance(0.20, 0.20)


def drawer() -> list[Part]:
    """A few E6/E12 resistors, film capacitors and two linear pots (our own scenario)."""
    rs = [1.5e3, 3.3e3, 4.7e3, 6.8e3, 10e3, 15e3, 22e3, 47e3]
    cs = [22e-9, 47e-9, 100e-9, 220e-9]
    parts = [Part("R", v, FIVE, 2, location=f"R{k}", line=k + 2) for k, v in enumerate(rs)]
    parts += [Part("C", v, TEN, 2, dielectric="film", location=f"C{k}", line=k + 20)
              for k, v in enumerate(cs)]
    return parts + [Part("P", v, TWENTY, 1, location=f"P{k}", line=k + 30)
                    for k, v in enumerate([10e3, 50e3])]


def frequency(osc: object, ra: float, rb: float, c: float, vt: tuple[float, float],
              diode: bool) -> float:
    t_high, t_low = times(osc, {"RA": ra, "RB": rb, "C": c}, diode, vt[0], vt[1])
    return 1.0 / float(t_high + t_low)


def ends(node: object) -> tuple[float, float]:
    return node.value_range


@pytest.mark.parametrize(("band", "duty"), [((400.0, 480.0), None), ((90.0, 110.0), None),
                                            ((400.0, 480.0), 30.0), ((900.0, 1100.0), 65.0)])
def test_every_corner_covers_the_band(band: tuple[float, float], duty: float | None) -> None:
    osc = make_oscillator("555", "NE555", 9.0)
    result = trim(drawer(), osc, band, top=5, duty_pct=duty, duty_within=2.0)
    assert result.candidates, result.notes
    corners = osc.threshold_corners()
    for c in result.candidates:
        assert list(c.values) == ["RA", "RB", "P", "C"]
        diode = c.diode_steered
        # Decision in the search, kept here: 50 % or less needs the steering diode.
        assert diode == (duty is not None and duty <= 50)
        ra, rb, p, cap = (ends(c.networks[k]) for k in ("RA", "RB", "P", "C"))
        zero, full = [], []
        for a, b, pv, cv, vt in itertools.product(ra, rb, p, cap, corners):
            zero.append(frequency(osc, a, b, cv, vt, diode))
            full.append(frequency(osc, a, b + pv, cv, vt, diode))
        assert all(math.isfinite(f) for f in zero + full)
        # DESIGN.md: the guaranteed band is (highest full-rotation frequency, lowest
        # zero-rotation frequency) over every corner, and it covers the band asked.
        assert max(full) <= band[0] * (1 + 1e-9) and min(zero) >= band[1] * (1 - 1e-9)
        assert c.guaranteed_hz == pytest.approx((max(full), min(zero)), rel=1e-6)
        # Rotation at the band's ends (linear pot: share = rotation) reproduces them.
        v = c.values
        for x_pct, f_band in zip(c.rotation_pct, (band[1], band[0]), strict=True):
            f = frequency(osc, v["RA"], v["RB"] + v["P"] * x_pct / 100, v["C"],
                          (osc.vt_plus_v, osc.vt_minus_v), diode)
            assert f == pytest.approx(f_band, rel=1e-6)
        if duty is not None:
            # The nominal duty at the band's centre, found by bisection on rotation.
            lo, hi = 0.0, 1.0
            for _ in range(60):
                x = 0.5 * (lo + hi)
                f = frequency(osc, v["RA"], v["RB"] + v["P"] * x, v["C"],
                              (osc.vt_plus_v, osc.vt_minus_v), diode)
                lo, hi = (x, hi) if f > 0.5 * sum(band) else (lo, x)
            t_high, t_low = times(osc, {"RA": v["RA"], "RB": v["RB"] + v["P"] * lo,
                                        "C": v["C"]}, diode)
            d = 100 * float(t_high / (t_high + t_low))
            assert abs(d - duty) <= 2.0 and c.duty_pct == pytest.approx(d, abs=1e-6)


def test_rotation_matches_the_data_sheet_formula() -> None:
    # NE555 data sheet (TI SLFS022), astable: f = 1.44 / ((RA + 2 RB) C); with the table's
    # real comparator levels and discharge resistance the model stays within 5 %.
    osc = make_oscillator("555", "NE555", 9.0)
    (c,) = trim(drawer(), osc, (400.0, 480.0), top=1).candidates
    v = c.values
    for x_pct, f_band in zip(c.rotation_pct, (480.0, 400.0), strict=True):
        rb = v["RB"] + v["P"] * x_pct / 100
        assert 1.44 / ((v["RA"] + 2 * rb) * v["C"]) == pytest.approx(f_band, rel=0.05)


def check_every_corner(osc: object, c: object, band: tuple[float, float]) -> None:
    """Every part at either end (IEC 60062) and every threshold corner of the table, the pot
    at zero and full rotation: the band lies inside (DESIGN.md), by the timing model."""
    fixed = [k for k in c.values if k not in ("P", c.trimmed)]
    zero, full = [], []
    for ends_ in itertools.product(*(ends(c.networks[k]) for k in (c.trimmed, "P", *fixed))):
        r, p, rest = ends_[0], ends_[1], dict(zip(fixed, ends_[2:], strict=True))
        for vt in osc.threshold_corners():
            for total, out in ((r, zero), (r + p, full)):
                t_high, t_low = times(osc, {**rest, c.trimmed: total}, False, vt[0], vt[1])
                out.append(1.0 / float(t_high + t_low))
    assert all(math.isfinite(f) for f in zero + full)
    assert max(full) <= band[0] * (1 + 1e-9) and min(zero) >= band[1] * (1 - 1e-9)


def test_cmos_astable_trim_covers_every_corner() -> None:
    osc = make_oscillator("cmos-astable", "CD4069UB", 9.0)
    parts = drawer() + [Part("R", v, FIVE, 2, location="RS", line=40 + k)
                        for k, v in enumerate([100e3, 220e3, 470e3])]
    result = trim(parts, osc, (300.0, 360.0), top=4)
    assert result.candidates, result.notes
    for c in result.candidates:
        assert list(c.values) == ["R", "RS", "P", "C"]
        # CD4060B/CD4069UB data sheet RC-oscillator note (from memory): RS 2 to 10 × R, here
        # against the largest total (fixed R and the whole pot).
        total = c.values["R"] + c.values["P"]
        assert 2.0 * total <= c.values["RS"] <= 10.0 * total
        check_every_corner(osc, c, (300.0, 360.0))


def test_divider_trim_picks_a_pinned_stage() -> None:
    # A 2-minute band (0.0080 … 0.0087 Hz) from film capacitors: the search's stages.
    osc = make_oscillator("divider", "CD4060B", 9.0)
    parts = drawer() + [Part("R", v, FIVE, 2, location="RS", line=40 + k)
                        for k, v in enumerate([100e3, 220e3, 470e3, 1e6])]
    band = (0.0080, 0.0087)
    result = trim(parts, osc, band, top=3)
    assert result.candidates, result.notes
    # Stages without a design say nothing that denies the designs listed.
    assert not any(n.startswith("no pot in the drawer") for n in result.notes), result.notes
    for c in result.candidates:
        # CD4060B pin table (from memory): Q4–Q10 and Q12–Q14 pinned out, no Q11.
        assert c.divide_by in [2 ** n for n in (4, 5, 6, 7, 8, 9, 10, 12, 13, 14)]
        assert c.to_json()["tap"] == f"Q{int(math.log2(c.divide_by))}"
        stage = osc.__class__(**{**osc.__dict__, "divide_by": c.divide_by})
        check_every_corner(stage, c, band)
