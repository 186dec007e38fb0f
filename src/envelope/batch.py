"""Batches: many case files analysed on a local process pool or a dask.distributed cluster.

No engineering here, only orchestration:

* discovery: case files, folders (every ``*.toml`` inside, recursively, hidden folders
  skipped) and glob patterns, in a stable order;
* a duplicate-id check before anything runs (two files would write one ``OUT/<id>/``);
* resume: a beam is done when ``OUT/<id>/.complete.json`` (the manifest, written last,
  atomically) names the SHA-256 of the current input and this engine version, and every
  file it lists is there with its size and, for Parquet files, the same hash and version
  in its metadata.  A rerun of a beam first removes the manifest, so a folder where a
  kill left some files new and others old is never taken as done;
* the work: beams go to the workers in chunks (lists of paths), so each worker process
  imports the engine once and the per-task cost is spread over several beams.  Each beam
  is written with :func:`envelope.api.write`, exactly as ``envelope run`` writes it;
* failures: a bad file, an unstable beam or any other error is one row of
  ``OUT/_all/failures.csv`` and the batch goes on.  A worker process that dies (killed,
  out of memory) is survived too: its beams are retried, then isolated, and a beam that
  kills its worker when run alone is recorded as a failure;
* combined results for the beams of the batch, refreshed at the end of every run:
  ``OUT/_all/envelope/beam=<id>/part-0.parquet`` (a Parquet dataset partitioned by beam),
  ``OUT/_all/design.parquet`` (one row per span per beam) and, where beams have
  ``sizing.parquet``, ``OUT/_all/sizing.parquet``.

Every file is written atomically (:mod:`envelope.files`), so the process may be killed at
any moment: a rerun of the same command completes the batch, and its outputs are those
of a clean run.  pyarrow, the engine and dask are imported only where they are used, so
that ``envelope --help`` stays quick.
"""

from __future__ import annotations

import csv
import glob
import hashlib
import io
import json
import math
import os
import shutil
import signal
import sys
import threading
import time
import tomllib
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from contextlib import ExitStack, contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, TextIO

import click

from envelope import engine_version
from envelope.errors import EnvelopeError
from envelope.files import write_atomic

#: The manifest of a complete beam folder, written after every other file.
MANIFEST = ".complete.json"
#: The folder of the combined results under OUT; no beam may take this id.
COMBINED = "_all"
#: The advisory lock file of a batch in OUT.
LOCK = ".envelope-batch.lock"
#: Seconds between progress lines when standard error is not a terminal.
PLAIN_INTERVAL = 10.0
#: Seconds between redraws of the progress bar on a terminal.
BAR_INTERVAL = 0.2
#: Chunks per worker slot: enough for load balance at the end of the batch.
CHUNKS_PER_SLOT = 4
#: Most beams in one task (a task lost with its worker is rerun whole).
MAX_CHUNK = 16
#: Seconds to wait for a scheduler, or for its first worker.
CONNECT_TIMEOUT = 30.0

#: A task: (path the worker opens, path shown to the user, id from a quick read or None).
Task = tuple[str, str, str | None]


class BatchError(EnvelopeError):
    """A batch that cannot start (bad paths, duplicate ids, an unusable cluster)."""


class DuplicateIdError(BatchError):
    """Two or more case files give the same beam id; one line per duplicate."""

    def __init__(self, lines: list[str]) -> None:
        self.lines = lines
        super().__init__(lines[0] if len(lines) == 1 else
                         f"{lines[0]} (and {len(lines) - 1} more)")


class ClusterError(EnvelopeError):
    """The cluster stopped answering in the middle of a batch (rerun to resume)."""

    exit_code = 1


@dataclass(frozen=True, slots=True)
class Entry:
    """One case file of the batch as the coordinating process sees it."""

    index: int            # discovery order
    path: str             # as shown to the user
    target: str           # as opened by a worker (absolute for a cluster)
    beam_id: str | None   # from a quick read of the file; None when it cannot be told
    sha256: str | None    # of the raw bytes; None when the file cannot be read

    @property
    def task(self) -> Task:
        return (self.target, self.path, self.beam_id)


@dataclass(frozen=True, slots=True)
class Outcome:
    """What a worker did with one case file (timings in seconds)."""

    path: str
    beam_id: str
    error: str | None = None          # None: written
    manifest: dict[str, Any] | None = None
    analyse_seconds: float = 0.0      # reading, checking and analysing the case
    write_seconds: float = 0.0        # api.write: the beam's own files
    batch_seconds: float = 0.0        # the batch's own writes: partition and manifest


@dataclass
class Summary:
    """The result of :func:`run_batch`."""

    out: Path
    total: int = 0
    skipped: list[str] = field(default_factory=list)     # beam ids, unchanged
    outcomes: list[Outcome] = field(default_factory=list)
    seconds: float = 0.0                                 # wall time of the whole batch
    run_seconds: float = 0.0                             # wall time of the analysis part

    @property
    def written(self) -> list[Outcome]:
        return [o for o in self.outcomes if o.error is None]

    @property
    def failed(self) -> list[Outcome]:
        return [o for o in self.outcomes if o.error is not None]


# ---------------------------------------------------------------------------
# Discovery, identification, duplicates
# ---------------------------------------------------------------------------


def _visible(path: Path, base: Path) -> bool:
    """False for files inside hidden folders below ``base`` (``.git``, ``.cache``...)."""
    return not any(part.startswith(".") for part in path.relative_to(base).parts[:-1])


def discover(paths: Sequence[str]) -> list[str]:
    """Case files named by ``paths``: files as given, folders searched recursively for
    ``*.toml``, glob patterns expanded (``**`` allowed).  Each file once, in order."""
    found: list[str] = []
    seen: set[str] = set()

    def add(name: str) -> None:
        key = os.path.realpath(name)
        if key not in seen:
            seen.add(key)
            found.append(name)

    def add_folder(folder: str) -> None:
        base = Path(folder)
        for p in sorted(base.rglob("*.toml"), key=lambda p: str(p)):
            if p.is_file() and _visible(p, base):
                add(str(p))

    for name in paths:
        if os.path.isdir(name):
            add_folder(name)
        elif os.path.isfile(name):
            add(name)
        elif glob.has_magic(name):
            matches = sorted(glob.glob(name, recursive=True))
            if not matches:
                raise BatchError(f"{name}: no file matches this pattern")
            for match in matches:
                if os.path.isdir(match):
                    add_folder(match)
                elif os.path.isfile(match):
                    add(match)
        else:
            raise BatchError(f"{name}: no such file or folder")
    if not found:
        raise BatchError(f"no case files (*.toml) found in {', '.join(paths)}")
    return found


def identify(index: int, path: str, absolute: bool = False) -> Entry:
    """Hash the file and read its id the way the case reader does (the ``id`` key, else
    the file stem), without checking the rest: the worker reports any problem."""
    from envelope.casefile import ID_PATTERN

    target = os.path.abspath(path) if absolute else path
    try:
        raw = Path(path).read_bytes()
    except OSError:
        return Entry(index, path, target, None, None)
    sha256 = hashlib.sha256(raw).hexdigest()
    try:
        data = tomllib.loads(raw.decode("utf-8-sig"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError):
        return Entry(index, path, target, None, sha256)
    beam_id = data.get("id", Path(path).stem) if data else None
    if not isinstance(beam_id, str) or not ID_PATTERN.fullmatch(beam_id) \
            or beam_id in (".", ".."):
        beam_id = None
    return Entry(index, path, target, beam_id, sha256)


def check_duplicates(entries: Sequence[Entry]) -> None:
    """Refuse two files with one id (they would write the same ``OUT/<id>/``)."""
    first: dict[str, Entry] = {}
    lines = []
    for entry in entries:
        if entry.beam_id is None:
            continue
        other = first.setdefault(entry.beam_id, entry)
        if other is not entry:
            lines.append(f"duplicate beam id {entry.beam_id!r}: {other.path} and {entry.path} "
                         "(give each file its own id)")
    if lines:
        raise DuplicateIdError(lines)


# ---------------------------------------------------------------------------
# Completeness (resume)
# ---------------------------------------------------------------------------


def _stamped(path: Path, sha256: str) -> bool:
    """Does the Parquet file at ``path`` carry this input hash and this engine version?"""
    import pyarrow.parquet as pq

    try:
        meta = pq.read_schema(path).metadata or {}
    except Exception:  # missing, truncated or not Parquet at all
        return False
    return (meta.get(b"envelope:input_sha256") == sha256.encode()
            and meta.get(b"envelope:version") == engine_version().encode())


def completed(out: Path, entry: Entry, plots: bool) -> dict[str, Any] | None:
    """The manifest of ``entry``'s beam folder when the beam is done for this input and
    engine version (every listed file present, of the listed size, Parquet files stamped
    with the same hash and version, and envelope.png when ``plots``); else None."""
    if entry.beam_id is None or entry.sha256 is None:
        return None
    folder = out / entry.beam_id
    try:
        manifest = json.loads((folder / MANIFEST).read_bytes())
    except (OSError, ValueError):
        return None
    if (not isinstance(manifest, dict) or manifest.get("input_sha256") != entry.sha256
            or manifest.get("version") != engine_version()
            or manifest.get("beam") != entry.beam_id):
        return None
    files = manifest.get("files")
    if not isinstance(files, dict) or "envelope.parquet" not in files \
            or (plots and "envelope.png" not in files):
        return None
    for name, size in files.items():
        path = folder / str(name)
        try:
            if path.stat().st_size != size:
                return None
        except OSError:
            return None
        if path.suffix == ".parquet" and not _stamped(path, entry.sha256):
            return None
    return manifest


def _remove_temporaries(folder: Path) -> None:
    """Remove the temporary files a killed atomic write leaves (``.<name>.*.tmp``)."""
    for tmp in folder.glob(".*.tmp"):
        tmp.unlink(missing_ok=True)


# ---------------------------------------------------------------------------
# The work of one beam (runs in a worker process)
# ---------------------------------------------------------------------------


def _is_result(name: str) -> bool:
    """A file name that a beam run writes (removed when a rerun no longer writes it)."""
    return not name.startswith(".") and (name.endswith(".parquet") or name == "envelope.png")


def _snapshot(folder: Path) -> dict[str, tuple[int, int, int]]:
    """Identity (inode, mtime, size) of each visible file in ``folder``."""
    out: dict[str, tuple[int, int, int]] = {}
    try:
        with os.scandir(folder) as it:
            for item in it:
                if item.is_file() and not item.name.startswith("."):
                    st = item.stat()
                    out[item.name] = (st.st_ino, st.st_mtime_ns, st.st_size)
    except FileNotFoundError:
        pass
    return out


def _message(exc: BaseException, target: str, shown: str) -> str:
    text = str(exc) if isinstance(exc, EnvelopeError) else \
        f"internal error ({type(exc).__name__}): {exc}"
    text = " ".join(text.split())  # one line
    return text.replace(target, shown) if target != shown else text


def run_beam(task: Task, out: str, plots: bool) -> Outcome:
    """Analyse one case file and write ``OUT/<id>/`` as ``envelope run`` does, then the
    manifest; any error becomes the outcome's message (nothing raised)."""
    from envelope import api

    target, shown, quick_id = task
    start = time.perf_counter()
    beam_id = quick_id or ""
    try:
        beam = api.load_case(target)
        beam_id = beam.id
        if beam.id == COMBINED:
            raise BatchError(f"{target}: id: {COMBINED!r} is reserved for the combined "
                             "results of a batch; give the beam another id")
        result = api.analyse(beam)
        analysed = time.perf_counter()
        folder = Path(out) / beam.id
        # From here on the folder is not complete until the new manifest stands.
        (folder / MANIFEST).unlink(missing_ok=True)
        before = _snapshot(folder)
        api.write(result, out, plots=plots)
        written = time.perf_counter()
        after = _snapshot(folder)
        produced = {name: ident for name, ident in after.items() if before.get(name) != ident}
        for name in before.keys() - produced.keys():
            if _is_result(name):  # written by an earlier run, not by this one: stale
                (folder / name).unlink(missing_ok=True)
        write_partition(Path(out), beam.id, beam.units.name)
        manifest = {
            "beam": beam.id, "input_sha256": beam.input_sha256, "version": engine_version(),
            "source": shown, "units": beam.units.name, "plots": plots,
            "files": {name: produced[name][2] for name in sorted(produced)},
        }
        data = (json.dumps(manifest, indent=1, sort_keys=True) + "\n").encode()
        write_atomic(folder / MANIFEST, lambda fh: fh.write(data))
        done = time.perf_counter()
        return Outcome(shown, beam.id, None, manifest, analysed - start, written - analysed,
                       done - written)
    except Exception as exc:
        return Outcome(shown, beam_id, _message(exc, target, shown), None,
                       time.perf_counter() - start, 0.0)


def run_chunk(tasks: Sequence[Task], out: str, plots: bool) -> list[Outcome]:
    """One unit of work for a worker: several beams, one after the other."""
    return [run_beam(task, out, plots) for task in tasks]


def worker_engine_version() -> str:
    """The engine version of the process this runs in (asked of cluster workers)."""
    return engine_version()


def _died(task: Task, how: str) -> Outcome:
    return Outcome(task[1], task[2] or "", f"{task[1]}: {how}")


# ---------------------------------------------------------------------------
# The local process pool
# ---------------------------------------------------------------------------


def _watch_parent(parent: int) -> None:
    """End this worker when the coordinating process ends, even by SIGKILL: at once on
    Linux (PR_SET_PDEATHSIG), within a second elsewhere (polling the parent id)."""
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG
        except (OSError, AttributeError):
            pass

    def poll() -> None:
        while True:
            if os.getppid() != parent:
                os._exit(1)
            time.sleep(1.0)

    threading.Thread(target=poll, name="envelope-parent-watch", daemon=True).start()


#: Thread pools of the numerical libraries, one thread per worker process unless the
#: user set otherwise: the pool already keeps every core busy, and more threads per
#: process only contend for the same cores.
THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS",
                    "VECLIB_MAXIMUM_THREADS", "NUMEXPR_NUM_THREADS")


def _init_worker(parent: int) -> None:
    """Once per worker process: leave Ctrl-C to the coordinator, die with it, one thread
    per numerical library (set before numpy loads), and import the engine and pyarrow
    now rather than in the first beam."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    _watch_parent(parent)
    for name in THREAD_VARIABLES:
        os.environ.setdefault(name, "1")
    import envelope.api
    import envelope.store  # noqa: F401  (pyarrow)


def _pool(workers: int) -> ProcessPoolExecutor:
    import multiprocessing

    # spawn: a clean interpreter, no copy of the coordinator's threads or locks
    return ProcessPoolExecutor(max_workers=workers, mp_context=multiprocessing.get_context("spawn"),
                               initializer=_init_worker, initargs=(os.getpid(),))


Work = Callable[[Sequence[Task], str, bool], list[Outcome]]


def _drain(chunks: Sequence[list[Task]], workers: int, window: int, out: str, plots: bool,
           report: Callable[[list[Outcome]], None], work: Work) -> list[list[Task]]:
    """Run ``work`` on each of ``chunks`` on pools of ``workers`` processes with at most
    ``window`` tasks in flight; returns the chunks that were in flight when a worker
    process died (a new pool takes the rest)."""
    todo = deque(chunks)
    broken: list[list[Task]] = []
    while todo:
        pool = _pool(max(1, min(workers, len(todo))))
        try:
            inflight: dict[Future[list[Outcome]], list[Task]] = {}
            dead = False
            while (todo and not dead) or inflight:
                while todo and not dead and len(inflight) < window:
                    chunk = todo.popleft()
                    try:
                        inflight[pool.submit(work, chunk, out, plots)] = chunk
                    except BrokenProcessPool:
                        todo.appendleft(chunk)
                        dead = True
                if not inflight:
                    break
                finished, _ = wait(inflight, return_when=FIRST_COMPLETED)
                for future in finished:
                    chunk = inflight.pop(future)
                    try:
                        outcomes = future.result()
                    except BrokenProcessPool:
                        broken.append(chunk)
                        dead = True
                        continue
                    except Exception as exc:  # could not send or receive the task
                        outcomes = [_died(t, f"the task failed ({type(exc).__name__}: "
                                             f"{exc})") for t in chunk]
                    report(outcomes)
        finally:
            pool.shutdown(wait=True, cancel_futures=True)
    return broken


def run_local(tasks: Sequence[Task], out: str, plots: bool, workers: int,
              report: Callable[[list[Outcome]], None], chunk: int | None = None,
              work: Work = run_chunk) -> None:
    """Every task on a local pool (``work`` runs one chunk; :func:`run_chunk` but in
    tests).  Chunks lost with a dead worker are rerun beam by beam, on every worker;
    beams lost again are run alone on a pool of one, where a death is that beam's."""
    size = chunk or chunk_size(len(tasks), workers)
    chunks = [list(tasks[i:i + size]) for i in range(0, len(tasks), size)]
    lost = _drain(chunks, workers, 2 * workers, out, plots, report, work)
    if lost:
        singles = [[t] for c in lost for t in c]
        lost = _drain(singles, workers, workers, out, plots, report, work)
    if lost:
        lost = _drain(lost, 1, 1, out, plots, report, work)
    for (task,) in lost:
        report([_died(task, "the worker process died while analysing this beam")])


def chunk_size(n_tasks: int, slots: int) -> int:
    """Beams per task: about CHUNKS_PER_SLOT tasks per worker slot, at most MAX_CHUNK."""
    return max(1, min(MAX_CHUNK, math.ceil(n_tasks / (max(1, slots) * CHUNKS_PER_SLOT))))


def default_workers() -> int:
    """Every core this process may use."""
    if hasattr(os, "sched_getaffinity"):
        return max(1, len(os.sched_getaffinity(0)))
    return max(1, os.cpu_count() or 1)


# ---------------------------------------------------------------------------
# A dask.distributed cluster
# ---------------------------------------------------------------------------


def _check_cluster(client: Any, out: str, probe: str | None) -> int:
    """Refuse a cluster whose workers cannot run this batch; returns its thread count."""
    if not client.nthreads():
        try:
            client.wait_for_workers(1, timeout=CONNECT_TIMEOUT)
        except Exception:
            raise BatchError(f"no workers joined the scheduler within {CONNECT_TIMEOUT:g} s"
                             ) from None
    versions = client.run(worker_engine_version, on_error="return")
    for worker, version in sorted(versions.items()):
        if isinstance(version, BaseException):
            raise BatchError(f"worker {worker} cannot run envelope ({type(version).__name__}: "
                             f"{version}); install envelope on every worker")
        if version != engine_version():
            raise BatchError(f"worker {worker} runs envelope {version}, this machine "
                             f"{engine_version()}; install the same version everywhere")
    for path, test, what in ((out, os.path.isdir, "the output folder"),
                             (probe, os.path.isfile, "the case files")):
        if path is None:
            continue
        for worker, ok in sorted(client.run(test, path).items()):
            if not ok:
                raise BatchError(f"worker {worker} cannot see {what} at {path}: put it on a "
                                 "filesystem shared by every worker, at the same path")
    return max(1, sum(client.nthreads().values()))


def connect(address: str) -> Any:
    """A dask.distributed client of the scheduler at ``address`` (imported only here)."""
    try:
        from distributed import Client
    except ImportError:
        raise BatchError("--scheduler needs dask.distributed: "
                         "pip install 'envelope[cluster]'") from None
    try:
        return Client(address, timeout=CONNECT_TIMEOUT)
    except (OSError, TimeoutError, ValueError) as exc:
        raise BatchError(f"cannot connect to the scheduler at {address} ({exc})") from None


def run_cluster(tasks: Sequence[Task], out: str, plots: bool, client: Any, slots: int,
                report: Callable[[list[Outcome]], None], chunk: int | None = None) -> None:
    """Every task on the dask.distributed cluster of ``client`` (``slots`` threads, see
    :func:`_check_cluster`).  The scheduler reruns the tasks of a worker that dies; a
    chunk it gives up on (KilledWorker) is rerun beam by beam, and a beam it gives up on
    alone is recorded as a failure."""
    import uuid
    from concurrent.futures import CancelledError

    from distributed import as_completed
    from distributed.scheduler import KilledWorker

    size = chunk or chunk_size(len(tasks), slots)
    token = uuid.uuid4().hex[:12]
    count = iter(range(sys.maxsize))

    def submit(chunk_tasks: list[Task]) -> Any:
        return client.submit(run_chunk, chunk_tasks, out, plots, pure=False,
                             key=f"envelope-batch-{token}-{next(count)}")

    futures = {submit(list(tasks[i:i + size])): list(tasks[i:i + size])
               for i in range(0, len(tasks), size)}
    queue = as_completed(list(futures))
    for future in queue:
        chunk_tasks = futures.pop(future)
        try:
            outcomes = future.result()
        except KilledWorker:
            if len(chunk_tasks) > 1:
                for task in chunk_tasks:
                    single = submit([task])
                    futures[single] = [task]
                    queue.add(single)
                continue
            outcomes = [_died(chunk_tasks[0], "the cluster gave up on this beam: every "
                              "worker that ran it died")]
        except (CancelledError, OSError, TimeoutError) as exc:
            raise ClusterError(f"the cluster stopped answering ({type(exc).__name__}: "
                               f"{exc}); rerun the same command to resume") from None
        except Exception as exc:
            outcomes = [_died(t, f"the cluster could not run this beam "
                                 f"({type(exc).__name__}: {exc})") for t in chunk_tasks]
        report(outcomes)


# ---------------------------------------------------------------------------
# Combined results and the failure list
# ---------------------------------------------------------------------------


def _read(path: Path) -> Any:
    """One Parquet file as a pyarrow Table (ParquetFile: no dataset discovery, which
    costs several times the read of a small file)."""
    import pyarrow.parquet as pq

    return pq.ParquetFile(path).read()


def _write(path: Path, table: Any) -> None:
    """One Parquet file, atomically (:mod:`envelope.files`)."""
    import pyarrow.parquet as pq

    write_atomic(path, lambda fh: pq.write_table(table, fh))


def _units_metadata(labels: dict[str, str]) -> bytes:
    """``envelope:units`` of a combined file: the labels when every beam has the same,
    else the labels of each system present (see the ``system`` column)."""
    if len(labels) == 1:
        return next(iter(labels.values())).encode()
    return json.dumps({k: json.loads(v) for k, v in sorted(labels.items())}).encode()


def _combine_table(out: Path, ids: Sequence[str], systems: dict[str, str], stem: str,
                   inputs_sha256: str) -> Any:
    """The ``<stem>.parquet`` tables of ``ids`` one after the other, with a ``system``
    column (SI or US); None when no beam has the file."""
    import pyarrow as pa

    tables, labels, caution = [], {}, b""
    for beam_id in ids:
        path = out / beam_id / f"{stem}.parquet"
        if not path.exists():
            continue
        table = _read(path)
        meta = table.schema.metadata or {}
        labels[systems[beam_id]] = meta.get(b"envelope:units", b"{}").decode()
        caution = meta.get(b"envelope:caution", caution)
        system = pa.array([systems[beam_id]] * table.num_rows, pa.string())
        tables.append(table.replace_schema_metadata(None).append_column("system", system))
    if not tables:
        return None
    combined = pa.concat_tables(tables, promote_options="permissive")
    return combined.replace_schema_metadata({
        b"envelope:units": _units_metadata(labels),
        b"envelope:version": engine_version().encode(),
        b"envelope:input_sha256": inputs_sha256.encode(),
        b"envelope:beams": str(len(tables)).encode(),
        b"envelope:caution": caution,
    })


def write_partition(out: Path, beam_id: str, system: str) -> None:
    """``OUT/_all/envelope/beam=<id>/part-0.parquet``: the beam's envelope.parquet
    without its beam column (readers take it from the folder name, and most refuse it
    twice) and with a ``system`` column (SI or US), metadata kept.  Written by the worker
    that ran the beam, so that combining costs the coordinator no more than a check."""
    import pyarrow as pa

    table = _read(out / beam_id / "envelope.parquet")
    column = pa.array([system] * table.num_rows, pa.string())
    table = table.drop_columns(["beam"]).append_column("system", column)
    _write(out / COMBINED / "envelope" / f"beam={beam_id}" / "part-0.parquet", table)


def combine(out: Path, done: dict[str, dict[str, Any]]) -> None:
    """Refresh ``OUT/_all/`` for the beams in ``done`` (id -> manifest): each beam's
    partition checked (written again when missing or stamped with another input hash or
    engine version), partitions of other beams removed, design.parquet and sizing.parquet
    rebuilt.  ``envelope:input_sha256`` of a combined file is the SHA-256 of the sorted
    ``<id> <input hash>`` lines of its beams."""
    root = out / COMBINED
    dataset = root / "envelope"
    root.mkdir(parents=True, exist_ok=True)
    _remove_temporaries(root)
    ids = sorted(done)
    systems = {beam_id: str(done[beam_id].get("units", "")) for beam_id in ids}
    keep = {f"beam={beam_id}" for beam_id in ids}
    if dataset.is_dir():
        for child in dataset.iterdir():
            if child.name not in keep:
                shutil.rmtree(child) if child.is_dir() else child.unlink()
            elif child.is_dir():
                _remove_temporaries(child)
    for beam_id in ids:
        part = dataset / f"beam={beam_id}" / "part-0.parquet"
        if not _stamped(part, done[beam_id]["input_sha256"]):
            write_partition(out, beam_id, systems[beam_id])
    lines = "".join(f"{i} {done[i]['input_sha256']}\n" for i in ids)
    digest = hashlib.sha256(lines.encode()).hexdigest()
    for stem in ("design", "sizing"):
        target = root / f"{stem}.parquet"
        table = _combine_table(out, ids, systems, stem, digest)
        if table is None:
            target.unlink(missing_ok=True)
        else:
            _write(target, table)


def write_failures(out: Path, failures: Sequence[Outcome], order: dict[str, int]) -> Path:
    """``OUT/_all/failures.csv``: file, id, error, in discovery order (header only when
    nothing failed, so an earlier run's list never stands)."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["file", "id", "error"])
    for o in sorted(failures, key=lambda o: order.get(o.path, -1)):
        writer.writerow([o.path, o.beam_id, o.error])
    data = buffer.getvalue().encode()
    path = out / COMBINED / "failures.csv"
    write_atomic(path, lambda fh: fh.write(data))
    return path


# ---------------------------------------------------------------------------
# Progress
# ---------------------------------------------------------------------------


def _clock(seconds: float) -> str:
    h, rest = divmod(round(seconds), 3600)
    m, s = divmod(rest, 60)
    return f"{h}:{m:02d}:{s:02d}" if h else f"{m}:{s:02d}"


class Progress:
    """A progress bar with count, rate and time left on a terminal; a plain line every
    ``PLAIN_INTERVAL`` seconds (and at the end) otherwise."""

    def __init__(self, total: int, stream: TextIO, tty: bool | None = None,
                 clock: Callable[[], float] = time.monotonic, width: int = 28) -> None:
        self.total = total
        self.stream = stream
        self.tty = stream.isatty() if tty is None else tty
        self.clock = clock
        self.width = width
        self.start = clock()
        self.done = 0
        self.failed = 0
        self._shown = -math.inf
        self._drawn = 0  # characters on the bar line (terminal)

    def text(self) -> str:
        elapsed = max(self.clock() - self.start, 1e-9)
        rate = self.done / elapsed
        left = (self.total - self.done) / rate if rate > 0 else math.nan
        parts = [f"{self.done}/{self.total} beams", f"{rate:.1f} beams/s"]
        if self.done < self.total:
            parts.append(f"{_clock(left)} left" if math.isfinite(left) else "-:-- left")
        else:
            parts.append(f"{_clock(elapsed)} elapsed")
        if self.failed:
            parts.append(f"{self.failed} failed")
        text = ", ".join(parts)
        if self.tty:
            filled = self.width * self.done // max(self.total, 1)
            text = "[" + "#" * filled + "-" * (self.width - filled) + "] " + text
        return text

    def _emit(self, force: bool = False) -> None:
        now = self.clock()
        interval = BAR_INTERVAL if self.tty else PLAIN_INTERVAL
        if not force and now - self._shown < interval:
            return
        self._shown = now
        text = self.text()
        if self.tty:
            self.stream.write("\r" + text.ljust(self._drawn))
            self._drawn = len(text)
        else:
            self.stream.write(f"batch: {text}\n")
        self.stream.flush()

    def _clear(self) -> None:
        if self.tty and self._drawn:
            self.stream.write("\r" + " " * self._drawn + "\r")
            self._drawn = 0

    def advance(self, n: int = 1, failed: int = 0) -> None:
        self.done += n
        self.failed += failed
        self._emit()

    def note(self, line: str) -> None:
        """Print a line of its own (a failure), above the bar on a terminal."""
        self._clear()
        self.stream.write(line + "\n")
        self._shown = -math.inf
        self._emit()

    def close(self) -> None:
        if not self.total:
            return
        self._emit(force=True)
        if self.tty:
            self.stream.write("\n")
            self.stream.flush()


class _Silent(Progress):
    def _emit(self, force: bool = False) -> None:
        pass

    def note(self, line: str) -> None:
        pass

    def close(self) -> None:
        pass


# ---------------------------------------------------------------------------
# The batch
# ---------------------------------------------------------------------------


@contextmanager
def _lock(out: Path, shown: str) -> Iterator[None]:
    """One batch at a time per OUT (an advisory lock the kernel drops with the process)."""
    path = out / LOCK
    fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o666)
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
              progress: TextIO | None = None, chunk: int | None = None) -> Summary:
    """Analyse every case file named by ``paths`` into ``OUT/<id>/`` and refresh
    ``OUT/_all/``.  Beams already done for the same input and engine version are
    skipped unless ``force``.  Raises :class:`BatchError` before anything is written when
    the paths, the ids or the cluster are wrong; failures of single beams are in the
    summary and in ``OUT/_all/failures.csv``.  Progress goes to ``progress`` if given."""
    started = time.perf_counter()
    if scheduler is not None and workers is not None:
        raise BatchError("--workers sets the local pool; with --scheduler the cluster's "
                         "workers are used (give one or the other)")
    shown_out = os.fspath(out)
    out_path = Path(os.path.abspath(out))
    entries = [identify(i, p, absolute=scheduler is not None)
               for i, p in enumerate(discover(paths))]
    check_duplicates(entries)
    summary = Summary(out=Path(shown_out), total=len(entries))
    done: dict[str, dict[str, Any]] = {}
    todo: list[Entry] = []
    for entry in entries:
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
        _run(todo, out_path, summary, done, client, slots, plots, progress, chunk)
        # Temporaries of writes killed with a worker or a batch, in every folder of the
        # batch (a beam completed by a later run may hold one of an earlier kill); the
        # batch's own workers are done by now.
        ids = {e.beam_id for e in entries} | {o.beam_id for o in summary.outcomes}
        for beam_id in sorted(i for i in ids if i and i != COMBINED):
            _remove_temporaries(out_path / beam_id)
        combine(out_path, done)
        write_failures(out_path, summary.failed, {e.path: e.index for e in entries})
    summary.seconds = time.perf_counter() - started
    return summary


def _run(todo: Sequence[Entry], out: Path, summary: Summary, done: dict[str, dict[str, Any]],
         client: Any, slots: int, plots: bool, progress: TextIO | None,
         chunk: int | None) -> None:
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
    tasks = [e.task for e in todo]
    if tasks and client is not None:
        run_cluster(tasks, os.fspath(out), plots, client, slots, report, chunk)
    elif tasks:
        run_local(tasks, os.fspath(out), plots, slots, report, chunk)
    summary.run_seconds = time.perf_counter() - run_started
    bar.close()


# ---------------------------------------------------------------------------
# The command
# ---------------------------------------------------------------------------


@click.command("batch")
@click.argument("paths", nargs=-1, required=True, metavar="PATH...")
@click.option("-o", "--out", required=True, type=click.Path(file_okay=False),
              help="Output folder: OUT/<id>/ per beam, OUT/_all/ combined.")
@click.option("--workers", type=click.IntRange(min=1), metavar="N",
              help="Local worker processes  [default: every core]")
@click.option("--scheduler", metavar="ADDRESS",
              help="Run on a dask.distributed cluster, e.g. tcp://10.0.0.5:8786.")
@click.option("--plots/--no-plots", default=False, show_default=True,
              help="Draw envelope.png for every beam.")
@click.option("--force", is_flag=True, help="Rerun every beam, even unchanged ones.")
def batch(paths: tuple[str, ...], out: str, workers: int | None, scheduler: str | None,
          plots: bool, force: bool) -> None:
    """Analyse many case files into OUT/<id>/, combined in OUT/_all/.

    PATHs are case files, folders (every *.toml inside) or glob patterns.  Unchanged
    beams are skipped, so an interrupted batch resumes where it stopped; failures are
    listed in OUT/_all/failures.csv (exit status 2)."""
    try:
        summary = run_batch(paths, out, workers=workers, scheduler=scheduler, plots=plots,
                            force=force, progress=sys.stderr)
    except DuplicateIdError as exc:
        for line in exc.lines:
            click.echo(f"error: {line}", err=True)
        sys.exit(2)
    except EnvelopeError as exc:
        click.echo(f"error: {exc}", err=True)
        sys.exit(exc.exit_code)
    except KeyboardInterrupt:
        click.echo("\ninterrupted: run the same command again to resume", err=True)
        sys.exit(130)
    except Exception as exc:
        if os.environ.get("ENVELOPE_DEBUG"):
            raise
        click.echo(f"error: internal error ({type(exc).__name__}): {exc}", err=True)
        sys.exit(1)
    failed = len(summary.failed)
    line = (f"batch: {summary.total} case files: {len(summary.written)} written, "
            f"{len(summary.skipped)} skipped (unchanged), {failed} failed")
    if failed:
        line += f" (listed in {Path(out) / COMBINED / 'failures.csv'})"
    click.echo(line)
    click.echo(f"combined results in {Path(out) / COMBINED}")
    if failed:
        sys.exit(2)
