"""Benchmark and accuracy of the time reduction by tables (shoreline/reduce.py).

    python bench/bench_reduce.py speed      # 500 transects x 4 hourly years: both paths
    python bench/bench_reduce.py big        # 100,000 transects x 40 hourly years, one point
    python bench/bench_reduce.py accuracy   # the node bound of every Reductions field

``speed`` builds the INVENTED coast and 4-year record of bench/bench_run.py (500 transects at
100 m, exposure rays as a run casts them) and times the transport stage of the run today
(``run.transport_reductions``, 0.5-degree angle nodes per step) against
``reduce.tabulated_reductions`` with the same sheltering, once each (the machine is shared).

``big`` is synthetic and in-process: 100,000 normals spread over a south-facing coast of bays
and headlands (120-240 degrees), an island's shadow in the sector weights of a third of them,
and a 40-year hourly record at one wave point; it times the whole run (record, weights,
reduction, along-shore gradient, rate) and the reduction alone, and reports the peak memory
(``resource.getrusage``, max RSS of this process).

``accuracy`` runs the direct path (``angle_step_deg = 0``, every transect-step solved), today's
node path and the tables on invented records and many normals, and prints the largest absolute
and relative error of every field (figures in docs/methods.md).

Figures go in docs/performance.md and docs/methods.md.
"""

from __future__ import annotations

import resource
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from bench_run import write_coast, write_record, write_study

from shoreline import budget, reduce, run
from shoreline.climate import WaveClimate
from shoreline.exposure import compute_exposure
from shoreline.study import read_study

PHYSICS = {
    "formulas": ["cerc", "kamphuis"],
    "primary": "cerc",
    "breaker_index": 0.78,
    "breaking_method": "exact",
    "cerc_k": 0.39,
    "kamphuis_coefficient": 2.27,
    "d50_mm": 0.3,
    "slope": None,
    "water_density_kg_m3": 1025.0,
    "sediment_density_kg_m3": 2650.0,
    "porosity": 0.4,
}


def peak_mib() -> float:
    """Peak resident memory of this process so far [MiB] (Linux reports KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def invented_record(hours: int, seed: int = 5, rounded: bool = True) -> WaveClimate:
    """An invented hourly record (as bench_run.py writes it; unrounded on request)."""
    rng = np.random.default_rng(seed)
    hs = np.exp(rng.normal(-0.1, 0.5, hours))
    tp = rng.uniform(5.0, 13.0, hours)
    dr = rng.normal(200.0, 25.0, hours) % 360
    if rounded:
        hs, tp, dr = np.round(hs, 2), np.round(tp, 1), np.round(dr) % 360
    return WaveClimate(hs, tp, dr, np.full(hours, 3600.0), np.inf, "record", "invented")


def speed() -> None:
    """500 transects x 4 hourly years: the transport stage today and by tables."""
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        write_coast(folder)
        write_record(folder / "w4.csv", 4)
        study = read_study(write_study(folder, "w4.csv"))
        climate = run.load_climate(study)
        coast, transects = run.load_transects(study)
    sign = run.chainage_sign(coast, transects)
    exposure = compute_exposure(transects, list(coast.parts))
    normal = transects.normal_az_deg
    n, steps = len(transects), climate.n_steps
    print(
        f"{n} transects x {steps} steps = {n * steps:,} transect-steps; normals "
        f"{np.nanmin(normal):.1f}-{np.nanmax(normal):.1f} deg"
    )
    c0, t0 = time.process_time(), time.perf_counter()
    today = run.transport_reductions(normal, sign, climate, exposure=exposure, **PHYSICS)
    c1, t1 = time.process_time(), time.perf_counter()
    tables = reduce.tabulated_reductions(
        normal, sign, climate, sector_weight=exposure.open.astype(float), **PHYSICS
    )
    c2, t2 = time.process_time(), time.perf_counter()
    wall, cpu = (t1 - t0, t2 - t1), (c1 - c0, c2 - c1)
    for label, w, c in zip(
        ("run.transport_reductions", "reduce.tabulated_reductions"), wall, cpu, strict=True
    ):
        print(
            f"{label:28s} wall {w:5.2f} s  cpu {c:5.2f} s  "
            f"({n * steps / w / 1e6:.1f} million transect-steps/s)"
        )
    print(f"speed-up: wall {wall[0] / wall[1]:.1f}x, cpu {cpu[0] / cpu[1]:.1f}x")
    d = np.abs(tables.q_net_m3_per_yr["cerc"] - today.q_net_m3_per_yr["cerc"])
    print(
        f"largest |difference| in q_cerc: {d.max():.3g} m3/yr "
        f"({(d / today.q_gross_m3_per_yr).max():.2g} of the gross)"
    )


def big(n: int = 100_000, years: int = 40) -> None:
    """n transects x an hourly record of ``years`` years at one wave point, in-process."""
    t_start = time.perf_counter()
    hours = int(years * 8766)
    climate = invented_record(hours, rounded=False)
    # a south-facing coast of bays and headlands: normals wander over 120-240 degrees
    x = np.arange(n)
    normal = 180.0 + 60.0 * np.sin(x / 900.0) * np.cos(x / 3100.0)
    sign = np.where((x // 5000) % 5 == 4, -1.0, 1.0)  # parts digitised both ways
    # open within 90 degrees of the normal, an island's shadow (20 degrees) for a third of them
    m = 360
    centres = np.arange(m) * 1.0
    weight = np.empty((n, m))
    shadowed = (x // 3000) % 3 == 0  # 300 km stretches behind an island, one in three
    behind = np.abs((centres - 195.0 + 180.0) % 360.0 - 180.0) < 10.0
    for lo in range(0, n, 10_000):  # in blocks, to keep the inputs' temporaries small
        rows = slice(lo, lo + 10_000)
        off = (centres[None, :] - normal[rows, None] + 180.0) % 360.0 - 180.0
        weight[rows] = np.abs(off) <= 90.0
        weight[rows] *= ~(shadowed[rows, None] & behind[None, :])
    t_in = time.perf_counter()
    print(
        f"{n:,} transects x {hours:,} steps = {n * hours:.3g} transect-steps; inputs built in "
        f"{t_in - t_start:.1f} s, peak so far {peak_mib():.0f} MiB"
    )
    done = []
    red = reduce.tabulated_reductions(
        normal, sign, climate, sector_weight=weight, progress=done.append, **PHYSICS
    )
    t_red = time.perf_counter()
    part = x // 5000  # a new part where the digitised direction turns
    dqdx = budget.alongshore_gradient(
        red.q_net_m3_per_yr["cerc"], part, np.full(n, 100.0), np.zeros(n, bool)
    )
    rate = budget.shoreline_change_rate(dqdx, 8.0, 2.0)
    t_end = time.perf_counter()
    print(
        f"reduction stage: {t_red - t_in:.1f} s ({n * hours / (t_red - t_in) / 1e9:.2f} billion "
        f"transect-steps/s); whole run {t_end - t_start:.1f} s; peak memory {peak_mib():.0f} MiB"
    )
    print(
        f"steps reported by progress: {sum(done)} of {hours}; |rate| median "
        f"{np.nanmedian(np.abs(rate)):.2f} m/yr, 99th percentile "
        f"{np.nanpercentile(np.abs(rate), 99):.1f} m/yr"
    )


def fields(red, primary: str) -> dict[str, np.ndarray]:
    """Every field of a Reductions, by name (net transport of the primary formula only)."""
    out = {f"q_net_m3_per_yr[{primary}]": red.q_net_m3_per_yr[primary]}
    for k in (
        "q_gross_m3_per_yr",
        "q_pos_m3_per_yr",
        "q_neg_m3_per_yr",
        "hb_m",
        "db_m",
        "alpha_b_deg",
        "sheltered_fraction",
        "broken_at_input_fraction",
    ):
        out[k] = getattr(red, k)
    return out


def errors(ref, other, primary: str) -> dict[str, tuple[float, float]]:
    """(max abs error, max relative error) per field; transport relative to its gross."""
    a, b = fields(ref, primary), fields(other, primary)
    out = {}
    for k in a:
        err = np.abs(b[k] - a[k])
        scale = ref.q_gross_m3_per_yr if k.startswith("q_") else np.abs(a[k])
        ok = np.isfinite(err) & (scale > 0)
        out[k] = (float(np.nanmax(err)), float(np.max(err[ok] / scale[ok])) if ok.any() else 0.0)
    return out


def accuracy() -> None:
    """The node bound: direct path vs today's node path vs tables, several cases."""
    rng = np.random.default_rng(11)
    n = 1000
    normal = rng.uniform(100.0, 300.0, n)
    sign = np.where(rng.random(n) < 0.5, 1.0, -1.0)
    records = {
        "deep, slope from d50, whole-degree directions": (invented_record(2 * 8766), {}),
        "15 m depth, slope 0.03, unrounded directions": (
            _at_depth(invented_record(2 * 8766, seed=6, rounded=False), 15.0),
            {"slope": 0.03},
        ),
    }
    for label, (climate, extra) in records.items():
        for primary in ("cerc", "kamphuis"):
            kw = PHYSICS | extra | {"primary": primary}
            t0 = time.perf_counter()
            ref = run.transport_reductions(normal, sign, climate, angle_step_deg=0, **kw)
            t1 = time.perf_counter()
            node = run.transport_reductions(normal, sign, climate, **kw)
            t2 = time.perf_counter()
            tab = reduce.tabulated_reductions(normal, sign, climate, **kw)
            t3 = time.perf_counter()
            print(
                f"\n{label}, primary {primary}: {n} normals 100-300 deg, both signs, "
                f"{climate.n_steps} steps (direct {t1 - t0:.1f} s, node path {t2 - t1:.1f} s, "
                f"tables {t3 - t2:.1f} s)"
            )
            print(
                f"{'field':32s} {'node path abs':>14s} {'rel':>9s} {'tables abs':>11s} {'rel':>9s}"
            )
            e_node, e_tab = errors(ref, node, primary), errors(ref, tab, primary)
            for k in e_node:
                print(
                    f"{k:32s} {e_node[k][0]:14.3g} {e_node[k][1]:9.2g} {e_tab[k][0]:11.3g} "
                    f"{e_tab[k][1]:9.2g}"
                )


def _at_depth(climate: WaveClimate, depth_m: float) -> WaveClimate:
    from dataclasses import replace

    return replace(climate, depth_m=depth_m)


if __name__ == "__main__":
    {"speed": speed, "big": big, "accuracy": accuracy}[
        sys.argv[1] if len(sys.argv) > 1 else "speed"
    ]()
