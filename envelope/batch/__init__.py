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
  imports the engine once (where it can, a fork of one server process of the batch that
  imported it) and the per-task cost is spread over several beams.  Each beam
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

The modules: :mod:`~envelope.batch.model` (errors, entries, outcomes, the summary),
:mod:`~envelope.batch.discovery`, :mod:`~envelope.batch.resume`,
:mod:`~envelope.batch.worker` (one beam, one chunk), :mod:`~envelope.batch.local` (the
process pool), :mod:`~envelope.batch.forkserver` (the pool's workers forked from a warm
server of the batch, with :mod:`~envelope.batch.preload`), :mod:`~envelope.batch.cluster`
(dask), :mod:`~envelope.batch.combined` (OUT/_all), :mod:`~envelope.batch.progress`,
:mod:`~envelope.batch.runner` (:func:`run_batch`) and :mod:`~envelope.batch.command` (the
click command).
"""

from __future__ import annotations

import importlib
from typing import Any

# Each name is imported from its module on first use, so that importing one module of
# the package (the discovery, by ``envelope check``) does not import them all.
_WHERE: dict[str, str] = {
    "BAR_INTERVAL": "progress",
    "BatchError": "model",
    "CHUNKS_PER_SLOT": "local",
    "COMBINED": "model",
    "CONNECT_TIMEOUT": "cluster",
    "ClusterError": "model",
    "DuplicateIdError": "model",
    "Entry": "model",
    "LOCK": "runner",
    "MANIFEST": "model",
    "MAX_CHUNK": "local",
    "Outcome": "model",
    "PLAIN_INTERVAL": "progress",
    "Progress": "progress",
    "Summary": "model",
    "THREAD_VARIABLES": "local",
    "Task": "model",
    "Work": "local",
    "batch": "command",
    "check_duplicates": "discovery",
    "chunk_size": "local",
    "combine": "combined",
    "completed": "resume",
    "connect": "cluster",
    "default_workers": "local",
    "discover": "discovery",
    "identify": "discovery",
    "run_batch": "runner",
    "run_beam": "worker",
    "run_chunk": "worker",
    "run_cluster": "cluster",
    "run_local": "local",
    "worker_engine_version": "worker",
    "write_failures": "combined",
    "write_partition": "combined",
}

__all__ = [
    "BAR_INTERVAL",
    "CHUNKS_PER_SLOT",
    "COMBINED",
    "CONNECT_TIMEOUT",
    "LOCK",
    "MANIFEST",
    "MAX_CHUNK",
    "PLAIN_INTERVAL",
    "THREAD_VARIABLES",
    "BatchError",
    "ClusterError",
    "DuplicateIdError",
    "Entry",
    "Outcome",
    "Progress",
    "Summary",
    "Task",
    "Work",
    "batch",
    "check_duplicates",
    "chunk_size",
    "combine",
    "completed",
    "connect",
    "default_workers",
    "discover",
    "identify",
    "run_batch",
    "run_beam",
    "run_chunk",
    "run_cluster",
    "run_local",
    "worker_engine_version",
    "write_failures",
    "write_partition",
]


def __getattr__(name: str) -> Any:
    module = _WHERE.get(name)
    if module is None:
        raise AttributeError(f"module 'envelope.batch' has no attribute {name!r}")
    value = getattr(importlib.import_module(f"envelope.batch.{module}"), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted({*globals(), *__all__})
