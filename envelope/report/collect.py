"""One beam's result folder (OUT/<id>) read as the data of its calculation report.

Every table is read generically (its columns as they are in the file, with their units
from :mod:`envelope.columnunits`), so columns added to the result files appear in the
report without a change here.  Numbers are formatted for display per column: a column
of large values gets fewer decimals than one of small values.
"""

from __future__ import annotations

import json
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from envelope.columnunits import column_units
from envelope.errors import EnvelopeError

#: The result tables a report shows, in order, with their headings.
TABLES = (("design", "Design actions per span"), ("reactions", "Support reactions"),
          ("sizing", "Member sizing per design section"),
          ("cases", "Combinations and patterns"))
#: What the columns of a table mean, under the table (docs/outputs.md says it at length).
LEGENDS = {
    "design": "moment_pos: the largest sagging moment, at moment_pos_x from the span's "
              "left support; moment_neg_left / moment_neg_right: the most hogging moment at "
              "the support centrelines, *_face the same at the support faces; shear_left / "
              "shear_right: the largest shear magnitude at the span ends; deflection_max: "
              "the largest downward service deflection with the stiffness analysed "
              "(cracked concrete deflections are in the sizing table); deflection_live: one "
              "variable action alone, deflection_live_combo which; span_over_deflection: "
              "length / deflection_max.",
}
#: Columns never shown in the report's tables (the beam's own id, repeated).
HIDDEN = frozenset({"beam"})
#: Suffixes of the columns that say what governs a value column ``c`` (``c_combo``,
#: ``c_loaded``): shown as "-" where ``c`` shows as zero (:meth:`Table.cells`).
GOVERNS = ("_combo", "_loaded")


@dataclass(frozen=True)
class Table:
    """One result table for display: column names, units, rows of Python values."""

    stem: str
    heading: str
    columns: tuple[str, ...]
    units: dict[str, str]
    rows: tuple[tuple[Any, ...], ...]

    def column(self, name: str) -> list[Any]:
        """The values of column ``name``, row by row."""
        i = self.columns.index(name)
        return [r[i] for r in self.rows]

    def cells(self) -> list[list[str]]:
        """Every row as display text, numbers rounded per column (see :func:`decimals`)."""
        digits = [decimals([r[i] for r in self.rows]) for i in range(len(self.columns))]
        rows = [[fmt(v, d) for v, d in zip(r, digits, strict=True)] for r in self.rows]
        # a value that shows as zero (a moment at a pinned or free end, the deflection
        # at a support) is governed by no combination: its combination and pattern "-"
        named = [(self.columns.index(c), [self.columns.index(f"{c}{s}")
                                          for s in GOVERNS if f"{c}{s}" in self.columns])
                 for c in self.columns if f"{c}_combo" in self.columns]
        for raw, row in zip(self.rows, rows, strict=True):
            for i, others in named:
                if isinstance(raw[i], float) and math.isfinite(raw[i]) \
                        and float(row[i]) == 0.0:
                    for j in others:
                        row[j] = "-"
        return rows

    def numeric(self) -> list[bool]:
        """Per column: True where any value is a number (right-aligned)."""
        return [any(isinstance(r[i], float | int) and not isinstance(r[i], bool)
                    for r in self.rows) for i in range(len(self.columns))]


def decimals(values: list[Any]) -> int:
    """Decimals that show a column of numbers to about four significant figures at its
    largest magnitude (common practice for calculation sheets)."""
    nums = [abs(v) for v in values if isinstance(v, float) and math.isfinite(v)]
    if not nums:
        return 0
    top = max(nums)
    if top == 0.0:
        return 1
    return int(min(max(3 - math.floor(math.log10(top)), 0), 4))


def fmt(value: Any, digits: int = 2) -> str:
    """Display text of one cell: ``-`` for a missing value or an empty text; a JSON
    object or list (the factors of cases.parquet) as plain text, ``none`` where empty."""
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "-"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        text = f"{value:.{digits}f}"
        return text.lstrip("-") if float(text) == 0.0 else text
    if isinstance(value, str):
        if not value.strip():
            return "-"
        if value[:1] in "{[":
            try:
                parsed = json.loads(value)
            except ValueError:
                return value
            if isinstance(parsed, dict | list):
                return _plain(parsed) or "none"
    return str(value)


def _plain(value: Any, top: bool = True) -> str:
    """A parsed JSON value as a calculation sheet writes it: ``D: 1.2, L: 1.6``; a list
    inside another value in brackets, ``L: (1, 0.8)``."""
    if isinstance(value, dict):
        inner = ", ".join(f"{k}: {_plain(v, False)}" for k, v in value.items())
        return inner if top else f"({inner})"
    if isinstance(value, list):
        inner = ", ".join(_plain(v, False) for v in value)
        return inner if top else f"({inner})"
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


@dataclass
class ReportData:
    """Everything a calculation report shows, read from one result folder."""

    folder: Path
    beam_id: str
    title: str
    system: str
    units: dict[str, str]
    version: str
    input_sha256: str
    caution: str
    warnings: list[str]
    tables: dict[str, Table]
    input_text: str | None
    document: dict[str, Any] | None
    figure_svg: str = ""
    sketch_svg: str = ""
    echo: list[dict[str, str]] = field(default_factory=list)
    checks: list[dict[str, str]] = field(default_factory=list)
    status: str = "ok"
    max_utilisation: float | None = None


def read_table(path: Path, stem: str, heading: str) -> tuple[Table, dict[str, str]]:
    """One Parquet file as a :class:`Table` and its decoded file metadata."""
    import pyarrow.parquet as pq

    table = pq.ParquetFile(path).read()
    meta = {k.decode(): v.decode() for k, v in (table.schema.metadata or {}).items()}
    labels = json.loads(meta.get("envelope:units", "{}"))
    own = json.loads(meta.get("envelope:sizing_units", "{}"))
    names = [n for n in table.column_names if n not in HIDDEN]
    units = column_units(names, labels if all(isinstance(v, str) for v in labels.values())
                         else {}, own)
    for f in table.schema:  # a unit written in the field itself wins
        if f.metadata and b"unit" in f.metadata and f.name in names:
            units[f.name] = f.metadata[b"unit"].decode()
    cols = [table.column(n).to_pylist() for n in names]
    rows = tuple(zip(*cols, strict=True)) if cols else ()
    return Table(stem, heading, tuple(names), units, rows), meta


def collect(folder: str | Path) -> ReportData:
    """Read ``folder`` (OUT/<id>) into a :class:`ReportData`; raises
    :class:`EnvelopeError` when it is not a complete result folder."""
    from envelope.report import checks, echo, sketch

    folder = Path(folder)
    tables: dict[str, Table] = {}
    meta: dict[str, str] = {}
    code = ""
    for stem, heading in (("envelope", "Envelope per station"), *TABLES):
        path = folder / f"{stem}.parquet"
        if not path.is_file():
            if stem == "sizing":
                continue
            raise EnvelopeError(f"{folder}: not a result folder ({stem}.parquet is missing)")
        try:
            tables[stem], m = read_table(path, stem, heading)
        except OSError as exc:
            raise EnvelopeError(f"{path}: cannot be read ({exc})") from None
        if stem == "cases":
            meta = m
        code = m.get("envelope:sizing_code", code)
    units = json.loads(meta.get("envelope:units", "{}"))
    text = meta.get("envelope:input")
    document = None
    if text is not None:
        try:
            document = tomllib.loads(text)
        except tomllib.TOMLDecodeError:
            document = None
    data = ReportData(
        folder=folder, beam_id=meta.get("envelope:beam", folder.name),
        title=meta.get("envelope:title", ""), system="US" if units.get("force") == "kip"
        else "SI", units=units, version=meta.get("envelope:version", ""),
        input_sha256=meta.get("envelope:input_sha256", ""),
        caution=meta.get("envelope:caution", ""),
        warnings=json.loads(meta.get("envelope:warnings", "[]")), tables=tables,
        input_text=text, document=document)
    data.echo = echo.echo(document, data.system) if document else []
    tables["governing"] = governing(tables["design"], tables["envelope"])
    data.checks = checks.checks(tables.get("sizing"), document, code)
    data.status, data.max_utilisation = checks.overall(data.checks)
    try:  # an illustration: a load the sketch cannot draw never stops the report
        data.sketch_svg = sketch.sketch(document, folder) if document else ""
    except Exception:
        data.sketch_svg = ""
    data.figure_svg = figure_svg(folder)
    return data


#: Design actions of design.parquet -> the envelope columns whose station holds the
#: governing combination, and where in the span: "pos" the station nearest the largest
#: sagging moment, "left_end" / "right_end" the span's end station, "left" / "right" the
#: half at that end (the support faces), "all" the whole span.  Shears are compared as
#: magnitudes (the design value is the larger magnitude at the end, of either sign).
GOVERNED = (("moment_pos", ("moment_max",), "pos"),
            ("moment_neg_left", ("moment_min",), "left_end"),
            ("moment_neg_left_face", ("moment_min",), "left"),
            ("moment_neg_right", ("moment_min",), "right_end"),
            ("moment_neg_right_face", ("moment_min",), "right"),
            ("shear_left", ("shear_max", "shear_min"), "left_end"),
            ("shear_right", ("shear_max", "shear_min"), "right_end"),
            ("deflection_max", ("deflection_max",), "all"))


def _stations(mine: list[dict[str, Any]], where: str, x_pos: Any) -> list[dict[str, Any]]:
    """The stations of one span that may hold a design action (see :data:`GOVERNED`)."""
    xs = [e["x_span"] for e in mine]
    lo, hi = min(xs), max(xs)
    if where == "left_end":
        return [e for e in mine if e["x_span"] == lo]
    if where == "right_end":
        return [e for e in mine if e["x_span"] == hi]
    if where == "pos" and isinstance(x_pos, float) and math.isfinite(x_pos):
        best = min(abs(x - x_pos) for x in xs)
        return [e for e in mine if abs(e["x_span"] - x_pos) == best]
    mid = 0.5 * (lo + hi)
    if where == "left":
        return [e for e in mine if e["x_span"] <= mid]
    if where == "right":
        return [e for e in mine if e["x_span"] >= mid]
    return mine


def governing(design: Table, envelope: Table) -> Table:
    """Per span and design action: the combination and loaded spans that govern it, read
    from the station of envelope.parquet that holds the value (the nearest station to the
    largest sagging moment, which is found between stations); the envelope figure labels
    its values the same way.  The value shown is design.parquet's."""
    env = [dict(zip(envelope.columns, r, strict=True)) for r in envelope.rows]
    rows: list[tuple[Any, ...]] = []
    for row in design.rows:
        d = dict(zip(design.columns, row, strict=True))
        mine = [e for e in env if e.get("span") == d.get("span")
                and isinstance(e.get("x_span"), float)]
        if not mine:
            continue
        for action, columns, where in GOVERNED:
            value = d.get(action)
            if action not in design.columns or not isinstance(value, float) \
                    or not math.isfinite(value):
                continue
            text = fmt(value, decimals(design.column(action)))
            if float(text) == 0.0:  # no such action (a free or pinned end): none governs
                continue
            shear = action.startswith("shear")
            found = [(abs((abs(e[c]) - abs(value)) if shear else e[c] - value), i, e, c)
                     for i, e in enumerate(_stations(mine, where, d.get("moment_pos_x")))
                     for c in columns if f"{c}_combo" in envelope.columns
                     and isinstance(e.get(c), float)]
            if not found:
                continue
            _, _, best, column = min(found, key=lambda f: (f[0], f[1]))
            rows.append((d.get("span"), action, text, design.units.get(action, ""),
                         best["x_span"], best[f"{column}_combo"],
                         best.get(f"{column}_loaded")))
    return Table("governing", "Governing combination and pattern per design action",
                 ("span", "action", "value", "unit", "x_span", "combination", "loaded"),
                 {"x_span": envelope.units.get("x_span", "")}, tuple(rows))


def figure_svg(folder: Path) -> str:
    """The envelope figure of ``folder`` as SVG text, drawn by the plotting module."""
    import tempfile

    from envelope import plots, store

    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "envelope.svg"
        # narrow, so that the page prints it at about 1:1 (text of at least 7 pt)
        plots.draw_results(store.read_results(folder), path, durable=False,
                           width=plots.REPORT_WIDTH, smallest=plots.REPORT_SMALLEST,
                           height=plots.REPORT_HEIGHT)
        text = path.read_text(encoding="utf-8")
    start = text.find("<svg")  # drop the XML prolog and doctype: inline SVG
    return text[start:] if start >= 0 else text
