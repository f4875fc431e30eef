"""Writing result files atomically: the one place where devmodels puts bytes on disk.

Every file a command writes (Touchstone, CSV, JSON, plots) goes through this module:

- the text is written to a temporary file in the destination's folder (created with
  ``O_EXCL``, never following a link), flushed, ``os.fsync``-ed, and moved over the
  destination with :func:`os.replace`, so the destination is either the old file or the
  whole new one, never half of either;
- a symbolic link at the destination is *replaced* by the new file, never followed: the
  link's target is left untouched;
- a regular file that is replaced keeps its permission bits (a 0600 file stays 0600); a new
  file gets the usual mode ``0666 & ~umask``, not the 0600 of a temporary file;
- on any failure the temporary file is removed and the destination is left as it was;
- every :class:`OSError` (a directory in the way, no permission, a read-only file system,
  a full disk, a name too long, a missing folder) becomes one
  :class:`~devmodels.exceptions.OutputError` whose one-line message starts with the name of
  the option that named the file: ``"out: cannot write 'x.s2p': permission denied"``.

A command calls :func:`check_destination` *before* it computes anything, so a typing error in
an output name costs nothing; the writers check again when they write.  Files inside
``/dev`` (except ``/dev/shm``), ``/proc`` and ``/sys`` are refused: a device or kernel file is
never a place for a result (and replacing, say, the link ``/dev/stdout`` as root would break
the system).

Functions: :func:`atomic_write_text`, :func:`atomic_write_bytes`, :func:`atomic_write_chunks`
(an iterable of text or bytes blocks, written as they come, so a large export never holds its
whole text) and :func:`atomic_writer` (a context manager yielding a file-like object with
``write``).
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
import tempfile
from pathlib import Path
from typing import Iterable, Iterator

from .exceptions import OutputError

__all__ = ["atomic_write_text", "atomic_write_bytes", "atomic_write_chunks", "atomic_writer",
           "check_destination", "short_path", "MESSAGE_PATH_CHARS"]

#: Longest path shown in a message, in characters; longer ones are shortened with "...".
MESSAGE_PATH_CHARS = 120
#: Bytes gathered before one ``os.write`` call.
_BUFFER = 1 << 20
#: Folders whose files are devices or kernel interfaces, never result files ...
_SPECIAL_FOLDERS = ("/dev", "/proc", "/sys")
#: ... except the shared-memory file system, an ordinary place for files.
_ORDINARY_INSIDE_SPECIAL = ("/dev/shm",)

#: Words for the errors a write meets most often (the rest: the system's own text).
_REASONS = {
    errno.EACCES: "permission denied",
    errno.EPERM: "permission denied",
    errno.EROFS: "the file system is read-only",
    errno.ENOSPC: "no space left on the device (the disk is full)",
    errno.EDQUOT: "the disk quota is exceeded",
    errno.ENAMETOOLONG: "the name is too long",
    errno.EISDIR: "it is a directory",
    errno.ENOTDIR: "a part of the path is not a folder",
    errno.ENOENT: "the folder does not exist",
    errno.ELOOP: "too many levels of symbolic links",
    errno.EFBIG: "the file is too large for the file system",
    errno.EIO: "input/output error",
}


def short_path(path, limit: int = MESSAGE_PATH_CHARS) -> str:
    """``path`` as text of at most ``limit`` characters (the middle replaced by ``...``).

    Parameters
    ----------
    path : str or Path
        The path (or any value) to show.
    limit : int
        Maximum length in characters (at least 20).
    """
    text = str(path)
    if len(text) <= limit:
        return text
    limit = max(limit, 20)
    head = (limit - 3) // 3
    tail = limit - 3 - head
    return text[:head] + "..." + text[-tail:]


def _quoted(path) -> str:
    # repr() quotes and escapes control characters, so a name with a newline stays one line.
    return repr(short_path(path))


def _reason(exc: OSError) -> str:
    if exc.errno in _REASONS:
        return _REASONS[exc.errno]
    text = exc.strerror or type(exc).__name__
    return text[:1].lower() + text[1:]


def _fail(option: str, path, reason: str) -> OutputError:
    return OutputError(f"{option}: cannot write {_quoted(path)}: {reason}")


def _folder(path: Path) -> Path:
    return path.parent if str(path.parent) else Path(".")


def _inside_special_folder(path: Path) -> bool:
    try:
        real = os.path.realpath(_folder(path))
    except (OSError, ValueError):
        return False
    def inside(folders) -> bool:
        return any(real == d or real.startswith(d + "/") for d in folders)

    return inside(_SPECIAL_FOLDERS) and not inside(_ORDINARY_INSIDE_SPECIAL)


def _as_path(path, option: str) -> Path:
    text = os.fspath(path) if isinstance(path, (str, os.PathLike)) else None
    if not isinstance(text, str):
        raise OutputError(f"{option}: expected a file name, got {short_path(repr(path))}")
    if text == "" or text.strip() == "":
        raise OutputError(f"{option}: expected a file name, got an empty one")
    if "\0" in text:
        raise _fail(option, text, "the name contains a NUL character")
    return Path(text)


def _inspect(p: Path, option: str) -> int | None:
    """Check what is at ``p`` now; return the mode bits to keep (a regular file) or None."""
    if _inside_special_folder(p):
        raise _fail(option, p, f"{_quoted(short_path(_folder(p), 60))} holds devices or kernel files, "
                               "not results; give a file in an ordinary folder")
    folder = _folder(p)
    try:
        st = os.lstat(p)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise _fail(option, p, _reason(exc)) from None
    if st is not None:
        if stat.S_ISDIR(st.st_mode):
            raise _fail(option, p, "it is a directory; give the name of a file in it")
        if not (stat.S_ISREG(st.st_mode) or stat.S_ISLNK(st.st_mode)):
            raise _fail(option, p, "it is not a regular file (a device, a pipe or a socket), "
                                   "and is never replaced")
    try:
        fst = os.stat(folder)
    except FileNotFoundError:
        raise _fail(option, p, f"the folder {_quoted(short_path(folder, 60))} does not exist") from None
    except OSError as exc:
        raise _fail(option, p, _reason(exc)) from None
    if not stat.S_ISDIR(fst.st_mode):
        raise _fail(option, p, f"{_quoted(short_path(folder, 60))} is not a folder")
    if st is not None and stat.S_ISREG(st.st_mode):
        return stat.S_IMODE(st.st_mode)
    return None


def _umask() -> int:
    """The process's umask, read without changing it where the system allows."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    mask = os.umask(0o022)  # fallback: read it by setting it (briefly) and restore it
    os.umask(mask)
    return mask


def _temp_in(folder: Path, name: str) -> tuple[int, str]:
    # The temporary name is short enough whatever the destination's length (NAME_MAX 255).
    return tempfile.mkstemp(prefix=f".{name[:60]}.", suffix=".tmp", dir=folder)


def _remove(tmp: str | None) -> None:
    if tmp is None:
        return
    with contextlib.suppress(OSError):
        os.unlink(tmp)


def _write_all(fd: int, data) -> None:
    view = memoryview(data)
    while view:
        n = os.write(fd, view)
        view = view[n:]


def _sync_folder(folder: Path) -> None:
    # Make the rename itself durable; not every system allows opening a folder.
    try:
        dfd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dfd)
    except OSError:
        pass
    finally:
        os.close(dfd)


def check_destination(path, *, option: str = "out") -> Path:
    """Check that a result can be written to ``path``, before anything is computed.

    The folder must exist and accept a new file (checked by creating and removing a
    temporary file there); the destination may be missing, a regular file or a symbolic
    link (which a write replaces), but not a directory, a device or a pipe.  Nothing at
    ``path`` is touched.

    Parameters
    ----------
    path : str or Path
        Destination file.
    option : str
        Name of the option that gave the file (``"out"``, ``"plot"``), the start of any
        error message.

    Returns
    -------
    Path
        ``path`` as a :class:`~pathlib.Path`.

    Raises
    ------
    OutputError
        When the file could not be written; the one-line message says why.
    """
    p = _as_path(path, option)
    _inspect(p, option)
    tmp = None
    try:
        fd, tmp = _temp_in(_folder(p), p.name)
        os.close(fd)
    except OSError as exc:
        raise _fail(option, p, _reason(exc)) from None
    finally:
        _remove(tmp)
    return p


class _AtomicFile:
    """What :func:`atomic_writer` yields: ``write(text or bytes)`` into the temporary file."""

    __slots__ = ("_fd", "_parts", "_size", "_encoding")

    def __init__(self, fd: int, encoding: str) -> None:
        self._fd = fd
        self._parts: list[bytes] = []
        self._size = 0
        self._encoding = encoding

    def write(self, data) -> int:
        """Append ``data`` (str, encoded as UTF-8, or bytes); returns its length."""
        b = data.encode(self._encoding) if isinstance(data, str) else bytes(data)
        if len(b) >= _BUFFER:
            self.flush()
            _write_all(self._fd, b)
        else:
            self._parts.append(b)
            self._size += len(b)
            if self._size >= _BUFFER:
                self.flush()
        return len(data)

    def writelines(self, chunks: Iterable) -> None:
        """Append every chunk of ``chunks``."""
        for c in chunks:
            self.write(c)

    def flush(self) -> None:
        """Hand what is gathered to the operating system."""
        if self._parts:
            data = b"".join(self._parts)
            self._parts.clear()
            self._size = 0
            _write_all(self._fd, data)


@contextlib.contextmanager
def atomic_writer(path, *, option: str = "out", encoding: str = "utf-8") -> Iterator[_AtomicFile]:
    """Context manager: a file-like object whose content replaces ``path`` at the end.

    Write text (encoded with ``encoding``) or bytes with its ``write``; when the ``with``
    block ends normally the data are flushed, ``fsync``-ed and moved over ``path``.  When the
    block raises, the temporary file is removed, ``path`` is left as it was, and the
    exception goes on (an :class:`OSError` as :class:`OutputError`).

    Parameters
    ----------
    path : str or Path
        Destination file.
    option : str
        Option name that starts every error message (``"out"``, ``"plot"``).
    encoding : str
        Encoding of text written.

    Raises
    ------
    OutputError
        The file could not be written (the one-line message says why).
    """
    p = _as_path(path, option)
    keep_mode = _inspect(p, option)
    mode = keep_mode if keep_mode is not None else 0o666 & ~_umask()
    tmp = None
    fd = -1
    try:
        fd, tmp = _temp_in(_folder(p), p.name)
        out = _AtomicFile(fd, encoding)
        yield out
        out.flush()
        os.fchmod(fd, mode)
        os.fsync(fd)
        os.close(fd)
        fd = -1
        os.replace(tmp, p)
        tmp = None
    except OSError as exc:
        raise _fail(option, p, _reason(exc)) from None
    finally:
        if fd >= 0:
            with contextlib.suppress(OSError):
                os.close(fd)
        _remove(tmp)
    _sync_folder(_folder(p))


def atomic_write_chunks(path, chunks: Iterable, *, option: str = "out") -> Path:
    """Write an iterable of text (UTF-8) or bytes blocks to ``path`` atomically.

    The blocks are written as they come, so the whole content is never in memory.

    Parameters
    ----------
    path : str or Path
        Destination file.
    chunks : iterable of str or bytes
        The content, block by block.
    option : str
        Option name that starts every error message.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    OutputError
        The file could not be written; the destination is as it was.
    """
    with atomic_writer(path, option=option) as fh:
        for chunk in chunks:
            fh.write(chunk)
    return Path(path)


def atomic_write_text(path, text: str, *, option: str = "out") -> Path:
    """Write ``text`` (UTF-8, newlines as given) to ``path`` atomically.

    See :func:`atomic_writer` for the rules; raises :class:`OutputError` whose message starts
    with ``option`` (the name of the option or parameter that named the file).
    """
    return atomic_write_chunks(path, (text,), option=option)


def atomic_write_bytes(path, data: bytes, *, option: str = "out") -> Path:
    """Write ``data`` to ``path`` atomically.

    See :func:`atomic_writer` for the rules; raises :class:`OutputError` whose message starts
    with ``option`` (the name of the option or parameter that named the file).
    """
    return atomic_write_chunks(path, (data,), option=option)
