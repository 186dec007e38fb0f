"""The click command `envelope batch`: options, messages and exit status."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import click

from envelope.batch.model import COMBINED, DuplicateIdError
from envelope.batch.runner import run_batch
from envelope.errors import EnvelopeError


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
def batch(paths: tuple[str, ...], out: str, workers: int | None, scheduler: str | None,
          plots: bool, force: bool) -> None:
    """Analyse many case files into OUT/<id>/, combined in OUT/_all/.

    PATHs are case files, folders (every *.toml inside) or glob patterns.  Unchanged
    beams are skipped, so an interrupted batch resumes where it stopped; failures are
    listed in OUT/_all/failures.csv (exit status 2)."""
    try:
        summary = run_batch(paths, out, workers=workers, scheduler=scheduler, plots=plots,
                            force=force, progress=sys.stderr)
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
    failed = len(summary.failed)
    line = (f"batch: {summary.total} case files: {len(summary.written)} written, "
            f"{len(summary.skipped)} skipped (unchanged), {failed} failed")
    if failed:
        line += f" (listed in {Path(out) / COMBINED / 'failures.csv'})"
    click.echo(line)
    click.echo(f"combined results in {Path(out) / COMBINED}")
    if failed:
        sys.exit(2)
