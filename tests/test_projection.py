"""The forward projection (shoreline/projection.py) against the one-line theory.

Most coasts here run along the central meridian of UTM zone 26N (33 deg W) with the sea to
the east: grid north is true north there, so every transect's seaward normal is exactly 90 deg
and a straight coast is straight to the last digit (off the central meridian a straight line
on the map turns slowly against true north, and the rate run reads that as a gradient).
"""

from __future__ import annotations

import json
from pathlib import Path

import geopandas as gpd
import numpy as np
import pytest
import shapely
from pyproj import Transformer
from scipy.integrate import quad
from scipy.special import erf, erfc

from shoreline import profile, projection, transport, waves
from shoreline.cautions import CAUTION
from shoreline.cli import main
from shoreline.run import run_study
from shoreline.study import read_study

UTM = "EPSG:32626"
X0, Y0 = 500_000.0, 4_420_000.0  # on the central meridian, about 40 deg N
TO_LONLAT = Transformer.from_crs(UTM, "EPSG:4326", always_xy=True)
D = 10.0  # closure depth 8 m + berm 2 m, the study's active height below


def write_coast(folder: Path, length_m: float, offset=None, step_m: float = 25.0) -> None:
    """A shore along the meridian, digitised south to north (the sea to the east, right)."""
    north = np.arange(0.0, length_m + step_m / 2, step_m)
    east = np.zeros_like(north) if offset is None else offset(north)
    lon, lat = TO_LONLAT.transform(X0 + east, Y0 + north)
    frame = gpd.GeoDataFrame(geometry=[shapely.LineString(np.c_[lon, lat])], crs=4326)
    frame.to_file(folder / "coast.geojson")


def write_groyne(folder: Path, north_m: float, reach_m: float) -> None:
    """A groyne from 100 m inland (west) across the shore to ``reach_m`` seaward (east)."""
    lon, lat = TO_LONLAT.transform(X0 + np.array([-100.0, reach_m]), Y0 + np.array([north_m] * 2))
    frame = gpd.GeoDataFrame({"name": ["G1"]}, geometry=[shapely.LineString(np.c_[lon, lat])])
    frame.set_crs(4326).to_file(folder / "groyne.gpkg")


def write_study(folder: Path, waves_toml: str, extra: str = "", spacing_m: float = 100.0) -> Path:
    path = folder / "study.toml"
    path.write_text(
        f"""
[coast]
file = "coast.geojson"
sea = "right"
spacing_m = {spacing_m}
orientation_window_m = 500.0

[waves]
{waves_toml}

[model]
formulas = ["cerc"]
closure_depth_m = 8.0
berm_height_m = 2.0
{extra}
""",
        encoding="utf-8",
    )
    return path


def cerc_year(hs_m: float, tp_s: float, angle_deg) -> np.ndarray:
    """Transport of the project's chain (breaking, then CERC, CEM III-2 Eq. III-2-7) [m3/yr]."""
    hb, _, ab = waves.breaking(hs_m, tp_s, angle_deg)
    return transport.cerc(hb, ab) * transport.SECONDS_PER_YEAR


def diffusivity(hs_m: float, tp_s: float, angle_deg: float) -> float:
    """The one-line diffusivity eps = (dQ/dtheta) / D of the chain [m2/yr] (central difference).

    Pelnard-Considere (1956): linearised in the shoreline's turning, the one-line equation is
    the diffusion equation dy/dt = eps d2y/dx2.
    """
    d = 0.25
    slope = (cerc_year(hs_m, tp_s, angle_deg + d) - cerc_year(hs_m, tp_s, angle_deg - d)) / (
        np.radians(2 * d)
    )
    return float(slope) / D


STEADY_NORMAL = "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 90.0"


# --------------------------------------------------------------------------------------------
# 1. A rectangular fill diffuses as the analytical solution of the linearised equation
# --------------------------------------------------------------------------------------------


def fill_study(tmp_path: Path, years: int, extra: str = "") -> Path:
    write_coast(tmp_path, 30_000.0)
    text = f"""
[projection]
years = {years}
report_years = [1, 2, 5, {years}]
{extra}
[[nourishment]]
name = "fill"
from_chainage_m = 14000.0
to_chainage_m = 16000.0
volume_m3 = 200000
"""
    return write_study(tmp_path, STEADY_NORMAL, text)


def rectangle(x: np.ndarray, t_yr: float, eps: float, length_m: float, height_m: float):
    """Pelnard-Considere (1956); Dean and Dalrymple (2002), Coastal Processes, chapter on
    shoreline change: a rectangle of ``height_m`` x ``length_m`` on a straight coast under
    normally incident waves, y = Y0/2 [erf((L/2 - x)/(2 sqrt(eps t))) + erf((L/2 + x)/...)]."""
    u = 2.0 * np.sqrt(eps * t_yr)
    return 0.5 * height_m * (erf((length_m / 2 - x) / u) + erf((length_m / 2 + x) / u))


def test_rectangular_fill_diffuses_as_the_linearised_one_line_solution(tmp_path):
    result = run_study(read_study(fill_study(tmp_path, 10)))
    proj = result.scenarios[0].projection
    t = result.transects
    x = t.chainage_m - 15_000.0
    eps = diffusivity(1.0, 8.0, 0.0)
    for year in (1, 2, 5, 10):
        shift = proj.trajectory.shift_m[year]
        exact = rectangle(x, year, eps, 2000.0, 200_000.0 / 2000.0 / D)
        # peak within 5 % (measured 0.5 %): Y0 erf(L / (4 sqrt(eps t)))
        assert shift.max() == pytest.approx(exact.max(), rel=0.05)
        # width (the square root of the second moment) within 5 % (measured 0.03 %): the
        # variance of the rectangle, L^2 / 12, grows by 2 eps t (diffusion equation)
        width = np.sqrt(np.sum(shift * x**2) / np.sum(shift))
        assert width == pytest.approx(np.sqrt(2000.0**2 / 12 + 2 * eps * year), rel=0.05)
        # volume conserved to 0.1 % (continuity; the fill has not reached the open ends)
        assert np.sum(shift * t.spacing_m * D) == pytest.approx(200_000.0, rel=1e-3)
    # the share of the fill still within its own stretch, against the integral of the
    # analytical solution over the stretch (Pelnard-Considere 1956), within 5 % of the fill
    kept = proj.nourishments[0]["retained_fraction"]
    for year in (1, 2, 5, 10):
        exact = quad(lambda v, yr=year: rectangle(v, yr, eps, 2000.0, 1.0), -1000.0, 1000.0)
        assert kept[str(year)] == pytest.approx(exact[0] / 2000.0, abs=0.05)


def test_a_larger_transport_coefficient_is_a_faster_clock(tmp_path):
    # the diffusion equation with eps -> 2 eps is the same equation with t -> 2 t (scaling of
    # Pelnard-Considere's solution); an ensemble member's factor on the transport coefficient
    result = run_study(read_study(fill_study(tmp_path, 10)))
    prep = result.scenarios[0].projection.prepared
    doubled = projection.integrate(prep, projection.Member(coefficient_factor=2.0))
    base = projection.integrate(prep)
    for year in (1, 2, 5):
        np.testing.assert_allclose(
            doubled.shift_m[year], base.shift_m[2 * year], atol=0.01 * base.shift_m[0].max()
        )


def test_projection_starts_at_the_rate_of_the_run(tmp_path):
    # a consistency check of two paths of this code (not an outside check): the projection's
    # rate at the start, for the record's mean climate, is the rate run's (the same face
    # budget); a gently curved coast under oblique waves, so that the rates are not zero
    write_coast(tmp_path, 12_000.0, offset=lambda n: 150.0 * np.sin(n / 2500.0))
    path = write_study(
        tmp_path, "hs_m = 1.2\ntp_s = 8.0\ndir_deg = 100.0", "[projection]\nyears = 1\n"
    )
    result = run_study(read_study(path))
    rate = result.scenarios[0].columns["rate_m_per_yr"]
    start = projection.initial_rate_m_per_yr(result.scenarios[0].projection.prepared)
    assert np.abs(rate).max() > 1.0
    np.testing.assert_allclose(start, rate, atol=2e-3 * np.abs(rate).max())


# --------------------------------------------------------------------------------------------
# 2. A groyne: the updrift fillet, then bypassing (Hanson 1989)
# --------------------------------------------------------------------------------------------


def test_groyne_fillet_grows_as_the_analytical_solution_then_bypasses(tmp_path):
    write_coast(tmp_path, 40_000.0)
    write_groyne(tmp_path, 20_050.0, reach_m=150.0)  # midway between two transects
    extra = """
[structures]
file = "groyne.gpkg"
bypass = 0.0

[projection]
years = 40
"""
    # waves 6 deg north of the normal: sand moves north, toward increasing chainage
    path = write_study(tmp_path, "hs_m = 0.8\ntp_s = 8.0\ndir_deg = 96.0", extra)
    result = run_study(read_study(path))
    traj = result.scenarios[0].projection.trajectory
    x = result.transects.chainage_m - result.structures.chainage_m[0]
    up, down = np.flatnonzero(x < 0)[-1], np.flatnonzero(x > 0)[0]
    # Pelnard-Considere (1956); Dean and Dalrymple (2002), Coastal Processes, chapter on
    # shoreline change: updrift of a barrier y = tan(a0) [2 sqrt(eps t / pi) exp(-x^2 / 4 eps t)
    # - |x| erfc(|x| / 2 sqrt(eps t))], tan(a0) the turning that stops the transport, here
    # Q0 / (eps D) of the linearised chain
    eps = diffusivity(0.8, 8.0, 6.0)
    tan_a0 = float(cerc_year(0.8, 8.0, 6.0)) / (eps * D)
    for year in (1, 2, 3):
        et = eps * year
        side = (x < 0) & (x > -3000.0)
        xs = np.abs(x[side])
        fillet = tan_a0 * (
            2 * np.sqrt(et / np.pi) * np.exp(-(xs**2) / (4 * et))
            - xs * erfc(xs / (2 * np.sqrt(et)))
        )
        assert traj.bypass[year][0] == 0.0  # the tip still deeper than the active depth
        # within 10 % of the fillet at the groyne (measured 1 %)
        assert np.max(np.abs(traj.shift_m[year][side] - fillet)) < 0.10 * fillet.max()
    # the fillet nears the tip (150 m): bypassing starts (Hanson 1989) and grows to all
    grown = traj.bypass[:, 0]
    assert grown[3] == 0.0 < grown[6] < grown[9] < grown[15]
    assert grown[-1] > 0.99
    assert traj.shift_m[-1][up] == pytest.approx(150.0, abs=2.0)  # held at the tip

    # the downdrift shoreline stops retreating: over the last twenty years it loses less than
    # 5 % of what the same years take from it behind a barrier that never bypasses (the
    # mirror image of the fillet, -tan(a0) 2 sqrt(eps t / pi) at the groyne); the offset
    # across the structure, pinned at its tip, remains
    def barrier(t_yr):
        return -tan_a0 * 2 * np.sqrt(eps * t_yr / np.pi)

    lost = traj.shift_m[20][down] - traj.shift_m[40][down]
    assert lost < 0.05 * (barrier(20) - barrier(40))
    assert traj.shift_m[40][down] > 0.5 * barrier(40)


def test_hanson_bypass_is_the_share_of_the_active_profile_beyond_the_tip():
    # Hanson (1989): BYP = 1 - D_G / D_LT, D_G = A y_G^(2/3) (Dean 1977; A = 0.21 D^0.48,
    # Moore 1982, from memory)
    a = 0.21 * 0.3**0.48
    assert projection.hanson_bypass(64.0, 3.0, 0.3) == pytest.approx(1 - a * 16.0 / 3.0)
    assert projection.hanson_bypass(1000.0, 3.0, 0.3) == 0.0  # tip beyond the active depth
    assert projection.hanson_bypass(-5.0, 3.0, 0.3) == 1.0  # shoreline past the tip


# --------------------------------------------------------------------------------------------
# 3. Sea-level rise, and a straight coast that stays put
# --------------------------------------------------------------------------------------------


def bruun(rise_m: float) -> float:
    """Bruun (1962): R = S L* / (B + h*), L* = (h* / A)^(3/2) on h = A y^(2/3) (Dean 1977),
    A = 0.21 D^0.48 (Moore 1982, from memory); h* = 8 m, B = 2 m, D = 0.3 mm."""
    a = 0.21 * 0.3**0.48
    return rise_m * (8.0 / a) ** 1.5 / (2.0 + 8.0)


def test_uniform_sea_level_rise_retreats_by_the_bruun_rule(tmp_path):
    write_coast(tmp_path, 10_000.0)
    extra = "[projection]\nyears = 50\nreport_years = [25, 50]\nsea_level_rise_m_per_yr = 0.004\n"
    result = run_study(read_study(write_study(tmp_path, STEADY_NORMAL, extra)))
    shift = result.scenarios[0].projection.trajectory.shift_m
    np.testing.assert_allclose(shift[50], -bruun(0.2), rtol=0.01)  # 4 mm/yr x 50 yr
    np.testing.assert_allclose(shift[25], -bruun(0.1), rtol=0.01)
    assert result.scenarios[0].columns["shift_50yr_m"] == pytest.approx(shift[50])


def test_sea_level_given_by_calendar_year_is_interpolated(tmp_path):
    write_coast(tmp_path, 10_000.0)
    extra = """
[projection]
years = 50
report_years = [10, 20, 50]
start_year = 2030
sea_level_rise_m = { 2050 = 0.15, 2080 = 0.40 }
"""
    result = run_study(read_study(write_study(tmp_path, STEADY_NORMAL, extra)))
    traj = result.scenarios[0].projection.trajectory
    # linear between the start (0 m in 2030) and the values given (common practice)
    assert traj.sea_level_m[[10, 20, 50]] == pytest.approx([0.075, 0.15, 0.40])
    np.testing.assert_allclose(traj.shift_m[20], -bruun(0.15), rtol=0.01)
    np.testing.assert_allclose(traj.shift_m[50], -bruun(0.40), rtol=0.01)


def test_straight_coast_under_uniform_oblique_waves_does_not_move(tmp_path):
    # uniform transport has no gradient: nothing moves (one-line continuity, CEM III-2; the
    # limit case of Pelnard-Considere 1956); the open ends pass the same transport
    write_coast(tmp_path, 20_000.0)
    extra = "[projection]\nyears = 50\nreport_years = [10, 50]\n"
    path = write_study(tmp_path, "hs_m = 1.2\ntp_s = 8.0\ndir_deg = 110.0", extra)
    result = run_study(read_study(path))
    assert np.abs(result.scenarios[0].columns["q_cerc_m3_per_yr"]).min() > 1e5
    shift = result.scenarios[0].projection.trajectory.shift_m
    assert np.abs(shift[50]).max() < 0.01


# --------------------------------------------------------------------------------------------
# 4. A salient flattens monotonically, for any time step (maximum principle)
# --------------------------------------------------------------------------------------------


def write_storm_record(path: Path, seed: int = 3) -> None:
    """An INVENTED hourly year: small waves from the normal and eight two-day storms."""
    rng = np.random.default_rng(seed)
    hours = 8766
    t = np.datetime64("2031-01-01T00:00") + np.arange(hours).astype("timedelta64[h]")
    hs = 0.6 + 0.2 * rng.random(hours)
    tp = 7.0 + rng.random(hours)
    for _ in range(8):
        c = int(rng.integers(0, hours - 60))
        hs[c : c + 48] = 3.5 + rng.random(48)
        tp[c : c + 48] = 11.0
    direction = (90.0 + rng.normal(0.0, 4.0, hours)) % 360.0
    with open(path, "w", encoding="utf-8") as handle:
        handle.write("time,hs_m,tp_s,dir_deg\n")
        for row in zip(t.astype(str), hs, tp, direction, strict=True):
            handle.write(f"{row[0]}Z,{row[1]:.2f},{row[2]:.1f},{row[3]:.1f}\n")


def test_salient_flattens_monotonically_for_any_time_step(tmp_path):
    # the linearised one-line equation is the diffusion equation (Pelnard-Considere 1956),
    # whose solutions obey the maximum principle: a single salient only flattens and no new
    # wiggle appears (total variation never grows; a theorem of parabolic equations, from
    # memory). A storm record at 20 m spacing, steps from a day to a year.
    write_coast(
        tmp_path, 8000.0, offset=lambda n: 80.0 * np.exp(-(((n - 4000.0) / 600.0) ** 2)), step_m=10
    )
    write_storm_record(tmp_path / "waves.csv")
    path = write_study(tmp_path, 'file = "waves.csv"', "[projection]\nyears = 6\n", 20.0)
    path.write_text(path.read_text().replace("window_m = 500.0", "window_m = 200.0"))
    result = run_study(read_study(path))
    prep = result.scenarios[0].projection.prepared
    yearly = projection.prepare(
        prep.study, prep.setting, prep.climate, prep.closure_depth_m, intervals_per_year=1
    )
    east0 = result.transects.x_m - X0
    for tables, step in ((prep, 1 / 365), (prep, 1 / 12), (yearly, 0.5), (yearly, 1.0)):
        traj = projection.integrate(tables, max_step_yr=step)
        east = east0[None, :] + traj.shift_m * prep.unit_x[None, :]
        crest = east.max(axis=1)
        variation = np.abs(np.diff(east, axis=1)).sum(axis=1)
        assert np.all(np.diff(crest) < 0), step  # flattens every year
        assert np.all(np.diff(variation) <= 1e-9), step  # no oscillation grows
        maxima = [int(np.sum(np.diff(np.sign(np.diff(e))) < 0)) for e in east]
        assert set(maxima) == {1}, step
        assert crest[-1] < 0.25 * crest[0]


# --------------------------------------------------------------------------------------------
# 5. The record in time: repeated or resampled by whole years
# --------------------------------------------------------------------------------------------


def test_resampling_a_one_year_record_is_repeating_it(tmp_path):
    # with one record year there is only one year to draw (limit case): both give the same
    write_coast(tmp_path, 8000.0, offset=lambda n: 60.0 * np.exp(-(((n - 4000.0) / 800.0) ** 2)))
    write_storm_record(tmp_path / "waves.csv")
    runs = {}
    for mode in ("repeat", "resample"):
        extra = f'[projection]\nyears = 5\nclimate = "{mode}"\nseed = 7\n'
        result = run_study(read_study(write_study(tmp_path, 'file = "waves.csv"', extra)))
        runs[mode] = result.scenarios[0].projection.trajectory.shift_m
    np.testing.assert_allclose(runs["resample"], runs["repeat"], atol=1e-9)


def test_interval_sequence_draws_whole_years_with_its_seed():
    labels = np.array([0, 1, 12, 13])  # two record years of two intervals each
    duration = np.full(4, 0.5)
    drawn = projection.interval_sequence(labels, duration, "resample", 6.0, 5)
    years = [b // 2 for b, _ in drawn]
    # whole years, in order within each: blocks 0, 1 or 2, 3
    assert [b for b, _ in drawn] == [b for y in years[::2] for b in (2 * y, 2 * y + 1)]
    assert sum(length for _, length in drawn) == pytest.approx(6.0)
    assert drawn == projection.interval_sequence(labels, duration, "resample", 6.0, 5)


# --------------------------------------------------------------------------------------------
# 6. The files of a projection
# --------------------------------------------------------------------------------------------


def test_projection_files_as_a_reader_opens_them(tmp_path):
    xr = pytest.importorskip("xarray")
    write_coast(tmp_path, 12_000.0)
    write_groyne(tmp_path, 9000.0, reach_m=60.0)
    extra = """
[structures]
file = "groyne.gpkg"

[projection]
years = 6
report_years = [2, 6]
start_year = 2030
sea_level_rise_m_per_yr = 0.005
setback_m = 5.0

[[nourishment]]
name = "south fill"
from_chainage_m = 3000.0
to_chainage_m = 4000.0
volume_m3 = 80000
year = 1
"""
    path = write_study(tmp_path, "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 95.0", extra)
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--quiet"]) == 0
    folder = tmp_path / "out" / "reference"
    table = gpd.read_file(folder / "results.gpkg", layer="transects")
    assert {"shift_2yr_m", "shift_6yr_m"} <= set(table.columns)
    with xr.open_dataset(folder / "projection" / "positions.nc") as ds:
        assert ds.sizes["time"] == 7 and ds.sizes["transect"] == len(table)
        assert str(ds.time.values[0])[:10] == "2030-01-01"
        assert ds.years_after_start.values.tolist() == list(range(7))
        np.testing.assert_allclose(
            ds.shoreline_shift_m.sel(time=ds.time[6]).values, table["shift_6yr_m"], atol=1e-9
        )
        assert {"q_net_m3_per_yr", "lon", "lat", "chainage_m", "structure_bypass"} <= set(
            ds.variables
        )
        assert ds.attrs["caution"] == CAUTION and ds.attrs["Conventions"] == "CF-1.8"
        assert float(ds.sea_level_rise_m[-1]) == pytest.approx(0.03)
    lines = json.loads((folder / "projection" / "shorelines.geojson").read_text())
    assert lines["caution"] == CAUTION
    props = [f["properties"] for f in lines["features"]]
    assert [(p["year"], p["calendar_year"], p["part_id"]) for p in props] == [
        (2, 2032, 0),
        (6, 2036, 0),
    ]
    assert gpd.read_file(folder / "results.gpkg", layer="projected_shorelines").shape[0] == 2
    summary = json.loads((folder / "summary.json").read_text())["projection"]
    fill = summary["nourishments"][0]
    assert fill["name"] == "south fill" and set(fill["retained_fraction"]) == {"2", "6"}
    assert 0 < fill["retained_fraction"]["6"] < fill["retained_fraction"]["2"] <= 1.0
    assert set(summary["setback"]["years"]) == {"2", "6"}
    assert (folder / "projection" / "shift.png").is_file()
    assert (folder / "projection" / "map.png").is_file()
    report = (tmp_path / "out" / "report.html").read_text(encoding="utf-8")
    assert "<h4>Projection</h4>" in report and "south fill" in report


def test_without_a_projection_nothing_is_projected(tmp_path):
    write_coast(tmp_path, 5000.0)
    path = write_study(tmp_path, STEADY_NORMAL)
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--quiet", "--no-figures"]) == 0
    folder = tmp_path / "out" / "reference"
    assert not (folder / "projection").exists()
    assert not any(c.startswith("shift_") for c in gpd.read_file(folder / "transects.geojson"))
    assert "projection" not in json.loads((folder / "summary.json").read_text())


def test_retreat_probability_counts_members_beyond_the_setback():
    # the share of ensemble members (definition): 2 of 4 retreat 20 m or more
    shift = np.array([[-25.0], [-20.0], [-19.9], [3.0]])
    assert projection.retreat_probability(shift, 20.0).tolist() == [0.5]


def test_ensemble_columns_give_the_share_of_members_beyond_the_setback(tmp_path):
    # three members of a one-transect coast; the share beyond the setback is a count
    # (definition), the median of three values the middle one
    members = [
        projection.Trajectory(
            np.arange(3.0), np.array([[0.0], [s1], [s2]]), None, None, None, 0, 0.0, 0
        )
        for s1, s2 in ((-5.0, -30.0), (-1.0, -10.0), (-8.0, -21.0))
    ]
    cols = projection.ensemble_columns(members, [1, 2], setback_m=20.0)
    assert cols["p_retreat_2yr"].tolist() == pytest.approx([2 / 3])
    assert cols["p_retreat_1yr"].tolist() == [0.0]
    assert cols["shift_2yr_q50_m"].tolist() == [-21.0]


def test_bruun_rule_in_the_module_matches_the_published_form():
    a = profile.dean_a_parameter(0.3)
    assert projection.bruun_retreat_m(0.5, 8.0, 2.0, 0.3) == pytest.approx(
        0.5 * (8.0 / a) ** 1.5 / 10.0
    )  # Bruun (1962)


# --------------------------------------------------------------------------------------------
# 7. Bad input: one line naming the key
# --------------------------------------------------------------------------------------------

BAD = [
    ("[projection]\nyears = 10\nreport_years = [5, 20]\n", "report_years"),
    ("[projection]\nyears = 10\nreport_years = [2.5]\n", "report_years"),
    (
        "[projection]\nyears = 10\n[[nourishment]]\nname = 'n'\nfrom_chainage_m = 100.0\n"
        "to_chainage_m = 200.0\nvolume_m3 = -5000\n",
        "volume_m3",
    ),
    (
        "[projection]\nyears = 10\n[[nourishment]]\nname = 'far'\nfrom_chainage_m = 9000.0\n"
        "to_chainage_m = 9500.0\nvolume_m3 = 5000\n",
        "outside shore part 0",
    ),
    (
        "[projection]\nyears = 10\n[[nourishment]]\nname = 'n'\npart_id = 3\n"
        "from_chainage_m = 100.0\nto_chainage_m = 200.0\nvolume_m3 = 5000\n",
        "part_id = 3",
    ),
    (
        "[projection]\nyears = 10\n[[nourishment]]\nname = 'late'\nfrom_chainage_m = 100.0\n"
        "to_chainage_m = 200.0\nvolume_m3 = 5000\nyear = 12\n",
        "beyond the horizon",
    ),
    (
        '[projection]\nyears = 10\nscenarios = ["storm"]\n[[scenario]]\nname = "storm"\n'
        "hs_m = 4.0\ntp_s = 10.0\ndir_deg = 90.0\nduration_h = 24.0\n",
        "storm events are not projected",
    ),
    ("[projection]\nyears = 10\nsea_level_rise_m = { 2050 = 0.2 }\n", "start_year"),
    (
        "[projection]\nyears = 50\nstart_year = 2030\nsea_level_rise_m = { 2050 = 0.2 }\n",
        "sea_level_rise_m",
    ),
    ("[projection]\nyears = 10\nsea_level_rise_m_per_yr = 0.5\n", "sea_level_rise_m_per_yr"),
    (
        "[[nourishment]]\nname = 'n'\nfrom_chainage_m = 100.0\nto_chainage_m = 200.0\n"
        "volume_m3 = 5000\n",
        "[projection]",
    ),
    ("[projection]\nyears = 0\n", "years"),
]


@pytest.mark.parametrize(("extra", "named"), BAD)
def test_bad_projection_input_is_one_line_naming_it(tmp_path, capsys, extra, named):
    write_coast(tmp_path, 5000.0)
    path = write_study(tmp_path, STEADY_NORMAL, extra)
    code = main(["run", str(path), "--out", str(tmp_path / "out"), "--no-figures"])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert len(err.splitlines()) == 1 and err.startswith("shoreline: error:")
    assert named in err


def test_resampling_a_record_shorter_than_a_year_is_refused(tmp_path, capsys):
    write_coast(tmp_path, 5000.0)
    rows = ["time,hs_m,tp_s,dir_deg"] + [
        f"2031-01-{d:02d}T{h:02d}:00Z,1.0,8.0,95.0" for d in range(1, 11) for h in range(24)
    ]
    (tmp_path / "short.csv").write_text("\n".join(rows) + "\n")
    extra = '[projection]\nyears = 10\nclimate = "resample"\n'
    path = write_study(tmp_path, 'file = "short.csv"', extra)
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--no-figures"]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and 'climate = "resample"' in err and "0.03 years" in err
