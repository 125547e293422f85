"""Ensembles of the uncertain inputs ([uncertainty], shoreline/ensemble.py).

The fast path is checked against the outside world: exact statistical results for the
quantiles and probabilities of known distributions (order statistics of a uniform and a normal,
a binomial share), published sensitivity indices, the one-line theory on a bump, and members
run one by one through the ordinary chain (run.evaluate with each member's settings), which is
an independent reference computation of every member's numbers.
"""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from scipy import stats
from test_run import STEADY, straight, write_coast, write_study

from shoreline import ensemble as E
from shoreline import run as R
from shoreline import transport, waves
from shoreline.cli import main
from shoreline.exposure import compute_exposure
from shoreline.run import run_study
from shoreline.study import read_study


def uncertainty(members: int = 400, seed: int = 7, **inputs: str) -> str:
    """An [uncertainty] section: inputs given as TOML text, e.g. cerc_k="{ low = 0.2, ... }"."""
    lines = [f"\n[uncertainty]\nmembers = {members}\nseed = {seed}"]
    lines += [f"{k} = {v}" for k, v in inputs.items()]
    return "\n".join(lines) + "\n"


def quantile_bounds(p: float, n: int, alpha: float = 1e-3) -> tuple[float, float]:
    """Where a type-7 sample p-quantile of n draws lies in probability, with prob. 1 - alpha.

    The type-7 quantile interpolates between order statistics k and k + 1 (k = floor(p (n -
    1)) + 1); the CDF value of the k-th of n uniform order statistics is Beta(k, n + 1 - k)
    distributed (David & Nagaraja 2003, Order Statistics, section 2.2: exact).
    """
    k = int(np.floor(p * (n - 1))) + 1
    return (
        float(stats.beta(k, n + 1 - k).ppf(alpha / 2)),
        float(stats.beta(k + 1, n - k).ppf(1 - alpha / 2)),
    )


# --------------------------------------------------------------------------------------------
# Exact statistical results on a straight coast under steady waves
# --------------------------------------------------------------------------------------------


def test_only_cerc_k_gives_the_coefficients_quantiles_times_the_transport(tmp_path):
    # Transport is linear in K (CEM III-2 Eq. III-2-7), so with only K uncertain each member's
    # transport is K / 0.39 times the run's, and its quantiles are K's quantiles times the
    # run's transport: for K uniform on [0.2, 0.6] the sample p-quantile, in probability
    # (K - 0.2) / 0.4, lies within the order-statistic interval of a uniform (exact).
    write_coast(tmp_path, *straight())
    n = 400
    extra = uncertainty(n, cerc_k="{ low = 0.2, high = 0.6 }")
    scen = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY, extra))).scenarios[0]
    cols = scen.columns
    unit = cols["q_cerc_m3_per_yr"] / 0.39  # the run's transport per unit K
    assert np.all(unit > 0)
    for p, name in ((0.05, "q_p05_m3_per_yr"), (0.5, "q_p50_m3_per_yr"), (0.95, "q_p95_m3_per_yr")):
        k_quantile = cols[name] / unit
        np.testing.assert_allclose(k_quantile, k_quantile[0], rtol=1e-9)  # one K for the coast
        lo, hi = quantile_bounds(p, n)
        assert 0.2 + 0.4 * lo <= k_quantile[0] <= 0.2 + 0.4 * hi
    # a straight coast under uniform transport does not change whatever K is
    assert np.all(cols["p_erosion"] == 0) and np.all(cols["p_accretion"] == 0)
    assert set(cols["confidence"]) == {"virtually certain stable"}


def test_direction_bias_quantiles_are_the_chain_at_the_bias_quantiles(tmp_path):
    # Waves 20 deg off the normal: transport grows monotonically with the angle up to 45 deg
    # (sin 2 alpha_b), so the p-quantile of the members' transport is the transport of the
    # chain (breaking then CERC, CEM III-2 Eq. III-2-7) at the p-quantile of the bias. The bias
    # is normal, sd 5 deg, rounded to whole degrees: its sample quantile lies within the
    # order-statistic interval of N(0, 5) (exact), widened to the whole degrees around it.
    write_coast(tmp_path, *straight())
    n = 400
    extra = uncertainty(n, direction_bias_deg="{ sd = 5.0 }")
    cols = run_study(read_study(write_study(tmp_path, "coast.geojson", STEADY, extra)))
    cols = cols.scenarios[0].columns

    def chain(bias_deg: float) -> float:
        hb, _, ab = waves.breaking(1.2, 8.0, 20.0 + bias_deg)
        return float(transport.cerc(hb, ab) * transport.SECONDS_PER_YEAR)

    for p, name in ((0.05, "q_p05_m3_per_yr"), (0.5, "q_p50_m3_per_yr"), (0.95, "q_p95_m3_per_yr")):
        lo, hi = (stats.norm(0.0, 5.0).ppf(b) for b in quantile_bounds(p, n))
        q_lo, q_hi = chain(np.floor(lo)), chain(np.ceil(hi))
        # 2e-3: the straight coast's normals after reprojection (test_run.py, same tolerance)
        assert np.all(cols[name] >= q_lo * (1 - 2e-3)) and np.all(cols[name] <= q_hi * (1 + 2e-3))


def test_bump_crest_very_likely_erodes_and_far_straight_reaches_stay_stable(tmp_path):
    # One-line theory (Pelnard-Considere 1956): a seaward bump under shore-normal waves
    # diffuses, its crest erodes whatever the transport coefficient, the wave height or a
    # few degrees of direction; the straight coast far from it carries uniform transport and
    # does not change (common practice for moderate input ranges).
    x, _ = straight(12_000.0, 20.0)
    y = -300.0 * np.exp(-((x / 1200.0) ** 2))
    write_coast(tmp_path, x, y)
    extra = uncertainty(
        300,
        cerc_k="{ low = 0.3, high = 0.5 }",
        hs_factor="{ sd = 0.05 }",
        direction_bias_deg="{ sd = 2.0 }",
        breaker_index="{ low = 0.7, high = 0.85 }",
    )
    waves_toml = "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 180.0"
    scen = run_study(read_study(write_study(tmp_path, "coast.geojson", waves_toml, extra)))
    cols = scen.scenarios[0].columns
    ch = cols["chainage_m"]
    centre = ch[np.argmin(np.abs(ch - ch.mean()))]
    crest = np.abs(ch - centre) < 150
    assert np.all(cols["p_erosion"][crest] >= 0.9)
    assert set(cols["confidence"][crest]) <= {"very likely erosion", "virtually certain erosion"}
    far = np.abs(ch - centre) > 4500
    assert far.sum() > 10
    assert np.all(cols["p_erosion"][far] <= 0.05)
    assert np.all(cols["p_accretion"][far] <= 0.05)
    # the erosion hotspot at the crest carries its probability
    ens = scen.scenarios[0].ensemble
    crest_spot = [h for h in ens.hotspots if h["class"] == "erosion"]
    assert crest_spot and crest_spot[0]["probability"] >= 0.9


# --------------------------------------------------------------------------------------------
# Resampling the record in years
# --------------------------------------------------------------------------------------------


def two_opposite_years(folder: Path) -> None:
    """Year 1 from 200 deg (sand east), year 2 from 166 deg with smaller waves (sand west)."""
    t = np.datetime64("2031-01-01T00:00") + np.arange(0, 2 * 8784, 6).astype("timedelta64[h]")
    year1 = t < np.datetime64("2032-01-01")
    rows = [
        f"{s}Z,{1.0 if a else 0.8},8.0,{200 if a else 166}"
        for s, a in zip(t.astype(str), year1, strict=True)
    ]
    (folder / "w.csv").write_text("time,hs_m,tp_s,dir_deg\n" + "\n".join(rows) + "\n")


def test_two_opposite_years_give_a_band_across_zero_and_shares_of_a_quarter(tmp_path):
    # Resampling two years with replacement (the block bootstrap, Efron & Tibshirani 1993)
    # draws year 1 twice, both once, or year 2 twice with probabilities 1/4, 1/2, 1/4. Year 1
    # moves more sand east than year 2 moves west, so the net transport is westward only when
    # year 2 is drawn twice: p = 1/4 exactly (combinatorics). A jetty turns the direction of
    # the transport into erosion on one side and accretion on the other (test_structures.py).
    from test_structures import write_jetty

    write_coast(tmp_path, *straight())
    write_jetty(tmp_path)
    two_opposite_years(tmp_path)
    n = 400
    extra = '\n[structures]\nfile = "jetty.gpkg"\n' + uncertainty(n, record_blocks='"year"')
    result = run_study(read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"', extra)))
    cols = result.scenarios[0].columns
    q = cols["q_cerc_m3_per_yr"]
    assert np.all(cols["q_p05_m3_per_yr"] < 0) and np.all(cols["q_p95_m3_per_yr"] > 0)
    assert np.median(q) > 0  # the record as it is: east
    ch = cols["chainage_m"]
    face = result.structures.chainage_m[0]
    west, east = np.flatnonzero(ch < face)[-1], np.flatnonzero(ch > face)[0]
    tol = 4.0 * np.sqrt(0.25 * 0.75 / n)  # four binomial standard errors
    # sand east (p = 3/4): the jetty's west side accretes and its east side erodes
    assert cols["p_accretion"][west] == pytest.approx(0.75, abs=tol)
    assert cols["p_erosion"][west] == pytest.approx(0.25, abs=tol)
    assert cols["p_erosion"][east] == pytest.approx(0.75, abs=tol)
    assert cols["p_accretion"][east] == pytest.approx(0.25, abs=tol)
    assert "likely" in cols["confidence"][east]


# --------------------------------------------------------------------------------------------
# The fast path against members run one by one through the ordinary chain
# --------------------------------------------------------------------------------------------


def curved_coast(folder: Path, years: int = 2, step_h: int = 3) -> None:
    """A gently curved 40 km coast (400 transects) and an invented record (seeded)."""
    x = np.arange(0.0, 40_025.0, 25.0) - 20_000.0
    y = -400.0 * np.sin(x / 7000.0) - 150.0 * np.sin(x / 2300.0)
    write_coast(folder, x, y)
    hours = np.arange(0, years * 8766, step_h)
    rng = np.random.default_rng(5)
    t = np.datetime64("2031-01-01T00:00") + hours.astype("timedelta64[h]")
    hs = np.round(np.exp(rng.normal(-0.1, 0.5, hours.size)), 2)
    tp = np.round(rng.uniform(5.0, 13.0, hours.size), 1)
    dr = np.round(rng.normal(200.0, 25.0, hours.size)) % 360
    rows = [f"{a}Z,{b},{c},{d:.0f}" for a, b, c, d in zip(t.astype(str), hs, tp, dr, strict=True)]
    (folder / "w.csv").write_text("time,hs_m,tp_s,dir_deg\n" + "\n".join(rows) + "\n")


def one_by_one(study, result, which: int, members: range):
    """Members of a run's scenario ``which`` evaluated one by one by run.evaluate."""
    coast, transects = result.coast, result.transects
    climate = R.load_climate(study)
    c = study["coast"]
    exposure = compute_exposure(
        transects,
        list(coast.parts),
        max_distance_m=c["exposure_distance_m"],
        start_offset_m=c["ray_start_m"],
        spreading_s=study["waves"]["spreading_s"],
        wavelength_m=R.shadow_wavelength_m(climate),
    )
    shore = R.shore_type_of(study, coast, transects, exposure)
    sign = R.chainage_sign(coast, transects)
    duration = None
    if which > 0:
        spec = study.scenarios[which - 1]
        climate, duration, _ = R.scenario_climate(spec, study, climate, exposure)
    scen = result.scenarios[which]
    blocks = E.record_blocks(climate, study.uncertainty["record_blocks"])
    settings = list(E.member_settings(study, climate))
    for i in members:
        ms = settings[i]
        closure = scen.closure_depth_m if ms.closure_depth_m is None else ms.closure_depth_m
        out = R.evaluate(
            scen.name,
            E.member_study(study, ms),
            coast,
            transects,
            E.member_climate(climate, ms, None if blocks is None else blocks[0]),
            sign,
            event_duration_s=duration,
            closure_depth_m=np.broadcast_to(closure, (len(transects),)),
            structures=result.structures,
            exposure=exposure,
            coefficients=E.member_coefficients(study, ms),
            shore=shore,
        )
        yield ms, out.columns


EXACT_INPUTS = {
    "cerc_k": "{ low = 0.2, high = 0.6 }",
    "kamphuis_coefficient": "{ low = 2.0, high = 2.6 }",
    "d50_mm": "{ low = 0.2, high = 0.4 }",
    "porosity": "{ low = 0.3, high = 0.45 }",
    "closure_depth_m": "{ low = 6.0, high = 10.0 }",
    "berm_height_m": "{ low = 1.0, high = 3.0 }",
    "direction_bias_deg": "{ sd = 5.0 }",
    "formulas": '"all"',
    "record_blocks": '"year"',
}


def test_members_agree_with_the_ordinary_chain_where_the_combination_is_exact(tmp_path):
    # Coefficients, grain size, porosity, closure depth, berm height, formula, the record's
    # years and a bias of whole degrees are combined exactly (shoreline/ensemble.py notes):
    # each member equals the same member run through run.evaluate, which solves it on its own
    # (the study is large enough for the run's tables), to 1e-6 of its largest value.
    curved_coast(tmp_path)
    extra = uncertainty(64, **EXACT_INPUTS)
    study = read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"', extra))
    result = run_study(study)
    ens = result.scenarios[0].ensemble
    assert ens.info["engine"] == "tables"
    seen = set()
    for ms, cols in one_by_one(study, result, 0, range(8)):
        seen.add(ms.formula)
        q = cols[f"q_{ms.formula}_m3_per_yr"]
        rate = cols["rate_m_per_yr"]
        np.testing.assert_allclose(
            ens.q_net_m3_per_yr[:, ms.member], q, rtol=0, atol=1e-6 * np.max(np.abs(q))
        )
        np.testing.assert_allclose(
            ens.metric[:, ms.member], rate, rtol=0, atol=1e-6 * np.max(np.abs(rate))
        )
    assert seen == {"cerc", "kamphuis"}


def test_members_agree_with_the_ordinary_chain_within_the_interpolation_bound(tmp_path):
    # The Hs factor and the breaker index are interpolated between tabulated nodes: each
    # member's transport and rate are within 1 % of the ensemble's p05-p95 spread of the
    # members run one by one (the bound of docs/methods.md; measured about 0.4 %).
    curved_coast(tmp_path)
    extra = uncertainty(
        64,
        hs_factor="{ sd = 0.10 }",
        breaker_index="{ low = 0.6, high = 0.9 }",
        cerc_k="{ low = 0.2, high = 0.6 }",
        direction_bias_deg="{ sd = 5.0 }",
    )
    study = read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"', extra))
    result = run_study(study)
    ens = result.scenarios[0].ensemble
    cols_e = ens.columns
    spread_q = cols_e["q_p95_m3_per_yr"] - cols_e["q_p05_m3_per_yr"]
    spread_r = cols_e["rate_p95_m_per_yr"] - cols_e["rate_p05_m_per_yr"]
    assert np.all(spread_r > 0) and np.all(spread_q > 0)
    for ms, cols in one_by_one(study, result, 0, range(8)):
        dq = np.abs(ens.q_net_m3_per_yr[:, ms.member] - cols["q_cerc_m3_per_yr"])
        dr = np.abs(ens.metric[:, ms.member] - cols["rate_m_per_yr"])
        assert np.max(dq / spread_q) < 0.01
        assert np.max(dr / spread_r) < 0.01


def test_storm_members_are_solved_exactly(tmp_path):
    # A storm (one steady step) is solved member by member at every transect (no tables):
    # every member equals run.evaluate of the same member to rounding, Hs factor, breaker
    # index and direction included.
    curved_coast(tmp_path, years=1, step_h=24)
    extra = (
        '\n[[scenario]]\nname = "storm"\nhs_m = 3.0\ntp_s = 10.0\ndir_deg = 215.0\n'
        "duration_h = 24.0\n"
        + uncertainty(
            32,
            hs_factor="{ sd = 0.1 }",
            breaker_index="{ low = 0.6, high = 0.9 }",
            direction_bias_deg="{ sd = 5.0 }",
            formulas='"all"',
        )
    )
    study = read_study(write_study(tmp_path, "coast.geojson", 'file = "w.csv"', extra))
    result = run_study(study)
    ens = result.scenarios[1].ensemble
    assert ens.event and ens.info["engine"] == "direct"
    for ms, cols in one_by_one(study, result, 1, range(6)):
        q = cols[f"q_{ms.formula}_m3_per_yr"]
        shift = cols["shoreline_shift_m"]
        np.testing.assert_allclose(ens.q_net_m3_per_yr[:, ms.member], q, rtol=1e-9, atol=1e-9)
        np.testing.assert_allclose(
            ens.metric[:, ms.member], shift, rtol=0, atol=1e-9 * np.max(np.abs(shift))
        )


# --------------------------------------------------------------------------------------------
# Sensitivity indices
# --------------------------------------------------------------------------------------------


def test_first_order_indices_of_the_ishigami_function():
    # Ishigami & Homma (1990), a = 7, b = 0.1, inputs uniform on [-pi, pi]: the analytic
    # first-order indices are 0.3139, 0.4424, 0 and the total ones 0.5576, 0.4424, 0.2437
    # (Saltelli et al. 2008, Global Sensitivity Analysis: The Primer, from memory; the same
    # values are printed in scipy's documentation of sobol_indices).
    rng = np.random.default_rng(0)
    n = 1 << 15
    a, b = rng.uniform(-np.pi, np.pi, (2, 3, n))
    ab = np.stack([np.where(np.arange(3)[:, None] == i, b, a) for i in range(3)])

    def f(x):
        return np.sin(x[0]) + 7.0 * np.sin(x[1]) ** 2 + 0.1 * x[2] ** 4 * np.sin(x[0])

    first, total = E.sobol_first_total(f(a)[None], f(b)[None], np.stack([f(x)[None] for x in ab]))
    np.testing.assert_allclose(first[0], [0.3139, 0.4424, 0.0], atol=0.03)
    np.testing.assert_allclose(total[0], [0.5576, 0.4424, 0.2437], atol=0.03)
    # an independent implementation of the same estimators gives the same numbers (scipy >= 1.11)
    if not hasattr(stats, "sobol_indices"):
        pytest.skip("scipy.stats.sobol_indices needs scipy 1.11")
    ref = stats.sobol_indices(
        func={"f_A": f(a)[None], "f_B": f(b)[None], "f_AB": np.stack([f(x)[None] for x in ab])},
        n=n,
    )
    np.testing.assert_allclose(first[0], np.ravel(ref.first_order), rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(total[0], np.ravel(ref.total_order), rtol=1e-9, atol=1e-12)


def test_likelihood_words_follow_the_ipcc_scale():
    # Mastrandrea et al. (2010), Table 1: virtually certain 99-100 %, very likely 90-100 %,
    # likely 66-100 %, about as likely as not 33-66 %, unlikely 0-33 %, very unlikely 0-10 %,
    # exceptionally unlikely 0-1 %.
    cases = {
        1.0: "virtually certain",
        0.99: "virtually certain",
        0.95: "very likely",
        0.9: "very likely",
        0.7: "likely",
        0.66: "likely",
        0.5: "about as likely as not",
        0.2: "unlikely",
        0.05: "very unlikely",
        0.0: "exceptionally unlikely",
    }
    assert {p: E.likelihood(p) for p in cases} == cases


# --------------------------------------------------------------------------------------------
# Reproducible, and nothing changes without it
# --------------------------------------------------------------------------------------------


def test_same_seed_same_bytes_other_seed_within_sampling_error(tmp_path):
    x, _ = straight(12_000.0, 20.0)
    write_coast(tmp_path, x, -300.0 * np.exp(-((x / 1200.0) ** 2)))
    waves_toml = "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 190.0"
    n = 300
    inputs = {"cerc_k": "{ low = 0.2, high = 0.6 }", "direction_bias_deg": "{ sd = 8.0 }"}
    outs = []
    for name, seed in (("a", 7), ("b", 7), ("c", 8)):
        study = write_study(tmp_path, "coast.geojson", waves_toml, uncertainty(n, seed, **inputs))
        out = tmp_path / name
        assert main(["run", str(study), "--out", str(out), "--quiet", "--no-figures"]) == 0
        outs.append(out)
    a, b, c = outs
    for rel in ("reference/transects.csv", "reference/summary.json", "reference/hotspots.geojson"):
        assert (a / rel).read_bytes() == (b / rel).read_bytes(), rel
    ra, rb = (json.loads((o / "run.json").read_text()) for o in (a, b))
    assert ra["results_sha256"] == rb["results_sha256"]
    assert ra["uncertainty"]["seed"] == 7 and ra["uncertainty"]["members"] == n
    assert ra["uncertainty"]["distributions"]["cerc_k"] == {
        "distribution": "uniform",
        "low": 0.2,
        "high": 0.6,
    }
    import pandas as pd

    ta, tc = (pd.read_csv(o / "reference/transects.csv") for o in (a, c))
    assert not ta["p_erosion"].equals(tc["p_erosion"])  # another sample
    # each share is a binomial proportion of n members: two samples differ by less than four
    # standard errors of their difference (plus one member for the discreteness)
    for col in ("p_erosion", "p_accretion"):
        p = 0.5 * (ta[col] + tc[col])
        bound = 4.0 * np.sqrt(2.0 * p * (1 - p) / n) + 1.0 / n
        assert np.all(np.abs(ta[col] - tc[col]) <= bound)


def test_members_zero_changes_nothing(tmp_path):
    write_coast(tmp_path, *straight())
    plain = write_study(tmp_path, "coast.geojson", STEADY)
    assert main(["run", str(plain), "--out", str(tmp_path / "plain"), "--quiet"]) == 0
    text = plain.read_text()
    (tmp_path / "off.toml").write_text(text + uncertainty(0, cerc_k="{ low = 0.2, high = 0.6 }"))
    assert main(["run", str(tmp_path / "off.toml"), "--out", str(tmp_path / "off"), "--quiet"]) == 0
    for rel in ("reference/transects.csv", "reference/summary.json", "reference/results.gpkg"):
        if rel.endswith("gpkg"):
            continue  # a GeoPackage carries its write time
        assert (tmp_path / "plain" / rel).read_bytes() == (tmp_path / "off" / rel).read_bytes()
    rec = json.loads((tmp_path / "off" / "run.json").read_text())
    assert "uncertainty" not in rec
    assert not (tmp_path / "off" / "reference" / "sensitivity.png").exists()


# --------------------------------------------------------------------------------------------
# Outputs: figures, report, console
# --------------------------------------------------------------------------------------------


def test_outputs_carry_the_ensemble(tmp_path, capsys):
    x, _ = straight(12_000.0, 20.0)
    write_coast(tmp_path, x, -300.0 * np.exp(-((x / 1200.0) ** 2)))
    extra = (
        '\n[[scenario]]\nname = "storm"\nhs_m = 3.0\ntp_s = 10.0\ndir_deg = 200.0\n'
        "duration_h = 24.0\n"
        + uncertainty(100, cerc_k="{ low = 0.3, high = 0.5 }", hs_factor="{ sd = 0.1 }")
    )
    study = write_study(tmp_path, "coast.geojson", "hs_m = 1.0\ntp_s = 8.0\ndir_deg = 180.0", extra)
    out = tmp_path / "out"
    assert main(["run", str(study), "--out", str(out)]) == 0
    console = capsys.readouterr().out
    assert "ensemble of 100 members over 2 uncertain inputs" in console
    import geopandas as gpd
    from PIL import Image

    ref = gpd.read_file(out / "reference" / "results.gpkg", layer="transects")
    for col in ("rate_p05_m_per_yr", "q_p95_m3_per_yr", "p_erosion", "confidence"):
        assert col in ref.columns
    storm = gpd.read_file(out / "storm" / "results.gpkg", layer="transects")
    # a storm event speaks in the event's units (export.event_columns)
    for col in ("shift_p05_m", "shift_p95_m", "q_p50_m3", "p_accretion"):
        assert col in storm.columns
    assert not any(c.startswith("rate_p") or c.startswith("q_p50_m3_per") for c in storm.columns)
    hot = gpd.read_file(out / "reference" / "results.gpkg", layer="hotspots")
    assert {"probability", "likelihood", "main_input"} <= set(hot.columns)
    assert hot["probability"].between(0, 1).all()
    summary = json.loads((out / "reference" / "summary.json").read_text())
    assert summary["ensemble"]["factors"] == ["cerc_k", "hs_factor"]
    assert "not the simplifications of the model" in summary["ensemble"]["meaning"]
    png = out / "reference" / "sensitivity.png"
    assert "SCREENING ESTIMATE" in Image.open(png).text["Disclaimer"]
    report = (out / "report.html").read_text()
    assert "What they do not mean" in report and "Mastrandrea" in report


# --------------------------------------------------------------------------------------------
# Bad input through the command line: one clear line each
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("section", "words"),
    [
        ("wobble = 3", ["unknown key", "[uncertainty]", "wobble"]),
        ("cerc_k = { low = 0.6, high = 0.2 }", ["cerc_k", "low = 0.6", "above high"]),
        ("cerc_k = { low = 0.0, high = 0.2 }", ["cerc_k.low", "> 0"]),
        ("breaker_index = { low = 0.6, high = 2.0 }", ["breaker_index.high", "1.5"]),
        ("hs_factor = { sd = -0.1 }", ["hs_factor.sd", ">= 0"]),
        ("direction_bias_deg = { mean = 3.0, sd = 1.0 }", ["direction_bias_deg", "'mean'"]),
        ("cerc_k = 0.3", ["cerc_k", "inline table"]),
        ("d50_mm = { low = 0.2 }", ["d50_mm", "missing high"]),
        ("members = -5", ["members", "0 (off)"]),
        ('formulas = "some"', ["formulas", "'all'"]),
        ('record_blocks = "week"', ["record_blocks", "'month'"]),
    ],
)
def test_bad_uncertainty_sections(tmp_path, capsys, section, words):
    write_coast(tmp_path, *straight(2000.0))
    study = write_study(tmp_path, "coast.geojson", STEADY, "\n[uncertainty]\n" + section + "\n")
    code = main(["run", str(study), "--out", str(tmp_path / "o"), "--no-figures", "--quiet"])
    err = capsys.readouterr().err.strip()
    assert code == 2 and len(err.splitlines()) == 1 and "Traceback" not in err
    for word in ["study.toml", *words]:
        assert word in err, err


def test_year_blocks_need_two_years_and_blocks_need_a_record(tmp_path, capsys):
    write_coast(tmp_path, *straight(2000.0))
    t = np.datetime64("2031-01-01T00:00") + np.arange(0, 8760, 6).astype("timedelta64[h]")
    (tmp_path / "w.csv").write_text(
        "time,hs_m,tp_s,dir_deg\n" + "\n".join(f"{s}Z,1.0,8.0,200" for s in t.astype(str)) + "\n"
    )
    for waves_toml, words in (
        ('file = "w.csv"', ['record_blocks = "year"', "two years", "365 days", '"month"']),
        (STEADY, ["record_blocks", "needs a wave record"]),
    ):
        extra = uncertainty(10, record_blocks='"year"')
        study = write_study(tmp_path, "coast.geojson", waves_toml, extra)
        code = main(["run", str(study), "--out", str(tmp_path / "o"), "--no-figures", "--quiet"])
        err = capsys.readouterr().err.strip()
        assert code == 2 and len(err.splitlines()) == 1, err
        for word in ["study.toml", *words]:
            assert word in err, err


def test_member_settings_are_the_members_of_the_run(tmp_path):
    # What other subsystems reuse: member_settings yields the members the run used, in order,
    # and the same study gives the same members.
    write_coast(tmp_path, *straight(2000.0))
    extra = uncertainty(20, cerc_k="{ low = 0.2, high = 0.6 }", hs_factor="{ sd = 0.1 }")
    study = read_study(write_study(tmp_path, "coast.geojson", STEADY, extra))
    first = list(E.member_settings(study))
    again = list(E.member_settings(replace(study)))
    assert [m.cerc_k for m in first] == [m.cerc_k for m in again]
    assert len(first) == 20 and {m.formula for m in first} == {"cerc"}
    assert all(0.2 <= m.cerc_k <= 0.6 for m in first)
    np.testing.assert_allclose([m.k_factor for m in first], [m.cerc_k / 0.39 for m in first])
