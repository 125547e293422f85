"""Run a study: coast x wave climate -> per-transect transport, rates, classes and hotspots.

The orchestration is here; the physics lives in :mod:`shoreline.waves`,
:mod:`shoreline.transport`, :mod:`shoreline.profile` and :mod:`shoreline.budget`, and input and
output at the edges (:mod:`shoreline.coast`, :mod:`shoreline.climate`, :mod:`shoreline.export`).

The hot path, :func:`transport_reductions`, is vectorised over transects x time steps and
streams the climate in chunks of time steps so memory stays flat however long the record is;
only sums over time are kept.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from shoreline import profile, transport, waves
from shoreline.budget import (
    Hotspot,
    alongshore_gradient,
    classify,
    find_hotspots,
    shoreline_change_rate,
)
from shoreline.climate import WaveClimate, read_record_csv, steady
from shoreline.coast import CoastLines, Transects, cast_transects, read_coast
from shoreline.errors import StudyError
from shoreline.study import Study

#: Transect-steps evaluated per chunk of the record (bounds the memory of the hot path).
DEFAULT_CHUNK_ELEMENTS = 1 << 20


def wrap_deg(angle_deg: np.ndarray) -> np.ndarray:
    """Wrap angles to [-180, 180) degrees.

    Examples
    --------
    >>> wrap_deg(np.array([190.0, -190.0, 360.0])).tolist()
    [-170.0, 170.0, 0.0]
    """
    return (np.asarray(angle_deg) + 180.0) % 360.0 - 180.0


def chainage_sign(coast: CoastLines, transects: Transects) -> np.ndarray:
    """+1 where the sea is to the right of increasing chainage, -1 where it is to the left.

    Waves coming from clockwise of the seaward normal drive sand toward increasing chainage
    when the sea is on the right of the chainage direction (chainage runs in the digitised
    direction), and toward decreasing chainage when it is on the left.
    """
    return np.where(np.asarray(coast.sea_on_right)[transects.part_id], 1.0, -1.0)


@dataclass
class Reductions:
    """Sums over time of the per-transect results of a climate (see transport_reductions)."""

    hours: float
    q_net_m3_per_yr: dict[str, np.ndarray]
    q_gross_m3_per_yr: np.ndarray
    q_pos_m3_per_yr: np.ndarray
    q_neg_m3_per_yr: np.ndarray
    hb_m: np.ndarray
    db_m: np.ndarray
    alpha_b_deg: np.ndarray
    sheltered_fraction: np.ndarray
    broken_at_input_fraction: np.ndarray


def transport_reductions(
    normal_az_deg: np.ndarray,
    sign: np.ndarray,
    climate: WaveClimate,
    *,
    formulas: list[str],
    primary: str,
    breaker_index: float,
    breaking_method: str,
    cerc_k: float,
    kamphuis_coefficient: float,
    d50_mm: float,
    slope: float | None,
    water_density_kg_m3: float,
    sediment_density_kg_m3: float,
    porosity: float,
    chunk_elements: int = DEFAULT_CHUNK_ELEMENTS,
) -> Reductions:
    """Per-transect time means of longshore transport over a wave climate.

    For every transect x time step: the offshore angle to the seaward normal, the breaking
    point (:func:`shoreline.waves.breaking`), the transport of every formula. Waves from land
    (90 degrees or more from the seaward normal) move no sand and count as sheltered. Each step
    is weighted by the time it stands for; the means are returned per year.

    Wave fields at breaking (``hb_m``, ``db_m``, ``alpha_b_deg``) are duration-weighted means
    over the time steps in which waves reach the shore (NaN where they never do).
    """
    normal = np.asarray(normal_az_deg, dtype=float)[:, None]
    sgn = np.asarray(sign, dtype=float)[:, None]
    n = normal.shape[0]
    steps = max(1, int(chunk_elements) // max(n, 1))
    zeros = np.zeros(n)
    sums = {f"q_{name}": zeros.copy() for name in formulas}
    for key in ("gross", "pos", "neg", "hb", "db", "ab", "open_s", "broken_s"):
        sums[key] = zeros.copy()
    total_s = float(climate.duration_s.sum())
    depth = climate.depth_m
    for start in range(0, len(climate), steps):
        sl = slice(start, start + steps)
        hs = climate.hs_m[sl][None, :]
        tp = climate.tp_s[sl][None, :]
        w = climate.duration_s[sl][None, :]
        angle = sgn * wrap_deg(climate.dir_deg[sl][None, :] - normal)
        hb, db, ab, broken = waves.breaking(
            hs,
            tp,
            angle,
            depth_m=depth,
            breaker_index=breaker_index,
            method=breaking_method,
            full_output=True,
        )
        reach = np.isfinite(hb) & (np.abs(angle) < 90.0)
        beach_slope = slope if slope is not None else profile.breaker_zone_slope(db, d50_mm)
        for name in formulas:
            q = transport.longshore_transport(
                name,
                hb_m=hb,
                tp_s=tp,
                alpha_b_deg=ab,
                slope=beach_slope,
                d50_mm=d50_mm,
                breaker_index=breaker_index,
                cerc_k=cerc_k,
                kamphuis_coefficient=kamphuis_coefficient,
                water_density_kg_m3=water_density_kg_m3,
                sediment_density_kg_m3=sediment_density_kg_m3,
                porosity=porosity,
            )
            q = np.where(reach, q, 0.0)
            sums[f"q_{name}"] += (q * w).sum(axis=1)
            if name == primary:
                sums["gross"] += (np.abs(q) * w).sum(axis=1)
                sums["pos"] += (np.where(q > 0, q, 0.0) * w).sum(axis=1)
                sums["neg"] += (np.where(q < 0, q, 0.0) * w).sum(axis=1)
        wr = np.where(reach, w, 0.0)
        sums["open_s"] += wr.sum(axis=1)
        sums["broken_s"] += np.where(reach & broken, w, 0.0).sum(axis=1)
        sums["hb"] += np.where(reach, hb * w, 0.0).sum(axis=1)
        sums["db"] += np.where(reach, db * w, 0.0).sum(axis=1)
        sums["ab"] += np.where(reach, ab * w, 0.0).sum(axis=1)
    per_year = transport.SECONDS_PER_YEAR / total_s  # mean m3/s x s/yr = m3/yr
    open_s = sums["open_s"]
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_open = {k: np.where(open_s > 0, sums[k] / open_s, np.nan) for k in ("hb", "db", "ab")}
    return Reductions(
        hours=total_s / 3600.0,
        q_net_m3_per_yr={name: sums[f"q_{name}"] * per_year for name in formulas},
        q_gross_m3_per_yr=sums["gross"] * per_year,
        q_pos_m3_per_yr=sums["pos"] * per_year,
        q_neg_m3_per_yr=sums["neg"] * per_year,
        hb_m=mean_open["hb"],
        db_m=mean_open["db"],
        alpha_b_deg=mean_open["ab"],
        sheltered_fraction=1.0 - open_s / total_s,
        broken_at_input_fraction=sums["broken_s"] / total_s,
    )


def closure_depth_from_record(climate: WaveClimate) -> tuple[float, float, float]:
    """Hallermeier (1981) closure depth from a record: ``(dc_m, he_m, te_s)``.

    ``He`` is the significant height exceeded 12 hours a year (duration-weighted), ``Te`` the
    median peak period of the conditions at or above ``He``. The record's offshore heights
    stand in for the nearshore ones of the original method (a screening simplification).
    """
    order = np.argsort(climate.hs_m)[::-1]
    hours = np.cumsum(climate.duration_s[order]) / 3600.0
    years = climate.total_hours / (365.25 * 24.0)
    i = int(np.searchsorted(hours, 12.0 * years))
    i = min(i, order.size - 1)
    he = float(climate.hs_m[order][i])
    te = float(np.median(climate.tp_s[climate.hs_m >= he]))
    return float(profile.hallermeier_closure_depth(he, te)), he, te


@dataclass
class ScenarioResult:
    """Everything one scenario yields, ready to be written."""

    name: str
    climate: WaveClimate
    columns: dict[str, np.ndarray]
    hotspots: list[Hotspot]
    closure_depth_m: float
    info: dict[str, Any] = field(default_factory=dict)


@dataclass
class RunResult:
    """A whole run: the coast, its transects and every scenario's results."""

    study: Study
    coast: CoastLines
    transects: Transects
    scenarios: list[ScenarioResult]
    timings_s: dict[str, float]
    warnings: list[str]


def load_climate(study: Study) -> WaveClimate:
    """The baseline wave climate of a study: its steady condition or its record file."""
    w = study["waves"]
    depth = np.inf if w["depth_m"] == "deep" else float(w["depth_m"])
    if study.wave_file is not None:
        return read_record_csv(study.wave_file, depth_m=depth, max_gap_h=w["max_gap_h"])
    return steady(w["hs_m"], w["tp_s"], w["dir_deg"], depth_m=depth)


def load_transects(study: Study) -> tuple[CoastLines, Transects]:
    """Read the study's coast and cast its transects.

    Raises
    ------
    StudyError
        If the coast has lines (not only land polygons) and ``[coast] sea`` is not given.
    """
    c = study["coast"]
    sea = c["sea"]
    if sea is None:
        sea = "right"
        if not _only_polygons(study.coast_file, c["layer"]):
            raise StudyError(
                f"{study.path.name}: [coast] sea is required for a shoreline of lines: "
                '"left" or "right" of the digitised direction (not needed for land polygons)'
            )
    coast = read_coast(study.coast_file, layer=c["layer"], crs=c["crs"], sea=sea)
    transects = cast_transects(coast, spacing_m=c["spacing_m"], smoothing_m=c["smoothing_m"])
    return coast, transects


def _only_polygons(path, layer) -> bool:
    """True if the file's layer declares polygon geometry only (lines need a sea side)."""
    import pyogrio

    try:
        info = pyogrio.read_info(path, layer=layer)
    except Exception:  # unreadable: read_coast reports it with its own message
        return True
    return str(info.get("geometry_type", "")).lstrip("3D ").startswith(("Polygon", "MultiPolygon"))


def evaluate(
    name: str,
    study: Study,
    coast: CoastLines,
    transects: Transects,
    climate: WaveClimate,
    sign: np.ndarray,
    chunk_elements: int = DEFAULT_CHUNK_ELEMENTS,
) -> ScenarioResult:
    """Run the chain for one climate: transport, gradient, rate, class, hotspots."""
    m, s, k = study["model"], study["sediment"], study["classify"]
    cerc_k = m["cerc_k"]
    if cerc_k == "del_valle":
        cerc_k = float(transport.k_del_valle(s["d50_mm"], height="significant"))
    red = transport_reductions(
        transects.normal_az_deg,
        sign,
        climate,
        formulas=m["formulas"],
        primary=m["primary"],
        breaker_index=m["breaker_index"],
        breaking_method=m["breaking"],
        cerc_k=cerc_k,
        kamphuis_coefficient=m["kamphuis_coefficient"],
        d50_mm=s["d50_mm"],
        slope=s["slope"],
        water_density_kg_m3=m["water_density_kg_m3"],
        sediment_density_kg_m3=s["density_kg_m3"],
        porosity=s["porosity"],
        chunk_elements=chunk_elements,
    )
    info: dict[str, Any] = {"cerc_k_used": cerc_k}
    if m["closure_depth_m"] == "hallermeier":
        dc, he, te = closure_depth_from_record(climate)
        info.update(closure_depth="hallermeier", he_m=he, te_s=te)
    else:
        dc = float(m["closure_depth_m"])
    q = red.q_net_m3_per_yr[m["primary"]]
    dqdx = alongshore_gradient(q, transects.part_id, transects.spacing_m, transects.part_closed)
    rate = shoreline_change_rate(dqdx, dc, m["berm_height_m"])
    sheltered = red.sheltered_fraction >= 1.0 - 1e-12
    rate = np.where(sheltered & (dqdx == 0), 0.0, rate)
    klass = classify(rate, sheltered, k["stable_band_m_per_yr"])
    hotspots = find_hotspots(
        klass,
        rate,
        transects.chainage_m,
        transects.part_id,
        transects.spacing_m,
        transects.part_closed,
        dc + m["berm_height_m"],
        k["min_hotspot_length_m"],
    )
    hotspot_id = np.full(len(transects), -1)
    for h in hotspots:
        hotspot_id[h.members] = h.hotspot_id
    columns: dict[str, np.ndarray] = {
        "transect_id": transects.transect_id,
        "part_id": transects.part_id,
        "chainage_m": transects.chainage_m,
        "normal_az_deg": transects.normal_az_deg,
        "hb_m": red.hb_m,
        "db_m": red.db_m,
        "alpha_b_deg": red.alpha_b_deg,
    }
    for fname in m["formulas"]:
        columns[f"q_{fname}_m3_per_yr"] = red.q_net_m3_per_yr[fname]
    columns.update(
        {
            "q_gross_m3_per_yr": red.q_gross_m3_per_yr,
            "q_pos_m3_per_yr": red.q_pos_m3_per_yr,
            "q_neg_m3_per_yr": red.q_neg_m3_per_yr,
            "dqdx_m2_per_yr": dqdx,
            "rate_m_per_yr": rate,
            "class": klass,
            "sheltered_fraction": red.sheltered_fraction,
            "broken_at_input_fraction": red.broken_at_input_fraction,
            "hotspot_id": hotspot_id,
        }
    )
    return ScenarioResult(
        name=name,
        climate=climate,
        columns=columns,
        hotspots=hotspots,
        closure_depth_m=dc,
        info=info,
    )


def run_study(study: Study, chunk_elements: int = DEFAULT_CHUNK_ELEMENTS) -> RunResult:
    """Run a validated study; return every result in memory (nothing is written here)."""
    timings: dict[str, float] = {}
    t0 = time.perf_counter()
    climate = load_climate(study)
    timings["read_waves"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    coast, transects = load_transects(study)
    sign = chainage_sign(coast, transects)
    timings["transects"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    baseline = evaluate("baseline", study, coast, transects, climate, sign, chunk_elements)
    timings["baseline"] = time.perf_counter() - t0
    warnings = list(coast.warnings) + list(climate.warnings)
    broken = baseline.columns["broken_at_input_fraction"]
    if np.any(broken > 0):
        warnings.append(
            f"waves already breaking at their input depth ({climate.depth_m:g} m) for "
            f"{float(np.max(broken)) * 100:.1f} % of the time at worst: their breaking height is "
            "capped at breaker_index x depth; give the waves at a deeper point"
        )
    return RunResult(
        study=study,
        coast=coast,
        transects=transects,
        scenarios=[baseline],
        timings_s=timings,
        warnings=warnings,
    )
