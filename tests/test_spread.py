"""Worst case and Monte Carlo spread."""

from __future__ import annotations

import numpy as np
import pytest

from core.model.leakage import node_current_corners
from core.model.spread import draw_thresholds, monte_carlo, worst_case_hz
from core.model.timing import default_tolerances, frequency, make_oscillator, predict
from core.parts.tolerances import DEFAULT_TOLERANCE, DIELECTRIC_TOLERANCE
from core.units import Tolerance

VALUES = {"R": 21.7e3, "C": 1e-6}


def _dense_frequencies(osc, values, ranges, n=41):
    """Brute force: a dense grid over the feasible thresholds and the part ranges."""
    d = osc.device
    a, b = np.meshgrid(np.linspace(d.vt_plus[0], d.vt_plus[2], n),
                       np.linspace(d.vt_minus[0], d.vt_minus[2], n))
    keep = ((a - b) >= d.hysteresis_min_v - 1e-12) & ((a - b) <= d.hysteresis_max_v + 1e-12)
    # ... plus points exactly on the minimum-hysteresis edge, where the fastest builds are.
    edge_b = np.linspace(d.vt_minus[0], d.vt_minus[2], 20 * n)
    edge_a = edge_b + d.hysteresis_min_v
    on_edge = (edge_a >= d.vt_plus[0]) & (edge_a <= d.vt_plus[2])
    a = np.concatenate([a[keep], edge_a[on_edge]])
    b = np.concatenate([b[keep], edge_b[on_edge]])
    # ... and the node currents over their whole ranges (leakage, 3 x 3 levels).
    i_high, i_low = node_current_corners(d)
    currents = np.meshgrid(np.linspace(i_high.min(), i_high.max(), 3),
                           np.linspace(i_low.min(), i_low.max(), 3))
    grids = np.meshgrid(*[np.linspace(*ranges[k], 5) for k in values], *currents,
                        indexing="ij")
    vals = {k: g.reshape(-1, 1) for k, g in zip(values, grids, strict=False)}
    i_h, i_l = (g.reshape(-1, 1) for g in grids[len(values):])
    return frequency(osc, vals, False, a[None, :], b[None, :], i_h, i_l).ravel()


@pytest.mark.parametrize(("family", "supply"), [("74HC14", 5.0), ("CD40106B", 10.0),
                                                 ("74HCT14", 5.0), ("74LVC14A", 3.3)])
def test_worst_case_bounds_a_dense_sampling_and_is_reached(family, supply):
    osc = make_oscillator("schmitt", family, supply)
    ranges = {"R": (0.95 * 21.7e3, 1.05 * 21.7e3), "C": (0.9e-6, 1.2e-6)}  # asymmetric C
    lo, hi = worst_case_hz(osc, VALUES, ranges)
    dense = _dense_frequencies(osc, VALUES, ranges)
    assert np.isfinite(dense).all()
    assert lo <= dense.min() * (1 + 1e-9) and dense.max() <= hi * (1 + 1e-9)
    # The corners are real builds, so the grid gets close to both ends.
    assert dense.min() == pytest.approx(lo, rel=5e-3)
    assert dense.max() == pytest.approx(hi, rel=5e-3)


def test_asymmetric_tolerance_moves_the_band_down():
    # IEC 60062 letter Z: +80/−20 % (Y5V/Z5U ceramics): the capacitor may be much
    # larger than marked, so the band reaches far below nominal.
    osc = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.8, vt_minus=1.9).idealised()
    tight = Tolerance(0.0, 0.0)
    pred = predict(osc, VALUES, {"R": tight, "C": Tolerance(0.20, 0.80)})
    lo, hi = pred.worst_case_hz
    assert lo == pytest.approx(pred.frequency_hz / 1.8, rel=1e-9)
    assert hi == pytest.approx(pred.frequency_hz / 0.8, rel=1e-9)


def test_worst_case_is_vectorised_over_candidates():
    osc = make_oscillator("555", "NE555", 9.0)
    ra = np.array([1e3, 10e3, 100e3])
    rb = np.array([2.2e3, 22e3, 220e3])
    c = np.array([1e-6, 100e-9, 10e-9])
    ranges = {"RA": (ra * 0.99, ra * 1.01), "RB": (rb * 0.99, rb * 1.01),
              "C": (c * 0.95, c * 1.05)}
    lo, hi = worst_case_hz(osc, {"RA": ra, "RB": rb, "C": c}, ranges)
    for k in range(3):
        one = {key: v[k] for key, v in (("RA", ra), ("RB", rb), ("C", c))}
        lo_k, hi_k = worst_case_hz(osc, one, {key: (r[0][k], r[1][k])
                                              for key, r in ranges.items()})
        assert (lo[k], hi[k]) == pytest.approx((lo_k, hi_k), rel=1e-12)


def test_default_tolerances_come_from_the_drawer():
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    tol = default_tolerances(osc, "y5v")
    assert tol["R"] is DEFAULT_TOLERANCE["R"]
    assert tol["C"] is DIELECTRIC_TOLERANCE["y5v"]
    assert default_tolerances(osc)["C"] is DIELECTRIC_TOLERANCE[""]


def test_monte_carlo_is_seeded_and_inside_the_worst_case():
    osc = make_oscillator("schmitt", "74HC14", 5.0)
    tol = {"R": Tolerance(0.05, 0.05), "C": Tolerance(0.10, 0.10)}
    mc = monte_carlo(osc, VALUES, tol, n=10_000, seed=7)
    again = monte_carlo(osc, VALUES, tol, n=10_000, seed=7)
    other = monte_carlo(osc, VALUES, tol, n=10_000, seed=8)
    np.testing.assert_array_equal(mc.frequencies_hz, again.frequencies_hz)
    assert not np.array_equal(mc.frequencies_hz, other.frequencies_hz)
    lo, hi = predict(osc, VALUES, tol).worst_case_hz
    assert mc.frequencies_hz.size == 10_000
    assert mc.frequencies_hz.min() >= lo and mc.frequencies_hz.max() <= hi
    assert mc.fraction_within(lo, hi) == 1.0
    p5, p50, p95 = (mc.percentile(p) for p in (5, 50, 95))
    assert p5 < p50 < p95
    i_lo, i_hi = mc.interval_95
    assert lo < i_lo < p50 < i_hi < hi
    assert mc.fraction_within(i_lo, i_hi) == pytest.approx(0.95, abs=0.002)
    # Bench fact (issue 3, common practice): 63.3 Hz lies well inside the spread.
    assert i_lo < 63.3 < i_hi


def test_monte_carlo_thresholds_respect_the_hysteresis():
    osc = make_oscillator("schmitt", "CD40106B", 15.0)
    a, b = draw_thresholds(osc, 20_000, np.random.default_rng(1))
    d = osc.device
    assert (a - b >= d.hysteresis_min_v - 1e-12).all()
    hc = make_oscillator("schmitt", "74HC14", 5.0)
    a2, b2 = draw_thresholds(hc, 20_000, np.random.default_rng(2))
    # NXP 74HC1G14: hysteresis window (VH min … max) bounds every draw.
    assert (a2 - b2 <= hc.device.hysteresis_max_v + 1e-12).all()
    assert (a2 - b2 >= hc.device.hysteresis_min_v - 1e-12).all()
    assert (a >= d.vt_plus[0]).all() and (a <= d.vt_plus[2]).all()
    fixed = make_oscillator("schmitt", "74HC14", 5.0, vt_plus=2.8, vt_minus=1.9)
    a, b = draw_thresholds(fixed, 10, np.random.default_rng(1))
    assert (a == 2.8).all() and (b == 1.9).all()


def test_monte_carlo_counts_builds_that_do_not_start():
    # DM74LS14: with R near the input-current limit some builds stop (0 Hz).
    osc = make_oscillator("schmitt", "74LS14", 5.0)
    mc = monte_carlo(osc, {"R": 2.4e3, "C": 100e-9}, {"R": Tolerance(0.05, 0.05)}, n=5000)
    assert 0.0 < mc.stopped_fraction < 1.0
    assert mc.percentile(0) == 0.0
