"""Input files that must be regular files, and output folders replaced whole.

An output folder is replaced in one step, never item by item. :func:`publish` builds the whole
new folder as a sibling, ``<out>.partial-XXXXXXXX`` (same file system), and then swaps it with
the old one: on Linux with ``renameat2(RENAME_EXCHANGE)``, a single atomic step; elsewhere with
two renames (old aside to ``<out>.old-XXXXXXXX``, new into place, and the old renamed back if the
second rename fails). SIGINT, SIGTERM and SIGHUP are held back across the swap and delivered
after it. The old tree is removed afterwards. Whatever fails or stops the run, ``<out>`` holds
either the whole earlier output or the whole new one.

Every output folder carries a marker file, :data:`MARKER`. A folder that exists, is not empty
and has no marker is never replaced: it may hold someone's own files. Leftovers of a run killed
outright (SIGKILL, power cut) are recognised by their name and marker and removed (or, if the
output folder itself is missing, the earlier output is put back) by the next run into the same
folder.

Two runs into one output folder do not interleave: a run holds an exclusive ``flock`` on
``<out>.lock`` beside the folder from start to end, and a second run refuses at once, naming the
first run's process id.
"""

from __future__ import annotations

import contextlib
import ctypes
import errno
import os
import shutil
import signal
import stat
import sys
import threading
import uuid
from collections.abc import Callable, Iterator
from pathlib import Path

from shoreline import __version__
from shoreline.errors import OutputError, ShorelineError

try:  # POSIX; Windows has no flock and runs without the lock
    import fcntl
except ImportError:  # pragma: no cover
    fcntl = None  # type: ignore[assignment]

#: The marker file written into every output folder this tool creates.
MARKER = ".shoreline-output"

#: Signals held back while the old and the new output folder are swapped.
DEFERRED_SIGNALS = tuple(
    getattr(signal, name) for name in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, name)
)

_HEX8 = frozenset("0123456789abcdef")
_HELD: set[Path] = set()  # output folders whose lock this process holds


class Interrupted(KeyboardInterrupt):
    """The run was stopped by a signal (SIGINT, SIGTERM or SIGHUP).

    ``published`` is the output folder when the new output had already been swapped into place
    when the signal came, else None (the earlier output is unchanged).
    """

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum
        self.published: Path | None = None


def require_regular_file(path: str | os.PathLike, what: str, error=ShorelineError) -> Path:
    """Return ``path`` if it is a regular file (or a link to one); else raise ``error``.

    A named pipe, socket, device or folder given where a file is expected would make a reader
    wait forever or fail obscurely; this says so in one line.

    Examples
    --------
    >>> require_regular_file("/", "study file")
    Traceback (most recent call last):
    ...
    shoreline.errors.ShorelineError: /: the study file is a folder; give a file
    """
    path = Path(path)
    try:
        mode = path.stat().st_mode
    except FileNotFoundError:
        raise error(f"{path}: {what} not found") from None
    except OSError as exc:
        raise error(f"{path}: cannot read the {what} ({_reason(exc)})") from None
    if stat.S_ISREG(mode):
        return path
    kinds = (
        (stat.S_ISDIR, "a folder"),
        (stat.S_ISFIFO, "a named pipe"),
        (stat.S_ISSOCK, "a socket"),
        (stat.S_ISCHR, "a device"),
        (stat.S_ISBLK, "a device"),
    )
    kind = next((name for test, name in kinds if test(mode)), "not a regular file")
    raise error(f"{path}: the {what} is {kind}; give a file")


def _reason(exc: OSError) -> str:
    return exc.strerror or str(exc) or type(exc).__name__


def _is_ours(folder: Path) -> bool:
    """True if ``folder`` carries this tool's marker file."""
    try:
        if not (folder / MARKER).is_file():
            return False
        with open(folder / MARKER, "rb") as handle:
            return handle.read(9) == b"shoreline"
    except OSError:
        return False


def _is_empty_dir(folder: Path) -> bool:
    with os.scandir(folder) as entries:
        return next(entries, None) is None


def check_output_folder(out_dir: str | os.PathLike) -> None:
    """Refuse an output folder that must not be replaced; return if it may be.

    Fine: a folder that does not exist yet, an empty folder, or one written by this tool (it
    holds :data:`MARKER`). Refused with :class:`OutputError`: a file, or a non-empty folder
    without the marker (it may hold someone's own files).
    """
    out_dir = Path(out_dir)
    if not os.path.lexists(out_dir):
        return
    if not out_dir.is_dir():
        raise OutputError(f"{out_dir}: exists and is not a folder; choose a new folder for --out")
    try:
        empty = _is_empty_dir(out_dir)
    except OSError as exc:
        raise OutputError(f"{out_dir}: cannot read the output folder ({_reason(exc)})") from None
    if not empty and not _is_ours(out_dir):
        hint = ""
        if (out_dir / "run.json").is_file() or (out_dir / "transects.geojson").is_file():
            hint = " (earlier builds of shoreline wrote no marker: delete such a folder yourself)"
        raise OutputError(
            f"{out_dir}: the folder is not empty and was not written by shoreline (it has no "
            f"{MARKER} file), so it is not replaced; choose an empty or new folder for --out" + hint
        )


def _real(out_dir: Path) -> Path:
    """The output folder with links resolved: the swap happens where the files are."""
    return Path(os.path.realpath(out_dir))


@contextlib.contextmanager
def output_lock(out_dir: str | os.PathLike) -> Iterator[None]:
    """Hold the exclusive lock of an output folder, or refuse at once if another run holds it.

    The lock is an ``flock`` on ``<out>.lock`` beside the folder; the file holds the process id
    of the run and is removed when the run ends. Re-entrant within one process.
    """
    out_dir = Path(out_dir)
    real = _real(out_dir)
    if fcntl is None or real in _HELD:
        yield
        return
    lock_path = real.parent / f"{real.name}.lock"
    try:
        real.parent.mkdir(parents=True, exist_ok=True)
    except FileExistsError:
        raise OutputError(
            f"{out_dir}: {real.parent} is a file, not a folder; choose another --out"
        ) from None
    except OSError as exc:
        raise OutputError(f"{out_dir}: cannot create {real.parent} ({_reason(exc)})") from None
    while True:
        try:
            fd = os.open(lock_path, os.O_RDWR | os.O_CREAT, 0o644)
        except OSError as exc:
            raise OutputError(
                f"{out_dir}: cannot create the lock file {lock_path.name} beside it "
                f"({_reason(exc)}); the folder that holds it must be writable"
            ) from None
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError as exc:
            pid = os.pread(fd, 32, 0).decode("ascii", "replace").strip() or "unknown"
            os.close(fd)
            if exc.errno not in (errno.EWOULDBLOCK, errno.EAGAIN, errno.EACCES):
                raise OutputError(
                    f"{out_dir}: cannot lock {lock_path.name} ({_reason(exc)})"
                ) from None
            raise OutputError(
                f"{out_dir}: is being written by another run (pid {pid}); wait for it or "
                "choose another --out"
            ) from None
        # the run that held the lock removes the file as it ends: lock the file now there
        try:
            now = os.stat(lock_path)
            mine = os.fstat(fd)
            if (now.st_dev, now.st_ino) == (mine.st_dev, mine.st_ino):
                break
        except FileNotFoundError:
            pass
        os.close(fd)
    try:
        with contextlib.suppress(OSError):  # the process id only helps the message of another run
            os.ftruncate(fd, 0)
            os.pwrite(fd, f"{os.getpid()}\n".encode("ascii"), 0)
        _HELD.add(real)
        yield
    finally:
        _HELD.discard(real)
        with contextlib.suppress(OSError):
            os.unlink(lock_path)
        os.close(fd)


def _write_marker(folder: Path, command: list[str] | None) -> None:
    text = f"shoreline {__version__} output folder: replaced whole by the next run into it\n"
    if command:
        text += "command: " + " ".join(command) + "\n"
    (folder / MARKER).write_text(text, encoding="utf-8")


def _remove_ours(folder: Path) -> None:
    """Remove a folder of ours, its marker last, so an interrupted removal stays recognisable."""
    if not os.path.lexists(folder):
        return
    with os.scandir(folder) as entries:
        children = [Path(e.path) for e in entries if e.name != MARKER]
    for child in children:
        if child.is_dir() and not child.is_symlink():
            shutil.rmtree(child)
        else:
            child.unlink()
    with contextlib.suppress(FileNotFoundError):
        (folder / MARKER).unlink()
    folder.rmdir()


def _leftovers(real: Path) -> list[Path]:
    """Sibling folders of ``real`` left by a run that was killed outright."""
    try:
        with os.scandir(real.parent) as entries:
            names = [e.name for e in entries if e.is_dir(follow_symlinks=False)]
    except OSError:
        return []
    found = []
    for name in names:
        for kind in ("partial", "old"):
            prefix = f"{real.name}.{kind}-"
            tail = name[len(prefix) :]
            if name.startswith(prefix) and len(tail) == 8 and set(tail) <= _HEX8:
                path = real.parent / name
                with contextlib.suppress(OSError):
                    if _is_ours(path) or _is_empty_dir(path):
                        found.append(path)
    return found


def _clean_leftovers(real: Path) -> None:
    """Put back an earlier output moved aside by a killed swap; remove other leftovers."""
    leftovers = _leftovers(real)
    if not os.path.lexists(real):
        aside = [p for p in leftovers if ".old-" in p.name and _is_ours(p)]
        if aside:
            newest = max(aside, key=lambda p: (p / MARKER).stat().st_mtime)
            with contextlib.suppress(OSError):
                os.rename(newest, real)
                leftovers.remove(newest)
    for path in leftovers:
        with contextlib.suppress(OSError):
            _remove_ours(path)


@contextlib.contextmanager
def signals_deferred() -> Iterator[None]:
    """Hold back SIGINT, SIGTERM and SIGHUP inside the block; deliver the first one after it."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    caught: list[int] = []
    previous = {}
    for signum in DEFERRED_SIGNALS:
        previous[signum] = signal.signal(signum, lambda s, _frame: caught.append(s))
    try:
        yield
    finally:
        for signum, handler in previous.items():
            signal.signal(signum, signal.SIG_DFL if handler is None else handler)
        if caught:
            signal.raise_signal(caught[0])


_AT_FDCWD = -100
_RENAME_EXCHANGE = 2


def _renameat2() -> Callable | None:
    """The C library's ``renameat2`` (Linux, glibc 2.28 or newer), or None."""
    if not sys.platform.startswith("linux"):
        return None
    try:
        func = ctypes.CDLL(None, use_errno=True).renameat2
    except (OSError, AttributeError):
        return None
    func.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
    func.restype = ctypes.c_int
    return func


def _exchange(a: Path, b: Path) -> bool:
    """Swap two paths in one atomic step; False where the system cannot (then nothing moved)."""
    func = _renameat2()
    if func is None:
        return False
    if func(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b), _RENAME_EXCHANGE) == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP, errno.EOPNOTSUPP):
        return False
    raise OSError(err, os.strerror(err), str(b))


def _swap(new: Path, target: Path) -> Path | None:
    """Put the folder ``new`` at ``target``; return where the old tree now is (None if none)."""
    if not os.path.lexists(target) or _is_empty_dir(target):
        try:
            os.rename(new, target)  # atomic; replaces an empty folder
        except FileExistsError:  # Windows renames onto no folder, not even an empty one
            target.rmdir()
            os.rename(new, target)
        return None
    if _exchange(new, target):
        return new  # the old tree now has the new one's name
    aside = target.parent / f"{target.name}.old-{uuid.uuid4().hex[:8]}"
    os.rename(target, aside)
    try:
        os.rename(new, target)
    except BaseException:
        os.rename(aside, target)
        raise
    return aside


def publish(
    build: Callable[[Path], None],
    out_dir: str | os.PathLike,
    command: list[str] | None = None,
    notes: list[str] | None = None,
) -> None:
    """Build a whole new output folder with ``build(folder)`` and swap it in for ``out_dir``.

    ``command`` is written into the folder's marker file. ``notes`` collects lines for the user
    that are no failure (an old tree that could not be removed). Raises :class:`OutputError`
    when the folder may not or cannot be written, and :class:`Interrupted` (with
    ``published`` set) when a signal stops it; in every case ``out_dir`` holds either the whole
    earlier output or the whole new one, and no partial folder is left.
    """
    out_dir = Path(out_dir)
    check_output_folder(out_dir)
    with output_lock(out_dir):
        real = _real(out_dir)
        _clean_leftovers(real)
        check_output_folder(out_dir)
        earlier = os.path.lexists(real) and not _is_empty_dir(real)
        unchanged = (
            f"the earlier output in {out_dir} is unchanged"
            if earlier
            else f"nothing was written to {out_dir}"
        )
        partial = real.parent / f"{real.name}.partial-{uuid.uuid4().hex[:8]}"
        swapped = False
        old: Path | None = None
        try:
            try:
                partial.mkdir()
                _write_marker(partial, command)
            except OSError as exc:
                raise OutputError(
                    f"{out_dir}: cannot create a new output folder beside it in {real.parent} "
                    f"({_reason(exc)}); that folder must be writable; {unchanged}"
                ) from None
            try:
                build(partial)
            except OSError as exc:
                raise OutputError(
                    f"{out_dir}: cannot write the outputs ({_reason(exc)}); {unchanged}"
                ) from None
            with signals_deferred():
                try:
                    old = _swap(partial, real)
                except OSError as exc:
                    raise OutputError(
                        f"{out_dir}: cannot move the new output into place ({_reason(exc)}); "
                        f"{unchanged}"
                    ) from None
                swapped = True
        except KeyboardInterrupt as exc:
            stop = exc if isinstance(exc, Interrupted) else Interrupted(signal.SIGINT)
            stop.published = out_dir if swapped else None
            if stop is exc:
                raise
            raise stop from None
        finally:
            leftover = old if swapped else partial
            if leftover is not None:
                try:
                    _remove_ours(leftover)
                except OSError as exc:
                    if notes is not None:
                        notes.append(
                            f"could not remove {leftover} ({_reason(exc)}); the next run into "
                            f"{out_dir} tries again, or remove it yourself"
                        )
