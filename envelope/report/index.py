"""The building view of a batch: OUT/_all/index.html (one row per beam with its governing
values, largest utilisation and status, sortable and filterable, linking each beam's
report) and OUT/_all/summary.pdf, plus the reports of a batch's beams.

Values stay in each beam's own unit system; every value cell names its unit, so kN and
kip never share a column unnamed.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path
from typing import TYPE_CHECKING, Any

from envelope.errors import EnvelopeError

if TYPE_CHECKING:
    from envelope.report.collect import Table

COMBINED = "_all"
#: (key, heading, quantity of ``envelope:units``) of the index's value columns.
VALUES = (("length", "length", "length"), ("moment_pos", "largest M+", "moment"),
          ("moment_neg", "most hogging M-", "moment"), ("shear", "largest |V|", "force"),
          ("deflection", "largest deflection", "deflection"),
          ("deflection_incremental", "largest incremental deflection (cracked)",
           "deflection"),
          ("span_over_deflection", "smallest L/defl", None),
          ("utilisation_deflection", "deflection utilisation", None),
          ("utilisation", "largest utilisation", None))
#: Where the index's text column of what the deflections are goes: after this value.
BASIS_AFTER = "span_over_deflection"
BASIS_HEADING = "deflection basis"
#: What the deflection columns of a row are (:func:`design_deflections`).
CRACKED, STEEL, ANALYSED = "cracked, long-term", "steel, chosen section", "analysed"
#: Under the table: what the columns are (docs/outputs.md says it at length).
NOTE = ("M- is the most hogging moment at a support face; |V| the largest shear at a span "
        "end. Deflections are the largest the design checks, as the basis column says: "
        f"\"{CRACKED}\" a sized concrete beam's cracked long-term deflection "
        "(sizing.parquet; incremental: the part after nonstructural elements are attached, "
        f"or after construction); \"{STEEL}\" a sized steel beam's service deflection "
        f"with the Ix of its chosen section; \"{ANALYSED}\" the analysis's service "
        "deflection with the stiffness given (a beam not sized; for concrete no cracking, "
        "creep or shrinkage). L/defl is span length over that deflection, the smallest "
        "over the spans; deflection utilisation the largest of the sizing's deflection "
        "checks against their limits; largest utilisation the largest of every check of "
        "the beam's sizing.")


def _num(v: Any) -> float | None:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return None
    return float(v)


def _finite(values: list[Any]) -> list[float]:
    return [x for x in (_num(v) for v in values) if x is not None]


def design_deflections(design: Table, sizing: Table | None, system: str
                       ) -> tuple[str, dict[str, float | None]]:
    """The deflections the design checks, per beam: (basis, values).

    A sized concrete beam: the largest cracked long-term and incremental deflections of
    the span rows of sizing.parquet; a sized steel beam: the largest total service
    deflection with the chosen section's Ix (the analysed one times I / Ix); otherwise
    the analysis's (design.parquet, the stiffness given).  ``span_over_deflection`` is the
    smallest span length / deflection over the spans, as design.parquet takes it."""
    from envelope.units import SYSTEMS

    lengths = dict(zip(design.column("span"), design.column("length"), strict=True)) \
        if "span" in design.columns and "length" in design.columns else {}
    factor = SYSTEMS[system].deflection_factor  # span length (m, ft) to mm, in

    def spans(column: str) -> dict[Any, float]:
        if sizing is None or column not in sizing.columns:
            return {}
        return {s: v for s, section, v in zip(sizing.column("span"), sizing.column("section"),
                                              sizing.column(column), strict=True)
                if section == "span" and _num(v) is not None}

    def ratio(per_span: dict[Any, float]) -> float | None:
        ratios = [float(lengths[s]) * factor / d for s, d in per_span.items()
                  if d > 0.0 and _num(lengths.get(s)) is not None]
        return min(ratios, default=None)

    utilisation = max(_finite(sizing.column("utilisation_deflection"))
                      if sizing is not None and "utilisation_deflection" in sizing.columns
                      else [], default=None)
    long_term = spans("deflection_long_term")
    if long_term:
        incremental = spans("deflection_incremental")
        return CRACKED, {"deflection": max(long_term.values()),
                         "deflection_incremental": max(incremental.values(), default=None),
                         "span_over_deflection": ratio(long_term),
                         "utilisation_deflection": utilisation}
    total = spans("deflection_total") if sizing is not None and "Ix" in sizing.columns \
        else {}
    if total:
        return STEEL, {"deflection": max(total.values()), "deflection_incremental": None,
                       "span_over_deflection": ratio(total),
                       "utilisation_deflection": utilisation}
    analysed = _finite(design.column("deflection_max")) \
        if "deflection_max" in design.columns else []
    ratios = _finite(design.column("span_over_deflection")) \
        if "span_over_deflection" in design.columns else []
    return ANALYSED, {"deflection": max(analysed, default=None),
                      "deflection_incremental": None,
                      "span_over_deflection": min(ratios, default=None),
                      "utilisation_deflection": utilisation}


def beam_row(folder: Path) -> dict[str, Any]:
    """The index row of one result folder (read from its design and sizing tables)."""
    from envelope.report import checks
    from envelope.report.collect import read_table

    design, meta = read_table(folder / "design.parquet", "design", "")
    units = json.loads(meta.get("envelope:units", "{}"))
    system = "US" if units.get("force") == "kip" else "SI"
    sizing_path = folder / "sizing.parquet"
    rows = []
    sizing = None
    if sizing_path.is_file():
        sizing, smeta = read_table(sizing_path, "sizing", "")
        rows = checks.checks(sizing, None, smeta.get("envelope:sizing_code", ""))
    status, worst = checks.overall(rows)
    basis, deflections = design_deflections(design, sizing, system)

    def col(name: str) -> list[float]:
        if name not in design.columns:
            return []
        return [x for x in (_num(v) for v in design.column(name)) if x is not None]

    lengths = col("length")
    neg = col("moment_neg_left_face") + col("moment_neg_right_face")
    shear = col("shear_left") + col("shear_right")
    values = {
        "length": math.fsum(lengths) if lengths else None,
        "moment_pos": max(col("moment_pos"), default=None),
        "moment_neg": min(neg, default=None),
        "shear": max(shear, default=None),
        **deflections,
        "utilisation": worst,
    }
    failed = sum(r["result"] == "fail" for r in rows)
    return {"id": meta.get("envelope:beam", folder.name), "title": meta.get("envelope:title", ""),
            "system": system, "spans": len(lengths), "values": values, "basis": basis,
            "units": {k: units.get(q, "") if q else "" for k, _, q in VALUES},
            "status": status, "failed_checks": failed,
            "report": (folder / "report.html").is_file(), "error": ""}


def _failures(out: Path) -> list[dict[str, Any]]:
    path = out / COMBINED / "failures.csv"
    if not path.is_file():
        return []
    with path.open(newline="", encoding="utf-8") as fh:
        return [{"id": r.get("id") or "", "title": r.get("file", ""), "system": "",
                 "spans": 0, "values": {}, "basis": "", "units": {}, "status": "failed",
                 "failed_checks": 0, "report": False, "error": r.get("error", "")}
                for r in csv.DictReader(fh)]


def beam_ids(out: Path) -> list[str]:
    """The beams of the batch in OUT: those of OUT/_all/design.parquet."""
    import pyarrow.parquet as pq

    path = out / COMBINED / "design.parquet"
    if not path.is_file():
        raise EnvelopeError(f"{out}: no combined results ({COMBINED}/design.parquet); "
                            "run envelope batch first")
    column = pq.ParquetFile(path).read(columns=["beam"]).column("beam").to_pylist()
    return sorted(set(column))


def index_rows(out: Path) -> list[dict[str, Any]]:
    """One row per beam of the batch in ``out``, then one per failed file."""
    rows = [beam_row(out / beam_id) for beam_id in beam_ids(out)]
    return rows + _failures(out)


def _cell(value: float | None, key: str) -> str:
    if value is None:
        return "-"
    if key in ("utilisation", "utilisation_deflection"):
        return f"{value:.3f}"
    if key == "span_over_deflection":
        return f"{value:.0f}"
    return f"{value:.2f}" if abs(value) < 100 else f"{value:.1f}"


def _columns() -> list[tuple[str, bool]]:
    """The headings of the value columns and the basis column, in order: (heading,
    numeric)."""
    out: list[tuple[str, bool]] = []
    for key, heading, _ in VALUES:
        out.append((heading, True))
        if key == BASIS_AFTER:
            out.append((BASIS_HEADING, False))
    return out


def _cells(row: dict[str, Any]) -> list[tuple[str, str, str | None]]:
    """The value cells of one index row and its basis cell, in the order of
    :func:`_columns`: (text, unit, sort key; None for the text cell)."""
    out: list[tuple[str, str, str | None]] = []
    for key, _, _ in VALUES:
        value = row["values"].get(key)
        out.append((_cell(value, key), row["units"].get(key, ""),
                    "" if value is None else repr(value)))
        if key == BASIS_AFTER:
            out.append((row.get("basis") or "-", "", None))
    return out


def render_html(rows: list[dict[str, Any]], title: str) -> str:
    """The building view as one HTML page."""
    from envelope.report.html import CAUTION, css, environment

    for r in rows:
        r["cells"] = _cells(r)
    counts = {s: sum(r["status"] == s for r in rows) for s in
              ("ok", "fails", "incomplete", "not sized", "failed")}
    template = environment().get_template("index.html.j2")
    return template.render(rows=rows, headings=_columns(), title=title,
                           caution=CAUTION, css=css(), counts=counts, note=NOTE)


def render_pdf(rows: list[dict[str, Any]], title: str) -> bytes:
    """The building view as a PDF (typst)."""
    from envelope.report.html import CAUTION
    from envelope.report.pdf import compile_typst

    table = [[r["id"], r["title"], r["system"], str(r["spans"]),
              *[(c + (" " + u if u and c != "-" else "")) for c, u, _ in _cells(r)],
              r["status"] + (f": {r['error']}" if r["error"] else "")] for r in rows]
    data = {"title": title, "caution": CAUTION, "note": NOTE,
            "headings": ["beam", "title", "units", "spans", *[h for h, _ in _columns()],
                         "status"],
            "rows": table}
    return compile_typst("summary.typ", {"summary.json": json.dumps(data)})


def write_index(out: str | Path, pdf: bool = True) -> list[Path]:
    """Write OUT/_all/index.html (and summary.pdf) for the batch in ``out``."""
    from envelope.files import write_atomic

    out = Path(out)
    rows = index_rows(out)
    title = f"Beams of {out.resolve().name}"
    page = render_html(rows, title).encode("utf-8")
    document = render_pdf(rows, title) if pdf else None
    written = [out / COMBINED / "index.html"]
    write_atomic(written[0], lambda fh: fh.write(page))
    if document is not None:
        written.append(out / COMBINED / "summary.pdf")
        write_atomic(written[1], lambda fh: fh.write(document))
    return written


def _stale(folder: Path, pdf: bool) -> bool:
    """Is the report of ``folder`` missing, or older than any of its result files?"""
    page = folder / "report.html"
    newest = max((p.stat().st_mtime_ns for p in folder.glob("*.parquet")), default=0)
    return not (page.is_file() and page.stat().st_mtime_ns >= newest
                and (not pdf or (folder / "report.pdf").is_file()))


def _reports(folders: list[str], pdf: bool) -> list[str]:
    """Write the reports of ``folders`` (run in a worker process)."""
    from envelope.report.build import write_report

    return [str(p) for folder in folders for p in write_report(folder, pdf=pdf)]


def report_batch(out: str | Path, beam_list: list[str] | None = None,
                 pdf: bool = True, workers: int = 1) -> list[Path]:
    """The report of every beam of the batch whose report is missing or older than its
    results (on ``workers`` processes), then the building view; returns the paths."""
    out = Path(out)
    todo = [str(out / b) for b in (beam_list if beam_list is not None else beam_ids(out))
            if _stale(out / b, pdf)]
    written: list[str] = []
    if workers > 1 and len(todo) > 2:
        import multiprocessing
        from concurrent.futures import ProcessPoolExecutor

        size = max(1, min(16, len(todo) // (4 * workers)))
        chunks = [todo[i:i + size] for i in range(0, len(todo), size)]
        context = multiprocessing.get_context("spawn")  # no threads of this process
        with ProcessPoolExecutor(max_workers=workers, mp_context=context) as pool:
            for paths in pool.map(_reports, chunks, [pdf] * len(chunks)):
                written += paths
    else:
        written = _reports(todo, pdf)
    return [Path(p) for p in written] + write_index(out, pdf=pdf)
