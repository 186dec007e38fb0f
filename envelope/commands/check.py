"""``envelope check``: read and check case files (or folders of them) without analysing."""

from __future__ import annotations

import sys

import click

from envelope.commands.common import guard, say


@click.command()
@click.argument("paths", nargs=-1, required=True, metavar="PATH...")
@click.option("--sections", "sections", type=click.Path(dir_okay=False), metavar="CSV",
              help="Steel sections table to use instead of [design] sections.")
@click.option("--max-memory", type=click.FloatRange(min=0, min_open=True), metavar="GIB",
              help="Refuse a beam estimated to need more memory  [default: half of this "
                   "machine's]")
@click.option("--max-seconds", type=click.FloatRange(min=0, min_open=True), metavar="S",
              help="Refuse a beam estimated to take more CPU time  [default: 600]")
@guard
def check(paths: tuple[str, ...], sections: str | None, max_memory: float | None,
          max_seconds: float | None) -> None:
    """Check case files without analysing them; exit 2 if any is bad.

    PATHs are case files, folders (every case file inside, as `envelope batch` finds
    them), glob patterns or beam schedules (.csv, .xlsx: every row checked as
    `envelope batch` reads it)."""
    from envelope.batch.discovery import discover
    from envelope.casefile import load_case
    from envelope.design import SteelDesign
    from envelope.errors import EnvelopeError
    from envelope.limits import check as check_work
    from envelope.limits import from_options
    rows = bad_rows = 0
    if any(p.lower().endswith((".csv", ".xlsx")) for p in paths):  # spare the import
        from envelope.report.schedule import is_schedule

        rows, bad_rows = _check_schedules([p for p in paths if is_schedule(p)])
        paths = tuple(p for p in paths if not is_schedule(p))
    skipped: list[tuple[str, str]] = []
    cases = discover(paths, skipped) if paths else []
    for path, reason in skipped:
        say(f"skipped: {path} ({reason})", err=True)
    bad = 0
    for path in cases:
        try:
            beam = load_case(path)
            if sections is not None:
                from envelope.sizing.sections import given

                beam = given(beam, sections)
            if isinstance(beam.design, SteelDesign) and beam.design.sections is not None:
                from envelope.sizing.sections import read_sections

                read_sections(beam)  # the sections table is input too
            check_work(beam, from_options(max_memory, max_seconds))
        except EnvelopeError as exc:
            click.echo(f"error: {exc}", err=True)
            bad += 1
            continue
        say(f"ok: {path} ({beam.id}, {beam.n_spans} spans, {len(beam.loads)} load items)")
    if rows or bad_rows:
        say(f"check: {len(cases)} case files, {bad} bad; {rows} schedule rows, "
            f"{bad_rows} bad", at=1)
    else:
        say(f"check: {len(cases)} case files, {bad} bad", at=1)
    if bad or bad_rows:
        sys.exit(2)


def _check_schedules(schedules: list[str]) -> tuple[int, int]:
    """Check every beam row of the beam schedules (.csv, .xlsx) as ``envelope batch``
    reads them (:func:`envelope.report.schedule.checked_rows`, shared with it).  Returns
    the number of rows and of bad ones; a schedule that cannot be read counts as one bad."""
    from envelope.report.schedule import checked_rows

    rows = bad = 0
    for item in checked_rows(schedules):
        rows += item.row is not None
        if item.error is not None:
            click.echo(f"error: {item.error}", err=True)
            bad += 1
        elif item.row is not None:
            say(f"ok: {item.row.where()} ({item.beam_id})")
    return rows, bad
