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
CLASSES = ("erosion", "accretion", "stable", "sheltered")


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
    rate_m_per_yr: np.ndarray, sheltered: np.ndarray, stable_band_m_per_yr: float
) -> np.ndarray:
    """Class of each transect: ``erosion``, ``accretion``, ``stable`` or ``sheltered``.

    ``sheltered`` where no wave reaches the shore (``sheltered`` true), otherwise ``stable``
    where ``|rate| < stable_band_m_per_yr``, else erosion (rate < 0) or accretion (rate > 0).

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
