"""The study file: validation of keys, types, ranges and combinations (interface checks)."""

from pathlib import Path

import pytest

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
