"""Shore-crossing structures (groynes, jetties, breakwater roots) that stop longshore transport.

A structure is a line that crosses the shoreline. Where it crosses, the transport passing it is
``bypass`` times what arrives from the updrift side; the rest is trapped updrift and missing
downdrift. In the one-line budget the transport gradient at transect ``i`` is the difference of
the fluxes at the faces between transects, ``(F[i+1/2] - F[i-1/2]) / dx`` with
``F[i+1/2] = (Q[i] + Q[i+1]) / 2`` (the central difference of :mod:`shoreline.budget`). A
structure between transects ``i`` and ``i+1`` lets through ``bypass`` times what arrives at
that face, in whichever direction it comes: per time step the transport arriving is ``|Q|``
from the updrift side (decided by its sign), and over the record the face flux becomes

    F = bypass * (F+ + F-),   F+ = (Q+[i] + Q+[i+1]) / 2,   F- = (Q-[i] + Q-[i+1]) / 2,

with ``Q+`` and ``Q-`` the record means of the transport toward increasing and decreasing
chainage (``q_pos``, ``q_neg``); ``F+ + F-`` is the free face flux, so ``bypass = 1`` changes
nothing. The arriving transport is ``F+ - F-`` (gross), the passing ``bypass`` times it and the
trapped the rest. Only the two transects beside the face change, by equal and opposite amounts,
so sand is conserved exactly: what is trapped on one side is what the other side lacks.

This is a screening simplification (an impermeable or partly bypassing barrier at one point; no
diffraction in its lee, no filling of the updrift fillet until bypassing starts, no rip
currents); structures also shelter the shore behind them from waves, which
:mod:`shoreline.exposure` handles as land.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import shapely

from shoreline.coast import (
    CoastLines,
    Transects,
    chainage_positions,
    check_frame_lonlat,
    interp_extrapolate,
    invalid_geometry,
    require_gis_source,
)
from shoreline.errors import CoastError, one_line


@dataclass(frozen=True)
class Structures:
    """Structures located on the shoreline, one row per crossing."""

    structure_id: np.ndarray  # str per structure (the file's id/name field, or its index)
    part_id: np.ndarray  # int: the shore part crossed
    chainage_m: np.ndarray  # ground chainage of the crossing
    face: np.ndarray  # int: index of the transect just before the crossing (face i | i+1)
    bypass: np.ndarray  # share of the arriving transport that passes [0, 1]
    lines: list  # the structure lines in the working CRS (they shelter like land)

    def __len__(self) -> int:
        """Number of structures."""
        return int(self.structure_id.size)


def read_structures(
    path: str | Path,
    coast: CoastLines,
    transects: Transects,
    bypass: float = 0.0,
    layer: str | None = None,
) -> Structures:
    """Read structure lines, reproject them to the working CRS and locate them on the shore.

    Each line must cross the shoreline (a structure that does not is an error naming it). A
    ``bypass`` attribute on a feature overrides the study's ``bypass`` for that structure; it
    must lie in [0, 1]. A structure that crosses the shore more than once is placed at the
    crossing nearest its first vertex (draw structures from land to sea).

    Raises
    ------
    CoastError
        For a missing or unreadable file, a file without a CRS, a structure that does not
        cross the shoreline, or a bypass outside [0, 1].
    """
    import geopandas as gpd

    path = Path(path)
    name = path.name
    require_gis_source(path, "structures file")
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # GDAL's note on unclosed rings
            frame = gpd.read_file(path, layer=layer, engine="pyogrio")
    except shapely.errors.GEOSException as exc:
        raise CoastError(f"{path}: {invalid_geometry(path, layer, exc)}") from None
    except Exception as exc:  # any reader failure: the file is the user's to fix
        raise CoastError(f"{path}: cannot read the structures file ({one_line(exc)})") from None
    if frame.crs is None:
        raise CoastError(f"{name}: the structures file has no CRS; save it with one")
    if len(frame) == 0:
        raise CoastError(f"{name}: the structures file has no features")
    check_frame_lonlat(name, frame)
    frame = frame.to_crs(transects.working_crs)
    ids = _ids(frame)
    if "bypass" in frame.columns:
        values = _bypass_values(name, ids, frame["bypass"])
        per = np.where(np.isnan(values), bypass, values)
    else:
        per = np.full(len(frame), float(bypass))
    bad = np.flatnonzero((per < 0) | (per > 1))
    if bad.size:
        i = bad[0]
        raise CoastError(
            f"{name}: structure {ids[i]!r} has bypass = {per[i]:g}; expected a share in [0, 1]"
        )
    geoms = np.asarray(frame.geometry.array, dtype=object)
    parts = np.asarray(coast.parts, dtype=object)
    tree = shapely.STRtree(parts)
    rows = []
    for i, geom in enumerate(geoms):
        if geom is None or shapely.is_empty(geom):
            raise CoastError(f"{name}: structure {ids[i]!r} has no geometry")
        hits = tree.query(geom, predicate="intersects")
        if hits.size == 0:
            raise CoastError(
                f"{name}: structure {ids[i]!r} does not cross the shoreline; a structure must "
                "be a line that crosses it (groyne, jetty or breakwater root)"
            )
        part, point = _crossing(geom, parts, hits)
        rows.append((ids[i], part, point, per[i], geom))
    part_id = np.array([r[1] for r in rows], dtype=int)
    chainage = np.array([_ground_chainage(transects, coast, r[1], r[2]) for r in rows], dtype=float)
    face = np.array(
        [_face(transects, p, c) for p, c in zip(part_id, chainage, strict=True)], dtype=int
    )
    return Structures(
        structure_id=np.array([r[0] for r in rows], dtype=object).astype(str),
        part_id=part_id,
        chainage_m=chainage,
        face=face,
        bypass=np.array([r[3] for r in rows], dtype=float),
        lines=[r[4] for r in rows],
    )


def _bypass_values(name: str, ids: list[str], column) -> np.ndarray:
    """The ``bypass`` attribute as numbers (NaN where empty); a text that is no number is named."""
    import pandas as pd

    values = pd.to_numeric(column, errors="coerce").to_numpy(dtype=float)
    text = column.astype(str).str.strip()
    given = column.notna().to_numpy() & ~text.str.lower().isin(["", "nan", "none"]).to_numpy()
    bad = np.flatnonzero(np.isnan(values) & given)
    if bad.size:
        i = bad[0]
        raise CoastError(
            f"{name}: structure {ids[i]!r} has bypass = {column.iloc[i]!r}; expected a share "
            "in [0, 1] (a number, or empty to use [structures] bypass)"
        )
    return values


def _ids(frame) -> list[str]:
    for col in ("structure_id", "id", "name"):
        if col in frame.columns:
            return [str(v) for v in frame[col]]
    return [str(i) for i in range(len(frame))]


def _crossing(geom, parts: np.ndarray, hits: np.ndarray) -> tuple[int, shapely.Point]:
    """The crossing nearest the structure's first vertex (its root, if drawn from land)."""
    first = shapely.get_coordinates(geom)[0]
    start = shapely.Point(first)
    best = None
    for part in hits:
        inter = shapely.intersection(geom, parts[part])
        points = shapely.get_parts(shapely.extract_unique_points(inter))
        for p in points:
            d = shapely.distance(start, p)
            if best is None or d < best[0]:
                best = (d, int(part), p)
    assert best is not None
    return best[1], best[2]


def _ground_chainage(transects: Transects, coast: CoastLines, part: int, point) -> float:
    """Ground chainage of a point on a part, from the transects' grid and ground positions."""
    grid, ground = chainage_positions(coast, transects, part)
    at = shapely.line_locate_point(coast.parts[part], point)
    return float(interp_extrapolate(at, grid, ground))


def _face(transects: Transects, part: int, chainage: float) -> int:
    """Index of the transect just before ``chainage`` on ``part`` (the face after it)."""
    idx = np.flatnonzero(transects.part_id == part)
    ch = transects.chainage_m[idx]
    k = int(np.searchsorted(ch, chainage, side="right")) - 1
    if transects.part_closed[idx[0]]:
        return int(idx[k % idx.size])
    return int(idx[min(max(k, 0), idx.size - 2)])


@dataclass(frozen=True)
class Trapping:
    """What each structure does to the primary transport over the record [m3/yr]."""

    q_arriving_m3_per_yr: np.ndarray  # arriving from both sides (gross), per structure
    q_passing_m3_per_yr: np.ndarray  # passing it (gross)
    trapped_m3_per_yr: np.ndarray  # arriving minus passing


def apply_structures(
    dqdx_m2_per_yr: np.ndarray,
    q_pos: np.ndarray,
    q_neg: np.ndarray,
    structures: Structures,
    transects: Transects,
) -> tuple[np.ndarray, Trapping]:
    """Modify the transport gradient for structures; return it and what each one traps.

    See the module docstring for the face-flux form. Faces at the open end of a part (a
    structure beyond the last transect) are moved to the last interior face.
    """
    dqdx = np.array(dqdx_m2_per_yr, dtype=float, copy=True)
    arriving = np.zeros(len(structures))
    passing = np.zeros(len(structures))
    for s in range(len(structures)):
        i = int(structures.face[s])
        part = structures.part_id[s]
        idx = np.flatnonzero(transects.part_id == part)
        j = i + 1 if i + 1 <= idx[-1] else int(idx[0])  # next transect (wraps on rings)
        dx = float(transects.spacing_m[i])
        b = float(structures.bypass[s])
        f_pos = 0.5 * (q_pos[i] + q_pos[j])
        f_neg = 0.5 * (q_neg[i] + q_neg[j])
        change = (b - 1.0) * (f_pos + f_neg)  # the face flux goes from F to bypass * F
        # the end transects of an open part stand for half a spacing (one-sided differences)
        open_part = not transects.part_closed[i]
        dx_i = dx / 2 if open_part and i == idx[0] else dx
        dx_j = dx / 2 if open_part and j == idx[-1] else dx
        dqdx[i] += change / dx_i
        dqdx[j] -= change / dx_j
        arriving[s] = f_pos - f_neg
        passing[s] = b * arriving[s]
    return dqdx, Trapping(
        q_arriving_m3_per_yr=arriving,
        q_passing_m3_per_yr=passing,
        trapped_m3_per_yr=arriving - passing,
    )
