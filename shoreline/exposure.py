"""Sheltering by land and fetch over water, from the coast geometry.

For every transect, straight rays are cast over the water from a point seaward of the shore
point (by default 200 m, beyond the breaker line of everyday waves, and never past land met
along the normal), one per ``step_deg`` of TRUE azimuth, each ``max_distance_m`` long on the
ground, against the coast lines themselves (a headland shelters its bay) and any extra land
(islands, breakwaters, as polygons or lines). The *fetch* in a direction is the ground distance
over water to the first land met.

A direction is *open* when it lies within 90 degrees of the seaward normal and its ray meets no
land within ``max_distance_m`` that shelters: two screening rules keep land the ray does meet
from sheltering where a straight line overstates the shadow, namely

- a blocker narrower than the first Fresnel zone ``sqrt(L d)`` casts no shadow (waves diffract
  round it; Penney and Price 1952);
- the coast's own gentle curvature, met by a grazing ray kilometres along the shore, is not a
  shelter (waves that oblique refract along depth contours that follow the coast).

From the open directions come the *open share* of a directionally spread sea (the share of a
``cos^2s(dtheta/2)`` spread around each mean direction that arrives over open water; Mitsuyasu
et al. 1975), and whether the transect is on the *open coast* at all (its cosine-weighted view
of the open sea, against estuaries, harbour basins, river mouths and lagoon shores).

What is left out: refraction and diffraction are not computed, only used to decide which land
shelters; no reflection, no wave growth. See ``docs/methods.md``.

Directions are where waves (or wind) come FROM, degrees clockwise from true north, as
everywhere in this package: the ray for direction theta runs from the transect toward theta.

Examples
--------
A straight shore along grid east in UTM 31N, on its central meridian (grid north is true north
there, scale factor 0.9996), sea to the south, with a detached breakwater 500 m offshore:

>>> import numpy as np, pyproj, shapely
>>> from shoreline.coast import Transects
>>> t = Transects(transect_id=[0], part_id=[0], chainage_m=[5000.0], x_m=[500000.0],
...               y_m=[5000000.0], normal_az_deg=[180.0], spacing_m=[100.0],
...               part_closed=[False], working_crs=pyproj.CRS("EPSG:32631"))
>>> shore = shapely.LineString([(495000.0, 5000000.0), (505000.0, 5000000.0)])
>>> e = compute_exposure(t, [shore])
>>> float(e.exposure_deg[0])  # rays 90, 91, ..., 270 deg
181.0
>>> round(float(e.open_share(90.0)[0]), 9)  # a spread sea running along the shore: half
0.5
>>> breakwater = shapely.LineString([(499500.0, 4999500.0), (500500.0, 4999500.0)])
>>> e = compute_exposure(t, [shore], land=[breakwater])
>>> bool(e.is_open(180.0)[0]), bool(e.is_open(120.0)[0])
(False, True)
>>> round(float(e.fetch_toward(180.0)[0]), 2)  # 500 m of grid / k = 0.9996, less 200 m
300.2
"""

from __future__ import annotations

import os
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np
import shapely

from shoreline.coast import Transects, _frozen_array, _scale_and_north
from shoreline.errors import CoastError

__all__ = ["SEGMENT_M", "Exposure", "compute_exposure", "spreading_weights"]

#: Coast and land are cut into straight pieces at most this long (grid metres) for the spatial
#: index, so a query returns only the shore near a transect [m].
SEGMENT_M = 200.0

#: Default distance of the ray start seaward of the shore point [m] (see compute_exposure).
DEFAULT_START_M = 200.0

#: The ray start never comes closer to the shore point than this [m] (the former fixed start).
MIN_START_M = 20.0

#: Where land lies ahead along the normal before ``start_offset_m``, or beside the start, the
#: start is placed at this fraction of the distance to it.
START_FRACTION = 0.5

#: Default spreading parameter s of cos^2s(dtheta/2) (see compute_exposure) [-].
DEFAULT_SPREADING_S = 25.0

#: Default wavelength for the diffraction test of narrow blockers [m].
DEFAULT_WAVELENGTH_M = 100.0

#: Default of ``grazing_radius_m``: a grazing ray's first hit lying on a circle through the
#: shore point, tangent to the shore there, of at least this radius is the coast's own gentle
#: curvature, not a shelter [m] ...
GRAZING_RADIUS_M = 20000.0

#: ... for rays that leave within this angle of the shore's tangent [deg] ...
GRAZING_DEPARTURE_DEG = 30.0

#: ... and meet land that faces within this angle of the transect's normal [deg].
GRAZING_TURN_DEG = 60.0

#: Half-length of the stretch of line over which the direction of the land met is taken [m].
SMOOTH_M = 1000.0

#: Open coast: a view factor (cosine-weighted open view, 1 on a straight open coast) of at
#: least this [-].
OPEN_COAST_MIN_VIEW = 0.25

#: A closed view with no open ray within this angle of the normal is called "oblique" [deg].
OPEN_COAST_FACING_DEG = 60.0

#: Transects handled together; bounds the memory of the candidate pairs.
_CHUNK = 400

#: Threads casting the rays of chunks of transects.
_THREADS = min(2, os.cpu_count() or 1)

#: A chunk whose transects meet more candidate segments than this is split in two [pairs].
_MAX_PAIRS = 1_500_000

#: Rows convolved together for the open share.
_FFT_ROWS = 4096

#: Grid step used to estimate the gradient of the scale factor k at a ray's start [m].
_K_STEP_M = 1000.0

#: Angular slack when listing the rays that may cross a segment [deg]; the exact
#: intersection test then decides. Keeps a ray through a shared vertex on both neighbours.
_ANGLE_SLACK_DEG = 1e-6

#: Slack on the segment parameter in the intersection test (fraction of the segment).
_S_SLACK = 1e-9

#: A direction within this of 90 degrees from the normal counts as within 90 degrees [deg].
_EDGE_DEG = 1e-9

_POLYGON_TYPES = (3, 6)  # Polygon, MultiPolygon
_LINE_TYPES = (1, 2, 5)  # LineString, LinearRing, MultiLineString
_COLLECTION_TYPE = 7


@dataclass(frozen=True, eq=False)
class Exposure:
    """Open directions, open shares, fetch and open coast per transect (compute_exposure).

    Attributes
    ----------
    directions_deg : numpy.ndarray, shape (m,)
        Ray directions: ``0, step, 2 step, ...`` degrees, TRUE-north azimuths the waves or wind
        come FROM [deg]. Ray k stands for the directions within half a step of it.
    open : numpy.ndarray of bool, shape (n, m)
        Waves from that direction reach the ray start over open water: the direction is within
        90 degrees of the seaward normal and its ray meets no land within ``max_distance_m``
        that shelters (land too narrow to shadow, or the coast's own gentle curvature met by a
        grazing ray, does not: see :func:`compute_exposure`). False for transects with an
        undefined (NaN) normal.
    fetch_m : numpy.ndarray, shape (n, m)
        Ground distance from the ray start to the first land along the ray, capped at
        ``max_distance_m`` where no land is met; 0 where the direction is more than 90 degrees
        from the seaward normal (landward); NaN for transects with a NaN normal [m]. Purely
        geometric: land that does not shelter still ends the fetch.
    exposure_deg : numpy.ndarray, shape (n,)
        Total open width: number of open rays times the step [deg]; NaN for a NaN normal.
    open_from_deg, open_to_deg : numpy.ndarray, shape (n,)
        The widest contiguous open sector, clockwise from ``open_from_deg`` to ``open_to_deg``
        (wrap-aware: ``open_from_deg > open_to_deg`` when it spans north). Its edges are half a
        step outside the first and last open rays, so its width equals the run's share of
        ``exposure_deg``. NaN if no ray is open; 0 and 360 if every ray is open. Of equally wide
        sectors, the one ending first clockwise from north is given.
    max_distance_m : float
        Ray length on the ground [m].
    start_offset_m : float
        The requested distance of the ray start seaward of the shore point [m].
    share : numpy.ndarray, shape (n, m)
        Open share in [0, 1]: the share of the energy of a sea whose mean direction is
        ``directions_deg[j]``, spread as ``cos^2s(dtheta/2)``, that arrives over open water
        (within 90 degrees of the normal and open). Equal to ``open`` as floats when
        ``spreading_s`` is None; 0 for a NaN normal. Default (if not given): ``open``.
    start_m : numpy.ndarray, shape (n,)
        The ray start used per transect, on the ground seaward of the shore point [m]:
        ``start_offset_m``, or less where land is met along the normal; NaN for a NaN normal.
        Default: ``start_offset_m``.
    view_factor : numpy.ndarray, shape (n,)
        Cosine-weighted open view: ``sum(cos(angle to the normal) * step) / 2`` over the open
        rays (step in radians); 1 on a straight open coast, 0 with nothing open; NaN for a NaN
        normal [-]. Default: NaN.
    open_coast : numpy.ndarray of bool, shape (n,)
        The transect's view reaches the open sea: ``view_factor >= OPEN_COAST_MIN_VIEW``. False
        in estuaries, harbour basins, river mouths and on lagoon shores. Default: True.
    open_coast_reason : numpy.ndarray of str, shape (n,)
        ``"open"``; or why not: ``"narrow"`` (too little open view, some of it within
        ``OPEN_COAST_FACING_DEG`` of the normal), ``"oblique"`` (open rays only farther from
        the normal), ``"enclosed"`` (no open ray), ``"on land"`` (the ray start lies inside a
        land polygon), ``"no normal"``. Default: ``"open"``.
    spreading_s, wavelength_m, grazing_radius_m : float or None
        The settings used (None: that rule off).
    """

    directions_deg: np.ndarray
    open: np.ndarray
    fetch_m: np.ndarray
    exposure_deg: np.ndarray
    open_from_deg: np.ndarray
    open_to_deg: np.ndarray
    max_distance_m: float
    start_offset_m: float
    share: np.ndarray | None = None
    start_m: np.ndarray | None = None
    view_factor: np.ndarray | None = None
    open_coast: np.ndarray | None = None
    open_coast_reason: np.ndarray | None = None
    spreading_s: float | None = None
    wavelength_m: float | None = None
    grazing_radius_m: float | None = None

    def __post_init__(self):
        object.__setattr__(self, "directions_deg", _frozen_array(self.directions_deg, float))
        object.__setattr__(self, "open", _frozen_array(self.open, bool))
        for name in ("fetch_m", "exposure_deg", "open_from_deg", "open_to_deg"):
            object.__setattr__(self, name, _frozen_array(getattr(self, name), float))
        n, m = len(self.exposure_deg), len(self.directions_deg)
        for name in ("open", "fetch_m"):
            if getattr(self, name).shape != (n, m):
                raise ValueError(f"Exposure.{name} must have shape (n_transects, m) = ({n}, {m})")
        object.__setattr__(self, "max_distance_m", float(self.max_distance_m))
        object.__setattr__(self, "start_offset_m", float(self.start_offset_m))
        defaults = {
            "share": self.open,
            "start_m": np.full(n, self.start_offset_m),
            "view_factor": np.full(n, np.nan),
            "open_coast": np.ones(n, bool),
            "open_coast_reason": np.full(n, "open"),
        }
        dtypes = {"share": float, "open_coast": bool, "open_coast_reason": str}
        for name, default in defaults.items():
            value = default if getattr(self, name) is None else getattr(self, name)
            object.__setattr__(self, name, _frozen_array(value, dtypes.get(name, float)))
        if self.share.shape != (n, m):
            raise ValueError(f"Exposure.share must have shape (n_transects, m) = ({n}, {m})")
        for name in ("start_m", "view_factor", "open_coast", "open_coast_reason"):
            if getattr(self, name).shape != (n,):
                raise ValueError(f"Exposure.{name} must hold one value per transect ({n})")

    def __len__(self) -> int:
        """Return the number of transects."""
        return len(self.exposure_deg)

    @property
    def step_deg(self) -> float:
        """Angular step between rays [deg]."""
        return 360.0 / len(self.directions_deg)

    def _lookup(self, table, dir_deg, transect_index, fill):
        d = np.asarray(dir_deg, dtype=float)
        n = table.shape[0]
        if transect_index is None:
            idx = np.arange(n).reshape((n,) + (1,) * max(d.ndim - 1, 0))
        else:
            idx = np.asarray(transect_index)
            if not np.issubdtype(idx.dtype, np.integer):
                raise ValueError(f"transect_index must hold integers; got an array of {idx.dtype}")
        try:
            idx, d = np.broadcast_arrays(idx, d)
        except ValueError as exc:
            raise ValueError(
                f"dir_deg of shape {d.shape} does not broadcast against the transects "
                f"(shape {idx.shape}); put transects on the first axis, e.g. (n, t) or (1, t)"
            ) from exc
        ok = np.isfinite(d)
        m = table.shape[1]
        k = np.rint(np.where(ok, d, 0.0) / self.step_deg).astype(np.int64) % m
        return np.where(ok, table[idx, k], fill)

    def is_open(self, dir_deg, transect_index=None) -> np.ndarray:
        """Whether waves from ``dir_deg`` reach each transect over open water (nearest ray).

        Parameters
        ----------
        dir_deg : float or array_like
            Directions waves come FROM, clockwise from true north [deg]. Transects are on the
            first axis: a scalar, shape (n,), (n, t) or (1, t) with ``transect_index`` None.
        transect_index : array_like of int, optional
            Transect of each direction; broadcasts against ``dir_deg``. Default: all transects
            along the first axis.

        Returns
        -------
        numpy.ndarray of bool
            Shape (n,) for a scalar direction, else the broadcast shape. The nearest ray decides
            (ray k stands for directions within half a step of it). A NaN direction gives False.
        """
        return self._lookup(self.open, dir_deg, transect_index, False).astype(bool)

    def open_share(self, dir_deg, transect_index=None) -> np.ndarray:
        """Share of a spread sea of mean direction ``dir_deg`` that arrives over open water.

        Parameters
        ----------
        dir_deg : float or array_like
            Mean directions waves come FROM, clockwise from true north [deg]; broadcasting as
            in :meth:`is_open`.
        transect_index : array_like of int, optional
            As in :meth:`is_open`.

        Returns
        -------
        numpy.ndarray of float
            The share in [0, 1] of the nearest ray (see :attr:`share`); 0 for a NaN direction.
        """
        return self._lookup(self.share, dir_deg, transect_index, 0.0)

    def fetch_toward(self, dir_deg, transect_index=None) -> np.ndarray:
        """Fetch over water toward ``dir_deg`` [m], from the nearest ray.

        Parameters
        ----------
        dir_deg : float or array_like
            Directions (wind or waves from), clockwise from true north [deg]; broadcasting as in
            :meth:`is_open`.
        transect_index : array_like of int, optional
            As in :meth:`is_open`.

        Returns
        -------
        numpy.ndarray
            Fetch of the nearest ray [m]: ``max_distance_m`` where no land is met, 0 for
            landward directions; NaN for a NaN direction or a transect with a NaN normal.

        Notes
        -----
        The nearest ray is used, not an interpolation between rays: at the edge of an island's
        shadow the fetch jumps from the island to ``max_distance_m``, and a value in between
        would describe no real line over the water. It also matches :meth:`is_open`.
        """
        return self._lookup(self.fetch_m, dir_deg, transect_index, np.nan)


def compute_exposure(
    transects: Transects,
    coast_parts: list,
    land: list | None = None,
    max_distance_m: float = 20000.0,
    step_deg: float = 1.0,
    start_offset_m: float = DEFAULT_START_M,
    spreading_s: float | None = DEFAULT_SPREADING_S,
    wavelength_m: float | None = DEFAULT_WAVELENGTH_M,
    grazing_radius_m: float | None = GRAZING_RADIUS_M,
    progress: Callable[[int], None] | None = None,
) -> Exposure:
    """Cast rays over the water from every transect; find open directions, shares and fetch.

    Parameters
    ----------
    transects : shoreline.coast.Transects
        Shore points ``x_m, y_m`` in the working CRS and seaward normals ``normal_az_deg``
        (true north).
    coast_parts : list of shapely.LineString
        The shore lines in the same working CRS (e.g. ``CoastLines.parts``); they block rays
        like any land, so a headland shelters its bay.
    land : list of shapely geometries, optional
        Extra land in the same working CRS: polygons (islands, moles: the ray stops at their
        boundary; a ray start inside one is on land) and lines (breakwaters, groynes). Multi
        and collection geometries are taken apart; None and empty ones are skipped.
    max_distance_m : float, default 20000.0
        Ray length on the ground [m]: land farther than this does not shelter.
    step_deg : float, default 1.0
        Angle between rays [deg]; must divide 360.
    start_offset_m : float, default 200.0
        The rays start this far seaward of the shore point along the seaward normal, on the
        ground [m], or closer where land lies ahead or beside (below). Must be > 0.
        200 m lies beyond the breaker line of everyday waves on sandy beaches, where the waves
        that move sand are still whole (see Notes).
    spreading_s : float or None, default 25.0
        Spreading parameter s of ``D(dtheta) ~ cos^2s(dtheta/2)`` for :attr:`Exposure.share`
        [-]; None or ``inf``: no spreading (the share is ``open``). Must be >= 0 (0: uniform).
        25 is Goda's (2000) s_max for swell of short decay distance, between 10 for wind
        waves and 75 for swell of long decay distance (from memory): a coast exposed to both
        sea and swell, whose spread refraction narrows further near the shore.
    wavelength_m : float or None, default 100.0
        Wavelength L for the diffraction test of narrow blockers [m]; None or 0: off (every
        blocker shadows). A run passes the deep-water wavelength ``g T^2 / (2 pi)`` of its
        typical peak period; 100 m is that of T = 8 s.
    grazing_radius_m : float or None, default 20000.0
        Minimum radius of curvature of the coast's own bend that grazing rays may run along
        without being sheltered [m]; None or ``inf``: off.
    progress : callable, optional
        Told the number of transects done after each chunk of rays (a progress bar).

    Returns
    -------
    Exposure

    Raises
    ------
    ValueError
        For a non-positive distance, offset or step, a step that does not divide 360, or a
        negative or NaN spreading parameter, wavelength or radius.
    CoastError
        For land that is not polygons or lines (e.g. points).

    Notes
    -----
    **Ray start.** ``S = P + o k n``: the shore point P moved o = ``start_offset_m`` along the
    seaward normal n, in grid units (k the point scale factor). On a Dean (1977) equilibrium
    profile ``h = A y^(2/3)`` (A = 0.10 for 0.2 mm sand, 0.125 for 0.3 mm; Moore 1982, from
    memory) waves breaking at ``Hb = 2 m`` (``hb = Hb / 0.78 = 2.6 m``) break
    ``y = (hb / A)^(3/2)`` = 130 m and 93 m from the shoreline, and ``Hb = 3 m`` 240 m and
    170 m [derived]: 200 m clears the surf zone of everyday waves, so the shore's own wiggles
    and notches of up to that size block nothing. If land is met along the normal between
    :data:`MIN_START_M` (20 m) and o (a detached breakwater, a jetty head, an island, the far
    bank of a river), S is put at :data:`START_FRACTION` (half) of the distance to it; if land
    crosses the line through S parallel to the shore within o to either side (a jetty, a mole
    or a headland's flank beside the transect reaching farther out than S), at half the
    lateral distance to it; never closer than 20 m. So a breakwater close inshore still
    shelters, and so does a shore-connected structure its lee. :attr:`Exposure.start_m`.

    **Directions and lengths.** Ray j has true azimuth ``theta_j = j step`` and grid azimuth
    ``theta_j + beta``, beta the grid azimuth of true north at S (minus the meridian
    convergence; :func:`shoreline.coast._scale_and_north`). Only rays within 90 degrees of the
    normal (inclusive) are cast; the others are closed with fetch 0. A straight grid segment
    of grid length L from S has ground length L / k(midpoint) to second order; with k linear
    near S (gradient g by finite differences, ``_K_STEP_M``) the grid length of a ray of ground
    length D is ``D k0 / (1 - D g.u / 2)`` and a hit at grid distance t lies
    ``t / (k0 + g.u t / 2)`` away on the ground (Snyder 1987, ch. 8).

    **Hits.** Coast and land are cut into straight segments of at most :data:`SEGMENT_M` in a
    ``shapely.STRtree``; for each transect the tree returns the segments near its fan of rays,
    each segment's angular extent selects the few rays that can cross it, the crossings are
    solved exactly in numpy and ``np.minimum.at`` keeps the first hit of each ray. No Python
    loop over rays or transects (one over chunks of transects). A ray start inside a land
    polygon is on land: every ray closed, fetch 0.

    **Grazing rays along the coast itself.** A ray's first hit H does not shelter when all
    three hold: the ray leaves within :data:`GRAZING_DEPARTURE_DEG` (30 degrees) of the shore
    tangent; the circle through the shore point P, tangent to the shore there, that passes
    through H has a radius ``|PH|^2 / (2 h)`` (h: H's distance seaward of P's tangent line)
    of at least ``grazing_radius_m``; and the land met faces within
    :data:`GRAZING_TURN_DEG` (60 degrees) of the transect's normal (its line direction taken
    as the chord over +-:data:`SMOOTH_M` along it, its normal on the side the ray comes from).
    That is the same coast further along, bending gently: waves that oblique reach the shore
    by refraction over depth contours that follow the coast (Snell's law, CEM Part II-1), not
    along the straight line. On a circular arc of radius R the ray leaving at delta from the
    tangent meets the arc after ``2 R sin(delta)`` at a shore turned by ``2 delta``: with
    R >= 20 km and rays of 20 km every condition holds, so the arc never shelters itself. A
    headland's flank (turned about 90 degrees, and close: a 3 km spit 1 km away gives a radius
    under 5 km), an island (facing back), the far bank of an estuary (turned 180 degrees) and a
    lake or basin of small radius still shelter.

    **Narrow blockers.** Each contiguous run (in direction) of the rays still blocked shadows
    only if its width across the rays, ``b = n_rays step d`` (step in radians, d the run's mean
    hit distance), is at least the radius of the first Fresnel zone ``sqrt(L d)``; otherwise
    its rays are open. An obstacle narrower than the first Fresnel zone casts no geometric
    shadow at that distance: the diffracted field fills it (physical optics; for water waves
    the diffraction solution of Penney and Price 1952 behind a breakwater, whose shadow edge
    widens as ``sqrt(L r)``; from memory). The mean, not the nearest, hit distance: a near
    rock and a far island contiguous in direction are judged by their joint silhouette, so a
    rock never switches off an island's shadow; for one object at one distance they agree.
    An 80 m notch, a pier of a few hundred metres, shore wiggles seen kilometres away do not
    shadow; an island or headland of kilometres does.

    **Open share.** ``share[i, j] = sum_k mask[i, k] W[k - j]``: the circular convolution
    (by FFT) of the open rays with the bin weights ``W`` of :func:`spreading_weights`, ray k
    standing for its bin of +-step/2. A bin that straddles the 90-degree edge counts for its
    seaward part only (a ray exactly at 90 degrees for half; a ray just beyond 90 degrees for
    the part of its bin within 90, with the open state of its neighbour): on a straight open
    coast a sea running along the shore gets exactly 1/2. The share is defined for every mean
    direction, landward ones included (a spread sea whose mean comes from just behind the
    coast still sends some energy from the sea); whether such waves move sand is the caller's
    decision.

    **Open coast.** ``view_factor = sum_open cos(theta - normal) step / 2`` (step in radians):
    the shore-normal flux of a sea spread uniformly over the seaward half-plane that arrives
    over open water, relative to a straight open coast. ``open_coast = view_factor >=``
    :data:`OPEN_COAST_MIN_VIEW` (0.25: a window of +-14.5 degrees about the normal; views
    farther than 60 degrees from the normal on both sides give at most 0.13). The lee of an
    island of radius R centred at D straight offshore keeps ``1 - R / D`` (0.67 for 1 km at
    3 km): open coast. Estuary and inlet banks, harbour basins and lagoon shores, which see the
    sea only obliquely or through a narrow mouth, are not.

    **Fetch** is the straight-line fetch along one direction, as CEM Part II-2 asks for wind
    growth (not the older radially averaged effective fetch), measured from the ray start and
    capped at ``max_distance_m`` (a lower bound over open sea). Geometric: the two rules above
    do not change it.

    References
    ----------
    Dean, R. G. (1977). Equilibrium beach profiles: U.S. Atlantic and Gulf coasts. Ocean
    Engineering Report 12, University of Delaware (h = A y^(2/3); from memory).

    Goda, Y. (2000). Random Seas and Design of Maritime Structures, 2nd ed. World Scientific,
    section 2.3 (s_max = 10, 25, 75; from memory).

    Mitsuyasu, H. et al. (1975). Observations of the directional spectrum of ocean waves using
    a cloverleaf buoy. J. Phys. Oceanogr. 5: 750-760 (the cos^2s(theta/2) spreading; from
    memory).

    Penney, W. G. and Price, A. T. (1952). The diffraction theory of sea waves and the shelter
    afforded by breakwaters. Phil. Trans. R. Soc. A 244: 236-253 (from memory).

    Snyder, J. P. (1987). Map Projections: A Working Manual. USGS Professional Paper 1395,
    ch. 8 (transverse Mercator: scale factor and meridian convergence).

    U.S. Army Corps of Engineers (2002). Coastal Engineering Manual, EM 1110-2-1100, Part II,
    ch. 1 (Snell's law) and ch. 2 (straight-line fetch).
    """
    d_m = float(max_distance_m)
    offset_m = float(start_offset_m)
    step = float(step_deg)
    if not (np.isfinite(d_m) and d_m > 0):
        raise ValueError(f"max_distance_m must be a finite distance > 0 [m]; got {max_distance_m}")
    if not (np.isfinite(offset_m) and offset_m > 0):
        raise ValueError(
            f"start_offset_m must be > 0 [m] (a ray starting on the shore meets it at once); "
            f"got {start_offset_m}"
        )
    if not (np.isfinite(step) and 0 < step <= 90):
        raise ValueError(f"step_deg must be in (0, 90] [deg]; got {step_deg}")
    m = int(round(360.0 / step))
    if abs(m * step - 360.0) > 1e-9 * 360.0:
        raise ValueError(f"step_deg must divide 360 (e.g. 0.5, 1, 2, 5); got {step_deg}")
    spread = _optional_positive(spreading_s, "spreading_s", "[-]", zero_ok=True)
    wave_m = _optional_positive(wavelength_m, "wavelength_m", "[m]", zero_ok=True)
    radius_m = _optional_positive(grazing_radius_m, "grazing_radius_m", "[m]")
    step = 360.0 / m
    directions = np.arange(m) * step

    n = len(transects)
    crs = transects.working_crs
    x, y = transects.x_m, transects.y_m
    normal = transects.normal_az_deg
    settings = dict(
        max_distance_m=d_m,
        start_offset_m=offset_m,
        spreading_s=spread,
        wavelength_m=wave_m,
        grazing_radius_m=radius_m,
    )
    if n == 0:
        empty = np.empty(0)
        nothing = np.zeros((0, m))
        return Exposure(
            directions, nothing.astype(bool), nothing, empty, empty, empty,
            share=nothing, start_m=empty, view_factor=empty, open_coast=np.zeros(0, bool),
            open_coast_reason=np.zeros(0, dtype="<U9"), **settings,
        )  # fmt: skip

    seg, polygons = _land_segments(coast_parts, land)
    tree = shapely.STRtree(shapely.linestrings(seg[:, :4].reshape(-1, 2, 2))) if len(seg) else None

    # Ray starts: start_offset_m seaward along the normal, or part of the way to land met
    # along it, never closer than MIN_START_M; and the local projection factors there.
    k_shore, beta_shore = _scale_and_north(crs, x, y)
    valid = np.isfinite(x) & np.isfinite(y) & np.isfinite(normal) & np.isfinite(k_shore)
    a = np.radians(np.where(valid, normal + beta_shore, 0.0))
    nx, ny = np.sin(a), np.cos(a)
    k_shore = np.where(valid, k_shore, 1.0)
    floor_m = min(MIN_START_M, offset_m)
    start_m = np.full(n, offset_m)
    if tree is not None and offset_m > floor_m:
        ahead = _land_along_normal(x, y, nx, ny, k_shore, valid, floor_m, offset_m, seg, tree)
        start_m = np.minimum(start_m, np.maximum(START_FRACTION * ahead, floor_m))
        beside = _land_beside_start(x, y, nx, ny, k_shore, valid, start_m, offset_m, seg, tree)
        start_m = np.minimum(start_m, np.maximum(START_FRACTION * beside, floor_m))
    start_m = np.where(valid, start_m, np.nan)
    o_grid = np.where(valid, start_m, 0.0) * k_shore
    sx = np.where(valid, x + o_grid * nx, 0.0)
    sy = np.where(valid, y + o_grid * ny, 0.0)
    k0, beta = _scale_and_north(crs, sx, sy)
    kx, _ = _scale_and_north(crs, sx + _K_STEP_M, sy)
    ky, _ = _scale_and_north(crs, sx, sy + _K_STEP_M)
    valid &= np.isfinite(k0) & np.isfinite(beta)
    start_m = np.where(valid, start_m, np.nan)
    gx = np.where(np.isfinite(kx) & valid, (kx - k0) / _K_STEP_M, 0.0)
    gy = np.where(np.isfinite(ky) & valid, (ky - k0) / _K_STEP_M, 0.0)
    k0 = np.where(valid, k0, 1.0)
    beta = np.where(valid, beta, 0.0)
    normal_v = np.where(valid, normal, 0.0)

    rel = (directions[None, :] - normal_v[:, None] + 180.0) % 360.0 - 180.0
    cast = valid[:, None] & (np.abs(rel) <= 90.0 + _EDGE_DEG)

    on_land = np.zeros(n, dtype=bool)
    if polygons:
        starts = shapely.points(sx[valid], sy[valid])
        hit_pt, _ = shapely.STRtree(polygons).query(starts, predicate="intersects")
        on_land[np.flatnonzero(valid)[hit_pt]] = True

    hit_ground = np.full((n, m), np.inf)
    cos_turn = np.zeros((n, m))
    if tree is not None:
        todo = np.flatnonzero(valid & ~on_land)

        def hits(c0: int) -> tuple[np.ndarray, tuple[np.ndarray, np.ndarray]]:
            rows = todo[c0 : c0 + _CHUNK]
            args = (sx, sy, k0, gx, gy, beta, normal_v, cast, directions, step, d_m, seg, tree)
            return rows, _first_hits(rows, *args)

        # chunks of transects on threads (numpy and GEOS release the interpreter lock); each
        # row's hits depend on that row only, so the result does not depend on the threads
        starts = range(0, len(todo), _CHUNK)
        with ThreadPoolExecutor(max_workers=min(_THREADS, max(len(starts), 1))) as pool:
            for rows, (ground, turn) in pool.map(hits, starts):
                hit_ground[rows], cos_turn[rows] = ground, turn
                if progress is not None:
                    progress(len(rows))

    hit = cast & np.isfinite(hit_ground)
    blocked = hit.copy()
    if radius_m is not None:
        blocked &= ~_grazing_along_coast(rel, hit_ground, cos_turn, start_m, radius_m)
    if wave_m:
        blocked &= ~_narrow_blockers(blocked, hit_ground, normal_v, step, wave_m)
    blocked |= on_land[:, None]
    open_ = cast & ~blocked
    fetch = np.where(cast, np.where(on_land[:, None], 0.0, np.minimum(hit_ground, d_m)), 0.0)
    fetch = np.where(valid[:, None], fetch, np.nan)
    exposure = np.where(valid, open_.sum(axis=1) * step, np.nan)
    open_from, open_to = _widest_open_sector(open_, step)
    if spread is None:
        share = open_.astype(float)
    else:
        share = _open_share(open_, rel, valid, step, spread)
    view, coast_open, reason = _open_coast(open_, rel, valid, on_land, step)
    return Exposure(
        directions, open_, fetch, exposure, open_from, open_to, share=share, start_m=start_m,
        view_factor=view, open_coast=coast_open, open_coast_reason=reason, **settings,
    )  # fmt: skip


def _first_hits(rows, sx, sy, k0, gx, gy, beta, normal, cast, directions, step, d_m, seg, tree):
    """Ground distance to the first land along every ray of transects ``rows`` (inf: none)."""
    c, m = len(rows), len(directions)
    px, py = sx[rows], sy[rows]
    grid_az = np.radians(directions[None, :] + beta[rows, None])
    ux, uy = np.sin(grid_az), np.cos(grid_az)
    g_u = gx[rows, None] * ux + gy[rows, None] * uy
    length = d_m * k0[rows, None] / (1.0 - 0.5 * d_m * g_u)  # grid length of each ray
    ccast = cast[rows]

    # Box of each ray fan (start point and the ends of the cast rays).
    ex = np.where(ccast, px[:, None] + length * ux, np.nan)
    ey = np.where(ccast, py[:, None] + length * uy, np.nan)
    with np.errstate(invalid="ignore"):
        boxes = shapely.box(
            np.fmin(px, np.nanmin(ex, axis=1)),
            np.fmin(py, np.nanmin(ey, axis=1)),
            np.fmax(px, np.nanmax(ex, axis=1)),
            np.fmax(py, np.nanmax(ey, axis=1)),
        )
    pair_t, pair_s = tree.query(boxes)
    if len(pair_t) > _MAX_PAIRS and c > 1:  # a dense coast: halve the chunk to bound memory
        half = c // 2
        args = (sx, sy, k0, gx, gy, beta, normal, cast, directions, step, d_m, seg, tree)
        (h0, s0), (h1, s1) = _first_hits(rows[:half], *args), _first_hits(rows[half:], *args)
        return np.concatenate([h0, h1]), np.concatenate([s0, s1])
    hit = np.full(c * m, np.inf)
    cos_turn = np.ones(c * m)
    if len(pair_t) == 0:
        return hit.reshape(c, m), cos_turn.reshape(c, m)

    # Angular extent of each segment seen from the ray start, as a true azimuth interval.
    wx, wy = seg[pair_s, 0] - px[pair_t], seg[pair_s, 1] - py[pair_t]
    vx, vy = seg[pair_s, 2] - px[pair_t], seg[pair_s, 3] - py[pair_t]
    b = beta[rows][pair_t]
    az_a = np.degrees(np.arctan2(wx, wy)) - b
    az_b = np.degrees(np.arctan2(vx, vy)) - b
    span = (az_b - az_a) % 360.0
    wide = span > 180.0
    lo = np.where(wide, az_b, az_a)
    span = np.where(wide, 360.0 - span, span)
    # Clip to the cast half-circle [normal - 90, normal + 90]: one interval at most.
    sec_lo = normal[rows][pair_t] - 90.0
    rel_lo = (lo - sec_lo) % 360.0
    first_part = rel_lo <= 180.0
    iv_lo = np.where(first_part, rel_lo, 0.0)
    iv_hi = np.where(first_part, np.minimum(rel_lo + span, 180.0), rel_lo + span - 360.0)
    k_first = np.ceil((sec_lo + iv_lo - _ANGLE_SLACK_DEG) / step).astype(np.int64)
    k_last = np.floor((sec_lo + iv_hi + _ANGLE_SLACK_DEG) / step).astype(np.int64)
    count = np.maximum(k_last - k_first + 1, 0)

    # One entry per (ray, segment) that may cross.
    total = int(count.sum())
    if total == 0:
        return hit.reshape(c, m), cos_turn.reshape(c, m)
    pair = np.repeat(np.arange(len(pair_t)), count)
    ray = (np.repeat(k_first - (np.cumsum(count) - count), count) + np.arange(total)) % m
    row = pair_t[pair]
    flat = row * m + ray
    uxr, uyr = ux.ravel()[flat], uy.ravel()[flat]
    wxr, wyr = wx[pair], wy[pair]
    exr, eyr = vx[pair] - wxr, vy[pair] - wyr

    # S + t u = A + s e  =>  t = (w x e) / (u x e),  s = (w x u) / (u x e).
    denom = uxr * eyr - uyr * exr
    w_e = wxr * eyr - wyr * exr
    w_u = wxr * uyr - wyr * uxr
    e_len = np.hypot(exr, eyr)
    crossing = np.abs(denom) > 1e-12 * e_len
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(crossing, w_e / denom, np.inf)
        s = np.where(crossing, w_u / denom, np.nan)
    ok = crossing & (t >= 0.0) & (s >= -_S_SLACK) & (s <= 1.0 + _S_SLACK)
    # Parallel and on the ray's line (collinear): the nearest end of the overlap.
    collinear = ~crossing & (np.abs(w_u) <= 1e-9 * np.maximum(e_len, 1.0))
    if collinear.any():
        t0 = wxr * uxr + wyr * uyr
        t1 = t0 + exr * uxr + eyr * uyr
        near, far = np.minimum(t0, t1), np.maximum(t0, t1)
        overlap = collinear & (far >= 0.0)
        t = np.where(overlap, np.maximum(near, 0.0), t)
        ok |= overlap
    ok &= t <= length.ravel()[flat]
    np.minimum.at(hit, flat[ok], t[ok])
    # Turn of the land met first: cosine of the angle between the transect's seaward normal
    # and the land's normal facing the ray (its line smoothed over SMOOTH_M); of segments met
    # at the same point, the largest turn.
    first = np.flatnonzero(ok & (t == hit[flat]))
    s_first = pair_s[pair[first]]
    tx, ty = seg[s_first, 4], seg[s_first, 5]
    facing = np.where(ty * uxr[first] - tx * uyr[first] > 0.0, -1.0, 1.0)  # (ty, -tx) vs u
    n_az = np.radians(normal[rows] + beta[rows])[row[first]]
    np.minimum.at(cos_turn, flat[first], facing * (ty * np.sin(n_az) - tx * np.cos(n_az)))

    # Grid to ground distance along the ray: t / k(midpoint), k linear near the start.
    hit = hit.reshape(c, m)
    with np.errstate(invalid="ignore"):
        ground = np.where(np.isfinite(hit), hit / (k0[rows, None] + 0.5 * g_u * hit), np.inf)
    return ground, cos_turn.reshape(c, m)


def _land_segments(coast_parts, land) -> tuple[np.ndarray, list]:
    """Straight segments of all coast and land, and the land polygons.

    Each row of the (q, 6) array is ``x0 y0 x1 y1 tx ty``: the segment's ends and the unit
    direction of its line smoothed over +-:data:`SMOOTH_M` along the line (the chord between
    the points that far before and after the segment's middle, clipped at the line's ends).
    """
    lines, polygons = [], []
    for label, items in (("coast_parts", coast_parts), ("land", land or [])):
        for i, geom in enumerate(items):
            _sort_geometry(geom, f"{label}[{i}]", lines, polygons)
    for poly in polygons:
        lines.extend(shapely.get_parts(shapely.boundary(poly)))
    if not lines:
        return np.empty((0, 6)), polygons
    lines = shapely.segmentize(np.asarray(lines, dtype=object), SEGMENT_M)
    xy, idx = shapely.get_coordinates(lines, return_index=True)
    same = idx[1:] == idx[:-1]
    # Distance along the lines, one running count with a gap between lines so that np.interp
    # never mixes two lines.
    gap = 4.0 * SMOOTH_M + 1.0
    along = np.r_[0.0, np.cumsum(np.where(same, np.hypot(*np.diff(xy, axis=0).T), gap))]
    first = np.r_[True, ~same]
    line_lo = np.maximum.accumulate(np.where(first, along, -np.inf))
    last = np.r_[~same, True]
    line_hi = np.minimum.accumulate(np.where(last, along, np.inf)[::-1])[::-1]
    mid = 0.5 * (along[:-1] + along[1:])[same]
    lo = np.maximum(mid - SMOOTH_M, line_lo[:-1][same])
    hi = np.minimum(mid + SMOOTH_M, line_hi[1:][same])
    tx = np.interp(hi, along, xy[:, 0]) - np.interp(lo, along, xy[:, 0])
    ty = np.interp(hi, along, xy[:, 1]) - np.interp(lo, along, xy[:, 1])
    seg = np.column_stack([xy[:-1][same], xy[1:][same], tx, ty])
    keep = (seg[:, 0] != seg[:, 2]) | (seg[:, 1] != seg[:, 3])
    seg = seg[keep]
    length = np.hypot(seg[:, 4], seg[:, 5])
    own = length > 0  # a degenerate chord (a tiny closed line): the segment's own direction
    seg[:, 4] = np.where(own, seg[:, 4], seg[:, 2] - seg[:, 0])
    seg[:, 5] = np.where(own, seg[:, 5], seg[:, 3] - seg[:, 1])
    seg[:, 4:] /= np.hypot(seg[:, 4], seg[:, 5])[:, None]
    return seg, polygons


def _sort_geometry(geom, label, lines, polygons) -> None:
    """Append the line and polygon parts of ``geom`` to ``lines`` / ``polygons``."""
    if geom is None:
        return
    if not isinstance(geom, shapely.Geometry):
        raise CoastError(f"{label} is a {type(geom).__name__}, not a shapely geometry")
    if geom.is_empty:
        return
    kind = shapely.get_type_id(geom)
    if kind in _POLYGON_TYPES:
        polygons.extend(shapely.get_parts(geom))
    elif kind in _LINE_TYPES:
        lines.extend(shapely.get_parts(geom))
    elif kind == _COLLECTION_TYPE:
        for j, part in enumerate(shapely.get_parts(geom)):
            _sort_geometry(part, f"{label} part {j}", lines, polygons)
    else:
        raise CoastError(
            f"{label} is a {geom.geom_type}; land must be polygons or lines (breakwaters, "
            "islands), in the working CRS"
        )


def _widest_open_sector(open_: np.ndarray, step: float) -> tuple[np.ndarray, np.ndarray]:
    """Edges (from, to) [deg] of the widest wrap-aware run of open rays per row.

    The edges lie half a step outside the run's first and last rays. NaN where nothing is
    open; 0 and 360 where everything is. Ties: the run that ends first (clockwise from ray 0).
    """
    n, m = open_.shape
    twice = np.concatenate([open_, open_], axis=1)
    pos = np.arange(2 * m)
    last_closed = np.maximum.accumulate(np.where(twice, -1, pos[None, :]), axis=1)
    run = pos[None, :] - last_closed
    end = np.argmax(run, axis=1)
    width = run[np.arange(n), end]
    first = end - width + 1
    frm = ((first % m) * step - 0.5 * step) % 360.0
    to = ((end % m) * step + 0.5 * step) % 360.0
    all_open = open_.all(axis=1)
    none_open = ~open_.any(axis=1)
    frm = np.where(all_open, 0.0, np.where(none_open, np.nan, frm))
    to = np.where(all_open, 360.0, np.where(none_open, np.nan, to))
    return frm, to


def spreading_weights(spreading_s: float, step_deg: float) -> np.ndarray:
    """Share of a ``cos^2s(dtheta/2)`` directional spread in each bin of the ray grid.

    Parameters
    ----------
    spreading_s : float
        Spreading parameter s >= 0 [-] (0: uniform over the circle).
    step_deg : float
        Ray step [deg]; must divide 360.

    Returns
    -------
    numpy.ndarray, shape (m,)
        ``W[d]``: the integral of the normalised spreading function ``D`` over
        ``[(d - 1/2) step, (d + 1/2) step]`` around the mean direction, for d = 0 .. m - 1
        (circular: ``W[d] = W[m - d]``); the weights sum to 1.

    Notes
    -----
    ``D(x) = cos^2s(x/2) / (2 B(s + 1/2, 1/2))`` on ``(-pi, pi]`` (Longuet-Higgins et al. 1963;
    Mitsuyasu et al. 1975; from memory). With ``sin^2(u) = t`` the integral from 0 to x is
    ``sign(x) I(sin^2(x/2); 1/2, s + 1/2) / 2``, I the regularised incomplete beta function
    (:func:`scipy.special.betainc`) [derived], so each bin is exact for any s. Its mean
    resultant length is ``s / (s + 1)`` [derived], a circular spread of ``sqrt(2 / (s + 1))``
    rad: about 16 degrees for s = 25.
    """
    s = float(spreading_s)
    m = int(round(360.0 / step_deg))
    step = 360.0 / m
    d = np.minimum(np.arange(m), m - np.arange(m)) * step  # |offset| of each bin centre [deg]
    weights = _spread_cdf(d + 0.5 * step, s) - _spread_cdf(d - 0.5 * step, s)
    return weights / weights.sum()


def _spread_cdf(x_deg, s) -> np.ndarray:
    """Integral of the normalised cos^2s(x/2) from 0 to x, for x in [-180, 360] [deg]."""
    x = np.asarray(x_deg, dtype=float)
    far = x > 180.0  # beyond the back of the circle: 1/2 plus the part from 180 to x
    y = np.radians(np.where(far, 360.0 - x, x))
    from scipy import special  # here, not at the top: keeps 'import shoreline' quick

    half = 0.5 * np.sign(y) * special.betainc(0.5, s + 0.5, np.sin(0.5 * y) ** 2)
    return np.where(far, 1.0 - half, half)


def _optional_positive(value, name: str, unit: str, zero_ok: bool = False) -> float | None:
    """``value`` as a float, or None for None or infinity; ValueError if negative or NaN."""
    if value is None:
        return None
    v = float(value)
    if v == np.inf:
        return None
    if not (np.isfinite(v) and (v > 0 or (zero_ok and v == 0))):
        bound = ">= 0" if zero_ok else "> 0"
        raise ValueError(f"{name} must be {bound} {unit}, or None (off); got {value}")
    return v


def _land_along_normal(x, y, nx, ny, k, valid, floor_m, offset_m, seg, tree) -> np.ndarray:
    """Ground distance from the shore point to the first land along the normal [m].

    Only land between ``floor_m`` and ``offset_m`` from the shore point counts; inf where none.
    """
    clear = np.full(len(x), np.inf)
    rows = np.flatnonzero(valid)
    if len(rows) == 0:
        return clear
    kr = k[rows]
    ax, ay = x[rows] + floor_m * kr * nx[rows], y[rows] + floor_m * kr * ny[rows]
    bx, by = x[rows] + offset_m * kr * nx[rows], y[rows] + offset_m * kr * ny[rows]
    lines = shapely.linestrings(np.stack([np.c_[ax, ay], np.c_[bx, by]], axis=1))
    li, si = tree.query(lines, predicate="intersects")
    if len(li) == 0:
        return clear
    ux, uy = nx[rows][li], ny[rows][li]
    wx, wy = seg[si, 0] - ax[li], seg[si, 1] - ay[li]
    ex, ey = seg[si, 2] - seg[si, 0], seg[si, 3] - seg[si, 1]
    denom = ux * ey - uy * ex
    crossing = np.abs(denom) > 1e-12 * np.hypot(ex, ey)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(crossing, (wx * ey - wy * ex) / denom, 0.0)
    t0 = wx * ux + wy * uy  # collinear: the nearer end of the overlap
    t1 = t0 + ex * ux + ey * uy
    t = np.where(crossing, t, np.minimum(t0, t1))
    np.minimum.at(clear, rows[li], floor_m + np.maximum(t, 0.0) / kr[li])
    return clear


def _land_beside_start(x, y, nx, ny, k, valid, start_m, half_m, seg, tree) -> np.ndarray:
    """Ground distance to the side, from the ray start, of land crossing the start line [m].

    The start line runs through the ray start parallel to the shore (across the normal),
    ``half_m`` to either side; inf where no land crosses it.
    """
    beside = np.full(len(x), np.inf)
    rows = np.flatnonzero(valid)
    if len(rows) == 0:
        return beside
    kr = k[rows]
    sx = x[rows] + start_m[rows] * kr * nx[rows]
    sy = y[rows] + start_m[rows] * kr * ny[rows]
    tx, ty = ny[rows] * half_m * kr, -nx[rows] * half_m * kr  # along the shore, grid
    lines = shapely.linestrings(np.stack([np.c_[sx - tx, sy - ty], np.c_[sx + tx, sy + ty]], 1))
    li, si = tree.query(lines, predicate="intersects")
    if len(li) == 0:
        return beside
    # Crossing of the start line S + u t (u: unit along the shore) with each segment A + v e.
    ux, uy = ny[rows][li], -nx[rows][li]
    wx, wy = seg[si, 0] - sx[li], seg[si, 1] - sy[li]
    ex, ey = seg[si, 2] - seg[si, 0], seg[si, 3] - seg[si, 1]
    denom = ux * ey - uy * ex
    crossing = np.abs(denom) > 1e-12 * np.hypot(ex, ey)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(crossing, (wx * ey - wy * ex) / denom, 0.0)
    t0 = wx * ux + wy * uy  # collinear: the nearer end of the overlap, or 0 if it spans S
    t1 = t0 + ex * ux + ey * uy
    spans = (np.minimum(t0, t1) <= 0.0) & (np.maximum(t0, t1) >= 0.0)
    t = np.where(crossing, np.abs(t), np.where(spans, 0.0, np.minimum(np.abs(t0), np.abs(t1))))
    np.minimum.at(beside, rows[li], t / kr[li])
    return beside


def _grazing_along_coast(rel, hit_m, cos_turn, start_m, radius_m) -> np.ndarray:
    """Rays whose first hit is the coast's own gentle curvature (rule in compute_exposure)."""
    out = np.zeros(rel.shape, dtype=bool)
    i, j = np.nonzero((np.abs(rel) >= 90.0 - GRAZING_DEPARTURE_DEG) & np.isfinite(hit_m))
    facing = cos_turn[i, j] >= np.cos(np.radians(GRAZING_TURN_DEG))
    i, j = i[facing], j[facing]
    alpha = np.radians(rel[i, j])
    d = hit_m[i, j]
    h = start_m[i] + d * np.cos(alpha)  # seaward of the shore point's tangent [m]
    along = d * np.sin(alpha)  # along that tangent [m]
    out[i, j] = h * h + along * along >= 2.0 * radius_m * h  # radius of the circle >= radius_m
    return out


def _narrow_blockers(blocked, hit_m, normal, step, wavelength_m) -> np.ndarray:
    """Blocked rays in runs too narrow to shadow: width < sqrt(L d) (module notes)."""
    n, m = blocked.shape
    # Roll each row so that column 0 points straight landward: no run of blocked rays (all
    # within 90 deg of the normal) then wraps around the row's end.
    back = np.rint((normal - 180.0) / step).astype(np.int64) % m
    cols = (back[:, None] + np.arange(m)[None, :]) % m
    rows = np.arange(n)[:, None]
    b = blocked[rows, cols]
    first = b.copy()
    first[:, 1:] &= ~b[:, :-1]
    label = (np.cumsum(first.ravel()) * b.ravel()).reshape(n, m)
    count = np.bincount(label.ravel(), minlength=1)
    dist = np.bincount(label.ravel(), weights=np.where(b, hit_m[rows, cols], 0.0).ravel())
    mean_d = dist / np.maximum(count, 1)
    width = count * np.radians(step) * mean_d
    narrow = width < np.sqrt(wavelength_m * mean_d)
    narrow[0] = False
    out = np.zeros_like(blocked)
    out[rows, cols] = narrow[label]
    return out


def _open_share(open_, rel, valid, step, s) -> np.ndarray:
    """Share of a cos^2s spread around each ray direction that arrives over open water."""
    n, m = open_.shape
    # Each ray stands for its bin of +-step/2; a bin that straddles the 90-degree edge counts
    # for its seaward part only; a ray just beyond 90 deg (not cast) takes the open state of
    # its neighbour toward the normal.
    frac = np.clip(0.5 + (90.0 - np.abs(rel)) / step, 0.0, 1.0)
    mask = np.where(open_, frac, 0.0)
    beyond = valid[:, None] & (np.abs(rel) > 90.0 + _EDGE_DEG) & (frac > 0.0)
    i, j = np.nonzero(beyond)
    inner = (j - np.sign(rel[i, j]).astype(np.int64)) % m
    mask[i, j] = frac[i, j] * open_[i, inner]
    kernel = np.fft.rfft(spreading_weights(s, step))[None, :]
    share = np.zeros((n, m))
    for r0 in range(0, n, _FFT_ROWS):  # bounds the complex temporaries
        rows = slice(r0, r0 + _FFT_ROWS)
        share[rows] = np.fft.irfft(np.fft.rfft(mask[rows], axis=1) * kernel, n=m, axis=1)
    # the FFT's round-off (about 1e-16) must not open a shut direction or shut an open one
    share = np.where(
        share < _SHARE_ROUNDOFF, 0.0, np.where(share > 1.0 - _SHARE_ROUNDOFF, 1.0, share)
    )
    return np.where(valid[:, None], share, 0.0)


#: Open shares within this of 0 or 1 are exactly 0 or 1 (FFT round-off).
_SHARE_ROUNDOFF = 1e-12


def _open_coast(open_, rel, valid, on_land, step) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """View factor, open coast or not, and why not (rule in compute_exposure)."""
    cos_rel = np.cos(np.radians(np.clip(np.abs(rel), 0.0, 90.0)))
    view = 0.5 * np.radians(step) * (open_ * cos_rel).sum(axis=1)
    view = np.where(valid, view, np.nan)
    facing = (open_ & (np.abs(rel) <= OPEN_COAST_FACING_DEG + _EDGE_DEG)).any(axis=1)
    reason = np.full(len(view), "open", dtype="<U9")
    small = ~(view >= OPEN_COAST_MIN_VIEW)
    reason[small] = "narrow"
    reason[small & ~facing] = "oblique"
    reason[~open_.any(axis=1)] = "enclosed"
    reason[on_land] = "on land"
    reason[~valid] = "no normal"
    return view, reason == "open", reason
