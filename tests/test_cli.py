"""Bad input through the command line: one clear line, a non-zero exit, no traceback."""

from __future__ import annotations

import contextlib
import json
import os
import subprocess
import sys
import threading
import time
from pathlib import Path

import geopandas as gpd
import numpy as np
import pytest
import shapely

from shoreline.cautions import CAUTION, caution_lines
from shoreline.cli import main
from shoreline.errors import ShorelineError

GOOD_COAST = shapely.LineString([(500_000.0, 4_000_000.0), (505_000.0, 4_000_000.0)])


def study_text(coast="coast.gpkg", waves="hs_m = 1.2\ntp_s = 8.0\ndir_deg = 200.0", extra=""):
    return f'[coast]\nfile = "{coast}"\nsea = "right"\n\n[waves]\n{waves}\n{extra}'


def setup(tmp_path: Path, text: str, geoms=(GOOD_COAST,), crs="EPSG:32631") -> Path:
    gpd.GeoDataFrame(geometry=list(geoms), crs=crs).to_file(tmp_path / "coast.gpkg")
    path = tmp_path / "study.toml"
    path.write_text(text, encoding="utf-8")
    return path


def run_cli(capsys, *args) -> tuple[int, str]:
    code = main(["run", *map(str, args), "--no-figures", "--quiet"])
    err = capsys.readouterr().err.strip()
    return code, err


def assert_one_line(code: int, err: str, *words: str) -> None:
    assert code != 0
    assert len(err.splitlines()) == 1, err
    assert "Traceback" not in err
    for word in words:
        assert word in err, err


def record(tmp_path: Path, body: str) -> None:
    (tmp_path / "w.csv").write_text(body, encoding="utf-8")


def test_missing_coast_file(tmp_path, capsys):
    path = tmp_path / "study.toml"
    path.write_text(study_text(coast="nowhere.gpkg"))
    assert_one_line(*run_cli(capsys, path), "nowhere.gpkg")


def test_unreadable_coast_file(tmp_path, capsys):
    path = setup(tmp_path, study_text(coast="bad.geojson"))
    (tmp_path / "bad.geojson").write_text("this is not GeoJSON")
    assert_one_line(*run_cli(capsys, path), "bad.geojson")


def test_coast_with_only_points(tmp_path, capsys):
    path = setup(tmp_path, study_text(), geoms=[shapely.Point(500_000, 4_000_000)])
    assert_one_line(*run_cli(capsys, path), "coast.gpkg", "Point")


def test_coast_with_no_features(tmp_path, capsys):
    empty = gpd.GeoDataFrame({"a": []}, geometry=gpd.GeoSeries([], crs="EPSG:32631"))
    empty.to_file(tmp_path / "empty.gpkg")
    path = tmp_path / "study.toml"
    path.write_text(study_text(coast="empty.gpkg"))
    assert_one_line(*run_cli(capsys, path), "empty.gpkg")


@pytest.mark.filterwarnings("ignore:'crs' was not provided")  # writing the test file itself
def test_no_crs(tmp_path, capsys):
    # a Shapefile written without its .prj carries no CRS
    gpd.GeoDataFrame(geometry=[GOOD_COAST]).to_file(tmp_path / "c.shp")
    path = tmp_path / "study.toml"
    path.write_text(study_text(coast="c.shp"))
    assert_one_line(*run_cli(capsys, path), "crs")


@pytest.mark.parametrize(
    ("text", "words"),
    [
        (study_text(extra="[model]\nberm_hieght_m = 2.0\n"), ["berm_hieght_m", "berm_height_m"]),
        (study_text(extra='[model]\nberm_height_m = "two"\n'), ["berm_height_m", "number"]),
        (study_text(waves="hs_m = -1.0\ntp_s = 8.0\ndir_deg = 200.0"), ["hs_m", "> 0"]),
        (study_text(waves="hs_m = 1.0\ntp_s = 0.0\ndir_deg = 200.0"), ["tp_s", "> 0"]),
        (study_text().replace('"right"', '"seaward"'), ["sea", "left", "right"]),
        ("[coast\nfile = 1", ["TOML"]),
    ],
)
def test_bad_study_values(tmp_path, capsys, text, words):
    assert_one_line(*run_cli(capsys, setup(tmp_path, text)), "study.toml", *words)


def test_record_missing_column(tmp_path, capsys):
    record(tmp_path, "time,hs_m,tp_s\n2031-01-01T00:00Z,1.0,8.0\n")
    path = setup(tmp_path, study_text(waves='file = "w.csv"'))
    assert_one_line(*run_cli(capsys, path), "w.csv", "dir_deg")


def test_record_unparseable_value_names_line(tmp_path, capsys):
    record(
        tmp_path,
        "# a comment line\ntime,hs_m,tp_s,dir_deg\n2031-01-01T00:00Z,1.0,8.0,200\n"
        "2031-01-01T01:00Z,1.O,8.0,200\n",
    )
    path = setup(tmp_path, study_text(waves='file = "w.csv"'))
    assert_one_line(*run_cli(capsys, path), "w.csv", "line 4", "hs_m", "1.O")


def test_record_bad_time_names_line(tmp_path, capsys):
    record(tmp_path, "time,hs_m,tp_s,dir_deg\n2031-01-01T00:00Z,1.0,8.0,200\nyesterday,1,8,200\n")
    path = setup(tmp_path, study_text(waves='file = "w.csv"'))
    assert_one_line(*run_cli(capsys, path), "w.csv", "line 3", "yesterday")


def test_record_nan_rows_skipped_and_counted(tmp_path, capsys):
    rows = ["time,hs_m,tp_s,dir_deg"]
    for h in range(6):
        hs = "NaN" if h == 2 else ("" if h == 4 else "1.0")
        rows.append(f"2031-01-01T{h:02d}:00Z,{hs},8.0,200")
    record(tmp_path, "\n".join(rows) + "\n")
    path = setup(tmp_path, study_text(waves='file = "w.csv"'))
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--no-figures"]) == 0
    printed = capsys.readouterr().out
    assert "skipped 2 rows" in printed
    run = json.loads((out / "run.json").read_text())
    assert run["counts"]["records"] == 4 and run["counts"]["records_skipped"] == 2


def test_invalid_geometry_repaired_with_warning(tmp_path, capsys):
    bowtie = shapely.Polygon(
        [(500_000, 4_000_000), (502_000, 4_002_000), (502_000, 4_000_000), (500_000, 4_002_000)]
    )
    assert not bowtie.is_valid
    path = setup(tmp_path, study_text(), geoms=[bowtie])
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--no-figures"]) == 0
    printed = capsys.readouterr().out
    assert "make_valid" in printed or "repaired" in printed


def test_console_script_version_and_error_exit():
    done = subprocess.run(
        [sys.executable, "-m", "shoreline.cli", "--version"], capture_output=True, text=True
    )
    assert done.returncode == 0 and done.stdout.startswith("shoreline ")
    done = subprocess.run(
        [sys.executable, "-m", "shoreline.cli", "run", "no-such-study.toml"],
        capture_output=True,
        text=True,
    )
    assert done.returncode == 2
    assert done.stderr.count("\n") == 1 and "not found" in done.stderr


def test_transects_command(tmp_path, capsys):
    path = setup(tmp_path, study_text())
    assert main(["transects", str(path), "--out", str(tmp_path / "chk")]) == 0
    frame = gpd.read_file(tmp_path / "chk" / "transects.geojson")
    assert len(frame) == 51  # 5 km at 100 m: both ends included (see docs/methods.md)
    assert np.allclose(frame["normal_az_deg"], 180.0, atol=1.0)


def test_no_figures_then_report_rebuilds_without_recomputing(tmp_path, capsys):
    path = setup(tmp_path, study_text())
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--no-figures", "--quiet"]) == 0
    assert not (out / "report.html").exists() and not (out / "reference" / "map.png").exists()
    before = (out / "reference" / "transects.csv").read_bytes()
    assert main(["report", str(out)]) == 0
    assert (out / "report.html").exists() and (out / "reference" / "map.png").exists()
    assert (out / "reference" / "transects.csv").read_bytes() == before
    printed = capsys.readouterr().out.splitlines()  # what was redrawn, by relative path
    for name in ("reference/map.png", "reference/alongshore.png", "report.html"):
        assert f"  {name}" in printed
    assert main(["report", str(tmp_path / "nowhere")]) != 0
    err = capsys.readouterr().err
    assert "run.json" in err and len(err.strip().splitlines()) == 1


def test_lines_need_the_sea_side(tmp_path, capsys):
    path = setup(tmp_path, study_text().replace('sea = "right"\n', ""))
    code, err = run_cli(capsys, path)
    assert_one_line(code, err, "sea", "left", "right")


@pytest.mark.parametrize(
    "args",
    [
        ["run", "--debug", "{study}", "--quiet"],
        ["--debug", "run", "{study}", "--quiet"],
        ["--quiet", "run", "{study}", "--debug"],
        ["run", "{study}", "--quiet", "--debug"],
    ],
)
def test_debug_and_quiet_go_before_or_after_the_command(tmp_path, capsys, args):
    path = setup(tmp_path, study_text())
    out = tmp_path / "out"
    argv = [a.format(study=path) for a in args] + ["--out", str(out), "--no-figures"]
    assert main(argv) == 0
    assert capsys.readouterr().out.startswith("SCREENING ESTIMATE ONLY.")  # quiet: the caution
    (tmp_path / "coast.gpkg").unlink()
    with pytest.raises(ShorelineError):  # debug: the error itself, for its traceback
        main(argv)


def test_quiet_transects_and_report_print_only_the_caution(tmp_path, capsys):
    path = setup(tmp_path, study_text())
    assert main(["--quiet", "transects", str(path), "--out", str(tmp_path / "t")]) == 0
    assert capsys.readouterr().out.strip() == "\n".join(caution_lines())


def test_bare_command_prints_usage_to_stderr_and_exits_2(capsys):
    assert main([]) == 2
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err.startswith("usage: shoreline")


def test_help_prints_the_whole_caution(capsys):
    with pytest.raises(SystemExit) as done:
        main(["--help"])
    assert done.value.code == 0
    assert CAUTION in " ".join(capsys.readouterr().out.split())


def test_a_library_message_over_several_lines_is_printed_as_one(tmp_path, capsys):
    # the CSV reader's own message ends in a line break
    record(
        tmp_path,
        "time,hs_m,tp_s,dir_deg\n2031-01-01T00:00Z,1,8,200\n2031-01-01T01:00Z,1,8,200,5,6\n",
    )
    path = setup(tmp_path, study_text(waves='file = "w.csv"'))
    assert_one_line(*run_cli(capsys, path), "w.csv")


def test_a_named_pipe_as_study_file_is_refused_without_waiting(tmp_path):
    fifo = tmp_path / "study.toml"
    os.mkfifo(fifo)
    done = subprocess.run(
        [sys.executable, "-m", "shoreline.cli", "run", str(fifo)],
        capture_output=True,
        text=True,
        timeout=20,
    )
    assert done.returncode == 2
    assert done.stderr.count("\n") == 1 and "named pipe" in done.stderr and str(fifo) in done.stderr


@pytest.mark.parametrize(
    ("coast_key", "extra", "words"),
    [
        # an orientation window of 1e-9 m measures nothing: every normal was NaN, then a crash
        ("orientation_window_m = 1e-9", "", ["orientation_window_m", ">= 1 and"]),
        # a spacing of a micrometre would lay out billions of transects
        ("spacing_m = 1e-6", "", ["spacing_m", ">= 1 and"]),
        # transects a million km long were written with null coordinates
        ("transect_length_m = 1e9", "", ["transect_length_m", "<= 100000 m"]),
        # sand as light as the water moves the wrong way (negative transport), silently
        ("", "[sediment]\ndensity_kg_m3 = 1000.0\n", ["density_kg_m3", ">= 1500"]),
        ("", "[sediment]\ndensity_kg_m3 = 1025.0\n", ["density_kg_m3", "denser than any water"]),
    ],
)
def test_study_values_beyond_physical_bounds(tmp_path, capsys, coast_key, extra, words):
    text = study_text(extra=extra).replace('sea = "right"', f'sea = "right"\n{coast_key}')
    assert_one_line(*run_cli(capsys, setup(tmp_path, text)), "study.toml", *words)


NC_ATTRS = {
    "hs": ("sea_surface_wave_significant_height", "m"),
    "tp": ("sea_surface_wave_period_at_variance_spectral_density_maximum", "s"),
    "dirm": ("sea_surface_wave_from_direction", "degree"),
}


def write_nc(path: Path, hs, tp, dr, points=None, fill_value=None, depth=None) -> None:
    """A CF wave record of hourly steps; ``points`` (lon, lat rows) make it (time, station)."""
    import xarray as xr

    hs = np.asarray(hs, float)
    times = np.datetime64("2031-01-01T00:00", "ns") + np.arange(hs.shape[0]) * np.timedelta64(
        3600, "s"
    )
    dims = ("time",) if points is None else ("time", "station")
    data = {
        key: (dims, np.asarray(v, float), {"standard_name": s, "units": u})
        for (key, (s, u)), v in zip(NC_ATTRS.items(), (hs, tp, dr), strict=True)
    }
    if points is not None:
        data["lon"] = ("station", points[:, 0], {"standard_name": "longitude"})
        data["lat"] = ("station", points[:, 1], {"standard_name": "latitude"})
    if depth is not None:
        standard = {"standard_name": "sea_floor_depth_below_sea_surface", "units": "m"}
        data["depth"] = ("station", np.asarray(depth, float), standard)
    ds = xr.Dataset(data, coords={"time": ("time", times, {"standard_name": "time"})})
    encoding = {key: {"_FillValue": fill_value} for key in NC_ATTRS}
    ds.to_netcdf(path, encoding=encoding)


def strict_json(path: Path):
    """Parse JSON as the standard has it: Infinity and NaN are not JSON."""

    def refuse(name):
        raise ValueError(f"{path.name} holds {name}, which is not JSON")

    return json.loads(path.read_text(encoding="utf-8"), parse_constant=refuse)


@pytest.mark.parametrize(
    ("row", "words"),
    [
        ("Infinity,8.0,200", ["line 3", "hs_m = inf", "<= 25 m"]),
        ("31.0,8.0,200", ["line 3", "hs_m = 31", "<= 25 m", "about 20 m"]),
        ("1.0,1e4,200", ["line 3", "tp_s = 10000", "<= 40 s"]),
        ("1.0,-inf,200", ["line 3", "tp_s = -inf"]),
    ],
)
def test_record_values_beyond_physical_bounds_name_the_line(tmp_path, capsys, row, words):
    record(
        tmp_path,
        f"time,hs_m,tp_s,dir_deg\n2031-01-01T00:00Z,1.0,8.0,200\n2031-01-01T01:00Z,{row}\n",
    )
    path = setup(tmp_path, study_text(waves='file = "w.csv"'))
    assert_one_line(*run_cli(capsys, path), "w.csv", *words)


def test_record_csv_reader_message_is_one_line(tmp_path, capsys):
    # pandas' tokenizer message ends in a newline
    record(
        tmp_path,
        "time,hs_m,tp_s,dir_deg\n2031-01-01T00:00Z,1,8,200\n2031-01-01T01:00Z,1,8,200,5,6\n",
    )
    path = setup(tmp_path, study_text(waves='file = "w.csv"'))
    assert_one_line(*run_cli(capsys, path), "w.csv", "Expected 4 fields")


def test_netcdf_reader_message_is_one_line(tmp_path, capsys):
    # xarray's "no backend" message holds two links on lines of their own
    (tmp_path / "w.nc").write_text("time,hs_m\n2031-01-01T00:00Z,1\n")
    path = setup(tmp_path, study_text(waves='file = "w.nc"'))
    assert_one_line(*run_cli(capsys, path), "w.nc", "cannot read as netCDF", "docs.xarray.dev")


def test_netcdf_default_fill_value_is_missing_not_a_wave(tmp_path, capsys):
    # A variable written without _FillValue holds netCDF's default fill value, 9.96921e36,
    # where it was never written (netCDF users' guide, from memory): a missing step, skipped
    # and counted like NaN; it was taken as a wave 1e36 m high and gave infinite transport.
    hs = np.full(6, 1.0)
    hs[2] = 9.969209968386869e36
    write_nc(tmp_path / "w.nc", hs, np.full(6, 8.0), np.full(6, 200.0), fill_value=False)
    path = setup(tmp_path, study_text(waves='file = "w.nc"'))
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--no-figures"]) == 0
    assert "skipped 1 time steps" in capsys.readouterr().out
    run = json.loads((out / "run.json").read_text())
    assert run["counts"]["records"] == 5 and run["counts"]["records_skipped"] == 1
    transects = strict_json(out / "reference" / "transects.geojson")
    q = [f["properties"]["q_cerc_m3_per_yr"] for f in transects["features"]]
    assert all(np.isfinite(q))


def test_netcdf_values_beyond_physical_bounds_name_the_variable(tmp_path, capsys):
    hs = np.full(4, 1.0)
    hs[1] = np.inf
    write_nc(tmp_path / "w.nc", hs, np.full(4, 8.0), np.full(4, 200.0))
    path = setup(tmp_path, study_text(waves='file = "w.nc"'))
    assert_one_line(*run_cli(capsys, path), "w.nc", "'hs'", "time index 1", "<= 25 m")


def test_netcdf_point_without_a_longitude_names_the_variable(tmp_path, capsys):
    points = np.array([[np.nan, 36.1], [3.05, 36.1]])
    write_nc(
        tmp_path / "w.nc", np.ones((4, 2)), np.full((4, 2), 8.0), np.full((4, 2), 200.0), points
    )
    path = setup(tmp_path, study_text(waves='file = "w.nc"'))
    assert_one_line(*run_cli(capsys, path), "w.nc", "'lon'", "longitude", "wave point 0")


def test_netcdf_point_latitude_out_of_range(tmp_path, capsys):
    points = np.array([[3.01, 36.1], [3.05, 136.1]])
    write_nc(
        tmp_path / "w.nc", np.ones((4, 2)), np.full((4, 2), 8.0), np.full((4, 2), 200.0), points
    )
    path = setup(tmp_path, study_text(waves='file = "w.nc"'))
    assert_one_line(*run_cli(capsys, path), "w.nc", "'lat'", "136.1", "[-90, 90]")


def test_netcdf_with_two_wave_points_through_the_cli(tmp_path, capsys):
    # A documented feature: a (time, point) record with CF lon/lat; the summary's mean height
    # failed on the 2-D heights ("Axis must be specified ..."). Each point counts equally.
    points = np.array([[3.01, 36.1], [3.05, 36.1]])
    hs = np.c_[np.full(4, 1.0), np.full(4, 2.0)]
    write_nc(tmp_path / "w.nc", hs, np.full((4, 2), 8.0), np.full((4, 2), 200.0), points)
    extra = '\n[[scenario]]\nname = "higher"\nhs_factor = 1.1\n'
    path = setup(tmp_path, study_text(waves='file = "w.nc"', extra=extra))
    out = tmp_path / "out"
    assert main(["run", str(path), "--out", str(out), "--no-figures"]) == 0
    printed = capsys.readouterr().out
    assert "record of 4 steps, mean Hs 1.50 m" in printed
    summary = json.loads((out / "reference" / "summary.json").read_text())
    assert summary["waves"]["hs_mean_m"] == pytest.approx(1.5)


def coast_geojson(tmp_path: Path, geometry: dict) -> Path:
    """A GeoJSON coast of one feature written as text (GIS writers refuse broken geometry)."""
    feature = {"type": "Feature", "properties": {}, "geometry": geometry}
    text = json.dumps({"type": "FeatureCollection", "features": [feature]})
    (tmp_path / "c.geojson").write_text(text, encoding="utf-8")
    path = tmp_path / "study.toml"
    path.write_text(study_text(coast="c.geojson"), encoding="utf-8")
    return path


@pytest.mark.parametrize(
    ("geometry", "words"),
    [
        ({"type": "LineString", "coordinates": [[3.0, 43.0]]}, ["feature 0", "single vertex"]),
        (
            {
                "type": "Polygon",
                "coordinates": [[[3.0, 43.0], [3.1, 43.0], [3.1, 43.1], [3.0, 43.1]]],
            },
            ["feature 0", "not closed"],
        ),
    ],
)
def test_geometry_gdal_reads_but_shapely_refuses(tmp_path, capsys, geometry, words):
    # GDAL passes these on; shapely refused them inside the reader with a GEOS message
    assert_one_line(*run_cli(capsys, coast_geojson(tmp_path, geometry)), "c.geojson", *words)


def test_line_that_turns_back_exactly_on_itself(tmp_path, capsys):
    # Out 5 km and back along the same segment: behind and ahead of the turn are the same
    # shore, so its orientation is undefined there (the run crashed writing a NaN normal).
    spike = shapely.LineString([(500_000.0, 4e6), (505_000.0, 4e6), (502_000.0, 4e6)])
    path = setup(tmp_path, study_text(), geoms=[spike])
    assert_one_line(*run_cli(capsys, path), "coast.gpkg", "feature 0", "turns back", "505000")


@pytest.mark.parametrize(
    ("coords", "words"),
    [
        # metres under a CRS that says degrees: the working CRS got a latitude of 4,000,000
        ([(500_000.0, 4e6), (505_000.0, 4e6)], ["look like metres", "EPSG:4326", "degrees"]),
        ([(3.0, 89.99), (3.0, 95.0)], ["latitude 95", "[-90, 90]"]),
        ([(-200.0, 40.0), (-199.9, 40.0)], ["longitude -200", "[-180, 360]"]),
    ],
)
def test_geographic_coast_out_of_range(tmp_path, capsys, coords, words):
    path = setup(tmp_path, study_text(), geoms=[shapely.LineString(coords)], crs="EPSG:4326")
    assert_one_line(*run_cli(capsys, path), "coast.gpkg", *words)


def test_structures_file_in_metres_under_degrees(tmp_path, capsys):
    jetty = shapely.LineString([(502_000.0, 4_000_100.0), (502_000.0, 3_999_990.0)])
    gpd.GeoDataFrame(geometry=[jetty], crs="EPSG:4326").to_file(tmp_path / "s.gpkg")
    path = setup(tmp_path, study_text(extra='[structures]\nfile = "s.gpkg"\n'))
    assert_one_line(*run_cli(capsys, path), "s.gpkg", "look like metres")


def test_transect_count_is_limited_before_laying_out(tmp_path, capsys, monkeypatch):
    # The limit (500,000, docs/study-file.md) is lowered here so the test stays small: 5 km at
    # 1 m would be 5,001 transects. Without the check they were laid out (and at a spacing of
    # micrometres memory ran out).
    monkeypatch.setattr("shoreline.coast.MAX_TRANSECTS", 1000)
    path = setup(tmp_path, study_text().replace('sea = "right"', 'sea = "right"\nspacing_m = 1.0'))
    assert_one_line(*run_cli(capsys, path), "coast.gpkg", "about 5,0", "the limit is 1,000")


@contextlib.contextmanager
def named_pipe(path: Path):
    """A named pipe at ``path``. A reader that opens it without checking blocks until a writer
    comes: a helper thread comes as a writer and leaves at once, so such a reader sees an
    empty stream and fails the test instead of hanging it."""
    os.mkfifo(path)
    done = threading.Event()

    def unblock() -> None:
        while not done.is_set():
            try:
                fd = os.open(path, os.O_WRONLY | os.O_NONBLOCK)
            except OSError:  # nobody is reading
                time.sleep(0.05)
                continue
            os.close(fd)

    helper = threading.Thread(target=unblock, daemon=True)
    helper.start()
    try:
        yield path
    finally:
        done.set()
        helper.join()


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
@pytest.mark.parametrize(
    ("pipe", "extra", "waves"),
    [
        ("coast.gpkg", "", None),
        ("w.csv", "", 'file = "w.csv"'),
        ("w.nc", "", 'file = "w.nc"'),
        ("land.gpkg", "", None),
        ("s.gpkg", '[structures]\nfile = "s.gpkg"\n', None),
        ("study.toml", "", None),
    ],
)
def test_readers_refuse_a_named_pipe(tmp_path, capsys, pipe, extra, waves):
    text = study_text(extra=extra, **({"waves": waves} if waves else {}))
    if pipe == "land.gpkg":
        text = text.replace('sea = "right"', 'sea = "right"\nland = "land.gpkg"')
    path = setup(tmp_path, text)
    (tmp_path / pipe).unlink(missing_ok=True)
    with named_pipe(tmp_path / pipe):
        assert_one_line(*run_cli(capsys, path), pipe, "pipe")


def test_projected_coast_beyond_the_range_of_its_crs(tmp_path, capsys):
    # Web Mercator ends at x = +-20,037,508 m; x = 1e9 m was wrapped to some longitude and run
    line = shapely.LineString([(1e9, 0.0), (1e9 + 5000.0, 0.0)])
    path = setup(tmp_path, study_text(), geoms=[line], crs="EPSG:3857")
    assert_one_line(*run_cli(capsys, path), "coast.gpkg", "beyond the range", "EPSG:3857")


def test_netcdf_point_depth_beyond_its_bound(tmp_path, capsys):
    # a depth of 20 km (deeper than any ocean) or NaN at a wave point was used (> 0 was checked)
    points = np.array([[3.01, 36.1], [3.05, 36.1]])
    ones = np.ones((4, 2))
    write_nc(tmp_path / "w.nc", ones, 8 * ones, 200 * ones, points, depth=[30.0, 20000.0])
    path = setup(tmp_path, study_text(waves='file = "w.nc"'))
    assert_one_line(*run_cli(capsys, path), "w.nc", "depth of every wave point", "<= 11000 m")
