"""The batch itself: one run under the lock of OUT, from discovery to the combined results."""

from __future__ import annotations

import io
import os
import time
from collections.abc import Iterator, Sequence
from contextlib import ExitStack, contextmanager
from pathlib import Path
from typing import Any, TextIO

from envelope.batch.cluster import _check_cluster, connect, run_cluster
from envelope.batch.combined import combine, write_failures
from envelope.batch.discovery import Parsed, check_duplicates, discover, identify, unreadable
from envelope.batch.local import default_workers, run_local
from envelope.batch.model import COMBINED, BatchError, Entry, Outcome, Summary
from envelope.batch.progress import Progress, _Silent
from envelope.batch.resume import _remove_temporaries, completed
from envelope.files import is_link, real_folder

#: The advisory lock file of a batch in OUT.
LOCK = ".envelope-batch.lock"


@contextmanager
def _lock(out: Path, shown: str) -> Iterator[None]:
    """One batch at a time per OUT (an advisory lock the kernel drops with the process)."""
    path = out / LOCK
    try:  # never through a link: the lock file is created inside OUT or not at all
        fd = os.open(path, os.O_RDWR | os.O_CREAT | getattr(os, "O_NOFOLLOW", 0), 0o666)
    except OSError as exc:
        if is_link(path):
            raise BatchError(f"{path}: the lock file is a symbolic link; remove it (a "
                             "batch writes nothing outside the output folder)") from None
        raise BatchError(f"{path}: cannot create the lock file ({exc.strerror or exc})"
                         ) from None
    try:
        try:
            import fcntl
        except ImportError:  # no advisory locks on this platform
            yield
            return
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            raise BatchError(f"{shown}: another batch is writing to this folder") from None
        yield
    finally:
        os.close(fd)


def run_batch(paths: Sequence[str], out: str | os.PathLike[str], *, workers: int | None = None,
              scheduler: str | None = None, plots: bool = False, force: bool = False,
              progress: TextIO | None = None, chunk: int | None = None,
              units: str | None = None, failures: Sequence[Outcome] = (),
              time_limit: float | None = None, work_limits: Any = None) -> Summary:
    """Analyse every case file named by ``paths`` into ``OUT/<id>/`` and refresh
    ``OUT/_all/``.  Beams already done for the same input and engine version are
    skipped unless ``force``.  Raises :class:`BatchError` before anything is written when
    the paths, the ids or the cluster are wrong; failures of single beams are in the
    summary and in ``OUT/_all/failures.csv``, among them the paths that are not regular
    files (FIFOs, devices, link loops, dangling links).  A beam that runs longer than
    ``time_limit`` seconds is stopped and recorded as failed (local pool or cluster); one whose
    estimated work exceeds ``work_limits`` (:class:`envelope.limits.WorkLimits`) is
    refused.  Nothing
    is written or deleted through a symbolic link inside OUT.  Progress goes to
    ``progress`` if given.  ``units`` ("SI" or "US") converts the combined tables to one
    system; ``failures`` are beams that failed before the batch (bad rows of a beam
    schedule), listed too."""
    started = time.perf_counter()
    if scheduler is not None and workers is not None:
        raise BatchError("--workers sets the local pool; with --scheduler the cluster's "
                         "workers are used (give one or the other)")
    shown_out = os.fspath(out)
    out_path = Path(os.path.abspath(out))
    if time_limit is not None and time_limit <= 0:
        raise BatchError(f"--time-limit must be greater than zero, got {time_limit:g}")
    not_cases: list[tuple[str, str]] = []
    parsed: Parsed = {}  # a case file found in a folder is parsed once, not twice
    entries = [identify(i, p, absolute=scheduler is not None, parsed=parsed)
               for i, p in enumerate(discover(paths, not_cases, parsed))]
    del parsed
    check_duplicates(entries)
    summary = Summary(out=Path(shown_out), total=len(entries) + len(failures),
                      not_cases=not_cases)
    summary.outcomes.extend(failures)
    done: dict[str, dict[str, Any]] = {}
    todo: list[Entry] = []
    refused: list[Outcome] = []
    for entry in entries:
        reason = unreadable(entry.path)
        if reason is not None:  # never opened by a worker (a FIFO would block it)
            refused.append(Outcome(entry.path, "", f"{entry.path}: {reason}; skipped"))
            continue
        manifest = None if force else completed(out_path, entry, plots)
        if manifest is None:
            todo.append(entry)
        else:
            assert entry.beam_id is not None
            done[entry.beam_id] = manifest
            summary.skipped.append(entry.beam_id)

    with ExitStack() as stack:
        client = None
        if scheduler is not None and todo:  # nothing to run: no cluster needed
            client = stack.enter_context(connect(scheduler))
        created = not out_path.exists()
        out_path.mkdir(parents=True, exist_ok=True)
        stack.enter_context(_lock(out_path, shown_out))
        # refuse links where the batch deletes and writes its own files, before either
        real_folder(out_path, out_path / COMBINED / "envelope", create=False)
        if client is not None:
            try:
                slots = _check_cluster(client, os.fspath(out_path), todo[0].target)
            except BatchError:
                if created:  # leave no trace of a batch that could not start
                    (out_path / LOCK).unlink(missing_ok=True)
                    out_path.rmdir()
                raise
        else:
            slots = workers or default_workers()
        summary.outcomes.extend(refused)
        if progress is not None:
            for outcome in refused:
                progress.write(f"error: {outcome.error}\n")
        _run(todo, out_path, summary, done, client, slots, plots, progress, chunk, time_limit,
             work_limits)
        # Temporaries of writes killed with a worker or a batch, in every folder of the
        # batch (a beam completed by a later run may hold one of an earlier kill); the
        # batch's own workers are done by now.
        ids = {e.beam_id for e in entries} | {o.beam_id for o in summary.outcomes}
        for beam_id in sorted(i for i in ids if i and i != COMBINED):
            _remove_temporaries(out_path / beam_id)
        # the beams written in this batch: each worker wrote the partition before the
        # manifest, so their partitions need no second look
        fresh = {o.beam_id for o in summary.outcomes
                 if o.error is None and o.manifest is not None}
        # and their design, sizing and bars tables came with their outcomes
        given = {o.beam_id: o.tables for o in summary.outcomes
                 if o.beam_id in fresh and o.tables is not None}
        combine(out_path, done, units, fresh, given)
        write_failures(out_path, summary.failed, {e.path: e.index for e in entries})
    summary.seconds = time.perf_counter() - started
    return summary


def _run(todo: Sequence[Entry], out: Path, summary: Summary, done: dict[str, dict[str, Any]],
         client: Any, slots: int, plots: bool, progress: TextIO | None,
         chunk: int | None, time_limit: float | None = None,
         work_limits: Any = None) -> None:
    """Run the beams of ``todo`` on the cluster of ``client`` (or a local pool of ``slots``
    processes), recording each outcome in ``summary`` and ``done`` as it arrives."""
    order = {e.path: e.index for e in todo}
    bar = Progress(len(todo), progress) if progress is not None else \
        _Silent(len(todo), io.StringIO(), tty=False)
    if progress is not None and summary.skipped:
        progress.write(f"batch: {len(summary.skipped)} of {summary.total} beams unchanged "
                       "since the last run, skipped\n")

    def report(outcomes: list[Outcome]) -> None:
        failed = 0
        for o in outcomes:
            summary.outcomes.append(o)
            if o.error is None:
                assert o.manifest is not None
                done[o.beam_id] = o.manifest
            else:
                failed += 1
                bar.note(f"error: {o.error}")
        if failed:  # kept up to date, so that a killed batch leaves its failures listed
            write_failures(out, summary.failed, order)
        bar.advance(len(outcomes), failed)

    run_started = time.perf_counter()
    tasks = [e.task(time_limit, work_limits) for e in todo]
    if tasks and client is not None:
        run_cluster(tasks, os.fspath(out), plots, client, slots, report, chunk)
    elif tasks:
        run_local(tasks, os.fspath(out), plots, slots, report, chunk, note=bar.note)
    summary.run_seconds = time.perf_counter() - run_started
    bar.close()
