"""The engine's fingerprint: a hash of the package's own source files, kept between runs.

Every result file carries it (``envelope.engine_version``), so results of a changed
engine never pass for current ones when a batch resumes.  Hashing the ~110 source files
costs about 10 ms, a noticeable part of a small run, so the hash is kept in a small file
beside the package's bytecode (``__pycache__/``, or under ``sys.pycache_prefix``) with
the key it was computed for: every source file's path, size, inode, modification and
status-change times (ns).  Any change to a source file (its content written, a file
added, removed or renamed, even with its modification time put back) changes the key
and the hash is computed afresh.  A cache file that cannot be read or written is
ignored: the hash is then computed on every run, as before.
"""

from __future__ import annotations

import contextlib
import os
import sys
from pathlib import Path

#: The package folder whose sources are hashed.
PACKAGE = Path(__file__).resolve().parent

#: The name of the cache file in the package's bytecode folder.
CACHE_NAME = "envelope-fingerprint.txt"

#: The suffixes hashed, in this order (every ``.py`` file, then every ``.toml`` file).
_SUFFIXES = (".py", ".toml")


def sources(root: Path) -> list[tuple[str, str, os.stat_result]]:
    """The hashed files under ``root``: (path relative to ``root`` in posix form, full
    path, status), every ``.py`` file sorted by path, then every ``.toml`` file
    (``__pycache__`` folders skipped: they hold bytecode and this module's cache)."""
    found: dict[str, list[tuple[tuple[str, ...], str, os.stat_result]]] = {
        s: [] for s in _SUFFIXES}
    folders: list[tuple[tuple[str, ...], str]] = [((), str(root))]
    while folders:
        parts, folder = folders.pop()
        with os.scandir(folder) as entries:
            for entry in entries:
                if entry.is_dir(follow_symlinks=False):
                    if entry.name != "__pycache__":
                        folders.append(((*parts, entry.name), entry.path))
                    continue
                name = entry.name
                suffix = name[name.rfind("."):] if "." in name else ""
                if suffix in found:
                    found[suffix].append(((*parts, name), entry.path, entry.stat()))
    out: list[tuple[str, str, os.stat_result]] = []
    for suffix in _SUFFIXES:
        out += [("/".join(parts), full, st) for parts, full, st in sorted(found[suffix])]
    return out


def digest(files: list[tuple[str, str, os.stat_result]]) -> str:
    """The first 12 hex digits of the SHA-256 of every file's relative path and bytes,
    in order."""
    import hashlib

    h = hashlib.sha256()
    for rel, full, _ in files:
        h.update(rel.encode())
        with open(full, "rb") as f:
            h.update(f.read())
    return h.hexdigest()[:12]


def _key(files: list[tuple[str, str, os.stat_result]]) -> str:
    lines = []
    for rel, _, st in files:
        lines.append(f"{rel}\t{st.st_size}\t{st.st_ino}\t{st.st_mtime_ns}\t{st.st_ctime_ns}")
    return "\n".join(lines)


def cache_path(root: Path = PACKAGE) -> Path:
    """Where the fingerprint of ``root`` is kept: beside the bytecode of its
    ``__init__.py`` (``sys.pycache_prefix`` honoured)."""
    from importlib.util import cache_from_source

    return Path(cache_from_source(str(root / "__init__.py"))).parent / CACHE_NAME


def fingerprint(root: Path = PACKAGE, cache: Path | None = None) -> str:
    """The fingerprint of the sources under ``root`` (12 hex digits), from ``cache``
    (default :func:`cache_path`) when its key matches the files as they are now,
    otherwise computed and written there (unless bytecode writing is off)."""
    files = sources(root)
    key = _key(files)
    if cache is None:
        cache = cache_path(root)
    try:
        stored = cache.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError):
        stored = ""
    value, _, stored_key = stored.partition("\n")
    if stored_key == key and len(value) == 12:
        return value
    value = digest(files)
    if not sys.dont_write_bytecode:
        _store(cache, f"{value}\n{key}")
    return value


def _store(cache: Path, text: str) -> None:
    """Write the cache file whole (a temporary name, then a rename), or not at all."""
    tmp = cache.with_name(f"{cache.name}.{os.getpid()}.tmp")
    try:
        cache.parent.mkdir(parents=True, exist_ok=True)
        tmp.write_text(text, encoding="utf-8")
        os.replace(tmp, cache)
    except OSError:
        with contextlib.suppress(OSError):
            tmp.unlink(missing_ok=True)
