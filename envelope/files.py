"""Atomic file writing: a temporary name in the same folder, then a rename.

A crash at any moment leaves either the old complete file or the new complete
file under the final name, never a half-written one.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Callable
from pathlib import Path
from typing import BinaryIO


def _file_mode() -> int:
    """The mode an ordinary new file gets under the process umask (mkstemp uses 0600)."""
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


_MODE = _file_mode()


def write_atomic(path: Path, write: Callable[[BinaryIO], None], durable: bool = True) -> None:
    """Call ``write(fh)`` on a temporary file beside ``path``, fsync it, rename it.

    The rename alone makes the file safe against the process being killed; the fsync
    also makes it safe against the machine losing power.  ``durable=False`` skips the
    fsync where something else verifies the files later (the batch runner's manifest)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
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
