"""Atomic file writing: a temporary name in the same folder, then a rename.

A crash at any moment leaves either the old complete file or the new complete
file under the final name, never a half-written one.
"""

from __future__ import annotations

import contextlib
import errno
import os
import stat
from collections.abc import Callable
from pathlib import Path
from typing import Any, BinaryIO


def _file_mode() -> int:
    """The mode an ordinary new file gets under the process umask (mkstemp uses 0600)."""
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


_MODE = _file_mode()


def _fresh_name(prefix: str, suffix: str) -> str:
    """A name no other writer picks: 16 random hex digits between prefix and suffix."""
    return f"{prefix}{os.urandom(8).hex()}{suffix}"


def temporary_file(folder: Path, prefix: str, suffix: str) -> tuple[int, str]:
    """A new file in ``folder`` (created exclusively, mode 0600, no link followed), open
    for writing, and its path: :func:`tempfile.mkstemp` without importing tempfile (and
    with it shutil, zlib, bz2, lzma and random) at every start."""
    flags = (os.O_RDWR | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
             | getattr(os, "O_CLOEXEC", 0) | getattr(os, "O_BINARY", 0))
    for _ in range(100):
        name = os.path.join(folder, _fresh_name(prefix, suffix))
        try:
            return os.open(name, flags, 0o600), name
        except FileExistsError:
            continue
    raise FileExistsError(errno.EEXIST, "no unused temporary name", str(folder))


def temporary_folder(folder: Path, prefix: str, suffix: str) -> Path:
    """A new, empty folder in ``folder`` (mode 0700) of a name no other writer picks:
    :func:`tempfile.mkdtemp` without importing tempfile."""
    for _ in range(100):
        path = folder / _fresh_name(prefix, suffix)
        try:
            path.mkdir(mode=0o700)
        except FileExistsError:
            continue
        return path
    raise FileExistsError(errno.EEXIST, "no unused temporary name", str(folder))


def write_bytes(path: Path, data: bytes, durable: bool = True) -> None:
    """Write ``data`` to ``path`` atomically (see :func:`write_atomic`)."""
    write_atomic(path, lambda fh: fh.write(data), durable)


def write_atomic(path: Path, write: Callable[[BinaryIO], object],
                 durable: bool = True) -> None:
    """Call ``write(fh)`` on a temporary file beside ``path``, fsync it, rename it.

    The rename alone makes the file safe against the process being killed; the fsync
    also makes it safe against the machine losing power.  ``durable=False`` skips the
    fsync where something else verifies the files later (the batch runner's manifest)."""
    if not os.path.isdir(path.parent):  # a stat: most writes go to a folder that exists
        path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = temporary_file(path.parent, f".{path.name}.", ".tmp")
    try:
        os.fchmod(fd, _MODE)
        with os.fdopen(fd, "wb") as fh:
            write(fh)
            fh.flush()
            if durable:
                os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def staged_name(path: Path) -> Path:
    """Where :func:`write_new` writes the file that is to be named ``path``: a hidden
    temporary name beside it (``.<name>.tmp``), never a final name."""
    return path.with_name(f".{path.name}.tmp")


def final_name(name: str) -> str:
    """The final name of a file written by :func:`write_new` (``.<name>.tmp`` ->
    ``<name>``); any other name as it is."""
    if name.startswith(".") and name.endswith(".tmp") and len(name) > 5:
        return name[1:-4]
    return name


def write_new(path: Path, write: Callable[[BinaryIO], object], durable: bool = True) -> None:
    """Call ``write(fh)`` on a new file at :func:`staged_name` of ``path`` (created
    exclusively, no link followed) and fsync it unless ``durable`` is False; a failure
    removes it.  For a staging folder whose files the caller renames into place (to
    :func:`final_name`) once all are written: one rename a file instead of a
    temporary name, a rename into the staging folder and a rename out of it, and still
    nothing half-written under a final name."""
    target = staged_name(path)
    flags = (os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_NOFOLLOW", 0)
             | getattr(os, "O_CLOEXEC", 0) | getattr(os, "O_BINARY", 0))
    fd = os.open(target, flags, 0o666)  # the umask applies, as for an ordinary new file
    try:
        with os.fdopen(fd, "wb") as fh:
            write(fh)
            fh.flush()
            if durable:
                os.fsync(fh.fileno())
    except BaseException:
        target.unlink(missing_ok=True)
        raise


def sync_file(path: Path) -> None:
    """Flush to disk (fsync) a file written earlier without it; nothing if it is gone."""
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0))
    except FileNotFoundError:
        return
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def real_folder(root: Path, folder: Path, create: bool = True) -> Path:
    """``folder`` (inside ``root``) made sure to hold no symbolic link below ``root``, so
    that nothing written or deleted there lands outside it; created when missing and
    ``create``.  ``root`` itself may be a link (the user named it)."""
    from envelope.errors import OutputError

    parts = folder.relative_to(root).parts
    if create:
        root.mkdir(parents=True, exist_ok=True)
    current = root
    for part in parts:
        current = current / part
        try:
            st = os.lstat(current)
        except FileNotFoundError:
            if not create:
                return folder
            with contextlib.suppress(FileExistsError):
                os.mkdir(current)
            st = os.lstat(current)
        if stat.S_ISLNK(st.st_mode):
            raise OutputError(f"{current}: is a symbolic link; results are never written "
                              "or deleted through a link inside the output folder (remove "
                              "the link or choose another output folder)")
        if not stat.S_ISDIR(st.st_mode):
            raise OutputError(f"{current}: is not a folder; cannot write results into it")
    return folder


def is_link(path: Path) -> bool:
    """True when ``path`` itself is a symbolic link (never follows it)."""
    try:
        return stat.S_ISLNK(os.lstat(path).st_mode)
    except OSError:
        return False


class UnreadableFile(Exception):
    """An input file that is not read: not a regular file, too large, or an OS error.
    ``str()`` is the reason, fit for a message after the file name."""


#: Names of the file types that are never read as input.
_KINDS = ((stat.S_ISFIFO, "a FIFO (named pipe)"), (stat.S_ISCHR, "a character device"),
          (stat.S_ISBLK, "a block device"), (stat.S_ISSOCK, "a socket"),
          (stat.S_ISDIR, "a folder"))


def file_kind(mode: int) -> str:
    """What a non-regular file is, for messages."""
    for test, name in _KINDS:
        if test(mode):
            return name
    return "not a regular file"


def read_regular(path: str | os.PathLike[str], limit: int) -> bytes:
    """The bytes of the regular file at ``path``, at most ``limit`` of them.

    Opened without blocking (a FIFO or a device never stalls the read), checked to be a
    regular file before anything is read, and read no further than ``limit + 1`` bytes,
    so neither ``/dev/zero`` nor a huge file costs memory.  Raises
    :class:`UnreadableFile` with the reason."""
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0)
                     | getattr(os, "O_NOCTTY", 0))
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            raise UnreadableFile("a symbolic link loop") from None
        if exc.errno == errno.ENOENT and os.path.islink(path):
            raise UnreadableFile("a dangling symbolic link (its target does not exist)"
                                 ) from None
        raise UnreadableFile(f"cannot read the file ({exc.strerror or exc})") from None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):
            raise UnreadableFile(f"not a regular file: {file_kind(st.st_mode)}")
        if st.st_size > limit:
            raise UnreadableFile(f"the file is {st.st_size} bytes, more than the limit of "
                                 f"{limit} bytes")
        chunks = []
        size = 0
        while size <= limit:
            chunk = os.read(fd, min(1 << 20, limit + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
        if size > limit:
            raise UnreadableFile(f"the file is more than the limit of {limit} bytes")
        return b"".join(chunks)
    except OSError as exc:
        raise UnreadableFile(f"cannot read the file ({exc.strerror or exc})") from None
    finally:
        os.close(fd)


_SHA256: Callable[[bytes], Any] | None = None


def sha256_hex(data: bytes) -> str:
    """The SHA-256 of ``data``, in hex (a case file's ``input_sha256``).

    CPython's own SHA-256 module where it has one (``_sha2``; ``_sha256`` before 3.12):
    the same digest as :func:`hashlib.sha256`, without loading OpenSSL as ``hashlib``
    does (about 2 ms of every run's start-up)."""
    global _SHA256
    if _SHA256 is None:
        import importlib

        for name in ("_sha2", "_sha256"):
            try:
                _SHA256 = importlib.import_module(name).sha256
                break
            except (ImportError, AttributeError):
                continue
        else:
            import hashlib

            _SHA256 = hashlib.sha256
    return str(_SHA256(data).hexdigest())
