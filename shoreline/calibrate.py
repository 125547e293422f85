"""Fitting the transport coefficients to known net transport rates.

Uncalibrated longshore transport formulas are known to stray by a factor of several from
measured rates (docs/methods.md, calibration). Practitioners calibrate the coefficient to a
rate they know: a harbour's yearly dredging, the filling of a jetty's updrift fillet, a
sediment budget. Each ``[[calibration]]`` of a study gives such a rate (its magnitude and the
azimuth toward which the sand moves) at a place; this module finds the transect it belongs to
and fits, for every formula, the one factor on its coefficient that brings the model to the
known rates. The transport of both formulas is linear in its coefficient (CERC: K, Eq.
III-2-7 of CEM 2002; Kamphuis 1991: the leading coefficient), so the factor is exact for one
rate and a least-squares fit in log space for several:

    log f = mean_k log(Q_known,k / |Q_model,k|)

(equal weight to every rate; the misfit of each is ``f |Q_model,k| / Q_known,k - 1``). A rate
whose direction the model contradicts (more than 90 degrees between the model's drift and
``toward_deg``) cannot be matched by a coefficient: it is left out of the fit and named in a
warning.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pyproj

from shoreline.errors import StudyError


@dataclass(frozen=True)
class Calibration:
    """The fitted factor of every formula and what each known rate says.

    ``factors`` maps a formula name to the factor on its coefficient; ``points`` holds, per
    known rate, where it was placed and the model's rates before and after (one dict each, as
    written to run.json).
    """

    factors: dict[str, float]
    points: list[dict[str, Any]]
    warnings: list[str] = field(default_factory=list)


def place_points(specs, coast, transects, structures, eligible, study_name: str) -> np.ndarray:
    """The transect each known rate belongs to; ``(index, distance_m)`` per rate.

    lon/lat are WGS 84, x/y are in the coast file's CRS; both are taken to the working CRS and
    the nearest ``eligible`` transect (open coast) is chosen. A structure gives the transect
    on its updrift face side, chosen later from the sign of the transport (here both sides of
    its face are returned as ``(i, j)``).
    """
    crs = transects.working_crs
    cand = np.flatnonzero(eligible)
    if cand.size == 0:
        raise StudyError(f"{study_name}: [calibration] there is no open-coast transect to fit at")
    from scipy.spatial import cKDTree  # here: only calibrated runs need it

    tree = cKDTree(np.c_[transects.x_m[cand], transects.y_m[cand]])
    out = []
    for spec in specs:
        if spec["form"] == "structure":
            ids = [] if structures is None else list(structures.structure_id)
            if spec["structure"] not in ids:
                known = ", ".join(ids) or "none in this study"
                raise StudyError(
                    f"{study_name}: [calibration {spec['name']!r}] structure = "
                    f"{spec['structure']!r} is not a structure of the study (structures: {known})"
                )
            s = ids.index(spec["structure"])
            i = int(structures.face[s])
            out.append(("structure", i, s, 0.0))
            continue
        if spec["form"] == "lon/lat":
            source = pyproj.CRS.from_epsg(4326)
            x0, y0 = spec["lon"], spec["lat"]
        else:
            source = coast.source_crs
            x0, y0 = spec["x"], spec["y"]
        x, y = pyproj.Transformer.from_crs(source, crs, always_xy=True).transform(x0, y0)
        if not (np.isfinite(x) and np.isfinite(y)):
            raise StudyError(
                f"{study_name}: [calibration {spec['name']!r}] the point ({x0}, {y0}) cannot be "
                f"placed in the working CRS; check its coordinates"
            )
        dist, k = tree.query([x, y])
        out.append(("point", int(cand[k]), -1, float(dist)))
    return out


def tangent_az_deg(normal_az_deg: np.ndarray, sea_on_right: np.ndarray) -> np.ndarray:
    """Azimuth of increasing chainage: the seaward normal turned 90 degrees away from the sea.

    Examples
    --------
    >>> tangent_az_deg(np.array([180.0, 180.0]), np.array([True, False])).tolist()
    [90.0, 270.0]
    """
    return np.mod(np.asarray(normal_az_deg) + np.where(sea_on_right, -90.0, 90.0), 360.0)


def fit(specs, placed, q_model: dict[str, np.ndarray], tangent_deg: np.ndarray) -> Calibration:
    """Fit one factor per formula to the known rates (module docstring).

    ``q_model[formula]`` holds the model's net transport (positive toward increasing chainage)
    at the placed transects, in the order of ``specs``; ``tangent_deg`` the azimuth of
    increasing chainage there.
    """
    warnings: list[str] = []
    known = np.array([s["net_m3_per_yr"] for s in specs], dtype=float)
    toward = np.array([s["toward_deg"] for s in specs], dtype=float)
    factors: dict[str, float] = {}
    points = [
        {
            "name": s["name"],
            "transect_id": int(p[1]),
            "distance_m": round(p[3], 1),
            "known_net_m3_per_yr": s["net_m3_per_yr"],
            "known_toward_deg": s["toward_deg"],
        }
        for s, p in zip(specs, placed, strict=True)
    ]
    for name, q in q_model.items():
        q = np.asarray(q, dtype=float)
        drift_az = np.where(q >= 0, tangent_deg, tangent_deg + 180.0)
        off = np.abs((drift_az - toward + 180.0) % 360.0 - 180.0)
        agree = (off <= 90.0) & (np.abs(q) > 0)
        for k in np.flatnonzero(~agree):
            warnings.append(
                f"calibration {specs[k]['name']!r}: the {name} transport at transect "
                f"{points[k]['transect_id']} runs toward {drift_az[k] % 360:.0f} deg, not toward "
                f"{toward[k]:g} deg; a coefficient cannot turn it: left out of the fit"
            )
        if not agree.any():
            raise StudyError(
                f"[calibration] no known rate runs the way the {name} transport does at its "
                "transect; check toward_deg (the azimuth the sand moves toward) and the places"
            )
        f = float(np.exp(np.mean(np.log(known[agree] / np.abs(q[agree])))))
        factors[name] = f
        for k, point in enumerate(points):
            point[f"{name}_uncalibrated_m3_per_yr"] = float(abs(q[k]))
            point[f"{name}_calibrated_m3_per_yr"] = float(abs(q[k]) * f)
            point[f"{name}_misfit_percent"] = (
                float(100.0 * (abs(q[k]) * f / known[k] - 1.0)) if agree[k] else None
            )
            point[f"{name}_direction_agrees"] = bool(agree[k])
    return Calibration(factors=factors, points=points, warnings=warnings)
