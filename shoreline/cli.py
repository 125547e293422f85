"""The command line: parse arguments, call the study runner, report.

Expected failures (:class:`shoreline.errors.ShorelineError`) are printed as one line on standard
error with a non-zero exit; other exceptions are bugs and print a traceback only with ``--debug``.
"""

from __future__ import annotations

import argparse
import os
import signal
import sys
from pathlib import Path

import numpy as np

from shoreline import __version__
from shoreline.cautions import CAUTION, caution_lines
from shoreline.errors import OutputError, ShorelineError, StudyError
from shoreline.folders import (
    DEFERRED_SIGNALS,
    Interrupted,
    check_output_folder,
    output_lock,
    require_regular_file,
)


def _common_options(default) -> argparse.ArgumentParser:
    """Options every command takes, before or after the command's name."""
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument(
        "--debug",
        action="store_true",
        default=default,
        help="show a traceback for every error (for bug reports)",
    )
    common.add_argument(
        "--quiet", action="store_true", default=default, help="print only errors and the caution"
    )
    return common


def _cluster_options() -> argparse.ArgumentParser:
    """Where the time reduction runs: in this process (default) or on Dask."""
    cluster = argparse.ArgumentParser(add_help=False)
    where = cluster.add_argument_group("large studies (Dask, the 'dask' extra)")
    where.add_argument(
        "--workers",
        type=int,
        default=None,
        metavar="N",
        help="sum the time reduction on a local Dask cluster of N worker processes",
    )
    where.add_argument(
        "--scheduler",
        default=None,
        metavar="ADDRESS",
        help="sum it on an existing Dask cluster (e.g. tcp://host:8786; overrides "
        "[run] scheduler); results are the same as in one process",
    )
    return cluster


def build_parser() -> argparse.ArgumentParser:
    """Return the argument parser of the ``shoreline`` command."""
    # the subcommands' copies of the common options leave a value given before the command
    # alone (argparse would otherwise reset it to the default)
    after = _common_options(argparse.SUPPRESS)
    parser = argparse.ArgumentParser(
        prog="shoreline",
        parents=[_common_options(False)],
        description=(
            "Screening estimates of longshore sand transport and shoreline change: lays out "
            "shore-normal transects on a coast file, carries offshore waves to breaking, "
            "computes longshore transport (CERC, Kamphuis) and flags erosion and accretion "
            "hotspots."
        ),
        epilog=CAUTION,
    )
    parser.add_argument("--version", action="version", version=f"shoreline {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    run = sub.add_parser(
        "run",
        parents=[after, _cluster_options()],
        help="run a study: transects, waves to breaking, transport, rates, hotspots, outputs",
        description="Run a study file and write its GIS layers, tables, figures and report.",
    )
    _study_arguments(run)
    run.add_argument(
        "--no-figures", action="store_true", help="skip figures and report (large batch runs)"
    )
    run.add_argument(
        "--chunk",
        type=int,
        default=None,
        metavar="STEPS",
        help="time steps evaluated at once (memory against speed; default automatic)",
    )
    tr = sub.add_parser(
        "transects",
        parents=[after],
        help="write only the transects, to check the geometry in a GIS before a run",
        description="Lay out the transects of a study and write them (GeoJSON and GeoPackage).",
    )
    _study_arguments(tr)
    rep = sub.add_parser(
        "report",
        parents=[after],
        help="rebuild the figures and report of an existing output folder without recomputing",
        description="Rebuild figures and report.html from the files of an output folder.",
    )
    rep.add_argument("folder", type=Path, help="an output folder written by 'shoreline run'")
    return parser


def _study_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("study", type=Path, help="the study file (TOML)")
    parser.add_argument(
        "--out",
        type=Path,
        default=None,
        help="output folder, replaced whole by each run (default: 'out' beside the study)",
    )


def _default_out(study_path: Path, out: Path | None) -> Path:
    return out if out is not None else study_path.resolve().parent / "out"


def figures_and_report(folder: Path, stage=None) -> list[Path]:
    """Write every scenario's figures, then the report, into an output folder; return them.

    ``stage(name, total)``, if given, returns the progress callback of the figures stage.
    """
    from shoreline.figures import write_figures
    from shoreline.report import write_report

    reference = folder / "reference"
    written: list[Path] = []
    scenarios = sorted(p for p in folder.iterdir() if (p / "summary.json").exists())
    tick = stage("figures", len(scenarios) + 1, " scenarios") if stage else None
    for scenario in scenarios:
        reference_dir = None if scenario == reference else reference
        written.extend(write_figures(scenario, reference_dir=reference_dir))
        if tick:
            tick(1)
    written.append(write_report(folder))
    if tick:
        tick(1)
    return written


def _say(text: str) -> None:
    """Print to standard output; a reader that went away (``| head``) is no error."""
    try:
        print(text, flush=True)
    except BrokenPipeError:
        # the standard way: point stdout at the null device so that nothing more fails
        try:
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())
        except (OSError, ValueError, AttributeError):
            sys.stdout = open(os.devnull, "w")  # kept open: lives as long as the process


def _relative(path: Path, folder: Path) -> str:
    """``path`` relative to ``folder`` (absolute only across drives)."""
    try:
        return os.path.relpath(path.resolve(), folder)
    except ValueError:
        return str(path.resolve())


def _recorded_command(args: argparse.Namespace, study, out: Path) -> list[str]:
    """The command as one would type it in the study's folder: no paths of this machine."""
    command = ["shoreline", args.command, study.path.name]
    if args.out is not None:
        command += ["--out", _relative(out, study.folder)]
    if getattr(args, "no_figures", False):
        command.append("--no-figures")
    if getattr(args, "chunk", None) is not None:
        command += ["--chunk", str(args.chunk)]
    if getattr(args, "workers", None) is not None:
        command += ["--workers", str(args.workers)]
    if getattr(args, "scheduler", None) is not None:
        command += ["--scheduler", args.scheduler]
    return command


def _check_out(study, out: Path) -> None:
    """Refuse an output folder that may not be replaced, or that holds an input of the study."""
    from shoreline.api import refuse_inputs_inside

    check_output_folder(out)
    refuse_inputs_inside(study, out)


def _notes(notes: list[str]) -> None:
    for note in notes:
        print(f"shoreline: warning: {' '.join(note.split())}", file=sys.stderr)


def _cmd_run(args: argparse.Namespace) -> int:
    from shoreline import api
    from shoreline.climate import close_record
    from shoreline.distributed import cluster

    study = api.read_study(args.study)
    if args.chunk is not None and args.chunk < 1:
        raise StudyError(f"--chunk {args.chunk}: expected a whole number of time steps >= 1")
    if args.workers is not None and args.workers < 1:
        raise StudyError(f"--workers {args.workers}: expected a whole number of workers >= 1")
    scheduler = args.scheduler or study["run"]["scheduler"]
    out = _default_out(args.study, args.out)
    _check_out(study, out)
    bars = []

    def stage(name: str, total: int, unit: str):
        """A progress bar for one stage, shown only if the stage takes over two seconds."""
        from tqdm import tqdm

        bar = tqdm(
            total=total,
            desc=name,
            unit=unit,
            unit_scale=True,
            delay=2.0,
            disable=args.quiet or not sys.stderr.isatty(),
            leave=False,
        )
        bars.append(bar)
        return bar.update

    def progress(total_steps: int, n_transects: int):
        tick = stage("transport", total_steps * n_transects, " transect-steps")
        return lambda steps: tick(steps * n_transects)

    with output_lock(out):  # held from the start: a second run into ``out`` refuses at once
        try:
            with cluster(
                None if scheduler else args.workers,
                scheduler,
                study["run"]["scheduler_timeout_s"],
            ) as mapper:
                results = api.screen(
                    study, chunk_steps=args.chunk, progress=progress, stage=stage, mapper=mapper
                )
            try:
                notes = results.write(
                    out,
                    figures=not args.no_figures,
                    command=_recorded_command(args, study, out),
                    progress=stage("writing", len(results.scenario_names), " scenarios"),
                    stage=stage,
                    lock=False,
                )
            finally:
                for scenario in results.run.scenarios:
                    close_record(scenario.climate)
        finally:
            for bar in bars:
                bar.close()
    result = results.run
    _notes(notes)
    if not args.quiet:
        _say(summary_text(result, out))
    else:
        _say("\n".join(caution_lines()))
    return 0


#: Hotspots listed per scenario on the console (the strongest; every one is in the layers).
CONSOLE_HOTSPOTS = 10


def strongest_hotspots(hotspots: list, n: int) -> list:
    """The ``n`` hotspots that gain or lose the most volume, in their along-shore order."""
    ranked = sorted(hotspots, key=lambda h: -abs(h.volume_m3_per_yr))[:n]
    return sorted(ranked, key=lambda h: h.hotspot_id)


def summary_text(result, out: Path) -> str:
    """The summary printed at the end of a run: per scenario, then side by side."""
    lines = [
        f"shoreline {__version__}: {len(result.transects)} transects on "
        f"{len(result.coast.parts)} shore part(s), working CRS {result.transects.working_crs.name}"
    ]
    rows = []
    for scenario in result.scenarios:
        cols = scenario.columns
        event = "shoreline_shift_m" in cols
        metric = cols["shoreline_shift_m"] if event else cols["rate_m_per_yr"]
        unit = "m" if event else "m/yr"
        classes = {
            k: int((cols["class"] == k).sum())
            for k in ("erosion", "accretion", "stable", "sheltered")
        }
        lines.append(
            f"[{scenario.name}] transects by class: "
            + ", ".join(f"{k} {v}" for k, v in classes.items())
            + (
                f" (storm of {scenario.info['event_duration_h']:g} h: shoreline shift)"
                if event
                else ""
            )
        )
        worst = ""
        if metric.size and np.isfinite(metric).any() and np.nanmin(metric) < 0:
            i = int(np.nanargmin(metric))
            worst = f"{metric[i]:+.2f} {unit} at {cols['chainage_m'][i] / 1000:.2f} km"
            lines.append(
                f"[{scenario.name}] strongest erosion: {metric[i]:.2f} {unit} at transect "
                f"{cols['transect_id'][i]} (part {cols['part_id'][i]}, chainage "
                f"{cols['chainage_m'][i] / 1000:.2f} km)"
            )
        shown = strongest_hotspots(scenario.hotspots, CONSOLE_HOTSPOTS)
        if len(scenario.hotspots) > len(shown):
            lines.append(
                f"[{scenario.name}] {len(scenario.hotspots)} hotspots; the {len(shown)} strongest "
                "(by the volume they gain or lose; all are in hotspots.geojson):"
            )
        for h in shown:
            lines.append(
                f"    {h.klass:9s} #{h.hotspot_id:<3d} part {h.part_id} "
                f"{h.start_chainage_m / 1000:6.2f}-{h.end_chainage_m / 1000:6.2f} km  "
                f"mean {h.mean_rate_m_per_yr:+7.2f} {unit}  "
                f"peak {h.peak_rate_m_per_yr:+7.2f} {unit}"
            )
        lines += ensemble_lines(scenario, shown)
        n_e = sum(h.klass == "erosion" for h in scenario.hotspots)
        n_a = sum(h.klass == "accretion" for h in scenario.hotspots)
        vs = scenario.info.get("versus_reference", {})
        change = "-"
        if vs and not vs.get("event"):
            change = (
                f"{len(vs['created'])} new, {len(vs['removed_reference'])} gone, "
                f"{len(vs['worsened'])} worse"
            )
        elif vs:
            change = "storm event (shift, not rate)"
        waves_text = _waves_text(scenario)
        rows.append((scenario.name, waves_text, f"{n_e} E / {n_a} A", worst or "-", change))
    if len(rows) > 1:
        lines.append("")
        lines.append("scenarios side by side:")
        header = ("scenario", "offshore waves", "hotspots", "strongest erosion", "vs reference")
        widths = [max(len(r[i]) for r in [header, *rows]) for i in range(5)]
        for r in [header, *rows]:
            lines.append("  " + "  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)))
    for w in result.warnings:
        lines.append(f"warning: {w}")
    lines.append("")
    lines.extend(caution_lines())
    lines.append("")
    lines.append(f"written to {out}:")
    for p in sorted(out.rglob("*")):
        if p.is_file() and not any(part.startswith(".") for part in p.relative_to(out).parts):
            lines.append(f"  {p.relative_to(out)}")
    return "\n".join(lines)


def ensemble_lines(scenario, shown: list, width: int = 96) -> list[str]:
    """A few console lines on a scenario's ensemble ([] without one).

    How sure each listed hotspot is (the share of members in which at least half of its
    stretch keeps its class, and its likelihood word) and the input whose first-order index of
    the hotspot's mean rate is largest.
    """
    import textwrap

    from shoreline.figures import percent_text

    ens = getattr(scenario, "ensemble", None)
    if ens is None:
        return []
    n_in = len(ens.factors)
    lines = [
        f"[{scenario.name}] ensemble of {len(ens.members)} members over {n_in} uncertain "
        f"input{'s' if n_in != 1 else ''}"
        + (
            "; each hotspot: likelihood (share of members, input spreading it most):"
            if shown
            else "; no hotspot to rate"
        )
    ]
    by_id = {h["hotspot_id"]: h for h in ens.hotspots}
    parts = []
    for h in shown:
        e = by_id[h.hotspot_id]
        label = f"{'E' if h.klass == 'erosion' else 'A'}{h.hotspot_id}"
        main = f", {e['main_input']}" if e["main_input"] else ""
        share = percent_text(e["probability"]).replace("\u2009", " ")
        parts.append(f"{label} {e['likelihood']} ({share}{main})")
    if parts:
        lines += textwrap.wrap(
            ", ".join(parts), width, initial_indent="    ", subsequent_indent="    "
        )
    return lines


def _waves_text(scenario) -> str:
    c = scenario.climate
    if c.kind == "steady" and c.n_points > 1:  # wind over each transect's own fetch
        return f"wind waves per transect, Hs up to {np.nanmax(c.hs_m):.1f} m"
    if c.kind == "steady":
        text = f"Hs {c.hs_m[0]:.1f} m, Tp {c.tp_s[0]:.1f} s, from {c.dir_deg[0]:.0f} deg"
        limit = scenario.info.get("scenario", {}).get("growth_limit")
        return text + (f" ({limit}-limited)" if limit else "")
    from shoreline.climate import mean_height_m

    mean = float(np.mean(mean_height_m(c)))
    return f"record of {len(c)} steps, mean Hs {mean:.2f} m"


def _cmd_transects(args: argparse.Namespace) -> int:
    from shoreline.export import write_transects_only
    from shoreline.run import load_transects
    from shoreline.study import read_study

    study = read_study(require_regular_file(args.study, "study file", StudyError))
    out = _default_out(args.study, args.out)
    _check_out(study, out)
    notes: list[str] = []
    with output_lock(out):
        coast, transects = load_transects(study)
        c = study["coast"]
        keys = ("file", "spacing_m", "orientation_window_m", "transect_length_m")
        settings = {k: c[k] for k in keys}
        command = _recorded_command(args, study, out)
        length = c["transect_length_m"]
        paths = write_transects_only(coast, transects, length, out, settings, command, notes)
    _notes(notes)
    lines = []
    if not args.quiet:
        lines.append(f"{len(transects)} transects on {len(coast.parts)} shore part(s)")
        lines.extend(f"warning: {w}" for w in coast.warnings)
    lines.extend(caution_lines())
    if not args.quiet:
        lines.extend(f"written: {p}" for p in paths)
    _say("\n".join(lines))
    return 0


def _cmd_report(args: argparse.Namespace) -> int:
    folder = args.folder
    if not (folder / "run.json").exists():
        raise OutputError(f"{folder}: not an output folder of 'shoreline run' (no run.json)")
    with output_lock(folder):
        written = figures_and_report(folder)
    lines = list(caution_lines())
    if not args.quiet:
        lines.append(f"redrawn in {folder}:")
        lines.extend(f"  {p.relative_to(folder)}" for p in written)
    _say("\n".join(lines))
    return 0


def _one_line(text: object) -> str:
    """A message on one line: readers of CSV or netCDF files may give several."""
    return " ".join(str(text).split())


def _on_signal(signum: int, _frame) -> None:
    raise Interrupted(signum)


def _interrupted_text(exc: Interrupted, args: argparse.Namespace) -> str:
    name = signal.Signals(exc.signum).name
    if args.command == "report":
        return (
            f"shoreline: interrupted by {name}; every figure and the report in {args.folder} "
            "is whole, either redrawn or as it was"
        )
    out = _default_out(args.study, args.out)
    if exc.published is not None:
        return f"shoreline: interrupted by {name} after the new output was moved into {out}"
    return (
        f"shoreline: interrupted by {name}; no new output was moved into place and "
        f"{out} is as it was"
    )


def main(argv: list[str] | None = None) -> int:
    """Run the command line; return the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_usage(sys.stderr)
        print("shoreline: error: give a command: run, transects or report", file=sys.stderr)
        return 2
    previous = {}
    try:
        for signum in DEFERRED_SIGNALS:  # the output folder is cleaned up on each of them
            previous[signum] = signal.signal(signum, _on_signal)
    except ValueError:  # not the main thread: leave signals as they are
        pass
    try:
        if args.command == "run":
            return _cmd_run(args)
        if args.command == "transects":
            return _cmd_transects(args)
        return _cmd_report(args)
    except ShorelineError as exc:
        if args.debug:
            raise
        print(f"shoreline: error: {_one_line(exc)}", file=sys.stderr)
        return 2
    except KeyboardInterrupt as exc:
        stop = exc if isinstance(exc, Interrupted) else Interrupted(signal.SIGINT)
        print(_interrupted_text(stop, args), file=sys.stderr)
        return 128 + int(stop.signum)
    except Exception as exc:  # a bug: say so in one line, traceback with --debug
        if args.debug:
            raise
        print(
            f"shoreline: internal error ({type(exc).__name__}: {_one_line(exc)}); this is a bug: "
            "re-run with --debug for the traceback and report it",
            file=sys.stderr,
        )
        return 3
    finally:
        for signum, handler in previous.items():
            signal.signal(signum, signal.SIG_DFL if handler is None else handler)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
