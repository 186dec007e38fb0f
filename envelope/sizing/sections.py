"""The user's own table of steel sections (CSV), read and checked once.

Header ``name,d,bf,tf,tw,Ix,Zx,Sx,Iy,ry,J,Cw,weight`` (optional ``rts``, ``ho``, ``k``)
for every check, or the strength-only ``name,Zx,Ix,Aw,weight`` (see
:mod:`envelope.sizing.shapes`); columns in any order, each once; one section per row in
the case's section units (mm, mm^2, mm^3, mm^4, mm^6 / in, ..., in^6), weight in any
consistent unit (kg/m, lb/ft: only the order matters).  Blank lines and lines starting
with ``#`` are skipped.
The path in ``[design] sections`` is relative to the case file.  Bad content raises
:class:`envelope.errors.CaseError` naming the CSV file, the line and column, and the
problem.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from envelope.design import SteelDesign
from envelope.errors import CaseError
from envelope.model import Beam
from envelope.sizing.shapes import (
    FULL,
    OPTIONAL,
    STRENGTH_ONLY,
    Shapes,
    check_geometry,
    from_columns,
)

HEADERS = "name,d,bf,tf,tw,Ix,Zx,Sx,Iy,ry,J,Cw,weight (or name,Zx,Ix,Aw,weight)"


def resolve(beam: Beam, path: str) -> Path:
    """The CSV path relative to the case file's folder (absolute paths are kept)."""
    return Path(beam.source).parent / path


def read_sections(beam: Beam) -> Shapes:
    """Read the CSV named by ``beam.design.sections``."""
    assert isinstance(beam.design, SteelDesign) and beam.design.sections is not None
    path = resolve(beam, beam.design.sections)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise CaseError(beam.source, "design.sections",
                        f"cannot read the sections table {str(path)!r} "
                        f"({exc.strerror or type(exc).__name__})") from None
    except UnicodeDecodeError:
        raise CaseError(beam.source, "design.sections",
                        f"the sections table {str(path)!r} is not UTF-8 text") from None
    return parse_sections(text, str(path))


def parse_sections(text: str, source: str) -> Shapes:
    """Parse CSV text (``source`` names it in messages)."""
    rows = [(i, r) for i, r in enumerate(csv.reader(text.splitlines()), start=1)
            if any(cell.strip() for cell in r) and not r[0].lstrip().startswith("#")]
    if not rows:
        raise CaseError(source, "", f"the sections table is empty; give a header row "
                                    f"{HEADERS} and one row per section")
    line, header = rows[0]
    header = [h.strip() for h in header]
    known = (*FULL, *OPTIONAL, "Aw")
    for h in header:
        if h not in known:
            raise CaseError(source, f"line {line}",
                            f"unknown column {h!r}; the header is {HEADERS}")
        if header.count(h) > 1:
            raise CaseError(source, f"line {line}", f"column {h!r} appears twice")
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
    numeric = [c for c in header if c != "name"]
    names: list[str] = []
    values: dict[str, list[float]] = {c: [] for c in numeric}
    for line, row in rows[1:]:
        if len(row) != len(header):
            raise CaseError(source, f"line {line}",
                            f"expected {len(header)} values, got {len(row)}")
        name = row[col["name"]].strip()
        if not name:
            raise CaseError(source, f"line {line}.name", "the name is empty")
        if name in names:
            raise CaseError(source, f"line {line}.name", f"section {name!r} appears twice")
        names.append(name)
        for c in numeric:
            raw = row[col[c]].strip()
            try:
                value = float(raw)
            except ValueError:
                raise CaseError(source, f"line {line}.{c}",
                                f"not a number: {raw!r}") from None
            if not math.isfinite(value) or value <= 0:
                raise CaseError(source, f"line {line}.{c}",
                                f"must be a finite number greater than zero, got {raw!r}")
            values[c].append(value)
    shapes = from_columns(names, {c: np.array(v) for c, v in values.items()})
    for i, c, problem in check_geometry(shapes):
        raise CaseError(source, f"line {rows[i + 1][0]}.{c}", problem)
    return shapes
