"""The command line: parse arguments, call the study runner, report.

Expected failures (:class:`shoreline.errors.ShorelineError`) are printed as one line on standard
error with a non-zero exit; other exceptions are bugs and print a traceback only with ``--debug``.
"""

from __future__ import annotations

import argparse
import sys

from shoreline import __version__
from shoreline.cautions import caution_lines
from shoreline.errors import ShorelineError


def build_parser() -> argparse.ArgumentParser:
    """Return the argument parser of the ``shoreline`` command."""
    parser = argparse.ArgumentParser(
        prog="shoreline",
        description=(
            "Screening estimates of longshore sand transport and shoreline change: casts "
            "shore-normal transects on a coast file, carries offshore waves to breaking, "
            "computes longshore transport (CERC, Kamphuis) and flags erosion and accretion "
            "hotspots."
        ),
        epilog="Screening estimate only: " + " ".join(caution_lines()[1:3]) + " ...",
    )
    parser.add_argument("--version", action="version", version=f"shoreline {__version__}")
    parser.add_argument(
        "--debug", action="store_true", help="show a traceback for every error (for bug reports)"
    )
    parser.add_subparsers(dest="command", metavar="COMMAND")
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; return the exit code."""
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        if args.command is None:
            parser.print_help()
            return 0
        return 0
    except ShorelineError as exc:
        if args.debug:
            raise
        print(f"shoreline: error: {exc}", file=sys.stderr)
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
