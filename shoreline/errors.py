"""The package's own exceptions.

Every expected failure (bad input, a file that cannot be read, a setting out of range) raises a
subclass of :class:`ShorelineError` whose message is one line a coastal engineer understands:
it names the file, key, line or value and says what was expected. The command line prints that
line and exits non-zero; any other exception is a bug and shows a traceback only with
``--debug``.
"""


class ShorelineError(Exception):
    """Base class of every expected failure in this package."""


class StudyError(ShorelineError):
    """The study file is missing, unreadable, or a key or value in it is wrong."""


class CoastError(ShorelineError):
    """The coast file cannot be read or holds no usable shoreline geometry."""


class WaveRecordError(ShorelineError):
    """A wave record file is missing a column, or holds a value that cannot be used."""


class OutputError(ShorelineError):
    """An output folder cannot be written."""


def one_line(text: object) -> str:
    r"""A library's message as one line: runs of whitespace (newlines too) become one space.

    Examples
    --------
    >>> one_line("Error tokenizing data.\n  Expected 4 fields\n")
    'Error tokenizing data. Expected 4 fields'
    """
    return " ".join(str(text).split())


class ClusterError(ShorelineError):
    """The Dask cluster of a run cannot be reached, cannot start, or failed during the run."""
