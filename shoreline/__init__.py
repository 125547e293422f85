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

__all__ = ["__version__"]
