"""Every result table to a spreadsheet (one sheet per table) or to CSV files (one per
table), with each column's unit in its heading (``moment_pos [kN*m]``), numbers as
numbers rounded to six significant figures (common practice: more than any input
carries), and the caution on a sheet (xlsx) or in a file (csv) of its own.

Works on one beam's folder (OUT/<id>) or on a batch (OUT, read from OUT/_all).  In a
batch whose beams use both systems, a column's heading names the unit of each system
(``[SI: kN*m; US: kip*ft]``) beside the ``system`` column, unless the combined tables
were converted to one system (``envelope batch --units``).
"""

from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path
from typing import Any

from envelope.errors import EnvelopeError
from envelope.report.collect import decimals
from envelope.report.html import CAUTION

BEAM_TABLES = ("design", "reactions", "sizing", "envelope", "cases")
BATCH_TABLES = ("design", "sizing")
#: Spreadsheets stop at 1,048,576 rows; a longer table goes to CSV only.
XLSX_ROWS = 1_048_575
SIGNIFICANT = 6


def _round(v: Any) -> Any:
    if isinstance(v, float):
        return float(f"{v:.{SIGNIFICANT}g}") if math.isfinite(v) else None
    return v


def _heading(field: Any) -> str:
    meta = field.metadata or {}
    if b"unit" in meta:
        return f"{field.name} [{meta[b'unit'].decode()}]"
    if b"unit_by_system" in meta:
        per = json.loads(meta[b"unit_by_system"])
        return f"{field.name} [" + "; ".join(f"{s}: {u}" for s, u in per.items()) + "]"
    return field.name


def _tables(folder: Path) -> dict[str, Any]:
    """The tables to export from ``folder``: a beam's own, or a batch's combined."""
    import pyarrow.parquet as pq

    combined = folder / "_all"
    stems: tuple[str, ...]
    if combined.is_dir() and (combined / "design.parquet").is_file():
        source, stems = combined, BATCH_TABLES
    elif (folder / "design.parquet").is_file():
        source, stems = folder, BEAM_TABLES
    else:
        raise EnvelopeError(f"{folder}: neither a result folder (OUT/<id>) nor a batch "
                            "output (OUT with _all/design.parquet)")
    out = {}
    for stem in stems:
        path = source / f"{stem}.parquet"
        if path.is_file():
            out[stem] = pq.ParquetFile(path).read()
    return out


def _columns(table: Any) -> tuple[list[str], list[list[Any]]]:
    headings = [_heading(f) for f in table.schema]
    cols = [[_round(v) for v in table.column(i).to_pylist()]
            for i in range(table.num_columns)]
    return headings, cols


def write_csv(folder: Path, target: Path) -> list[Path]:
    """One ``<table>.csv`` per table in the folder ``target``, plus CAUTION.txt."""
    from envelope.files import write_atomic, write_bytes

    written = []
    for stem, table in _tables(folder).items():
        headings, cols = _columns(table)
        buffer = io.StringIO()
        writer = csv.writer(buffer, lineterminator="\n")
        writer.writerow(headings)
        for row in zip(*cols, strict=True):
            writer.writerow(["" if v is None else v for v in row])
        data = buffer.getvalue().encode("utf-8")
        path = target / f"{stem}.csv"
        write_bytes(path, data)
        written.append(path)
    note = (CAUTION + "\n").encode()
    write_atomic(target / "CAUTION.txt", lambda fh: fh.write(note))
    return [*written, target / "CAUTION.txt"]


def write_xlsx(folder: Path, target: Path) -> list[Path]:
    """One workbook, a sheet per table (headings with units, frozen, numbers as numbers
    with a display format per column), and a first sheet with the caution."""
    import xlsxwriter

    from envelope.files import write_atomic

    tables = _tables(folder)
    buffer = io.BytesIO()
    book = xlsxwriter.Workbook(buffer, {"in_memory": True, "nan_inf_to_errors": True})
    bold = book.add_format({"bold": True, "bg_color": "#F2F2F2", "bottom": 1})
    about = book.add_worksheet("about")
    about.write(0, 0, "Results of envelope", bold)
    about.write(1, 0, CAUTION)
    about.write(2, 0, f"Exported from {folder.name}: "
                      + ", ".join(f"{stem} ({t.num_rows} rows)" for stem, t in tables.items()))
    about.set_column(0, 0, 100)
    formats: dict[int, Any] = {}
    for stem, table in tables.items():
        if table.num_rows > XLSX_ROWS:
            raise EnvelopeError(f"{folder}: {stem} has {table.num_rows} rows, more than a "
                                "spreadsheet holds; export it with --format csv")
        sheet = book.add_worksheet(stem[:31])
        headings, cols = _columns(table)
        for j, (h, values) in enumerate(zip(headings, cols, strict=True)):
            sheet.write_string(0, j, h, bold)
            numeric = any(isinstance(v, int | float) and not isinstance(v, bool)
                          for v in values)
            digits = decimals(values)
            if digits not in formats:
                formats[digits] = book.add_format(
                    {"num_format": "0" if digits == 0 else "0." + "0" * digits})
            for i, v in enumerate(values, start=1):
                if v is None:
                    continue
                if numeric and isinstance(v, int | float) and not isinstance(v, bool):
                    sheet.write_number(i, j, v, formats[digits] if isinstance(v, float)
                                       else None)
                else:
                    sheet.write_string(i, j, str(v))
            sheet.set_column(j, j, max(10, min(len(h) + 2, 40)))
        sheet.freeze_panes(1, 0)
        sheet.autofilter(0, 0, max(table.num_rows, 1), max(table.num_columns - 1, 0))
    book.close()
    data = buffer.getvalue()
    write_atomic(target, lambda fh: fh.write(data))
    return [target]


def export(folder: str | Path, fmt: str, output: str | Path | None = None) -> list[Path]:
    """Export ``folder`` (OUT/<id> or a batch's OUT) as ``fmt`` ("xlsx" or "csv") to
    ``output`` (default ``FOLDER/results.xlsx`` or ``FOLDER/csv/``)."""
    folder = Path(folder)
    if fmt == "xlsx":
        return write_xlsx(folder, Path(output) if output else folder / "results.xlsx")
    if fmt == "csv":
        return write_csv(folder, Path(output) if output else folder / "csv")
    raise EnvelopeError(f"unknown export format {fmt!r}: xlsx or csv")
