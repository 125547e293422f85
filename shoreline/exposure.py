"""Sheltering by land and fetch over water, from the coast geometry alone.

For every transect, straight rays are cast over the water from a point a short way seaward of
the shore point, one per ``step_deg`` of TRUE azimuth, each ``max_distance_m`` long on the
ground, against the coast lines themselves (a headland shelters its bay) and any extra land
(islands, breakwaters, as polygons or lines). A direction is *open* when its ray meets no land
within ``max_distance_m`` and it lies within 90 degrees of the seaward normal; the *fetch* in a
direction is the ground distance over water to the first land met.

These are geometric shadows only: no diffraction into the lee of a breakwater or island, no
refraction of waves around a headland, no wave growth. A sheltered direction is simply one
whose straight line back toward the sea crosses land. See ``docs/methods.md``.

Directions are where waves (or wind) come FROM, degrees clockwise from true north, as
everywhere in this package: the ray for direction theta runs from the transect toward theta.

Examples
--------
A straight shore along grid east in UTM 31N, on its central meridian (grid north is true north
there, scale factor 0.9996), sea to the south, with a detached breakwater 500 m offshore:

>>> import numpy as np, pyproj, shapely
>>> from shoreline.coast import Transects
>>> t = Transects(transect_id=[0], part_id=[0], chainage_m=[5000.0], x_m=[500000.0],
...               y_m=[5000000.0], normal_az_deg=[180.0], spacing_m=[100.0],
...               part_closed=[False], working_crs=pyproj.CRS("EPSG:32631"))
>>> shore = shapely.LineString([(495000.0, 5000000.0), (505000.0, 5000000.0)])
>>> float(compute_exposure(t, [shore]).exposure_deg[0])  # rays 90, 91, ..., 270 deg
181.0
>>> breakwater = shapely.LineString([(499500.0, 4999500.0), (500500.0, 4999500.0)])
>>> e = compute_exposure(t, [shore], land=[breakwater])
>>> bool(e.is_open(180.0)[0]), bool(e.is_open(120.0)[0])
(False, True)
>>> round(float(e.fetch_toward(180.0)[0]), 2)  # 500 m of grid / k = 0.9996, less 20 m
480.2
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from shoreline.coast import Transects, _frozen_array, _scale_and_north
from shoreline.errors import CoastError

__all__ = ["SEGMENT_M", "Exposure", "compute_exposure"]

#: Coast and land are cut into straight pieces at most this long (grid metres) for the spatial
#: index, so a query returns only the shore near a transect [m].
SEGMENT_M = 200.0

#: Transects handled together; bounds the memory of the candidate pairs.
_CHUNK = 400

#: A chunk whose transects meet more candidate segments than this is split in two [pairs].
_MAX_PAIRS = 1_500_000

#: Grid step used to estimate the gradient of the scale factor k at a ray's start [m].
_K_STEP_M = 1000.0

#: Angular slack when listing the rays that may cross a segment [deg]; the exact
#: intersection test then decides. Keeps a ray through a shared vertex on both neighbours.
_ANGLE_SLACK_DEG = 1e-6

#: Slack on the segment parameter in the intersection test (fraction of the segment).
_S_SLACK = 1e-9

#: A direction within this of 90 degrees from the normal counts as within 90 degrees [deg].
_EDGE_DEG = 1e-9

_POLYGON_TYPES = (3, 6)  # Polygon, MultiPolygon
_LINE_TYPES = (1, 2, 5)  # LineString, LinearRing, MultiLineString
_COLLECTION_TYPE = 7


@dataclass(frozen=True, eq=False)
class Exposure:
    """Open directions and fetch per transect, from geometric rays (see :func:`compute_exposure`).

    Geometric shadows only: no diffraction, no refraction around headlands.

    Attributes
    ----------
    directions_deg : numpy.ndarray, shape (m,)
        Ray directions: ``0, step, 2 step, ...`` degrees, TRUE-north azimuths the waves or wind
        come FROM [deg]. Ray k stands for the directions within half a step of it.
    open : numpy.ndarray of bool, shape (n, m)
        Waves from that direction reach the ray start over open water: the ray meets no land
        within ``max_distance_m`` and the direction is within 90 degrees of the seaward normal.
        False for transects with an undefined (NaN) normal.
    fetch_m : numpy.ndarray, shape (n, m)
        Ground distance from the ray start to the first land along the ray, capped at
        ``max_distance_m`` where no land is met; 0 where the direction is more than 90 degrees
        from the seaward normal (landward); NaN for transects with a NaN normal [m].
    exposure_deg : numpy.ndarray, shape (n,)
        Total open width: number of open rays times the step [deg]; NaN for a NaN normal.
    open_from_deg, open_to_deg : numpy.ndarray, shape (n,)
        The widest contiguous open sector, clockwise from ``open_from_deg`` to ``open_to_deg``
        (wrap-aware: ``open_from_deg > open_to_deg`` when it spans north). Its edges are half a
        step outside the first and last open rays, so its width equals the run's share of
        ``exposure_deg``. NaN if no ray is open; 0 and 360 if every ray is open. Of equally wide
        sectors, the one ending first clockwise from north is given.
    max_distance_m : float
        Ray length on the ground [m].
    start_offset_m : float
        Distance of the ray start seaward of the shore point along the normal, on the ground [m].
    """

    directions_deg: np.ndarray
    open: np.ndarray
    fetch_m: np.ndarray
    exposure_deg: np.ndarray
    open_from_deg: np.ndarray
    open_to_deg: np.ndarray
    max_distance_m: float
    start_offset_m: float

    def __post_init__(self):
        object.__setattr__(self, "directions_deg", _frozen_array(self.directions_deg, float))
        object.__setattr__(self, "open", _frozen_array(self.open, bool))
        for name in ("fetch_m", "exposure_deg", "open_from_deg", "open_to_deg"):
            object.__setattr__(self, name, _frozen_array(getattr(self, name), float))
        n, m = len(self.exposure_deg), len(self.directions_deg)
        for name in ("open", "fetch_m"):
            if getattr(self, name).shape != (n, m):
                raise ValueError(f"Exposure.{name} must have shape (n_transects, m) = ({n}, {m})")
        object.__setattr__(self, "max_distance_m", float(self.max_distance_m))
        object.__setattr__(self, "start_offset_m", float(self.start_offset_m))

    def __len__(self) -> int:
        """Return the number of transects."""
        return len(self.exposure_deg)

    @property
    def step_deg(self) -> float:
        """Angular step between rays [deg]."""
        return 360.0 / len(self.directions_deg)

    def _lookup(self, table, dir_deg, transect_index, fill):
        d = np.asarray(dir_deg, dtype=float)
        n = table.shape[0]
        if transect_index is None:
            idx = np.arange(n).reshape((n,) + (1,) * max(d.ndim - 1, 0))
        else:
            idx = np.asarray(transect_index)
            if not np.issubdtype(idx.dtype, np.integer):
                raise ValueError(f"transect_index must hold integers; got an array of {idx.dtype}")
        try:
            idx, d = np.broadcast_arrays(idx, d)
        except ValueError as exc:
            raise ValueError(
                f"dir_deg of shape {d.shape} does not broadcast against the transects "
                f"(shape {idx.shape}); put transects on the first axis, e.g. (n, t) or (1, t)"
            ) from exc
        ok = np.isfinite(d)
        m = table.shape[1]
        k = np.rint(np.where(ok, d, 0.0) / self.step_deg).astype(np.int64) % m
        return np.where(ok, table[idx, k], fill)

    def is_open(self, dir_deg, transect_index=None) -> np.ndarray:
        """Whether waves from ``dir_deg`` reach each transect over open water (nearest ray).

        Parameters
        ----------
        dir_deg : float or array_like
            Directions waves come FROM, clockwise from true north [deg]. Transects are on the
            first axis: a scalar, shape (n,), (n, t) or (1, t) with ``transect_index`` None.
        transect_index : array_like of int, optional
            Transect of each direction; broadcasts against ``dir_deg``. Default: all transects
            along the first axis.

        Returns
        -------
        numpy.ndarray of bool
            Shape (n,) for a scalar direction, else the broadcast shape. The nearest ray decides
            (ray k stands for directions within half a step of it). A NaN direction gives False.
        """
        return self._lookup(self.open, dir_deg, transect_index, False).astype(bool)

    def fetch_toward(self, dir_deg, transect_index=None) -> np.ndarray:
        """Fetch over water toward ``dir_deg`` [m], from the nearest ray.

        Parameters
        ----------
        dir_deg : float or array_like
            Directions (wind or waves from), clockwise from true north [deg]; broadcasting as in
            :meth:`is_open`.
        transect_index : array_like of int, optional
            As in :meth:`is_open`.

        Returns
        -------
        numpy.ndarray
            Fetch of the nearest ray [m]: ``max_distance_m`` where no land is met, 0 for
            landward directions; NaN for a NaN direction or a transect with a NaN normal.

        Notes
        -----
        The nearest ray is used, not an interpolation between rays: at the edge of an island's
        shadow the fetch jumps from the island to ``max_distance_m``, and a value in between
        would describe no real line over the water. It also matches :meth:`is_open`.
        """
        return self._lookup(self.fetch_m, dir_deg, transect_index, np.nan)


def compute_exposure(
    transects: Transects,
    coast_parts: list,
    land: list | None = None,
    max_distance_m: float = 20000.0,
    step_deg: float = 1.0,
    start_offset_m: float = 20.0,
) -> Exposure:
    """Cast rays over the water from every transect; find open directions and fetch.

    Geometric shadows only: a direction is sheltered when the straight line back toward the sea
    crosses land. No diffraction (waves do bend into the lee of a breakwater or island), no
    refraction around headlands, no wave growth.

    Parameters
    ----------
    transects : shoreline.coast.Transects
        Shore points ``x_m, y_m`` in the working CRS and seaward normals ``normal_az_deg``
        (true north).
    coast_parts : list of shapely.LineString
        The shore lines in the same working CRS (e.g. ``CoastLines.parts``); they block rays
        like any land, so a headland shelters its bay.
    land : list of shapely geometries, optional
        Extra land in the same working CRS: polygons (islands, moles: the ray stops at their
        boundary; a ray start inside one is on land) and lines (breakwaters, groynes). Multi
        and collection geometries are taken apart; None and empty ones are skipped.
    max_distance_m : float, default 20000.0
        Ray length on the ground [m]: land farther than this does not shelter.
    step_deg : float, default 1.0
        Angle between rays [deg]; must divide 360.
    start_offset_m : float, default 20.0
        The rays start this far seaward of the shore point along the seaward normal, on the
        ground [m]: roughly where waves break rather than the waterline, and clear of the
        transect's own shore. Must be > 0.

    Returns
    -------
    Exposure

    Raises
    ------
    ValueError
        For a non-positive distance, offset or step, or a step that does not divide 360.
    CoastError
        For land that is not polygons or lines (e.g. points).

    Notes
    -----
    - **Start point.** ``S = P + o k n``: the shore point P moved ``start_offset_m`` (o) along
      the seaward normal n, in grid units (k the point scale factor).
    - **Directions.** Ray j has true azimuth ``theta_j = j step`` and grid azimuth
      ``theta_j + beta``, with beta the grid azimuth of true north at S (minus the meridian
      convergence; :func:`shoreline.coast._scale_and_north`). Only rays within 90 degrees of
      the normal (inclusive) are cast; the others are closed with fetch 0.
    - **Ground lengths.** A straight grid segment of grid length L from S has ground length
      L / k(midpoint) to second order. With k linear near S (gradient g by finite differences,
      ``_K_STEP_M``), the grid length of a ray of ground length D is
      ``L = D k0 / (1 - D g.u / 2)`` and a hit at grid distance t is at ground distance
      ``t / (k0 + g.u t / 2)``. Rays are straight grid lines tangent to the geodesic at S; at
      4.5 degrees from a UTM central meridian they end up to about 2.5 m to the side of the
      geodesic after 20 km (0.007 degrees of direction), negligible at a 1-degree step.
    - **Hits.** Coast and land are cut into straight segments of at most :data:`SEGMENT_M`
      (grid) in a ``shapely.STRtree``. For each transect the tree returns the segments whose
      boxes meet the box of its ray fan; each segment's angular extent seen from S selects the
      few rays that can cross it; the crossing of each such ray and segment is solved exactly
      in numpy (two 2-D cross products) and ``np.minimum.at`` keeps the first hit per ray. No
      Python loop over rays or transects (one over chunks of transects).
    - **Own shore.** No hit is discarded: the start offset keeps the origin off the shore, so a
      straight shore never meets a ray within 90 degrees of its normal (the two rays at exactly
      90 degrees run parallel to it and are open), and shore wiggles smaller than the offset
      block nothing. A shore that really turns seaward (a bay's arms, a headland) blocks
      grazing rays, as the geometry says.
    - A ray start inside a land polygon is on land: every ray closed, fetch 0.
    - **Fetch** is the straight-line fetch along one direction, as CEM Part II-2 asks for wind
      growth (not the older radially averaged "effective" fetch). It is capped at
      ``max_distance_m``: for wind-wave growth over open sea a capped value is a lower bound,
      so give a ``max_distance_m`` as long as the fetches that matter.

    References
    ----------
    Snyder, J. P. (1987). Map Projections: A Working Manual. USGS Professional Paper 1395,
    ch. 8 (transverse Mercator: scale factor and meridian convergence).

    U.S. Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Part II,
    ch. 2 (meteorology and wave climate: straight-line fetch).
    """
    d_m = float(max_distance_m)
    offset_m = float(start_offset_m)
    step = float(step_deg)
    if not (np.isfinite(d_m) and d_m > 0):
        raise ValueError(f"max_distance_m must be a finite distance > 0 [m]; got {max_distance_m}")
    if not (np.isfinite(offset_m) and offset_m > 0):
        raise ValueError(
            f"start_offset_m must be > 0 [m] (a ray starting on the shore meets it at once); "
            f"got {start_offset_m}"
        )
    if not (np.isfinite(step) and 0 < step <= 90):
        raise ValueError(f"step_deg must be in (0, 90] [deg]; got {step_deg}")
    m = int(round(360.0 / step))
    if abs(m * step - 360.0) > 1e-9 * 360.0:
        raise ValueError(f"step_deg must divide 360 (e.g. 0.5, 1, 2, 5); got {step_deg}")
    step = 360.0 / m
    directions = np.arange(m) * step

    n = len(transects)
    crs = transects.working_crs
    x, y = transects.x_m, transects.y_m
    normal = transects.normal_az_deg
    if n == 0:
        empty = np.empty(0)
        return Exposure(
            directions, np.zeros((0, m), bool), np.zeros((0, m)), empty, empty, empty, d_m, offset_m
        )

    # Ray starts and the local projection factors there.
    k_shore, beta_shore = _scale_and_north(crs, x, y)
    valid = np.isfinite(x) & np.isfinite(y) & np.isfinite(normal) & np.isfinite(k_shore)
    a = np.radians(np.where(valid, normal + beta_shore, 0.0))
    sx = np.where(valid, x + offset_m * k_shore * np.sin(a), 0.0)
    sy = np.where(valid, y + offset_m * k_shore * np.cos(a), 0.0)
    k0, beta = _scale_and_north(crs, sx, sy)
    kx, _ = _scale_and_north(crs, sx + _K_STEP_M, sy)
    ky, _ = _scale_and_north(crs, sx, sy + _K_STEP_M)
    valid &= np.isfinite(k0) & np.isfinite(beta)
    gx = np.where(np.isfinite(kx) & valid, (kx - k0) / _K_STEP_M, 0.0)
    gy = np.where(np.isfinite(ky) & valid, (ky - k0) / _K_STEP_M, 0.0)
    k0 = np.where(valid, k0, 1.0)
    beta = np.where(valid, beta, 0.0)
    normal_v = np.where(valid, normal, 0.0)

    rel = (directions[None, :] - normal_v[:, None] + 180.0) % 360.0 - 180.0
    cast = valid[:, None] & (np.abs(rel) <= 90.0 + _EDGE_DEG)

    seg, polygons = _land_segments(coast_parts, land)
    tree = shapely.STRtree(shapely.linestrings(seg.reshape(-1, 2, 2))) if len(seg) else None
    on_land = np.zeros(n, dtype=bool)
    if polygons:
        starts = shapely.points(sx[valid], sy[valid])
        hit_pt, _ = shapely.STRtree(polygons).query(starts, predicate="intersects")
        on_land[np.flatnonzero(valid)[hit_pt]] = True

    hit_ground = np.full((n, m), np.inf)
    if tree is not None:
        todo = np.flatnonzero(valid & ~on_land)
        for c0 in range(0, len(todo), _CHUNK):
            rows = todo[c0 : c0 + _CHUNK]
            hit_ground[rows] = _first_hits(
                rows, sx, sy, k0, gx, gy, beta, normal_v, cast, directions, step, d_m, seg, tree
            )

    blocked = np.isfinite(hit_ground) | on_land[:, None]
    open_ = cast & ~blocked
    fetch = np.where(cast, np.where(on_land[:, None], 0.0, np.minimum(hit_ground, d_m)), 0.0)
    fetch = np.where(valid[:, None], fetch, np.nan)
    exposure = np.where(valid, open_.sum(axis=1) * step, np.nan)
    open_from, open_to = _widest_open_sector(open_, step)
    return Exposure(directions, open_, fetch, exposure, open_from, open_to, d_m, offset_m)


def _first_hits(rows, sx, sy, k0, gx, gy, beta, normal, cast, directions, step, d_m, seg, tree):
    """Ground distance to the first land along every ray of transects ``rows`` (inf: none)."""
    c, m = len(rows), len(directions)
    px, py = sx[rows], sy[rows]
    grid_az = np.radians(directions[None, :] + beta[rows, None])
    ux, uy = np.sin(grid_az), np.cos(grid_az)
    g_u = gx[rows, None] * ux + gy[rows, None] * uy
    length = d_m * k0[rows, None] / (1.0 - 0.5 * d_m * g_u)  # grid length of each ray
    ccast = cast[rows]

    # Box of each ray fan (start point and the ends of the cast rays).
    ex = np.where(ccast, px[:, None] + length * ux, np.nan)
    ey = np.where(ccast, py[:, None] + length * uy, np.nan)
    with np.errstate(invalid="ignore"):
        boxes = shapely.box(
            np.fmin(px, np.nanmin(ex, axis=1)),
            np.fmin(py, np.nanmin(ey, axis=1)),
            np.fmax(px, np.nanmax(ex, axis=1)),
            np.fmax(py, np.nanmax(ey, axis=1)),
        )
    pair_t, pair_s = tree.query(boxes)
    if len(pair_t) > _MAX_PAIRS and c > 1:  # a dense coast: halve the chunk to bound memory
        half = c // 2
        args = (sx, sy, k0, gx, gy, beta, normal, cast, directions, step, d_m, seg, tree)
        return np.concatenate([_first_hits(rows[:half], *args), _first_hits(rows[half:], *args)])
    hit = np.full(c * m, np.inf)
    if len(pair_t) == 0:
        return hit.reshape(c, m)

    # Angular extent of each segment seen from the ray start, as a true azimuth interval.
    wx, wy = seg[pair_s, 0] - px[pair_t], seg[pair_s, 1] - py[pair_t]
    vx, vy = seg[pair_s, 2] - px[pair_t], seg[pair_s, 3] - py[pair_t]
    b = beta[rows][pair_t]
    az_a = np.degrees(np.arctan2(wx, wy)) - b
    az_b = np.degrees(np.arctan2(vx, vy)) - b
    span = (az_b - az_a) % 360.0
    wide = span > 180.0
    lo = np.where(wide, az_b, az_a)
    span = np.where(wide, 360.0 - span, span)
    # Clip to the cast half-circle [normal - 90, normal + 90]: one interval at most.
    sec_lo = normal[rows][pair_t] - 90.0
    rel_lo = (lo - sec_lo) % 360.0
    first_part = rel_lo <= 180.0
    iv_lo = np.where(first_part, rel_lo, 0.0)
    iv_hi = np.where(first_part, np.minimum(rel_lo + span, 180.0), rel_lo + span - 360.0)
    k_first = np.ceil((sec_lo + iv_lo - _ANGLE_SLACK_DEG) / step).astype(np.int64)
    k_last = np.floor((sec_lo + iv_hi + _ANGLE_SLACK_DEG) / step).astype(np.int64)
    count = np.maximum(k_last - k_first + 1, 0)

    # One entry per (ray, segment) that may cross.
    total = int(count.sum())
    if total == 0:
        return hit.reshape(c, m)
    pair = np.repeat(np.arange(len(pair_t)), count)
    ray = (np.repeat(k_first - (np.cumsum(count) - count), count) + np.arange(total)) % m
    row = pair_t[pair]
    flat = row * m + ray
    uxr, uyr = ux.ravel()[flat], uy.ravel()[flat]
    wxr, wyr = wx[pair], wy[pair]
    exr, eyr = vx[pair] - wxr, vy[pair] - wyr

    # S + t u = A + s e  =>  t = (w x e) / (u x e),  s = (w x u) / (u x e).
    denom = uxr * eyr - uyr * exr
    w_e = wxr * eyr - wyr * exr
    w_u = wxr * uyr - wyr * uxr
    e_len = np.hypot(exr, eyr)
    crossing = np.abs(denom) > 1e-12 * e_len
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(crossing, w_e / denom, np.inf)
        s = np.where(crossing, w_u / denom, np.nan)
    ok = crossing & (t >= 0.0) & (s >= -_S_SLACK) & (s <= 1.0 + _S_SLACK)
    # Parallel and on the ray's line (collinear): the nearest end of the overlap.
    collinear = ~crossing & (np.abs(w_u) <= 1e-9 * np.maximum(e_len, 1.0))
    if collinear.any():
        t0 = wxr * uxr + wyr * uyr
        t1 = t0 + exr * uxr + eyr * uyr
        near, far = np.minimum(t0, t1), np.maximum(t0, t1)
        overlap = collinear & (far >= 0.0)
        t = np.where(overlap, np.maximum(near, 0.0), t)
        ok |= overlap
    ok &= t <= length.ravel()[flat]
    np.minimum.at(hit, flat[ok], t[ok])

    # Grid to ground distance along the ray: t / k(midpoint), k linear near the start.
    hit = hit.reshape(c, m)
    with np.errstate(invalid="ignore"):
        return np.where(np.isfinite(hit), hit / (k0[rows, None] + 0.5 * g_u * hit), np.inf)


def _land_segments(coast_parts, land) -> tuple[np.ndarray, list]:
    """Straight segments (q, 4: x0 y0 x1 y1) of all coast and land, and the land polygons."""
    lines, polygons = [], []
    for label, items in (("coast_parts", coast_parts), ("land", land or [])):
        for i, geom in enumerate(items):
            _sort_geometry(geom, f"{label}[{i}]", lines, polygons)
    for poly in polygons:
        lines.extend(shapely.get_parts(shapely.boundary(poly)))
    if not lines:
        return np.empty((0, 4)), polygons
    lines = shapely.segmentize(np.asarray(lines, dtype=object), SEGMENT_M)
    xy, idx = shapely.get_coordinates(lines, return_index=True)
    same = idx[1:] == idx[:-1]
    seg = np.column_stack([xy[:-1][same], xy[1:][same]])
    keep = (seg[:, 0] != seg[:, 2]) | (seg[:, 1] != seg[:, 3])
    return seg[keep], polygons


def _sort_geometry(geom, label, lines, polygons) -> None:
    """Append the line and polygon parts of ``geom`` to ``lines`` / ``polygons``."""
    if geom is None:
        return
    if not isinstance(geom, shapely.Geometry):
        raise CoastError(f"{label} is a {type(geom).__name__}, not a shapely geometry")
    if geom.is_empty:
        return
    kind = shapely.get_type_id(geom)
    if kind in _POLYGON_TYPES:
        polygons.extend(shapely.get_parts(geom))
    elif kind in _LINE_TYPES:
        lines.extend(shapely.get_parts(geom))
    elif kind == _COLLECTION_TYPE:
        for j, part in enumerate(shapely.get_parts(geom)):
            _sort_geometry(part, f"{label} part {j}", lines, polygons)
    else:
        raise CoastError(
            f"{label} is a {geom.geom_type}; land must be polygons or lines (breakwaters, "
            "islands), in the working CRS"
        )


def _widest_open_sector(open_: np.ndarray, step: float) -> tuple[np.ndarray, np.ndarray]:
    """Edges (from, to) [deg] of the widest wrap-aware run of open rays per row.

    The edges lie half a step outside the run's first and last rays. NaN where nothing is
    open; 0 and 360 where everything is. Ties: the run that ends first (clockwise from ray 0).
    """
    n, m = open_.shape
    twice = np.concatenate([open_, open_], axis=1)
    pos = np.arange(2 * m)
    last_closed = np.maximum.accumulate(np.where(twice, -1, pos[None, :]), axis=1)
    run = pos[None, :] - last_closed
    end = np.argmax(run, axis=1)
    width = run[np.arange(n), end]
    first = end - width + 1
    frm = ((first % m) * step - 0.5 * step) % 360.0
    to = ((end % m) * step + 0.5 * step) % 360.0
    all_open = open_.all(axis=1)
    none_open = ~open_.any(axis=1)
    frm = np.where(all_open, 0.0, np.where(none_open, np.nan, frm))
    to = np.where(all_open, 360.0, np.where(none_open, np.nan, to))
    return frm, to
