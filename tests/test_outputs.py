"""The files of a run as a user opens them: event units, plain CSV, schemas, NULLs, cautions.

One small run (an invented straight coast with a seaward bump and a jetty, steady oblique waves)
with three scenarios: a 36-hour storm (an event), the same storm standing for a year, and a
calm hour with no hotspot. Every check reads the written files back with pandas, pyogrio, the
csv and json modules, as a GIS or spreadsheet user would.
"""

from __future__ import annotations

import csv
import json
import math
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pyogrio
import pytest
from test_run import local_to_lonlat, write_coast, write_study

from shoreline.cautions import CAUTION
from shoreline.cli import main
from shoreline.report import write_report

STORM_H = 36.0
SECONDS_PER_YEAR = 365.25 * 86400.0  # the Julian year, as in shoreline.transport
STORM = "hs_m = 3.0\ntp_s = 10.0\ndir_deg = 200.0"

SCENARIOS = f"""
[structures]
file = "jetty.geojson"
bypass = 0.2

[classify]
stable_band_m_per_yr = 0.5
min_hotspot_length_m = 300.0

[[scenario]]
name = "storm"
{STORM}
duration_h = {STORM_H}

[[scenario]]
name = "storm-year"
{STORM}

[[scenario]]
name = "calm"
hs_m = 0.3
tp_s = 5.0
dir_deg = 185.0
duration_h = 1.0
"""


def _jetty(folder: Path) -> None:
    """A jetty 3 km east of the bump, from 100 m inland to 15 m seaward (invented)."""
    lon, lat = local_to_lonlat(np.array([3000.0, 3000.0]), np.array([100.0, -15.0]))
    feature = {
        "type": "Feature",
        "properties": {"name": "J1", "bypass": 0.2},
        "geometry": {"type": "LineString", "coordinates": np.c_[lon, lat].tolist()},
    }
    text = json.dumps({"type": "FeatureCollection", "features": [feature]})
    (folder / "jetty.geojson").write_text(text, encoding="utf-8")


@pytest.fixture(scope="module")
def run(tmp_path_factory) -> dict:
    folder = tmp_path_factory.mktemp("outputs")
    x = np.arange(-6000.0, 6000.0 + 10.0, 20.0)
    write_coast(folder, x, -300.0 * np.exp(-((x / 1200.0) ** 2)))  # a seaward bump
    _jetty(folder)
    study = write_study(folder, "coast.geojson", "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 200.0")
    study.write_text(study.read_text(encoding="utf-8") + SCENARIOS, encoding="utf-8")
    out = folder / "out"
    assert main(["run", str(study), "--out", str(out), "--no-figures", "--quiet"]) == 0
    write_report(out)
    return {"study": study, "out": out}


def _geojson(path: Path) -> dict:
    return json.loads(path.read_text(encoding="utf-8"))


def _props(path: Path) -> pd.DataFrame:
    return pd.DataFrame([f["properties"] for f in _geojson(path)["features"]])


def _gpkg_fields(path: Path, layer: str) -> list[str]:
    return [str(f) for f in pyogrio.read_info(path, layer=layer)["fields"]]


def _keys(value) -> list[str]:
    """Every key of a JSON value, however deep."""
    if isinstance(value, dict):
        return [str(k) for k in value] + [k for v in value.values() for k in _keys(v)]
    if isinstance(value, list):
        return [k for v in value for k in _keys(v)]
    return []


# ---------------------------------------------------------------------------------------------
# 1. A storm event speaks in the event's units
# ---------------------------------------------------------------------------------------------


def test_event_files_carry_no_yearly_rate(run) -> None:
    folder = run["out"] / "storm"
    names = set(_props(folder / "transects.geojson").columns)
    names |= set(_props(folder / "hotspots.geojson").columns)
    names |= set(_props(folder / "structures.geojson").columns)
    for layer in ("transects", "hotspots", "structures"):
        names |= set(_gpkg_fields(folder / "results.gpkg", layer))
    names |= set(pd.read_csv(folder / "transects.csv").columns)
    for name in ("summary.json", "scenario.json"):
        names |= set(_keys(_geojson(folder / name)))
    for name in ("transects.geojson", "hotspots.geojson", "structures.geojson"):
        names |= set(_keys(_geojson(folder / name)["settings"]))
    assert not [n for n in names if "per_yr" in n or n.startswith("dqdx")]
    for text_file in ("README.txt", "summary.json", "transects.csv", "scenario.json"):
        assert "per_yr" not in (folder / text_file).read_text(encoding="utf-8"), text_file
    expected = {"q_cerc_m3", "q_kamphuis_m3", "q_gross_m3", "q_pos_m3", "q_neg_m3"}
    assert expected | {"shoreline_shift_m", "volume_change_m3_per_m"} <= names
    assert {"q_arriving_m3", "q_passing_m3", "trapped_m3", "mean_shift_m", "volume_m3"} <= names


def test_event_transport_is_the_volume_over_the_event(run) -> None:
    # The same waves standing for a year give the rate; the 36 h storm carries rate x 36 h.
    years = STORM_H * 3600.0 / SECONDS_PER_YEAR
    storm = _props(run["out"] / "storm" / "transects.geojson")
    year = _props(run["out"] / "storm-year" / "transects.geojson")
    for name in ("cerc", "kamphuis", "gross", "pos", "neg"):
        np.testing.assert_allclose(
            storm[f"q_{name}_m3"], year[f"q_{name}_m3_per_yr"] * years, rtol=1e-9, atol=1e-9
        )
    np.testing.assert_allclose(storm["volume_change_m3_per_m"], -year["dqdx_m2_per_yr"] * years)
    jetty = _props(run["out"] / "storm" / "structures.geojson")
    jetty_year = _props(run["out"] / "storm-year" / "structures.geojson")
    assert jetty["trapped_m3"][0] == pytest.approx(jetty_year["trapped_m3_per_yr"][0] * years)
    assert jetty["trapped_m3"][0] > 0


def test_event_strongest_erosion_is_the_most_negative_shift(run) -> None:
    summary = _geojson(run["out"] / "storm" / "summary.json")
    table = pd.read_csv(run["out"] / "storm" / "transects.csv")
    worst = summary["strongest_erosion"]
    assert set(worst) == {"shift_m", "transect_id", "part_id", "chainage_m"}
    i = int(table["shoreline_shift_m"].idxmin())
    assert worst["shift_m"] == pytest.approx(table["shoreline_shift_m"][i], rel=1e-5)
    assert worst["transect_id"] == table["transect_id"][i]
    assert worst["shift_m"] < -0.1  # the storm erodes the bump by decimetres, not hundreds
    assert summary["duration_h"] == STORM_H and summary["event"] is True
    yearly = _geojson(run["out"] / "storm-year" / "summary.json")["strongest_erosion"]
    assert "rate_m_per_yr" in yearly  # a scenario standing for a year keeps its rate


def test_report_of_an_event_is_for_the_event(run) -> None:
    import html

    text = (run["out"] / "report.html").read_text(encoding="utf-8")
    part = text[text.index('id="scenario-storm"') : text.index('id="scenario-storm-year"')]
    part = " ".join(html.unescape(re.sub(r"<[^>]+>", " ", part)).split())
    worst = _geojson(run["out"] / "storm" / "summary.json")["strongest_erosion"]["shift_m"]
    assert f"Strongest erosion {worst:.2f} m at transect".replace("-", "\u2212") in part
    assert "/yr" not in part
    assert "Arriving [m\u00b3 over the storm]" in part  # the jetty's volumes over the storm
    assert "not per year" in part


# ---------------------------------------------------------------------------------------------
# 2. Tables any reader opens; the caution and settings beside them
# ---------------------------------------------------------------------------------------------


def _csv_files(out: Path) -> list[Path]:
    files = sorted(out.glob("*/*.csv"))
    assert {p.name for p in files} == {"transects.csv", "wave_climate.csv"}
    return files


def test_every_csv_opens_with_no_options(run) -> None:
    for path in _csv_files(run["out"]):
        with open(path, encoding="utf-8", newline="") as handle:
            rows = list(csv.reader(handle))  # what a spreadsheet sees
        assert not any(r and r[0].startswith("#") for r in rows), path
        header = rows[0]
        table = pd.read_csv(path)
        assert list(table.columns) == header and len(table) == len(rows) - 1
        assert all(len(r) == len(header) for r in rows)
        gdal = pyogrio.read_dataframe(path)  # GDAL's CSV driver
        assert list(gdal.columns) == header and len(gdal) == len(table), path


def test_csv_coordinates_keep_1e7_degree(run) -> None:
    path = run["out"] / "reference" / "transects.csv"
    text = path.read_text(encoding="utf-8").splitlines()
    lon_col = text[0].split(",").index("lon_deg")
    assert all(re.fullmatch(r"-?\d+\.\d{7}", r.split(",")[lon_col]) for r in text[1:])
    table = pd.read_csv(path)
    shore = np.array(
        [
            f["geometry"]["coordinates"][0]
            for f in _geojson(path.with_suffix(".geojson"))["features"]
        ]
    )
    np.testing.assert_allclose(table["lon_deg"], shore[:, 0], rtol=0, atol=1.01e-7)
    np.testing.assert_allclose(table["lat_deg"], shore[:, 1], rtol=0, atol=1.01e-7)


def test_readme_beside_the_tables_carries_caution_and_settings(run) -> None:
    for name in ("reference", "storm", "storm-year", "calm"):
        folder = run["out"] / name
        text = (folder / "README.txt").read_text(encoding="utf-8")
        assert CAUTION in " ".join(text.split())
        settings = json.loads(text.split("Settings:", 1)[1])
        assert settings == _geojson(folder / "transects.geojson")["settings"]
    storm = (run["out"] / "storm" / "README.txt").read_text(encoding="utf-8")
    assert "STORM EVENT of 36 h" in storm and "not per year" in " ".join(storm.split())


# ---------------------------------------------------------------------------------------------
# 3. Schemas, NULLs and zeros
# ---------------------------------------------------------------------------------------------


def test_empty_hotspot_layer_keeps_its_fields_and_geometry_type(run) -> None:
    gpkg = run["out"] / "calm" / "results.gpkg"
    info = pyogrio.read_info(gpkg, layer="hotspots")
    assert info["features"] == 0
    assert info["geometry_type"] == "LineString"
    assert _gpkg_fields(gpkg, "hotspots") == _gpkg_fields(
        run["out"] / "storm" / "results.gpkg", "hotspots"
    )
    assert "mean_shift_m" in _gpkg_fields(gpkg, "hotspots")
    data = _geojson(run["out"] / "calm" / "hotspots.geojson")
    assert data["features"] == [] and data["caution"] == CAUTION


def test_hotspot_id_is_null_where_there_is_no_hotspot(run) -> None:
    folder = run["out"] / "reference"
    props = _props(folder / "transects.geojson")["hotspot_id"]
    assert props.isna().any() and props.notna().any()
    raw = [
        f["properties"]["hotspot_id"] for f in _geojson(folder / "transects.geojson")["features"]
    ]
    assert all(v is None or (isinstance(v, int) and v > 0) for v in raw)  # null, not -1
    info = pyogrio.read_info(folder / "results.gpkg", layer="transects")
    assert info["ogr_types"][list(info["fields"]).index("hotspot_id")].startswith("OFTInteger")
    gpkg = pyogrio.read_dataframe(folder / "results.gpkg", layer="transects")
    np.testing.assert_array_equal(gpkg["hotspot_id"].isna(), props.isna())
    with open(folder / "transects.csv", encoding="utf-8", newline="") as handle:
        rows = list(csv.DictReader(handle))
    cells = [r["hotspot_id"] for r in rows]
    assert [c == "" for c in cells] == props.isna().tolist()
    assert -1 not in pd.read_csv(folder / "transects.csv")["hotspot_id"].tolist()


def _negative_zeros(value) -> list:
    if isinstance(value, dict):
        return [z for v in value.values() for z in _negative_zeros(v)]
    if isinstance(value, list):
        return [z for v in value for z in _negative_zeros(v)]
    if isinstance(value, float) and value == 0.0 and math.copysign(1.0, value) < 0:
        return [value]
    return []


def test_no_negative_zero_in_any_file(run) -> None:
    found = []
    for folder in sorted(p for p in run["out"].iterdir() if p.is_dir()):
        for path in folder.glob("*.json"):
            found += [(path, z) for z in _negative_zeros(_geojson(path))]
        for path in folder.glob("*.geojson"):
            found += [(path, z) for z in _negative_zeros(_geojson(path))]
        for path in folder.glob("*.csv"):
            text = path.read_text(encoding="utf-8")
            found += [
                (path, m)
                for m in re.findall(r"(?:^|,)(-0(?:\.0*)?(?:e[+-]?\d+)?)(?=,|$)", text, re.M)
            ]
        for layer in ("transects", "hotspots", "structures"):
            frame = pyogrio.read_dataframe(folder / "results.gpkg", layer=layer)
            for name in frame.select_dtypes("float").columns:
                values = frame[name].to_numpy()
                if np.any((values == 0) & np.signbit(values)):
                    found.append((folder / "results.gpkg", layer, name))
    assert not found


# ---------------------------------------------------------------------------------------------
# 4. The caution in the GeoPackage of `shoreline transects`
# ---------------------------------------------------------------------------------------------


def test_transects_command_geopackage_has_an_about_table(run, tmp_path: Path) -> None:
    assert main(["transects", str(run["study"]), "--out", str(tmp_path)]) == 0
    about = pyogrio.read_dataframe(tmp_path / "transects.gpkg", layer="about")
    values = dict(zip(about["key"], about["value"], strict=True))
    assert values["caution"] == CAUTION
    assert json.loads(values["settings"])["spacing_m"] == 100.0


def test_scenario_records_hold_no_path_of_the_machine(tmp_path):
    # A study folder moved or shared keeps its records: summary.json and scenario.json name
    # the wave record relative to the study (issue: paths relative to the study file).
    import shutil
    from pathlib import Path

    from shoreline.cli import main

    demo = Path(__file__).parents[1] / "demo_coast"
    shutil.copytree(demo, tmp_path / "demo", ignore=shutil.ignore_patterns("out*"))
    text = (tmp_path / "demo" / "study.toml").read_text()
    for section in ("[uncertainty]", "[projection]"):
        assert section in text
    study = tmp_path / "demo" / "study.toml"
    study.write_text(
        text.split("[projection]")[0] + '\n[[scenario]]\nname = "rotated"\nhs_factor = 1.1\n'
    )
    out = tmp_path / "out"
    assert main(["run", str(study), "--out", str(out), "--no-figures", "--quiet"]) == 0
    for path in (out / "reference" / "summary.json", out / "rotated" / "scenario.json"):
        text = path.read_text()
        assert str(tmp_path) not in text, path.name
