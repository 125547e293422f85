"""Beach profile: Dean's equilibrium profile, the breaker-zone slope, and closure depth.

The equilibrium profile gives the beach slope from the breaker line to the shoreline that the
Kamphuis (1991) transport formula needs when no surveyed slope is given; the closure depth is
the depth beyond which the profile hardly changes, the lower limit of the active profile in a
one-line sediment balance.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

__all__ = [
    "G_M_S2",
    "birkemeier_closure_depth",
    "breaker_zone_slope",
    "dean_a_parameter",
    "equilibrium_profile_depth",
    "hallermeier_closure_depth",
    "surf_zone_width_m",
]

G_M_S2 = 9.81
"""Acceleration due to gravity [m/s2] (common practice)."""


def _positive(x: ArrayLike) -> np.ndarray:
    """Return ``x`` as floats with zero and negative values set to NaN."""
    x = np.asarray(x, dtype=float)
    return np.where(x > 0.0, x, np.nan)


def _non_negative(x: ArrayLike) -> np.ndarray:
    """Return ``x`` as floats with negative values set to NaN."""
    x = np.asarray(x, dtype=float)
    return np.where(x >= 0.0, x, np.nan)


def dean_a_parameter(d50_mm: ArrayLike) -> np.ndarray:
    """Profile scale parameter A of Dean's equilibrium beach profile from grain size.

    Parameters
    ----------
    d50_mm : array_like
        Median grain diameter [mm]. Zero or negative gives NaN.

    Returns
    -------
    numpy.ndarray
        Profile scale parameter A [m^(1/3)].

    Notes
    -----
    A = 0.21 D**0.48 with D in mm (Moore 1982, as used by Dean 1987; recalled, not re-read).
    The power law is a fit: against Dean's tabulated values (A = 0.100, 0.125, 0.145 m^(1/3)
    at 0.2, 0.3, 0.5 mm) it is within about 6 %, but at 1.0 mm it gives 0.21 against the
    tabulated 0.168, some 25 % high. Use it for fine to medium sand (about 0.15-0.6 mm); for
    coarse sand prefer a measured profile or slope.

    References
    ----------
    Moore, B. D. (1982). Beach profile evolution in response to changes in water level and
    wave height. M.S. thesis, University of Delaware.
    Dean, R. G. (1987). Coastal sediment processes: toward engineering solutions. Proc.
    Coastal Sediments '87, ASCE, 1-24.

    Examples
    --------
    >>> round(float(dean_a_parameter(1.0)), 3)
    0.21
    """
    return 0.21 * _positive(d50_mm) ** 0.48


def equilibrium_profile_depth(distance_m: ArrayLike, d50_mm: ArrayLike) -> np.ndarray:
    """Water depth of Dean's equilibrium profile at a distance offshore.

    Parameters
    ----------
    distance_m : array_like
        Horizontal distance seaward from the still-water shoreline [m]. Negative gives NaN.
    d50_mm : array_like
        Median grain diameter [mm].

    Returns
    -------
    numpy.ndarray
        Water depth h [m].

    Notes
    -----
    h = A y**(2/3) (Dean 1977, 1987), A from :func:`dean_a_parameter`.

    References
    ----------
    Dean, R. G. (1977). Equilibrium beach profiles: U.S. Atlantic and Gulf coasts. Ocean
    Engineering Report No. 12, University of Delaware.

    Examples
    --------
    >>> round(float(equilibrium_profile_depth(1000.0, 1.0)), 2)
    21.0
    """
    return dean_a_parameter(d50_mm) * _non_negative(distance_m) ** (2.0 / 3.0)


def surf_zone_width_m(db_m: ArrayLike, d50_mm: ArrayLike) -> np.ndarray:
    """Distance from the shoreline to the breaker line on Dean's equilibrium profile.

    Parameters
    ----------
    db_m : array_like
        Water depth at breaking [m]. Negative gives NaN.
    d50_mm : array_like
        Median grain diameter [mm].

    Returns
    -------
    numpy.ndarray
        Surf-zone width yb [m].

    Notes
    -----
    yb = (db / A)**(3/2), the inverse of h = A y**(2/3) (Dean 1977, 1987).

    Examples
    --------
    >>> round(float(surf_zone_width_m(21.0, 1.0)), 6)
    1000.0
    """
    return (_non_negative(db_m) / dean_a_parameter(d50_mm)) ** 1.5


def breaker_zone_slope(db_m: ArrayLike, d50_mm: ArrayLike) -> np.ndarray:
    """Mean beach slope from the breaker line to the shoreline on Dean's equilibrium profile.

    This is the slope mb of the Kamphuis (1991) transport formula when no surveyed slope is
    given. It uses the *breaking depth* db, not the breaking height.

    Parameters
    ----------
    db_m : array_like
        Water depth at breaking [m]. Zero or negative gives NaN (no surf zone, no slope).
    d50_mm : array_like
        Median grain diameter [mm].

    Returns
    -------
    numpy.ndarray
        Slope mb = db / yb [-] (rise over run).

    Notes
    -----
    mb = db / yb with yb = (db / A)**(3/2), i.e. mb = A**(3/2) / sqrt(db) (Dean 1977, 1987).
    The equilibrium profile steepens toward the shore, so the mean slope falls as the waves
    (and db) grow.

    Examples
    --------
    >>> round(float(breaker_zone_slope(1.0, 1.0)), 4)
    0.0962
    """
    return dean_a_parameter(d50_mm) ** 1.5 / np.sqrt(_positive(db_m))


def hallermeier_closure_depth(he_m: ArrayLike, te_s: ArrayLike) -> np.ndarray:
    """Closure depth of Hallermeier (1981), the seaward limit of the littoral zone.

    Parameters
    ----------
    he_m : array_like
        Nearshore significant wave height exceeded 12 hours a year [m]. Negative gives NaN.
    te_s : array_like
        Wave period associated with ``he_m`` [s]. Zero or negative gives NaN.

    Returns
    -------
    numpy.ndarray
        Closure depth dc below mean low water [m].

    Notes
    -----
    dc = 2.28 He - 68.5 He**2 / (g Te**2) (Hallermeier 1981).

    References
    ----------
    Hallermeier, R. J. (1981). A profile zonation for seasonal sand beaches from wave
    climate. Coastal Engineering, 4, 253-277.

    Examples
    --------
    >>> round(float(hallermeier_closure_depth(4.0, 10.0)), 2)
    8.0
    """
    he = _non_negative(he_m)
    te = _positive(te_s)
    return 2.28 * he - 68.5 * he**2 / (G_M_S2 * te**2)


def birkemeier_closure_depth(he_m: ArrayLike, te_s: ArrayLike) -> np.ndarray:
    """Closure depth of Birkemeier (1985), a recalibration of Hallermeier's relation.

    Parameters
    ----------
    he_m : array_like
        Nearshore significant wave height exceeded 12 hours a year [m]. Negative gives NaN.
    te_s : array_like
        Wave period associated with ``he_m`` [s]. Zero or negative gives NaN.

    Returns
    -------
    numpy.ndarray
        Closure depth dc [m].

    Notes
    -----
    dc = 1.75 He - 57.9 He**2 / (g Te**2) (Birkemeier 1985; recalled, not re-read), fitted
    to profile surveys at Duck, North Carolina; shallower than Hallermeier's value.

    References
    ----------
    Birkemeier, W. A. (1985). Field data on seaward limit of profile change. Journal of
    Waterway, Port, Coastal, and Ocean Engineering, 111(3), 598-602.

    Examples
    --------
    >>> round(float(birkemeier_closure_depth(4.0, 10.0)), 2)
    6.06
    """
    he = _non_negative(he_m)
    te = _positive(te_s)
    return 1.75 * he - 57.9 * he**2 / (G_M_S2 * te**2)
