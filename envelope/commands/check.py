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
    them) or glob patterns."""
    from envelope.batch.discovery import discover
    from envelope.casefile import load_case
    from envelope.design import SteelDesign
    from envelope.errors import EnvelopeError
    from envelope.limits import check as check_work
    from envelope.limits import from_options

    skipped: list[tuple[str, str]] = []
    cases = discover(paths, skipped)
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
    say(f"check: {len(cases)} case files, {bad} bad", at=1)
    if bad:
        sys.exit(2)
