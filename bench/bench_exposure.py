"""Time shoreline.exposure.compute_exposure on an invented detailed coast.

Run from the project root:

    python bench/bench_exposure.py                 # 5,000 transects, 1-degree rays, 20 km
    python bench/bench_exposure.py -n 2000 --step 2 -r 3

The coast is invented (seeded): a wiggly shore about 500 km long in UTM 31N with bays and
headlands on scales from 400 m to 40 km, vertices every 25 m of easting (--vertex-m), sea to
the south, and three islands 3-10 km offshore. Every rule of compute_exposure runs at its
default (--wavelength, --spreading). Transects are laid out along it with shoreline.coast
at the spacing that gives the requested count. The target is 5,000 transects x 1-degree rays x
20 km in under 30 s on a 2-core machine.
"""

import argparse
import platform
import time

import numpy as np
import pyproj
import shapely

from shoreline.coast import CoastLines, lay_out_transects
from shoreline.exposure import compute_exposure

UTM31N = pyproj.CRS.from_epsg(32631)


def invented_coast(vertex_m: float = 25.0, seed: int = 20240611):
    """A wiggly ~500 km shore (sea to the south) and three islands, UTM 31N [m]."""
    rng = np.random.default_rng(seed)
    x = np.arange(300000.0, 650000.0 + 1.0, vertex_m)
    s = x - x[0]
    y = (
        5000000.0
        + 4000.0 * np.sin(2 * np.pi * s / 40000.0)
        + 1500.0 * np.sin(2 * np.pi * s / 9000.0 + 1.0)
        + 300.0 * np.sin(2 * np.pi * s / 2100.0 + 2.0)
        + 40.0 * np.sin(2 * np.pi * s / 400.0 + 0.5)
        + rng.uniform(-1.5, 1.5, x.size)  # digitising noise
    )
    shore = shapely.LineString(np.column_stack([x, y]))
    islands = []
    for cx, radius_m in ((410000.0, 1500.0), (520000.0, 3000.0), (600000.0, 800.0)):
        base = np.interp(cx, x, y)
        cy = base - 5500.0 - 2.0 * radius_m - 1500.0  # well clear of the shore's wiggles
        az = np.linspace(0.0, 2 * np.pi, 241)[:-1]
        r = radius_m * (1.0 + 0.15 * np.sin(3 * az) + 0.05 * np.sin(7 * az + 1.0))
        islands.append(shapely.Polygon(np.column_stack([cx + r * np.sin(az), cy + r * np.cos(az)])))
    return shore, islands


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("-n", type=int, default=5000, help="number of transects (about)")
    parser.add_argument("--step", type=float, default=1.0, help="ray step [deg]")
    parser.add_argument("--distance", type=float, default=20000.0, help="ray length [m]")
    parser.add_argument("-r", "--repeats", type=int, default=1, help="timed runs (best kept)")
    parser.add_argument("--vertex-m", type=float, default=25.0, help="vertex spacing [m]")
    parser.add_argument("--wavelength", type=float, default=100.0, help="wavelength L [m]")
    parser.add_argument("--spreading", type=float, default=25.0, help="spreading s [-]")
    args = parser.parse_args()

    shore, islands = invented_coast(args.vertex_m)
    coast = CoastLines(
        parts=[shore],
        closed=np.array([False]),
        source_feature=np.array([0]),
        working_crs=UTM31N,
        source_crs=UTM31N,
        warnings=[],
    )
    spacing_m = shore.length / args.n
    t0 = time.perf_counter()
    transects = lay_out_transects(coast, spacing_m=spacing_m, orientation_window_m=1000.0)
    t_cast = time.perf_counter() - t0

    best = np.inf
    for _ in range(args.repeats):
        t0 = time.perf_counter()
        exp = compute_exposure(
            transects,
            coast.parts,
            land=islands,
            max_distance_m=args.distance,
            step_deg=args.step,
            wavelength_m=args.wavelength,
            spreading_s=args.spreading,
        )
        best = min(best, time.perf_counter() - t0)

    n, m = exp.open.shape
    rel = (exp.directions_deg[None, :] - transects.normal_az_deg[:, None] + 180.0) % 360.0 - 180.0
    cast = np.abs(rel) <= 90.0
    versions = f"numpy {np.__version__}, shapely {shapely.__version__}"
    print(f"python {platform.python_version()}, {versions}, {platform.machine()}")
    print(
        f"coast: {shore.length / 1000:.1f} km of shore, {len(shore.coords)} vertices, "
        f"{len(islands)} islands; transects laid out in {t_cast:.2f} s"
    )
    print(
        f"{n} transects x {m} directions ({int(cast.sum())} rays cast, "
        f"{args.distance / 1000:g} km): best of {args.repeats}: {best:.2f} s "
        f"({n / best:.0f} transects/s)"
    )
    print(
        f"exposure: median {np.nanmedian(exp.exposure_deg):.0f} deg, "
        f"min {np.nanmin(exp.exposure_deg):.0f} deg; "
        f"{np.mean(exp.exposure_deg < 90):.1%} of transects open to under 90 deg; "
        f"median fetch of cast rays {np.median(exp.fetch_m[cast]) / 1000:.1f} km"
    )
    blocked = cast & (exp.fetch_m < exp.max_distance_m)
    print(
        f"rays meeting land {blocked.sum()}, of which open by the rules (narrow blockers, "
        f"the coast's own bend) {(blocked & exp.open).sum()}; ray start pulled in at "
        f"{np.mean(exp.start_m < exp.start_offset_m):.1%} of transects; open coast "
        f"{np.mean(exp.open_coast):.1%}; mean open share on the normal "
        f"{np.mean(exp.open_share(transects.normal_az_deg)):.3f}"
    )


if __name__ == "__main__":
    main()
