"""Wave records and scenarios: weighting, chunking, netCDF, wave points, storms."""

from __future__ import annotations

import json

import numpy as np
import pytest
import xarray as xr
from test_run import STEADY, local_to_lonlat, straight, write_coast, write_study

from shoreline import transport, waves, wind
from shoreline.cli import main
from shoreline.climate import durations_s, read_record_csv, read_record_netcdf
from shoreline.errors import WaveRecordError
from shoreline.run import run_study
from shoreline.study import read_study

HOURS = np.datetime64("2031-01-01T00:00") + np.arange(96).astype("timedelta64[h]")


def record_rows(hs, tp, dr, times=HOURS):
    body = "\n".join(f"{t}Z,{h},{p},{d}" for t, h, p, d in zip(times, hs, tp, dr, strict=False))
    return "time,hs_m,tp_s,dir_deg\n" + body + "\n"


def mixed_record(n=96, seed=3):
    rng = np.random.default_rng(seed)
    return (
        np.round(rng.uniform(0.3, 2.5, n), 2),
        np.round(rng.uniform(5.0, 12.0, n), 1),
        np.round(rng.uniform(150.0, 250.0, n)),
    )


def run_with_record(tmp_path, text, extra=""):
    (tmp_path / "w.csv").write_text(text)
    write_coast(tmp_path, *curved())
    return run_study(read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"', extra)))


def curved():
    x, _ = straight(6000.0, 20.0)
    return x, -150.0 * np.sin(x / 1200.0)


def test_irregular_steps_weighted_by_duration(tmp_path):
    # A record of 1 h of one condition and 3 h of another is the 1:3 duration-weighted mean
    # of the two steady runs (each record stands for the time until the next: common practice).
    t = np.array(["2031-01-01T00:00", "2031-01-01T01:00", "2031-01-01T04:00", "2031-01-01T05:00"])
    text = record_rows([1.0, 2.0, 1.0, 2.0], [8.0, 9.0, 8.0, 9.0], [200, 170, 200, 170], t)
    result = run_with_record(tmp_path, text)
    q = result.scenarios[0].columns["q_cerc_m3_per_yr"]
    # durations: 1 h, 3 h, 1 h, last = median step (1 h) -> weights 1, 3, 1, 1
    assert durations_s(t.astype("datetime64[s]"), 6 * 3600.0).tolist() == [3600, 10800, 3600, 3600]
    a = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY.replace("1.2", "1.0"))))
    steady_b = "hs_m = 2.0\ntp_s = 9.0\ndir_deg = 170.0"
    b = run_study(read_study(write_study(tmp_path, "coast.geojson", steady_b)))
    qa = a.scenarios[0].columns["q_cerc_m3_per_yr"]
    qb = b.scenarios[0].columns["q_cerc_m3_per_yr"]
    np.testing.assert_allclose(q, (2 * qa + 4 * qb) / 6, rtol=1e-9, atol=1e-6 * np.abs(qb).max())


def test_gap_longer_than_limit_is_not_filled():
    t = np.array(["2031-01-01T00:00", "2031-01-01T01:00", "2031-01-03T01:00"], "datetime64[s]")
    # the 48 h gap is longer than 6 h: the row before it stands for the record's median step
    # (of the steps 1 h and 48 h), not for the whole gap
    d = durations_s(t, 6 * 3600.0)
    assert d[0] == 3600.0
    assert d[1] == np.median([3600.0, 172800.0])
    assert d[1] < 172800.0


def test_result_does_not_depend_on_chunk_size(tmp_path):
    hs, tp, dr = mixed_record()
    study_text = record_rows(hs, tp, dr)
    results = []
    for chunk in (1, 7, 1000):
        out = tmp_path / f"c{chunk}"
        out.mkdir()
        (out / "w.csv").write_text(study_text)
        write_coast(out, *curved())
        study = read_study(write_study(out, "coast.geojson", 'file = "w.csv"'))
        results.append(run_study(study, chunk_steps=chunk).scenarios[0].columns)
    for cols in results[1:]:
        for key in (
            "q_cerc_m3_per_yr",
            "q_kamphuis_m3_per_yr",
            "q_gross_m3_per_yr",
            "rate_m_per_yr",
        ):
            np.testing.assert_allclose(cols[key], results[0][key], rtol=1e-10, atol=1e-9)


def test_gross_pos_neg_are_consistent(tmp_path):
    hs, tp, dr = mixed_record()
    cols = run_with_record(tmp_path, record_rows(hs, tp, dr)).scenarios[0].columns
    net = cols["q_cerc_m3_per_yr"]
    np.testing.assert_allclose(cols["q_pos_m3_per_yr"] + cols["q_neg_m3_per_yr"], net, rtol=1e-9)
    np.testing.assert_allclose(
        cols["q_pos_m3_per_yr"] - cols["q_neg_m3_per_yr"], cols["q_gross_m3_per_yr"], rtol=1e-9
    )
    assert np.all(cols["q_pos_m3_per_yr"] >= 0) and np.all(cols["q_neg_m3_per_yr"] <= 0)


def write_netcdf(path, hs, tp, dr, times, points=None, depth=None, names=None):
    # CF names and units (CF standard name table): what a hindcast or buoy file carries.
    attrs = {
        "hs": ("sea_surface_wave_significant_height", "m"),
        "tp": ("sea_surface_wave_period_at_variance_spectral_density_maximum", "s"),
        "dirm": ("sea_surface_wave_from_direction", "degree"),
    }
    dims = ("time",) if points is None else ("time", "station")
    data = {}
    for key, values in zip(attrs, (hs, tp, dr), strict=True):
        standard, unit = attrs[key]
        data[key] = (dims, np.asarray(values, float), {"standard_name": standard, "units": unit})
    coords = {"time": ("time", times.astype("datetime64[ns]"), {"standard_name": "time"})}
    if points is not None:
        coords["station"] = ("station", names or [f"P{i}" for i in range(len(points))])
        data["lon"] = ("station", points[:, 0], {"standard_name": "longitude"})
        data["lat"] = ("station", points[:, 1], {"standard_name": "latitude"})
        if depth is not None:
            data["depth"] = (
                "station",
                np.asarray(depth, float),
                {"standard_name": "sea_floor_depth_below_sea_surface", "units": "m"},
            )
    xr.Dataset(data, coords=coords).to_netcdf(path)


def test_netcdf_and_csv_give_the_same_result(tmp_path):
    hs, tp, dr = mixed_record()
    csv = run_with_record(tmp_path, record_rows(hs, tp, dr)).scenarios[0].columns
    write_netcdf(tmp_path / "w.nc", hs, tp, dr, HOURS)
    study = write_study(tmp_path, "coast.geojson", 'file = "w.nc"')
    nc = run_study(read_study(study)).scenarios[0].columns
    for key in ("q_cerc_m3_per_yr", "q_kamphuis_m3_per_yr", "rate_m_per_yr", "hs_12h_m"):
        np.testing.assert_allclose(nc[key], csv[key], rtol=1e-12, atol=1e-12)


def test_nearest_wave_point_is_chosen_and_depth_from_file(tmp_path):
    # Two points off the west and east halves of the coast, with different climates; each
    # transect takes the nearer one (and its depth from the file).
    x, y = curved()
    write_coast(tmp_path, x, y)
    lon, lat = local_to_lonlat(np.array([-2500.0, 2500.0]), np.array([-3000.0, -3000.0]))
    n = HOURS.size
    hs = np.c_[np.full(n, 1.0), np.full(n, 2.0)]
    tp = np.full((n, 2), 8.0)
    dr = np.c_[np.full(n, 200.0), np.full(n, 160.0)]
    write_netcdf(
        tmp_path / "p.nc", hs, tp, dr, HOURS, np.c_[lon, lat], depth=[30.0, 40.0], names=["W", "E"]
    )
    study = read_study(write_study(tmp_path, "coast.geojson", 'file = "p.nc"'))
    cols = run_study(study).scenarios[0].columns
    west = cols["chainage_m"] < 2500.0
    east = cols["chainage_m"] > 3700.0
    assert set(cols["wave_point"][west]) == {"W"} and set(cols["wave_point"][east]) == {"E"}
    assert np.all(cols["hs_mean_m"][west] == 1.0) and np.all(cols["hs_mean_m"][east] == 2.0)
    # waves from 200 and 160 deg on a coast facing about 180 deg: opposite transport directions
    assert np.all(cols["q_cerc_m3_per_yr"][west] > 0) and np.all(cols["q_cerc_m3_per_yr"][east] < 0)
    # the east point's depth (40 m) comes from the file: the same wave given at 40 m and in
    # deep water differ slightly (linear shoaling, Ks < 1 near kh ~ 1; CEM II-1)
    climate = read_record_netcdf(tmp_path / "p.nc", np.inf, depth_from_file=True)
    assert climate.depth_m.tolist() == [30.0, 40.0]


def test_netcdf_bad_units_and_missing_variable(tmp_path):
    times = HOURS[:3]
    write_netcdf(tmp_path / "w.nc", [1, 1, 1], [8, 8, 8], [200, 200, 200], times)
    with xr.open_dataset(tmp_path / "w.nc") as ds:
        bad = ds.load()
    bad["hs"].attrs["units"] = "ft"
    bad.to_netcdf(tmp_path / "ft.nc")
    with pytest.raises(WaveRecordError, match="units 'ft'"):
        read_record_netcdf(tmp_path / "ft.nc", np.inf)
    bad["hs"].attrs["units"] = "m"
    bad = bad.drop_vars("tp")
    bad.to_netcdf(tmp_path / "notp.nc")
    with pytest.raises(WaveRecordError, match="spectral_density_maximum"):
        read_record_netcdf(tmp_path / "notp.nc", np.inf)


def test_csv_nan_rows_skipped_and_counted(tmp_path):
    (tmp_path / "w.csv").write_text(
        "time,hs_m,tp_s,dir_deg\n2031-01-01T00:00Z,1,8,200\n2031-01-01T01:00Z,NaN,8,200\n"
        "2031-01-01T02:00Z,1,8,200\n"
    )
    climate = read_record_csv(tmp_path / "w.csv", np.inf)
    assert climate.skipped == 1 and climate.n_steps == 2


SCENARIOS = """
[[scenario]]
name = "storm"
hs_m = 3.0
tp_s = 10.0
dir_deg = 205.0
duration_h = 24.0

[[scenario]]
name = "gale"
wind_speed_m_s = 20.0
wind_dir_deg = 200.0
fetch_km = 150.0
duration_h = 12.0

[[scenario]]
name = "rotated"
hs_factor = 1.1
dir_shift_deg = 10.0
"""


def test_scenarios_storm_volume_wind_and_changed_climate(tmp_path):
    hs, tp, dr = mixed_record()
    (tmp_path / "w.csv").write_text(record_rows(hs, tp, dr))
    write_coast(tmp_path, *curved())
    study = write_study(tmp_path, "coast.geojson", 'file = "w.csv"', SCENARIOS)
    out = tmp_path / "out"
    assert main(["run", str(study), "--out", str(out), "--no-figures", "--quiet"]) == 0
    result = run_study(read_study(study))
    by_name = {s.name: s for s in result.scenarios}
    # A steady storm's volume change is -dQ/dx x duration (one-line continuity, CEM III-2)
    storm = by_name["storm"].columns
    years = 24.0 * 3600.0 / transport.SECONDS_PER_YEAR
    np.testing.assert_allclose(storm["volume_change_m3_per_m"], -storm["dqdx_m2_per_yr"] * years)
    np.testing.assert_allclose(storm["shoreline_shift_m"], storm["volume_change_m3_per_m"] / 10.0)
    # and its transport is the physics chain for that condition (breaking then CERC)
    i = len(storm["q_cerc_m3_per_yr"]) // 2
    angle = 205.0 - storm["normal_az_deg"][i]
    hb, db, ab = waves.breaking(3.0, 10.0, angle)
    expected = transport.cerc(hb, ab) * transport.SECONDS_PER_YEAR
    assert storm["q_cerc_m3_per_yr"][i] == pytest.approx(float(expected), rel=2e-4)
    # The gale's offshore waves are the CEM II-2 growth of shoreline.wind for its inputs
    record = json.loads((out / "gale" / "scenario.json").read_text())
    hm0, tpw, limit = wind.wind_waves(20.0, 150e3, 12 * 3600.0)
    assert record["hs_m"] == pytest.approx(float(hm0)) and record["tp_s"] == pytest.approx(
        float(tpw)
    )
    assert record["growth_limit"] == str(np.asarray(limit).item())
    # CEM II-2 by hand: duration-limited if the equivalent fetch of 12 h is shorter than 150 km
    ustar = np.sqrt(0.001 * (1.1 + 0.035 * 20.0)) * 20.0
    x_eq = 5.23e-3 * (9.81 * 12 * 3600.0 / ustar) ** 1.5 * ustar**2 / 9.81
    assert (record["growth_limit"] == "duration") == (x_eq < 150e3)
    # A changed climate carries its rate change against the reference
    rot = by_name["rotated"].columns
    np.testing.assert_allclose(
        rot["rate_change_m_per_yr"],
        rot["rate_m_per_yr"] - by_name["reference"].columns["rate_m_per_yr"],
    )
    for name in ("reference", "storm", "gale", "rotated"):
        assert (out / name / "transects.geojson").exists()
    assert not (out / "reference" / "scenario.json").exists()


def test_hallermeier_closure_depth_from_the_record(tmp_path):
    # A year of hourly waves of 1 m with 12 hours of 4 m, 10 s: the height exceeded 12 hours a
    # year is 4 m with Te = 10 s, so Hallermeier (1981) gives dc = 2.28 He - 68.5 He^2/(g Te^2)
    # = 8.00 m [derived in REFERENCES.md from Hallermeier 1981, Coastal Engineering 4].
    times = np.datetime64("2031-01-01T00:00") + np.arange(8766).astype("timedelta64[h]")
    hs = np.full(times.size, 1.0)
    tp = np.full(times.size, 8.0)
    hs[1000:1012] = 4.0
    tp[1000:1012] = 10.0
    (tmp_path / "w.csv").write_text(record_rows(hs, tp, np.full(times.size, 200), times))
    write_coast(tmp_path, *curved())
    study = write_study(tmp_path, "coast.geojson", 'file = "w.csv"')
    study.write_text(
        study.read_text().replace("closure_depth_m = 8.0", 'closure_depth_m = "hallermeier"')
    )
    scen = run_study(read_study(study)).scenarios[0]
    assert scen.info["he_m"] == [4.0] and scen.info["te_s"] == [10.0]
    np.testing.assert_allclose(scen.columns["closure_depth_m"], 8.00, atol=0.005)
