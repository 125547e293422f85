"""Offshore wave climates: a steady condition or a wave record file.

A climate is a set of offshore conditions (significant height, peak period, direction waves come
from) each with the time it stands for. A record's row stands for the time until the next row;
the last row, and a row followed by a gap longer than ``max_gap_h``, stand for the record's
median time step (a long gap is not filled with the last waves seen). Rows with a missing value
(empty or NaN) are skipped and counted.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from shoreline.errors import WaveRecordError

#: The columns a wave record CSV must have.
RECORD_COLUMNS = ("time", "hs_m", "tp_s", "dir_deg")


@dataclass(frozen=True)
class WaveClimate:
    """Offshore wave conditions and the time each stands for.

    Attributes
    ----------
    hs_m, tp_s, dir_deg : ndarray of shape (t,)
        Significant height [m], peak period [s], direction waves come from [deg, true north].
    duration_s : ndarray of shape (t,)
        Time each condition stands for [s].
    depth_m : float
        Depth at which the conditions are given [m]; ``inf`` for deep water.
    kind : str
        ``"steady"`` or ``"record"``.
    source : str
        Where the conditions came from (file path or "study file").
    skipped : int
        Rows of the record skipped for missing values.
    """

    hs_m: np.ndarray
    tp_s: np.ndarray
    dir_deg: np.ndarray
    duration_s: np.ndarray
    depth_m: float
    kind: str
    source: str
    skipped: int = 0
    time: np.ndarray | None = None
    warnings: list[str] = field(default_factory=list)

    def __len__(self) -> int:
        """Number of time steps."""
        return self.n_steps

    @property
    def n_steps(self) -> int:
        """Number of time steps (the last axis of the arrays)."""
        return int(self.duration_s.size)

    @property
    def total_hours(self) -> float:
        """The time the climate stands for [h]."""
        return float(self.duration_s.sum() / 3600.0)


def steady(hs_m: float, tp_s: float, dir_deg: float, depth_m: float = np.inf) -> WaveClimate:
    """A single condition standing for one year (the rates of a steady climate are per year).

    Examples
    --------
    >>> c = steady(1.2, 8.0, 200.0)
    >>> len(c), c.kind, round(c.total_hours)
    (1, 'steady', 8766)
    """
    return WaveClimate(
        hs_m=np.array([float(hs_m)]),
        tp_s=np.array([float(tp_s)]),
        dir_deg=np.array([float(dir_deg) % 360.0]),
        duration_s=np.array([365.25 * 86400.0]),
        depth_m=float(depth_m),
        kind="steady",
        source="study file",
    )


def durations_s(time: np.ndarray, max_gap_s: float) -> np.ndarray:
    """Time each record stands for: until the next record, capped where a gap is too long.

    The last record, and any record followed by a gap longer than ``max_gap_s``, stands for the
    median step of the record.

    Examples
    --------
    >>> t = np.array([0, 3600, 7200, 36000], dtype="datetime64[s]")
    >>> durations_s(t, 6 * 3600.0).tolist()
    [3600.0, 3600.0, 3600.0, 3600.0]
    """
    t = np.asarray(time).astype("datetime64[ns]").astype(np.int64) / 1e9
    if t.size == 1:
        return np.array([3600.0])
    step = np.diff(t)
    median = float(np.median(step))
    out = np.append(step, median)
    out[:-1][step > max_gap_s] = median
    return out


def read_record_csv(path: str | Path, depth_m: float, max_gap_h: float = 6.0) -> WaveClimate:
    """Read a wave record CSV with columns ``time`` (ISO 8601), ``hs_m``, ``tp_s``, ``dir_deg``.

    Lines starting with ``#`` are comments. Times must increase. Rows with an empty or NaN value
    are skipped and counted; a value that is not a number, a time that cannot be read, a
    height or period <= 0, or a direction outside [0, 360] is an error naming the line.

    Raises
    ------
    WaveRecordError
        Naming the file, line and value, and what was expected.
    """
    import pandas as pd

    path = Path(path)
    name = path.name
    try:
        frame = pd.read_csv(path, comment="#", dtype=str, skipinitialspace=True)
    except FileNotFoundError:
        raise WaveRecordError(f"{path}: wave record file not found") from None
    except (OSError, UnicodeDecodeError, pd.errors.ParserError) as exc:
        raise WaveRecordError(f"{path}: cannot read the wave record ({exc})") from None
    except pd.errors.EmptyDataError:
        raise WaveRecordError(f"{path}: the wave record is empty") from None
    frame.columns = [str(c).strip() for c in frame.columns]
    missing = [c for c in RECORD_COLUMNS if c not in frame.columns]
    if missing:
        raise WaveRecordError(
            f"{name}: missing column {', '.join(missing)}; expected columns "
            f"{', '.join(RECORD_COLUMNS)} (found {', '.join(frame.columns)})"
        )
    if len(frame) == 0:
        raise WaveRecordError(f"{name}: the wave record has no rows")
    lines = _line_numbers(path, len(frame))
    values = {}
    blank = np.zeros(len(frame), dtype=bool)
    for col in RECORD_COLUMNS[1:]:
        text = frame[col].fillna("").str.strip()
        is_blank = text.str.lower().isin(["", "nan", "na"])
        num = pd.to_numeric(text.where(~is_blank, "nan"), errors="coerce").to_numpy(float)
        bad = np.flatnonzero(np.isnan(num) & ~is_blank.to_numpy())
        if bad.size:
            i = bad[0]
            raise WaveRecordError(
                f"{name}: line {lines[i]}: {col} = {text.iloc[i]!r} is not a number"
            )
        blank |= is_blank.to_numpy()
        values[col] = num
    try:
        time = pd.to_datetime(frame["time"].str.strip(), utc=True, format="ISO8601")
    except (ValueError, TypeError):
        parsed = pd.to_datetime(frame["time"].str.strip(), utc=True, errors="coerce")
        i = int(np.flatnonzero(parsed.isna().to_numpy())[0])
        raise WaveRecordError(
            f"{name}: line {lines[i]}: time = {frame['time'].iloc[i]!r} is not an ISO 8601 time "
            "(e.g. 2031-01-01T00:00Z)"
        ) from None
    t = time.dt.tz_convert(None).to_numpy().astype("datetime64[s]")
    keep = ~blank
    hs, tp, dr = values["hs_m"], values["tp_s"], values["dir_deg"]
    for col, arr, ok, expect in (
        ("hs_m", hs, hs > 0, "a height > 0"),
        ("tp_s", tp, tp > 0, "a period > 0"),
        ("dir_deg", dr, (dr >= 0) & (dr <= 360), "a direction in [0, 360]"),
    ):
        bad = np.flatnonzero(keep & ~ok)
        if bad.size:
            i = bad[0]
            raise WaveRecordError(f"{name}: line {lines[i]}: {col} = {arr[i]:g}: expected {expect}")
    back = np.flatnonzero(np.diff(t.astype(np.int64)) <= 0)
    if back.size:
        i = back[0] + 1
        raise WaveRecordError(
            f"{name}: line {lines[i]}: time {frame['time'].iloc[i]} does not come after the "
            "previous line's; the record must be in increasing time order"
        )
    if not keep.any():
        raise WaveRecordError(f"{name}: every row has a missing value; nothing to use")
    duration = durations_s(t, max_gap_h * 3600.0)
    warnings = []
    skipped = int(blank.sum())
    if skipped:
        warnings.append(f"{name}: skipped {skipped} rows with a missing value")
    return WaveClimate(
        hs_m=hs[keep],
        tp_s=tp[keep],
        dir_deg=dr[keep] % 360.0,
        duration_s=duration[keep],
        depth_m=float(depth_m),
        kind="record",
        source=str(path),
        skipped=skipped,
        time=t[keep],
        warnings=warnings,
    )


def _line_numbers(path: Path, n_rows: int) -> np.ndarray:
    """File line number of each data row (1-based), skipping comment and blank lines."""
    numbers = []
    with open(path, encoding="utf-8", errors="replace") as handle:
        header_seen = False
        for number, line in enumerate(handle, start=1):
            stripped = line.strip()
            if not stripped or stripped.startswith("#"):
                continue
            if not header_seen:
                header_seen = True
                continue
            numbers.append(number)
            if len(numbers) == n_rows:
                break
    numbers += [numbers[-1] if numbers else 2] * (n_rows - len(numbers))
    return np.asarray(numbers)


def joint_histogram(
    climate: WaveClimate, sector_deg: float = 10.0, hs_edges_m: tuple[float, ...] | None = None
) -> list[dict[str, float]]:
    """Hours of offshore waves by direction sector and height class (for the wave rose).

    Sectors are ``sector_deg`` wide starting at 0 (the direction waves come from); heights are
    in classes of ``hs_edges_m`` (default 0, 0.5, 1, 1.5, 2, 3, 4, 6, inf m). Only non-empty bins
    are returned.
    """
    edges = np.asarray(
        hs_edges_m if hs_edges_m is not None else (0, 0.5, 1, 1.5, 2, 3, 4, 6, np.inf), float
    )
    n_sec = int(round(360.0 / sector_deg))
    sec = np.floor((climate.dir_deg % 360.0) / sector_deg).astype(int) % n_sec
    cls = np.clip(np.searchsorted(edges, climate.hs_m, side="right") - 1, 0, edges.size - 2)
    hours = np.zeros((n_sec, edges.size - 1))
    np.add.at(hours, (sec, cls), climate.duration_s / 3600.0)
    rows = []
    for i, j in zip(*np.nonzero(hours), strict=True):
        rows.append(
            {
                "dir_from_deg_lo": i * sector_deg,
                "dir_from_deg_hi": (i + 1) * sector_deg,
                "hs_m_lo": float(edges[j]),
                "hs_m_hi": float(edges[j + 1]),
                "hours": float(hours[i, j]),
            }
        )
    return rows
