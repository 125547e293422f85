"""Screening estimates of longshore sand transport and shoreline change.

The package carries offshore waves to breaking at shore-normal transects, computes longshore
transport with published formulas (CERC, Kamphuis) and differentiates it along the shore into
shoreline change rates. Every result is a screening estimate: see :mod:`shoreline.cautions`.
"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("longshore-screen")
except PackageNotFoundError:  # running from a source tree that was not installed
    __version__ = "0.0.0+unknown"

__all__ = ["Results", "__version__", "read_study", "screen", "study_from_dict"]

_API = ("Results", "read_study", "screen", "study_from_dict")


def __getattr__(name: str):
    """Return the Python interface's names (shoreline.api), imported on first use.

    ``import shoreline`` stays light for the command line.
    """
    if name in _API:
        from shoreline import api

        return getattr(api, name)
    raise AttributeError(f"module 'shoreline' has no attribute {name!r}")
