"""The time reduction by tables: per wave point, sums over time on normal-azimuth nodes.

Every quantity a run keeps from a wave climate is a sum over time steps of a function of the
offshore condition (height, period, direction, input depth) and of the angle between the wave
direction and the transect's seaward normal, weighted by the share of the waves that reaches
the transect from that direction (sheltering). So, per wave point, the sums are *tabulated*
once on a grid of normal azimuths ("nodes", ``angle_step_deg`` apart, spanning the normals of
that point's transects plus a margin) and on the direction sectors of the sheltering grid:

    S_q(node, sector) = sum over the steps whose direction falls in the sector of
                        duration_s x q(Hs, Tp, dir, depth; normal = node)

and every transect reads its sums off the tables: with its normal between nodes a and b
(fraction f of the way) and its weight W[sector] in [0, 1] per direction sector,

    Q = sum over sectors of W[sector] ((1 - f) S(a, sector) + f S(b, sector)).

The time sum costs nodes x steps per wave point (streamed in chunks of the record); each
transect then costs 2 x sectors. Interpolation is linear, so summing over time and
interpolating commute: a transect gets exactly the linear interpolation, in its normal, of
what the direct per-step evaluation would give at the two nodes. The error against the direct
evaluation at the transect's own normal is the node bound measured in ``docs/methods.md``.

Conventions
-----------
- The tables hold the sums for a transect whose sea is on the *right* of increasing chainage
  (``sign = +1``, angle = wrap(dir - normal)). A transect with the sea on its left sees the
  angle negated. The breaking solution is odd in the angle (same height and depth, negated
  angle at breaking: :func:`shoreline.waves.breaking` is written with ``sin`` and ``copysign``,
  so the symmetry is exact in floating point) and so is every transport formula. Hence for
  ``sign = -1``: net transport and the angle sum change sign, gross, open time, broken time,
  height and depth sums stay, and the positive part becomes ``pos - net`` (because
  ``max(-q, 0) = max(q, 0) - q``). One table serves both signs.
- Sectors: with ``m`` sectors, sector ``j`` is centred on ``j * 360 / m`` degrees and a step
  falls in the sector of its nearest ray, the rule of :meth:`shoreline.exposure.Exposure.is_open`
  (``exposure.open.astype(float)`` is the weight table equivalent to the run's boolean test).
  Only the sectors that hold any step are stored.
- Waves from land (``|angle| >= 90`` degrees) move no sand and do not reach the shore; nor do
  steps the breaking solution cannot carry (NaN input, no waves).
- Two sums are formed after summing the others: the positive part is (gross + net) / 2, as
  ``max(q, 0) = (|q| + q) / 2``, and the depth sum is the height sum over the breaker index,
  as Hb = gamma db at breaking.
- :func:`tabulated_reductions` solves a wave point's transects directly, without tables, where
  tables would not pay or the record is short (a storm): see its Notes.

Quantities (keys of :attr:`Tables.sums`; sums over time, so each carries ``x s``):

=====================  ==========================================================  ========
``q_<formula>_m3``     sum of duration x transport of each formula                  [m3]
``q_gross_m3``         sum of duration x abs(transport), primary formula            [m3]
``q_pos_m3``           sum of duration x max(transport, 0), primary formula         [m3]
``open_s``             sum of duration x weight of the steps that reach the shore   [s]
``broken_s``           the same, for steps already broken at the input depth        [s]
``hb_m_s``             sum of duration x weight x breaker height                    [m s]
``db_m_s``             sum of duration x weight x breaking depth                    [m s]
``alpha_b_deg_s``      sum of duration x weight x angle at breaking                 [deg s]
=====================  ==========================================================  ========

For the later subsystems (see ``docs/methods.md``, "Tables over normal-azimuth nodes"):

- a direction bias ``delta`` (every direction turned by ``delta``) is a shift of the node grid:
  ``Tables.interpolate(..., dir_shift_deg=delta)`` reads the tables at ``normal - delta`` and
  turns the sector weights by ``delta`` rounded to whole sectors (exact for whole sectors);
  tabulate with ``margin_nodes`` covering the largest bias;
- a transport coefficient (CERC K, the Kamphuis coefficient) is a scale of the ``q_*`` sums;
- resampling the record in blocks: ``tabulate(..., blocks=labels)`` gives tables with a
  leading block axis, and :meth:`Tables.combine` sums them with a weight per block (how many
  times each block is drawn);
- a forward projection: blocks = month (or any short interval) of each step; the interpolated
  sums then have a leading block axis too.

References
----------
The physics evaluated at the nodes is that of :mod:`shoreline.waves` (linear refraction and
shoaling to depth-limited breaking, CEM 2002 Part II) and :mod:`shoreline.transport` (CERC, CEM
III-2 Eq. III-2-7; Kamphuis 1991); tabulating it over nodes and interpolating linearly is this
project's own arrangement of the sums.
"""

from __future__ import annotations

import functools
import math
import os
from collections.abc import Callable, Iterable, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from shoreline import profile, transport, waves
from shoreline.climate import RecordArray, WaveClimate

if TYPE_CHECKING:
    from shoreline.run import Reductions

# run.py holds Reductions and wrap_deg and will import this module: they are imported inside
# the functions that use them, so that neither module needs the other while it loads.

__all__ = [
    "Physics",
    "Tables",
    "direction_sector",
    "map_in_process",
    "reductions_from_sums",
    "tabulate",
    "tabulated_reductions",
]

#: Node-steps (or transect-steps on the direct path) evaluated per chunk of the record.
CHUNK_ELEMENTS = 1 << 15
#: Time steps per task: the record is cut into time chunks of this many steps, at the same
#: boundaries in-process and on a cluster, and the chunk sums are added in chunk order, so
#: the tables are the same floats wherever the tasks run. A fixed number, never the file's
#: own chunking or the number of workers.
TIME_CHUNK_STEPS = 1 << 15
#: Wave points of a record on disk summed by one task (read together).
POINTS_PER_TASK = 8
#: A mapper: ``mapper(func, tasks)`` yields ``func(task)`` for every task, in the tasks' order
#: (:func:`map_in_process`; :class:`shoreline.distributed.DaskMapper`).
Mapper = Callable[[Callable[[Any], Any], Sequence[Any]], Iterable[Any]]
#: A wave point whose transects x steps are no more than this is solved directly: tables would
#: save under a second there, and the direct path is exact (see tabulated_reductions, Notes).
DIRECT_TRANSECT_STEPS = 1 << 21
#: Share of node-steps from the sea above which a chunk is solved on its whole grid.
_FULL_GRID_SHARE = 0.9
#: Transects read off the tables per matrix product (bounds the gathered sector weights).
_ROWS_PER_PRODUCT = 4096
#: Quantities whose sum is the same whichever side of the chainage the sea is on (module notes).
_EVEN = ("q_gross_m3", "open_s", "broken_s", "hb_m_s", "db_m_s")
#: The sums kept besides the net transport of every formula.
_OTHER_QUANTITIES = (
    "q_gross_m3",
    "q_pos_m3",
    "open_s",
    "broken_s",
    "hb_m_s",
    "db_m_s",
    "alpha_b_deg_s",
)


@dataclass(frozen=True)
class Physics:
    """The settings of the chain from offshore waves to transport, as in transport_reductions.

    Attributes
    ----------
    formulas : tuple of str
        Transport formulas to sum (names of :func:`shoreline.transport.formula_names`).
    primary : str
        The formula whose gross and positive parts are kept; one of ``formulas``.
    breaker_index : float
        gamma = Hb / db [-].
    breaking_method : str
        ``"exact"`` or ``"explicit"`` (:func:`shoreline.waves.breaking`).
    cerc_k : float
        CERC coefficient for significant height [-].
    kamphuis_coefficient : float
        Leading coefficient of Kamphuis (1991) [-].
    d50_mm : float
        Median grain size [mm].
    slope : float or None
        Beach slope [-]; None takes it per step from the breaking depth
        (:func:`shoreline.profile.breaker_zone_slope`).
    water_density_kg_m3, sediment_density_kg_m3 : float
        Densities [kg/m3].
    porosity : float
        Porosity of the deposited sand [-].
    """

    formulas: tuple[str, ...]
    primary: str
    breaker_index: float
    breaking_method: str
    cerc_k: float
    kamphuis_coefficient: float
    d50_mm: float
    slope: float | None
    water_density_kg_m3: float
    sediment_density_kg_m3: float
    porosity: float

    def __post_init__(self):
        object.__setattr__(self, "formulas", tuple(self.formulas))
        unknown = [f for f in self.formulas if f not in transport.FORMULAS]
        if unknown or not self.formulas:
            raise ValueError(
                f"formulas {list(self.formulas)!r}: expected one or more of "
                f"{list(transport.formula_names())}"
            )
        if self.primary not in self.formulas:
            raise ValueError(f"primary {self.primary!r} is not one of {list(self.formulas)}")
        if self.breaking_method not in waves.BREAKING_METHODS:
            raise ValueError(
                f"breaking_method {self.breaking_method!r}: expected one of "
                f"{list(waves.BREAKING_METHODS)}"
            )

    @property
    def quantities(self) -> tuple[str, ...]:
        """The names of the summed quantities, in a fixed order."""
        nets = tuple(f"q_{name}_m3" for name in self.formulas)
        return (*nets, *_OTHER_QUANTITIES)


def direction_sector(dir_deg: np.ndarray, n_sectors: int) -> np.ndarray:
    """Sector of each direction on a grid of ``n_sectors``; -1 for NaN.

    Sector ``j`` is centred on ``j * 360 / n_sectors`` degrees and a direction falls in the
    sector of its nearest centre: the rule of :meth:`shoreline.exposure.Exposure.is_open`,
    with the same arithmetic, so both put every direction in the same sector.

    Examples
    --------
    >>> direction_sector(np.array([0.4, 0.6, 359.6, np.nan]), 360).tolist()
    [0, 1, 0, -1]
    """
    d = np.asarray(dir_deg, dtype=float)
    ok = np.isfinite(d)
    width = 360.0 / int(n_sectors)
    k = np.rint(np.where(ok, d, 0.0) / width).astype(np.int64) % int(n_sectors)
    return np.where(ok, k, -1)


def _evaluate(
    hs: np.ndarray,
    tp: np.ndarray,
    angle: np.ndarray,
    depth: float | np.ndarray,
    weight_s: np.ndarray,
    ph: Physics,
) -> dict[str, np.ndarray]:
    """Per-element contributions (weight x quantity) of arrays of elements that broadcast.

    ``weight_s`` is each element's duration x sector weight [s]. Elements the breaking
    solution cannot carry (waves from land, no waves) contribute zero. Returns the summed
    quantities except those derived after summing (:func:`_derive`); where every element
    reaches the shore and ``weight_s`` has one row, ``open_s`` and ``broken_s`` (which do not
    depend on the angle then) keep that one row.
    """
    hb, db, ab, broken = waves.breaking(
        hs,
        tp,
        angle,
        depth_m=depth,
        breaker_index=ph.breaker_index,
        method=ph.breaking_method,
        full_output=True,
    )
    reach = np.isfinite(hb)
    every = bool(reach.all())  # the usual case: skip the masking passes
    w = weight_s if every else np.where(reach, weight_s, 0.0)
    if not every:
        miss = ~reach
        for values in (hb, db, ab):
            values[miss] = 0.0
    out: dict[str, np.ndarray] = {}
    with np.errstate(invalid="ignore", divide="ignore"):
        beach_slope = (
            ph.slope if ph.slope is not None else profile.breaker_zone_slope(db, ph.d50_mm)
        )
        for name in ph.formulas:
            q = transport.longshore_transport(
                name,
                hb_m=hb,
                tp_s=tp,
                alpha_b_deg=ab,
                slope=beach_slope,
                d50_mm=ph.d50_mm,
                breaker_index=ph.breaker_index,
                cerc_k=ph.cerc_k,
                kamphuis_coefficient=ph.kamphuis_coefficient,
                water_density_kg_m3=ph.water_density_kg_m3,
                sediment_density_kg_m3=ph.sediment_density_kg_m3,
                porosity=ph.porosity,
            )
            if not every:
                q = np.where(reach, q, 0.0)
            q *= w
            out[f"q_{name}_m3"] = q
            if name == ph.primary:
                out["q_gross_m3"] = np.abs(q)  # w >= 0
    if every and np.ndim(w) == 2 and np.shape(w)[0] == 1 < reach.shape[0]:
        out["open_s"] = w  # every node of a step: one row serves all
        out["broken_s"] = np.where(
            broken[:1], w, 0.0
        )  # broken at input: the step's, not the angle's
    else:
        w = np.broadcast_to(w, reach.shape)
        out["open_s"] = np.array(w)
        out["broken_s"] = np.where(broken, w, 0.0)
    hb *= w
    ab *= w
    out["hb_m_s"] = hb
    out["alpha_b_deg_s"] = ab
    return out


def _raw(names: Sequence[str], ph: Physics) -> tuple[str, ...]:
    """The quantities to sum from elements to give ``names`` (see :func:`_derive`)."""
    need = set(names)
    if "q_pos_m3" in need:
        need |= {"q_gross_m3", f"q_{ph.primary}_m3"}
    if "db_m_s" in need:
        need.add("hb_m_s")
    return tuple(q for q in ph.quantities if q in need and q not in ("q_pos_m3", "db_m_s"))


def _derive(sums: dict[str, np.ndarray], names: Sequence[str], ph: Physics) -> dict:
    """Add the sums that follow from others, keep ``names``.

    max(q, 0) = (|q| + q) / 2, so the positive part is (gross + net) / 2; and at breaking
    Hb = gamma db (the breaking criterion, also for waves broken at the input depth), so the
    depth sum is the height sum over gamma.
    """
    if "q_pos_m3" in names:
        sums["q_pos_m3"] = 0.5 * (sums["q_gross_m3"] + sums[f"q_{ph.primary}_m3"])
    if "db_m_s" in names:
        sums["db_m_s"] = sums["hb_m_s"] / ph.breaker_index
    return {q: sums[q] for q in names}


@dataclass(frozen=True)
class Tables:
    """Sums over time at one wave point, per normal-azimuth node and direction sector.

    Attributes
    ----------
    node0_deg : float
        Azimuth of the first node [deg]; node ``k`` is at ``node0_deg + k * step_deg`` (not
        wrapped: a grid may run past 360).
    step_deg : float
        Node spacing [deg].
    n_sectors : int
        Sectors of the direction grid the weights are given on (``m``).
    sectors : ndarray of int, shape (k,)
        The sectors (of ``0 .. m-1``) that hold any step; the others sum to zero everywhere.
    sums : dict of str to ndarray
        Quantity -> sums of shape (nodes, k), or (blocks, nodes, k) with blocks; see the module
        notes for names and units. For the sea on the right of increasing chainage.
    duration_s : ndarray
        Time the record (shape ()) or each block (shape (blocks,)) stands for [s], including
        steps with no direction.
    blocks : ndarray or None
        The block labels, in the order of the leading axis; None without blocks.
    primary : str
        The formula of ``q_gross_m3`` and ``q_pos_m3``.
    """

    node0_deg: float
    step_deg: float
    n_sectors: int
    sectors: np.ndarray
    sums: dict[str, np.ndarray]
    duration_s: np.ndarray
    blocks: np.ndarray | None
    primary: str

    @property
    def n_nodes(self) -> int:
        """Number of nodes."""
        return int(next(iter(self.sums.values())).shape[-2])

    @property
    def nodes_deg(self) -> np.ndarray:
        """Node azimuths [deg] (not wrapped)."""
        return self.node0_deg + self.step_deg * np.arange(self.n_nodes)

    def combine(self, weights: np.ndarray) -> Tables:
        """Tables without the block axis: ``sum_b weights[b] * tables[b]``.

        ``weights`` (one per block) are e.g. how many times each block is drawn when the record
        is resampled in blocks; all ones gives the tables of the whole record.
        """
        if self.blocks is None:
            raise ValueError("these tables have no block axis; tabulate with blocks=...")
        w = np.asarray(weights, dtype=float)
        if w.shape != self.duration_s.shape:
            raise ValueError(f"weights must have one value per block ({self.duration_s.size})")
        sums = {k: np.tensordot(w, v, axes=(0, 0)) for k, v in self.sums.items()}
        return Tables(
            self.node0_deg,
            self.step_deg,
            self.n_sectors,
            self.sectors,
            sums,
            np.asarray(w @ self.duration_s),
            None,
            self.primary,
        )

    def interpolate(
        self,
        normal_az_deg: np.ndarray,
        sign: np.ndarray | float = 1.0,
        sector_weight: np.ndarray | None = None,
        dir_shift_deg: float = 0.0,
    ) -> dict[str, np.ndarray]:
        """Sums per transect, read off the tables (linear in the normal, weighted by sector).

        Parameters
        ----------
        normal_az_deg : ndarray of shape (n,)
            Seaward normals [deg, true north]; NaN gives zero sums (nothing reaches it).
        sign : ndarray of shape (n,) or float
            +1 where the sea is on the right of increasing chainage, -1 where on the left
            (:func:`shoreline.run.chainage_sign`).
        sector_weight : ndarray of shape (n, n_sectors), optional
            Share of the waves from each direction sector that reaches each transect, in
            [0, 1]; None for all ones.
        dir_shift_deg : float
            Read the sums of the record with every direction turned by this angle [deg]: the
            normals move by ``-dir_shift_deg`` (within the tables' margin) and the sector
            weights by the shift rounded to whole sectors.

        Returns
        -------
        dict of str to ndarray
            The quantities of :attr:`sums`, shape (n,) or (blocks, n), with the chainage sign
            applied (transport positive toward increasing chainage).

        Raises
        ------
        ValueError
            If a normal (after the shift) lies outside the tabulated nodes.
        """
        normal = np.asarray(normal_az_deg, dtype=float).reshape(-1) - float(dir_shift_deg)
        n = normal.size
        sgn = np.broadcast_to(np.asarray(sign, dtype=float), (n,))
        tol = 1e-6 * self.step_deg  # a normal an ulp below the first node is on it
        pos = np.maximum(np.mod(normal - self.node0_deg + tol, 360.0) - tol, 0.0) / self.step_deg
        finite = np.isfinite(pos)
        last = self.n_nodes - 1
        if np.any(pos[finite] > last + 1e-6):
            worst = float(normal[finite][np.argmax(pos[finite])] % 360.0)
            raise ValueError(
                f"normal {worst:.3f} deg lies outside the tabulated nodes "
                f"({self.node0_deg % 360.0:.3f} to "
                f"{(self.node0_deg + last * self.step_deg) % 360.0:.3f} deg); tabulate over "
                "these normals or with a larger margin_nodes"
            )
        i = np.clip(np.floor(np.where(finite, pos, 0.0)), 0, last - 1).astype(np.intp)
        f = np.where(finite, pos - i, 0.0)
        k = self.sectors.size
        cols = None
        if sector_weight is not None:
            w_all = np.asarray(sector_weight, dtype=float)
            if w_all.shape != (n, self.n_sectors):
                raise ValueError(
                    f"sector_weight must have shape (n_transects, n_sectors) = "
                    f"({n}, {self.n_sectors}); got {w_all.shape}"
                )
            turn = round(float(dir_shift_deg) / (360.0 / self.n_sectors))
            cols = (self.sectors + turn) % self.n_sectors
        names = list(self.sums)
        blocked = self.blocks is not None
        stack = np.stack([self.sums[q] for q in names], axis=-1)  # ([B,] nodes, k, nq)
        if not blocked:
            stack = stack[None]
        lead = stack.shape[0]
        out = np.zeros((lead, n, len(names)))
        rows_all = np.flatnonzero(finite)
        order = rows_all[np.argsort(i[rows_all], kind="stable")]
        bounds = np.searchsorted(i[order], np.arange(last + 1))
        for node in np.unique(i[order]):  # one matrix product per node, not per transect
            group = order[bounds[node] : bounds[node + 1]]
            for start in range(0, group.size, _ROWS_PER_PRODUCT):
                rows = group[start : start + _ROWS_PER_PRODUCT]
                w_rows = np.ones((rows.size, k)) if cols is None else w_all[np.ix_(rows, cols)]
                low = w_rows @ stack[:, node]  # (lead, rows, nq)
                high = w_rows @ stack[:, node + 1]
                fr = f[rows][None, :, None]
                out[:, rows] = low + fr * (high - low)
        result = {q: out[..., j] for j, q in enumerate(names)}
        left = sgn < 0
        if left.any():
            net = f"q_{self.primary}_m3"
            if "q_pos_m3" in result:
                result["q_pos_m3"][:, left] -= result[net][:, left]
            for q in names:
                if q not in _EVEN and q != "q_pos_m3":
                    result[q][:, left] *= -1.0
        return {q: v if blocked else v[0] for q, v in result.items()}


def _node_grid(normal_deg: np.ndarray, step_deg: float, margin_nodes: int) -> tuple[float, int]:
    """First node azimuth and node count spanning the normals (shortest arc) plus a margin."""
    a = np.sort(np.mod(normal_deg[np.isfinite(normal_deg)], 360.0))
    gaps = np.diff(np.r_[a, a[0] + 360.0])
    j = int(np.argmax(gaps))
    start = float(a[(j + 1) % a.size])
    span = 360.0 - float(gaps[j])
    k_lo = math.floor(start / step_deg) - margin_nodes
    k_hi = math.ceil((start + span) / step_deg) + margin_nodes
    return k_lo * step_deg, max(k_hi - k_lo + 1, 2)


def _point_depth(climate: WaveClimate, point: int | None) -> float:
    """The input depth of one wave point [m]."""
    depth = np.asarray(climate.depth_m, dtype=float)
    if climate.hs_m.ndim == 1 or depth.ndim == 0:
        return float(depth.reshape(-1)[0])
    return float(depth[0 if point is None else int(point)])


class _Slice:
    """The values of some wave points over one time chunk of one record variable.

    Made where the tasks are planned and loaded where a task runs: an in-memory array is cut
    there (only the slice is pickled to a worker), a record on disk
    (:class:`shoreline.climate.RecordArray`) is read where the task runs.
    """

    def __init__(self, values, points: tuple[int, ...] | None, steps: slice):
        self.points, self.steps = points, steps
        self.lazy = isinstance(values, RecordArray)
        if self.lazy:
            self.values = values
        elif points is None:  # a record of one point
            self.values = np.asarray(values)[steps][None, :]
        else:
            self.values = np.asarray(values)[list(points), steps]

    def load(self) -> np.ndarray:
        """Shape (points, steps of the chunk)."""
        if not self.lazy:
            return self.values
        if self.points is None:
            return np.atleast_2d(self.values[self.steps])
        lo, hi = min(self.points), max(self.points) + 1
        block = self.values[lo:hi, self.steps]
        return block[[q - lo for q in self.points]]


@dataclass(frozen=True)
class _TableTask:
    """One task of the time reduction: the table sums of some wave points over one time chunk.

    The record is cut into chunks of :data:`TIME_CHUNK_STEPS` steps at fixed boundaries, the
    same wherever the task runs, so the partial sums and their order of summation (chunk after
    chunk) are the same floats in-process and on a cluster.
    """

    nodes: tuple[np.ndarray, ...]  # per wave point of the task
    depths: tuple[float, ...]
    allowed: tuple[np.ndarray | None, ...]
    data: tuple[_Slice, _Slice, _Slice]  # hs, tp, dir
    duration_s: np.ndarray
    block_of: np.ndarray


@dataclass(frozen=True)
class _TableSettings:
    """What every task of one reduction shares (pickled once per task, small)."""

    physics: Physics
    n_sectors: int
    n_blocks: int
    raw: tuple[str, ...]
    chunk_steps: int | None
    threads: int


def _table_task(settings: _TableSettings, task: _TableTask) -> list:
    """Run one task: ``[(used_sectors, sums), ...]``, one pair per wave point of the task."""
    hs, tp, dr = (piece.load() for piece in task.data)
    out = []
    for i, nodes in enumerate(task.nodes):
        out.append(
            _chunk_sums(
                hs[i], tp[i], dr[i], task.duration_s, task.block_of, nodes, task.depths[i],
                task.allowed[i], settings,
            )
        )  # fmt: skip
    return out


def _chunk_sums(hs, tp, dr, duration, block_of, nodes, depth, allowed, settings: _TableSettings):
    """The table sums of one wave point over one time chunk.

    Returns ``(used, sums)``: the sectors that hold any step of the chunk and, per quantity,
    the sums of shape (nodes, blocks x used) (column ``block * used.size + j``).
    """
    physics, m, n_blocks, raw = (
        settings.physics,
        settings.n_sectors,
        settings.n_blocks,
        settings.raw,
    )
    n_nodes = nodes.size
    sector = direction_sector(dr, m)
    ok = sector >= 0
    if allowed is not None:
        ok &= np.isin(sector, allowed)
    keep = np.flatnonzero(ok)
    used = np.unique(sector[keep])
    key = block_of[keep] * used.size + np.searchsorted(used, sector[keep])
    order = np.argsort(key, kind="stable")
    steps_idx, key = keep[order], key[order]
    hs_s, tp_s, dr_s, w_s = hs[steps_idx], tp[steps_idx], dr[steps_idx], duration[steps_idx]
    n_keys = n_blocks * used.size
    sums = {q: np.zeros((n_nodes, n_keys)) for q in raw}
    size = int(settings.chunk_steps) if settings.chunk_steps else max(1, CHUNK_ELEMENTS // n_nodes)
    from shoreline.run import wrap_deg

    def chunk(lo: int) -> tuple[int, dict[str, np.ndarray] | None]:
        sl = slice(lo, lo + size)
        keys = key[sl]
        k_first, k_count = int(keys[0]), int(keys[-1] - keys[0]) + 1
        angle = wrap_deg(dr_s[sl][None, :] - nodes[:, None])
        inside = np.abs(angle) < 90.0
        n_inside = int(np.count_nonzero(inside))
        if n_inside == 0:
            return k_first, None
        if n_inside >= _FULL_GRID_SHARE * inside.size:
            # (nearly) every node-step comes from the sea: solve the whole grid (no gathers),
            # then sum each key's run of steps (the steps are sorted by key)
            w = w_s[sl][None, :]
            values = _evaluate(hs_s[sl][None, :], tp_s[sl][None, :], angle, depth, w, physics)
            first = np.r_[0, np.flatnonzero(np.diff(keys)) + 1]  # where each key's run starts
            cols = keys[first] - k_first
            out = {}
            for q in raw:
                part = np.zeros((n_nodes, k_count))
                part[:, cols] = np.add.reduceat(values[q], first, axis=1)
                out[q] = part
            return k_first, out
        node_i, step_i = np.nonzero(inside)  # drop the waves from land before solving
        values = _evaluate(
            hs_s[sl][step_i],
            tp_s[sl][step_i],
            angle[node_i, step_i],
            depth,
            w_s[sl][step_i],
            physics,
        )
        group = node_i * k_count + (keys[step_i] - k_first)
        return k_first, {
            q: np.bincount(group, weights=values[q], minlength=n_nodes * k_count).reshape(
                n_nodes, k_count
            )
            for q in raw
        }

    def add(parts) -> None:
        for k_first, part in parts:  # in order: the same sums however many threads
            if part is not None:
                k_count = next(iter(part.values())).shape[1]
                for q in raw:
                    sums[q][:, k_first : k_first + k_count] += part[q]

    starts = range(0, steps_idx.size, size)
    if settings.threads > 1 and len(starts) > 1:
        with ThreadPoolExecutor(max_workers=settings.threads) as pool:
            add(pool.map(chunk, starts))
    else:
        add(map(chunk, starts))
    return used, sums


class _TableSum:
    """The sum of a wave point's chunk sums, chunk after chunk (one fixed order)."""

    def __init__(self, n_nodes: int, n_blocks: int, raw: Sequence[str]):
        self.n_nodes, self.n_blocks, self.raw = n_nodes, n_blocks, tuple(raw)
        self.used = np.zeros(0, dtype=np.int64)
        self.acc = {q: np.zeros((n_nodes, n_blocks, 0)) for q in self.raw}

    def add(self, used: np.ndarray, part: dict[str, np.ndarray]) -> None:
        """Add one chunk's ``(used, sums)``."""
        if used.size == 0:
            return
        if not np.isin(used, self.used).all():
            new = np.union1d(self.used, used)
            at = np.searchsorted(new, self.used)
            for q in self.raw:
                grown = np.zeros((self.n_nodes, self.n_blocks, new.size))
                grown[:, :, at] = self.acc[q]
                self.acc[q] = grown
            self.used = new
        idx = np.searchsorted(self.used, used)
        for q in self.raw:
            self.acc[q][:, :, idx] += part[q].reshape(self.n_nodes, self.n_blocks, used.size)

    def sums(self) -> dict[str, np.ndarray]:
        """Per quantity, shape (nodes, blocks x used) (column ``block * used.size + j``)."""
        shape = (self.n_nodes, self.n_blocks * self.used.size)
        return {q: v.reshape(shape) for q, v in self.acc.items()}


def _time_chunks(n_steps: int) -> list[slice]:
    """The fixed cut of a record into time chunks (:data:`TIME_CHUNK_STEPS` steps each)."""
    return [
        slice(t0, min(t0 + TIME_CHUNK_STEPS, n_steps)) for t0 in range(0, n_steps, TIME_CHUNK_STEPS)
    ]


def map_in_process(func: Callable[[Any], Any], tasks: Sequence[Any]) -> Iterable[Any]:
    """The default mapper: the tasks one after another in this process, results in order.

    A mapper takes a function of one task and the tasks, and yields the results in the
    tasks' order; :mod:`shoreline.distributed` gives one that runs them on Dask. Each task's
    own chunks run on threads here (``workers``).
    """
    return map(func, tasks)


class _Ticker:
    """Turn work done (elements) into whole steps of the record for a progress callback."""

    def __init__(self, callback: Callable[[int], None] | None, total_work: float, steps: int):
        self.callback, self.total, self.steps = callback, max(total_work, 1.0), steps
        self.done = 0.0
        self.reported = 0

    def __call__(self, work: float) -> None:
        if self.callback is None:
            return
        self.done += work
        now = min(self.steps, int(self.done / self.total * self.steps + 1e-9))
        if now > self.reported:
            self.callback(now - self.reported)
            self.reported = now

    def finish(self) -> None:
        """Report whatever is left (e.g. steps with no direction, which need no work)."""
        if self.callback is not None and self.reported < self.steps:
            self.callback(self.steps - self.reported)
            self.reported = self.steps


def tabulate(
    climate: WaveClimate,
    normal_az_deg: np.ndarray,
    physics: Physics,
    *,
    point: int | None = None,
    n_sectors: int = 1,
    sectors: np.ndarray | None = None,
    blocks: np.ndarray | None = None,
    angle_step_deg: float = 0.5,
    margin_nodes: int = 1,
    quantities: Sequence[str] | None = None,
    chunk_steps: int | None = None,
    workers: int | None = None,
    progress: Callable[[int], None] | None = None,
    mapper: Mapper | None = None,
) -> Tables:
    """Sum one wave point's record on normal-azimuth nodes and direction sectors.

    Parameters
    ----------
    climate : WaveClimate
        The record; with several wave points, ``point`` chooses one.
    normal_az_deg : ndarray
        The seaward normals the tables must serve [deg]: the nodes span them along the shorter
        way round the circle, plus ``margin_nodes`` on each side. NaN normals are ignored.
    physics : Physics
        The chain's settings.
    point : int, optional
        Wave point (row of the climate arrays); default 0.
    n_sectors : int
        Direction sectors of the sheltering grid (``m``, e.g. 360 for 1-degree exposure rays);
        1 when there is no sheltering.
    sectors : ndarray of int, optional
        Tabulate only the steps in these sectors (e.g. those open to any of the transects
        served: the others would be weighted by zero); default all.
    blocks : ndarray of int, shape (steps,), optional
        A block label per time step (e.g. the year or the month): the tables get a leading
        block axis, one table per distinct label, in sorted label order.
    angle_step_deg : float
        Node spacing [deg] (> 0).
    margin_nodes : int
        Extra nodes on each side of the normals (room for a direction bias).
    quantities : sequence of str, optional
        Keep only these sums (see the module notes); default all.
    chunk_steps : int, optional
        Time steps per chunk (default: about :data:`CHUNK_ELEMENTS` node-steps a chunk).
    workers : int, optional
        Threads (default up to 2).
    progress : callable, optional
        ``progress(steps_done)`` after each chunk.
    mapper : callable, optional
        Runs the tasks (time chunks): default in this process (:func:`map_in_process`);
        :class:`shoreline.distributed.DaskMapper` runs them on Dask, with the same result.

    Returns
    -------
    Tables

    Notes
    -----
    The steps are ordered by (block, sector) once (an index over the record) and streamed in
    chunks; in each chunk the angles of every node and step are formed, waves from land
    (``|angle| >= 90``) are dropped, the rest are carried to breaking and transport
    (:func:`shoreline.waves.breaking`, :func:`shoreline.transport.longshore_transport`), and
    the duration-weighted values are summed per (node, block, sector) with ``np.bincount``.
    Nothing of size steps x nodes is kept.
    """
    if not angle_step_deg > 0:
        raise ValueError(f"angle_step_deg must be > 0 for tables; got {angle_step_deg}")
    names = physics.quantities if quantities is None else tuple(quantities)
    unknown = [q for q in names if q not in physics.quantities]
    if unknown:
        raise ValueError(f"unknown quantities {unknown}; expected some of {physics.quantities}")
    net = f"q_{physics.primary}_m3"
    if "q_pos_m3" in names and net not in names:  # the side of the sea needs it (module notes)
        names = (net, *names)
    step = float(angle_step_deg)
    normal = np.asarray(normal_az_deg, dtype=float).reshape(-1)
    if not np.isfinite(normal).any():
        raise ValueError("tabulate() needs at least one finite normal")
    node0, n_nodes = _node_grid(normal, step, int(margin_nodes))
    duration = np.asarray(climate.duration_s, dtype=float)
    if blocks is None:
        labels, block_of = None, np.zeros(duration.size, dtype=np.intp)
    else:
        labels, block_of = np.unique(np.asarray(blocks).reshape(-1), return_inverse=True)
        if block_of.size != duration.size:
            raise ValueError(f"blocks must give one label per time step ({duration.size})")
    plan = _TablePlan(
        point=None if climate.hs_m.ndim == 1 else (0 if point is None else int(point)),
        node0=node0,
        n_nodes=n_nodes,
        depth=_point_depth(climate, point),
        allowed=None if sectors is None else np.asarray(sectors, dtype=np.int64),
    )
    settings = _TableSettings(
        physics,
        int(n_sectors),
        1 if labels is None else labels.size,
        _raw(names, physics),
        chunk_steps,
        _threads(workers, mapper),
    )
    tick = _Ticker(progress, float(duration.size) * n_nodes, duration.size)
    tables = None
    for _, tables in _tables_of(  # noqa: B007 - one point: the last tables are its tables
        climate, [plan], step, settings, names, labels, block_of, mapper, tick
    ):
        pass
    tick.finish()
    return tables


def _threads(workers: int | None, mapper: Mapper | None) -> int:
    """Threads per task: ``workers`` in-process (default up to 2); a mapper may say its own."""
    if mapper is not None and getattr(mapper, "threads_per_task", None):
        return int(mapper.threads_per_task)
    return workers or min(2, os.cpu_count() or 1)


@dataclass(frozen=True)
class _TablePlan:
    """One wave point to tabulate: its row of the record and its node grid."""

    point: int | None  # None: a record of one point (1-D arrays)
    node0: float
    n_nodes: int
    depth: float
    allowed: np.ndarray | None


def _tables_of(
    climate: WaveClimate,
    plans: Sequence[_TablePlan],
    step: float,
    settings: _TableSettings,
    names: Sequence[str],
    labels: np.ndarray | None,
    block_of: np.ndarray,
    mapper: Mapper | None,
    tick: _Ticker,
):
    """Yield ``(plan, Tables)`` of every planned wave point, summed over the time chunks.

    The work is mapped as tasks of (a block of wave points, one time chunk) through ``mapper``
    (default :func:`map_in_process`); each point's chunk sums are added in chunk order as the
    results come back in task order, and a block's tables are yielded as soon as its last
    chunk is in, so that memory holds the tables of one block of points.
    """
    duration = np.asarray(climate.duration_s, dtype=float)
    n_blocks = settings.n_blocks
    if labels is None:
        block_s = np.asarray(duration.sum())
    else:
        block_s = np.bincount(block_of, weights=duration, minlength=labels.size)
    # points read together: at most POINTS_PER_TASK of one chunk of the file along the points
    # (enough tasks to keep a cluster busy; which points share a task changes no sum)
    per_block = 1
    if isinstance(climate.hs_m, RecordArray):
        per_block = max(1, min(climate.hs_m.point_block, POINTS_PER_TASK))
    groups: dict[int, list[_TablePlan]] = {}
    for plan in plans:
        key = -1 if plan.point is None else plan.point // per_block
        groups.setdefault(key, []).append(plan)
    chunks = _time_chunks(duration.size)
    tasks, index = [], []
    for g, members in groups.items():
        points = None if members[0].point is None else tuple(m.point for m in members)
        for c, sl in enumerate(chunks):
            data = tuple(
                _Slice(v, points, sl) for v in (climate.hs_m, climate.tp_s, climate.dir_deg)
            )
            tasks.append(
                _TableTask(
                    nodes=tuple(m.node0 + step * np.arange(m.n_nodes) for m in members),
                    depths=tuple(m.depth for m in members),
                    allowed=tuple(m.allowed for m in members),
                    data=data,
                    duration_s=duration[sl],
                    block_of=block_of[sl],
                )
            )
            index.append((g, c, sl))
    run = mapper or map_in_process
    func = functools.partial(_table_task, settings)
    totals: dict[int, list[_TableSum]] = {}
    for (g, c, sl), result in zip(index, run(func, tasks), strict=True):
        members = groups[g]
        acc = totals.setdefault(g, [_TableSum(m.n_nodes, n_blocks, settings.raw) for m in members])
        for total, (used, part) in zip(acc, result, strict=True):
            total.add(used, part)
        tick(float(sl.stop - sl.start) * sum(m.n_nodes for m in members))
        if c == len(chunks) - 1:
            for plan, total in zip(members, totals.pop(g), strict=True):
                sums = _derive(total.sums(), names, settings.physics)
                if labels is not None:
                    sums = {
                        q: v.reshape(plan.n_nodes, n_blocks, total.used.size).transpose(1, 0, 2)
                        for q, v in sums.items()
                    }
                yield plan, Tables(
                    plan.node0, step, settings.n_sectors, total.used, sums, block_s, labels,
                    settings.physics.primary,
                )  # fmt: skip


def _direct_sums(
    rows: np.ndarray,
    normal: np.ndarray,
    sign: np.ndarray,
    point_of: np.ndarray,
    climate: WaveClimate,
    weight: np.ndarray | None,
    physics: Physics,
    chunk_steps: int | None,
    pool: ThreadPoolExecutor,
    tick: _Ticker,
) -> dict[str, np.ndarray]:
    """Sums of the given transects evaluated directly at their own normals (no tables)."""
    names = physics.quantities
    raw = _raw(names, physics)
    n_rows = rows.size
    out = {q: np.zeros(n_rows) for q in raw}
    if n_rows == 0:
        return _derive(out, names, physics)
    two = climate.hs_m.ndim == 2
    lazy = isinstance(climate.hs_m, RecordArray)  # read per chunk of steps where on disk
    arrays = (climate.hs_m, climate.tp_s, climate.dir_deg)
    hs, tp, dr = arrays if lazy else (np.atleast_2d(v) for v in arrays)
    depth = np.asarray(climate.depth_m, dtype=float)
    duration = np.asarray(climate.duration_s, dtype=float)
    n_steps = duration.size
    pt = point_of[rows] if two else np.zeros(n_rows, dtype=np.intp)
    depth_rows = depth[pt] if depth.ndim == 1 and two else float(depth.reshape(-1)[0])
    m = 1 if weight is None else weight.shape[1]
    from shoreline.run import wrap_deg

    steps = int(chunk_steps) if chunk_steps else max(1, CHUNK_ELEMENTS // n_rows)
    per = max(1, CHUNK_ELEMENTS // steps)

    def chunk(task: tuple[int, int]) -> tuple[int, dict[str, np.ndarray]]:
        r0, s0 = task
        local = np.arange(r0, min(r0 + per, n_rows))
        sel = rows[local]
        sl = slice(s0, s0 + steps)
        hs_c, tp_c, dr_c = (np.atleast_2d(v[..., sl]) for v in (hs, tp, dr))
        d = dr_c[pt[local]]
        angle = wrap_deg(d - normal[sel][:, None])
        angle *= sign[sel][:, None]
        w = np.broadcast_to(duration[sl], angle.shape)
        if weight is not None:
            sec = direction_sector(d, m)
            w = w * np.where(sec >= 0, weight[sel[:, None], np.maximum(sec, 0)], 0.0)
        r_i, s_i = np.nonzero((np.abs(angle) < 90.0) & (w > 0))
        dep = depth_rows if np.ndim(depth_rows) == 0 else depth_rows[local][r_i]
        values = _evaluate(
            hs_c[pt[local]][r_i, s_i],
            tp_c[pt[local]][r_i, s_i],
            angle[r_i, s_i],
            dep,
            w[r_i, s_i],
            physics,
        )
        return r0, {q: np.bincount(r_i, weights=values[q], minlength=local.size) for q in raw}

    tasks = [(r0, s0) for s0 in range(0, n_steps, steps) for r0 in range(0, n_rows, per)]
    for (r0, s0), (_, part) in zip(tasks, pool.map(chunk, tasks), strict=True):
        for q in raw:
            out[q][r0 : r0 + part[q].size] += part[q]
        tick(min(per, n_rows - r0) * min(steps, n_steps - s0))
    return _derive(out, names, physics)


def reductions_from_sums(
    sums: dict[str, np.ndarray], total_s: float, formulas: Sequence[str], primary: str
) -> Reductions:
    """Per-year means and fractions (:class:`shoreline.run.Reductions`) from per-transect sums.

    ``sums`` as :meth:`Tables.interpolate` returns them (with the chainage sign applied);
    ``total_s`` is the time the record stands for [s].
    """
    per_year = transport.SECONDS_PER_YEAR / total_s  # mean m3/s x s/yr = m3/yr
    open_s = sums["open_s"]
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = {
            k: np.where(open_s > 0, sums[k] / open_s, np.nan)
            for k in ("hb_m_s", "db_m_s", "alpha_b_deg_s")
        }
    net = sums[f"q_{primary}_m3"]
    from shoreline.run import Reductions

    return Reductions(
        hours=total_s / 3600.0,
        q_net_m3_per_yr={name: sums[f"q_{name}_m3"] * per_year for name in formulas},
        q_gross_m3_per_yr=sums["q_gross_m3"] * per_year,
        q_pos_m3_per_yr=sums["q_pos_m3"] * per_year,
        q_neg_m3_per_yr=(net - sums["q_pos_m3"]) * per_year,
        hb_m=mean["hb_m_s"],
        db_m=mean["db_m_s"],
        alpha_b_deg=mean["alpha_b_deg_s"],
        sheltered_fraction=np.clip(1.0 - open_s / total_s, 0.0, 1.0),
        broken_at_input_fraction=sums["broken_s"] / total_s,
    )


def tabulated_reductions(
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
    sector_weight: np.ndarray | None = None,
    angle_step_deg: float = 0.5,
    chunk_steps: int | None = None,
    workers: int | None = None,
    progress: Callable[[int], None] | None = None,
    mapper: Mapper | None = None,
) -> Reductions:
    """Per-transect time means of longshore transport over a wave climate, by tables.

    The same result as :func:`shoreline.run.transport_reductions` (same arguments and the same
    meaning of every field of :class:`shoreline.run.Reductions`), within the node bound of
    ``docs/methods.md``, computed per wave point on tables over normal-azimuth nodes and
    direction sectors (:func:`tabulate`, :meth:`Tables.interpolate`) instead of per transect
    and time step.

    Parameters
    ----------
    normal_az_deg, sign, climate, point_index : arrays and WaveClimate
        Seaward normals [deg], chainage sign (+1 sea on the right, -1 on the left), the
        offshore record, and each transect's wave point (climates of several points); as
        :func:`shoreline.run.transport_reductions`.
    formulas, primary, breaker_index, breaking_method : list of str, str, float, str
        The physics settings (see :class:`Physics`).
    cerc_k, kamphuis_coefficient, d50_mm, slope : float, float, float, float or None
        The physics settings (see :class:`Physics`).
    water_density_kg_m3, sediment_density_kg_m3, porosity : float
        The physics settings (see :class:`Physics`).
    sector_weight : ndarray of shape (n, m), optional
        Share in [0, 1] of the waves from each of ``m`` direction sectors (sector ``j``
        centred on ``j * 360 / m``) that reaches each transect; None for all ones.
        ``exposure.share`` reproduces the boolean sheltering of the run.
    angle_step_deg : float
        Node spacing [deg]; 0 evaluates every transect directly at its own normal.
    chunk_steps, workers, progress : int, int, callable, optional
        Time steps per chunk (default: about :data:`CHUNK_ELEMENTS` node-steps or
        transect-steps), threads (default up to 2), and ``progress(steps_done)`` called as
        chunks finish (the steps of every wave point add up to the record's steps once).
    mapper : callable, optional
        Runs the table tasks (wave points x time chunks): default in this process;
        :class:`shoreline.distributed.DaskMapper` runs them on Dask, with the same result.

    Returns
    -------
    Reductions
        ``hb_m``, ``db_m``, ``alpha_b_deg`` are means weighted by duration x sector weight over
        the steps that reach the shore; ``sheltered_fraction`` is
        ``1 - sum(duration x weight x reach) / sum(duration)``.

    Notes
    -----
    A wave point is tabulated when it serves more transects than its tables have nodes and
    its transects x steps exceed :data:`DIRECT_TRANSECT_STEPS`. Otherwise (few transects; as
    many wave points as transects, like waves grown over each transect's own fetch; a storm or
    a short record) its transects are evaluated directly at their own normals, vectorised over
    transects and steps: exact, and no slower than tables there. Short records go direct also
    for accuracy: Kamphuis' ``|sin 2 alpha_b|**0.6`` has an infinite slope at normal incidence,
    which linear interpolation between nodes smooths; over a long record of spread directions
    the error averages out below the node bound, but a single storm step met by a transect
    facing it within half a node would show it (docs/methods.md).

    The tables are summed as tasks of (wave points, time chunk) through ``mapper`` (default
    in this process; :mod:`shoreline.distributed` runs them on Dask), with the same chunks and
    the same order of summation either way, so the results are the same floats. A block of
    wave points' tables is read off as soon as its last chunk is in: memory holds one block's
    tables. The points solved directly are solved in this process.
    """
    physics = Physics(
        tuple(formulas),
        primary,
        breaker_index,
        breaking_method,
        cerc_k,
        kamphuis_coefficient,
        d50_mm,
        slope,
        water_density_kg_m3,
        sediment_density_kg_m3,
        porosity,
    )
    normal = np.asarray(normal_az_deg, dtype=float).reshape(-1)
    n = normal.size
    sgn = np.where(np.broadcast_to(np.asarray(sign, dtype=float), (n,)) < 0, -1.0, 1.0)
    multi = climate.hs_m.ndim == 2
    if multi and point_index is None:
        raise ValueError("a climate with several wave points needs point_index per transect")
    point_of = np.asarray(point_index, dtype=np.intp) if multi else np.zeros(n, dtype=np.intp)
    weight = None
    if sector_weight is not None:
        weight = np.asarray(sector_weight, dtype=float)
        if weight.ndim != 2 or weight.shape[0] != n or weight.shape[1] < 1:
            raise ValueError(f"sector_weight must have shape (n_transects, m); got {weight.shape}")
        if not np.all((weight >= 0.0) & (weight <= 1.0)):
            raise ValueError("sector_weight must lie in [0, 1] (the share of waves that reaches)")
    m = 1 if weight is None else weight.shape[1]
    n_steps = climate.n_steps
    finite = np.isfinite(normal)
    # which wave points get tables: those serving more transects than their tables have nodes,
    # with a record long enough for the tables to matter
    tabled: list[tuple[int, np.ndarray, int]] = []
    direct = []
    for p in np.unique(point_of[finite]):  # a loop over wave points, never over transects
        rows = np.flatnonzero(finite & (point_of == p))
        if angle_step_deg > 0 and rows.size * n_steps > DIRECT_TRANSECT_STEPS:
            _, n_nodes = _node_grid(normal[rows], float(angle_step_deg), 0)
            if rows.size > n_nodes:
                tabled.append((int(p), rows, n_nodes))
                continue
        direct.append(rows)
    direct_rows = np.concatenate(direct) if direct else np.zeros(0, dtype=np.intp)
    work = sum(float(k) * n_steps for _, _, k in tabled) + float(direct_rows.size) * n_steps
    tick = _Ticker(progress, work, n_steps)
    sums = {q: np.zeros(n) for q in physics.quantities}
    n_workers = workers or min(2, os.cpu_count() or 1)
    plans, rows_of = [], {}
    for p, rows, _ in tabled:
        everyone = rows.size == n  # no copy of the weights when one point serves all
        w_rows = None if weight is None else (weight if everyone else weight[rows])
        node0, n_nodes = _node_grid(normal[rows], float(angle_step_deg), 0)  # no margin needed
        plan = _TablePlan(
            point=p if multi else None,
            node0=node0,
            n_nodes=n_nodes,
            depth=_point_depth(climate, p if multi else None),
            # only the sectors open to any of the transects served: the others weigh zero
            allowed=None if weight is None else np.flatnonzero(w_rows.any(axis=0)),
        )
        plans.append(plan)
        rows_of[plan.point] = rows
    if plans and mapper is None and not isinstance(climate.hs_m, RecordArray):
        # in this process, a record in memory: point after point through the public tabulate
        # (the same chunks and sums as the batched tasks below, one point's tables at a time)
        for plan in plans:
            rows = rows_of.pop(plan.point)
            w_rows = None if weight is None else (weight if rows.size == n else weight[rows])
            tables = tabulate(
                climate,
                normal[rows],
                physics,
                point=plan.point,
                n_sectors=m,
                margin_nodes=0,  # no margin needed to read the transects' own normals
                sectors=plan.allowed,
                angle_step_deg=angle_step_deg,
                chunk_steps=chunk_steps,
                workers=n_workers,
                progress=lambda steps, k=plan.n_nodes: tick(float(steps) * k),
            )
            part = tables.interpolate(normal[rows], sgn[rows], w_rows)
            for q in sums:
                sums[q][rows] = part[q]
    elif plans:
        settings = _TableSettings(
            physics, m, 1, _raw(physics.quantities, physics), chunk_steps,
            _threads(n_workers, mapper),
        )  # fmt: skip
        block_of = np.zeros(n_steps, dtype=np.intp)
        for plan, tables in _tables_of(
            climate, plans, float(angle_step_deg), settings, physics.quantities, None,
            block_of, mapper, tick,
        ):  # fmt: skip
            rows = rows_of.pop(plan.point)
            w_rows = None if weight is None else (weight if rows.size == n else weight[rows])
            part = tables.interpolate(normal[rows], sgn[rows], w_rows)
            for q in sums:
                sums[q][rows] = part[q]
    with ThreadPoolExecutor(max_workers=n_workers) as pool:
        part = _direct_sums(
            direct_rows, normal, sgn, point_of, climate, weight, physics, chunk_steps, pool, tick
        )
    for q in sums:
        sums[q][direct_rows] = part[q]
    tick.finish()
    return reductions_from_sums(sums, float(climate.duration_s.sum()), physics.formulas, primary)
