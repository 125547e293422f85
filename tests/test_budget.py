"""Gradients, rates, classes and hotspots (one-line continuity, CEM III-2)."""

import numpy as np
import pytest

from shoreline.budget import alongshore_gradient, classify, find_hotspots, shoreline_change_rate


def test_gradient_exact_for_quadratic_inside_open_part():
    # Central differences are exact for a quadratic (common practice, Taylor series).
    x = np.arange(11) * 50.0
    q = 3.0 * x**2 + 2.0 * x
    g = alongshore_gradient(q, np.zeros(11, int), np.full(11, 50.0), np.zeros(11, bool))
    np.testing.assert_allclose(g[1:-1], 6.0 * x[1:-1] + 2.0, rtol=1e-12)
    # one-sided at the ends: first-order differences
    assert g[0] == pytest.approx((q[1] - q[0]) / 50.0)
    assert g[-1] == pytest.approx((q[-1] - q[-2]) / 50.0)


def test_gradient_periodic_and_not_across_parts():
    n = 36
    theta = np.arange(n) * 2 * np.pi / n
    q = np.sin(theta)
    ds = 10.0
    part = np.r_[np.zeros(n, int), np.ones(3, int)]
    qq = np.r_[q, [100.0, 0.0, -100.0]]
    closed = np.r_[np.ones(n, bool), np.zeros(3, bool)]
    spacing = np.r_[np.full(n, ds), np.full(3, 5.0)]
    g = alongshore_gradient(qq, part, spacing, closed)
    # periodic central difference of sin on a ring: exact value sin(h)/h * cos (trigonometry)
    h = 2 * np.pi / n
    np.testing.assert_allclose(g[:n], np.cos(theta) * np.sin(h) / (ds * 1.0), atol=1e-12)
    np.testing.assert_allclose(g[n:], [-20.0, -20.0, -20.0])


def test_rate_sign_and_scale():
    # CEM III-2 continuity: dy/dt = -(1/(DB+DC)) dQ/dx; growing transport erodes.
    assert shoreline_change_rate(np.array(20.0), 8.0, 2.0) == pytest.approx(-2.0)
    assert shoreline_change_rate(np.array(-20.0), 8.0, 2.0) == pytest.approx(2.0)


def test_classes_and_hotspot_runs():
    k = classify(np.array([-0.6, -0.4, 0.6]), np.zeros(3, bool), 0.5)
    assert k.tolist() == ["erosion", "stable", "accretion"]
    klass = np.array(["erosion"] * 2 + ["stable"] * 3 + ["erosion"] * 4 + ["accretion"] * 3)
    rate = np.where(klass == "erosion", -1.0, np.where(klass == "accretion", 1.0, 0.0))
    n = klass.size
    spots = find_hotspots(
        klass,
        rate,
        np.arange(n) * 100.0,
        np.zeros(n, int),
        np.full(n, 100.0),
        np.zeros(n, bool),
        10.0,
        300.0,
    )
    # runs at open ends are clipped at the end transect: the first erosion run is 150 m and
    # the accretion run 250 m, both shorter than 300 m, so only the middle run is a hotspot
    assert [(h.klass, h.length_m) for h in spots] == [("erosion", 400.0)]


def test_hotspot_wraps_on_closed_ring():
    klass = np.array(["erosion"] * 2 + ["stable"] * 6 + ["erosion"] * 2)
    rate = np.where(klass == "erosion", -2.0, 0.0)
    n = klass.size
    spots = find_hotspots(
        klass,
        rate,
        np.arange(n) * 100.0,
        np.zeros(n, int),
        np.full(n, 100.0),
        np.ones(n, bool),
        10.0,
        300.0,
    )
    assert len(spots) == 1
    h = spots[0]
    assert h.length_m == 400.0
    assert h.start_chainage_m == pytest.approx(750.0)
    assert h.end_chainage_m == pytest.approx(150.0)
    assert h.volume_m3_per_yr == pytest.approx(-2.0 * 100.0 * 10.0 * 4)
