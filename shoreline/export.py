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
from shoreline.run import RunResult, ScenarioResult, min_hotspot_length_m
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
        "orientation_window_m": result.transects.orientation_window_m,
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


def relative_paths(data: Any, folder: Path) -> Any:
    """``data`` with every path under ``folder`` written relative to it (in any text value).

    A record moved or shared with its study folder keeps its meaning; no path of the machine
    that ran it is written.

    Examples
    --------
    >>> relative_paths({"source": "/a/b/waves.csv and 2 more"}, Path("/a/b"))
    {'source': 'waves.csv and 2 more'}
    """
    prefix = str(Path(folder).resolve()) + os.sep
    if isinstance(data, dict):
        return {k: relative_paths(v, folder) for k, v in data.items()}
    if isinstance(data, (list, tuple)):
        return [relative_paths(v, folder) for v in data]
    if isinstance(data, str):
        return data.replace(prefix, "")
    return data


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
        feature["geometry"] = None if geom is None else json.loads(shapely.to_geojson(geom))
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
    frame = ensemble_hotspot_columns(frame, scenario)
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
    if scenario.projection is not None:
        lines += [
            "projection/       the forward projection: shorelines.geojson (one line per report",
            "                  year and shore part), positions.nc (CF netCDF: shift and transport",
            "                  per year and transect), figures; transects.csv has shift_<n>yr_m",
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
    if scenario.projection is not None:
        written += write_projection(folder, result, scenario, settings)
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
    here = result.study.folder
    write_json(folder / "summary.json", relative_paths(scenario_summary(result, scenario), here))
    written.append(folder / "summary.json")
    if "scenario" in scenario.info:
        write_json(folder / "scenario.json", relative_paths(scenario_record(scenario), here))
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
        "min_hotspot_length_m": min_hotspot_length_m(result.study, result.transects),
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
        **({} if scenario.projection is None else {"projection": projection_summary(scenario)}),
        "caution": CAUTION,
    } | ensemble_summary(scenario)


# --------------------------------------------------------------------------------------------
# The forward projection (shoreline/projection.py): OUT/<scenario>/projection/
# --------------------------------------------------------------------------------------------

#: Folder of a scenario's projection outputs.
PROJECTION_FOLDER = "projection"

#: Layer of the projected shorelines in the scenario's GeoPackage.
PROJECTION_LAYER = "projected_shorelines"


def projection_settings(scenario: ScenarioResult, settings: dict[str, Any]) -> dict[str, Any]:
    """The settings of a projection output: the scenario's and the projection's."""
    return settings | {
        "projection": scenario.projection.settings,
        "units": "SI; shift positive seaward (accretion), negative landward; years after the "
        "start of the projection (years of 365.25 days)",
    }


def projection_summary(scenario: ScenarioResult) -> dict[str, Any]:
    """The ``projection`` member of summary.json (see docs/outputs.md)."""
    proj = scenario.projection
    traj = proj.trajectory
    per_year = {}
    for year in proj.report_years:
        shift = traj.shift_m[year]
        ok = np.isfinite(shift)
        worst = int(np.nanargmin(np.where(ok, shift, np.inf))) if ok.any() else 0
        per_year[str(year)] = {
            "shift_min_m": float(np.nanmin(shift)) if ok.any() else None,
            "shift_max_m": float(np.nanmax(shift)) if ok.any() else None,
            "shift_mean_m": float(np.nanmean(shift)) if ok.any() else None,
            "largest_retreat_transect_id": int(scenario.columns["transect_id"][worst]),
            "largest_retreat_chainage_m": float(scenario.columns["chainage_m"][worst]),
            "sea_level_rise_m": float(traj.sea_level_m[year]),
            "bruun_retreat_mean_m": float(np.nanmean(proj.bruun_retreat_m[year])),
        }
        if traj.bypass.shape[1]:
            per_year[str(year)]["structure_bypass"] = traj.bypass[year].tolist()
    out = {
        "settings": proj.settings,
        "report_years": proj.report_years,
        "years": per_year,
        "nourishments": proj.nourishments,
        "warnings": proj.warnings,
    }
    if proj.setback is not None:
        out["setback"] = proj.setback
    return out


def projection_frame(result: RunResult, scenario: ScenarioResult) -> gpd.GeoDataFrame:
    """The projected shorelines: one feature per report year and shore part (working CRS)."""
    from shoreline.projection import shore_lines

    excluded = np.isin(scenario.columns["shore_type"], ("enclosed", "data_edge", "excluded"))
    rows = shore_lines(scenario.projection, result.transects, excluded)
    start = scenario.projection.settings.get("start_year")
    geoms = []
    for row in rows:
        lines = [shapely.linestrings(xy) for xy in row["lines"]]
        if not lines:
            geoms.append(None)
        elif len(lines) == 1:
            geoms.append(lines[0])
        else:
            geoms.append(shapely.multilinestrings(lines))
    columns: dict[str, Any] = {
        "year": np.array([r["year"] for r in rows], dtype="int64"),
        "part_id": np.array([r["part_id"] for r in rows], dtype="int64"),
    }
    if start is not None:
        columns["calendar_year"] = columns["year"] + int(start)
    columns["caution"] = [CAUTION] * len(rows)
    frame = gpd.GeoDataFrame(columns, geometry=geoms, crs=result.transects.working_crs)
    return frame[frame.geometry.notna()].reset_index(drop=True)


def write_projection(
    folder: Path, result: RunResult, scenario: ScenarioResult, settings: dict[str, Any]
) -> list[Path]:
    """Write a scenario's projection: shorelines.geojson, positions.nc, a GeoPackage layer.

    ``folder`` is the scenario folder (its ``results.gpkg`` already written): the files go in
    ``folder/projection/`` and the layer :data:`PROJECTION_LAYER` into ``results.gpkg``.
    """
    out = folder / PROJECTION_FOLDER
    out.mkdir(parents=True, exist_ok=True)
    meta = projection_settings(scenario, settings)
    frame = projection_frame(result, scenario)
    path = out / "shorelines.geojson"
    write_geojson(path, frame, {"name": "shorelines", "caution": CAUTION, "settings": meta})
    kind = {"geometry_type": "MultiLineString"} if frame.empty else {}
    frame.to_file(
        folder / "results.gpkg", layer=PROJECTION_LAYER, driver="GPKG", engine="pyogrio", **kind
    )
    nc = out / "positions.nc"
    write_positions_netcdf(nc, result, scenario, meta)
    return [path, nc]


def _nc_text(value: Any) -> Any:
    """A text attribute as UTF-8 bytes (netCDF-3 text is bytes); other values unchanged."""
    return value.encode("utf-8") if isinstance(value, str) else value


#: The fill value of the netCDF variables (netCDF's default for doubles, CF ``_FillValue``).
NC_FILL = 9.969209968386869e36


def write_positions_netcdf(
    path: Path, result: RunResult, scenario: ScenarioResult, settings: dict[str, Any]
) -> None:
    """Write ``positions.nc``: the projection per year and transect, CF-1.8, netCDF-3 classic.

    Dimensions ``time`` (every whole year from 0 to the horizon, so every report year) and
    ``transect`` (and ``structure`` with structures). Written with :mod:`scipy.io` (no
    further dependency); any CF reader (xarray with no options) reads it.
    """
    from scipy.io import netcdf_file

    proj = scenario.projection
    traj = proj.trajectory
    t = result.transects
    n = len(t)
    start = proj.settings.get("start_year")
    lonlat = gpd.GeoSeries(shapely.points(t.x_m, t.y_m), crs=t.working_crs).to_crs(4326)
    tmp = path.with_name(f".{path.name}.tmp")
    with netcdf_file(tmp, "w", version=1) as nc:
        nc.Conventions = "CF-1.8"
        nc.title = _nc_text(f"shoreline projection, scenario {scenario.name}")
        nc.source = _nc_text(settings.get("tool", "shoreline"))
        nc.caution = _nc_text(CAUTION)
        nc.settings = json.dumps(_jsonable(settings))
        nc.history = _nc_text(f"{utc_now()} written by {settings.get('tool', 'shoreline')}")
        nc.createDimension("time", traj.years.size)
        nc.createDimension("transect", n)

        def var(name, kind, dims, values, **attrs):
            v = nc.createVariable(name, kind, dims)
            data = np.asarray(values, dtype=float if kind == "d" else None)
            if kind == "d":
                data = np.where(np.isfinite(data), data, NC_FILL)
                v._FillValue = NC_FILL
            v[:] = data
            for key, value in attrs.items():
                setattr(v, key, _nc_text(value))
            return v

        time_attrs = {"standard_name": "time", "long_name": "time of the projection", "axis": "T"}
        if start is not None:
            time_attrs |= {
                "units": f"days since {int(start):04d}-01-01 00:00:00",
                "calendar": "proleptic_gregorian",
            }
        else:
            time_attrs |= {
                "units": "days",
                "comment": "days after the start ([projection] start_year not given)",
            }
        var("time", "d", ("time",), traj.years * 365.25, **time_attrs)
        var(
            "years_after_start",
            "d",
            ("time",),
            traj.years,
            long_name="years after the start of the projection",
            units="1",
            comment="years of 365.25 days",
        )
        var("transect", "i", ("transect",), t.transect_id, long_name="transect id")
        var("part_id", "i", ("transect",), t.part_id, long_name="shore part")
        var(
            "chainage_m",
            "d",
            ("transect",),
            t.chainage_m,
            units="m",
            long_name="distance along the shore part, on the ground",
        )
        var(
            "normal_az_deg",
            "d",
            ("transect",),
            t.normal_az_deg,
            units="degree",
            long_name="seaward normal at the start, clockwise from true north",
        )
        var(
            "lon",
            "d",
            ("transect",),
            lonlat.x.to_numpy(),
            units="degrees_east",
            standard_name="longitude",
            long_name="longitude of the transect's shore point",
        )
        var(
            "lat",
            "d",
            ("transect",),
            lonlat.y.to_numpy(),
            units="degrees_north",
            standard_name="latitude",
            long_name="latitude of the transect's shore point",
        )
        crs = nc.createVariable("crs", "i", ())
        crs.crs_wkt = _nc_text(t.working_crs.to_wkt())
        crs.long_name = _nc_text(f"working CRS {crs_label(t.working_crs)}")
        var(
            "x",
            "d",
            ("transect",),
            t.x_m,
            units="m",
            standard_name="projection_x_coordinate",
            long_name="shore point at the start, working CRS",
            grid_mapping="crs",
        )
        var(
            "y",
            "d",
            ("transect",),
            t.y_m,
            units="m",
            standard_name="projection_y_coordinate",
            long_name="shore point at the start, working CRS",
            grid_mapping="crs",
        )
        var(
            "shoreline_shift_m",
            "d",
            ("time", "transect"),
            traj.shift_m,
            units="m",
            long_name="shoreline shift since the start along the transect, seaward positive",
            coordinates="lon lat",
        )
        var(
            "q_net_m3_per_yr",
            "d",
            ("time", "transect"),
            traj.q_net_m3_per_yr,
            units="m3 yr-1",
            long_name="net longshore transport of the primary formula on the shoreline of that "
            "time, mean climate of the record, positive toward increasing chainage",
            coordinates="lon lat",
        )
        var(
            "bruun_retreat_m",
            "d",
            ("time", "transect"),
            proj.bruun_retreat_m,
            units="m",
            long_name="shoreline shift by the Bruun rule alone (sea-level rise), seaward positive",
            coordinates="lon lat",
        )
        var(
            "sea_level_rise_m",
            "d",
            ("time",),
            traj.sea_level_m,
            units="m",
            long_name="rise of the sea since the start",
        )
        if traj.bypass.shape[1]:
            nc.createDimension("structure", traj.bypass.shape[1])
            var(
                "structure_chainage_m",
                "d",
                ("structure",),
                result.structures.chainage_m,
                units="m",
                long_name="chainage of the structure's crossing",
            )
            var(
                "structure_part_id",
                "i",
                ("structure",),
                result.structures.part_id,
                long_name="shore part the structure crosses",
            )
            var(
                "structure_bypass",
                "d",
                ("time", "structure"),
                traj.bypass,
                units="1",
                long_name="share of the arriving transport passing the structure",
            )
    tmp.replace(path)


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
    } | ensemble_record(result)


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
    progress: Callable[[int], None] | None = None,
) -> list[Path]:
    """Write every scenario folder and run.json as the whole of ``out_dir`` (see publish).

    ``extra(tmp)`` may add more (figures, the report) before the new folder is swapped in;
    ``notes`` collects lines for the user that are no failure; ``progress(1)`` is called after
    each scenario is written.
    """
    names: list[Path] = []

    def build(tmp: Path) -> None:
        for scenario in result.scenarios:
            written = write_scenario(tmp / scenario.name, result, scenario)
            names.extend(out_dir / p.relative_to(tmp) for p in written)
            if progress is not None:
                progress(1)
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


# --------------------------------------------------------------------------------------------
# The ensemble of [uncertainty] (shoreline/ensemble.py): what every writer adds for it
# --------------------------------------------------------------------------------------------

#: Hotspot columns added by an ensemble, in order.
ENSEMBLE_HOTSPOT_COLUMNS = ("probability", "likelihood", "main_input", "main_input_s1")


def ensemble_hotspot_columns(frame: pd.DataFrame, scenario: ScenarioResult) -> pd.DataFrame:
    """Add each hotspot's probability, its likelihood word and the input that spreads it most.

    ``probability``: the share of members in which at least half of the hotspot's stretch is
    in its class; ``main_input`` and ``main_input_s1``: the input with the largest first-order
    index of the hotspot's mean rate (shift) and that index. Unchanged without an ensemble.
    """
    ens = scenario.ensemble
    if ens is None:
        return frame
    by_id = {h["hotspot_id"]: h for h in ens.hotspots}
    rows = [by_id[i] for i in frame["hotspot_id"].tolist()]
    frame = frame.copy()
    frame["probability"] = np.array([r["probability"] for r in rows], dtype=float)
    frame["likelihood"] = pd.Series([r["likelihood"] for r in rows], dtype="str")
    frame["main_input"] = pd.Series([r["main_input"] or "" for r in rows], dtype="str")
    frame["main_input_s1"] = np.array(
        [
            r["first_order"].get(r["main_input"], np.nan) if r["main_input"] else np.nan
            for r in rows
        ],
        dtype=float,
    )
    return frame


def ensemble_summary(scenario: ScenarioResult) -> dict[str, Any]:
    """The ``ensemble`` member of a scenario's summary.json ({} without an ensemble).

    Members, factors, per hotspot (and for the coast's mean net transport) the probability,
    its likelihood word and the first-order and total indices, the transects by likelihood
    word, and the check against the run at the study's own settings. No times: a re-run with
    the same seed writes the same file.
    """
    ens = scenario.ensemble
    if ens is None:
        return {}
    words, counts = np.unique(np.asarray(ens.columns["confidence"]), return_counts=True)
    info = {k: v for k, v in ens.info.items() if not k.startswith("seconds")}
    return {
        "ensemble": {
            "members": len(ens.members),
            "factors": ens.factors,
            "metric": "shoreline_shift_m" if ens.event else "rate_m_per_yr",
            "hotspots": ens.hotspots,
            "coast_net_transport": ens.coast,
            "transects_by_confidence": dict(zip(words.tolist(), counts.tolist(), strict=True)),
            "info": info,
            "meaning": ENSEMBLE_MEANING,
        }
    }


#: What the ensemble's probabilities are, in plain words (summary.json, README, report).
ENSEMBLE_MEANING = (
    "Probabilities are shares of ensemble members: runs of the same screening model with the "
    "uncertain inputs listed in [uncertainty] drawn from their ranges. They cover those inputs "
    "only, not the simplifications of the model itself (one-line balance, the transport "
    "formulas, no cross-shore or sediment supply), which the caution describes: a 'very likely "
    "erosion' is very likely within this model, not a measured certainty."
)


def ensemble_record(result: RunResult) -> dict[str, Any]:
    """The ``uncertainty`` member of run.json ({} without ``[uncertainty]``).

    The seed, the member count, every distribution as used (and the inputs held at the
    study's values), the formula and block settings, and per scenario how its ensemble was
    computed: enough to re-run it bit-identically.
    """
    u = result.study.uncertainty
    if not u:
        return {}
    from shoreline.ensemble import BIAS_STEP_DEG
    from shoreline.study import UNCERTAIN_INPUTS

    return {
        "uncertainty": {
            "members": u["members"],
            "seed": u["seed"],
            "distributions": u["inputs"],
            "held_at_study_values": [k for k in UNCERTAIN_INPUTS if k not in u["inputs"]],
            "formulas": u["formulas"],
            "record_blocks": u["record_blocks"],
            "direction_bias_step_deg": BIAS_STEP_DEG,
            "random_generator": "numpy default_rng (PCG64), entropy [seed, stream, input]",
            "quantiles": "numpy quantile, linear interpolation (Hyndman & Fan 1996 type 7)",
            "sensitivity": "first order Saltelli et al. (2010) Table 2 (b), total Jansen "
            "(1999), pick-freeze design: the members as A, as many draws again as B",
            "scenarios": {
                s.name: s.ensemble.info for s in result.scenarios if s.ensemble is not None
            },
        }
    }
