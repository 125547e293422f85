"""The Python interface (docs/api.md): its worked examples run as written."""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest

import shoreline
from shoreline.errors import StudyError

ROOT = Path(__file__).parents[1]


def test_the_worked_examples_of_the_docs_run(tmp_path, monkeypatch):
    shutil.copytree(
        ROOT / "demo_coast", tmp_path / "demo_coast", ignore=shutil.ignore_patterns("out*")
    )
    monkeypatch.chdir(tmp_path)
    blocks = re.findall(r"```python\n(.*?)```", (ROOT / "docs" / "api.md").read_text(), re.S)
    assert len(blocks) == 2
    for code in blocks:
        exec(compile(code, "docs/api.md", "exec"), {})
    out = tmp_path / "demo_coast" / "out-notebook"
    assert (out / "run.json").exists() and (out / "reference" / "transects.geojson").exists()
    assert (out / "report.html").exists()


def test_layers_in_the_crs_asked_for_and_the_same_numbers_as_the_files(tmp_path, monkeypatch):
    shutil.copytree(ROOT / "demo_coast", tmp_path / "demo", ignore=shutil.ignore_patterns("out*"))
    text = (tmp_path / "demo" / "study.toml").read_text().split("[[scenario]]")[0]
    (tmp_path / "demo" / "study.toml").write_text(text)
    results = shoreline.screen(shoreline.read_study(tmp_path / "demo" / "study.toml"))
    lonlat = results.transects(crs="EPSG:4326")
    assert lonlat.crs.to_epsg() == 4326
    assert results.transects().crs == results.run.transects.working_crs
    results.write(tmp_path / "out", figures=False)
    import geopandas as gpd

    written = gpd.read_file(tmp_path / "out" / "reference" / "transects.geojson")
    assert list(written["rate_m_per_yr"].round(9)) == list(lonlat["rate_m_per_yr"].round(9))
    with pytest.raises(KeyError, match="no scenario"):
        results.transects("nowhere")


def test_a_bad_study_from_a_dict_is_one_clear_error():
    with pytest.raises(StudyError, match=r"unknown key \[coast\] 'smoothing_m'"):
        shoreline.study_from_dict({"coast": {"file": "c.geojson", "smoothing_m": 500.0}})
