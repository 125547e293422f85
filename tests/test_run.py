"""The screening run end to end, against the physics chain and the one-line theory."""

from __future__ import annotations

import json
from pathlib import Path

import geopandas as gpd
import numpy as np
import pytest
import shapely
from pyproj import Transformer

from shoreline import transport, waves
from shoreline.cli import main
from shoreline.run import run_study
from shoreline.study import read_study

# A site in the open North Atlantic, 2.5 degrees west of the central meridian of UTM zone 26N
# (-33 deg), so that grid north and true north differ by about 1.6 degrees (convergence
# ~ dlon sin(lat), Snyder 1987, from memory).
LON0, LAT0 = -35.5, 40.0
UTM = "EPSG:32626"


def local_to_lonlat(x_m: np.ndarray, y_m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Local metres (x toward TRUE east, y toward TRUE north) to lon/lat around the site."""
    local = f"+proj=tmerc +lat_0={LAT0} +lon_0={LON0} +k=1 +ellps=WGS84 +units=m"
    return Transformer.from_crs(local, "EPSG:4326", always_xy=True).transform(x_m, y_m)


def write_coast(folder: Path, x_m, y_m, crs: str = "EPSG:4326", name="coast.geojson") -> Path:
    lon, lat = local_to_lonlat(np.asarray(x_m, float), np.asarray(y_m, float))
    frame = gpd.GeoDataFrame(geometry=[shapely.LineString(np.c_[lon, lat])], crs="EPSG:4326")
    path = folder / name
    frame.to_crs(crs).to_file(path)
    return path


#: The geometric-shadow limit of the sheltering: rays from 20 m off the shore and a directional
#: spread so narrow that a direction is open or shut (the first release's all-or-nothing shadow,
#: the narrow-spread limit of the cos^2s spreading; docs/methods.md).
GEOMETRIC = ("ray_start_m = 20.0\n", "spreading_s = 1e6\n")


def write_study(
    folder: Path, coast: str, waves_toml: str, extra: str = "", geometric: bool = False
) -> Path:
    start, spread = GEOMETRIC if geometric else ("", "")
    text = f"""
[coast]
file = "{coast}"
sea = "right"
spacing_m = 100.0
orientation_window_m = 500.0
{start}
[waves]
{spread}{waves_toml}

[model]
formulas = ["cerc", "kamphuis"]
closure_depth_m = 8.0
berm_height_m = 2.0
{extra}
"""
    path = folder / "study.toml"
    path.write_text(text, encoding="utf-8")
    return path


STEADY = "hs_m = 1.2\ntp_s = 8.0\ndir_deg = 200.0"


def straight(length_m=10_000.0, step_m=50.0):
    x = np.arange(0.0, length_m + step_m / 2, step_m)
    return x - length_m / 2, np.zeros_like(x)


def test_straight_coast_steady_oblique_waves(tmp_path):
    # Digitised west to east with the sea on the right (south): seaward normal 180 deg true.
    write_coast(tmp_path, *straight())
    result = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY)))
    cols = result.scenarios[0].columns
    np.testing.assert_allclose(cols["normal_az_deg"], 180.0, atol=0.05)
    # waves from 200 deg meet the normal at +20 deg: sand moves east (increasing chainage);
    # the physics chain (breaking then CERC) gives the uniform transport [CEM III-2 Eq. III-2-7]
    hb, db, ab = waves.breaking(1.2, 8.0, 20.0)
    expected = transport.cerc(hb, ab) * transport.SECONDS_PER_YEAR
    assert expected > 0
    np.testing.assert_allclose(cols["q_cerc_m3_per_yr"], expected, rtol=2e-3)
    np.testing.assert_allclose(cols["dqdx_m2_per_yr"], 0.0, atol=expected * 1e-5)
    assert set(cols["class"]) == {"stable"}
    assert result.scenarios[0].hotspots == []
    # the mirrored direction (160 deg) reverses the transport (mirror symmetry)
    mirrored = run_study(
        read_study(write_study(tmp_path, "coast.geojson", STEADY.replace("200.0", "160.0")))
    )
    np.testing.assert_allclose(
        mirrored.scenarios[0].columns["q_cerc_m3_per_yr"], -cols["q_cerc_m3_per_yr"], rtol=5e-3
    )


def test_waves_from_land_move_no_sand(tmp_path):
    write_coast(tmp_path, *straight())
    result = run_study(
        read_study(write_study(tmp_path, "coast.geojson", STEADY.replace("200.0", "20.0")))
    )
    cols = result.scenarios[0].columns
    assert np.all(cols["q_cerc_m3_per_yr"] == 0.0)
    assert set(cols["class"]) == {"sheltered"}
    assert np.all(cols["sheltered_fraction"] == 1.0)


def test_bump_erodes_at_crest_and_feeds_flanks(tmp_path):
    # One-line theory (Pelnard-Considere 1956): under shore-normal waves a seaward bump
    # diffuses: transport runs away from the crest to both sides, the crest erodes and the
    # flanks accrete, symmetrically.
    x, _ = straight(12_000.0, 20.0)
    y = -300.0 * np.exp(-((x / 1200.0) ** 2))  # seaward (south) bump
    write_coast(tmp_path, x, y)
    study = write_study(
        tmp_path,
        "coast.geojson",
        "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 180.0",
        "\n[classify]\nstable_band_m_per_yr = 0.5\nmin_hotspot_length_m = 300.0\n",
    )
    cols = run_study(read_study(study)).scenarios[0].columns
    ch = cols["chainage_m"]
    centre = ch[np.argmin(np.abs(ch - ch.mean()))]
    rate = cols["rate_m_per_yr"]
    q = cols["q_cerc_m3_per_yr"]
    crest = np.abs(ch - centre) < 150
    assert np.all(rate[crest] < -0.5)
    assert np.all(q[(ch > centre + 300) & (ch < centre + 2000)] > 0)  # east of crest: eastward
    assert np.all(q[(ch < centre - 300) & (ch > centre - 2000)] < 0)  # west of crest: westward
    flank = (np.abs(ch - centre) > 1800) & (np.abs(ch - centre) < 2600)
    assert np.all(rate[flank] > 0)
    # symmetric about the crest (to a few % of the peak: transect positions are not exactly
    # mirror images after reprojection)
    mirror = np.interp(2 * centre - ch, ch, rate)
    inner = np.abs(ch - centre) < 4000
    assert np.max(np.abs(rate[inner] - mirror[inner])) < 0.05 * np.max(np.abs(rate))


@pytest.mark.parametrize("crs", ["EPSG:4326", UTM, "EPSG:3857"])
def test_same_results_in_any_crs(tmp_path, crs):
    # A curved coast away from the central meridian: spacing on the ground and true-north
    # angles make lon/lat, UTM and Web Mercator input agree (common practice: Web Mercator
    # is not a metric on the ground, its scale at 40 deg N is 1/cos(40) = 1.31).
    x, _ = straight(8000.0, 20.0)
    y = -200.0 * np.sin(x / 1500.0)
    write_coast(tmp_path, x, y, crs=crs, name="coast.gpkg")
    cols = run_study(read_study(write_study(tmp_path, "coast.gpkg", STEADY))).scenarios[0].columns
    ref_dir = tmp_path / "ref"
    ref_dir.mkdir()
    write_coast(ref_dir, x, y, crs="EPSG:4326", name="coast.gpkg")
    ref = run_study(read_study(write_study(ref_dir, "coast.gpkg", STEADY))).scenarios[0].columns
    assert len(cols["chainage_m"]) == len(ref["chainage_m"])
    np.testing.assert_allclose(cols["chainage_m"], ref["chainage_m"], atol=0.5)
    np.testing.assert_allclose(cols["normal_az_deg"], ref["normal_az_deg"], atol=0.05)
    scale = np.max(np.abs(ref["q_cerc_m3_per_yr"]))
    np.testing.assert_allclose(cols["q_cerc_m3_per_yr"], ref["q_cerc_m3_per_yr"], atol=1e-3 * scale)


def test_digitising_noise_makes_no_hotspots(tmp_path):
    # +-1.5 m noise on 5 m vertices (a careless digitiser) must not create hotspots when the
    # orientation is averaged over 1 km. The one-line rate amplifies orientation noise in
    # proportion to the transport, so the climate matters: a steady condition moving about
    # 2.5e5 m3/yr, the order of the net transport measured on long exposed sandy coasts
    # (10^5 m3/yr, REFERENCES.md orders of magnitude [source]). A steady 1.2 m wave all year
    # moves ~1.7e6 m3/yr, which no real climate does (REFERENCES.md).
    rng = np.random.default_rng(7)
    x, y = straight(20_000.0, 5.0)
    y = y + rng.uniform(-1.5, 1.5, x.size)
    write_coast(tmp_path, x, y)
    study = write_study(tmp_path, "coast.geojson", "hs_m = 0.7\ntp_s = 8.0\ndir_deg = 190.0")
    text = study.read_text().replace(
        "orientation_window_m = 500.0", "orientation_window_m = 1000.0"
    )
    study.write_text(text)
    scen = run_study(read_study(study)).scenarios[0]
    q = scen.columns["q_cerc_m3_per_yr"]
    assert 1e5 < np.median(q) < 5e5
    assert scen.hotspots == []
    # isolated transects may cross the 0.5 m/yr band, but no run of them long enough to count
    rate = np.abs(scen.columns["rate_m_per_yr"])
    assert np.percentile(rate, 95) < 0.5


def test_record_of_one_condition_equals_steady(tmp_path):
    write_coast(tmp_path, *straight())
    steady = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY)))
    times = np.datetime64("2031-01-01T00:00") + np.arange(48).astype("timedelta64[h]")
    rows = "\n".join(f"{t}Z,1.2,8.0,200" for t in times)
    (tmp_path / "w.csv").write_text("time,hs_m,tp_s,dir_deg\n" + rows + "\n")
    record = run_study(read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"')))
    np.testing.assert_allclose(
        record.scenarios[0].columns["q_cerc_m3_per_yr"],
        steady.scenarios[0].columns["q_cerc_m3_per_yr"],
        rtol=1e-12,
    )


def test_mirrored_directions_alternating_give_zero_net(tmp_path):
    write_coast(tmp_path, *straight())
    times = np.datetime64("2031-01-01T00:00") + np.arange(48).astype("timedelta64[h]")
    rows = "\n".join(f"{t}Z,1.2,8.0,{200 if i % 2 else 160}" for i, t in enumerate(times))
    (tmp_path / "w.csv").write_text("time,hs_m,tp_s,dir_deg\n" + rows + "\n")
    cols = run_study(read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"')))
    cols = cols.scenarios[0].columns
    steady = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY)))
    q1 = steady.scenarios[0].columns["q_cerc_m3_per_yr"]
    scale = np.abs(q1).max()
    np.testing.assert_allclose(cols["q_cerc_m3_per_yr"], 0.0, atol=5e-3 * scale)
    np.testing.assert_allclose(cols["q_gross_m3_per_yr"], np.abs(q1), rtol=5e-3)


def test_run_writes_rfc7946_layers(tmp_path):
    write_coast(tmp_path, *straight())
    study = write_study(tmp_path, "coast.geojson", STEADY)
    assert main(["run", str(study), "--out", str(tmp_path / "out"), "--no-figures"]) == 0
    base = tmp_path / "out" / "reference"
    data = json.loads((base / "transects.geojson").read_text())
    assert data["type"] == "FeatureCollection"
    assert "crs" not in data  # RFC 7946 section 4: WGS 84 only, no crs member
    assert "SCREENING ESTIMATE" in data["caution"]
    lon, lat = np.array(data["features"][0]["geometry"]["coordinates"]).T
    assert np.all(np.abs(lon - LON0) < 0.2) and np.all(np.abs(lat - LAT0) < 0.2)
    props = data["features"][0]["properties"]
    for key in (
        "transect_id",
        "part_id",
        "chainage_m",
        "normal_az_deg",
        "hb_m",
        "db_m",
        "alpha_b_deg",
        "q_cerc_m3_per_yr",
        "q_kamphuis_m3_per_yr",
        "dqdx_m2_per_yr",
        "rate_m_per_yr",
        "class",
    ):
        assert key in props
    back = gpd.read_file(base / "transects.geojson")
    assert back.crs.to_epsg() == 4326
    layers = set(gpd.list_layers(base / "results.gpkg")["name"])
    assert {"transects", "hotspots", "shoreline"} <= layers
    gpkg = gpd.read_file(base / "results.gpkg", layer="transects")
    assert gpkg.crs.is_projected
    assert len(gpkg) == len(back)
    hot = json.loads((base / "hotspots.geojson").read_text())
    assert hot["features"] == [] and "caution" in hot
    # the CSV is a plain table; its caution is in the README.txt beside it
    assert (base / "transects.csv").read_text().startswith("transect_id,")
    assert "SCREENING ESTIMATE" in (base / "README.txt").read_text()
    record = json.loads((tmp_path / "out" / "run.json").read_text())
    assert record["counts"]["transects"] == len(back)
    assert len(record["inputs"]) == 2


def test_failed_run_leaves_earlier_output(tmp_path):
    write_coast(tmp_path, *straight())
    study = write_study(tmp_path, "coast.geojson", STEADY)
    out = tmp_path / "out"
    assert main(["run", str(study), "--out", str(out), "--no-figures"]) == 0
    before = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    (tmp_path / "coast.geojson").write_text("{ not json")
    assert main(["run", str(study), "--out", str(out), "--no-figures"]) != 0
    after = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    assert before == after


def test_rerun_gives_the_same_numbers_and_the_record_shows_it(tmp_path):
    write_coast(tmp_path, *straight())
    study = write_study(tmp_path, "coast.geojson", STEADY)
    records = []
    for name in ("a", "b"):
        assert main(["run", str(study), "--out", str(tmp_path / name), "--no-figures"]) == 0
        records.append(json.loads((tmp_path / name / "run.json").read_text()))
    assert records[0]["results_sha256"] == records[1]["results_sha256"]
    assert records[0]["inputs"] == records[1]["inputs"]
    assert records[0]["settings"] == records[1]["settings"]
