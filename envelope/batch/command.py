"""The click command `envelope batch`: options, messages and exit status."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import click

from envelope.batch.model import COMBINED, DuplicateIdError
from envelope.batch.runner import run_batch
from envelope.commands.common import level, say
from envelope.errors import EnvelopeError


def _limits(max_memory: float | None, max_seconds: float | None) -> object:
    """envelope.limits.WorkLimits of the options (imported here: it loads the model)."""
    from envelope.limits import from_options

    return from_options(max_memory, max_seconds)


@click.command("batch")
@click.argument("paths", nargs=-1, required=True, metavar="PATH...")
@click.option("-o", "--out", required=True, type=click.Path(file_okay=False),
              help="Output folder: OUT/<id>/ per beam, OUT/_all/ combined.")
@click.option("--workers", type=click.IntRange(min=1), metavar="N",
              help="Local worker processes  [default: every core]")
@click.option("--scheduler", metavar="ADDRESS",
              help="Run on a dask.distributed cluster, e.g. tcp://10.0.0.5:8786.")
@click.option("--plots/--no-plots", default=False, show_default=True,
              help="Draw envelope.png for every beam.")
@click.option("--force", is_flag=True, help="Rerun every beam, even unchanged ones.")
@click.option("--report", is_flag=True,
              help="Write each beam's report and the building view OUT/_all/index.html.")
@click.option("--units", type=click.Choice(["SI", "US"]),
              help="Convert the combined OUT/_all tables to one unit system  "
                   "[default: each row in its beam's own, named per row]")
@click.option("--time-limit", type=click.FloatRange(min=0, min_open=True), metavar="SECONDS",
              help="Stop a beam that runs longer and record it as failed. "
                   " [default: no limit]")
@click.option("--max-memory", type=click.FloatRange(min=0, min_open=True), metavar="GIB",
              help="Refuse a beam estimated to need more memory  [default: half of the "
                   "machine's]")
@click.option("--max-seconds", type=click.FloatRange(min=0, min_open=True), metavar="S",
              help="Refuse a beam estimated to take more CPU time  [default: 600]")
def batch(paths: tuple[str, ...], out: str, workers: int | None, scheduler: str | None,
          plots: bool, force: bool, report: bool, units: str | None,
          time_limit: float | None, max_memory: float | None,
          max_seconds: float | None) -> None:
    """Analyse many case files into OUT/<id>/, combined in OUT/_all/.

    PATHs are case files, folders (every *.toml inside), glob patterns or beam schedules
    (.csv or .xlsx: one row per beam, see `envelope new --schedule`).  Unchanged
    beams are skipped, so an interrupted batch resumes where it stopped; failures are
    listed in OUT/_all/failures.csv (exit status 2)."""
    try:
        from envelope.report.schedule import expand_schedules

        case_files, failures = expand_schedules(paths, out)
        if not case_files and failures:  # every row of the schedules is bad: nothing to run
            from envelope.batch.combined import write_failures

            Path(out, COMBINED).mkdir(parents=True, exist_ok=True)
            for o in failures:
                click.echo(f"error: {o.error}", err=True)
            write_failures(Path(out), failures, {})
            sys.exit(2)
        summary = run_batch(case_files, out, workers=workers, scheduler=scheduler, plots=plots,
                            force=force, progress=sys.stderr if level() >= 0 else None,
                            units=units, failures=failures, time_limit=time_limit,
                            work_limits=_limits(max_memory, max_seconds))
        if report:
            from envelope.batch.local import default_workers
            from envelope.report.index import report_batch

            report_batch(out, workers=workers or (1 if scheduler else default_workers()))
    except DuplicateIdError as exc:
        for line in exc.lines:
            click.echo(f"error: {line}", err=True)
        sys.exit(2)
    except EnvelopeError as exc:
        click.echo(f"error: {exc}", err=True)
        sys.exit(exc.exit_code)
    except KeyboardInterrupt:
        click.echo("\ninterrupted: run the same command again to resume", err=True)
        sys.exit(130)
    except Exception as exc:
        if os.environ.get("ENVELOPE_DEBUG"):
            raise
        click.echo(f"error: internal error ({type(exc).__name__}): {exc}", err=True)
        sys.exit(1)
    for path, reason in summary.not_cases:
        say(f"skipped: {path} ({reason})", err=True)
    failed = len(summary.failed)
    line = (f"batch: {summary.total} case files: {len(summary.written)} written, "
            f"{len(summary.skipped)} skipped (unchanged), {failed} failed")
    if failed:
        line += f" (listed in {Path(out) / COMBINED / 'failures.csv'})"
    click.echo(line)
    click.echo(f"combined results in {Path(out) / COMBINED}")
    if failed:
        sys.exit(2)
