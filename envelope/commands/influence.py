"""``envelope influence``: the influence lines of shear, moment, deflection and every
reaction at one point of a beam, as a table and a figure."""

from __future__ import annotations

from pathlib import Path

import click

from envelope.commands.common import fail, guard, say


@click.command()
@click.argument("case", type=click.Path(dir_okay=False, exists=True))
@click.option("--at", "at", required=True, metavar="X",
              help="The point: x from the left end of span 1, or with --span, from that "
                   "span's left support (a number in the case's length unit, or a string "
                   "with a unit such as '3.5 m').")
@click.option("--span", type=int, default=None, help="Span number (from 1) that --at is in.")
@click.option("--left", is_flag=True, help="Take the left side where the response jumps.")
@click.option("-o", "--out", default="results", show_default=True,
              type=click.Path(file_okay=False),
              help="Output folder; files go to OUT/<id>/.")
@click.option("--no-plots", is_flag=True, help="Write the table only.")
@guard
def influence(case: str, at: str, span: int | None, left: bool, out: str,
              no_plots: bool) -> None:
    """Write the influence lines at one point of CASE: OUT/<id>/influence-<span>-<x>.parquet
    (one row per load position) and a figure beside it."""
    from envelope.casefile import load_case
    from envelope.errors import EnvelopeError
    from envelope.influence_files import write_influence
    from envelope.units import parse_quantity

    beam = load_case(case)
    try:
        x = float(at)
    except ValueError:
        try:
            x = parse_quantity(at, beam.units, "length")
        except EnvelopeError as exc:
            fail(f"{case}: --at: {exc}", 2)
    joints = beam.joint_x
    if span is None:
        if not 0.0 <= x <= joints[-1]:
            fail(f"{case}: --at: {x:g} is outside the beam (0 to {joints[-1]:g})", 2)
        index = min(max(i for i, xj in enumerate(joints) if xj <= x), beam.n_spans - 1)
        x_span = x - joints[index]
    else:
        if not 1 <= span <= beam.n_spans:
            fail(f"{case}: --span: span {span} is not in 1..{beam.n_spans}", 2)
        index = span - 1
        x_span = x
        if not 0.0 <= x_span <= beam.spans[index].length:
            fail(f"{case}: --at: {x:g} is outside span {span} (0 to "
                 f"{beam.spans[index].length:g})", 2)
    paths = write_influence(beam, index, x_span, Path(out) / beam.id, right=not left,
                            figure=not no_plots)
    for path in paths:
        click.echo(f"wrote {path}")
    say("Results are for checking by a licensed engineer and defer to local codes.")
