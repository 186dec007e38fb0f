"""envelope: load-pattern envelopes of shear, moment, deflection and reactions for
continuous floor beams.

The public API, for notebooks and for the command line alike::

    import envelope
    beam = envelope.load_case("cases/office-4span-si.toml")
    result = envelope.analyse(beam)
    tables = envelope.tables(result)      # dict of pyarrow Tables by file stem
    envelope.write(result, "results")     # results/<id>/*.parquet

Results are for checking by a licensed engineer and defer to local codes.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

__all__ = ["__version__", "analyse", "load_case", "tables", "write"]

if TYPE_CHECKING:
    from envelope.api import analyse, load_case, tables, write


def __getattr__(name: str) -> Any:
    # imported on first use, so that `import envelope` stays cheap
    if name in ("analyse", "load_case", "tables", "write"):
        from envelope import api

        return getattr(api, name)
    raise AttributeError(name)
