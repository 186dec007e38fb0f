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
from typing import Any

from envelope.errors import EnvelopeError

COMBINED = "_all"
#: (key, heading, quantity of ``envelope:units``) of the index's value columns.
VALUES = (("length", "length", "length"), ("moment_pos", "largest M+", "moment"),
          ("moment_neg", "most hogging M-", "moment"), ("shear", "largest |V|", "force"),
          ("deflection", "largest deflection", "deflection"),
          ("span_over_deflection", "smallest L/defl", None),
          ("utilisation", "largest utilisation", None))


def _num(v: Any) -> float | None:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return None
    return float(v)


def beam_row(folder: Path) -> dict[str, Any]:
    """The index row of one result folder (read from its design and sizing tables)."""
    from envelope.report import checks
    from envelope.report.collect import read_table

    design, meta = read_table(folder / "design.parquet", "design", "")
    units = json.loads(meta.get("envelope:units", "{}"))
    sizing_path = folder / "sizing.parquet"
    rows = []
    if sizing_path.is_file():
        sizing, smeta = read_table(sizing_path, "sizing", "")
        rows = checks.checks(sizing, None, smeta.get("envelope:sizing_code", ""))
    status, worst = checks.overall(rows)

    def col(name: str) -> list[float]:
        if name not in design.columns:
            return []
        return [x for x in (_num(v) for v in design.column(name)) if x is not None]

    lengths = col("length")
    neg = col("moment_neg_left_face") + col("moment_neg_right_face")
    shear = col("shear_left") + col("shear_right")
    ratio = col("span_over_deflection")
    values = {
        "length": math.fsum(lengths) if lengths else None,
        "moment_pos": max(col("moment_pos"), default=None),
        "moment_neg": min(neg, default=None),
        "shear": max(shear, default=None),
        "deflection": max(col("deflection_max"), default=None),
        "span_over_deflection": min(ratio, default=None),
        "utilisation": worst,
    }
    failed = sum(r["result"] == "fail" for r in rows)
    return {"id": meta.get("envelope:beam", folder.name), "title": meta.get("envelope:title", ""),
            "system": "US" if units.get("force") == "kip" else "SI", "spans": len(lengths),
            "values": values, "units": {k: units.get(q, "") if q else "" for k, _, q in VALUES},
            "status": status, "failed_checks": failed,
            "report": (folder / "report.html").is_file(), "error": ""}


def _failures(out: Path) -> list[dict[str, Any]]:
    path = out / COMBINED / "failures.csv"
    if not path.is_file():
        return []
    with path.open(newline="", encoding="utf-8") as fh:
        return [{"id": r.get("id") or "", "title": r.get("file", ""), "system": "",
                 "spans": 0, "values": {}, "units": {}, "status": "failed",
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
    if key in ("utilisation",):
        return f"{value:.3f}"
    if key == "span_over_deflection":
        return f"{value:.0f}"
    return f"{value:.2f}" if abs(value) < 100 else f"{value:.1f}"


def render_html(rows: list[dict[str, Any]], title: str) -> str:
    """The building view as one HTML page."""
    from envelope.report.html import CAUTION, css, environment

    for r in rows:
        r["cells"] = [(_cell(r["values"].get(k), k), r["units"].get(k, ""),
                       "" if r["values"].get(k) is None else repr(r["values"][k]))
                      for k, _, _ in VALUES]
    counts = {s: sum(r["status"] == s for r in rows) for s in
              ("ok", "fails", "incomplete", "not sized", "failed")}
    template = environment().get_template("index.html.j2")
    return template.render(rows=rows, headings=[h for _, h, _ in VALUES], title=title,
                           caution=CAUTION, css=css(), counts=counts)


def render_pdf(rows: list[dict[str, Any]], title: str) -> bytes:
    """The building view as a PDF (typst)."""
    from envelope.report.html import CAUTION
    from envelope.report.pdf import compile_typst

    table = [[r["id"], r["title"], r["system"], str(r["spans"]),
              *[(c + (" " + u if u and c != "-" else "")) for c, u in
                ((_cell(r["values"].get(k), k), r["units"].get(k, "")) for k, _, _ in VALUES)],
              r["status"] + (f": {r['error']}" if r["error"] else "")] for r in rows]
    data = {"title": title, "caution": CAUTION,
            "headings": ["beam", "title", "units", "spans", *[h for _, h, _ in VALUES],
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
