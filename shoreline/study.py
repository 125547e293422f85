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


def _min_length(v: Any) -> str | None:
    if isinstance(v, str):
        return None if v == "auto" else '"auto" or a length in metres >= 0'
    return None if v >= 0 else '"auto" or a length in metres >= 0'


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
        "open_sea_distance_m": Key(
            "float",
            100000.0,
            check=_positive,
            doc="how far a shore's view must reach to count as open sea (sounds, fjords)",
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
            "float-or-str",
            "auto",
            check=_min_length,
            doc='shortest run that is a hotspot; "auto": 300 m or half the orientation window',
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
    uncertainty: dict[str, Any] | None = None
    projection: dict[str, Any] | None = None
    nourishments: list[dict[str, Any]] = field(default_factory=list)

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
        if name in ARRAY_TABLES or name in OPTIONAL_TABLES or name in OWN_SECTIONS:
            continue
        if name not in SCHEMA:
            valid = [*SCHEMA, *OPTIONAL_TABLES, *OWN_SECTIONS, *ARRAY_TABLES]
            raise _unknown(path, name, valid, None)
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
    uncertainty = None
    if "uncertainty" in raw:
        uncertainty = _validate_uncertainty(path, raw["uncertainty"], settings)
    projection, nourishments = _validate_projection(path, raw, scenarios)
    return Study(
        path=path.resolve(),
        raw=raw,
        settings=settings,
        scenarios=scenarios,
        calibration=calibration,
        uncertainty=uncertainty,
        projection=projection,
        nourishments=nourishments,
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
ARRAY_TABLES = ("scenario", "calibration", "nourishment")
#: Sections validated by a function of their own (their values are not all plain keys).
OWN_SECTIONS = ("projection",)

#: Sections that change nothing when absent (not in :data:`SCHEMA`, so that a study without
#: them records exactly the settings it recorded before they existed).
OPTIONAL_TABLES = ("uncertainty",)


@dataclass(frozen=True)
class UncertainInput:
    """One uncertain input of ``[uncertainty]``: its distribution and the range of its values.

    ``distribution`` is ``"uniform"`` (keys ``low``, ``high``, each checked by ``check``) or
    ``"normal"`` (key ``sd``, at most ``max_sd``; the mean is ``mean``). ``doc`` says what the
    input does to the chain.
    """

    distribution: str
    check: Callable[[Any], str | None] | None = None
    mean: float = 0.0
    max_sd: float = 0.0
    doc: str = ""


#: The inputs ``[uncertainty]`` can make uncertain. An input left out is held at the study's
#: value. The largest standard deviations are our choice: beyond them a normal draw of the
#: 500 a study typically takes reaches a wave height near zero (3.3 sd of 0.25 below 1) or
#: turns the waves past the shore's normal by more than any bias a hindcast carries.
UNCERTAIN_INPUTS: dict[str, UncertainInput] = {
    "cerc_k": UncertainInput("uniform", _bounded("cerc_k"), doc="CERC coefficient (Hs form)"),
    "kamphuis_coefficient": UncertainInput(
        "uniform", _bounded("kamphuis_coefficient"), doc="Kamphuis leading coefficient"
    ),
    "breaker_index": UncertainInput("uniform", _breaker_index, doc="breaker index Hb/db"),
    "d50_mm": UncertainInput("uniform", _bounded("d50_mm"), doc="median grain size [mm]"),
    "porosity": UncertainInput("uniform", _bounded("porosity"), doc="porosity of the deposit"),
    "closure_depth_m": UncertainInput("uniform", _bounded("closure_depth_m"), doc="closure depth"),
    "berm_height_m": UncertainInput("uniform", _bounded("berm_height_m"), doc="berm height"),
    "direction_bias_deg": UncertainInput(
        "normal", mean=0.0, max_sd=20.0, doc="added to every offshore direction [deg]"
    ),
    "hs_factor": UncertainInput(
        "normal", mean=1.0, max_sd=0.25, doc="multiplies every offshore Hs"
    ),
}

#: The other keys of ``[uncertainty]``, with their defaults.
UNCERTAINTY_KEYS: dict[str, Key] = {
    "members": Key("int", 500, doc="ensemble size; 0 = off"),
    "seed": Key("int", 0, doc="seed of the random draws"),
    "formulas": Key(
        "str",
        "primary",
        check=_one_of("primary", "all"),
        doc='"all": each member draws one of [model] formulas with equal weight',
    ),
    "record_blocks": Key(
        "str",
        "none",
        check=_one_of("none", "year", "month"),
        doc="resample the record in blocks with replacement",
    ),
}

#: Most members a run takes (memory: a few arrays of transects x members x 8 bytes).
MAX_MEMBERS = 20000


def _validate_uncertainty(
    path: Path, table: Any, settings: dict[str, dict[str, Any]]
) -> dict[str, Any] | None:
    """Check ``[uncertainty]``; return its settings, or None when ``members = 0`` (off).

    The result holds ``members``, ``seed``, ``formulas``, ``record_blocks`` and ``inputs``:
    name -> ``{"distribution": "uniform", "low", "high"}`` or ``{"distribution": "normal",
    "mean", "sd"}`` for every input given (the others are held at the study's values).
    """
    if not isinstance(table, dict):
        raise StudyError(f"{path.name}: [uncertainty] must be a table of keys, not a value")
    valid = [*UNCERTAINTY_KEYS, *UNCERTAIN_INPUTS]
    for key in table:
        if key not in valid:
            raise _unknown(path, key, valid, "uncertainty")
    plain = {k: v for k, v in table.items() if k in UNCERTAINTY_KEYS}
    values = _validate_table(path, "uncertainty", plain, UNCERTAINTY_KEYS)
    where = f"{path.name}: [uncertainty]"
    if not 0 <= values["members"] <= MAX_MEMBERS:
        raise StudyError(
            f"{where} members = {values['members']}: expected a whole number from 0 (off) to "
            f"{MAX_MEMBERS}"
        )
    if values["seed"] < 0:
        raise StudyError(f"{where} seed = {values['seed']}: expected a whole number >= 0")
    if values["record_blocks"] != "none" and settings["waves"]["file"] is None:
        raise StudyError(
            f'{where} record_blocks = "{values["record_blocks"]}" needs a wave record '
            '([waves] file) to resample; use "none" with a steady condition'
        )
    step = settings["model"]["angle_step_deg"]
    if values["members"] and not (step > 0 and abs(1.0 / step - round(1.0 / step)) < 1e-9):
        raise StudyError(
            f"{where} needs [model] angle_step_deg = {step!r} to divide one degree (0.5, 0.25, "
            "0.2, 0.1, ...): members read tables over normal nodes and turn the waves by whole "
            "degrees"
        )
    inputs: dict[str, dict[str, Any]] = {}
    for name, spec in UNCERTAIN_INPUTS.items():
        if name in table:
            inputs[name] = _distribution(path, name, spec, table[name])
    if values["members"] == 0:
        return None
    return {**values, "inputs": inputs}


def _distribution(path: Path, name: str, spec: UncertainInput, value: Any) -> dict[str, Any]:
    """Check one uncertain input's inline table: ``{ low, high }`` or ``{ sd }``."""
    where = f"{path.name}: [uncertainty] {name}"
    keys = ("low", "high") if spec.distribution == "uniform" else ("sd",)
    form = "{ low = ..., high = ... }" if spec.distribution == "uniform" else "{ sd = ... }"
    if not isinstance(value, dict):
        raise StudyError(
            f"{where} = {value!r}: expected an inline table {form} ({spec.distribution})"
        )
    for key in value:
        if key not in keys:
            close = difflib.get_close_matches(key, keys, n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise StudyError(
                f"{where}: unknown key {key!r}{hint}; a {spec.distribution} input takes {form}"
            )
    missing = [k for k in keys if k not in value]
    if missing:
        raise StudyError(f"{where}: missing {', '.join(missing)}; expected {form}")
    numbers = {}
    for key in keys:
        v = value[key]
        if not isinstance(v, (int, float)) or isinstance(v, bool) or not math.isfinite(v):
            raise StudyError(f"{where}.{key} = {v!r}: expected a finite number")
        numbers[key] = float(v)
    if spec.distribution == "uniform":
        for key in keys:
            expected = spec.check(numbers[key])
            if expected:
                raise StudyError(f"{where}.{key} = {numbers[key]!r}: expected {expected}")
        if numbers["low"] > numbers["high"]:
            raise StudyError(
                f"{where}: low = {numbers['low']!r} is above high = {numbers['high']!r}; "
                "expected low <= high"
            )
        return {"distribution": "uniform", **numbers}
    if not 0 <= numbers["sd"] <= spec.max_sd:
        raise StudyError(
            f"{where}.sd = {numbers['sd']!r}: expected a standard deviation >= 0 and <= "
            f"{spec.max_sd:g} (our choice: see docs/study-file.md)"
        )
    return {"distribution": "normal", "mean": spec.mean, "sd": numbers["sd"]}


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


# --------------------------------------------------------------------------------------------
# The forward projection: [projection] and [[nourishment]] (shoreline/projection.py)
# --------------------------------------------------------------------------------------------


def _whole(low: int, high: int, what: str) -> Callable[[Any], str | None]:
    def check(v: Any) -> str | None:
        return None if low <= v <= high else f"{what} from {low} to {high}"

    return check


#: Keys of ``[projection]`` with a plain value (``report_years``, ``sea_level_rise_m`` and
#: ``scenarios`` are checked by :func:`_validate_projection`).
PROJECTION_KEYS: dict[str, Key] = {
    "years": Key(
        "int", required=True, check=_whole(1, 500, "a whole number of years"), doc="horizon"
    ),
    "start_year": Key(
        "int", check=_whole(1, 9999, "a calendar year"), doc="calendar year of the start (label)"
    ),
    "sea_level_rise_m_per_yr": Key(
        "float", check=_bounded("sea_level_rise_m_per_yr"), doc="steady rise of the sea"
    ),
    "climate": Key(
        "str",
        "repeat",
        check=_one_of("repeat", "resample"),
        doc='"repeat" the record cyclically or "resample" whole years at random',
    ),
    "seed": Key("int", 1, check=_non_negative, doc="seed of the random years of resample"),
    "setback_m": Key(
        "float", check=_bounded("setback_m"), doc="a distance of retreat to report against"
    ),
}

#: Keys of one ``[[nourishment]]`` table.
NOURISHMENT_KEYS: dict[str, Key] = {
    "name": Key("str", required=True, doc="what the fill is (free text)"),
    "from_chainage_m": Key(
        "float", required=True, check=_non_negative, doc="start of the stretch along its part"
    ),
    "to_chainage_m": Key(
        "float", required=True, check=_non_negative, doc="end of the stretch along its part"
    ),
    "part_id": Key("int", 0, check=_non_negative, doc="the shore part of the stretch"),
    "volume_m3": Key("float", required=True, check=_bounded("volume_m3"), doc="sand placed"),
    "year": Key("float", 0.0, check=_non_negative, doc="years after the start"),
}


def _validate_projection(
    path: Path, raw: dict[str, Any], scenarios: list[dict[str, Any]]
) -> tuple[dict[str, Any] | None, list[dict[str, Any]]]:
    """Check ``[projection]`` and the ``[[nourishment]]`` tables; return them as used.

    The projection's settings gain ``report_years`` (sorted whole years within the horizon,
    default the horizon), ``sea_level_rise`` (``("rate", m_per_yr)`` or ``("table", [(years
    after the start, metres), ...])`` from 0 at the start) and ``scenarios`` (the climates to
    project: by default the reference and every changed climate; storm events never).
    """
    where = f"{path.name}: [projection]"
    table = raw.get("projection")
    tables = raw.get("nourishment", [])
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        raise StudyError(f"{path.name}: nourishments are written as [[nourishment]] tables")
    if table is None:
        if tables:
            raise StudyError(
                f"{path.name}: [[nourishment]] needs a [projection] (a horizon in years) to "
                "place its sand in"
            )
        return None, []
    if not isinstance(table, dict):
        raise StudyError(f"{path.name}: [projection] must be a table of keys, not a value")
    own = ("report_years", "sea_level_rise_m", "scenarios")
    plain = {k: v for k, v in table.items() if k not in own}
    values = _validate_table(
        path, "projection", plain, PROJECTION_KEYS | {k: Key("str") for k in own}
    )
    years = values["years"]
    report = table.get("report_years", [years])
    if not isinstance(report, list) or not report:
        raise StudyError(f"{where} report_years = {report!r}: expected a list of whole years")
    for value in report:
        if isinstance(value, bool) or not isinstance(value, int):
            raise StudyError(
                f"{where} report_years = {report!r}: expected whole numbers of years after "
                "the start, e.g. [5, 10, 25, 50]"
            )
        if not 1 <= value <= years:
            raise StudyError(
                f"{where} report_years = {report!r}: {value} lies beyond the horizon "
                f"(years = {years}); give years from 1 to {years}"
            )
    values["report_years"] = sorted(set(report))
    start = values["start_year"]
    rate = values.pop("sea_level_rise_m_per_yr")
    levels = table.get("sea_level_rise_m")
    if rate is not None and levels is not None:
        raise StudyError(
            f"{where} give either sea_level_rise_m_per_yr or sea_level_rise_m, not both"
        )
    if levels is None:
        values["sea_level_rise"] = ("rate", 0.0 if rate is None else rate)
    else:
        values["sea_level_rise"] = ("table", _sea_levels(where, levels, start, years))
    names = table.get("scenarios")
    values["scenarios"] = _projected_scenarios(where, names, scenarios)
    values.pop("sea_level_rise_m", None)
    nourishments = []
    for number, fill in enumerate(tables, start=1):
        label = f"nourishment {number}"
        if isinstance(fill.get("name"), str):
            label = f"nourishment {fill['name']!r}"
        if isinstance(fill.get("volume_m3"), (int, float)) and fill["volume_m3"] <= 0:
            raise StudyError(
                f"{path.name}: [{label}] volume_m3 = {fill['volume_m3']!r}: expected the "
                "volume of sand placed, > 0 (sand taken away is not a nourishment)"
            )
        v = _validate_table(path, label, fill, NOURISHMENT_KEYS)
        if not v["from_chainage_m"] < v["to_chainage_m"]:
            raise StudyError(
                f"{path.name}: [{label}] from_chainage_m = {v['from_chainage_m']:g} must be "
                f"less than to_chainage_m = {v['to_chainage_m']:g}"
            )
        if v["year"] > years:
            raise StudyError(
                f"{path.name}: [{label}] year = {v['year']:g} lies beyond the horizon "
                f"([projection] years = {years})"
            )
        nourishments.append(v)
    return values, nourishments


def _sea_levels(where: str, levels: Any, start: int | None, years: int) -> list:
    """``sea_level_rise_m = { 2050 = 0.15, ... }`` as ``[(years after start, m), ...]``."""
    key = f"{where} sea_level_rise_m"
    if not isinstance(levels, dict) or not levels:
        raise StudyError(
            f"{key} = {levels!r}: expected a table of calendar year = metres, e.g. "
            "{ 2050 = 0.15, 2080 = 0.40 }"
        )
    if start is None:
        raise StudyError(
            f"{key} is given by calendar year: give start_year, the calendar year of the start"
        )
    points = []
    for year_text, metres in levels.items():
        try:
            year = int(str(year_text).strip())
        except ValueError:
            raise StudyError(f"{key}: {year_text!r} is not a calendar year") from None
        if isinstance(metres, bool) or not isinstance(metres, (int, float)):
            raise StudyError(f"{key}: {year} = {metres!r}: expected metres above the start")
        bad = BOUNDS["sea_level_rise_m"].check(metres)
        if bad:
            raise StudyError(f"{key}: {year} = {metres!r}: expected {bad}")
        if year <= start:
            raise StudyError(
                f"{key}: {year} is not after start_year = {start} (the sea level at the start "
                "is 0 by definition)"
            )
        points.append((float(year - start), float(metres)))
    points.sort()
    if points[-1][0] < years:
        raise StudyError(
            f"{key}: the last year given, {start + int(points[-1][0])}, is before the horizon "
            f"{start + years}; give the sea level up to {start + years} or later"
        )
    return points


def _projected_scenarios(where: str, names: Any, scenarios: list[dict[str, Any]]) -> list[str]:
    """The climates to project: the reference and changed climates, never a storm event."""
    events = {s["name"] for s in scenarios if s["duration_h"] is not None}
    climates = ["reference"] + [s["name"] for s in scenarios if s["name"] not in events]
    if names is None:
        return climates
    if not isinstance(names, list) or not names or not all(isinstance(n, str) for n in names):
        raise StudyError(
            f'{where} scenarios = {names!r}: expected a list of names, e.g. ["reference"]'
        )
    for name in names:
        if name in events:
            raise StudyError(
                f"{where} scenarios: {name!r} is a storm event; storm events are not projected "
                f"(project the reference or a changed climate: {', '.join(climates)})"
            )
        if name not in climates:
            raise StudyError(
                f"{where} scenarios: no climate is named {name!r}; valid: {', '.join(climates)}"
            )
    return [n for n in climates if n in names]


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
