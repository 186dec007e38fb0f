"""The small public API: load a case, analyse it, get or write the result tables."""

from __future__ import annotations

import os
from pathlib import Path
from typing import TYPE_CHECKING

from envelope.casefile import load_case
from envelope.errors import EnvelopeError
from envelope.results import Analysis, analyse

if TYPE_CHECKING:
    import pyarrow as pa

__all__ = ["Analysis", "analyse", "load_case", "redraw", "tables", "write"]


def tables(result: Analysis) -> dict[str, pa.Table]:
    """The result tables of the outputs contract as Arrow tables, by file stem."""
    from envelope import store

    return store.tables(result)


def write(result: Analysis, out: str | os.PathLike = "results", plots: bool = False,
          all_cases: bool | None = None, durable: bool = True) -> Path:
    """Write ``OUT/<id>/`` with every result file (envelope.png with ``plots``,
    stations.parquet with ``all_cases``, default the case file's ``[output] all_cases``);
    returns that folder.  All tables are built before the first file is written, so a
    failure in the analysis or the tables writes nothing.  ``durable=False`` skips the
    fsync of each file (see :func:`envelope.files.write_atomic`)."""
    from envelope import store

    if all_cases is None:
        all_cases = result.beam.output.all_cases
    built = store.tables(result, all_cases)
    if result.beam.design is not None:
        from envelope.sizing.table import sizing_table

        built["sizing"] = sizing_table(result)
    folder = Path(out) / result.beam.id
    for stem, table in built.items():  # refuse before anything is written
        store.check_finite(table, str(folder / f"{stem}.parquet"))
    if all_cases:
        store.write_stations(folder / "stations.parquet", result, durable)
    store.write_tables(folder, built, durable)
    if plots:
        from envelope import plots as figures

        figures.draw_results(store.result_columns(built), folder / "envelope.png", durable)
    return folder


def redraw(folder: str | os.PathLike, output: str | os.PathLike | None = None) -> Path:
    """Draw the envelope figure of a result folder from its Parquet files."""
    from envelope import plots, store

    folder = Path(folder)
    try:
        results = store.read_results(folder)
    except (FileNotFoundError, OSError) as exc:
        raise EnvelopeError(f"{folder}: not a result folder ({exc})") from None
    return plots.draw_results(results, Path(output) if output else folder / "envelope.png")
