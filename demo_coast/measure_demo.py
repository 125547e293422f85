"""Measure the invented demo data: the numbers README.md and docs/demo.md state about it.

Run ``python demo_coast/measure_demo.py`` to print them. ``tests/test_demo_data.py`` reads the
two documents and checks every number they state about the data against :func:`measure`, so
the words cannot drift from the files.

Definitions (the documents use the same words):

- *chainage*: distance along the shoreline on the ground (geodesic on WGS 84) from its
  north-western end, where it was digitised from;
- *trend*: the straight line fitted to the coast by least squares (orthogonal distances, the
  coast sampled every 5 m along its length) in a transverse Mercator projection centred on the
  coast; its azimuth is from true north;
- *seaward of the trend*: the distance of the shoreline from that line, positive toward the sea
  (on the right of the digitised direction, ``sea = "right"`` in the study);
- *wind sea*: hours of waves from 90 to 180 degrees (east to south);
- *storm*: a spell of consecutive hours with Hs of 2.5 m or more.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import numpy as np
import shapely
from pyproj import Geod, Transformer

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10
    import tomli as tomllib

HERE = Path(__file__).resolve().parent
STORM_HS_M = 2.5
WIND_SEA_FROM_DEG = (90.0, 180.0)


def _line_lonlat(path: Path) -> tuple[np.ndarray, np.ndarray]:
    data = json.loads(path.read_text(encoding="utf-8"))
    lon, lat = np.asarray(data["features"][0]["geometry"]["coordinates"], dtype=float).T
    return lon, lat


def _ground_chainage_m(lon: np.ndarray, lat: np.ndarray) -> np.ndarray:
    step = Geod(ellps="WGS84").inv(lon[:-1], lat[:-1], lon[1:], lat[1:])[2]
    return np.concatenate([[0.0], np.cumsum(step)])


def measure_coast(folder: Path = HERE) -> dict[str, float]:
    """Place, length, trend, headland and bay of ``coast.geojson``; the jetty of
    ``structures.geojson`` (see the module docstring for the definitions)."""
    lon, lat = _line_lonlat(folder / "coast.geojson")
    chainage = _ground_chainage_m(lon, lat)
    local = (
        f"+proj=tmerc +lat_0={lat.mean()} +lon_0={lon.mean()} +k=1 +ellps=WGS84 +units=m +no_defs"
    )
    to_local = Transformer.from_crs("EPSG:4326", local, always_xy=True)
    line = shapely.LineString(np.column_stack(to_local.transform(lon, lat)))
    # the coast sampled evenly along its length, so the fit does not depend on vertex spacing
    along = np.arange(0.0, line.length, 5.0)
    points = shapely.line_interpolate_point(line, along)
    xy = np.column_stack([shapely.get_x(points), shapely.get_y(points)])
    centre = xy.mean(axis=0)
    direction = np.linalg.svd(xy - centre)[2][0]
    if direction @ (xy[-1] - xy[0]) < 0:
        direction = -direction  # along the digitised direction
    right = np.array([direction[1], -direction[0]])  # the sea side
    offset = (xy - centre) @ right
    # sample positions to ground chainage (grid and ground differ by parts per million here)
    sample_chainage = along / line.length * chainage[-1]
    head, bay = int(np.argmax(offset)), int(np.argmin(offset))
    trend = float(np.degrees(np.arctan2(direction[0], direction[1])) % 360.0)

    jetty_lon, jetty_lat = _line_lonlat(folder / "structures.geojson")
    jetty = shapely.LineString(np.column_stack(to_local.transform(jetty_lon, jetty_lat)))
    crossing = shapely.intersection(line, jetty)
    sea_end = shapely.Point(jetty.coords[-1])
    props = json.loads((folder / "structures.geojson").read_text(encoding="utf-8"))
    return {
        "centre_lat_s_deg": float(-lat.mean()),
        "centre_lon_w_deg": float(-lon.mean()),
        "length_km": float(chainage[-1] / 1000.0),
        "trend_deg": trend,
        "normal_deg": (trend + 90.0) % 360.0,
        "headland_m": float(offset[head]),
        "headland_chainage_km": float(sample_chainage[head] / 1000.0),
        "bay_depth_m": float(-offset[bay]),
        "bay_chainage_km": float(sample_chainage[bay] / 1000.0),
        "jetty_chainage_km": float(line.project(crossing) / line.length * chainage[-1] / 1000.0),
        "jetty_reach_m": float(crossing.distance(sea_end)),
        "jetty_bypass_pct": 100.0 * float(props["features"][0]["properties"]["bypass"]),
    }


def measure_waves(folder: Path = HERE) -> dict[str, float]:
    """Length, step and statistics of ``waves.csv`` (see the module docstring)."""
    import pandas as pd

    waves = pd.read_csv(folder / "waves.csv", comment="#")
    time = pd.to_datetime(waves["time"], utc=True)
    steps_h = time.diff().dropna().dt.total_seconds().to_numpy() / 3600.0
    hs, tp, direction = (waves[c].to_numpy(float) for c in ("hs_m", "tp_s", "dir_deg"))
    stormy = hs >= STORM_HS_M
    spell = np.cumsum(np.r_[True, stormy[1:] != stormy[:-1]])  # a number per run of hours
    storms = [np.flatnonzero(stormy & (spell == s)) for s in np.unique(spell[stormy])]
    peaks = [hs[s].max() for s in storms]
    storm_dirs = np.concatenate([direction[s] for s in storms])
    lo, hi = WIND_SEA_FROM_DEG
    return {
        "year": float(time.dt.year.iloc[0]) if time.dt.year.nunique() == 1 else float("nan"),
        "hours": float(len(waves)),
        "step_h": float(np.median(steps_h)) if np.all(steps_h == steps_h[0]) else float("nan"),
        "mean_hs_m": float(hs.mean()),
        "median_dir_deg": float(np.median(direction)),
        "median_tp_s": float(np.median(tp)),
        "storms": float(len(storms)),
        "storm_peak_min_m": float(min(peaks)),
        "storm_peak_max_m": float(max(peaks)),
        "storm_dir_min_deg": float(storm_dirs.min()),
        "storm_dir_max_deg": float(storm_dirs.max()),
        "wind_sea_pct": 100.0 * float(np.mean((direction >= lo) & (direction <= hi))),
    }


def measure_study(folder: Path = HERE) -> dict[str, float]:
    """The settings and scenarios of ``study.toml`` that the documents quote."""
    study = tomllib.loads((folder / "study.toml").read_text(encoding="utf-8"))
    scenarios = {s["name"]: s for s in study["scenario"]}
    storm, gale, rotated = scenarios["storm-sw"], scenarios["gale-se"], scenarios["rotated"]
    return {
        "d50_mm": study["sediment"]["d50_mm"],
        "closure_depth_m": study["model"]["closure_depth_m"],
        "berm_height_m": study["model"]["berm_height_m"],
        "cerc_k": study["model"]["cerc_k"],
        "storm_h": storm["duration_h"],
        "storm_hs_m": storm["hs_m"],
        "storm_tp_s": storm["tp_s"],
        "storm_dir_deg": storm["dir_deg"],
        "gale_h": gale["duration_h"],
        "gale_wind_m_s": gale["wind_speed_m_s"],
        "gale_fetch_km": gale["fetch_km"],
        "rotated_hs_pct": 100.0 * (rotated["hs_factor"] - 1.0),
        "rotated_turn_deg": rotated["dir_shift_deg"],
    }


def measure(folder: Path = HERE) -> dict[str, float]:
    """Every measured number, by name."""
    return measure_coast(folder) | measure_waves(folder) | measure_study(folder)


if __name__ == "__main__":
    for key, value in measure().items():
        print(f"{key:22s} {value:.4f}")
