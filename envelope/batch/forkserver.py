"""The local pool's fork server: its workers forked from one warm process of this batch.

A spawned worker is a whole interpreter that imports the engine, pyarrow and, for a
batch with figures, matplotlib (:mod:`envelope.leanimport`): 0.2 to 0.45 s of CPU in
every worker.  On Linux with Python 3.11 to 3.13 (``envelope.batch.local``:
``FORK_SERVER_PLATFORMS``, ``FORK_SERVER_PYTHONS``), the batch starts one server
process that does this once (:mod:`envelope.batch.preload`,
:mod:`envelope.batch.preload_figures`), and each worker is a fork of it.

The server is the batch's own, not multiprocessing's shared one (whose list of modules
to preload is fixed when it first starts, for the whole process): :class:`WarmContext`
is a "forkserver" context with a server of its own, started with the batch's preload
and stopped (:meth:`WarmContext.stop`) when the batch's pools are done, so that a
process that runs batches with and without figures (a notebook, the tests) gets the
right one for each, and leaves no server behind.

Dying with the batch: the server sets a parent-death signal (Linux) to its starter, the
coordinating process, in :mod:`envelope.batch.preload`, and each worker sets one to its
own parent, the server (``envelope.batch.local._watch_parent``), so a coordinator
killed by SIGKILL takes the server and the workers with it at once; the workers also
watch the coordinator itself (multiprocessing's pipe from it), for other systems.  The
server also ends by itself when the coordinator and every worker have closed their
ends of its "alive" pipe.

A server that dies while it starts a worker (the OOM killer, say, between the
coordinator's request and the new worker's pid coming back) ends no batch.  The first
worker of a pool is tried once more on a new server, and if that one dies too, it and
the rest of the batch's workers are spawned (:meth:`_Process._Popen`; the batch says
so).  Any other worker is not: the pool's workers die with their server, the pool is
broken, and the start fails as a start in a broken pool does (:class:`ServerDiedWithPool`,
a ``BrokenProcessPool``): the batch runs the pool's tasks in flight again on a new pool,
as for any dead worker (``envelope.batch.local.run_local``).  A pool takes all its
workers from one server: one added to a broken pool could outlast the pool's wait for
its workers, which would then never end.  No beam is run twice at once or lost, because
a process can take a task only once its start has succeeded (:meth:`_Popen._launch`):

* the coordinator sends a worker its process data (the pool's queues among them) only
  after the server has sent back the worker's pid; a child forked by a server that died
  before that gets instead an order to end (:class:`_StandDown`), read before anything
  else, and ends without having opened a queue;
* a worker whose server died before the worker set its parent-death signal (which a
  fork clears) would outlive it: each worker, once that signal is set, checks that its
  parent is still the server that forked it (:data:`SERVER`) and ends at once if not,
  before it takes a task (``envelope.batch.local._watch_parent``);
* a worker started before the server died dies with it (its parent-death signal, or the
  check above), and the pool finds it dead, as any dead worker: a beam it had begun is
  run again from the start (its folder rewritten) on the next pool.

This uses two private parts of multiprocessing (3.11 to 3.13): the ``ForkServer``
class, instantiated once per batch, and ``popen_forkserver.Popen._launch``, repeated
here with this server in place of the shared one (the worker's data written after its
pid is read, not before).
"""

from __future__ import annotations

import contextlib
import importlib
import io
import os
import pickle
import signal
import time
import weakref
from collections.abc import Sequence
from concurrent.futures.process import BrokenProcessPool
from multiprocessing import context, forkserver, popen_forkserver, spawn, util
from multiprocessing.process import BaseProcess
from typing import Any

#: What failed while the server imported its modules (:func:`warm`), by module name.
FAILED: dict[str, BaseException] = {}

#: Seconds :meth:`WarmContext.stop` waits for the server to end by itself before it
#: kills it.  It ends at once when the batch's workers are gone, as they are after their
#: pools shut down; one still there is a worker whose start was cut short (Ctrl-C while
#: it started), idle, that would end only once its start's traceback is let go.
STOP_GRACE = 1.0

#: Servers a pool's first worker's start is tried on (the running one, then a new one)
#: before it and the rest of the batch's workers are spawned.
LAUNCH_ATTEMPTS = 2

#: Signs of a server that died (or its socket gone) while it started a worker.
SERVER_GONE = (ConnectionError, FileNotFoundError, EOFError)

#: The process id of the fork server, set in the server (:mod:`envelope.batch.preload`):
#: in a worker forked from it, the parent it must still have once it has set its
#: parent-death signal.  None in any other process.
SERVER: int | None = None


def warm(modules: tuple[str, ...], lean: bool = False) -> None:
    """Import ``modules`` in the server (and with ``lean``, matplotlib and the figure's
    modules: :func:`envelope.leanimport.import_lean`); a failure is kept in
    :data:`FAILED`, never raised (multiprocessing would ignore an ImportError and die
    of any other).  Each worker imports the same again, where a failure shows."""
    for name in modules:
        try:
            importlib.import_module(name)
        except Exception as exc:
            FAILED[name] = exc
    if lean and "envelope.leanimport" not in FAILED:
        try:
            from envelope.leanimport import import_lean

            import_lean()
        except Exception as exc:
            FAILED["envelope.plots"] = exc


class ServerDied(Exception):
    """A worker's start failed on :data:`LAUNCH_ATTEMPTS` servers in a row."""


class ServerDiedWithPool(BrokenProcessPool):
    """The server of a pool's workers died: they die with it, and no other is added to
    the pool (broken, as for any dead worker)."""


class _Replaced(ConnectionError):
    """The server died and was replaced while a worker's start asked it to fork."""


class _StandDown:
    """Written, instead of its process data, to a child whose start failed after the
    fork: the child's first read of it calls ``os._exit(1)``."""

    def __reduce__(self) -> tuple[Any, tuple[int]]:
        return os._exit, (1,)


class _Popen(popen_forkserver.Popen):
    """A process started by the server of its :class:`WarmContext`."""

    def __init__(self, process_obj: BaseProcess, server: forkserver.ForkServer) -> None:
        self.server = server
        super().__init__(process_obj)

    def _launch(self, process_obj: BaseProcess) -> None:
        # popen_forkserver.Popen._launch (the same in Python 3.11 to 3.13), with this
        # batch's server instead of multiprocessing's shared one, started again on a new
        # server when the server dies in it (the module's help)
        prep_data = spawn.get_preparation_data(process_obj._name)  # type: ignore[attr-defined]
        buf = io.BytesIO()
        context.set_spawning_popen(self)
        try:
            context.reduction.dump(prep_data, buf)  # type: ignore[attr-defined]
            context.reduction.dump(process_obj, buf)  # type: ignore[attr-defined]
        finally:
            context.set_spawning_popen(None)
        server: _Server = self.server  # type: ignore[assignment]
        # A pool (known by its task queue, the first argument of its workers) takes its
        # workers from one server.  When that server has died, the pool's workers die
        # with it and the pool is broken: none is added, not even on a new server (a
        # pool that finds itself broken waits for each of its workers, and one added
        # while it does so, which it would not stop, it would wait for forever).  Only
        # a pool's first worker is tried on a new server.
        args = getattr(process_obj, "_args", ())
        pool = args[0] if args else None
        bound = server.pools.get(pool) if pool is not None else None
        failures: list[str] = []
        for _ in range(LAUNCH_ATTEMPTS if bound is None else 1):
            server.ensure_running()  # a new one if it has died (and been reaped)
            pid = server.pid()
            assert pid is not None
            if bound is not None and pid != bound:
                raise ServerDiedWithPool("the fork server of the pool's workers died")
            try:
                self._launch_on_server(buf.getbuffer(), pid)
            except SERVER_GONE as exc:
                failures.append(f"{type(exc).__name__}: {exc}")
                if not isinstance(exc, _Replaced):
                    # dead, or dying: reaped (its workers' parent-death signal sent by
                    # then), and a new one started by the next attempt or pool
                    server.stop(grace=0.0)
                if bound is not None:
                    raise ServerDiedWithPool(failures[-1]) from exc
            else:
                if pool is not None:
                    server.pools[pool] = pid
                return
        raise ServerDied("; ".join(failures))

    def _launch_on_server(self, data: memoryview, server_pid: int) -> None:
        """Start the worker on the server of ``server_pid``: the server forks it and
        sends back its pid, and only then is it sent its process data."""
        server: _Server = self.server  # type: ignore[assignment]
        sentinel, w = server.connect_to_new_process(self._fds)  # type: ignore[attr-defined]
        try:
            pid = forkserver.read_signed(sentinel)
            if server.pid() != server_pid:  # connect_to_new_process started a new one
                raise _Replaced("the fork server died and was replaced")
        except BaseException:
            # No pid, from this server: it died before or after it forked.  A child it
            # forked has no parent-death signal yet (a fork clears it): it is told to
            # end, by the only thing it will read (a few bytes, that the empty pipe
            # takes at once).
            with contextlib.suppress(OSError):
                os.write(w, pickle.dumps(_StandDown()))
            os.close(w)
            os.close(sentinel)
            raise
        self.sentinel, self.pid = sentinel, pid
        # the data pipe's write end, kept open while the child lives: the child's
        # sentinel of this process (multiprocessing.parent_process())
        parent_w = os.dup(w)
        self.finalizer = util.Finalize(self, util.close_fds,  # type: ignore[attr-defined]
                                       (parent_w, sentinel))
        try:
            with open(w, "wb", closefd=True) as f:
                f.write(data)
        except BrokenPipeError:  # the child died before it read: the pool finds it dead
            pass


class _Process(context.ForkServerProcess):
    """A worker process of a :class:`WarmContext` (its server is not sent to the child)."""

    _server: forkserver.ForkServer | None = None

    def __getstate__(self) -> dict[str, Any]:
        state = dict(self.__dict__)
        state.pop("_server", None)
        return state

    @staticmethod
    def _Popen(process_obj: Any) -> Any:
        """Forked from the server; spawned once the server has died while starting a
        worker :data:`LAUNCH_ATTEMPTS` times in a row (:attr:`_Server.failed`), for the
        rest of the batch."""
        server = process_obj._server
        assert server is not None, "a worker process outside its context"
        if server.failed is None:
            try:
                return _Popen(process_obj, server)
            except ServerDied as exc:
                server.failed = str(exc)
        from multiprocessing import popen_spawn_posix

        return popen_spawn_posix.Popen(process_obj)


class _Server(forkserver.ForkServer):
    """multiprocessing's fork server, one per :class:`WarmContext`, that can be stopped
    and that replaces itself when it was killed."""

    #: Why the workers are spawned instead: the server died while starting a worker
    #: :data:`LAUNCH_ATTEMPTS` times in a row (None while it has not).
    failed: str | None = None

    def __init__(self) -> None:
        super().__init__()
        #: The process id of the server each pool's workers came from, by the pool's
        #: task queue.
        self.pools: weakref.WeakKeyDictionary[Any, int] = weakref.WeakKeyDictionary()

    def connect_to_new_process(self, fds: Sequence[int]) -> tuple[int, int]:
        """multiprocessing's, started again where the server was killed but not yet
        reaped: its socket is closed, but ``ensure_running`` takes it for alive."""
        try:
            return super().connect_to_new_process(fds)
        except ConnectionRefusedError:
            self.stop(grace=0.0)
            return super().connect_to_new_process(fds)

    def pid(self) -> int | None:
        """The server's process id, while it runs."""
        pid: int | None = getattr(self, "_forkserver_pid", None)
        return pid

    def stop(self, grace: float) -> None:
        """End the server: close this process's end of its "alive" pipe, so that it ends
        once its workers have, and wait for it (killed after ``grace`` seconds; a worker
        left then dies with it, by its parent-death signal).  Waiting also counts its
        CPU time, and its workers', in this process's children."""
        server: Any = self
        pid = self.pid()
        alive = getattr(server, "_forkserver_alive_fd", None)
        if pid is None:
            return
        server._forkserver_pid = server._forkserver_alive_fd = None
        if alive is not None:
            os.close(alive)
        address = getattr(server, "_forkserver_address", None)
        server._forkserver_address = None
        try:
            deadline = time.monotonic() + grace
            while os.waitpid(pid, os.WNOHANG)[0] == 0:
                if time.monotonic() >= deadline:
                    with contextlib.suppress(ProcessLookupError):
                        os.kill(pid, signal.SIGKILL)
                    os.waitpid(pid, 0)
                    break
                time.sleep(0.005)
        except ChildProcessError:  # already waited for
            pass
        if isinstance(address, str) and not util.is_abstract_socket_namespace(address):
            with contextlib.suppress(OSError):
                os.unlink(address)


class WarmContext(context.ForkServerContext):
    """A "forkserver" context with a server of its own, that imports ``preload`` (module
    names) before it forks any worker."""

    def __init__(self, preload: list[str]) -> None:
        self.server = _Server()
        self.server.set_forkserver_preload(preload)

    def Process(self, *args: Any, **kwargs: Any) -> _Process:  # type: ignore[override]
        """A worker process, started by this context's server."""
        process = _Process(*args, **kwargs)
        process._server = self.server
        return process

    def start(self) -> None:
        """Start the server now (it imports its modules while the batch gets ready).
        Its parent-death signal is tied to the thread that starts it: the batch's."""
        self.server.ensure_running()

    def server_pid(self) -> int | None:
        """The server's process id, while it runs."""
        return self.server.pid()

    @property
    def failed(self) -> str | None:
        """Why this context's workers are now spawned (:attr:`_Server.failed`), if so."""
        return self.server.failed

    def stop(self) -> None:
        """End the server (:meth:`_Server.stop`, killed after :data:`STOP_GRACE`)."""
        self.server.stop(STOP_GRACE)
