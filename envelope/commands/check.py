"""``envelope check``: read and check case files (or folders of them) without analysing."""

from __future__ import annotations

import sys

import click

from envelope.commands.common import guard, say


@click.command()
@click.argument("paths", nargs=-1, required=True, metavar="PATH...")
@guard
def check(paths: tuple[str, ...]) -> None:
    """Check case files without analysing them; exit 2 if any is bad.

    PATHs are case files, folders (every case file inside, as `envelope batch` finds
    them) or glob patterns."""
    from envelope.batch.discovery import discover
    from envelope.casefile import load_case
    from envelope.design import SteelDesign
    from envelope.errors import EnvelopeError

    skipped: list[tuple[str, str]] = []
    cases = discover(paths, skipped)
    for path, reason in skipped:
        say(f"skipped: {path} ({reason})", err=True)
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
        say(f"ok: {path} ({beam.id}, {beam.n_spans} spans, {len(beam.loads)} load items)")
    say(f"check: {len(cases)} case files, {bad} bad", at=1)
    if bad:
        sys.exit(2)
