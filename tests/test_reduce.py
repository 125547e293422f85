"""Tests of shoreline/reduce.py: the time reduction by tables over normal-azimuth nodes.

Two independent references, and no expected value produced by shoreline.reduce itself:

- the tables against a brute-force evaluation of the same sums written out here as plain
  loops over nodes, steps and sectors, each term from ``waves.breaking`` and
  ``transport.longshore_transport`` called directly on scalars (1e-9 relative: the two differ
  only in the order of summation and in the wrapping of the angle, ~1e-13);
- the whole result against the direct path of the run, ``run.transport_reductions(...,
  angle_step_deg=0)``, which solves every transect and step at the transect's own normal. The
  two differ by the linear interpolation between nodes 0.5 degrees apart: the node bound,
  measured with ``python bench/bench_reduce.py accuracy`` and written in docs/methods.md
  ("Tables over normal-azimuth nodes"); NODE_BOUND below is that bound.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from test_exposure import STRAIGHT, circle, transects_at

from shoreline import reduce, run, transport, waves
from shoreline.climate import WaveClimate, steady
from shoreline.exposure import compute_exposure

PHYSICS = {
    "formulas": ["cerc", "kamphuis"],
    "primary": "cerc",
    "breaker_index": 0.78,
    "breaking_method": "exact",
    "cerc_k": 0.39,
    "kamphuis_coefficient": 2.27,
    "d50_mm": 0.3,
    "slope": None,
    "water_density_kg_m3": 1025.0,
    "sediment_density_kg_m3": 2650.0,
    "porosity": 0.4,
}

# The node bound: the largest error against the direct path that today's node path of the run
# (run.transport_reductions, 0.5-degree angle nodes per step) makes, measured by
# bench/bench_reduce.py accuracy over 1000 normals (100-300 deg, both signs) and two invented
# 2-year records, each formula as primary (docs/methods.md, "Tables over normal-azimuth
# nodes"), rounded up. Transport is compared with the transect's gross transport by the same
# formula (net transport passes through zero where it reverses), per formula; the other fields
# as noted. The tables at 0.5-degree nodes measured within it on every field (their largest:
# CERC 7.8e-5, Kamphuis 4.6e-4 of the gross, against 1.9e-4 and 7.5e-4 for the node path).
Q_BOUND = {"cerc": 2e-4, "kamphuis": 8e-4}  # node path: 1.9e-4 and 7.5e-4 of the gross
NODE_BOUND = {
    "q_net": (Q_BOUND, "gross"),
    "q_gross_m3_per_yr": (Q_BOUND, "gross"),  # of the primary formula
    "q_pos_m3_per_yr": (Q_BOUND, "gross"),
    "q_neg_m3_per_yr": (Q_BOUND, "gross"),
    "hb_m": (5e-2, "value"),  # 4.0e-2 relative, where waves reach only near grazing
    "db_m": (5e-2, "value"),  # 4.0e-2
    "alpha_b_deg": (0.35, "degrees"),  # 0.33 deg
    "sheltered_fraction": (2e-2, "fraction"),  # 0.017
    "broken_at_input_fraction": (2e-2, "fraction"),  # as sheltered_fraction (same grazing steps)
}


@pytest.fixture
def tabled(monkeypatch):
    """The wave points that tabulated_reductions puts on tables (the rest go direct).

    Small cases are solved directly by default (reduce.DIRECT_TRANSECT_STEPS); here tables
    are used wherever they have fewer nodes than transects, so that the tests exercise them.
    """
    monkeypatch.setattr(reduce, "DIRECT_TRANSECT_STEPS", 0)
    calls = []
    original = reduce.tabulate

    def spy(climate, normal_az_deg, physics, **kw):
        calls.append(kw.get("point"))
        return original(climate, normal_az_deg, physics, **kw)

    monkeypatch.setattr(reduce, "tabulate", spy)
    return calls


def record(steps: int, seed: int = 3, mean_dir: float = 200.0) -> WaveClimate:
    """An invented hourly record: lognormal heights, uniform periods, normal directions."""
    rng = np.random.default_rng(seed)
    return WaveClimate(
        hs_m=np.exp(rng.normal(-0.1, 0.5, steps)),
        tp_s=rng.uniform(5.0, 13.0, steps),
        dir_deg=rng.normal(mean_dir, 30.0, steps) % 360.0,
        duration_s=np.full(steps, 3600.0),
        depth_m=np.inf,
        kind="record",
        source="invented",
    )


def fields(red: run.Reductions) -> dict[str, np.ndarray]:
    out = {f"q_net[{k}]": v for k, v in red.q_net_m3_per_yr.items()}
    for k in NODE_BOUND:
        if k != "q_net":
            out[k] = getattr(red, k)
    return out


def direct_path(*args, **kw) -> tuple[run.Reductions, dict[str, np.ndarray]]:
    """The run's direct path, and the gross transport of every formula (each as primary)."""
    ref = run.transport_reductions(*args, angle_step_deg=0, **kw)
    gross = {kw["primary"]: ref.q_gross_m3_per_yr}
    for other in kw["formulas"]:
        if other != kw["primary"]:
            again = run.transport_reductions(*args, angle_step_deg=0, **(kw | {"primary": other}))
            gross[other] = again.q_gross_m3_per_yr
    return ref, gross


def assert_within_node_bound(
    tab: run.Reductions, ref: run.Reductions, gross: dict[str, np.ndarray]
) -> None:
    a, b = fields(ref), fields(tab)
    primary = next(f for f, g in gross.items() if g is ref.q_gross_m3_per_yr)
    for k in a:
        tol, unit = NODE_BOUND["q_net" if k.startswith("q_net") else k]
        # NaN (no wave ever reaches) must agree exactly
        np.testing.assert_array_equal(np.isnan(b[k]), np.isnan(a[k]), err_msg=k)
        ok = np.isfinite(a[k])
        err = np.abs(b[k] - a[k])[ok]
        if unit == "gross":  # of the formula itself
            formula = k[6:-1] if k.startswith("q_net[") else primary
            limit = tol[formula] * gross[formula][ok] + 1e-9
        elif unit == "value":
            limit = tol * np.abs(a[k][ok]) + 1e-12
        else:
            limit = tol
        assert np.all(err <= limit), f"{k}: worst {np.max(err - limit):.3g} beyond the bound"


# ---------------------------------------------------------------------------------------------
# The tables against a brute-force evaluation of the same sums
# ---------------------------------------------------------------------------------------------


def brute_force_tables(climate, nodes, n_sectors, blocks, kw):
    """The sums of the tables, one scalar term at a time (plain loops, sea on the right)."""
    width = 360.0 / n_sectors
    labels = sorted(set(blocks.tolist()))
    names = [f"q_{f}_m3" for f in kw["formulas"]]
    names += ["q_gross_m3", "q_pos_m3", "open_s", "broken_s", "hb_m_s", "db_m_s", "alpha_b_deg_s"]
    sums = {q: np.zeros((len(labels), len(nodes), n_sectors)) for q in names}
    depth = climate.depth_m
    for t in range(climate.n_steps):
        hs, tp, d, w = (
            float(v[t]) for v in (climate.hs_m, climate.tp_s, climate.dir_deg, climate.duration_s)
        )
        sector = int(round(d / width)) % n_sectors  # the nearest sector centre
        b = labels.index(int(blocks[t]))
        for k, node in enumerate(nodes):
            angle = (d - node + 180.0) % 360.0 - 180.0
            if abs(angle) >= 90.0:
                continue  # waves from land
            hb, db, ab, broken = waves.breaking(
                hs, tp, angle, depth, kw["breaker_index"], kw["breaking_method"], True
            )
            if not math.isfinite(hb):
                continue
            slope = kw["slope"]
            if slope is None:
                a = 0.21 * kw["d50_mm"] ** 0.48  # Dean's A, Moore (1982) fit (profile.py)
                slope = a**1.5 / math.sqrt(db)  # Dean's profile: mb = db / (db / A)^1.5
            for f in kw["formulas"]:
                q = float(
                    transport.longshore_transport(
                        f,
                        hb_m=hb,
                        tp_s=tp,
                        alpha_b_deg=ab,
                        slope=slope,
                        d50_mm=kw["d50_mm"],
                        breaker_index=kw["breaker_index"],
                        cerc_k=kw["cerc_k"],
                        kamphuis_coefficient=kw["kamphuis_coefficient"],
                        water_density_kg_m3=kw["water_density_kg_m3"],
                        sediment_density_kg_m3=kw["sediment_density_kg_m3"],
                        porosity=kw["porosity"],
                    )
                )
                sums[f"q_{f}_m3"][b, k, sector] += w * q
                if f == kw["primary"]:
                    sums["q_gross_m3"][b, k, sector] += w * abs(q)
                    sums["q_pos_m3"][b, k, sector] += w * max(q, 0.0)
            sums["open_s"][b, k, sector] += w
            sums["broken_s"][b, k, sector] += w * bool(broken)
            sums["hb_m_s"][b, k, sector] += w * hb
            sums["db_m_s"][b, k, sector] += w * db
            sums["alpha_b_deg_s"][b, k, sector] += w * ab
    return sums


@pytest.mark.parametrize(
    ("formulas", "primary", "slope", "depth", "method"),
    [
        (["cerc", "kamphuis"], "cerc", None, np.inf, "exact"),
        (["kamphuis", "cerc"], "kamphuis", 0.04, 12.0, "exact"),
        (["cerc"], "cerc", None, 6.0, "explicit"),
    ],
)
def test_tables_equal_brute_force_sums(formulas, primary, slope, depth, method):
    climate = replace(record(60, seed=8), depth_m=depth)
    climate.hs_m[:3] = [5.0, 0.0, np.nan]  # broken at a 6 m input depth; no waves; missing
    kw = PHYSICS | {"formulas": formulas, "primary": primary, "slope": slope}
    kw["breaking_method"] = method
    physics = reduce.Physics(**kw)
    normals = np.array([171.3, 176.8, 168.05, 174.0])
    blocks = np.arange(60) // 25  # three blocks of the record
    m = 12
    tables = reduce.tabulate(
        climate, normals, physics, n_sectors=m, blocks=blocks, margin_nodes=2, chunk_steps=7
    )
    # the nodes: every 0.5 deg from below the smallest normal to above the largest, 2 more aside
    np.testing.assert_allclose(tables.nodes_deg, np.arange(167.0, 178.0 + 0.25, 0.5))
    expected = brute_force_tables(climate, tables.nodes_deg, m, blocks, kw)
    assert sorted(tables.sums) == sorted(expected)
    np.testing.assert_array_equal(tables.blocks, [0, 1, 2])
    np.testing.assert_allclose(tables.duration_s, [25 * 3600.0, 25 * 3600.0, 10 * 3600.0])
    for q, values in expected.items():
        held = values[:, :, tables.sectors]
        scale = np.abs(values).max()
        np.testing.assert_allclose(tables.sums[q], held, rtol=1e-9, atol=1e-12 * scale, err_msg=q)
        others = np.setdiff1d(np.arange(m), tables.sectors)
        assert not values[:, :, others].any(), q  # sectors left out hold no step
    if depth == 6.0:
        assert tables.sums["broken_s"].sum() > 0


def test_combined_blocks_equal_the_whole_record():
    climate = record(300, seed=4)
    physics = reduce.Physics(**PHYSICS)
    normals = np.linspace(150.0, 230.0, 50)
    months = np.arange(300) // 30
    whole = reduce.tabulate(climate, normals, physics, n_sectors=36)
    parts = reduce.tabulate(climate, normals, physics, n_sectors=36, blocks=months)
    assert parts.sums["open_s"].shape[0] == 10
    both = parts.combine(np.ones(10))
    np.testing.assert_allclose(both.duration_s, whole.duration_s)
    for q in whole.sums:
        np.testing.assert_allclose(both.sums[q], whole.sums[q], rtol=1e-12, atol=1e-9)
    # read per block: the blocks add up to the whole, per transect
    weight = (np.random.default_rng(2).random((50, 36)) > 0.3).astype(float)
    per_block = parts.interpolate(normals, -1.0, weight)
    total = whole.interpolate(normals, -1.0, weight)
    for q in total:
        assert per_block[q].shape == (10, 50)
        np.testing.assert_allclose(per_block[q].sum(axis=0), total[q], rtol=1e-11, atol=1e-6)
    # a block drawn twice counts twice
    twice = parts.combine(np.r_[2.0, np.zeros(9)])
    np.testing.assert_allclose(twice.sums["q_cerc_m3"], 2 * parts.sums["q_cerc_m3"][0])


def test_direction_shift_equals_tabulating_the_turned_record():
    # Turning every direction by delta is the same as reading the tables at normal - delta with
    # the sector weights turned by delta (whole sectors here, so exactly).
    climate = record(400, seed=5)
    physics = reduce.Physics(**PHYSICS)
    normals = np.random.default_rng(1).uniform(170.0, 190.0, 80)
    weight = (np.random.default_rng(3).random((80, 360)) > 0.2).astype(float)
    delta = 3.0
    turned = replace(climate, dir_deg=(climate.dir_deg + delta) % 360.0)
    base = reduce.tabulate(climate, normals, physics, n_sectors=360, margin_nodes=8)
    shifted = base.interpolate(normals, 1.0, weight, dir_shift_deg=delta)
    direct = reduce.tabulate(turned, normals, physics, n_sectors=360).interpolate(
        normals, 1.0, weight
    )
    for q in direct:
        scale = np.abs(direct[q]).max()
        np.testing.assert_allclose(shifted[q], direct[q], rtol=1e-9, atol=1e-12 * scale)
    with pytest.raises(ValueError, match="outside the tabulated nodes"):
        base.interpolate(normals, 1.0, weight, dir_shift_deg=10.0)


# ---------------------------------------------------------------------------------------------
# The whole result against the direct path of the run
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("formulas", "primary", "slope", "depth"),
    [
        (["cerc", "kamphuis"], "cerc", None, np.inf),
        (["cerc", "kamphuis"], "kamphuis", 0.05, 15.0),
    ],
)
def test_open_coast_against_the_direct_path(formulas, primary, slope, depth, tabled):
    climate = replace(record(4000, seed=11), depth_m=depth)
    rng = np.random.default_rng(6)
    normals = rng.uniform(110.0, 290.0, 600)  # many normals, some facing away from the waves
    sign = np.where(rng.random(600) < 0.5, 1.0, -1.0)  # sea on the right and on the left
    normals[:2] = [180.0, 200.5]  # exactly on nodes too
    kw = PHYSICS | {"formulas": formulas, "primary": primary, "slope": slope}
    ref, gross = direct_path(normals, sign, climate, **kw)
    tab = reduce.tabulated_reductions(normals, sign, climate, **kw)
    assert tabled == [None]  # one wave point, on tables
    assert tab.hours == ref.hours
    assert_within_node_bound(tab, ref, gross)


def island_coast(n: int = 121, spreading_s: float | None = 25.0):
    """A straight coast (sea to the south) of varied normals with an island 3 km offshore."""
    x = np.linspace(-6000.0, 6000.0, n)
    normals = 180.0 + 20.0 * np.sin(x / 1500.0)
    transects = transects_at(x, 0.0, normals)
    exposure = compute_exposure(
        transects, [STRAIGHT], land=[circle(0.0, -3000.0, 500.0)], spreading_s=spreading_s
    )
    return transects, exposure


def test_sheltered_coast_against_the_direct_path(tabled):
    transects, exposure = island_coast()
    assert not exposure.open.all(axis=1)[60]  # the island shadows the middle transect
    climate = record(3000, seed=12, mean_dir=185.0)
    sign = np.where(np.arange(121) % 3 == 0, -1.0, 1.0)
    normals = transects.normal_az_deg
    ref, gross = direct_path(normals, sign, climate, exposure=exposure, **PHYSICS)
    tab = reduce.tabulated_reductions(
        normals, sign, climate, sector_weight=exposure.share, **PHYSICS
    )
    assert tabled == [None]
    assert_within_node_bound(tab, ref, gross)
    # the shadow is exact (weights per sector, not interpolated): more sheltered behind it
    assert tab.sheltered_fraction[60] > tab.sheltered_fraction[0] + 0.05


def test_several_wave_points_against_the_direct_path(tabled):
    transects, exposure = island_coast(300)
    # a year each: the node bound holds for records of spread directions long enough for the
    # share of waves within a node of normal incidence to settle (docs/methods.md)
    points = [record(8766, seed=s, mean_dir=d) for s, d in ((1, 170.0), (2, 200.0), (3, 230.0))]
    climate = WaveClimate(
        hs_m=np.stack([p.hs_m for p in points]),
        tp_s=np.stack([p.tp_s for p in points]),
        dir_deg=np.stack([p.dir_deg for p in points]),
        duration_s=points[0].duration_s,
        depth_m=np.array([np.inf, 25.0, 18.0]),
        kind="record",
        source="invented",
    )
    point_index = np.repeat([0, 1, 2], 100)
    point_index[:3] = 2  # points need not serve contiguous transects
    point_index[100:198] = 0  # point 1 serves two transects, too few for tables: solved directly
    sign = np.where(np.arange(300) % 4 == 0, -1.0, 1.0)
    normals = transects.normal_az_deg
    args = (normals, sign, climate)
    ref, gross = direct_path(*args, point_index=point_index, exposure=exposure, **PHYSICS)
    tab = reduce.tabulated_reductions(
        *args, point_index=point_index, sector_weight=exposure.share, **PHYSICS
    )
    assert tabled == [0, 2]
    assert_within_node_bound(tab, ref, gross)
    with pytest.raises(ValueError, match="point_index"):
        reduce.tabulated_reductions(*args, **PHYSICS)


def test_single_storm_step_on_tables_against_the_direct_path(tabled):
    climate = replace(steady(3.2, 10.0, 185.0), duration_s=np.array([48 * 3600.0]))
    transects, exposure = island_coast(spreading_s=None)  # the geometric-shadow limit
    normals = transects.normal_az_deg
    sign = np.where(np.arange(121) < 60, 1.0, -1.0)
    weight = exposure.share
    ref, gross = direct_path(normals, sign, climate, exposure=exposure, **PHYSICS)
    tab = reduce.tabulated_reductions(normals, sign, climate, sector_weight=weight, **PHYSICS)
    assert tabled == [None]
    assert np.any(tab.sheltered_fraction == 1.0) and np.any(tab.sheltered_fraction == 0.0)
    # Kamphuis' |sin 2 alpha_b|^0.6 has an infinite slope at normal incidence: one step met
    # head-on by transects within half a node of it is where linear interpolation shows
    # (docs/methods.md: up to 2 % of the coast's largest Kamphuis gross transport here)
    err = np.abs(tab.q_net_m3_per_yr["kamphuis"] - ref.q_net_m3_per_yr["kamphuis"])
    assert err.max() <= 0.02 * gross["kamphuis"].max()
    facing = np.abs(normals - 185.0) < 0.5
    assert facing.any() and np.argmax(err) in np.flatnonzero(facing)
    tab.q_net_m3_per_yr["kamphuis"] = ref.q_net_m3_per_yr["kamphuis"]  # checked above
    assert_within_node_bound(tab, ref, gross)  # every other field, CERC included


def test_a_storm_is_solved_directly_by_default():
    climate = replace(steady(3.2, 10.0, 185.0), duration_s=np.array([48 * 3600.0]))
    transects, exposure = island_coast(spreading_s=None)  # the geometric-shadow limit
    normals = transects.normal_az_deg
    sign = np.where(np.arange(121) < 60, 1.0, -1.0)
    ref = run.transport_reductions(
        normals, sign, climate, angle_step_deg=0, exposure=exposure, **PHYSICS
    )
    tab = reduce.tabulated_reductions(
        normals, sign, climate, sector_weight=exposure.share, **PHYSICS
    )
    for k, v in fields(ref).items():
        np.testing.assert_allclose(fields(tab)[k], v, rtol=1e-12, atol=1e-9, err_msg=k)


def test_one_wave_point_per_transect_takes_the_direct_path(tabled):
    # Waves grown over each transect's own fetch: one point per transect and one step; no
    # tables pay, every transect is solved at its own normal (so equal to the direct path).
    n = 40
    rng = np.random.default_rng(9)
    hs = rng.uniform(0.0, 2.0, (n, 1))
    hs[5] = 0.0  # no fetch, no waves
    climate = WaveClimate(
        hs_m=hs,
        tp_s=np.where(hs > 0, 4.0 + hs, np.nan),
        dir_deg=np.full((n, 1), 230.0),
        duration_s=np.array([12 * 3600.0]),
        depth_m=np.inf,
        kind="steady",
        source="invented",
    )
    normals = rng.uniform(150.0, 250.0, n)
    sign = np.where(rng.random(n) < 0.5, 1.0, -1.0)
    weight = (rng.random((n, 72)) > 0.3).astype(float)
    pidx = np.arange(n)
    tab = reduce.tabulated_reductions(
        normals, sign, climate, point_index=pidx, sector_weight=weight, **PHYSICS
    )
    assert tabled == []
    # the direct path of the run with the same (boolean) weights, looked up as Exposure does

    class OpenTable:
        def is_open(self, dir_deg):  # nearest of 72 rays 5 degrees apart
            ray = np.rint(dir_deg / 5.0).astype(int) % 72
            return weight[np.arange(n)[:, None], ray] > 0

        def open_share(self, dir_deg):
            return self.is_open(dir_deg).astype(float)

    ref = run.transport_reductions(
        normals, sign, climate, point_index=pidx, exposure=OpenTable(), angle_step_deg=0, **PHYSICS
    )
    for k, v in fields(ref).items():
        np.testing.assert_allclose(fields(tab)[k], v, rtol=1e-12, atol=1e-12, err_msg=k)


def test_undefined_normals_and_all_direct(tabled):
    climate = record(4000, seed=2)
    normals = np.linspace(160.0, 220.0, 300)
    normals[[3, 50]] = np.nan
    sign = np.ones(300)
    ref, gross = direct_path(normals, sign, climate, **PHYSICS)
    tab = reduce.tabulated_reductions(normals, sign, climate, **PHYSICS)
    assert tabled == [None]
    assert tab.sheltered_fraction[3] == 1.0 and np.isnan(tab.hb_m[50])
    assert_within_node_bound(tab, ref, gross)
    # angle_step_deg = 0 solves every transect at its own normal: the direct path's numbers
    direct = reduce.tabulated_reductions(normals, sign, climate, angle_step_deg=0, **PHYSICS)
    assert tabled == [None]  # no more tables
    for k, v in fields(ref).items():
        np.testing.assert_allclose(fields(direct)[k], v, rtol=1e-12, atol=1e-9, err_msg=k)


# ---------------------------------------------------------------------------------------------
# Chunks, progress, errors
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("angle_step_deg", [0.5, 0.0])
def test_results_do_not_depend_on_the_chunks(angle_step_deg):
    climate = record(240, seed=7)
    transects, exposure = island_coast(200)
    normals = transects.normal_az_deg
    sign = np.where(np.arange(200) % 2 == 0, 1.0, -1.0)
    weight = exposure.share
    results = []
    for chunk in (1, 7, 100, None):
        ticks = []
        red = reduce.tabulated_reductions(
            normals,
            sign,
            climate,
            sector_weight=weight,
            angle_step_deg=angle_step_deg,
            chunk_steps=chunk,
            progress=ticks.append,
            **PHYSICS,
        )
        assert sum(ticks) == 240  # every step reported once
        results.append(fields(red))
    for other in results[1:]:
        for k, v in results[0].items():
            np.testing.assert_allclose(other[k], v, rtol=1e-12, atol=1e-12, err_msg=k)


def test_normals_across_north_and_other_node_steps(tabled):
    # A north-facing coast: normals on both sides of 0/360 share one run of nodes across north.
    climate = replace(record(8766, seed=13, mean_dir=10.0), depth_m=20.0)
    normals = np.linspace(-25.0, 25.0, 400) % 360.0
    sign = np.where(np.arange(400) % 2 == 0, 1.0, -1.0)
    ref, gross = direct_path(normals, sign, climate, **PHYSICS)
    tab = reduce.tabulated_reductions(normals, sign, climate, **PHYSICS)
    assert_within_node_bound(tab, ref, gross)
    tables = reduce.tabulate(climate, normals, reduce.Physics(**PHYSICS))
    assert tables.n_nodes == 103  # -25.5 .. 25.5 by 0.5 (a node of margin aside), not 700
    # node steps that are not binary fractions: nodes are at whole multiples of the step, and
    # normals on them (up to rounding) read those nodes
    for step in (0.1, 0.3):
        on_nodes = np.arange(math.ceil(170.0 / step), math.floor(181.0 / step)) * step
        t = reduce.tabulate(record(50), on_nodes, reduce.Physics(**PHYSICS), angle_step_deg=step)
        got = t.interpolate(on_nodes)["open_s"]
        at = np.rint((on_nodes - t.node0_deg) / step).astype(int)
        np.testing.assert_allclose(got, t.sums["open_s"][at, :].sum(axis=1), rtol=1e-9)


def test_progress_counts_every_step_once():
    climate = record(300, seed=1)
    climate.dir_deg[::7] = np.nan  # steps with no direction need no work but are counted
    ticks = []
    reduce.tabulate(
        climate, np.array([170.0, 190.0]), reduce.Physics(**PHYSICS), progress=ticks.append
    )
    assert sum(ticks) == 300
    ticks.clear()
    normals = np.linspace(170.0, 190.0, 2000)  # 2000 x 300 steps: above the direct budget
    reduce.tabulated_reductions(normals, np.ones(2000), climate, progress=ticks.append, **PHYSICS)
    assert sum(ticks) == 300 and len(ticks) > 1


def test_direction_sector_matches_the_exposure_lookup():
    transects, exposure = island_coast(21)
    d = np.random.default_rng(0).uniform(0.0, 360.0, (21, 500))
    d[0, :4] = [0.5, 1.5, 359.5, np.nan]  # ties and a missing direction
    sector = reduce.direction_sector(d, 360)
    expected = exposure.is_open(d)
    got = np.where(sector >= 0, exposure.open[np.arange(21)[:, None], np.maximum(sector, 0)], False)
    np.testing.assert_array_equal(got, expected)


def test_errors_say_what_is_wrong():
    climate = record(10)
    kw = PHYSICS | {"primary": "kamphuis", "formulas": ["cerc"]}
    with pytest.raises(ValueError, match="primary"):
        reduce.tabulated_reductions(np.array([180.0]), np.array([1.0]), climate, **kw)
    with pytest.raises(ValueError, match="breaking_method"):
        reduce.Physics(**(PHYSICS | {"breaking_method": "guess"}))
    with pytest.raises(ValueError, match="sector_weight"):
        reduce.tabulated_reductions(
            np.array([180.0, 181.0]), np.ones(2), climate, sector_weight=np.ones((3, 36)), **PHYSICS
        )
    with pytest.raises(ValueError, match=r"\[0, 1\]"):
        reduce.tabulated_reductions(
            np.array([180.0]), np.ones(1), climate, sector_weight=np.full((1, 36), 2.0), **PHYSICS
        )
    physics = reduce.Physics(**PHYSICS)
    with pytest.raises(ValueError, match="angle_step_deg"):
        reduce.tabulate(climate, np.array([180.0]), physics, angle_step_deg=0.0)
    tables = reduce.tabulate(climate, np.array([180.0, 185.0]), physics)
    with pytest.raises(ValueError, match="no block axis"):
        tables.combine(np.ones(2))
    with pytest.raises(ValueError, match="outside the tabulated nodes"):
        tables.interpolate(np.array([200.0]))
