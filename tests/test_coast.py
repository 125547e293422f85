"""Tests of shoreline/coast.py: reading coast files, the working CRS, transects and normals.

Expected values come from outside this package: pyproj.Geod (geodesics on the WGS 84 ellipsoid,
Karney's algorithms), plain pyproj coordinate transformations, the definition of the UTM zones,
and standard map-projection results cited where used. No expected value is a number produced by
running shoreline.coast.
"""

from __future__ import annotations

import geopandas
import numpy as np
import pyproj
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st

from shoreline.coast import (
    CoastLines,
    Transects,
    lay_out_transects,
    read_coast,
    working_crs_for,
)
from shoreline.errors import CoastError

GEOD = pyproj.Geod(ellps="WGS84")
WGS84 = pyproj.CRS.from_epsg(4326)
UTM31N = pyproj.CRS.from_epsg(32631)  # central meridian 3 E
WEB_MERCATOR = pyproj.CRS.from_epsg(3857)

# Test site: 43.0 N, 5.5 E (sea south of Provence), 2.5 degrees east of the UTM 31N central
# meridian. There the meridian convergence is about dlambda sin(phi) = 2.5 sin 43 = 1.70 deg
# (Snyder 1987, Map Projections: A Working Manual, USGS PP 1395, ch. 8; from memory), so a
# missing or wrong-signed convergence correction shows as a 1.7 or 3.4 degree error.
LON0, LAT0 = 5.5, 43.0


def angdiff(a, b):
    """Signed smallest difference a - b of two azimuths [deg]."""
    return (np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0


def to_lonlat(crs, x, y):
    t = pyproj.Transformer.from_crs(crs, WGS84, always_xy=True)
    lon, lat = t.transform(x, y)
    return np.asarray(lon), np.asarray(lat)


def from_lonlat(crs, lon, lat):
    t = pyproj.Transformer.from_crs(WGS84, crs, always_xy=True)
    x, y = t.transform(lon, lat)
    return np.asarray(x), np.asarray(y)


def write(path, geoms, crs, **columns):
    frame = geopandas.GeoDataFrame(
        {"name": [f"f{i}" for i in range(len(geoms))], **columns}, geometry=list(geoms), crs=crs
    )
    frame.to_file(path, engine="pyogrio")
    return path


def parallel_arc_m(lat_deg, dlon_deg):
    """Ground length along a parallel: N cos(phi) dlambda, N = a / sqrt(1 - e^2 sin^2 phi).

    N is the prime-vertical radius of curvature (Snyder 1987, ch. 3-4; from memory); the
    parallel is a circle of radius N cos(phi).
    """
    phi = np.radians(lat_deg)
    n = GEOD.a / np.sqrt(1.0 - GEOD.es * np.sin(phi) ** 2)
    return n * np.cos(phi) * np.radians(dlon_deg)


def geodesic_circle(lon0, lat0, radius_m, n, clockwise=True):
    """Vertices of a geodesic circle (pyproj.Geod.fwd), clockwise = increasing azimuth."""
    az = np.linspace(0.0, 360.0, n, endpoint=False)
    if not clockwise:
        az = az[::-1]
    lon, lat, _ = GEOD.fwd(np.full(n, lon0), np.full(n, lat0), az, np.full(n, radius_m))
    return np.asarray(lon), np.asarray(lat)


def true_azimuth_of_grid_direction(crs, x, y, grid_az_deg, step_m=1.0):
    """True azimuth of a grid direction at grid points, by projecting a 1 m step (pyproj.Geod)."""
    a = np.radians(grid_az_deg)
    lon1, lat1 = to_lonlat(crs, x, y)
    lon2, lat2 = to_lonlat(crs, x + step_m * np.sin(a), y + step_m * np.cos(a))
    az, _, _ = GEOD.inv(lon1, lat1, lon2, lat2)
    return np.asarray(az)


# A parallel of 10,050 m on the ground, vertices about 50 m apart, digitised west to east.
EW_LENGTH_M = 10050.0
EW_DLON = np.degrees(EW_LENGTH_M / parallel_arc_m(LAT0, np.degrees(1.0)))
EW_LON = np.linspace(LON0 - EW_DLON / 2, LON0 + EW_DLON / 2, 202)


@pytest.fixture
def east_west_file(tmp_path):
    line = shapely.LineString(np.column_stack([EW_LON, np.full(EW_LON.size, LAT0)]))
    return write(tmp_path / "parallel.geojson", [line], WGS84)


# ---------------------------------------------------------------------------------------------
# Straight shores: normals, chainage on the ground, placement
# ---------------------------------------------------------------------------------------------


def test_east_west_shore_sea_to_the_south(east_west_file):
    coast = read_coast(east_west_file, sea="right")
    assert coast.working_crs.to_epsg() == 32631  # UTM zone of 5.5 E: floor(185.5 / 6) + 1 = 31
    t = lay_out_transects(coast, spacing_m=100.0, orientation_window_m=1000.0)
    # Placement: n = floor(10050 / 100) + 1 = 101 transects at exactly 100 m, centred, so the
    # first is at (10050 - 100 * 100) / 2 = 25 m [derived: arithmetic from the documented rule].
    assert len(t) == 101
    np.testing.assert_allclose(t.spacing_m, 100.0, rtol=0, atol=0)
    np.testing.assert_allclose(np.diff(t.chainage_m), 100.0, rtol=0, atol=1e-9)
    # The shore runs due east along a parallel; the sea on its right is due south: 180 deg true
    # (geometric fact). 0.01 deg is far below the 1.70 deg convergence being corrected.
    assert np.max(np.abs(angdiff(t.normal_az_deg, 180.0))) < 0.01
    # Ground chainage against the arc length of the parallel (Snyder 1987, from memory):
    # the projection's scale factor here is k = 1.00011, i.e. 1.1 m over the line, so 1 mm shows
    # the correction is applied (the grid length is also checked to differ by > 0.5 m).
    lon, lat = to_lonlat(coast.working_crs, t.x_m, t.y_m)
    np.testing.assert_allclose(lat, LAT0, atol=1e-8)  # on the shore (1e-8 deg ~ 1 mm)
    np.testing.assert_allclose(t.chainage_m, parallel_arc_m(LAT0, lon - EW_LON[0]), atol=1e-3)
    assert t.chainage_m[0] == pytest.approx(25.0, abs=1e-3)
    grid_length = coast.parts[0].length
    assert abs(grid_length - EW_LENGTH_M) > 0.5
    assert not t.part_closed.any()
    np.testing.assert_array_equal(t.transect_id, np.arange(101))


def test_east_west_shore_sea_to_the_north(east_west_file):
    t = lay_out_transects(read_coast(east_west_file, sea="left"), 100.0, 1000.0)
    assert np.max(np.abs(angdiff(t.normal_az_deg, 0.0))) < 0.01
    assert ((t.normal_az_deg >= 0.0) & (t.normal_az_deg < 360.0)).all()


def test_long_lonlat_segment_is_straight_in_lonlat(tmp_path):
    # A two-vertex line along the parallel 43 N, 12 km long. RFC 7946 (sec. 3.1.1) reads a
    # segment as straight in its CRS, i.e. along the parallel in lon/lat; projected as a
    # straight UTM chord it would bow about L^2 tan(phi) / (8 R) = 2.6 m [derived: arithmetic]
    # off the parallel. Densifying in the source CRS keeps the transects on it (1 cm).
    line = shapely.LineString([(LON0 - 0.075, LAT0), (LON0 + 0.075, LAT0)])
    coast = read_coast(write(tmp_path / "two_vertices.geojson", [line], WGS84))
    t = lay_out_transects(coast, spacing_m=500.0, orientation_window_m=1000.0)
    _, lat = to_lonlat(coast.working_crs, t.x_m, t.y_m)
    np.testing.assert_allclose(lat, LAT0, atol=1e-7)  # 1e-7 deg = 1.1 cm
    assert np.max(np.abs(angdiff(t.normal_az_deg, 180.0))) < 0.01
    assert len(t) == int(parallel_arc_m(LAT0, 0.15) // 500.0) + 1


def test_segment_across_the_180th_meridian_goes_the_short_way(tmp_path):
    # Fiji-like: a two-vertex line along 17 S from 179.98 E to 179.98 W is 0.04 deg of
    # longitude, about 4.26 km; densified from 179.98 to -179.98 it went the long way round
    # the globe (38,000 km, hundreds of thousands of transects, out of memory).
    line = shapely.LineString([(179.98, -17.0), (-179.98, -17.0)])
    coast = read_coast(write(tmp_path / "antimeridian.geojson", [line], WGS84), sea="right")
    length = parallel_arc_m(-17.0, 0.04)
    assert coast.parts[0].length == pytest.approx(length, rel=3e-3)  # grid vs ground (k)
    t = lay_out_transects(coast, spacing_m=500.0, orientation_window_m=1000.0)
    assert len(t) == int(length // 500.0) + 1
    lon, lat = to_lonlat(coast.working_crs, t.x_m, t.y_m)
    np.testing.assert_allclose(lat, -17.0, atol=1e-7)
    assert np.all(np.abs(lon) > 179.97)  # on either side of the meridian, not elsewhere
    assert np.max(np.abs(angdiff(t.normal_az_deg, 180.0))) < 0.01  # sea on the right: south


@pytest.mark.parametrize(("sea", "expected"), [("right", 90.0), ("left", 270.0)])
def test_north_south_shore(tmp_path, sea, expected):
    # A meridian digitised south to north, 2.5 deg off the central meridian, where grid north
    # differs from true north by the convergence (1.70 deg): sea right = east = 90 deg true.
    lat = np.linspace(LAT0 - 0.05, LAT0 + 0.05, 250)
    line = shapely.LineString(np.column_stack([np.full(lat.size, LON0), lat]))
    coast = read_coast(write(tmp_path / "meridian.gpkg", [line], WGS84), sea=sea)
    t = lay_out_transects(coast, spacing_m=250.0, orientation_window_m=1000.0)
    assert np.max(np.abs(angdiff(t.normal_az_deg, expected))) < 0.01
    # Chainage against the geodesic length along the meridian (pyproj.Geod), 1 mm.
    lon, latt = to_lonlat(coast.working_crs, t.x_m, t.y_m)
    _, _, dist = GEOD.inv(np.full(len(t), LON0), np.full(len(t), lat[0]), lon, latt)
    np.testing.assert_allclose(t.chainage_m, dist, atol=1e-3)


def curved_lonlat_shore():
    """A gently curved shore near the test site, vertices about 25 m apart."""
    s = np.linspace(0.0, 1.0, 600)
    lon = LON0 - 0.06 + 0.12 * s
    lat = LAT0 - 0.02 + 0.04 * s + 0.004 * np.sin(2.0 * np.pi * s)
    return lon, lat


def test_same_coast_in_lonlat_utm_and_web_mercator(tmp_path):
    lon, lat = curved_lonlat_shore()
    files = {}
    for label, crs in (("lonlat", WGS84), ("utm", UTM31N), ("webmerc", WEB_MERCATOR)):
        x, y = from_lonlat(crs, lon, lat)
        line = shapely.LineString(np.column_stack([x, y]))
        files[label] = write(tmp_path / f"coast_{label}.gpkg", [line], crs)
    results = {}
    for label, path in files.items():
        coast = read_coast(path, sea="right")
        assert coast.working_crs.to_epsg() == 32631  # Web Mercator is never used as metres
        results[label] = lay_out_transects(coast, spacing_m=200.0, orientation_window_m=1000.0)
    ref = results["lonlat"]
    ref_lon, ref_lat = to_lonlat(ref.working_crs, ref.x_m, ref.y_m)
    for label in ("utm", "webmerc"):
        t = results[label]
        assert len(t) == len(ref)
        lon_t, lat_t = to_lonlat(t.working_crs, t.x_m, t.y_m)
        _, _, dist = GEOD.inv(ref_lon, ref_lat, lon_t, lat_t)
        assert np.max(dist) < 0.5  # requirement: same positions within 0.5 m on the ground
        assert np.max(np.abs(angdiff(t.normal_az_deg, ref.normal_az_deg))) < 0.05
        np.testing.assert_allclose(t.chainage_m, ref.chainage_m, rtol=1e-3, atol=1e-6)


def test_round_bay_normals_and_the_slid_window_at_the_ends(tmp_path):
    # An open shore along a geodesic circle of radius 5 km (azimuths 200 -> 340 deg from the
    # centre, i.e. digitised clockwise), sea on the right: the sea is inside the circle, so the
    # seaward normal points at the centre (Gauss's lemma: radial geodesics cross geodesic
    # circles at right angles; a standard result of differential geometry). Any symmetric
    # window gives that at interior transects. Within h = smoothing / 2 of an open end the
    # window is slid inward (documented rule), so there the normal is the radial direction at
    # the shore point h from the end.
    radius, h = 5000.0, 500.0
    az = np.arange(200.0, 340.0 + 1e-9, 0.1)
    lon, lat, _ = GEOD.fwd(
        np.full(az.size, LON0), np.full(az.size, LAT0), az, np.full(az.size, radius)
    )
    line = shapely.LineString(np.column_stack([lon, lat]))
    coast = read_coast(write(tmp_path / "bay.geojson", [line], WGS84), sea="right")
    t = lay_out_transects(coast, spacing_m=200.0, orientation_window_m=2 * h)
    arc = np.radians(140.0) * radius  # ground length; the 0.1-deg polygon is 1e-7 shorter
    lon_t, lat_t = to_lonlat(t.working_crs, t.x_m, t.y_m)
    az_to_centre, _, _ = GEOD.inv(lon_t, lat_t, np.full(len(t), LON0), np.full(len(t), LAT0))
    inner = (t.chainage_m >= h) & (t.chainage_m <= arc - h)
    assert np.max(np.abs(angdiff(t.normal_az_deg[inner], az_to_centre[inner]))) < 0.01
    for end, az_q in (
        (t.chainage_m < h, 200.0 + np.degrees(h / radius)),
        (t.chainage_m > arc - h, 340.0 - np.degrees(h / radius)),
    ):
        lon_q, lat_q, _ = GEOD.fwd(LON0, LAT0, az_q, radius)
        expected, _, _ = GEOD.inv(lon_q, lat_q, LON0, LAT0)
        assert end.sum() >= 2
        assert np.max(np.abs(angdiff(t.normal_az_deg[end], expected))) < 0.01
    # Positions are on the circle (pyproj.Geod distance to the centre), 0.1 m: the 0.1-deg
    # polygon's chords are inside the circle by at most R (1 - cos 0.05 deg) = 2 mm.
    _, _, r = GEOD.inv(np.full(len(t), LON0), np.full(len(t), LAT0), lon_t, lat_t)
    np.testing.assert_allclose(r, radius, atol=0.1)


# ---------------------------------------------------------------------------------------------
# Polygons: islands and lakes
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("clockwise", [True, False])
def test_round_island_normals_point_radially_outward(tmp_path, clockwise):
    lon, lat = geodesic_circle(LON0, LAT0, 2000.0, 1000, clockwise=clockwise)
    island = shapely.Polygon(np.column_stack([lon, lat]))
    # `sea` is ignored for polygons: the sea is outside the land.
    coast = read_coast(write(tmp_path / "island.geojson", [island], WGS84), sea="left")
    assert coast.closed.tolist() == [True]
    t = lay_out_transects(coast, spacing_m=100.0, orientation_window_m=500.0)
    perimeter = GEOD.line_length(np.r_[lon, lon[0]], np.r_[lat, lat[0]])
    n = round(perimeter / 100.0)  # 4 pi km / 100 m = 125.66... -> 126
    assert len(t) == n
    assert t.part_closed.all()
    # Uniform spacing exactly L / n, with L the ground perimeter (pyproj.Geod, 1e-6 relative).
    np.testing.assert_allclose(t.spacing_m, t.spacing_m[0], rtol=0, atol=0)
    assert t.spacing_m[0] * n == pytest.approx(perimeter, rel=1e-6)
    np.testing.assert_allclose(np.diff(t.chainage_m), t.spacing_m[0], rtol=1e-12, atol=1e-9)
    assert t.chainage_m[0] == 0.0
    # Outward normal of a geodesic circle is along the radial geodesic (Gauss's lemma, a
    # standard result of differential geometry); its azimuth at the shore point is the back
    # azimuth from the point to the centre plus 180 (pyproj.Geod). 0.01 deg: the 1000-gon
    # and the projection's shape change across 4 km are far smaller.
    lon_t, lat_t = to_lonlat(t.working_crs, t.x_m, t.y_m)
    _, back_az, _ = GEOD.inv(np.full(n, LON0), np.full(n, LAT0), lon_t, lat_t)
    assert np.max(np.abs(angdiff(t.normal_az_deg, np.asarray(back_az) + 180.0))) < 0.01


@pytest.mark.parametrize("clockwise", [True, False])
def test_lake_in_a_polygon_hole_normals_point_into_the_hole(tmp_path, clockwise):
    # Land square about 11 km x 11 km with a round lake (radius 1 km) in it.
    d = 0.05
    square = [
        (LON0 - d, LAT0 - d),
        (LON0 + d, LAT0 - d),
        (LON0 + d, LAT0 + d),
        (LON0 - d, LAT0 + d),
    ]
    lon, lat = geodesic_circle(LON0, LAT0, 1000.0, 600, clockwise=clockwise)
    ring = np.column_stack([lon, lat])
    land = shapely.Polygon(square if clockwise else square[::-1], [ring])  # any orientation
    coast = read_coast(write(tmp_path / "lake.gpkg", [land], WGS84))
    assert len(coast.parts) == 2 and coast.closed.all()
    t = lay_out_transects(coast, spacing_m=100.0, orientation_window_m=300.0)
    lon_t, lat_t = to_lonlat(t.working_crs, t.x_m, t.y_m)
    hole = t.part_id == 1
    az_to_centre, _, _ = GEOD.inv(
        lon_t[hole], lat_t[hole], np.full(hole.sum(), LON0), np.full(hole.sum(), LAT0)
    )
    # The water of the hole is inside it: normals point to the centre (Gauss's lemma), 0.02 deg.
    assert np.max(np.abs(angdiff(t.normal_az_deg[hole], az_to_centre))) < 0.02
    # On the exterior ring the sea is outside the land: the square's edges are parallels and
    # meridians, so away from the corners (farther than the 150 m half-window) the normals are
    # due N, E, S and W of the land (geometric fact), 0.01 deg.
    lo, la = lon_t[~hole], lat_t[~hole]
    corners = np.array(square)
    _, _, to_corner = GEOD.inv(
        np.repeat(lo, 4),
        np.repeat(la, 4),
        np.tile(corners[:, 0], lo.size),
        np.tile(corners[:, 1], lo.size),
    )
    away = np.asarray(to_corner).reshape(-1, 4).min(axis=1) > 200.0
    expected = np.select(
        [la > LAT0 + d - 1e-6, lo > LON0 + d - 1e-6, la < LAT0 - d + 1e-6],
        [0.0, 90.0, 180.0],
        270.0,
    )
    assert away.sum() > 300
    assert np.max(np.abs(angdiff(t.normal_az_deg[~hole][away], expected[away]))) < 0.01


def test_touching_land_polygons_are_merged(tmp_path):
    # Two land squares sharing an edge (e.g. tiles of one land area): the shared edge is no
    # shore, so one ring results and no transect faces the other square.
    a = shapely.box(500000, 4760000, 505000, 4765000)
    b = shapely.box(505000, 4760000, 510000, 4765000)
    coast = read_coast(write(tmp_path / "tiles.gpkg", [a, b], UTM31N))
    assert len(coast.parts) == 1
    assert any("merged" in w and "0, 1" in w for w in coast.warnings)
    assert coast.parts[0].length == pytest.approx(30000.0, rel=1e-3)


def test_mixed_lines_and_polygons(tmp_path):
    line = shapely.LineString([(490000, 4750000), (495000, 4750000)])
    island = shapely.box(500000, 4760000, 501000, 4761000)
    coast = read_coast(write(tmp_path / "mixed.geojson", [line, island], UTM31N), sea="left")
    assert coast.closed.tolist() == [False, True]
    assert coast.source_feature.tolist() == [0, 1]
    assert coast.sea_on_right.tolist()[0] is False
    t = lay_out_transects(coast, 100.0, 200.0)
    # line digitised eastward with the sea on the left: north (0 deg); the line lies 5-10 km
    # west of the central meridian, where grid and true north differ by less than 0.1 deg.
    on_line = t.part_id == 0
    assert np.max(np.abs(angdiff(t.normal_az_deg[on_line], 0.0))) < 0.1


# ---------------------------------------------------------------------------------------------
# Robustness of the smoothed orientation
# ---------------------------------------------------------------------------------------------


def test_digitising_noise_barely_moves_the_normals(tmp_path):
    # A straight 20 km shore with 5 m vertices and +-1.5 m seeded uniform noise in x and y,
    # smoothing 1,000 m. The one-line transport needs the normal to well under a degree: the
    # CERC rate goes with sin(2 alpha_b), whose relative change is 2 cot(2 alpha_b) d(alpha),
    # 2.9 % for 0.3 deg at alpha_b = 10 deg (CEM III-2 Eq. III-2-7 form, [derived: arithmetic]),
    # so noise cannot shift a rate class; whether it creates hotspots is checked at run level.
    rng = np.random.default_rng(20240531)
    x = np.arange(490000.0, 510000.0 + 0.1, 5.0)
    y = np.full(x.size, 4760000.0)
    noisy = np.column_stack([x, y]) + rng.uniform(-1.5, 1.5, size=(x.size, 2))
    coast = read_coast(write(tmp_path / "noisy.gpkg", [shapely.LineString(noisy)], UTM31N))
    t = lay_out_transects(coast, spacing_m=100.0, orientation_window_m=1000.0)
    # Noiseless direction: grid azimuth 180 (sea right of an eastward line), converted to true
    # azimuth at each transect point with pyproj.Geod on projected 1 m steps.
    expected = true_azimuth_of_grid_direction(UTM31N, t.x_m, t.y_m, 180.0)
    deviation = np.max(np.abs(angdiff(t.normal_az_deg, expected)))
    # Size: each half-window centroid averages 500 m (~100 vertices) of noise of standard
    # deviation 1.5 / sqrt(3) = 0.87 m, i.e. ~0.09 m, over a 500 m reference between centroids:
    # ~sqrt(2) 0.09 / 500 rad = 0.015 deg per transect [derived: arithmetic], ~0.05 deg at most
    # over 200 transects; the brief asks for < 0.3 deg.
    assert deviation < 0.3


def test_vertex_density_does_not_change_the_normals():
    # The same smooth curve (sine, 300 m amplitude, 4 km wavelength) with 2 m and 50 m
    # vertices: the window-averaged orientation must not depend on the vertex density.
    def coast_at(step):
        x = np.arange(0.0, 12000.0 + 0.1, step)
        y = 300.0 * np.sin(2.0 * np.pi * x / 4000.0)
        line = shapely.LineString(np.column_stack([495000.0 + x, 4760000.0 + y]))
        return CoastLines([line], np.array([False]), np.array([0]), UTM31N, UTM31N, [])

    fine = lay_out_transects(coast_at(2.0), spacing_m=100.0, orientation_window_m=1000.0)
    coarse = lay_out_transects(coast_at(50.0), spacing_m=100.0, orientation_window_m=1000.0)
    assert len(fine) == len(coarse)
    assert np.max(np.abs(angdiff(fine.normal_az_deg, coarse.normal_az_deg))) < 0.2
    assert np.max(np.hypot(fine.x_m - coarse.x_m, fine.y_m - coarse.y_m)) < 1.0


@settings(max_examples=25, deadline=None)
@given(
    grid_az=st.floats(0.0, 359.9),
    easting=st.floats(300000.0, 700000.0),
    sea_right=st.booleans(),
)
def test_straight_shore_any_direction(grid_az, easting, sea_right):
    # A grid-straight 5 km shore in UTM 31N at any direction and easting: the normal is the
    # true azimuth (pyproj.Geod on projected 1 m steps) of the grid direction +-90 deg.
    a = np.radians(grid_az)
    x0, y0 = easting, 4760000.0
    line = shapely.LineString([(x0, y0), (x0 + 5000.0 * np.sin(a), y0 + 5000.0 * np.cos(a))])
    line = shapely.segmentize(line, 100.0)
    coast = CoastLines(
        [line], np.array([False]), np.array([0]), UTM31N, UTM31N, [], np.array([sea_right])
    )
    t = lay_out_transects(coast, spacing_m=250.0, orientation_window_m=600.0)
    turn = 90.0 if sea_right else -90.0
    expected = true_azimuth_of_grid_direction(UTM31N, t.x_m, t.y_m, grid_az + turn)
    assert np.max(np.abs(angdiff(t.normal_az_deg, expected))) < 0.005


# ---------------------------------------------------------------------------------------------
# Transect lines, multi-part lines, placement on short parts
# ---------------------------------------------------------------------------------------------


def test_transect_lines_have_ground_length_and_true_azimuth(east_west_file):
    t = lay_out_transects(read_coast(east_west_file), 1000.0, 1000.0)
    lines = t.lines(5000.0)
    assert len(lines) == len(t)
    start = shapely.get_coordinates(shapely.get_point(lines, 0))
    end = shapely.get_coordinates(shapely.get_point(lines, -1))
    lon1, lat1 = to_lonlat(t.working_crs, start[:, 0], start[:, 1])
    lon2, lat2 = to_lonlat(t.working_crs, end[:, 0], end[:, 1])
    az, _, dist = GEOD.inv(lon1, lat1, lon2, lat2)
    # 5 km on the ground (pyproj.Geod): 2 cm covers the grid line vs geodesic difference.
    np.testing.assert_allclose(dist, 5000.0, atol=0.02)
    assert np.max(np.abs(angdiff(az, t.normal_az_deg))) < 0.01
    np.testing.assert_allclose(start[:, 0], t.x_m)
    # Per-transect lengths; NaN -> None.
    lengths = np.full(len(t), 100.0)
    lengths[0] = np.nan
    out = t.lines(lengths)
    assert out[0] is None and out[1] is not None


def test_multilinestring_parts_are_separate_shores(tmp_path):
    one = [(490000.0, 4750000.0), (494000.0, 4750000.0)]
    two = [(500000.0, 4751000.0), (503000.0, 4751000.0)]
    path = write(tmp_path / "multi.gpkg", [shapely.MultiLineString([one, two])], UTM31N)
    coast = read_coast(path)
    assert len(coast.parts) == 2
    assert coast.source_feature.tolist() == [0, 0]
    t = lay_out_transects(coast, spacing_m=500.0, orientation_window_m=500.0)
    np.testing.assert_array_equal(t.transect_id, np.arange(len(t)))
    first = t.part_id == 0
    second = t.part_id == 1
    assert first.sum() == 9 and second.sum() == 7  # floor(~4001.6/500)+1, floor(~3001.2/500)+1
    # Chainage restarts on each part: both start within half a spacing of their part's start.
    assert 0.0 <= t.chainage_m[first][0] < 250.0
    assert 0.0 <= t.chainage_m[second][0] < 250.0
    assert np.all(np.diff(t.part_id) >= 0)


def test_short_parts_are_skipped_with_a_warning():
    long = shapely.LineString([(500000.0, 4760000.0), (502000.0, 4760000.0)])
    short = shapely.LineString([(503000.0, 4760000.0), (503050.0, 4760000.0)])
    coast = CoastLines(
        [long, short], np.array([False, False]), np.array([0, 1]), UTM31N, UTM31N, []
    )
    t = lay_out_transects(coast, spacing_m=100.0, orientation_window_m=500.0)
    assert set(t.part_id.tolist()) == {0}
    assert any("too short" in w and "parts 1" in w for w in t.warnings)
    with pytest.raises(CoastError, match="spacing_m = 5000"):
        lay_out_transects(coast, spacing_m=5000.0, orientation_window_m=500.0)


def test_bad_spacing_and_smoothing_values():
    coast = CoastLines(
        [shapely.LineString([(500000, 4760000), (502000, 4760000)])],
        np.array([False]),
        np.array([0]),
        UTM31N,
        UTM31N,
        [],
    )
    for bad in (0.0, -1.0, np.nan, "wide"):
        with pytest.raises(ValueError, match="spacing_m"):
            lay_out_transects(coast, bad, 100.0)
        with pytest.raises(ValueError, match="orientation_window_m"):
            lay_out_transects(coast, 100.0, bad)


def test_meeting_line_ends_are_reported(tmp_path):
    a = shapely.LineString([(490000.0, 4750000.0), (495000.0, 4750000.0)])
    b = shapely.LineString([(495000.0, 4750000.0), (499000.0, 4752000.0)])
    coast = read_coast(write(tmp_path / "pieces.gpkg", [a, b], UTM31N))
    assert len(coast.parts) == 2
    assert any("meet" in w for w in coast.warnings)


# ---------------------------------------------------------------------------------------------
# Working CRS and the projection corrections
# ---------------------------------------------------------------------------------------------


def test_working_crs_choice():
    # UTM zones: zone = floor((lon + 180) / 6) + 1, EPSG 326zz north / 327zz south (common
    # practice; the EPSG registry's definition of the WGS 84 UTM zones).
    assert working_crs_for((5.0, 43.0, 5.9, 43.2)).to_epsg() == 32631
    assert working_crs_for((-70.5, -33.5, -70.0, -33.0)).to_epsg() == 32719
    assert working_crs_for((-0.5, 50.0, 0.5, 51.0)).to_epsg() in (32630, 32631)
    # Beyond the UTM latitudes (84 N), or wider than a zone: a transverse Mercator on the data.
    for bounds in ((10.0, 84.5, 20.0, 85.0), (0.0, 40.0, 12.0, 41.0)):
        crs = working_crs_for(bounds)
        assert crs.to_epsg() is None
        assert "Transverse Mercator" in crs.name
        lon0 = (bounds[0] + bounds[2]) / 2
        op = crs.coordinate_operation
        assert op.method_name == "Transverse Mercator"
        params = {p.name: p.value for p in op.params}
        assert params["Longitude of natural origin"] == pytest.approx(lon0)
        assert params["Scale factor at natural origin"] == 1.0
    # Across the 180th meridian (west > east): still one UTM zone next to it.
    assert working_crs_for((179.0, -17.0, -179.0, -16.0)).to_epsg() in (32701, 32760)
    # From a GeoSeries in Web Mercator.
    x, y = from_lonlat(WEB_MERCATOR, [5.4, 5.6], [43.0, 43.1])
    series = geopandas.GeoSeries([shapely.LineString(np.column_stack([x, y]))], crs=WEB_MERCATOR)
    assert working_crs_for(series).to_epsg() == 32631


def test_scale_factor_and_convergence_of_the_working_crs():
    # The corrections against (1) plain projection of points (pyproj.Transformer), independent
    # of PROJ's factors, and (2) the transverse Mercator series of Snyder (1987, ch. 8) in
    # their leading terms (from memory): k ~ k0 (1 + (dlam cos phi)^2 / 2 (1 + eta^2)),
    # gamma ~ dlam sin phi, accurate to the next order term, 1e-6 and 0.002 deg here.
    from shoreline.coast import _scale_and_north

    x, y = from_lonlat(UTM31N, np.array([LON0]), np.array([LAT0]))
    k, north_grid_az = _scale_and_north(UTM31N, x, y)
    x2, y2 = from_lonlat(UTM31N, np.array([LON0]), np.array([LAT0 + 1e-5]))
    assert north_grid_az[0] == pytest.approx(np.degrees(np.arctan2(x2 - x, y2 - y))[0], abs=1e-6)
    phi, dlam = np.radians(LAT0), np.radians(LON0 - 3.0)
    gamma = np.degrees(dlam * np.sin(phi))
    assert -north_grid_az[0] == pytest.approx(gamma, abs=0.002)
    eta2 = GEOD.es / (1 - GEOD.es) * np.cos(phi) ** 2
    k_series = 0.9996 * (1 + (dlam * np.cos(phi)) ** 2 / 2 * (1 + eta2))
    assert k[0] == pytest.approx(k_series, abs=1e-6)
    # Scale from two projected points 10 m apart on the ground (pyproj.Geod): 1e-7.
    lon2, lat2, _ = GEOD.fwd(LON0, LAT0, 90.0, 10.0)
    x3, y3 = from_lonlat(UTM31N, np.array([lon2]), np.array([lat2]))
    assert k[0] == pytest.approx(np.hypot(x3 - x, y3 - y)[0] / 10.0, abs=1e-7)


# ---------------------------------------------------------------------------------------------
# Bad input and repairs
# ---------------------------------------------------------------------------------------------


def test_missing_file(tmp_path):
    with pytest.raises(CoastError, match=r"nowhere\.gpkg: coast file not found"):
        read_coast(tmp_path / "nowhere.gpkg")


def test_file_with_only_points(tmp_path):
    path = write(tmp_path / "coast.gpkg", [shapely.Point(5.5, 43.0)], WGS84)
    with pytest.raises(CoastError, match=r"coast\.gpkg: no line or polygon geometry \(found Point"):
        read_coast(path)


def test_points_among_lines_are_skipped(tmp_path):
    line = shapely.LineString([(490000.0, 4750000.0), (495000.0, 4750000.0)])
    path = write(tmp_path / "c.geojson", [shapely.Point(1, 2), line], UTM31N)
    coast = read_coast(path)
    assert len(coast.parts) == 1 and coast.source_feature.tolist() == [1]
    assert any("point" in w and "features 0" in w for w in coast.warnings)


def test_no_crs_needs_the_crs_setting(tmp_path):
    line = shapely.LineString([(490000.0, 4750000.0), (495000.0, 4750000.0)])
    with pytest.warns(UserWarning):  # pyogrio warns when writing without a CRS
        path = write(tmp_path / "nocrs.gpkg", [line], None)
    with pytest.raises(CoastError, match=r"nocrs\.gpkg: .*no coordinate reference.*\[coast\]"):
        read_coast(path)
    coast = read_coast(path, crs="EPSG:32631")
    assert coast.source_crs.to_epsg() == 32631
    assert coast.parts[0].length == pytest.approx(5000.0, abs=1e-6)


def test_crs_setting_must_not_contradict_the_file(tmp_path):
    line = shapely.LineString([(490000.0, 4750000.0), (495000.0, 4750000.0)])
    path = write(tmp_path / "utm.gpkg", [line], UTM31N)
    assert read_coast(path, crs="EPSG:32631").source_crs.to_epsg() == 32631  # same: fine
    with pytest.raises(CoastError, match=r"utm\.gpkg: the file's CRS is EPSG:32631.*only for"):
        read_coast(path, crs="EPSG:32632")
    with pytest.raises(CoastError, match="not a coordinate reference system"):
        read_coast(path, crs="no such crs")


def test_empty_and_unreadable_files(tmp_path):
    line = shapely.LineString([(0.0, 0.0), (1.0, 1.0)])
    empty = geopandas.GeoDataFrame({"name": ["x"]}, geometry=[line], crs=WGS84).iloc[:0]
    empty.to_file(tmp_path / "empty.geojson", engine="pyogrio")
    with pytest.raises(CoastError, match=r"empty\.geojson: holds no features"):
        read_coast(tmp_path / "empty.geojson")
    (tmp_path / "zero.gpkg").write_bytes(b"")
    with pytest.raises(CoastError, match=r"zero\.gpkg: cannot be read"):
        read_coast(tmp_path / "zero.gpkg")
    (tmp_path / "text.geojson").write_text("this is not GeoJSON")
    with pytest.raises(CoastError, match=r"text\.geojson: cannot be read"):
        read_coast(tmp_path / "text.geojson")


def test_null_geometries_are_skipped(tmp_path):
    line = shapely.LineString([(490000.0, 4750000.0), (495000.0, 4750000.0)])
    coast = read_coast(write(tmp_path / "nulls.gpkg", [None, line, None], UTM31N))
    assert coast.source_feature.tolist() == [1]
    assert any(
        "skipped 2 features with null or empty geometry (features 0, 2" in w for w in coast.warnings
    )
    with pytest.raises(CoastError, match="null or empty"):
        read_coast(write(tmp_path / "allnull.gpkg", [None], UTM31N))


def test_bow_tie_polygon_is_repaired_with_a_warning(tmp_path):
    line = shapely.LineString([(480000.0, 4750000.0), (485000.0, 4750000.0)])
    bow_tie = shapely.Polygon(
        [(500000, 4760000), (502000, 4762000), (502000, 4760000), (500000, 4762000)]
    )
    assert not bow_tie.is_valid
    coast = read_coast(write(tmp_path / "bowtie.gpkg", [line, bow_tie], UTM31N))
    assert any("repaired 1 invalid" in w and "features 1" in w for w in coast.warnings)
    # make_valid splits the bow tie into its two triangles: two closed rings from feature 1.
    rings = coast.source_feature == 1
    assert rings.sum() == 2 and coast.closed[rings].all()
    t = lay_out_transects(coast, 200.0, 400.0)
    assert np.isfinite(t.normal_az_deg).all()


def test_zero_length_lines_are_dropped(tmp_path):
    degenerate = shapely.LineString([(490000.0, 4750000.0), (490000.0, 4750000.0)])
    line = shapely.LineString([(491000.0, 4750000.0), (495000.0, 4750000.0)])
    coast = read_coast(write(tmp_path / "zero.geojson", [degenerate, line], UTM31N))
    assert coast.source_feature.tolist() == [1]
    assert any("zero-length" in w and "features 0" in w for w in coast.warnings)


def test_layers(tmp_path):
    line = shapely.LineString([(490000.0, 4750000.0), (495000.0, 4750000.0)])
    path = tmp_path / "two.gpkg"
    for layer in ("roads", "shore"):
        geopandas.GeoDataFrame(geometry=[line], crs=UTM31N).to_file(path, layer=layer)
    # Default: the first layer, with a warning naming all of them (docs/study-file.md).
    coast = read_coast(path)
    assert any("2 layers ('roads', 'shore'); read the first, 'roads'" in w for w in coast.warnings)
    assert len(read_coast(path, layer="shore").parts) == 1
    with pytest.raises(CoastError, match="layer 'sea' not found"):
        read_coast(path, layer="sea")


def test_bad_sea_value(east_west_file):
    with pytest.raises(ValueError, match="'left', 'right'"):
        read_coast(east_west_file, sea="south")


def test_results_are_read_only(east_west_file):
    coast = read_coast(east_west_file)
    t = lay_out_transects(coast, 100.0, 1000.0)
    assert isinstance(t, Transects)
    with pytest.raises(ValueError):
        t.normal_az_deg[0] = 0.0
    with pytest.raises(AttributeError):
        coast.closed = np.array([True])
