"""Benchmark of the ensemble ([uncertainty]): wall time with and without it, and its accuracy.

Two cases, each run by ``shoreline run`` in a fresh process, with and without the ensemble:

- ``demo``: the demo study (demo_coast/study.toml, 171 transects, one year hourly, three
  scenarios), with its own [uncertainty] section (500 members) and with that section removed;
  with figures and report (the README's first command) and without (``--no-figures``);
- ``bench``: the 4-year, 500-transect record of bench/bench_run.py, with the [uncertainty]
  section of the issue (500 members, record_blocks = "year") and without.

Targets (issue): the demo with 500 members at most 10x its time without; the 4-year record at
most 30x. Wall and CPU time (the child's user + system) are printed; the machine is shared, so
the CPU time is the steadier figure.

    python bench/bench_ensemble.py            # both cases, best of two runs each
    python bench/bench_ensemble.py accuracy   # members one by one against the ensemble

The ``accuracy`` case runs members of the 1-year bench record one by one through
``run.evaluate`` and prints the largest difference from the ensemble's per-member values, as a
share of the p05-p95 spread, per group of uncertain inputs (docs/methods.md, "Ensembles").
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))

import bench_run  # noqa: E402

ISSUE_SECTION = """
[uncertainty]
members = 500
seed = 7
cerc_k = { low = 0.2, high = 0.6 }
breaker_index = { low = 0.6, high = 0.9 }
direction_bias_deg = { sd = 5.0 }
hs_factor = { sd = 0.10 }
d50_mm = { low = 0.2, high = 0.4 }
formulas = "all"
record_blocks = "year"
"""


def run(study: Path, out: Path, figures: bool) -> tuple[float, float]:
    """Run the command in a fresh process; return (wall seconds, CPU seconds of the child)."""
    args = [sys.executable, "-m", "shoreline.cli", "run", str(study), "--out", str(out), "--quiet"]
    if not figures:
        args.append("--no-figures")
    code = (
        "import resource, subprocess, sys, json;"
        "p = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL);"
        "r = resource.getrusage(resource.RUSAGE_CHILDREN);"
        "print(json.dumps([p.returncode, r.ru_utime + r.ru_stime]))"
    )
    t0 = time.perf_counter()
    done = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True)
    wall = time.perf_counter() - t0
    status, cpu = json.loads(done.stdout.strip().splitlines()[-1])
    if status != 0:
        raise SystemExit(f"run failed: {done.stderr}")
    return wall, cpu


def best(study: Path, out: Path, figures: bool, repeats: int = 2) -> tuple[float, float]:
    """Best wall and best CPU time of a few runs."""
    times = [run(study, out, figures) for _ in range(repeats)]
    return min(t[0] for t in times), min(t[1] for t in times)


def without_section(text: str) -> str:
    """A study's text with its [uncertainty] section (to the next section or the end) cut."""
    return re.sub(r"\n\[uncertainty\]\n(?:(?!\n\[).)*", "\n", text, flags=re.S)


def timing() -> None:
    """Both cases, with and without the ensemble."""
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        demo = folder / "demo"
        shutil.copytree(ROOT / "demo_coast", demo, ignore=shutil.ignore_patterns("out"))
        text = (demo / "study.toml").read_text()
        (demo / "plain.toml").write_text(without_section(text))
        run(demo / "plain.toml", folder / "warm", False)  # imports and file cache
        for figures in (True, False):
            off = best(demo / "plain.toml", folder / "o1", figures)
            on = best(demo / "study.toml", folder / "o2", figures)
            rows.append(("demo" + (" + figures" if figures else ""), off, on, 10))
        bench = folder / "bench"
        bench.mkdir()
        bench_run.write_coast(bench)
        bench_run.write_record(bench / "w4.csv", 4)
        plain = bench_run.write_study(bench, "w4.csv")
        study = bench / "ensemble.toml"
        study.write_text(plain.read_text() + ISSUE_SECTION)
        off = best(plain, folder / "o3", False)
        on = best(study, folder / "o4", False)
        rows.append(("4 y x 500 transects", off, on, 30))
    print(f"{'case':22} {'without s':>10} {'with s':>8} {'ratio':>6} {'CPU ratio':>9} target")
    for name, (w0, c0), (w1, c1), target in rows:
        print(f"{name:22} {w0:>10.2f} {w1:>8.2f} {w1 / w0:>6.1f} {c1 / c0:>9.1f} <= {target}")
        print(
            f"{'':22} {'(CPU ' + format(c0, '.1f') + ' s)':>10} {'(' + format(c1, '.1f') + ')':>8}"
        )


def accuracy() -> None:
    """Members one by one through run.evaluate against the ensemble, per group of inputs."""
    import os

    os.environ.setdefault("PYTHONPATH", str(ROOT))
    from shoreline import ensemble as E
    from shoreline import run as R
    from shoreline.exposure import compute_exposure
    from shoreline.study import read_study

    groups = {
        "exact: K, Kamphuis coeff., d50, porosity, DC, DB, formula, years, bias": (
            "cerc_k = { low = 0.2, high = 0.6 }\nkamphuis_coefficient = { low = 2.0, high = 2.6 }\n"
            "d50_mm = { low = 0.2, high = 0.4 }\nporosity = { low = 0.3, high = 0.45 }\n"
            "closure_depth_m = { low = 6.0, high = 10.0 }\n"
            "berm_height_m = { low = 1.0, high = 3.0 }\ndirection_bias_deg = { sd = 5.0 }\n"
            'formulas = "all"\nrecord_blocks = "year"\n'
        ),
        "Hs factor sd 0.10": "hs_factor = { sd = 0.10 }\n",
        "Hs factor sd 0.25": "hs_factor = { sd = 0.25 }\n",
        "breaker index 0.6-0.9": "breaker_index = { low = 0.6, high = 0.9 }\n",
        "breaker index 0.4-1.2": "breaker_index = { low = 0.4, high = 1.2 }\n",
        "issue's section (all)": ISSUE_SECTION.split("seed = 7\n")[1],
    }
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        bench_run.write_coast(folder)
        bench_run.write_record(folder / "w2.csv", 2)
        plain = bench_run.write_study(folder, "w2.csv").read_text()
        print(f"{'inputs':72} {'primary':9} {'dq/spread':>9} {'drate/spread':>12}")
        for name, body in groups.items():
            for primary in ("cerc", "kamphuis"):
                path = folder / "s.toml"
                path.write_text(
                    plain
                    + f'\n[model]\nprimary = "{primary}"\n'
                    + "\n[uncertainty]\nmembers = 100\nseed = 3\n"
                    + body
                )
                study = read_study(path)
                result = R.run_study(study)
                ens = result.scenarios[0].ensemble
                cols = ens.columns
                sq = cols["q_p95_m3_per_yr"] - cols["q_p05_m3_per_yr"]
                sr = cols["rate_p95_m_per_yr"] - cols["rate_p05_m_per_yr"]
                climate = R.load_climate(study)
                coast, tr = result.coast, result.transects
                c = study["coast"]
                ex = compute_exposure(
                    tr,
                    list(coast.parts),
                    max_distance_m=c["exposure_distance_m"],
                    start_offset_m=c["ray_start_m"],
                    spreading_s=study["waves"]["spreading_s"],
                    wavelength_m=R.shadow_wavelength_m(climate),
                )
                shore = R.shore_type_of(study, coast, tr, ex)
                sign = R.chainage_sign(coast, tr)
                blocks = E.record_blocks(climate, study.uncertainty["record_blocks"])
                worst_q = worst_r = 0.0
                for ms in list(E.member_settings(study, climate))[:12]:
                    dc = result.scenarios[0].closure_depth_m
                    out = R.evaluate(
                        "m",
                        E.member_study(study, ms),
                        coast,
                        tr,
                        E.member_climate(climate, ms, None if blocks is None else blocks[0]),
                        sign,
                        closure_depth_m=dc if ms.closure_depth_m is None else ms.closure_depth_m,
                        exposure=ex,
                        coefficients=E.member_coefficients(study, ms),
                        shore=shore,
                    ).columns
                    dq = np.abs(
                        ens.q_net_m3_per_yr[:, ms.member] - out[f"q_{ms.formula}_m3_per_yr"]
                    )
                    dr = np.abs(ens.metric[:, ms.member] - out["rate_m_per_yr"])
                    ok = sr > 0
                    worst_q = max(worst_q, float(np.max(dq[ok] / sq[ok])))
                    worst_r = max(worst_r, float(np.max(dr[ok] / sr[ok])))
                print(f"{name:72} {primary:9} {worst_q:>9.1e} {worst_r:>12.1e}")


if __name__ == "__main__":
    if len(sys.argv) > 1 and sys.argv[1] == "accuracy":
        accuracy()
    else:
        timing()
