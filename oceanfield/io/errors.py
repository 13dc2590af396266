"""Errors the readers and writers raise: one line each, naming the file.

Knows nothing of physics or of formats.

Both are `OSError` subclasses, so code that already handles file errors handles these; both
survive pickling, so a worker process can hand them back to the process that started it.
"""

from __future__ import annotations

import os

__all__ = ["OutputError", "CorruptFileError"]


class _FileError(OSError):
    _verb = "use"

    def __init__(self, path: str | os.PathLike[str], reason: str, errno: int | None = None):
        reason = " ".join(str(reason).split())  # one line, whatever the library said
        if errno is None:
            super().__init__(reason)
        else:
            super().__init__(errno, reason)
        self.filename = os.fspath(path)
        self.reason = reason

    def __str__(self) -> str:
        return f"cannot {self._verb} '{self.filename}': {self.reason}"

    def __reduce__(self) -> tuple[type, tuple[str, str, int | None]]:
        return type(self), (self.filename, self.reason, self.errno)


class OutputError(_FileError):
    """A file could not be written (read-only folder, full disk, missing folder, ...).

    ``str(error)`` is one line, ``cannot write '<path>': <reason>``; ``errno`` is set when
    the operating system gave one. No partial file is left under the final name.
    """

    _verb = "write"


class CorruptFileError(_FileError):
    """A file exists but cannot be read as what it claims to be (truncated, corrupt).

    ``str(error)`` is one line, ``cannot read '<path>': <reason>``.
    """

    _verb = "read"
