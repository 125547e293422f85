"""Sediment budget along the shore: gradients, shoreline change rates, classes and hotspots.

The one-line idea of shoreline change (Pelnard-Considère 1956; CEM 2002, Part III-2): a shore
of active profile height ``DB + DC`` (berm height plus closure depth) moves seaward where the
longshore transport decreases along the shore and landward where it increases,

    dy/dt = -(1 / (DB + DC)) dQ/dx.

Everything here works per shore part on transects at uniform spacing; no gradient is ever taken
across the gap between two parts.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

#: The classes a transect can get, in the order used for codes.
CLASSES = ("erosion", "accretion", "stable", "sheltered", "excluded")


def alongshore_gradient(
    q: np.ndarray, part_id: np.ndarray, spacing_m: np.ndarray, closed: np.ndarray
) -> np.ndarray:
    """Along-shore gradient dQ/dx of transport, part by part.

    Central differences inside each part; one-sided (first order) at the ends of open parts;
    periodic on closed parts. A part with a single transect has gradient 0.

    Parameters
    ----------
    q : array of shape (n,)
        Transport at each transect [any unit, e.g. m3/yr], ordered by part then chainage.
    part_id : int array of shape (n,)
        The shore part of each transect; transects of one part are contiguous.
    spacing_m : array of shape (n,)
        Uniform transect spacing of each transect's part [m].
    closed : bool array of shape (n,)
        Whether each transect's part is a closed ring (periodic).

    Returns
    -------
    ndarray of shape (n,)
        dQ/dx [unit of q per m].

    Examples
    --------
    >>> q = np.array([0.0, 1.0, 4.0])
    >>> alongshore_gradient(q, np.zeros(3, int), np.ones(3), np.zeros(3, bool))
    array([1., 2., 3.])
    """
    q = np.asarray(q, dtype=float)
    out = np.zeros_like(q)
    for start, stop in part_slices(part_id):
        seg = q[start:stop]
        dx = float(spacing_m[start])
        if stop - start < 2:
            continue
        if closed[start]:
            out[start:stop] = (np.roll(seg, -1) - np.roll(seg, 1)) / (2.0 * dx)
        else:
            out[start:stop] = np.gradient(seg, dx, edge_order=1)
    return out


def part_slices(part_id: np.ndarray) -> list[tuple[int, int]]:
    """Return ``(start, stop)`` index pairs of the contiguous runs of each part.

    Examples
    --------
    >>> part_slices(np.array([0, 0, 1, 1, 1]))
    [(0, 2), (2, 5)]
    """
    part_id = np.asarray(part_id)
    if part_id.size == 0:
        return []
    cuts = np.flatnonzero(np.diff(part_id) != 0) + 1
    edges = np.concatenate([[0], cuts, [part_id.size]])
    return [(int(a), int(b)) for a, b in zip(edges[:-1], edges[1:], strict=True)]


def shoreline_change_rate(
    dqdx_m2_per_yr: np.ndarray, closure_depth_m: float | np.ndarray, berm_height_m: float
) -> np.ndarray:
    """Shoreline change rate from the transport gradient (one-line continuity).

    Parameters
    ----------
    dqdx_m2_per_yr : array
        Along-shore gradient of the volumetric transport [m3/yr per m].
    closure_depth_m : float or array
        Closure depth DC [m].
    berm_height_m : float
        Berm height DB [m].

    Returns
    -------
    ndarray
        Rate [m/yr]: positive = accretion (shoreline moves seaward), negative = erosion.

    Notes
    -----
    ``rate = -dQ/dx / (DB + DC)`` (CEM 2002, Part III-2; Pelnard-Considère 1956).

    Examples
    --------
    >>> float(shoreline_change_rate(np.array(10.0), 8.0, 2.0))
    -1.0
    """
    return -np.asarray(dqdx_m2_per_yr, dtype=float) / (
        np.asarray(closure_depth_m, dtype=float) + berm_height_m
    )


def classify(
    rate_m_per_yr: np.ndarray,
    sheltered: np.ndarray,
    stable_band_m_per_yr: float,
    excluded: np.ndarray | None = None,
) -> np.ndarray:
    """Class of each transect: ``erosion``, ``accretion``, ``stable``, ``sheltered``, ``excluded``.

    ``excluded`` where the budget leaves the transect out (not open coast:
    :mod:`shoreline.reaches`), ``sheltered`` where no wave reaches the shore (``sheltered``
    true), otherwise ``stable`` where ``|rate| < stable_band_m_per_yr``, else erosion
    (rate < 0) or accretion (rate > 0).

    Examples
    --------
    >>> classify(np.array([-1.0, 0.1, 2.0, 0.0]), np.array([0, 0, 0, 1], bool), 0.5).tolist()
    ['erosion', 'stable', 'accretion', 'sheltered']
    """
    rate = np.asarray(rate_m_per_yr, dtype=float)
    out = np.full(rate.shape, "stable", dtype=object)
    out[rate <= -stable_band_m_per_yr] = "erosion"
    out[rate >= stable_band_m_per_yr] = "accretion"
    out[np.abs(rate) < stable_band_m_per_yr] = "stable"
    out[np.asarray(sheltered, dtype=bool)] = "sheltered"
    if stable_band_m_per_yr == 0:
        out[(rate == 0) & ~np.asarray(sheltered, dtype=bool)] = "stable"
    if excluded is not None:
        out[np.asarray(excluded, dtype=bool)] = "excluded"
    return out.astype(str)


@dataclass(frozen=True)
class Hotspot:
    """A contiguous run of transects of one non-stable class."""

    hotspot_id: int
    klass: str
    part_id: int
    members: np.ndarray  # transect indices, in along-shore order (may wrap on closed parts)
    start_chainage_m: float
    end_chainage_m: float
    length_m: float
    mean_rate_m_per_yr: float
    peak_rate_m_per_yr: float
    volume_m3_per_yr: float


def find_hotspots(
    klass: np.ndarray,
    rate_m_per_yr: np.ndarray,
    chainage_m: np.ndarray,
    part_id: np.ndarray,
    spacing_m: np.ndarray,
    closed: np.ndarray,
    active_height_m: float | np.ndarray,
    min_length_m: float,
) -> list[Hotspot]:
    """Hotspots: contiguous runs of one class (erosion or accretion) at least ``min_length_m``.

    Each transect stands for one spacing of shore, so a run of ``n`` transects is ``n *
    spacing`` long, from half a spacing before its first transect to half a spacing after its
    last (clipped to the ends of open parts). On closed parts a run may wrap past chainage 0;
    its ``start_chainage_m`` is then larger than its ``end_chainage_m``.

    ``volume_m3_per_yr`` is the sum of ``rate * spacing * active_height`` over the run: the
    volume the stretch gains (+) or loses (-) each year.

    Examples
    --------
    >>> k = np.array(["stable", "erosion", "erosion", "erosion", "stable"])
    >>> r = np.array([0.0, -1.0, -2.0, -1.0, 0.0])
    >>> h = find_hotspots(k, r, np.arange(5) * 100.0, np.zeros(5, int), np.full(5, 100.0),
    ...                   np.zeros(5, bool), 10.0, 300.0)
    >>> (h[0].klass, h[0].length_m, h[0].peak_rate_m_per_yr, h[0].volume_m3_per_yr)
    ('erosion', 300.0, -2.0, -4000.0)
    """
    klass = np.asarray(klass).astype(str)
    rate = np.asarray(rate_m_per_yr, dtype=float)
    height = np.broadcast_to(np.asarray(active_height_m, dtype=float), rate.shape)
    found: list[Hotspot] = []
    for start, stop in part_slices(part_id):
        n = stop - start
        idx = np.arange(start, stop)
        kls = klass[start:stop]
        dx = float(spacing_m[start])
        is_closed = bool(closed[start])
        if is_closed:
            # rotate so the ring starts where the class changes (no run is cut at index 0)
            change = np.flatnonzero(kls != np.roll(kls, 1))
            shift = int(change[0]) if change.size else 0
            idx = np.roll(idx, -shift)
            kls = np.roll(kls, -shift)
        bounds = np.flatnonzero(kls[1:] != kls[:-1]) + 1
        for run in np.split(np.arange(n), bounds):
            name = kls[run[0]]
            if name not in ("erosion", "accretion"):
                continue
            members = idx[run]
            length = len(run) * dx
            first, last = chainage_m[members[0]], chainage_m[members[-1]]
            if is_closed:
                ring = n * dx
                start_ch, end_ch = (first - dx / 2) % ring, (last + dx / 2) % ring
                if len(run) == n:
                    start_ch, end_ch = 0.0, ring
            else:
                lo = chainage_m[start]
                hi = chainage_m[stop - 1]
                start_ch = max(first - dx / 2, lo)
                end_ch = min(last + dx / 2, hi)
                length = end_ch - start_ch
            if length < min_length_m:
                continue
            r = rate[members]
            peak = float(r.min()) if name == "erosion" else float(r.max())
            found.append(
                Hotspot(
                    hotspot_id=0,
                    klass=str(name),
                    part_id=int(part_id[start]),
                    members=members,
                    start_chainage_m=float(start_ch),
                    end_chainage_m=float(end_ch),
                    length_m=float(length),
                    mean_rate_m_per_yr=float(r.mean()),
                    peak_rate_m_per_yr=peak,
                    volume_m3_per_yr=float(np.sum(r * dx * height[members])),
                )
            )
    return [replace(h, hotspot_id=i + 1) for i, h in enumerate(found)]


# --------------------------------------------------------------------------------------------
# Face fluxes at a consistent along-shore scale
# --------------------------------------------------------------------------------------------

#: The smoothing weights are cut at this many standard deviations.
_CUT_SIGMAS = 2.5


@dataclass(frozen=True)
class FaceBudget:
    """The transport gradient from face fluxes, and what each structure does.

    ``dqdx_m2_per_yr`` is NaN at excluded transects. ``q_smooth`` is the transport smoothed at
    the budget's scale (the field whose face fluxes make the gradient). Per structure:
    ``arriving`` (gross, both sides), ``passing`` and ``trapped`` [m3/yr].
    """

    dqdx_m2_per_yr: np.ndarray
    q_smooth: np.ndarray
    arriving: np.ndarray
    passing: np.ndarray
    trapped: np.ndarray


def smooth_along_shore(
    values: list[np.ndarray],
    part_id: np.ndarray,
    spacing_m: np.ndarray,
    closed: np.ndarray,
    sigma_m: float,
    segment: np.ndarray | None = None,
    slopes: bool = False,
) -> list[np.ndarray]:
    """Gaussian-weighted local linear fits along the shore, within segments.

    Each value at transect i becomes the intercept at i of a straight line fitted by weighted
    least squares to the values of the transects of the same ``segment`` within
    ``+-2.5 sigma`` (Gaussian weights ``exp(-u^2 / 2 sigma^2)``, u the along-shore distance):
    a Gaussian smoothing inside a segment that keeps linear trends up to its ends (locally
    weighted regression, Cleveland 1979). Segments never join different parts; closed parts
    without a cut wrap. ``sigma_m`` <= 0 returns copies. With ``slopes`` the fitted slopes
    [unit per m] follow the values in the returned list. A value array of shape (n, m) is
    m fields along the same transects (ensemble members), each smoothed as if alone.

    Examples
    --------
    A linear trend is kept exactly, to the ends:

    >>> q = np.arange(6.0) * 10.0
    >>> s = smooth_along_shore([q], np.zeros(6, int), np.full(6, 100.0), np.zeros(6, bool), 150.0)
    >>> bool(np.allclose(s[0], q))
    True
    """
    values = [np.asarray(v, dtype=float) for v in values]
    n = len(part_id)
    if sigma_m <= 0 or n == 0:
        return [v.copy() for v in values] + ([np.zeros(v.shape) for v in values] if slopes else [])
    part_id = np.asarray(part_id)
    seg = np.zeros(n, dtype=int) if segment is None else np.asarray(segment)
    first = np.zeros(n, dtype=int)
    size = np.zeros(n, dtype=int)
    for a, b in part_slices(part_id):
        first[a:b], size[a:b] = a, b - a
    dx = np.asarray(spacing_m, dtype=float)
    ring = np.asarray(closed, dtype=bool)
    reach = np.ceil(_CUT_SIGMAS * sigma_m / dx).astype(int)
    reach = np.where(ring, np.minimum(reach, (size - 1) // 2), np.minimum(reach, size - 1))
    big = int(reach.max()) if n else 0
    k = np.arange(-big, big + 1)
    out = [np.empty(v.shape) for v in values]
    grad = [np.empty(v.shape) for v in values]
    width = max([int(np.prod(v.shape[1:])) for v in values] + [1])  # fields per transect
    chunk = max(1, 2_000_000 // ((2 * big + 1) * width))
    for a0 in range(0, n, chunk):
        rows = np.arange(a0, min(n, a0 + chunk))
        pos = rows[:, None] - first[rows, None] + k[None, :]
        sz = size[rows, None]
        inside = np.abs(k)[None, :] <= reach[rows, None]
        inside &= ring[rows, None] | ((pos >= 0) & (pos < sz))
        idx = first[rows, None] + np.where(
            ring[rows, None], np.mod(pos, sz), np.clip(pos, 0, sz - 1)
        )
        inside &= seg[idx] == seg[rows, None]
        u = k[None, :] * dx[rows, None]
        w = np.exp(-0.5 * (u / sigma_m) ** 2) * inside
        sw = w.sum(axis=1)
        ubar = (w * u).sum(axis=1) / sw
        du = u - ubar[:, None]
        suu = (w * du * du).sum(axis=1)
        for v, o, g in zip(values, out, grad, strict=True):
            vv = v[idx]  # (rows, window) or (rows, window, m)
            extra = (None,) * (v.ndim - 1)
            wk, duk = w[(..., *extra)], du[(..., *extra)]
            vbar = (wk * vv).sum(axis=1) / sw[(..., *extra)]
            with np.errstate(invalid="ignore", divide="ignore"):
                slope = (wk * duk * (vv - vbar[:, None])).sum(axis=1) / suu[(..., *extra)]
            slope = np.where(suu[(..., *extra)] > 0, slope, 0.0)
            o[rows] = vbar - slope * ubar[(..., *extra)]
            g[rows] = slope
    return out + (grad if slopes else [])


def face_budget(
    q_pos: np.ndarray,
    q_neg: np.ndarray,
    part_id: np.ndarray,
    spacing_m: np.ndarray,
    closed: np.ndarray,
    sigma_m: float = 0.0,
    excluded: np.ndarray | None = None,
    hard: np.ndarray | None = None,
    structure_face: np.ndarray | None = None,
    structure_bypass: np.ndarray | None = None,
    *,
    pos_change: np.ndarray | None = None,
    neg_change: np.ndarray | None = None,
    face_change: np.ndarray | None = None,
) -> FaceBudget:
    """Along-shore transport gradient from face fluxes, at a consistent scale.

    The one-line budget of each transect's cell is ``dQ/dx = (F_right - F_left) / width``.

    - **Scale.** The transport (its parts toward increasing and decreasing chainage, ``q_pos``
      and ``q_neg``) is first smoothed along the shore with :func:`smooth_along_shore` at
      ``sigma_m`` (the orientation fit's scale), so the gradient is taken at the scale the
      orientation was measured at and one transect cannot make a hotspot pair.
    - **Faces.** Between two transects of one segment the face flux is the mean of their
      smoothed transports (a central difference). At the open end of a segment (the end of an
      open part, or a neighbour that is ``excluded``) the end transect stands for half a
      spacing and its own transport leaves or enters (a one-sided difference): nothing is
      taken from an excluded neighbour.
    - **Structures.** A structure on the face after transect ``i`` (``structure_face``) with
      bypass share ``b`` < 1 cuts the smoothing, and its face carries ``b`` times what arrives:
      ``F = b (Q+_i + Q-_j)``, the transport toward it from each side, each side's smoothed
      field at the face midpoint from that side's own fit (``i`` before the face, ``j`` after
      it): what the updrift side carries, not an average with a sheltered lee. Arriving
      (gross) ``Q+_i - Q-_j``; passing ``b`` times it; trapped the rest. Only the two cells
      beside the face change, by equal and opposite volumes: sand is conserved. A structure
      with ``b = 1`` changes nothing.
    - **Hard reaches** (``hard``: rock, seawalls) cannot erode: along a run of hard transects
      the flux toward increasing chainage may only fall (a running minimum from its upstream
      face) and that toward decreasing chainage likewise, so transport out of the reach is
      limited to what arrives (the non-erodible boundary of one-line models, Hanson and
      Kraus 1986, from memory).

    - **Changes added after the smoothing** (optional, not smoothed): ``pos_change`` and
      ``neg_change`` are added to each transect's own transport toward increasing and
      decreasing chainage, where a transect's own transport enters the budget (the open end of
      a segment, beside a structure); ``face_change`` to the flux on each transect's right
      face where that face lies between two transects of one segment. The forward projection
      (:mod:`shoreline.projection`) gives here the response of the transport to the
      shoreline's own turning, resolved at the transect spacing; without them nothing changes.

    ``sum(dQ/dx x width)`` over a segment equals its end fluxes' difference exactly.

    ``q_pos`` and ``q_neg`` of shape (n, m) are m transport fields (ensemble members) on the
    same transects: every result gets the trailing axis, each column as if alone.
    """
    q_pos = np.asarray(q_pos, dtype=float)
    q_neg = np.asarray(q_neg, dtype=float)
    n = q_pos.shape[0]
    trail = q_pos.shape[1:]
    part_id = np.asarray(part_id)
    dx = np.asarray(spacing_m, dtype=float)
    ring = np.asarray(closed, dtype=bool)
    ex = np.zeros(n, bool) if excluded is None else np.asarray(excluded, dtype=bool)
    faces = np.zeros(0, int) if structure_face is None else np.asarray(structure_face, int)
    bypass = np.zeros(0) if structure_bypass is None else np.asarray(structure_bypass, float)

    lay = face_layout(part_id, ring, ex, faces[bypass < 1.0])
    nxt, prev, cut, cut_left, seg = lay.nxt, lay.prev, lay.cut, lay.cut_left, lay.segment
    has_next = nxt >= 0
    ps, ns, dps, dns = smooth_along_shore(
        [q_pos, q_neg], part_id, dx, ring, sigma_m, seg, slopes=True
    )
    qs = ps + ns

    width = dx.copy()
    right = np.empty(q_pos.shape)
    left = np.empty(q_pos.shape)
    j = np.where(has_next, nxt, 0)
    inner = has_next & ~cut
    right[inner] = 0.5 * (qs[inner] + qs[j[inner]])
    if face_change is not None:
        right[inner] += np.asarray(face_change, dtype=float)[inner]
    if pos_change is not None or neg_change is not None:  # a transect's own transport
        ps = ps + (0.0 if pos_change is None else np.asarray(pos_change, dtype=float))
        ns = ns + (0.0 if neg_change is None else np.asarray(neg_change, dtype=float))
        qs = ps + ns
    # open segment ends: the end transect's own transport, half a cell
    right[cut] = qs[cut]
    width[cut] *= 0.5
    has_prev = prev >= 0
    left[has_prev & ~cut_left] = right[prev[has_prev & ~cut_left]]
    left[cut_left] = qs[cut_left]
    width[cut_left] *= 0.5

    arriving = np.zeros((faces.size, *trail))
    passing = np.zeros((faces.size, *trail))
    for s, (i, b) in enumerate(zip(faces, bypass, strict=True)):
        if nxt[i] < 0 or ex[i] or ex[nxt[i]]:
            continue
        k = nxt[i]
        # each side's field at the face, from that side's own fit
        arriving[s] = np.maximum(ps[i] + 0.5 * dx[i] * dps[i], 0.0) - np.minimum(
            ns[k] - 0.5 * dx[k] * dns[k], 0.0
        )
        passing[s] = b * arriving[s]
        if b < 1.0:
            up = np.maximum(ps[i] + 0.5 * dx[i] * dps[i], 0.0)
            down = np.minimum(ns[k] - 0.5 * dx[k] * dns[k], 0.0)
            flux = b * (up + down)
            right[i] = left[k] = flux
            width[i], width[k] = dx[i], dx[k]  # full cells on both sides of a structure

    if hard is not None:
        _limit_hard(np.asarray(hard, dtype=bool) & ~ex, left, right, nxt, prev)

    with np.errstate(invalid="ignore"):
        dqdx = (right - left) / width.reshape((n,) + (1,) * len(trail))
    dqdx[ex] = np.nan
    return FaceBudget(dqdx, qs, arriving, passing, arriving - passing)


@dataclass(frozen=True)
class FaceLayout:
    """How the cells of the face budget join: neighbours across each face, cuts, segments.

    ``nxt[i]`` is the transect across the right face of ``i`` (-1: none), ``prev[i]`` the one
    across its left face; ``cut[i]`` marks a cut on the right face of ``i`` (the end of an
    open part, an excluded neighbour, a blocking structure), ``cut_left[i]`` one on its left
    face; ``segment`` numbers the runs of transects between cuts (a ring without a cut is one
    segment).
    """

    nxt: np.ndarray
    prev: np.ndarray
    cut: np.ndarray
    cut_left: np.ndarray
    segment: np.ndarray


def face_layout(
    part_id: np.ndarray,
    closed: np.ndarray,
    excluded: np.ndarray | None = None,
    blocking_faces: np.ndarray | None = None,
) -> FaceLayout:
    """The faces and segments of :func:`face_budget` (see :class:`FaceLayout`).

    ``blocking_faces`` are the faces (index of the transect before each) of structures that
    let less than all the arriving transport pass.

    Examples
    --------
    >>> lay = face_layout(np.zeros(4, int), np.zeros(4, bool), None, np.array([1]))
    >>> lay.nxt.tolist(), lay.cut.tolist(), lay.segment.tolist()
    ([1, 2, 3, -1], [False, True, False, True], [0, 0, 1, 1])
    """
    part_id = np.asarray(part_id)
    n = part_id.size
    ring = np.asarray(closed, dtype=bool)
    ex = np.zeros(n, bool) if excluded is None else np.asarray(excluded, dtype=bool)
    nxt = np.arange(1, n + 1)
    for a, b in part_slices(part_id):
        nxt[b - 1] = a if ring[a] and b - a > 1 else -1
    has_next = nxt >= 0
    cut = ~has_next.copy()  # a cut on the right face of i
    cut[has_next] |= ex[has_next] | ex[nxt[has_next]]
    if blocking_faces is not None:
        cut[np.asarray(blocking_faces, dtype=int)] = True
    # segment ids: a new segment after every cut; a ring without a cut at its wrap face joins
    seg = np.concatenate([[0], np.cumsum(cut[:-1])]) if n else np.zeros(0, int)
    for a, b in part_slices(part_id):
        if ring[a] and not cut[b - 1]:
            seg[a:b][seg[a:b] == seg[b - 1]] = seg[a]
    prev = np.full(n, -1)
    prev[nxt[has_next]] = np.flatnonzero(has_next)
    has_prev = prev >= 0
    cut_left = ~has_prev.copy()
    cut_left[has_prev] = cut[prev[has_prev]]
    return FaceLayout(nxt, prev, cut, cut_left, seg)


def _limit_hard(hard, left, right, nxt, prev) -> None:
    """Limit the face fluxes along runs of hard transects so that none of them erodes."""
    n = hard.size
    start = hard & ~np.r_[False, hard[:-1]]
    for a in np.flatnonzero(start):
        run = [a]
        while nxt[run[-1]] >= 0 and hard[nxt[run[-1]]] and nxt[run[-1]] != a and len(run) < n:
            run.append(nxt[run[-1]])
        f = np.concatenate([left[run[0]][None], right[run]])
        pos = np.minimum.accumulate(np.maximum(f, 0.0), axis=0)
        neg = np.maximum.accumulate(np.minimum(f, 0.0)[::-1], axis=0)[::-1]
        f = pos + neg
        left[run[0]] = f[0]
        if prev[run[0]] >= 0:
            right[prev[run[0]]] = f[0]
        for m, i in enumerate(run):
            right[i] = f[m + 1]
            if nxt[i] >= 0:
                left[nxt[i]] = f[m + 1]
