"""The numbers demo_coast/README.md and docs/demo.md state about the demo data, measured.

Each claim is found in the text by a pattern; every number it holds must be the measured value
(demo_coast/measure_demo.py) rounded to the digits written. A claim whose wording changes no
longer matches and fails here, so the pages cannot drift from the files unnoticed.
"""

from __future__ import annotations

import importlib.util
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
README = ROOT / "demo_coast" / "README.md"
DEMO = ROOT / "docs" / "demo.md"
WORDS = {"ten": 10.0}

#: (page, pattern, measured names of its groups in order)
CLAIMS = [
    (README, r"near ([\d.]+)° S, ([\d.]+)° W", ("centre_lat_s_deg", "centre_lon_w_deg")),
    (README, r"WGS 84, ([\d.]+) km long", ("length_km",)),
    (README, r"reaching (\d+) m seaward of the coast's trend", ("headland_m",)),
    (README, r"\(Brannock Bay\) (\d+) m\s+deep", ("bay_depth_m",)),
    (README, r"one year \((\d{4})\) of hourly offshore waves \((\d+) records\)", ("year", "hours")),
    (DEMO, r"near ([\d.]+)° S, ([\d.]+)° W", ("centre_lat_s_deg", "centre_lon_w_deg")),
    (DEMO, r"A ([\d.]+) km sandy coast", ("length_km",)),
    (DEMO, r"trending toward (\d+)°", ("trend_deg",)),
    (DEMO, r"seaward normal points to about (\d+)°", ("normal_deg",)),
    (
        DEMO,
        r"(\d+) m seaward of the trend, centred at chainage ([\d.]+) km",
        ("headland_m", "headland_chainage_km"),
    ),
    (
        DEMO,
        r"Brannock Bay,\s+(\d+) m deep, centred at ([\d.]+) km",
        ("bay_depth_m", "bay_chainage_km"),
    ),
    (DEMO, r"One invented year \((\d{4})\) of hourly", ("year",)),
    (
        DEMO,
        r"median direction (\d+)°, mean Hs ([\d.]+) m, median Tp ([\d.]+) s",
        ("median_dir_deg", "mean_hs_m", "median_tp_s"),
    ),
    (
        DEMO,
        r"(\w+) storms\s+peaking at ([\d.]+)–([\d.]+) m from (\d+)–(\d+)°",
        (
            "storms",
            "storm_peak_min_m",
            "storm_peak_max_m",
            "storm_dir_min_deg",
            "storm_dir_max_deg",
        ),
    ),
    (DEMO, r"wind sea from the south-east \((\d+) % of\s+the hours\)", ("wind_sea_pct",)),
    (
        DEMO,
        r"d50 = ([\d.]+) mm; closure depth ([\d.]+) m, berm height ([\d.]+) m; "
        r"CERC \(K = ([\d.]+)\)",
        ("d50_mm", "closure_depth_m", "berm_height_m", "cerc_k"),
    ),
    (
        DEMO,
        r"a (\d+)-hour south-westerly storm \(Hs ([\d.]+) m, Tp ([\d.]+) s, from (\d+)°\)",
        ("storm_h", "storm_hs_m", "storm_tp_s", "storm_dir_deg"),
    ),
    (DEMO, r"(\d+) hours of Hs ([\d.]+) m from (\d+)°", ("storm_h", "storm_hs_m", "storm_dir_deg")),
    (
        DEMO,
        r"a (\d+)-hour gale\s+from the south-east \((\d+) m/s over (\d+) km",
        ("gale_h", "gale_wind_m_s", "gale_fetch_km"),
    ),
    (
        DEMO,
        r"heights \+(\d+) %, directions turned (\d+)° clockwise",
        ("rotated_hs_pct", "rotated_turn_deg"),
    ),
    (
        DEMO,
        r"chainage\s+([\d.]+) km, reaching (\d+) m seaward, with (\d+) % of the arriving sand",
        ("jetty_chainage_km", "jetty_reach_m", "jetty_bypass_pct"),
    ),
]


@pytest.fixture(scope="module")
def measured() -> dict[str, float]:
    spec = importlib.util.spec_from_file_location(
        "measure_demo", ROOT / "demo_coast" / "measure_demo.py"
    )
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module.measure()


def _agrees(written: str, value: float) -> bool:
    """True if ``written`` is ``value`` rounded to the digits written (or a number word)."""
    if written in WORDS:
        return WORDS[written] == value
    decimals = len(written.split(".")[1]) if "." in written else 0
    return abs(float(written) - value) <= 0.5 * 10.0**-decimals + 1e-9


@pytest.mark.parametrize(("page", "pattern", "names"), CLAIMS, ids=[c[1][:40] for c in CLAIMS])
def test_page_states_the_measured_number(measured, page: Path, pattern: str, names) -> None:
    text = " ".join(page.read_text(encoding="utf-8").split())
    found = re.findall(pattern, text)
    assert found, f"{page.name}: no text matches {pattern!r}"
    for groups in found:
        groups = (groups,) if isinstance(groups, str) else groups
        for written, name in zip(groups, names, strict=True):
            assert _agrees(written, measured[name]), (
                f"{page.name}: {name} written {written}, measured {measured[name]:.4g}"
            )


def test_demo_record_is_hourly() -> None:
    spec = importlib.util.spec_from_file_location(
        "measure_demo", ROOT / "demo_coast" / "measure_demo.py"
    )
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    waves = module.measure_waves()
    assert waves["step_h"] == 1.0 and waves["hours"] == 8760.0  # "hourly", "one year"
