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

This uses two private parts of multiprocessing (3.11 to 3.13): the ``ForkServer``
class, instantiated once per batch, and ``popen_forkserver.Popen._launch``, repeated
here with this server in place of the shared one.
"""

from __future__ import annotations

import contextlib
import importlib
import io
import os
import signal
import time
from collections.abc import Sequence
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


class _Popen(popen_forkserver.Popen):
    """A process started by the server of its :class:`WarmContext`."""

    def __init__(self, process_obj: BaseProcess, server: forkserver.ForkServer) -> None:
        self.server = server
        super().__init__(process_obj)

    def _launch(self, process_obj: BaseProcess) -> None:
        # popen_forkserver.Popen._launch (the same in Python 3.11 to 3.13), with this
        # batch's server instead of multiprocessing's shared one
        prep_data = spawn.get_preparation_data(process_obj._name)  # type: ignore[attr-defined]
        buf = io.BytesIO()
        context.set_spawning_popen(self)
        try:
            context.reduction.dump(prep_data, buf)  # type: ignore[attr-defined]
            context.reduction.dump(process_obj, buf)  # type: ignore[attr-defined]
        finally:
            context.set_spawning_popen(None)
        self.sentinel, w = self.server.connect_to_new_process(self._fds)  # type: ignore[attr-defined]
        # the data pipe's write end, kept open while the child lives: the child's
        # sentinel of this process (multiprocessing.parent_process())
        parent_w = os.dup(w)
        self.finalizer = util.Finalize(self, util.close_fds,  # type: ignore[attr-defined]
                                       (parent_w, self.sentinel))
        with open(w, "wb", closefd=True) as f:
            f.write(buf.getbuffer())
        self.pid = forkserver.read_signed(self.sentinel)


class _Process(context.ForkServerProcess):
    """A worker process of a :class:`WarmContext` (its server is not sent to the child)."""

    _server: forkserver.ForkServer | None = None

    def __getstate__(self) -> dict[str, Any]:
        state = dict(self.__dict__)
        state.pop("_server", None)
        return state

    @staticmethod
    def _Popen(process_obj: Any) -> _Popen:
        assert process_obj._server is not None, "a worker process outside its context"
        return _Popen(process_obj, process_obj._server)


class _Server(forkserver.ForkServer):
    """multiprocessing's fork server, one per :class:`WarmContext`, that can be stopped
    and that replaces itself when it was killed."""

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

    def stop(self) -> None:
        """End the server (:meth:`_Server.stop`, killed after :data:`STOP_GRACE`)."""
        self.server.stop(STOP_GRACE)
