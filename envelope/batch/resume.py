"""Completeness of a beam folder (resume): manifest, sizes and Parquet stamps checked."""

from __future__ import annotations

import json
import os
import shutil
import stat
from pathlib import Path
from typing import Any

from envelope import engine_version
from envelope.batch.model import MANIFEST, Entry
from envelope.files import is_link


def _stamped(path: Path, sha256: str) -> bool:
    """Whether the Parquet file at ``path`` carries this input hash and engine version."""
    import pyarrow.parquet as pq

    try:
        meta = pq.read_schema(path).metadata or {}
    except Exception:  # missing, truncated or not Parquet at all
        return False
    return (meta.get(b"envelope:input_sha256") == sha256.encode()
            and meta.get(b"envelope:version") == engine_version().encode())


def completed(out: Path, entry: Entry, plots: bool) -> dict[str, Any] | None:
    """The manifest of ``entry``'s beam folder when the beam is done for this input and
    engine version (every listed file present, of the listed size, Parquet files stamped
    with the same hash and version, and envelope.png when ``plots``); else None."""
    if entry.beam_id is None or entry.sha256 is None:
        return None
    folder = out / entry.beam_id
    if is_link(folder):  # refused by the worker: never counts as done
        return None
    try:
        manifest = json.loads((folder / MANIFEST).read_bytes())
    except (OSError, ValueError):
        return None
    if (not isinstance(manifest, dict) or manifest.get("input_sha256") != entry.sha256
            or manifest.get("version") != engine_version()
            or manifest.get("beam") != entry.beam_id):
        return None
    files = manifest.get("files")
    if not isinstance(files, dict) or "envelope.parquet" not in files \
            or (plots and "envelope.png" not in files):
        return None
    for name, size in files.items():
        path = folder / str(name)
        try:
            if path.stat().st_size != size:
                return None
        except OSError:
            return None
        if path.suffix == ".parquet" and not _stamped(path, entry.sha256):
            return None
    return manifest


def _remove_temporaries(folder: Path) -> None:
    """Remove the temporary files a killed atomic write leaves (``.<name>.*.tmp``) and
    the staging folders of a killed write of a beam (``.staging-*.tmp``).  Nothing is
    done in a folder that is a symbolic link, and no link is followed."""
    if is_link(folder):
        return
    try:  # one listing, no pattern compiled (the batch looks in every beam's folder)
        with os.scandir(folder) as entries:
            names = [e.name for e in entries if e.name.startswith(".")
                     and e.name.endswith(".tmp") and len(e.name) > 4]
    except (FileNotFoundError, NotADirectoryError):
        return
    for name in names:
        tmp = folder / name
        try:
            mode = os.lstat(tmp).st_mode
        except FileNotFoundError:
            continue
        if stat.S_ISDIR(mode):
            shutil.rmtree(tmp, ignore_errors=True)
        else:
            tmp.unlink(missing_ok=True)
