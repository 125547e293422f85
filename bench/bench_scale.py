"""Large studies: national coasts, 40-year records, hundreds of wave points, a Dask cluster.

    python bench/bench_scale.py geometry 100000      # lay out N transects and their sheltering
    python bench/bench_scale.py long                 # 100,000 transects x 40 hourly years, 1 point
    python bench/bench_scale.py points               # 100,000 transects x 10 years x 500 points
    python bench/bench_scale.py points --workers 2   # the same on a 2-worker LocalCluster
    python bench/bench_scale.py fit                  # time against transects, steps, points

Every case is INVENTED: a coast of parallel shores 100 km long and 25 km apart (so that the
20 km sheltering rays of one shore never reach the next), gently wavy so that their normals
spread over about +-20 degrees, each shore its own part; seeded random hourly records (CSV for
one wave point; a CF netCDF chunked (time 8766, station 50) for several, the points spread
along the shores). Each run is the whole command (``shoreline run --no-figures --quiet``) in a
fresh process; wall time and the child's peak memory (max RSS) are printed, and the
``run.json`` timings of each stage. The cases are written under ``--folder`` (default a
temporary folder) and can be kept (``--keep``) to compare outputs:
``cmp A/reference/transects.csv B/reference/transects.csv``.
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from pyproj import Transformer

LON0, LAT0 = -140.0, -30.0  # open South Pacific: nobody's coast
LOCAL = f"+proj=tmerc +lat_0={LAT0} +lon_0={LON0} +k=1 +ellps=WGS84 +units=m"
SHORE_M = 100_000.0
GAP_M = 25_000.0


def write_coast(folder: Path, transects: int, spacing_m: float = 100.0) -> int:
    """Parallel wavy shores (sea to the south) holding about ``transects`` transects."""
    shores = max(1, int(round(transects * spacing_m / SHORE_M)))
    to_lonlat = Transformer.from_crs(LOCAL, "EPSG:4326", always_xy=True)
    x = np.arange(0.0, SHORE_M + 1.0, 50.0)
    features = []
    for k in range(shores):
        amp = 300.0 + 200.0 * np.sin(k)  # bays and headlands of a few hundred metres
        y = amp * np.sin(x / (3000.0 + 40.0 * k)) + 0.5 * amp * np.sin(x / 1100.0)
        y += (k - shores / 2) * GAP_M
        lon, lat = to_lonlat.transform(x - SHORE_M / 2, y)
        coords = [[round(a, 7), round(b, 7)] for a, b in zip(lon, lat, strict=True)]
        features.append(
            {
                "type": "Feature",
                "properties": {},
                "geometry": {"type": "LineString", "coordinates": coords},
            }
        )
    (folder / "coast.geojson").write_text(
        json.dumps({"type": "FeatureCollection", "features": features})
    )
    return shores


def record(hours: int, points: int, seed: int = 5) -> tuple[np.ndarray, ...]:
    """Invented hourly heights, periods and directions of shape (hours, points)."""
    rng = np.random.default_rng(seed)
    shape = (hours, points)
    hs = np.round(np.exp(rng.normal(-0.1, 0.5, shape)), 2)
    tp = np.round(rng.uniform(5.0, 13.0, shape), 1)
    dr = np.round(rng.normal(185.0, 30.0, shape)) % 360
    return hs, tp, dr


def write_csv(path: Path, years: int) -> int:
    hours = int(years * 8766)
    hs, tp, dr = (v[:, 0] for v in record(hours, 1))
    t = np.datetime64("2031-01-01T00:00") + np.arange(hours).astype("timedelta64[h]")
    text = np.char.add(t.astype(str), "Z")
    rows = [
        f"{a},{b:g},{c:g},{d:.0f}" for a, b, c, d in zip(text.tolist(), hs, tp, dr, strict=True)
    ]
    path.write_text("time,hs_m,tp_s,dir_deg\n" + "\n".join(rows) + "\n")
    return hours


def write_netcdf(path: Path, years: int, shores: int, per_shore: int) -> tuple[int, int]:
    """A CF record of ``per_shore`` points off each shore, written one year at a time."""
    import netCDF4

    hours, points = int(years * 8766), shores * per_shore
    to_lonlat = Transformer.from_crs(LOCAL, "EPSG:4326", always_xy=True)
    px = np.tile((np.arange(per_shore) + 0.5) * SHORE_M / per_shore - SHORE_M / 2, shores)
    py = np.repeat((np.arange(shores) - shores / 2) * GAP_M - 3000.0, per_shore)
    lon, lat = to_lonlat.transform(px, py)
    with netCDF4.Dataset(path, "w") as nc:
        nc.createDimension("time", hours)
        nc.createDimension("station", points)
        t = nc.createVariable("time", "f8", ("time",))
        t.standard_name, t.units = "time", "hours since 2031-01-01 00:00:00"
        t[:] = np.arange(hours)
        for name, standard in (("lon", "longitude"), ("lat", "latitude")):
            v = nc.createVariable(name, "f8", ("station",))
            v.standard_name = standard
            v[:] = lon if name == "lon" else lat
        cf = {
            "hs": ("sea_surface_wave_significant_height", "m"),
            "tp": ("sea_surface_wave_period_at_variance_spectral_density_maximum", "s"),
            "dirm": ("sea_surface_wave_from_direction", "degree"),
        }
        chunks = (min(8766, hours), min(50, points))
        out = {}
        for name, (standard, unit) in cf.items():
            v = nc.createVariable(name, "f4", ("time", "station"), chunksizes=chunks)
            v.standard_name, v.units = standard, unit
            out[name] = v
        for year in range(years):
            sl = slice(year * 8766, min((year + 1) * 8766, hours))
            hs, tp, dr = record(sl.stop - sl.start, points, seed=year)
            out["hs"][sl], out["tp"][sl], out["dirm"][sl] = hs, tp, dr
    return hours, points


def write_study(folder: Path, record_name: str, name: str = "study.toml") -> Path:
    path = folder / name
    path.write_text(
        f'[coast]\nfile = "coast.geojson"\nsea = "right"\nspacing_m = 100.0\n'
        f'orientation_window_m = 1000.0\n\n[waves]\nfile = "{record_name}"\n'
    )
    return path


def run(study: Path, out: Path, *options: str) -> tuple[float, float, dict]:
    """The whole command in a fresh process: (wall s, peak RSS MiB, run.json timings)."""
    args = [sys.executable, "-m", "shoreline.cli", "run", str(study), "--out", str(out)]
    args += ["--quiet", "--no-figures", *options]
    code = (
        "import resource, subprocess, sys, json;"
        "p = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL);"
        "print(json.dumps([p.returncode, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss]))"
    )
    t0 = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True)
    wall = time.perf_counter() - t0
    status, rss_kib = json.loads(done.stdout.strip().splitlines()[-1])
    if status != 0:
        raise SystemExit(f"run failed: {done.stderr}")
    timings = json.loads((out / "run.json").read_text()).get("timings_s", {})
    return wall, rss_kib / 1024.0, timings


def report(label: str, wall: float, rss: float, timings: dict) -> None:
    stages = ", ".join(f"{k} {v:.1f}" for k, v in timings.items())
    print(f"{label}: wall {wall:.1f} s, peak {rss:.0f} MiB ({stages})", flush=True)


def geometry(n: int) -> None:
    """Lay out about ``n`` transects and cast their sheltering rays, in this process."""
    from shoreline import run as srun
    from shoreline.exposure import compute_exposure
    from shoreline.study import read_study

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        write_coast(folder, n)
        (folder / "w.csv").write_text("time,hs_m,tp_s,dir_deg\n2031-01-01T00:00Z,1,8,190\n")
        study = read_study(write_study(folder, "w.csv"))
        t0 = time.perf_counter()
        coast, transects = srun.load_transects(study)
        t1 = time.perf_counter()
        compute_exposure(transects, list(coast.parts))
        t2 = time.perf_counter()
    print(
        f"{len(transects):,} transects on {len(coast.parts)} shores: laid out in {t1 - t0:.1f} s, "
        f"sheltering rays (1 deg, 20 km) in {t2 - t1:.1f} s"
    )


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("case", choices=["geometry", "long", "points", "fit"])
    parser.add_argument("n", nargs="?", type=int, default=100_000)
    parser.add_argument("--workers", type=int, default=None)
    parser.add_argument("--folder", type=Path, default=None)
    parser.add_argument("--keep", action="store_true")
    args = parser.parse_args()
    if args.case == "geometry":
        geometry(args.n)
        return
    tmp = None
    folder = args.folder
    if folder is None:
        tmp = tempfile.TemporaryDirectory()
        folder = Path(tmp.name)
    folder.mkdir(parents=True, exist_ok=True)
    options = ["--workers", str(args.workers)] if args.workers else []
    tag = f"workers{args.workers}" if args.workers else "inprocess"
    if args.case == "long":
        if not (folder / "w40.csv").exists():
            write_coast(folder, args.n)
            write_csv(folder / "w40.csv", 40)
        study = write_study(folder, "w40.csv")
        report(f"long ({tag})", *run(study, folder / f"out-{tag}", *options))
    elif args.case == "points":
        if not (folder / "w10.nc").exists():
            shores = write_coast(folder, args.n)
            write_netcdf(folder / "w10.nc", 10, shores, 5)
        study = write_study(folder, "w10.nc")
        report(f"points ({tag})", *run(study, folder / f"out-{tag}", *options))
    else:  # time against transects, steps and wave points, small runs
        for n, years, per in ((5_000, 2, 1), (10_000, 2, 1), (5_000, 4, 1), (5_000, 2, 5)):
            case = folder / f"fit-{n}-{years}-{per}"
            case.mkdir(exist_ok=True)
            shores = write_coast(case, n)
            if per == 1:
                write_csv(case / "w.csv", years)
                study = write_study(case, "w.csv")
            else:
                write_netcdf(case / "w.nc", years, shores, per)
                study = write_study(case, "w.nc")
            wall, rss, timings = run(study, case / "out", *options)
            report(f"fit n={n} years={years} points={shores * per}", wall, rss, timings)
    if tmp is not None and not args.keep:
        tmp.cleanup()


if __name__ == "__main__":
    main()
