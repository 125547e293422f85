"""Time the physics hot path on 10^6 random conditions, on one thread.

Run from the project root:

    python bench/bench_physics.py            # 10^6 conditions, best of 5
    python bench/bench_physics.py -n 200000 -r 3

Prints conditions per second for ``shoreline.waves.breaking`` (exact and explicit) and for
``shoreline.transport.cerc`` (skipped with a message if that module cannot be imported yet).
The conditions are seeded, so repeated runs time the same work.
"""

import os

# Pin every threading library to one thread before numpy is imported.
for _var in (
    "OMP_NUM_THREADS",
    "OPENBLAS_NUM_THREADS",
    "MKL_NUM_THREADS",
    "NUMEXPR_NUM_THREADS",
    "VECLIB_MAXIMUM_THREADS",
):
    os.environ[_var] = "1"

import argparse  # noqa: E402
import platform  # noqa: E402
import time  # noqa: E402

import numpy as np  # noqa: E402

from shoreline import waves  # noqa: E402


def pin_to_one_core() -> str:
    """Pin this process to one CPU where the OS allows it; say what was done."""
    if hasattr(os, "sched_setaffinity"):
        try:
            cpu = min(os.sched_getaffinity(0))
            os.sched_setaffinity(0, {cpu})
            return f"pinned to CPU {cpu}"
        except OSError as exc:  # pragma: no cover - depends on the OS
            return f"not pinned ({exc})"
    return "not pinned (no sched_setaffinity on this OS)"


def conditions(n: int, seed: int = 20240601) -> dict[str, np.ndarray]:
    """Random offshore/nearshore conditions: the spread the tests use."""
    rng = np.random.default_rng(seed)
    tp_s = rng.uniform(3.0, 20.0, n)
    l0_m = waves.G_M_S2 * tp_s**2 / (2 * np.pi)
    hs_m = np.minimum(rng.uniform(0.3, 6.0, n), 0.1 * l0_m)  # at most 1/10 deep-water steepness
    angle_deg = rng.uniform(-85.0, 85.0, n)
    depth_m = np.where(rng.random(n) < 0.5, np.inf, rng.uniform(5.0, 200.0, n))
    return {"hs_m": hs_m, "tp_s": tp_s, "angle_deg": angle_deg, "depth_m": depth_m}


def best_time(func, repeats: int) -> float:
    """Best wall-clock time of ``repeats`` calls [s]."""
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - t0)
    return best


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("-n", type=int, default=1_000_000, help="number of conditions")
    parser.add_argument("-r", "--repeats", type=int, default=5, help="repeats (best is kept)")
    args = parser.parse_args()

    pinned = pin_to_one_core()
    c = conditions(args.n)
    print(f"python {platform.python_version()}, numpy {np.__version__}, {platform.machine()}")
    print(f"{args.n:,} seeded conditions, best of {args.repeats}, one thread, {pinned}")

    def report(name: str, seconds: float) -> None:
        print(f"  {name:<28s} {seconds:8.3f} s  {args.n / seconds:14,.0f} conditions/s")

    for method in waves.BREAKING_METHODS:
        seconds = best_time(lambda m=method: waves.breaking(**c, method=m), args.repeats)
        report(f"breaking(method={method!r})", seconds)

    try:
        from shoreline.transport import cerc
    except ImportError as exc:
        print(f"  shoreline.transport.cerc skipped: not importable yet ({exc})")
        return
    hb_m, _, alpha_b_deg = waves.breaking(**c)
    seconds = best_time(lambda: cerc(hb_m, alpha_b_deg), args.repeats)
    report("transport.cerc", seconds)
    both = best_time(lambda: cerc(*waves.breaking(**c)[::2]), args.repeats)
    report("breaking(exact) + cerc", both)


if __name__ == "__main__":
    main()
