"""Figures of one scenario folder: map, along-shore profiles, wave rose, comparison with reference.

Everything here works only from the files a run leaves in a scenario folder (``results.gpkg``,
``summary.json``, ``wave_climate.csv``), so figures can be redrawn later without recomputing.
Nothing is fetched: no basemap tiles, no fonts, no network. Figures are drawn with
matplotlib's object interface on the Agg canvas (no pyplot state, nothing left open).

Every figure is meant to read in grey print as well as in colour: signs and classes are carried
by line style, hatching, markers and labels ("E1" erosion hotspot, "A2" accretion hotspot), not
by hue alone. Each figure carries a short footer pointing to the cautions in the report, and
the full caution in its PNG metadata (text chunk "Disclaimer").

A storm event's layers speak in the event's units (shoreline shift [m], transport as the volume
over the event [m3], see :func:`shoreline.export.event_columns`); so do its figures.
"""

from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from shoreline.cautions import CAUTION
from shoreline.errors import OutputError

__all__ = [
    "FOOTER",
    "RATE_LABEL",
    "SHIFT_LABEL",
    "ScenarioData",
    "Metric",
    "hotspot_label",
    "nice_scale_length_m",
    "part_layout",
    "read_json",
    "read_scenario",
    "read_wave_climate",
    "scenario_metric",
    "true_north_offset_deg",
    "write_figures",
    "write_projection_figures",
]

FOOTER = "Screening estimate only: see the cautions in the report."
#: The folder of a scenario's projection (figures included) and its shorelines layer.
PROJECTION_FOLDER = "projection"
PROJECTION_LAYER = "projected_shorelines"
SHIFT_YEARS_LABEL = "Shoreline shift since the start [m] (+ seaward, \u2212 landward)"
RATE_LABEL = "Shoreline change rate [m/yr] (+ accretion, \u2212 erosion)"
SHIFT_LABEL = "Shoreline shift over the storm [m] (+ seaward, \u2212 landward)"

# Okabe & Ito (2008) colour-blind-safe palette; the primary formula is always black and solid.
_OKABE_ITO = ("#E69F00", "#0072B2", "#009E73", "#D55E00", "#CC79A7", "#56B4E9")
_SECONDARY_STYLES = ("--", ":", "-.", (0, (5, 1, 1, 1, 1, 1)), (0, (1, 3)))
_RATE_CMAP = "RdBu"  # ColorBrewer diverging, colour-blind safe: red = erosion, blue = accretion
_SHELTERED_GREY = "0.62"
_EROSION_FILL = "#f4c7b8"
_ACCRETION_FILL = "#bcd7ea"

_TRANSECT_COLUMNS = ("part_id", "chainage_m", "class")
#: The shoreline value of a transect: a yearly rate, or a storm event's shift.
_METRIC_COLUMNS = ("rate_m_per_yr", "shoreline_shift_m")
#: q_<name>_m3_per_yr (event: q_<name>_m3) columns that are not formulas (gross and one-way).
_NOT_FORMULAS = frozenset({"gross", "pos", "neg"})
_WAVE_COLUMNS = ("dir_from_deg_lo", "dir_from_deg_hi", "hs_m_lo", "hs_m_hi", "hours")


# --------------------------------------------------------------------------------------------
# Reading a scenario folder
# --------------------------------------------------------------------------------------------


@dataclass
class ScenarioData:
    """The contents of one scenario folder that the figures and the report need.

    Attributes
    ----------
    folder : pathlib.Path
        The scenario folder.
    name : str
        The scenario name (``summary.json`` "scenario", else the folder name).
    summary : dict
        The parsed ``summary.json``.
    shoreline, transects, hotspots : geopandas.GeoDataFrame
        The layers of ``results.gpkg`` in the working CRS [m]. ``hotspots`` may be empty.
    """

    folder: Path
    name: str
    summary: dict
    shoreline: object
    transects: object
    hotspots: object


def read_json(path: str | os.PathLike) -> dict:
    """Read a JSON object from ``path``, raising :class:`OutputError` with the file named.

    Parameters
    ----------
    path : str or path-like
        The JSON file (``run.json`` or ``summary.json``).

    Returns
    -------
    dict
        The parsed object.
    """
    path = Path(path)
    if not path.is_file():
        raise OutputError(f"{path}: not found; expected the file a `shoreline run` writes there")
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise OutputError(f"{path}: cannot be read as JSON ({exc})") from exc
    if not isinstance(data, dict):
        raise OutputError(f"{path}: expected a JSON object at the top level")
    return data


def read_scenario(scenario_dir: str | os.PathLike) -> ScenarioData:
    """Read ``summary.json`` and the three layers of ``results.gpkg`` of a scenario folder.

    Parameters
    ----------
    scenario_dir : str or path-like
        A scenario folder written by ``shoreline run`` (e.g. ``OUT/reference``).

    Returns
    -------
    ScenarioData
        Summary and layers; the transects are sorted by part and chainage.

    Raises
    ------
    OutputError
        If a file or layer is missing, or the transect layer lacks a needed column.
    """
    import geopandas as gpd
    import pyogrio

    folder = Path(scenario_dir)
    summary = read_json(folder / "summary.json")
    gpkg = folder / "results.gpkg"
    if not gpkg.is_file():
        raise OutputError(f"{gpkg}: not found; expected the results GeoPackage of the scenario")
    try:
        layers = {str(name) for name in pyogrio.list_layers(gpkg)[:, 0]}
    except Exception as exc:  # pyogrio raises its own DataSourceError and friends
        raise OutputError(f"{gpkg}: cannot be opened as a GeoPackage ({exc})") from exc
    for layer in ("shoreline", "transects"):
        if layer not in layers:
            raise OutputError(f"{gpkg}: layer {layer!r} missing; found {sorted(layers)}")
    shoreline = gpd.read_file(gpkg, layer="shoreline")
    transects = gpd.read_file(gpkg, layer="transects")
    if "hotspots" in layers:
        hotspots = gpd.read_file(gpkg, layer="hotspots")
    else:
        hotspots = gpd.GeoDataFrame(geometry=[], crs=transects.crs)
    missing = [c for c in _TRANSECT_COLUMNS if c not in transects.columns]
    if not any(c in transects.columns for c in _METRIC_COLUMNS):
        missing.append(" or ".join(_METRIC_COLUMNS))
    if missing:
        raise OutputError(f"{gpkg}: layer 'transects' lacks column(s) {', '.join(missing)}")
    transects = transects.sort_values(["part_id", "chainage_m"], kind="stable")
    transects = transects.reset_index(drop=True)
    name = str(summary.get("scenario") or folder.name)
    return ScenarioData(folder, name, summary, shoreline, transects, hotspots)


def read_layer(folder: str | os.PathLike, layer: str):
    """A layer of a scenario's GeoPackage (working CRS), or None where it has none.

    A missing or unreadable GeoPackage also gives None: :func:`read_scenario` reports those.
    """
    import geopandas as gpd
    import pyogrio

    gpkg = Path(folder) / "results.gpkg"
    try:
        if layer not in {str(n) for n in pyogrio.list_layers(gpkg)[:, 0]}:
            return None
        return gpd.read_file(gpkg, layer=layer)
    except Exception:  # the figures and report are still useful without it
        return None


def read_structures(folder: str | os.PathLike):
    """The "structures" layer of a scenario's GeoPackage (working CRS), or None if it has none.

    A missing or unreadable GeoPackage also gives None: :func:`read_scenario` reports those.
    """
    import geopandas as gpd
    import pyogrio

    gpkg = Path(folder) / "results.gpkg"
    try:
        if "structures" not in {str(n) for n in pyogrio.list_layers(gpkg)[:, 0]}:
            return None
        return gpd.read_file(gpkg, layer="structures")
    except Exception:  # the figures and report are still useful without them
        return None


def read_wave_climate(scenario_dir: str | os.PathLike):
    """Read ``wave_climate.csv`` (joint histogram of offshore Hs and direction) of a scenario.

    Parameters
    ----------
    scenario_dir : str or path-like
        The scenario folder.

    Returns
    -------
    pandas.DataFrame
        Columns ``dir_from_deg_lo``, ``dir_from_deg_hi`` [deg, direction waves come FROM,
        clockwise from true north], ``hs_m_lo``, ``hs_m_hi`` [m], ``hours`` [h]; possibly no row.

    Raises
    ------
    OutputError
        If the file is missing, unreadable or lacks a column.
    """
    import pandas as pd

    path = Path(scenario_dir) / "wave_climate.csv"
    if not path.is_file():
        raise OutputError(f"{path}: not found; expected the offshore wave histogram")
    try:
        table = pd.read_csv(path)
    except Exception as exc:  # pandas raises several parser errors
        raise OutputError(f"{path}: cannot be read as CSV ({exc})") from exc
    missing = [c for c in _WAVE_COLUMNS if c not in table.columns]
    if missing:
        raise OutputError(f"{path}: lacks column(s) {', '.join(missing)}")
    for column in _WAVE_COLUMNS:
        table[column] = pd.to_numeric(table[column], errors="coerce")
    return table[list(_WAVE_COLUMNS)].dropna()


# --------------------------------------------------------------------------------------------
# Small helpers (pure)
# --------------------------------------------------------------------------------------------


def hotspot_label(hotspot_id: int, hotspot_class: str) -> str:
    """Return the printed label of a hotspot: ``E<id>`` for erosion, ``A<id>`` for accretion.

    Examples
    --------
    >>> hotspot_label(1, "erosion"), hotspot_label(2, "accretion")
    ('E1', 'A2')
    """
    prefix = {"erosion": "E", "accretion": "A"}.get(str(hotspot_class), "H")
    return f"{prefix}{int(hotspot_id)}"


def nice_scale_length_m(width_m: float, fraction: float = 0.2) -> float:
    """Return a round scale-bar length (1, 2 or 5 times a power of ten) near a share of a width.

    Parameters
    ----------
    width_m : float
        The width of the map [m].
    fraction : float
        The wanted share of the width.

    Returns
    -------
    float
        The largest round length not above ``fraction * width_m`` [m] (at least 1 m).

    Examples
    --------
    >>> nice_scale_length_m(6000.0), nice_scale_length_m(2400.0), nice_scale_length_m(30_000.0)
    (1000.0, 200.0, 5000.0)
    """
    target = max(float(width_m) * fraction, 1.0)
    power = 10.0 ** math.floor(math.log10(target))
    for step in (5.0, 2.0, 1.0):
        if step * power <= target:
            return step * power
    return power  # pragma: no cover - the loop always returns


def true_north_offset_deg(crs, x_m: float, y_m: float) -> float | None:
    """Angle from grid north to true north at a point of a projected CRS [deg, clockwise].

    Parameters
    ----------
    crs : pyproj.CRS or str
        The working (projected) CRS.
    x_m, y_m : float
        Easting and northing of the point [m].

    Returns
    -------
    float or None
        Positive when true north lies clockwise (east) of grid north; ``None`` if the CRS is
        missing, geographic or cannot be transformed.

    Notes
    -----
    Found numerically with pyproj: the point is taken to lon/lat, moved 0.01 degree north along
    its meridian and brought back; the bearing of that short step on the grid is the angle
    (the meridian convergence, up to its sign convention). No grid file or network is needed
    for the usual conformal projections (UTM, transverse Mercator).
    """
    try:
        from pyproj import CRS, Transformer

        crs = CRS.from_user_input(crs)
        if not crs.is_projected:
            return None
        to_geo = Transformer.from_crs(crs, "EPSG:4326", always_xy=True)
        to_grid = Transformer.from_crs("EPSG:4326", crs, always_xy=True)
        lon, lat = to_geo.transform(x_m, y_m)
        step = -0.01 if lat > 89.0 else 0.01
        x2, y2 = to_grid.transform(lon, lat + step)
    except Exception:  # pyproj raises CRSError, ProjError; any failure means "unknown"
        return None
    dx, dy = (x2 - x_m) * np.sign(step), (y2 - y_m) * np.sign(step)
    if not (np.isfinite(dx) and np.isfinite(dy)) or dx == dy == 0:
        return None
    return float(np.degrees(np.arctan2(dx, dy)))


def part_layout(shoreline, transects, gap_fraction: float = 0.04) -> dict[int, tuple[float, float]]:
    """Place the shore parts one after another on a common along-shore axis.

    Parameters
    ----------
    shoreline : geopandas.GeoDataFrame
        The "shoreline" layer (``part_id``, ``length_m``).
    transects : geopandas.GeoDataFrame
        The "transects" layer (``part_id``, ``chainage_m``).
    gap_fraction : float
        Gap between parts as a share of the summed part lengths (all gaps together are kept
        to at most 15 % of it).

    Returns
    -------
    dict
        ``part_id -> (offset_m, span_m)``: a point at chainage ``c`` of a part is drawn at
        ``offset_m + c``; ``span_m`` is the part length (at least its largest chainage).
    """
    spans: dict[int, float] = {}
    if "part_id" in shoreline.columns:
        lengths = (
            shoreline["length_m"].to_numpy(float)
            if "length_m" in shoreline.columns
            else shoreline.geometry.length.to_numpy(float)
        )
        for part, length in zip(shoreline["part_id"].to_numpy(int), lengths, strict=True):
            spans[int(part)] = max(spans.get(int(part), 0.0), float(np.nan_to_num(length)))
    chain = transects["chainage_m"].to_numpy(float)
    parts = transects["part_id"].to_numpy(int)
    for part in np.unique(parts):
        top = chain[(parts == part) & np.isfinite(chain)]
        top_m = float(top.max()) if top.size else 0.0
        spans[int(part)] = max(spans.get(int(part), 0.0), top_m)
    order = sorted(spans)
    total = sum(spans.values()) or 1.0
    # Gaps between parts, never more than 15 % of the axis together.
    gap = min(gap_fraction, 0.15 / (len(order) - 1)) * total if len(order) > 1 else 0.0
    layout, offset = {}, 0.0
    for part in order:
        layout[part] = (offset, spans[part])
        offset += spans[part] + gap
    return layout


# --------------------------------------------------------------------------------------------
# Drawing
# --------------------------------------------------------------------------------------------


def write_figures(
    scenario_dir: str | os.PathLike,
    reference_dir: str | os.PathLike | None = None,
    dpi: int = 150,
) -> list[Path]:
    """Draw the figures of one scenario folder into that folder.

    Parameters
    ----------
    scenario_dir : str or path-like
        The scenario folder (``results.gpkg``, ``summary.json``, ``wave_climate.csv``).
    reference_dir : str or path-like, optional
        The reference scenario folder; when given (and not the same folder), ``vs_reference.png``
        is drawn too.
    dpi : int
        Resolution of the PNG files [dots per inch].

    Returns
    -------
    list of pathlib.Path
        The files written: ``map.png``, ``alongshore.png``, ``wave_climate.png``, with an
        ensemble (``[uncertainty]``) ``sensitivity.png``, and, with a reference,
        ``vs_reference.png``. Each is written atomically (temporary file, then rename).

    Raises
    ------
    OutputError
        If an input file is missing or unreadable, or a figure cannot be written.
    """
    data = read_scenario(scenario_dir)
    waves = read_wave_climate(scenario_dir)
    folder = data.folder
    written = [
        _save(_map_figure(data), folder / "map.png", dpi),
        _save(_alongshore_figure(data), folder / "alongshore.png", dpi),
        _save(_wave_rose_figure(data, waves), folder / "wave_climate.png", dpi),
    ]
    if _has_sensitivity(data):
        written.append(_save(_sensitivity_figure(data), folder / "sensitivity.png", dpi))
    if reference_dir is not None and Path(reference_dir).resolve() != folder.resolve():
        base = read_scenario(reference_dir)
        written.append(_save(_vs_reference_figure(data, base), folder / "vs_reference.png", dpi))
    if (folder / PROJECTION_FOLDER).is_dir() and "projection" in data.summary:
        written += write_projection_figures(data, dpi)
    return written


def _new_figure(width_in: float, height_in: float):
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), layout="constrained")
    footer = 0.2 / height_in  # a strip at the bottom for the footer text
    fig.get_layout_engine().set(rect=(0.0, footer, 1.0, 1.0 - footer))
    return fig


def _headroom(ax, share: float = 0.16) -> None:
    """Raise the top of the y axis so labels at the top of the panel clear the data."""
    lo, hi = ax.get_ylim()
    ax.set_ylim(lo, hi + share * (hi - lo))


def _footer(fig) -> None:
    fig.text(0.995, 0.003, FOOTER, ha="right", va="bottom", fontsize=7, color="0.25")


def _save(fig, path: Path, dpi: int) -> Path:
    from shoreline import __version__

    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    try:
        fig.savefig(
            tmp,
            dpi=dpi,
            format="png",
            facecolor="white",
            metadata={"Software": f"shoreline {__version__} (matplotlib)", "Disclaimer": CAUTION},
        )
        os.replace(tmp, path)
    except OSError as exc:
        raise OutputError(f"{path}: cannot write the figure ({exc})") from exc
    finally:
        fig.clear()
        if tmp.exists():
            tmp.unlink()
    return path


@dataclass(frozen=True)
class Metric:
    """What the shoreline panels of a scenario show: a yearly rate, or a storm's shift.

    Attributes
    ----------
    column : str
        Transect column (``rate_m_per_yr``, or ``shoreline_shift_m`` for a storm event).
    label : str
        Axis and colour-bar label with unit.
    title : str
        Plain name for titles.
    unit : str
        Unit text (``m/yr`` or ``m``).
    band : float
        Half-width of the stable band in that unit (NaN when unknown).
    event : bool
        True for a storm event.
    legend : str
        Short name with unit for legends ("shoreline shift [m]").
    """

    column: str
    label: str
    title: str
    unit: str
    band: float
    event: bool
    legend: str = ""


def scenario_metric(data: ScenarioData) -> Metric:
    """Return the quantity a scenario's shoreline panels show (see :class:`Metric`).

    A storm event (``summary.json`` "event" true, or a ``shoreline_shift_m`` column) shows the
    shoreline shift over the storm against ``event_stable_band_m`` (from ``summary.json``, else
    from ``run.json`` settings ``[classify]`` in the parent folder); any other scenario shows
    the yearly rate against ``stable_band_m_per_yr``.
    """
    has_shift = "shoreline_shift_m" in data.transects.columns
    if has_shift and data.summary.get("event", True):
        band = _positive_or_nan(data.summary.get("event_stable_band_m"))
        if not np.isfinite(band):
            band = _event_band_from_run(data.folder.parent / "run.json")
        return Metric(
            "shoreline_shift_m",
            SHIFT_LABEL,
            "Shoreline shift over the storm",
            "m",
            band,
            True,
            "shoreline shift [m]",
        )
    band = _positive_or_nan(data.summary.get("stable_band_m_per_yr"))
    return Metric(
        "rate_m_per_yr",
        RATE_LABEL,
        "Shoreline change rate",
        "m/yr",
        band,
        False,
        "shoreline change rate [m/yr]",
    )


def _positive_or_nan(value) -> float:
    try:
        band = float(value)
    except (TypeError, ValueError):
        return float("nan")
    return band if np.isfinite(band) and band >= 0 else float("nan")


def _event_band_from_run(run_json: Path) -> float:
    try:
        run = json.loads(run_json.read_text(encoding="utf-8"))
        return _positive_or_nan(run["settings"]["classify"]["event_stable_band_m"])
    except (OSError, ValueError, KeyError, TypeError):
        return float("nan")


def _values(transects, column: str) -> tuple[np.ndarray, np.ndarray]:
    """Return (values, sheltered mask) of a transect column; sheltered or NaN count as no value."""
    value = transects[column].to_numpy(float)
    cls = transects["class"].astype(str).to_numpy()
    sheltered = (cls == "sheltered") | ~np.isfinite(value)
    return value, sheltered


def _robust_halfrange(value: np.ndarray, sheltered: np.ndarray, band: float) -> float:
    live = np.abs(value[~sheltered & np.isfinite(value)])
    top = float(np.percentile(live, 98)) if live.size else 0.0
    halfrange = max(top, 2.0 * band if np.isfinite(band) else 0.0)
    return halfrange if halfrange > 0 else 1.0


def _ends(geoms) -> tuple[np.ndarray, np.ndarray]:
    import shapely

    arr = np.asarray(geoms, dtype=object)
    first, last = shapely.get_point(arr, 0), shapely.get_point(arr, -1)
    start = np.column_stack([shapely.get_x(first), shapely.get_y(first)])
    end = np.column_stack([shapely.get_x(last), shapely.get_y(last)])
    return start, end


def _line_xy(geom) -> list[np.ndarray]:
    """Return the coordinate arrays of the lines in a (multi)line or polygon geometry."""
    if geom is None or geom.is_empty:
        return []
    kind = geom.geom_type
    if kind in ("LineString", "LinearRing"):
        return [np.asarray(geom.coords)[:, :2]]
    if kind == "Polygon":
        return [np.asarray(geom.exterior.coords)[:, :2]]
    if hasattr(geom, "geoms"):
        return [xy for part in geom.geoms for xy in _line_xy(part)]
    return []


def _map_figure(data: ScenarioData):
    import matplotlib.colors as mcolors
    from matplotlib import colormaps
    from matplotlib.collections import LineCollection
    from matplotlib.lines import Line2D

    tr, summary = data.transects, data.summary
    metric = scenario_metric(data)
    rate, sheltered = _values(tr, metric.column)
    cls = tr["class"].astype(str).to_numpy()
    band = metric.band

    shore_lines = [xy for g in data.shoreline.geometry for xy in _line_xy(g)]
    start, end = _ends(tr.geometry)
    if shore_lines:
        allxy = np.vstack(shore_lines)
    else:
        allxy = start[np.isfinite(start).all(axis=1)]
    if allxy.size == 0:
        raise OutputError(f"{data.folder / 'results.gpkg'}: no shoreline or transect geometry")
    xmin, ymin = allxy.min(axis=0)
    xmax, ymax = allxy.max(axis=0)
    size_m = max(xmax - xmin, ymax - ymin, 1.0)

    # Transects are drawn as ticks of one display length in their own direction (the full
    # transects are in the GeoPackage): long transects would otherwise hide the coast.
    vec = end - start
    norm_len = np.hypot(vec[:, 0], vec[:, 1])
    ok = np.isfinite(norm_len) & (norm_len > 0)
    unit = np.zeros_like(vec)
    unit[ok] = vec[ok] / norm_len[ok, None]
    tick_m = 0.06 * size_m
    tip = start + unit * tick_m
    segs = np.stack([start, tip], axis=1)

    pad = 0.16 * size_m
    x0, x1 = xmin - pad, xmax + pad
    y0, y1 = ymin - pad, ymax + pad
    width_in = 8.0
    aspect = (y1 - y0) / (x1 - x0)
    height_in = float(np.clip(5.6 * aspect + 1.9, 4.0, 10.0))
    fig = _new_figure(width_in, height_in)
    ax = fig.add_subplot()

    cmap = colormaps[_RATE_CMAP]
    halfrange = _robust_halfrange(rate, sheltered, band)
    cnorm = mcolors.CenteredNorm(vcenter=0.0, halfrange=halfrange)
    live = ok & ~sheltered
    land = read_layer(data.folder, "land")
    if land is not None and len(land):
        land.plot(ax=ax, color=_LAND_FILL, edgecolor="none", zorder=0)

    # Hotspots: thick outlines along the shore (erosion solid, accretion dashed), drawn first;
    # only the strongest are labelled, so that a long coast stays legible.
    label_pos = []
    labelled = _strongest_ids(data.hotspots, MAP_LABELS)
    for _, hot in data.hotspots.iterrows():
        hclass = str(hot.get("class", ""))
        dashes = "-" if hclass == "erosion" else (0, (2.2, 1.2))
        for xy in _line_xy(hot.geometry):
            ax.plot(
                xy[:, 0],
                xy[:, 1],
                color="black",
                lw=10,
                ls=dashes,
                zorder=1,
                solid_capstyle="butt",
                dash_capstyle="butt",
            )
            ax.plot(xy[:, 0], xy[:, 1], color="white", lw=6, zorder=1.1, solid_capstyle="butt")
        hid = int(hot.get("hotspot_id", 0))
        if hid not in labelled:
            continue
        mid = hot.geometry.interpolate(0.5, normalized=True) if hot.geometry is not None else None
        if mid is None or mid.is_empty:
            continue
        members = live & (_hotspot_ids(tr) == hid) if "hotspot_id" in tr else None
        if members is None or not members.any():
            dist = np.hypot(start[:, 0] - mid.x, start[:, 1] - mid.y)
            finite = np.isfinite(dist)
            direction = unit[np.argmin(np.where(finite, dist, np.inf))] if finite.any() else 0
        else:
            direction = unit[members].mean(axis=0)
        direction = np.broadcast_to(np.asarray(direction, dtype=float), (2,))
        length = float(np.hypot(*direction))
        direction = direction / length if length > 0 else np.array([0.0, 1.0])
        label_pos.append((_map_label(hot, hid, hclass), hclass, mid.x, mid.y, direction))

    if live.any():
        ax.add_collection(LineCollection(segs[live], colors="black", linewidths=3.8, zorder=2))
        colours = cmap(cnorm(rate[live]))
        ax.add_collection(LineCollection(segs[live], colors=colours, linewidths=2.4, zorder=2.1))
    excluded = ok & (cls == "excluded")
    if excluded.any():
        ax.add_collection(
            LineCollection(segs[excluded], colors=_EXCLUDED_GREY, linewidths=1.0, zorder=1.9)
        )
    shel = ok & sheltered & ~excluded
    if shel.any():
        ax.add_collection(
            LineCollection(
                segs[shel],
                colors=_SHELTERED_GREY,
                linewidths=1.6,
                linestyles=(0, (1.5, 1.2)),
                zorder=2,
            )
        )
    for xy in shore_lines:
        ax.plot(xy[:, 0], xy[:, 1], color="black", lw=1.3, zorder=3)
    frame = read_structures(data.folder)
    structures = [] if frame is None else [g for g in frame.geometry if g is not None]
    for g in structures:
        for xy in _line_xy(g):
            ax.plot(xy[:, 0], xy[:, 1], color="black", lw=3.2, solid_capstyle="butt", zorder=6)

    # Sign markers beyond the tick tip: "+" accretion, "-" erosion (outside the stable band),
    # thinned on dense coasts so that each sign stays legible.
    mark = start + unit * tick_m * 1.22
    thin = _every_kth(tr["part_id"].to_numpy(int), start, 0.025 * size_m)
    for kind, marker in (("accretion", "+"), ("erosion", "_")):
        sel = live & thin & (cls == kind)
        if sel.any():
            ax.plot(
                mark[sel, 0],
                mark[sel, 1],
                ls="",
                marker=marker,
                ms=5.5,
                mew=1.4,
                color="black",
                zorder=4,
            )

    for text, hclass, mx, my, direction in label_pos:
        lx, ly = mx + direction[0] * tick_m * 2.1, my + direction[1] * tick_m * 2.1
        ax.annotate(
            text,
            xy=(mx, my),
            xytext=(lx, ly),
            ha="center",
            va="center",
            fontsize=10,
            fontweight="bold",
            zorder=6,
            bbox={
                "boxstyle": "round,pad=0.25",
                "fc": "white",
                "ec": "black",
                "ls": "-" if hclass == "erosion" else "--",
                "lw": 1.2,
            },
            arrowprops={"arrowstyle": "-", "color": "black", "lw": 0.8, "shrinkB": 4},
        )

    _map_axes(ax, x0, x1, y0, y1)
    crs_name = str(summary.get("working_crs_name") or getattr(tr.crs, "name", "") or "unknown")
    crs_code = str(summary.get("working_crs") or "")
    crs_text = crs_name if not crs_code or crs_code in crs_name else f"{crs_name} ({crs_code})"
    ax.set_xlabel(f"Easting [m]  \u00b7  grid: {crs_text}", fontsize=9)
    ax.set_ylabel("Northing [m]", fontsize=9)
    _scale_bar(ax, x0, x1, y0, y1)
    conv = true_north_offset_deg(tr.crs, 0.5 * (xmin + xmax), 0.5 * (ymin + ymax))
    _north_arrow(ax, x0, x1, y0, y1, conv)

    mappable = _scalar_mappable(cnorm, cmap)
    extend = "neither"
    if live.any():
        low, high = np.nanmin(rate[live]) < -halfrange, np.nanmax(rate[live]) > halfrange
        extend = {(True, True): "both", (True, False): "min", (False, True): "max"}.get(
            (bool(low), bool(high)), "neither"
        )
    cax = ax.inset_axes([1.03, 0.0, 0.035 / max(aspect, 0.35) * 0.55, 1.0])
    cbar = fig.colorbar(mappable, cax=cax, extend=extend)
    long_label = len(metric.label) > 56  # wrap labels longer than the colour bar
    cbar.set_label(metric.label.replace(" (", "\n(") if long_label else metric.label, fontsize=8.5)
    cbar.ax.tick_params(labelsize=8)
    if np.isfinite(band) and 0 < band < halfrange:
        for level in (-band, band):
            cbar.ax.axhline(level, color="black", lw=0.9)
        cbar.ax.text(
            0.5,
            0.0,
            "stable band",
            transform=cbar.ax.get_yaxis_transform(),
            fontsize=6,
            va="center",
            ha="center",
            rotation=90,
        )

    handles = [
        Line2D([], [], color="black", lw=1.3, label="shoreline"),
        Line2D(
            [],
            [],
            color=cmap(0.1),
            lw=2.4,
            label=f"transect, coloured by {'shift' if metric.event else 'rate'} "
            f"[{metric.unit}] (equal ticks)",
        ),
        Line2D([], [], color="black", lw=4, label="erosion hotspot (E#)"),
        Line2D([], [], color="black", lw=4, ls=(0, (1.2, 0.7)), label="accretion hotspot (A#)"),
        Line2D(
            [],
            [],
            color="black",
            marker="_",
            ls="",
            ms=6,
            mew=1.4,
            label="transect eroding beyond stable band",
        ),
        Line2D(
            [],
            [],
            color="black",
            marker="+",
            ls="",
            ms=6,
            mew=1.4,
            label="transect accreting beyond stable band",
        ),
        Line2D(
            [],
            [],
            color=_SHELTERED_GREY,
            lw=1.6,
            ls=(0, (1.5, 1.2)),
            label="sheltered transect (no waves reach it)",
        ),
    ]
    if structures:
        handles.append(Line2D([], [], color="black", lw=3.2, label="structure (groyne, jetty)"))
    if excluded.any():
        handles.append(
            Line2D([], [], color=_EXCLUDED_GREY, lw=1.0, label="left out: not open coast")
        )
    handles += _ensemble_map_handles(data)
    n_hot = len(data.hotspots)
    if n_hot > len(labelled):
        handles.append(
            Line2D([], [], ls="", label=f"{len(labelled)} of {n_hot} hotspots labelled (strongest)")
        )
    fig.legend(handles=handles, loc="outside lower center", ncols=3, fontsize=7.5, frameon=False)
    ax.set_title(f"{metric.title} \u2014 scenario \u201c{data.name}\u201d", fontsize=12)
    _footer(fig)
    return fig


#: Hotspots labelled on a map: the ones that gain or lose the most volume.
MAP_LABELS = 12

_EXCLUDED_GREY = "#9a9a9a"
_LAND_FILL = "#e9e6df"


def _strongest_ids(hotspots, n: int) -> set[int]:
    """Ids of the ``n`` hotspots with the largest volume (rate or event column)."""
    if hotspots is None or len(hotspots) == 0 or "hotspot_id" not in hotspots:
        return set()
    col = next((c for c in ("volume_m3_per_yr", "volume_m3") if c in hotspots), None)
    ids = hotspots["hotspot_id"].to_numpy(int)
    if col is None:
        return set(ids[:n].tolist())
    order = np.argsort(-np.abs(hotspots[col].to_numpy(float)), kind="stable")
    return set(ids[order[:n]].tolist())


def _map_axes(ax, x0: float, x1: float, y0: float, y1: float) -> None:
    """Limits, equal aspect and thin-space-grouped metre ticks of a map panel."""
    from matplotlib.ticker import FuncFormatter, MaxNLocator

    ax.set_xlim(x0, x1)
    ax.set_ylim(y0, y1)
    ax.set_aspect("equal", adjustable="box")
    ax.xaxis.set_major_locator(MaxNLocator(nbins=5))
    ax.yaxis.set_major_locator(MaxNLocator(nbins=5))
    fmt = FuncFormatter(lambda v, _pos: f"{v:,.0f}".replace(",", "\u2009"))
    ax.xaxis.set_major_formatter(fmt)
    ax.yaxis.set_major_formatter(fmt)
    ax.tick_params(labelsize=8)


def _hotspot_ids(transects) -> np.ndarray:
    """The transects' hotspot ids as integers, -1 where the layer has NULL (no hotspot)."""
    import pandas as pd

    return pd.to_numeric(transects["hotspot_id"], errors="coerce").fillna(-1).to_numpy(int)


def _every_kth(parts: np.ndarray, xy: np.ndarray, min_spacing_m: float) -> np.ndarray:
    """Return a mask keeping every k-th point of each part, about ``min_spacing_m`` apart."""
    keep = np.zeros(parts.shape, dtype=bool)
    for part in np.unique(parts):
        idx = np.flatnonzero(parts == part)
        steps = np.hypot(*np.diff(xy[idx], axis=0).T) if idx.size > 1 else np.array([])
        steps = steps[np.isfinite(steps) & (steps > 0)]
        spacing = float(np.median(steps)) if steps.size else min_spacing_m
        k = max(1, math.ceil(min_spacing_m / spacing))
        keep[idx[::k]] = True
    return keep


def _scalar_mappable(norm, cmap):
    from matplotlib.cm import ScalarMappable

    sm = ScalarMappable(norm=norm, cmap=cmap)
    sm.set_array([])
    return sm


def _scale_bar(ax, x0: float, x1: float, y0: float, y1: float) -> None:
    from matplotlib.patches import Rectangle

    length = nice_scale_length_m(x1 - x0)
    bx, by = x0 + 0.04 * (x1 - x0), y0 + 0.05 * (y1 - y0)
    h = 0.012 * (y1 - y0)
    half = length / 2.0
    ax.add_patch(
        Rectangle(
            (bx - 0.02 * (x1 - x0), by - 3.2 * h),
            length + 0.05 * (x1 - x0),
            6.4 * h,
            fc="white",
            ec="none",
            alpha=0.85,
            zorder=7,
        )
    )
    ax.add_patch(Rectangle((bx, by), half, h, fc="black", ec="black", lw=0.8, zorder=8))
    ax.add_patch(Rectangle((bx + half, by), half, h, fc="white", ec="black", lw=0.8, zorder=8))
    label = f"{length / 1000.0:g} km"
    for xpos, text in ((bx, "0"), (bx + length, label)):
        ax.text(xpos, by - 0.6 * h, text, ha="center", va="top", fontsize=8, zorder=9)


def _north_arrow(ax, x0: float, x1: float, y0: float, y1: float, conv: float | None) -> None:
    size = 0.10 * min(x1 - x0, y1 - y0)
    ax_, ay_ = x1 - 0.07 * (x1 - x0), y1 - 0.08 * (y1 - y0) - size
    ax.annotate(
        "",
        xy=(ax_, ay_ + size),
        xytext=(ax_, ay_),
        arrowprops={"arrowstyle": "-|>,head_length=0.8,head_width=0.4", "color": "black", "lw": 2},
        zorder=9,
    )
    ax.text(
        ax_,
        ay_ + size * 1.05,
        "N",
        ha="center",
        va="bottom",
        fontsize=12,
        fontweight="bold",
        zorder=9,
    )
    note = "grid north"
    if conv is not None:
        note += f"\ntrue north\n{abs(conv):.2f}\u00b0 {'E' if conv >= 0 else 'W'} of grid"
    ax.text(ax_, ay_ - 0.05 * size, note, ha="center", va="top", fontsize=6.5, zorder=9)
    if conv is not None and abs(conv) >= 1.0:
        rad = math.radians(conv)
        ax.annotate(
            "",
            xy=(ax_ + size * 0.8 * math.sin(rad), ay_ + size * 0.8 * math.cos(rad)),
            xytext=(ax_, ay_),
            arrowprops={"arrowstyle": "-", "color": "0.35", "lw": 1, "ls": "--"},
            zorder=9,
        )


def _part_axis(axes, layout: dict[int, tuple[float, float]]) -> None:
    """Put per-part chainage ticks [km] on the bottom axis and separators between parts."""
    from matplotlib.ticker import MaxNLocator

    total = sum(span for _, span in layout.values()) or 1.0
    positions, labels = [], []
    for offset, span in layout.values():
        span_km = span / 1000.0
        if span / total < 0.06:  # a narrow part: only its start, so labels never collide
            ticks = np.array([0.0])
        else:
            nbins = max(3, round(8 * span / total))
            ticks = MaxNLocator(nbins=nbins).tick_values(0.0, span_km)
            ticks = ticks[(ticks >= -1e-9) & (ticks <= span_km + 1e-9)]
        positions.extend(offset / 1000.0 + ticks)
        labels.extend(f"{t:g}" for t in ticks)
    parts = list(layout.items())
    lo = parts[0][1][0] / 1000.0
    hi = (parts[-1][1][0] + parts[-1][1][1]) / 1000.0
    margin = 0.01 * (hi - lo if hi > lo else 1.0)
    for ax in axes:
        ax.set_xlim(lo - margin, hi + margin)
        for (_, (off_a, span_a)), (_, (off_b, _)) in zip(parts[:-1], parts[1:], strict=True):
            sep = 0.5 * (off_a + span_a + off_b) / 1000.0
            ax.axvline(sep, color="0.3", lw=1.0, ls=(0, (4, 2)), zorder=0.5)
    axes[-1].set_xticks(positions, labels)
    if len(parts) > 1:
        top = axes[0]
        for part, (offset, span) in parts:
            share = span / total
            if share < 0.02:
                continue  # too narrow to label; the separators still mark it
            top.text(
                (offset + span / 2) / 1000.0,
                1.01,
                f"part {part}" if share >= 0.08 else f"{part}",
                transform=top.get_xaxis_transform(),
                ha="center",
                va="bottom",
                fontsize=8,
                color="0.15",
            )
        axes[-1].set_xlabel("Chainage along the shore [km], each part from its own start")
    else:
        axes[-1].set_xlabel("Chainage along the shore [km]")


def _part_lines(transects, layout, column: str):
    """Yield (x_km, y) per part, sorted by chainage, never joined across parts."""
    parts = transects["part_id"].to_numpy(int)
    chain = transects["chainage_m"].to_numpy(float)
    values = transects[column].to_numpy(float)
    for part in np.unique(parts):
        sel = parts == part
        order = np.argsort(chain[sel], kind="stable")
        offset = layout.get(int(part), (0.0, 0.0))[0]
        yield (offset + chain[sel][order]) / 1000.0, values[sel][order]


def _hotspot_spans(hotspots, layout):
    """Yield (label, class, x_lo_km, x_hi_km) per hotspot piece (a wrap on a closed part splits)."""
    needed = ("hotspot_id", "class", "part_id", "start_chainage_m", "end_chainage_m")
    if len(hotspots) == 0 or any(c not in hotspots.columns for c in needed):
        return
    for _, hot in hotspots.iterrows():
        part = int(hot["part_id"])
        offset, span = layout.get(part, (0.0, 0.0))
        a, b = float(hot["start_chainage_m"]), float(hot["end_chainage_m"])
        if not (np.isfinite(a) and np.isfinite(b)):
            continue
        label = hotspot_label(hot["hotspot_id"], hot["class"])
        pieces = [(a, b)] if a <= b else [(a, span), (0.0, b)]
        for lo, hi in pieces:
            yield label, str(hot["class"]), (offset + lo) / 1000.0, (offset + hi) / 1000.0


def _shade_band_and_hotspots(ax, data: ScenarioData, layout, labels: bool = True) -> list:
    from matplotlib.patches import Patch

    handles = []
    metric = scenario_metric(data)
    band = metric.band
    if np.isfinite(band) and band > 0:
        ax.axhspan(-band, band, fc="0.88", ec="none", zorder=0)
        handles.append(Patch(fc="0.88", label=f"stable band \u00b1{band:g} {metric.unit}"))
    seen = set()
    for label, hclass, lo, hi in _hotspot_spans(data.hotspots, layout):
        erosion = hclass == "erosion"
        ax.axvspan(
            lo,
            hi,
            fc=_EROSION_FILL if erosion else _ACCRETION_FILL,
            hatch="////" if erosion else "....",
            ec="0.45",
            lw=0,
            zorder=0.2,
        )
        if labels:
            ax.text(
                0.5 * (lo + hi),
                0.97,
                label,
                transform=ax.get_xaxis_transform(),
                ha="center",
                va="top",
                fontsize=9,
                fontweight="bold",
                zorder=5,
                bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8},
            )
        if hclass not in seen:
            seen.add(hclass)
            handles.append(
                Patch(
                    fc=_EROSION_FILL if erosion else _ACCRETION_FILL,
                    hatch="////" if erosion else "....",
                    ec="0.45",
                    label="erosion hotspot (E#)" if erosion else "accretion hotspot (A#)",
                )
            )
    return handles


def _transport_suffix(data: ScenarioData) -> str:
    """``_m3`` for a storm event's volumes over the event, else ``_m3_per_yr``.

    An event folder written before events had their own units has ``_m3_per_yr`` columns.
    """
    if scenario_metric(data).event and any(
        c.startswith("q_") and c.endswith("_m3") for c in data.transects.columns
    ):
        return "_m3"
    return "_m3_per_yr"


def _transport_columns(data: ScenarioData) -> list[tuple[str, str]]:
    """Return (formula name, column) pairs, the primary formula first.

    The formulas are those ``summary.json`` lists; without that list, every
    ``q_<name>_m3_per_yr`` column (storm event: ``q_<name>_m3``) except the gross and one-way
    components.
    """
    suffix = _transport_suffix(data)
    cols = [c for c in data.transects.columns if c.startswith("q_") and c.endswith(suffix)]
    names = {c[2 : -len(suffix)]: c for c in cols}
    listed = [str(n) for n in data.summary.get("formulas", []) or [] if str(n) in names]
    order = listed or sorted(n for n in names if n not in _NOT_FORMULAS)
    primary = str(data.summary.get("primary", order[0] if order else ""))
    if primary in order:
        order.remove(primary)
        order.insert(0, primary)
    return [(n, names[n]) for n in order]


def _sheltered_rug(ax, data: ScenarioData, layout) -> list:
    from matplotlib.lines import Line2D

    tr = data.transects
    _, sheltered = _values(tr, scenario_metric(data).column)
    if not sheltered.any():
        return []
    offsets = np.array([layout.get(int(p), (0.0, 0.0))[0] for p in tr["part_id"].to_numpy(int)])
    x = (offsets + tr["chainage_m"].to_numpy(float))[sheltered] / 1000.0
    ax.plot(
        x,
        np.full(x.shape, 0.03),
        ls="",
        marker="|",
        ms=8,
        mew=1.2,
        color="0.45",
        transform=ax.get_xaxis_transform(),
        zorder=4,
    )
    return [
        Line2D(
            [],
            [],
            ls="",
            marker="|",
            ms=8,
            mew=1.2,
            color="0.45",
            label=f"sheltered transect (no {'shift' if scenario_metric(data).event else 'rate'})",
        )
    ]


def _alongshore_figure(data: ScenarioData):
    tr = data.transects
    layout = part_layout(data.shoreline, tr)
    fig = _new_figure(9.0, 7.0)
    ax_q, ax_r = fig.subplots(2, 1, sharex=True)

    formulas = _transport_columns(data)
    for i, (name, column) in enumerate(formulas):
        if i == 0:
            style = {"color": "black", "lw": 1.9, "ls": "-"}
            label = f"{name.upper()} (primary)"
        else:
            style = {
                "color": _OKABE_ITO[(i - 1) % len(_OKABE_ITO)],
                "lw": 1.6,
                "ls": _SECONDARY_STYLES[(i - 1) % len(_SECONDARY_STYLES)],
            }
            label = name.capitalize() if name != "cerc" else "CERC"
        for j, (x, q) in enumerate(_part_lines(tr, layout, column)):
            ax_q.plot(x, q / 1000.0, label=label if j == 0 else None, **style)
    ax_q.axhline(0.0, color="0.4", lw=0.8, zorder=0.6)
    _ensemble_bands(ax_q, ax_r, data, layout)
    if _transport_suffix(data) == "_m3":  # a storm event: the volume carried over the storm
        unit = "Net longshore transport over the storm\n[10\u00b3 m\u00b3]"
    elif scenario_metric(data).event:  # an event folder written with yearly names
        unit = "Net longshore transport while the storm lasts\n[10\u00b3 m\u00b3/yr]"
    else:
        unit = "Net longshore transport\n[10\u00b3 m\u00b3/yr]"
    ax_q.set_ylabel(f"{unit} (+ toward higher chainage)")
    if formulas:
        ax_q.legend(loc="best", fontsize=8, framealpha=0.9)
    else:
        ax_q.text(
            0.5,
            0.5,
            f"no transport columns (q_<formula>{_transport_suffix(data)}) in the file",
            transform=ax_q.transAxes,
            ha="center",
            va="center",
        )
    ax_q.grid(True, axis="y", color="0.85", lw=0.6)

    handles = _shade_band_and_hotspots(ax_r, data, layout)
    metric = scenario_metric(data)
    for j, (x, r) in enumerate(_part_lines(tr, layout, metric.column)):
        ax_r.plot(
            x,
            r,
            color="black",
            lw=1.5,
            marker="o",
            ms=2.2,
            zorder=3,
            label=metric.legend if j == 0 else None,
        )
    ax_r.axhline(0.0, color="0.4", lw=0.8, zorder=0.6)
    handles += _sheltered_rug(ax_r, data, layout)
    line_handles, _ = ax_r.get_legend_handles_labels()
    _headroom(ax_r)
    fig.legend(
        handles=line_handles + handles,
        loc="outside lower center",
        ncols=3,
        fontsize=7.5,
        frameon=False,
    )
    ax_r.set_ylabel(metric.label.replace(" (", "\n("))
    ax_r.grid(True, axis="y", color="0.85", lw=0.6)
    _part_axis([ax_q, ax_r], layout)
    change = "shoreline shift over the storm" if metric.event else "shoreline change"
    fig.suptitle(f"Along-shore transport and {change} \u2014 scenario \u201c{data.name}\u201d")
    _footer(fig)
    return fig


def _hs_classes(lo: np.ndarray, hi: np.ndarray, max_classes: int = 6) -> np.ndarray:
    """Return display class edges [m] taken from the histogram's own bin edges (exact merging).

    Regular bins are merged in equal groups (0.5 m bins become 1 m classes, and so on);
    irregular ones by spreading the kept edges evenly over the list of edges.
    """
    edges = np.unique(np.concatenate([lo, hi]))
    if edges.size <= max_classes + 1:
        return edges
    widths = np.diff(edges)
    if np.allclose(widths, widths[0], rtol=1e-6):
        group = math.ceil(widths.size / max_classes)
        kept = edges[::group]
        return kept if kept[-1] >= edges[-1] else np.append(kept, kept[-1] + group * widths[0])
    idx = np.unique(np.round(np.linspace(0, edges.size - 1, max_classes + 1)).astype(int))
    return edges[idx]


def _wave_rose_figure(data: ScenarioData, waves):
    from matplotlib import colormaps
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    fig = _new_figure(8.0, 6.6)
    ax = fig.add_subplot(projection="polar")
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)
    ax.set_thetagrids(range(0, 360, 45), ["N", "NE", "E", "SE", "S", "SW", "W", "NW"])
    normal = data.summary.get("mean_normal_az_deg")
    try:
        normal = float(normal)
    except (TypeError, ValueError):
        normal = float("nan")
    hours = waves["hours"].to_numpy(float)
    total = float(hours[hours > 0].sum()) if hours.size else 0.0
    handles = []
    rmax = 1.0
    subtitle = "Bars point to where the waves come FROM (clockwise from true north)."
    if total > 0:
        lo_d = np.mod(waves["dir_from_deg_lo"].to_numpy(float), 360.0)
        width_d = np.mod(waves["dir_from_deg_hi"].to_numpy(float) - lo_d, 360.0)
        width_d[width_d == 0] = 360.0  # a single bin spanning every direction
        hs_lo, hs_hi = waves["hs_m_lo"].to_numpy(float), waves["hs_m_hi"].to_numpy(float)
        edges = _hs_classes(hs_lo, hs_hi)
        klass = np.clip(np.searchsorted(edges, hs_lo, side="right") - 1, 0, edges.size - 2)
        n_cls = max(edges.size - 1, 1)
        cmap = colormaps["YlGnBu"]  # sequential, light to dark: reads in grey print
        colours = [cmap(0.15 + 0.85 * k / max(n_cls - 1, 1)) for k in range(n_cls)]
        sectors, sector_of = np.unique(np.round(lo_d, 6), return_inverse=True)
        sector_width = np.zeros(sectors.size)
        np.maximum.at(sector_width, sector_of, width_d)
        theta = np.radians(sectors + sector_width / 2.0)
        pct = 100.0 * np.where(hours > 0, hours, 0.0) / total
        bottom = np.zeros(sectors.size)
        for k in range(n_cls):
            sel = klass == k
            heights = np.bincount(sector_of[sel], weights=pct[sel], minlength=sectors.size)
            if not heights.any():
                continue
            ax.bar(
                theta,
                heights,
                width=np.radians(sector_width) * 0.96,
                bottom=bottom,
                color=colours[k],
                edgecolor="black",
                linewidth=0.5,
                align="center",
                zorder=2,
            )
            bottom += heights
            label = f"Hs {edges[k]:g}\u2013{edges[k + 1]:g} m"
            handles.append(Patch(fc=colours[k], ec="black", lw=0.5, label=label))
        rmax = float(bottom.max()) if bottom.max() > 0 else 1.0
        ax.set_ylim(0, rmax * 1.08)
        # Radial labels on the landward side, where few waves come from.
        rlabel_at = (normal + 180.0 - 22.5) % 360.0 if np.isfinite(normal) else 112.5
        ax.set_rlabel_position(rlabel_at)
        ax.yaxis.set_major_formatter(lambda v, _pos: f"{v:g} %")
        ax.yaxis.set_major_locator(_max_n_locator(4))
        ax.tick_params(axis="y", labelsize=8)
        subtitle += f" Radius: share of time [%] of {total:,.0f} h."
    else:
        ax.text(
            0.5,
            0.5,
            "no wave hours in wave_climate.csv",
            transform=ax.transAxes,
            ha="center",
            va="center",
        )
    if np.isfinite(normal):
        t = math.radians(normal)
        ax.plot([t, t], [0, rmax * 1.08], color="black", lw=2.2, ls=(0, (5, 2)), zorder=5)
        handles.append(
            Line2D(
                [],
                [],
                color="black",
                lw=2.2,
                ls=(0, (5, 2)),
                label=f"mean seaward normal\nof the coast ({normal:.0f}\u00b0)",
            )
        )
    if handles:
        fig.legend(handles=handles, loc="outside right center", fontsize=8, frameon=False)
    fig.suptitle(f"Offshore wave climate \u2014 scenario \u201c{data.name}\u201d")
    ax.set_title(
        subtitle + "\nWaves from more than 90\u00b0 off the local seaward normal come from land "
        "and move no sand.",
        fontsize=8,
        pad=18,
    )
    _footer(fig)
    return fig


def _max_n_locator(nbins: int):
    from matplotlib.ticker import MaxNLocator

    return MaxNLocator(nbins=nbins)


def _vs_reference_figure(data: ScenarioData, base: ScenarioData):
    layout = part_layout(data.shoreline, data.transects)
    metric, base_metric = scenario_metric(data), scenario_metric(base)
    base_label = "reference" if base.name == "reference" else f"reference \u201c{base.name}\u201d"
    same = metric.column == base_metric.column
    fig = _new_figure(9.0, 4.6 if same else 7.0)
    if same:
        axes = [fig.add_subplot()]
        ax_base = ax_scen = axes[0]
    else:  # a storm's shift [m] and the reference's rate [m/yr] do not share an axis
        axes = list(fig.subplots(2, 1, sharex=True))
        ax_base, ax_scen = axes
    handles = _shade_band_and_hotspots(ax_scen, data, layout)
    for j, (x, r) in enumerate(_part_lines(base.transects, layout, base_metric.column)):
        ax_base.plot(
            x,
            r,
            color="#0072B2",
            lw=1.8,
            ls=(0, (5, 2)),
            zorder=3,
            label=f"{base_label}: {base_metric.legend}" if j == 0 else None,
        )
    for j, (x, r) in enumerate(_part_lines(data.transects, layout, metric.column)):
        ax_scen.plot(
            x,
            r,
            color="black",
            lw=1.6,
            marker="o",
            ms=2.2,
            zorder=4,
            label=f"scenario \u201c{data.name}\u201d: {metric.legend}" if j == 0 else None,
        )
    if not same and np.isfinite(base_metric.band) and base_metric.band > 0:
        ax_base.axhspan(-base_metric.band, base_metric.band, fc="0.88", ec="none", zorder=0)
    for ax in axes:
        ax.axhline(0.0, color="0.4", lw=0.8, zorder=0.6)
        ax.grid(True, axis="y", color="0.85", lw=0.6)
    ax_base.set_ylabel(base_metric.label.replace(" (", "\n("))
    ax_scen.set_ylabel(metric.label.replace(" (", "\n("))
    lines = []
    for ax in dict.fromkeys(axes):
        lines += ax.get_legend_handles_labels()[0]
    _headroom(ax_scen)
    fig.legend(
        handles=lines + handles, loc="outside lower center", ncols=3, fontsize=7.5, frameon=False
    )
    _part_axis(axes, layout)
    what = "against the reference" if same else "with the reference\u2019s yearly rate above"
    fig.suptitle(f"{metric.title} \u2014 scenario \u201c{data.name}\u201d {what}", fontsize=11)
    _footer(fig)
    return fig


# --------------------------------------------------------------------------------------------
# The ensemble of [uncertainty] (shoreline/ensemble.py): bands, hotspot probabilities and the
# sensitivity chart, drawn only where the files carry them
# --------------------------------------------------------------------------------------------

_BAND_GREY = "0.78"


def _ensemble_bands(ax_q, ax_r, data: ScenarioData, layout) -> None:
    """Shade the members' p05-p95 band and draw their median, in both panels (if present).

    The band is a translucent grey with dotted dark edges (the hatching of the hotspots shows
    through, and the edges keep it apart from the stable band's plain grey) and the median a
    dashed dark line, so in grey print they stay apart from the deterministic line (solid
    black).
    """
    tr = data.transects
    metric = scenario_metric(data)
    stem = "shift" if metric.event else "rate"
    unit = "_m" if metric.event else "_m_per_yr"
    suffix = _transport_suffix(data)
    panels = (
        (ax_q, f"q_p05{suffix}", f"q_p50{suffix}", f"q_p95{suffix}", 1000.0, "net transport"),
        (ax_r, f"{stem}_p05{unit}", f"{stem}_p50{unit}", f"{stem}_p95{unit}", 1.0, stem),
    )
    for ax, lo, mid, hi, scale, what in panels:
        if not all(c in tr.columns for c in (lo, mid, hi)):
            continue
        parts = zip(
            _part_lines(tr, layout, lo),
            _part_lines(tr, layout, mid),
            _part_lines(tr, layout, hi),
            strict=True,
        )
        for j, ((x, a), (_, m), (_, b)) in enumerate(parts):
            ax.fill_between(
                x,
                a / scale,
                b / scale,
                facecolor=_BAND_GREY,
                alpha=0.6,
                edgecolor="0.35",
                linestyle=(0, (1, 1.5)),
                lw=0.9,
                zorder=0.4,
                label=f"ensemble p05\u2013p95 of the {what}" if j == 0 else None,
            )
            ax.plot(
                x,
                m / scale,
                color="0.3",
                lw=1.1,
                ls=(0, (4, 2)),
                zorder=2.5,
                label=f"ensemble median of the {what}" if j == 0 else None,
            )


def _hotspot_probability(hot) -> float | None:
    """A hotspot row's ensemble probability, or None where the layer has none."""
    try:
        p = float(hot.get("probability"))
    except (TypeError, ValueError):
        return None
    return p if np.isfinite(p) else None


def _map_label(hot, hid: int, hclass: str) -> str:
    """The map label of a hotspot: ``E1``, and with an ensemble its probability (``E1 97 %``)."""
    p = _hotspot_probability(hot)
    text = hotspot_label(hid, hclass)
    return text if p is None else f"{text} {percent_text(p)}"


def percent_text(p: float) -> str:
    """A share as a percentage that never rounds to certainty it does not have.

    Examples
    --------
    >>> [percent_text(p) for p in (1.0, 0.998, 0.5, 0.004, 0.0)]
    ['100\u2009%', '>99\u2009%', '50\u2009%', '<1\u2009%', '0\u2009%']
    """
    if 0.99 < p < 1.0:
        return ">99\u2009%"
    if 0.0 < p < 0.01:
        return "<1\u2009%"
    return f"{p * 100:.0f}\u2009%"


def _ensemble_map_handles(data: ScenarioData) -> list:
    """The legend entry that says what a hotspot label's percentage is (ensembles only)."""
    from matplotlib.lines import Line2D

    hot = data.hotspots
    if len(hot) == 0 or "probability" not in hot.columns:
        return []
    return [
        Line2D(
            [],
            [],
            ls="",
            label="E1 97 %: share of members keeping the class",
        )
    ]


def _has_sensitivity(data: ScenarioData) -> bool:
    ens = data.summary.get("ensemble")
    return isinstance(ens, dict) and bool(ens.get("factors"))


#: Rows of the sensitivity chart: the coast, then the strongest hotspots.
SENSITIVITY_HOTSPOTS = 10


def _sensitivity_figure(data: ScenarioData):
    """First-order indices of every uncertain input, per hotspot and for the coast.

    A grid (rows: the coast's mean net transport, then the strongest hotspots' mean rate or
    shift; columns: the inputs) shaded light to dark by the index and with the index written
    in each cell, so that it reads in grey print; the largest of each row is boxed.
    """
    from matplotlib.patches import Rectangle

    ens = data.summary["ensemble"]
    factors = [str(f) for f in ens["factors"]]
    rows = [("coast: mean net transport", ens.get("coast_net_transport") or {})]
    hot = [h for h in ens.get("hotspots", []) if isinstance(h, dict)]
    strongest = _strongest_ids(data.hotspots, SENSITIVITY_HOTSPOTS)
    metric = scenario_metric(data)
    what = "mean shift" if metric.event else "mean rate"
    for h in hot:
        if strongest and int(h.get("hotspot_id", -1)) not in strongest:
            continue
        label = hotspot_label(h.get("hotspot_id", 0), h.get("class", ""))
        p = h.get("probability")
        share = f", p = {float(p):.2f}" if isinstance(p, (int, float)) else ""
        rows.append((f"{label}: {what}{share}", h))
    values = np.array(
        [[float((r.get("first_order") or {}).get(f, np.nan)) for f in factors] for _, r in rows]
    )
    shown = np.clip(np.nan_to_num(values, nan=0.0), 0.0, 1.0)
    height = 1.6 + 0.42 * len(rows)
    width = max(6.5, 2.6 + 0.95 * len(factors))
    fig = _new_figure(width, height)
    ax = fig.add_subplot()
    ax.imshow(shown, cmap="Greys", vmin=0.0, vmax=1.25, aspect="auto")
    for i in range(len(rows)):
        best = int(np.nanargmax(values[i])) if np.isfinite(values[i]).any() else -1
        for j in range(len(factors)):
            v = values[i, j]
            text = "\u2013" if not np.isfinite(v) else f"{max(v, 0.0):.2f}"
            ax.text(
                j,
                i,
                text,
                ha="center",
                va="center",
                fontsize=8.5,
                color="white" if shown[i, j] > 0.55 else "black",
                fontweight="bold" if j == best else "normal",
            )
            if j == best:
                ax.add_patch(
                    Rectangle((j - 0.48, i - 0.46), 0.96, 0.92, fill=False, ec="black", lw=1.6)
                )
    ax.set_xticks(range(len(factors)), [f.replace("_", " ") for f in factors], fontsize=8)
    ax.set_yticks(range(len(rows)), [r[0] for r in rows], fontsize=8)
    ax.tick_params(axis="x", labelrotation=30)
    ax.set_title(
        f"First-order sensitivity indices (share of the variance) \u2014 scenario "
        f"\u201c{data.name}\u201d",
        fontsize=10.5,
    )
    ax.set_xlabel("uncertain input (largest index of each row boxed)", fontsize=8.5)
    _footer(fig)
    return fig


# --------------------------------------------------------------------------------------------
# The forward projection: shift along the shore, and the projected shorelines on a map
# --------------------------------------------------------------------------------------------


def projection_years(data: ScenarioData) -> list[tuple[int, str]]:
    """The report years of a projection and their transect columns (``shift_<n>yr_m``).

    Examples
    --------
    >>> import pandas as pd
    >>> d = ScenarioData(Path("."), "x", {}, None, pd.DataFrame(columns=["shift_10yr_m",
    ...     "shift_5yr_m", "rate_m_per_yr"]), None)
    >>> projection_years(d)
    [(5, 'shift_5yr_m'), (10, 'shift_10yr_m')]
    """
    import re

    found = []
    for column in data.transects.columns:
        match = re.fullmatch(r"shift_(\d+)yr_m", str(column))
        if match:
            found.append((int(match.group(1)), str(column)))
    return sorted(found)


def _year_styles(count: int) -> list[dict]:
    """Line styles of the report years: darker and more solid the later (reads in grey)."""
    from matplotlib import colormaps

    cmap = colormaps["viridis"]
    dashes = [(0, (1, 1.5)), (0, (4, 2)), (0, (6, 2, 1, 2)), "-"]
    out = []
    for k in range(count):
        frac = 0.85 - 0.85 * (k / max(count - 1, 1))
        style = dashes[-1] if k == count - 1 else dashes[k % (len(dashes) - 1)]
        out.append({"color": cmap(frac), "ls": style, "lw": 1.3 + 0.5 * k / max(count - 1, 1)})
    return out


def _year_label(year: int, start) -> str:
    return f"year {year}" + (f" ({int(start) + year})" if start is not None else "")


def write_projection_figures(data: ScenarioData, dpi: int = 150) -> list[Path]:
    """Draw a scenario's projection figures into ``<scenario>/projection/``.

    ``shift.png``: the shoreline shift along the shore for each report year; ``map.png``:
    today's shoreline and the projected ones. Both from the scenario folder's files
    (``transects`` columns ``shift_<n>yr_m``, ``summary.json`` member ``projection``).
    """
    folder = data.folder / PROJECTION_FOLDER
    return [
        _save(_projection_shift_figure(data), folder / "shift.png", dpi),
        _save(_projection_map_figure(data), folder / "map.png", dpi),
    ]


def _projection_shift_figure(data: ScenarioData):
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    tr = data.transects
    proj = data.summary.get("projection") or {}
    start = (proj.get("settings") or {}).get("start_year")
    layout = part_layout(data.shoreline, tr)
    fig = _new_figure(9.0, 5.0)
    ax = fig.add_subplot()
    years = projection_years(data)
    handles = []
    for (year, column), style in zip(years, _year_styles(len(years)), strict=True):
        for j, (x, v) in enumerate(_part_lines(tr, layout, column)):
            ax.plot(x, v, label=_year_label(year, start) if j == 0 else None, zorder=3, **style)
    ax.axhline(0.0, color="0.3", lw=0.9, zorder=2)
    for fill in proj.get("nourishments") or []:
        offset = layout.get(int(fill.get("part_id", 0)), (0.0, 0.0))[0]
        lo = (offset + float(fill["from_chainage_m"])) / 1000.0
        hi = (offset + float(fill["to_chainage_m"])) / 1000.0
        ax.axvspan(lo, hi, fc="#f1e3b3", ec="0.5", hatch="xx", lw=0, zorder=0.5)
        ax.text(
            0.5 * (lo + hi),
            0.98,
            str(fill.get("name", "")),
            transform=ax.get_xaxis_transform(),
            ha="center",
            va="top",
            fontsize=8,
            bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8},
        )
    if proj.get("nourishments"):
        handles.append(Patch(fc="#f1e3b3", ec="0.5", hatch="xx", label="nourishment stretch"))
    setback = (proj.get("settings") or {}).get("setback_m")
    if setback:
        ax.axhline(-float(setback), color="black", lw=1.0, ls=(0, (8, 3)), zorder=2)
        handles.append(
            Line2D([], [], color="black", lw=1.0, ls=(0, (8, 3)), label=f"setback {setback:g} m")
        )
    frame = read_structures(data.folder)
    if frame is not None and len(frame) and "chainage_m" in frame.columns:
        for _, row in frame.iterrows():
            offset = layout.get(int(row.get("part_id", 0)), (0.0, 0.0))[0]
            ax.axvline((offset + float(row["chainage_m"])) / 1000.0, color="black", lw=2.2)
        handles.append(Line2D([], [], color="black", lw=2.2, label="structure"))
    _headroom(ax)
    line_handles, _ = ax.get_legend_handles_labels()
    fig.legend(
        handles=line_handles + handles,
        loc="outside lower center",
        ncols=3,
        fontsize=7.5,
        frameon=False,
    )
    ax.set_ylabel(SHIFT_YEARS_LABEL.replace(" (", "\n("))
    ax.grid(True, axis="y", color="0.85", lw=0.6)
    _part_axis([ax], layout)
    fig.suptitle(f"Projected shoreline shift \u2014 scenario \u201c{data.name}\u201d")
    _footer(fig)
    return fig


def exaggeration(largest_shift_m: float, map_size_m: float, share: float = 0.03) -> float:
    """The factor shifts are drawn with on a map (a round number, never below 1).

    The largest shift drawn is then about ``share`` of the map's size.

    Examples
    --------
    >>> exaggeration(20.0, 10_000.0), exaggeration(500.0, 10_000.0), exaggeration(0.0, 1e4)
    (10.0, 1.0, 1.0)
    """
    if not (largest_shift_m > 0 and map_size_m > 0):
        return 1.0
    raw = share * map_size_m / largest_shift_m
    if raw <= 1.0:
        return 1.0
    power = 10.0 ** math.floor(math.log10(raw))
    for step in (5.0, 2.0, 1.0):
        if step * power <= raw:
            return step * power
    return power  # pragma: no cover


def _projection_map_figure(data: ScenarioData):
    from matplotlib.lines import Line2D

    tr = data.transects
    proj = data.summary.get("projection") or {}
    start = (proj.get("settings") or {}).get("start_year")
    shore_lines = [xy for g in data.shoreline.geometry for xy in _line_xy(g)]
    first, last = _ends(tr.geometry)
    allxy = np.vstack(shore_lines) if shore_lines else first[np.isfinite(first).all(axis=1)]
    if allxy.size == 0:
        raise OutputError(f"{data.folder / 'results.gpkg'}: no shoreline or transect geometry")
    xmin, ymin = allxy.min(axis=0)
    xmax, ymax = allxy.max(axis=0)
    size_m = max(xmax - xmin, ymax - ymin, 1.0)
    years = projection_years(data)
    shifts = np.array([tr[c].to_numpy(float) for _, c in years]) if years else np.zeros((0, 0))
    largest = float(np.nanmax(np.abs(shifts))) if shifts.size and np.isfinite(shifts).any() else 0
    factor = exaggeration(largest, size_m)
    vec = last - first
    length = np.hypot(vec[:, 0], vec[:, 1])
    with np.errstate(invalid="ignore", divide="ignore"):
        unit = vec / length[:, None]
    parts = tr["part_id"].to_numpy(int)
    pad = 0.12 * size_m
    x0, x1, y0, y1 = xmin - pad, xmax + pad, ymin - pad, ymax + pad
    aspect = (y1 - y0) / (x1 - x0)
    fig = _new_figure(8.0, float(np.clip(5.6 * aspect + 1.6, 4.0, 10.0)))
    ax = fig.add_subplot()
    land = read_layer(data.folder, "land")
    if land is not None and len(land):
        land.plot(ax=ax, color=_LAND_FILL, edgecolor="none", zorder=0)
    for xy in shore_lines:
        ax.plot(xy[:, 0], xy[:, 1], color="black", lw=1.6, zorder=4)
    handles = [Line2D([], [], color="black", lw=1.6, label="shoreline today")]
    for (year, _), shift, style in zip(years, shifts, _year_styles(len(years)), strict=True):
        moved = first + (factor * shift)[:, None] * unit
        for part in np.unique(parts):
            idx = np.flatnonzero(parts == part)
            ok = np.isfinite(moved[idx]).all(axis=1)
            for run in np.split(idx, np.flatnonzero(np.diff(ok.astype(int))) + 1):
                if run.size > 1 and np.isfinite(moved[run]).all():
                    ax.plot(moved[run, 0], moved[run, 1], zorder=3, **style)
        handles.append(Line2D([], [], label=_year_label(year, start), **style))
    frame = read_structures(data.folder)
    for g in [] if frame is None else frame.geometry:
        for xy in _line_xy(g):
            ax.plot(xy[:, 0], xy[:, 1], color="black", lw=3.0, solid_capstyle="butt", zorder=6)
    if frame is not None and len(frame):
        handles.append(Line2D([], [], color="black", lw=3.0, label="structure"))
    _map_axes(ax, x0, x1, y0, y1)
    crs_name = str(data.summary.get("working_crs_name") or getattr(tr.crs, "name", "") or "")
    ax.set_xlabel(f"Easting [m]  \u00b7  grid: {crs_name}", fontsize=9)
    ax.set_ylabel("Northing [m]", fontsize=9)
    _scale_bar(ax, x0, x1, y0, y1)
    conv = true_north_offset_deg(tr.crs, 0.5 * (xmin + xmax), 0.5 * (ymin + ymax))
    _north_arrow(ax, x0, x1, y0, y1, conv)
    fig.legend(handles=handles, loc="outside lower center", ncols=3, fontsize=7.5, frameon=False)
    drawn = "true scale" if factor == 1.0 else f"shifts drawn \u00d7{factor:g} across the shore"
    ax.set_title(
        f"Today\u2019s and projected shorelines ({drawn}) \u2014 scenario \u201c{data.name}\u201d",
        fontsize=11,
    )
    _footer(fig)
    return fig
