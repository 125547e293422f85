"""Writers: GeoJSON (RFC 7946, WGS 84), one GeoPackage in the working CRS, CSV, the run record.

Outputs appear whole or not at all: :func:`write_run` builds the whole output folder beside the
old one and swaps the two in one step (:func:`shoreline.folders.publish`); a failed run leaves
earlier output untouched.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import sys
from collections.abc import Callable, Mapping
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

import geopandas as gpd
import numpy as np
import pandas as pd
import shapely
from shapely.ops import substring

from shoreline import __version__
from shoreline.cautions import CAUTION, caution_lines
from shoreline.climate import joint_histogram, largest, mean_height_m
from shoreline.coast import CoastLines, Transects, chainage_positions, interp_extrapolate
from shoreline.folders import publish
from shoreline.run import RunResult, ScenarioResult
from shoreline.transport import SECONDS_PER_YEAR

#: Columns of the hotspot layer, in order.
HOTSPOT_COLUMNS = (
    "hotspot_id",
    "class",
    "part_id",
    "start_chainage_m",
    "end_chainage_m",
    "length_m",
    "mean_rate_m_per_yr",
    "peak_rate_m_per_yr",
    "volume_m3_per_yr",
)


#: Hotspot columns of a storm event, whose hotspots are runs of shoreline shift, not rate.
EVENT_HOTSPOT_NAMES = {
    "mean_rate_m_per_yr": "mean_shift_m",
    "peak_rate_m_per_yr": "peak_shift_m",
    "volume_m3_per_yr": "volume_m3",
}


def key_settings(result: RunResult) -> dict[str, Any]:
    """The settings a reader of one layer needs to know how it was made."""
    st = result.study.settings
    return {
        "tool": f"shoreline {__version__}",
        "study_file": result.study.path.name,
        "working_crs": crs_label(result.transects.working_crs),
        "formulas": st["model"]["formulas"],
        "primary": st["model"]["primary"],
        "breaker_index": st["model"]["breaker_index"],
        "cerc_k": st["model"]["cerc_k"],
        "closure_depth_m": st["model"]["closure_depth_m"],
        "berm_height_m": st["model"]["berm_height_m"],
        "d50_mm": st["sediment"]["d50_mm"],
        "spacing_m": st["coast"]["spacing_m"],
        "orientation_window_m": st["coast"]["orientation_window_m"],
        "stable_band_m_per_yr": st["classify"]["stable_band_m_per_yr"],
        "units": "SI; q positive toward increasing chainage; rate positive = accretion",
    }


#: Yearly columns an event's outputs leave out: ``shoreline_shift_m`` and
#: ``volume_change_m3_per_m`` (which is minus the along-shore gradient of the transport over the
#: event) say the same for the event.
EVENT_DROPPED_COLUMNS = ("rate_m_per_yr", "dqdx_m2_per_yr")


def is_event(scenario: ScenarioResult) -> bool:
    """True for a storm event (a scenario with ``duration_h``): its numbers are for the event."""
    return "shoreline_shift_m" in scenario.columns


def event_units(duration_h: float) -> str:
    """The ``units`` text of an event's settings: every number is for the event, not per year."""
    return (
        f"SI; a storm event of {duration_h:g} h: every number is for the event as a whole, "
        "not per year: shoreline_shift_m [m] and volume_change_m3_per_m [m3/m] over the event, "
        "q_*_m3 [m3] the volume carried along the shore while it lasts (+ toward increasing "
        "chainage); shift positive = seaward (accretion)"
    )


def event_columns(columns: Mapping[str, Any], duration_h: float) -> dict[str, Any]:
    """An event's columns in the event's units: what every writer writes for a storm event.

    A column ``<name>_m3_per_yr`` (the mean transport rate while the storm lasts, expressed per
    year) becomes ``<name>_m3``: the volume over the event, rate times duration
    (``q_cerc_m3``, ``q_gross_m3``, ``trapped_m3``, ...). The yearly rate and gradient
    (:data:`EVENT_DROPPED_COLUMNS`) are left out. Other columns pass unchanged.

    Raises
    ------
    ValueError
        For any other column per year, which has no event unit here yet.

    Examples
    --------
    >>> cols = event_columns({"q_cerc_m3_per_yr": np.array([8766.0]), "rate_m_per_yr": 1.0}, 1)
    >>> {k: v.tolist() for k, v in cols.items()}
    {'q_cerc_m3': [1.0]}
    """
    years = duration_h * 3600.0 / SECONDS_PER_YEAR
    out: dict[str, Any] = {}
    for name, values in columns.items():
        if name in EVENT_DROPPED_COLUMNS:
            continue
        if name.endswith("_m3_per_yr"):
            out[name.removesuffix("_per_yr")] = np.asarray(values, dtype=float) * years
        elif "per_yr" in name:
            raise ValueError(f"column {name!r} has no unit for a storm event (see event_columns)")
        else:
            out[name] = values
    return out


def _plain_zero(values: Any) -> Any:
    """Float arrays with -0.0 written as 0.0 (other values unchanged)."""
    array = np.asarray(values)
    return array + 0.0 if array.dtype.kind == "f" else values


def layer_columns(scenario: ScenarioResult) -> dict[str, Any]:
    """The transect columns of a scenario as every writer writes them.

    A storm event's columns in the event's units (:func:`event_columns`); no negative zeros;
    ``hotspot_id`` a nullable integer, NULL (empty in CSV) where the transect is in no hotspot.
    """
    columns = dict(scenario.columns)
    if is_event(scenario):
        columns = event_columns(columns, scenario.info["event_duration_h"])
    out = {name: _plain_zero(values) for name, values in columns.items()}
    if "hotspot_id" in out:
        ids = np.asarray(out["hotspot_id"], dtype="int64")
        out["hotspot_id"] = pd.arrays.IntegerArray(ids, mask=ids < 0)
    return out


def scenario_settings(result: RunResult, scenario: ScenarioResult) -> dict[str, Any]:
    """:func:`key_settings` of one scenario; an event's speak of the event, not of years."""
    settings = key_settings(result) | {"scenario": scenario.name}
    if is_event(scenario):
        duration_h = scenario.info["event_duration_h"]
        del settings["stable_band_m_per_yr"]
        settings |= {
            "event_stable_band_m": result.study.settings["classify"]["event_stable_band_m"],
            "duration_h": duration_h,
            "units": event_units(duration_h),
        }
    return settings


def crs_label(crs: Any) -> str:
    """``EPSG:nnnn`` where the CRS has a code, else its name."""
    code = crs.to_epsg()
    return f"EPSG:{code}" if code else crs.name


def sha256_of(path: Path) -> str:
    """SHA-256 of a file's bytes, as hex."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def input_files(result: RunResult) -> dict[str, Path]:
    """Every input file of a run, keyed by its path as the study gives it.

    The study file by its name; every other file by its path as written in the study (relative
    to the study's folder); a Shapefile brings its sidecar files. So the record stays the same
    when the study folder is moved or shared.
    """
    study = result.study
    settings = study.settings
    named = {study.path.name: study.path}
    waves = settings["waves"]["file"]
    waves = waves if isinstance(waves, list) else [waves]
    record = []  # a glob or a list of files: every file it stands for
    for name in waves:
        if name and any(c in Path(name).name for c in "*?["):
            found = sorted((study.folder / name).parent.glob(Path(name).name))
            record += [os.path.relpath(f, study.folder) for f in found]
        else:
            record.append(name)
    written = [
        settings["coast"]["file"],
        settings["coast"].get("land"),
        *record,
        settings.get("structures", {}).get("file"),
        *(s.get("file") for s in study.scenarios),
    ]
    for name in written:
        if not name:
            continue
        path = study.folder / name
        named[name] = path
        if path.suffix.lower() == ".shp":
            stem = path.with_suffix("")
            for side in sorted(stem.parent.glob(stem.name + ".*")):
                if side.suffix.lower() != ".shp":
                    named[str(Path(name).with_name(side.name))] = side
    return {name: path for name, path in named.items() if path.is_file()}


def _jsonable(value: Any) -> Any:
    """Plain JSON values: numpy scalars to Python, NaN and inf to None."""
    if isinstance(value, dict):
        return {str(k): _jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return [_jsonable(v) for v in value.tolist()]
    if isinstance(value, (np.bool_, bool)):
        return bool(value)
    if isinstance(value, (np.integer,)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        v = float(value) + 0.0  # no negative zero
        return v if math.isfinite(v) else None
    if isinstance(value, Path):
        return str(value)
    return value


def write_json(path: Path, data: dict[str, Any]) -> None:
    """Write a JSON file (UTF-8, indented, NaN as null)."""
    path.write_text(json.dumps(_jsonable(data), indent=2, ensure_ascii=False) + "\n", "utf-8")


def write_geojson(path: Path, frame: gpd.GeoDataFrame, members: dict[str, Any]) -> None:
    """Write an RFC 7946 GeoJSON FeatureCollection in WGS 84 with extra top-level members.

    Coordinates are lon/lat (WGS 84) rounded to 1e-7 degree (about 1 cm); there is no ``crs``
    member (RFC 7946 section 4); NaN properties are written as null.
    """
    lonlat = frame.to_crs(4326)
    data = json.loads(lonlat.to_json(na="null", drop_id=True, to_wgs84=True))
    geoms = shapely.set_precision(lonlat.geometry.to_numpy(), 1e-7)
    for feature, geom in zip(data["features"], geoms, strict=True):
        feature["geometry"] = json.loads(shapely.to_geojson(geom))
    data.pop("crs", None)
    collection = {"type": "FeatureCollection", **_jsonable(members), "features": data["features"]}
    path.write_text(json.dumps(collection, ensure_ascii=False) + "\n", "utf-8")


def chainage_to_grid(transects: Transects, coast: CoastLines, part: int) -> Callable:
    """A function mapping ground chainage on a part to grid distance along its geometry."""
    grid, ground = chainage_positions(coast, transects, part)
    length = coast.parts[part].length
    return lambda s: np.clip(interp_extrapolate(s, ground, grid), 0.0, length)


def hotspot_geometry(
    coast: CoastLines, transects: Transects, h: Any, to_grid: Callable | None = None
) -> shapely.LineString:
    """The stretch of shoreline of one hotspot, in the working CRS.

    ``to_grid`` is :func:`chainage_to_grid` of the hotspot's part (computed if not given).
    """
    line = coast.parts[h.part_id]
    to_grid = to_grid or chainage_to_grid(transects, coast, h.part_id)
    a, b = (float(v) for v in to_grid([h.start_chainage_m, h.end_chainage_m]))
    if coast.closed[h.part_id]:
        if h.start_chainage_m == 0.0 and h.members.size == int(
            np.sum(transects.part_id == h.part_id)
        ):
            return line  # the whole ring
        if h.start_chainage_m > h.end_chainage_m:  # the run wraps past chainage 0
            return shapely.line_merge(
                shapely.union(substring(line, a, line.length), substring(line, 0.0, b))
            )
    return substring(line, a, b)


def transect_frame(
    result: RunResult, scenario: ScenarioResult, length_m: float
) -> gpd.GeoDataFrame:
    """The transect layer of one scenario, in the working CRS."""
    t = result.transects
    return gpd.GeoDataFrame(layer_columns(scenario), geometry=t.lines(length_m), crs=t.working_crs)


def hotspot_frame(result: RunResult, scenario: ScenarioResult) -> gpd.GeoDataFrame:
    """The hotspot layer of one scenario, in the working CRS (an empty layer keeps its schema)."""
    rows = {c: [] for c in HOTSPOT_COLUMNS}
    geoms = []
    mappers: dict[int, Callable] = {}
    for h in scenario.hotspots:
        if h.part_id not in mappers:
            mappers[h.part_id] = chainage_to_grid(result.transects, result.coast, h.part_id)
        rows["hotspot_id"].append(h.hotspot_id)
        rows["class"].append(h.klass)
        for c in HOTSPOT_COLUMNS[2:]:
            rows[c].append(getattr(h, c))
        geoms.append(hotspot_geometry(result.coast, result.transects, h, mappers[h.part_id]))
    frame = pd.DataFrame(rows).astype(
        {"hotspot_id": "int64", "part_id": "int64", "class": "str"}
        | {c: "float64" for c in HOTSPOT_COLUMNS[3:]}
    )
    frame[list(HOTSPOT_COLUMNS[3:])] += 0.0  # no negative zero
    if is_event(scenario):  # a storm event: hotspots of shoreline shift
        frame = frame.rename(columns=EVENT_HOTSPOT_NAMES)
    return gpd.GeoDataFrame(frame, geometry=gpd.GeoSeries(geoms, crs=result.transects.working_crs))


def structure_frame(result: RunResult, scenario: ScenarioResult) -> gpd.GeoDataFrame:
    """The structures of a run with what each traps in one scenario (working CRS)."""
    st = result.structures
    trap = scenario.trapping
    zeros = np.zeros(len(st))
    columns = {
        "structure_id": st.structure_id,
        "part_id": st.part_id,
        "chainage_m": st.chainage_m,
        "bypass": st.bypass,
        "q_arriving_m3_per_yr": trap.q_arriving_m3_per_yr if trap else zeros,
        "q_passing_m3_per_yr": trap.q_passing_m3_per_yr if trap else zeros,
        "trapped_m3_per_yr": trap.trapped_m3_per_yr if trap else zeros,
    }
    if is_event(scenario):  # volumes over the event (q_arriving_m3, ...)
        columns = event_columns(columns, scenario.info["event_duration_h"])
    return gpd.GeoDataFrame(
        {name: _plain_zero(values) for name, values in columns.items()},
        geometry=list(st.lines),
        crs=result.transects.working_crs,
    )


def shoreline_frame(result: RunResult) -> gpd.GeoDataFrame:
    """The shoreline parts as read, in the working CRS."""
    coast = result.coast
    return gpd.GeoDataFrame(
        {
            "part_id": np.arange(len(coast.parts)),
            "closed": np.asarray(coast.closed, dtype=bool),
            "length_m": shapely.length(np.asarray(coast.parts, dtype=object)),
        },
        geometry=list(coast.parts),
        crs=result.transects.working_crs,
    )


#: The plain-text file beside the tables of each scenario folder: the caution and settings that
#: a CSV file cannot carry without breaking its readers.
README_NAME = "README.txt"


def write_about(gpkg: Path, settings: dict[str, Any]) -> None:
    """Add the ``about`` table (the caution and the settings) to a GeoPackage."""
    import pyogrio

    about = pd.DataFrame(
        {"key": ["caution", "settings"], "value": [CAUTION, json.dumps(_jsonable(settings))]}
    )
    pyogrio.write_dataframe(about, gpkg, layer="about", driver="GPKG")


def write_csv(path: Path, table: pd.DataFrame) -> None:
    """Write a plain CSV table: one header row, no comment lines, no negative zeros.

    Floats are written to 6 significant figures; a column already formatted as text (lon/lat
    to 7 decimals) is written as it is; missing values are empty cells.
    """
    table = table.copy()
    floats = table.select_dtypes("float").columns
    table[floats] = table[floats] + 0.0
    table.to_csv(path, index=False, float_format="%.6g", encoding="utf-8", lineterminator="\n")


def write_readme(path: Path, scenario: ScenarioResult, settings: dict[str, Any]) -> None:
    """Write the scenario folder's README.txt: the caution, what the tables are, the settings."""
    lines = [
        f'Scenario "{scenario.name}": tables written by {settings["tool"]}',
        "",
        "CAUTION",
        *caution_lines(92),
        "",
        "The CSV tables of this folder have one header row and no comment lines, so that a",
        "spreadsheet, pandas or a GIS opens them as they are. This file carries what they",
        "cannot: the caution above and how they were made (below). The GeoJSON files, the",
        "GeoPackage (table about), summary.json and the figures carry the caution themselves.",
        "",
        "transects.csv     one row per transect: the properties of transects.geojson, with",
        "                  lon_deg, lat_deg of its shore point (WGS 84, to 1e-7 degree)",
        "wave_climate.csv  hours of offshore waves by 10-degree direction sector and height class",
        "",
    ]
    if is_event(scenario):
        duration_h = scenario.info["event_duration_h"]
        lines += [
            f"A STORM EVENT of {duration_h:g} h: every number here is for the event as a whole,",
            "not per year: shoreline_shift_m [m] and volume_change_m3_per_m [m3/m] over the",
            "event; q_<formula>_m3, q_gross_m3, q_pos_m3, q_neg_m3 [m3]: the volume carried",
            "along the shore past each transect while the storm lasts.",
            "",
        ]
    lines += [
        "Every column is explained in docs/outputs.md of the shoreline tool.",
        "",
        "Settings:",
        json.dumps(_jsonable(settings), indent=2, ensure_ascii=False),
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def write_scenario(folder: Path, result: RunResult, scenario: ScenarioResult) -> list[Path]:
    """Write one scenario's layers, CSV, wave climate, README.txt and summary into ``folder``.

    A storm event's files speak in the event's units (:func:`layer_columns`).
    """
    folder.mkdir(parents=True, exist_ok=True)
    st = result.study.settings
    length = st["coast"]["transect_length_m"]
    transects = transect_frame(result, scenario, length)
    hotspots = hotspot_frame(result, scenario)
    shore = shoreline_frame(result)
    settings = scenario_settings(result, scenario)
    members = {"name": "", "caution": CAUTION, "settings": settings}
    written = []
    for name, frame in (("transects", transects), ("hotspots", hotspots)):
        path = folder / f"{name}.geojson"
        write_geojson(path, frame, members | {"name": name})
        written.append(path)
    layers = [("shoreline", shore), ("transects", transects), ("hotspots", hotspots)]
    if result.structures is not None:
        frame = structure_frame(result, scenario)
        path = folder / "structures.geojson"
        write_geojson(path, frame, members | {"name": "structures"})
        written.append(path)
        layers.append(("structures", frame))
    if result.land:  # the study's extra land, for maps (polygons only)
        land = gpd.GeoDataFrame(
            {"land_id": np.arange(len(result.land))},
            geometry=list(result.land),
            crs=result.transects.working_crs,
        )
        layers.append(("land", land))
    gpkg = folder / "results.gpkg"
    for name, frame in layers:
        # an empty layer still declares its geometry type (the fields come from the columns)
        kind = {"geometry_type": "LineString"} if frame.empty else {}
        frame.to_file(gpkg, layer=name, driver="GPKG", engine="pyogrio", **kind)
    write_about(gpkg, settings)
    written.append(gpkg)
    csv_path = folder / "transects.csv"
    origin = gpd.GeoSeries(
        shapely.points(result.transects.x_m, result.transects.y_m),
        crs=result.transects.working_crs,
    ).to_crs(4326)
    table = pd.DataFrame(layer_columns(scenario))
    table.insert(3, "lon_deg", [f"{v:.7f}" for v in origin.x.to_numpy()])
    table.insert(4, "lat_deg", [f"{v:.7f}" for v in origin.y.to_numpy()])
    write_csv(csv_path, table)
    written.append(csv_path)
    climate_path = folder / "wave_climate.csv"
    climate = pd.DataFrame(
        joint_histogram(scenario.climate),
        columns=["dir_from_deg_lo", "dir_from_deg_hi", "hs_m_lo", "hs_m_hi", "hours"],
    )
    write_csv(climate_path, climate)
    written.append(climate_path)
    write_readme(folder / README_NAME, scenario, settings)
    written.append(folder / README_NAME)
    write_json(folder / "summary.json", scenario_summary(result, scenario))
    written.append(folder / "summary.json")
    if "scenario" in scenario.info:
        write_json(folder / "scenario.json", scenario_record(scenario))
        written.append(folder / "scenario.json")
    return written


def scenario_record(scenario: ScenarioResult) -> dict[str, Any]:
    """The scenario.json of a scenario folder: the offshore waves it used and its changes."""
    return {
        "name": scenario.name,
        **scenario.info["scenario"],
        "closure_depth_m": float(np.mean(scenario.closure_depth_m)),
        "versus_reference": scenario.info.get("versus_reference", {}),
        "caution": CAUTION,
    }


def mean_normal_az_deg(normal_az_deg: np.ndarray) -> float:
    """Vector mean of azimuths [deg, 0-360).

    Examples
    --------
    >>> round(mean_normal_az_deg(np.array([350.0, 10.0])), 6) % 360
    0.0
    """
    rad = np.radians(normal_az_deg)
    return float(np.degrees(np.arctan2(np.sin(rad).mean(), np.cos(rad).mean())) % 360.0)


def scenario_summary(result: RunResult, scenario: ScenarioResult) -> dict[str, Any]:
    """The summary.json of one scenario (see docs/outputs.md)."""
    st = result.study.settings
    c = scenario.climate
    counts = {"erosion": 0, "accretion": 0}
    for h in scenario.hotspots:
        counts[h.klass] += 1
    waves_info: dict[str, Any] = {"kind": c.kind, "hours": c.total_hours, "source": c.source}
    if c.kind == "steady" and c.n_points > 1:  # wind waves over each transect's own fetch
        waves_info |= {
            "hs_m": float(np.nanmax(c.hs_m)),
            "tp_s": float(np.nanmax(c.tp_s)),
            "dir_deg": float(c.dir_deg.reshape(-1)[0]),
            "per_transect": True,
        }
    elif c.kind == "steady":
        waves_info |= {"hs_m": c.hs_m[0], "tp_s": c.tp_s[0], "dir_deg": c.dir_deg[0]}
    else:
        waves_info |= {
            "records": len(c),
            "records_skipped": c.skipped,
            "hs_mean_m": float(np.mean(mean_height_m(c))),
            "hs_max_m": largest(c, "hs_m"),
        }
    waves_info["depth_m"] = "deep" if math.isinf(c.depth_m) else c.depth_m
    event = is_event(scenario)
    # an event's strongest erosion is its most negative shoreline shift over the event [m]
    key, column = ("shift_m", "shoreline_shift_m") if event else ("rate_m_per_yr", "rate_m_per_yr")
    metric = scenario.columns[column]
    worst = int(np.nanargmin(metric)) if np.isfinite(metric).any() else 0
    crs = result.transects.working_crs
    bands = (
        {"duration_h": scenario.info["event_duration_h"]}
        if event
        else {"stable_band_m_per_yr": st["classify"]["stable_band_m_per_yr"]}
    )
    return {
        "scenario": scenario.name,
        "primary": st["model"]["primary"],
        "formulas": st["model"]["formulas"],
        **bands,
        "min_hotspot_length_m": st["classify"]["min_hotspot_length_m"],
        "closure_depth_m": float(np.mean(scenario.closure_depth_m)),
        "closure_depth_range_m": [
            float(np.min(scenario.closure_depth_m)),
            float(np.max(scenario.closure_depth_m)),
        ],
        "event_stable_band_m": st["classify"]["event_stable_band_m"],
        "berm_height_m": st["model"]["berm_height_m"],
        "working_crs": crs_label(crs),
        "working_crs_name": crs.name,
        "mean_normal_az_deg": mean_normal_az_deg(result.transects.normal_az_deg),
        "n_transects": len(result.transects),
        "hotspots": counts,
        "strongest_erosion": {
            key: float(metric[worst]),
            "transect_id": int(scenario.columns["transect_id"][worst]),
            "part_id": int(scenario.columns["part_id"][worst]),
            "chainage_m": float(scenario.columns["chainage_m"][worst]),
        },
        "waves": waves_info,
        "event": event,
        "info": scenario.info,
        "caution": CAUTION,
    }


def run_record(result: RunResult, command: list[str], started_utc: str) -> dict[str, Any]:
    """The run.json record: version, study as read and as used, input hashes, counts, timings."""
    climate = result.scenarios[0].climate
    return {
        "tool": "shoreline",
        "version": __version__,
        "command": command,
        "python": sys.version.split()[0],
        "started_utc": started_utc,
        "study_file": result.study.path.name,
        "study": result.study.raw,
        "settings": result.study.settings,
        "inputs": {name: sha256_of(p) for name, p in input_files(result).items()},
        "working_crs": crs_label(result.transects.working_crs),
        "working_crs_name": result.transects.working_crs.name,
        "counts": {
            "transects": len(result.transects),
            "shore_parts": len(result.coast.parts),
            "records": len(climate),
            "records_skipped": climate.skipped,
        },
        "timings_s": {k: round(v, 4) for k, v in result.timings_s.items()},
        "warnings": result.warnings,
        "calibration": result.calibration,
        "scenarios": [s.name for s in result.scenarios],
        "caution": CAUTION,
    }


def utc_now() -> str:
    """The current time, UTC, ISO 8601 to the second."""
    return datetime.now(timezone.utc).replace(microsecond=0).isoformat()


def write_run(
    result: RunResult,
    out_dir: Path,
    command: list[str],
    started_utc: str,
    extra: Callable[[Path], Any] | None = None,
    notes: list[str] | None = None,
) -> list[Path]:
    """Write every scenario folder and run.json as the whole of ``out_dir`` (see publish).

    ``extra(tmp)`` may add more (figures, the report) before the new folder is swapped in;
    ``notes`` collects lines for the user that are no failure.
    """
    names: list[Path] = []

    def build(tmp: Path) -> None:
        for scenario in result.scenarios:
            written = write_scenario(tmp / scenario.name, result, scenario)
            names.extend(out_dir / p.relative_to(tmp) for p in written)
        record = run_record(result, command, started_utc)
        # the numbers of each scenario, fingerprinted: a re-run with the same inputs and
        # settings gives the same fingerprints (the table holds no times or paths)
        record["results_sha256"] = {
            s.name: sha256_of(tmp / s.name / "transects.csv") for s in result.scenarios
        }
        write_json(tmp / "run.json", record)
        names.append(out_dir / "run.json")
        if extra is not None:
            extra(tmp)

    publish(build, out_dir, command, notes)
    return names


def write_transects_only(
    coast: CoastLines,
    transects: Transects,
    length_m: float,
    out_dir: Path,
    settings: dict,
    command: list[str] | None = None,
    notes: list[str] | None = None,
) -> list[Path]:
    """Write just the transects (GeoJSON and GeoPackage) as the whole of ``out_dir``."""
    cols = {
        "transect_id": transects.transect_id,
        "part_id": transects.part_id,
        "chainage_m": transects.chainage_m,
        "normal_az_deg": transects.normal_az_deg,
    }
    frame = gpd.GeoDataFrame(cols, geometry=transects.lines(length_m), crs=transects.working_crs)
    members = {"name": "transects", "caution": CAUTION, "settings": settings}
    paths = [out_dir / "transects.geojson", out_dir / "transects.gpkg"]

    def build(tmp: Path) -> None:
        write_geojson(tmp / "transects.geojson", frame, members)
        frame.to_file(tmp / "transects.gpkg", layer="transects", driver="GPKG")
        write_about(tmp / "transects.gpkg", settings)

    publish(build, out_dir, command, notes)
    return paths
