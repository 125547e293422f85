"""The forward projection: the one-line shoreline equation stepped through time.

Where the run gives the *initial* rate of shoreline change, this module carries the shoreline
forward for a number of years (``[projection]``). The model is the one-line equation
(Pelnard-Considère 1956; numerical form after Hanson 1989, Journal of Coastal Research 5(1):
1-27): every transect's shoreline moves along its own fixed transect by

    dy/dt = -(1 / D) dQ/dx + sources,        D = closure depth + berm height,

and the transport at every step is recomputed from the *current* shoreline: the turning of
the shore since the start, measured between neighbouring transect positions, is added to the
transects' normals. The budget is :func:`shoreline.budget.face_budget` of the rate run
(smoothing at the orientation scale, structures, hard reaches, excluded transects), so the
projection starts at the rate of the run. ``docs/methods.md`` ("Forward projection") states
every equation, the scheme and its stability, the boundary conditions and the references.

How it is arranged
------------------
- **Tables over normal nodes** (:func:`shoreline.reduce.tabulate`): per wave point, the net and
  gross transport of the primary formula summed over short intervals of the record (blocks:
  twelve a record year), on normal-azimuth nodes spanning the transects' normals plus
  :data:`MARGIN_DEG` on each side, and on the direction sectors of the sheltering weights.
  Per interval and transect the sector-weighted table is a function of the normal only; its
  non-increasing envelope (the transport law of the projection, below) and the gross table
  are read at the current orientation every step. Sheltering is held as in the rate run.
- **The staggered one-line grid**: the shoreline position ``y`` lives at the transects, the
  response of the transport to the shore's turning at the faces between neighbouring
  transects, from the turning of the line joining their current positions (each transect's
  table read at its own normal turned by that angle, the two averaged). The transport of the
  initial shore (the rate run's) is smoothed at the orientation scale; the response, which the
  projection resolves itself, is added unsmoothed (``face_change`` of ``face_budget``). Where
  a transect's own transport enters the budget (the open end of a segment, beside a
  structure) it is turned by the angle of its one face.
- **Time**: steps of at most :data:`MAX_STEP_YR` within each interval of the record, in the
  record's order (``"repeat"``, cyclically) or whole record years drawn at random
  (``"resample"``, seeded); steps are cut at every output time and nourishment.
- **Scheme**: linearly implicit Euler (a W-method; Hairer & Wanner 1996, from memory):
  ``(I - dt L) (y_new - y) = dt R(y)``, ``R`` the full right-hand side (face budget at the
  current orientation), ``L`` its linearisation: the three-point diffusion operator in flux
  form with the diffusivity ``-dQ/dtheta / D`` of every face from the same tables. Stable for
  any step; sand is conserved to the solver's precision.
- **Sources**: nourishments (a rectangle over the active height, at their year), sea-level rise
  (the Bruun rule, every erodible transect retreats by ``S L* / (B + h*)``), and the bypassing
  of structures growing as the updrift shoreline nears their tip (Hanson 1989).

The deterministic run calls :func:`attach` once per climate; an ensemble calls
:func:`prepare` once per climate and :func:`integrate` once per member (:class:`Member`).
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np
import scipy.sparse
import scipy.sparse.linalg

from shoreline import profile, transport, waves
from shoreline.budget import face_budget, face_layout, part_slices
from shoreline.climate import WaveClimate
from shoreline.errors import StudyError
from shoreline.reduce import Physics, Tables, direction_sector, tabulate

__all__ = [
    "MARGIN_DEG",
    "MAX_STEP_YR",
    "Member",
    "Prepared",
    "Projection",
    "Setting",
    "Trajectory",
    "attach",
    "bruun_retreat_m",
    "ensemble_columns",
    "hanson_bypass",
    "initial_rate_m_per_yr",
    "integrate",
    "prepare",
    "project",
    "retreat_probability",
]

#: The shoreline may turn this far from its initial normal before the tables end; beyond it
#: the transport holds the value at the edge (zero diffusivity there) and a warning says so.
MARGIN_DEG = 40.0

#: The longest morphological step [yr] (half a month): steps are also cut at the ends of
#: the record's intervals, at every output time and at every nourishment.
MAX_STEP_YR = 1.0 / 24.0

#: Intervals of the record per record year (calendar-free: twelve equal parts of each year).
INTERVALS_PER_YEAR = 12

#: A record at least this many years long counts as one whole year (an hourly record of 365
#: days is 0.9993 of a year of 365.25 days).
WHOLE_YEAR_SHARE = 0.98

#: Ratio of the depth of active longshore transport to the breaking depth of the significant
#: height: Hanson (1989) takes D_LT = (1.27 / gamma) H_b with H_b the significant breaker
#: height (from memory); 1.27 is the ratio of H_1/10 to H_s of the Rayleigh distribution.
ACTIVE_DEPTH_FACTOR = 1.27

#: Weighted tables of one interval are kept in memory up to this many bytes in all.
CACHE_BYTES = 256 * 2**20

_YEAR_S = transport.SECONDS_PER_YEAR


# --------------------------------------------------------------------------------------------
# Settings and results
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Setting:
    """What the projection takes from the run: the same for every climate of a study.

    Attributes
    ----------
    coast, transects : CoastLines, Transects
        The shore and its transects.
    sign : ndarray of shape (n,)
        +1 where the sea is on the right of increasing chainage, -1 on the left.
    point_index : ndarray of int, shape (n,)
        Each transect's wave point.
    exposure : Exposure or None
        Sheltering (sector weights ``share``); None for open coast everywhere.
    structures : Structures or None
        Structures across the shore.
    excluded, hard : ndarray of bool, shape (n,)
        Transects left out of the budget; non-erodible transects.
    coefficients : dict
        Transport coefficient of every formula (after calibration).
    sigma_m : float
        The budget's smoothing scale (the orientation fit's sigma) [m].
    """

    coast: Any
    transects: Any
    sign: np.ndarray
    point_index: np.ndarray
    exposure: Any
    structures: Any
    excluded: np.ndarray
    hard: np.ndarray
    coefficients: dict
    sigma_m: float


@dataclass(frozen=True)
class Member:
    """The settings of one projection: the study's by default, an ensemble member's otherwise.

    Attributes
    ----------
    coefficient_factor : float
        Factor on the transport (the transport coefficient, e.g. CERC K, is a scale of it).
    dir_shift_deg : float
        Every wave direction turned clockwise by this [deg]; at most the ``max_dir_shift_deg``
        the climate was prepared for.
    closure_depth_m : float or ndarray or None
        Closure depth [m], one value or one per transect; None: the climate's.
    berm_height_m : float or None
        Berm height [m]; None: the study's.
    sea_level_factor : float
        Factor on the sea-level rise of the study.
    bypass : float or None
        The structures' fixed bypass share; None: as read (the study's or each feature's).
    seed : int or None
        Seed of the random years (``climate = "resample"``); None: the study's.
    """

    coefficient_factor: float = 1.0
    dir_shift_deg: float = 0.0
    closure_depth_m: float | np.ndarray | None = None
    berm_height_m: float | None = None
    sea_level_factor: float = 1.0
    bypass: float | None = None
    seed: int | None = None


@dataclass
class Trajectory:
    """One projection through time.

    Attributes
    ----------
    years : ndarray of shape (t,)
        Output times, years after the start: every whole year from 0 to the horizon.
    shift_m : ndarray of shape (t, n)
        Shoreline shift since the start, along each transect [m], seaward positive; NaN at
        excluded transects.
    q_net_m3_per_yr : ndarray of shape (t, n)
        Net transport of the primary formula on the shoreline of that time, the record's mean
        climate [m3/yr], + toward increasing chainage.
    bypass : ndarray of shape (t, s)
        Share of the arriving transport passing each structure at that time.
    sea_level_m : ndarray of shape (t,)
        Sea-level rise since the start [m].
    steps : int
        Morphological steps taken.
    max_turn_deg : float
        The largest turning of the shore from its initial normal met at any face [deg].
    held_faces : int
        Face-steps at which the turning went past the tables (:data:`MARGIN_DEG`).
    """

    years: np.ndarray
    shift_m: np.ndarray
    q_net_m3_per_yr: np.ndarray
    bypass: np.ndarray
    sea_level_m: np.ndarray
    steps: int
    max_turn_deg: float
    held_faces: int


@dataclass
class Projection:
    """What a scenario keeps of its projection (``ScenarioResult.projection``).

    Attributes
    ----------
    settings : dict
        The ``[projection]`` settings used, with the scheme and step.
    trajectory : Trajectory
        The projection through time (every whole year).
    report_years : list of int
        The years after the start that shorelines are written for.
    x_m, y_m : ndarray of shape (r, n)
        Projected shore points in the working CRS at the report years [m].
    columns : dict
        ``shift_<n>yr_m`` per report year, for the transect layer and CSV.
    nourishments : list of dict
        Each nourishment with the fraction of its volume still within its own stretch at each
        report year (against the same projection without nourishments).
    bruun_retreat_m : ndarray of shape (t, n)
        Retreat by the Bruun rule alone [m] (negative), per output time and transect.
    setback : dict or None
        With ``setback_m``: per report year, transects and shore length retreating beyond it.
    warnings : list of str
    prepared : Prepared
        The climate's tables, for further members (:func:`integrate`).
    """

    settings: dict
    trajectory: Trajectory
    report_years: list
    x_m: np.ndarray
    y_m: np.ndarray
    columns: dict
    nourishments: list
    bruun_retreat_m: np.ndarray
    setback: dict | None
    warnings: list = field(default_factory=list)
    prepared: Prepared | None = field(default=None, repr=False)


# --------------------------------------------------------------------------------------------
# Published relations
# --------------------------------------------------------------------------------------------


def bruun_retreat_m(
    sea_level_rise_m: np.ndarray | float,
    closure_depth_m: np.ndarray | float,
    berm_height_m: float,
    d50_mm: float,
) -> np.ndarray:
    """Shoreline retreat by the Bruun rule, ``R = S L* / (B + h*)`` [m] (positive landward).

    Parameters
    ----------
    sea_level_rise_m : float or ndarray
        Rise of the sea level S [m].
    closure_depth_m : float or ndarray
        Depth of closure h* [m], the seaward limit of the active profile.
    berm_height_m : float
        Berm height B [m].
    d50_mm : float
        Median grain size [mm], for the equilibrium profile.

    Returns
    -------
    ndarray
        Retreat R [m], positive landward for a rising sea.

    Notes
    -----
    Bruun (1962), Journal of the Waterways and Harbors Division, ASCE 88(WW1): 117-130 (from
    memory): the profile keeps its shape and moves up by S and landward by R; the volume eroded
    from the active width L* equals that deposited, so ``R = S L* / (B + h*)``. L* is the
    cross-shore distance to the depth h* on the equilibrium profile h = A y^(2/3) (Dean 1977):
    ``L* = (h* / A)^(3/2)`` (:func:`shoreline.profile.surf_zone_width_m`).

    Examples
    --------
    >>> round(float(bruun_retreat_m(1.0, 8.0, 2.0, 0.3)), 1)  # L* = (8 / 0.118)^1.5 = 559 m
    55.9
    """
    width = profile.surf_zone_width_m(closure_depth_m, d50_mm)
    return (
        np.asarray(sea_level_rise_m, dtype=float)
        * width
        / (np.asarray(closure_depth_m, dtype=float) + berm_height_m)
    )


def hanson_bypass(
    tip_distance_m: np.ndarray | float,
    active_depth_m: np.ndarray | float,
    d50_mm: float,
) -> np.ndarray:
    """Share of the arriving transport that passes the tip of a structure (Hanson 1989).

    Parameters
    ----------
    tip_distance_m : float or ndarray
        Distance from the shoreline beside the structure (updrift side) to its seaward tip
        [m]; 0 or less when the shoreline has reached the tip.
    active_depth_m : float or ndarray
        Depth of active longshore transport D_LT [m].
    d50_mm : float
        Median grain size [mm].

    Returns
    -------
    ndarray
        ``1 - D_G / D_LT`` clipped to [0, 1], with D_G the depth at the tip on the equilibrium
        profile ``D_G = A y_G^(2/3)`` (Dean 1977; A from the grain size, Moore 1982): the share
        of the active profile that lies seaward of the tip. 1 where the shoreline is past the
        tip, 0 where the tip is deeper than D_LT or D_LT is unknown (NaN).

    Notes
    -----
    Hanson (1989), Journal of Coastal Research 5(1): 1-27 (from memory): the bypassing factor
    of a groyne ``BYP = 1 - D_G / D_LT`` for ``D_G < D_LT``, else 0, with the depth of active
    longshore transport ``D_LT = (1.27 / gamma) H_b`` (:data:`ACTIVE_DEPTH_FACTOR`).

    Examples
    --------
    >>> hanson_bypass(np.array([200.0, 27.0, 0.0]), 2.0, 0.3).round(2).tolist()
    [0.0, 0.47, 1.0]
    """
    gap = np.maximum(np.asarray(tip_distance_m, dtype=float), 0.0)
    depth = profile.equilibrium_profile_depth(gap, d50_mm)
    d_lt = np.asarray(active_depth_m, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        share = 1.0 - depth / d_lt
    return np.where(np.isfinite(share), np.clip(share, 0.0, 1.0), 0.0)


def retreat_probability(shift_m: np.ndarray, setback_m: float) -> np.ndarray:
    """Share of the members whose shoreline retreats beyond ``setback_m`` (first axis: members).

    ``shift_m`` is seaward positive, so a retreat beyond the setback is ``shift <= -setback``.
    NaN shifts (excluded transects) give NaN.

    Examples
    --------
    >>> retreat_probability(np.array([[-30.0, 5.0], [-10.0, -25.0], [-21.0, 0.0]]), 20.0)
    array([0.66666667, 0.33333333])
    """
    shift = np.asarray(shift_m, dtype=float)
    beyond = (shift <= -float(setback_m)).mean(axis=0)
    return np.where(np.isnan(shift).any(axis=0), np.nan, beyond)


def ensemble_columns(
    trajectories: Sequence[Trajectory],
    report_years: Sequence[int],
    setback_m: float | None = None,
    quantiles: Sequence[float] = (0.05, 0.5, 0.95),
) -> dict[str, np.ndarray]:
    """Per-transect columns of an ensemble of projections (one trajectory per member).

    ``shift_<n>yr_q<pp>_m`` (the quantiles of the members' shifts at each report year, e.g.
    ``shift_25yr_q05_m``) and, with ``setback_m``, ``p_retreat_<n>yr`` (the share of members
    retreating beyond it: :func:`retreat_probability`). A proposal of names for the ensemble
    (shoreline/ensemble.py) to adopt or rename.
    """
    stack = np.stack([t.shift_m for t in trajectories])  # (members, times, n)
    out: dict[str, np.ndarray] = {}
    for year in report_years:
        shifts = stack[:, int(year)]
        for q in quantiles:
            with np.errstate(invalid="ignore"):
                out[f"shift_{int(year)}yr_q{round(100 * q):02d}_m"] = np.nanquantile(
                    shifts, q, axis=0
                )
        if setback_m is not None:
            out[f"p_retreat_{int(year)}yr"] = retreat_probability(shifts, setback_m)
    return out


# --------------------------------------------------------------------------------------------
# The record in intervals, and the sequence of intervals through the projection
# --------------------------------------------------------------------------------------------


def record_intervals(
    climate: WaveClimate, mode: str, per_year: int = INTERVALS_PER_YEAR
) -> tuple[WaveClimate, np.ndarray, int]:
    """Label every step of the record by its interval: ``(climate used, labels, years)``.

    The label is ``year * per_year + interval`` (``per_year`` equal intervals of each record
    year, by the time elapsed from the record's first step; a step belongs to the interval it
    starts in).
    ``"repeat"`` uses the whole record (a record shorter than :data:`WHOLE_YEAR_SHARE` of a
    year is one interval: it has no seasons to step through); ``"resample"`` keeps the whole
    years of the record only (the tail of a last, partial year is left out).

    Raises
    ------
    StudyError
        ``"resample"`` of a record shorter than a year.
    """
    duration = np.asarray(climate.duration_s, dtype=float)
    total = float(duration.sum())
    elapsed = np.cumsum(duration) - duration
    if mode == "resample":
        years = int(math.floor(total / _YEAR_S + (1.0 - WHOLE_YEAR_SHARE)))
        if years < 1:
            raise StudyError(
                f'[projection] climate = "resample" draws whole years of the record, but the '
                f"record covers {total / _YEAR_S:.2f} years; give a record of a year or more, "
                'or climate = "repeat"'
            )
        keep = elapsed < years * _YEAR_S - 1e-6
        if not keep.all():
            climate = _first_steps(climate, int(keep.sum()))
            elapsed = elapsed[keep]
        year = np.minimum(np.floor(elapsed / _YEAR_S), years - 1)
        start = year * _YEAR_S
        length = np.full(year.shape, _YEAR_S)
    else:
        years = max(1, int(round(total / _YEAR_S)))
        length = np.full(elapsed.shape, total / years)
        year = np.minimum(np.floor(elapsed / length), years - 1)
        start = year * length
        if total < WHOLE_YEAR_SHARE * _YEAR_S:
            return climate, np.zeros(elapsed.size, dtype=np.int64), 1
    part = np.floor((elapsed - start) / (length / per_year))
    part = np.clip(part, 0, per_year - 1)
    return climate, (year * per_year + part).astype(np.int64), years


def _first_steps(climate: WaveClimate, k: int) -> WaveClimate:
    """The first ``k`` steps of a record (every per-step array cut on its last axis)."""
    cut = {}
    for name in ("hs_m", "tp_s", "dir_deg", "duration_s", "time"):
        value = getattr(climate, name)
        if value is not None:
            cut[name] = np.asarray(value)[..., :k]
    return replace(climate, **cut)


def interval_sequence(
    labels: np.ndarray,
    duration_yr: np.ndarray,
    mode: str,
    horizon_yr: float,
    seed: int,
    per_year: int = INTERVALS_PER_YEAR,
) -> list[tuple[int, float]]:
    """The intervals the projection steps through: ``[(block index, length [yr]), ...]``.

    ``labels`` are the tables' block labels (sorted), ``duration_yr`` the time each stands
    for. ``"repeat"``: the blocks in order, cyclically; ``"resample"``: for every year of the
    projection one record year (``label // per_year``) drawn at random with ``seed``, its blocks in
    order. Consecutive visits of the same block are merged.

    Examples
    --------
    >>> interval_sequence(np.array([0]), np.array([1.0]), "repeat", 2.5, 1)
    [(0, 2.5)]
    >>> interval_sequence(np.array([0, 1]), np.array([0.5, 0.5]), "repeat", 1.25, 1)
    [(0, 0.5), (1, 0.5), (0, 0.25)]
    """
    out: list[list] = []
    clock = 0.0
    years = np.asarray(labels) // per_year
    rng = np.random.default_rng(seed)
    record_years = np.unique(years)
    while clock < horizon_yr - 1e-12:
        if mode == "resample":
            drawn = record_years[int(rng.integers(record_years.size))]
            blocks = np.flatnonzero(years == drawn)
        else:
            blocks = np.arange(len(labels))
        for b in blocks:
            length = min(float(duration_yr[b]), horizon_yr - clock)
            if length <= 0:
                break
            if out and out[-1][0] == b:
                out[-1][1] += length
            else:
                out.append([int(b), length])
            clock += length
    return [(b, length) for b, length in out]


def step_plan(
    sequence: list[tuple[int, float]], cuts: Sequence[float], max_step_yr: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Steps ``(block, start [yr], length [yr])`` through the sequence.

    Each interval is cut at every time of ``cuts`` inside it and into equal steps of at most
    ``max_step_yr``.

    Examples
    --------
    >>> b, t, dt = step_plan([(0, 1.0)], [0.5], 0.3)
    >>> b.tolist(), np.round(t, 3).tolist(), np.round(dt, 3).tolist()
    ([0, 0, 0, 0], [0.0, 0.25, 0.5, 0.75], [0.25, 0.25, 0.25, 0.25])
    """
    cuts = np.unique(np.asarray(list(cuts), dtype=float))
    blocks, starts, lengths = [], [], []
    clock = 0.0
    for b, length in sequence:
        end = clock + length
        inner = cuts[(cuts > clock + 1e-9) & (cuts < end - 1e-9)]
        edges = np.r_[clock, inner, end]
        for a, z in zip(edges[:-1], edges[1:], strict=True):
            k = max(1, int(math.ceil((z - a) / max_step_yr - 1e-9)))
            t = a + (z - a) * np.arange(k) / k
            blocks.append(np.full(k, b))
            starts.append(t)
            lengths.append(np.full(k, (z - a) / k))
        clock = end
    if not blocks:
        return np.zeros(0, int), np.zeros(0), np.zeros(0)
    return np.concatenate(blocks), np.concatenate(starts), np.concatenate(lengths)


# --------------------------------------------------------------------------------------------
# Preparing a climate: tables, geometry, sources
# --------------------------------------------------------------------------------------------


@dataclass
class _PointTables:
    """The tables of one wave point and the transects it serves."""

    rows: np.ndarray
    tables: Tables
    mean: Tables


@dataclass
class Prepared:
    """A climate made ready for projections: tables, geometry and sources (see prepare)."""

    study: Any
    setting: Setting
    climate: WaveClimate
    physics: Physics
    points: list
    labels: np.ndarray
    block_s: np.ndarray
    mode: str
    record_years: int
    step_deg: float
    margin_nodes: int
    max_dir_shift_deg: float
    per_year: int
    closure_depth_m: np.ndarray
    unit_x: np.ndarray
    unit_y: np.ndarray
    active_depth_m: np.ndarray
    tip_m: np.ndarray
    cache: dict = field(default_factory=dict)
    cache_bytes: int = 0


def _physics(study, coefficients: dict) -> Physics:
    m, s = study["model"], study["sediment"]
    return Physics(
        (m["primary"],),
        m["primary"],
        m["breaker_index"],
        m["breaking"],
        coefficients["cerc"],
        coefficients["kamphuis"],
        s["d50_mm"],
        s["slope"],
        m["water_density_kg_m3"],
        s["density_kg_m3"],
        s["porosity"],
    )


def prepare(
    study,
    setting: Setting,
    climate: WaveClimate,
    closure_depth_m: np.ndarray,
    *,
    max_dir_shift_deg: float = 0.0,
    intervals_per_year: int = INTERVALS_PER_YEAR,
    progress: Callable[[int], None] | None = None,
) -> Prepared:
    """Tabulate a climate for projections and gather what every member shares.

    Parameters
    ----------
    study : Study
        The validated study (``[projection]`` given).
    setting : Setting
        The run's coast, transects, sheltering and structures.
    climate : WaveClimate
        The reference record or a changed climate (not a storm event).
    closure_depth_m : ndarray of shape (n,)
        The closure depth of every transect [m] (the run's).
    max_dir_shift_deg : float
        The largest direction bias an ensemble member will ask for [deg]: the tables get
        that much more room on each side.
    intervals_per_year : int
        Intervals of each record year the tables are summed over (the longest step).
    progress : callable, optional
        ``progress(steps)`` as the record is tabulated.

    Raises
    ------
    StudyError
        ``"resample"`` of a record shorter than a year.
    """
    p = study.projection
    mode = p["climate"]
    climate, labels, record_years = record_intervals(climate, mode, intervals_per_year)
    t = setting.transects
    n = len(t)
    physics = _physics(study, setting.coefficients)
    step = float(study["model"]["angle_step_deg"]) or 0.5
    margin_nodes = int(math.ceil(MARGIN_DEG / step))
    extra = int(math.ceil(abs(max_dir_shift_deg) / step)) + 2
    normal = np.asarray(t.normal_az_deg, dtype=float)
    ex = setting.exposure
    weight = None if ex is None else np.asarray(ex.share, dtype=float)
    m = 1 if weight is None else weight.shape[1]
    multi = climate.hs_m.ndim == 2
    point_of = np.asarray(setting.point_index, dtype=int) if multi else np.zeros(n, dtype=int)
    names = (f"q_{physics.primary}_m3", "q_gross_m3")
    points = []
    block_s = None
    for point in np.unique(point_of[np.isfinite(normal)]):
        rows = np.flatnonzero((point_of == point) & np.isfinite(normal))
        sectors = None
        if weight is not None and max_dir_shift_deg == 0:
            sectors = np.flatnonzero(weight[rows].any(axis=0))
            if sectors.size == 0:
                sectors = np.array([0])
        tables = tabulate(
            climate,
            normal[rows],
            physics,
            point=int(point) if multi else None,
            n_sectors=m,
            sectors=sectors,
            blocks=labels,
            angle_step_deg=step,
            margin_nodes=margin_nodes + extra,
            quantities=names,
            progress=progress,
        )
        mean = tables.combine(np.ones(tables.duration_s.size))
        points.append(_PointTables(rows, tables, mean))
        block_s = tables.duration_s
    if block_s is None:  # no transect has a normal: nothing moves
        block_s = np.array([float(np.sum(climate.duration_s))])
        labels = np.zeros(climate.n_steps, dtype=np.int64)
    # the grid vector of one ground metre seaward along every transect
    lines = t.lines(1.0)
    unit_x, unit_y = np.zeros(n), np.zeros(n)
    for k, line in enumerate(lines):  # shapely objects: a short loop over the built lines
        if line is not None:
            (x0, y0), (x1, y1) = line.coords
            unit_x[k], unit_y[k] = x1 - x0, y1 - y0
    st = setting.structures
    n_struct = 0 if st is None else len(st)
    block_labels = np.unique(labels)
    active = np.full((block_labels.size, max(n_struct, 0), 2), np.nan)
    tip = np.zeros(n_struct)
    if n_struct:
        tip = _tip_lengths(st, t, unit_x, unit_y)
        active = _active_depths(study, setting, climate, labels, block_labels)
    return Prepared(
        study=study,
        setting=setting,
        climate=climate,
        physics=physics,
        points=points,
        labels=block_labels,
        block_s=np.asarray(block_s, dtype=float),
        mode=mode,
        record_years=record_years,
        step_deg=step,
        margin_nodes=margin_nodes,
        max_dir_shift_deg=float(abs(max_dir_shift_deg)),
        per_year=int(intervals_per_year),
        closure_depth_m=np.broadcast_to(np.asarray(closure_depth_m, dtype=float), (n,)).copy(),
        unit_x=unit_x,
        unit_y=unit_y,
        active_depth_m=active,
        tip_m=tip,
    )


def _tip_lengths(st, t, unit_x: np.ndarray, unit_y: np.ndarray) -> np.ndarray:
    """How far each structure reaches seaward of the initial shoreline [m, ground].

    Measured along the mean seaward normal of the two transects beside it, from the chord
    joining their shore points: the largest seaward distance of any vertex of the line.
    """
    import shapely

    nxt = face_layout(t.part_id, t.part_closed).nxt
    out = np.zeros(len(st))
    for s in range(len(st)):  # a loop over structures (few), not transects
        i = int(st.face[s])
        k = int(nxt[i]) if nxt[i] >= 0 else i
        mx, my = 0.5 * (t.x_m[i] + t.x_m[k]), 0.5 * (t.y_m[i] + t.y_m[k])
        ux, uy = 0.5 * (unit_x[i] + unit_x[k]), 0.5 * (unit_y[i] + unit_y[k])
        norm2 = ux * ux + uy * uy
        if not norm2 > 0:
            continue
        xy = shapely.get_coordinates(st.lines[s])
        reach = ((xy[:, 0] - mx) * ux + (xy[:, 1] - my) * uy) / norm2  # ground metres
        out[s] = max(float(np.max(reach)), 0.0)
    return out


def _active_depths(study, setting: Setting, climate, labels, block_labels) -> np.ndarray:
    """Depth of active longshore transport per interval, structure and side [m].

    For the transects on either side of each structure (their own normal and sheltering),
    every step of the record is carried to breaking; the depth is ``1.27 db`` (Hanson 1989,
    :data:`ACTIVE_DEPTH_FACTOR`) averaged over the interval with the CERC transport of each
    step as weight (the waves that move the sand decide how deep it moves). NaN where no
    transport arrives in an interval.
    """
    t, st = setting.transects, setting.structures
    m = study["model"]
    nxt = face_layout(t.part_id, t.part_closed).nxt
    multi = climate.hs_m.ndim == 2
    out = np.full((block_labels.size, len(st), 2), np.nan)
    index = np.searchsorted(block_labels, labels)
    w_all = None if setting.exposure is None else np.asarray(setting.exposure.share)
    for s in range(len(st)):  # structures (few), vectorised over the record
        i = int(st.face[s])
        for side, r in enumerate((i, int(nxt[i]) if nxt[i] >= 0 else i)):
            p = int(setting.point_index[r]) if multi else 0
            hs = climate.hs_m[p] if multi else climate.hs_m
            tp = climate.tp_s[p] if multi else climate.tp_s
            dr = climate.dir_deg[p] if multi else climate.dir_deg
            depth = np.asarray(climate.depth_m, dtype=float)
            depth = float(depth[p]) if depth.ndim == 1 else float(depth)
            normal = float(t.normal_az_deg[r])
            if not np.isfinite(normal):
                continue
            angle = (dr - normal + 180.0) % 360.0 - 180.0
            hb, db, ab = waves.breaking(
                hs,
                tp,
                np.where(np.abs(angle) < 90.0, angle, np.nan),
                depth_m=depth,
                breaker_index=m["breaker_index"],
                method=m["breaking"],
            )
            q = np.abs(transport.cerc(hb, ab, breaker_index=m["breaker_index"]))
            w = np.where(np.isfinite(q) & np.isfinite(db), q, 0.0) * climate.duration_s
            if w_all is not None:
                sector = direction_sector(dr, w_all.shape[1])
                w = w * np.where(sector >= 0, w_all[r, np.maximum(sector, 0)], 0.0)
            num = np.bincount(index, weights=w * np.nan_to_num(db), minlength=block_labels.size)
            den = np.bincount(index, weights=w, minlength=block_labels.size)
            with np.errstate(invalid="ignore", divide="ignore"):
                out[:, s, side] = np.where(den > 0, ACTIVE_DEPTH_FACTOR * num / den, np.nan)
    return out


# --------------------------------------------------------------------------------------------
# The transport law of an interval: per transect, a function of the normal
# --------------------------------------------------------------------------------------------


@dataclass
class _Law:
    """Per transect, one interval: the transport as a function of the turning of the shore.

    ``net`` and ``gross`` are the sector-weighted tables of the primary net and gross
    transport [m3/yr] (table convention: the sea on the right) on a window of nodes around
    the transect's normal; ``envelope`` the non-increasing envelope of ``net`` from the
    window's start (its steps ``min(step, 0)`` summed); ``f0`` the position of the initial
    normal in the window [nodes]. ``net0``, ``gross0``, ``env0`` are the values there;
    ``uphill`` marks the transects whose net transport grows as the shore turns toward the
    waves at the start (there the envelope is flat: no diffusion).
    """

    gross: np.ndarray
    envelope: np.ndarray
    f0: np.ndarray
    net0: np.ndarray
    gross0: np.ndarray
    env0: np.ndarray
    uphill: np.ndarray


def _law(prep: Prepared, block: int, dir_shift_deg: float) -> _Law:
    """The transport law of one interval (``block`` -1: the record's mean), cached."""
    key = (block, round(float(dir_shift_deg), 9))
    if key in prep.cache:
        return prep.cache[key]
    t = prep.setting.transects
    n = len(t)
    big_m = prep.margin_nodes
    width = 2 * big_m + 2
    normal = np.asarray(t.normal_az_deg, dtype=float)
    net = np.zeros((n, width))
    gross = np.zeros((n, width))
    f0 = np.full(n, float(big_m))
    ex = prep.setting.exposure
    weight = None if ex is None else np.asarray(ex.share, dtype=float)
    for pt in prep.points:  # a loop over wave points, never over transects
        tab = pt.mean if block < 0 else pt.tables
        dur = float(tab.duration_s) if block < 0 else float(tab.duration_s[block])
        scale = _YEAR_S / dur if dur > 0 else 0.0
        s_net = tab.sums[f"q_{prep.physics.primary}_m3"]
        s_gross = tab.sums["q_gross_m3"]
        if block >= 0:
            s_net, s_gross = s_net[block], s_gross[block]
        rows = pt.rows
        u = np.mod(normal[rows] - dir_shift_deg - tab.node0_deg, 360.0) / tab.step_deg
        base = np.floor(u).astype(np.intp) - big_m
        base = np.clip(base, 0, tab.n_nodes - width)
        f0[rows] = u - base
        if weight is None:
            cols = None
        else:
            turn = round(float(dir_shift_deg) / (360.0 / tab.n_sectors))
            cols = (tab.sectors + turn) % tab.n_sectors
        chunk = max(1, 4_000_000 // max(width * tab.sectors.size, 1))
        for a in range(0, rows.size, chunk):
            r = rows[a : a + chunk]
            idx = base[a : a + chunk, None] + np.arange(width)[None, :]
            if cols is None:
                net[r] = s_net[idx].sum(axis=-1)
                gross[r] = s_gross[idx].sum(axis=-1)
            else:
                w = weight[np.ix_(r, cols)]
                net[r] = np.einsum("rjk,rk->rj", s_net[idx], w)
                gross[r] = np.einsum("rjk,rk->rj", s_gross[idx], w)
        net[rows] *= scale
        gross[rows] *= scale
    steps = np.diff(net, axis=1)
    envelope = np.zeros_like(net)
    np.cumsum(np.minimum(steps, 0.0), axis=1, out=envelope[:, 1:])
    net0, net_slope = _read(net, f0)
    law = _Law(
        gross=gross,
        envelope=envelope,
        f0=f0,
        net0=net0,
        gross0=_read(gross, f0)[0],
        env0=_read(envelope, f0)[0],
        uphill=net_slope > 0.0,
    )
    size = (gross.nbytes + envelope.nbytes) * 1
    if prep.cache_bytes + size <= CACHE_BYTES:
        prep.cache[key] = law
        prep.cache_bytes += size
    return law


def _read(table: np.ndarray, position: np.ndarray, rows: np.ndarray | None = None):
    """Linear interpolation of each row's table at a position [nodes]: ``(value, slope)``.

    Positions beyond the window hold the edge value with zero slope.
    """
    rows = np.arange(table.shape[0]) if rows is None else rows
    last = table.shape[1] - 1
    pos = np.clip(position, 0.0, float(last))
    j = np.minimum(np.floor(pos).astype(np.intp), last - 1)
    f = pos - j
    low, high = table[rows, j], table[rows, j + 1]
    slope = np.where((position >= 0.0) & (position <= last), high - low, 0.0)
    return low + f * (high - low), slope


# --------------------------------------------------------------------------------------------
# Stepping
# --------------------------------------------------------------------------------------------


@dataclass
class _Grid:
    """The faces of the staggered grid and the cells of the budget.

    ``inner[i]``: the right face of ``i`` lies between two transects of one segment;
    ``width``: the budget's cell width of each transect [m]; ``own_right``, ``own_left``: the
    factor on the derivative of a transect's own transport where it enters the budget at its
    right or left face (1 at an open end; the bypass ``b`` beside a structure). ``struct_i``,
    ``struct_k``, ``struct_b``, ``struct_s``: the transects either side of each blocking
    structure, its bypass now and its index.
    """

    nxt: np.ndarray
    prev: np.ndarray
    inner: np.ndarray
    width: np.ndarray
    own_right: np.ndarray
    own_left: np.ndarray
    struct_i: np.ndarray
    struct_k: np.ndarray
    struct_b: np.ndarray
    struct_s: np.ndarray


def _grid(setting: Setting, bypass: np.ndarray) -> _Grid:
    """Faces, cells and where a transect's own transport enters, as face_budget has them."""
    t = setting.transects
    st = setting.structures
    faces = np.zeros(0, int) if st is None else np.asarray(st.face, dtype=int)
    ex = setting.excluded
    lay = face_layout(t.part_id, t.part_closed, ex, faces[bypass < 1.0])
    nxt, prev = lay.nxt, lay.prev
    inner = (nxt >= 0) & ~lay.cut
    dx = np.asarray(t.spacing_m, dtype=float)
    width = dx.copy()
    width[lay.cut] *= 0.5
    width[lay.cut_left] *= 0.5
    own_right = np.where(lay.cut, 1.0, 0.0)
    own_left = np.where(lay.cut_left, 1.0, 0.0)
    si, sk, ss = [], [], []
    for s, (i, b) in enumerate(zip(faces, bypass, strict=True)):
        k = nxt[i]
        if b >= 1.0 or k < 0 or ex[i] or ex[k]:
            continue
        width[i], width[k] = dx[i], dx[k]
        si.append(i)
        sk.append(k)
        ss.append(s)
    grid = _Grid(
        nxt,
        prev,
        inner,
        width,
        own_right,
        own_left,
        np.asarray(si, dtype=int),
        np.asarray(sk, dtype=int),
        np.zeros(len(si)),
        np.asarray(ss, dtype=int),
    )
    return _with_bypass(grid, bypass)


def _with_bypass(grid: _Grid, bypass: np.ndarray) -> _Grid:
    """The grid with each blocking structure's bypass set to its value now."""
    b = np.asarray(bypass, dtype=float)[grid.struct_s] if grid.struct_s.size else np.zeros(0)
    own_right, own_left = grid.own_right.copy(), grid.own_left.copy()
    own_right[grid.struct_i] = b
    own_left[grid.struct_k] = b
    return replace(grid, own_right=own_right, own_left=own_left, struct_b=b)


class _Model:
    """One member's right-hand side: the turning of the shore, the transport, the budget."""

    def __init__(self, prep: Prepared, member: Member):
        if abs(member.dir_shift_deg) > prep.max_dir_shift_deg + 1e-9:
            raise ValueError(
                f"dir_shift_deg {member.dir_shift_deg} exceeds the {prep.max_dir_shift_deg} deg "
                "the climate was prepared for (prepare(..., max_dir_shift_deg=...))"
            )
        study, setting = prep.study, prep.setting
        t = setting.transects
        self.prep, self.setting, self.t = prep, setting, t
        self.n = n = len(t)
        self.d50 = study["sediment"]["d50_mm"]
        dc = prep.closure_depth_m if member.closure_depth_m is None else member.closure_depth_m
        self.dc = np.broadcast_to(np.asarray(dc, dtype=float), (n,))
        berm = study["model"]["berm_height_m"]
        self.berm = berm if member.berm_height_m is None else member.berm_height_m
        self.height = self.dc + self.berm
        self.ex = np.asarray(setting.excluded, bool)
        self.hard = np.asarray(setting.hard, bool)
        self.sign = np.where(np.asarray(setting.sign, dtype=float) < 0, -1.0, 1.0)
        self.st = setting.structures
        self.n_struct = 0 if self.st is None else len(self.st)
        fixed = np.zeros(0) if self.st is None else np.asarray(self.st.bypass, dtype=float)
        if member.bypass is not None and self.n_struct:
            fixed = np.full(self.n_struct, float(member.bypass))
        self.fixed = fixed
        self.factor = float(member.coefficient_factor)
        self.shift = float(member.dir_shift_deg)
        self.step_deg = prep.step_deg
        self.dx = np.asarray(t.spacing_m, dtype=float)
        self.x0, self.y0 = np.asarray(t.x_m, dtype=float), np.asarray(t.y_m, dtype=float)
        self.ux, self.uy = prep.unit_x, prep.unit_y

    def turning(self, y: np.ndarray, grid: _Grid) -> tuple[np.ndarray, np.ndarray]:
        """Turning of the shore since the start at each right face and each transect [deg].

        A face's turning is that of the line joining its two transects' shore points; a
        transect's, the mean of its inner faces' (one-sided at an open end and beside a
        structure: the shore does not turn across a structure).
        """
        x0, y0 = self.x0, self.y0
        px, py = x0 + y * self.ux, y0 + y * self.uy
        j = np.where(grid.inner, grid.nxt, 0)
        d0x, d0y = x0[j] - x0, y0[j] - y0
        dx_, dy_ = px[j] - px, py[j] - py
        cross = d0x * dy_ - d0y * dx_
        dot = d0x * dx_ + d0y * dy_
        face = np.where(grid.inner, -np.degrees(np.arctan2(cross, dot)), 0.0)
        left_inner = np.zeros(self.n, bool)
        left_inner[grid.nxt[grid.inner]] = True
        left = np.zeros(self.n)
        left[grid.nxt[grid.inner]] = face[grid.inner]
        count = grid.inner.astype(float) + left_inner
        with np.errstate(invalid="ignore", divide="ignore"):
            own = np.where(count > 0, (face + left) / count, 0.0)
        return face, own

    def net_transport(self, y: np.ndarray, grid: _Grid, law: _Law) -> np.ndarray:
        """Net transport of each transect on the shore ``y`` [m3/yr], + toward chainage."""
        _, own = self.turning(y, grid)
        env, _ = _read(law.envelope, law.f0 + own / self.step_deg)
        return np.where(self.ex, np.nan, self.sign * self.factor * (law.net0 + env - law.env0))

    def rhs(
        self, law: _Law, y: np.ndarray, grid: _Grid, bypass: np.ndarray, block: int | None
    ) -> dict[str, Any]:
        """The rate of change of the shoreline [m/yr] and its linearisation, at ``y``.

        ``block`` is the interval whose active depths grow the bypass (None: hold ``bypass``).
        Returns ``rate``, ``e_face`` and ``e_own`` (diffusivities of each face and of each
        transect's own transport [m3/yr per radian]), ``face_turn``, ``bypass``, ``grid``.
        """
        sign, factor, step_deg = self.sign, self.factor, self.step_deg
        face_turn, own_turn = self.turning(y, grid)
        # the transect's own transport, turned by its own angle
        pos_own = law.f0 + own_turn / step_deg
        env_t, slope_t = _read(law.envelope, pos_own)
        gross_t, _ = _read(law.gross, pos_own)
        net0 = sign * factor * law.net0
        gross0 = factor * law.gross0
        net_t = net0 + sign * factor * (env_t - law.env0)
        gross_t = np.maximum(factor * gross_t, np.abs(net_t))
        pos0, neg0 = 0.5 * (gross0 + net0), 0.5 * (net0 - gross0)
        pos_t, neg_t = 0.5 * (gross_t + net_t), 0.5 * (net_t - gross_t)
        # each face: both transects' tables read at the face's turning, averaged
        j = np.where(grid.inner, grid.nxt, 0)
        env_i, slope_i = _read(law.envelope, law.f0 + face_turn / step_deg)
        env_j, slope_j = _read(law.envelope, law.f0[j] + face_turn / step_deg, j)
        face_change = np.where(
            grid.inner,
            0.5 * sign * factor * ((env_i - law.env0) + (env_j - law.env0[j])),
            0.0,
        )
        # structures: the bypass grows as the updrift shoreline nears the tip (Hanson 1989)
        if self.n_struct and block is not None:  # (below 1: the blocking faces stay)
            bypass = _bypass(
                self.prep, self.setting, grid, block, y, self.fixed, pos_t, neg_t, self.d50
            )
            grid = _with_bypass(grid, bypass)
        t = self.t
        fb = face_budget(
            pos0,
            neg0,
            t.part_id,
            self.dx,
            t.part_closed,
            sigma_m=self.setting.sigma_m,
            excluded=self.ex,
            hard=self.hard,
            structure_face=None if self.st is None else self.st.face,
            structure_bypass=bypass if self.n_struct else None,
            pos_change=pos_t - pos0,
            neg_change=neg_t - neg0,
            face_change=face_change,
        )
        rate = np.where(self.ex, 0.0, -np.nan_to_num(fb.dqdx_m2_per_yr) / self.height)
        per_rad = 180.0 / math.pi / step_deg * factor
        return {
            "rate": rate,
            "e_face": np.where(grid.inner, -0.5 * (slope_i + slope_j) * per_rad, 0.0),
            "e_own": -slope_t * per_rad,
            "face_turn": face_turn,
            "bypass": bypass,
            "grid": grid,
        }


def initial_rate_m_per_yr(prep: Prepared, member: Member | None = None) -> np.ndarray:
    """The projection's rate of shoreline change at the start, for the record's mean climate.

    The shoreline of the start, the transport law of the whole record and the structures'
    fixed bypass: the budget of the rate run (:func:`shoreline.run.evaluate`), so the two agree
    at t = 0 (to the tables' node bound where the run evaluated some transects directly).
    NaN at excluded transects.
    """
    model = _Model(prep, member or Member())
    grid = _grid(model.setting, model.fixed)
    out = model.rhs(_law(prep, -1, model.shift), np.zeros(model.n), grid, model.fixed, None)
    return np.where(model.ex, np.nan, out["rate"])


def integrate(
    prep: Prepared,
    member: Member | None = None,
    *,
    nourish: bool = True,
    max_step_yr: float | None = None,
    progress: Callable[[int], None] | None = None,
) -> Trajectory:
    """Project the shoreline of one member through the horizon.

    Parameters
    ----------
    prep : Prepared
        The climate, from :func:`prepare`.
    member : Member, optional
        The member's settings; default the study's.
    nourish : bool
        Place the study's nourishments (False: the same projection without them).
    max_step_yr : float, optional
        Longest morphological step [yr]; default :data:`MAX_STEP_YR`.
    progress : callable, optional
        ``progress(steps)`` as steps are taken.

    Returns
    -------
    Trajectory
    """
    member = member or Member()
    model = _Model(prep, member)
    study, setting = prep.study, prep.setting
    p = study.projection
    n = model.n
    horizon = float(p["years"])
    ex = model.ex
    # sources
    bruun = np.where(ex | model.hard, 0.0, bruun_retreat_m(1.0, model.dc, model.berm, model.d50))
    level = _sea_level(p["sea_level_rise"], member.sea_level_factor)
    fills = _placements(study, setting, model.height) if nourish else []
    # time
    seed = p["seed"] if member.seed is None else member.seed
    duration_yr = prep.block_s / _YEAR_S
    sequence = interval_sequence(prep.labels, duration_yr, prep.mode, horizon, seed, prep.per_year)
    out_years = np.arange(0.0, horizon + 0.5)
    cuts = list(out_years) + [f["year"] for f in fills]
    blocks, starts, lengths = step_plan(sequence, cuts, max_step_yr or MAX_STEP_YR)
    y = np.zeros(n)
    shift_out = np.full((out_years.size, n), np.nan)
    q_out = np.full((out_years.size, n), np.nan)
    by_out = np.full((out_years.size, model.n_struct), np.nan)
    sea_out = np.array([level(v) for v in out_years])
    max_turn, held = 0.0, 0
    placed = [False] * len(fills)
    bypass = model.fixed.copy()
    grid = _grid(setting, bypass)
    mean_law = _law(prep, -1, model.shift)
    done = 0

    def record(slot: int, y: np.ndarray, bypass: np.ndarray) -> None:
        shift_out[slot] = np.where(ex, np.nan, y)
        q_out[slot] = model.net_transport(y, grid, mean_law)
        by_out[slot] = bypass

    def place(y: np.ndarray, until: float) -> np.ndarray:
        """Add the nourishments due by ``until`` (a fill at an output time is in it)."""
        for k, fill in enumerate(fills):
            if not placed[k] and fill["year"] <= until + 1e-9:
                y = y + fill["dy"]
                placed[k] = True
        return y

    y = place(y, 0.0)
    record(0, y, bypass)
    slot = 1
    for b, t0, dt in zip(blocks, starts, lengths, strict=True):
        y = place(y, t0)
        law = _law(prep, int(b), model.shift)
        out = model.rhs(law, y, grid, bypass, int(b))
        bypass, grid, face_turn = out["bypass"], out["grid"], out["face_turn"]
        turned = np.abs(face_turn[grid.inner])
        max_turn = max(max_turn, float(np.max(turned, initial=0.0)))
        held += int(np.count_nonzero(turned > MARGIN_DEG))
        y = y + _implicit_step(
            grid,
            out["e_face"],
            out["e_own"],
            face_turn,
            model.dx,
            model.height,
            ex,
            dt * out["rate"],
            dt,
        )
        level_step = level(t0 + dt) - level(t0)
        if level_step:
            y = y - level_step * bruun
        done += 1
        if progress is not None:
            progress(1)
        end = t0 + dt
        while slot < out_years.size and end >= out_years[slot] - 1e-9:
            y = place(y, out_years[slot])
            record(slot, y, bypass)
            slot += 1
    return Trajectory(
        years=out_years,
        shift_m=shift_out,
        q_net_m3_per_yr=q_out,
        bypass=by_out,
        sea_level_m=sea_out,
        steps=done,
        max_turn_deg=max_turn,
        held_faces=held,
    )


def _implicit_step(
    grid: _Grid,
    e_face: np.ndarray,
    e_own: np.ndarray,
    face_turn: np.ndarray,
    dx: np.ndarray,
    height: np.ndarray,
    ex: np.ndarray,
    explicit: np.ndarray,
    dt: float,
) -> np.ndarray:
    """Solve ``(I - dt L) dy = dt R`` for the step's change ``dy``.

    ``L`` is the three-point diffusion operator of the face diffusivities (flux form, so
    ``sum(width D L dy) = 0`` inside a segment). In the row of a transect whose own transport
    enters at a cut face (an open end, a structure), the coefficient of its one inner face is
    reduced by that own transport's diffusivity (times the structure's bypass), as its own
    flux responds to the same turning; never below zero.
    """
    n = dx.size
    i = np.flatnonzero(grid.inner)
    j = grid.nxt[i]
    c = np.clip(e_face[i], 0.0, None) * np.cos(np.radians(face_turn[i])) ** 2 / dx[i]
    # own transport at the other (cut) face of i or j
    lone_i = grid.own_left[i] > 0  # i's left face is cut: its own transport enters there
    lone_j = grid.own_right[j] > 0
    own_c_i = np.clip(e_own[i], 0.0, None) * grid.own_left[i] / dx[i]
    own_c_j = np.clip(e_own[j], 0.0, None) * grid.own_right[j] / dx[j]
    ci = np.where(lone_i, np.clip(c - own_c_i, 0.0, None), c)
    cj = np.where(lone_j, np.clip(c - own_c_j, 0.0, None), c)
    scale_i = dt / (height[i] * grid.width[i])
    scale_j = dt / (height[j] * grid.width[j])
    rows = np.concatenate([i, i, j, j])
    cols = np.concatenate([i, j, j, i])
    vals = np.concatenate([ci * scale_i, -ci * scale_i, cj * scale_j, -cj * scale_j])
    keep = ~(ex[rows] | ex[cols])
    matrix = scipy.sparse.coo_matrix((vals[keep], (rows[keep], cols[keep])), shape=(n, n)).tocsc()
    matrix = matrix + scipy.sparse.identity(n, format="csc")
    change = scipy.sparse.linalg.spsolve(matrix, explicit)
    return np.where(ex, 0.0, change)


def _bypass(prep, setting, grid, block, y, fixed, pos_t, neg_t, d50) -> np.ndarray:
    """Each structure's bypass share now: the study's, or Hanson's (1989) if larger."""
    st = setting.structures
    nxt = grid.nxt
    out = fixed.copy()
    for s in range(len(st)):  # structures (few)
        if fixed[s] >= 1.0:
            continue
        i = int(st.face[s])
        k = int(nxt[i]) if nxt[i] >= 0 else i
        depth = prep.active_depth_m[block, s]
        b_i = hanson_bypass(prep.tip_m[s] - y[i], depth[0], d50)
        b_k = hanson_bypass(prep.tip_m[s] - y[k], depth[1], d50)
        a_i, a_k = max(float(pos_t[i]), 0.0), max(float(-neg_t[k]), 0.0)
        grown = (b_i * a_i + b_k * a_k) / (a_i + a_k) if a_i + a_k > 0 else max(b_i, b_k)
        # below 1: at the tip the structure still pins the updrift shoreline, which passes on
        # all that arrives (a structure of bypass 1 would be no structure to face_budget)
        out[s] = max(fixed[s], min(float(grown), 1.0 - 1e-9))
    return out


def _sea_level(spec: tuple, factor: float) -> Callable[[float], float]:
    """The sea-level rise since the start as a function of years after the start [m]."""
    kind, value = spec
    if kind == "rate":
        rate = float(value) * factor
        return lambda t: rate * t
    years = np.r_[0.0, [a for a, _ in value]]
    metres = np.r_[0.0, [b for _, b in value]] * factor
    return lambda t: float(np.interp(t, years, metres))


def _placements(study, setting: Setting, height: np.ndarray) -> list[dict]:
    """Every nourishment as a change of the shoreline: a rectangle over the active height.

    Transect ``i`` of the fill's part gets ``V o_i / (sum_j o_j) / (D_i w_i)``, with ``o_i``
    the length of its cell within the stretch and ``w_i`` its cell width, so that
    ``sum(D_i w_i dy_i) = V`` exactly; excluded transects get none.

    Raises
    ------
    StudyError
        A stretch outside its shore part, or on no transect of the budget.
    """
    t = setting.transects
    out = []
    grid = _grid(setting, np.ones(0 if setting.structures is None else len(setting.structures)))
    for fill in study.nourishments:
        where = f"{study.path.name}: [nourishment {fill['name']!r}]"
        part = fill["part_id"]
        rows = np.flatnonzero(t.part_id == part)
        if rows.size == 0:
            parts = ", ".join(str(p) for p in np.unique(t.part_id)[:10])
            raise StudyError(
                f"{where} part_id = {part}: the coast has no shore part {part} with transects "
                f"(parts: {parts})"
            )
        ch = np.asarray(t.chainage_m, dtype=float)[rows]
        dx = float(t.spacing_m[rows[0]])
        ring = bool(t.part_closed[rows[0]])
        length = rows.size * dx if ring else 2.0 * ch[0] + (rows.size - 1) * dx
        lo_s, hi_s = fill["from_chainage_m"], fill["to_chainage_m"]
        if hi_s > length + 1.0:
            raise StudyError(
                f"{where} from_chainage_m = {lo_s:g} to to_chainage_m = {hi_s:g} lies outside "
                f"shore part {part} (chainage 0 to {length:.0f} m)"
            )
        lo, hi = ch - 0.5 * dx, ch + 0.5 * dx
        if not ring:  # the shore beyond the end transects belongs to them
            lo[0], hi[-1] = 0.0, length
        overlap = np.clip(np.minimum(hi, hi_s) - np.maximum(lo, lo_s), 0.0, None)
        if ring:
            for wrap in (-length, length):
                overlap += np.clip(
                    np.minimum(hi, hi_s + wrap) - np.maximum(lo, lo_s + wrap), 0.0, None
                )
        overlap = np.where(setting.excluded[rows], 0.0, overlap)
        if not overlap.sum() > 0:
            raise StudyError(
                f"{where} from_chainage_m = {lo_s:g} to to_chainage_m = {hi_s:g} covers no "
                f"transect of shore part {part} open to the budget"
            )
        dy = np.zeros(len(t))
        cell = grid.width[rows]
        dy[rows] = fill["volume_m3"] * overlap / overlap.sum() / (height[rows] * cell)
        share = np.zeros(len(t))
        share[rows] = np.minimum(overlap / cell, 1.0)
        out.append({**fill, "dy": dy, "share": share})
    return out


# --------------------------------------------------------------------------------------------
# A scenario's projection
# --------------------------------------------------------------------------------------------


def project(
    study,
    setting: Setting,
    climate: WaveClimate,
    closure_depth_m: np.ndarray,
    progress: Callable | None = None,
) -> Projection:
    """The deterministic projection of one climate, with everything its outputs need.

    ``progress(total, n_transects)`` is the run's progress factory: one bar for the
    tabulation and the steps (and the steps of the projection without nourishments, when
    there are nourishments to follow).
    """
    p = study.projection
    t = setting.transects
    n = len(t)
    tick = None
    if progress is not None:
        horizon_steps = int(math.ceil(p["years"] / MAX_STEP_YR)) + 12 * p["years"]
        runs = 2 if study.nourishments else 1
        tick = progress(climate.n_steps + runs * horizon_steps, n)
    t0 = time.perf_counter()
    prep = prepare(study, setting, climate, closure_depth_m, progress=tick)
    trajectory = integrate(prep, progress=tick)
    warnings: list[str] = []
    fills = []
    if study.nourishments:
        background = integrate(prep, nourish=False, progress=tick)
        height = prep.closure_depth_m + study["model"]["berm_height_m"]
        placed = _placements(study, setting, height)
        grid = _grid(setting, np.ones(0 if setting.structures is None else len(setting.structures)))
        volume = grid.width * height
        for fill in placed:
            retained = {}
            for year in p["report_years"]:
                if year < fill["year"]:
                    retained[str(year)] = None
                    continue
                extra = trajectory.shift_m[year] - background.shift_m[year]
                kept = float(np.nansum(extra * volume * fill["share"]))
                retained[str(year)] = kept / fill["volume_m3"]
            fills.append(
                {
                    k: fill[k]
                    for k in ("name", "part_id", "from_chainage_m", "to_chainage_m", "volume_m3")
                }
                | {"year": fill["year"], "retained_fraction": retained}
            )
    if trajectory.held_faces:
        warnings.append(
            f"[projection] the shore turned more than {MARGIN_DEG:g} deg from its initial "
            f"normal at {trajectory.held_faces} face-steps (largest {trajectory.max_turn_deg:.0f} "
            "deg): there the transport was held at its value for that turning"
        )
    live = ~(setting.excluded | setting.hard) & np.isfinite(t.normal_az_deg)
    uphill = _law(prep, -1, 0.0).uphill & live
    if uphill.sum() > 0.05 * max(int(live.sum()), 1):
        warnings.append(
            f"[projection] at {int(uphill.sum())} of {int(live.sum())} transects the record's "
            "net transport grows as the shore turns toward the waves (waves far off the "
            "normal): the one-line equation would be unstable there, and the projection holds "
            "it (no diffusion), so the shore there follows its initial rate"
        )
    d50 = study["sediment"]["d50_mm"]
    width = float(np.nanmedian(profile.surf_zone_width_m(prep.closure_depth_m, d50)))
    final = trajectory.shift_m[-1]
    far = np.abs(np.nan_to_num(final)) > width
    if far.any():
        k = int(np.nanargmax(np.abs(np.nan_to_num(final))))
        warnings.append(
            f"[projection] the shoreline moved farther than the width of the active profile "
            f"({width:.0f} m) at {int(far.sum())} transects (largest {final[k]:+.0f} m at part "
            f"{int(t.part_id[k])}, chainage {t.chainage_m[k] / 1000:.2f} km): far beyond what a "
            "one-line screening can say; read such reaches as unstable, not as positions"
        )
    if prep.mode == "repeat" and climate.duration_s.sum() < WHOLE_YEAR_SHARE * _YEAR_S:
        warnings.append(
            "[projection] the wave record is shorter than a year: its mean transport stands "
            "for every year of the projection (no seasons)"
        )
    report = list(p["report_years"])
    shift_r = np.nan_to_num(trajectory.shift_m[report])
    xr = t.x_m[None, :] + shift_r * prep.unit_x[None, :]
    yr = t.y_m[None, :] + shift_r * prep.unit_y[None, :]
    columns = {f"shift_{year}yr_m": trajectory.shift_m[year] for year in report}
    bruun = (
        -np.where(
            setting.excluded | setting.hard,
            0.0,
            bruun_retreat_m(
                1.0,
                prep.closure_depth_m,
                study["model"]["berm_height_m"],
                study["sediment"]["d50_mm"],
            ),
        )[None, :]
        * trajectory.sea_level_m[:, None]
    )
    setback = None
    if p["setback_m"] is not None:
        dx = np.asarray(t.spacing_m, dtype=float)
        setback = {"setback_m": p["setback_m"], "years": {}}
        for year in report:
            beyond = trajectory.shift_m[year] <= -p["setback_m"]
            setback["years"][str(year)] = {
                "transects": int(np.count_nonzero(beyond)),
                "length_m": float(np.sum(dx[beyond])),
            }
    settings = {
        key: p[key]
        for key in ("years", "report_years", "start_year", "climate", "seed", "setback_m")
    } | {
        "sea_level_rise": _sea_level_text(p["sea_level_rise"]),
        "record_years": prep.record_years,
        "intervals": int(prep.labels.size),
        "scheme": "linearly implicit Euler (W-method), staggered one-line grid",
        "max_step_yr": MAX_STEP_YR,
        "steps": trajectory.steps,
        "margin_deg": MARGIN_DEG,
        "max_turn_deg": trajectory.max_turn_deg,
        "seconds": round(time.perf_counter() - t0, 3),
    }
    return Projection(
        settings=settings,
        trajectory=trajectory,
        report_years=report,
        x_m=xr,
        y_m=yr,
        columns=columns,
        nourishments=fills,
        bruun_retreat_m=bruun,
        setback=setback,
        warnings=warnings,
        prepared=prep,
    )


def _sea_level_text(spec: tuple) -> dict:
    kind, value = spec
    if kind == "rate":
        return {"m_per_yr": value}
    return {"m_at_years_after_start": {f"{a:g}": b for a, b in value}}


def attach(result, study, setting: Setting, climate: WaveClimate, progress=None) -> list[str]:
    """Project a scenario if the study asks for it: set ``result.projection``, add columns.

    Does nothing without ``[projection]``, for storm events and for climates the projection's
    ``scenarios`` leaves out. Returns the projection's warnings.
    """
    p = study.projection
    if p is None or result.name not in p["scenarios"] or "shoreline_shift_m" in result.columns:
        return []
    proj = project(study, setting, climate, result.closure_depth_m, progress)
    result.projection = proj
    result.columns |= proj.columns
    return [w.replace("[projection]", f"[{result.name}] projection:") for w in proj.warnings]


def shore_lines(projection: Projection, transects, excluded: np.ndarray) -> list[dict]:
    """The projected shorelines: per report year and shore part, the runs of moved points.

    Returns dicts ``{"year", "part_id", "lines": [array (k, 2), ...]}`` in the working CRS; a
    closed part gives a closed line; excluded transects break a line.
    """
    out = []
    part_id = np.asarray(transects.part_id)
    ok = ~np.asarray(excluded, bool) & np.isfinite(transects.normal_az_deg)
    for r, year in enumerate(projection.report_years):
        for a, b in part_slices(part_id):
            xy = np.c_[projection.x_m[r, a:b], projection.y_m[r, a:b]]
            good = ok[a:b]
            runs = np.split(np.arange(b - a), np.flatnonzero(np.diff(good.astype(int))) + 1)
            lines = [xy[run] for run in runs if good[run[0]] and run.size >= 2]
            if bool(transects.part_closed[a]) and good.all() and lines:
                lines = [np.vstack([lines[0], lines[0][:1]])]
            out.append({"year": int(year), "part_id": int(part_id[a]), "lines": lines})
    return out
