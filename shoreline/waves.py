"""Linear wave theory: dispersion, celerity, shoaling and refraction to breaking, surf similarity.

Every function is vectorised like a numpy ufunc: scalars or arrays that broadcast go in, arrays of
the broadcast shape come out (a numpy scalar for all-scalar input). Invalid or missing input
(NaN, a non-positive period or depth, waves from land) gives NaN, never an exception.

Conventions (see ``docs/methods.md``): SI units, the unit in every argument name; ``angle_deg``
is the angle between the wave ray and the seaward normal of straight, parallel depth contours,
signed, and keeps its sign through refraction.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

__all__ = [
    "BREAKER_INDEX",
    "BREAKING_METHODS",
    "breaking_on_angle_nodes",
    "G_M_S2",
    "breaker_type",
    "breaking",
    "celerity",
    "deep_water_wavelength",
    "group_celerity",
    "surf_similarity",
    "wavenumber",
]

G_M_S2 = 9.81
"""Acceleration due to gravity [m/s2] (common practice)."""

BREAKER_INDEX = 0.78
"""Default breaker index gamma = Hb/db [-]: McCowan's solitary-wave limit (CEM II-1, p. II-1-49)."""

BREAKING_METHODS = ("exact", "explicit")
"""Valid values of ``breaking(method=...)``."""

# Hunt (1979) Pade coefficients d1..d6 (as reproduced in Dean & Dalrymple 1991).
_HUNT_D = (0.6666666666, 0.3555555555, 0.1608465608, 0.0632098765, 0.0217540484, 0.0065407983)
# Larson, Hoan & Hanson (2010) polynomial in xi for lambda / lambda_a.
_LARSON_P = (0.1649, 0.5948, -1.6787, 2.8573)
# Beyond this value of y = omega^2 h / g, tanh(kh) == 1 in double precision and kh = y exactly.
_DEEP_Y = 40.0
# Newton steps after the Hunt start: 0.19 % -> 3e-7 -> 1e-14 (worst case over y in 1e-6..40).
_DISPERSION_STEPS = 2
# Safeguarded Halley steps on ln(kh) at breaking, from the Larson et al. start (see breaking()).
_BREAKING_STEPS = 4
# Elements per block in breaking(): keeps the temporaries in the CPU cache.
_CHUNK = 16384
# Battjes (1974) surf-similarity thresholds (from memory).
_XI_SPILLING_MAX = 0.5
_XI_PLUNGING_MAX = 3.3


def _out(a: np.ndarray) -> np.ndarray:
    """Return a 0-d array as a numpy scalar, any other array unchanged (ufunc-like output)."""
    return a[()] if a.ndim == 0 else a


def _hunt_kh(y: np.ndarray) -> np.ndarray:
    """Hunt (1979) explicit approximation of kh from y = omega^2 h / g (about 0.2 % at worst)."""
    d1, d2, d3, d4, d5, d6 = _HUNT_D
    p = 1.0 + y * (d1 + y * (d2 + y * (d3 + y * (d4 + y * (d5 + y * d6)))))
    return np.sqrt(y * (y + 1.0 / p))


def _kh_from_y(y: np.ndarray) -> np.ndarray:
    """Solve kh tanh(kh) = y for kh >= 0 (Hunt start, fixed Newton steps); NaN stays NaN."""
    yc = np.minimum(y, _DEEP_Y)
    x = _hunt_kh(yc)
    for _ in range(_DISPERSION_STEPS):
        t = np.tanh(x)
        x = x - (x * t - yc) / (t + x * (1.0 - t * t))
    return np.where(y > _DEEP_Y, y, x)


def _dispersion(period_s: ArrayLike, depth_m: ArrayLike):
    """Return (omega, kh, tanh(kh), kh*(1 - tanh^2 kh), deep) on the broadcast shape.

    Deep water (``depth_m`` = +inf) gives tanh = 1, the last term 0 and kh = inf. Invalid input
    (period or depth <= 0 or NaN) gives NaN in every float output.
    """
    period = np.asarray(period_s, dtype=float)
    depth = np.asarray(depth_m, dtype=float)
    period, depth = np.broadcast_arrays(period, depth)
    valid = (period > 0) & (depth > 0)
    deep = valid & np.isposinf(depth)
    omega = np.where(period > 0, 2.0 * np.pi / period, np.nan)
    y = np.where(valid, omega * omega * depth / G_M_S2, np.nan)
    kh = _kh_from_y(y)
    t = np.tanh(kh)
    a = np.where(deep, 0.0, kh * (1.0 - t * t))
    return omega, kh, t, a, deep


def deep_water_wavelength(period_s: ArrayLike) -> np.ndarray:
    """Deep-water wavelength of linear waves, L0 = g T^2 / (2 pi).

    Parameters
    ----------
    period_s : array_like
        Wave period T [s].

    Returns
    -------
    numpy.ndarray
        L0 [m]; NaN where the period is not positive.

    Notes
    -----
    The deep-water limit of the linear dispersion relation (CEM Part II-1).

    References
    ----------
    US Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Part II-1.

    Examples
    --------
    >>> round(float(deep_water_wavelength(10.0)), 1)
    156.1
    """
    period = np.asarray(period_s, dtype=float)
    with np.errstate(all="ignore"):
        length = np.where(period > 0, G_M_S2 * period * period / (2.0 * np.pi), np.nan)
    return _out(length)


def wavenumber(period_s: ArrayLike, depth_m: ArrayLike) -> np.ndarray:
    """Wavenumber of linear waves from the dispersion relation omega^2 = g k tanh(k h).

    Parameters
    ----------
    period_s : array_like
        Wave period T [s].
    depth_m : array_like
        Still-water depth h [m]; ``inf`` means deep water.

    Returns
    -------
    numpy.ndarray
        k [rad/m] on the broadcast shape; ``omega^2 / g`` for infinite depth; NaN where the
        period or the depth is not positive or is NaN.

    Notes
    -----
    With omega = 2 pi / T and y = omega^2 h / g, ``kh`` solves ``kh tanh(kh) = y``. The start
    is Hunt's (1979) Pade approximation

        (kh)^2 = y^2 + y / (1 + d1 y + d2 y^2 + ... + d6 y^6),

    (about 0.2 % at worst), followed by two Newton steps on ``kh tanh(kh) - y``, which bring the
    relative error below 1e-13 over the whole range (checked against ``scipy.optimize.brentq``
    in the tests). For y > 40, tanh(kh) is 1 in double precision and kh = y.

    References
    ----------
    Hunt, J.N. (1979). Direct solution of wave dispersion equation. J. Waterway Port Coastal
    Ocean Div. 105(4): 457-459 (coefficients as reproduced in Dean, R.G. & Dalrymple, R.A.
    (1991), Water Wave Mechanics for Engineers and Scientists, World Scientific).
    US Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Part II-1.

    Examples
    --------
    CEM Example II-1-1 (T = 10 s, d = 3 m gives L = 53.2 m):

    >>> round(float(2 * np.pi / wavenumber(10.0, 3.0)), 1)
    53.2
    """
    with np.errstate(all="ignore"):
        omega, kh, _, _, deep = _dispersion(period_s, depth_m)
        depth = np.broadcast_to(np.asarray(depth_m, dtype=float), kh.shape)
        k = np.where(deep, omega * omega / G_M_S2, kh / depth)
    return _out(k)


def celerity(period_s: ArrayLike, depth_m: ArrayLike) -> np.ndarray:
    """Phase celerity of linear waves, C = omega / k = g tanh(kh) / omega.

    Parameters
    ----------
    period_s : array_like
        Wave period T [s].
    depth_m : array_like
        Still-water depth h [m]; ``inf`` means deep water.

    Returns
    -------
    numpy.ndarray
        C [m/s]; the deep-water value C0 = g T / (2 pi) for infinite depth; NaN for invalid
        input.

    Notes
    -----
    From omega^2 = g k tanh(kh): C = omega / k = g tanh(kh) / omega (CEM Part II-1). Limits:
    C -> g T / (2 pi) in deep water and C -> sqrt(g h) in shallow water.

    References
    ----------
    US Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Part II-1.

    Examples
    --------
    CEM Example II-1-1 (T = 10 s, d = 3 m gives C = 5.32 m/s):

    >>> round(float(celerity(10.0, 3.0)), 2)
    5.32
    """
    with np.errstate(all="ignore"):
        omega, _, t, _, deep = _dispersion(period_s, depth_m)
        c = G_M_S2 * np.where(deep, 1.0, t) / omega
    return _out(c)


def group_celerity(period_s: ArrayLike, depth_m: ArrayLike) -> np.ndarray:
    """Group celerity of linear waves, Cg = n C with n = (1 + 2kh / sinh 2kh) / 2.

    Parameters
    ----------
    period_s : array_like
        Wave period T [s].
    depth_m : array_like
        Still-water depth h [m]; ``inf`` means deep water.

    Returns
    -------
    numpy.ndarray
        Cg [m/s]; Cg0 = C0 / 2 for infinite depth; NaN for invalid input.

    Notes
    -----
    Evaluated in the equivalent form Cg = g (tanh kh + kh sech^2 kh) / (2 omega), which is
    d omega / dk of the dispersion relation and needs no sinh (no overflow in deep water).
    Limits: Cg / C -> 1/2 in deep water and -> 1 in shallow water.

    References
    ----------
    US Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Part II-1.
    Dean, R.G. & Dalrymple, R.A. (1991). Water Wave Mechanics for Engineers and Scientists.

    Examples
    --------
    >>> round(float(group_celerity(10.0, np.inf) / celerity(10.0, np.inf)), 3)
    0.5
    """
    with np.errstate(all="ignore"):
        omega, _, t, a, deep = _dispersion(period_s, depth_m)
        cg = G_M_S2 * (np.where(deep, 1.0, t) + a) / (2.0 * omega)
    return _out(cg)


def _larson_poly(xi: np.ndarray) -> np.ndarray:
    """Larson, Hoan & Hanson (2010) correction lambda / lambda_a as a polynomial in xi."""
    p1, p2, p3, p4 = _LARSON_P
    return 1.0 + xi * (p1 + xi * (p2 + xi * (p3 + xi * p4)))


def _breaking_block(hs, tp, ang, depth, gamma, exact, hb_out, db_out, ab_out, broken_out):
    """Carry one block of waves to breaking, writing into the output slices.

    All inputs are 1-D float arrays of one length. Work in non-dimensional form: with
    k0 = omega^2 / g, x = kh at the breaking depth and t = tanh x, the depth is d = x t / k0,
    Snell's law gives sin(theta) = S t with S = sin(theta_in) / tanh(kh_in), and conservation of
    the energy flux H^2 Cg cos(theta) with H = gamma d becomes

        G(x) = x^2 t^2 m(x) sqrt(1 - S^2 t^2) = R,   m = (t + x (1 - t^2)) / 2,
        R = (k0 H_in)^2 m_in cos(theta_in) / gamma^2,

    where m = omega Cg / g. No inner dispersion solve is needed.
    """
    valid = (
        (hs > 0)
        & np.isfinite(hs)
        & (tp > 0)
        & np.isfinite(tp)
        & (np.abs(ang) < 90.0)
        & (depth > 0)
        & (gamma > 0)
        & np.isfinite(gamma)
    )
    # Benign stand-ins where invalid, so no branch below meets NaN; restored to NaN at the end.
    hs = np.where(valid, hs, 1.0)
    tp = np.where(valid, tp, 10.0)
    ang = np.where(valid, ang, 0.0)
    depth = np.where(valid, depth, np.inf)
    gamma = np.where(valid, gamma, BREAKER_INDEX)

    omega = 2.0 * np.pi / tp
    k0 = omega * omega
    k0 /= G_M_S2
    s_in = np.sin(np.radians(ang))
    c_in = np.sqrt(1.0 - s_in * s_in)  # cos(theta_in) > 0 for |angle| < 90 deg

    # Input depth: kh_in and m_in (deep water: tanh = 1, m = 1/2, kh = inf).
    x_in = _kh_from_y(k0 * depth)
    t_in = np.tanh(x_in)
    m_in = 1.0 - t_in * t_in
    m_in *= np.minimum(x_in, _DEEP_Y)
    m_in += t_in
    m_in *= 0.5
    broken = np.isfinite(depth) & (hs >= gamma * depth)

    eta = hs * k0
    r = eta * eta
    r *= m_in
    r *= c_in
    r /= gamma * gamma
    ssq = s_in / t_in
    ssq *= ssq  # S^2

    # Larson et al. (2010): k0 hb = lambda t_in^2 = R^(2/5) P(xi), xi = R^(2/5) sin^2 / t_in^2.
    r25 = r**0.4
    xi = r25 * ssq
    y_b = r25 * _larson_poly(xi)

    if exact:
        x = np.minimum(_hunt_kh(y_b), x_in)
        ln_r = np.log(r)
        for _ in range(_BREAKING_STEPS):
            x = _halley_step(x, ssq, ln_r, x_in)
        t = np.tanh(x)
        db = x * t
        db /= k0
        sin_b = np.sqrt(ssq) * t
    else:
        db = y_b / k0
        sin_b = np.sqrt(xi * _larson_poly(xi))  # sqrt(lambda) sin(theta_in), |.| only
    np.copysign(sin_b, s_in, out=sin_b)

    db = np.where(broken, depth, db)
    ab = np.where(broken, ang, np.degrees(np.arcsin(sin_b)))
    db[~valid] = np.nan
    ab[~valid] = np.nan
    hb_out[...] = gamma * db
    db_out[...] = db
    ab_out[...] = ab
    broken_out[...] = broken & valid


def _halley_step(x, ssq, ln_r, x_in):
    """One safeguarded Halley step on f(u) = ln G(e^u) - ln R, u = ln x (see _breaking_block)."""
    t = np.tanh(x)
    tt = t * t
    c = 1.0 - tt  # sech^2 x = dt/dx
    a = x * c
    m = 0.5 * (t + a)
    q = 1.0 - ssq * tt  # cos^2(theta)
    f = np.log(x * x * tt * m * np.sqrt(q)) - ln_r
    # First and second derivatives of ln G with respect to x.
    n_ = c * (1.0 - x * t)  # dm/dx
    dn = -2.0 * t * n_ - c * (t + a)  # d2m/dx2
    nm = n_ / m
    sc = ssq * t * c
    g1 = 2.0 / x + 2.0 * c / t + nm - sc / q
    g2 = (
        -2.0 / (x * x)
        - 2.0 * c * (2.0 * tt + c) / tt
        + dn / m
        - nm * nm
        - ssq * ((c - 2.0 * tt) * c * q + 2.0 * ssq * tt * c * c) / (q * q)
    )
    fu = x * g1
    fuu = fu + x * x * g2
    # Safeguards: G can turn down seaward of its peak at very oblique incidence (fu < 0 there,
    # and G > R, so stepping shoreward is right); bound the Halley correction and the step.
    fu = np.maximum(fu, 0.5)
    corr = np.clip(0.5 * f * fuu / (fu * fu), -0.5, 0.5)
    du = np.clip(-f / (fu * (1.0 - corr)), -1.0, 1.0)
    return np.minimum(x * np.exp(du), x_in)


def breaking(
    hs_m: ArrayLike,
    tp_s: ArrayLike,
    angle_deg: ArrayLike,
    depth_m: ArrayLike | None = None,
    breaker_index: ArrayLike = BREAKER_INDEX,
    method: str = "exact",
    full_output: bool = False,
) -> tuple[np.ndarray, ...]:
    """Carry waves over straight, parallel depth contours to depth-limited breaking.

    Linear refraction (Snell's law) and linear shoaling, linear theory all the way to the
    breaking depth, where H = breaker_index * d.

    Parameters
    ----------
    hs_m : array_like
        Wave height at the input depth [m] (significant height used as the representative
        height).
    tp_s : array_like
        Representative (peak) period [s].
    angle_deg : array_like
        Angle between the wave ray and the seaward normal at the input depth [deg], signed;
        the sign is kept through refraction. ``|angle_deg| >= 90`` (waves from land) gives NaN.
    depth_m : array_like or None, optional
        Depth at which ``hs_m`` and ``angle_deg`` are given [m]. None, NaN or ``inf`` mean deep
        water. Non-positive depth gives NaN.
    breaker_index : array_like, optional
        gamma = Hb / db [-]; default 0.78 (McCowan; CEM II-1 p. II-1-49, CEM Eq. II-4-12).
    method : {"exact", "explicit"}, optional
        ``"exact"`` solves the linear-theory problem to better than 1e-8 relative;
        ``"explicit"`` uses the formula of Larson, Hoan & Hanson (2010), which takes shallow
        water at breaking.
    full_output : bool, optional
        Also return ``broken_at_input``.

    Returns
    -------
    hb_m : numpy.ndarray
        Breaker height [m].
    db_m : numpy.ndarray
        Breaking depth [m].
    alpha_b_deg : numpy.ndarray
        Angle of the wave ray to the seaward normal at breaking [deg], sign of ``angle_deg``.
    broken_at_input : numpy.ndarray of bool
        Only with ``full_output=True``: the wave is already breaking at the input depth
        (``hs_m >= breaker_index * depth_m``). Then ``hb_m = breaker_index * depth_m``,
        ``db_m = depth_m`` and ``alpha_b_deg = angle_deg``: the wave is reported as broken
        where it was given, not extrapolated.

    Raises
    ------
    ValueError
        If ``method`` is not one of :data:`BREAKING_METHODS`.

    Notes
    -----
    Snell's law sin(theta) / C = const, shoaling Ks = sqrt(Cg_in / Cg), refraction
    Kr = sqrt(cos(theta_in) / cos(theta)), H = H_in Ks Kr (CEM Part II-3), and the breaking
    criterion H = gamma d (CEM Eq. II-4-12). Equivalently the energy flux H^2 Cg cos(theta) is
    conserved between the input depth and breaking.

    ``"exact"``: with x = kh at breaking and t = tanh x, the breaking depth is
    d = g x t / omega^2, sin(theta) = t sin(theta_in) / tanh(kh_in), and the flux balance reads
    x^2 t^2 m sqrt(1 - S^2 t^2) = R with m = (t + x sech^2 x) / 2 = omega Cg / g (all explicit
    in x). It is solved for ln x by four safeguarded Halley steps from the Larson et al.
    explicit solution; the result agrees with ``scipy.optimize.brentq`` on the raw relations
    to better than 1e-12 (measured worst 1e-13) over periods 3-20 s, heights 0.3-6 m, angles
    up to 89.5 deg and input depths from just deeper than the breaking limit to deep water.

    ``"explicit"`` (Larson, Hoan & Hanson 2010), with C0, Cg0 at the input depth:
    alpha = (C0 / sqrt(g H0))^4 (C0 / Cg0) gamma^2, lambda_a = (cos(theta0) / alpha)^(2/5),
    xi = lambda_a sin^2(theta0),
    lambda = lambda_a (1 + 0.1649 xi + 0.5948 xi^2 - 1.6787 xi^3 + 2.8573 xi^4),
    hb = lambda C0^2 / g, Hb = gamma hb, sin(theta_b) = sqrt(lambda) sin(theta0).
    The polynomial reproduces the exact root of its own shallow-water flux balance to better
    than 0.1 % (measured) for xi < 0.5. Because it takes shallow water at breaking
    (Cg = sqrt(g d) instead of the smaller linear-theory value) its Hb is lower than the
    ``"exact"`` one: by 0.3-3.6 % for deep-water steepness H0/L0 <= 0.02 and |angle| <= 45 deg,
    by up to 8 % at H0/L0 = 0.05 (docs/methods.md). It is meant for deep or moderately deep
    input; for very oblique waves given close to their breaking depth (xi beyond about 0.58)
    its balance has no root and the result is meaningless (the angle is NaN where
    sqrt(lambda) |sin(theta0)| exceeds 1).

    References
    ----------
    Larson, M., Hoan, L.X. & Hanson, H. (2010). Direct formula to compute wave height and angle
    at incipient breaking. J. Waterway Port Coastal Ocean Eng. 136(2): 119-122.
    US Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Parts II-1,
    II-3 and II-4.
    McCowan, J. (1894). On the highest wave of permanent type. Phil. Mag. 38(5): 351-358 (as
    cited in CEM II-1).

    Examples
    --------
    >>> hb, db, ab = breaking(2.0, 10.0, 30.0, depth_m=50.0, method="explicit")
    >>> round(float(hb), 3), round(float(db), 3), round(float(ab), 2)
    (2.351, 3.014, 10.35)
    >>> hb, db, ab, broken = breaking(3.0, 8.0, 10.0, depth_m=3.0, full_output=True)
    >>> bool(broken), round(float(hb), 2), float(db), float(ab)
    (True, 2.34, 3.0, 10.0)
    """
    if method not in BREAKING_METHODS:
        raise ValueError(
            f"breaking(): method {method!r} is not known; expected one of {list(BREAKING_METHODS)}"
        )
    if depth_m is None:
        depth_m = np.inf
    arrays = np.broadcast_arrays(
        *(np.asarray(v, dtype=float) for v in (hs_m, tp_s, angle_deg, depth_m, breaker_index))
    )
    shape = arrays[0].shape
    hs, tp, ang, depth, gamma = (np.ascontiguousarray(a).reshape(-1) for a in arrays)
    # NaN depth means deep water (documented); -inf and other non-positive depths stay invalid.
    depth = np.where(np.isnan(depth), np.inf, depth)
    n = hs.size
    hb = np.empty(n)
    db = np.empty(n)
    ab = np.empty(n)
    broken = np.empty(n, dtype=bool)
    exact = method == "exact"
    with np.errstate(all="ignore"):
        for i in range(0, n, _CHUNK):
            j = slice(i, i + _CHUNK)
            _breaking_block(
                hs[j], tp[j], ang[j], depth[j], gamma[j], exact, hb[j], db[j], ab[j], broken[j]
            )
    result = tuple(_out(a.reshape(shape)) for a in (hb, db, ab))
    if full_output:
        return (*result, _out(broken.reshape(shape)))
    return result


def breaking_on_angle_nodes(
    hs_m: ArrayLike,
    tp_s: ArrayLike,
    angle_deg: np.ndarray,
    depth_m: float | None = None,
    breaker_index: float = BREAKER_INDEX,
    step_deg: float = 0.5,
    method: str = "exact",
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """:func:`breaking` for many angles per condition, solved on nodes and interpolated.

    A long run meets each offshore condition (one time step: height, period, input depth)
    at many angles, one per transect. Here each condition is solved exactly on a grid of
    angles ``step_deg`` apart spanning the angles it meets, and every angle is interpolated
    linearly between its two nodes. With 0.5 degree nodes the interpolation error is below
    1e-4 relative in Hb and db and 0.003 degrees in the angle at breaking (measured against
    an independent brentq solution in tests/test_waves.py; docs/performance.md).

    Parameters
    ----------
    hs_m, tp_s : array_like of shape (t,)
        Height at the input depth [m] and period [s] of each condition.
    angle_deg : ndarray of shape (n, t)
        Angles to the seaward normal [deg] at which each condition (column) is needed.
    depth_m : float or None
        Input depth [m] shared by all conditions (None or inf: deep water).
    breaker_index : float
        gamma = Hb / db [-].
    step_deg : float
        Node spacing [deg]; 0 solves every angle directly.
    method : {"exact", "explicit"}
        Solution used at the nodes (see :func:`breaking`).

    Returns
    -------
    hb_m, db_m, alpha_b_deg, broken_at_input : ndarrays of shape (n, t)
        As :func:`breaking` with ``full_output=True``. Angles of 89.9 degrees or more in
        magnitude (within a tenth of a degree of parallel to the shore) give NaN.
    """
    hs = np.asarray(hs_m, dtype=float).reshape(-1)
    tp = np.asarray(tp_s, dtype=float).reshape(-1)
    angle = np.asarray(angle_deg, dtype=float)
    n, t = angle.shape
    depth = np.inf if depth_m is None else float(depth_m)
    limit = 89.9
    inside = np.abs(angle) < limit  # False for NaN too
    k = n
    if step_deg > 0 and n >= 4:
        low = np.where(inside, angle, np.inf).min(axis=0)
        high = np.where(inside, angle, -np.inf).max(axis=0)
        none = low > high  # no angle of this condition reaches the shore
        lo = np.floor(np.where(none, 0.0, low) / step_deg) * step_deg
        hi = np.ceil(np.where(none, 0.0, high) / step_deg) * step_deg
        k = int(np.round((hi - lo) / step_deg).max()) + 2
    if k >= n:  # as many nodes as angles: solve every angle directly
        out = breaking(hs, tp, angle, depth, breaker_index, method=method, full_output=True)
        for values in out[:3]:
            values[~inside] = np.nan
        out[3][~inside] = False
        return out
    # the last node is clipped to the limit, so the last interval before it is interpolated
    # as if it were a full step (angles within half a degree of shore-parallel; negligible)
    nodes = np.clip(lo[:, None] + step_deg * np.arange(k)[None, :], -limit, limit)
    hb_n, _, ab_n, br_n = breaking(
        hs[:, None], tp[:, None], nodes, depth, breaker_index, method=method, full_output=True
    )
    f = angle - lo[None, :]
    f *= 1.0 / step_deg
    f[~inside] = 0.0
    i = f.astype(np.intp)
    np.minimum(i, k - 2, out=i)
    f -= i  # the weight of the upper node
    i += (np.arange(t) * k)[None, :]
    out = []
    for values in (hb_n, ab_n):
        flat = values.reshape(-1)
        v = flat[i]
        upper = flat[i + 1]
        upper -= v
        upper *= f
        v += upper
        v[~inside] = np.nan
        out.append(v)
    hb = out[0]
    # Hb = gamma db at breaking, also for waves broken at their input depth (db = depth there)
    db = hb / breaker_index
    broken = br_n[:, :1].T & inside  # broken at input depends on the condition, not the angle
    return hb, db, out[1], broken


def surf_similarity(slope: ArrayLike, hs_m: ArrayLike, tp_s: ArrayLike) -> np.ndarray:
    """Surf-similarity (Iribarren) parameter in deep-water terms, xi0 = tan(beta) / sqrt(H0/L0).

    Parameters
    ----------
    slope : array_like
        Beach slope tan(beta) [-] (rise over run, >= 0).
    hs_m : array_like
        Deep-water wave height H0 [m].
    tp_s : array_like
        Wave period T [s], giving L0 = g T^2 / (2 pi).

    Returns
    -------
    numpy.ndarray
        xi0 [-]; NaN where the slope is negative or the height or period is not positive.

    Notes
    -----
    xi0 = tan(beta) / sqrt(H0 / L0), L0 = g T^2 / (2 pi) (Battjes 1974, after Iribarren &
    Nogales 1949).

    References
    ----------
    Battjes, J.A. (1974). Surf similarity. Proc. 14th Int. Conf. Coastal Engineering, ASCE,
    466-480 (from memory).

    Examples
    --------
    >>> round(float(surf_similarity(0.1, 1.0, 10.0)), 2)
    1.25
    """
    slope = np.asarray(slope, dtype=float)
    hs = np.asarray(hs_m, dtype=float)
    tp = np.asarray(tp_s, dtype=float)
    with np.errstate(all="ignore"):
        valid = (slope >= 0) & (hs > 0) & (tp > 0)
        xi = slope / np.sqrt(hs * 2.0 * np.pi / (G_M_S2 * tp * tp))
        xi = np.where(valid, xi, np.nan)
    return _out(xi)


def breaker_type(xi0: ArrayLike) -> np.ndarray:
    """Breaker type from the deep-water surf-similarity parameter (Battjes 1974).

    Parameters
    ----------
    xi0 : array_like
        Surf-similarity parameter tan(beta) / sqrt(H0/L0) [-], see :func:`surf_similarity`.

    Returns
    -------
    numpy.ndarray of str
        ``"spilling"`` for xi0 < 0.5, ``"plunging"`` for 0.5 <= xi0 <= 3.3,
        ``"surging-collapsing"`` for xi0 > 3.3, and ``""`` for NaN.

    Notes
    -----
    Thresholds in deep-water terms after Battjes (1974), from memory; they are indicative
    (the transitions are gradual), and the boundary values themselves are put in the plunging
    class here.

    References
    ----------
    Battjes, J.A. (1974). Surf similarity. Proc. 14th Int. Conf. Coastal Engineering, ASCE,
    466-480.

    Examples
    --------
    >>> breaker_type([0.3, 1.0, 5.0, float("nan")]).tolist()
    ['spilling', 'plunging', 'surging-collapsing', '']
    """
    xi = np.asarray(xi0, dtype=float)
    kind = np.full(xi.shape, "", dtype="<U18")
    kind[xi < _XI_SPILLING_MAX] = "spilling"
    kind[(xi >= _XI_SPILLING_MAX) & (xi <= _XI_PLUNGING_MAX)] = "plunging"
    kind[xi > _XI_PLUNGING_MAX] = "surging-collapsing"
    return _out(kind)
