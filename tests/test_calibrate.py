"""Calibration of the transport coefficients to known net rates."""

from __future__ import annotations

import json

import numpy as np
import pytest
from pyproj import Transformer
from test_run import STEADY, UTM, local_to_lonlat, straight, write_coast, write_study

from shoreline.cli import main
from shoreline.run import run_study
from shoreline.study import read_study

# STEADY waves come from 200 deg onto a coast facing 180 deg (sea to the south): the drift
# runs toward the east (azimuth 90 deg) everywhere on the straight coast of test_run.


def known(where: str, net: float = 2.0e5, toward: float = 90.0) -> str:
    head = '\n[[calibration]]\nname = "dredging"\n'
    return f"{head}{where}\nnet_m3_per_yr = {net}\ntoward_deg = {toward}\n"


def test_one_known_rate_is_matched_and_k_reported(tmp_path):
    # The CERC transport is linear in K (CEM 2002, Eq. III-2-7), so one known rate is
    # matched exactly by K' = K Q_known / Q_model.
    write_coast(tmp_path, *straight())
    plain = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY)))
    q0 = plain.scenarios[0].columns["q_cerc_m3_per_yr"]
    lon, lat = local_to_lonlat(np.array([1234.0]), np.array([30.0]))
    extra = known(f"lon = {lon[0]}\nlat = {lat[0]}")
    study = write_study(tmp_path, "coast.geojson", STEADY, extra)
    result = run_study(read_study(study))
    cal = result.calibration
    k = int(np.argmin(np.abs(plain.scenarios[0].columns["chainage_m"] - (1234.0 + 5000.0))))
    assert cal["points"][0]["transect_id"] == k
    q = result.scenarios[0].columns["q_cerc_m3_per_yr"]
    assert q[k] == pytest.approx(2.0e5, rel=0.01)
    # to the breaking-angle node bound (1e-4 in Hb, docs/methods.md): the fit evaluates only
    # its own transects, on their own angle nodes
    assert cal["coefficients"]["cerc"] == pytest.approx(0.39 * 2.0e5 / q0[k], rel=1e-4)
    assert abs(cal["points"][0]["cerc_misfit_percent"]) < 1.0
    # Kamphuis is fitted too, by its own factor
    qk = result.scenarios[0].columns["q_kamphuis_m3_per_yr"]
    assert qk[k] == pytest.approx(2.0e5, rel=0.01)
    out = tmp_path / "out"
    assert main(["run", str(study), "--out", str(out), "--no-figures", "--quiet"]) == 0
    record = json.loads((out / "run.json").read_text())
    assert record["calibration"]["coefficients"]["cerc"] == pytest.approx(
        cal["coefficients"]["cerc"]
    )


def test_fit_does_not_depend_on_the_crs_of_the_point(tmp_path):
    # The same place given in WGS 84 and as x/y in the coast file's own CRS (UTM 26N) is the
    # same transect and the same fitted coefficient.
    write_coast(tmp_path, *straight(), crs=UTM, name="coast.gpkg")
    lon, lat = local_to_lonlat(np.array([-2100.0]), np.array([15.0]))
    x, y = Transformer.from_crs("EPSG:4326", UTM, always_xy=True).transform(lon, lat)
    a = run_study(
        read_study(
            write_study(tmp_path, "coast.gpkg", STEADY, known(f"lon = {lon[0]}\nlat = {lat[0]}"))
        )
    ).calibration
    b = run_study(
        read_study(write_study(tmp_path, "coast.gpkg", STEADY, known(f"x = {x[0]}\ny = {y[0]}")))
    ).calibration
    assert a["points"][0]["transect_id"] == b["points"][0]["transect_id"]
    assert a["coefficients"]["cerc"] == pytest.approx(b["coefficients"]["cerc"], rel=1e-12)


def test_several_rates_fit_in_log_space(tmp_path):
    # Two rates a factor of 4 apart on a uniform coast: the log-space least-squares factor is
    # their geometric mean, and each misfits by a factor of 2 either way (+100 %, -50 %).
    write_coast(tmp_path, *straight())
    lon, lat = local_to_lonlat(np.array([-2000.0, 2000.0]), np.array([0.0, 0.0]))
    extra = known(f"lon = {lon[0]}\nlat = {lat[0]}", net=1.0e5) + known(
        f"lon = {lon[1]}\nlat = {lat[1]}", net=4.0e5
    ).replace('"dredging"', '"fillet"')
    cal = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY, extra))).calibration
    misfits = sorted(p["cerc_misfit_percent"] for p in cal["points"])
    assert misfits == pytest.approx([-50.0, 100.0], abs=0.5)


def test_a_rate_the_other_way_is_left_out_and_named(tmp_path):
    write_coast(tmp_path, *straight())
    lon, lat = local_to_lonlat(np.array([0.0, 1000.0]), np.array([0.0, 0.0]))
    extra = known(f"lon = {lon[0]}\nlat = {lat[0]}") + known(
        f"lon = {lon[1]}\nlat = {lat[1]}", toward=270.0
    ).replace('"dredging"', '"westward"')
    result = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY, extra)))
    assert any("westward" in w and "left out" in w for w in result.warnings)
    assert result.calibration["points"][1]["cerc_direction_agrees"] is False


@pytest.mark.parametrize(
    "where, message",
    [
        ("lon = 1.0", "needs both lon and lat"),
        ("lon = 1.0\nlat = 2.0\nx = 5.0\ny = 6.0", "give the place once"),
        ('structure = "nowhere"', "is not a structure of the study"),
        ("lat = 95.0\nlon = 1.0", "latitude"),
    ],
)
def test_bad_calibration_is_one_line(tmp_path, capsys, where, message):
    write_coast(tmp_path, *straight())
    study = write_study(tmp_path, "coast.geojson", STEADY, known(where))
    assert main(["run", str(study), "--out", str(tmp_path / "o"), "--quiet"]) != 0
    err = capsys.readouterr().err.strip()
    assert message in err and len(err.splitlines()) == 1
