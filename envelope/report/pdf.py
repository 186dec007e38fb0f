"""The calculation report as PDF, compiled by typst (the ``typst`` package ships the
compiler: no browser, no system library).  The template reads the report's data from a
JSON file, so no text of the input is ever read as typst markup."""

from __future__ import annotations

import json
import tempfile
from importlib import resources
from pathlib import Path
from typing import Any

from envelope.errors import EnvelopeError
from envelope.report.collect import LEGENDS, ReportData, Table
from envelope.report.html import CAUTION, SIZING_CAUTION, patterning_text

#: Columns per printed table part (the key columns repeat in every part).
PART_COLUMNS = 9
KEYS = ("span", "section", "support", "set", "combination")
#: A zero-width space: where a long column name may break across lines in its heading
#: (typst breaks no word by itself, so ``service_reaction_max_combo`` ran over its
#: neighbours' headings).
BREAK = "\u200b"


def heading_text(name: str) -> str:
    """A column name as a table heading: breakable after each underscore."""
    return name.replace("_", "_" + BREAK)


def table_parts(t: Table, width: int = PART_COLUMNS) -> dict[str, Any]:
    """A wide table split into parts of at most ``width`` columns for the page; the key
    columns (span, section, ...) start every part."""
    cells = t.cells()
    numeric = t.numeric()
    keys = [i for i, c in enumerate(t.columns) if c in KEYS]
    rest = [i for i in range(len(t.columns)) if i not in keys]
    step = max(width - len(keys), 1)
    parts = []
    for k in range(0, max(len(rest), 1), step):
        idx = keys + rest[k:k + step]
        parts.append({"columns": [heading_text(t.columns[i]) for i in idx],
                      "units": [t.units.get(t.columns[i], "") for i in idx],
                      "numeric": [numeric[i] for i in idx],
                      "rows": [[row[i] for i in idx] for row in cells]})
    return {"parts": parts}


def report_json(data: ReportData) -> dict[str, Any]:
    """The report's data as the JSON the typst template reads."""
    status = data.status + (f" (largest utilisation {data.max_utilisation:.3f})"
                            if data.max_utilisation is not None else "")
    return {
        "heading": data.title or data.beam_id, "beam_id": data.beam_id,
        "system": data.system,
        "units_text": ", ".join(f"{q} {u}" for q, u in data.units.items()),
        "caution": data.caution or CAUTION, "sizing_caution": SIZING_CAUTION,
        "version": data.version, "input_sha256": data.input_sha256,
        "status_text": status, "warnings": data.warnings, "echo": data.echo,
        "has_sketch": bool(data.sketch_svg), "patterning": patterning_text(data.document),
        "checks": data.checks, "legends": LEGENDS,
        "tables": {stem: table_parts(t) for stem, t in data.tables.items()
                   if stem != "envelope"},
    }


def compile_typst(template: str, files: dict[str, str | bytes]) -> bytes:
    """Compile the packaged typst ``template`` with ``files`` beside it; the PDF bytes."""
    import typst

    source = (resources.files("envelope.report") / "templates" / template).read_text(
        encoding="utf-8")
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        (root / "main.typ").write_text(source, encoding="utf-8")
        for name, content in files.items():
            target = root / name
            if isinstance(content, bytes):
                target.write_bytes(content)
            else:
                target.write_text(content, encoding="utf-8")
        try:
            return typst.compile(str(root / "main.typ"), root=str(root),
                                 ignore_system_fonts=True)
        except Exception as exc:  # typst.TypstError and friends
            message = " ".join(str(exc).split())[:400]
            raise EnvelopeError(f"the PDF could not be compiled: {message}") from None


def render(data: ReportData) -> bytes:
    """The PDF bytes of the report of ``data``."""
    files: dict[str, str | bytes] = {
        "report.json": json.dumps(report_json(data), allow_nan=False),
        "envelope.svg": data.figure_svg,
    }
    if data.sketch_svg:
        files["sketch.svg"] = data.sketch_svg
    return compile_typst("report.typ", files)


def write(data: ReportData, path: Path) -> Path:
    """Write the PDF report atomically to ``path`` (usually OUT/<id>/report.pdf)."""
    from envelope.files import write_atomic

    pdf = render(data)
    write_atomic(path, lambda fh: fh.write(pdf))
    return path
