"""The local process pool: worker start-up, chunking, and survival of dead workers."""

from __future__ import annotations

import math
import multiprocessing
import os
import signal
import sys
import threading
import time
from collections import deque
from collections.abc import Callable, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from multiprocessing.context import BaseContext

from envelope.batch.model import Outcome, Task
from envelope.batch.worker import _died, run_chunk

#: Chunks per worker slot: enough for load balance at the end of the batch.
CHUNKS_PER_SLOT = 4
#: Most beams in one task (a task lost with its worker is rerun whole).
MAX_CHUNK = 16


def die_with_parent() -> None:
    """On Linux, have the kernel kill this process (SIGKILL) when the thread that started
    it ends, with its process (PR_SET_PDEATHSIG); elsewhere nothing."""
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG
        except (OSError, AttributeError):
            pass


def _watch_parent(parent: int) -> None:
    """End this worker when the coordinating process ends, even by SIGKILL: at once on
    Linux (PR_SET_PDEATHSIG, to this process's parent: the coordinator, or the fork
    server, which dies with the coordinator), and within moments elsewhere (a thread
    that waits on multiprocessing's pipe from the coordinator, which closes when it
    ends; the parent id polled in a process multiprocessing did not start).  A worker
    forked from a server that has died already (before the signal was set, which a
    fork clears) ends here, before it can take a task: its parent is no longer the
    server (:data:`envelope.batch.forkserver.SERVER`; the signal set first, so that a
    server that dies after the check kills it)."""
    die_with_parent()
    forked = sys.modules.get("envelope.batch.forkserver")
    server = getattr(forked, "SERVER", None)
    if server is not None and os.getppid() != server:
        os._exit(1)
    coordinator = multiprocessing.parent_process()

    def watch() -> None:
        if coordinator is not None and coordinator.pid == parent:
            coordinator.join()  # returns when the coordinator's end of the pipe closes
            os._exit(1)
        while True:
            if os.getppid() != parent:
                os._exit(1)
            time.sleep(1.0)

    threading.Thread(target=watch, name="envelope-parent-watch", daemon=True).start()


#: Thread pools of the numerical libraries, one thread per worker process unless the
#: user set otherwise: the pool already keeps every core busy, and more threads per
#: process only contend for the same cores.
THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS",
                    "VECLIB_MAXIMUM_THREADS", "NUMEXPR_NUM_THREADS")


def _init_worker(parent: int, plots: bool = False) -> None:
    """Once per worker process: leave Ctrl-C to the coordinator, die with it, one thread
    per numerical library (set before numpy loads), and import the engine and pyarrow
    (and, for a batch with figures, matplotlib the lean way:
    :mod:`envelope.leanimport`) now rather than in the first beam.  A worker forked
    from the batch's warm server (:mod:`envelope.batch.preload`) has all this already,
    and the imports here cost nothing; where the server could not do them (a failed
    import), they are done here, and a failure shows as the worker's."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    _watch_parent(parent)
    for name in THREAD_VARIABLES:
        os.environ.setdefault(name, "1")
    import envelope.api
    import envelope.store  # noqa: F401  (pyarrow)
    if plots:
        from envelope.leanimport import import_lean

        import_lean()


def _engine_origin() -> str:
    """The folder of the engine this process runs (a worker's is the coordinator's)."""
    import envelope

    return os.path.dirname(os.path.realpath(envelope.__file__))


#: Python versions whose multiprocessing internals :mod:`envelope.batch.forkserver`
#: repeats (``popen_forkserver.Popen._launch`` and ``ForkServer``'s private state);
#: on any other the workers are spawned, as where there is no fork server at all.
FORK_SERVER_PYTHONS = ((3, 11), (3, 12), (3, 13))
#: Systems where workers fork from the warm server: Linux.  Elsewhere (macOS among
#: those with a fork server) a fork after numpy and pyarrow have loaded is the risk for
#: which Python spawns by default there; the workers are spawned.
FORK_SERVER_PLATFORMS = ("linux",)


def _context(plots: bool) -> BaseContext:
    """The start method of a batch's workers: forked from a warm server of the batch's
    own (:mod:`envelope.batch.forkserver`) where multiprocessing can, else spawned
    (clean interpreters, no copy of the coordinator's threads or locks), as on a
    Python the server was not written for (:data:`FORK_SERVER_PYTHONS`) or a system
    other than Linux (:data:`FORK_SERVER_PLATFORMS`).  The server
    is started here, so that it imports while the batch gets ready (stopped by
    :meth:`_Start.close`)."""
    if (sys.version_info[:2] in FORK_SERVER_PYTHONS
            and sys.platform.startswith(FORK_SERVER_PLATFORMS)
            and "forkserver" in multiprocessing.get_all_start_methods()):
        try:
            from envelope.batch.forkserver import WarmContext

            warm = WarmContext(["envelope.batch.preload_figures" if plots
                                else "envelope.batch.preload"])
            warm.start()
            return warm
        except (ImportError, OSError):  # no fork server here: spawned workers
            pass
    return multiprocessing.get_context("spawn")


def _pool(workers: int, plots: bool = False, context: BaseContext | None = None
          ) -> ProcessPoolExecutor:
    return ProcessPoolExecutor(max_workers=workers,
                               mp_context=context or multiprocessing.get_context("spawn"),
                               initializer=_init_worker, initargs=(os.getpid(), plots))


class _Start:
    """How a batch starts its pools' workers (:func:`_context`), the same for every pool
    of the batch, but that a fork server that died while starting a worker on two
    servers in a row (:mod:`envelope.batch.forkserver`) leaves the rest of the batch
    on spawned workers, with a ``note``; :meth:`close` when the batch is done."""

    def __init__(self, plots: bool, note: Callable[[str], None] | None = None) -> None:
        self.plots = plots
        self.context = _context(plots)
        self.origin = _engine_origin()
        self.checked = False
        self.note = note

    def _check_server(self) -> None:
        """Spawned workers from now on if the fork server failed (said once)."""
        failed = getattr(self.context, "failed", None)
        if failed is not None:
            self.close()
            self.context = multiprocessing.get_context("spawn")
            if self.note is not None:
                self.note(f"note: the workers' fork server died while starting a worker, "
                          f"twice ({failed}); the rest of the batch's workers are "
                          "spawned (each imports the engine itself: slower to start, "
                          "the same results)")

    def pool(self, workers: int) -> ProcessPoolExecutor:
        self._check_server()
        pool = _pool(workers, self.plots, self.context)
        if not self.checked:
            try:
                same = self._same_engine(pool)
            except BaseException:  # Ctrl-C while the first worker starts
                pool.shutdown(wait=True, cancel_futures=True)
                raise
            self.checked = True
            if not same:
                pool.shutdown(wait=True, cancel_futures=True)
                self.close()
                self.context = multiprocessing.get_context("spawn")
                pool = _pool(workers, self.plots, self.context)
        return pool

    def _same_engine(self, pool: ProcessPoolExecutor) -> bool:
        """Whether the workers of a fork server's ``pool`` run this process's engine.
        The server imports it (Python 3.11 to 3.13) by the path a new interpreter
        started here would use, not this process's ``sys.path``: a script that put
        another source tree first would otherwise run its batch on another engine."""
        if getattr(self.context, "stop", None) is None:
            return True
        try:
            return pool.submit(_engine_origin).result() == self.origin
        except Exception:  # an engine without _engine_origin, or a worker that died
            return False

    def close(self) -> None:
        """End the fork server, if there is one."""
        stop = getattr(self.context, "stop", None)
        if stop is not None:
            stop()

    def finish(self) -> None:
        """At the end of the batch: the note of a failed server, if not yet given, and
        :meth:`close`."""
        self._check_server()
        self.close()


Work = Callable[[Sequence[Task], str, bool], list[Outcome]]


def _drain(chunks: Sequence[list[Task]], workers: int, window: int, out: str, plots: bool,
           report: Callable[[list[Outcome]], None], work: Work, start: _Start
           ) -> list[list[Task]]:
    """Run ``work`` on each of ``chunks`` on pools of ``workers`` processes with at most
    ``window`` tasks in flight; returns the chunks that were in flight when a worker
    process died (a new pool takes the rest)."""
    todo = deque(chunks)
    broken: list[list[Task]] = []
    while todo:
        pool = start.pool(max(1, min(workers, len(todo))))
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
              work: Work = run_chunk, note: Callable[[str], None] | None = None) -> None:
    """Every task on a local pool (``work`` runs one chunk; :func:`run_chunk` but in
    tests).  Chunks lost with a dead worker are rerun beam by beam, on every worker;
    beams lost again are run alone on a pool of one, where a death is that beam's.
    ``note`` takes a line for the user (the workers spawned after a fork server
    failed: :class:`_Start`)."""
    size = chunk or chunk_size(len(tasks), workers)
    chunks = [list(tasks[i:i + size]) for i in range(0, len(tasks), size)]
    start = _Start(plots, note)
    try:
        lost = _drain(chunks, workers, 2 * workers, out, plots, report, work, start)
        if lost:
            singles = [[t] for c in lost for t in c]
            lost = _drain(singles, workers, workers, out, plots, report, work, start)
        if lost:
            lost = _drain(lost, 1, 1, out, plots, report, work, start)
    finally:
        start.finish()
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
