"""Files in and out at the edges: bounded reads, and writes that a failure never leaves
half-written, that never destroy the old file, and never overwrite one of the run's inputs.

Every file speccheck reads whole goes through :func:`read_bounded`: anything but a regular file
(a folder, a FIFO, a device such as ``/dev/zero``) is refused before it is opened, the size is
checked against the caller's budget before a byte is read, and never more than the budget is
read, so no input can hang the tool or exhaust its memory.

Every file speccheck writes goes through :func:`atomic_write_with`: the content is written to a
temporary file in the destination's folder, flushed to disk (``fsync``) and renamed over the
destination, so a reader sees the old file or the new one, never a part of either.

Inside an :func:`output_session` (the command line opens one per run) two more things hold:

- every path the run reads (:func:`note_input`) and every path it will write
  (:func:`claim_output`) is compared with the others, through symbolic and hard links; an
  output that is an input or another output of the run is refused before anything is written;
- written files are *staged*: they become visible only when the run commits at its end, so a
  run that fails leaves no output of its own behind and every older file as it was.

Files get the permissions the user's umask allows (like any file the user creates), except
private keys, which are readable by their owner only (0600).
"""

from __future__ import annotations

import contextlib
import contextvars
import os
import stat
import tempfile
import threading
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from pathlib import Path

from speccheck.errors import SpeccheckError, os_error

__all__ = [
    "OutputSession",
    "atomic_write_bytes",
    "atomic_write_text",
    "atomic_write_with",
    "claim_output",
    "direct_writes",
    "note_input",
    "output_session",
    "read_bounded",
    "written_together",
]

_PRIVATE_MODE = 0o600
_GENERIC = "output"
_umask_lock = threading.Lock()


def _user_mode() -> int:
    """Permissions of a new regular file under the current umask (0o666 minus the umask)."""
    with _umask_lock:
        mask = os.umask(0o022)
        os.umask(mask)
    return 0o666 & ~mask


@dataclass(frozen=True)
class _Named:
    """A path as the user wrote it, what it is for, and what it resolves to on disk."""

    path: str
    role: str
    real: str
    inode: tuple[int, int] | None  # (device, inode) when the path exists

    @classmethod
    def of(cls, path: str | os.PathLike[str], role: str) -> _Named:
        text = os.fspath(path)
        try:
            st = os.stat(text)
            inode: tuple[int, int] | None = (st.st_dev, st.st_ino)
        except OSError:
            inode = None
        return cls(text, role, os.path.realpath(text), inode)

    def same_file(self, other: _Named) -> bool:
        if self.real == other.real:
            return True
        return self.inode is not None and self.inode == other.inode


def _same_claim(first: str, second: str) -> bool:
    """Whether two claims of one path are the same output (an option, then its writer)."""
    if first == second or _GENERIC in (first, second):
        return True
    return first.startswith("--") != second.startswith("--")


def _clash(output: _Named, other: _Named, kind: str) -> SpeccheckError:
    return SpeccheckError(
        f"{output.role} would overwrite {kind} {other.role} {other.path!r}; "
        "choose another output file",
        path=output.path,
    )


@dataclass
class OutputSession:
    """The inputs and outputs of one run, and the outputs written but not yet committed."""

    inputs: list[_Named] = field(default_factory=list)
    outputs: list[_Named] = field(default_factory=list)
    staged: list[tuple[Path, Path]] = field(default_factory=list)  # (temporary, destination)

    def note_input(self, path: str | os.PathLike[str], role: str) -> None:
        entry = _Named.of(path, role)
        for out in self.outputs:
            if out.same_file(entry):
                raise _clash(out, entry, "the input")
        self.inputs.append(entry)

    def claim_output(self, path: str | os.PathLike[str], role: str) -> None:
        entry = _Named.of(path, role)
        for inp in self.inputs:
            if inp.same_file(entry):
                raise _clash(entry, inp, "the input")
        for out in self.outputs:
            if out.same_file(entry):
                if out.real == entry.real and _same_claim(out.role, role):
                    return  # the file an option named, written by the library
                raise _clash(entry, out, "the output")
        self.outputs.append(entry)

    def commit(self) -> None:
        """Rename every staged file into place, in the order written."""
        while self.staged:
            tmp, dest = self.staged[0]
            _publish(tmp, dest)
            self.staged.pop(0)

    def abort(self) -> None:
        """Remove every staged file; destinations keep their old content."""
        for tmp, _ in self.staged:
            tmp.unlink(missing_ok=True)
        self.staged.clear()


_SESSION: contextvars.ContextVar[OutputSession | None] = contextvars.ContextVar(
    "speccheck_output_session", default=None
)


@contextlib.contextmanager
def output_session() -> Iterator[OutputSession]:
    """A run's session; staged files not committed by the end are removed."""
    session = OutputSession()
    token = _SESSION.set(session)
    try:
        yield session
    finally:
        session.abort()
        _SESSION.reset(token)


@contextlib.contextmanager
def direct_writes() -> Iterator[None]:
    """Suspend the session: writes land at once (for a run that reads back what it writes)."""
    token = _SESSION.set(None)
    try:
        yield
    finally:
        _SESSION.reset(token)


@contextlib.contextmanager
def written_together() -> Iterator[None]:
    """Files written inside appear together or not at all (in the run's session if there is one)."""
    if _SESSION.get() is not None:
        yield
        return
    with output_session() as session:
        yield
        session.commit()


def note_input(path: str | os.PathLike[str], role: str = "input") -> None:
    """Record that the run reads ``path``; SpeccheckError if an output of the run is that file."""
    session = _SESSION.get()
    if session is not None:
        session.note_input(path, role)


def claim_output(path: str | os.PathLike[str], role: str = _GENERIC) -> None:
    """Record that the run writes ``path``; SpeccheckError if it is an input or another output.

    Also refused: a destination that is a folder or a special file (a device, a FIFO), and a
    folder that does not exist.
    """
    _check_destination(Path(path), role)
    session = _SESSION.get()
    if session is not None:
        session.claim_output(path, role)


def _check_destination(path: Path, role: str) -> None:
    try:
        st = os.stat(path)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise os_error(exc, path=str(path), doing="cannot write") from None
    if st is not None and stat.S_ISDIR(st.st_mode):
        raise SpeccheckError(f"{role} is a folder, not a file", path=str(path))
    if st is not None and not stat.S_ISREG(st.st_mode):
        raise SpeccheckError(
            f"{role} is a special file (device or pipe), not a file", path=str(path)
        )
    directory = path.parent if str(path.parent) else Path(".")
    if not directory.is_dir():
        raise SpeccheckError(f"folder {str(directory)!r} does not exist", path=str(path))


def _publish(tmp: Path, dest: Path) -> None:
    """Rename ``tmp`` over ``dest`` and make the rename durable (fsync of the folder)."""
    try:
        os.replace(tmp, dest)
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise os_error(exc, path=str(dest), doing="cannot write") from None
    with contextlib.suppress(OSError):  # not every file system lets a folder be opened
        fd = os.open(dest.parent if str(dest.parent) else ".", os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def atomic_write_with(
    path: Path, write: Callable[[Path], None], *, role: str = _GENERIC, private: bool = False
) -> None:
    """Call ``write(tmp)`` to produce the file at a temporary path, then rename it to ``path``.

    If ``write`` raises, the temporary file is removed and ``path`` is left as it was. Inside an
    output session the rename waits for the session's commit. ``private`` files get mode 0600,
    others the user's umask. An I/O failure (full disk, permission denied, read-only file system)
    is a SpeccheckError naming ``path``.
    """
    path = Path(path)
    claim_output(path, role)
    directory = path.parent if str(path.parent) else Path(".")
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=directory)
    except OSError as exc:
        raise os_error(exc, path=str(path), doing="cannot write") from None
    os.close(fd)
    tmp = Path(tmp_name)
    try:
        write(tmp)
        _flush(tmp, _PRIVATE_MODE if private else _user_mode())
    except OSError as exc:
        tmp.unlink(missing_ok=True)
        raise os_error(exc, path=str(path), doing="cannot write") from None
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    session = _SESSION.get()
    if session is None:
        _publish(tmp, path)
    else:
        session.staged.append((tmp, path))


def _flush(tmp: Path, mode: int) -> None:
    fd = os.open(tmp, os.O_RDWR)
    try:
        os.fchmod(fd, mode)
        os.fsync(fd)
    finally:
        os.close(fd)


def atomic_write_bytes(
    path: Path, data: bytes, *, role: str = _GENERIC, private: bool = False
) -> None:
    def write(p: Path) -> None:
        with open(p, "wb") as f:
            f.write(data)

    atomic_write_with(Path(path), write, role=role, private=private)


def atomic_write_text(path: Path, text: str, *, role: str = _GENERIC) -> None:
    atomic_write_bytes(Path(path), text.encode("utf-8"), role=role)


def read_bounded(
    path: str | os.PathLike[str],
    *,
    limit: int,
    role: str = "input",
    error: type[SpeccheckError] = SpeccheckError,
) -> bytes:
    """The bytes of the regular file ``path``, at most ``limit`` of them.

    Refused with ``error`` naming the file, before it is opened: a missing file, a folder, a
    special file (FIFO, device, socket); before it is read: a file larger than ``limit`` bytes.
    The file is opened non-blocking and checked again after opening, so a path swapped for a
    FIFO in between cannot hang the read. The path is noted as an input of the run.
    """
    text = os.fspath(path)
    note_input(text, role)
    try:
        st = os.stat(text)
    except FileNotFoundError:
        raise error("file not found", path=text) from None
    except OSError as exc:
        raise os_error(exc, path=text, doing="cannot read") from None
    _refuse_special(st, text, error)
    if st.st_size > limit:
        raise error(f"file is {st.st_size} bytes, more than the {limit} bytes allowed", path=text)
    try:
        fd = os.open(text, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise os_error(exc, path=text, doing="cannot read") from None
    try:
        opened = os.fstat(fd)
        _refuse_special(opened, text, error)
        with os.fdopen(fd, "rb", closefd=False) as f:
            # Ask for the size the file has (+1 to see growth), never for the whole limit: a
            # read of n bytes reserves n bytes of memory before anything arrives.
            size = min(opened.st_size, limit)
            data = f.read(size + 1)
            if len(data) > size:  # grew after the stat: read on, still within the limit
                data += f.read(limit + 1 - len(data))
    except OSError as exc:
        raise os_error(exc, path=text, doing="cannot read") from None
    finally:
        os.close(fd)
    if len(data) > limit:
        raise error(f"file grew beyond the {limit} bytes allowed while being read", path=text)
    return data


def _refuse_special(st: os.stat_result, path: str, error: type[SpeccheckError]) -> None:
    if stat.S_ISDIR(st.st_mode):
        raise error("is a folder, not a file", path=path)
    if not stat.S_ISREG(st.st_mode):
        kind = "a FIFO (named pipe)" if stat.S_ISFIFO(st.st_mode) else "a device or socket"
        raise error(f"is {kind}, not a regular file; refused", path=path)
