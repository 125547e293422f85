"""Large studies: the time reduction on Dask, records of several files and Zarr stores.

Every check compares two independent ways of running the same study through the command
line, byte for byte (``transects.csv``): in one process against a LocalCluster of two worker
processes; one netCDF file against the same record cut into several files; a netCDF file
against a Zarr store of the same record; a record read whole against one read per chunk from
disk. No expected value is produced by the code under test. Bad input (an unreachable
scheduler, a glob that matches nothing, a worker that dies) ends in one clear line or a
finished run, with earlier output intact.

The record is cut into time chunks of ``TIME_CHUNK_STEPS`` steps; the tests make the chunks
small (so that a short record spans several and the order of their summation matters) and
put every wave point on tables (``DIRECT_TRANSECT_STEPS = 0``). Both are read only where the
run is planned, in this process.
"""

from __future__ import annotations

import os
import signal
import time
from pathlib import Path

import geopandas as gpd
import numpy as np
import pytest
import shapely
import xarray as xr
from pyproj import Transformer

from shoreline import climate, reduce
from shoreline.cli import main

distributed = pytest.importorskip("distributed")

STEPS = 5000  # hourly: about seven months
CHUNK = 1200  # time chunk of the tests: five chunks


@pytest.fixture(autouse=True)
def small_chunks(monkeypatch):
    monkeypatch.setattr(reduce, "TIME_CHUNK_STEPS", CHUNK)
    monkeypatch.setattr(reduce, "DIRECT_TRANSECT_STEPS", 0)


@pytest.fixture(scope="module")
def dask_cluster():
    """Two worker processes of one thread each, as ``--workers 2`` starts them."""
    cluster = distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None
    )
    yield cluster
    cluster.close()


def write_case(folder: Path) -> None:
    """A curved 6 km coast in UTM 31N, sea to the south, and two wave points off it."""
    x = np.linspace(500_000.0, 506_000.0, 121)
    y = 4_000_000.0 + 300.0 * np.sin((x - 500_000.0) / 1500.0)
    coast = shapely.LineString(np.c_[x, y])
    gpd.GeoDataFrame(geometry=[coast], crs="EPSG:32631").to_file(folder / "coast.gpkg")
    to_lonlat = Transformer.from_crs("EPSG:32631", "EPSG:4326", always_xy=True)
    lon, lat = to_lonlat.transform([501_500.0, 504_500.0], [3_996_000.0, 3_996_000.0])
    rng = np.random.default_rng(11)
    shape = (STEPS, 2)
    hs = np.round(np.exp(rng.normal(-0.1, 0.5, shape)), 2)
    tp = np.round(rng.uniform(5.0, 13.0, shape), 1)
    dr = np.round(rng.normal([195.0, 165.0], 30.0, shape)) % 360
    hs[100, 1] = np.nan  # a missing step, skipped at both points
    times = np.datetime64("2031-01-01T00:00", "ns") + np.arange(STEPS) * np.timedelta64(1, "h")
    cf = {
        "hs": ("sea_surface_wave_significant_height", "m", hs),
        "tp": ("sea_surface_wave_period_at_variance_spectral_density_maximum", "s", tp),
        "dirm": ("sea_surface_wave_from_direction", "degree", dr),
    }
    data = {
        k: (("time", "station"), v, {"standard_name": s, "units": u}) for k, (s, u, v) in cf.items()
    }
    data["lon"] = ("station", np.asarray(lon), {"standard_name": "longitude"})
    data["lat"] = ("station", np.asarray(lat), {"standard_name": "latitude"})
    coords = {"time": ("time", times, {"standard_name": "time"}), "station": ["W", "E"]}
    ds = xr.Dataset(data, coords=coords)
    ds.to_netcdf(folder / "waves.nc")
    for i, part in enumerate(np.array_split(np.arange(STEPS), 3)):
        ds.isel(time=part).to_netcdf(folder / f"waves-{i}.nc")
    ds.to_zarr(folder / "waves.zarr", mode="w", consolidated=False)


def study(folder: Path, waves: str, name: str = "study.toml", extra: str = "") -> Path:
    path = folder / name
    path.write_text(
        '[coast]\nfile = "coast.gpkg"\nsea = "right"\nspacing_m = 50.0\n'
        f"orientation_window_m = 1000.0\n\n[waves]\nfile = {waves}\n{extra}",
        encoding="utf-8",
    )
    return path


@pytest.fixture(scope="module")
def case(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("large")
    write_case(folder)
    return folder


def run(capsys, path: Path, out: Path, *options: str) -> bytes:
    code = main(["run", str(path), "--out", str(out), "--no-figures", "--quiet", *options])
    err = capsys.readouterr().err
    assert code == 0, err
    return (out / "reference" / "transects.csv").read_bytes()


def one_line_error(capsys, path: Path, out: Path, *options: str) -> str:
    code = main(["run", str(path), "--out", str(out), "--no-figures", "--quiet", *options])
    err = capsys.readouterr().err.strip()
    assert code != 0
    assert len(err.splitlines()) == 1 and "Traceback" not in err, err
    return err


def test_local_cluster_gives_the_same_transects_csv(case, tmp_path, capsys):
    path = study(case, '"waves.nc"')
    alone = run(capsys, path, tmp_path / "alone")
    on_cluster = run(capsys, path, tmp_path / "cluster", "--workers", "2")
    assert on_cluster == alone
    columns = alone.decode().splitlines()[0]
    assert "wave_point" in columns  # two wave points, each on its own tables


def test_record_on_disk_on_a_cluster_equals_the_record_read_whole(
    case, tmp_path, capsys, monkeypatch, dask_cluster
):
    path = study(case, '"waves.nc"')
    whole = run(capsys, path, tmp_path / "whole")
    monkeypatch.setattr(climate, "EAGER_VALUES", 0)  # stays on disk, read per chunk
    on_disk = run(capsys, path, tmp_path / "disk")
    address = dask_cluster.scheduler_address
    remote = run(capsys, path, tmp_path / "remote", "--scheduler", address)
    assert on_disk == whole
    assert remote == whole


def test_several_files_equal_one_file(case, tmp_path, capsys):
    one = run(capsys, study(case, '"waves.nc"'), tmp_path / "one")
    glob = run(capsys, study(case, '"waves-*.nc"', "glob.toml"), tmp_path / "glob")
    files = '["waves-0.nc", "waves-1.nc", "waves-2.nc"]'
    listed = run(capsys, study(case, files, "list.toml"), tmp_path / "list")
    assert glob == one
    assert listed == one


def test_zarr_store_equals_the_netcdf_file(case, tmp_path, capsys):
    netcdf = run(capsys, study(case, '"waves.nc"'), tmp_path / "nc")
    zarr = run(capsys, study(case, '"waves.zarr"', "zarr.toml"), tmp_path / "zarr")
    assert zarr == netcdf


def test_a_glob_that_matches_nothing(case, tmp_path, capsys):
    path = study(case, '"hindcast-*.nc"', "none.toml")
    err = one_line_error(capsys, path, tmp_path / "out")
    assert "hindcast-*.nc" in err and "no wave record file matches" in err


def test_an_unreachable_scheduler_fails_fast_and_leaves_earlier_output(case, tmp_path, capsys):
    path = study(case, '"waves.nc"', "timeout.toml", "\n[run]\nscheduler_timeout_s = 2.0\n")
    out = tmp_path / "out"
    before = run(capsys, path, out)
    t0 = time.perf_counter()
    err = one_line_error(capsys, path, out, "--scheduler", "tcp://127.0.0.1:9")
    assert time.perf_counter() - t0 < 30.0  # the timeout, not a hang
    assert "cannot reach the Dask scheduler" in err and "tcp://127.0.0.1:9" in err
    assert (out / "reference" / "transects.csv").read_bytes() == before


def test_bad_worker_count(case, tmp_path, capsys):
    err = one_line_error(capsys, study(case, '"waves.nc"'), tmp_path / "out", "--workers", "0")
    assert "--workers 0" in err


class KillFirstWorker(distributed.diagnostics.plugin.SchedulerPlugin):
    """Kill the worker process that takes the first task of the time reduction (once)."""

    def __init__(self, scheduler):
        self.scheduler = scheduler
        self.killed = []

    def transition(self, key, start, finish, *args, **kwargs):
        if self.killed or finish != "processing" or "_table_task" not in str(key):
            return
        worker = self.scheduler.tasks[key].processing_on
        if worker is not None and worker.pid:
            self.killed.append(worker.pid)
            os.kill(worker.pid, signal.SIGKILL)


def test_a_worker_that_dies_mid_run_is_replaced_by_dask(case, tmp_path, capsys):
    path = study(case, '"waves.nc"')
    alone = run(capsys, path, tmp_path / "alone")
    with distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None
    ) as cluster:
        plugin = KillFirstWorker(cluster.scheduler)
        cluster.scheduler.add_plugin(plugin, name="kill-first-worker")
        on_cluster = run(
            capsys, path, tmp_path / "cluster", "--scheduler", cluster.scheduler_address
        )
    assert plugin.killed  # a worker did die during the run
    assert on_cluster == alone  # its tasks ran again elsewhere (Dask's own retry)
