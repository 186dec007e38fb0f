"""The work of one beam and of one chunk of beams, run in a worker process."""

from __future__ import annotations

import json
import os
import signal
import threading
import time
import warnings
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from pathlib import Path

from envelope import engine_version
from envelope.batch.combined import COMBINED_STEMS, to_ipc, write_partition
from envelope.batch.model import COMBINED, MANIFEST, BatchError, Outcome, Task
from envelope.errors import EnvelopeError, EnvelopeWarning
from envelope.files import is_link, real_folder, sync_file, write_atomic


def _is_result(name: str) -> bool:
    """A file name that a beam run writes or makes from its results (removed when a
    rerun no longer writes it): :func:`envelope.api.is_result_file`."""
    from envelope.api import is_result_file

    return is_result_file(name)


def _sizes(folder: Path, names: set[str]) -> dict[str, int]:
    """The size in bytes of each file of ``names`` in ``folder``, by name, sorted (a
    file that is not there fails the beam: the manifest never lists a missing file)."""
    return {name: os.lstat(folder / name).st_size for name in sorted(names)}


def _message(exc: BaseException, target: str, shown: str) -> str:
    text = str(exc) if isinstance(exc, EnvelopeError) else \
        f"internal error ({type(exc).__name__}): {exc}"
    text = " ".join(text.split())  # one line
    return text.replace(target, shown) if target != shown else text


class TimeLimitExceeded(Exception):
    """Raised in a worker when a beam runs past the batch's time limit."""


@contextmanager
def _time_limit(seconds: float | None) -> Iterator[None]:
    """Raise :class:`TimeLimitExceeded` in this thread after ``seconds``: by an interval
    timer in a process's main thread (the local pool's workers), else (a Dask worker
    runs beams in threads) by a timer thread that raises it asynchronously in this
    one, which takes effect the next time the beam's Python code runs (between numpy
    operations, so a single long library call finishes first)."""
    if not seconds:
        yield
        return
    if threading.current_thread() is not threading.main_thread() \
            or not hasattr(signal, "setitimer"):
        with _thread_time_limit(seconds):
            yield
        return

    def expired(signum: int, frame: object) -> None:
        raise TimeLimitExceeded

    previous = signal.signal(signal.SIGALRM, expired)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)


@contextmanager
def _thread_time_limit(seconds: float) -> Iterator[None]:
    """:func:`_time_limit` for a thread other than the main one.  The timer raises only
    while the block runs (a lock and a flag), and a raise that has not yet reached the
    thread when the block ends is withdrawn, so nothing escapes past the block."""
    import ctypes

    ident = ctypes.c_ulong(threading.get_ident())
    raise_in = ctypes.pythonapi.PyThreadState_SetAsyncExc
    lock = threading.Lock()
    running = [True]

    def expired() -> None:
        with lock:
            if running[0]:
                raise_in(ident, ctypes.py_object(TimeLimitExceeded))

    timer = threading.Timer(seconds, expired)
    timer.daemon = True
    timer.start()
    try:
        yield
    finally:
        with lock:
            running[0] = False
            raise_in(ident, None)  # withdraw one not yet delivered
        timer.cancel()


def _clear_results(folder: Path) -> None:
    """Remove the result files of a beam folder whose run failed after it began writing,
    so that no folder holds results without their manifest (never through a link)."""
    if is_link(folder) or not folder.is_dir():
        return
    for item in folder.iterdir():
        if _is_result(item.name) and not item.is_symlink() and item.is_file():
            item.unlink(missing_ok=True)


def run_beam(task: Task, out: str, plots: bool, unsynced: list[Path] | None = None
             ) -> Outcome:
    """Analyse one case file and write ``OUT/<id>/`` as ``envelope run`` does, then the
    manifest; any error becomes the outcome's message (nothing raised).  A failure after
    writing began removes the beam's result files, so the folder is either complete with
    its manifest or holds no results.  With ``unsynced`` the manifest is not fsynced but
    added to that list, for the caller to fsync (:func:`run_chunk`: once a chunk)."""
    from envelope import api

    target, shown, quick_id, limit, work_limits = task[:5]
    parsed = task[5] if len(task) > 5 else None
    start = time.perf_counter()
    beam_id = quick_id or ""
    folder: Path | None = None
    try:
        with _time_limit(limit):
            beam = api.load_case(target, parsed)
            beam_id = beam.id
            if beam.id == COMBINED:
                raise BatchError(f"{target}: id: {COMBINED!r} is reserved for the combined "
                                 "results of a batch; give the beam another id")
            with warnings.catch_warnings():  # kept in each file's envelope:warnings
                warnings.simplefilter("ignore", EnvelopeWarning)
                result = api.analyse(beam, work_limits)
            analysed = time.perf_counter()
            # no link anywhere below OUT on the way to the beam's folder
            real_folder(Path(out), Path(out) / beam.id)
            folder = Path(out) / beam.id
            # From here on the folder is not complete until the new manifest stands.
            (folder / MANIFEST).unlink(missing_ok=True)
            # no fsync per file: the manifest, written last, is checked against every
            # file (size and input hash) before a beam counts as done, so a file lost to
            # a power failure is found and the beam rerun
            all_cases = beam.output.all_cases
            built = api.built_tables(result, all_cases)
            # writes every file of the beam and removes the result files of an earlier
            # run that this one did not write (stale)
            api.write_built(result, built, out, plots, all_cases, durable=False)
            written = time.perf_counter()
            write_partition(Path(out), beam.id, beam.units.name, built["envelope"])
            manifest = {
                "beam": beam.id, "input_sha256": beam.input_sha256,
                "version": engine_version(), "source": shown, "units": beam.units.name,
                "plots": plots, "files": _sizes(folder, api.result_names(built, all_cases, plots)),
            }
            data = (json.dumps(manifest, indent=1, sort_keys=True) + "\n").encode()
            write_atomic(folder / MANIFEST, lambda fh: fh.write(data), unsynced is None)
            if unsynced is not None:
                unsynced.append(folder / MANIFEST)
            combined = {stem: to_ipc(built[stem]) for stem in COMBINED_STEMS if stem in built}
        done = time.perf_counter()
        return Outcome(shown, beam.id, None, manifest, analysed - start, written - analysed,
                       done - written, combined)
    except Exception as exc:
        if folder is not None:
            _clear_results(folder)
        if isinstance(exc, TimeLimitExceeded):
            message = (f"{shown}: stopped after the time limit of {limit:g} s per beam "
                       "(--time-limit)")
        else:
            message = _message(exc, target, shown)
        return Outcome(shown, beam_id, message, None, time.perf_counter() - start, 0.0)


def run_chunk(tasks: Sequence[Task], out: str, plots: bool) -> list[Outcome]:
    """One unit of work for a worker: several beams, one after the other, their manifests
    fsynced together at the end (the first fsync commits them all, the rest find nothing
    left to write).  A beam counts as done for a later batch only when its manifest
    stands and every file it lists has the listed size and stamp, so a manifest or file
    lost to a power failure before then means the beam is run again."""
    unsynced: list[Path] = []
    outcomes = [run_beam(task, out, plots, unsynced) for task in tasks]
    for path in unsynced:
        sync_file(path)
    return outcomes


def worker_engine_version() -> str:
    """The engine version of the process this runs in (asked of cluster workers)."""
    return engine_version()


def _died(task: Task, how: str) -> Outcome:
    return Outcome(task[1], task[2] or "", f"{task[1]}: {how}")
