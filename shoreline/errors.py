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


def require_regular_file(
    path, what: str, error: type[ShorelineError] = ShorelineError, folders: bool = False
) -> None:
    """Refuse a path that is missing or is not a regular file, before anything opens it.

    A named pipe, a device or a socket would block or stream forever when read, so each reader
    checks its path first. ``folders=True`` also accepts a directory, for GIS datasets that are
    folders (an Esri File Geodatabase ``.gdb``, a folder of Shapefiles).

    Raises
    ------
    ShorelineError
        Of the class ``error``, naming the path and ``what`` it should be.
    """
    import os
    import stat

    try:
        mode = os.stat(path).st_mode
    except FileNotFoundError:
        raise error(f"{path}: {what} not found") from None
    except OSError as exc:
        raise error(f"{path}: cannot open the {what} ({one_line(exc.strerror)})") from None
    if stat.S_ISREG(mode) or (folders and stat.S_ISDIR(mode)):
        return
    kind = "a folder" if stat.S_ISDIR(mode) else "not a regular file (a pipe, device or socket)"
    raise error(f"{path}: the {what} is {kind}; give the path of a file")
