"""Sheltering by land and fetch from the geometry, end to end (geometric shadows only)."""

from __future__ import annotations

import geopandas as gpd
import numpy as np
import pytest
import shapely
from test_run import local_to_lonlat, straight, write_coast, write_study

from shoreline import wind
from shoreline.exposure import DEFAULT_START_M
from shoreline.run import run_study
from shoreline.study import read_study


def lonlat_polygon(x_m, y_m):
    lon, lat = local_to_lonlat(np.asarray(x_m, float), np.asarray(y_m, float))
    return shapely.Polygon(np.c_[lon, lat])


def circle(cx, cy, r, n=180):
    t = np.linspace(0, 2 * np.pi, n, endpoint=False)
    return cx + r * np.cos(t), cy + r * np.sin(t)


@pytest.mark.parametrize("crs", ["EPSG:4326", "EPSG:32626"])
def test_island_shelters_the_shore_behind_it(tmp_path, crs):
    # An island of radius 500 m centred 3 km off a straight coast (sea to the south), waves
    # from due south (180 deg): transects behind the island (|x| < 500 m, the shadow of a
    # parallel bundle of rays is the island's width; plane geometry) are sheltered and move no
    # sand; transects far along the shore are open. The land file may be in any CRS.
    write_coast(tmp_path, *straight(12_000.0, 20.0))
    island = gpd.GeoDataFrame(geometry=[lonlat_polygon(*circle(0.0, -3000.0, 500.0))], crs=4326)
    island.to_crs(crs).to_file(tmp_path / "islands.gpkg")
    text = "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 185.0"
    study = write_study(tmp_path, "coast.geojson", text, geometric=True)
    text = study.read_text().replace('sea = "right"', 'sea = "right"\nland = "islands.gpkg"')
    study.write_text(text)
    cols = run_study(read_study(study)).scenarios[0].columns
    x = cols["chainage_m"] - 6000.0
    # rays toward 185 deg from (x, -20) reach the island's latitude at x - 2980 tan(5 deg)
    offset = 2980.0 * np.tan(np.radians(5.0))
    behind = np.abs(x - offset) < 400.0
    far = np.abs(x) > 2000.0
    assert np.all(cols["sheltered_fraction"][behind] == 1.0)
    assert np.all(cols["q_cerc_m3_per_yr"][behind] == 0.0)
    assert np.all(cols["sheltered_fraction"][far] == 0.0)
    assert np.all(cols["q_cerc_m3_per_yr"][far] > 0)
    assert cols["exposure_deg"][behind].max() < cols["exposure_deg"][far].min()


def test_island_shadow_with_a_spread_sea_is_partial(tmp_path):
    # The same island with the default spread (cos^2s((theta - mean) / 2), s = 25; Mitsuyasu et
    # al. 1975, from memory) and rays from 200 m out: a sea arrives from a range of
    # directions, some of which pass the island, so the lee is partly sheltered: by the share
    # of the spread within the island's half-angle asin(500 / 2800) seen from the ray start
    # (plane geometry), integrated with scipy.integrate.quad; far along the shore it is open.
    from scipy.integrate import quad

    write_coast(tmp_path, *straight(12_000.0, 20.0))
    island = gpd.GeoDataFrame(geometry=[lonlat_polygon(*circle(0.0, -3000.0, 500.0))], crs=4326)
    island.to_file(tmp_path / "islands.gpkg")
    study = write_study(tmp_path, "coast.geojson", "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 180.0")
    text = study.read_text().replace('sea = "right"', 'sea = "right"\nland = "islands.gpkg"')
    study.write_text(text)
    cols = run_study(read_study(study)).scenarios[0].columns
    x = cols["chainage_m"] - 6000.0
    behind = np.abs(x) < 30.0
    far = np.abs(x) > 4000.0
    spread = lambda t: np.cos(t / 2.0) ** 50  # noqa: E731
    half = np.arcsin(500.0 / 2800.0)
    expected = quad(spread, -half, half)[0] / quad(spread, -np.pi / 2, np.pi / 2)[0]
    # rays every 1 deg stand for the directions within half a degree of them
    np.testing.assert_allclose(cols["sheltered_fraction"][behind], expected, atol=0.03)
    assert np.all(cols["sheltered_fraction"][far] < 0.02)


def test_headland_shelters_its_bay(tmp_path):
    # A straight coast with a 1.5 km headland sticking out to sea (south) at x = 0; waves from
    # 225 deg (from the south-west) cannot reach the shore just east of the headland: a ray
    # toward 225 deg from (x, -20) meets the headland if x < 1500 - 20 (tan 45 = 1).
    # the headland goes out along x = -10 and comes back along x = +10
    x = np.r_[
        np.arange(-6000.0, -10.0, 20.0),
        np.full(75, -10.0),
        np.full(75, 10.0),
        np.arange(10.0, 6001.0, 20.0),
    ]
    y = np.r_[np.zeros(300), -np.linspace(0, 1500, 75), -np.linspace(1500, 0, 75), np.zeros(300)]
    write_coast(tmp_path, x, y)
    study = write_study(
        tmp_path, "coast.geojson", "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 225.0", geometric=True
    )
    study.write_text(
        study.read_text().replace("orientation_window_m = 500.0", "orientation_window_m = 100.0")
    )
    result = run_study(read_study(study))
    cols = result.scenarios[0].columns
    # transects on the eastern straight shore, by their distance from the headland: the
    # western shore is 5990 m long and the headland 2 x 1500 m + 20 m across its tip
    dist = cols["chainage_m"] - (5990.0 + 3020.0)
    east = dist > 0
    lee = east & (dist > 100) & (dist < 1300)
    open_ = east & (dist > 1700)
    assert lee.sum() > 5 and open_.sum() > 5
    assert np.all(cols["sheltered_fraction"][lee] == 1.0)
    assert np.all(cols["sheltered_fraction"][open_] == 0.0)


def test_round_lake_fetch_and_wind_waves(tmp_path):
    # A round lake of radius 2 km (a water polygon: the water is inside). Under a steady wind
    # from the west (270 deg) the east shore, downwind, has a fetch across the whole lake:
    # the chord along the diameter, 2R less the ray start offset (plane geometry), and the
    # waves of the CEM II-2 growth relations for that fetch; the west shore, upwind, has none.
    r = 2000.0
    lake = gpd.GeoDataFrame(geometry=[lonlat_polygon(*circle(0.0, 0.0, r, 720))], crs=4326)
    lake.to_file(tmp_path / "lake.gpkg")
    text = """
[coast]
file = "lake.gpkg"
polygons = "water"
spacing_m = 100.0
orientation_window_m = 300.0

[waves]
hs_m = 0.3
tp_s = 3.0
dir_deg = 270.0

[model]
water_density_kg_m3 = 1000.0

[[scenario]]
name = "westerly"
wind_speed_m_s = 15.0
wind_dir_deg = 270.0
fetch_km = "auto"
duration_h = 12.0
"""
    (tmp_path / "study.toml").write_text(text)
    result = run_study(read_study(tmp_path / "study.toml"))
    t = result.transects
    # the ring's normals point into the lake: the east shore's normal points west (270 deg);
    # take the transect whose normal is nearest 270 and the chord from it, 2R cos(psi), psi
    # its angle off the diameter, less the start offset (plane geometry): the default ray
    # start of shoreline.exposure, 200 m, which land along the normal (4 km away) never clips
    off = ((t.normal_az_deg - 270.0 + 180.0) % 360.0) - 180.0
    east = int(np.argmin(np.abs(off)))
    west = int(np.argmin(np.abs(((t.normal_az_deg - 90.0 + 180.0) % 360.0) - 180.0)))
    assert abs(off[east]) < 1.5  # transects are 2.9 deg apart on the ring
    cols = result.scenarios[1].columns
    chord = 2 * r * np.cos(np.radians(off[east])) - DEFAULT_START_M
    assert cols["fetch_km"][east] * 1000.0 == pytest.approx(chord, abs=5.0)
    hm0, tp, _ = wind.wind_waves(15.0, cols["fetch_km"][east] * 1000.0, 12 * 3600.0)
    assert cols["hs0_m"][east] == pytest.approx(float(hm0), rel=1e-9)
    assert cols["tp0_s"][east] == pytest.approx(float(tp), rel=1e-9)
    assert cols["fetch_km"][west] == 0.0 and cols["hs0_m"][west] == 0.0
    assert cols["q_cerc_m3_per_yr"][west] == 0.0
    # the waves grown inside the lake move sand on the downwind shores where they arrive
    # obliquely (north-east and south-east of the lake: normals 20-60 deg off the wind)
    oblique = (np.abs(off) > 20.0) & (np.abs(off) < 60.0)
    assert oblique.sum() > 10
    assert np.all(np.abs(cols["q_cerc_m3_per_yr"][oblique]) > 0)
