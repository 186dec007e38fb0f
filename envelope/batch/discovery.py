"""Discovery of the case files of a batch, their ids and hashes, and the duplicate-id check."""

from __future__ import annotations

import glob
import hashlib
import os
import tomllib
from collections.abc import Sequence
from pathlib import Path

from envelope.batch.model import BatchError, DuplicateIdError, Entry


def _visible(path: Path, base: Path) -> bool:
    """False for files inside hidden folders below ``base`` (``.git``, ``.cache``...)."""
    return not any(part.startswith(".") for part in path.relative_to(base).parts[:-1])


def is_case_document(path: Path) -> bool:
    """False for a TOML file that holds none of a case file's top-level keys (a
    ``pyproject.toml`` beside the cases); a file that cannot be read or parsed counts
    as a case, so that its problem is reported rather than skipped."""
    from envelope.casefile import TOP_KEYS

    try:
        data = tomllib.loads(path.read_bytes().decode("utf-8-sig"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError, RecursionError):
        return True
    return not data or any(key in data for key in TOP_KEYS)


def discover(paths: Sequence[str], skipped: list[tuple[str, str]] | None = None) -> list[str]:
    """Case files named by ``paths``: files as given, folders searched recursively for
    ``*.toml``, glob patterns expanded (``**`` allowed).  Each file once, in order.  A
    TOML file found in a folder that is not a case file is left out and, when
    ``skipped`` is given, listed there with the reason."""
    found: list[str] = []
    seen: set[str] = set()

    def add(name: str) -> None:
        key = os.path.realpath(name)
        if key not in seen:
            seen.add(key)
            found.append(name)

    def add_found(p: Path) -> None:
        """A file found by a folder search or a pattern, not named by the user."""
        if is_case_document(p):
            add(str(p))
        elif skipped is not None:
            skipped.append((str(p), "not a case file: none of its keys is a case key"))

    def add_folder(folder: str) -> None:
        base = Path(folder)
        for p in sorted(base.rglob("*.toml"), key=lambda p: str(p)):
            if p.is_file() and _visible(p, base):
                add_found(p)

    for name in paths:
        if os.path.isdir(name):
            add_folder(name)
        elif os.path.isfile(name):
            add(name)
        elif glob.has_magic(name):
            matches = sorted(glob.glob(name, recursive=True))
            if not matches:
                raise BatchError(f"{name}: no file matches this pattern")
            for match in matches:
                if os.path.isdir(match):
                    add_folder(match)
                elif os.path.isfile(match):
                    add_found(Path(match))
        else:
            raise BatchError(f"{name}: no such file or folder")
    if not found:
        raise BatchError(f"no case files (*.toml) found in {', '.join(paths)}")
    return found


def identify(index: int, path: str, absolute: bool = False) -> Entry:
    """Hash the file and read its id the way the case reader does (the ``id`` key, else
    the file stem), without checking the rest: the worker reports any problem."""
    from envelope.casefile import ID_PATTERN

    target = os.path.abspath(path) if absolute else path
    try:
        raw = Path(path).read_bytes()
    except OSError:
        return Entry(index, path, target, None, None)
    sha256 = hashlib.sha256(raw).hexdigest()
    try:
        data = tomllib.loads(raw.decode("utf-8-sig"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError):
        return Entry(index, path, target, None, sha256)
    beam_id = data.get("id", Path(path).stem) if data else None
    if not isinstance(beam_id, str) or not ID_PATTERN.fullmatch(beam_id) \
            or beam_id in (".", ".."):
        beam_id = None
    return Entry(index, path, target, beam_id, sha256)


def check_duplicates(entries: Sequence[Entry]) -> None:
    """Refuse two files with one id (they would write the same ``OUT/<id>/``)."""
    first: dict[str, Entry] = {}
    lines = []
    for entry in entries:
        if entry.beam_id is None:
            continue
        other = first.setdefault(entry.beam_id, entry)
        if other is not entry:
            lines.append(f"duplicate beam id {entry.beam_id!r}: {other.path} and {entry.path} "
                         "(give each file its own id)")
    if lines:
        raise DuplicateIdError(lines)
