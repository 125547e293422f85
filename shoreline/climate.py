"""Offshore wave climates: a steady condition or a wave record file.

A climate is a set of offshore conditions (significant height, peak period, direction waves come
from) each with the time it stands for. A record's row stands for the time until the next row;
the last row, and a row followed by a gap longer than ``max_gap_h``, stand for the record's
median time step (a long gap is not filled with the last waves seen). Rows with a missing value
(empty or NaN) are skipped and counted.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from shoreline.bounds import BOUNDS, LATITUDE_DEG, LONGITUDE_DEG, NETCDF_DEFAULT_FILL
from shoreline.errors import WaveRecordError, one_line
from shoreline.folders import require_regular_file

#: The columns a wave record CSV must have.
RECORD_COLUMNS = ("time", "hs_m", "tp_s", "dir_deg")


def _fill_values(values: np.ndarray) -> np.ndarray:
    """Where a record holds netCDF's default fill value: missing, not a wave (infinity is not)."""
    with np.errstate(invalid="ignore"):
        return np.isfinite(values) & (np.abs(values) >= NETCDF_DEFAULT_FILL)


def _range_checks(hs: np.ndarray, tp: np.ndarray, dr: np.ndarray) -> tuple:
    """``(column, values, ok, expected)`` of each record column against its bound."""
    with np.errstate(invalid="ignore"):
        return (
            ("hs_m", hs, BOUNDS["hs_m"].contains(hs), _expect("height", "hs_m")),
            ("tp_s", tp, BOUNDS["tp_s"].contains(tp), _expect("period", "tp_s")),
            ("dir_deg", dr, (dr >= 0) & (dr <= 360), "a direction in [0, 360]"),
        )


def _expect(what: str, key: str) -> str:
    bound = BOUNDS[key]
    return f"a {what} {bound.text()} ({bound.source})"


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
    point_lon: np.ndarray | None = None
    point_lat: np.ndarray | None = None
    point_names: list[str] | None = None

    def __len__(self) -> int:
        """Number of time steps."""
        return self.n_steps

    @property
    def n_steps(self) -> int:
        """Number of time steps (the last axis of the arrays)."""
        return int(self.duration_s.size)

    @property
    def n_points(self) -> int:
        """Number of wave points (1 for a record of one point)."""
        return 1 if self.hs_m.ndim == 1 else int(self.hs_m.shape[0])

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


def exceedance_height(
    hs_m: np.ndarray, duration_s: np.ndarray, hours_per_year: float
) -> np.ndarray:
    """Height exceeded ``hours_per_year`` hours a year in a record, per wave point.

    ``hs_m`` has shape (t,) or (points, t); the record's duration-weighted distribution is
    read at the height above which the record spends ``hours_per_year`` per year.

    Examples
    --------
    >>> hs = np.arange(1.0, 8767.0)  # one year, hourly, heights 1 ... 8766 m
    >>> float(exceedance_height(hs, np.full(hs.size, 3600.0), 12.0))
    8755.0
    """
    hs = np.atleast_2d(hs_m)
    years = duration_s.sum() / (365.25 * 86400.0)
    order = np.argsort(-hs, axis=1)
    hours = np.cumsum(duration_s[order], axis=1) / 3600.0
    i = np.minimum((hours < hours_per_year * years).sum(axis=1), hs.shape[1] - 1)
    out = np.take_along_axis(hs, order, axis=1)[np.arange(hs.shape[0]), i]
    return out if np.ndim(hs_m) == 2 else out[0]


def read_record_csv(path: str | Path, depth_m: float, max_gap_h: float = 6.0) -> WaveClimate:
    """Read a wave record CSV with columns ``time`` (ISO 8601), ``hs_m``, ``tp_s``, ``dir_deg``.

    Lines starting with ``#`` are comments. Times must increase. Rows with an empty or NaN value
    (or netCDF's default fill value, :data:`shoreline.bounds.NETCDF_DEFAULT_FILL`) are skipped
    and counted; a value that is not a number, a time that cannot be read, a height or period
    outside its bound (:data:`shoreline.bounds.BOUNDS`, infinity too), or a direction outside
    [0, 360] is an error naming the line.

    Raises
    ------
    WaveRecordError
        Naming the file, line and value, and what was expected.
    """
    import pandas as pd

    path = Path(path)
    name = path.name
    require_regular_file(path, "wave record file", WaveRecordError)
    try:
        frame = pd.read_csv(path, comment="#", dtype=str, skipinitialspace=True)
    except FileNotFoundError:
        raise WaveRecordError(f"{path}: wave record file not found") from None
    except (OSError, UnicodeDecodeError, pd.errors.ParserError) as exc:
        raise WaveRecordError(f"{path}: cannot read the wave record ({one_line(exc)})") from None
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
        num = pd.to_numeric(text.where(~is_blank, "nan"), errors="coerce").to_numpy(
            float, copy=True
        )
        bad = np.flatnonzero(np.isnan(num) & ~is_blank.to_numpy())
        if bad.size:
            i = bad[0]
            raise WaveRecordError(
                f"{name}: line {lines[i]}: {col} = {text.iloc[i]!r} is not a number"
            )
        fill = _fill_values(num)
        num[fill] = np.nan
        blank |= is_blank.to_numpy() | fill
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
    for col, arr, ok, expect in _range_checks(hs, tp, dr):
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


#: Where each netCDF variable is found: its CF standard name and the units accepted.
CF_VARIABLES = {
    "hs_m": ("sea_surface_wave_significant_height", ("m", "meter", "meters", "metre", "metres")),
    "tp_s": (
        "sea_surface_wave_period_at_variance_spectral_density_maximum",
        ("s", "sec", "second", "seconds"),
    ),
    "dir_deg": (
        "sea_surface_wave_from_direction",
        ("degree", "degrees", "degree_true", "degrees_true", "degree_north", "degrees_north"),
    ),
}

#: File endings read as netCDF; everything else is read as CSV.
NETCDF_SUFFIXES = (".nc", ".nc4", ".cdf", ".netcdf")


#: A record of more values than this (wave points x time steps, per variable) stays on disk and
#: is read in blocks as the run needs them (:class:`RecordArray`); a smaller one is read whole.
EAGER_VALUES = 1 << 22

#: Values per variable read at once when a lazy record is checked or summarised.
BLOCK_VALUES = 1 << 21


def record_sources(path: str | Path | list) -> list[Path]:
    """The files of a record: one path, a list of paths, or a glob pattern (``*``, ``?``, ``[``).

    Raises
    ------
    WaveRecordError
        If a pattern matches nothing.
    """
    if isinstance(path, (list, tuple)):
        out: list[Path] = []
        for item in path:
            out.extend(record_sources(item))
        return out
    path = Path(path)
    if any(c in path.name for c in "*?["):
        matches = sorted(path.parent.glob(path.name))
        if not matches:
            raise WaveRecordError(
                f"{path}: no wave record file matches this pattern (in {path.parent})"
            )
        return matches
    return [path]


def is_netcdf_like(path: Path) -> bool:
    """True for a netCDF file (by its ending, :data:`NETCDF_SUFFIXES`) or a Zarr store."""
    return path.suffix.lower() in NETCDF_SUFFIXES or path.suffix.lower() == ".zarr"


def read_record(
    path: str | Path | list,
    depth_m: float,
    max_gap_h: float = 6.0,
    depth_from_file: bool = False,
) -> WaveClimate:
    """Read a wave record: netCDF or Zarr (by its ending; one file, a list or a glob) or CSV."""
    files = record_sources(path)
    if len(files) == 1 and not is_netcdf_like(files[0]):
        return read_record_csv(files[0], depth_m, max_gap_h)
    bad = [f for f in files if not is_netcdf_like(f)]
    if bad:
        raise WaveRecordError(
            f"{bad[0]}: a record of several files must be netCDF ({', '.join(NETCDF_SUFFIXES)}) "
            "or Zarr (.zarr); a CSV record is one file"
        )
    return read_record_netcdf(
        files if len(files) > 1 else files[0], depth_m, max_gap_h, depth_from_file
    )


@dataclass(frozen=True, eq=False)
class RecordArray:
    """One variable of a record on disk, as a (points, steps) or (steps,) array read in slices.

    Indexing reads only the slice asked for, from the lazily opened dataset (xarray; through
    Dask for a record of several files), keeps the record's time steps without a missing value,
    and applies the variable's transform: for directions ``% 360``, then for a changed climate
    a factor or a turn. The object pickles small (the dataset reopens its files where it is
    unpickled), so a task on a Dask worker reads its own slice.

    Attributes
    ----------
    data : xarray.DataArray
        The lazily opened variable, dimensions (point, time) or (time,).
    steps : ndarray of int or None
        Index in the file of each kept time step; None when every step is kept.
    wrap : bool
        Directions: values are taken ``% 360`` first.
    factor, turn_deg : float
        Then multiplied by ``factor``, or turned by ``turn_deg`` (``(v + turn) % 360``).
    point_block : int
        Wave points read together (the file's own chunk along the points, where it has one).
    dataset : xarray.Dataset
        The dataset ``data`` belongs to (closed by :meth:`close`).
    """

    data: Any
    steps: np.ndarray | None
    wrap: bool = False
    factor: float = 1.0
    turn_deg: float = 0.0
    point_block: int = 64
    dataset: Any = None

    @property
    def shape(self) -> tuple[int, ...]:
        """Shape (points, steps) or (steps,)."""
        n = int(self.data.shape[-1]) if self.steps is None else int(self.steps.size)
        return (*self.data.shape[:-1], n)

    @property
    def ndim(self) -> int:
        """Number of dimensions."""
        return len(self.shape)

    @property
    def size(self) -> int:
        """Number of values."""
        return int(np.prod(self.shape))

    dtype = np.dtype(float)

    def __len__(self) -> int:
        return self.shape[0]

    def scaled(self, factor: float) -> RecordArray:
        """The same variable multiplied by ``factor`` (after any earlier transform)."""
        return replace(self, factor=self.factor * float(factor))

    def turned(self, turn_deg: float) -> RecordArray:
        """Directions turned by ``turn_deg`` and wrapped to [0, 360)."""
        return replace(self, turn_deg=self.turn_deg + float(turn_deg))

    def __getitem__(self, key) -> np.ndarray:
        key = key if isinstance(key, tuple) else (key,)
        if len(key) < self.ndim:
            key = (*key, *([slice(None)] * (self.ndim - len(key))))
        *lead, time_key = key
        steps = np.arange(self.shape[-1])[time_key]
        file_steps = steps if self.steps is None else self.steps[steps]
        values = self._read(tuple(lead), np.atleast_1d(file_steps))
        if np.ndim(steps) == 0:
            values = values[..., 0]
        return values

    def _read(self, lead: tuple, file_steps: np.ndarray) -> np.ndarray:
        """Values at the given file steps (sorted), read as one contiguous run and picked."""
        if file_steps.size == 0:
            index = (*lead, slice(0, 0))
            sub = self.data[index] if lead else self.data[0:0]
            return self._finish(np.asarray(sub.values, dtype=float))
        lo, hi = int(file_steps.min()), int(file_steps.max()) + 1
        run = self.data[(*lead, slice(lo, hi))] if lead else self.data[lo:hi]
        values = _load(run)
        if file_steps.size != hi - lo or np.any(np.diff(file_steps) != 1):
            values = values[..., file_steps - lo]
        return self._finish(values)

    def _finish(self, values: np.ndarray) -> np.ndarray:
        values = np.array(values, dtype=float)
        if self.wrap:
            values %= 360.0
        if self.factor != 1.0:
            values = values * self.factor
        if self.turn_deg != 0.0:
            values = (values + self.turn_deg) % 360.0
        return values

    def __array__(self, dtype=None, copy=None) -> np.ndarray:
        out = self[...] if self.ndim == 1 else self[:, :]
        return out if dtype is None else out.astype(dtype)

    def close(self) -> None:
        """Close the record's files.

        Closed here and now by the run, not left to the garbage collector, which may run in
        any thread while another opens a file (netCDF's library is not thread-safe).
        """
        if self.dataset is not None:
            self.dataset.close()


def close_record(climate: WaveClimate) -> None:
    """Close the files of a record read lazily (nothing to do for one in memory)."""
    for arr in (climate.hs_m, climate.tp_s, climate.dir_deg):
        if isinstance(arr, RecordArray):
            arr.close()


def _load(data: Any) -> np.ndarray:
    """The values of a lazily indexed xarray object, read here (Dask's own scheduler off)."""
    try:
        import dask
    except ImportError:
        return np.asarray(data.values)
    with dask.config.set(scheduler="synchronous"):  # a task on a worker reads its own slice
        return np.asarray(data.values)


def is_lazy(climate: WaveClimate) -> bool:
    """True when the climate's record stays on disk (:class:`RecordArray`)."""
    return isinstance(climate.hs_m, RecordArray)


def point_blocks(climate: WaveClimate, values: int = BLOCK_VALUES):
    """Yield ``(points, hs, tp, dir)``: every step of a few wave points at a time.

    ``points`` is a slice of the wave points (``slice(0, 1)`` for a record of one point); the
    arrays have shape (points in the block, steps). An in-memory record of up to ``values``
    values per variable comes as one block (no copy); a record on disk in blocks of at most
    ``values`` values (at least one point).
    """
    n_points, n_steps = climate.n_points, max(climate.n_steps, 1)
    one = climate.hs_m.ndim == 1
    per = max(1, values // n_steps)
    if not is_lazy(climate) and n_points * n_steps <= values:
        per = n_points
    for p0 in range(0, n_points, per):
        sl = slice(p0, min(p0 + per, n_points))
        arrays = []
        for arr in (climate.hs_m, climate.tp_s, climate.dir_deg):
            arrays.append(np.atleast_2d(arr[:] if one else arr[sl]))
        yield (sl, *arrays)


def step_blocks(climate: WaveClimate, values: int = BLOCK_VALUES):
    """Yield ``(steps, hs, tp, dir)``: every wave point over a run of time steps at a time.

    The arrays have shape (points, steps in the block); an in-memory record comes whole.
    """
    n_points, n_steps = climate.n_points, climate.n_steps
    per = max(1, values // max(n_points, 1))
    if not is_lazy(climate):
        per = max(n_steps, 1)
    for t0 in range(0, n_steps, per):
        sl = slice(t0, min(t0 + per, n_steps))
        yield (
            sl,
            *(np.atleast_2d(arr[..., sl]) for arr in (climate.hs_m, climate.tp_s, climate.dir_deg)),
        )


def read_record_netcdf(
    path: str | Path | list,
    depth_m: float,
    max_gap_h: float = 6.0,
    depth_from_file: bool = False,
) -> WaveClimate:
    """Read a CF-convention netCDF wave record (or Zarr store) through xarray.

    Variables are found by their CF standard names (:data:`CF_VARIABLES`), whatever they are
    called, and their units are checked. The time coordinate is the variable with standard
    name ``time`` (or axis ``T``, or the name ``time``). A second dimension is a set of wave
    points (output points along the coast): each needs a longitude and latitude (standard
    names ``longitude`` and ``latitude``) and may have a depth (standard name
    ``sea_floor_depth_below_sea_surface``, in m), used where ``depth_from_file`` is true.
    A time step with a missing value at any point is skipped and counted.

    ``path`` may be a list of files that together hold one record (joined along time by
    their coordinates, :func:`xarray.open_mfdataset`; needs Dask) or a Zarr store (``.zarr``).
    The record is opened lazily and checked in blocks of time steps; a record of more than
    :data:`EAGER_VALUES` values per variable stays on disk (:class:`RecordArray`) and the run
    reads it per wave point and time chunk.

    Raises
    ------
    WaveRecordError
        Naming the file, the variable or standard name, and what was expected.
    """
    files = path if isinstance(path, list) else [Path(path)]
    files = [Path(f) for f in files]
    name = files[0].name if len(files) == 1 else f"{files[0].name} (+{len(files) - 1} files)"
    where = files[0] if len(files) == 1 else f"{files[0].parent}/{name}"
    try:
        import xarray as xr
    except ImportError:  # pragma: no cover - xarray is in the test extra
        raise WaveRecordError(
            f"{name}: reading netCDF needs xarray and netCDF4: pip install xarray netCDF4"
        ) from None
    zarr = [f for f in files if f.suffix.lower() == ".zarr"]
    for f in files:
        if f.suffix.lower() == ".zarr":
            if not f.is_dir():
                raise WaveRecordError(f"{f}: Zarr store not found (a .zarr folder)")
        else:
            require_regular_file(f, "wave record file", WaveRecordError)
    try:
        if len(files) > 1:
            try:
                import dask  # noqa: F401
            except ImportError:
                raise WaveRecordError(
                    f"{where}: a record of several files is joined by Dask: "
                    "pip install 'longshore-screen[dask]'"
                ) from None
            ds = xr.open_mfdataset(
                [str(f) for f in files],
                combine="by_coords",
                chunks={},
                engine="zarr" if zarr else None,
                data_vars="minimal",
                coords="minimal",
                compat="override",
                join="exact",
            )
        elif zarr:
            with warnings.catch_warnings():  # a store without consolidated metadata is fine
                warnings.simplefilter("ignore", RuntimeWarning)
                ds = xr.open_dataset(files[0], engine="zarr", chunks=None)
        else:
            ds = xr.open_dataset(files[0], cache=False)
    except WaveRecordError:
        raise
    except ImportError as exc:
        raise WaveRecordError(f"{where}: cannot read the record ({one_line(exc)})") from None
    except Exception as exc:  # any backend failure is a file the user must fix
        what = "Zarr" if zarr else "netCDF"
        raise WaveRecordError(f"{where}: cannot read as {what} ({one_line(exc)})") from None
    found = {}
    for key, (standard, units) in CF_VARIABLES.items():
        matches = [v for v in ds.data_vars if ds[v].attrs.get("standard_name") == standard]
        if not matches:
            raise WaveRecordError(
                f"{name}: no variable with standard_name {standard!r} (for {key}); "
                f"found variables {', '.join(map(str, ds.data_vars))}"
            )
        var = ds[matches[0]]
        unit = str(var.attrs.get("units", "")).strip()
        if unit not in units:
            raise WaveRecordError(
                f"{name}: variable {matches[0]!r} ({standard}) has units {unit!r}; "
                f"expected {units[0]!r}"
            )
        found[key] = var
    time_name = _time_coordinate(ds, name)
    other = [d for d in found["hs_m"].dims if d != time_name]
    if len(other) > 1 or time_name not in found["hs_m"].dims:
        raise WaveRecordError(
            f"{name}: wave variables must have dimensions (time) or (time, point); "
            f"found {found['hs_m'].dims}"
        )
    point_dim = other[0] if other else None
    order = (point_dim, time_name) if point_dim else (time_name,)
    for var in found.values():
        if set(var.dims) != set(found["hs_m"].dims):
            raise WaveRecordError(
                f"{name}: {var.name!r} has dimensions {var.dims}, unlike the wave height's "
                f"{found['hs_m'].dims}"
            )
    lazy = {key: var.transpose(*order) for key, var in found.items()}
    time = np.asarray(ds[time_name].values)
    if not np.issubdtype(time.dtype, np.datetime64):
        raise WaveRecordError(
            f"{name}: the time coordinate {time_name!r} could not be read as times "
            "(CF units such as 'hours since 2031-01-01')"
        )
    lon = lat = depth = None
    names = None
    block = 64
    if point_dim is not None:
        lon = _point_coordinate(ds, point_dim, "longitude", name)
        lat = _point_coordinate(ds, point_dim, "latitude", name)
        names = [str(v) for v in ds[point_dim].values] if point_dim in ds.coords else None
        depth_vars = [
            v
            for v in ds.variables
            if ds[v].attrs.get("standard_name") == "sea_floor_depth_below_sea_surface"
        ]
        if depth_from_file and depth_vars:
            depth = np.asarray(ds[depth_vars[0]].values, dtype=float).reshape(-1)
        chunks = found["hs_m"].encoding.get("preferred_chunks") or {}
        block = int(chunks.get(point_dim, 0)) or block
    t = time.astype("datetime64[s]")
    if np.any(np.diff(t.astype(np.int64)) <= 0):
        i = int(np.flatnonzero(np.diff(t.astype(np.int64)) <= 0)[0]) + 1
        raise WaveRecordError(f"{name}: time index {i} does not come after the one before it")
    blank = _check_values(lazy, found, name)
    keep = ~blank
    if not keep.any():
        raise WaveRecordError(f"{name}: every time step has a missing value; nothing to use")
    duration = durations_s(t, max_gap_h * 3600.0)
    skipped = int(blank.sum())
    notes = [f"{name}: skipped {skipped} time steps with a missing value"] if skipped else []
    if depth is not None and not np.all(BOUNDS["depth_m"].contains(depth)):
        raise WaveRecordError(
            f"{name}: the depth of every wave point must be {BOUNDS['depth_m'].text()} "
            f"(found {', '.join(f'{d:g}' for d in depth)})"
        )
    steps = None if keep.all() else np.flatnonzero(keep)
    arrays = {
        key: RecordArray(var, steps, wrap=key == "dir_deg", point_block=block, dataset=ds)
        for key, var in lazy.items()
    }
    if arrays["hs_m"].size <= EAGER_VALUES:
        arrays = {key: np.asarray(arr) for key, arr in arrays.items()}
        ds.close()
    return WaveClimate(
        hs_m=arrays["hs_m"],
        tp_s=arrays["tp_s"],
        dir_deg=arrays["dir_deg"],
        duration_s=duration[keep],
        depth_m=depth if depth is not None else float(depth_m),
        kind="record",
        source=str(files[0]) if len(files) == 1 else f"{files[0]} and {len(files) - 1} more",
        skipped=skipped,
        time=t[keep],
        warnings=notes,
        point_lon=lon,
        point_lat=lat,
        point_names=names,
    )


def _check_values(lazy: dict, found: dict, name: str) -> np.ndarray:
    """Missing steps of a record, checked in blocks of time; an error for a value out of bounds.

    A value equal to netCDF's default fill is missing; a step missing at any point is skipped.
    Of several values out of bounds the one named is, for the first variable that has any,
    the first by wave point and then time (as if the whole record were searched at once).
    """
    shape = lazy["hs_m"].shape
    n_steps = shape[-1]
    n_points = 1 if len(shape) == 1 else shape[0]
    per = max(1, BLOCK_VALUES // max(n_points, 1))
    blank = np.zeros(n_steps, dtype=bool)
    first_bad: dict[str, tuple] = {}
    for t0 in range(0, n_steps, per):
        t1 = min(t0 + per, n_steps)
        block = {}
        for key, var in lazy.items():
            arr = np.array(_load(var[..., t0:t1]), dtype=float)
            arr[_fill_values(arr)] = np.nan  # a variable without _FillValue holds the default
            block[key] = arr
        hs, tp, dr = block["hs_m"], block["tp_s"], block["dir_deg"]
        missing = np.isnan(hs) | np.isnan(tp) | np.isnan(dr)
        blank[t0:t1] = missing.any(axis=0) if missing.ndim == 2 else missing
        for key, arr, ok, expect in _range_checks(hs, tp, dr):
            bad = ~ok & ~np.isnan(arr)
            if bad.any():
                where = tuple(np.argwhere(bad)[0])
                at = (*where[:-1], where[-1] + t0)
                if key not in first_bad or at < first_bad[key][0]:
                    first_bad[key] = (at, arr[where], expect)
    for key in ("hs_m", "tp_s", "dir_deg"):
        if key in first_bad:
            at, value, expect = first_bad[key]
            point = f", wave point {at[0]}" if len(at) == 2 else ""
            raise WaveRecordError(
                f"{name}: variable {str(found[key].name)!r} ({key}) = {value:g} at "
                f"time index {at[-1]}{point}: expected {expect}"
            )
    return blank


def _time_coordinate(ds: Any, name: str) -> str:
    for v in ds.variables:
        attrs = ds[v].attrs
        if attrs.get("standard_name") == "time" or attrs.get("axis") == "T":
            return str(v)
    if "time" in ds.variables:
        return "time"
    raise WaveRecordError(f"{name}: no time coordinate (standard_name 'time' or axis 'T')")


def _point_coordinate(ds: Any, dim: str, standard: str, name: str) -> np.ndarray:
    low, high = LONGITUDE_DEG if standard == "longitude" else LATITUDE_DEG
    for v in ds.variables:
        if ds[v].attrs.get("standard_name") == standard and ds[v].dims == (dim,):
            values = np.asarray(ds[v].values, dtype=float)
            with np.errstate(invalid="ignore"):
                bad = np.flatnonzero(~((values >= low) & (values <= high)))
            if bad.size:
                raise WaveRecordError(
                    f"{name}: variable {str(v)!r} ({standard}) is {values[bad[0]]:g} at wave "
                    f"point {bad[0]}; expected a {standard} in [{low:g}, {high:g}] degrees"
                )
            return values
    raise WaveRecordError(
        f"{name}: the wave points (dimension {dim!r}) need a {standard} variable "
        f"(standard_name {standard!r}) along {dim!r}"
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
    are returned. With several wave points, every point counts equally (hours are averaged).
    """
    edges = np.asarray(
        hs_edges_m if hs_edges_m is not None else (0, 0.5, 1, 1.5, 2, 3, 4, 6, np.inf), float
    )
    n_sec = int(round(360.0 / sector_deg))
    hours = np.zeros((n_sec, edges.size - 1))
    for _, hs_b, _, dr_b in point_blocks(climate):
        hs = hs_b.reshape(-1)
        weight_h = np.broadcast_to(climate.duration_s / 3600.0 / climate.n_points, hs_b.shape)
        sec = np.floor((dr_b.reshape(-1) % 360.0) / sector_deg).astype(int) % n_sec
        cls = np.clip(np.searchsorted(edges, hs, side="right") - 1, 0, edges.size - 2)
        np.add.at(hours, (sec, cls), weight_h.reshape(-1))
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


def mean_height_m(climate: WaveClimate) -> np.ndarray:
    """Duration-weighted mean significant height of each wave point [m] (read in blocks)."""
    means = [
        np.atleast_1d(np.average(hs, axis=-1, weights=climate.duration_s))
        for _, hs, _, _ in point_blocks(climate)
    ]
    return np.concatenate(means)


def largest(climate: WaveClimate, key: str) -> float:
    """The largest value of ``hs_m`` or ``tp_s`` over the record (NaN ignored; read in blocks)."""
    column = {"hs_m": 1, "tp_s": 2}[key]
    return float(max(np.nanmax(block[column]) for block in point_blocks(climate)))
