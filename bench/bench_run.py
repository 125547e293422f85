"""End-to-end benchmark of ``shoreline run``: speed, linearity in record length, peak memory.

Builds an INVENTED 50 km coast (500 transects at 100 m) and invented hourly wave records of
1, 2 and 4 years, runs the whole command on each in a fresh process (``--no-figures --quiet``,
so the figures' fixed cost does not hide the physics; one run with figures is timed too),
and prints wall time, transect-steps per second and peak memory (the child's max RSS).

    python bench/bench_run.py            # figures go in docs/performance.md

Targets (issue): >= 5 million transect-steps per second end to end on the 2-core machine;
time linear in the record length; peak memory for 4 years within 25 % of that for 1 year.
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from pyproj import Transformer

LON0, LAT0 = -140.0, -40.0  # open South Pacific: nobody's coast


def write_coast(folder: Path) -> None:
    """A 50 km invented coast, gently curved, digitised west to east, sea to the south."""
    x = np.arange(0.0, 50_050.0, 25.0)
    y = -400.0 * np.sin(x / 7000.0) - 150.0 * np.sin(x / 2300.0)
    local = f"+proj=tmerc +lat_0={LAT0} +lon_0={LON0} +k=1 +ellps=WGS84 +units=m"
    lon, lat = Transformer.from_crs(local, "EPSG:4326", always_xy=True).transform(x - 25e3, y)
    coords = [[round(a, 7), round(b, 7)] for a, b in zip(lon, lat, strict=True)]
    feature = {
        "type": "Feature",
        "properties": {},
        "geometry": {"type": "LineString", "coordinates": coords},
    }
    (folder / "coast.geojson").write_text(
        json.dumps({"type": "FeatureCollection", "features": [feature]})
    )


def write_record(path: Path, years: int, seed: int = 5) -> int:
    """An invented hourly record of ``years`` years (seeded); returns its number of rows."""
    hours = int(years * 8766)
    rng = np.random.default_rng(seed)
    t = np.datetime64("2031-01-01T00:00") + np.arange(hours).astype("timedelta64[h]")
    hs = np.round(np.exp(rng.normal(-0.1, 0.5, hours)), 2)
    tp = np.round(rng.uniform(5.0, 13.0, hours), 1)
    dr = np.round(rng.normal(200.0, 25.0, hours)) % 360
    with open(path, "w", encoding="utf-8") as handle:
        handle.write("time,hs_m,tp_s,dir_deg\n")
        for row in zip(t.astype(str), hs, tp, dr, strict=True):
            handle.write(f"{row[0]}Z,{row[1]},{row[2]},{row[3]:.0f}\n")
    return hours


def write_study(folder: Path, record: str) -> Path:
    """The study file of the benchmark."""
    path = folder / f"study-{record}.toml"
    path.write_text(
        f'[coast]\nfile = "coast.geojson"\nsea = "right"\nspacing_m = 100.0\n'
        f'orientation_window_m = 1000.0\n\n[waves]\nfile = "{record}"\n'
    )
    return path


def run(study: Path, out: Path, figures: bool = False) -> tuple[float, float]:
    """Run the command in a fresh process; return (wall seconds, peak RSS of it in MiB)."""
    args = [sys.executable, "-m", "shoreline.cli", "run", str(study), "--out", str(out), "--quiet"]
    if not figures:
        args.append("--no-figures")
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
    return wall, rss_kib / 1024.0


def main() -> None:
    """Build the cases, run them, print the table."""
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        write_coast(folder)
        rows = []
        for years in (1, 2, 4):
            steps = write_record(folder / f"w{years}.csv", years)
            study = write_study(folder, f"w{years}.csv")
            run(study, folder / "warm")  # warm the file cache and imports
            wall, rss = min(run(study, folder / f"out{years}") for _ in range(3))
            rows.append((years, steps, wall, rss))
        n = 500
        print(
            f"{'record':>8} {'steps':>7} {'transect-steps':>15} {'wall s':>7} {'M/s':>6} {'MiB':>6}"
        )
        for years, steps, wall, rss in rows:
            print(
                f"{years:>6} y {steps:>7} {steps * n:>15,} {wall:>7.2f} "
                f"{steps * n / wall / 1e6:>6.2f} {rss:>6.0f}"
            )
        (y1, s1, w1, m1), _, (y4, s4, w4, m4) = rows
        steps = np.array([r[1] for r in rows], float)
        walls = np.array([r[2] for r in rows])
        slope, fixed = np.polyfit(steps * n, walls, 1)
        fit = fixed + slope * steps * n
        print(
            f"time = {fixed:.2f} s + transect-steps / {1 / slope / 1e6:.1f} million/s "
            f"(largest misfit {np.max(np.abs(fit - walls)):.2f} s)"
        )
        print(f"time 4 y / 1 y = {w4 / w1:.2f}")
        print(f"peak memory 4 y / 1 y = {m4 / m1:.2f} (target <= 1.25)")
        wall, _ = run(write_study(folder, "w4.csv"), folder / "fig", figures=True)
        print(f"4 y with figures and report: {wall:.2f} s")


if __name__ == "__main__":
    main()
