"""Structures across the shore: trapping, bypassing and conservation of sand."""

from __future__ import annotations

import json

import geopandas as gpd
import numpy as np
import pytest
import shapely
from test_run import STEADY, local_to_lonlat, straight, write_coast, write_study

from shoreline.cli import main
from shoreline.run import run_study
from shoreline.study import read_study


def write_jetty(
    folder, x_m=0.0, bypass=None, crs="EPSG:4326", name="jetty.gpkg", ident="J1", reach_m=15.0
):
    """A line from 100 m inland (north) across the shore to reach_m seaward (south) at x_m.

    The default reach of 15 m is shorter than the 20 m start offset of the exposure rays, so
    the groyne stops sand without casting a shadow on the breaker zone (see the shadow test).
    """
    lon, lat = local_to_lonlat(np.array([x_m, x_m]), np.array([100.0, -reach_m]))
    data = {"name": [ident]}
    if bypass is not None:
        data["bypass"] = [bypass]
    frame = gpd.GeoDataFrame(data, geometry=[shapely.LineString(np.c_[lon, lat])], crs=4326)
    frame.to_crs(crs).to_file(folder / name)


def jetty_study(tmp_path, bypass=0.0, file="jetty.gpkg", geometric=False):
    write_coast(tmp_path, *straight())
    extra = f'\n[structures]\nfile = "{file}"\nbypass = {bypass}\n'
    return read_study(write_study(tmp_path, "coast.geojson", STEADY, extra, geometric))


def test_jetty_traps_updrift_and_starves_downdrift(tmp_path):
    # Waves from 200 deg on a coast facing 180 deg drive sand east (increasing chainage): a
    # jetty with no bypassing accretes the shore west of it (updrift) and erodes the shore east
    # of it (downdrift); what it traps is all that arrives, and sand is conserved (one-line
    # continuity, CEM III-2; the classic groyne response, common practice).
    write_jetty(tmp_path)
    result = run_study(jetty_study(tmp_path, 0.0))
    cols = result.scenarios[0].columns
    s = result.structures
    assert len(s) == 1 and s.structure_id[0] == "J1"
    centre = cols["chainage_m"][np.argmin(np.abs(cols["chainage_m"] - s.chainage_m[0]))]
    assert s.chainage_m[0] == pytest.approx(5000.0, abs=1.0)  # the jetty is mid-coast
    rate = cols["rate_m_per_yr"]
    up = cols["chainage_m"] < s.chainage_m[0]
    assert rate[up][-1] > 0 and rate[~up][0] < 0  # accretion updrift, erosion downdrift
    assert set(cols["class"][(np.abs(cols["chainage_m"] - centre) > 300)]) == {"stable"}
    trap = result.scenarios[0].trapping
    q = cols["q_cerc_m3_per_yr"]
    assert trap.q_arriving_m3_per_yr[0] == pytest.approx(np.median(q), rel=1e-3)
    assert trap.q_passing_m3_per_yr[0] == 0.0
    assert trap.trapped_m3_per_yr[0] == pytest.approx(trap.q_arriving_m3_per_yr[0])
    # sand conserved: against the same coast without the jetty, the updrift gain equals the
    # downdrift loss equals what is trapped (each transect stands for one spacing, the end
    # transects of the open coast for half of one)
    plain = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY)))
    change = rate - plain.scenarios[0].columns["rate_m_per_yr"]
    cell = np.full(rate.size, result.transects.spacing_m[0])
    cell[[0, -1]] /= 2
    height = 8.0 + 2.0
    gain = np.sum((change * cell * height)[up])
    loss = np.sum((change * cell * height)[~up])
    assert gain == pytest.approx(trap.trapped_m3_per_yr[0], rel=1e-6)
    assert loss == pytest.approx(-trap.trapped_m3_per_yr[0], rel=1e-6)


def test_long_jetty_shelters_its_lee(tmp_path):
    # A jetty reaching 300 m seaward blocks waves from 200 deg (20 deg west of the normal) for
    # the shore just east of it (geometric-shadow limit, test_run.GEOMETRIC): a ray from a
    # start point 20 m seaward at distance x east meets the jetty if 20 + x / tan(20 deg) <
    # 300, i.e. x < 102 m (plane geometry).
    write_jetty(tmp_path, reach_m=300.0)
    cols = run_study(jetty_study(tmp_path, 0.0, geometric=True)).scenarios[0].columns
    x = cols["chainage_m"] - 5000.0
    assert np.all(cols["sheltered_fraction"][(x > 0) & (x < 90)] == 1.0)
    assert np.all(cols["sheltered_fraction"][(x > 120) | (x < 0)] == 0.0)


def test_full_bypass_changes_nothing(tmp_path):
    write_jetty(tmp_path)
    with_jetty = run_study(jetty_study(tmp_path, 1.0)).scenarios[0].columns
    plain = (
        run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY))).scenarios[0].columns
    )
    np.testing.assert_allclose(with_jetty["dqdx_m2_per_yr"], plain["dqdx_m2_per_yr"], atol=1e-9)
    np.testing.assert_allclose(with_jetty["rate_m_per_yr"], plain["rate_m_per_yr"], atol=1e-12)


def test_partial_bypass_from_attribute_and_other_crs(tmp_path):
    # a bypass attribute overrides the study's; a structures file in UTM is reprojected
    write_jetty(tmp_path, bypass=0.25, crs="EPSG:32626")
    result = run_study(jetty_study(tmp_path, 0.0))
    trap = result.scenarios[0].trapping
    assert result.structures.bypass[0] == 0.25
    assert trap.q_passing_m3_per_yr[0] == pytest.approx(0.25 * trap.q_arriving_m3_per_yr[0])


def test_structures_layer_written(tmp_path):
    write_jetty(tmp_path)
    study = jetty_study(tmp_path, 0.0)
    out = tmp_path / "out"
    assert main(["run", str(study.path), "--out", str(out), "--no-figures", "--quiet"]) == 0
    data = json.loads((out / "reference" / "structures.geojson").read_text())
    props = data["features"][0]["properties"]
    for key in (
        "structure_id",
        "chainage_m",
        "bypass",
        "q_arriving_m3_per_yr",
        "q_passing_m3_per_yr",
        "trapped_m3_per_yr",
    ):
        assert key in props
    assert "structures" in set(gpd.list_layers(out / "reference" / "results.gpkg")["name"])
    assert main(["report", str(out)]) == 0
    html = (out / "report.html").read_text(encoding="utf-8")
    assert '<table class="structures">' in html and "J1" in html


def test_structure_not_crossing_the_shore_is_named(tmp_path, capsys):
    lon, lat = local_to_lonlat(np.array([0.0, 0.0]), np.array([-300.0, -600.0]))
    gpd.GeoDataFrame(
        {"name": ["offshore-bar"]}, geometry=[shapely.LineString(np.c_[lon, lat])], crs=4326
    ).to_file(tmp_path / "jetty.gpkg")
    study = jetty_study(tmp_path, 0.0)
    code = main(["run", str(study.path), "--no-figures", "--quiet"])
    err = capsys.readouterr().err
    assert code != 0 and "offshore-bar" in err and "does not cross" in err
    assert len(err.strip().splitlines()) == 1


@pytest.mark.parametrize("where", ["study", "attribute"])
def test_bypass_outside_unit_interval(tmp_path, capsys, where):
    write_jetty(tmp_path, bypass=1.5 if where == "attribute" else None)
    write_coast(tmp_path, *straight())
    bypass = 1.5 if where == "study" else 0.0
    extra = f'\n[structures]\nfile = "jetty.gpkg"\nbypass = {bypass}\n'
    study = write_study(tmp_path, "coast.geojson", STEADY, extra)
    code = main(["run", str(study), "--no-figures", "--quiet"])
    err = capsys.readouterr().err
    assert code != 0 and "bypass" in err and "1.5" in err


@pytest.mark.parametrize("x_m", [0.0, 2.0], ids=["between-transects", "on-a-transect"])
def test_a_full_jetty_traps_what_the_updrift_side_carries(tmp_path, x_m):
    # A jetty reaching 300 m seaward shelters the shore just east of it from waves from 200
    # deg, so the transect downdrift of it carries little or nothing. What arrives at the jetty
    # is what the open shore updrift carries (one-line continuity, CEM III-2: the updrift
    # fillet gains all of it), not an average with the sheltered lee. The transects sit at
    # chainage 2, 102, ... m, so the jetty at x = 0 is between two and at x = 2 m on one.
    write_jetty(tmp_path, x_m=x_m, reach_m=300.0)
    result = run_study(jetty_study(tmp_path, 0.0, geometric=True))
    cols = result.scenarios[0].columns
    q = cols["q_cerc_m3_per_yr"]
    x = cols["chainage_m"] - 5000.0
    updrift = q[(x < x_m - 50.0) & (x > x_m - 1000.0)]
    assert np.ptp(updrift) < 1e-3 * np.mean(updrift)  # a uniform open shore updrift
    trap = result.scenarios[0].trapping
    assert trap.q_arriving_m3_per_yr[0] == pytest.approx(np.mean(updrift), rel=1e-3)
    assert trap.trapped_m3_per_yr[0] == pytest.approx(np.mean(updrift), rel=1e-3)


def test_bypass_attribute_that_is_not_a_number(tmp_path, capsys):
    # a text in the bypass column ("high") crashed with pandas' "could not convert string"
    write_jetty(tmp_path, bypass="high")
    study = jetty_study(tmp_path, 0.0)
    code = main(["run", str(study.path), "--no-figures", "--quiet"])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert "jetty.gpkg" in err and "J1" in err and "'high'" in err and "[0, 1]" in err
