"""Ensembles of the uncertain inputs: sampling, per-member combination, quantiles, probabilities.

A study's ``[uncertainty]`` section (validated by :mod:`shoreline.study`) makes some inputs
uncertain. Every scenario is then also run as an ensemble of ``members`` realisations drawn
from their distributions (seeded, so a re-run is bit-identical), and each transect gets the
5 %, 50 % and 95 % quantiles of its rate (a storm: its shift) and net transport, the share of
members in which it erodes or accretes beyond the stable band, and a word of the IPCC AR5
likelihood scale for the most likely outcome (Mastrandrea et al. 2010). Each hotspot gets the
share of members in which at least half of its stretch is in its class, and the first-order
variance-based sensitivity index of every uncertain input (Sobol' 1993, 2001) of its mean rate.

How it stays fast (docs/methods.md, "Ensembles of the uncertain inputs")
-----------------------------------------------------------------------------
A member is not run through the whole chain. The chain's structure is used instead:

- **Scales, exact.** Transport is linear in the CERC coefficient, in the Kamphuis coefficient
  and in ``1 / (1 - porosity)``; the grain size enters the transport only as a power of itself
  (Kamphuis (1991): ``D50**-0.25``, and through the slope of Dean's profile, ``A(D50)**1.125``
  with ``A = 0.21 D50**0.48``; del Valle et al. (1993) for a CERC K from grain size), and the
  rate is ``-dQ/dx / (DB + DC)``. The budget after the transport
  (:func:`shoreline.budget.face_budget`) is linear in the transport apart from structures and
  hard reaches, whose limiters (``max(x, 0)``, running minima) are positively homogeneous:
  scaling the transport by ``c > 0`` scales every flux by ``c``. So all of these inputs are
  exact multipliers applied after the budget.
- **Formula and record blocks, exact.** Each member's formula picks one of the formulas'
  sums; resampling the record in blocks re-weights the per-block sums of
  :func:`shoreline.reduce.tabulate` (``blocks=``), the time mean dividing by the resampled
  record's own duration.
- **Direction bias, by the tables.** Turning every direction by ``delta`` reads the tables at
  ``normal - delta`` and turns the sheltering weights (:meth:`shoreline.reduce.Tables.
  interpolate`, ``dir_shift_deg``). The sums are read at whole sector widths of bias (exact
  there: tested against the turned record) and interpolated linearly between them.
- **Hs factor and breaker index, interpolated.** These change the breaking solution. The
  record is tabulated on a tensor grid of Chebyshev-Lobatto nodes over the drawn range of each
  (:data:`HS_NODES` x :data:`GAMMA_NODES` tabulations, more for wider ranges), and each
  member's sums are the
  Lagrange (polynomial) interpolation of the nodes' sums.
- **Short records** (storms, wind events): every member is solved directly, element by
  element, like the direct path of :func:`shoreline.reduce.tabulated_reductions` (exact).

The per-member sums then go through the budget for all members at once (2-D fields in
:func:`shoreline.budget.face_budget`). ``tests/test_ensemble.py`` compares members with the
same members run one by one through the ordinary chain (:func:`shoreline.run.evaluate`).

For other subsystems (the forward projection): :func:`member_settings` yields each member's
settings, and :func:`member_study` and :func:`member_climate` turn one into the study and the
wave record that the ordinary chain runs.

References
----------
Mastrandrea, M.D., et al. (2010). Guidance note for lead authors of the IPCC Fifth Assessment
Report on consistent treatment of uncertainties. IPCC. Table 1 (likelihood scale).
Saltelli, A., Annoni, P., Azzini, I., Campolongo, F., Ratto, M., Tarantola, S. (2010). Variance
based sensitivity analysis of model output. Design and estimator for the total sensitivity
index. Computer Physics Communications 181: 259-270. Table 2 (b) and (f).
Sobol', I.M. (1993). Sensitivity estimates for nonlinear mathematical models. Mathematical
Modelling and Computational Experiments 1: 407-414; Sobol', I.M. (2001). Global sensitivity
indices for nonlinear mathematical models and their Monte Carlo estimates. Mathematics and
Computers in Simulation 55: 271-280.
Efron, B., Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall (the
block bootstrap of a record, chapter 8; from memory).
"""

from __future__ import annotations

import math
import time as _time
from collections.abc import Iterator
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, Any

import numpy as np

from shoreline import profile, transport, waves
from shoreline.budget import face_budget
from shoreline.climate import WaveClimate
from shoreline.errors import StudyError
from shoreline.reduce import Physics, Tables, tabulate
from shoreline.study import UNCERTAIN_INPUTS, Study

if TYPE_CHECKING:
    from shoreline.coast import Transects
    from shoreline.exposure import Exposure
    from shoreline.run import ScenarioResult
    from shoreline.structures import Structures

__all__ = [
    "EnsembleResult",
    "MemberSettings",
    "attach",
    "draw",
    "likelihood",
    "member_climate",
    "member_settings",
    "member_study",
    "record_blocks",
]

#: Hs-factor nodes (Chebyshev-Lobatto over the drawn range) tabulated for the interpolation:
#: (widest range of the draws, nodes) pairs, the first that holds. Chosen by measurement
#: against members run one by one (docs/methods.md): within 0.5 % of the p05-p95 spread.
HS_NODES = ((1.0, 3), (math.inf, 4))
#: Breaker-index nodes, the same way.
GAMMA_NODES = ((0.35, 3), (0.6, 4), (math.inf, 5))
#: The lattice of the direction bias [deg]: the spacing of the sheltering rays of a run
#: (:func:`shoreline.exposure.compute_exposure`, 1 degree). A bias of whole rays turns the
#: sheltering exactly and moves the normal by whole nodes of the tables, so each member's
#: transport is read exactly as the tables give the turned record; the normal draw is rounded
#: to it (Sheppard's correction: the variance grows by 1/12 deg^2).
BIAS_STEP_DEG = 1.0
#: A climate whose evaluations (columns x transects x steps) are at most this is solved
#: member by member, element by element (exact); longer records are tabulated.
DIRECT_ELEMENTS = 1 << 22
#: Elements per chunk of the direct evaluation (bounds its memory).
_CHUNK_ELEMENTS = 1 << 19
#: Columns (members) read or budgeted at once.
_COLUMN_CHUNK = 1024

#: The IPCC AR5 likelihood scale (Mastrandrea et al. 2010, Table 1): the term for a
#: probability p is the first whose lower limit p reaches ("likely" 66-100 %, "about as likely
#: as not" 33-66 %, "unlikely" 0-33 %, ...).
LIKELIHOOD = (
    (0.99, "virtually certain"),
    (0.90, "very likely"),
    (0.66, "likely"),
    (0.33, "about as likely as not"),
    (0.10, "unlikely"),
    (0.01, "very unlikely"),
    (0.0, "exceptionally unlikely"),
)

#: The uncertain inputs that only scale the transport or the rate (exact multipliers).
SCALE_INPUTS = (
    "cerc_k",
    "kamphuis_coefficient",
    "d50_mm",
    "porosity",
    "closure_depth_m",
    "berm_height_m",
)
#: Factors of the sensitivity analysis besides the inputs of UNCERTAIN_INPUTS.
FORMULA_FACTOR = "formula"
RECORD_FACTOR = "record_blocks"
#: Stream numbers of the random draws (numpy SeedSequence entropy ``[seed, stream, ...]``).
_MEMBER_STREAM, _FORMULA_STREAM, _BLOCK_STREAM, _SENSITIVITY_STREAM = 1, 2, 3, 4


def likelihood(p: float) -> str:
    """The term of the IPCC AR5 likelihood scale for a probability (Mastrandrea et al. 2010).

    ``p`` at or above 0.99, 0.90, 0.66: virtually certain, very likely, likely; above 0.33:
    about as likely as not; above 0.10, 0.01: unlikely, very unlikely; else exceptionally
    unlikely.

    Examples
    --------
    >>> [likelihood(p) for p in (1.0, 0.93, 0.7, 0.5, 0.2, 0.05, 0.0)]
    ... # doctest: +NORMALIZE_WHITESPACE
    ['virtually certain', 'very likely', 'likely', 'about as likely as not', 'unlikely',
     'very unlikely', 'exceptionally unlikely']
    """
    for low, term in LIKELIHOOD[:3]:
        if p >= low:
            return term
    for low, term in LIKELIHOOD[3:6]:
        if p > low:
            return term
    return LIKELIHOOD[-1][1]


# --------------------------------------------------------------------------------------------
# Sampling
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Draws:
    """Values of the uncertain inputs for a set of evaluations (columns).

    ``values`` holds every input of ``[uncertainty]`` by name (shape (k,)); ``formula`` the
    index of each column's formula in ``formulas``; ``record_key`` the key of each column's
    resample of the record (:func:`block_weights`).
    """

    values: dict[str, np.ndarray]
    formula: np.ndarray
    record_key: np.ndarray

    def __len__(self) -> int:
        return int(self.formula.size)

    def take(self, index: np.ndarray) -> Draws:
        """The columns ``index``."""
        return Draws(
            {k: v[index] for k, v in self.values.items()},
            self.formula[index],
            self.record_key[index],
        )

    @staticmethod
    def concat(parts: list[Draws]) -> Draws:
        """The columns of several draws, one after another."""
        return Draws(
            {k: np.concatenate([p.values[k] for p in parts]) for k in parts[0].values},
            np.concatenate([p.formula for p in parts]),
            np.concatenate([p.record_key for p in parts]),
        )


def ensemble_formulas(study: Study) -> list[str]:
    """The formulas members draw from: all of ``[model] formulas``, or the primary one."""
    m = study["model"]
    return list(m["formulas"]) if study.uncertainty["formulas"] == "all" else [m["primary"]]


def draw(study: Study, n: int | None = None, stream: int = _MEMBER_STREAM, first_key: int = 0):
    """Draw ``n`` columns (default: the members) of the uncertain inputs, seeded.

    Each input has a stream of its own (numpy ``default_rng([seed, stream, input number])``),
    so adding an input to a study leaves the others' draws as they were. A uniform input is
    ``low + (high - low) U``, a normal one ``mean + sd Z`` (the direction bias rounded to
    :data:`BIAS_STEP_DEG`). Each member's formula is drawn with
    equal weight from :func:`ensemble_formulas`; its resample of the record is keyed by
    ``first_key + column`` (:func:`block_weights`).
    """
    u = study.uncertainty
    n = u["members"] if n is None else int(n)
    seed = u["seed"]
    values = {}
    for number, (name, spec) in enumerate(UNCERTAIN_INPUTS.items()):
        if name not in u["inputs"]:
            continue
        d = u["inputs"][name]
        rng = np.random.default_rng([seed, stream, number])
        if spec.distribution == "uniform":
            values[name] = d["low"] + (d["high"] - d["low"]) * rng.random(n)
        else:
            values[name] = d["mean"] + d["sd"] * rng.standard_normal(n)
        if name == "direction_bias_deg":
            values[name] = np.rint(values[name] / BIAS_STEP_DEG) * BIAS_STEP_DEG + 0.0
    formulas = ensemble_formulas(study)
    rng = np.random.default_rng([seed, stream, _FORMULA_STREAM * 100])
    formula = rng.integers(0, len(formulas), n) if len(formulas) > 1 else np.zeros(n, int)
    return Draws(values, formula, first_key + np.arange(n))


def record_blocks(
    climate: WaveClimate, kind: str, where: str = "the record", study_name: str = ""
) -> tuple[np.ndarray, np.ndarray] | None:
    """Blocks of a record for resampling: ``(block of each step, label of each block)``.

    ``kind`` is ``"year"`` or ``"month"`` (calendar, UTC); a block at either end shorter than
    half the median block is merged into its neighbour. None for ``"none"``, for a steady
    condition (a storm, a wind event: nothing to resample) or a record without times.

    Raises
    ------
    StudyError
        For ``"year"`` on a record shorter than two years, or a record of one block.
    """
    if kind == "none" or climate.kind != "record" or climate.time is None:
        return None
    total_days = float(climate.duration_s.sum()) / 86400.0
    if kind == "year" and total_days < 730.0:
        raise StudyError(
            f'{study_name}[uncertainty] record_blocks = "year" needs a record of at least two '
            f'years to resample; {where} covers {total_days:.0f} days: use "month" or "none"'
        )
    unit = "Y" if kind == "year" else "M"
    stamp = np.asarray(climate.time).astype(f"datetime64[{unit}]").astype(np.int64)
    labels, block = np.unique(stamp, return_inverse=True)
    dur = np.bincount(block, weights=climate.duration_s, minlength=labels.size)
    if labels.size > 2:
        median = float(np.median(dur))
        keep = np.ones(labels.size, bool)
        if dur[0] < 0.5 * median:
            keep[0] = False
            block[block == 0] = 1
        if dur[-1] < 0.5 * median:
            keep[-1] = False
            block[block == labels.size - 1] = labels.size - 2
        labels = labels[keep]
        block = np.searchsorted(np.flatnonzero(keep), block)
    if labels.size < 2:
        raise StudyError(
            f'{study_name}[uncertainty] record_blocks = "{kind}": {where} holds one {kind} '
            "only; "
            'resampling needs at least two blocks: use a shorter block or "none"'
        )
    text = np.datetime_as_string(labels.astype(f"datetime64[{unit}]"))
    return block.reshape(-1), text


def block_weights(seed: int, keys: np.ndarray, n_blocks: int) -> np.ndarray:
    """How many times each of ``n_blocks`` blocks is drawn, per resample key: (keys, blocks).

    A resample draws ``n_blocks`` blocks with replacement, equally likely (the block
    bootstrap, Efron & Tibshirani 1993); key ``k`` draws from ``default_rng([seed, 3, k])``,
    so the same member resamples two records of as many blocks alike.
    """
    out = np.zeros((np.size(keys), n_blocks))
    for i, key in enumerate(np.asarray(keys, dtype=np.int64)):
        rng = np.random.default_rng([seed, _BLOCK_STREAM, int(key)])
        out[i] = np.bincount(rng.integers(0, n_blocks, n_blocks), minlength=n_blocks)
    return out


# --------------------------------------------------------------------------------------------
# One member's settings (for the ordinary chain and for other subsystems)
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class MemberSettings:
    """What one ensemble member changes.

    Attributes
    ----------
    member : int
        Its number (0 ..  members - 1).
    formula : str
        The formula driving its rates.
    cerc_k, kamphuis_coefficient : float
        Its transport coefficients, before any calibration factor ([-]; CERC in Hs form).
    k_factor : float
        Its multiplier on the transport of its formula against the study's (coefficient,
        grain size and porosity together; calibration factors apply on top of both).
    breaker_index, d50_mm, porosity, berm_height_m : float
        Its values.
    closure_depth_m : float or None
        Its closure depth [m]; None holds the study's (a number or Hallermeier's per point).
    direction_bias_deg : float
        Added to every offshore direction [deg].
    hs_factor : float
        Multiplies every offshore Hs.
    block_weights : ndarray or None
        Times each block of the record is drawn (None: the record as it is).
    block_labels : ndarray of str or None
        The blocks ("2031", or "2031-04"), in the order of ``block_weights``.
    """

    member: int
    formula: str
    cerc_k: float
    kamphuis_coefficient: float
    k_factor: float
    breaker_index: float
    d50_mm: float
    porosity: float
    closure_depth_m: float | None
    berm_height_m: float
    direction_bias_deg: float
    hs_factor: float
    block_weights: np.ndarray | None = None
    block_labels: np.ndarray | None = None


def _base_values(study: Study) -> dict[str, Any]:
    """The study's own value of every uncertain input (closure depth may be a word)."""
    from shoreline.run import base_coefficients

    m, s = study["model"], study["sediment"]
    base = base_coefficients(study)
    return {
        "cerc_k": base["cerc"],
        "kamphuis_coefficient": base["kamphuis"],
        "breaker_index": m["breaker_index"],
        "d50_mm": s["d50_mm"],
        "porosity": s["porosity"],
        "closure_depth_m": m["closure_depth_m"],
        "berm_height_m": m["berm_height_m"],
        "direction_bias_deg": 0.0,
        "hs_factor": 1.0,
    }


def _column_values(study: Study, draws: Draws) -> dict[str, np.ndarray]:
    """Every input's value per column: the draw where uncertain, else the study's."""
    base = _base_values(study)
    n = len(draws)
    out = {}
    for name, value in base.items():
        if name in draws.values:
            out[name] = draws.values[name]
        elif name == "closure_depth_m" and isinstance(value, str):
            out[name] = np.full(n, np.nan)  # the study's, per transect
        else:
            out[name] = np.full(n, float(value))
    return out


def _transport_scale(study: Study, values: dict[str, np.ndarray], formula: str) -> np.ndarray:
    """Each column's multiplier on the transport of ``formula`` against the study's.

    CERC: coefficient (or del Valle's K of the grain size when the study takes it so and the
    coefficient is not drawn) and porosity. Kamphuis (1991): coefficient, ``D50**-0.25`` and,
    with the slope from Dean's profile, ``A(D50)**(1.5 x 0.75)`` (slope ``A**1.5 / sqrt(db)``
    to the power 0.75), and porosity. Exact: each is a factor of the formula.
    """
    base = _base_values(study)
    u_inputs = study.uncertainty["inputs"]
    por = (1.0 - base["porosity"]) / (1.0 - values["porosity"])
    d0, d = base["d50_mm"], values["d50_mm"]
    if formula == "cerc":
        if "cerc_k" in u_inputs:
            k = values["cerc_k"] / base["cerc_k"]
        elif study["model"]["cerc_k"] == "del_valle":
            k_of = transport.k_del_valle
            k = k_of(d, height="significant") / k_of(d0, height="significant")
        else:
            k = np.ones_like(d)
        return k * por
    c = values["kamphuis_coefficient"] / base["kamphuis_coefficient"]
    grain = (d / d0) ** -0.25
    if study["sediment"]["slope"] is None:
        a = profile.dean_a_parameter
        grain = grain * (a(d) / a(d0)) ** (1.5 * 0.75)
    return c * grain * por


def member_settings(study: Study, climate: WaveClimate | None = None) -> Iterator[MemberSettings]:
    """Yield the settings of every member of a study's ensemble, in member order.

    ``climate`` (the record resampled) gives each member's block weights; without it, or
    with ``record_blocks = "none"``, they are None. The same study and seed give the same
    members (see :func:`draw`). Nothing is yielded without ``[uncertainty]``.
    """
    if not study.uncertainty:
        return
    draws = draw(study)
    values = _column_values(study, draws)
    formulas = ensemble_formulas(study)
    blocks = None
    if climate is not None:
        blocks = record_blocks(climate, study.uncertainty["record_blocks"])
    weights = None
    if blocks is not None:
        weights = block_weights(study.uncertainty["seed"], draws.record_key, blocks[1].size)
    scale = {f: _transport_scale(study, values, f) for f in formulas}
    for i in range(len(draws)):
        f = formulas[int(draws.formula[i])]
        dc = float(values["closure_depth_m"][i])
        yield MemberSettings(
            member=i,
            formula=f,
            cerc_k=float(values["cerc_k"][i]),
            kamphuis_coefficient=float(values["kamphuis_coefficient"][i]),
            k_factor=float(scale[f][i]),
            breaker_index=float(values["breaker_index"][i]),
            d50_mm=float(values["d50_mm"][i]),
            porosity=float(values["porosity"][i]),
            closure_depth_m=None if math.isnan(dc) else dc,
            berm_height_m=float(values["berm_height_m"][i]),
            direction_bias_deg=float(values["direction_bias_deg"][i]),
            hs_factor=float(values["hs_factor"][i]),
            block_weights=None if weights is None else weights[i],
            block_labels=None if blocks is None else blocks[1],
        )


def member_study(study: Study, member: MemberSettings) -> Study:
    """The study as one member sees it: its formula as primary and its values of the inputs.

    The CERC coefficient is the member's; with ``[[calibration]]`` the fitted factors still
    apply on top (see :func:`member_coefficients`).
    """
    settings = {k: dict(v) for k, v in study.settings.items()}
    m, s = settings["model"], settings["sediment"]
    m["primary"] = member.formula
    m["breaker_index"] = member.breaker_index
    m["berm_height_m"] = member.berm_height_m
    if member.closure_depth_m is not None:
        m["closure_depth_m"] = member.closure_depth_m
    if "cerc_k" in study.uncertainty["inputs"]:
        m["cerc_k"] = member.cerc_k
    m["kamphuis_coefficient"] = member.kamphuis_coefficient
    s["d50_mm"] = member.d50_mm
    s["porosity"] = member.porosity
    return replace(study, settings=settings)


def member_coefficients(
    study: Study, member: MemberSettings, factors: dict[str, float] | None = None
) -> dict[str, float]:
    """The member's transport coefficients as :func:`shoreline.run.evaluate` takes them."""
    from shoreline.run import base_coefficients

    base = base_coefficients(member_study(study, member))
    factors = factors or {}
    return {f: base[f] * factors.get(f, 1.0) for f in base}


def member_climate(
    climate: WaveClimate, member: MemberSettings, blocks: np.ndarray | None = None
) -> WaveClimate:
    """The offshore waves one member sees: heights scaled, directions turned, record resampled.

    ``blocks`` is the block of each step (:func:`record_blocks`); with the member's block
    weights, every step of block ``b`` is repeated ``block_weights[b]`` times.
    """
    out = replace(
        climate,
        hs_m=climate.hs_m * member.hs_factor,
        dir_deg=(climate.dir_deg + member.direction_bias_deg) % 360.0,
    )
    if blocks is None or member.block_weights is None:
        return out
    repeat = member.block_weights.astype(int)[blocks]
    steps = np.repeat(np.arange(climate.n_steps), repeat)
    return replace(
        out,
        hs_m=out.hs_m[..., steps],
        tp_s=out.tp_s[..., steps],
        dir_deg=out.dir_deg[..., steps],
        duration_s=out.duration_s[steps],
        time=None if out.time is None else out.time[steps],
    )


# --------------------------------------------------------------------------------------------
# Per-member sums of the transport (unit coefficients): the two engines
# --------------------------------------------------------------------------------------------


@dataclass
class _Chain:
    """One scenario's chain up to the transport, as the members share it."""

    climate: WaveClimate
    normal: np.ndarray
    sign: np.ndarray
    point_of: np.ndarray
    weight: np.ndarray | None  # sector weights (n, m) from the exposure
    exposure: Any
    physics: dict[str, Any]
    formulas: list[str]
    gross: bool  # one-way parts needed (structures)
    angle_step_deg: float
    block_of: np.ndarray | None
    n_blocks: int
    seed: int


@dataclass
class _Sums:
    """Per-column sums over the record with the study's coefficients.

    Net and gross transport per formula [m3], open time [s], and the time the resampled
    record stands for [s].
    """

    net: dict[str, np.ndarray]
    gross: dict[str, np.ndarray]
    open_s: np.ndarray
    total_s: np.ndarray


def _lobatto(lo: float, hi: float, rule) -> np.ndarray:
    """Chebyshev-Lobatto nodes over [lo, hi]; one node when the range is empty.

    ``rule`` gives the node count by the width of the range: pairs (widest range, nodes),
    the first that holds (:data:`HS_NODES`, :data:`GAMMA_NODES`, measured in docs/methods.md).
    """
    k = next(count for widest, count in rule if hi - lo <= widest)
    if not hi > lo or k < 2:
        return np.array([0.5 * (lo + hi)])
    x = np.cos(np.pi * np.arange(k) / (k - 1))[::-1]
    return 0.5 * (lo + hi) + 0.5 * (hi - lo) * x


def _lagrange(nodes: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Lagrange basis of ``nodes`` at ``x``: shape (x, nodes); rows sum to one."""
    x = np.asarray(x, dtype=float)
    out = np.ones((x.size, nodes.size))
    for k in range(nodes.size):
        for j in range(nodes.size):
            if j != k:
                out[:, k] *= (x - nodes[j]) / (nodes[k] - nodes[j])
    return out


def _physics(chain: _Chain, breaker_index: float, primary: str, formulas) -> Physics:
    p = chain.physics
    return Physics(
        tuple(formulas),
        primary,
        breaker_index,
        p["breaking_method"],
        p["cerc_k"],
        p["kamphuis_coefficient"],
        p["d50_mm"],
        p["slope"],
        p["water_density_kg_m3"],
        p["sediment_density_kg_m3"],
        p["porosity"],
    )


def _direct_sums(chain: _Chain, cols: dict[str, np.ndarray], weights: np.ndarray) -> _Sums:
    """Every column solved directly at every transect and step (exact; short records).

    ``cols`` holds per column ``direction_bias_deg``, ``hs_factor`` and ``breaker_index``;
    ``weights`` (columns, blocks) the block weights. The chain of
    :func:`shoreline.reduce.tabulated_reductions`' direct path: the angle to each transect's
    own normal, waves from land and steps with no share of open water dropped, breaking
    (:func:`shoreline.waves.breaking`), every formula, each element weighted by its duration,
    its block's weight and its open share.
    """
    from shoreline.run import wrap_deg

    c = chain.climate
    n, k = chain.normal.size, weights.shape[0]
    two = c.hs_m.ndim == 2
    hs, tp, dr = (np.atleast_2d(v) for v in (c.hs_m, c.tp_s, c.dir_deg))
    pt = chain.point_of if two else np.zeros(n, dtype=np.intp)
    depth = np.asarray(c.depth_m, dtype=float)
    depth_t = depth[pt] if depth.ndim == 1 and two else np.full(n, float(depth.reshape(-1)[0]))
    block = chain.block_of if chain.block_of is not None else np.zeros(c.n_steps, np.intp)
    steps = c.n_steps
    out_net = {f: np.zeros((n, k)) for f in chain.formulas}
    out_gross = {f: np.zeros((n, k)) for f in chain.formulas}
    open_s = np.zeros((n, k))
    finite = np.flatnonzero(np.isfinite(chain.normal))
    per = max(1, _CHUNK_ELEMENTS // max(1, finite.size * steps))
    ph = chain.physics
    for c0 in range(0, k, per):
        cj = np.arange(c0, min(k, c0 + per))
        bias = cols["direction_bias_deg"][cj][None, :, None]
        d = (dr[pt[finite]][:, None, :] + bias) % 360.0  # (rows, cols, steps)
        angle = wrap_deg(d - chain.normal[finite][:, None, None])
        angle *= chain.sign[finite][:, None, None]
        w = c.duration_s[None, None, :] * weights[cj][:, block][None, :, :]
        if chain.exposure is not None:
            w = w * chain.exposure.open_share(d, finite.reshape(-1, 1, 1))
        r_i, c_i, s_i = np.nonzero((np.abs(angle) < 90.0) & (w > 0))
        if r_i.size == 0:
            continue
        rows = finite[r_i]
        gamma = cols["breaker_index"][cj][c_i]
        hb, db, ab = waves.breaking(
            hs[pt[rows], s_i] * cols["hs_factor"][cj][c_i],
            tp[pt[rows], s_i],
            angle[r_i, c_i, s_i],
            depth_m=depth_t[rows],
            breaker_index=gamma,
            method=ph["breaking_method"],
        )
        reach = np.isfinite(hb)
        ww = np.where(reach, w[r_i, c_i, s_i], 0.0)
        hb, db, ab = (np.where(reach, v, 0.0) for v in (hb, db, ab))
        cell = rows * k + cj[c_i]
        size = n * k
        open_s += np.bincount(cell, weights=ww, minlength=size).reshape(n, k)
        with np.errstate(invalid="ignore", divide="ignore"):
            slope = (
                ph["slope"]
                if ph["slope"] is not None
                else profile.breaker_zone_slope(db, ph["d50_mm"])
            )
            for f in chain.formulas:
                q = transport.longshore_transport(
                    f,
                    hb_m=hb,
                    tp_s=tp[pt[rows], s_i],
                    alpha_b_deg=ab,
                    slope=slope,
                    d50_mm=ph["d50_mm"],
                    breaker_index=gamma,
                    cerc_k=ph["cerc_k"],
                    kamphuis_coefficient=ph["kamphuis_coefficient"],
                    water_density_kg_m3=ph["water_density_kg_m3"],
                    sediment_density_kg_m3=ph["sediment_density_kg_m3"],
                    porosity=ph["porosity"],
                )
                q = np.where(reach, q, 0.0) * ww
                out_net[f] += np.bincount(cell, weights=q, minlength=size).reshape(n, k)
                if chain.gross:
                    g = np.bincount(cell, weights=np.abs(q), minlength=size)
                    out_gross[f] += g.reshape(n, k)
    block_s = np.bincount(block, weights=c.duration_s, minlength=weights.shape[1])
    return _Sums(out_net, out_gross if chain.gross else {}, open_s, weights @ block_s)


def _table_sums(chain: _Chain, cols: dict[str, np.ndarray], weights: np.ndarray) -> _Sums:
    """Every column read off tables over normal nodes, Hs-factor and breaker-index nodes.

    Per wave point: one :func:`shoreline.reduce.tabulate` per (Hs factor, breaker index)
    node, with a block axis (the record's blocks, or one) and ``margin_nodes`` for the largest
    direction bias. The sums of every node, block and quantity are read at each bias drawn
    (whole :data:`BIAS_STEP_DEG`, :func:`_read_shifted`), and each column takes the Lagrange
    weights of its Hs factor and breaker index and its block weights.
    """
    c = chain.climate
    n, k = chain.normal.size, weights.shape[0]
    m = 1 if chain.weight is None else chain.weight.shape[1]
    step = float(chain.angle_step_deg)
    unit = BIAS_STEP_DEG
    bias = cols["direction_bias_deg"]
    j_of = np.rint(bias / unit).astype(np.int64)  # whole steps of bias (draw rounds to them)
    js = np.unique(j_of)
    margin = int(math.ceil(np.max(np.abs(js)) * unit / step)) + 1
    h_nodes = _lobatto(float(cols["hs_factor"].min()), float(cols["hs_factor"].max()), HS_NODES)
    gam = cols["breaker_index"]
    g_nodes = _lobatto(float(gam.min()), float(gam.max()), GAMMA_NODES)
    lag = (
        _lagrange(h_nodes, cols["hs_factor"])[:, :, None] * _lagrange(g_nodes, gam)[:, None, :]
    ).reshape(k, -1)  # (columns, nodes)
    n_b = weights.shape[1]
    coef_nb = (lag[:, :, None] * weights[:, None, :]).reshape(k, -1)  # (columns, nodes x blocks)
    # per bias read j: the columns that use it and their weights (nodes x blocks, columns)
    uses = []
    for j in js:
        who = np.flatnonzero(j_of == j)
        uses.append((who, coef_nb[who].T))
    block = chain.block_of if chain.block_of is not None else np.zeros(c.n_steps, np.intp)
    quantities = [f"q_{f}_m3" for f in chain.formulas] + ["open_s"]
    if chain.gross:
        quantities += [f"gross_{f}" for f in chain.formulas]
    out = {q: np.zeros((n, k)) for q in quantities}
    finite = np.isfinite(chain.normal)
    multi = c.hs_m.ndim == 2
    total = weights @ np.bincount(block, weights=c.duration_s, minlength=n_b)
    for p in np.unique(chain.point_of[finite]):  # a loop over wave points, not transects
        rows = np.flatnonzero(finite & (chain.point_of == p))
        stacked: dict[str, list[np.ndarray]] = {q: [] for q in quantities}
        first = None
        for h in h_nodes:
            climate = replace(c, hs_m=c.hs_m * h)
            for gamma in g_nodes:
                options = {
                    "point": int(p) if multi else None,
                    "n_sectors": m,
                    "blocks": block,
                    "angle_step_deg": step,
                    "margin_nodes": margin,
                }
                wanted = [q for q in quantities if not q.startswith("gross_")]
                if chain.gross:
                    wanted.append("q_gross_m3")
                ph = _physics(chain, float(gamma), chain.formulas[0], chain.formulas)
                t = tabulate(climate, chain.normal[rows], ph, quantities=wanted, **options)
                first = first or t
                for q in wanted:
                    name = f"gross_{chain.formulas[0]}" if q == "q_gross_m3" else q
                    stacked[name].append(t.sums[q])
                for f in chain.formulas[1:] if chain.gross else ():
                    ph = _physics(chain, float(gamma), f, (f,))
                    other = tabulate(
                        climate, chain.normal[rows], ph, quantities=("q_gross_m3",), **options
                    )
                    stacked[f"gross_{f}"].append(other.sums["q_gross_m3"])
        # (nodes, sectors, quantity x node x block): one array read at every bias at once
        n_nb = len(h_nodes) * len(g_nodes) * n_b
        table = np.concatenate(
            [np.concatenate(stacked[q], axis=0).transpose(1, 2, 0) for q in quantities], axis=2
        )
        odd = np.array([q.startswith("q_") for q in quantities])  # net changes sign with the sea
        w_rows = None if chain.weight is None else chain.weight[rows]
        for group, read in _read_shifted(table, first, chain.normal[rows], w_rows, js, unit, m):
            target = rows[group]
            sgn = chain.sign[target]
            for jj, (who, coef) in enumerate(uses):
                if who.size == 0:
                    continue
                part = read[jj]  # (group rows, quantity x node x block)
                for qi, q in enumerate(quantities):
                    val = part[:, qi * n_nb : (qi + 1) * n_nb] @ coef
                    if odd[qi]:
                        val *= sgn[:, None]
                    out[q][np.ix_(target, who)] += val
    return _Sums(
        {f: out[f"q_{f}_m3"] for f in chain.formulas},
        {f: out[f"gross_{f}"] for f in chain.formulas} if chain.gross else {},
        out["open_s"],
        total,
    )


def _read_shifted(
    table: np.ndarray,
    tables: Tables,
    normal: np.ndarray,
    sector_weight: np.ndarray | None,
    js: np.ndarray,
    unit: float,
    m: int,
) -> Iterator[tuple[np.ndarray, np.ndarray]]:
    """Read the tables at every bias ``j * unit`` of ``js``, per group of transects.

    ``table`` (nodes, sectors, values) holds the sums of ``tables``' node grid and sectors.
    The arithmetic of :meth:`shoreline.reduce.Tables.interpolate` with ``dir_shift_deg = j *
    unit``: the normal read at ``normal - j unit`` (linear between its two nodes) and the
    sector weights turned by ``round(j unit / sector width)`` sectors. Transects between the
    same two nodes read the same node slices at every bias, so they are read together: yields
    ``(indices into normal, values of shape (len(js), group, values))`` for the sea on the
    right of increasing chainage (the caller applies the side of the sea).
    """
    step = tables.step_deg
    n_nodes = table.shape[0]
    last = n_nodes - 1
    tol = 1e-6 * step
    pos = np.maximum(np.mod(normal - tables.node0_deg + tol, 360.0) - tol, 0.0) / step
    base = np.floor(pos).astype(np.int64)
    f = pos - base
    offset = np.rint(js * unit / step).astype(np.int64)  # nodes moved by each bias
    turn = np.array([round(float(j * unit) / (360.0 / m)) for j in js]) if m > 1 else None
    lo_all = base[:, None] - offset[None, :]  # (transects, biases)
    if lo_all.min() < 0 or lo_all.max() > last:
        raise ValueError("a biased normal lies outside the tabulated nodes (margin too small)")
    for i in np.unique(base):
        group = np.flatnonzero(base == i)
        nodes_lo = np.clip(i - offset, 0, last - 1)
        frac = f[group] + (i - offset - nodes_lo)[:, None]  # 1 where a normal sits on the last node
        s_lo = table[nodes_lo]  # (biases, sectors, values)
        s_hi = table[nodes_lo + 1]
        if sector_weight is None:
            r_lo, r_hi = s_lo.sum(axis=1)[:, None, :], s_hi.sum(axis=1)[:, None, :]
            r_lo = np.broadcast_to(r_lo, (js.size, group.size, table.shape[2]))
            r_hi = np.broadcast_to(r_hi, (js.size, group.size, table.shape[2]))
        else:
            cols = (tables.sectors[None, :] + turn[:, None]) % m  # (biases, sectors)
            w = sector_weight[group][:, cols].transpose(1, 0, 2)  # (biases, group, sectors)
            r_lo, r_hi = w @ s_lo, w @ s_hi
        yield group, r_lo + frac[:, :, None] * (r_hi - r_lo)


# --------------------------------------------------------------------------------------------
# Sensitivity: first-order and total indices from a pick-freeze design
# --------------------------------------------------------------------------------------------


def sobol_first_total(
    f_a: np.ndarray, f_b: np.ndarray, f_ab: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """First-order and total variance-based indices (Sobol' 1993, 2001) of a pick-freeze design.

    Parameters
    ----------
    f_a, f_b : ndarray of shape (s, N)
        The s outputs at two independent samples A and B of the inputs.
    f_ab : ndarray of shape (d, s, N)
        The outputs at A with factor i taken from B (``AB_i``), for each of d factors.

    Returns
    -------
    first, total : ndarray of shape (s, d)
        ``S_i = mean(f(B) (f(AB_i) - f(A))) / V`` (Saltelli et al. 2010, Table 2 (b)) and
        ``S_Ti = mean((f(A) - f(AB_i))**2) / (2 V)`` (their Table 2 (f), after Jansen 1999),
        V the variance of A and B together, the outputs centred on their mean first (Sobol'
        and Levitan 1999). An output of no variance gets indices 0.

    Examples
    --------
    >>> rng = np.random.default_rng(1)
    >>> a, b = rng.random((2, 2, 4096))
    >>> ab = np.stack([np.where(np.arange(2)[:, None] == i, b, a) for i in range(2)])
    >>> f = lambda x: x[0] + 2.0 * x[1]  # variances 1/12 and 4/12: S = 0.2, 0.8
    >>> first, _ = sobol_first_total(f(a)[None], f(b)[None], np.stack([f(x)[None] for x in ab]))
    >>> np.round(first, 1).tolist()
    [[0.2, 0.8]]
    """
    mean = 0.5 * (f_a.mean(axis=-1) + f_b.mean(axis=-1))[:, None]
    fa, fb, fab = f_a - mean, f_b - mean, f_ab - mean
    var = np.var(np.concatenate([fa, fb], axis=-1), axis=-1)
    with np.errstate(invalid="ignore", divide="ignore"):
        first = np.mean(fb * (fab - fa), axis=-1) / var
        total = 0.5 * np.mean((fa - fab) ** 2, axis=-1) / var
    first, total = first.T, total.T
    first[~np.isfinite(first)] = 0.0
    total[~np.isfinite(total)] = 0.0
    return first, total


def _bootstrap_se(f_a, f_b, f_ab, seed: int, resamples: int = 200) -> np.ndarray:
    """Standard error of the first-order indices by resampling the N rows (seeded)."""
    rng = np.random.default_rng([seed, _SENSITIVITY_STREAM, 99])
    n = f_a.shape[-1]
    draws = []
    for _ in range(resamples):
        i = rng.integers(0, n, n)
        draws.append(sobol_first_total(f_a[:, i], f_b[:, i], f_ab[:, :, i])[0])
    return np.std(np.asarray(draws), axis=0, ddof=1)


# --------------------------------------------------------------------------------------------
# The ensemble of one scenario
# --------------------------------------------------------------------------------------------


@dataclass
class EnsembleResult:
    """One scenario's ensemble.

    Attributes
    ----------
    members : list of MemberSettings
        Each member's settings (:func:`member_settings`).
    event : bool
        A storm event: ``metric`` is the shoreline shift over the event [m], else the rate.
    q_net_m3_per_yr : ndarray (transects, members)
        Each member's net transport of its formula (for an event: the rate while it lasts).
    dqdx_m2_per_yr : ndarray (transects, members)
        Each member's along-shore gradient of it (NaN where left out of the budget).
    metric : ndarray (transects, members)
        Each member's shoreline change rate [m/yr], or for an event its shift [m].
    columns : dict of str to ndarray
        The per-transect columns merged into the scenario's (docs/outputs.md).
    hotspots : list of dict
        Per hotspot of the scenario: ``hotspot_id``, ``class``, ``probability``,
        ``likelihood``, ``first_order`` and ``first_order_se`` and ``total_order`` (factor
        -> index), ``main_input``.
    coast : dict
        The same indices for the coast's mean net transport.
    factors : list of str
        The factors of the sensitivity analysis (inputs with a spread, ``formula``,
        ``record_blocks``).
    info : dict
        How it was computed (engine, nodes, blocks, evaluations, seconds): for run.json.
    """

    members: list[MemberSettings]
    event: bool
    q_net_m3_per_yr: np.ndarray
    dqdx_m2_per_yr: np.ndarray
    metric: np.ndarray
    columns: dict[str, np.ndarray]
    hotspots: list[dict[str, Any]] = field(default_factory=list)
    coast: dict[str, Any] = field(default_factory=dict)
    factors: list[str] = field(default_factory=list)
    info: dict[str, Any] = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)


#: The check of :func:`_check` warns above this share of the p05-p95 spread.
CHECK_WARN_SHARE = 0.05


def _check(
    result,
    formulas,
    net_nominal,
    dqdx_nominal,
    columns,
    active,
    years,
    left_out,
    event,
    gross,
    budget_kw,
    transects,
    primary,
) -> dict[str, dict[str, float]]:
    """The ensemble's chain at the study's own settings against the run's (per formula).

    The members' transport is read off tables over normal nodes; the run solves small studies
    directly. At the study's own settings (no bias, Hs factor 1, its breaker index, the record
    as it is, unit coefficients) the two differ only by the tables' node bound (docs/
    methods.md). Returned per formula: the largest difference of the net transport over the
    largest net transport of the coast (``transport``), and of the rate (a storm: the shift)
    over the ensemble's p05-p95 spread at each transect, the largest (``metric_vs_spread``).
    """
    cols = result.columns
    spread_key = "shift" if event else "rate"
    unit = "_m" if event else "_m_per_yr"
    spread = columns[f"{spread_key}_p95{unit}"] - columns[f"{spread_key}_p05{unit}"]
    out = {}
    for i, f in enumerate(formulas):
        q_run = np.asarray(cols[f"q_{f}_m3_per_yr"], dtype=float)
        top = float(np.max(np.abs(q_run))) if q_run.size else 0.0
        entry = {
            "transport": float(np.max(np.abs(net_nominal[:, i] - q_run)) / top) if top > 0 else 0.0
        }
        if gross and f != primary:
            out[f] = entry  # one-way parts of the run are the primary formula's only
            continue
        dqdx_run = (
            np.asarray(cols["dqdx_m2_per_yr"], dtype=float)
            if gross
            else face_budget(
                q_run,
                np.zeros_like(q_run),
                transects.part_id,
                transects.spacing_m,
                transects.part_closed,
                **budget_kw,
            ).dqdx_m2_per_yr
        )
        diff = np.abs(dqdx_nominal[:, i] - dqdx_run) * years / active
        ok = ~left_out & np.isfinite(diff) & (spread > 1e-9 * max(np.nanmax(spread), 1e-300))
        entry["metric_vs_spread"] = float(np.max(diff[ok] / spread[ok])) if ok.any() else 0.0
        out[f] = entry
    return out


def _factors(study: Study, blocks) -> list[str]:
    """The inputs with a spread, in a fixed order: the factors of the sensitivity analysis."""
    out = []
    for name in UNCERTAIN_INPUTS:
        d = study.uncertainty["inputs"].get(name)
        if d is None:
            continue
        spread = d["high"] > d["low"] if d["distribution"] == "uniform" else d["sd"] > 0
        if spread:
            out.append(name)
    if len(ensemble_formulas(study)) > 1:
        out.append(FORMULA_FACTOR)
    if blocks is not None:
        out.append(RECORD_FACTOR)
    return out


def _design(study: Study, factors: list[str]) -> tuple[Draws, int]:
    """The columns to evaluate: the members (A), then B and every AB_i when there are factors."""
    a = draw(study)
    n = len(a)
    if not factors:
        return a, 0
    b = draw(study, n, stream=_SENSITIVITY_STREAM, first_key=n)
    parts = [a, b]
    for name in factors:
        values = dict(a.values)
        formula, key = a.formula, a.record_key
        if name == FORMULA_FACTOR:
            formula = b.formula
        elif name == RECORD_FACTOR:
            key = b.record_key
        else:
            values[name] = b.values[name]
        parts.append(Draws(values, formula, key))
    return Draws.concat(parts), len(factors)


def run_ensemble(
    result: ScenarioResult,
    study: Study,
    climate: WaveClimate,
    transects: Transects,
    sign: np.ndarray,
    *,
    point_index: np.ndarray | None,
    exposure: Exposure | None,
    structures: Structures | None,
    shore: np.ndarray,
    coefficients: dict[str, float],
) -> EnsembleResult:
    """The ensemble of one evaluated scenario (:func:`shoreline.run.evaluate` gave ``result``).

    The members share the scenario's coast, transects, sheltering, shore types and closure
    depth (the Hallermeier depth of the reference record is not recomputed per member);
    ``coefficients`` are the run's (after any calibration), which the members' draws scale.
    """
    from shoreline.run import LEFT_OUT, budget_scale_m

    t_start = _time.perf_counter()
    u = study.uncertainty
    n = len(transects)
    if climate.n_points == n and climate.point_lon is None:
        point_of = np.arange(n)
    elif point_index is None or climate.n_points == 1:
        point_of = np.zeros(n, dtype=np.intp)
    else:
        point_of = np.asarray(point_index)
    where = "the reference record" if result.name == "reference" else f"{result.name!r}'s record"
    blocks = record_blocks(climate, u["record_blocks"], where, f"{study.path.name}: ")
    factors = _factors(study, blocks)
    cols, d = _design(study, factors)
    m_members = u["members"]
    values = _column_values(study, cols)
    formulas = ensemble_formulas(study)

    # the shapes: what the transport sums depend on beyond exact multipliers (two resamples
    # that draw every block as often are one shape)
    n_blocks = 1 if blocks is None else blocks[1].size
    col_weights = (
        np.ones((len(cols), 1))
        if blocks is None
        else block_weights(u["seed"], cols.record_key, n_blocks)
    )
    shape_rows = np.column_stack(
        [
            cols.formula.astype(float),
            values["direction_bias_deg"],
            values["hs_factor"],
            values["breaker_index"],
            col_weights,
        ]
    )
    shapes, shape_of = np.unique(shape_rows, axis=0, return_inverse=True)
    shape_of = shape_of.reshape(-1)
    # and the study's own settings, once per formula, with the record as it is (the check
    # against the run)
    gamma0 = float(study["model"]["breaker_index"])
    nominal = np.array([[i, 0.0, 1.0, gamma0] + [1.0] * n_blocks for i in range(len(formulas))])
    shapes = np.vstack([shapes, nominal])
    weights = shapes[:, 4:]
    m, s = study["model"], study["sediment"]
    has_structures = structures is not None and len(structures) > 0
    chain = _Chain(
        climate=climate,
        normal=np.asarray(transects.normal_az_deg, dtype=float),
        sign=np.where(np.asarray(sign, dtype=float) < 0, -1.0, 1.0),
        point_of=point_of,
        weight=None if exposure is None else exposure.share,
        exposure=exposure,
        physics={
            "breaking_method": m["breaking"],
            "cerc_k": coefficients["cerc"],
            "kamphuis_coefficient": coefficients["kamphuis"],
            "d50_mm": s["d50_mm"],
            "slope": s["slope"],
            "water_density_kg_m3": m["water_density_kg_m3"],
            "sediment_density_kg_m3": s["density_kg_m3"],
            "porosity": s["porosity"],
        },
        formulas=formulas,
        gross=has_structures and bool(np.any(np.asarray(structures.bypass) < 1.0)),
        angle_step_deg=m["angle_step_deg"],
        block_of=None if blocks is None else blocks[0],
        n_blocks=n_blocks,
        seed=u["seed"],
    )
    shape_cols = {
        "direction_bias_deg": shapes[:, 1],
        "hs_factor": shapes[:, 2],
        "breaker_index": shapes[:, 3],
    }
    elements = shapes.shape[0] * n * climate.n_steps
    direct = elements <= DIRECT_ELEMENTS or m["angle_step_deg"] <= 0
    t0 = _time.perf_counter()
    sums = (_direct_sums if direct else _table_sums)(chain, shape_cols, weights)
    t_sums = _time.perf_counter() - t0

    # unit transport and budget per shape (the shape's formula, study coefficients)
    per_year = transport.SECONDS_PER_YEAR / sums.total_s  # (shapes,)
    shape_formula = shapes[:, 0].astype(int)
    net = np.empty((n, shapes.shape[0]))
    gross = np.empty((n, shapes.shape[0])) if chain.gross else None
    for i, f in enumerate(formulas):
        sel = shape_formula == i
        net[:, sel] = sums.net[f][:, sel] * per_year[sel]
        if gross is not None:
            gross[:, sel] = sums.gross[f][:, sel] * per_year[sel]
    left_out = np.isin(shore, LEFT_OUT)
    budget_kw = {
        "sigma_m": budget_scale_m(transects),
        "excluded": left_out,
        "hard": shore == "non_erodible",
        "structure_face": structures.face if has_structures else None,
        "structure_bypass": structures.bypass if has_structures else None,
    }
    dqdx_unit = np.empty_like(net)
    for c0 in range(0, net.shape[1], _COLUMN_CHUNK):
        sl = slice(c0, c0 + _COLUMN_CHUNK)
        if gross is None:
            pos, neg = net[:, sl], np.zeros_like(net[:, sl])
        else:
            pos = 0.5 * (gross[:, sl] + net[:, sl])
            neg = net[:, sl] - pos
        dqdx_unit[:, sl] = face_budget(
            pos, neg, transects.part_id, transects.spacing_m, transects.part_closed, **budget_kw
        ).dqdx_m2_per_yr
    total = sums.total_s[None, :]
    sheltered_unit = np.clip(1.0 - sums.open_s / total, 0.0, 1.0) >= 1.0 - 1e-12

    # per column: exact multipliers on the transport and the rate
    scale = np.empty(len(cols))
    for i, f in enumerate(formulas):
        sel = cols.formula == i
        scale[sel] = _transport_scale(study, values, f)[sel]
    dc = np.broadcast_to(np.asarray(result.closure_depth_m, dtype=float), (n,))
    event = "shoreline_shift_m" in result.columns
    k = study["classify"]
    band = k["event_stable_band_m"] if event else k["stable_band_m_per_yr"]
    years = result.info["event_duration_h"] * 3600.0 / transport.SECONDS_PER_YEAR if event else 1

    def evaluate_columns(idx: np.ndarray):
        sh = shape_of[idx]
        q = net[:, sh] * scale[idx]
        dqdx = dqdx_unit[:, sh] * scale[idx]
        closure = values["closure_depth_m"][idx]
        active = np.where(np.isnan(closure)[None, :], dc[:, None], closure[None, :])
        active = active + values["berm_height_m"][idx][None, :]
        with np.errstate(invalid="ignore"):
            metric = -dqdx * years / active
        shelter = sheltered_unit[:, sh]
        metric = np.where(shelter & (dqdx == 0), 0.0, metric)
        live = ~shelter & ~left_out[:, None]
        if band > 0:
            ero, acc = (metric <= -band) & live, (metric >= band) & live
        else:
            ero, acc = (metric < 0) & live, (metric > 0) & live
        return q, dqdx, metric, ero, acc, shelter

    members = np.arange(m_members)
    q_m, dqdx_m, metric_m, ero_m, acc_m, shelter_m = evaluate_columns(members)
    columns = _transect_columns(q_m, metric_m, ero_m, acc_m, shelter_m, left_out, event)
    check = _check(
        result,
        formulas,
        net[:, -len(formulas) :],
        dqdx_unit[:, -len(formulas) :],
        columns,
        dc + study["model"]["berm_height_m"],
        years,
        left_out,
        event,
        chain.gross,
        budget_kw,
        transects,
        study["model"]["primary"],
    )
    warnings = [
        f"[{result.name}] ensemble: at the study's own settings the members' {f} transport, "
        "read off tables over normal nodes, differs from the run's by up to "
        f"{c['metric_vs_spread'] * 100:.0f} % of the p05-p95 spread of the "
        f"{'shift' if event else 'rate'} at a transect (the tables' node bound, largest for "
        "Kamphuis near normal incidence with directions in whole degrees: docs/methods.md)"
        for f, c in check.items()
        if c.get("metric_vs_spread", 0.0) > CHECK_WARN_SHARE
    ]
    hot = result.hotspots

    def outputs(q, metric, ero, acc) -> np.ndarray:
        """Outputs of the sensitivity analysis: coast mean net transport, hotspot mean rates."""
        open_coast = ~left_out
        rows = [np.mean(q[open_coast], axis=0) if open_coast.any() else np.zeros(q.shape[1])]
        rows += [np.mean(metric[h.members], axis=0) for h in hot]
        return np.asarray(rows)

    probability = [
        float(
            np.mean(np.mean((ero_m if h.klass == "erosion" else acc_m)[h.members], axis=0) >= 0.5)
        )
        for h in hot
    ]
    first = total_idx = se = np.zeros((1 + len(hot), 0))
    if d:
        y = [outputs(q_m, metric_m, ero_m, acc_m)]
        for c0 in range(m_members, len(cols), _COLUMN_CHUNK):
            q, _, metric, ero, acc, _ = evaluate_columns(
                np.arange(c0, min(len(cols), c0 + _COLUMN_CHUNK))
            )
            y.append(outputs(q, metric, ero, acc))
        y = np.concatenate(y, axis=1)
        f_a, f_b = y[:, :m_members], y[:, m_members : 2 * m_members]
        f_ab = np.stack([y[:, (2 + i) * m_members : (3 + i) * m_members] for i in range(d)])
        first, total_idx = sobol_first_total(f_a, f_b, f_ab)
        se = _bootstrap_se(f_a, f_b, f_ab, u["seed"])

    def indices(row: int) -> dict[str, Any]:
        out = {
            "first_order": dict(zip(factors, first[row].tolist(), strict=True)),
            "first_order_se": dict(zip(factors, se[row].tolist(), strict=True)),
            "total_order": dict(zip(factors, total_idx[row].tolist(), strict=True)),
            "main_input": factors[int(np.argmax(first[row]))] if factors else None,
        }
        return out

    hotspots = [
        {
            "hotspot_id": h.hotspot_id,
            "class": h.klass,
            "probability": p,
            "likelihood": likelihood(p),
            **indices(i + 1),
        }
        for i, (h, p) in enumerate(zip(hot, probability, strict=True))
    ]
    info = {
        "members": m_members,
        "engine": "direct" if direct else "tables",
        "evaluations": len(cols),
        "distinct_transport_sums": int(shapes.shape[0]),
        "factors": factors,
        "seconds": round(_time.perf_counter() - t_start, 3),
        "seconds_transport_sums": round(t_sums, 3),
        "check": check,
    }
    if not direct:
        info["hs_factor_nodes"] = _lobatto(
            float(shapes[:, 2].min()), float(shapes[:, 2].max()), HS_NODES
        ).tolist()
        info["breaker_index_nodes"] = _lobatto(
            float(shapes[:, 3].min()), float(shapes[:, 3].max()), GAMMA_NODES
        ).tolist()
    if blocks is not None:
        info["blocks"] = blocks[1].tolist()
    return EnsembleResult(
        members=list(member_settings(study, climate)),
        event=event,
        q_net_m3_per_yr=q_m,
        dqdx_m2_per_yr=dqdx_m,
        metric=metric_m,
        columns=columns,
        hotspots=hotspots,
        coast=indices(0),
        factors=factors,
        info=info,
        warnings=warnings,
    )


def _transect_columns(q, metric, ero, acc, shelter, left_out, event) -> dict[str, np.ndarray]:
    """Quantiles, probabilities and the likelihood word of every transect (members on axis 1).

    Quantiles are numpy's default (linear interpolation between order statistics, Hyndman &
    Fan 1996 type 7). A transect left out of the budget gets NaN and ``excluded``; one no
    member's waves reach, ``sheltered``.
    """
    levels = (0.05, 0.5, 0.95)
    names = ("p05", "p50", "p95")
    with np.errstate(invalid="ignore"):
        mq = np.quantile(metric, levels, axis=1)
        qq = np.quantile(q, levels, axis=1)
    out: dict[str, np.ndarray] = {}
    for name, values in zip(names, mq, strict=True):
        key = f"shift_{name}_m" if event else f"rate_{name}_m_per_yr"
        out[key] = np.where(left_out, np.nan, values)
    for name, values in zip(names, qq, strict=True):
        out[f"q_{name}_m3_per_yr"] = values
    p_e = ero.mean(axis=1)
    p_a = acc.mean(axis=1)
    out["p_erosion"] = np.where(left_out, np.nan, p_e)
    out["p_accretion"] = np.where(left_out, np.nan, p_a)
    p_s = 1.0 - p_e - p_a
    best = np.argmax(np.column_stack([p_e, p_a, p_s]), axis=1)
    top = np.choose(best, [p_e, p_a, p_s])
    outcome = np.array(["erosion", "accretion", "stable"])[best]
    words = np.array([f"{likelihood(p)} {o}" for p, o in zip(top, outcome, strict=True)])
    words[shelter.all(axis=1)] = "sheltered"
    words[left_out] = "excluded"
    out["confidence"] = words.astype(str)
    return out


def attach(
    result: ScenarioResult,
    study: Study,
    climate: WaveClimate,
    transects: Transects,
    sign: np.ndarray,
    timings: dict[str, float],
    **chain: Any,
) -> None:
    """Run the ensemble of a scenario if the study has ``[uncertainty]``; add it to ``result``.

    Stores the :class:`EnsembleResult` as ``result.ensemble``, merges its transect columns
    into ``result.columns`` and its time into ``timings``. Without ``[uncertainty]`` nothing
    happens. ``chain`` holds the keywords of :func:`run_ensemble`.
    """
    if not study.uncertainty:
        return
    t0 = _time.perf_counter()
    result.ensemble = run_ensemble(result, study, climate, transects, sign, **chain)
    result.columns |= result.ensemble.columns
    timings[f"ensemble:{result.name}"] = _time.perf_counter() - t0
