"""The public API, for notebooks and for the command line alike.

Load a case, analyse it, then take the result tables, write them, draw them or print
their summary.  Warnings (a nearly singular beam, a check that could not be made) are
raised through :mod:`warnings` as :class:`envelope.errors.EnvelopeWarning`.

Results are for checking by a licensed engineer and defer to local codes.
"""

from __future__ import annotations

import contextlib
import os
import warnings
from pathlib import Path
from typing import TYPE_CHECKING

from envelope.analysis import Analysis
from envelope.analysis import analyse as _analyse
from envelope.casefile import load_case
from envelope.errors import EnvelopeError, EnvelopeWarning, OutputError
from envelope.files import final_name, real_folder, temporary_folder

if TYPE_CHECKING:
    import pyarrow as pa
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from envelope.limits import WorkLimits
    from envelope.model import Beam

__all__ = ["Analysis", "analyse", "load_case", "plot", "redraw", "summary_text", "tables",
           "write"]

#: Result files a run writes into OUT/<id>/, and files made from them (the report, the
#: exports, influence lines); any of them an earlier run or command left and this run
#: did not write is removed, so a folder never mixes two runs.
_RESULT_SUFFIXES = (".parquet",)
FIGURE = "envelope.png"
_DERIVED = (FIGURE, "report.html", "report.pdf", "results.xlsx")
#: The folder ``envelope export --format csv`` writes by default, and what it holds.
_CSV_FOLDER = "csv"
_CSV_FILES = (".csv", "CAUTION.txt")


def is_result_file(name: str) -> bool:
    """Whether a file named ``name`` in OUT/<id>/ is a result of a run or made from one
    (so that a new run replaces it): tables, figures, the report, a workbook export."""
    if name.startswith("."):
        return False
    return (name.endswith(_RESULT_SUFFIXES) or name in _DERIVED
            or (name.startswith("influence-") and name.endswith(".png")))


def analyse(beam: Beam, limits: WorkLimits | None = None) -> Analysis:
    """Analyse a beam: every unit case once, the envelopes, the design actions.

    Parameters
    ----------
    beam : Beam
        A checked beam, from :func:`load_case`.
    limits : envelope.limits.WorkLimits, optional
        The most memory and CPU time the analysis may be estimated to take (default:
        half the machine's memory, ``config.WORK_MAX_SECONDS``); a beam over them is
        refused with :class:`~envelope.errors.CaseError` before any work.

    Returns
    -------
    Analysis
        The envelopes at the stations and supports and the design actions, in the
        output units of the case.

    Warns
    -----
    EnvelopeWarning
        For each warning of the solver (a nearly singular beam, for one).
    """
    result = _analyse(beam, limits)
    for message in result.solved.solution.warnings:
        warnings.warn(f"{beam.source}: {message}", EnvelopeWarning, stacklevel=2)
    return result


def tables(result: Analysis) -> dict[str, pa.Table]:
    """The result tables of the outputs contract.

    Parameters
    ----------
    result : Analysis
        From :func:`analyse`.

    Returns
    -------
    dict of str to pyarrow.Table
        By file stem: ``envelope``, ``reactions``, ``design``, ``cases`` and, when the
        case has a ``[design]`` table, ``sizing`` (and ``bars`` for concrete).
    """
    return _tables(result, False)


def _tables(result: Analysis, all_cases: bool) -> dict[str, pa.Table]:
    """Every table :func:`write` writes (with ``all_cases``, the cases table lists every
    explicit case)."""
    from envelope import store

    built = store.tables(result, all_cases)
    if result.beam.design is not None:
        from envelope.sizing.table import sizing_tables

        built.update(sizing_tables(result))
    return built


def built_tables(result: Analysis, all_cases: bool) -> dict[str, pa.Table]:
    """The tables :func:`write` writes, by file stem (see :func:`write_built`)."""
    return _tables(result, all_cases)


def summary_text(result: Analysis) -> str:
    """The console summary: governing values per span, then the sizing when the case
    has a ``[design]`` table; each part ends with its caution line.

    Parameters
    ----------
    result : Analysis
        From :func:`analyse`.

    Returns
    -------
    str
        Fixed-width text, one line per row (newline-separated).
    """
    from envelope.summary import span_summary

    text = span_summary(result)
    if result.beam.design is not None:
        from envelope.sizing.table import sizing_summary

        text += "\n" + sizing_summary(result)
    return text


def plot(result: Analysis, ax: Axes | None = None) -> Figure:
    """Draw the envelope figure of an analysis.

    Parameters
    ----------
    result : Analysis
        From :func:`analyse`.
    ax : matplotlib.axes.Axes, optional
        Draw into the space this Axes takes in its figure (it is replaced by the
        figure's panels); by default a new figure, whose ``savefig`` keeps the text
        editable (TrueType in PDF, text in SVG).  A figure of your own saves with your
        rc settings: save it within ``matplotlib.rc_context(envelope.plots.STYLE)``
        for the same.

    Returns
    -------
    matplotlib.figure.Figure
        The figure drawn on (shown inline by a notebook; save it with ``savefig``).
    """
    from envelope import plots, store

    return plots.figure(store.result_columns(tables(result)), ax=ax)


def write(result: Analysis, out: str | os.PathLike[str] = "results", plots: bool = False,
          all_cases: bool | None = None, durable: bool = True) -> Path:
    """Write every result file of one beam to ``OUT/<id>/``.

    All tables are built and checked before the first file is written, so a failure in
    the analysis or the tables writes nothing.  Result files an earlier run left in the
    folder and this one did not write (``stations.parquet``, ``envelope.png``...), and
    files made from the earlier results (``report.html``, ``report.pdf``, exports,
    influence lines), are removed afterwards.

    Parameters
    ----------
    result : Analysis
        From :func:`analyse`.
    out : str or path-like, default "results"
        The output folder; files go to ``OUT/<id>/``.
    plots : bool, default False
        Also draw ``envelope.png``.
    all_cases : bool, optional
        Also write ``stations.parquet``; by default the case file's
        ``[output] all_cases``.
    durable : bool, default True
        Fsync each file (see :func:`envelope.files.write_atomic`).

    Returns
    -------
    pathlib.Path
        The folder written, ``OUT/<id>``.
    """
    if all_cases is None:
        all_cases = result.beam.output.all_cases
    return write_built(result, _tables(result, all_cases), out, plots, all_cases, durable)


def result_names(built: dict[str, pa.Table], all_cases: bool, plots: bool) -> set[str]:
    """The files :func:`write_built` writes for the tables ``built`` and these options
    (the batch's manifest lists them)."""
    names = {f"{stem}.parquet" for stem in built}
    if all_cases:
        names.add("stations.parquet")
    if plots:
        names.add(FIGURE)
    return names


def write_built(result: Analysis, built: dict[str, pa.Table], out: str | os.PathLike[str],
                plots: bool, all_cases: bool, durable: bool) -> Path:
    """:func:`write` of tables already built by :func:`built_tables` (the batch worker
    keeps them: the beam's envelope table is also its partition of OUT/_all)."""
    from envelope import store

    root = Path(out)
    folder = root / result.beam.id
    store.check_tables(folder, built)  # refuse before anything is written
    made = [p for p in (root, folder) if not os.path.lexists(p)]
    root.mkdir(parents=True, exist_ok=True)
    real_folder(root, folder)  # no link at OUT/<id>: nothing written outside OUT
    # Every file is written into a staging folder first and moved into place only when
    # all are written, so a failure (a full disk, a figure that cannot be drawn, an
    # interrupt) leaves the folder as it was; a staging folder a kill leaves behind is
    # removed by the next write of the beam or batch run over OUT (its name ends in .tmp).
    with os.scandir(folder) as entries:  # (not Path.glob: no pattern compiled each run)
        left = [Path(e.path) for e in entries if e.name.startswith(".staging-")
                and e.name.endswith(".tmp") and e.is_dir(follow_symlinks=False)]
    for old in left:  # left by a killed write (one writer a folder)
        import shutil  # rarely needed: not imported at start-up

        shutil.rmtree(old, ignore_errors=True)
    stage = temporary_folder(folder, ".staging-", ".tmp")
    written = result_names(built, all_cases, plots)
    try:
        if all_cases:
            store.write_stations(stage / "stations.parquet", result, durable, staged=True)
        store.write_tables(stage, built, durable, checked=True, staged=True)
        if plots:
            from envelope import plots as figures

            figures.draw_results(store.result_columns(built), stage / FIGURE, durable)
        for item in sorted(stage.iterdir()):  # (the tables under their staged names)
            os.replace(item, folder / final_name(item.name))
        stage.rmdir()
    except BaseException as exc:
        import shutil

        shutil.rmtree(stage, ignore_errors=True)
        for path in reversed(made):  # folders this call created, when left empty
            with contextlib.suppress(OSError):
                path.rmdir()
        if isinstance(exc, OSError):
            raise OutputError(f"{folder}: cannot write the results ({exc.strerror or exc}); "
                              "nothing was written", exit_code=1) from None
        raise
    _remove_stale(folder, written)
    return folder


def _remove_stale(folder: Path, written: set[str]) -> None:
    """Remove result files of an earlier run that this run did not write, and what was
    made from them (the report, exports, influence lines); never through a link."""
    with os.scandir(folder) as entries:
        for entry in entries:
            name = entry.name
            if name == _CSV_FOLDER and entry.is_dir(follow_symlinks=False):
                _remove_csv_export(Path(entry.path))
            if name in written or not entry.is_file(follow_symlinks=False):
                continue
            if is_result_file(name):
                Path(entry.path).unlink(missing_ok=True)


def _remove_csv_export(folder: Path) -> None:
    """Remove OUT/<id>/csv when it holds only what ``envelope export`` writes there."""
    with os.scandir(folder) as entries:
        items = list(entries)
    if not all(e.is_file(follow_symlinks=False) and e.name.endswith(_CSV_FILES)
               for e in items):
        return  # something of the user's: left alone
    for e in items:
        Path(e.path).unlink(missing_ok=True)
    with contextlib.suppress(OSError):
        folder.rmdir()


def redraw(folder: str | os.PathLike[str], output: str | os.PathLike[str] | None = None) -> Path:
    """Draw the envelope figure of a result folder from its Parquet files.

    Parameters
    ----------
    folder : str or path-like
        A beam's result folder, ``OUT/<id>``.
    output : str or path-like, optional
        The figure file (``.png``, ``.svg`` or ``.pdf``); default
        ``FOLDER/envelope.png``.

    Returns
    -------
    pathlib.Path
        The figure written.
    """
    from envelope import plots, store

    folder = Path(folder)
    try:
        results = store.read_results(folder)
    except (FileNotFoundError, OSError) as exc:
        raise EnvelopeError(f"{folder}: not a result folder ({exc})") from None
    return plots.draw_results(results, Path(output) if output else folder / FIGURE)
