"""Tests of shoreline.wind: deep-water wind-wave growth.

Sources (see /work/shared/REFERENCES.md):
- CEM EM 1110-2-1100 Part II-2: Eq. II-2-36 (fetch-limited) and the drag coefficient from
  memory; Eqs. II-2-37/38 (fully developed) and the duration-limited equivalent fetch read in
  the source.
- The SPM-style dimensionless relations and the worked example U = 15 m/s, F = 200 km ->
  Hm0 ~ 3.4 m, Tp ~ 9 s: a published textbook exercise, read in the source.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from shoreline.wind import LIMITS, wind_waves

G = 9.81  # common practice


def u_star(u10):
    # CEM II-2 (from memory): u* = sqrt(CD) U10, CD = 0.001 (1.1 + 0.035 U10)
    return math.sqrt(0.001 * (1.1 + 0.035 * u10)) * u10


def dimensionless(u10, fetch_m, hm0_m, tp_s):
    us = u_star(u10)
    return G * fetch_m / us**2, G * float(hm0_m) / us**2, G * float(tp_s) / us


# dimensionless fetch at which each of height and period reaches its fully developed value
X_FULL_H = (2.115e2 / 4.13e-2) ** 2  # 2.62e7
X_FULL_T = (2.398e2 / 0.651) ** 3  # 5.0e7


# --- CEM: each regime reproduces its equation ---------------------------------------------------


@settings(deadline=None, max_examples=40)
@given(u10=st.floats(3.0, 40.0), x_star=st.floats(10.0, 0.99 * X_FULL_H))
def test_cem_fetch_limited_is_eq_ii_2_36(u10, x_star):
    # CEM Eq. II-2-36 (from memory): g Hm0/u*^2 = 4.13e-2 (gX/u*^2)^(1/2),
    # g Tp/u* = 0.651 (gX/u*^2)^(1/3), below the fully developed fetch
    fetch = x_star * u_star(u10) ** 2 / G
    hm0, tp, limit = wind_waves(u10, fetch)
    _, h_star, t_star = dimensionless(u10, fetch, hm0, tp)
    assert h_star == pytest.approx(4.13e-2 * x_star**0.5, rel=1e-9)
    assert t_star == pytest.approx(0.651 * x_star ** (1 / 3), rel=1e-9)
    assert str(limit) == "fetch"


@pytest.mark.parametrize("u10", [5.0, 15.0, 30.0])
def test_cem_fully_developed_is_eqs_ii_2_37_38(u10):
    # CEM Eqs. II-2-37, II-2-38 (read in the source): g Hm0/u*^2 = 2.115e2, g Tp/u* = 2.398e2;
    # the coefficients are printed to 4 figures, the code uses them exactly
    fetch = 2.0 * X_FULL_T * u_star(u10) ** 2 / G
    hm0, tp, limit = wind_waves(u10, fetch)
    _, h_star, t_star = dimensionless(u10, fetch, hm0, tp)
    assert h_star == pytest.approx(2.115e2, rel=1e-12)
    assert t_star == pytest.approx(2.398e2, rel=1e-12)
    assert str(limit) == "fully-developed"


def test_cem_height_transition_point():
    # limit case: the fetch-limited height meets the fully developed cap at
    # gX/u*^2 = (2.115e2 / 4.13e-2)^2 = 2.62e7 [derived: arithmetic from Eqs. II-2-36, II-2-37];
    # the height is continuous there and the label changes from "fetch" to "fully-developed"
    u10 = 20.0
    fetch_full = X_FULL_H * u_star(u10) ** 2 / G
    hm0, _, limit = wind_waves(u10, fetch_full * np.array([0.999, 1.001, 1.5]))
    assert list(limit) == ["fetch", "fully-developed", "fully-developed"]
    cap = 2.115e2 * u_star(u10) ** 2 / G
    assert hm0[0] == pytest.approx(cap * math.sqrt(0.999), rel=1e-9)
    assert hm0[1] == pytest.approx(cap, rel=1e-12)
    assert hm0[2] == pytest.approx(cap, rel=1e-12)


def test_cem_period_caps_later_than_height():
    # [derived: arithmetic from Eqs. II-2-36, II-2-38] the period reaches 2.398e2 only at
    # gX/u*^2 = (2.398e2 / 0.651)^3 = 5.0e7: between 2.62e7 and 5.0e7 it still grows
    u10 = 20.0
    us2 = u_star(u10) ** 2
    x = np.array([1.1 * X_FULL_H, 0.9 * X_FULL_T, 1.1 * X_FULL_T, 2 * X_FULL_T])
    _, tp, _ = wind_waves(u10, x * us2 / G)
    t_star = G * tp / u_star(u10)
    np.testing.assert_allclose(t_star[:2], 0.651 * x[:2] ** (1 / 3), rtol=1e-9)
    np.testing.assert_allclose(t_star[2:], 2.398e2, rtol=1e-12)
    assert X_FULL_H == pytest.approx(2.62e7, rel=0.001)
    assert X_FULL_T == pytest.approx(5.0e7, rel=0.001)


@settings(deadline=None, max_examples=40)
@given(u10=st.floats(3.0, 40.0), t_star=st.floats(10.0, 1e5))
def test_cem_duration_limited_uses_equivalent_fetch(u10, t_star):
    # CEM II-2 (read in the source): a wind of duration t raises the waves of the fetch
    # gX/u*^2 = 5.23e-3 (g t/u*)^(3/2); with a much longer real fetch the duration governs
    us = u_star(u10)
    duration = t_star * us / G
    x_equiv = 5.23e-3 * t_star**1.5
    fetch = 10.0 * x_equiv * us**2 / G
    hm0, tp, limit = wind_waves(u10, fetch, duration)
    h_star, t_star_out = G * hm0 / us**2, G * tp / us
    x_used = min(x_equiv, X_FULL_H)
    assert h_star == pytest.approx(4.13e-2 * x_used**0.5, rel=1e-9)
    expected_limit = "duration" if x_equiv < X_FULL_H else "fully-developed"
    assert str(limit) == expected_limit
    assert t_star_out == pytest.approx(min(0.651 * x_equiv ** (1 / 3), 2.398e2), rel=1e-9)


def test_cem_fetch_duration_transition():
    # the duration at which the equivalent fetch equals the real fetch, found by brentq on the
    # raw relation gX/u*^2 = 5.23e-3 (g t/u*)^(3/2) (CEM II-2, read in the source): a shorter
    # wind is duration-limited, a longer one fetch-limited, and the waves agree at the switch
    u10, fetch = 15.0, 50e3
    us = u_star(u10)
    t_switch = brentq(lambda t: 5.23e-3 * (G * t / us) ** 1.5 - G * fetch / us**2, 1.0, 1e7)
    hm0, tp, limit = wind_waves(u10, fetch, t_switch * np.array([0.99, 1.01]))
    assert list(limit) == ["duration", "fetch"]
    hm0_fetch, tp_fetch, _ = wind_waves(u10, fetch)
    assert hm0[1] == hm0_fetch and tp[1] == tp_fetch
    assert hm0[0] == pytest.approx(float(hm0_fetch) * 0.99**0.75, rel=1e-6)  # X_t ~ t^1.5


# --- the SPM-style form and the textbook exercise -----------------------------------------------


def test_spm_textbook_example():
    # published textbook exercise (read in the source): U = 15 m/s, F = 200 km ->
    # Hm0 ~ 3.4 m (2 figures: +-0.05 m), Tp ~ 9 s (1 figure: +-0.5 s)
    hm0, tp, limit = wind_waves(15.0, 200e3, form="spm")
    assert float(hm0) == pytest.approx(3.4, abs=0.05)
    assert float(tp) == pytest.approx(9.0, abs=0.5)
    assert str(limit) == "fetch"


def test_spm_relations_and_cap():
    # SPM-style form (textbook, read in the source): H* = 0.0016 F*^(1/2), T* = 0.286 F*^(1/3);
    # fully developed H* = 0.243, T* = 8.13
    u10 = 12.0
    f_star = np.array([1e3, 1e4, 1e5])
    hm0, tp, limit = wind_waves(u10, f_star * u10**2 / G, form="spm")
    h_star, t_star = G * hm0 / u10**2, G * tp / u10
    np.testing.assert_allclose(h_star[:2], 0.0016 * f_star[:2] ** 0.5, rtol=1e-12)
    np.testing.assert_allclose(t_star[:2], 0.286 * f_star[:2] ** (1 / 3), rtol=1e-12)
    assert h_star[2] == pytest.approx(0.243, rel=1e-12)
    assert t_star[2] == pytest.approx(8.13, rel=1e-12)
    assert list(limit) == ["fetch", "fetch", "fully-developed"]


def test_cem_and_spm_compared_for_the_textbook_example():
    # the two forms for U = 15 m/s, F = 200 km: heights within 10 % (CEM 3.57 m vs SPM 3.43 m,
    # 4 % apart), but the CEM period (7.0 s) is about 22 % shorter than the SPM one (9.0 s):
    # the CEM fetch-limited period coefficient is lower. Bounds are the comparison's, not a source.
    h_cem, t_cem, _ = wind_waves(15.0, 200e3, form="cem")
    h_spm, t_spm, _ = wind_waves(15.0, 200e3, form="spm")
    assert float(h_cem) == pytest.approx(float(h_spm), rel=0.10)
    assert 0.7 < t_cem / t_spm < 0.85


# --- edges, options, shapes --------------------------------------------------------------------


@pytest.mark.parametrize("form", ["cem", "spm"])
def test_no_fetch_no_waves(form):
    # wind off the land: zero or negative fetch raises no waves (Hm0 = 0, Tp = 0)
    hm0, tp, limit = wind_waves(15.0, np.array([0.0, -100.0]), form=form)
    np.testing.assert_array_equal(hm0, 0.0)
    np.testing.assert_array_equal(tp, 0.0)
    assert list(limit) == ["fetch", "fetch"]


def test_calm_and_zero_duration_give_no_waves():
    # U = 0 is the limit of vanishing growth (every cap is zero); t = 0 gives zero equivalent fetch
    hm0, tp, limit = wind_waves(
        np.array([0.0, 0.0, 15.0]), np.array([100e3, np.inf, 100e3]), np.array([np.inf, 60, 0.0])
    )
    np.testing.assert_array_equal(hm0, 0.0)
    np.testing.assert_array_equal(tp, 0.0)
    assert list(limit) == ["fully-developed", "fully-developed", "duration"]


@pytest.mark.parametrize("form", ["cem", "spm"])
def test_unlimited_fetch_is_fully_developed(form):
    hm0, tp, limit = wind_waves(np.array([0.0, 15.0]), np.inf, form=form)
    assert hm0[0] == 0.0 and hm0[1] > 0 and np.isfinite(tp).all()
    assert list(limit) == ["fully-developed", "fully-developed"]


def test_nan_in_nan_out():
    hm0, tp, limit = wind_waves(
        np.array([np.nan, 10.0, 10.0, -5.0, 10.0]),
        np.array([1e4, np.nan, 1e4, 1e4, 1e4]),
        np.array([np.inf, np.inf, np.nan, np.inf, -1.0]),
    )
    assert np.isnan(hm0).all() and np.isnan(tp).all()
    assert list(limit) == ["undefined"] * 5


def test_limits_are_the_documented_labels():
    hm0, tp, limit = wind_waves(
        np.array([[10.0], [25.0]]), np.array([1e3, 1e5, 1e8]), np.array([3600.0, 7200.0, np.inf])
    )
    assert hm0.shape == tp.shape == limit.shape == (2, 3)
    assert set(limit.ravel()) <= set(LIMITS)


def test_spm_refuses_finite_duration_and_bad_form():
    with pytest.raises(ValueError, match="form='cem'"):
        wind_waves(15.0, 200e3, 3600.0, form="spm")
    with pytest.raises(ValueError, match="'cem', 'spm'"):
        wind_waves(15.0, 200e3, form="jonswap")
