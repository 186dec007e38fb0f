"""Beam schedules: one spreadsheet row per beam (CSV, or every sheet of an .xlsx whose
first row has an ``id`` heading), read into case documents and checked by the case
reader, each bad cell named by file, sheet, row and column.

``envelope batch schedule.xlsx`` writes each good row as a case file under
``OUT/_all/schedule/<id>.toml`` (so a rerun resumes, and the report echoes it) and runs
those; each bad row is that beam's failure in ``OUT/_all/failures.csv``.

Columns (headings may carry the unit of their plain numbers in brackets, ``spans [m]``;
without one, plain numbers are in the customary unit of the row's system):

===================  ======================================================================
id, title, units     as in a case file; units SI or US (required)
spans                span lengths, separated by spaces, commas or semicolons (m / ft)
supports             one type for every joint, or one per joint (default pinned)
support_width        one width for every support (m / ft)
E, I, A, unit_weight the section (MPa, mm^4, mm^2, kN/m^3 / ksi, in^4, in^2, kip/ft^3)
self_weight          yes or no (default: yes when A and unit_weight are given)
tributary_width      the width of floor each beam carries (m / ft)
dead_area, superimposed_dead_area, live_area, roof_live_area, snow_area
                     loads per area on every span, times the tributary width
                     (kN/m^2 / psf: pounds per square foot, the trade's unit)
dead_line, live_line line loads on every span (kN/m / kip/ft), such as a wall
live_category        EN 1990 category of the live case (A..H)
patterning           none | code | exhaustive (default code)
strength, service    the combination sets (default asce7-lrfd, characteristic)
material, code, b, h, cover_to_bar_centre, flange_width, flange_depth, fc, fy,
stirrup_fy, Fy, sections, section_name, Zx, Ix, Aw, deflection_live, deflection_total
                     the [design] keys (section units mm, MPa / in, ksi)
===================  ======================================================================
"""

from __future__ import annotations

import csv
import math
import os
import re
from collections.abc import Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from envelope.errors import CaseError, EnvelopeError

SUFFIXES = (".csv", ".xlsx", ".xlsm", ".ods")
#: Area-load columns -> (case name, kind).
AREA_LOADS = {"dead_area": ("D", "dead"), "superimposed_dead_area": ("SDL", "dead"),
              "live_area": ("L", "live"), "roof_live_area": ("Lr", "roof_live"),
              "snow_area": ("S", "snow")}
LINE_LOADS = {"dead_line": ("D", "dead"), "live_line": ("L", "live")}
SECTION = ("E", "I", "A", "unit_weight")
DESIGN_NUMBERS = ("b", "h", "cover_to_bar_centre", "flange_width", "flange_depth", "fc",
                  "fy", "stirrup_fy", "Fy")
DESIGN_TEXT = ("material", "code", "sections")
COLUMNS = ("id", "title", "units", "spans", "supports", "support_width", *SECTION,
           "self_weight", "tributary_width", *AREA_LOADS, *LINE_LOADS, "live_category",
           "patterning", "strength", "service", *DESIGN_TEXT, *DESIGN_NUMBERS,
           "section_name", "Zx", "Ix", "Aw", "deflection_live", "deflection_total")
#: Plain-number unit of an area load, per system (kN/m^2; psf, the trade's US unit).
AREA_UNITS = {"SI": "kN/m**2", "US": "lbf/ft**2"}
LINE_UNITS = {"SI": "kN/m", "US": "kip/ft"}
LENGTH_UNITS = {"SI": "m", "US": "ft"}


@dataclass(frozen=True)
class Row:
    """One beam row: where it is, its cells by column name, and the column letters."""

    file: str
    sheet: str | None
    number: int               # 1-based spreadsheet row
    cells: dict[str, Any]
    letters: dict[str, str]
    header_units: dict[str, str]

    def where(self, column: str | None = None) -> str:
        """Where this row (and ``column``) is, for messages: file, sheet, row, cell."""
        sheet = f"sheet {self.sheet}, " if self.sheet is not None else ""
        text = f"{self.file}: {sheet}row {self.number}"
        if column is not None:
            letter = self.letters.get(column)
            text += f", column {column}" + (f" ({letter})" if letter else "")
        return text


class ScheduleError(EnvelopeError):
    """A bad cell or heading of a beam schedule (exit status 2)."""


def is_schedule(path: str) -> bool:
    """True for a beam schedule (.csv or .xlsx) that exists."""
    return os.path.isfile(path) and path.lower().endswith(SUFFIXES)


def _letter(i: int) -> str:
    s = ""
    i += 1
    while i:
        i, r = divmod(i - 1, 26)
        s = chr(65 + r) + s
    return s


_HEADING = re.compile(r"\s*([A-Za-z_][A-Za-z0-9_]*)\s*(?:\[([^\]]*)\])?\s*")


def _sheets(path: str) -> list[tuple[str | None, list[list[Any]]]]:
    if path.lower().endswith(".csv"):
        try:
            with open(path, newline="", encoding="utf-8-sig") as fh:
                return [(None, [list(r) for r in csv.reader(fh)])]
        except (OSError, UnicodeDecodeError, csv.Error) as exc:
            raise ScheduleError(f"{path}: cannot be read as CSV ({exc})") from None
    try:
        from python_calamine import CalamineWorkbook

        book = CalamineWorkbook.from_path(path)
        return [(name, book.get_sheet_by_name(name).to_python(skip_empty_area=False))
                for name in book.sheet_names]
    except EnvelopeError:
        raise
    except Exception as exc:
        raise ScheduleError(f"{path}: cannot be read as a spreadsheet "
                            f"({' '.join(str(exc).split())})") from None


def read_rows(path: str) -> list[Row]:
    """Every beam row of the schedule at ``path``.  Raises :class:`ScheduleError` for a
    file without a usable heading row or with an unknown heading."""
    rows: list[Row] = []
    found = False
    for sheet, grid in _sheets(path):
        if not grid or not any(str(c).strip() for c in grid[0]):
            continue
        head = [str(c).strip() for c in grid[0]]
        names: list[str | None] = []
        units: dict[str, str] = {}
        letters: dict[str, str] = {}
        if "id" not in [(_HEADING.fullmatch(h) or [None, None])[1] for h in head]:
            continue  # a sheet of notes, not of beams
        found = True
        where = f"{path}: " + (f"sheet {sheet}, " if sheet is not None else "")
        for i, h in enumerate(head):
            if not h:
                names.append(None)
                continue
            m = _HEADING.fullmatch(h)
            if m is None or m.group(1) not in COLUMNS:
                from envelope.casefile.reader import suggest

                name = m.group(1) if m else h
                raise ScheduleError(f"{where}row 1, column {_letter(i)}: unknown heading "
                                    f"{h!r}{suggest(name, COLUMNS)}")
            if m.group(1) in letters:
                raise ScheduleError(f"{where}row 1, column {_letter(i)}: heading "
                                    f"{m.group(1)!r} appears twice")
            names.append(m.group(1))
            letters[m.group(1)] = _letter(i)
            if m.group(2):
                units[m.group(1)] = m.group(2).strip()
        for k, raw in enumerate(grid[1:], start=2):
            cells = {n: raw[i] for i, n in enumerate(names)
                     if n is not None and i < len(raw) and _present(raw[i])}
            if not cells or str(cells.get("id", "")).startswith("#"):
                continue
            rows.append(Row(path, sheet, k, cells, letters, units))
    if not found:
        raise ScheduleError(f"{path}: no sheet with an 'id' heading in its first row "
                            "(one row per beam; see envelope new --schedule)")
    return rows


def _present(v: Any) -> bool:
    return v is not None and not (isinstance(v, str) and not v.strip()) and \
        not (isinstance(v, float) and math.isnan(v))


# -- cells -------------------------------------------------------------------------------


def _fail(row: Row, column: str, problem: str) -> None:
    raise ScheduleError(f"{row.where(column)}: {problem}")


def _text(row: Row, column: str) -> str | None:
    v = row.cells.get(column)
    if v is None:
        return None
    if isinstance(v, float) and v.is_integer():
        v = int(v)
    return str(v).strip()


def _number(row: Row, column: str, value: Any | None = None) -> float | str | None:
    """A plain number (with the heading's unit appended when it has one), a string with
    a unit as written, or None when the cell is empty."""
    v = row.cells.get(column) if value is None else value
    if v is None:
        return None
    if isinstance(v, bool):
        _fail(row, column, f"expected a number, got {v!r}")
    if isinstance(v, int | float):
        number = float(v)
    else:
        text = str(v).strip()
        try:
            number = float(text)
        except ValueError:
            if re.match(r"^[+-]?(\d|\.\d)", text):
                return text  # a number with a unit: the case reader checks it
            _fail(row, column, f"expected a number, got {text!r}")
    if not math.isfinite(number):
        _fail(row, column, f"expected a finite number, got {v!r}")
    unit = row.header_units.get(column)
    return f"{number!r} {unit}" if unit else number


def _list(row: Row, column: str) -> list[Any] | None:
    v = row.cells.get(column)
    if v is None:
        return None
    if isinstance(v, int | float) and not isinstance(v, bool):
        return [_number(row, column, v)]
    parts = [p for p in re.split(r"[;,\s]+", str(v).strip()) if p]
    unit_words = [p for p in parts if not re.match(r"^[+-]?(\d|\.\d)", p)]
    if unit_words:  # "6 m 7.5 m": pair numbers with their units
        _fail(row, column, f"write the lengths as plain numbers separated by spaces "
                           f"(give their unit in the heading, e.g. '{column} [m]'), got {v!r}")
    return [_number(row, column, p) for p in parts]


def _quantity(row: Row, column: str, system: str, unit: str) -> float | None:
    """The cell's value in ``unit`` (a pint expression); plain numbers are read in the
    heading's unit or in ``unit`` itself."""
    v = _number(row, column)
    if v is None:
        return None
    if isinstance(v, float):
        return v
    from envelope.units import _registry

    try:
        q = _registry().Quantity(v.replace("^", "**"))
        return float(q.to(unit).magnitude)
    except Exception:
        _fail(row, column, f"cannot read {v!r} as a quantity in units like "
                           f"{unit.replace('**', '^')}")
    return None


# -- rows to case documents ----------------------------------------------------------------


def document(row: Row) -> tuple[dict[str, Any], dict[str, str]]:
    """The case document of ``row`` and, for each key path root it wrote, the column it
    came from (to name the column of a problem the case reader finds)."""
    origin: dict[str, str] = {}
    doc: dict[str, Any] = {}
    beam_id = _text(row, "id")
    if not beam_id:
        _fail(row, "id", "every beam row needs an id")
    doc["id"] = beam_id
    origin["id"] = "id"
    if _text(row, "title"):
        doc["title"] = _text(row, "title")
    units = _text(row, "units")
    if units is None:
        _fail(row, "units", "give SI or US")
    doc["units"] = units
    origin["units"] = "units"
    system = units if units in ("SI", "US") else "SI"
    section = {k: _number(row, k) for k in SECTION if k in row.cells}
    doc["section"] = section
    for k in SECTION:
        origin[f"section.{k}"] = k
    origin["section"] = "E"
    lengths = _list(row, "spans")
    if not lengths:
        _fail(row, "spans", "give the span lengths, separated by spaces")
    assert lengths is not None
    doc["spans"] = [{"length": length} for length in lengths]
    origin["spans"] = "spans"
    kinds = (_text(row, "supports") or "pinned").replace(",", " ").replace(";", " ").split()
    if len(kinds) == 1:
        kinds = kinds * (len(lengths) + 1)
    elif len(kinds) != len(lengths) + 1:
        _fail(row, "supports", f"give one support type for every joint ({len(lengths) + 1} "
                               f"for {len(lengths)} spans) or one for all, got {len(kinds)}")
    width = _number(row, "support_width")
    doc["supports"] = [{"type": k, **({"width": width} if width is not None else {})}
                       for k in kinds]
    origin["supports"] = "supports"
    cases: dict[str, dict[str, Any]] = {}
    loads: list[dict[str, Any]] = []
    load_origin: list[str] = []
    self_weight = _text(row, "self_weight")
    if self_weight is not None and self_weight.lower() not in ("yes", "no", "true", "false",
                                                                "1", "0"):
        _fail(row, "self_weight", f"expected yes or no, got {self_weight!r}")
    wants_self = (self_weight.lower() in ("yes", "true", "1") if self_weight is not None
                  else "A" in section and "unit_weight" in section)
    if wants_self:
        cases["D"] = {"kind": "dead"}
        loads.append({"case": "D", "type": "self_weight", "spans": "all"})
        load_origin.append("self_weight")
    trib = None
    if any(c in row.cells for c in AREA_LOADS):
        trib = _quantity(row, "tributary_width", system, LENGTH_UNITS[system])
        if trib is None:
            column = next(c for c in AREA_LOADS if c in row.cells)
            _fail(row, "tributary_width", f"{column} is a load per area: give the "
                                          "tributary width it is carried over")
        assert trib is not None
        if trib <= 0:
            _fail(row, "tributary_width", f"must be positive, got {trib:g}")
    for column, (case, kind) in AREA_LOADS.items():
        q = _quantity(row, column, system, AREA_UNITS[system])
        if q is None:
            continue
        assert trib is not None
        w = float(f"{q * trib * (1e-3 if system == 'US' else 1.0):.12g}")  # psf*ft: kip/ft
        cases.setdefault(case, {"kind": kind})
        loads.append({"case": case, "type": "uniform", "spans": "all", "w": w})
        load_origin.append(column)
    for column, (case, kind) in LINE_LOADS.items():
        line = _number(row, column)
        if line is None:
            continue
        cases.setdefault(case, {"kind": kind})
        loads.append({"case": case, "type": "uniform", "spans": "all", "w": line})
        load_origin.append(column)
    category = _text(row, "live_category")
    if category is not None:
        if "L" not in cases:
            _fail(row, "live_category", "no live load on this row (live_area or live_line)")
        cases["L"]["category"] = category
        origin["cases.L.category"] = "live_category"
    if not loads:
        _fail(row, "dead_area", "no load on this beam: give loads per area (with "
                                "tributary_width), line loads or self weight")
    doc["cases"] = cases
    doc["loads"] = loads
    for i, column in enumerate(load_origin, 1):
        origin[f"loads[{i}]"] = column
    doc["combinations"] = {"strength": _text(row, "strength") or "asce7-lrfd",
                           "service": _text(row, "service") or "characteristic"}
    origin["combinations.strength"] = "strength"
    origin["combinations.service"] = "service"
    doc["patterning"] = {"method": _text(row, "patterning") or "code"}
    origin["patterning"] = "patterning"
    design = _design(row, origin)
    if design:
        doc["design"] = design
    return doc, origin


def _design(row: Row, origin: dict[str, str]) -> dict[str, Any]:
    design: dict[str, Any] = {}
    for k in DESIGN_TEXT:
        if _text(row, k) is not None:
            design[k] = _text(row, k)
            origin[f"design.{k}"] = k
    if "sections" in design and not os.path.isabs(design["sections"]):
        design["sections"] = os.path.abspath(os.path.join(os.path.dirname(row.file),
                                                          design["sections"]))
    for k in DESIGN_NUMBERS:
        v = _number(row, k)
        if v is not None:
            design[k] = v
            origin[f"design.{k}"] = k
    given = {k: _number(row, k) for k in ("Zx", "Ix", "Aw") if k in row.cells}
    if given or _text(row, "section_name"):
        design["section"] = {"name": _text(row, "section_name") or "given", **given}
        origin["design.section"] = "section_name"
        for k in given:
            origin[f"design.section.{k}"] = k
    limits = {k.removeprefix("deflection_"): _number(row, k)
              for k in ("deflection_live", "deflection_total") if k in row.cells}
    if limits:
        design["deflection_limits"] = limits
        for k in limits:
            origin[f"design.deflection_limits.{k}"] = f"deflection_{k}"
    if design and "material" not in design:
        _fail(row, "material", "the design columns need a material (concrete or steel)")
    if design:
        origin["design"] = "material"
    return design


def column_of(key: str, origin: dict[str, str]) -> str | None:
    """The schedule column that wrote the case-file key path ``key``."""
    best = None
    for prefix, column in origin.items():
        if (key == prefix or key.startswith(prefix + ".") or key.startswith(prefix + "[")) \
                and (best is None or len(prefix) > len(best[0])):
            best = (prefix, column)
    return best[1] if best else None


def check_row(row: Row) -> dict[str, Any]:
    """The row's case document, checked by the case reader; raises
    :class:`ScheduleError` naming the file, sheet, row and column of any problem."""
    from envelope.casefile import parse_case

    doc, origin = document(row)
    try:
        parse_case(doc, row.where())
    except CaseError as exc:
        column = column_of(exc.key, origin)
        raise ScheduleError(f"{row.where(column)}: {exc.problem}"
                            + (f" ({exc.key})" if column is None and exc.key else "")
                            ) from None
    return doc


# -- writing case files ----------------------------------------------------------------------


def _toml_value(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int | float):
        return repr(float(v)) if isinstance(v, float) else str(v)
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{_toml_key(k)} = {_toml_value(x)}" for k, x in v.items()) \
            + " }"
    raise TypeError(type(v))


def _toml_key(k: str) -> str:
    return k if re.fullmatch(r"[A-Za-z0-9_-]+", k) else _toml_value(k)


def to_toml(doc: dict[str, Any], comment: str) -> str:
    """TOML text of a case document (the shapes this module writes)."""
    lines = [f"# {line}" for line in comment.splitlines()]
    tables: list[str] = []
    for k, v in doc.items():
        if isinstance(v, dict) or (isinstance(v, list) and v
                                   and all(isinstance(x, dict) for x in v)):
            tables.append(k)
        else:
            lines.append(f"{_toml_key(k)} = {_toml_value(v)}")
    for k in tables:
        v = doc[k]
        if isinstance(v, list):
            for item in v:
                lines.append(f"\n[[{k}]]")
                lines += [f"{_toml_key(a)} = {_toml_value(b)}" for a, b in item.items()]
        else:
            lines.append(f"\n[{k}]")
            lines += [f"{_toml_key(a)} = {_toml_value(b)}" for a, b in v.items()]
    return "\n".join(lines) + "\n"


@dataclass(frozen=True)
class CheckedRow:
    """One beam row of :func:`checked_rows`: its case document when good, else the
    error; ``row`` is None when the whole schedule ``path`` could not be read."""

    path: str
    row: Row | None
    beam_id: str
    doc: dict[str, Any] | None
    error: EnvelopeError | None


def checked_rows(schedules: Sequence[str]) -> Iterator[CheckedRow]:
    """Every beam row of the beam schedules, in order, checked as ``envelope batch`` and
    ``envelope check`` both read them: the row's case by :func:`check_row`, its id
    unique over all the schedules (the first row to use an id keeps it, even a bad
    row).  A schedule that cannot be read is one item with ``row`` None and its error;
    the rows of the others still follow."""
    seen: dict[str, Row] = {}
    for path in schedules:
        try:
            rows = read_rows(path)
        except EnvelopeError as exc:
            yield CheckedRow(path, None, "", None, exc)
            continue
        for row in rows:
            beam_id = _text(row, "id") or ""
            try:
                if beam_id and beam_id in seen:
                    _fail(row, "id", f"id {beam_id!r} is already used by "
                                     f"{seen[beam_id].where()}")
                doc = check_row(row)
            except EnvelopeError as exc:
                yield CheckedRow(path, row, beam_id, None, exc)
                continue
            finally:
                if beam_id:
                    seen.setdefault(beam_id, row)
            yield CheckedRow(path, row, beam_id, doc, None)


def expand_schedules(paths: Sequence[str], out: str | os.PathLike[str]
                     ) -> tuple[list[str], list[Any]]:
    """``paths`` with every beam schedule replaced by the case files of its good rows
    (written to OUT/_all/schedule/<id>.toml, rewritten only when changed), and an
    :class:`envelope.batch.Outcome` failure for each bad row.  Other paths pass through
    untouched.  A schedule that cannot be read at all raises :class:`ScheduleError`."""
    if not any(is_schedule(p) for p in paths):
        return list(paths), []
    from envelope.batch.model import COMBINED, Outcome
    from envelope.files import write_bytes

    folder = Path(out) / COMBINED / "schedule"
    expanded: dict[str, list[str]] = {p: [] for p in paths if is_schedule(p)}
    failures: list[Outcome] = []
    for item in checked_rows(list(expanded)):
        if item.row is None:
            assert item.error is not None
            raise item.error
        if item.doc is None:
            failures.append(Outcome(item.row.where(), item.beam_id, str(item.error)))
            continue
        row, beam_id, doc = item.row, item.beam_id, item.doc
        design = doc.get("design")
        if isinstance(design, dict) and isinstance(design.get("sections"), str):
            design["sections"] = _local_sections(design["sections"], row, folder, beam_id)
        text = to_toml(doc, f"Generated by envelope from {row.where()}.\n"
                            "Edit the schedule, not this file.").encode()
        target = folder / f"{beam_id}.toml"
        if not target.is_file() or target.read_bytes() != text:
            write_bytes(target, text)
        expanded[item.path].append(str(target))
    result: list[str] = []
    for p in paths:  # in the order given; a schedule named twice is read once
        result += expanded.pop(p, []) if is_schedule(p) else [p]
    return result, failures


def _local_sections(name: str, row: Row, folder: Path, beam_id: str) -> str:
    """A row's sections table copied beside its generated case file, as
    ``<id>.sections.csv`` (the case reader reads a sections table only from its case
    file's folder).  Only a regular file inside the schedule's own folder is copied, at
    most ``config.SECTIONS_MAX_BYTES``; any other path is left as it is, for the reader
    to refuse."""
    from envelope import config
    from envelope.files import UnreadableFile, read_regular, write_atomic
    from envelope.sizing.sections import inside

    source = Path(name)
    if not inside(source, Path(row.file).parent):
        return name
    try:
        data = read_regular(source, config.SECTIONS_MAX_BYTES)
    except UnreadableFile:
        return name
    copy = folder / f"{beam_id}.sections.csv"
    if not copy.is_file() or copy.read_bytes() != data:
        write_atomic(copy, lambda fh: fh.write(data))
    return copy.name


def write_schedule(path: Path, rows: Sequence[Sequence[Any]]) -> Path:
    """Write ``rows`` (the heading row first) as a schedule: CSV, or an xlsx workbook
    with one sheet ``beams``, by the suffix of ``path``."""
    import io

    from envelope.files import write_atomic

    suffix = path.suffix.lower()
    if suffix == ".csv":
        buffer = io.StringIO()
        csv.writer(buffer, lineterminator="\n").writerows(rows)
        data = buffer.getvalue().encode("utf-8")
    elif suffix == ".xlsx":
        import xlsxwriter

        out = io.BytesIO()
        book = xlsxwriter.Workbook(out, {"in_memory": True})
        sheet = book.add_worksheet("beams")
        bold = book.add_format({"bold": True})
        for i, row in enumerate(rows):
            for j, v in enumerate(row):
                if isinstance(v, int | float) and not isinstance(v, bool):
                    sheet.write_number(i, j, v)
                else:
                    sheet.write_string(i, j, str(v), bold if i == 0 else None)
        book.close()
        data = out.getvalue()
    else:
        raise ScheduleError(f"{path}: a schedule is .csv or .xlsx")
    write_atomic(path, lambda fh: fh.write(data))
    return path
