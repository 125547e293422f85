"""Real shorelines (GSHHG extracts, tests/data/real/README.md): results a coastal engineer
recognises, not artefacts of the digitised line.

The climates are the multi-condition climates of the project's shared measuring script
(written for testing from memory of each coast's exposure, not measured records: share of the
time %, Hs m, Tp s, direction from). Where a net transport is commonly quoted, CERC is
calibrated to it (``[[calibration]]``), as a practitioner would; the quoted values are from
memory (Aveiro) or from REFERENCES.md (the barrier-island coast, 0.6-2 x 10^5 m3/yr [source]).
The open-coast windows avoid the inlets, harbours and fjords.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import geopandas as gpd
import numpy as np
import pyproj
import pytest

from shoreline.run import run_study
from shoreline.study import read_study

DATA = Path(__file__).parent / "data" / "real"

COASTS = {
    # windows: (lat0, lat1, normal az0, normal az1) of straight open coast
    "aveiro-south": dict(
        d50=0.35,
        closure=10.0,
        climate=[
            (40, 2.0, 11, 300),
            (25, 3.0, 13, 305),
            (20, 1.5, 9, 285),
            (10, 1.2, 8, 240),
            (5, 0.8, 6, 200),
        ],
        windows=[(40.25, 40.58, 220, 320)],
        # net drift along the Aveiro coast, commonly quoted of order 1e6 m3/yr southward
        # (from memory)
        extra='\n[[calibration]]\nname = "quoted drift"\nlon = -8.78\nlat = 40.45\n'
        "net_m3_per_yr = 1.0e6\ntoward_deg = 195\n",
    ),
    "jutland-west": dict(
        d50=0.3,
        closure=8.0,
        climate=[
            (30, 1.5, 7, 270),
            (25, 1.5, 7, 300),
            (15, 2.5, 9, 290),
            (15, 1.2, 6, 240),
            (15, 0.8, 5, 90),
        ],
        windows=[(56.05, 56.65, 230, 320)],
        # no quoted rate (the drift diverges along this coast): Kamphuis, which strays less
        # than uncalibrated CERC (docs/methods.md, calibration)
        extra="",
        primary="kamphuis",
    ),
    "outer-banks-north": dict(
        d50=0.3,
        closure=8.0,
        climate=[(30, 1.2, 8, 60), (20, 2.5, 10, 45), (30, 1.0, 9, 135), (20, 0.8, 7, 170)],
        windows=[(35.85, 36.45, 45, 135)],
        # REFERENCES.md: 0.6-2 x 10^5 m3/yr along one barrier-island coast [source]
        extra='\n[[calibration]]\nname = "budget"\nlon = -75.75\nlat = 36.2\n'
        "net_m3_per_yr = 1.5e5\ntoward_deg = 160\n",
    ),
}


def study_for(tmp_path: Path, name: str, coast_extra: str = "") -> Path:
    c = COASTS[name]
    shutil.copy(DATA / f"{name}.gpkg", tmp_path / "coast.gpkg")
    gpd.read_file(DATA / f"{name}.gpkg", layer="land").to_file(tmp_path / "land.gpkg")
    rows = ["time,hs_m,tp_s,dir_deg"]
    t = np.datetime64("2030-01-01T00:00")
    for share, hs, tp, direction in c["climate"]:
        for _ in range(share * 10):
            rows.append(f"{t},{hs},{tp},{direction}")
            t += np.timedelta64(1, "h")
    (tmp_path / "waves.csv").write_text("\n".join(rows) + "\n")
    text = (
        f'[coast]\nfile = "coast.gpkg"\nlayer = "coastline"\nsea = "right"\nland = "land.gpkg"\n'
        f"spacing_m = 100.0\n{coast_extra}\n[sediment]\nd50_mm = {c['d50']}\n\n"
        f'[waves]\nfile = "waves.csv"\n\n[model]\nformulas = ["cerc", "kamphuis"]\n'
        f'primary = "{c.get("primary", "cerc")}"\nclosure_depth_m = {c["closure"]}\n'
        f"berm_height_m = 2.0\n{c['extra']}"
    )
    (tmp_path / "study.toml").write_text(text)
    return tmp_path / "study.toml"


def lonlat(result):
    t = result.transects
    to = pyproj.Transformer.from_crs(t.working_crs, 4326, always_xy=True)
    return (np.asarray(v) for v in to.transform(t.x_m, t.y_m))


@pytest.mark.parametrize("name", sorted(COASTS))
def test_open_coast_is_not_drowned_by_artefacts(tmp_path, name):
    # A coast whose measured change is a few m/yr should show at most about one hotspot per
    # 10 km of open coast and a 95th percentile of |rate| well under 25 m/yr (the shared
    # real-coast README; common practice). Default settings otherwise.
    result = run_study(read_study(study_for(tmp_path, name)))
    cols = result.scenarios[0].columns
    lon, lat = lonlat(result)
    az = cols["normal_az_deg"]
    window = np.zeros(len(az), dtype=bool)
    for lo, hi, a0, a1 in COASTS[name]["windows"]:
        window |= (lat >= lo) & (lat <= hi) & (az >= a0) & (az <= a1)
    window &= (cols["shore_type"] == "open") & (cols["exposure_deg"] >= 120)
    km = window.sum() * 0.1
    assert km > 20
    ids = cols["hotspot_id"][window]
    hotspots = np.unique(ids[ids >= 0]).size
    assert hotspots / km * 10 <= 1.0
    assert np.nanpercentile(np.abs(cols["rate_m_per_yr"][window]), 95) < 25.0


def test_lagoon_and_fjord_shores_are_not_open_coast(tmp_path):
    # The Aveiro lagoon's shores east of 8.705 W (the extract of tests/data/aveiro) and the
    # inner shores of Nissum Fjord behind its barrier (east of 8.125 E, 56.33-56.46 N) see the
    # sea, if at all, through an inlet or a sluice: they are no open coast, get the class
    # "excluded" and make no hotspot (the geography of the extracts).
    inlet = Path(__file__).parent / "data" / "aveiro" / "aveiro-inlet.gpkg"
    shutil.copy(inlet, tmp_path / "coast.gpkg")
    gpd.read_file(inlet, layer="land").to_file(tmp_path / "land.gpkg")
    (tmp_path / "study.toml").write_text(
        '[coast]\nfile = "coast.gpkg"\nlayer = "coastline"\nsea = "right"\nland = "land.gpkg"\n'
        "[waves]\nhs_m = 2.0\ntp_s = 11.0\ndir_deg = 300.0\n"
    )
    result = run_study(read_study(tmp_path / "study.toml"))
    cols = result.scenarios[0].columns
    lon, lat = lonlat(result)
    lagoon = lon > -8.705
    assert lagoon.sum() >= 30
    assert set(cols["shore_type"][lagoon]) == {"enclosed"}
    assert set(cols["class"][lagoon]) == {"excluded"}
    assert np.all(cols["hotspot_id"][lagoon] < 0)
    assert np.mean(cols["shore_type"][lon < -8.74] == "open") > 0.9  # the beaches stay open

    fjord_run = run_study(read_study(study_for(tmp_path, "jutland-west")))
    cols = fjord_run.scenarios[0].columns
    lon, lat = lonlat(fjord_run)
    fjord = (lon > 8.125) & (lat > 56.33) & (lat < 56.46)
    assert fjord.sum() >= 8
    assert set(cols["shore_type"][fjord]) == {"enclosed"}


def test_staircase_warning_fires_on_coarse_data_only(tmp_path):
    # GSHHG's lines step every ~120 m by tens of metres: a 1 km orientation window leaves
    # degrees of noise, and the run says so with the window that would do. The default
    # ("auto") picks such a window itself and says nothing.
    coarse = run_study(
        read_study(study_for(tmp_path, "aveiro-south", "orientation_window_m = 1000.0\n"))
    )
    noisy = [w for w in coarse.warnings if "too coarse" in w]
    assert noisy and "would bring it under" in noisy[0]
    auto = run_study(read_study(study_for(tmp_path, "aveiro-south")))
    assert not [w for w in auto.warnings if "too coarse" in w]
    assert auto.transects.orientation_window_m >= 4000.0


def test_smooth_line_gives_no_staircase_warning(tmp_path):
    # A smooth line digitised every 20 m (a 5 km-radius bay) has no scatter about itself: no
    # warning at 1 km, and "auto" keeps the shortest window (1 km).
    from test_run import STEADY, write_coast, write_study

    x = np.arange(-4000.0, 4000.0 + 1.0, 20.0)
    write_coast(tmp_path, x, 5000.0 - np.sqrt(5000.0**2 - x**2))
    for window, expected in (("1000.0", 1000.0), ('"auto"', 1000.0)):
        text = write_study(tmp_path, "coast.geojson", STEADY).read_text()
        (tmp_path / "s.toml").write_text(text.replace("500.0", window, 1))
        result = run_study(read_study(tmp_path / "s.toml"))
        assert not [w for w in result.warnings if "too coarse" in w]
        assert result.transects.orientation_window_m == expected
