"""One error hierarchy and the exit statuses of the command line.

Every error that bad input can cause is a :class:`SpeccheckError`. It carries the file and
the place inside it (``line 12``, ``line 3, col 7``, ``key requirements[0].limit``,
``record 17``) so the command line can print one line ``FILE:PLACE: message`` and exit 2.
"""

from __future__ import annotations

import errno
import re
from enum import IntEnum
from typing import Any

__all__ = [
    "ExitStatus",
    "SpeccheckError",
    "InputError",
    "SpecError",
    "ReportError",
    "RecordsError",
    "FileAccessError",
    "os_error",
]


class ExitStatus(IntEnum):
    """Exit statuses: the check's outcome is kept apart from the tool failing."""

    CONFORMING = 0
    NONCONFORMING = 1
    ERROR = 2
    UNDECIDED = 3


_LINE_COL = re.compile(r"line (?P<line>\d+)(?:, col(?:umn)? (?P<col>\d+))?")


class SpeccheckError(Exception):
    """Base of all errors caused by input; printed as one line, exit status 2.

    Parameters
    ----------
    message:
        What is wrong, in words a technician understands.
    path:
        The file concerned, if any.
    where:
        The place inside the file: ``"line 12"``, ``"line 3, col 7"``, ``"key a.b"``, ...
    """

    def __init__(self, message: str, *, path: str | None = None, where: str | None = None):
        super().__init__(message)
        self.message = message
        self.path = path
        self.where = where

    def one_line(self) -> str:
        """``FILE:PLACE: message`` (parts that are unknown are left out), never multi-line.

        A place ``line L, col C`` (or ``column C``) is written ``L:C``, and ``line L`` as ``L``,
        as compilers and ``speccheck lint`` do, so editors can jump to it.
        """
        where = self.where
        if where:
            m = _LINE_COL.fullmatch(where.strip())
            if m:
                where = m["line"] + (f":{m['col']}" if m["col"] else "")
        head = ":".join(p for p in (self.path, where) if p)
        text = f"{head}: {self.message}" if head else self.message
        return " ".join(text.split())

    def __str__(self) -> str:
        return self.one_line()

    def to_error_dict(self) -> dict[str, Any]:
        """The ``error`` object of the JSON error document: file, line, column, message, code."""
        line = column = None
        m = _LINE_COL.fullmatch((self.where or "").strip())
        if m:
            line = int(m["line"])
            column = int(m["col"]) if m["col"] else None
        message = " ".join(self.message.split())
        if self.where and not m:
            message = f"{' '.join(self.where.split())}: {message}"
        return {
            "file": self.path,
            "line": line,
            "column": column,
            "message": message,
            "code": ERROR_CODES.get(type(self), "input"),
        }


class InputError(SpeccheckError):
    """A measured-profile file that cannot be read as it claims to be."""


class SpecError(SpeccheckError):
    """A specification or inspection-plan file that is not valid."""


class ReportError(SpeccheckError):
    """A report that cannot be written, signed or verified as a report."""


class RecordsError(SpeccheckError):
    """A records database that cannot be opened or written."""


class FileAccessError(SpeccheckError):
    """A file or folder that cannot be read or written (full disk, permissions, ...)."""


_OS_REASONS = {
    errno.ENOSPC: "no space left on the device",
    errno.EDQUOT: "disk quota exceeded",
    errno.EFBIG: "file too large for the file system or the process's file size limit",
    errno.EACCES: "permission denied",
    errno.EPERM: "permission denied",
    errno.EROFS: "read-only file system",
    errno.EISDIR: "is a folder, not a file",
    errno.ENOTDIR: "a part of the path is not a folder",
    errno.ENOENT: "no such file or folder",
    errno.ENAMETOOLONG: "file name too long",
    errno.EIO: "input/output error of the device",
}


def os_error(
    exc: OSError, *, path: str | None = None, doing: str = "cannot access"
) -> FileAccessError:
    """The one-line error for an operating-system failure on ``path``.

    ``doing`` says what failed (``"cannot write"``, ``"cannot read"``); the reason is named in
    plain words for the common cases (a full disk says "no space left on the device").
    """
    reason = _OS_REASONS.get(exc.errno or -1) or exc.strerror or type(exc).__name__
    name = path if path is not None else (exc.filename and str(exc.filename))
    return FileAccessError(f"{doing}: {reason}", path=name or None)


#: ``code`` of the JSON error document for each class of error (stable within a schema version).
ERROR_CODES: dict[type, str] = {
    SpeccheckError: "input",
    InputError: "input",
    SpecError: "spec",
    ReportError: "report",
    RecordsError: "records",
    FileAccessError: "file-access",
}
