"""A dask.distributed cluster: connecting, checking its workers, and running the chunks."""

from __future__ import annotations

import os
import sys
from collections.abc import Callable, Sequence
from typing import Any

from envelope import engine_version
from envelope.batch.local import chunk_size
from envelope.batch.model import BatchError, ClusterError, Outcome, Task
from envelope.batch.worker import _died, run_chunk, worker_engine_version

#: Seconds to wait for a scheduler, or for its first worker.
CONNECT_TIMEOUT = 30.0


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
