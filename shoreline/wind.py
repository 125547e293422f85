"""Deep-water wind-wave growth, for storm scenarios given as a wind speed over a fetch.

:func:`wind_waves` returns the spectral significant height Hm0 and peak period Tp that a
steady wind raises over a straight-line fetch in deep water, and says which limit governs:
the fetch, the duration of the wind, or full development.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

__all__ = ["FORMS", "G_M_S2", "LIMITS", "wind_waves"]

G_M_S2 = 9.81
"""Acceleration due to gravity [m/s2] (common practice)."""

FORMS = ("cem", "spm")
"""The growth relations :func:`wind_waves` offers."""

LIMITS = ("fetch", "duration", "fully-developed")
"""The labels :func:`wind_waves` gives to the limit that governs; ``"undefined"`` for NaN."""

# CEM II-2, in the friction velocity u* (see wind_waves for the equation numbers).
_CEM_FETCH_H = 4.13e-2  # g Hm0/u*^2 = 4.13e-2 (g X/u*^2)^(1/2)
_CEM_FETCH_T = 0.651  # g Tp/u* = 0.651 (g X/u*^2)^(1/3)
_CEM_FULL_H = 2.115e2  # g Hm0/u*^2 when fully developed
_CEM_FULL_T = 2.398e2  # g Tp/u* when fully developed
_CEM_DURATION_FETCH = 5.23e-3  # g X/u*^2 = 5.23e-3 (g t/u*)^(3/2)

# SPM-style relations in the wind speed U.
_SPM_FETCH_H = 0.0016  # g H/U^2 = 0.0016 (g F/U^2)^(1/2)
_SPM_FETCH_T = 0.286  # g T/U = 0.286 (g F/U^2)^(1/3)
_SPM_FULL_H = 0.243
_SPM_FULL_T = 8.13


def _drag_coefficient(u10_m_s: np.ndarray) -> np.ndarray:
    """Drag coefficient CD = 0.001 (1.1 + 0.035 U10), CEM II-2 (recalled)."""
    return 0.001 * (1.1 + 0.035 * u10_m_s)


def wind_waves(
    wind_speed_m_s: ArrayLike,
    fetch_m: ArrayLike,
    duration_s: ArrayLike = np.inf,
    form: str = "cem",
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Deep-water significant height and peak period of waves raised by a steady wind.

    Parameters
    ----------
    wind_speed_m_s : array_like
        Wind speed at 10 m height, U10 [m/s]. Negative gives NaN.
    fetch_m : array_like
        Straight-line fetch over open water, upwind of the site [m]. Zero or negative (wind
        blowing off the land) gives no waves: Hm0 = 0 and Tp = 0, limit ``"fetch"``.
    duration_s : array_like, optional
        How long the wind has blown [s]; infinite by default (no duration limit). Negative
        gives NaN. Only ``form="cem"`` applies a finite duration.
    form : {"cem", "spm"}, optional
        ``"cem"`` (default): the Coastal Engineering Manual relations in the friction
        velocity. ``"spm"``: the older dimensionless relations in the wind speed.

    Returns
    -------
    hm0_m : numpy.ndarray
        Spectral significant wave height [m].
    tp_s : numpy.ndarray
        Peak wave period [s]; 0 where there are no waves.
    limit : numpy.ndarray of str
        Which limit governs at each element: ``"fetch"``, ``"duration"`` or
        ``"fully-developed"`` (labelled by the height); ``"undefined"`` where an input is NaN.

    Raises
    ------
    ValueError
        If ``form`` is not a choice, or ``form="spm"`` is given a finite duration.

    Notes
    -----
    **form="cem"** (CEM EM 1110-2-1100, Part II-2). Friction velocity u* = sqrt(CD) U10 with
    CD = 0.001 (1.1 + 0.035 U10) (recalled). Fetch-limited growth, Eq. II-2-36 (recalled):

        g Hm0 / u*^2 = 4.13e-2 (g X / u*^2)^(1/2),   g Tp / u* = 0.651 (g X / u*^2)^(1/3).

    A wind of duration t raises the waves of the equivalent fetch

        g X_t / u*^2 = 5.23e-3 (g t / u*)^(3/2),

    and the smaller of the fetch and X_t governs (``"duration"`` if X_t is smaller). The fully
    developed values, Eqs. II-2-37 and II-2-38, cap each of height and period:

        g Hm0 / u*^2 = 2.115e2,   g Tp / u* = 2.398e2.

    The height reaches its cap at g X / u*^2 = 2.62e7, the period only at 5.0e7; the label
    ``"fully-developed"`` follows the height, so just beyond 2.62e7 the period still grows.

    **form="spm"**: H* = 0.0016 F*^(1/2), T* = 0.286 F*^(1/3) with H* = g Hm0 / U^2,
    T* = g Tp / U, F* = g F / U^2, capped by the fully developed H* = 0.243, T* = 8.13 (both
    reached near F* = 2.3e4). The Shore Protection Manual (1984) applied these to an adjusted
    wind-stress factor rather than to U10; this function uses the speed it is given, as the
    textbook exercise behind the check values does. Duration-limited growth is not offered in
    this form (a finite ``duration_s`` raises ValueError): use ``form="cem"``.

    For U = 15 m/s over 200 km the SPM form gives Hm0 = 3.4 m, Tp = 9.0 s and the CEM form
    Hm0 = 3.6 m, Tp = 7.0 s: the heights agree within about 5 %, the CEM periods are shorter.

    References
    ----------
    U.S. Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Part II,
    Chapter 2 (Eqs. II-2-36 to II-2-38).
    U.S. Army Corps of Engineers (1984). Shore Protection Manual, 4th ed., Chapter 3.

    Examples
    --------
    >>> hm0, tp, limit = wind_waves(15.0, 200e3, form="spm")
    >>> round(float(hm0), 1), round(float(tp), 1), str(limit)
    (3.4, 9.0, 'fetch')
    """
    if form not in FORMS:
        raise ValueError(
            f"form={form!r} is not a choice for wind_waves; expected one of "
            f"{', '.join(repr(f) for f in FORMS)}"
        )
    u10, fetch, duration = np.broadcast_arrays(
        np.asarray(wind_speed_m_s, dtype=float),
        np.asarray(fetch_m, dtype=float),
        np.asarray(duration_s, dtype=float),
    )
    if form == "spm" and np.any(np.isfinite(duration)):
        raise ValueError(
            "wind_waves form='spm' has no duration-limited growth; pass duration_s=inf "
            "or use form='cem'"
        )
    undefined = np.isnan(u10) | np.isnan(fetch) | np.isnan(duration)
    u10 = np.where(u10 >= 0.0, u10, np.nan)
    duration = np.where(duration >= 0.0, duration, np.nan)
    no_fetch = fetch <= 0.0
    # a calm grows nothing over any fetch, even an unlimited one (and avoids 0 * inf)
    fetch = np.where(no_fetch | (u10 == 0.0), 0.0, fetch)

    # Everything below is written in dimensional form, with no division by the wind speed, so
    # that a calm (U = 0) gives zero waves without a division by zero.
    if form == "cem":
        u_star = np.sqrt(_drag_coefficient(u10)) * u10
        # equivalent fetch X_t = 5.23e-3 (g t/u*)^(3/2) u*^2/g, infinite for an infinite wind
        duration_fetch = np.where(
            np.isinf(duration),
            np.inf,
            _CEM_DURATION_FETCH
            * np.sqrt(G_M_S2)
            * np.where(np.isinf(duration), 0.0, duration) ** 1.5
            * np.sqrt(u_star),
        )
        by_duration = duration_fetch < fetch
        effective_fetch = np.minimum(fetch, duration_fetch)
        hm0_growing = _CEM_FETCH_H * u_star * np.sqrt(effective_fetch / G_M_S2)
        tp_growing = _CEM_FETCH_T * np.cbrt(effective_fetch * u_star / G_M_S2**2)
        hm0_full = _CEM_FULL_H * u_star**2 / G_M_S2
        tp_full = _CEM_FULL_T * u_star / G_M_S2
    else:
        by_duration = np.zeros(fetch.shape, dtype=bool)
        hm0_growing = _SPM_FETCH_H * u10 * np.sqrt(fetch / G_M_S2)
        tp_growing = _SPM_FETCH_T * np.cbrt(fetch * u10 / G_M_S2**2)
        hm0_full = _SPM_FULL_H * u10**2 / G_M_S2
        tp_full = _SPM_FULL_T * u10 / G_M_S2

    fully_developed = (hm0_growing >= hm0_full) & ~no_fetch
    hm0_m = np.minimum(hm0_growing, hm0_full)
    tp_s = np.minimum(tp_growing, tp_full)
    limit = np.where(
        np.isnan(hm0_m) | undefined,
        "undefined",
        np.where(fully_developed, "fully-developed", np.where(by_duration, "duration", "fetch")),
    )
    return hm0_m, tp_s, limit
