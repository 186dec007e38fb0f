"""``envelope run``: analyse one case file into OUT/<id>/ and print its summary."""

from __future__ import annotations

import warnings
from contextlib import ExitStack
from pathlib import Path
from typing import TYPE_CHECKING

import click

from envelope.commands.common import guard, level, resume_collection, say

if TYPE_CHECKING:
    from envelope.model import Beam


@click.command()
@click.argument("case", required=False, type=click.Path(dir_okay=False))
@click.option("-o", "--out", default="results", show_default=True,
              type=click.Path(file_okay=False), help="Output folder; files go to OUT/<id>/.")
@click.option("--plots/--no-plots", default=True, show_default=True,
              help="Draw envelope.png beside the Parquet files.")
@click.option("--all-cases", is_flag=True, default=None,
              help="Also write stations.parquet: every explicit case at every station.")
@click.option("--report", is_flag=True, help="Also write report.html and report.pdf.")
@click.option("--sections", "sections", type=click.Path(dir_okay=False), metavar="CSV",
              help="Steel sections table to use instead of [design] sections (may be "
                   "outside the case file's folder).")
@click.option("--max-memory", type=click.FloatRange(min=0, min_open=True), metavar="GIB",
              help="Refuse a beam estimated to need more memory  [default: half of this "
                   "machine's]")
@click.option("--max-seconds", type=click.FloatRange(min=0, min_open=True), metavar="S",
              help="Refuse a beam estimated to take more CPU time  [default: 600]")
@guard
def run(case: str | None, out: str, plots: bool, all_cases: bool | None,
        report: bool, sections: str | None, max_memory: float | None,
        max_seconds: float | None) -> None:
    """Analyse CASE (a TOML case file; the bundled demo when omitted).

    Writes the Parquet files (and envelope.png) to OUT/<id>/, then prints a summary per
    span; with -q only the folder written."""
    from envelope import api
    from envelope.errors import EnvelopeWarning
    from envelope.limits import from_options

    resume_collection()  # the engine is loaded (see envelope.cli.LazyGroup)

    with ExitStack() as stack:
        if case is None:
            from importlib import resources

            ref = resources.files("envelope") / "data" / "demo.toml"
            path = str(stack.enter_context(resources.as_file(ref)))
        else:
            path = case
        beam = api.load_case(path)
        if sections is not None:
            from envelope.sizing.sections import given

            beam = given(beam, sections)
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", EnvelopeWarning)
            result = api.analyse(beam, from_options(max_memory, max_seconds))
        for warning in caught:
            if issubclass(warning.category, EnvelopeWarning):
                click.echo(f"warning: {path}: {warning.message}", err=True)
            else:
                warnings.showwarning(warning.message, warning.category, warning.filename,
                                     warning.lineno)
        folder = api.write(result, out, plots=plots, all_cases=all_cases or None)
    click.echo(f"wrote {Path(folder)}")
    if all_cases or beam.output.all_cases:
        _note_left_out(beam)
    if level() >= 1:
        files = sorted(p.name for p in Path(folder).iterdir() if not p.name.startswith("."))
        say(f"{beam.id}: {beam.n_spans} spans, {result.stations.n} stations, "
            f"{len(beam.loads)} load items; files: {', '.join(files)}", at=1)
    if report:  # (a report of earlier results was removed by the write)
        from envelope.report.build import write_report

        for written in write_report(folder):
            click.echo(f"wrote {written}")
    if level() >= 0:  # built only to be printed (-q prints the folder alone)
        say(api.summary_text(result))  # each summary ends with its caution line


run.resumes_collection = True  # type: ignore[attr-defined]  # after its imports (above)


def _note_left_out(beam: Beam) -> None:
    """Say which moving cases stations.parquet leaves out (none: say nothing)."""
    from envelope.analysis import left_out_of_explicit_cases

    moving = left_out_of_explicit_cases(beam)
    if moving:
        click.echo(f"note: stations.parquet leaves out the moving case"
                   f"{'s' if len(moving) > 1 else ''} {', '.join(moving)}: a moving "
                   "load's worst position differs at every station, so it is in the "
                   "envelopes and design values only", err=True)
