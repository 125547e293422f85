"""Tests of shoreline.figures on a small synthetic output folder.

The folder is invented (a curved bay of about 5 km and a straight 1.4 km stretch in UTM zone
12S, 40 transects, made-up rates and transports, two hotspots in the reference). Invented values
are only used to exercise plotting and structure; no test checks an invented number as a
physical result. ``build_output_folder`` is also used by tests/test_report.py.
"""

from __future__ import annotations

import json
import math
import time
from pathlib import Path

import geopandas as gpd
import numpy as np
import pandas as pd
import pytest
from PIL import Image
from shapely.geometry import LineString
from shapely.ops import substring

from shoreline.cautions import CAUTION
from shoreline.errors import OutputError
from shoreline.figures import (
    hotspot_label,
    nice_scale_length_m,
    part_layout,
    read_scenario,
    scenario_metric,
    true_north_offset_deg,
    write_figures,
)

CRS = "EPSG:32712"
CRS_NAME = "WGS 84 / UTM zone 12S"
STABLE_BAND = 0.5


# ---------------------------------------------------------------------------------------------
# The synthetic output folder
# ---------------------------------------------------------------------------------------------


def _coast_parts(n0: int = 30, n1: int = 10):
    """Return [(line, seaward_side_sign, n_transects)] for a bay (part 0) and a straight part 1."""
    cx, cy, radius = 652_000.0, 6_902_000.0, 2_500.0
    ang = np.radians(np.linspace(210.0, 330.0, 121))
    bay = LineString(np.column_stack([cx + radius * np.cos(ang), cy + radius * np.sin(ang)]))
    straight = LineString([(655_000.0, 6_900_900.0), (656_000.0, 6_901_900.0)])
    # Bay digitised west to east, sea (the bay centre) on the left; same for the straight part.
    return [(bay, +1.0, n0), (straight, +1.0, n1)]


def _transects_of(part_id: int, line: LineString, side: float, n: int, length_m: float = 300.0):
    spacing = line.length / n
    rows = []
    for i in range(n):
        s = (i + 0.5) * spacing
        p = line.interpolate(s)
        a, b = line.interpolate(max(s - 1.0, 0.0)), line.interpolate(min(s + 1.0, line.length))
        tx, ty = b.x - a.x, b.y - a.y
        norm = math.hypot(tx, ty)
        nx, ny = -ty / norm * side, tx / norm * side  # left of the digitised direction
        geom = LineString([(p.x, p.y), (p.x + nx * length_m, p.y + ny * length_m)])
        rows.append((part_id, s, math.degrees(math.atan2(nx, ny)) % 360.0, geom))
    return rows


EVENT_BAND_M = 1.0


def _scenario_frames(scale: float, storm_part1: bool, n_per_part=(30, 10), event: bool = False):
    parts = _coast_parts(*n_per_part)
    shore = gpd.GeoDataFrame(
        {
            "part_id": [0, 1],
            "closed": [False, False],
            "length_m": [parts[0][0].length, parts[1][0].length],
        },
        geometry=[parts[0][0], parts[1][0]],
        crs=CRS,
    )
    rows = []
    for pid, (line, side, n) in enumerate(parts):
        rows += _transects_of(pid, line, side, n)
    part = np.array([r[0] for r in rows])
    chain = np.array([r[1] for r in rows])
    normal = np.array([r[2] for r in rows])
    n_tr = len(rows)
    length0 = parts[0][0].length
    # Invented values: erosion in the west of the bay, accretion in the east, part 1 quiet with
    # its last three transects sheltered.
    phase = 2.0 * np.pi * chain / length0
    rate = np.where(part == 0, -2.2 * np.sin(phase), 0.2) * scale
    if storm_part1:
        first_of_part1 = int(np.argmax(part == 1))
        rate = np.where((part == 1) & (np.arange(n_tr) < first_of_part1 + 4), -0.9 * scale, rate)
    q_cerc = np.where(part == 0, 60e3 * np.cos(phase) + 20e3, 8e3) * scale
    sheltered = (part == 1) & (np.arange(n_tr) >= n_tr - 3)
    rate = np.where(sheltered, np.nan, rate)
    q_cerc = np.where(sheltered, 0.0, q_cerc)
    # A storm event is classed by its shoreline shift [m] against its own band, not by rate.
    shift = 0.8 * rate
    metric, band = (shift, EVENT_BAND_M) if event else (rate, STABLE_BAND)
    cls = np.where(metric < -band, "erosion", np.where(metric > band, "accretion", "stable"))
    cls = np.where(sheltered, "sheltered", cls)

    # Hotspots: contiguous runs of one class on one part.
    hot_id = np.full(n_tr, -1)
    hot_rows = []
    k = 0
    i = 0
    while i < n_tr:
        if cls[i] in ("erosion", "accretion"):
            j = i
            while j + 1 < n_tr and cls[j + 1] == cls[i] and part[j + 1] == part[i]:
                j += 1
            k += 1
            hot_id[i : j + 1] = k
            line = parts[part[i]][0]
            a, b = chain[i], chain[j]
            seg = substring(line, a, b)
            hot_rows.append(
                {
                    "hotspot_id": k,
                    "class": str(cls[i]),
                    "part_id": int(part[i]),
                    "start_chainage_m": a,
                    "end_chainage_m": b,
                    "length_m": b - a,
                    "mean_rate_m_per_yr": float(np.mean(metric[i : j + 1])),
                    "peak_rate_m_per_yr": float(
                        metric[i : j + 1][np.argmax(abs(metric[i : j + 1]))]
                    ),
                    "volume_m3_per_yr": float(np.mean(metric[i : j + 1]) * (b - a) * 7.5),
                    "geometry": seg,
                }
            )
            i = j + 1
        else:
            i += 1
    # A storm event's layer speaks in the event's units (as shoreline.export writes it):
    # transport as volumes over the event (q_<name>_m3), shift and volume change, no yearly rate.
    per = "" if event else "_per_yr"
    yearly = {} if event else {"dqdx_m2_per_yr": -7.5 * np.nan_to_num(rate), "rate_m_per_yr": rate}
    transects = gpd.GeoDataFrame(
        {
            "transect_id": np.arange(n_tr),
            "part_id": part,
            "chainage_m": chain,
            "normal_az_deg": normal,
            "hb_m": np.where(sheltered, np.nan, 1.2),
            "db_m": np.where(sheltered, np.nan, 1.55),
            "alpha_b_deg": np.where(sheltered, np.nan, 4.0),
            f"q_cerc_m3{per}": q_cerc,
            f"q_kamphuis_m3{per}": 0.55 * q_cerc,
            # Gross and one-way components are written too; they are not formulas.
            f"q_gross_m3{per}": 1.7 * np.abs(q_cerc),
            f"q_pos_m3{per}": 1.3 * np.abs(q_cerc),
            f"q_neg_m3{per}": -0.4 * np.abs(q_cerc),
            **yearly,
            **(
                {"shoreline_shift_m": shift, "volume_change_m3_per_m": 7.5 * shift} if event else {}
            ),
            "class": cls,
            "sheltered_fraction": np.where(sheltered, 1.0, 0.1),
            # NULL where a transect is in no hotspot, as the writers leave it
            "hotspot_id": pd.array(np.where(hot_id > 0, hot_id, None), dtype="Int64"),
        },
        geometry=[r[3] for r in rows],
        crs=CRS,
    )
    hotspots = gpd.GeoDataFrame(hot_rows, geometry="geometry", crs=CRS)
    if event:  # the event hotspot layer names its columns after the shift
        hotspots = hotspots.rename(
            columns={
                "mean_rate_m_per_yr": "mean_shift_m",
                "peak_rate_m_per_yr": "peak_shift_m",
                "volume_m3_per_yr": "volume_m3",
            }
        )
    mean_normal = math.degrees(
        math.atan2(np.sin(np.radians(normal)).mean(), np.cos(np.radians(normal)).mean())
    )
    return shore, transects, hotspots, mean_normal % 360.0


def _wave_climate_csv(path: Path, seed: int) -> None:
    rng = np.random.default_rng(seed)
    lines = ["dir_from_deg_lo,dir_from_deg_hi,hs_m_lo,hs_m_hi,hours"]
    for lo in (290, 300, 310, 320, 330, 340, 350, 0, 10, 20, 30, 40):
        off_deg = (lo + 5 - 350 + 180) % 360 - 180  # sector centre relative to 350 deg
        weight = math.exp(-(off_deg**2) / 1800.0)
        for k in range(8):
            hours = round(900.0 * weight * math.exp(-0.9 * k) * rng.uniform(0.6, 1.4), 1)
            if hours >= 1.0:
                lines.append(f"{lo},{lo + 10},{k * 0.5:g},{(k + 1) * 0.5:g},{hours}")
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")


def _invented_info(name: str, event: bool) -> dict:
    """The "info" member of summary.json: scenario definition and changes against the reference."""
    if name == "reference":
        return {}
    if event:
        return {
            "event_duration_h": 36.0,
            "scenario": {"kind": "storm", "hs_m": 3.5, "tp_s": 9.0, "dir_deg": 20.0},
            "versus_reference": {"event": True, "hotspots": [1, 2, 3]},
        }
    return {
        "scenario": {"kind": "climate", "hs_factor": 1.6},
        "versus_reference": {
            "event": False,
            "created": [3],
            "removed_reference": [],
            "worsened": [
                {
                    "hotspot_id": 1,
                    "reference_hotspot_id": 1,
                    "peak_rate_m_per_yr": -3.5,
                    "reference_peak_rate_m_per_yr": -2.2,
                }
            ],
        },
    }


def build_output_folder(
    root: Path, scenarios=("reference", "storm-sw"), n_per_part=(30, 10)
) -> Path:
    """Write an invented output folder (run.json + one folder per scenario) under ``root``."""
    root.mkdir(parents=True, exist_ok=True)
    for i, name in enumerate(scenarios):
        folder = root / name
        folder.mkdir(exist_ok=True)
        storm = name != "reference"
        event = name.startswith("event")  # e.g. "event-ne": a storm event (shift, not rate)
        shore, transects, hotspots, mean_normal = _scenario_frames(
            1.6 if storm else 1.0, storm, n_per_part, event
        )
        gpkg = folder / "results.gpkg"
        shore.to_file(gpkg, layer="shoreline", driver="GPKG")
        transects.to_file(gpkg, layer="transects", driver="GPKG")
        hotspots.to_file(gpkg, layer="hotspots", driver="GPKG")
        _wave_climate_csv(folder / "wave_climate.csv", seed=i)
        metric = transects["shoreline_shift_m" if event else "rate_m_per_yr"].to_numpy(float)
        worst = int(np.nanargmin(metric))
        summary = {
            "scenario": name,
            "primary": "cerc",
            "formulas": ["cerc", "kamphuis"],
            # an event's summary speaks of the event: its duration, not a yearly band
            **({"duration_h": 36.0} if event else {"stable_band_m_per_yr": STABLE_BAND}),
            "min_hotspot_length_m": 300.0,
            "working_crs": CRS,
            "working_crs_name": CRS_NAME,
            "mean_normal_az_deg": mean_normal,
            "n_transects": len(transects),
            "hotspots": {
                "erosion": int((hotspots["class"] == "erosion").sum()),
                "accretion": int((hotspots["class"] == "accretion").sum()),
            },
            "strongest_erosion": {
                "shift_m" if event else "rate_m_per_yr": float(metric[worst]),
                "transect_id": int(transects["transect_id"][worst]),
                "part_id": int(transects["part_id"][worst]),
                "chainage_m": float(transects["chainage_m"][worst]),
            },
            "waves": {"kind": "record", "hs_m": 0.9, "tp_s": 7.5, "dir_deg": 352.0, "hours": 8784},
            "closure_depth_m": 6.0,
            "berm_height_m": 1.5,
            "event": event,
            "info": _invented_info(name, event),
            "caution": CAUTION,
        }
        (folder / "summary.json").write_text(json.dumps(summary, indent=2), encoding="utf-8")
    run = {
        "tool": "shoreline",
        "version": "0.1.0",
        "command": ["shoreline", "run", "study.toml"],
        "started_utc": "2024-05-01T10:00:00Z",
        "study_file": "/data/bay & co/study.toml",
        "study": {"study": {"name": "Invented <bay> test"}, "coast": {"file": "coast.geojson"}},
        "settings": {
            "coast": {"file": "/data/bay & co/coast.geojson", "transect_spacing_m": 150.0},
            "waves": {"kind": "record", "file": "/data/waves.csv", "depth_m": 20.0},
            "breaking": {"method": "iterative", "breaker_index": 0.78},
            "transport": {"formulas": ["cerc", "kamphuis"], "primary": "cerc", "k_cerc": 0.39},
            "budget": {
                "stable_band_m_per_yr": STABLE_BAND,
                "berm_height_m": 1.5,
                "closure": {"method": "hallermeier", "depth_m": None},
            },
            "classify": {"stable_band_m_per_yr": STABLE_BAND, "event_stable_band_m": EVENT_BAND_M},
        },
        "inputs": {
            "/data/bay & co/coast.geojson": "a" * 64,
            "/data/waves.csv": "b" * 64,
        },
        "working_crs": CRS,
        "counts": {"transects": 40, "records": 8784, "records_skipped": 2},
        "timings_s": {"read": 0.1, "transects": 0.2, "waves": 0.5, "write": 0.4},
        "warnings": [
            "2 wave records skipped: <script>alert('x')</script> & Hs < 0",
            "transect 37-39 sheltered for the whole record",
        ],
        "scenarios": list(scenarios),
        "caution": CAUTION,
    }
    (root / "run.json").write_text(json.dumps(run, indent=2), encoding="utf-8")
    return root


@pytest.fixture(scope="module")
def out_dir(tmp_path_factory) -> Path:
    return build_output_folder(tmp_path_factory.mktemp("run") / "out")


# ---------------------------------------------------------------------------------------------
# Tests
# ---------------------------------------------------------------------------------------------

BASE_NAMES = {"map.png", "alongshore.png", "wave_climate.png"}


def _check_png(path: Path, dpi: int = 150) -> None:
    with Image.open(path) as img:
        assert img.format == "PNG"
        # the full caution rides in the PNG's text chunks (the footer is only a pointer)
        assert img.text["Disclaimer"] == CAUTION
        # matplotlib writes the pHYs chunk; PIL reads it back as dots per inch (pixels per metre
        # are rounded to an integer in the file, hence the small tolerance).
        assert img.info["dpi"][0] == pytest.approx(dpi, abs=0.1)
        assert min(img.size) >= 4 * dpi  # every figure is at least 4 inches on its short side
        grey = np.asarray(img.convert("L"), dtype=float)
    assert grey.std() > 15.0, f"{path.name} looks blank"
    # Grey print: there must be real dark ink (lines, text), not only light tints.
    assert (grey < 80).mean() > 0.002


def test_write_figures_scenario_without_reference(out_dir: Path) -> None:
    written = write_figures(out_dir / "reference")
    assert {p.name for p in written} == BASE_NAMES
    assert not (out_dir / "reference" / "vs_reference.png").exists()
    for path in written:
        assert path.parent == out_dir / "reference"
        _check_png(path)
    assert not list((out_dir / "reference").glob(".*.tmp")), "temporary file left behind"


def test_write_figures_with_reference_adds_comparison_fast_and_closed(out_dir: Path) -> None:
    import matplotlib.pyplot as plt

    t0 = time.perf_counter()
    written = write_figures(out_dir / "storm-sw", reference_dir=out_dir / "reference", dpi=160)
    elapsed = time.perf_counter() - t0
    assert {p.name for p in written} == BASE_NAMES | {"vs_reference.png"}
    for path in written:
        _check_png(path, dpi=160)
    # Target < 2 s for a few hundred transects (about 1.1-1.5 s measured for 330 on the
    # development machine); the bound leaves slack for a slow CI runner.
    assert elapsed < 4.0, f"figures took {elapsed:.2f} s"
    assert plt.get_fignums() == []  # the object interface never registers figures with pyplot


def test_storm_event_without_hotspot_layer_draws_shift_and_two_panels(tmp_path: Path) -> None:
    import pyogrio

    out = build_output_folder(tmp_path / "o", scenarios=("reference", "event-ne"))
    folder = out / "event-ne"
    gpkg = folder / "results.gpkg"
    # Rewrite the GeoPackage without the hotspot layer (a coast where nothing is flagged).
    layers = [str(n) for n in pyogrio.list_layers(gpkg)[:, 0]]
    keep = {n: gpd.read_file(gpkg, layer=n) for n in layers if n != "hotspots"}
    gpkg.unlink()
    for name, frame in keep.items():
        frame.to_file(gpkg, layer=name, driver="GPKG")
    data = read_scenario(folder)
    assert len(data.hotspots) == 0
    metric = scenario_metric(data)
    assert metric.column == "shoreline_shift_m" and metric.unit == "m" and metric.event
    # summary.json of the fixture has no event band: it is read from run.json [classify].
    assert metric.band == EVENT_BAND_M
    assert scenario_metric(read_scenario(out / "reference")).column == "rate_m_per_yr"
    written = write_figures(folder, reference_dir=out / "reference", dpi=40)  # structure only
    assert {p.name for p in written} == BASE_NAMES | {"vs_reference.png"}


def _texts(fig) -> str:
    """Every text a reader sees on a figure: legends, axis labels, titles (joined)."""
    from matplotlib.text import Text

    return "\n".join(t.get_text() for t in fig.findobj(Text) if t.get_text())


def _legend_texts(fig) -> list[str]:
    texts = []
    for legend in fig.legends + [ax.get_legend() for ax in fig.axes if ax.get_legend()]:
        texts += [t.get_text() for t in legend.get_texts()]
    return texts


def test_storm_event_figures_speak_of_shift_over_the_storm(tmp_path: Path) -> None:
    from shoreline.figures import _alongshore_figure, _map_figure, _vs_reference_figure

    out = build_output_folder(tmp_path / "o", scenarios=("reference", "event-ne"))
    data, base = read_scenario(out / "event-ne"), read_scenario(out / "reference")
    along, mapfig = _alongshore_figure(data), _map_figure(data)
    vs = _vs_reference_figure(data, base)
    assert "shoreline shift [m]" in _legend_texts(along)
    assert not any("rate" in t for t in _legend_texts(along))
    # the transport panel shows the volumes over the storm, in 10^3 m3 (not per year)
    assert "over the storm\n[10\u00b3 m\u00b3]" in _texts(along)
    assert "m\u00b3/yr" not in _texts(along) and "m/yr" not in _texts(along)
    assert any("coloured by shift [m]" in t for t in _legend_texts(mapfig))
    assert "m/yr" not in _texts(mapfig)
    legend = _legend_texts(vs)
    assert "scenario \u201cevent-ne\u201d: shoreline shift [m]" in legend
    assert "reference: shoreline change rate [m/yr]" in legend  # the reference keeps its rate
    # a yearly scenario's figures keep the rate
    assert "shoreline change rate [m/yr]" in _legend_texts(_alongshore_figure(base))


def test_reference_dir_same_as_scenario_draws_no_comparison(out_dir: Path, monkeypatch) -> None:
    from matplotlib.figure import Figure

    import shoreline.figures as figures

    calls = []

    def stub(name):
        def draw(*args):
            calls.append(name)
            return Figure(figsize=(1, 1))

        return draw

    for name in ("_map_figure", "_alongshore_figure", "_wave_rose_figure", "_vs_reference_figure"):
        monkeypatch.setattr(figures, name, stub(name))
    folder = out_dir / "reference"
    written = figures.write_figures(folder, reference_dir=folder)
    assert {p.name for p in written} == BASE_NAMES
    assert "_vs_reference_figure" not in calls


def test_transport_panel_plots_formulas_not_gross_or_one_way(out_dir: Path) -> None:
    from shoreline.figures import _transport_columns

    data = read_scenario(out_dir / "reference")
    assert [n for n, _ in _transport_columns(data)] == ["cerc", "kamphuis"]  # primary first
    data.summary.pop("formulas")  # without the list: every q column except gross/pos/neg
    assert {n for n, _ in _transport_columns(data)} == {"cerc", "kamphuis"}


def test_missing_files_raise_output_error(tmp_path: Path) -> None:
    with pytest.raises(OutputError, match="summary.json"):
        write_figures(tmp_path)
    (tmp_path / "summary.json").write_text("{}", encoding="utf-8")
    with pytest.raises(OutputError, match="results.gpkg"):
        write_figures(tmp_path)


def test_hotspot_label() -> None:
    assert hotspot_label(1, "erosion") == "E1"
    assert hotspot_label(np.int64(12), "accretion") == "A12"


@pytest.mark.parametrize(
    ("width_m", "expected_m"),
    [(6_000.0, 1_000.0), (2_400.0, 200.0), (30_000.0, 5_000.0), (999.0, 100.0), (3.0, 1.0)],
)
def test_nice_scale_length_is_round_and_at_most_a_fifth(width_m: float, expected_m: float) -> None:
    # A round length is 1, 2 or 5 times a power of ten (common practice for scale bars).
    got = nice_scale_length_m(width_m)
    assert got == expected_m
    assert got <= max(0.2 * width_m, 1.0)


def test_true_north_offset_against_pyproj_meridian_convergence() -> None:
    # Independent reference 1: PROJ's meridian convergence (pyproj.Proj.get_factors), which PROJ
    # reports with the opposite sign to our "grid north -> true north, clockwise" angle.
    # Independent reference 2 (from memory): the first-order transverse Mercator convergence
    # gamma = arctan(tan(lon - lon0) * sin(lat)) (Snyder 1987, USGS Prof. Paper 1395, TM
    # section). In a southern zone east of the central meridian, true north lies EAST of grid
    # north (meridians spread away from the south pole), so the angle is positive there.
    from pyproj import Proj, Transformer

    x, y = 652_000.0, 6_902_000.0
    lon, lat = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(x, y)
    conv = Proj(CRS).get_factors(lon, lat).meridian_convergence
    got = true_north_offset_deg(CRS, x, y)
    assert got == pytest.approx(-conv, abs=0.01)  # 0.01 deg: finite step of 0.01 deg of latitude
    lon0 = -111.0  # central meridian of UTM zone 12
    approx = math.degrees(
        math.atan(math.tan(math.radians(lon - lon0)) * math.sin(math.radians(lat)))
    )
    assert approx < 0 < got  # sign convention: ours is grid-to-true, the formula true-to-grid
    assert got == pytest.approx(-approx, abs=0.01)  # higher-order terms are ~1e-4 deg here
    assert true_north_offset_deg("EPSG:4326", 10.0, 50.0) is None  # geographic: no grid north
    assert true_north_offset_deg(None, 0.0, 0.0) is None


def test_part_layout_separates_parts_with_a_gap(out_dir: Path) -> None:
    shore = gpd.read_file(out_dir / "reference" / "results.gpkg", layer="shoreline")
    transects = gpd.read_file(out_dir / "reference" / "results.gpkg", layer="transects")
    layout = part_layout(shore, transects)
    assert sorted(layout) == [0, 1]
    (off0, span0), (off1, span1) = layout[0], layout[1]
    assert span1 == pytest.approx(shore.length_m[1])
    assert off0 == 0.0
    assert span0 == pytest.approx(shore.length_m[0])
    assert off1 > off0 + span0  # a gap: the parts are never joined
