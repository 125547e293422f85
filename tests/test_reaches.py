"""Shore types: clipping-box edges and user reaches (excluded, non-erodible)."""

from __future__ import annotations

import geopandas as gpd
import numpy as np
import shapely
from test_run import STEADY, local_to_lonlat, straight, write_coast, write_study

from shoreline.run import run_study
from shoreline.study import read_study


def write_polygon(path, x, y):
    lon, lat = local_to_lonlat(np.asarray(x, float), np.asarray(y, float))
    frame = gpd.GeoDataFrame(geometry=[shapely.Polygon(np.c_[lon, lat])], crs="EPSG:4326")
    frame.to_file(path)


def test_clipping_box_edges_are_not_coast(tmp_path):
    # Land cut out of a larger map by a rectangle in lon/lat: its west, north and east sides
    # run along the rectangle (the data's bounding box) and are not coast; the wavy south side
    # is. (A real coast running exactly along a parallel and two meridians for kilometres
    # does not occur: common practice.)
    x = np.linspace(-5000.0, 5000.0, 201)
    wave = -200.0 + 20.0 * np.sin(x / 700.0)
    lon, lat = local_to_lonlat(x, wave)
    north = local_to_lonlat(np.array([0.0]), np.array([3000.0]))[1][0]
    ring = np.r_[np.c_[lon, lat], [[lon[-1], north], [lon[0], north]]]
    frame = gpd.GeoDataFrame(geometry=[shapely.Polygon(ring)], crs="EPSG:4326")
    frame.to_file(tmp_path / "land.gpkg")
    study = write_study(tmp_path, "land.gpkg", STEADY).read_text().replace('sea = "right"\n', "")
    (tmp_path / "s.toml").write_text(study)
    result = run_study(read_study(tmp_path / "s.toml"))
    cols = result.scenarios[0].columns
    edge = cols["shore_type"] == "data_edge"
    # the box sides are 3 + 10 + 3 km of the 26 km ring; the wavy coast is the rest
    assert 0.55 < edge.mean() < 0.65
    assert set(cols["class"][edge]) == {"excluded"}
    assert any("bounding box" in w for w in result.warnings)
    south = cols["normal_az_deg"][~edge]
    assert np.all(np.abs(south - 180.0) < 45.0)  # what remains faces the sea to the south


def reach_study(tmp_path, treat, x0=-1000.0, x1=1000.0, waves=STEADY):
    write_coast(tmp_path, *straight())
    write_polygon(tmp_path / "reach.gpkg", [x0, x1, x1, x0], [-300.0, -300.0, 300.0, 300.0])
    frame = gpd.read_file(tmp_path / "reach.gpkg")
    frame["treat"] = [treat]
    frame.to_file(tmp_path / "reach.gpkg")
    text = write_study(tmp_path, "coast.geojson", waves).read_text()
    text = text.replace("[coast]\n", '[coast]\nreaches = "reach.gpkg"\n')
    (tmp_path / "s.toml").write_text(text)
    return read_study(tmp_path / "s.toml")


def test_excluded_reach_has_its_own_class_and_no_hotspot(tmp_path):
    cols = run_study(reach_study(tmp_path, "exclude")).scenarios[0].columns
    x = cols["chainage_m"] - 5000.0
    inside = np.abs(x) < 1000.0
    assert set(cols["shore_type"][inside]) == {"excluded"}
    assert set(cols["class"][inside]) == {"excluded"}
    assert np.isnan(cols["rate_m_per_yr"][inside]).all()
    assert not np.isin(cols["class"][~inside], ["excluded"]).any()


def test_non_erodible_reach_does_not_erode(tmp_path):
    # Waves turning along the shore make the transport grow eastward: the whole coast erodes
    # (dQ/dx > 0, one-line continuity). A seawall reach passes on only what arrives: it does
    # not erode, and the shore just east of it, fed less, erodes more (Hanson and Kraus 1986,
    # from memory; common practice for seawalls).
    times = np.datetime64("2031-01-01T00:00") + np.arange(24).astype("timedelta64[h]")
    rows = "\n".join(f"{t}Z,1.0,8.0,{200 + (i % 2)}" for i, t in enumerate(times))
    (tmp_path / "w.csv").write_text("time,hs_m,tp_s,dir_deg\n" + rows + "\n")
    x, y = straight()
    y = y + 1e-5 * x**2 / 2.0  # a gently concave coast: the normal turns along it
    write_coast(tmp_path, x, y)
    free_study = read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"'))
    free = run_study(free_study).scenarios[0].columns
    study = reach_study(tmp_path, "non_erodible", waves='file = "w.csv"')
    write_coast(tmp_path, x, y)
    cols = run_study(study).scenarios[0].columns
    xs = cols["chainage_m"] - 5000.0
    hard = cols["shore_type"] == "non_erodible"
    assert hard.sum() > 10 and np.all(np.abs(xs[hard]) < 1010.0)  # chainage along the curve
    assert np.nanmin(free["rate_m_per_yr"][hard]) < -0.5  # it would erode
    assert np.all(cols["rate_m_per_yr"][hard] >= -1e-9)
    assert set(cols["class"][hard]) <= {"stable", "accretion"}


def test_wrong_sea_side_on_the_demo_is_warned_loudly(tmp_path):
    # The demo is digitised north-west to south-east with the sea to the south-west (on the
    # right); its record's waves come from the south-west. With sea = "left" the normals point
    # inland and the waves come from land (DESIGN.md: such waves move no sand): the run must
    # not report a quiet stable coast without saying which side the data suggest.
    import shutil
    from pathlib import Path

    demo = Path(__file__).parents[1] / "demo_coast"
    for name in ("coast.geojson", "waves.csv"):
        shutil.copy(demo / name, tmp_path / name)
    text = (demo / "study.toml").read_text().replace('sea = "right"', 'sea = "left"')
    text = text.split("[[scenario]]")[0]
    (tmp_path / "study.toml").write_text(text)
    result = run_study(read_study(tmp_path / "study.toml"))
    loud = [w for w in result.warnings if w.startswith("CHECK THE SEA SIDE")]
    assert loud and 'suggest sea = "right"' in loud[0]
    assert result.warnings[0] == loud[0]  # first, before every other warning


def test_wrong_sea_side_with_land_polygons_stops(tmp_path, capsys):
    # Land given as a polygon on the north side of a coast digitised west to east: the sea is
    # on the right. With sea = "left" the rays start on land: no transect sees the sea.
    from shoreline.cli import main

    write_coast(tmp_path, *straight())
    write_polygon(tmp_path / "land.gpkg", [-6000, 6000, 6000, -6000], [0.0, 0.0, 4000.0, 4000.0])
    text = write_study(tmp_path, "coast.geojson", STEADY).read_text()
    text = text.replace('sea = "right"', 'sea = "left"\nland = "land.gpkg"')
    (tmp_path / "s.toml").write_text(text)
    code = main(["run", str(tmp_path / "s.toml"), "--out", str(tmp_path / "o"), "--quiet"])
    err = capsys.readouterr().err.strip()
    assert code != 0 and len(err.splitlines()) == 1
    assert 'the data suggest sea = "right"' in err
