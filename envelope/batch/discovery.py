"""Discovery of the case files of a batch, their ids and hashes, and the duplicate-id check."""

from __future__ import annotations

import errno
import glob
import hashlib
import os
import stat
import tomllib
from collections.abc import Sequence
from pathlib import Path

from envelope import config
from envelope.batch.model import BatchError, DuplicateIdError, Entry
from envelope.files import UnreadableFile, file_kind, read_regular


def _visible(path: Path, base: Path) -> bool:
    """False for files inside hidden folders below ``base`` (``.git``, ``.cache``...)."""
    return not any(part.startswith(".") for part in path.relative_to(base).parts[:-1])


def unreadable(path: str) -> str | None:
    """Why the case file at ``path`` cannot be read as one (a FIFO, a device, a socket,
    a symbolic link loop, a dangling link), or None for a regular file (or a link to
    one).  Only file metadata is looked at: nothing is opened."""
    try:
        st = os.stat(path)
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            return "a symbolic link loop"
        if os.path.islink(path):
            return "a dangling symbolic link (its target does not exist)"
        return f"cannot read the file ({exc.strerror or exc})"
    if stat.S_ISREG(st.st_mode):
        return None
    return f"not a regular file: {file_kind(st.st_mode)}"


#: Case files parsed while searching folders: path -> (SHA-256 of the bytes read, the
#: document's ``id`` or None when it has none or is empty, the document pickled for the
#: worker), so that :func:`identify` takes them instead of parsing the same bytes again
#: (the pickle, not the document, is kept: a tenth of the memory of a large batch's
#: documents).
Parsed = dict[str, tuple[str, object, bytes | None]]


def is_case_document(path: Path, parsed: Parsed | None = None) -> bool:
    """False for a TOML file that holds none of a case file's top-level keys (a
    ``pyproject.toml`` beside the cases); a file that cannot be read or parsed (a FIFO,
    a file over the size limit, nesting too deep...) counts as a case, so that its
    problem is reported rather than skipped.  Never blocks on a FIFO or a device.  A
    case file's bytes and document are kept in ``parsed`` when given."""
    from envelope.casefile import TOP_KEYS

    try:
        raw = read_regular(path, config.CASE_FILE_MAX_BYTES)
        data = tomllib.loads(raw.decode("utf-8-sig"))
    except Exception:  # unreadable, not UTF-8, not TOML, nested too deeply...
        return True
    is_case = not data or any(key in data for key in TOP_KEYS)
    if is_case and parsed is not None:
        parsed[str(path)] = (hashlib.sha256(raw).hexdigest(), _given_id(data, path),
                             _packed(data))
    return is_case


def discover(paths: Sequence[str], skipped: list[tuple[str, str]] | None = None,
             parsed: Parsed | None = None) -> list[str]:
    """Case files named by ``paths``: files as given, folders searched recursively for
    ``*.toml`` (links to folders are not followed, so a link loop cannot trap the
    search), glob patterns expanded (``**`` allowed).  Each file once, in order.  A
    TOML file found in a folder that is not a case file is left out and, when
    ``skipped`` is given, listed there with the reason.  A path that is not a regular
    file (a FIFO, a device, a link loop or a dangling link) is listed: the batch
    reports it as that file's failure (see :func:`unreadable`).  The files found by a
    search were parsed to tell case files apart: with ``parsed``, their bytes and
    documents are kept there (for :func:`identify`)."""
    found: list[str] = []
    seen: set[str] = set()

    def add(name: str) -> None:
        try:
            key = os.path.realpath(name)
        except (OSError, RuntimeError):  # a link loop (RuntimeError before Python 3.13)
            key = os.path.abspath(name)
        if key not in seen:
            seen.add(key)
            found.append(name)

    def add_found(p: Path) -> None:
        """A file found by a folder search or a pattern, not named by the user."""
        if unreadable(str(p)) is not None or is_case_document(p, parsed):
            add(str(p))
        elif skipped is not None:
            skipped.append((str(p), "not a case file: none of its keys is a case key"))

    def add_folder(folder: str) -> None:
        base = Path(folder)
        names: list[Path] = []
        for root, dirs, files in os.walk(folder, followlinks=False):
            dirs[:] = [d for d in dirs if not d.startswith(".")]
            names.extend(Path(root) / f for f in files if f.endswith(".toml"))
            # links to folders named *.toml are listed by os.walk among the folders
            names.extend(Path(root) / d for d in dirs
                         if d.endswith(".toml") and os.path.islink(Path(root) / d))
        for p in sorted(names, key=str):
            if _visible(p, base) and not os.path.isdir(p):
                add_found(p)

    for name in paths:
        if os.path.isdir(name):
            add_folder(name)
        elif os.path.lexists(name):
            add(name)
        elif glob.has_magic(name):
            matches = sorted(glob.glob(name, recursive=True))
            if not matches:
                raise BatchError(f"{name}: no file matches this pattern")
            for match in matches:
                if os.path.isdir(match):
                    add_folder(match)
                else:
                    add_found(Path(match))
        else:
            raise BatchError(f"{name}: no such file or folder")
    if not found:
        raise BatchError(f"no case files (*.toml) found in {', '.join(paths)}")
    return found


def identify(index: int, path: str, absolute: bool = False,
             parsed: Parsed | None = None) -> Entry:
    """Hash the file and read its id the way the case reader does (the ``id`` key, else
    the file stem), without checking the rest: the worker reports any problem.  Any
    failure of this quick read (a file that is not regular, too large, not TOML, nested
    too deeply) leaves the id unknown; it never stops the batch.  The document of
    ``parsed`` (:func:`discover`) is taken when the file still holds the same bytes."""
    from envelope.casefile import ID_PATTERN

    target = os.path.abspath(path) if absolute else path
    try:
        raw = read_regular(path, config.CASE_FILE_MAX_BYTES)
    except UnreadableFile:
        return Entry(index, path, target, None, None)
    sha256 = hashlib.sha256(raw).hexdigest()
    known = None if parsed is None else parsed.get(path)
    if known is not None and known[0] == sha256:  # the same bytes as when found
        beam_id, packed = known[1], known[2]
    else:
        try:
            data = tomllib.loads(raw.decode("utf-8-sig"))
        except Exception:  # not UTF-8, not TOML, nested too deeply for the parser...
            return Entry(index, path, target, None, sha256)
        beam_id, packed = _given_id(data, path), _packed(data)
    if not isinstance(beam_id, str) or not ID_PATTERN.fullmatch(beam_id) \
            or beam_id in (".", ".."):
        beam_id = None
    return Entry(index, path, target, beam_id, sha256, packed)


def _given_id(data: dict[str, object], path: str | Path) -> object:
    """The id a document gives its beam (the ``id`` key, else the file stem; not yet
    checked), or None for an empty document."""
    return data.get("id", Path(path).stem) if data else None


def _packed(data: dict[str, object]) -> bytes | None:
    """The parsed document, pickled for the worker (:func:`envelope.casefile.load_case`
    takes it instead of parsing the file again, and checks its nesting as it would the
    file's); None when it cannot be pickled (nested too deeply for the pickler)."""
    import pickle

    try:
        return pickle.dumps(data, protocol=pickle.HIGHEST_PROTOCOL)
    except Exception:  # RecursionError and the like: never stop the batch
        return None


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
