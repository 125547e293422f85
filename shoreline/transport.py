"""Longshore sand transport formulas and unit conversions.

Every formula here takes conditions *at breaking* (height, period, angle to the seaward normal)
and returns a volumetric transport rate of sand, bulk volume including pores, in
``[m3/s]``. The sign follows the angle at breaking ``alpha_b_deg``: by the project's convention
a positive angle drives sand toward increasing chainage, so a positive rate is transport toward
increasing chainage.

Formulas
--------
``cerc``
    The CERC energy-flux formula, CEM III-2 Eq. III-2-7, with significant wave height.
``kamphuis``
    Kamphuis (1991), with significant height, peak period, beach slope and grain size.

:data:`FORMULAS` maps each name to its function and :func:`longshore_transport` calls any of
them from one common set of breaking conditions (the call the study runner makes).

Waves from land (more than 90 degrees from the seaward normal) move no sand; that sheltering is
decided by the caller, which knows the geometry. These functions evaluate the formula for any
angle they are given.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

__all__ = [
    "CERC_K_PUBLISHED",
    "FORMULAS",
    "G_M_S2",
    "RMS_TO_SIGNIFICANT_K_FACTOR",
    "SECONDS_PER_YEAR",
    "cerc",
    "formula_names",
    "k_del_valle",
    "k_rms_to_significant",
    "k_significant_to_rms",
    "kamphuis",
    "longshore_energy_flux",
    "longshore_transport",
    "m3_per_s_to_m3_per_yr",
    "m3_per_yr_to_m3_per_s",
]

G_M_S2 = 9.81
"""Acceleration due to gravity [m/s2] (common practice)."""

SECONDS_PER_YEAR = 365.25 * 86400
"""Seconds in a year of 365.25 days, the Julian year (common practice) [s]."""

RMS_TO_SIGNIFICANT_K_FACTOR = 2.0**-1.25
"""Multiply a CERC coefficient fitted with rms height by this to use it with significant height.

With Rayleigh-distributed heights Hs = sqrt(2) Hrms, and the CERC rate goes as H**2.5, so
K_s = K_rms / (sqrt 2)**2.5 = K_rms / 2.378 (dimensionless).
"""

CERC_K_PUBLISHED = {
    "spm_1984_significant": 0.39,
    "cem_rms": 0.92,
    "komar_inman_1970_rms": 0.77,
}
"""Published CERC coefficients K (dimensionless), named by source and by the wave height used.

From CEM III-2 (p. III-2-12): K = 0.39 with significant height (SPM 1984), quoted as
equivalent to K = 0.92 with rms height, and Komar & Inman (1970) K = 0.77 with rms height.
:func:`cerc` takes significant height: convert an ``_rms`` value with
:func:`k_rms_to_significant` first.
"""

_DEL_VALLE_HEIGHTS = ("rms", "significant")


def m3_per_s_to_m3_per_yr(q_m3_per_s: ArrayLike) -> np.ndarray:
    """Convert a transport rate from ``[m3/s]`` to ``[m3/yr]`` (year of 365.25 days).

    Examples
    --------
    >>> float(m3_per_s_to_m3_per_yr(1.0))
    31557600.0
    """
    return np.asarray(q_m3_per_s, dtype=float) * SECONDS_PER_YEAR


def m3_per_yr_to_m3_per_s(q_m3_per_yr: ArrayLike) -> np.ndarray:
    """Convert a transport rate from ``[m3/yr]`` to ``[m3/s]`` (year of 365.25 days).

    Examples
    --------
    >>> float(m3_per_yr_to_m3_per_s(31557600.0))
    1.0
    """
    return np.asarray(q_m3_per_yr, dtype=float) / SECONDS_PER_YEAR


def k_rms_to_significant(k_rms: ArrayLike) -> np.ndarray:
    """Convert a CERC coefficient for rms height into one for significant height.

    Parameters
    ----------
    k_rms : array_like
        CERC coefficient fitted with rms breaking height [-].

    Returns
    -------
    numpy.ndarray
        The coefficient to use with significant breaking height [-].

    Notes
    -----
    K_s = K_rms / (sqrt 2)**2.5, because Hs = sqrt(2) Hrms for Rayleigh-distributed heights
    and the CERC rate goes as H**2.5. The exact factor turns the CEM's K_rms = 0.92 into 0.387;
    the SPM's K_s = 0.39 corresponds to K_rms = 0.93, about 1 % apart (CEM III-2, p. III-2-12).

    Examples
    --------
    >>> round(float(k_rms_to_significant(0.92)), 3)
    0.387
    """
    return np.asarray(k_rms, dtype=float) * RMS_TO_SIGNIFICANT_K_FACTOR


def k_significant_to_rms(k_significant: ArrayLike) -> np.ndarray:
    """Convert a CERC coefficient for significant height into one for rms height.

    The inverse of :func:`k_rms_to_significant`: K_rms = K_s (sqrt 2)**2.5.

    Examples
    --------
    >>> round(float(k_significant_to_rms(0.39)), 3)
    0.928
    """
    return np.asarray(k_significant, dtype=float) / RMS_TO_SIGNIFICANT_K_FACTOR


def k_del_valle(d50_mm: ArrayLike, *, height: str) -> np.ndarray:
    """CERC coefficient from median grain size, del Valle, Medina & Losada (1993).

    Parameters
    ----------
    d50_mm : array_like
        Median grain diameter of the beach sand [mm]. Zero or negative gives NaN.
    height : {"rms", "significant"}
        The wave height the coefficient is for. Required, so that no call can mix the two:
        ``"rms"`` is the published fit; ``"significant"`` is converted for use with
        :func:`cerc`, which takes significant breaking height.

    Returns
    -------
    numpy.ndarray
        CERC coefficient K [-].

    Raises
    ------
    ValueError
        If ``height`` is not one of the choices.

    Notes
    -----
    K_rms = 1.4 exp(-2.5 D50), D50 in mm (recalled from the paper, not re-read). The
    significant-height value is K_s = K_rms / (sqrt 2)**2.5 (:func:`k_rms_to_significant`).

    To use it in the CERC formula, compute K and pass it::

        cerc(hb_m, alpha_b_deg, k=k_del_valle(d50_mm, height="significant"))

    ``k`` broadcasts, so a grain size per transect gives a coefficient per transect.

    References
    ----------
    del Valle, R., Medina, R. and Losada, M. A. (1993). Dependence of coefficient K on grain
    size. Journal of Waterway, Port, Coastal, and Ocean Engineering, 119(5), 568-574.

    Examples
    --------
    >>> float(k_del_valle(0.0, height="rms"))
    1.4
    >>> round(float(k_del_valle(0.3, height="significant")), 3)
    0.278
    """
    if height not in _DEL_VALLE_HEIGHTS:
        raise ValueError(
            f"height={height!r} is not a choice for k_del_valle; expected one of "
            f"{', '.join(repr(h) for h in _DEL_VALLE_HEIGHTS)}"
        )
    d50 = np.asarray(d50_mm, dtype=float)
    d50 = np.where(d50 >= 0.0, d50, np.nan)
    k_rms = 1.4 * np.exp(-2.5 * d50)
    if height == "rms":
        return k_rms
    return k_rms_to_significant(k_rms)


def _non_negative(x: ArrayLike) -> np.ndarray:
    """Return ``x`` as floats with negative values (which no formula accepts) set to NaN."""
    x = np.asarray(x, dtype=float)
    return np.where(x >= 0.0, x, np.nan)


def _positive(x: ArrayLike) -> np.ndarray:
    """Return ``x`` as floats with zero and negative values set to NaN."""
    x = np.asarray(x, dtype=float)
    return np.where(x > 0.0, x, np.nan)


def longshore_energy_flux(
    hb_m: ArrayLike,
    alpha_b_deg: ArrayLike,
    breaker_index: float = 0.78,
    water_density_kg_m3: float = 1025.0,
) -> np.ndarray:
    """Longshore energy flux factor P_l at breaking, CEM III-2.

    Parameters
    ----------
    hb_m : array_like
        Significant wave height at breaking [m]. Negative gives NaN.
    alpha_b_deg : array_like
        Angle between the wave ray and the seaward normal at breaking [deg], positive
        toward increasing chainage.
    breaker_index : float, optional
        Breaker index gamma = Hb/db [-]; default 0.78 (McCowan, CEM II-1).
    water_density_kg_m3 : float, optional
        Water density [kg/m3]; 1025 for sea water, 1000 for fresh water.

    Returns
    -------
    numpy.ndarray
        Longshore energy flux factor P_l [W/m], signed like the angle.

    Notes
    -----
    P_l = (E Cg)_b sin(alpha_b) cos(alpha_b), with E = rho g Hb**2 / 8 and the shallow-water
    group velocity at breaking Cg_b = sqrt(g db) = sqrt(g Hb / gamma) (CEM III-2, the terms
    of Eq. III-2-7).

    References
    ----------
    U.S. Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100,
    Part III, Chapter 2, Eq. III-2-7.

    Examples
    --------
    >>> round(float(longshore_energy_flux(1.0, 10.0)), 1)
    762.3
    """
    hb = _non_negative(hb_m)
    alpha = np.deg2rad(np.asarray(alpha_b_deg, dtype=float))
    energy_j_m2 = water_density_kg_m3 * G_M_S2 * hb**2 / 8.0
    group_velocity_m_s = np.sqrt(G_M_S2 * hb / breaker_index)
    return energy_j_m2 * group_velocity_m_s * np.sin(alpha) * np.cos(alpha)


def cerc(
    hb_m: ArrayLike,
    alpha_b_deg: ArrayLike,
    k: ArrayLike = 0.39,
    breaker_index: float = 0.78,
    water_density_kg_m3: float = 1025.0,
    sediment_density_kg_m3: float = 2650.0,
    porosity: float = 0.4,
) -> np.ndarray:
    """Longshore transport rate by the CERC formula, CEM III-2 Eq. III-2-7.

    Parameters
    ----------
    hb_m : array_like
        Significant wave height at breaking [m]. Negative gives NaN; zero gives zero
        transport whatever the angle (no waves, no transport).
    alpha_b_deg : array_like
        Angle between the wave ray and the seaward normal at breaking [deg], positive
        toward increasing chainage. The formula is evaluated for any angle; sheltering of
        waves from land (beyond 90 degrees) is the caller's decision.
    k : array_like, optional
        CERC coefficient for *significant* height [-]; default 0.39 (SPM 1984, as quoted in
        CEM III-2). Broadcasts, e.g. one value per transect from
        ``k_del_valle(d50_mm, height="significant")``. A coefficient fitted with rms height
        (0.92 in CEM III-2, 0.77 Komar & Inman 1970) must first go through
        :func:`k_rms_to_significant`.
    breaker_index : float, optional
        Breaker index gamma = Hb/db [-], used for the group velocity at breaking; default 0.78.
    water_density_kg_m3 : float, optional
        Water density [kg/m3]; 1025 sea water, 1000 fresh water.
    sediment_density_kg_m3 : float, optional
        Sediment grain density [kg/m3]; 2650 for quartz.
    porosity : float, optional
        In-place porosity of the deposited sand [-]; default 0.4.

    Returns
    -------
    numpy.ndarray
        Volumetric longshore transport rate, bulk volume with pores [m3/s], signed like the
        angle (positive toward increasing chainage).

    Notes
    -----
    CEM III-2 Eq. III-2-7: I_l = K P_l, I_l the immersed-weight transport rate [N/s], with
    P_l from :func:`longshore_energy_flux`. The volume rate is

        Q = K P_l / ((rho_s - rho) g (1 - n))
          = K rho sqrt(g) Hb**2.5 sin(2 alpha_b) / (16 sqrt(gamma) (rho_s - rho) (1 - n)).

    Height convention: this function uses significant height with K = 0.39. The CEM quotes
    K = 0.92 for rms height as the equivalent; the exact conversion is the factor
    (sqrt 2)**2.5 = 2.378 (Hs = sqrt(2) Hrms for Rayleigh heights), which turns 0.39 into 0.93
    rather than 0.92: the two published forms differ by about 1 %. This function applies no
    conversion itself; it uses the K it is given with the significant height it is given.

    The rate is zero at 0 and 90 degrees and largest at 45 degrees, and goes as Hb**2.5.

    References
    ----------
    U.S. Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100,
    Part III, Chapter 2, Eq. III-2-7.
    U.S. Army Corps of Engineers (1984). Shore Protection Manual, 4th ed.

    Examples
    --------
    >>> round(float(cerc(1.0, 10.0)), 5)
    0.03108
    >>> round(float(cerc(1.0, -10.0)), 5)
    -0.03108
    """
    # Q = K rho sqrt(g) Hb^2.5 sin(2 alpha_b) / (16 sqrt(gamma) (rho_s - rho) (1 - n)): the
    # same as K P_l / ((rho_s - rho) g (1 - n)) with P_l from longshore_energy_flux, written
    # with fewer temporaries because the run evaluates it on millions of transect-steps.
    hb = _non_negative(hb_m)
    scale = (
        water_density_kg_m3
        * np.sqrt(G_M_S2)
        / (16.0 * np.sqrt(breaker_index))
        / ((sediment_density_kg_m3 - water_density_kg_m3) * (1.0 - porosity))
    )
    q_m3_per_s = np.sqrt(hb) * hb
    q_m3_per_s *= hb
    q_m3_per_s = q_m3_per_s * np.sin(np.deg2rad(2.0 * np.asarray(alpha_b_deg, dtype=float)))
    q_m3_per_s *= scale
    q_m3_per_s = q_m3_per_s * np.asarray(k, dtype=float)
    # no waves move no sand, whatever the angle (a calm has no meaningful wave direction)
    return np.where(hb == 0.0, 0.0, q_m3_per_s)


def kamphuis(
    hb_m: ArrayLike,
    tp_s: ArrayLike,
    slope: ArrayLike,
    d50_mm: ArrayLike,
    alpha_b_deg: ArrayLike,
    coefficient: float = 2.27,
    water_density_kg_m3: float = 1025.0,
    sediment_density_kg_m3: float = 2650.0,
    porosity: float = 0.4,
) -> np.ndarray:
    """Longshore transport rate by the formula of Kamphuis (1991).

    Parameters
    ----------
    hb_m : array_like
        Significant wave height at breaking Hsb [m]. Negative gives NaN; zero gives zero
        transport whatever the other inputs (no waves, no transport, even where the slope of a
        calm is undefined).
    tp_s : array_like
        Peak wave period [s]. Negative gives NaN.
    slope : array_like
        Beach slope mb from the breaker line to the shoreline [-] (rise over run), e.g.
        :func:`shoreline.profile.breaker_zone_slope`. Zero or negative gives NaN.
    d50_mm : array_like
        Median grain diameter [mm] (converted to metres inside). Zero or negative gives NaN.
    alpha_b_deg : array_like
        Angle between the wave ray and the seaward normal at breaking [deg], positive
        toward increasing chainage.
    coefficient : float, optional
        Leading coefficient; default 2.27 (Kamphuis 1991). A later restatement uses 2.33.
    water_density_kg_m3 : float, optional
        Water density [kg/m3]; 1025 sea water, 1000 fresh water.
    sediment_density_kg_m3 : float, optional
        Sediment grain density [kg/m3]; 2650 for quartz.
    porosity : float, optional
        In-place porosity of the deposited sand [-]; default 0.4.

    Returns
    -------
    numpy.ndarray
        Volumetric longshore transport rate, bulk volume with pores [m3/s], signed like the
        angle (positive toward increasing chainage).

    Notes
    -----
    Kamphuis (1991), recalled, not re-read:

        Q_m = 2.27 Hsb**2 Tp**1.5 mb**0.75 D50**-0.25 sin**0.6(2 alpha_b)

    with Hsb in m, Tp in s, D50 in **metres**, and Q_m the *immersed-mass* transport rate in
    kg/s. The volume rate with pores is Q = Q_m / ((rho_s - rho) (1 - n)). The fractional
    power of a negative sine is taken as sign(sin 2 alpha_b) |sin 2 alpha_b|**0.6 (the same as
    sign(alpha_b) for angles within 90 degrees), so the rate changes sign with the angle as
    the CERC rate does.

    References
    ----------
    Kamphuis, J. W. (1991). Alongshore sediment transport rate. Journal of Waterway, Port,
    Coastal, and Ocean Engineering, 117(6), 624-640.

    Examples
    --------
    >>> round(float(kamphuis(2.0, 8.0, 0.02, 0.25, 10.0)), 4)
    0.0468
    """
    hsb = _non_negative(hb_m)
    tp = _non_negative(tp_s)
    mb = _positive(slope)
    d50_m = _positive(d50_mm) * 1e-3
    sin_2a = np.sin(np.deg2rad(2.0 * np.asarray(alpha_b_deg, dtype=float)))
    angle_term = np.sign(sin_2a) * np.abs(sin_2a) ** 0.6
    scale = coefficient / ((sediment_density_kg_m3 - water_density_kg_m3) * (1.0 - porosity))
    # immersed mass rate [kg/s] / ((rho_s - rho)(1 - n)) = bulk volume rate [m3/s]
    q_m3_per_s = angle_term * (hsb * hsb) * (tp**1.5 * (d50_m**-0.25 * scale)) * mb**0.75
    # no waves move no sand, whatever the other inputs (a calm has no breaker line, so the
    # slope from the equilibrium profile is NaN there)
    return np.where(hsb == 0.0, 0.0, q_m3_per_s)


# --- The registry ------------------------------------------------------------------------------
#
# FORMULAS names the published functions. _FROM_CONDITIONS holds one explicit adapter per name
# that picks, from the common set of breaking conditions, the arguments that formula takes.


@dataclass(frozen=True)
class _Conditions:
    """The common set of breaking conditions and coefficients every formula is called with."""

    hb_m: ArrayLike
    tp_s: ArrayLike
    alpha_b_deg: ArrayLike
    slope: ArrayLike
    d50_mm: ArrayLike
    breaker_index: float
    cerc_k: ArrayLike
    kamphuis_coefficient: float
    water_density_kg_m3: float
    sediment_density_kg_m3: float
    porosity: float


def _cerc_from_conditions(c: _Conditions) -> np.ndarray:
    return cerc(
        c.hb_m,
        c.alpha_b_deg,
        k=c.cerc_k,
        breaker_index=c.breaker_index,
        water_density_kg_m3=c.water_density_kg_m3,
        sediment_density_kg_m3=c.sediment_density_kg_m3,
        porosity=c.porosity,
    )


def _kamphuis_from_conditions(c: _Conditions) -> np.ndarray:
    return kamphuis(
        c.hb_m,
        c.tp_s,
        c.slope,
        c.d50_mm,
        c.alpha_b_deg,
        coefficient=c.kamphuis_coefficient,
        water_density_kg_m3=c.water_density_kg_m3,
        sediment_density_kg_m3=c.sediment_density_kg_m3,
        porosity=c.porosity,
    )


FORMULAS: dict[str, Callable[..., np.ndarray]] = {
    "cerc": cerc,
    "kamphuis": kamphuis,
}
"""Longshore transport formulas by name: name -> function returning ``[m3/s]``."""

_FROM_CONDITIONS: dict[str, Callable[[_Conditions], np.ndarray]] = {
    "cerc": _cerc_from_conditions,
    "kamphuis": _kamphuis_from_conditions,
}


def formula_names() -> tuple[str, ...]:
    """Return the names of the longshore transport formulas, sorted.

    Examples
    --------
    >>> formula_names()
    ('cerc', 'kamphuis')
    """
    return tuple(sorted(FORMULAS))


def longshore_transport(
    name: str,
    *,
    hb_m: ArrayLike,
    tp_s: ArrayLike,
    alpha_b_deg: ArrayLike,
    slope: ArrayLike,
    d50_mm: ArrayLike,
    breaker_index: float = 0.78,
    cerc_k: ArrayLike = 0.39,
    kamphuis_coefficient: float = 2.27,
    water_density_kg_m3: float = 1025.0,
    sediment_density_kg_m3: float = 2650.0,
    porosity: float = 0.4,
) -> np.ndarray:
    """Longshore transport rate by the named formula from one common set of conditions.

    Every formula gets the same call; each receives only the conditions it uses (CERC ignores
    ``tp_s``, ``slope`` and ``d50_mm``).

    Parameters
    ----------
    name : str
        A name from :func:`formula_names` (``"cerc"`` or ``"kamphuis"``).
    hb_m : array_like
        Significant wave height at breaking [m].
    tp_s : array_like
        Peak wave period [s].
    alpha_b_deg : array_like
        Angle at breaking to the seaward normal [deg], positive toward increasing chainage.
    slope : array_like
        Beach slope from the breaker line to the shoreline [-], e.g.
        ``shoreline.profile.breaker_zone_slope(db_m, d50_mm)``.
    d50_mm : array_like
        Median grain diameter [mm].
    breaker_index : float, optional
        Hb/db [-] (CERC group velocity at breaking).
    cerc_k : array_like, optional
        CERC coefficient for significant height [-]; 0.39 by default, or per transect from
        ``k_del_valle(d50_mm, height="significant")``.
    kamphuis_coefficient : float, optional
        Kamphuis leading coefficient; 2.27 (1991) by default, 2.33 in a later restatement.
    water_density_kg_m3, sediment_density_kg_m3 : float, optional
        Densities [kg/m3]; 1025 (sea water) and 2650 (quartz).
    porosity : float, optional
        Porosity of the deposited sand [-].

    Returns
    -------
    numpy.ndarray
        Volumetric longshore transport rate [m3/s], positive toward increasing chainage.

    Raises
    ------
    ValueError
        If ``name`` is not a known formula; the message lists the valid names.

    Examples
    --------
    >>> q = longshore_transport(
    ...     "kamphuis", hb_m=2.0, tp_s=8.0, alpha_b_deg=10.0, slope=0.02, d50_mm=0.25
    ... )
    >>> round(float(q), 4)
    0.0468
    """
    adapter = _FROM_CONDITIONS.get(name)
    if adapter is None:
        raise ValueError(
            f"unknown longshore transport formula {name!r}; expected one of "
            f"{', '.join(repr(n) for n in formula_names())}"
        )
    conditions = _Conditions(
        hb_m=hb_m,
        tp_s=tp_s,
        alpha_b_deg=alpha_b_deg,
        slope=slope,
        d50_mm=d50_mm,
        breaker_index=breaker_index,
        cerc_k=cerc_k,
        kamphuis_coefficient=kamphuis_coefficient,
        water_density_kg_m3=water_density_kg_m3,
        sediment_density_kg_m3=sediment_density_kg_m3,
        porosity=porosity,
    )
    return adapter(conditions)
