"""What kind of shore each transect stands on: open coast, or a shore the budget leaves out.

A screening of longshore transport is about open sandy coast. Transects elsewhere get a shore
type of their own, are never erosion or accretion hotspots, and are left out of their
neighbours' transport gradients (:func:`shoreline.budget.face_budget`):

- ``enclosed``: the transect's view does not reach the open sea (estuaries, harbour basins,
  river mouths, lagoon shores behind a barrier), from :mod:`shoreline.exposure`;
- ``data_edge``: the shore is an edge of the data's clipping box (land polygons cut out of a
  larger map), not a coast;
- ``excluded``: a reach the user excludes (``[coast] reaches``, ``treat = "exclude"``).

A user reach with ``treat = "non_erodible"`` (rock, a seawall, a revetment) stays in the budget
as ``non_erodible``: transport out of it is limited to what arrives, so it cannot erode.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import shapely

from shoreline.coast import Transects
from shoreline.errors import CoastError

#: Shore types, in the order used for codes.
SHORE_TYPES = ("open", "enclosed", "data_edge", "excluded", "non_erodible")

#: Values of the ``treat`` attribute of a reaches layer.
TREATMENTS = ("exclude", "non_erodible")


def read_reaches(path: Path, transects: Transects, layer: str | None = None):
    """Transects inside user reaches: ``(excluded, non_erodible)`` boolean arrays.

    The layer holds polygons (a transect belongs to a reach when its shore point is inside)
    or lines drawn along the shore (within one transect spacing of the line), in any CRS,
    each with a text attribute ``treat``: ``"exclude"`` or ``"non_erodible"``.

    Raises
    ------
    CoastError
        A missing or unreadable file, no CRS, no ``treat`` attribute, an unknown treatment,
        or geometry that is neither polygons nor lines.
    """
    import geopandas as gpd

    path = Path(path)
    try:
        frame = gpd.read_file(path, layer=layer, engine="pyogrio")
    except Exception as exc:  # any reader failure: the user's file to fix
        if not path.exists():
            raise CoastError(f"{path}: reaches file ([coast] reaches) not found") from None
        reason = " ".join(str(exc).split())
        raise CoastError(f"{path}: cannot read the reaches file ({reason})") from None
    if frame.crs is None:
        raise CoastError(f"{path.name}: the reaches file has no CRS; save it with one")
    if "treat" not in frame.columns:
        raise CoastError(
            f"{path.name}: the reaches file needs a text attribute 'treat' on every feature: "
            + " or ".join(repr(t) for t in TREATMENTS)
        )
    treat = frame["treat"].astype(str).str.strip().str.lower().to_numpy()
    bad = np.flatnonzero(~np.isin(treat, TREATMENTS))
    if bad.size:
        raise CoastError(
            f"{path.name}: feature {bad[0]} has treat = {frame['treat'].iloc[bad[0]]!r}; "
            "expected " + " or ".join(repr(t) for t in TREATMENTS)
        )
    geoms = np.asarray(frame.to_crs(transects.working_crs).geometry.array, dtype=object)
    points = shapely.points(transects.x_m, transects.y_m)
    out = {t: np.zeros(len(transects), dtype=bool) for t in TREATMENTS}
    for g, t in zip(geoms, treat, strict=True):
        if g is None or shapely.is_empty(g):
            continue
        dim = shapely.get_dimensions(g)
        if dim == 2:
            inside = shapely.contains_xy(g, transects.x_m, transects.y_m)
        elif dim == 1:
            inside = shapely.dwithin(g, points, np.asarray(transects.spacing_m))
        else:
            raise CoastError(
                f"{path.name}: reaches must be polygons around a stretch of shore or lines along "
                f"it; found {g.geom_type}"
            )
        out[t] |= inside
    return out["exclude"], out["non_erodible"]


#: Angle between the long rays of :func:`reaches_open_sea` [deg].
OPEN_SEA_STEP_DEG = 3.0


def reaches_open_sea(
    transects: Transects,
    coast_parts: list,
    land: list | None,
    distance_m: float,
    start_m: float,
    rows: np.ndarray,
) -> np.ndarray:
    """Whether each transect's view reaches the open sea over ``distance_m`` (long rays).

    The sheltering rays look ``exposure_distance_m`` far; a sound, a fjord or a wide lagoon
    behind a barrier can be wider than that and look open. Here rays every
    :data:`OPEN_SEA_STEP_DEG` are cast ``distance_m`` far against the coast and land
    (:func:`shoreline.exposure.compute_exposure`, geometric, with its grazing rule), from the
    transects of ``rows`` (the others are returned False);
    a transect reaches the open sea when the view factor of these rays passes the same test
    as the short rays' (``open_coast``).
    """
    from shoreline.exposure import compute_exposure

    out = np.zeros(len(transects), dtype=bool)
    pick = np.flatnonzero(rows)
    if pick.size == 0:
        return out
    far = compute_exposure(
        transects.subset(pick),
        coast_parts,
        land=land or None,
        max_distance_m=distance_m,
        step_deg=OPEN_SEA_STEP_DEG,
        start_offset_m=start_m,
        spreading_s=None,
        wavelength_m=None,
    )
    out[pick] = far.open_coast
    return out


def shore_types(
    n: int,
    enclosed: np.ndarray | None = None,
    data_edge: np.ndarray | None = None,
    excluded: np.ndarray | None = None,
    non_erodible: np.ndarray | None = None,
) -> np.ndarray:
    """One shore type per transect (the first that applies, in the order of the arguments).

    Examples
    --------
    >>> shore_types(3, enclosed=np.array([False, True, False]),
    ...             non_erodible=np.array([True, True, False])).tolist()
    ['non_erodible', 'enclosed', 'open']
    """
    out = np.full(n, "open", dtype=object)
    for name, mask in (
        ("non_erodible", non_erodible),
        ("excluded", excluded),
        ("data_edge", data_edge),
        ("enclosed", enclosed),
    ):
        if mask is not None:
            out[np.asarray(mask, dtype=bool)] = name
    return out.astype(str)
