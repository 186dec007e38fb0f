"""The command-line commands of the presentation layer: ``envelope report``,
``envelope export``, ``envelope new`` and ``envelope schema``.  Each is registered on
the main group with one line (see :func:`register`); their libraries load on use."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from envelope.errors import EnvelopeError


def _fail(exc: EnvelopeError) -> None:
    click.echo(f"error: {exc}", err=True)
    sys.exit(exc.exit_code)


@click.command("report")
@click.argument("folders", nargs=-1, required=True,
                type=click.Path(file_okay=False, exists=True))
@click.option("--pdf/--no-pdf", default=True, show_default=True,
              help="Also write report.pdf beside report.html.")
def report(folders: tuple[str, ...], pdf: bool) -> None:
    """Write the calculation report (report.html, report.pdf) of result folders OUT/<id>.

    A batch's OUT/_all gets the building view instead: index.html and summary.pdf."""
    from envelope.report.build import write_report

    try:
        for folder in folders:
            if Path(folder).name == "_all":
                from envelope.report.index import write_index

                paths = write_index(Path(folder).parent, pdf=pdf)
            else:
                paths = write_report(folder, pdf=pdf)
            for p in paths:
                click.echo(f"wrote {p}")
    except EnvelopeError as exc:
        _fail(exc)
    click.echo("Results are for checking by a licensed engineer and defer to local codes.")


def register(group: click.Group) -> None:
    """Add every command of this module to ``group`` (the ``envelope`` command)."""
    for command in (report,):
        group.add_command(command)
