"""envelope: load-pattern envelopes of shear, moment, deflection and reactions for
continuous floor beams.

The public API, for notebooks and for the command line alike::

    import envelope
    beam = envelope.load_case("cases/office-4span-si.toml")
    result = envelope.analyse(beam)
    tables = envelope.tables(result)      # dict of pyarrow Tables by file stem
    envelope.write(result, "results")     # results/<id>/*.parquet
    fig = envelope.plot(result)           # a matplotlib Figure
    print(envelope.summary_text(result))  # the console summary

Results are for checking by a licensed engineer and defer to local codes.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

__all__ = ["__version__", "analyse", "engine_version", "load_case", "plot", "summary_text",
           "tables", "write"]
# (not "summary": that name is the module envelope.summary)
_API = ("analyse", "load_case", "plot", "summary_text", "tables", "write")


def engine_version() -> str:
    """The engine version written into every result file.

    Returns
    -------
    str
        The release number plus a fingerprint of the package's own source files, e.g.
        ``0.1.0+3f2a9c1d04be``, so results of a changed engine never pass for current
        ones when a batch resumes.
    """
    global _ENGINE_VERSION
    if _ENGINE_VERSION is None:
        from envelope.fingerprint import fingerprint  # kept between runs, see there

        _ENGINE_VERSION = f"{__version__}+{fingerprint()}"
    return _ENGINE_VERSION


_ENGINE_VERSION: str | None = None

if TYPE_CHECKING:
    from envelope.api import analyse, load_case, plot, summary_text, tables, write


def __getattr__(name: str) -> Any:
    # imported on first use, so that `import envelope` stays cheap
    if name in _API:
        from envelope import api

        return getattr(api, name)
    raise AttributeError(f"module 'envelope' has no attribute {name!r}")


def __dir__() -> list[str]:
    # the public names load on first use; completion in a notebook finds them, and
    # the submodules loaded so far, not the names this file uses itself
    import types

    modules = {name for name, value in globals().items()
               if isinstance(value, types.ModuleType)}
    return sorted({*__all__, *modules})
