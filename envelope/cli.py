"""The command line: reads arguments, calls the API, prints; no engineering here.

Every deliberate error is one line on standard error with exit status 2 (bad
input) or 3 (a failed statics check); nothing is written for a case that fails.
Set ENVELOPE_DEBUG=1 to see a traceback of an unexpected error.
"""

from __future__ import annotations

import os
import sys
from contextlib import ExitStack
from importlib import resources
from pathlib import Path

import click

from envelope import __version__
from envelope.design import SteelDesign
from envelope.errors import EnvelopeError


def _fail(message: str, code: int) -> None:
    click.echo(f"error: {message}", err=True)
    sys.exit(code)


def _guard(fn):  # type: ignore[no-untyped-def]
    """Turn deliberate errors into one line and an exit status, never a traceback."""

    def wrapper(*args, **kwargs):  # type: ignore[no-untyped-def]
        try:
            return fn(*args, **kwargs)
        except EnvelopeError as exc:
            _fail(str(exc), exc.exit_code)
        except Exception as exc:  # an unexpected error: still one line
            if os.environ.get("ENVELOPE_DEBUG"):
                raise
            _fail(f"internal error ({type(exc).__name__}): {exc}", 1)

    wrapper.__name__ = fn.__name__
    wrapper.__doc__ = fn.__doc__
    return wrapper


@click.group()
@click.version_option(__version__, prog_name="envelope")
def main() -> None:
    """Load-pattern envelopes for continuous floor beams.

    Results are for checking by a licensed engineer and defer to local codes.
    """


@main.command()
@click.argument("case", required=False, type=click.Path(dir_okay=False))
@click.option("-o", "--out", default="results", show_default=True,
              type=click.Path(file_okay=False), help="Output folder; files go to OUT/<id>/.")
@click.option("-q", "--quiet", is_flag=True, help="Print only the output folder.")
@click.option("--plots/--no-plots", default=True, show_default=True,
              help="Draw envelope.png beside the Parquet files.")
@click.option("--all-cases", is_flag=True, default=None,
              help="Also write stations.parquet: every explicit case at every station.")
@click.option("--report", is_flag=True, help="Also write report.html and report.pdf.")
@_guard
def run(case: str | None, out: str, quiet: bool, plots: bool, all_cases: bool | None,
        report: bool) -> None:
    """Analyse CASE (a TOML case file; the bundled demo when omitted)."""
    from envelope import api
    from envelope.summary import span_summary

    with ExitStack() as stack:
        if case is None:
            ref = resources.files("envelope") / "data" / "demo.toml"
            path = str(stack.enter_context(resources.as_file(ref)))
        else:
            path = case
        beam = api.load_case(path)
        result = api.analyse(beam)
        for warning in result.solved.solution.warnings:
            click.echo(f"warning: {path}: {warning}", err=True)
        folder = api.write(result, out, plots=plots, all_cases=all_cases or None)
    click.echo(f"wrote {Path(folder)}")
    if report:
        from envelope.report.build import write_report

        for written in write_report(folder):
            click.echo(f"wrote {written}")
    if not quiet:  # each summary ends with its caution line
        click.echo(span_summary(result))
        if result.beam.design is not None:
            from envelope.sizing.table import sizing_summary

            click.echo(sizing_summary(result))


@main.command()
@click.argument("cases", nargs=-1, required=True, type=click.Path(dir_okay=False))
def check(cases: tuple[str, ...]) -> None:
    """Check case files without analysing them; exit 2 if any is bad."""
    from envelope.casefile import load_case

    bad = 0
    for path in cases:
        try:
            beam = load_case(path)
            if isinstance(beam.design, SteelDesign) and beam.design.sections is not None:
                from envelope.sizing.sections import read_sections

                read_sections(beam)  # the sections table is input too
        except EnvelopeError as exc:
            click.echo(f"error: {exc}", err=True)
            bad += 1
            continue
        click.echo(f"ok: {path} ({beam.id}, {beam.n_spans} spans, {len(beam.loads)} load items)")
    if bad:
        sys.exit(2)


@main.command()
@click.argument("folder", type=click.Path(file_okay=False, exists=True))
@click.option("-o", "--output", type=click.Path(dir_okay=False),
              help="Figure file (.png, .svg, .pdf); default FOLDER/envelope.png.")
@_guard
def plot(folder: str, output: str | None) -> None:
    """Redraw the envelope figure of one result folder (OUT/<id>) from its Parquet files."""
    from envelope import api

    path = api.redraw(folder, output)
    click.echo(f"wrote {path}")


from envelope.batch import batch as _batch_command  # noqa: E402

main.add_command(_batch_command)
from envelope.report import commands as _report_commands  # noqa: E402

_report_commands.register(main)

if __name__ == "__main__":
    main()
