"""Run a study: coast x wave climate -> per-transect transport, rates, classes and hotspots.

The orchestration is here; the physics lives in :mod:`shoreline.waves`,
:mod:`shoreline.transport`, :mod:`shoreline.profile` and :mod:`shoreline.budget`, and input and
output at the edges (:mod:`shoreline.coast`, :mod:`shoreline.climate`, :mod:`shoreline.export`).

The hot path, :func:`transport_reductions`, is vectorised over transects x time steps and
streams the climate in chunks of time steps so memory stays flat however long the record is;
only sums over time are kept.
"""

from __future__ import annotations

import os
import time
import warnings
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field, fields, replace
from typing import Any

import numpy as np
import shapely

from shoreline import calibrate, ensemble, profile, projection, transport, waves, wind
from shoreline.budget import (
    Hotspot,
    classify,
    face_budget,
    find_hotspots,
    shoreline_change_rate,
)
from shoreline.climate import (
    RecordArray,
    WaveClimate,
    exceedance_height,
    point_blocks,
    read_record,
    steady,
    step_blocks,
)
from shoreline.coast import (
    CoastLines,
    Transects,
    check_frame_lonlat,
    check_transect_count,
    invalid_geometry,
    lay_out_transects,
    read_coast,
    require_gis_source,
)
from shoreline.errors import CoastError, StudyError, one_line
from shoreline.exposure import Exposure, compute_exposure
from shoreline.reaches import reaches_open_sea, read_reaches, shore_types
from shoreline.structures import Structures, Trapping, read_structures
from shoreline.study import Study

#: Shore types the budget leaves out (class "excluded").
LEFT_OUT = ("enclosed", "data_edge", "excluded")

#: Transect-steps evaluated per chunk of the record (bounds the memory of the hot path).
DEFAULT_CHUNK_ELEMENTS = 1 << 17


def wrap_deg(angle_deg: np.ndarray) -> np.ndarray:
    """Wrap angles to [-180, 180) degrees.

    Examples
    --------
    >>> wrap_deg(np.array([190.0, -190.0, 360.0])).tolist()
    [-170.0, 170.0, 0.0]
    """
    a = np.asarray(angle_deg, dtype=float)
    turns = a + 180.0
    turns *= 1.0 / 360.0
    np.floor(turns, out=turns)
    turns *= 360.0
    return a - turns


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
    point_index: np.ndarray | None = None,
    exposure: Exposure | None = None,
    angle_step_deg: float = 0.5,
    chunk_steps: int | None = None,
    workers: int | None = None,
    progress: Callable[[int], None] | None = None,
) -> Reductions:
    """Per-transect time means of longshore transport over a wave climate.

    For every transect x time step: the offshore angle to the seaward normal, the breaking
    point (:func:`shoreline.waves.breaking`), the transport of every formula. Waves from land
    (90 degrees or more from the seaward normal) move no sand and count as sheltered. Each step
    is weighted by the time it stands for; the means are returned per year.

    Wave fields at breaking (``hb_m``, ``db_m``, ``alpha_b_deg``) are duration-weighted means
    over the time steps in which waves reach the shore (NaN where they never do).

    The record is processed in chunks of ``chunk_steps`` time steps (default: about
    :data:`DEFAULT_CHUNK_ELEMENTS` transect-steps a chunk), on
    ``workers`` threads (numpy releases the interpreter lock in its loops); only sums over time
    are kept, so memory does not grow with the record. With several wave points (climate
    arrays of shape (points, steps)), ``point_index`` gives each transect's point. With one
    wave point, each time step is solved on angle nodes ``angle_step_deg`` apart and
    interpolated to the transects (:func:`shoreline.waves.breaking_on_angle_nodes`); 0 solves
    every transect directly.
    ``progress(steps_done)`` is called after each chunk.
    """
    normal = np.asarray(normal_az_deg, dtype=float)[:, None]
    sgn = np.asarray(sign, dtype=float)[:, None]
    n = normal.shape[0]
    n_steps = climate.n_steps
    steps = int(chunk_steps) if chunk_steps else max(1, DEFAULT_CHUNK_ELEMENTS // max(n, 1))
    multi = climate.hs_m.ndim == 2
    if multi and point_index is None:
        raise ValueError("a climate with several wave points needs point_index per transect")
    depth = np.asarray(climate.depth_m, dtype=float)
    depth = depth[point_index][:, None] if depth.ndim == 1 else depth

    def rows(values: np.ndarray, sl: slice) -> np.ndarray:
        return values[point_index][:, sl] if multi else values[sl][None, :]

    # transects grouped by wave point (each group shares its offshore conditions)
    groups = [np.flatnonzero(point_index == p) for p in np.unique(point_index)] if multi else []

    def chunk(start: int) -> dict[str, np.ndarray]:
        sl = slice(start, start + steps)
        hs, tp = rows(climate.hs_m, sl), rows(climate.tp_s, sl)
        w = climate.duration_s[sl]
        angle = wrap_deg(rows(climate.dir_deg, sl) - normal)
        angle *= sgn
        if angle_step_deg <= 0 or (multi and 4 * len(groups) > n):
            # direct: nodes pay only where many transects share one wave point
            hb, db, ab, broken = waves.breaking(
                hs,
                tp,
                angle,
                depth_m=depth,
                breaker_index=breaker_index,
                method=breaking_method,
                full_output=True,
            )
        elif not multi:
            hb, db, ab, broken = waves.breaking_on_angle_nodes(
                hs[0],
                tp[0],
                angle,
                depth_m=float(depth),
                breaker_index=breaker_index,
                step_deg=angle_step_deg,
                method=breaking_method,
            )
        else:  # several wave points: solve the transects of each point on its own nodes
            hb, db, ab = (np.empty(angle.shape) for _ in range(3))
            broken = np.empty(angle.shape, dtype=bool)
            for rows_p in groups:
                first = rows_p[0]
                out = waves.breaking_on_angle_nodes(
                    hs[first],
                    tp[first],
                    angle[rows_p],
                    depth_m=float(depth[first, 0] if depth.ndim == 2 else depth),
                    breaker_index=breaker_index,
                    step_deg=angle_step_deg,
                    method=breaking_method,
                )
                for target, values in zip((hb, db, ab, broken), out, strict=True):
                    target[rows_p] = values
        reach = np.isfinite(hb)
        reach &= np.abs(angle) < 90.0
        # the share of the waves that reaches the shore: 1 on open coast, less where land
        # blocks part of their directional spread (shoreline.exposure)
        share = reach.astype(float)
        if exposure is not None:
            share *= exposure.open_share(rows(climate.dir_deg, sl))
        beach_slope = slope if slope is not None else profile.breaker_zone_slope(db, d50_mm)
        out: dict[str, np.ndarray] = {}
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
            q[~reach] = 0.0
            q *= share
            out[f"q_{name}"] = q @ w
            if name == primary:
                out["pos"] = np.maximum(q, 0.0) @ w
                np.abs(q, out=q)
                out["gross"] = q @ w
        out["open_s"] = share @ w
        out["broken_s"] = (broken * share) @ w
        for key, values in (("hb", hb), ("db", db), ("ab", ab)):
            values[~reach] = 0.0
            values *= share
            out[key] = values @ w
        return out

    workers = workers or min(2, os.cpu_count() or 1)
    sums: dict[str, np.ndarray] = {}
    starts = range(0, n_steps, steps)
    with ThreadPoolExecutor(max_workers=workers) as pool:
        for start, part in zip(starts, pool.map(chunk, starts), strict=True):
            for key, value in part.items():
                sums[key] = sums[key] + value if key in sums else value
            if progress is not None:
                progress(min(steps, n_steps - start))
    total_s = float(climate.duration_s.sum())
    per_year = transport.SECONDS_PER_YEAR / total_s  # mean m3/s x s/yr = m3/yr
    open_s = sums["open_s"]
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_open = {k: np.where(open_s > 0, sums[k] / open_s, np.nan) for k in ("hb", "db", "ab")}
    net = sums[f"q_{primary}"]
    return Reductions(
        hours=total_s / 3600.0,
        q_net_m3_per_yr={name: sums[f"q_{name}"] * per_year for name in formulas},
        q_gross_m3_per_yr=sums["gross"] * per_year,
        q_pos_m3_per_yr=sums["pos"] * per_year,
        q_neg_m3_per_yr=(net - sums["pos"]) * per_year,
        hb_m=mean_open["hb"],
        db_m=mean_open["db"],
        alpha_b_deg=mean_open["ab"],
        sheltered_fraction=np.clip(1.0 - open_s / total_s, 0.0, 1.0),
        broken_at_input_fraction=sums["broken_s"] / total_s,
    )


#: The shortest hotspot "auto" allows [m].
MIN_HOTSPOT_FLOOR_M = 300.0


def min_hotspot_length_m(study: Study, transects: Transects) -> float:
    """The shortest run of one class that is a hotspot [m].

    As the study gives it, or ("auto") the longer of 300 m and half the orientation window:
    a stretch shorter than half the window is finer than the orientation, and so the rate,
    resolves (docs/methods.md).
    """
    given = study["classify"]["min_hotspot_length_m"]
    if given != "auto":
        return float(given)
    window = transects.orientation_window_m
    half = 0.5 * float(window) if np.isfinite(window) else 0.0
    return max(MIN_HOTSPOT_FLOOR_M, half)


def budget_scale_m(transects: Transects) -> float:
    """The along-shore scale of the transport gradient: the orientation fit's Gaussian sigma [m].

    The gradient is taken at the scale the orientation was measured at (docs/methods.md).
    """
    from shoreline.coast import SIGMA_PER_WINDOW

    window = transects.orientation_window_m
    return float(window) * SIGMA_PER_WINDOW if np.isfinite(window) else 0.0


def shadow_wavelength_m(climate: WaveClimate) -> float:
    """Deep-water wavelength g T^2 / 2 pi of the record's duration-weighted median peak period.

    The length scale of the narrow-blocker rule of :func:`shoreline.exposure.compute_exposure`
    (diffraction fills the shadow of land narrower than the first Fresnel zone).
    """
    tp = np.concatenate([t.mean(axis=0) for _, _, t, _ in step_blocks(climate)])
    ok = np.isfinite(tp) & (tp > 0)
    if not ok.any():
        return 100.0
    order = np.argsort(tp[ok])
    cum = np.cumsum(climate.duration_s[ok][order])
    median = float(tp[ok][order][np.searchsorted(cum, 0.5 * cum[-1])])
    return float(waves.G_M_S2 * median**2 / (2.0 * np.pi))


def closure_depth_from_record(climate: WaveClimate) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Hallermeier (1981) closure depth per wave point: ``(dc_m, he_m, te_s)``.

    ``He`` is the significant height exceeded 12 hours a year (duration-weighted), ``Te`` the
    median peak period of the conditions at or above ``He``. The record's offshore heights
    stand in for the nearshore ones of the original method (a screening simplification).
    Arrays of one value per wave point.
    """
    he, te = [], []
    for _, hs, tp, _ in point_blocks(climate):  # a few wave points at a time
        he_b = np.atleast_1d(exceedance_height(hs, climate.duration_s, 12.0))
        te += [np.median(t[h >= e]) for h, t, e in zip(hs, tp, he_b, strict=True)]
        he.append(he_b)
    he_m, te_s = np.concatenate(he), np.array(te)
    return np.asarray(profile.hallermeier_closure_depth(he_m, te_s), dtype=float), he_m, te_s


def wave_statistics(climate: WaveClimate) -> tuple[np.ndarray, np.ndarray]:
    """Duration-weighted mean Hs and Hs exceeded 12 hours a year, per wave point [m]."""
    mean, he = [], []
    for _, hs, _, _ in point_blocks(climate):  # a few wave points at a time
        mean.append(hs @ climate.duration_s / climate.duration_s.sum())
        he.append(np.atleast_1d(exceedance_height(hs, climate.duration_s, 12.0)))
    return np.concatenate(mean), np.concatenate(he)


def nearest_wave_point(climate: WaveClimate, transects: Transects) -> np.ndarray:
    """Index of the wave point nearest each transect's shore point (0 for one point).

    Distances are taken in the working CRS (metres on the ground, near enough for choosing).
    """
    if climate.n_points == 1:
        return np.zeros(len(transects), dtype=int)
    from pyproj import Transformer
    from scipy.spatial import cKDTree

    to_grid = Transformer.from_crs("EPSG:4326", transects.working_crs, always_xy=True)
    px, py = to_grid.transform(climate.point_lon, climate.point_lat)
    _, index = cKDTree(np.c_[px, py]).query(np.c_[transects.x_m, transects.y_m])
    return np.asarray(index, dtype=int)


@dataclass
class ScenarioResult:
    """Everything one scenario yields, ready to be written."""

    name: str
    climate: WaveClimate
    columns: dict[str, np.ndarray]
    hotspots: list[Hotspot]
    closure_depth_m: np.ndarray
    info: dict[str, Any] = field(default_factory=dict)
    trapping: Trapping | None = None
    ensemble: ensemble.EnsembleResult | None = None  # with [uncertainty] (shoreline.ensemble)
    projection: projection.Projection | None = None  # with [projection] (shoreline.projection)


@dataclass
class RunResult:
    """A whole run: the coast, its transects and every scenario's results."""

    study: Study
    coast: CoastLines
    transects: Transects
    scenarios: list[ScenarioResult]
    timings_s: dict[str, float]
    warnings: list[str]
    structures: Structures | None = None
    calibration: dict[str, Any] | None = None
    land: list = field(default_factory=list)
    started_utc: str | None = None


def load_climate(study: Study) -> WaveClimate:
    """The reference wave climate of a study: its steady condition or its record file."""
    w = study["waves"]
    depth = np.inf if w["depth_m"] == "deep" else float(w["depth_m"])
    if study.wave_file is not None:
        return read_record(
            study.wave_file,
            depth_m=depth,
            max_gap_h=w["max_gap_h"],
            depth_from_file="depth_m" not in study.raw.get("waves", {}),
        )
    return steady(w["hs_m"], w["tp_s"], w["dir_deg"], depth_m=depth)


def load_transects(study: Study) -> tuple[CoastLines, Transects]:
    """Read the study's coast and lay out its transects.

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
    coast = read_coast(
        study.coast_file, layer=c["layer"], crs=c["crs"], sea=sea, polygons=c["polygons"]
    )
    check_transect_count(coast, c["spacing_m"])
    transects = lay_out_transects(
        coast, spacing_m=c["spacing_m"], orientation_window_m=c["orientation_window_m"]
    )
    return coast, transects


#: The sea side of lines is called wrong when at most this share of their transects see the open
#: sea and at least the complementary share would with the other side.
SEA_SIDE_EVIDENCE = 0.2

#: Transects of lines looked at for that check (an even sample).
_SEA_SIDE_SAMPLE = 400


def check_sea_side(
    study: Study,
    coast: CoastLines,
    transects: Transects,
    exposure: Exposure,
    land: list,
    climate: WaveClimate,
) -> str | None:
    """Stop, or warn, when ``[coast] sea`` puts the sea on the land side of the lines.

    With the wrong side every seaward normal points inland. Two independent signs, each taken
    over an even sample of the lines' transects and compared with the other side:

    - the waves come from land: at most :data:`SEA_SIDE_EVIDENCE` of the record's wave energy
      (Hs^2 x duration) comes from within 90 degrees of the normals as given, and at least
      ``1 - SEA_SIDE_EVIDENCE`` would with the other side (the run would report a sheltered,
      perfectly stable coast);
    - the view is blocked: at most that share of the transects see the open sea
      (:mod:`shoreline.exposure`: rays start on the study's land, or meet it at once), and at
      least the complement would with the other side.

    The first sign alone is a warning (returned), since a study may give waves from land on
    purpose; the second is an error.

    Raises
    ------
    StudyError
        Naming the side the data suggest.
    """
    sea = study["coast"]["sea"]
    warning = None
    if sea is None:
        return None
    lines = np.flatnonzero(~transects.part_closed & np.isfinite(transects.normal_az_deg))
    if lines.size < 5:
        return None
    pick = lines[
        np.unique(np.linspace(0, lines.size - 1, min(lines.size, _SEA_SIDE_SAMPLE)).astype(int))
    ]
    normal = transects.normal_az_deg[pick]
    flip = "left" if sea == "right" else "right"
    # the waves' side
    direction = np.atleast_2d(climate.dir_deg).reshape(-1)
    energy = (np.atleast_2d(climate.hs_m) ** 2 * climate.duration_s).reshape(-1)
    ok = np.isfinite(direction) & np.isfinite(energy)
    if ok.any() and energy[ok].sum() > 0:
        seaward = np.abs(wrap_deg(direction[ok][None, :] - normal[:, None])) < 90.0
        as_given = float(np.mean(seaward @ energy[ok]) / energy[ok].sum())
        if as_given <= SEA_SIDE_EVIDENCE:
            warning = (
                f'CHECK THE SEA SIDE: [coast] sea = "{sea}" puts the sea on the side the waves '
                f"do not come from: only {as_given:.0%} of the record's wave energy reaches the "
                f"lines' transects from their seaward side, {1.0 - as_given:.0%} would with "
                f'sea = "{flip}"; unless the waves really come from land, the data suggest '
                f'sea = "{flip}" (the side of the digitised direction the sea is on)'
            )
    # the view's side
    if getattr(exposure, "open_coast", None) is None:
        return warning
    as_given = float(np.mean(exposure.open_coast[pick]))
    if as_given > SEA_SIDE_EVIDENCE:
        return warning
    turned = replace(transects.subset(pick), normal_az_deg=np.mod(normal + 180.0, 360.0))
    c = study["coast"]
    other = compute_exposure(
        turned,
        list(coast.parts),
        land=land or None,
        max_distance_m=c["exposure_distance_m"],
        start_offset_m=c["ray_start_m"],
    )
    if float(np.mean(other.open_coast)) >= 1.0 - SEA_SIDE_EVIDENCE:
        raise StudyError(
            f'{study.path.name}: [coast] sea = "{sea}" puts the sea on the land side: only '
            f"{as_given:.0%} of the lines' transects see the open sea that way, "
            f"{np.mean(other.open_coast):.0%} would with the other side; the data suggest "
            f'sea = "{flip}" (the side of the digitised direction the sea is on)'
        )
    return warning


def shore_type_of(
    study: Study,
    coast: CoastLines,
    transects: Transects,
    exposure: Exposure | None,
    land: list | None = None,
) -> np.ndarray:
    """The shore type of every transect (:mod:`shoreline.reaches`).

    Enclosed water from the exposure (a view that does not reach the open sea), data edges
    from the coast (clipping-box edges of land polygons: transects within a metre of one),
    and the user's reaches.
    """
    n = len(transects)
    enclosed = None
    if exposure is not None and getattr(exposure, "open_coast", None) is not None:
        enclosed = ~np.asarray(exposure.open_coast, dtype=bool)
        c = study["coast"]
        enclosed |= ~reaches_open_sea(
            transects,
            list(coast.parts),
            land,
            c["open_sea_distance_m"],
            c["ray_start_m"],
            ~enclosed,
        )
    edge = None
    if coast.data_edges is not None:
        points = shapely.points(transects.x_m, transects.y_m)
        edge = shapely.dwithin(coast.data_edges, points, 1.0)
    excluded = hard = None
    if study["coast"]["reaches"] is not None:
        excluded, hard = read_reaches(study.folder / study["coast"]["reaches"], transects)
    return shore_types(n, enclosed, edge, excluded, hard)


def load_land(study: Study, transects: Transects) -> list:
    """The study's extra land (``[coast] land``) in the working CRS, as shapely geometries.

    Any CRS is accepted and reprojected; a file without a CRS is taken to be in the coast's.

    Raises
    ------
    CoastError
        If the file is missing or unreadable.
    """
    name = study["coast"]["land"]
    if name is None:
        return []
    import geopandas as gpd

    path = study.folder / name
    if not path.exists():
        raise CoastError(f"{path}: land file ([coast] land) not found")
    require_gis_source(path, "land file ([coast] land)")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # GDAL's note on unclosed rings
            frame = gpd.read_file(path, engine="pyogrio")
    except shapely.errors.GEOSException as exc:
        raise CoastError(f"{path}: {invalid_geometry(path, None, exc)}") from None
    except Exception as exc:  # any reader failure is the user's file to fix
        raise CoastError(f"{path}: cannot read the land file ({one_line(exc)})") from None
    if frame.crs is None:
        raise CoastError(f"{path.name}: the land file has no CRS; save it with one")
    check_frame_lonlat(path.name, frame)
    geoms = frame.to_crs(transects.working_crs).geometry
    return [g for g in geoms if g is not None and not g.is_empty]


def _only_polygons(path, layer) -> bool:
    """True if the file's layer declares polygon geometry only (lines need a sea side)."""
    import pyogrio

    if not (os.path.isfile(path) or os.path.isdir(path)):
        return True  # missing, or a pipe that would block: read_coast says which
    try:
        info = pyogrio.read_info(path, layer=layer)
    except Exception:  # unreadable: read_coast reports it with its own message
        return True
    return str(info.get("geometry_type", "")).lstrip("3D ").startswith(("Polygon", "MultiPolygon"))


def base_coefficients(study: Study) -> dict[str, float]:
    """The coefficient of every formula as the study gives it (CERC K in its Hs form)."""
    m, s = study["model"], study["sediment"]
    cerc_k = m["cerc_k"]
    if cerc_k == "del_valle":
        cerc_k = float(transport.k_del_valle(s["d50_mm"], height="significant"))
    return {"cerc": float(cerc_k), "kamphuis": float(m["kamphuis_coefficient"])}


def reduce_transport(
    study: Study,
    normal_az_deg: np.ndarray,
    sign: np.ndarray,
    climate: WaveClimate,
    coefficients: dict[str, float],
    **options: Any,
) -> Reductions:
    """The time reduction of the transport at the given normals.

    With ``[model] angle_step_deg`` > 0 by the tables of :mod:`shoreline.reduce` (sum over
    time first, then interpolate per transect; ``mapper=`` runs the table sums elsewhere, e.g.
    on Dask); with 0 by :func:`transport_reductions` solving every transect and step directly
    (the reference, always in this process, with the whole record in memory).
    """
    from shoreline.reduce import tabulated_reductions

    m, s = study["model"], study["sediment"]
    physics = {
        "formulas": m["formulas"],
        "primary": m["primary"],
        "breaker_index": m["breaker_index"],
        "breaking_method": m["breaking"],
        "cerc_k": coefficients["cerc"],
        "kamphuis_coefficient": coefficients["kamphuis"],
        "d50_mm": s["d50_mm"],
        "slope": s["slope"],
        "water_density_kg_m3": m["water_density_kg_m3"],
        "sediment_density_kg_m3": s["density_kg_m3"],
        "porosity": s["porosity"],
        "angle_step_deg": m["angle_step_deg"],
    }
    mapper = options.pop("mapper", None)
    if m["angle_step_deg"] > 0:
        options["mapper"] = mapper
        exposure = options.pop("exposure", None)
        weight = None if exposure is None else exposure.share
        return tabulated_reductions(
            normal_az_deg, sign, climate, **physics, sector_weight=weight, **options
        )
    return transport_reductions(normal_az_deg, sign, climate, **physics, **options)


def exposure_rows(exposure: Exposure | None, rows: np.ndarray) -> Exposure | None:
    """The exposure of some transects only (every per-transect array sliced)."""
    if exposure is None:
        return None
    n = len(exposure)
    changes = {
        f.name: getattr(exposure, f.name)[rows]
        for f in fields(exposure)
        if isinstance(getattr(exposure, f.name), np.ndarray)
        and getattr(exposure, f.name).shape[:1] == (n,)
        and f.name != "directions_deg"
    }
    return replace(exposure, **changes)


def calibrate_coefficients(
    study: Study,
    coast: CoastLines,
    transects: Transects,
    climate: WaveClimate,
    sign: np.ndarray,
    point_index: np.ndarray,
    exposure: Exposure | None,
    structures: Structures | None,
    eligible: np.ndarray,
) -> calibrate.Calibration:
    """Fit every formula's coefficient to the study's known rates (:mod:`shoreline.calibrate`).

    Only the transects of the known rates are evaluated (and, for a structure, both
    transects beside its face; the updrift one by the sign of the transport counts).
    """
    base = base_coefficients(study)
    placed = calibrate.place_points(
        study.calibration, coast, transects, structures, eligible, study.path.name
    )
    rows = np.unique([p[1] for p in placed] + [p[1] + 1 for p in placed if p[0] == "structure"])
    rows = rows[rows < len(transects)]
    red = reduce_transport(
        study,
        transects.normal_az_deg[rows],
        sign[rows],
        climate,
        base,
        point_index=point_index[rows] if climate.n_points > 1 else None,
        exposure=exposure_rows(exposure, rows),
    )
    at = {int(r): k for k, r in enumerate(rows)}
    chosen = []
    for kind, i, _, dist in placed:
        j = i
        if kind == "structure":  # the side the primary transport arrives from
            q_i = red.q_net_m3_per_yr[study["model"]["primary"]][at[i]]
            j = i if q_i >= 0 or (i + 1) not in at else i + 1
        chosen.append((kind, j, _, dist))
    idx = np.array([at[c[1]] for c in chosen])
    tangent = calibrate.tangent_az_deg(
        transects.normal_az_deg[[c[1] for c in chosen]],
        coast.sea_on_right[transects.part_id[[c[1] for c in chosen]]],
    )
    result = calibrate.fit(
        study.calibration,
        chosen,
        {f: red.q_net_m3_per_yr[f][idx] for f in red.q_net_m3_per_yr},
        tangent,
    )
    return result


def evaluate(
    name: str,
    study: Study,
    coast: CoastLines,
    transects: Transects,
    climate: WaveClimate,
    sign: np.ndarray,
    chunk_steps: int | None = None,
    event_duration_s: float | None = None,
    closure_depth_m: np.ndarray | None = None,
    point_index: np.ndarray | None = None,
    progress: Callable[[int], None] | None = None,
    structures: Structures | None = None,
    exposure: Exposure | None = None,
    coefficients: dict[str, float] | None = None,
    shore: np.ndarray | None = None,
    mapper: Any = None,
) -> ScenarioResult:
    """Run the chain for one climate: transport, gradient, rate, class, hotspots.

    For an event (``event_duration_s`` given: a storm of that length) the transport is the rate
    while the storm lasts; the volume change per metre of shore is ``-dQ/dx * duration``
    (positive = gain), the shoreline shift that volume over the active height, and classes and
    hotspots follow the shift against ``[classify] event_stable_band_m`` instead of the rate.
    ``closure_depth_m`` (per transect) overrides the study's (scenarios use the reference's);
    ``point_index`` gives each transect's wave point for a climate of several points.
    ``coefficients`` (formula name to its coefficient, e.g. after calibration) override the
    study's. ``shore`` gives each transect's shore type (:mod:`shoreline.reaches`; default all
    open coast): excluded types get the class ``excluded`` and stay out of the budget.
    ``mapper`` runs the table sums of the time reduction (:mod:`shoreline.reduce`; e.g. on
    Dask, :mod:`shoreline.distributed`); default in this process.
    """
    n = len(transects)
    shore = shore_types(n) if shore is None else shore
    left_out = np.isin(shore, LEFT_OUT)
    if climate.n_points == n and climate.point_lon is None:  # one point per transect
        point_index = np.arange(n)
    elif point_index is None or climate.n_points == 1:
        point_index = np.zeros(n, dtype=int)
    m, k = study["model"], study["classify"]
    coefficients = coefficients or base_coefficients(study)
    red = reduce_transport(
        study,
        transects.normal_az_deg,
        sign,
        climate,
        coefficients,
        point_index=point_index if climate.n_points > 1 else None,
        exposure=exposure,
        chunk_steps=chunk_steps,
        progress=progress,
        mapper=mapper,
    )
    info: dict[str, Any] = {
        "cerc_k_used": coefficients["cerc"],
        "kamphuis_coefficient_used": coefficients["kamphuis"],
    }
    if closure_depth_m is not None:
        dc = np.broadcast_to(np.asarray(closure_depth_m, dtype=float), (n,))
    elif m["closure_depth_m"] == "hallermeier":
        dc_p, he, te = closure_depth_from_record(climate)
        dc = dc_p[point_index]
        info.update(closure_depth="hallermeier", he_m=he.tolist(), te_s=te.tolist())
    else:
        dc = np.full(n, float(m["closure_depth_m"]))
    hs_mean, hs_12h = (v[point_index] for v in wave_statistics(climate))
    has_structures = structures is not None and len(structures) > 0
    budget = face_budget(
        red.q_pos_m3_per_yr,
        red.q_neg_m3_per_yr,
        transects.part_id,
        transects.spacing_m,
        transects.part_closed,
        sigma_m=budget_scale_m(transects),
        excluded=left_out,
        hard=shore == "non_erodible",
        structure_face=structures.face if has_structures else None,
        structure_bypass=structures.bypass if has_structures else None,
    )
    dqdx = budget.dqdx_m2_per_yr
    trapping = None
    if has_structures:
        trapping = Trapping(budget.arriving, budget.passing, budget.trapped)
    rate = shoreline_change_rate(dqdx, dc, m["berm_height_m"])
    sheltered = red.sheltered_fraction >= 1.0 - 1e-12
    rate = np.where(sheltered & (dqdx == 0), 0.0, rate)
    active_m = dc + m["berm_height_m"]
    event: dict[str, np.ndarray] = {}
    if event_duration_s is None:
        metric, band = rate, k["stable_band_m_per_yr"]
    else:
        years = event_duration_s / transport.SECONDS_PER_YEAR
        volume = -dqdx * years
        event = {"volume_change_m3_per_m": volume, "shoreline_shift_m": volume / active_m}
        metric, band = event["shoreline_shift_m"], k["event_stable_band_m"]
        info["event_duration_h"] = event_duration_s / 3600.0
    klass = classify(metric, sheltered, band, excluded=left_out)
    hotspots = find_hotspots(
        klass,
        metric,
        transects.chainage_m,
        transects.part_id,
        transects.spacing_m,
        transects.part_closed,
        active_m,
        min_hotspot_length_m(study, transects),
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
    if exposure is not None:
        columns["exposure_deg"] = exposure.exposure_deg
        columns["open_from_deg"] = exposure.open_from_deg
        columns["open_to_deg"] = exposure.open_to_deg
    if climate.n_points > 1 and climate.point_lon is not None:
        names = climate.point_names
        columns["wave_point"] = (
            np.asarray(names, dtype=object)[point_index].astype(str) if names else point_index
        )
    for fname in m["formulas"]:
        columns[f"q_{fname}_m3_per_yr"] = red.q_net_m3_per_yr[fname]
    columns.update(
        {
            "q_gross_m3_per_yr": red.q_gross_m3_per_yr,
            "q_pos_m3_per_yr": red.q_pos_m3_per_yr,
            "q_neg_m3_per_yr": red.q_neg_m3_per_yr,
            "dqdx_m2_per_yr": dqdx,
            "rate_m_per_yr": rate,
            **event,
            "class": klass,
            "shore_type": shore,
            "sheltered_fraction": red.sheltered_fraction,
            "hs_mean_m": hs_mean,
            "hs_12h_m": hs_12h,
            "closure_depth_m": dc,
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
        trapping=trapping,
    )


def scenario_climate(
    spec: dict[str, Any], study: Study, reference: WaveClimate, exposure: Exposure | None = None
) -> tuple[WaveClimate, float | None, dict[str, Any]]:
    """The offshore climate of one ``[[scenario]]``: ``(climate, event_duration_s, info)``.

    - a steady storm: its condition for ``duration_h`` (an event), or standing for a year;
    - a storm from the wind: deep-water waves grown by the wind over the fetch and duration
      (CEM 2002 Part II-2, :func:`shoreline.wind.wind_waves`), the waves coming from the wind's
      direction, for ``duration_h`` (an event); ``fetch_km = "auto"`` gives every transect its
      own straight-line fetch over water toward the wind from ``exposure`` (one wave point per
      transect; wind blowing off the shore makes no waves there);
    - a changed climate: the reference record (or the scenario's own file) with heights and
      periods scaled and directions rotated; rates per year like the reference.
    """
    kind = spec["kind"]
    if kind == "climate":
        source = reference
        if spec["file"] is not None:
            depth = reference.depth_m if spec["depth_m"] is None else _depth(spec["depth_m"])
            source = read_record(
                study.folder / spec["file"],
                depth_m=depth,
                max_gap_h=study["waves"]["max_gap_h"],
                depth_from_file=spec["depth_m"] is None,
            )
        hs_f = 1.0 if spec["hs_factor"] is None else spec["hs_factor"]
        tp_f = 1.0 if spec["tp_factor"] is None else spec["tp_factor"]
        shift = 0.0 if spec["dir_shift_deg"] is None else spec["dir_shift_deg"]
        if isinstance(source.hs_m, RecordArray):  # a record on disk: transformed as read
            hs, tp, dr = source.hs_m, source.tp_s, source.dir_deg
            changed = (hs.scaled(hs_f), tp.scaled(tp_f), dr.turned(shift))
        else:
            changed = (source.hs_m * hs_f, source.tp_s * tp_f, (source.dir_deg + shift) % 360.0)
        climate = replace(
            source,
            hs_m=changed[0],
            tp_s=changed[1],
            dir_deg=changed[2],
            kind="record" if source.kind == "record" else "steady",
        )
        info = {"kind": kind, "source": source.source, "hs_factor": hs_f, "tp_factor": tp_f}
        return climate, None, info | {"dir_shift_deg": shift}
    duration_s = None if spec["duration_h"] is None else spec["duration_h"] * 3600.0
    if kind == "storm":
        depth = reference.depth_m if spec["depth_m"] is None else _depth(spec["depth_m"])
        hs, tp, direction, limit = spec["hs_m"], spec["tp_s"], spec["dir_deg"], None
    elif spec["fetch_km"] == "auto":
        fetch_m = exposure.fetch_toward(np.full(len(exposure), float(spec["wind_dir_deg"])))
        hm0, tpw, lim = wind.wind_waves(spec["wind_speed_m_s"], fetch_m, duration_s, form="cem")
        hm0 = np.where(fetch_m > 0, hm0, 0.0)
        shape = (hm0.size, 1)
        climate = WaveClimate(
            hs_m=hm0.reshape(shape),
            tp_s=np.where(hm0 > 0, tpw, np.nan).reshape(shape),
            dir_deg=np.full(shape, float(spec["wind_dir_deg"]) % 360.0),
            duration_s=np.array([duration_s]),
            depth_m=np.inf,
            kind="steady",
            source="wind over the fetch of each transect",
        )
        limits, counts = np.unique(np.asarray(lim).astype(str), return_counts=True)
        info = {
            "kind": kind,
            "wind_speed_m_s": spec["wind_speed_m_s"],
            "wind_dir_deg": spec["wind_dir_deg"],
            "fetch_km": "auto",
            "dir_deg": float(spec["wind_dir_deg"]) % 360.0,
            "hs_m_max": float(np.max(hm0)),
            "growth_limits": {str(k): int(v) for k, v in zip(limits, counts, strict=True)},
            "duration_h": spec["duration_h"],
            "depth_m": "deep",
            "method": "CEM 2002 Part II-2, Eqs. II-2-36 to II-2-38, deep water, fetch per transect",
        }
        columns = {"fetch_km": fetch_m / 1000.0, "hs0_m": hm0, "tp0_s": climate.tp_s[:, 0]}
        return climate, duration_s, info | {"columns": columns}
    else:
        hm0, tpw, lim = wind.wind_waves(
            spec["wind_speed_m_s"], spec["fetch_km"] * 1000.0, duration_s, form="cem"
        )
        hs, tp, direction, depth = float(hm0), float(tpw), spec["wind_dir_deg"], np.inf
        limit = str(np.asarray(lim).item())
        if not hs > 0:
            raise StudyError(
                f"{study.path.name}: [scenario {spec['name']!r}] the wind makes no waves "
                f"(wind {spec['wind_speed_m_s']} m/s over {spec['fetch_km']} km)"
            )
    climate = steady(hs, tp, direction, depth_m=depth)
    if duration_s is not None:
        climate = replace(climate, duration_s=np.array([duration_s]))
    info = {"kind": kind, "hs_m": hs, "tp_s": tp, "dir_deg": float(direction) % 360.0}
    info["depth_m"] = "deep" if np.isinf(depth) else depth
    if limit is not None:
        info |= {
            "growth_limit": limit,
            "wind_speed_m_s": spec["wind_speed_m_s"],
            "wind_dir_deg": spec["wind_dir_deg"],
            "fetch_km": spec["fetch_km"],
            "method": "CEM 2002 Part II-2, Eqs. II-2-36 to II-2-38 (deep water)",
        }
    if duration_s is not None:
        info["duration_h"] = spec["duration_h"]
    return climate, duration_s, info


def _depth(value: Any) -> float:
    return np.inf if value == "deep" else float(value)


def compare_with_reference(
    scenario: ScenarioResult, reference: ScenarioResult, band: float
) -> dict[str, Any]:
    """Add changes against the reference to a scenario; return what its hotspots do.

    A changed climate (rates per year) gets ``rate_change_m_per_yr``; a storm event gets
    ``volume_change_vs_reference_m3_per_m`` (its volume change less what the reference climate
    does in the same time). Hotspots of the same class on the same part that overlap along the
    shore are the same hotspot; a scenario hotspot with no such reference one is *created*, a
    reference one with no such scenario one is *removed*, and an overlapping one whose peak is
    larger in magnitude by more than 10 % and more than the stable band ``band`` is *worsened*
    (climates only: a storm's hotspots are of shoreline shift,
    not rate, and are listed as the storm's own).
    """
    cols = scenario.columns
    if "shoreline_shift_m" in cols:
        years = scenario.info["event_duration_h"] * 3600.0 / transport.SECONDS_PER_YEAR
        base = -reference.columns["dqdx_m2_per_yr"] * years
        cols["volume_change_vs_reference_m3_per_m"] = cols["volume_change_m3_per_m"] - base
        return {"event": True, "hotspots": [h.hotspot_id for h in scenario.hotspots]}
    cols["rate_change_m_per_yr"] = cols["rate_m_per_yr"] - reference.columns["rate_m_per_yr"]

    def overlaps(a: Hotspot, b: Hotspot) -> bool:
        return (
            a.klass == b.klass
            and a.part_id == b.part_id
            and bool(np.intersect1d(a.members, b.members).size)
        )

    created = [h for h in scenario.hotspots if not any(overlaps(h, b) for b in reference.hotspots)]
    removed = [b for b in reference.hotspots if not any(overlaps(h, b) for h in scenario.hotspots)]
    worsened = [
        (h, b)
        for h in scenario.hotspots
        for b in reference.hotspots
        if overlaps(h, b)
        and abs(h.peak_rate_m_per_yr) - abs(b.peak_rate_m_per_yr)
        > max(band, 0.1 * abs(b.peak_rate_m_per_yr))
    ]
    return {
        "event": False,
        "created": [h.hotspot_id for h in created],
        "removed_reference": [b.hotspot_id for b in removed],
        "worsened": [
            {
                "hotspot_id": h.hotspot_id,
                "reference_hotspot_id": b.hotspot_id,
                "peak_rate_m_per_yr": h.peak_rate_m_per_yr,
                "reference_peak_rate_m_per_yr": b.peak_rate_m_per_yr,
            }
            for h, b in worsened
        ],
    }


def run_study(
    study: Study,
    chunk_steps: int | None = None,
    progress: Callable[[int, int], Callable[[int], None]] | None = None,
    stage: Callable[[str, int, str], Callable[[int], None]] | None = None,
    mapper: Any = None,
) -> RunResult:
    """Run a validated study and its scenarios; return every result (nothing is written).

    ``chunk_steps`` overrides ``[waves] chunk_steps``. ``progress(total_steps, n_transects)``,
    if given, is called once with the number of time steps the run will evaluate and returns
    the callback that each chunk reports its steps to (the command line's progress bar).
    ``stage(name, total, unit)``, if given, returns the progress callback of another stage
    (the sheltering rays, per transect).
    ``mapper`` runs the table sums of every climate's time reduction elsewhere (on Dask:
    :func:`shoreline.distributed.cluster`); the results are the same floats as in-process.
    """
    timings: dict[str, float] = {}
    t0 = time.perf_counter()
    climate = load_climate(study)
    timings["read_waves"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    coast, transects = load_transects(study)
    sign = chainage_sign(coast, transects)
    structures = None
    if study.structures_file is not None:
        st = study["structures"]
        structures = read_structures(
            study.structures_file, coast, transects, bypass=st["bypass"], layer=st["layer"]
        )
    timings["transects"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    extra_land = load_land(study, transects)
    land = extra_land + (list(structures.lines) if structures else [])
    c = study["coast"]
    exposure = compute_exposure(
        transects,
        list(coast.parts),
        land=land or None,
        max_distance_m=c["exposure_distance_m"],
        start_offset_m=c["ray_start_m"],
        spreading_s=study["waves"]["spreading_s"],
        wavelength_m=shadow_wavelength_m(climate),
        progress=stage("sheltering", len(transects), " transects") if stage else None,
    )
    timings["exposure"] = time.perf_counter() - t0
    sea_warning = check_sea_side(study, coast, transects, exposure, land, climate)
    shore = shore_type_of(study, coast, transects, exposure, land)
    point_index = nearest_wave_point(climate, transects)
    chunk_steps = chunk_steps or study["waves"]["chunk_steps"] or None
    specs = [(spec, *scenario_climate(spec, study, climate, exposure)) for spec in study.scenarios]
    total = climate.n_steps + sum(c.n_steps for _, c, _, _ in specs)
    tick = progress(total, len(transects)) if progress is not None else None
    coefficients = base_coefficients(study)
    fitted = None
    if study.calibration:
        t0 = time.perf_counter()
        eligible = np.isfinite(transects.normal_az_deg) & (shore == "open")
        fitted = calibrate_coefficients(
            study, coast, transects, climate, sign, point_index, exposure, structures, eligible
        )
        coefficients = {f: coefficients[f] * fitted.factors.get(f, 1.0) for f in coefficients}
        timings["calibration"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    reference = evaluate(
        "reference",
        study,
        coast,
        transects,
        climate,
        sign,
        chunk_steps,
        point_index=point_index,
        progress=tick,
        structures=structures,
        exposure=exposure,
        coefficients=coefficients,
        shore=shore,
        mapper=mapper,
    )
    timings["reference"] = time.perf_counter() - t0
    chain = {"point_index": point_index, "structures": structures, "shore": shore}
    chain |= {"exposure": exposure, "coefficients": coefficients}
    ensemble.attach(reference, study, climate, transects, sign, timings, **chain)
    warnings = [sea_warning] if sea_warning else []
    warnings += list(coast.warnings) + list(transects.warnings) + list(climate.warnings)
    ahead = projection.Setting(  # the forward projection ([projection]), per climate
        coast,
        transects,
        sign,
        point_index,
        exposure,
        structures,
        np.isin(shore, LEFT_OUT),
        shore == "non_erodible",
        coefficients,
        budget_scale_m(transects),
    )
    warnings += projection.attach(reference, study, ahead, climate, progress)
    if fitted is not None:
        warnings += fitted.warnings
    results = [reference]
    for spec, sc_climate, duration_s, info in specs:
        t0 = time.perf_counter()
        result = evaluate(
            spec["name"],
            study,
            coast,
            transects,
            sc_climate,
            sign,
            chunk_steps,
            event_duration_s=duration_s,
            closure_depth_m=reference.closure_depth_m,
            point_index=point_index,
            progress=tick,
            structures=structures,
            # waves grown over each transect's own fetch already stop at the land upwind: the
            # open-sea test of the exposure rays (which a lake shore never passes) is not theirs
            exposure=None if spec.get("fetch_km") == "auto" else exposure,
            coefficients=coefficients,
            shore=shore,
            mapper=mapper,
        )
        result.columns |= info.pop("columns", {})
        result.info |= {"scenario": info}
        warnings += projection.attach(result, study, ahead, sc_climate, progress)
        result.info["versus_reference"] = compare_with_reference(
            result, reference, study["classify"]["stable_band_m_per_yr"]
        )
        results.append(result)
        timings[f"scenario:{spec['name']}"] = time.perf_counter() - t0
        own = {"exposure": None} if spec.get("fetch_km") == "auto" else {}
        ensemble.attach(result, study, sc_climate, transects, sign, timings, **chain | own)
    if np.all(reference.columns["class"] == "sheltered"):
        warnings.append(
            "no reference wave reaches any transect (waves from land, or land in the way within "
            "exposure_distance_m); on a lake or lagoon give the waves by wind scenarios with "
            'fetch_km = "auto"'
        )
    for result in results:
        warnings += result.ensemble.warnings if result.ensemble is not None else []
        broken = result.columns["broken_at_input_fraction"]
        if np.any(broken > 0):
            warnings.append(
                f"[{result.name}] waves already breaking at their input depth "
                f"({result.climate.depth_m:g} m) for {float(np.max(broken)) * 100:.1f} % of the "
                "time at worst: their breaking height is capped at breaker_index x depth; give "
                "the waves at a deeper point"
            )
    return RunResult(
        study=study,
        coast=coast,
        transects=transects,
        scenarios=results,
        timings_s=timings,
        warnings=warnings,
        structures=structures,
        land=[g for g in extra_land if shapely.get_dimensions(g) == 2],
        calibration=None
        if fitted is None
        else {
            "factors": fitted.factors,
            "coefficients": coefficients,
            "uncalibrated": base_coefficients(study),
            "points": fitted.points,
        },
    )
