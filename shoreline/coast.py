"""Coast geometry: reading a shoreline file, the working CRS, and shore-normal transects.

The coast is read from any vector GIS file that GDAL (through pyogrio) reads: Shapefile,
GeoPackage, GeoJSON, FlatGeobuf, ... Lines are shores with the sea on a stated side of their
digitised direction; land polygons have the sea outside the land, so every ring (exterior and
holes) is a closed shore. The geometry is reprojected into a local conformal metric working CRS
(the UTM zone of the data, or a transverse Mercator centred on it) and shore-normal transects are
laid out at a fixed ground spacing, each with its ground chainage and its seaward normal as a
true-north azimuth.

Distances in this module are on the ground (the ellipsoid), not on the projection grid: grid
lengths are divided by the point scale factor k of the working projection. Azimuths are from
true north: grid azimuths are corrected by the meridian convergence. Both come from
:meth:`pyproj.Proj.get_factors`. See ``docs/methods.md`` for the reasoning.

Examples
--------
>>> import numpy as np, pyproj, shapely
>>> utm31n = pyproj.CRS("EPSG:32631")
>>> shore = shapely.LineString([(500000.0, 5000000.0), (510000.0, 5000000.0)])
>>> coast = CoastLines(parts=[shore], closed=np.array([False]), source_feature=np.array([0]),
...                    working_crs=utm31n, source_crs=utm31n, warnings=[])
>>> t = lay_out_transects(coast, spacing_m=1000.0, orientation_window_m=500.0)
>>> len(t)  # 10,000 m of grid is 10,004 m on the ground (k = 0.9996): 11 transects
11
>>> float(t.spacing_m[0]), round(float(t.chainage_m[0]), 1), round(float(t.normal_az_deg[0]), 1)
(1000.0, 2.0, 180.0)
"""

from __future__ import annotations

import functools
import os
import warnings
from dataclasses import dataclass, field, replace

import geopandas
import numpy as np
import pyogrio
import pyogrio.errors
import pyproj
import shapely
from pyproj.aoi import AreaOfInterest
from pyproj.crs import ProjectedCRS
from pyproj.crs.coordinate_operation import TransverseMercatorConversion
from pyproj.database import query_utm_crs_info

from shoreline.bounds import LATITUDE_DEG, LONGITUDE_DEG, MAX_TRANSECTS
from shoreline.errors import CoastError, one_line
from shoreline.folders import require_regular_file

__all__ = [
    "SEA_SIDES",
    "CoastLines",
    "Transects",
    "check_frame_lonlat",
    "check_lonlat",
    "check_transect_count",
    "invalid_geometry",
    "lay_out_transects",
    "read_coast",
    "require_gis_source",
    "working_crs_for",
]

#: Valid values of the ``sea`` argument: the side of the digitised direction the sea lies on.
SEA_SIDES = ("left", "right")

#: Longest working-grid segment kept after reading [m]; longer segments are subdivided along the
#: straight line of the SOURCE CRS (RFC 7946 sec. 3.1.1 reading of a straight segment).
MAX_SEGMENT_M = 200.0

#: The UTM zone of the data's centre is used while every vertex lies within this many degrees
#: of longitude of the zone's central meridian (3 degrees is the zone edge) [deg].
UTM_MAX_OFFSET_DEG = 4.5

#: Latitude limits of the UTM system (beyond them UPS is the standard grid) [deg].
UTM_LAT_LIMITS_DEG = (-80.0, 84.0)

#: Ends of two open parts closer than this are reported as meeting [m].
_ENDS_MEET_M = 0.01

_LINE_TYPES = (1, 2)  # LineString, LinearRing
_POLYGON_TYPE = 3
_POINT_TYPES = (0, 4)  # Point, MultiPoint
_COLLECTION_TYPES = (4, 5, 6, 7)  # Multi* and GeometryCollection


# --------------------------------------------------------------------------------------------
# Data containers
# --------------------------------------------------------------------------------------------


def _frozen_array(values, dtype) -> np.ndarray:
    arr = np.array(values, dtype=dtype)
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True, eq=False)
class CoastLines:
    """Shores read from a coast file, in the working CRS.

    Attributes
    ----------
    parts : list of shapely.LineString
        Each shore in the working CRS, in its digitised direction (polygon rings: as stored).
        Closed parts repeat their first vertex at the end. Long segments are subdivided to at most
        :data:`MAX_SEGMENT_M` of grid.
    closed : numpy.ndarray of bool
        Per part: a closed ring (periodic, no ends).
    source_feature : numpy.ndarray of int
        Per part: position of the feature it came from in the file (counted from 0).
    working_crs : pyproj.CRS
        The local conformal metric CRS the parts are in (see :func:`working_crs_for`).
    source_crs : pyproj.CRS
        The CRS of the file (or the ``crs`` given for a file that carries none).
    warnings : list of str
        What was repaired, merged or skipped while reading, one line each.
    sea_on_right : numpy.ndarray of bool, optional
        Per part: the sea lies on the right of the part's direction (else on the left).
        Default: on the right of every part.
    path : str, optional
        The file the coast was read from (for messages).
    vertex_spacing_m, vertex_noise_m : float, optional
        Median spacing of the file's own vertices and the robust amplitude of their scatter
        about a smooth line (see :func:`vertex_noise`) [m]; NaN when not measured.
    data_edges : shapely.MultiLineString, optional
        Edges of land polygons that lie on the bounding box of all of them: the box the data
        was clipped with, not a coast (see :func:`box_edges`), in the working CRS; None if
        there are none.
    """

    parts: list[shapely.LineString]
    closed: np.ndarray
    source_feature: np.ndarray
    working_crs: pyproj.CRS
    source_crs: pyproj.CRS
    warnings: list = field(default_factory=list)
    sea_on_right: np.ndarray | None = None
    path: str = ""
    vertex_spacing_m: float = float("nan")
    vertex_noise_m: float = float("nan")
    data_edges: object = None

    def __post_init__(self):
        n = len(self.parts)
        sea = np.ones(n, dtype=bool) if self.sea_on_right is None else self.sea_on_right
        object.__setattr__(self, "parts", list(self.parts))
        object.__setattr__(self, "closed", _frozen_array(self.closed, bool))
        object.__setattr__(self, "source_feature", _frozen_array(self.source_feature, int))
        object.__setattr__(self, "sea_on_right", _frozen_array(sea, bool))
        for name in ("closed", "source_feature", "sea_on_right"):
            if getattr(self, name).shape != (n,):
                raise ValueError(f"CoastLines.{name} must hold one value per part ({n})")

    def __len__(self) -> int:
        """Return the number of shore parts."""
        return len(self.parts)


@dataclass(frozen=True, eq=False)
class Transects:
    """Shore-normal transects cast along a coast by :func:`lay_out_transects`.

    One entry per transect in every array.

    Attributes
    ----------
    transect_id : numpy.ndarray of int
        0 .. N-1 across the whole coast, in part order then chainage order.
    part_id : numpy.ndarray of int
        Index into :attr:`CoastLines.parts`.
    chainage_m : numpy.ndarray of float
        Distance along the part from its first vertex, on the ground [m].
    x_m, y_m : numpy.ndarray of float
        Shoreline point in the working CRS [m].
    normal_az_deg : numpy.ndarray of float
        Seaward normal, degrees clockwise from TRUE north, in [0, 360) [deg]; NaN where the
        shore orientation is undefined (see :attr:`warnings`).
    spacing_m : numpy.ndarray of float
        Ground spacing between transects on this transect's part [m]: the requested spacing on
        open parts, ``L / n`` on closed parts.
    part_closed : numpy.ndarray of bool
        The transect's part is a closed ring (chainage is periodic).
    working_crs : pyproj.CRS
        CRS of ``x_m`` and ``y_m``.
    warnings : list of str
        Parts skipped as too short, orientation windows capped, undefined orientations, a
        noisy line.
    grid_m : numpy.ndarray of float, optional
        Distance of the shore point along its part's geometry in the working CRS (grid
        metres, as ``shapely.line_locate_point`` would give) [m].
    orientation_window_m : float, optional
        The orientation window used (chosen from the data when asked for "auto") [m].
    orientation_noise_deg : float, optional
        Estimated orientation noise the window leaves (see :func:`lay_out_transects`) [deg].
    """

    transect_id: np.ndarray
    part_id: np.ndarray
    chainage_m: np.ndarray
    x_m: np.ndarray
    y_m: np.ndarray
    normal_az_deg: np.ndarray
    spacing_m: np.ndarray
    part_closed: np.ndarray
    working_crs: pyproj.CRS
    warnings: list = field(default_factory=list)
    grid_m: np.ndarray | None = None
    orientation_window_m: float = float("nan")
    orientation_noise_deg: float = float("nan")

    def __post_init__(self):
        if self.grid_m is not None:
            object.__setattr__(self, "grid_m", _frozen_array(self.grid_m, float))
        for name, dtype in (
            ("transect_id", int),
            ("part_id", int),
            ("chainage_m", float),
            ("x_m", float),
            ("y_m", float),
            ("normal_az_deg", float),
            ("spacing_m", float),
            ("part_closed", bool),
        ):
            object.__setattr__(self, name, _frozen_array(getattr(self, name), dtype))
        n = len(self.transect_id)
        for name in ("part_id", "chainage_m", "x_m", "y_m", "normal_az_deg", "spacing_m"):
            if getattr(self, name).shape != (n,):
                raise ValueError(f"Transects.{name} must hold one value per transect ({n})")

    def __len__(self) -> int:
        """Return the number of transects."""
        return len(self.transect_id)

    def subset(self, rows) -> Transects:
        """The transects at ``rows`` (renumbered from 0), with no warnings."""
        rows = np.asarray(rows)
        return replace(
            self,
            transect_id=np.arange(rows.size),
            part_id=self.part_id[rows],
            chainage_m=self.chainage_m[rows],
            x_m=self.x_m[rows],
            y_m=self.y_m[rows],
            normal_az_deg=self.normal_az_deg[rows],
            spacing_m=self.spacing_m[rows],
            part_closed=self.part_closed[rows],
            grid_m=None if self.grid_m is None else self.grid_m[rows],
            warnings=[],
        )

    def lines(self, length_m) -> np.ndarray:
        """Return each transect as a line from its shore point seaward along its normal.

        Parameters
        ----------
        length_m : float or array_like
            Length of each line on the ground [m]; a scalar or one value per transect.

        Returns
        -------
        numpy.ndarray of shapely.LineString
            Straight two-point lines in the working CRS; ``None`` where the normal or the
            length is NaN.

        Notes
        -----
        The grid direction is the true azimuth plus the grid azimuth of true north; the grid
        length is the ground length times the point scale factor k at the line's midpoint
        (conformal projection: k is the same in every direction).
        """
        n = len(self)
        length = np.broadcast_to(np.asarray(length_m, dtype=float), (n,))
        if np.any(length < 0):
            raise ValueError("length_m must be >= 0 [m]")
        x, y = self.x_m, self.y_m
        k, north_grid_az = _scale_and_north(self.working_crs, x, y)
        az = np.radians(self.normal_az_deg + north_grid_az)
        ux, uy = np.sin(az), np.cos(az)
        mid_k, _ = _scale_and_north(
            self.working_crs, x + 0.5 * length * k * ux, y + 0.5 * length * k * uy
        )
        grid_len = length * np.where(np.isfinite(mid_k), mid_k, k)
        coords = np.empty((n, 2, 2))
        coords[:, 0, 0], coords[:, 0, 1] = x, y
        coords[:, 1, 0], coords[:, 1, 1] = x + grid_len * ux, y + grid_len * uy
        out = np.full(n, None, dtype=object)
        ok = np.isfinite(coords).all(axis=(1, 2))
        if ok.any():
            out[ok] = shapely.linestrings(coords[ok])
        return out


# --------------------------------------------------------------------------------------------
# Working CRS
# --------------------------------------------------------------------------------------------


def working_crs_for(geometry) -> pyproj.CRS:
    """Choose the local conformal metric CRS to compute a coast in.

    Parameters
    ----------
    geometry : geopandas.GeoSeries, geopandas.GeoDataFrame or tuple of 4 floats
        Data with a CRS, or its lon/lat bounds ``(west, south, east, north)`` in degrees on
        WGS 84. ``west > east`` means the extent crosses the 180th meridian.

    Returns
    -------
    pyproj.CRS
        The WGS 84 UTM zone (EPSG:326zz north, 327zz south) of the centre of the data's extent
        when every vertex lies within :data:`UTM_MAX_OFFSET_DEG` of that zone's central meridian
        and between 80 S and 84 N; otherwise a transverse Mercator on WGS 84 centred on the
        data (scale 1 on its central meridian, origin at the centre).

    Notes
    -----
    Both are conformal, so angles (and the local scale factor) are the same in every direction
    at a point. The UTM zone number is ``floor((lon + 180) / 6) + 1`` with central meridian
    ``6 zone - 183`` and scale 0.9996 on it; its point scale factor grows to about 1.001 at the
    zone edge at the equator, and to about 1.0027 at 4.5 degrees: all such grid distances are
    corrected to ground distances, so the limit is about recognisable EPSG codes, not
    accuracy.

    References
    ----------
    Snyder, J. P. (1987). Map Projections: A Working Manual. USGS Professional Paper 1395,
    ch. 8 (transverse Mercator, UTM).

    Examples
    --------
    >>> working_crs_for((2.0, 44.0, 3.0, 45.0)).to_epsg()
    32631
    >>> working_crs_for((-70.5, -33.5, -70.0, -33.0)).to_epsg()
    32719
    >>> working_crs_for((10.0, 85.0, 20.0, 86.0)).name
    'Transverse Mercator on WGS 84 centred at 15.0000E 85.5000N'
    """
    if isinstance(geometry, (geopandas.GeoSeries, geopandas.GeoDataFrame)):
        if geometry.crs is None:
            raise ValueError("working_crs_for: the geometry has no CRS; set one first")
        coords = shapely.get_coordinates(np.asarray(geometry.geometry.array, dtype=object))
        if len(coords) == 0:
            raise ValueError("working_crs_for: the geometry has no vertices")
        lon, lat = _lonlat_transformer(geometry.crs).transform(coords[:, 0], coords[:, 1])
        west, east = _lon_extent(np.asarray(lon))
        south, north = float(np.min(lat)), float(np.max(lat))
    else:
        try:
            west, south, east, north = (float(v) for v in geometry)
        except (TypeError, ValueError) as exc:
            raise ValueError(
                "working_crs_for: expected a GeoSeries/GeoDataFrame or lon/lat bounds "
                f"(west, south, east, north); got {geometry!r}"
            ) from exc
        if east < west:
            east += 360.0
    if not np.all(np.isfinite([west, south, east, north])):
        raise ValueError("working_crs_for: the data has non-finite lon/lat coordinates")
    return _working_crs_from_extent(west, south, east, north)


def _lon_extent(lon: np.ndarray) -> tuple[float, float]:
    """Return the shortest longitude arc (west, east) holding all ``lon``; east may exceed 180."""
    s = np.unique(np.mod(lon, 360.0))
    gaps = np.diff(np.append(s, s[0] + 360.0))
    k = int(np.argmax(gaps))
    west = s[(k + 1) % len(s)]
    east = s[k] if s[k] >= west else s[k] + 360.0
    if west >= 180.0:
        west, east = west - 360.0, east - 360.0
    return float(west), float(east)


def _working_crs_from_extent(west, south, east, north) -> pyproj.CRS:
    lon0 = (west + east) / 2.0
    lon0 = (lon0 + 180.0) % 360.0 - 180.0
    lat0 = (south + north) / 2.0
    lat_lo, lat_hi = UTM_LAT_LIMITS_DEG
    if south >= lat_lo and north <= lat_hi:
        code, cm = _utm_zone(lon0, lat0)
        cm_near = cm + 360.0 * np.round(((west + east) / 2.0 - cm) / 360.0)
        if max(cm_near - west, east - cm_near) <= UTM_MAX_OFFSET_DEG:
            return pyproj.CRS.from_epsg(code)
    lon0, lat0 = round(lon0, 4), round(lat0, 4)
    conversion = TransverseMercatorConversion(
        latitude_natural_origin=lat0,
        longitude_natural_origin=lon0,
        false_easting=0.0,
        false_northing=0.0,
        scale_factor_natural_origin=1.0,
    )
    ew = "E" if lon0 >= 0 else "W"
    ns = "N" if lat0 >= 0 else "S"
    return ProjectedCRS(
        conversion=conversion,
        geodetic_crs=pyproj.CRS.from_epsg(4326),
        name=f"Transverse Mercator on WGS 84 centred at {abs(lon0):.4f}{ew} {abs(lat0):.4f}{ns}",
    )


@functools.lru_cache(maxsize=256)
def _utm_zone(lon0: float, lat0: float) -> tuple[int, float]:
    """Return (EPSG code, central meridian) of the WGS 84 UTM zone holding (lon0, lat0)."""
    zone = int(np.floor((lon0 + 180.0) / 6.0)) % 60 + 1
    prefix = "326" if lat0 >= 0 else "327"
    try:
        infos = query_utm_crs_info(
            datum_name="WGS 84", area_of_interest=AreaOfInterest(lon0, lat0, lon0, lat0)
        )
    except pyproj.exceptions.PyprojError:  # pragma: no cover - database trouble
        infos = []
    codes = [int(i.code) for i in infos if i.auth_name == "EPSG" and i.code.startswith(prefix)]
    if codes:
        zones = np.array([c % 100 for c in codes])
        dist = np.abs((zones * 6.0 - 183.0 - lon0 + 180.0) % 360.0 - 180.0)
        zone = int(zones[np.argmin(dist)])
    return int(prefix) * 100 + zone, zone * 6.0 - 183.0


@functools.lru_cache(maxsize=16)
def _lonlat_transformer(crs: pyproj.CRS) -> pyproj.Transformer:
    return pyproj.Transformer.from_crs(crs, pyproj.CRS.from_epsg(4326), always_xy=True)


@functools.lru_cache(maxsize=16)
def _geodetic_transformer(crs: pyproj.CRS) -> pyproj.Transformer:
    return pyproj.Transformer.from_crs(crs, crs.geodetic_crs, always_xy=True)


@functools.lru_cache(maxsize=16)
def _proj(crs: pyproj.CRS) -> pyproj.Proj:
    return pyproj.Proj(crs)


def _scale_and_north(crs: pyproj.CRS, x, y) -> tuple[np.ndarray, np.ndarray]:
    """Return the point scale factor k and the grid azimuth of true north [deg] at grid points.

    Notes
    -----
    k is PROJ's meridional scale h (for a conformal projection h = k in every direction).
    The grid azimuth of true north is ``atan2(dx/dphi, dy/dphi)``: the grid direction of a
    step north along the meridian, from PROJ's partial derivatives. It is minus the meridian
    convergence gamma of Snyder (1987, ch. 8; to first order gamma = dlambda sin phi), i.e.
    ``true azimuth = grid azimuth + gamma = grid azimuth - north_grid_az``. Using the
    derivatives avoids depending on the sign convention of a reported convergence angle.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    if x.size == 0:
        return np.empty(x.shape), np.empty(x.shape)
    lon, lat = _geodetic_transformer(crs).transform(x, y)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        f = _proj(crs).get_factors(np.asarray(lon), np.asarray(lat), errcheck=False)
    k = np.asarray(f.meridional_scale, dtype=float)
    north = np.degrees(np.arctan2(f.dx_dphi, f.dy_dphi))
    bad = ~(np.isfinite(k) & (k > 0) & np.isfinite(north))
    k = np.where(bad, np.nan, k)
    north = np.where(bad, np.nan, north)
    return k.reshape(x.shape), north.reshape(x.shape)


# --------------------------------------------------------------------------------------------
# Reading
# --------------------------------------------------------------------------------------------

_EXPECTED = (
    "expected a vector GIS file (Shapefile, GeoPackage, GeoJSON, ...) holding the shoreline as "
    "lines or land polygons"
)


def _ids(ids, limit: int = 10) -> str:
    ids = [int(i) for i in ids]
    text = ", ".join(str(i) for i in ids[:limit])
    if len(ids) > limit:
        text += f" and {len(ids) - limit} more"
    return text


def read_coast(
    path, layer=None, crs=None, sea: str = "right", polygons: str = "land"
) -> CoastLines:
    """Read a shoreline from a vector GIS file into the working CRS.

    Parameters
    ----------
    path : str or os.PathLike
        Any vector file pyogrio reads (Shapefile, GeoPackage, GeoJSON, ...).
    layer : str or int, optional
        Layer to read; by default the first (with a warning if the file holds several).
    crs : str or pyproj.CRS, optional
        CRS of a file that carries none (e.g. a Shapefile without ``.prj``). A file that has
        a CRS must not be given a different one.
    sea : {"left", "right"}
        Side of the digitised direction of LINES on which the sea lies. Ignored for polygons.
    polygons : {"land", "water"}
        What polygons are: ``"land"`` (the sea is outside them; a hole is a lake or lagoon)
        or ``"water"`` (lakes, lagoons, estuaries: the water is inside, the shore is their
        boundary; a hole is an island).

    Returns
    -------
    CoastLines
        One part per line part and per polygon ring, in file order, in the digitised
        direction, with the side of the sea in ``sea_on_right``.

    Raises
    ------
    CoastError
        Missing, unreadable or empty file; no line or polygon geometry; no CRS and no ``crs``;
        a ``crs`` that contradicts the file's; a polygon that make_valid cannot repair.
    ValueError
        ``sea`` is not "left" or "right".

    Notes
    -----
    Features are counted from 0 in file order in ``source_feature`` and in messages. Null and
    empty geometries, points and zero-length parts are skipped with a warning. Invalid polygons
    are repaired with :func:`shapely.make_valid` (``method="structure"``) with a warning. Land
    polygons of different features that touch or overlap are merged (their union), so shared
    edges are not taken for shoreline. Long segments are subdivided along the straight line of
    the source CRS (RFC 7946, sec. 3.1.1: a segment is straight in its coordinate space) before
    projection, so every working-grid segment is at most :data:`MAX_SEGMENT_M` long.
    """
    if polygons not in ("land", "water"):
        raise ValueError(f"polygons must be 'land' or 'water'; got {polygons!r}")
    if sea not in SEA_SIDES:
        raise ValueError(
            f"sea must be one of {', '.join(repr(s) for s in SEA_SIDES)} (the side of the "
            f"digitised direction on which the sea lies); got {sea!r}"
        )
    name = os.fspath(path)
    frame, layer_note = _read_frame(name, layer)
    source_crs = _source_crs(name, frame.crs, crs)
    notes: list[str] = [layer_note] if layer_note else []

    geoms = np.asarray(frame.geometry.array, dtype=object)
    null = shapely.is_missing(geoms) | shapely.is_empty(geoms)
    if null.all():
        raise CoastError(
            f"{name}: all {len(geoms)} features have null or empty geometry; {_EXPECTED}"
        )
    if null.any():
        notes.append(
            f"skipped {int(null.sum())} features with null or empty geometry "
            f"(features {_ids(np.flatnonzero(null))})"
        )
    feat = np.flatnonzero(~null)
    atoms, atom_feat = _explode(shapely.force_2d(geoms[feat]), feat)
    types = shapely.get_type_id(atoms)

    is_point = np.isin(types, _POINT_TYPES)
    is_line = np.isin(types, _LINE_TYPES)
    is_poly = types == _POLYGON_TYPE
    if not (is_line.any() or is_poly.any()):
        found = sorted(set(shapely.get_type_id(geoms[feat]).tolist()))
        found_names = ", ".join(_TYPE_NAMES.get(t, str(t)) for t in found)
        raise CoastError(f"{name}: no line or polygon geometry (found {found_names}); {_EXPECTED}")
    if is_point.any():
        pf = np.unique(atom_feat[is_point])
        notes.append(
            f"skipped point geometry in {len(pf)} features (features {_ids(pf)}): only lines and "
            "polygons are shorelines"
        )

    line_geoms, line_feat = atoms[is_line], atom_feat[is_line]
    polys, poly_feat = _land_polygons(name, atoms[is_poly], atom_feat[is_poly], notes)

    # Rings of the land polygons: exterior first, then holes, per polygon.
    rings, ring_poly = shapely.get_rings(polys, return_index=True)
    ring_exterior = np.r_[True, ring_poly[1:] != ring_poly[:-1]] if len(rings) else np.array([])

    n_lines, n_rings = len(line_geoms), len(rings)
    src_parts = np.concatenate([line_geoms, rings]) if n_rings else line_geoms
    part_feat = np.concatenate([line_feat, poly_feat[ring_poly]]).astype(int)
    is_ring = np.r_[np.zeros(n_lines, bool), np.ones(n_rings, bool)]
    exterior = np.r_[np.zeros(n_lines, bool), ring_exterior.astype(bool)]

    coords, vidx = shapely.get_coordinates(src_parts, return_index=True)
    lon, lat = _lonlat_transformer(source_crs).transform(coords[:, 0], coords[:, 1])
    lon, lat = np.asarray(lon), np.asarray(lat)
    if not (np.isfinite(lon).all() and np.isfinite(lat).all()):
        bad = np.unique(part_feat[vidx[~(np.isfinite(lon) & np.isfinite(lat))]])
        raise CoastError(
            f"{name}: coordinates of features {_ids(bad)} cannot be converted from "
            f"{_crs_label(source_crs)} to longitude/latitude; check the file's CRS"
        )
    check_lonlat(name, source_crs, coords, lon, lat, part_feat[vidx])
    _refuse_spikes(name, coords, vidx, part_feat, n_lines)
    west, east = _lon_extent(lon)
    working = _working_crs_from_extent(west, float(lat.min()), east, float(lat.max()))

    spacing_m, noise_m = vertex_noise(
        np.column_stack(
            pyproj.Transformer.from_crs(source_crs, working, always_xy=True).transform(
                coords[:, 0], coords[:, 1]
            )
        ),
        vidx,
    )
    edges = box_edges(coords, vidx, is_ring)
    if edges is not None:
        to_work = pyproj.Transformer.from_crs(source_crs, working, always_xy=True)
        edges = shapely.transform(edges, lambda c: np.column_stack(to_work.transform(*c.T)))
        notes.append(
            f"{shapely.get_num_geometries(edges)} stretches of the land polygons "
            f"({shapely.length(edges) / 1000:.1f} km) lie on the edges of their bounding box: "
            "taken for where the data was clipped, not coast; their transects are left out "
            "(shore type data_edge)"
        )
    xy, vidx = _project_densified(coords, vidx, source_crs, working)
    if not np.isfinite(xy).all():
        raise CoastError(
            f"{name}: some coordinates cannot be projected to {_crs_label(working)}; "
            "the coast is too large for one transverse Mercator: split it into regional files"
        )
    parts, counts = _parts_from_vertices(xy, vidx, len(src_parts))

    line_closed = np.r_[shapely.is_closed(src_parts[:n_lines]), np.zeros(n_rings, bool)]
    closed = (is_ring | line_closed) & (counts >= 4)
    usable = counts >= 2
    usable &= ~is_ring | closed  # a ring that collapsed to a line is no shore
    if (~usable).any():
        notes.append(
            f"dropped {int((~usable).sum())} zero-length or collapsed parts "
            f"(features {_ids(np.unique(part_feat[~usable]))})"
        )
    if not usable.any():
        raise CoastError(f"{name}: every line or polygon has zero length; {_EXPECTED}")

    sea_right = np.full(len(src_parts), sea == "right")
    if n_rings:
        ccw = shapely.is_ccw(parts[n_lines:])
        # Land is inside an exterior ring and outside a hole; the left of a CCW ring is inside.
        sea_right[n_lines:] = exterior[n_lines:] == ccw
        if polygons == "water":  # the water is inside the polygons: every ring faces the other way
            sea_right[n_lines:] = ~sea_right[n_lines:]

    keep = np.flatnonzero(usable)
    keep = keep[np.argsort(part_feat[keep], kind="stable")]
    _note_meeting_ends(parts[keep], closed[keep], part_feat[keep], notes)
    return CoastLines(
        parts=list(parts[keep]),
        closed=closed[keep],
        source_feature=part_feat[keep],
        working_crs=working,
        source_crs=source_crs,
        warnings=notes,
        sea_on_right=sea_right[keep],
        path=name,
        vertex_spacing_m=spacing_m,
        vertex_noise_m=noise_m,
        data_edges=edges,
    )


def box_edges(coords: np.ndarray, vidx: np.ndarray, is_ring: np.ndarray):
    """Segments of polygon rings lying on the bounding box of all ring vertices.

    Data cut out of a larger map by a rectangle (in the file's own coordinates) has straight
    edges along the rectangle; a real coast almost never runs exactly along it. A segment
    counts when both its ends are within 1e-7 of the box's size from the same side. Returns a
    MultiLineString in the file's coordinates, densified to 1/1000 of the box, or None.
    """
    ring_v = is_ring[vidx]
    if not ring_v.any():
        return None
    c = coords[ring_v]
    lo, hi = c.min(axis=0), c.max(axis=0)
    tol = 1e-7 * max(float(np.max(hi - lo)), 1e-12)
    side = np.zeros((len(coords), 4), dtype=bool)
    side[:, 0] = np.abs(coords[:, 0] - lo[0]) <= tol
    side[:, 1] = np.abs(coords[:, 0] - hi[0]) <= tol
    side[:, 2] = np.abs(coords[:, 1] - lo[1]) <= tol
    side[:, 3] = np.abs(coords[:, 1] - hi[1]) <= tol
    side &= ring_v[:, None]
    same = (vidx[1:] == vidx[:-1]) & (side[1:] & side[:-1]).any(axis=1)
    if not same.any():
        return None
    k = np.flatnonzero(same)
    segs = shapely.linestrings(np.stack([coords[k], coords[k + 1]], axis=1))
    merged = shapely.line_merge(shapely.union_all(segs))
    return shapely.segmentize(merged, float(np.max(hi - lo)) / 1000.0)


def vertex_noise(xy: np.ndarray, vidx: np.ndarray) -> tuple[float, float]:
    """Median vertex spacing and the robust scatter of the vertices about a smooth line [m].

    For every vertex with a neighbour on each side in the same part, ``d`` is its distance
    from the chord of its neighbours. On a smooth, well-sampled line ``d = kappa l^2 / 2`` is
    tiny; on a staircase or noisy digitising each vertex is off the line by an independent
    error n (standard deviation a), and ``d = n_k - (n_{k-1} + n_{k+1}) / 2`` has variance
    ``1.5 a^2``. The robust estimate is ``a = sqrt(median(d^2) / (0.455 x 1.5))`` (0.455 is the
    median of a chi-square variable of one degree of freedom). Returns NaN, NaN for a coast
    with fewer than 5 such vertices.
    """
    xy = np.asarray(xy, dtype=float)
    ok = (vidx[1:-1] == vidx[:-2]) & (vidx[1:-1] == vidx[2:])
    if ok.sum() < 5:
        return float("nan"), float("nan")
    a, b, c = xy[:-2][ok], xy[1:-1][ok], xy[2:][ok]
    chord = c - a
    lc = np.hypot(*chord.T)
    with np.errstate(invalid="ignore", divide="ignore"):
        d = np.abs(chord[:, 0] * (b - a)[:, 1] - chord[:, 1] * (b - a)[:, 0]) / lc
    seg = np.hypot(*(b - a).T)
    good = np.isfinite(d) & (lc > 0)
    if good.sum() < 5:
        return float("nan"), float("nan")
    return float(np.median(seg[good])), float(np.sqrt(np.median(d[good] ** 2) / (0.455 * 1.5)))


def require_gis_source(path, what: str) -> None:
    """Refuse a GIS source that is neither a regular file nor a folder, before opening it.

    GDAL reads some datasets from folders (an Esri File Geodatabase ``.gdb``, a folder of
    Shapefiles); a named pipe, socket or device would make the reader wait or fail obscurely.
    """
    if not os.path.isdir(path):
        require_regular_file(path, what, CoastError)


def invalid_geometry(path, layer, exc: Exception) -> str:
    """Why a vector file's geometry cannot be read, naming the first feature GEOS refuses.

    GDAL hands over what it reads (a line of one vertex, a polygon ring that is not closed);
    shapely refuses it when it builds the geometries, for the whole file at once. This reads
    the raw geometries again and finds the feature, to say which and what is wrong in one line.
    """
    import pyogrio.raw

    reason = one_line(str(exc).split(":", 1)[-1])
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            wkb = pyogrio.raw.read(path, layer=layer, columns=[])[2]
    except Exception:  # the first failure already says enough
        return f"holds a geometry that cannot be read ({reason})"
    wkb = np.asarray(wkb, dtype=object)
    built = shapely.from_wkb(wkb, on_invalid="ignore")
    bad = np.flatnonzero(np.not_equal(wkb, None) & shapely.is_missing(built))
    if bad.size == 0:
        return f"holds a geometry that cannot be read ({reason})"
    try:
        shapely.from_wkb(wkb[bad[0]])
    except shapely.errors.GEOSException as first:
        reason = one_line(str(first).split(":", 1)[-1])
    for words, plain in _GEOS_REASONS:
        if words in reason:
            reason = plain
            break
    return f"feature {int(bad[0])} (counted from 0) is {reason}; fix it in a GIS"


#: GEOS's words for a geometry it refuses, and the same said plainly.
_GEOS_REASONS = (
    ("point array must contain 0 or >1 elements", "a line with a single vertex (a line needs two)"),
    (
        "do not form a closed linestring",
        "a polygon ring that is not closed (its last vertex must repeat its first)",
    ),
    ("must be 0 or >= 4", "a polygon ring of fewer than 4 vertices (a triangle needs 4, closed)"),
)


def check_lonlat(name, crs, coords, lon, lat, feature) -> None:
    """Refuse vertices whose longitude or latitude is out of range, naming the likely cause.

    ``coords`` are the vertices in the file's CRS, ``lon``/``lat`` the same on WGS 84 and
    ``feature`` the feature of each vertex. In a geographic file, coordinates far beyond any
    degree (more than 1000) are metres under a wrong CRS.
    """
    lon_lo, lon_hi = LONGITUDE_DEG
    lat_lo, lat_hi = LATITUDE_DEG
    ok = (lon >= lon_lo) & (lon <= lon_hi) & (lat >= lat_lo) & (lat <= lat_hi)
    if ok.all():
        if not crs.is_geographic:
            _check_projected_domain(name, crs, coords, lon, lat, feature)
        return
    i = int(np.flatnonzero(~ok)[0])
    x, y = coords[i, 0], coords[i, 1]
    if crs.is_geographic and max(abs(x), abs(y)) > 1000.0:
        raise CoastError(
            f"{name}: the coordinates look like metres (feature {feature[i]} has a vertex at "
            f"{x:.10g}, {y:.10g}); the file's CRS {_crs_label(crs)} says degrees: set the CRS the "
            "file was drawn in (a projected CRS) in a GIS"
        )
    raise CoastError(
        f"{name}: feature {feature[i]} has a vertex at longitude {lon[i]:.10g}, latitude "
        f"{lat[i]:.10g}; expected longitudes in [{lon_lo:g}, {lon_hi:g}] and latitudes in "
        f"[{lat_lo:g}, {lat_hi:g}] degrees: check the file's CRS"
    )


def check_frame_lonlat(name, frame: geopandas.GeoDataFrame) -> None:
    """:func:`check_lonlat` on every vertex of a GeoDataFrame that has a CRS."""
    geoms = np.asarray(frame.geometry.array, dtype=object)
    coords, index = shapely.get_coordinates(geoms, return_index=True)
    if len(coords) == 0:
        return
    crs = pyproj.CRS.from_user_input(frame.crs)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        lon, lat = _lonlat_transformer(crs).transform(coords[:, 0], coords[:, 1])
    check_lonlat(name, crs, coords, np.asarray(lon), np.asarray(lat), index)


def _check_projected_domain(name, crs, coords, lon, lat, feature) -> None:
    """Refuse projected coordinates that do not come back from longitude/latitude.

    Beyond the edge of its world a projection wraps: Web Mercator x = 1e9 m is read as some
    longitude and projects back to another x. More than 1 km of difference is such a wrap (a
    round trip is exact to far less than a millimetre where the projection is valid).
    """
    back = pyproj.Transformer.from_crs(pyproj.CRS.from_epsg(4326), crs, always_xy=True)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        x, y = back.transform(lon, lat)
    with np.errstate(invalid="ignore"):
        off = ~(np.hypot(np.asarray(x) - coords[:, 0], np.asarray(y) - coords[:, 1]) <= 1000.0)
    if off.any():
        i = int(np.flatnonzero(off)[0])
        raise CoastError(
            f"{name}: feature {feature[i]} has a vertex at {coords[i, 0]:.10g}, "
            f"{coords[i, 1]:.10g}, beyond the range of the file's CRS {_crs_label(crs)}: check "
            "the file's CRS"
        )


def _refuse_spikes(name, coords, vidx, part_feat, n_lines) -> None:
    """Refuse a line that turns back exactly on itself (a spike): no orientation there.

    Where the line retraces its last segment the shore behind and ahead of the vertex are the
    same ground, so the orientation (from the shore behind to the shore ahead) is undefined.
    Polygons are left to make_valid. A turn within 1e-12 rad of 180 degrees counts.
    """
    on_line = vidx < n_lines
    xy, part = coords[on_line], vidx[on_line]
    if len(xy) < 3:
        return
    keep = np.r_[True, (part[1:] != part[:-1]) | np.any(xy[1:] != xy[:-1], axis=1)]
    xy, part = xy[keep], part[keep]
    if len(xy) < 3:
        return
    u = xy[1:-1] - xy[:-2]  # the segment into each interior vertex
    w = xy[2:] - xy[1:-1]  # and out of it
    inside = (part[:-2] == part[1:-1]) & (part[1:-1] == part[2:])
    cross = u[:, 0] * w[:, 1] - u[:, 1] * w[:, 0]
    dot = np.sum(u * w, axis=1)
    size = np.hypot(*u.T) * np.hypot(*w.T)
    spike = inside & (dot < 0) & (np.abs(cross) <= 1e-12 * size)
    if spike.any():
        i = int(np.flatnonzero(spike)[0]) + 1
        raise CoastError(
            f"{name}: feature {part_feat[part[i]]} turns back on itself at {xy[i, 0]:.10g}, "
            f"{xy[i, 1]:.10g} (a spike: the line retraces its last segment, so the shore has no "
            "orientation there); remove the spike in a GIS"
        )


def check_transect_count(coast: CoastLines, spacing_m: float) -> None:
    """Refuse a spacing that would lay out more than :data:`MAX_TRANSECTS` transects.

    The count is estimated from the grid length of the shore (within the scale factor of the
    working CRS, a few parts in a thousand) before any transect is laid out.
    """
    length_m = float(np.sum(shapely.length(np.asarray(coast.parts, dtype=object))))
    estimate = length_m / float(spacing_m) + len(coast.parts)
    if estimate > MAX_TRANSECTS:
        label = f"{coast.path}: " if coast.path else ""
        raise CoastError(
            f"{label}spacing_m = {spacing_m:g} would lay out about {estimate:,.0f} transects on "
            f"{length_m / 1000:,.0f} km of shore; the limit is {MAX_TRANSECTS:,}: increase "
            "spacing_m or split the coast into several studies"
        )


_TYPE_NAMES = {
    0: "Point",
    1: "LineString",
    2: "LinearRing",
    3: "Polygon",
    4: "MultiPoint",
    5: "MultiLineString",
    6: "MultiPolygon",
    7: "GeometryCollection",
}


def _crs_label(crs: pyproj.CRS) -> str:
    code = crs.to_authority()
    return f"{code[0]}:{code[1]} ({crs.name})" if code else repr(crs.name)


def _read_frame(name: str, layer) -> tuple[geopandas.GeoDataFrame, str | None]:
    if not os.path.exists(name):
        raise CoastError(f"{name}: coast file not found; {_EXPECTED}")
    require_gis_source(name, "coast file")
    layers = np.empty((0, 2), dtype=object)
    try:
        layers = pyogrio.list_layers(name)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UserWarning)
            warnings.simplefilter("ignore", RuntimeWarning)  # GDAL's note on unclosed rings
            frame = geopandas.read_file(name, layer=layer, engine="pyogrio")
    except shapely.errors.GEOSException as exc:
        raise CoastError(f"{name}: {invalid_geometry(name, layer, exc)}") from None
    except pyogrio.errors.DataLayerError as exc:
        listing = ", ".join(repr(str(n)) for n in layers[:, 0])
        raise CoastError(
            f"{name}: layer {layer!r} not found (the file holds {listing}); set `layer` in the "
            "[coast] section to one of them"
        ) from exc
    except (pyogrio.errors.DataSourceError, pyogrio.errors.CRSError, OSError) as exc:
        reason = one_line(str(exc).split(";")[0])
        raise CoastError(f"{name}: cannot be read ({reason}); {_EXPECTED}") from exc
    except (
        pyogrio.errors.FeatureError,
        pyogrio.errors.GeometryError,
        pyogrio.errors.FieldError,
    ) as exc:
        raise CoastError(f"{name}: cannot be read ({one_line(exc)}); {_EXPECTED}") from exc
    if not isinstance(frame, geopandas.GeoDataFrame) or frame.geometry.name not in frame:
        raise CoastError(f"{name}: holds no geometry column; {_EXPECTED}")
    if len(frame) == 0:
        raise CoastError(f"{name}: holds no features; {_EXPECTED}")
    note = None
    if layer is None and len(layers) > 1:
        listing = ", ".join(repr(str(n)) for n in layers[:, 0])
        note = (
            f"the file holds {len(layers)} layers ({listing}); read the first, "
            f"{str(layers[0, 0])!r}: set `layer` in the [coast] section to choose another"
        )
    return frame, note


def _source_crs(name: str, file_crs, crs) -> pyproj.CRS:
    given = None
    if crs is not None:
        try:
            given = pyproj.CRS.from_user_input(crs)
        except pyproj.exceptions.CRSError as exc:
            raise CoastError(
                f"{name}: crs = {crs!r} in the [coast] section is not a coordinate reference "
                "system pyproj knows; give an authority code such as 'EPSG:25832'"
            ) from exc
    if file_crs is None:
        if given is None:
            raise CoastError(
                f"{name}: the file carries no coordinate reference system; set `crs` in the "
                '[coast] section (e.g. crs = "EPSG:25832")'
            )
        return given
    file_crs = pyproj.CRS.from_user_input(file_crs)
    if given is not None and not file_crs.equals(given, ignore_axis_order=True):
        raise CoastError(
            f"{name}: the file's CRS is {_crs_label(file_crs)} but crs = {crs!r} is set in the "
            "[coast] section; `crs` is only for files that carry no CRS: remove it, or fix the "
            "file's CRS in a GIS"
        )
    return file_crs


def _explode(geoms: np.ndarray, feat: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Split multi-part geometries and collections into single parts, keeping feature ids."""
    while True:
        parts, index = shapely.get_parts(geoms, return_index=True)
        geoms, feat = parts, feat[index]
        if not np.isin(shapely.get_type_id(geoms), _COLLECTION_TYPES).any():
            break
    nonempty = ~shapely.is_empty(geoms)
    return geoms[nonempty], feat[nonempty]


def _land_polygons(name, polys, feat, notes) -> tuple[np.ndarray, np.ndarray]:
    """Repair the land polygons of each feature and merge those of features that meet."""
    if len(polys) == 0:
        return np.empty(0, dtype=object), np.empty(0, dtype=int)
    feats, inverse = np.unique(feat, return_inverse=True)
    land = shapely.multipolygons(polys, indices=inverse)
    valid = shapely.is_valid(land)
    if not valid.all():
        bad = np.flatnonzero(~valid)
        reasons = shapely.is_valid_reason(land[bad])
        land = land.copy()
        repaired = shapely.make_valid(land[bad], method="structure", keep_collapsed=False)
        land[bad] = _polygonal(repaired)
        for i, reason in zip(bad, reasons, strict=True):
            if shapely.is_empty(land[i]) or shapely.area(land[i]) <= 0.0:
                raise CoastError(
                    f"{name}: feature {feats[i]} is an invalid polygon ({reason}) that "
                    "make_valid cannot turn into a usable land polygon; fix it in a GIS"
                )
        notes.append(
            f"repaired {len(bad)} invalid geometries (features {_ids(feats[bad])}; first "
            f"problem: {reasons[0]}) with make_valid"
        )
    # Land polygons of different features that touch or overlap are one land area.
    tree = shapely.STRtree(land)
    pairs = tree.query(land, predicate="intersects")
    pairs = pairs[:, pairs[0] != pairs[1]]
    groups = np.arange(len(land))
    if pairs.shape[1]:
        from scipy.sparse import coo_matrix  # here: scipy's import is slow
        from scipy.sparse.csgraph import connected_components

        graph = coo_matrix((np.ones(pairs.shape[1]), (pairs[0], pairs[1])), (len(land),) * 2)
        _, groups = connected_components(graph, directed=False)
        merged = []
        members_all = []
        new_land, new_feat = [], []
        for g in np.unique(groups):
            members = np.flatnonzero(groups == g)
            if len(members) == 1:
                new_land.append(land[members[0]])
            else:
                new_land.append(_polygonal(np.array([shapely.union_all(land[members])]))[0])
                merged.append(len(members))
                members_all.extend(feats[members])
            new_feat.append(feats[members].min())
        notes.append(
            f"merged land polygons of {len(members_all)} features that touch or overlap "
            f"(features {_ids(sorted(members_all))}) into {len(merged)} land areas: their "
            "shared edges are not shoreline"
        )
        land, feats = np.array(new_land, dtype=object), np.array(new_feat, dtype=int)
    out, index = shapely.get_parts(land, return_index=True)
    return out, feats[index]


def _polygonal(geoms: np.ndarray) -> np.ndarray:
    """Keep only the polygons of each geometry, as a MultiPolygon per geometry."""
    atoms, index = _explode(geoms, np.arange(len(geoms)))
    is_poly = shapely.get_type_id(atoms) == _POLYGON_TYPE
    out = np.empty(len(geoms), dtype=object)
    out[:] = [shapely.MultiPolygon() for _ in range(len(geoms))]
    if is_poly.any():
        present = np.unique(index[is_poly])
        _, inv = np.unique(index[is_poly], return_inverse=True)
        out[present] = shapely.multipolygons(atoms[is_poly], indices=inv)
    return out


def _project_densified(coords, vidx, source_crs, working) -> tuple[np.ndarray, np.ndarray]:
    """Project vertices, subdividing segments longer than MAX_SEGMENT_M in the source CRS."""
    to_work = pyproj.Transformer.from_crs(source_crs, working, always_xy=True)
    x, y = to_work.transform(coords[:, 0], coords[:, 1])
    xy = np.column_stack([x, y])
    nv = len(xy)
    same = np.zeros(nv, dtype=bool)
    same[:-1] = vidx[1:] == vidx[:-1]  # vertex i starts a segment of its part
    seg = np.zeros(nv)
    with np.errstate(invalid="ignore"):
        seg[:-1] = np.hypot(*(xy[1:] - xy[:-1]).T)
    pieces = np.where(same & np.isfinite(seg), np.ceil(seg / MAX_SEGMENT_M), 1.0)
    pieces = np.maximum(pieces, 1.0).astype(int)
    if (pieces == 1).all():
        return xy, vidx
    rep = np.repeat(np.arange(nv), pieces)
    step = np.arange(len(rep)) - np.repeat(np.cumsum(pieces) - pieces, pieces)
    t = step / pieces[rep]
    nxt = np.where(same[rep], rep + 1, rep)
    delta = coords[nxt] - coords[rep]
    if source_crs.is_geographic:  # across the 180th meridian the short way, not round the globe
        delta[:, 0] -= 360.0 * np.round(delta[:, 0] / 360.0)
    src = coords[rep] + t[:, None] * delta
    new = t > 0
    out = xy[rep].copy()
    if new.any():
        nx, ny = to_work.transform(src[new, 0], src[new, 1])
        out[new, 0], out[new, 1] = nx, ny
    return out, vidx[rep]


def _parts_from_vertices(xy, vidx, n_parts) -> tuple[np.ndarray, np.ndarray]:
    """Build LineStrings per part without repeated consecutive vertices; return them and counts."""
    dup = np.zeros(len(xy), dtype=bool)
    dup[1:] = (vidx[1:] == vidx[:-1]) & np.all(xy[1:] == xy[:-1], axis=1)
    xy, vidx = xy[~dup], vidx[~dup]
    counts = np.bincount(vidx, minlength=n_parts)
    parts = np.empty(n_parts, dtype=object)
    good = counts >= 2
    if good.any():
        sel = good[vidx]
        _, inv = np.unique(vidx[sel], return_inverse=True)
        parts[good] = shapely.linestrings(xy[sel], indices=inv)
    parts[~good] = shapely.LineString()
    return parts, counts


def _note_meeting_ends(parts, closed, feat, notes) -> None:
    """Warn when ends of different open parts coincide (they stay separate shores)."""
    open_idx = np.flatnonzero(~closed)
    if len(open_idx) < 2:
        return
    ends = np.concatenate(
        [shapely.get_coordinates(shapely.get_point(parts[open_idx], i)) for i in (0, -1)]
    )
    owner = np.concatenate([open_idx, open_idx])
    from scipy.spatial import cKDTree  # here: scipy.spatial's import is slow

    pairs = cKDTree(ends).query_pairs(_ENDS_MEET_M, output_type="ndarray")
    if len(pairs) == 0:
        return
    pairs = np.sort(owner[pairs], axis=1)
    pairs = np.unique(pairs[pairs[:, 0] != pairs[:, 1]], axis=0)
    if len(pairs) == 0:
        return
    shown = "; ".join(f"parts {a} and {b} (features {feat[a]} and {feat[b]})" for a, b in pairs[:5])
    more = f" and {len(pairs) - 5} more" if len(pairs) > 5 else ""
    notes.append(
        f"the ends of {len(pairs)} pairs of line parts meet ({shown}{more}): each stays a "
        "separate shore with its own chainage; merge them in a GIS for one continuous shore"
    )


# --------------------------------------------------------------------------------------------
# Transects
# --------------------------------------------------------------------------------------------


def _positive(value, what: str) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError) as exc:
        raise ValueError(f"{what} must be a positive length [m]; got {value!r}") from exc
    if not (np.isfinite(v) and v > 0):
        raise ValueError(f"{what} must be a positive length [m]; got {value!r}")
    return v


def lay_out_transects(
    coast: CoastLines, spacing_m: float, orientation_window_m: float
) -> Transects:
    """Lay out shore-normal transects at a fixed ground spacing along every shore part.

    Parameters
    ----------
    coast : CoastLines
        Shores in the working CRS, from :func:`read_coast`.
    spacing_m : float
        Ground distance between neighbouring transects [m].
    orientation_window_m : float
        Ground length of the window over which the shore orientation is averaged [m].

    Returns
    -------
    Transects
        Transects numbered 0..N-1 in part order, then chainage order.

    Raises
    ------
    CoastError
        No part is long enough for transects at this spacing.
    ValueError
        ``spacing_m`` or ``orientation_window_m`` is not a positive length.

    Notes
    -----
    Ground length of a grid segment: ``ds = ds_grid / k`` with k the point scale factor at the
    segment's midpoint (segments are at most :data:`MAX_SEGMENT_M` of grid, over which k is
    constant to better than 1e-7 in UTM).

    Placement on an open part of ground length L: ``n = floor(L / s) + 1`` transects at exactly
    the spacing s, centred in the part (the first at ``(L - (n - 1) s) / 2``, as far from the
    start as the last is from the end). A part shorter than s is skipped. On a closed ring:
    ``n = round(L / s)`` transects at exactly ``L / n`` from chainage 0 (rings with n < 3 are
    skipped).

    Orientation: the vector mean of the unit tangent t over the window ``[c - h, c + h]``
    (``h = orientation_window_m / 2``), weighted by ground length with triangular weights
    ``K(u) = (h - |u|) / h^2``, is, integrating by parts (``t = dP/ds``),

    ``T(c) = integral K(s - c) t(s) ds = (mean P over [c, c + h] - mean P over [c - h, c]) / h``

    i.e. the direction from the centroid of the shore behind to the centroid of the shore
    ahead. The centroids are exact integrals of the piecewise-linear shore, so ``T`` does not
    depend on the vertex density, and each averages half a window of digitising noise. On an
    open part the window is slid inward near the ends so it always covers
    ``orientation_window_m`` of shore (the whole part if shorter): within h of an end the normal
    is that at h from the end.
    On a ring the window wraps and is capped at half the ring. The seaward normal is ``T``
    turned 90 degrees toward the sea; its grid azimuth is converted to a true azimuth with the
    meridian convergence at the window centre (see :func:`_scale_and_north`).

    References
    ----------
    Snyder, J. P. (1987). Map Projections: A Working Manual. USGS Professional Paper 1395
    (scale factor and convergence of the transverse Mercator, ch. 8).
    """
    spacing = _positive(spacing_m, "spacing_m")
    window = (
        "auto"
        if orientation_window_m == "auto"
        else _positive(orientation_window_m, "orientation_window_m")
    )
    crs = coast.working_crs
    n_parts = len(coast.parts)
    notes: list[str] = []
    label = f"{coast.path}: " if coast.path else ""

    parts = np.empty(n_parts, dtype=object)
    parts[:] = coast.parts
    xy, vidx = shapely.get_coordinates(parts, return_index=True)
    nv = len(xy)
    start = np.searchsorted(vidx, np.arange(n_parts), side="left")
    end = np.searchsorted(vidx, np.arange(n_parts), side="right")  # one past the last vertex

    # Cumulative ground chainage over all vertices; parts are separated by a 1 m dummy gap.
    same = np.zeros(max(nv - 1, 0), dtype=bool)
    same[:] = vidx[1:] == vidx[:-1]
    grid = np.hypot(*(xy[1:] - xy[:-1]).T) if nv > 1 else np.empty(0)
    ground = np.ones(max(nv - 1, 0))
    if same.any():
        mid = 0.5 * (xy[1:][same] + xy[:-1][same])
        k, _ = _scale_and_north(crs, mid[:, 0], mid[:, 1])
        ground[same] = grid[same] / k
    g = np.concatenate([[0.0], np.cumsum(ground)])
    has_vertices = end > start
    length = np.zeros(n_parts)
    length[has_vertices] = g[end[has_vertices] - 1] - g[start[has_vertices]]
    if not np.isfinite(length).all():
        raise CoastError(f"{label}scale factors of the working CRS are undefined on some parts")

    closed = np.asarray(coast.closed, dtype=bool)
    count = np.where(
        closed,
        np.floor(length / spacing + 0.5),
        np.where(length >= spacing, np.floor(length / spacing + 1e-9) + 1.0, 0.0),
    ).astype(int)
    count[closed & (count < 3)] = 0
    step = np.where(closed, length / np.maximum(count, 1), spacing)
    first = np.where(closed, 0.0, np.maximum(0.0, (length - (count - 1) * spacing) / 2.0))
    short = np.flatnonzero(count == 0)
    if len(short):
        notes.append(
            f"skipped {len(short)} parts too short for transects at {spacing:g} m spacing "
            f"(parts {_ids(short)}; an open part needs >= {spacing:g} m, a ring >= "
            f"{2.5 * spacing:g} m)"
        )
    if count.sum() == 0:
        raise CoastError(
            f"{label}no shore part is long enough for transects at spacing_m = {spacing:g} "
            f"(the longest is {length.max():.0f} m on the ground); reduce the spacing"
        )

    part = np.repeat(np.arange(n_parts), count)
    j = np.arange(len(part)) - np.repeat(np.cumsum(count) - count, count)
    chain = first[part] + j * step[part]

    shore = _ChainedParts(xy, vidx, g, start, end, length)
    half, capped, window_used, noise_deg = _choose_window(
        coast, spacing, window, closed, length, notes
    )
    if len(capped):
        notes.append(
            f"orientation window capped at half the ring length on {len(capped)} closed parts "
            f"(parts {_ids(capped)}): orientation_window_m = {window_used:g} m is longer than half "
            "of them"
        )
    px, py = shore.point(part, chain)
    is_closed = closed[part]
    dx, dy = _fitted_tangent(shore, part, chain, half[part], is_closed, length[part])
    flat = ~(np.hypot(dx, dy) > 1e-9)
    with np.errstate(invalid="ignore"):
        tangent_grid_az = np.degrees(np.arctan2(dx, dy))
    turn = np.where(coast.sea_on_right[part], 90.0, -90.0)
    # Grid to true azimuth at the transect's shore point.
    _, north_grid_az = _scale_and_north(crs, px, py)
    normal = np.mod(tangent_grid_az + turn - north_grid_az, 360.0)
    normal = np.where(normal >= 360.0, 0.0, normal)
    normal = np.where(flat, np.nan, normal)
    undefined = np.flatnonzero(~np.isfinite(normal))
    if len(undefined):
        notes.append(
            f"shore orientation undefined at {len(undefined)} transects "
            f"(transects {_ids(undefined)}): their normal is NaN"
        )

    return Transects(
        transect_id=np.arange(len(part)),
        part_id=part,
        chainage_m=chain,
        x_m=px,
        y_m=py,
        normal_az_deg=normal,
        spacing_m=step[part],
        part_closed=is_closed,
        working_crs=crs,
        warnings=notes,
        grid_m=shore.grid_distance(part, chain),
        orientation_window_m=float(window_used),
        orientation_noise_deg=float(noise_deg),
    )


#: Gaussian weights of the orientation fit have a standard deviation of this share of the
#: orientation window, and are cut at the window's ends (+-2.5 sigma: the weight there is 4 %).
#: For white digitising noise this leaves the same orientation noise as a triangular kernel on
#: the tangent over the same window (the first release's), with a far smaller response to
#: periodic staircases.
SIGMA_PER_WINDOW = 1.0 / 5.0

#: Residual orientation noise [deg] that the automatic orientation window brings a line under
#: (see :func:`_choose_window` and docs/methods.md).
ORIENTATION_NOISE_TOL_DEG = 0.25

#: Windows the automatic choice tries, shortest first [m].
AUTO_WINDOWS_M = (1000.0, 1500.0, 2000.0, 3000.0, 4000.0, 6000.0, 8000.0, 12000.0, 16000.0)

#: Samples each side of a transect in the orientation fit (they span half the window).
_FIT_HALF_SAMPLES = 30


def _half_window(window: float, closed: np.ndarray, length: np.ndarray) -> np.ndarray:
    """Per part: half the orientation window [m]; on rings the window is capped at half the ring."""
    return 0.5 * np.where(closed, np.minimum(window, length / 2.0), window)


def _fitted_tangent(shore, part, chain, half, is_closed, length):
    """Tangent (grid dx, dy per ground metre) of a Gaussian-weighted straight-line fit.

    For every transect the shore is sampled at ``2 J + 1`` points over the window
    ``[c - h, c + h]`` of ground chainage (h half the window), weighted by
    ``exp(-u^2 / 2 sigma^2)`` with ``sigma = 2 h / 5``, and a straight line is fitted to x(u) and
    y(u) by weighted least squares; its slope is the tangent (locally weighted regression,
    Cleveland 1979). The weights are symmetric, so the slope is the derivative of the
    Gaussian-smoothed shore: no bias on a straight shore or a circular arc. On an open part
    the window is slid inward near the ends so it always covers ``2 h`` of shore (the whole
    part if it is shorter); on a ring it wraps.
    """
    n = len(part)
    dx, dy = np.empty(n), np.empty(n)
    j = _FIT_HALF_SAMPLES
    unit = np.arange(-j, j + 1) / j  # -1 .. 1
    gauss = np.exp(-0.5 * (0.5 / SIGMA_PER_WINDOW * unit) ** 2)
    h = np.where(is_closed, half, np.minimum(half, length / 2.0))
    centre = np.where(is_closed, chain, np.clip(chain, h, length - h))
    chunk = max(1, 1_500_000 // (2 * j + 1))
    for a in range(0, n, chunk):
        sl = slice(a, a + chunk)
        u = unit[None, :] * h[sl, None]
        c = centre[sl, None] + u
        ln = length[sl, None]
        cc = np.where(is_closed[sl, None], np.mod(c, ln), np.clip(c, 0.0, ln))
        pp = np.broadcast_to(part[sl, None], c.shape).ravel()
        x, y = shore.point(pp, cc.ravel())
        x0, y0 = shore.point(part[sl], centre[sl])
        x = x.reshape(c.shape) - x0[:, None]
        y = y.reshape(c.shape) - y0[:, None]
        # symmetric weights: the weighted mean of u is 0
        suu = (gauss * unit**2).sum() * h[sl] ** 2
        with np.errstate(invalid="ignore", divide="ignore"):
            dx[sl] = (gauss * u * x).sum(axis=1) / suu
            dy[sl] = (gauss * u * y).sum(axis=1) / suu
    return dx, dy


def orientation_noise_deg(vertex_spacing_m: float, vertex_noise_m: float, window_m) -> float:
    """Orientation noise [deg] the fit at ``window_m`` leaves of the line's digitising scatter.

    For vertices ``l`` apart, each off the smooth line by an independent error of standard
    deviation ``a`` (see :func:`vertex_noise`), the slope of a Gaussian-weighted straight-line
    fit (sigma = :data:`SIGMA_PER_WINDOW` x window) has the standard deviation

        sigma_theta = a sqrt(l / (4 sqrt(pi) sigma^3))   [rad]

    (weighted least squares: ``var = a^2 l int w^2 u^2 du / (int w u^2 du)^2``). A real
    planform (bays, capes) does not enter: only the vertex-to-vertex scatter does.

    Examples
    --------
    >>> round(orientation_noise_deg(120.0, 40.0, 4000.0), 2)  # a coarse staircase, 4 km
    0.42
    """
    if not (np.isfinite(vertex_spacing_m) and np.isfinite(vertex_noise_m)):
        return 0.0
    sigma = SIGMA_PER_WINDOW * np.asarray(window_m, dtype=float)
    rad = vertex_noise_m * np.sqrt(vertex_spacing_m / (4.0 * np.sqrt(np.pi) * sigma**3))
    return float(np.degrees(rad))


def _choose_window(coast, spacing, window, closed, length, notes):
    """The orientation window: as given, or chosen from the data ("auto"); warn on noise.

    "auto" takes the shortest window of :data:`AUTO_WINDOWS_M` (at least 4 spacings) whose
    orientation noise (:func:`orientation_noise_deg`) is under
    :data:`ORIENTATION_NOISE_TOL_DEG`. Returns ``(half window per part, capped ring parts,
    window used, noise estimate [deg])``.
    """
    tol = ORIENTATION_NOISE_TOL_DEG
    l_m, a_m = coast.vertex_spacing_m, coast.vertex_noise_m
    if not (np.isfinite(l_m) and np.isfinite(a_m)):  # not measured when read: the parts' own
        xy, vidx = shapely.get_coordinates(np.asarray(coast.parts, dtype=object), return_index=True)
        l_m, a_m = vertex_noise(xy, vidx)
    if window == "auto":
        ladder = [w for w in AUTO_WINDOWS_M if w >= 4.0 * spacing] or [4.0 * spacing]
        for used in ladder:
            noise = orientation_noise_deg(l_m, a_m, used)
            if noise <= tol:
                break
    else:
        used = float(window)
        noise = orientation_noise_deg(l_m, a_m, used)
    if noise > tol:
        # the noise falls as window^(-3/2)
        better = 500.0 * np.ceil(used * (noise / tol) ** (2.0 / 3.0) / 500.0)
        notes.append(
            f"the digitised line is too coarse for orientation_window_m = {used:g} m: its "
            f"vertices ({l_m:.0f} m apart) scatter by about {a_m:.0f} m about a smooth line "
            f"(a staircase or digitising noise), which leaves about {noise:.1f} deg of noise in "
            f"the shore orientation, more than the {tol:g} deg the transport needs; expect "
            f"spurious alternating rates: a window of about {better:g} m would bring it under "
            f"{tol:g} deg (docs/methods.md, shore orientation)"
        )
    half = _half_window(used, closed, length)
    capped = np.flatnonzero(closed & (used > length / 2.0) & (length >= 2.5 * spacing))
    return half, capped, used, noise


class _ChainedParts:
    """Piecewise-linear parts indexed by ground chainage, with their first moments.

    ``g`` is the ground chainage of every vertex, parts laid end to end with a dummy gap;
    ``moment`` holds the cumulative integral of the position (relative to the part's first
    vertex) over ground chainage, exact for straight segments (trapezoid rule).
    """

    def __init__(self, xy, vidx, g, start, end, length):
        self.xy, self.g, self.start, self.end, self.length = xy, g, start, end, length
        self.origin = xy[np.minimum(start, max(len(xy) - 1, 0))]
        rel = xy - self.origin[vidx]
        self.rel = rel
        inc = np.zeros_like(xy)
        same = vidx[1:] == vidx[:-1]
        inc[1:] = np.where(same[:, None], np.diff(g)[:, None] * 0.5 * (rel[1:] + rel[:-1]), 0.0)
        self.moment = np.cumsum(inc, axis=0)
        seg = np.zeros(len(xy))
        seg[1:] = np.where(same, np.hypot(*(xy[1:] - xy[:-1]).T), 0.0)
        self.grid_cum = np.cumsum(seg)

    def grid_distance(self, part, c):
        """Grid distance along ``part``'s geometry at local ground chainage ``c``."""
        i, f, _ = self._locate(part, c)
        base = self.grid_cum[self.start[part]]
        return self.grid_cum[i] - base + f * (self.grid_cum[i + 1] - self.grid_cum[i])

    def _locate(self, part, c):
        """Segment index and fraction of local chainage ``c`` (clipped to the part)."""
        s0, s1 = self.start[part], self.end[part]
        target = self.g[s0] + c
        i = np.searchsorted(self.g, target, side="right") - 1
        i = np.clip(i, s0, np.maximum(s1 - 2, s0))
        span = self.g[i + 1] - self.g[i]
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.where(span > 0, np.clip((target - self.g[i]) / span, 0.0, 1.0), 0.0)
        return i, f, span

    def point(self, part, c):
        """Grid position at local ground chainage ``c`` of ``part``."""
        i, f, _ = self._locate(part, c)
        p = self.xy[i] + f[:, None] * (self.xy[i + 1] - self.xy[i])
        return p[:, 0], p[:, 1]

    def _moment(self, part, c):
        """Integral of the relative position from the part's start to local chainage c."""
        i, f, span = self._locate(part, c)
        q = self.rel[i] + f[:, None] * (self.rel[i + 1] - self.rel[i])
        base = self.moment[self.start[part]]
        return self.moment[i] - base + (f * span)[:, None] * 0.5 * (self.rel[i] + q)

    def mean_position(self, part, a, b):
        """Mean grid position over local chainage [a, b]; a, b may lie outside [0, L] on rings.

        On a ring the moment extends periodically: M(s + L) = M(s) + M(L). An empty interval
        gives the point at ``a``.
        """
        L = self.length[part]
        with np.errstate(divide="ignore", invalid="ignore"):
            turns_a, turns_b = np.floor(a / L), np.floor(b / L)
        turns_a = np.where(np.isfinite(turns_a), turns_a, 0.0)
        turns_b = np.where(np.isfinite(turns_b), turns_b, 0.0)
        whole = self._moment(part, L)
        ma = self._moment(part, a - turns_a * L) + turns_a[:, None] * whole
        mb = self._moment(part, b - turns_b * L) + turns_b[:, None] * whole
        width = b - a
        wide = width > 1e-9
        with np.errstate(divide="ignore", invalid="ignore"):
            mean = np.where(wide[:, None], (mb - ma) / width[:, None], np.nan)
        px, py = self.point(part, np.where(wide, 0.0, a - turns_a * L))
        origin = self.origin[part]
        mx = np.where(wide, mean[:, 0] + origin[:, 0], px)
        my = np.where(wide, mean[:, 1] + origin[:, 1], py)
        return mx, my


def chainage_positions(coast: CoastLines, transects: Transects, part: int):
    """Grid distance along a part's geometry and ground chainage of its transects.

    Returns ``(grid_m, ground_m)``, both increasing along the part: the pairs that map ground
    chainage to distance along the working-CRS line and back (see :func:`interp_extrapolate`).
    """
    sel = transects.part_id == part
    if transects.grid_m is not None:
        return transects.grid_m[sel], transects.chainage_m[sel]
    points = shapely.points(transects.x_m[sel], transects.y_m[sel])
    return shapely.line_locate_point(coast.parts[part], points), transects.chainage_m[sel]


def interp_extrapolate(x, xp: np.ndarray, fp: np.ndarray) -> np.ndarray:
    """Piecewise-linear ``fp(xp)`` at ``x``, extended linearly beyond the ends.

    Examples
    --------
    >>> interp_extrapolate([-1.0, 0.5, 3.0], np.array([0.0, 1.0, 2.0]), np.array([0.0, 2.0, 4.0]))
    array([-2.,  1.,  6.])
    """
    x = np.asarray(x, dtype=float)
    if xp.size < 2:
        return x - (xp[0] if xp.size else 0.0) + (fp[0] if fp.size else 0.0)
    slope = (fp[-1] - fp[0]) / (xp[-1] - xp[0]) if xp[-1] > xp[0] else 1.0
    inside = np.interp(x, xp, fp)
    outside = fp[0] + (x - xp[0]) * slope
    return np.where((x < xp[0]) | (x > xp[-1]), outside, inside)
