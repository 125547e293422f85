"""The study file: validation of keys, types, ranges and combinations (interface checks)."""

from pathlib import Path

import pytest

from shoreline.bounds import BOUNDS, MAX_TRANSECTS
from shoreline.errors import StudyError
from shoreline.study import SCENARIO_KEYS, SCHEMA, read_study

BASE = """
[coast]
file = "coast.geojson"
sea = "right"

[waves]
hs_m = 1.2
tp_s = 8.0
dir_deg = 200.0
"""


def write(tmp_path: Path, text: str) -> Path:
    path = tmp_path / "study.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_defaults_filled(tmp_path):
    study = read_study(write(tmp_path, BASE))
    assert study["coast"]["spacing_m"] == 100.0
    assert study["model"]["formulas"] == ["cerc", "kamphuis"]
    assert study["model"]["breaker_index"] == 0.78  # CEM II-4 flat-beach value (REFERENCES)
    assert study["waves"]["depth_m"] == "deep"
    assert study.coast_file == (tmp_path / "coast.geojson").resolve()


def test_integer_accepted_for_float(tmp_path):
    study = read_study(write(tmp_path, BASE + "\n[model]\nclosure_depth_m = 8\n"))
    assert study["model"]["closure_depth_m"] == 8.0


@pytest.mark.parametrize(
    ("extra", "words"),
    [
        ("[model]\nbreaker_indx = 0.7\n", ["[model]", "breaker_indx", "breaker_index"]),
        ("[modle]\nx = 1\n", ["modle", "model"]),
        ("[sediment]\nporosity = 1.2\n", ["porosity", "between 0 and 1"]),
        ('[sediment]\nporosity = "0.4"\n', ["porosity", "number"]),
        ("[model]\nbreaker_index = 2.0\n", ["breaker_index", "(0, 1.5]"]),
        ('[model]\nformulas = ["cerc", "bogus"]\n', ["formulas", "kamphuis"]),
        ('[model]\nprimary = "kamphuis"\nformulas = ["cerc"]\n', ["primary"]),
        ("[classify]\nstable_band_m_per_yr = -1\n", ["stable_band_m_per_yr", ">= 0"]),
        ("[coast]\n", ["coast"]),  # duplicate table: a TOML error
    ],
)
def test_bad_values_name_key(tmp_path, extra, words):
    with pytest.raises(StudyError) as err:
        read_study(write(tmp_path, BASE + "\n" + extra))
    message = str(err.value)
    assert "\n" not in message
    for word in words:
        assert word in message


@pytest.mark.parametrize(
    ("text", "words"),
    [
        (BASE.replace("hs_m = 1.2", "hs_m = 0"), ["hs_m", "> 0"]),
        (BASE.replace("tp_s = 8.0", "tp_s = -8.0"), ["tp_s", "> 0"]),
        (BASE.replace('sea = "right"', 'sea = "south"'), ["sea", "'left'", "'right'"]),
        (BASE.replace("hs_m = 1.2\n", ""), ["missing hs_m"]),
        (BASE.replace('file = "coast.geojson"\n', ""), ["file", "required"]),
        (BASE + 'file = "w.csv"\n', ["not both"]),
    ],
)
def test_bad_waves_and_coast(tmp_path, text, words):
    with pytest.raises(StudyError) as err:
        read_study(write(tmp_path, text))
    for word in words:
        assert word in str(err.value)


def test_missing_file(tmp_path):
    with pytest.raises(StudyError, match="not found"):
        read_study(tmp_path / "nope.toml")


def test_every_key_documented():
    doc = (Path(__file__).parents[1] / "docs" / "study-file.md").read_text(encoding="utf-8")
    for section, keys in SCHEMA.items():
        assert f"[{section}]" in doc
        for key in keys:
            assert f"`{key}`" in doc, f"docs/study-file.md does not document [{section}] {key}"
    assert "[[scenario]]" in doc
    for key in SCENARIO_KEYS:
        assert f"`{key}`" in doc, f"docs/study-file.md does not document [[scenario]] {key}"


SCENARIOS = """
[[scenario]]
name = "storm-sw"
hs_m = 4.0
tp_s = 11.0
dir_deg = 215.0
duration_h = 36.0

[[scenario]]
name = "gale"
wind_speed_m_s = 20.0
wind_dir_deg = 200.0
fetch_km = 150.0
duration_h = 12.0
"""


def test_scenarios_read_with_kind(tmp_path):
    study = read_study(write(tmp_path, BASE + SCENARIOS))
    assert [(s["name"], s["kind"]) for s in study.scenarios] == [
        ("storm-sw", "storm"),
        ("gale", "wind"),
    ]


@pytest.mark.parametrize(
    ("extra", "words"),
    [
        ('[[scenario]]\nname = "x"\nhs_m = 2.0\n', ["missing", "tp_s"]),
        (
            '[[scenario]]\nname = "x"\nhs_m = 2.0\ntp_s = 8.0\ndir_deg = 1.0\nhs_factor = 2.0\n',
            ["one kind"],
        ),
        ('[[scenario]]\nname = "reference"\nhs_factor = 1.1\n', ["name"]),
        ('[[scenario]]\nname = "x"\nhs_factor = 1.1\n', ["needs a wave record"]),
        (
            '[[scenario]]\nname = "x"\nwind_speed_m_s = 9.0\nwind_dir_deg = 1.0\nfetch_km = 5.0\n',
            ["duration_h"],
        ),
        (
            '[[scenario]]\nname = "x"\nhs_m = 2.0\ntp_s = 8.0\ndir_deg = 1.0\nduraton_h = 3.0\n',
            ["duraton_h", "duration_h"],
        ),
    ],
)
def test_bad_scenarios(tmp_path, extra, words):
    with pytest.raises(StudyError) as err:
        read_study(write(tmp_path, BASE + "\n" + extra))
    for word in words:
        assert word in str(err.value)


# Where each bounded key lives: (table, key). A scenario holds hs_m, tp_s, depth_m, duration_h,
# wind_speed_m_s and fetch_km under the same bounds (checked below for a few).
BOUNDED_KEYS = [
    ("waves", "hs_m"),
    ("waves", "tp_s"),
    ("waves", "depth_m"),
    ("waves", "max_gap_h"),
    ("coast", "spacing_m"),
    ("coast", "orientation_window_m"),
    ("coast", "transect_length_m"),
    ("coast", "exposure_distance_m"),
    ("sediment", "d50_mm"),
    ("sediment", "porosity"),
    ("sediment", "density_kg_m3"),
    ("sediment", "slope"),
    ("model", "water_density_kg_m3"),
    ("model", "closure_depth_m"),
    ("model", "berm_height_m"),
    ("model", "cerc_k"),
    ("model", "kamphuis_coefficient"),
]


def with_key(table: str, key: str, value: float) -> str:
    """BASE with one key set: replaced in [waves], else in its own table."""
    if table == "waves" and key in ("hs_m", "tp_s"):
        old = {"hs_m": "hs_m = 1.2", "tp_s": "tp_s = 8.0"}[key]
        return BASE.replace(old, f"{key} = {value!r}")
    if table == "coast":
        return BASE.replace('sea = "right"', f'sea = "right"\n{key} = {value!r}')
    if table == "waves":
        return BASE + f"{key} = {value!r}\n"
    return BASE + f"\n[{table}]\n{key} = {value!r}\n"


@pytest.mark.parametrize(("table", "key"), BOUNDED_KEYS)
def test_physical_bounds_refuse_values_beyond_them(tmp_path, table, key):
    bound = BOUNDS[key]
    below = bound.low if bound.low_open else bound.low - 1e-6 * max(1.0, bound.low)
    for value in (below, bound.high * 1.01 + 1.0):
        with pytest.raises(StudyError) as err:
            read_study(write(tmp_path, with_key(table, key, value)))
        message = str(err.value)
        assert "\n" not in message
        assert f"[{table}] {key}" in message and bound.text() in message, message
    # the bound itself is a valid value, on the closed ends
    read_study(write(tmp_path, with_key(table, key, bound.high)))


@pytest.mark.parametrize(
    ("extra", "words"),
    [
        ("hs_m = 30.0\ntp_s = 8.0\ndir_deg = 1.0\nduration_h = 6.0\n", ["hs_m", "<= 25 m"]),
        ("hs_m = 2.0\ntp_s = 8.0\ndir_deg = 1.0\nduration_h = 9000.0\n", ["duration_h"]),
        ("hs_m = 2.0\ntp_s = 8.0\ndir_deg = 1.0\ndepth_m = 1e5\n", ["depth_m", "'deep' or"]),
        (
            "wind_speed_m_s = 150.0\nwind_dir_deg = 1.0\nfetch_km = 5.0\nduration_h = 3.0\n",
            ["wind_speed_m_s", "<= 100 m/s"],
        ),
        (
            "wind_speed_m_s = 15.0\nwind_dir_deg = 1.0\nfetch_km = 1e6\nduration_h = 3.0\n",
            ["fetch_km", "'auto' or", "<= 20000 km"],
        ),
    ],
)
def test_scenario_keys_have_the_same_bounds(tmp_path, extra, words):
    with pytest.raises(StudyError) as err:
        read_study(write(tmp_path, BASE + '\n[[scenario]]\nname = "s"\n' + extra))
    for word in words:
        assert word in str(err.value)


def test_every_bound_documented():
    doc = (Path(__file__).parents[1] / "docs" / "study-file.md").read_text(encoding="utf-8")
    table = doc.split("## Input bounds", 1)[1]
    for key, bound in BOUNDS.items():
        assert f"| `{key}` | {bound.text()} | {bound.source} ({bound.basis}) |" in table, key
    assert f"{MAX_TRANSECTS:,}" in table


def test_calibration_rate_has_a_physical_bound(tmp_path):
    table = '\n[[calibration]]\nname = "pier"\nlon = 3.0\nlat = 43.0\ntoward_deg = 90.0\n'
    read_study(write(tmp_path, BASE + table + "net_m3_per_yr = 250000.0\n"))
    with pytest.raises(StudyError) as err:
        read_study(write(tmp_path, BASE + table + "net_m3_per_yr = 1e12\n"))
    assert "net_m3_per_yr" in str(err.value) and "<= 10000000 m3/yr" in str(err.value)
