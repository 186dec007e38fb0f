"""The user's own table of steel sections (CSV), read and checked once.

Header ``name,d,bf,tf,tw,Ix,Zx,Sx,Iy,ry,J,Cw,weight`` (optional ``rts``, ``ho``, ``k``,
``fabrication``: ``rolled`` or ``welded`` per row, welded where the column is absent)
for every check, or the strength-only ``name,Zx,Ix,Aw,weight`` (see
:mod:`envelope.sizing.shapes`); columns in any order, each once; one section per row in
the case's section units (mm, mm^2, mm^3, mm^4, mm^6 / in, ..., in^6), weight in any
consistent unit (kg/m, lb/ft: only the order matters).  Blank lines and lines starting
with ``#`` are skipped.
The path in ``[design] sections`` is relative to the case file and must stay inside its
folder (``--sections`` names a table anywhere).  Bad content raises
:class:`envelope.errors.CaseError` naming the CSV file, the line and column, and the
problem; a message shows at most the offending field, cut to ``config.ECHO_CHARS``.
"""

from __future__ import annotations

import csv
import math
import os
from pathlib import Path

import numpy as np

from envelope import config
from envelope.casefile.reader import MAX_MAGNITUDE, MIN_MAGNITUDE
from envelope.design import SteelDesign
from envelope.errors import CaseError
from envelope.files import UnreadableFile, read_regular
from envelope.model import Beam
from envelope.sizing.shapes import (
    FABRICATION,
    FABRICATIONS,
    FULL,
    OPTIONAL,
    STRENGTH_ONLY,
    Shapes,
    check_geometry,
    from_columns,
)

HEADERS = ("name,d,bf,tf,tw,Ix,Zx,Sx,Iy,ry,J,Cw,weight (or name,Zx,Ix,Aw,weight); optional "
           "rts,ho,k,Aw,fabrication")


def resolve(beam: Beam, path: str) -> Path:
    """The CSV path relative to the case file's folder (absolute paths are kept)."""
    return Path(beam.source).parent / path


#: Sections tables named on the command line (``--sections``), resolved: these may be
#: read from anywhere, the user having named them; a case file's own path may not.
_GIVEN: set[str] = set()


def given(beam: Beam, path: str) -> Beam:
    """``beam`` with the sections table named on the command line (``--sections``) in
    place of its ``[design] sections``; a table given so may be anywhere."""
    from dataclasses import replace

    if not isinstance(beam.design, SteelDesign) or beam.design.sections is None:
        raise CaseError(beam.source, "design.sections",
                        "--sections names a sections table, and this case's [design] "
                        "names none (give sections = \"...\" in [design])")
    absolute = os.path.abspath(path)
    _GIVEN.add(os.path.realpath(absolute))
    return replace(beam, design=replace(beam.design, sections=absolute))


def shown(text: str, limit: int = config.ECHO_CHARS) -> str:
    """A field of the file for a message: quoted, cut to ``limit`` characters and marked
    as cut, so that no message echoes more of a file than the offending field's start."""
    if len(text) > limit:
        return repr(text[:limit]) + f" (cut; {len(text)} characters)"
    return repr(text)


def inside(path: Path, folder: Path) -> bool:
    """Is ``path``, every link resolved, inside ``folder`` (also resolved)?"""
    try:
        real = Path(os.path.realpath(path))
        base = Path(os.path.realpath(folder))
    except (OSError, RuntimeError):  # a link loop
        return False
    return real == base or base in real.parents


def read_sections(beam: Beam) -> Shapes:
    """Read the CSV named by ``beam.design.sections``.

    The table must be a regular file inside the case file's folder (its subfolders
    included), unless it was given explicitly on the command line
    (:func:`given`): a case file cannot make the engine read ``/etc/passwd`` or
    ``/proc/self/environ``.  At most ``config.SECTIONS_MAX_BYTES`` are read, and a FIFO
    or a device is refused without waiting on it."""
    assert isinstance(beam.design, SteelDesign) and beam.design.sections is not None
    name = beam.design.sections
    path = resolve(beam, name)
    if os.path.realpath(path) not in _GIVEN and not inside(path, Path(beam.source).parent):
        raise CaseError(beam.source, "design.sections",
                        f"the sections table {shown(name)} is outside the case file's "
                        "folder; put it beside the case file (or in a folder below it), "
                        "or name it with --sections")
    try:
        raw = read_regular(path, config.SECTIONS_MAX_BYTES)
    except UnreadableFile as exc:
        raise CaseError(beam.source, "design.sections",
                        f"cannot read the sections table {shown(str(path), 200)}: {exc}"
                        ) from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise CaseError(beam.source, "design.sections",
                        f"the sections table {shown(str(path), 200)} is not UTF-8 text"
                        ) from None
    return parse_sections(text, str(path))


def _number(raw: str, source: str, key: str) -> float:
    """A table value: a finite number greater than zero, under the magnitude rule of
    every number of a case file (MIN_MAGNITUDE to MAX_MAGNITUDE in the table's units)."""
    try:
        value = float(raw)
    except ValueError:
        raise CaseError(source, key, f"not a number: {shown(raw)}") from None
    if not math.isfinite(value) or value <= 0:
        raise CaseError(source, key,
                        f"must be a finite number greater than zero, got {shown(raw)}")
    if not MIN_MAGNITUDE <= value <= MAX_MAGNITUDE:
        raise CaseError(source, key, f"{value:.3g} is outside the range sizing can carry "
                                     f"({MIN_MAGNITUDE:g} to {MAX_MAGNITUDE:g}); check the "
                                     "value and its unit")
    return value


def _fabrication(raw: str, source: str, line: int) -> str:
    """A ``fabrication`` cell: ``rolled`` or ``welded`` (surrounding spaces ignored)."""
    value = raw.strip()
    if value not in FABRICATIONS:
        raise CaseError(source, f"line {line}.{FABRICATION}",
                        f"expected \"rolled\" or \"welded\", got {shown(raw)}")
    return value


def _rows(text: str, source: str) -> list[tuple[int, list[str]]]:
    """The non-blank, non-comment rows of the CSV text with their line numbers; a row
    that is not CSV (an unclosed quote, a field over the csv module's size limit) is
    refused naming its line, with none of its content."""
    rows = []
    reader = csv.reader(text.splitlines())
    while True:
        try:
            row = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            raise CaseError(source, f"line {reader.line_num}",
                            f"not a CSV row ({str(exc)[:80]})") from None
        if any(cell.strip() for cell in row) and not row[0].lstrip().startswith("#"):
            rows.append((reader.line_num, row))
    return rows


def parse_sections(text: str, source: str) -> Shapes:
    """Parse CSV text (``source`` names it in messages)."""
    rows = _rows(text, source)
    if not rows:
        raise CaseError(source, "", f"the sections table is empty; give a header row "
                                    f"{HEADERS} and one row per section")
    line, header = rows[0]
    header = [h.strip() for h in header]
    known = (*FULL, *OPTIONAL, "Aw", FABRICATION)
    for h in header:
        if h not in known:
            raise CaseError(source, f"line {line}",
                            f"unknown column {shown(h)}; the header is {HEADERS}")
        if header.count(h) > 1:
            raise CaseError(source, f"line {line}", f"column {shown(h)} appears twice")
    full_only = set(FULL) - set(STRENGTH_ONLY)
    wanted = FULL if full_only & set(header) or "Aw" not in header else STRENGTH_ONLY
    missing = [c for c in wanted if c not in header]
    if missing:
        raise CaseError(source, f"line {line}",
                        f"missing column{'s' if len(missing) > 1 else ''} "
                        f"{', '.join(missing)}; the header is {HEADERS}")
    if len(rows) == 1:
        raise CaseError(source, "", "the sections table has a header but no sections")
    col = {h: k for k, h in enumerate(header)}
    numeric = [c for c in header if c not in ("name", FABRICATION)]
    names: list[str] = []
    made: list[str] = []
    values: dict[str, list[float]] = {c: [] for c in numeric}
    for line, row in rows[1:]:
        if len(row) != len(header):
            raise CaseError(source, f"line {line}",
                            f"expected {len(header)} values, got {len(row)}")
        name = row[col["name"]].strip()
        if not name:
            raise CaseError(source, f"line {line}.name", "the name is empty")
        if name in names:
            raise CaseError(source, f"line {line}.name", f"section {shown(name)} appears twice")
        names.append(name)
        for c in numeric:
            values[c].append(_number(row[col[c]].strip(), source, f"line {line}.{c}"))
        made.append(_fabrication(row[col[FABRICATION]], source, line)
                    if FABRICATION in col else "welded")
    shapes = from_columns(names, {c: np.array(v) for c, v in values.items()}, made)
    for i, c, problem in check_geometry(shapes):
        raise CaseError(source, f"line {rows[i + 1][0]}.{c}", problem)
    return shapes
