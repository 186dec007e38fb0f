"""Write the calculation report files of one result folder: report.html and report.pdf."""

from __future__ import annotations

from pathlib import Path


def write_report(folder: str | Path, pdf: bool = True) -> list[Path]:
    """Read OUT/<id> and write ``report.html`` (and ``report.pdf``) into it; returns the
    paths written.  Both are rendered before either is written."""
    from envelope.files import write_atomic
    from envelope.report import collect, html
    from envelope.report import pdf as pdf_report

    folder = Path(folder)
    data = collect.collect(folder)
    page = html.render(data).encode("utf-8")
    document = pdf_report.render(data) if pdf else None
    written = [folder / "report.html"]
    write_atomic(written[0], lambda fh: fh.write(page))
    if document is not None:
        written.append(folder / "report.pdf")
        write_atomic(written[1], lambda fh: fh.write(document))
    return written
