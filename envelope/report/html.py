"""The calculation report as one self-contained HTML page (jinja2; figures inline SVG,
styles inline, no script, nothing fetched)."""

from __future__ import annotations

from importlib import resources
from pathlib import Path
from typing import Any

from envelope.report.collect import LEGENDS, ReportData

CAUTION = ("Results are for checking by a licensed engineer and defer to local codes; "
           "they are not a design.")
SIZING_CAUTION = ("Sizing is a first check for a licensed engineer, not a design: the "
                  "engineer of record chooses and details the members.")

#: Patterning method -> what it does and where it comes from.
PATTERNING = {
    "none": "Patterning: none (every patterned case on every span).",
    "code": "Patterning: the arrangements of ACI 318-19 6.4.2 and EN 1992-1-1 5.1.3 "
            "(all spans loaded, alternate spans, each pair of adjacent spans).",
    "exhaustive": "Patterning: every subset of spans for each patterned case, enveloped "
                  "exactly by superposition of per-span unit responses (common practice "
                  "generalised; covers ACI 318-19 6.4.2, EN 1992-1-1 5.1.3 and the partial "
                  "loading of ASCE 7-22 4.3.3 span by span).",
    "segments": "Patterning: every subset of span segments ({segments} per span), "
                "enveloped exactly by superposition (partial loading, ASCE 7-22 4.3.3).",
}


def patterning_text(document: dict[str, Any] | None) -> str:
    """One sentence on the patterning used, from the case file as read."""
    if document is None:
        return "Patterning: not recorded (see cases.parquet)."
    table = document.get("patterning", {})
    method = str(table.get("method", "none"))
    text = PATTERNING.get(method, f"Patterning: {method}.")
    return text.format(segments=table.get("segments", "?"))


def environment():  # type: ignore[no-untyped-def]
    """The jinja2 environment of the report templates (autoescaped)."""
    import jinja2

    return jinja2.Environment(
        loader=jinja2.PackageLoader("envelope.report", "templates"),
        autoescape=jinja2.select_autoescape(["html", "j2"], default=True),
        undefined=jinja2.StrictUndefined, trim_blocks=False, lstrip_blocks=False)


def css() -> str:
    """The report's style sheet."""
    return (resources.files("envelope.report") / "templates" / "report.css").read_text(
        encoding="utf-8")


def render(data: ReportData) -> str:
    """The HTML text of the report of ``data``."""
    template = environment().get_template("report.html.j2")
    return template.render(d=data, css=css(), caution=data.caution or CAUTION,
                           legends=LEGENDS,
                           sizing_caution=SIZING_CAUTION,
                           patterning=patterning_text(data.document))


def write(data: ReportData, path: Path) -> Path:
    """Write the report atomically to ``path`` (usually OUT/<id>/report.html)."""
    from envelope.files import write_atomic

    text = render(data).encode("utf-8")
    write_atomic(path, lambda fh: fh.write(text))
    return path
