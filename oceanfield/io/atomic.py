"""Atomic file output: a file appears under its final name complete, or not at all.

Knows nothing of physics, maps or formats.

A writer writes to a hidden temporary beside the final file; when it finishes cleanly the
temporary is flushed to disk and renamed onto the final name in one step (`os.replace`,
atomic within a folder on POSIX and Windows). Readers, resumed renders and other workers
therefore never see a half-written frame, and two processes writing the same path at once
each write their own temporary: the last rename wins and the file is always whole.

A temporary is named ``.<final name>.oceanfield-partial-<pid>-<token><suffix>``: hidden,
in the same folder (so the rename never crosses file systems), unique (process id and a
random token), and ending in the final file's suffix (writers that pick a format from the
extension still work). A writer killed outright (SIGKILL, power loss) can leave one
behind; `remove_stale_temporaries` clears them.
"""

from __future__ import annotations

import contextlib
import math
import os
import re
import secrets
import time
from collections.abc import Iterator
from pathlib import Path

from oceanfield.io.errors import OutputError

__all__ = ["OutputError", "atomic_output", "prepare_output", "prepare_option_output", "remove_stale_temporaries",
           "is_temporary"]

_MARKER = ".oceanfield-partial-"
_TOKEN_HEX = 16
_TEMPORARY = re.compile(
    r"^\.(?P<name>.*)" + re.escape(_MARKER)
    + r"(?P<pid>[0-9]+)-(?P<token>[0-9a-f]{%d})(?P<suffix>\.[^.]*)?$" % _TOKEN_HEX,
    re.DOTALL,
)
_NAME_MAX = 255  # bytes in one file name on common file systems (ext4, XFS, APFS, NTFS)
_RESERVE_ATTEMPTS = 8


@contextlib.contextmanager
def atomic_output(path: str | os.PathLike[str]) -> Iterator[Path]:
    """Write a file atomically: yield a temporary path, rename it onto `path` on success.

    Parameters
    ----------
    path : str or path-like
        Final file name. Its folder must exist.

    Yields
    ------
    pathlib.Path
        A temporary file in the same folder, already created (empty) so the name is
        reserved; the writer overwrites it.

    Raises
    ------
    OutputError
        When the temporary cannot be created or written, or the rename fails (read-only
        folder, full disk, missing folder, ...), or the writer created no file. Any
        `OSError` the writer raises is reported this way too, naming the final path.

    Notes
    -----
    On a clean exit the temporary is fsynced, renamed onto `path` and the folder fsynced,
    so the file survives a crash right after. On any exception, including
    KeyboardInterrupt, the temporary is deleted and the exception re-raised (an `OSError`
    as `OutputError`); the final name is left as it was.

    Examples
    --------
    >>> with atomic_output("frame.0001.txt") as temporary:  # doctest: +SKIP
    ...     temporary.write_text("done")
    """
    final = Path(path)
    if final.is_dir():
        raise OutputError(final, "is a folder, expected a file name")
    temporary = _reserve(final)
    try:
        yield temporary
        if not temporary.exists():
            raise OutputError(final, "the writer produced no file")
        _fsync_file(temporary)
        os.replace(temporary, final)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            temporary.unlink()
        if isinstance(exc, OSError) and not isinstance(exc, OutputError):
            raise OutputError(final, _reason(exc), exc.errno) from exc
        raise
    _fsync_folder(final.parent)


def prepare_output(path: str | os.PathLike[str]) -> Path:
    """Make sure a file can be written at `path`: its folder exists (made if missing) and
    `path` is not a folder. Call it before the work whose result goes there, so a wrong
    path is said at once, not after minutes of computing.

    Raises
    ------
    OutputError
        `path` is a folder, or its folder cannot be made (a file stands in the way, a
        missing or read-only parent), naming `path` and why.
    """
    final = Path(path)
    if final.is_dir():
        raise OutputError(final, "is a folder, expected a file name")
    folder = final.parent
    blocker = next((p for p in (folder, *folder.parents) if p.exists() and not p.is_dir()), None)
    if blocker is not None:
        raise OutputError(final, f"'{blocker}' is a file, not a folder")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(final, f"cannot make its folder ({_reason(exc)})", exc.errno) from exc
    return final


def prepare_option_output(option: str, path: str | os.PathLike[str]) -> Path:
    """:func:`prepare_output` for a command's option naming a file: a path that cannot be
    written is a ValueError naming the option (the command's one-line error, exit 2)."""
    try:
        return prepare_output(path)
    except OutputError as error:
        raise ValueError(f"{option}: {error}") from None


def remove_stale_temporaries(
    folder: str | os.PathLike[str], *, min_age: float = 300.0
) -> list[Path]:
    """Delete temporaries that killed writers left in a folder.

    A file is removed when its name has the temporary pattern (see the module notes), it
    was last modified at least `min_age` seconds ago, and its process id is not that of a
    process running on this machine. Other files are never touched.

    Parameters
    ----------
    folder : str or path-like
        The folder to clean (not recursive).
    min_age : float, optional
        Seconds since the last modification before a temporary counts as stale; finite,
        at least 0. A writer holds its temporary only while it writes the file, so the
        default of five minutes (common practice) leaves other machines' writes to a
        shared folder alone.

    Returns
    -------
    list of pathlib.Path
        The files removed, sorted.
    """
    if (
        isinstance(min_age, bool)
        or not isinstance(min_age, (int, float))
        or not math.isfinite(min_age)
        or min_age < 0
    ):
        raise ValueError(f"min_age: got {min_age!r}; expected a finite number of seconds ≥ 0")
    now = time.time()
    removed = []
    with os.scandir(folder) as entries:
        for entry in entries:
            match = _TEMPORARY.match(entry.name)
            if match is None or not entry.is_file(follow_symlinks=False):
                continue
            try:
                age = now - entry.stat(follow_symlinks=False).st_mtime
            except FileNotFoundError:
                continue  # its writer finished meanwhile
            if age < min_age or _process_alive(int(match["pid"])):
                continue
            with contextlib.suppress(FileNotFoundError):
                os.unlink(entry.path)
                removed.append(Path(entry.path))
    return sorted(removed)


def is_temporary(path: str | os.PathLike[str]) -> bool:
    """True when `path`'s file name has the pattern of an `atomic_output` temporary."""
    return _TEMPORARY.match(Path(path).name) is not None


def _temporary_name(final: Path, pid: int, token: str) -> str:
    tail = f"{_MARKER}{pid}-{token}{final.suffix}"
    budget = _NAME_MAX - 1 - len(tail.encode())
    name = final.name.encode()[:budget].decode(errors="ignore")
    return f".{name}{tail}"


def _reserve(final: Path) -> Path:
    """Create an empty, unique temporary beside `final` and return its path."""
    for _ in range(_RESERVE_ATTEMPTS):
        name = _temporary_name(final, os.getpid(), secrets.token_hex(_TOKEN_HEX // 2))
        temporary = final.with_name(name)
        try:
            fd = os.open(temporary, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)
        except FileExistsError:
            continue
        except OSError as exc:
            raise OutputError(final, _reason(exc), exc.errno) from exc
        os.close(fd)
        return temporary
    raise OutputError(final, "could not create a unique temporary file beside it")


def _reason(exc: OSError) -> str:
    if exc.strerror:
        return exc.strerror
    return str(exc) or type(exc).__name__


def _fsync_file(path: Path) -> None:
    fd = os.open(path, os.O_RDWR if os.name == "nt" else os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def _fsync_folder(folder: Path) -> None:
    """Make a rename in `folder` durable; best effort (not every system allows it)."""
    if not hasattr(os, "O_DIRECTORY"):
        return
    with contextlib.suppress(OSError):
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _process_alive(pid: int) -> bool:
    """Whether a process with this id runs on this machine (False off POSIX: age decides)."""
    if pid == os.getpid():
        return True
    if os.name != "posix":
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (OverflowError, OSError):
        return True  # exists under another user, or we cannot tell: keep it
    return True
