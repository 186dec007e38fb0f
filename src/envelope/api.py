"""The small public API: load a case, analyse it, get or write the result tables."""

from __future__ import annotations

import os
from pathlib import Path
from typing import TYPE_CHECKING

from envelope.casefile import load_case
from envelope.results import Analysis, analyse

if TYPE_CHECKING:
    import pyarrow as pa

__all__ = ["Analysis", "analyse", "load_case", "tables", "write"]


def tables(result: Analysis) -> dict[str, pa.Table]:
    """The result tables of the outputs contract as Arrow tables, by file stem."""
    from envelope import store

    return store.tables(result)


def write(result: Analysis, out: str | os.PathLike = "results") -> Path:
    """Write ``OUT/<id>/`` with every result file; returns that folder.

    All tables are built before the first file is written, so a failure writes nothing.
    """
    from envelope import store

    built = store.tables(result)
    folder = Path(out) / result.beam.id
    store.write_tables(folder, built)
    return folder
