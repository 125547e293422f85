"""Gradients, rates, classes and hotspots (one-line continuity, CEM III-2)."""

import numpy as np
import pytest

from shoreline.budget import (
    alongshore_gradient,
    classify,
    face_budget,
    find_hotspots,
    shoreline_change_rate,
)


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


# ---------------------------------------------------------------------------------------------
# Face fluxes at a consistent scale (budget.face_budget)
# ---------------------------------------------------------------------------------------------


def _coast(n=101, dx=100.0):
    return np.zeros(n, int), np.full(n, dx), np.zeros(n, bool)


def test_face_budget_conserves_sand_in_every_segment():
    # One-line continuity (CEM 2002, Part III-2): the volumes of the cells add up to the
    # difference of the fluxes at the segment's ends, exactly, whatever the smoothing.
    rng = np.random.default_rng(3)
    part, dx, closed = _coast()
    q = rng.normal(1e5, 3e4, part.size)
    excluded = np.zeros(part.size, bool)
    excluded[40:45] = True
    fb = face_budget(np.maximum(q, 0), np.minimum(q, 0), part, dx, closed, 300.0, excluded)
    width = np.full(part.size, 100.0)
    width[[0, 39, 45, 100]] = 50.0  # the end transects of each segment stand for half a cell
    for seg in (slice(0, 40), slice(45, 101)):
        qs = fb.q_smooth[seg]
        assert np.sum((fb.dqdx_m2_per_yr * width)[seg]) == pytest.approx(qs[-1] - qs[0], rel=1e-9)
    assert np.isnan(fb.dqdx_m2_per_yr[excluded]).all()


def test_excluded_transects_do_not_reach_their_neighbours():
    part, dx, closed = _coast()
    q = np.linspace(1e5, 2e5, part.size)
    excluded = np.zeros(part.size, bool)
    excluded[50] = True
    a = face_budget(q, 0 * q, part, dx, closed, 300.0, excluded).dqdx_m2_per_yr
    q2 = q.copy()
    q2[50] = 9e9  # an estuary transect with an absurd transport
    b = face_budget(q2, 0 * q2, part, dx, closed, 300.0, excluded).dqdx_m2_per_yr
    np.testing.assert_array_equal(a[~excluded], b[~excluded])


def test_one_transect_cannot_make_a_hotspot_pair():
    # A spike dQ at one transect, smoothed at sigma, becomes a Gaussian of area dQ dx; its
    # gradient is at most dQ dx exp(-1/2) / (sqrt(2 pi) sigma^2) (analytic derivative of a
    # Gaussian). Unsmoothed, the spike's central difference is dQ / (2 dx): 1/sigma^2 smaller.
    part, dx, closed = _coast()
    q = np.full(part.size, 1e5)
    q[50] += 1e5
    sigma = 500.0
    g = face_budget(q, 0 * q, part, dx, closed, sigma).dqdx_m2_per_yr
    bound = 1e5 * 100.0 * np.exp(-0.5) / (np.sqrt(2 * np.pi) * sigma**2)
    assert np.max(np.abs(g)) <= 1.05 * bound
    assert np.max(np.abs(g)) < 0.1 * 1e5 / (2 * 100.0)


def test_hard_reach_cannot_erode_and_starves_downdrift():
    # Transport growing along the shore erodes everywhere (dQ/dx > 0). A non-erodible reach
    # passes on only what arrives (Hanson and Kraus 1986, from memory): it does not erode, and
    # the shore downdrift of it, fed less, erodes more.
    part, dx, closed = _coast()
    q = np.linspace(1e5, 2e5, part.size)
    hard = np.zeros(part.size, bool)
    hard[30:50] = True
    free = face_budget(q, 0 * q, part, dx, closed, 0.0).dqdx_m2_per_yr
    fixed = face_budget(q, 0 * q, part, dx, closed, 0.0, hard=hard).dqdx_m2_per_yr
    assert np.all(fixed[hard] <= 1e-9)
    assert fixed[50] > free[50]
    np.testing.assert_allclose(fixed[:29], free[:29])
    width = np.full(part.size, 100.0)
    width[[0, -1]] = 50.0
    assert np.sum(fixed * width) == pytest.approx(np.sum(free * width), rel=1e-12)


def test_face_budget_without_smoothing_is_the_central_difference():
    q = np.array([0.0, 1.0, 4.0, 9.0, 16.0])
    part, dx, closed = np.zeros(5, int), np.ones(5), np.zeros(5, bool)
    fb = face_budget(q, 0 * q, part, dx, closed, 0.0)
    np.testing.assert_allclose(fb.dqdx_m2_per_yr, alongshore_gradient(q, part, dx, closed))


def test_face_budget_of_many_fields_is_each_field_alone():
    # Ensemble members evaluated at once (shape (n, m)) against the same budget run on each
    # member by itself: an independent reference computation (the ordinary 1-D path), on a
    # coast with an excluded reach, a hard reach, a ring and two structures (one bypassing half).
    rng = np.random.default_rng(11)
    part = np.r_[np.zeros(60, int), np.ones(40, int)]
    dx = np.r_[np.full(60, 100.0), np.full(40, 50.0)]
    closed = np.r_[np.zeros(60, bool), np.ones(40, bool)]
    excluded = np.zeros(100, bool)
    excluded[10:13] = True
    hard = np.zeros(100, bool)
    hard[30:38] = True
    hard[70:75] = True
    q = rng.normal(1e5, 8e4, (100, 7))
    pos, neg = np.maximum(q, 0) * 1.3, np.minimum(q, 0) * 0.7
    kwargs = {
        "sigma_m": 250.0,
        "excluded": excluded,
        "hard": hard,
        "structure_face": np.array([20, 80]),
        "structure_bypass": np.array([0.0, 0.5]),
    }
    many = face_budget(pos, neg, part, dx, closed, **kwargs)
    assert many.dqdx_m2_per_yr.shape == (100, 7)
    for j in range(7):
        one = face_budget(pos[:, j], neg[:, j], part, dx, closed, **kwargs)
        np.testing.assert_allclose(many.dqdx_m2_per_yr[:, j], one.dqdx_m2_per_yr, rtol=1e-12)
        np.testing.assert_allclose(many.q_smooth[:, j], one.q_smooth, rtol=1e-12)
        np.testing.assert_allclose(many.trapped[:, j], one.trapped, rtol=1e-12, atol=1e-6)
