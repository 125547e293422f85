"""The Python interface: read or build a study, run it, get its layers, write its outputs.

For notebooks and scripts; the command line is a thin user of the same functions. Nothing is
written until :meth:`Results.write` is called, and that writes exactly what ``shoreline run``
writes (the whole output folder, replaced in one step). See docs/api.md.

Examples
--------
>>> import shoreline
>>> study = shoreline.study_from_dict(
...     {"coast": {"file": "coast.geojson", "sea": "right"},
...      "waves": {"hs_m": 1.0, "tp_s": 8.0, "dir_deg": 200.0}},
...     folder="demo_coast")
>>> study["waves"]["hs_m"]
1.0
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

from shoreline.errors import OutputError, StudyError
from shoreline.study import Study, validate

__all__ = ["Results", "read_study", "screen", "study_from_dict"]


def read_study(path: str | Path) -> Study:
    """Read and validate a study TOML file (the same checks as the command line).

    Raises
    ------
    shoreline.errors.StudyError
        A missing or unreadable file, invalid TOML or any invalid key or value.
    """
    from shoreline.folders import require_regular_file
    from shoreline.study import read_study as _read

    return _read(require_regular_file(Path(path), "study file", StudyError))


def study_from_dict(data: dict[str, Any], folder: str | Path = ".") -> Study:
    """Build a study from a mapping laid out like the TOML file, with the same validation.

    ``folder`` is where the paths in it (coast, waves, land, ...) are relative to.
    """
    if not isinstance(data, dict):
        raise StudyError(f"a study is a mapping of sections to keys; got {type(data).__name__}")
    return validate(data, Path(folder) / "study (from a dict)")


class Results:
    """The results of a run, in memory: layers as GeoDataFrames, and a writer.

    Attributes
    ----------
    run : shoreline.run.RunResult
        Everything the run computed (transects, every scenario's columns and hotspots,
        timings, warnings).
    """

    def __init__(self, run_result) -> None:
        self.run = run_result

    def __repr__(self) -> str:
        names = ", ".join(self.scenario_names)
        return f"<shoreline Results: {len(self.run.transects)} transects; scenarios {names}>"

    @property
    def scenario_names(self) -> list[str]:
        """The scenario names, the reference climate first."""
        return [s.name for s in self.run.scenarios]

    @property
    def warnings(self) -> list[str]:
        """What the run warns about, one line each."""
        return list(self.run.warnings)

    def _scenario(self, name: str):
        for s in self.run.scenarios:
            if s.name == name:
                return s
        raise KeyError(f"no scenario {name!r}; the scenarios are {', '.join(self.scenario_names)}")

    def transects(self, scenario: str = "reference", crs: Any = None):
        """The transect layer of a scenario as a GeoDataFrame (working CRS, or ``crs``).

        Columns as in ``transects.geojson`` (docs/outputs.md; a storm event's in event units).
        """
        from shoreline.export import transect_frame

        length = self.run.study["coast"]["transect_length_m"]
        return _in(transect_frame(self.run, self._scenario(scenario), length), crs)

    def hotspots(self, scenario: str = "reference", crs: Any = None):
        """The hotspot layer of a scenario as a GeoDataFrame (working CRS, or ``crs``)."""
        from shoreline.export import hotspot_frame

        return _in(hotspot_frame(self.run, self._scenario(scenario)), crs)

    def structures(self, scenario: str = "reference", crs: Any = None):
        """The structures with what each traps in a scenario, or None without structures."""
        from shoreline.export import structure_frame

        if self.run.structures is None:
            return None
        return _in(structure_frame(self.run, self._scenario(scenario)), crs)

    def write(
        self,
        out: str | Path,
        figures: bool = True,
        command: list[str] | None = None,
        progress: Callable[[int], None] | None = None,
        stage: Callable[[str, int, str], Callable[[int], None]] | None = None,
        lock: bool = True,
    ) -> list[str]:
        """Write every output of ``shoreline run`` into the folder ``out``; return notes.

        The folder is replaced whole in one step (a folder not written by this tool is
        refused), as by the command line; two writers into one folder refuse each other
        (``lock=False`` for a caller that holds the folder's lock already, as the command line
        does from before it computes). Returns the notes for the user that are no failure
        (e.g. an old folder that could not be removed).
        """
        from shoreline.export import utc_now, write_run
        from shoreline.folders import check_output_folder, output_lock

        out = Path(out)
        check_output_folder(out)
        refuse_inputs_inside(self.run.study, out)
        notes: list[str] = []
        command = command or ["shoreline", "run", self.run.study.path.name]

        def extra(tmp: Path) -> None:
            from shoreline.cli import figures_and_report

            figures_and_report(tmp, stage)

        def write() -> None:
            write_run(
                self.run,
                out,
                command,
                self.run.started_utc or utc_now(),
                extra=extra if figures else None,
                notes=notes,
                progress=progress,
            )

        if lock:
            with output_lock(out):
                write()
        else:
            write()
        return notes


def screen(
    study: Study,
    chunk_steps: int | None = None,
    progress: Callable[[int, int], Callable[[int], None]] | None = None,
    stage: Callable[[str, int, str], Callable[[int], None]] | None = None,
    mapper: Any = None,
) -> Results:
    """Run a study and its scenarios (a screening); nothing is written (see :meth:`Results.write`).

    ``progress`` and ``stage`` are the command line's progress hooks, ``mapper`` runs the
    table sums elsewhere (Dask: :func:`shoreline.distributed.cluster`; see
    :func:`shoreline.run.run_study`).
    """
    from shoreline.export import utc_now
    from shoreline.run import run_study

    started = utc_now()
    result = run_study(
        study, chunk_steps=chunk_steps, progress=progress, stage=stage, mapper=mapper
    )
    result.started_utc = started
    return Results(result)


def _in(frame, crs):
    return frame if crs is None else frame.to_crs(crs)


def refuse_inputs_inside(study: Study, out: Path) -> None:
    """Refuse an output folder that holds an input of the study (it is replaced whole)."""
    import os

    real = Path(os.path.realpath(out))
    waves = study.wave_file if isinstance(study.wave_file, list) else [study.wave_file]
    for path in (study.path, study.coast_file, *waves, study.structures_file):
        if path is not None and real in Path(os.path.realpath(path)).parents:
            raise OutputError(
                f"{out}: the output folder holds an input of the study ({path.name}) and is "
                "replaced whole by a run; choose another --out"
            )
