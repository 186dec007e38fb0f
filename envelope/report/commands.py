"""The command-line commands of the presentation layer: ``envelope report``,
``envelope export``, ``envelope new`` and ``envelope schema``, each one line of the
command registry (:data:`envelope.cli.COMMANDS`); their libraries load on use."""

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
    from envelope.commands.common import say

    say("Results are for checking by a licensed engineer and defer to local codes.")


@click.command("export")
@click.argument("folder", type=click.Path(file_okay=False, exists=True))
@click.option("--format", "fmt", type=click.Choice(["xlsx", "csv"]), default="xlsx",
              show_default=True, help="One workbook (a sheet per table) or CSV files.")
@click.option("-o", "--output", type=click.Path(),
              help="Workbook file or CSV folder  [default: FOLDER/results.xlsx, FOLDER/csv]")
def export(folder: str, fmt: str, output: str | None) -> None:
    """Export every table of a result folder (OUT/<id>) or a batch (OUT) to xlsx or csv,
    with each column's unit in its heading."""
    from envelope.report.export import export as run_export

    try:
        for p in run_export(folder, fmt, output):
            click.echo(f"wrote {p}")
    except EnvelopeError as exc:
        _fail(exc)


@click.command("new")
@click.argument("path", type=click.Path(dir_okay=False))
@click.option("--units", type=click.Choice(["SI", "US"]), default="SI", show_default=True)
@click.option("--schedule", is_flag=True,
              help="Write a beam schedule (.csv or .xlsx: one row per beam) instead.")
@click.option("--force", is_flag=True, help="Overwrite an existing file.")
def new(path: str, units: str, schedule: bool, force: bool) -> None:
    """Write a commented template case file (or beam schedule) to PATH."""
    from envelope.files import write_atomic
    from envelope.report import template

    target = Path(path)
    if target.exists() and not force:
        click.echo(f"error: {path}: the file exists (give --force to overwrite it)", err=True)
        sys.exit(2)
    if schedule:
        from envelope.report.schedule import write_schedule

        try:
            write_schedule(target, [template.SCHEDULE_HEADINGS, template.SCHEDULE_EXAMPLE])
        except EnvelopeError as exc:
            _fail(exc)
    else:
        text = template.case_template(target.name, units).encode()
        write_atomic(target, lambda fh: fh.write(text))
    click.echo(f"wrote {path}")


@click.command("schema")
@click.option("-o", "--output", type=click.Path(dir_okay=False),
              help="Write the schema to this file instead of standard output.")
def schema(output: str | None) -> None:
    """Print the JSON Schema of the case file (for editor completion)."""
    import json

    from envelope.report.schema import schema as build

    text = json.dumps(build(), indent=2) + "\n"
    if output is None:
        click.echo(text, nl=False)
        return
    from envelope.files import write_atomic

    data = text.encode()
    write_atomic(Path(output), lambda fh: fh.write(data))
    click.echo(f"wrote {output}")
