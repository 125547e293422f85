"""The study file: one TOML file read and validated completely into typed settings.

Every key is checked before any work starts: an unknown key is an error naming the key and its
section (with the closest valid key, to catch typos), and so is a value of the wrong type or out
of range. Paths in the file are relative to the file. The keys, their defaults and their ranges
are listed once, in :data:`SCHEMA`; ``docs/study-file.md`` documents them for users.
"""

from __future__ import annotations

import difflib
import math
import sys
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from shoreline.bounds import BOUNDS, SCHEDULER_TIMEOUT_S
from shoreline.errors import StudyError

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - exercised on Python 3.10 only
    import tomli as tomllib

#: Transport formulas the run can compute (names as in :mod:`shoreline.transport`).
KNOWN_FORMULAS = ("cerc", "kamphuis")


@dataclass(frozen=True)
class Key:
    """One key of the study file: its type, default and the check of its value."""

    kind: str  # "float", "int", "str", "bool", "str-list", "float-or-str", "str-or-str-list"
    default: Any = None
    required: bool = False
    check: Callable[[Any], str | None] | None = None
    doc: str = ""


def _positive(v: Any) -> str | None:
    return None if isinstance(v, (int, float)) and v > 0 else "a number > 0"


def _non_negative(v: Any) -> str | None:
    return None if v >= 0 else "a number >= 0"


def _unit_closed(v: Any) -> str | None:
    return None if 0 <= v <= 1 else "a share between 0 and 1"


def _breaker_index(v: Any) -> str | None:
    return None if 0 < v <= 1.5 else "a number in (0, 1.5]"


def _direction(v: Any) -> str | None:
    return None if -360 <= v <= 360 else "a direction in degrees between -360 and 360"


def _one_of(*choices: str) -> Callable[[Any], str | None]:
    def check(v: Any) -> str | None:
        return None if v in choices else "one of " + ", ".join(repr(c) for c in choices)

    return check


def _bounded(name: str) -> Callable[[Any], str | None]:
    """The check of a physical input against its bound (:data:`shoreline.bounds.BOUNDS`)."""
    return BOUNDS[name].check


def _bounded_or(word: str, name: str) -> Callable[[Any], str | None]:
    """The check of a value that is either the text ``word`` or a number within its bound."""

    def check(v: Any) -> str | None:
        if isinstance(v, str):
            return None if v == word else f"{word!r} or a number {BOUNDS[name].text()}"
        expected = BOUNDS[name].check(v)
        return None if expected is None else f"{word!r} or {expected}"

    return check


_depth = _bounded_or("deep", "depth_m")
_closure = _bounded_or("hallermeier", "closure_depth_m")
_fetch = _bounded_or("auto", "fetch_km")
_window = _bounded_or("auto", "orientation_window_m")
_cerc_k = _bounded_or("del_valle", "cerc_k")


def _formulas(v: Any) -> str | None:
    bad = [f for f in v if f not in KNOWN_FORMULAS]
    if bad or not v:
        return "a non-empty list from " + ", ".join(repr(f) for f in KNOWN_FORMULAS)
    return None


#: Every section and key of the study file, with type, default and range.
SCHEMA: dict[str, dict[str, Key]] = {
    "coast": {
        "file": Key("str", required=True, doc="coast file (any vector format pyogrio reads)"),
        "layer": Key("str", doc="layer name, for files with several layers"),
        "sea": Key(
            "str",
            check=_one_of("left", "right"),
            doc="side of the digitised direction the sea is on (lines only)",
        ),
        "polygons": Key(
            "str",
            "land",
            check=_one_of("land", "water"),
            doc='polygons are "land" (sea outside) or "water" (lakes: water inside)',
        ),
        "land": Key("str", doc="extra land that blocks waves: islands, breakwaters, spits"),
        "reaches": Key(
            "str",
            doc='reaches to leave out or hold fixed: attribute treat = "exclude" or "non_erodible"',
        ),
        "exposure_distance_m": Key(
            "float",
            20000.0,
            check=_bounded("exposure_distance_m"),
            doc="how far from the shore land is looked for",
        ),
        "ray_start_m": Key(
            "float",
            200.0,
            check=_positive,
            doc="how far seaward of the shore the sheltering rays start (beyond the surf zone)",
        ),
        "spacing_m": Key(
            "float", 100.0, check=_bounded("spacing_m"), doc="transect spacing on the ground"
        ),
        "orientation_window_m": Key(
            "float-or-str",
            "auto",
            check=_window,
            doc='shore length each orientation is fitted over; "auto": from the data',
        ),
        "transect_length_m": Key(
            "float",
            500.0,
            check=_bounded("transect_length_m"),
            doc="drawn seaward length of each transect",
        ),
        "crs": Key("str", doc="CRS of a coast file that carries none, e.g. 'EPSG:32631'"),
    },
    "sediment": {
        "d50_mm": Key("float", 0.3, check=_bounded("d50_mm"), doc="median grain size"),
        "porosity": Key("float", 0.4, check=_bounded("porosity"), doc="porosity of the deposit"),
        "density_kg_m3": Key("float", 2650.0, check=_bounded("density_kg_m3"), doc="grain density"),
        "slope": Key(
            "float",
            check=_bounded("slope"),
            doc="beach slope breaker line to shoreline; else from the equilibrium profile",
        ),
    },
    "waves": {
        "hs_m": Key(
            "float", check=_bounded("hs_m"), doc="significant wave height (steady condition)"
        ),
        "tp_s": Key("float", check=_bounded("tp_s"), doc="peak period (steady condition)"),
        "dir_deg": Key("float", check=_direction, doc="direction waves come from, true north"),
        "depth_m": Key("float-or-str", "deep", check=_depth, doc='depth of the waves: "deep"'),
        "file": Key(
            "str-or-str-list",
            doc="wave record: CSV (time, hs_m, tp_s, dir_deg), CF netCDF (a file, a list of "
            "files or a glob) or a Zarr store",
        ),
        "max_gap_h": Key(
            "float",
            6.0,
            check=_bounded("max_gap_h"),
            doc="longest step a record may stand for, hours",
        ),
        "spreading_s": Key(
            "float",
            25.0,
            check=_positive,
            doc="directional spreading cos^2s: 10 wind sea, 25 swell, 75 long-travelled swell",
        ),
        "chunk_steps": Key(
            "int", 0, check=_non_negative, doc="time steps evaluated at once; 0 = automatic"
        ),
    },
    "model": {
        "formulas": Key("str-list", ["cerc", "kamphuis"], check=_formulas, doc="formulas to run"),
        "primary": Key(
            "str", "cerc", check=_one_of(*KNOWN_FORMULAS), doc="formula driving rates and classes"
        ),
        "breaker_index": Key("float", 0.78, check=_breaker_index, doc="breaker index Hb/db"),
        "breaking": Key(
            "str", "exact", check=_one_of("exact", "explicit"), doc="breaking solution method"
        ),
        "angle_step_deg": Key(
            "float", 0.5, check=_non_negative, doc="angle node spacing for breaking; 0 = direct"
        ),
        "cerc_k": Key("float-or-str", 0.39, check=_cerc_k, doc="CERC coefficient (Hs form)"),
        "kamphuis_coefficient": Key(
            "float", 2.27, check=_bounded("kamphuis_coefficient"), doc="Kamphuis coefficient"
        ),
        "water_density_kg_m3": Key(
            "float", 1025.0, check=_bounded("water_density_kg_m3"), doc="water density"
        ),
        "closure_depth_m": Key("float-or-str", 8.0, check=_closure, doc="closure depth"),
        "berm_height_m": Key("float", 2.0, check=_bounded("berm_height_m"), doc="berm height"),
    },
    "structures": {
        "file": Key("str", doc="lines crossing the shore: groynes, jetties, breakwater roots"),
        "layer": Key("str", doc="layer name, for files with several layers"),
        "bypass": Key(
            "float", 0.0, check=_unit_closed, doc="share of the arriving transport that passes"
        ),
    },
    "classify": {
        "stable_band_m_per_yr": Key(
            "float", 0.5, check=_non_negative, doc="|rate| below this is stable"
        ),
        "min_hotspot_length_m": Key(
            "float", 300.0, check=_non_negative, doc="shortest run that is a hotspot"
        ),
        "event_stable_band_m": Key(
            "float",
            1.0,
            check=_non_negative,
            doc="storm events: |shoreline shift| below this is stable",
        ),
    },
    # How the run is carried out (not what it computes): its own block.
    "run": {
        "scheduler": Key(
            "str",
            check=lambda v: None if v.strip() else "a Dask scheduler address, e.g. tcp://host:8786",
            doc="address of an existing Dask scheduler to run the time reduction on",
        ),
        "scheduler_timeout_s": Key(
            "float",
            10.0,
            check=SCHEDULER_TIMEOUT_S.check,
            doc="how long to wait for the scheduler to answer before giving up",
        ),
    },
}


def _name(v: Any) -> str | None:
    ok = bool(v) and len(v) <= 64 and all(c.isalnum() or c in "-_" for c in v)
    if not ok or v == "reference" or v.startswith((".", "-")):
        return "a folder-safe name (letters, digits, - and _), not 'reference'"
    return None


def _factor(v: Any) -> str | None:
    return None if 0 < v <= 10 else "a factor in (0, 10]"


#: Keys of one ``[[scenario]]`` table. A scenario is one of three kinds, told apart by its keys:
#: a steady storm (``hs_m``, ``tp_s``, ``dir_deg``), a storm from the wind
#: (``wind_speed_m_s``, ``wind_dir_deg``, ``fetch_km``) or a changed climate (the reference
#: record or its own ``file``, modified by ``hs_factor``, ``tp_factor``, ``dir_shift_deg``).
SCENARIO_KEYS: dict[str, Key] = {
    "name": Key("str", required=True, check=_name, doc="name, also its output folder"),
    "hs_m": Key("float", check=_bounded("hs_m"), doc="steady storm: significant height"),
    "tp_s": Key("float", check=_bounded("tp_s"), doc="steady storm: peak period"),
    "dir_deg": Key("float", check=_direction, doc="steady storm: direction waves come from"),
    "depth_m": Key("float-or-str", check=_depth, doc="depth of the waves (default: reference's)"),
    "duration_h": Key("float", check=_bounded("duration_h"), doc="length of the event, hours"),
    "wind_speed_m_s": Key(
        "float", check=_bounded("wind_speed_m_s"), doc="wind storm: wind speed U10"
    ),
    "wind_dir_deg": Key("float", check=_direction, doc="wind storm: direction wind comes from"),
    "fetch_km": Key("float-or-str", check=_fetch, doc="wind storm: straight-line fetch"),
    "hs_factor": Key("float", check=_factor, doc="changed climate: factor on heights"),
    "tp_factor": Key("float", check=_factor, doc="changed climate: factor on periods"),
    "dir_shift_deg": Key("float", check=_direction, doc="changed climate: added to directions"),
    "file": Key("str", doc="changed climate: a record of its own instead of the reference's"),
}

_KIND_KEYS = {
    "storm": ("hs_m", "tp_s", "dir_deg"),
    "wind": ("wind_speed_m_s", "wind_dir_deg", "fetch_km"),
    "climate": ("hs_factor", "tp_factor", "dir_shift_deg", "file"),
}


@dataclass(frozen=True)
class Study:
    """A validated study: every setting with defaults filled, paths made absolute.

    ``settings`` holds the values by section and key, exactly as used; ``raw`` is the TOML as
    read.
    """

    path: Path
    raw: dict[str, Any]
    settings: dict[str, dict[str, Any]] = field(default_factory=dict)
    scenarios: list[dict[str, Any]] = field(default_factory=list)
    calibration: list[dict[str, Any]] = field(default_factory=list)

    def __getitem__(self, section: str) -> dict[str, Any]:
        """Return the settings of one section."""
        return self.settings[section]

    @property
    def folder(self) -> Path:
        """The folder the study file is in (paths in it are relative to it)."""
        return self.path.parent

    @property
    def coast_file(self) -> Path:
        """The coast file, as an absolute path."""
        return self.folder / self.settings["coast"]["file"]

    @property
    def structures_file(self) -> Path | None:
        """The structures file, as an absolute path, or None."""
        name = self.settings["structures"]["file"]
        return None if name is None else self.folder / name

    @property
    def wave_file(self) -> Path | list[Path] | None:
        """The wave record file (or a glob, or a list of files), absolute; None if steady."""
        name = self.settings["waves"]["file"]
        if isinstance(name, list):
            return [self.folder / n for n in name]
        return None if name is None else self.folder / name


def _where(path: Path, section: str, key: str) -> str:
    return f"{path.name}: [{section}] {key}"


def _coerce(path: Path, section: str, key: str, spec: Key, value: Any) -> Any:
    """Check the type of one value; return it converted (int to float where a float is due)."""
    where = _where(path, section, key)
    kind = spec.kind
    is_number = isinstance(value, (int, float)) and not isinstance(value, bool)
    if kind == "float" or (kind == "float-or-str" and not isinstance(value, str)):
        if not is_number:
            raise StudyError(f"{where} = {value!r}: expected a number")
        value = float(value)
        if not math.isfinite(value):
            raise StudyError(f"{where} = {value!r}: expected a finite number")
        return value
    if kind == "int":
        if not (isinstance(value, int) and not isinstance(value, bool)):
            raise StudyError(f"{where} = {value!r}: expected a whole number")
        return value
    if kind == "str-or-str-list":
        if isinstance(value, str) and value:
            return value
        if isinstance(value, list) and value and all(isinstance(v, str) and v for v in value):
            return list(value)
        raise StudyError(
            f"{where} = {value!r}: expected a file name in quotes or a list of them, e.g. "
            '["waves-2001.nc", "waves-2002.nc"]'
        )
    if kind in ("str", "float-or-str"):
        if not isinstance(value, str):
            raise StudyError(f"{where} = {value!r}: expected a text value in quotes")
        return value
    if kind == "str-list":
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise StudyError(f'{where} = {value!r}: expected a list of names, e.g. ["cerc"]')
        return list(value)
    raise AssertionError(f"unknown key kind {kind}")  # pragma: no cover


def _unknown(path: Path, name: str, valid: list[str], section: str | None) -> StudyError:
    close = difflib.get_close_matches(name, valid, n=1)
    hint = f" (did you mean {close[0]!r}?)" if close else ""
    where = f"[{section}] " if section else ""
    what = "key" if section else "section"
    return StudyError(
        f"{path.name}: unknown {what} {where}{name!r}{hint}; valid: " + ", ".join(valid)
    )


def validate(raw: dict[str, Any], path: Path) -> Study:
    """Validate a parsed study mapping; return the :class:`Study` with defaults filled.

    Raises
    ------
    StudyError
        For an unknown section or key, a wrong type, a value out of range, a missing required
        key, or an inconsistent combination (a steady condition and a record file together).
    """
    for name, table in raw.items():
        if name in ARRAY_TABLES:
            continue
        if name not in SCHEMA:
            raise _unknown(path, name, [*SCHEMA, *ARRAY_TABLES], None)
        if not isinstance(table, dict):
            raise StudyError(f"{path.name}: [{name}] must be a table of keys, not a value")
    settings = {
        section: _validate_table(path, section, raw.get(section, {}), keys)
        for section, keys in SCHEMA.items()
    }
    waves = settings["waves"]
    steady = [k for k in ("hs_m", "tp_s", "dir_deg") if waves[k] is not None]
    if waves["file"] is not None and steady:
        raise StudyError(
            f"{path.name}: [waves] give either a record file or hs_m/tp_s/dir_deg, not both "
            f"(found file and {', '.join(steady)})"
        )
    if waves["file"] is None and len(steady) != 3:
        missing = [k for k in ("hs_m", "tp_s", "dir_deg") if waves[k] is None]
        raise StudyError(
            f"{path.name}: [waves] missing {', '.join(missing)}: give hs_m, tp_s and dir_deg "
            "for a steady condition, or file for a wave record"
        )
    model = settings["model"]
    if model["primary"] not in model["formulas"]:
        raise StudyError(
            f"{path.name}: [model] primary = {model['primary']!r} must be one of formulas = "
            f"{model['formulas']!r}"
        )
    if len(set(model["formulas"])) != len(model["formulas"]):
        raise StudyError(f"{path.name}: [model] formulas = {model['formulas']!r} repeats a name")
    if model["closure_depth_m"] == "hallermeier" and waves["file"] is None:
        raise StudyError(
            f'{path.name}: [model] closure_depth_m = "hallermeier" needs a wave record '
            "([waves] file): the height exceeded 12 hours a year comes from the record"
        )
    scenarios = _validate_scenarios(path, raw.get("scenario", []), settings)
    calibration = _validate_calibration(path, raw.get("calibration", []))
    return Study(
        path=path.resolve(),
        raw=raw,
        settings=settings,
        scenarios=scenarios,
        calibration=calibration,
    )


def _validate_table(
    path: Path, section: str, table: dict[str, Any], keys: dict[str, Key]
) -> dict[str, Any]:
    """Check one table against its keys; return the values with defaults filled."""
    for key in table:
        if key not in keys:
            raise _unknown(path, key, list(keys), section)
    values: dict[str, Any] = {}
    for key, spec in keys.items():
        if key not in table:
            if spec.required:
                raise StudyError(f"{_where(path, section, key)}: required key is missing")
            values[key] = spec.default
            continue
        value = _coerce(path, section, key, spec, table[key])
        if spec.check is not None:
            expected = spec.check(value)
            if expected:
                where = _where(path, section, key)
                raise StudyError(f"{where} = {value!r}: expected {expected}")
        values[key] = value
    return values


def _validate_scenarios(
    path: Path, tables: Any, settings: dict[str, dict[str, Any]]
) -> list[dict[str, Any]]:
    """Check the ``[[scenario]]`` tables; return them with their ``kind`` added."""
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        raise StudyError(f"{path.name}: scenarios are written as [[scenario]] tables")
    out: list[dict[str, Any]] = []
    seen: set[str] = set()
    for number, table in enumerate(tables, start=1):
        label = f"scenario {number}"
        if isinstance(table.get("name"), str):
            label = f"scenario {table['name']!r}"
        values = _validate_table(path, label, table, SCENARIO_KEYS)
        given = {k for k in table if k != "name"}
        kinds = [k for k, keys in _KIND_KEYS.items() if given & set(keys)]
        if len(kinds) != 1:
            raise StudyError(
                f"{path.name}: [{label}] must be one kind: a steady storm (hs_m, tp_s, dir_deg), "
                "a storm from the wind (wind_speed_m_s, wind_dir_deg, fetch_km) or a changed "
                "climate (hs_factor, tp_factor, dir_shift_deg, file)"
                + (f"; found keys of {' and '.join(kinds)}" if kinds else "")
            )
        kind = kinds[0]
        if kind in ("storm", "wind"):
            missing = [k for k in _KIND_KEYS[kind] if values[k] is None]
            if missing:
                raise StudyError(f"{path.name}: [{label}] missing {', '.join(missing)}")
        if kind == "wind" and values["duration_h"] is None:
            raise StudyError(
                f"{path.name}: [{label}] duration_h is required for a storm from the wind"
            )
        if kind == "wind" and values["depth_m"] is not None:
            raise StudyError(
                f"{path.name}: [{label}] depth_m does not apply to a storm from the wind "
                "(the growth relations give deep-water waves)"
            )
        if kind == "climate" and values["duration_h"] is not None:
            raise StudyError(
                f"{path.name}: [{label}] duration_h does not apply to a changed climate "
                "(its rates are per year)"
            )
        if kind == "climate" and values["file"] is None and settings["waves"]["file"] is None:
            raise StudyError(
                f"{path.name}: [{label}] a changed climate needs a wave record: the reference "
                "([waves] file) or its own file"
            )
        if values["name"] in seen:
            raise StudyError(f"{path.name}: two scenarios are named {values['name']!r}")
        seen.add(values["name"])
        out.append({**values, "kind": kind})
    return out


def _latitude(v: Any) -> str | None:
    return None if -90 <= v <= 90 else "a latitude in degrees between -90 and 90"


def _longitude(v: Any) -> str | None:
    return None if -180 <= v <= 360 else "a longitude in degrees between -180 and 360"


#: Keys of one ``[[calibration]]`` table: a known net transport at a point of the coast.
CALIBRATION_KEYS: dict[str, Key] = {
    "name": Key("str", required=True, doc="what the known rate is (free text)"),
    "lon": Key("float", check=_longitude, doc="longitude of the point, WGS 84"),
    "lat": Key("float", check=_latitude, doc="latitude of the point, WGS 84"),
    "x": Key("float", doc="x of the point in the coast file's CRS"),
    "y": Key("float", doc="y of the point in the coast file's CRS"),
    "structure": Key("str", doc="or the id of a structure: the transport arriving at it"),
    "net_m3_per_yr": Key(
        "float", required=True, check=_bounded("net_m3_per_yr"), doc="known net transport"
    ),
    "toward_deg": Key(
        "float", required=True, check=_direction, doc="azimuth toward which the sand moves"
    ),
}

#: Sections written as arrays of tables (``[[name]]``).
ARRAY_TABLES = ("scenario", "calibration")


def _validate_calibration(path: Path, tables: Any) -> list[dict[str, Any]]:
    """Check the ``[[calibration]]`` tables: each names one place by one of three forms."""
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        raise StudyError(
            f"{path.name}: known transport rates are written as [[calibration]] tables"
        )
    out = []
    for number, table in enumerate(tables, start=1):
        label = f"calibration {number}"
        if isinstance(table.get("name"), str):
            label = f"calibration {table['name']!r}"
        values = _validate_table(path, label, table, CALIBRATION_KEYS)
        forms = [
            form
            for form, keys in (
                ("lon/lat", ("lon", "lat")),
                ("x/y", ("x", "y")),
                ("structure", ("structure",)),
            )
            if any(values[k] is not None for k in keys)
        ]
        if len(forms) != 1:
            raise StudyError(
                f"{path.name}: [{label}] give the place once: lon and lat (WGS 84), x and y (in "
                "the coast file's CRS) or structure (a structure's id)"
                + (f"; found {' and '.join(forms)}" if forms else "")
            )
        pair = {"lon/lat": ("lon", "lat"), "x/y": ("x", "y")}.get(forms[0])
        if pair and any(values[k] is None for k in pair):
            raise StudyError(f"{path.name}: [{label}] needs both {pair[0]} and {pair[1]}")
        out.append({**values, "form": forms[0]})
    return out


def read_study(path: str | Path) -> Study:
    """Read and validate a study TOML file.

    Raises
    ------
    StudyError
        If the file is missing, is not valid TOML (the message gives the parser's line and
        column), or fails :func:`validate`.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise StudyError(f"{path}: study file not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise StudyError(f"{path}: cannot read the study file ({exc})") from None
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise StudyError(f"{path}: not valid TOML: {exc}") from None
    return validate(raw, path)
