"""Tests of shoreline/exposure.py: open directions and fetch from geometric rays.

Expected values are plane geometry (a ray against a circle, a line or a chord), written out
again here, plus pyproj.Geod (geodesics on the WGS 84 ellipsoid) and plain pyproj
transformations where the projection matters. No expected value is a number produced by
running shoreline.exposure.

Most tests work in a transverse Mercator centred at 0 N 0 E with scale 1 on its central
meridian ("PLANE"). Within 10 km of its origin the point scale factor differs from 1 by less
than x^2 / (2 R^2) = 1.2e-6 and grid north from true north by less than 2e-4 deg (Snyder 1987,
Map Projections: A Working Manual, USGS PP 1395, ch. 8; from memory), so plane geometry in grid
metres holds to about 1 cm over 10 km: the tolerances below are set from that and from the
polygon approximation of each circle (stated where used).
"""

from __future__ import annotations

import math
from pathlib import Path

import geopandas as gpd
import numpy as np
import pyproj
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st
from pyproj.crs import ProjectedCRS
from pyproj.crs.coordinate_operation import TransverseMercatorConversion
from scipy import integrate

from shoreline.coast import CoastLines, Transects, lay_out_transects, read_coast
from shoreline.errors import CoastError
from shoreline.exposure import (
    DEFAULT_START_M,
    Exposure,
    _widest_open_sector,
    compute_exposure,
    spreading_weights,
)

PLANE = ProjectedCRS(
    conversion=TransverseMercatorConversion(
        latitude_natural_origin=0.0,
        longitude_natural_origin=0.0,
        false_easting=0.0,
        false_northing=0.0,
        scale_factor_natural_origin=1.0,
    ),
    geodetic_crs=pyproj.CRS.from_epsg(4326),
)
OFFSET_M = 20.0  # the former default start offset, used by the geometric checks below
# The geometric core of the ray casting: rays from a 20 m start, every blocker shadowing (no
# diffraction test of narrow blockers, no grazing rule). The tests whose expected values are
# plane geometry from that start use it; the rules on top of it are tested further down.
GEOMETRIC = dict(start_offset_m=OFFSET_M, wavelength_m=None, grazing_radius_m=None)
GEOD = pyproj.Geod(ellps="WGS84")


def transects_at(x, y, normal_deg, crs=PLANE, closed=False) -> Transects:
    x = np.atleast_1d(np.asarray(x, dtype=float))
    n = len(x)
    y = np.broadcast_to(np.asarray(y, dtype=float), (n,))
    normal = np.broadcast_to(np.asarray(normal_deg, dtype=float), (n,))
    return Transects(
        transect_id=np.arange(n),
        part_id=np.zeros(n, int),
        chainage_m=np.arange(n) * 100.0,
        x_m=x,
        y_m=y,
        normal_az_deg=normal,
        spacing_m=np.full(n, 100.0),
        part_closed=np.full(n, closed),
        working_crs=crs,
    )


def circle(cx, cy, radius_m, n=3600, ring=False):
    """Polygon (or closed ring) inscribed in a circle, a vertex at azimuth 0."""
    az = np.linspace(0.0, 2 * np.pi, n + 1)
    xy = np.column_stack([cx + radius_m * np.sin(az), cy + radius_m * np.cos(az)])
    xy[-1] = xy[0]
    return shapely.LinearRing(xy[:-1]) if ring else shapely.Polygon(xy)


def angdiff(a, b):
    """Signed smallest difference a - b of two azimuths [deg]."""
    return (np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0


def rays_in_half_circle(normal_deg, step_deg=1.0):
    """Ray directions k * step within 90 deg (inclusive) of the normal, by counting."""
    k_lo = math.ceil((normal_deg - 90.0) / step_deg - 1e-12)
    k_hi = math.floor((normal_deg + 90.0) / step_deg + 1e-12)
    return (np.arange(k_lo, k_hi + 1) * step_deg) % 360.0


def ray_disc(sx, sy, az_deg, cx, cy, radius_m):
    """Plane geometry: (distance to the first crossing of a circle, miss distance) of rays.

    The ray from S along azimuth az meets the circle of centre C where t = p - sqrt(R^2 - q^2),
    p = (C - S).u, q = |(C - S) x u|; it misses when q > R or p < 0 (circle behind).
    """
    a = np.radians(az_deg)
    ux, uy = np.sin(a), np.cos(a)
    wx, wy = cx - sx, cy - sy
    p = wx * ux + wy * uy
    q = np.abs(wx * uy - wy * ux)
    with np.errstate(invalid="ignore"):
        t = np.where((q < radius_m) & (p > 0), p - np.sqrt(radius_m**2 - q**2), np.inf)
    return t, q


STRAIGHT = shapely.LineString([(-15000.0, 0.0), (15000.0, 0.0)])  # sea to the south


# ---------------------------------------------------------------------------------------------
# A straight open coast
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("normal_deg", [180.0, 180.4, 0.0, 203.4])
def test_straight_open_coast_is_open_over_the_half_circle(normal_deg):
    # A straight shore through the origin, perpendicular to the normal, 30 km long. Geometry:
    # a ray within 90 deg of the normal, starting 20 m seaward, never comes back to the shore
    # line (the two rays at exactly 90 deg run parallel to it, 20 m off); so every such ray is
    # open. The exposure is then exactly the number of 1-degree rays in the closed half circle
    # times the step: 180 deg, or 181 deg when the normal falls on a ray (both grazing rays
    # count). No tolerance is needed: a single blocked grazing ray would fail.
    tangent = np.radians(normal_deg + 90.0)
    dx, dy = 15000.0 * np.sin(tangent), 15000.0 * np.cos(tangent)
    shore = shapely.LineString([(-dx, -dy), (dx, dy)])
    along = np.linspace(-5000.0, 5000.0, 5)
    t = transects_at(along * np.sin(tangent), along * np.cos(tangent), normal_deg)
    e = compute_exposure(t, [shore], **GEOMETRIC)
    expected = rays_in_half_circle(normal_deg)
    cast = np.isin(e.directions_deg, expected)
    assert e.open.shape == (5, 360) and e.fetch_m.shape == (5, 360)
    np.testing.assert_array_equal(e.open, np.broadcast_to(cast, (5, 360)))
    np.testing.assert_array_equal(e.exposure_deg, len(expected) * 1.0)
    assert len(expected) in (180, 181)
    # Fetch = max distance where open, 0 landward (by definition).
    np.testing.assert_array_equal(e.fetch_m, np.where(cast, 20000.0, 0.0)[None, :].repeat(5, 0))
    assert e.max_distance_m == 20000.0 and e.start_offset_m == OFFSET_M


def test_noisy_straight_coast_from_lay_out_transects_is_open():
    # The same geometry digitised with +-2 m noise every 10 m, normals from shoreline.coast:
    # wiggles smaller than the 20 m start offset cannot reach a ray that heads seaward (or runs
    # parallel) from 18-22 m off the mean line, so every cast ray is open (geometric fact).
    rng = np.random.default_rng(7)
    x = np.arange(-15000.0, 15000.0 + 1.0, 10.0)
    shore = shapely.LineString(np.column_stack([x, rng.uniform(-2.0, 2.0, x.size)]))
    coast = CoastLines([shore], np.array([False]), np.array([0]), PLANE, PLANE)
    t = lay_out_transects(coast, spacing_m=1000.0, orientation_window_m=1000.0)
    e = compute_exposure(t, coast.parts, **GEOMETRIC)
    for i in range(len(t)):
        expected = rays_in_half_circle(float(t.normal_az_deg[i]))
        np.testing.assert_array_equal(e.open[i], np.isin(e.directions_deg, expected))
        assert e.exposure_deg[i] == len(expected)


def test_open_sector_edges_and_wrap_around_north():
    # Sea to the north (normal 0): rays 270..359 and 0..90 are open, a run through north. The
    # sector edges lie half a step outside the first and last open rays (documented rule):
    # 269.5 -> 90.5 deg, width 181 = the exposure. Normal 10.3: rays 281..100, 280.5 -> 100.5.
    for normal_deg, frm, to in ((0.0, 269.5, 90.5), (10.3, 280.5, 100.5)):
        tangent = np.radians(normal_deg + 90.0)
        dx, dy = 15000.0 * np.sin(tangent), 15000.0 * np.cos(tangent)
        shore = shapely.LineString([(-dx, -dy), (dx, dy)])  # perpendicular to the normal
        e = compute_exposure(transects_at(0.0, 0.0, normal_deg), [shore])
        assert e.open_from_deg[0] == pytest.approx(frm, abs=1e-9)
        assert e.open_to_deg[0] == pytest.approx(to, abs=1e-9)
        assert (e.open_to_deg[0] - e.open_from_deg[0]) % 360.0 == e.exposure_deg[0]
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT])
    assert (e.open_from_deg[0], e.open_to_deg[0]) == (89.5, 270.5)


def test_widest_open_sector_rule():
    # Definition checks on hand-made masks (8 rays of 45 deg).
    masks = np.array(
        [
            [1, 1, 1, 1, 1, 1, 1, 1],  # all open: 0 and 360
            [0, 0, 0, 0, 0, 0, 0, 0],  # none: NaN
            [1, 1, 0, 1, 1, 1, 0, 1],  # runs 3..5 (3 rays) and 7..1 (3 rays, wraps): first end
            [1, 0, 0, 0, 0, 0, 1, 1],  # one run through north: rays 6, 7, 0
            [0, 0, 1, 0, 1, 1, 0, 0],  # the wider of two runs
        ],
        dtype=bool,
    )
    frm, to = _widest_open_sector(masks, 45.0)
    np.testing.assert_array_equal(frm[[0, 2, 3, 4]], [0.0, 112.5, 247.5, 157.5])
    np.testing.assert_array_equal(to[[0, 2, 3, 4]], [360.0, 247.5, 22.5, 247.5])
    assert np.isnan(frm[1]) and np.isnan(to[1])


# ---------------------------------------------------------------------------------------------
# An island offshore of a straight coast
# ---------------------------------------------------------------------------------------------

ISLAND_R_M, ISLAND_D_M = 1000.0, 5000.0
# 3600-gon inscribed in the circle: its edges lie inside the circle by at most
# R (1 - cos(pi / 3600)) = 0.4 mm; along a ray that crosses the rim at angle psi the error is
# 0.4 mm / sin(psi): below 2 mm for the rays checked (psi > 12 deg).
ISLAND = circle(0.0, -ISLAND_D_M, ISLAND_R_M)


def test_island_shadow_half_width_and_fetch():
    # Transect directly behind the island: S = (0, -20), so D' = D - 20 = 4980 m to the centre.
    # Plane geometry: rays within asin(R / D') = 11.585 deg of 180 deg meet the island, the fetch
    # along one of them at delta from the centre line is D' cos(delta) - sqrt(R^2 - D'^2 sin^2).
    t = transects_at([0.0, 12000.0], 0.0, 180.0)
    e = compute_exposure(t, [STRAIGHT], land=[ISLAND], **GEOMETRIC)
    d_prime = ISLAND_D_M - OFFSET_M
    half_width = np.degrees(np.arcsin(ISLAND_R_M / d_prime))
    delta = angdiff(e.directions_deg, 180.0)
    inside = np.abs(delta) < half_width - 0.01
    outside = (np.abs(delta) > half_width + 0.01) & (np.abs(delta) <= 90.0)
    assert inside.sum() == 23  # rays 169..191
    assert not e.open[0, inside].any()
    assert e.open[0, outside].all()
    assert e.exposure_deg[0] == 181.0 - 23.0
    # Fetch toward the island centre = D' - R (plane geometry); 1 cm covers the polygon (0.4 mm)
    # and the projection (scale factor 1 on the central meridian).
    assert e.fetch_toward(180.0)[0] == pytest.approx(d_prime - ISLAND_R_M, abs=0.01)
    core = np.abs(delta) < half_width - 1.0
    dr = np.radians(delta[core])
    expected = d_prime * np.cos(dr) - np.sqrt(ISLAND_R_M**2 - (d_prime * np.sin(dr)) ** 2)
    np.testing.assert_allclose(e.fetch_m[0, core], expected, atol=0.01)
    # 12 km along the shore the same directions pass the island: the rays from (12000, -20)
    # miss the disc by hundreds of metres (plane geometry, checked here), so they are open.
    _, miss = ray_disc(12000.0, -20.0, e.directions_deg[inside], 0.0, -ISLAND_D_M, ISLAND_R_M)
    assert miss.min() > ISLAND_R_M + 100.0
    assert e.open[1, inside].all()


def test_island_as_polygon_or_as_coast_ring_blocks_the_same():
    # The boundary is what blocks a ray from outside: the island as a land polygon and as a
    # closed coast line (a ring) give the same open directions and fetch.
    t = transects_at(np.linspace(-3000.0, 3000.0, 7), 0.0, 180.0)
    a = compute_exposure(t, [STRAIGHT], land=[ISLAND])
    b = compute_exposure(t, [STRAIGHT, circle(0.0, -ISLAND_D_M, ISLAND_R_M, ring=True)])
    np.testing.assert_array_equal(a.open, b.open)
    np.testing.assert_allclose(a.fetch_m, b.fetch_m, atol=1e-6)


@settings(max_examples=25, deadline=None)
@given(
    cx=st.floats(-6000.0, 6000.0),
    dist=st.floats(800.0, 14000.0),
    radius=st.floats(100.0, 1500.0),
)
def test_island_shadow_matches_plane_geometry(cx, dist, radius):
    # Any round island offshore: a ray is blocked exactly when plane geometry says it meets
    # the disc within 20 km, and its fetch is the distance to that crossing. Rays within 0.05 m
    # of tangency or of the 20 km end are not judged (the 3600-gon lies up to 0.6 mm inside
    # the circle); fetch is checked to 2 cm where the ray crosses the rim at > 4.7 deg
    # (q < R - 5 m): 0.6 mm / sin 4.7 deg = 7 mm, plus the projection (< 1 cm at 14 km).
    cy = -(radius + max(dist, 250.0))
    t = transects_at(0.0, 0.0, 180.0)
    e = compute_exposure(t, [STRAIGHT], land=[circle(cx, cy, radius)], **GEOMETRIC)
    cast = np.abs(angdiff(e.directions_deg, 180.0)) <= 90.0
    hit_t, q = ray_disc(0.0, -OFFSET_M, e.directions_deg, cx, cy, radius)
    judged = cast & (np.abs(q - radius) > 0.05) & (np.abs(hit_t - 20000.0) > 0.05)
    expect_open = cast & ~(hit_t < 20000.0)
    np.testing.assert_array_equal(e.open[0, judged], expect_open[judged])
    deep = cast & (q < radius - 5.0) & (hit_t < 20000.0 - 1.0)
    np.testing.assert_allclose(e.fetch_m[0, deep], hit_t[deep], atol=0.02)


# ---------------------------------------------------------------------------------------------
# A headland, a breakwater, land polygons
# ---------------------------------------------------------------------------------------------


def test_headland_shelters_its_lee():
    # A straight shore (sea south) with a spit 3 km long running due south from (0, 0). From
    # the ray start S = (-1000, -20) of a transect 1 km west of it, the spit spans azimuths
    # from atan2(1000, 20) = 88.85 deg (its root) to atan2(1000, -2980) = 161.45 deg (its tip):
    # every cast ray from 90 deg up to the tip direction is blocked, every one beyond it open.
    # Along ray theta the spit (x = 0) is met after 1000 / sin(theta) (plane geometry).
    spit = shapely.LineString([(0.0, 0.0), (0.0, -3000.0)])
    t = transects_at([-1000.0, -14000.0], 0.0, 180.0)
    e = compute_exposure(t, [STRAIGHT, spit], **GEOMETRIC)
    for i, x0 in enumerate((-1000.0, -14000.0)):
        tip = np.degrees(np.arctan2(-x0, -3000.0 + OFFSET_M))
        cast = (e.directions_deg >= 90.0) & (e.directions_deg <= 270.0)
        lee = cast & (e.directions_deg < tip - 0.01)
        beyond = cast & (e.directions_deg > tip + 0.01)
        assert lee.any() and not e.open[i, lee].any()
        assert e.open[i, beyond].all()
        theta = np.radians(e.directions_deg[lee])
        np.testing.assert_allclose(e.fetch_m[i, lee], -x0 / np.sin(theta), atol=0.01)
    # The widest open sector of the near transect runs from the tip to the grazing ray
    # (edges half a step outside the rays: documented rule).
    assert e.open_from_deg[0] == pytest.approx(np.ceil(161.45) - 0.5)
    assert e.open_to_deg[0] == pytest.approx(270.5)


def test_breakwater_line_blocks_rays():
    # A detached breakwater (a line, given as extra land) from (-500, -400) to (500, -400).
    # From S = (0, -20) its ends lie at azimuths 180 -+ atan2(500, 380) = 127.23 / 232.77 deg;
    # along ray theta it is met after 380 / |cos(theta)| (plane geometry).
    breakwater = shapely.LineString([(-500.0, -400.0), (500.0, -400.0)])
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], land=[breakwater], **GEOMETRIC)
    edge = np.degrees(np.arctan2(500.0, 380.0))
    delta = np.abs(angdiff(e.directions_deg, 180.0))
    behind = delta < edge - 0.01
    assert behind.sum() == 105  # rays 128..232
    assert not e.open[0, behind].any()
    assert e.open[0, (delta > edge + 0.01) & (delta <= 90.0)].all()
    theta = np.radians(e.directions_deg[behind])
    np.testing.assert_allclose(e.fetch_m[0, behind], 380.0 / np.abs(np.cos(theta)), atol=0.01)
    # Multi-geometries are taken apart: the same breakwater as a MultiLineString of two halves.
    halves = shapely.MultiLineString([[(-500.0, -400.0), (0.0, -400.0)], [(0, -400), (500, -400)]])
    e2 = compute_exposure(
        transects_at(0.0, 0.0, 180.0), [STRAIGHT], land=[halves, None], **GEOMETRIC
    )
    np.testing.assert_array_equal(e2.open, e.open)


def test_land_beyond_max_distance_does_not_shelter():
    # The island's near rim is D' - R = 3980 m from the ray start (plane geometry): rays 3 m
    # longer reach it, rays 3 m shorter do not.
    t = transects_at(0.0, 0.0, 180.0)
    near = compute_exposure(t, [STRAIGHT], land=[ISLAND], max_distance_m=3983.0, **GEOMETRIC)
    far = compute_exposure(t, [STRAIGHT], land=[ISLAND], max_distance_m=3977.0, **GEOMETRIC)
    assert not near.is_open(180.0)[0] and far.is_open(180.0)[0]
    assert far.fetch_toward(180.0)[0] == 3977.0


def test_ray_start_inside_land_polygon_is_on_land():
    # A pier 60 m wide covering the ray start (0, -20): the start is on land, so no direction
    # is open and the fetch is 0 (definition).
    pier = shapely.box(-30.0, -200.0, 30.0, 0.0)
    e = compute_exposure(
        transects_at([0.0, 5000.0], 0.0, 180.0), [STRAIGHT], land=[pier], **GEOMETRIC
    )
    assert not e.open[0].any() and e.exposure_deg[0] == 0.0
    np.testing.assert_array_equal(e.fetch_m[0], 0.0)
    assert np.isnan(e.open_from_deg[0]) and np.isnan(e.open_to_deg[0])
    # 5 km along the shore, from S = (5000, -20), the pier's east face (x = 30, y from -200 to
    # 0) spans azimuths 270 + atan2(-180, 4970) .. 270 + atan2(20, 4970) = 267.93 .. 270.23 deg
    # (plane geometry): the cast rays 268, 269 and 270 meet it, the other 178 are open. Ray 270
    # runs along y = -20 and meets the face after 4970 m.
    lo = 270.0 + np.degrees(np.arctan2(-180.0, 4970.0))
    assert 267.5 < lo < 268.0
    assert e.exposure_deg[1] == 181.0 - 3.0
    assert not e.is_open(np.array([268.0, 269.0, 270.0]), transect_index=1).any()
    assert e.fetch_toward(270.0)[1] == pytest.approx(4970.0, abs=0.01)


# ---------------------------------------------------------------------------------------------
# A round lake: water inside a circle, normals pointing in
# ---------------------------------------------------------------------------------------------


def test_round_lake_chords():
    # Shore = a circle of radius R = 2 km; transects on it with the seaward normal toward the
    # centre. From S at c = R - 20 m from the centre, the ray at delta from the centre line
    # meets the shore after c cos(delta) + sqrt(R^2 - c^2 sin^2(delta)) (chord geometry): along
    # the diameter 2R - 20 m. The lake is 4 km across, so no direction reaches 20 km: none is
    # open. 3600-gon: 0.8 mm inside the circle, up to 6 mm along the grazing rays (they cross
    # the rim at 8 deg); 2 cm tolerance.
    radius = 2000.0
    ring = circle(0.0, 0.0, radius, ring=True)
    pos = np.array([0.0, 37.0, 90.0, 200.0, 311.5])  # azimuth of each shore point from centre
    pr = np.radians(pos)
    t = transects_at(radius * np.sin(pr), radius * np.cos(pr), (pos + 180.0) % 360.0, closed=True)
    e = compute_exposure(t, [ring], **GEOMETRIC)
    assert not e.open.any()
    np.testing.assert_array_equal(e.exposure_deg, 0.0)
    assert np.isnan(e.open_from_deg).all() and np.isnan(e.open_to_deg).all()
    c = radius - OFFSET_M
    delta = angdiff(e.directions_deg[None, :], (pos[:, None] + 180.0) % 360.0)
    cast = np.abs(delta) <= 90.0
    d = np.radians(delta)
    chord = c * np.cos(d) + np.sqrt(radius**2 - (c * np.sin(d)) ** 2)
    np.testing.assert_allclose(e.fetch_m[cast], chord[cast], atol=0.02)
    np.testing.assert_array_equal(e.fetch_m[~cast], 0.0)
    assert e.fetch_toward(180.0)[0] == pytest.approx(2 * radius - OFFSET_M, abs=0.01)


# ---------------------------------------------------------------------------------------------
# True north and ground distances in a real UTM zone
# ---------------------------------------------------------------------------------------------


def test_true_north_and_ground_distance_in_utm():
    # UTM 31N at 45 N, 7.5 E: 4.5 deg east of the central meridian, where grid north is about
    # dlambda sin(phi) = 3.2 deg from true north and the scale factor about 1.0011 (Snyder 1987,
    # ch. 8, from memory). A shore point, its normal due south (180 deg TRUE), a shore line
    # through it perpendicular to the normal on the grid, and an island built with pyproj.Geod:
    # a geodesic circle of 1 km radius centred 5 km from the ray start at true azimuth 200 deg.
    # Expected: the rays within asin(1/5) = 11.54 deg of 200 deg are blocked, and the fetch
    # toward 200 deg is 5000 - 1000 m on the ground. Ignoring the convergence would shift the
    # shadow by 3.2 deg (three rays at each edge would change); ignoring the scale factor would
    # put the rim 4.6 m too far, and ignoring its change along the ray (dk/dx = x / R^2 for
    # UTM, Snyder 1987 ch. 8, from memory; x = 335 km) 6 cm [derived: arithmetic]. Tolerance
    # 1 cm: the 720-gon has a vertex where the central ray meets it, and a straight grid ray
    # stays within about kappa L^2 / 2 = 0.1 m of the geodesic over 4 km, which moves a hit on
    # a 1 km circle met head-on by (0.1 m)^2 / 2R, far below 1 mm.
    utm = pyproj.CRS.from_epsg(32631)
    fwd = pyproj.Transformer.from_crs(4326, utm, always_xy=True)
    lon0, lat0 = 7.5, 45.0
    x0, y0 = fwd.transform(lon0, lat0)
    xn, yn = fwd.transform(lon0, lat0 + 1e-5)
    north_grid = np.degrees(np.arctan2(xn - x0, yn - y0))  # grid azimuth of true north
    assert north_grid == pytest.approx(-3.18, abs=0.05)
    tangent = np.radians(90.0 + north_grid)
    shore = shapely.LineString(
        [(x0 - 8000 * np.sin(tangent), y0 - 8000 * np.cos(tangent)),
         (x0 + 8000 * np.sin(tangent), y0 + 8000 * np.cos(tangent))]
    )  # fmt: skip
    slon, slat, _ = GEOD.fwd(lon0, lat0, 180.0, OFFSET_M)
    clon, clat, _ = GEOD.fwd(slon, slat, 200.0, 5000.0)
    az = np.linspace(0.0, 360.0, 721)[:-1]
    rlon, rlat, _ = GEOD.fwd(np.full(720, clon), np.full(720, clat), az, np.full(720, 1000.0))
    island = shapely.Polygon(np.column_stack(fwd.transform(rlon, rlat)))
    t = transects_at(x0, y0, 180.0, crs=utm)
    e = compute_exposure(t, [shore], land=[island], **GEOMETRIC)
    half_width = np.degrees(np.arcsin(1000.0 / 5000.0))
    delta = np.abs(angdiff(e.directions_deg, 200.0))
    assert not e.open[0, delta < half_width - 0.05].any()
    cast = np.abs(angdiff(e.directions_deg, 180.0)) <= 90.0
    assert e.open[0, cast & (delta > half_width + 0.05)].all()
    assert e.fetch_toward(200.0)[0] == pytest.approx(4000.0, abs=0.01)
    # The ray reaches max_distance_m on the ground: 3 m short of the rim it is open, 3 m
    # beyond it blocked (a grid length without the scale factor would fall 4.6 m short).
    assert compute_exposure(t, [shore], [island], max_distance_m=3997.0, **GEOMETRIC).is_open(
        200.0
    )[0]
    assert not compute_exposure(t, [shore], [island], max_distance_m=4003.0, **GEOMETRIC).is_open(
        200.0
    )[0]


# ---------------------------------------------------------------------------------------------
# Lookups, shapes, undefined normals, bad input
# ---------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def breakwater_exposure() -> Exposure:
    # Transects 0 and 1 behind the breakwater of test_breakwater_line_blocks_rays (shadow
    # 127.23..232.77 deg from (0, -20)), transect 2 with an undefined normal.
    breakwater = shapely.LineString([(-500.0, -400.0), (500.0, -400.0)])
    t = transects_at([0.0, 0.0, 3000.0], 0.0, [180.0, 180.0, np.nan])
    return compute_exposure(t, [STRAIGHT], land=[breakwater], **GEOMETRIC)


def test_lookup_shapes_and_nearest_ray(breakwater_exposure):
    e = breakwater_exposure
    assert e.is_open(100.0).shape == (3,)
    np.testing.assert_array_equal(e.is_open(100.0), [True, True, False])
    np.testing.assert_array_equal(e.is_open(np.array([100.0, 180.0, 100.0])), [True, False, False])
    dirs = np.array([[100.0, 180.0, 0.0, np.nan]])  # (1, t): same directions for all transects
    got = e.is_open(dirs)
    assert got.shape == (3, 4) and got.dtype == bool
    np.testing.assert_array_equal(got[0], [True, False, False, False])  # 0 deg: land; NaN: False
    np.testing.assert_array_equal(e.is_open(np.repeat(dirs, 3, axis=0)), got)  # (n, t)
    # Nearest ray: 127.4 deg is in the shadow but its nearest ray (127) is not; 127.6 -> 128.
    assert e.is_open(127.4)[0] and not e.is_open(127.6)[0]
    assert e.is_open(-232.6)[0] and e.is_open(487.0)[0]  # wraps: 127.4 and 127 deg
    # Explicit transect index, broadcasting with the directions.
    np.testing.assert_array_equal(
        e.is_open([100.0, 180.0, 100.0], transect_index=[0, 1, 2]), [True, False, False]
    )
    f = e.fetch_toward(dirs)
    assert f.shape == (3, 4)
    assert f[0, 0] == 20000.0 and f[0, 2] == 0.0 and np.isnan(f[0, 3])
    assert f[0, 1] == pytest.approx(380.0, abs=0.01)
    assert e.fetch_toward(180.0, transect_index=np.array([[1]])).shape == (1, 1)
    with pytest.raises(ValueError, match="does not broadcast"):
        e.is_open(np.zeros((2, 5)))
    with pytest.raises(ValueError, match="integers"):
        e.is_open(0.0, transect_index=[0.5])


def test_undefined_normal_gives_nan(breakwater_exposure):
    e = breakwater_exposure
    assert not e.open[2].any()
    assert np.isnan(e.fetch_m[2]).all() and np.isnan(e.exposure_deg[2])
    assert np.isnan(e.open_from_deg[2]) and np.isnan(e.open_to_deg[2])
    assert not e.open.flags.writeable and not e.fetch_m.flags.writeable


def test_other_steps_and_empty_input():
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], step_deg=5.0)
    np.testing.assert_array_equal(e.directions_deg, np.arange(72) * 5.0)
    assert e.exposure_deg[0] == 37 * 5.0  # rays 90, 95, ..., 270
    assert (e.open_from_deg[0], e.open_to_deg[0]) == (87.5, 272.5)
    empty = compute_exposure(transects_at([], 0.0, 180.0), [STRAIGHT])
    assert empty.open.shape == (0, 360) and len(empty) == 0
    none = compute_exposure(transects_at(0.0, 0.0, 180.0), [])
    assert none.exposure_deg[0] == 181.0


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"step_deg": 7.0}, "divide 360"),
        ({"step_deg": 0.0}, "step_deg"),
        ({"start_offset_m": 0.0}, "start_offset_m"),
        ({"max_distance_m": -5.0}, "max_distance_m"),
        ({"max_distance_m": np.nan}, "max_distance_m"),
    ],
)
def test_bad_options(kwargs, match):
    with pytest.raises(ValueError, match=match):
        compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], **kwargs)


def test_bad_land_geometry():
    t = transects_at(0.0, 0.0, 180.0)
    with pytest.raises(CoastError, match=r"land\[1\] is a Point"):
        compute_exposure(t, [STRAIGHT], land=[ISLAND, shapely.Point(0, -300)])
    with pytest.raises(CoastError, match="not a shapely geometry"):
        compute_exposure(t, [STRAIGHT], land=[[(0, 0), (1, 1)]])


def test_chunking_does_not_change_the_answer(monkeypatch):
    # Chunks of transects (and the halving of a chunk that meets too many segments) only bound
    # memory: tiny chunks give the same result as one chunk (an invariant of the method).
    import shoreline.exposure as exposure_module

    spit = shapely.LineString([(0.0, 0.0), (0.0, -3000.0)])
    t = transects_at(np.linspace(-9000.0, 9000.0, 37), 0.0, 180.0)
    whole = compute_exposure(t, [STRAIGHT, spit], land=[ISLAND])
    monkeypatch.setattr(exposure_module, "_CHUNK", 5)
    monkeypatch.setattr(exposure_module, "_MAX_PAIRS", 40)
    monkeypatch.setattr(exposure_module, "_FFT_ROWS", 3)
    split = compute_exposure(t, [STRAIGHT, spit], land=[ISLAND])
    np.testing.assert_array_equal(split.open, whole.open)
    np.testing.assert_array_equal(split.fetch_m, whole.fetch_m)
    np.testing.assert_allclose(split.share, whole.share, rtol=0, atol=1e-15)
    np.testing.assert_array_equal(split.start_m, whole.start_m)


# ---------------------------------------------------------------------------------------------
# Directional spreading: the open share
# ---------------------------------------------------------------------------------------------


def spread_density(s):
    """cos^2s(x/2) normalised over (-pi, pi] with scipy.integrate.quad (x in radians)."""
    norm, _ = integrate.quad(lambda x: np.cos(0.5 * x) ** (2 * s), -np.pi, np.pi, epsabs=1e-14)
    return lambda x: np.cos(0.5 * x) ** (2 * s) / norm


def spread_integral(s, lo_deg, hi_deg):
    """Integral of the normalised cos^2s(x/2) from lo to hi [deg], by quadrature."""
    density = spread_density(s)
    lo, hi = np.radians(lo_deg), np.radians(hi_deg)
    value, _ = integrate.quad(density, lo, hi, epsabs=1e-14, epsrel=1e-12, limit=200)
    return value


@pytest.mark.parametrize("s", [0.0, 1.0, 10.0, 25.0, 75.0])
@pytest.mark.parametrize("step", [1.0, 5.0])
def test_spreading_weights_are_quadratures_of_the_spreading_function(s, step):
    # Each weight is the integral of the normalised cos^2s(dtheta/2) (Longuet-Higgins et al.
    # 1963, Mitsuyasu et al. 1975; from memory) over its bin of +-step/2, here by
    # scipy.integrate.quad, an independent reference; they sum to 1 and are circular.
    w = spreading_weights(s, step)
    m = int(round(360 / step))
    assert w.shape == (m,)
    assert w.sum() == pytest.approx(1.0, abs=1e-12)
    for d in (0, 1, 2, 7, m // 4, m // 2 - 1):
        expected = spread_integral(s, (d - 0.5) * step, (d + 0.5) * step)
        assert w[d] == pytest.approx(expected, abs=1e-12)
        assert w[m - d if d else 0] == pytest.approx(w[d], abs=1e-15)
    # Mean resultant length of cos^2s(x/2): s / (s + 1) [derived: cos x = 2 cos^2(x/2) - 1 and
    # the ratio of consecutive Wallis integrals]. The bins move it by at most
    # step^2 / 24 (in radians^2) [derived: the mean of cos over a bin of width h is
    # sinc(h/2) times its central value].
    centre = np.radians(np.minimum(np.arange(m), m - np.arange(m)) * step)
    bound = np.radians(step) ** 2 / 24 + 1e-12
    assert abs(np.sum(w * np.cos(centre)) - s / (s + 1)) <= bound


@pytest.mark.parametrize("s", [1.0, 10.0, 25.0, 75.0])
def test_open_share_of_the_seaward_half_plane_is_the_integral_over_it(s):
    # A straight open coast whose normal (180.5 deg) lies half-way between rays: the open rays
    # 91..270 stand for the directions 90.5..270.5, exactly the seaward half-plane. The open
    # share of a sea with mean direction theta is then the integral of the normalised spread
    # over that half-plane (definition), here by scipy.integrate.quad.
    tangent = np.radians(180.5 + 90.0)
    shore = shapely.LineString(
        [(-15000 * np.sin(tangent), -15000 * np.cos(tangent)),
         (15000 * np.sin(tangent), 15000 * np.cos(tangent))]
    )  # fmt: skip
    e = compute_exposure(transects_at(0.0, 0.0, 180.5), [shore], spreading_s=s)
    for mean_deg in (180.0, 160.0, 120.0, 95.0, 60.0, 0.0, 300.0, 270.0):
        expected = spread_integral(s, 90.5 - mean_deg, 270.5 - mean_deg)
        assert e.open_share(mean_deg)[0] == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize("s", [1.0, 10.0, 25.0, 75.0])
def test_open_share_on_the_normal_is_the_fraction_within_90_degrees(s):
    # Normal on a ray (180): the two rays at exactly 90 deg count for the seaward half of their
    # bins, so a sea arriving along the normal gets the fraction of cos^2s(dtheta/2) within
    # +-90 deg (quadrature), to the error of counting half a bin for the part of it within
    # 90 deg: |D'(90 deg)| h^2 in all, h = step / 2 in radians [derived: first-order Taylor
    # expansion of D about 90 deg], with D'(90 deg) = -s 2^-s / norm for cos^2s(x/2) / norm.
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], spreading_s=s)
    expected = spread_integral(s, -90.0, 90.0)
    norm = 1.0 / spread_density(s)(0.0)
    bound = s * 2.0**-s / norm * np.radians(0.5) ** 2
    assert abs(e.open_share(180.0)[0] - expected) <= 1.01 * bound + 1e-12


@pytest.mark.parametrize("s", [1.0, 10.0, 25.0, 75.0])
def test_open_share_is_one_half_at_the_edge_of_a_half_blocked_sector(s):
    # Exact by symmetry: a sea whose mean runs along a straight open coast (90 and 270 deg off
    # the normal 180) has half its energy on the seaward side, whatever its spread.
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], spreading_s=s)
    np.testing.assert_allclose(e.open_share(np.array([[90.0, 270.0]])), 0.5, atol=1e-12)
    # At a shadow edge between two rays (the tip of a spit: rays 90..161 blocked, 162..270
    # open, seen from 1 km west of it; plane geometry as in test_headland_shelters_its_lee)
    # the sector is half blocked over the whole spread (the far edges lie 108 deg away, where
    # cos^50(54 deg) = 3e-12): the two rays either side of the edge share evenly, so the share
    # midway between them is 1/2 (symmetry).
    spit = shapely.LineString([(0.0, 0.0), (0.0, -3000.0)])
    t = transects_at(-1000.0, 0.0, 180.0)
    e = compute_exposure(t, [STRAIGHT, spit], spreading_s=25.0, **GEOMETRIC)
    assert not e.is_open(161.0)[0] and e.is_open(162.0)[0]
    assert e.open_share(161.0)[0] + e.open_share(162.0)[0] == pytest.approx(1.0, abs=1e-9)


def test_large_spreading_parameter_recovers_all_or_nothing():
    # Limit case: as s grows the spread narrows to its mean direction and the share tends to
    # the open mask (s = 1e9: a circular spread of sqrt(2 / s) = 0.003 deg). Normals half-way
    # between rays, so the 90-degree edges fall on bin edges (a bin straddling them counts for
    # its seaward part). None and inf: no spreading at all, the share is the open mask.
    spit = shapely.LineString([(0.0, 0.0), (0.0, -3000.0)])
    t = transects_at(np.linspace(-6000.0, 6000.0, 7), 0.0, 180.5)
    parts, land = [STRAIGHT, spit], [ISLAND, shapely.LineString([(3000, -400), (3900, -400)])]
    narrow = compute_exposure(t, parts, land, spreading_s=1e9)
    np.testing.assert_allclose(narrow.share, narrow.open.astype(float), atol=1e-9)
    assert narrow.open.any() and not narrow.open.all()
    for off in (None, np.inf):
        e = compute_exposure(t, parts, land, spreading_s=off)
        np.testing.assert_array_equal(e.share, e.open.astype(float))
        assert e.spreading_s is None
    # ... and a broad spread does change it (the rule is not idle).
    assert np.abs(compute_exposure(t, parts, land).share - narrow.open).max() > 0.1


def test_open_share_lookup(breakwater_exposure):
    # Same broadcasting as is_open; the nearest ray's share; a NaN direction gives 0; the share
    # lies in [0, 1]; a transect with an undefined normal has share 0 everywhere.
    e = breakwater_exposure
    assert e.share.shape == (3, 360) and not e.share.flags.writeable
    assert (e.share >= 0).all() and (e.share <= 1).all()
    np.testing.assert_array_equal(e.share[2], 0.0)
    dirs = np.array([[100.0, 180.4, 0.0, np.nan]])
    got = e.open_share(dirs)
    assert got.shape == (3, 4)
    np.testing.assert_array_equal(got[:, :3], e.share[:, [100, 180, 0]])
    np.testing.assert_array_equal(got[:, 3], 0.0)
    np.testing.assert_array_equal(e.open_share(180.0, transect_index=[1, 0]), e.share[[1, 0], 180])


@pytest.mark.parametrize("name", ["spreading_s", "wavelength_m", "grazing_radius_m"])
@pytest.mark.parametrize("value", [-1.0, np.nan])
def test_bad_rule_settings(name, value):
    with pytest.raises(ValueError, match=name):
        compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], **{name: value})


def test_rules_switched_off():
    # None, inf (and a wavelength of 0) switch a rule off; the Exposure records None.
    t = transects_at(0.0, 0.0, 180.0)
    for off in (None, np.inf):
        e = compute_exposure(t, [STRAIGHT], wavelength_m=off, grazing_radius_m=off)
        assert e.wavelength_m is None and e.grazing_radius_m is None
    rock = circle(0.0, -600.0, 30.0, n=360)  # narrower than its Fresnel zone (see above)
    assert compute_exposure(t, [STRAIGHT], land=[rock]).exposure_deg[0] == 181.0
    for off in (None, 0.0):
        assert compute_exposure(t, [STRAIGHT], land=[rock], wavelength_m=off).exposure_deg[0] < 181


# ---------------------------------------------------------------------------------------------
# The ray start: beyond the surf zone, never past land
# ---------------------------------------------------------------------------------------------


def staircase(amplitude_m=30.0, step_m=150.0, half_length_m=15000.0):
    """A straight shore (sea south) digitised as a staircase: vertices every step_m along it,
    alternately amplitude_m seaward and landward of y = 0 (as coarse shoreline data are)."""
    x = np.arange(-half_length_m, half_length_m + 1.0, step_m)
    y = np.where(np.arange(x.size) % 2 == 0, -amplitude_m, amplitude_m)
    return shapely.LineString(np.column_stack([x, y]))


def test_default_start_clears_a_staircase_shore():
    # From the default start 200 m seaward of y = 0 every ray within 90 deg of the normal (180)
    # heads seaward or along y = -200, so a staircase reaching 30 m seaward cannot meet it
    # (plane geometry): all 181 cast rays are open. From the former 20 m start the staircase's
    # seaward corners block the grazing rays of most transects (all but those on a corner).
    shore = staircase()
    x = np.linspace(-5000.0, 5000.0, 41)
    xy = shapely.get_coordinates(shore)
    t = transects_at(x, np.interp(x, xy[:, 0], xy[:, 1]), 180.0)  # shore points on the line
    e = compute_exposure(t, [shore])
    np.testing.assert_array_equal(e.start_m, DEFAULT_START_M)
    assert e.start_offset_m == DEFAULT_START_M == 200.0
    np.testing.assert_array_equal(e.exposure_deg, 181.0)
    old = compute_exposure(t, [shore], **GEOMETRIC)
    assert (old.exposure_deg < 181.0).mean() > 0.5


@pytest.mark.parametrize(("offshore_m", "start_m"), [(150.0, 75.0), (30.0, 20.0), (500.0, 200.0)])
def test_breakwater_met_along_the_normal_clips_the_start(offshore_m, start_m):
    # A detached breakwater 600 m long, offshore_m off a straight shore, across the normal. The
    # normal meets it offshore_m out, so the start is put at half that, never closer than 20 m
    # and never beyond 200 m (the rule). From S = (0, -start) the breakwater's ends lie
    # atan(300 / (offshore - start)) either side of 180 deg (plane geometry): the rays within
    # are blocked, the ones outside open, the fetch toward 180 is offshore - start. Without the
    # clip a 200 m start would lie behind a breakwater 150 m or 30 m out and see no shelter.
    breakwater = shapely.LineString([(-300.0, -offshore_m), (300.0, -offshore_m)])
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], land=[breakwater])
    assert e.start_m[0] == pytest.approx(start_m, abs=1e-6)
    edge = np.degrees(np.arctan2(300.0, offshore_m - start_m))
    delta = np.abs(angdiff(e.directions_deg, 180.0))
    assert not e.open[0, delta < edge - 0.01].any()
    assert e.open[0, (delta > edge + 0.01) & (delta <= 90.0)].all()
    assert e.fetch_toward(180.0)[0] == pytest.approx(offshore_m - start_m, abs=0.01)


def test_jetty_beside_the_transect_pulls_the_start_in():
    # A shore-normal jetty (a line) from the shore at x = 0 to 300 m seaward. It crosses the
    # line through the 200 m start parallel to the shore at a lateral distance x from a
    # transect at x, so the start is put at x / 2 (not closer than 20 m) for x < 200 m, and
    # stays at 200 m beyond (the rule). A ray toward 200 deg (20 deg off the normal) from
    # (x, -start) meets the jetty if start + x / tan(20 deg) < 300 (plane geometry): the lee
    # that a 200 m start would lose (x < 36 m only) is kept to the geometric edge from the
    # pulled-in start. Diffraction test off: this checks the start alone.
    jetty = shapely.LineString([(0.0, 0.0), (0.0, -300.0)])
    x = np.array([30.0, 50.0, 89.0, 150.0, 250.0])
    e = compute_exposure(transects_at(x, 0.0, 180.0), [STRAIGHT], land=[jetty], wavelength_m=None)
    expected_start = np.where(x < 200.0, np.maximum(x / 2.0, 20.0), 200.0)
    np.testing.assert_allclose(e.start_m, expected_start, atol=1e-6)
    lee = expected_start + x / np.tan(np.radians(20.0)) < 300.0
    np.testing.assert_array_equal(lee, [True, True, True, False, False])
    np.testing.assert_array_equal(e.is_open(200.0), ~lee)


def test_notch_in_a_straight_beach_does_not_shelter():
    # An 80 m wide, 80 m deep notch in a straight beach (sea south), a transect at its back
    # (0, 80) facing the sea. The normal leaves the notch through its mouth, so the start is
    # 200 m out, 120 m seaward of the beach line: from there the notch is out of reach of every
    # ray within 90 deg (plane geometry) and all 181 are open. From the former 20 m start, with
    # every blocker shadowing, the notch's walls block the grazing rays.
    x = np.r_[-15000.0, -40.0, -40.0, 40.0, 40.0, 15000.0]
    y = np.r_[0.0, 0.0, 80.0, 80.0, 0.0, 0.0]
    shore = shapely.LineString(np.column_stack([x, y]))
    t = transects_at(0.0, 80.0, 180.0)
    assert compute_exposure(t, [shore]).exposure_deg[0] == 181.0
    assert compute_exposure(t, [shore], **GEOMETRIC).exposure_deg[0] < 181.0


# ---------------------------------------------------------------------------------------------
# Narrow blockers: the first Fresnel zone
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("radius_m", "wavelength_m"), [(100.0, 100.0), (150.0, 100.0), (400.0, 100.0),
                                   (1000.0, 100.0), (400.0, 400.0)]
)  # fmt: skip
def test_island_shadows_only_if_wider_than_the_first_fresnel_zone(radius_m, wavelength_m):
    # A round island centred 3 km off a straight shore, seen from S = (0, -200). Plane geometry
    # (ray_disc) gives its blocked rays and their hit distances; the rule (Fresnel-zone
    # argument, Penney and Price 1952, from memory): the run shadows iff its width across the
    # rays, n step d (d its mean hit distance), is at least sqrt(L d). The cases are chosen
    # with a margin of more than 25 % either way, far from the threshold.
    island = circle(0.0, -3000.0, radius_m)
    e = compute_exposure(
        transects_at(0.0, 0.0, 180.0), [STRAIGHT], land=[island], wavelength_m=wavelength_m
    )
    hit, q = ray_disc(0.0, -DEFAULT_START_M, e.directions_deg, 0.0, -3000.0, radius_m)
    run = np.isfinite(hit)
    d = hit[run].mean()
    width = run.sum() * np.radians(1.0) * d
    fresnel = np.sqrt(wavelength_m * d)
    assert abs(width / fresnel - 1.0) > 0.25
    np.testing.assert_array_equal(e.open[0, run], width < fresnel)
    cast = np.abs(angdiff(e.directions_deg, 180.0)) <= 90.0
    assert e.open[0, cast & ~run].all()
    assert e.fetch_m[0, run] == pytest.approx(hit[run], abs=0.05)  # fetch stays geometric


def test_small_rock_does_not_switch_off_an_island_shadow():
    # A rock of 30 m radius 600 m out in front of an island of 1 km radius 5 km out. Alone the
    # rock is far narrower than its Fresnel zone and shadows nothing; in front of the island the
    # two make one run of blocked rays, judged by its mean hit distance, so every ray of the
    # island's shadow (plane geometry) stays blocked, those behind the rock included.
    rock = circle(0.0, -600.0, 30.0, n=360)
    t = transects_at(0.0, 0.0, 180.0)
    assert compute_exposure(t, [STRAIGHT], land=[rock]).exposure_deg[0] == 181.0
    e = compute_exposure(t, [STRAIGHT], land=[rock, ISLAND])
    hit, _ = ray_disc(0.0, -DEFAULT_START_M, e.directions_deg, 0.0, -ISLAND_D_M, ISLAND_R_M)
    shadow = np.isfinite(hit)
    assert shadow.sum() > 20 and not e.open[0, shadow].any()
    assert e.fetch_toward(180.0)[0] == pytest.approx(600.0 - 30.0 - DEFAULT_START_M, abs=0.01)


def test_small_bump_far_along_the_shore_does_not_shelter_but_a_headland_does():
    # A straight shore with a bump 300 m wide reaching 280 m out, 3 km along it. From
    # S = (0, -200) its seaward corner (2850, -280) lies at 90 + atan(80 / 2850) = 91.6 deg
    # (plane geometry): the rays 90 and 91 meet it, a run 2 deg wide at about 2.85 km, 100 m
    # across against a Fresnel zone of sqrt(100 x 2850) = 534 m: it does not shelter. With the
    # diffraction test off, ray 91 is blocked (ray 90, running along y = -200, meets the bump
    # where a circle tangent to the shore at the transect would pass, 20.4 km in radius, and a
    # bump that small is part of the shore's line at the 1 km scale: the grazing rule opens it).
    # A headland 3 km wide reaching 1.5 km out at the same place blocks the rays from 90 deg to
    # its corner at atan2(1500, -1300) = 130.9 deg (plane geometry), kilometres across.
    bump = shapely.LineString([(2850.0, 0.0), (2850.0, -280.0), (3150.0, -280.0), (3150.0, 0.0)])
    t = transects_at(0.0, 0.0, 180.0)
    assert compute_exposure(t, [STRAIGHT, bump]).exposure_deg[0] == 181.0
    bare = compute_exposure(t, [STRAIGHT, bump], wavelength_m=None)
    assert not bare.is_open(91.0)[0] and bare.is_open(92.0)[0]
    headland = shapely.LineString(
        [(1500.0, 0.0), (1500.0, -1500.0), (4500.0, -1500.0), (4500.0, 0.0)]
    )
    e = compute_exposure(t, [STRAIGHT, headland])
    corner = np.degrees(np.arctan2(1500.0, -1300.0))
    behind = (e.directions_deg >= 90.0) & (e.directions_deg < corner - 0.01)
    assert behind.sum() == 41 and not e.open[0, behind].any()
    assert e.open[0, (e.directions_deg > corner + 0.01) & (e.directions_deg <= 270.0)].all()


def test_short_pier_does_not_shelter_but_a_long_jetty_does():
    # A pier 10 m wide reaching 150 m out (a polygon) stays inside the 200 m start line: the
    # rays start beyond it and it shelters nothing. A jetty reaching 1 km pulls the starts of
    # the transects beside it in (half the lateral distance, the rule) and its lee is sheltered
    # to the geometric edge: from (x, -x/2), a ray toward 200 deg meets it if
    # x/2 + x / tan(20 deg) < 1000 (plane geometry), and the run of rays it blocks is wide.
    x = np.array([30.0, 60.0, 100.0, 180.0])
    t = transects_at(x, 0.0, 180.0)
    pier = shapely.box(-5.0, -150.0, 5.0, 0.0)
    e = compute_exposure(t, [STRAIGHT], land=[pier])
    np.testing.assert_array_equal(e.exposure_deg, 181.0)
    jetty = shapely.box(-5.0, -1000.0, 5.0, 0.0)
    e = compute_exposure(t, [STRAIGHT], land=[jetty])
    start = np.maximum((x - 5.0) / 2.0, 20.0)  # its face is 5 m nearer than its axis
    np.testing.assert_allclose(e.start_m, start, atol=1e-6)
    lee = start + (x - 5.0) / np.tan(np.radians(20.0)) < 1000.0
    assert lee.all()
    assert not e.is_open(200.0).any()


# ---------------------------------------------------------------------------------------------
# Grazing rays along the coast itself
# ---------------------------------------------------------------------------------------------


def concave_arc(radius_m, half_length_m=40000.0, n=8001):
    """A shore along a circle centred radius_m south of the origin, the sea inside (south)."""
    phi = np.linspace(-half_length_m / radius_m, half_length_m / radius_m, n)
    return shapely.LineString(np.c_[radius_m * np.sin(phi), -radius_m + radius_m * np.cos(phi)])


@pytest.mark.parametrize("radius_m", [30000.0, 50000.0, 100000.0])
def test_gently_curved_coast_does_not_shelter_itself(radius_m):
    # A long concave shore, a circular arc of radius R, the sea inside; transects laid out on
    # it by shoreline.coast. Grazing rays meet the arc again kilometres away: from a start s
    # inside the arc the ray at alpha from the (radial) normal meets it after
    # c cos(alpha) + sqrt(R^2 - c^2 sin^2(alpha)), c = R - s (chord geometry), which is under
    # 20 km for the rays beyond about 70 deg (R = 30 km). With the grazing rule every ray within
    # 90 deg is open; without it (rules off) exactly the rays plane geometry says are blocked.
    line = concave_arc(radius_m)
    coast = CoastLines([line], np.array([False]), np.array([0]), PLANE, PLANE)
    t = lay_out_transects(coast, spacing_m=2000.0, orientation_window_m=1000.0)
    middle = np.flatnonzero(np.abs(t.x_m) < 12000.0)
    e = compute_exposure(t, [line])
    rel = angdiff(e.directions_deg[None, :], t.normal_az_deg[middle, None])
    cast = np.abs(rel) <= 90.0
    np.testing.assert_array_equal(e.open[middle], cast)
    assert e.open_coast[middle].all()
    # Rules off: the arc blocks where the chord is short (plane geometry; the normals from
    # shoreline.coast are radial to 1e-6 deg on a circle, the 8000-gon lies within 0.2 m of
    # it: rays within 50 m of 20 km are not judged).
    bare = compute_exposure(t, [line], wavelength_m=None, grazing_radius_m=None)
    c = radius_m - DEFAULT_START_M
    a = np.radians(rel)
    chord = c * np.cos(a) + np.sqrt(radius_m**2 - (c * np.sin(a)) ** 2)
    judged = cast & (np.abs(chord - 20000.0) > 50.0)
    np.testing.assert_array_equal(bare.open[middle][judged], (chord >= 20000.0)[judged])
    assert ((~bare.open[middle] & cast).sum(axis=1) >= 2).all()  # the rule is not idle


def test_headland_still_shelters_its_bay_with_the_default_rules():
    # The spit of test_headland_shelters_its_lee, with every rule at its default: from
    # S = (-1000, -200) the spit is met by the rays from 90 deg to its tip at
    # atan2(1000, -2800) = 160.3 deg (plane geometry), and they stay blocked: the spit is close
    # (the circle through the shore point tangent there and through a hit has a radius under
    # 5 km), its face turned 90 deg from the shore, and kilometres wide across the rays.
    spit = shapely.LineString([(0.0, 0.0), (0.0, -3000.0)])
    e = compute_exposure(transects_at(-1000.0, 0.0, 180.0), [STRAIGHT, spit])
    tip = np.degrees(np.arctan2(1000.0, -(3000.0 - DEFAULT_START_M)))
    cast = (e.directions_deg >= 90.0) & (e.directions_deg <= 270.0)
    assert not e.open[0, cast & (e.directions_deg < tip - 0.01)].any()
    assert e.open[0, cast & (e.directions_deg > tip + 0.01)].all()
    assert e.open_coast[0]


def test_far_headland_still_shelters_grazing_rays(monkeypatch):
    # A straight coast and a spit 2 km long at x = 12 km. From S = (0, -200) it is met by the
    # rays from 90 deg to its tip at atan2(12000, -1800) = 98.5 deg (plane geometry). They
    # leave within 8.5 deg of the shore and the circle test would take the spit for a gentle
    # bend (a radius near 60 km), but the land met faces 90 deg away from the shore: it is a
    # headland's flank, not the same coast further along, so they stay blocked (a run 9 deg
    # wide at 12 km, far wider than its Fresnel zone). Without the facing condition they open.
    import shoreline.exposure as exposure_module

    spit = shapely.LineString([(12000.0, 0.0), (12000.0, -2000.0)])
    t = transects_at(0.0, 0.0, 180.0)
    e = compute_exposure(t, [STRAIGHT, spit])
    tip = np.degrees(np.arctan2(12000.0, -1800.0))
    behind = (e.directions_deg >= 90.0) & (e.directions_deg < tip - 0.01)
    assert behind.sum() == 9 and not e.open[0, behind].any()
    monkeypatch.setattr(exposure_module, "GRAZING_TURN_DEG", 180.0)
    assert compute_exposure(t, [STRAIGHT, spit]).open[0, behind].all()


# ---------------------------------------------------------------------------------------------
# Open coast or not
# ---------------------------------------------------------------------------------------------


def test_view_factor_of_a_straight_coast_and_an_island_lee():
    # Straight open coast: the view factor is 1 (the cosine-weighted half-plane, definition;
    # the ray sum is the trapezoidal rule of the integral of cos, off by pi h^2 / 12 < 1e-4).
    # Behind a round island of radius R centred D' from the start straight offshore the
    # shadow spans beta = asin(R / D') either side of the normal and the view factor is
    # 1 - sin(beta) = 1 - R / D' [derived], to half a step at each shadow edge (< 0.01). A
    # 1 km island 3 km off keeps 0.64: the lee of an island is open coast. A 2.7 km island
    # 3.1 km off (its rim 400 m out) leaves views beyond 68 deg only: not open coast.
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT])
    assert e.view_factor[0] == pytest.approx(1.0, abs=1e-4)
    assert e.open_coast[0] and e.open_coast_reason[0] == "open"
    for radius_m, centre_m, is_open_coast in ((1000.0, 3000.0, True), (2700.0, 3100.0, False)):
        island = circle(0.0, -centre_m, radius_m)
        e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], land=[island])
        assert e.start_m[0] == DEFAULT_START_M
        expected = 1.0 - radius_m / (centre_m - DEFAULT_START_M)
        assert e.view_factor[0] == pytest.approx(expected, abs=0.01)
        assert e.open_coast[0] == is_open_coast
    assert e.open_coast_reason[0] == "oblique"


def estuary_coast():
    """A straight coast (sea south) with an estuary 300 m wide reaching 5 km inland at x = 0."""
    x = [-15000.0, -150.0, -150.0, 150.0, 150.0, 15000.0]
    y = [0.0, 0.0, 5000.0, 5000.0, 0.0, 0.0]
    line = shapely.LineString(np.column_stack([x, y]))
    return CoastLines([line], np.array([False]), np.array([0]), PLANE, PLANE)


def test_estuary_banks_are_not_open_coast():
    # Transects laid out by shoreline.coast. On the banks more than 1 km inside the mouth the
    # sea is seen only down the channel, at more than 80 deg from the normal (its 300 m width
    # seen from 1 km or more), so the view factor stays under 1 - sin(80 deg) = 0.015 per side
    # [derived]; at the head, 5 km in, the mouth fills a window of 2 atan(150 / 4800) = 3.6 deg
    # about the normal (view factor 0.03). None is open coast; the open shore 2 km or more
    # from the mouth is.
    coast = estuary_coast()
    t = lay_out_transects(coast, spacing_m=100.0, orientation_window_m=500.0)
    e = compute_exposure(t, coast.parts)
    inside = t.y_m > 1000.0
    beach = (t.y_m < 1.0) & (np.abs(t.x_m) > 2000.0)
    assert inside.sum() > 50 and beach.sum() > 50
    banks = inside & (t.y_m < 4900.0)
    assert not e.open_coast[inside].any()
    assert (e.view_factor[banks] < 0.03).all() and (e.view_factor[inside] < 0.05).all()
    assert set(e.open_coast_reason[banks]) <= {"oblique", "enclosed"}
    assert e.open_coast[beach].all()


def test_harbour_basin_behind_moles_is_not_open_coast():
    # A basin 1.2 km wide and 800 m deep closed by two moles (lines) with a 160 m entrance
    # mid-way. Even the transect facing the entrance sees the sea only through it: from
    # S = (0, -200) a window of 2 atan(80 / 600) = 15.2 deg about the normal, a view factor of
    # sin(7.6 deg) = 0.13 (plane geometry, the definition): not open coast ("narrow"). The
    # shore outside the harbour is open coast.
    moles = [
        shapely.LineString([(-600.0, 0.0), (-600.0, -800.0), (-80.0, -800.0)]),
        shapely.LineString([(600.0, 0.0), (600.0, -800.0), (80.0, -800.0)]),
    ]
    x = np.r_[np.linspace(-500.0, 500.0, 11), -5000.0, 5000.0]
    e = compute_exposure(transects_at(x, 0.0, 180.0), [STRAIGHT], land=moles)
    assert not e.open_coast[:11].any() and e.open_coast[11:].all()
    assert e.view_factor[5] == pytest.approx(np.sin(np.arctan2(80.0, 600.0)), abs=0.01)
    assert e.open_coast_reason[5] == "narrow"


def test_lagoon_shore_behind_a_barrier_is_not_open_coast():
    # A barrier island 500 m wide, 2 km off the mainland, cut by an inlet 300 m wide at x = 0.
    # From the lagoon shore the sea shows only through the inlet: facing it from S = (0, -200)
    # a window set by the inlet's seaward end, 2 atan(150 / 2300) = 7.5 deg, a view factor of
    # sin(3.7 deg) = 0.065 (plane geometry, the definition); elsewhere less or nothing. The
    # barrier's ocean shore is open coast.
    barrier = [shapely.box(-20000.0, -2500.0, -150.0, -2000.0),
               shapely.box(150.0, -2500.0, 20000.0, -2000.0)]  # fmt: skip
    lagoon = transects_at(np.linspace(-5000.0, 5000.0, 21), 0.0, 180.0)
    e = compute_exposure(lagoon, [STRAIGHT], land=barrier)
    assert not e.open_coast.any()
    assert e.view_factor[10] == pytest.approx(np.sin(np.arctan2(150.0, 2300.0)), abs=0.01)
    ocean = transects_at(np.linspace(-5000.0, 5000.0, 5) + 2500.0, -2500.0, 180.0)
    assert compute_exposure(ocean, [STRAIGHT], land=barrier).open_coast.all()


def test_open_coast_reasons(breakwater_exposure):
    # A round lake sees no open sea ("enclosed"); a ray start inside a pier is "on land"; an
    # undefined normal is "no normal". Definitions.
    ring = circle(0.0, 0.0, 2000.0, ring=True)
    lake = compute_exposure(transects_at(0.0, 2000.0, 180.0), [ring])
    assert not lake.open_coast[0] and lake.open_coast_reason[0] == "enclosed"
    assert lake.view_factor[0] == 0.0
    pier = shapely.box(-30.0, -300.0, 30.0, 0.0)
    e = compute_exposure(transects_at(0.0, 0.0, 180.0), [STRAIGHT], land=[pier])
    assert e.open_coast_reason[0] == "on land" and not e.open_coast[0]
    e = breakwater_exposure
    assert e.open_coast_reason[2] == "no normal" and np.isnan(e.view_factor[2])
    assert not e.open_coast[2]


# ---------------------------------------------------------------------------------------------
# A real coast
# ---------------------------------------------------------------------------------------------


def test_real_coast_lagoon_is_not_open_coast_and_beaches_are_open():
    # An extract of GSHHG (Wessel and Smith 1996; tests/data/aveiro/README.md): the straight
    # sandy coast either side of the inlet of the Ria de Aveiro and the lagoon behind it, at
    # the database's 100-200 m resolution. Facts of the place, not of the code: the lagoon
    # shore is reached from the sea only through the inlet (common practice: it is a
    # sheltered lagoon); the beaches more than about 1.5 km from the inlet moles are a long,
    # nearly straight open coast facing west-north-west (common practice). So every lagoon
    # transect is not open coast, and every beach transect is open coast with every direction
    # within 85 deg of its normal open: neither the digitised line's staircases nor the
    # coast's own gentle bends shelter it.
    path = Path(__file__).parent / "data" / "aveiro" / "aveiro-inlet.gpkg"
    coast = read_coast(path, layer="coastline", sea="right")
    land = list(gpd.read_file(path, layer="land").to_crs(coast.working_crs).geometry)
    t = lay_out_transects(coast, spacing_m=100.0, orientation_window_m=3000.0)
    e = compute_exposure(t, list(coast.parts), land=land)
    lon, lat = pyproj.Transformer.from_crs(coast.working_crs, 4326, always_xy=True).transform(
        t.x_m, t.y_m
    )
    # the lagoon behind the inlet, and the beaches away from the inlet, by position
    lagoon = ((lon > -8.742) & (lat > 40.640) & (lat < 40.668)) | (
        (lon > -8.735) & (lat >= 40.668) & (lat < 40.680)
    )
    beach = ((lat < 40.630) | (lat > 40.665)) & ~lagoon
    assert lagoon.sum() > 100 and beach.sum() > 150
    assert not e.open_coast[lagoon].any()
    assert e.open_coast[beach].all()
    near_normal = np.abs(angdiff(e.directions_deg[None, :], t.normal_az_deg[beach, None])) <= 85
    assert (e.open[beach] | ~near_normal).all()
