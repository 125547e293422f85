"""Benchmark of the forward projection: 50 years of the 500-transect benchmark coast.

The INVENTED 50 km coast of ``bench_run.py`` (500 transects at 100 m) and its invented hourly
record of one year, repeated for 50 years with sea-level rise, run by the whole command in a
fresh process (``--no-figures --quiet``) with and without ``[projection]``; prints the wall
times, the projection's own time (tabulation and steps, from ``summary.json``) and its steps.

    python bench/bench_projection.py      # figures go in docs/performance.md

Target (issue): the 50-year projection under 60 s on the 2-core machine.
"""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))

from bench_run import run, write_coast, write_record  # noqa: E402

PROJECTION = """
[projection]
years = 50
report_years = [5, 10, 25, 50]
sea_level_rise_m_per_yr = 0.004
"""


def main() -> None:
    """Build the case, run it with and without the projection, print the times."""
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        write_coast(folder)
        steps = write_record(folder / "w1.csv", 1)
        base = (
            '[coast]\nfile = "coast.geojson"\nsea = "right"\nspacing_m = 100.0\n'
            'orientation_window_m = 1000.0\n\n[waves]\nfile = "w1.csv"\n'
        )
        plain = folder / "plain.toml"
        plain.write_text(base)
        ahead = folder / "ahead.toml"
        ahead.write_text(base + PROJECTION)
        run(plain, folder / "warm")  # warm the file cache and imports
        wall_plain, rss_plain = run(plain, folder / "out-plain")
        wall, rss = run(ahead, folder / "out-ahead")
        summary = json.loads((folder / "out-ahead" / "reference" / "summary.json").read_text())
        settings = summary["projection"]["settings"]
        print(f"record: {steps} hourly steps, 500 transects, repeated for 50 years")
        print(f"run without projection: {wall_plain:6.2f} s wall, {rss_plain:5.0f} MiB")
        print(f"run with projection:    {wall:6.2f} s wall, {rss:5.0f} MiB (target < 60 s)")
        print(
            f"projection itself:      {settings['seconds']:6.2f} s "
            f"({settings['steps']} steps of at most {settings['max_step_yr'] * 365.25:.1f} "
            f"days, {settings['intervals']} intervals, largest turning "
            f"{settings['max_turn_deg']:.1f} deg)"
        )


if __name__ == "__main__":
    main()
