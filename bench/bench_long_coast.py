"""Benchmark of ``shoreline run`` on a long single coast: 250, 500 and 1,000 km at 100 m.

Builds an INVENTED single line (a gently winding coast in the open South Pacific, digitised at
20 m with +-2 m of noise, sea to the south) and an invented one-year hourly record, and runs the
whole command in a fresh process, with figures, for 2,500, 5,000 and 10,000 transects. Prints
wall time, the time per transect and the stages' timings from run.json, and fits time against
the transect count.

    python bench/bench_long_coast.py        # figures go in docs/performance.md

Target (issue): under 60 s for 10,000 transects, time linear in the transect count.
"""

from __future__ import annotations

import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from bench_run import write_record
from pyproj import Transformer

LON0, LAT0 = -120.0, -45.0  # open South Pacific: nobody's coast


def write_long_coast(folder: Path, length_km: float, seed: int = 3) -> None:
    rng = np.random.default_rng(seed)
    x = np.arange(0.0, length_km * 1000.0 + 10.0, 20.0)
    y = (
        -3000.0 * np.sin(x / 90_000.0)
        - 600.0 * np.sin(x / 17_000.0 + 1.0)
        - 150.0 * np.sin(x / 4_100.0 + 2.0)
        + rng.uniform(-2.0, 2.0, x.size)
    )
    local = f"+proj=tmerc +lat_0={LAT0} +lon_0={LON0} +k=1 +ellps=WGS84 +units=m"
    lon, lat = Transformer.from_crs(local, "EPSG:4326", always_xy=True).transform(x - x[-1] / 2, y)
    coords = [[round(a, 7), round(b, 7)] for a, b in zip(lon, lat, strict=True)]
    feature = {
        "type": "Feature",
        "properties": {},
        "geometry": {"type": "LineString", "coordinates": coords},
    }
    (folder / "coast.geojson").write_text(
        json.dumps({"type": "FeatureCollection", "features": [feature]})
    )


STUDY = """[coast]
file = "coast.geojson"
sea = "right"
spacing_m = 100.0

[waves]
file = "waves.csv"

[model]
formulas = ["cerc", "kamphuis"]
closure_depth_m = 8.0
"""


def main() -> None:
    rows = []
    for km in (250.0, 500.0, 1000.0):
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            write_long_coast(folder, km)
            write_record(folder / "waves.csv", 1)
            (folder / "study.toml").write_text(STUDY)
            t0 = time.perf_counter()
            done = subprocess.run(
                [sys.executable, "-m", "shoreline.cli", "run", "study.toml", "--quiet"],
                cwd=folder,
                capture_output=True,
                text=True,
            )
            wall = time.perf_counter() - t0
            if done.returncode:
                sys.exit(done.stderr)
            record = json.loads((folder / "out" / "run.json").read_text())
            n = record["counts"]["transects"]
            rows.append((km, n, wall, record["timings_s"]))
            stages = ", ".join(f"{k} {v:.1f}" for k, v in record["timings_s"].items())
            print(f"{km:6.0f} km  {n:6d} transects  {wall:6.1f} s  ({stages})", flush=True)
    n = np.array([r[1] for r in rows], float)
    t = np.array([r[2] for r in rows])
    slope, icpt = np.polyfit(n, t, 1)
    misfit = np.max(np.abs(icpt + slope * n - t))
    print(
        f"fit: time = {icpt:.1f} s + {slope * 1000:.2f} s per 1,000 transects "
        f"(worst misfit {misfit:.1f} s)"
    )


if __name__ == "__main__":
    main()
