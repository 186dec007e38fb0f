"""``envelope plot``: redraw the figure of one result folder from its Parquet files."""

from __future__ import annotations

from pathlib import Path

import click

from envelope.commands.common import guard, say

#: Figure formats by file suffix (matplotlib writes each with editable text).
FORMATS = ("png", "svg", "pdf")


def _figure_path(ctx: click.Context, param: click.Parameter, value: str | None) -> str | None:
    """Refuse an unknown format or a missing folder as a usage error (exit 2): a typo in
    ``-o`` must not create folders or a file nobody can open."""
    if value is None:
        return None
    path = Path(value)
    suffix = path.suffix.lstrip(".").lower()
    if suffix not in FORMATS:
        raise click.BadParameter(f"{value}: unknown figure format {path.suffix or '(none)'!r}; "
                                 f"use one of {', '.join('.' + f for f in FORMATS)}",
                                 ctx, param)
    parent = path.parent
    if not parent.is_dir():
        raise click.BadParameter(f"{value}: folder {str(parent)!r} does not exist "
                                 "(create it first)", ctx, param)
    return value


@click.command()
@click.argument("folder", type=click.Path(file_okay=False, exists=True))
@click.option("-o", "--output", type=click.Path(dir_okay=False), callback=_figure_path,
              help="Figure file (.png, .svg or .pdf); default FOLDER/envelope.png.")
@guard
def plot(folder: str, output: str | None) -> None:
    """Redraw the envelope figure of one result folder (OUT/<id>) from its Parquet files."""
    from envelope import api

    path = api.redraw(folder, output)
    click.echo(f"wrote {path}")
    say("Results are for checking by a licensed engineer and defer to local codes.", at=1)
