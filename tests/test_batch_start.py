"""How the local pool starts its workers (envelope.batch.local, envelope.batch.forkserver).

* where multiprocessing has the "forkserver" start method, each batch forks its workers
  from a server of its own that imported the engine (and, with figures, matplotlib)
  before the first fork, and stops it when the batch is done;
* a batch with figures and one without in the same process each get their own server;
* the workers (and the server) die with a coordinator killed by SIGKILL, with either
  start method, and a healthy worker outlives the old one-second parent check;
* a server whose engine is not the coordinator's is not used (spawned workers instead);
* a fork server killed during a batch is replaced, and the batch goes on;
* a failed import in the server is kept, not raised;
* without the forkserver start method (Windows) the workers are spawned.

The properties checked are this project's own requirements (common practice for process
pools: children never outlive their coordinator); no outside reference applies.
"""

from __future__ import annotations

import gc
import multiprocessing
import os
import signal
import subprocess
import sys
import textwrap
import time
from collections.abc import Sequence
from pathlib import Path

import pytest

from envelope.batch import forkserver, local
from envelope.batch.local import _Start, run_local
from envelope.batch.model import Outcome, Task

FORKSERVER = "forkserver" in multiprocessing.get_all_start_methods()
needs_forkserver = pytest.mark.skipif(not FORKSERVER, reason="no forkserver start method")

REPO = Path(__file__).resolve().parents[1]


def _worker_facts() -> dict[str, object]:
    """What a worker knows of how it started (run in the worker)."""
    return {"ppid": os.getppid(), "pid": os.getpid(),
            "preload": "envelope.batch.preload" in sys.modules,
            "figures": "envelope.batch.preload_figures" in sys.modules,
            "failed": dict(forkserver.FAILED), "frozen": gc.get_freeze_count(),
            "threads": os.environ.get("OPENBLAS_NUM_THREADS"),
            "sigint": signal.getsignal(signal.SIGINT) is signal.SIG_IGN}


def _one_worker_facts(start: _Start) -> dict[str, object]:
    """:func:`_worker_facts` of the one worker of a pool of ``start``, which is then
    closed with the pool."""
    pool = start.pool(1)
    try:
        return pool.submit(_worker_facts).result(timeout=120)
    finally:
        pool.shutdown(wait=True)
        start.close()


def _sleep_and_answer(seconds: float) -> int:
    time.sleep(seconds)
    return os.getpid()


def _gone(pid: int, timeout: float = 20.0) -> bool:
    """Whether process ``pid`` is gone (or a zombie) within ``timeout`` seconds."""
    psutil = pytest.importorskip("psutil")
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        try:
            if psutil.Process(pid).status() == psutil.STATUS_ZOMBIE:
                return True
        except psutil.NoSuchProcess:
            return True
        time.sleep(0.05)
    return False


@needs_forkserver
@pytest.mark.parametrize("plots", [False, True])
def test_workers_fork_from_a_warm_server_of_the_batch_stopped_at_its_end(plots: bool) -> None:
    start = _Start(plots)
    server = start.context.server_pid()  # type: ignore[attr-defined]
    assert server is not None
    pool = start.pool(2)
    try:
        facts = pool.submit(_worker_facts).result(timeout=120)
        # a healthy worker is not ended by its watch of the coordinator (the old check
        # ran every second)
        assert pool.submit(_sleep_and_answer, 1.5).result(timeout=120) > 0
    finally:
        pool.shutdown(wait=True)
        start.close()
    assert facts["ppid"] == server and facts["pid"] != os.getpid()
    assert facts["preload"] is True and facts["figures"] is plots
    assert facts["failed"] == {} and facts["frozen"] > 0 and facts["sigint"] is True
    assert facts["threads"] == os.environ.get("OPENBLAS_NUM_THREADS", "1")
    assert start.context.server_pid() is None  # type: ignore[attr-defined]
    assert _gone(server, timeout=5)
    # nothing of the server's start-up happened in this process
    assert "envelope.batch.preload" not in sys.modules
    assert signal.getsignal(signal.SIGINT) is not signal.SIG_IGN


@needs_forkserver
def test_a_server_whose_engine_is_not_this_one_is_not_used() -> None:
    start = _Start(False)
    start.origin = "/elsewhere/envelope"  # as if a script had put another tree first
    server = start.context.server_pid()  # type: ignore[attr-defined]
    facts = _one_worker_facts(start)
    assert start.context.get_start_method() == "spawn"
    assert facts["ppid"] == os.getpid() and facts["preload"] is False
    assert server is not None and _gone(server, timeout=5)


_COORDINATOR = textwrap.dedent("""
    import multiprocessing, sys, time
    from envelope.batch.local import _Start, _pool
    sys.path.insert(0, {tests!r})
    from test_batch_start import _sleep_and_answer

    if __name__ == "__main__":
        if sys.argv[1] == "spawn":
            pool, server = _pool(2, False, multiprocessing.get_context("spawn")), None
        else:
            start = _Start(False)
            server = start.context.server_pid()
            pool = start.pool(2)
        for future in [pool.submit(_sleep_and_answer, 0.2) for _ in range(2)]:
            future.result()
        for _ in range(2):
            pool.submit(_sleep_and_answer, 600)
        pids = sorted(pool._processes)
        print(" ".join(map(str, pids + ([server] if server else []))), flush=True)
        time.sleep(600)
""")


@pytest.mark.parametrize("method", [pytest.param("forkserver", marks=needs_forkserver),
                                    "spawn"])
def test_workers_and_server_die_with_a_coordinator_killed_by_sigkill(method: str,
                                                                     tmp_path: Path) -> None:
    pytest.importorskip("psutil")
    script = tmp_path / "coordinator.py"
    script.write_text(_COORDINATOR.format(tests=str(REPO / "tests")))
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [str(REPO), *filter(None, [os.environ.get("PYTHONPATH")])]))
    proc = subprocess.Popen([sys.executable, str(script), method], stdout=subprocess.PIPE,
                            text=True, env=env)
    try:
        assert proc.stdout is not None
        line = proc.stdout.readline()
        pids = [int(p) for p in line.split()]
        assert len(pids) == (3 if method == "forkserver" else 2), line
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(timeout=30)
        assert all(_gone(pid) for pid in pids)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()


def _work_that_kills_the_server(tasks: Sequence[Task], out: str,
                                plots: bool) -> list[Outcome]:
    """Stands in for run_chunk: the task named "kill-server" kills the fork server that
    forked this worker (``out`` holds the coordinator's pid: never that one)."""
    results = []
    for target, shown, beam_id, *_ in tasks:
        if target == "kill-server" and os.getppid() != int(out):
            os.kill(os.getppid(), signal.SIGKILL)
            time.sleep(30)  # dies with it (its parent-death signal)
        time.sleep(0.01)
        results.append(Outcome(shown, beam_id or "", None, {"beam": beam_id}))
    return results


@needs_forkserver
def test_a_killed_fork_server_is_replaced_and_the_batch_goes_on() -> None:
    tasks: list[Task] = [(f"t{i}", f"case-{i}.toml", f"b{i}", None, None) for i in range(12)]
    tasks[4] = ("kill-server", "case-4.toml", "b4", None, None)
    seen: list[Outcome] = []
    run_local(tasks, str(os.getpid()), False, 2, seen.extend, chunk=3,
              work=_work_that_kills_the_server)
    assert sorted(o.path for o in seen) == sorted(t[1] for t in tasks)  # each once
    failed = [o.path for o in seen if o.error is not None]
    assert failed == ["case-4.toml"]  # killed its server (and itself) every time


def test_a_failed_import_in_the_server_is_kept_not_raised(tmp_path: Path,
                                                          monkeypatch: pytest.MonkeyPatch
                                                          ) -> None:
    (tmp_path / "envelope_test_broken_module.py").write_text("raise RuntimeError('no')\n")
    monkeypatch.syspath_prepend(str(tmp_path))
    monkeypatch.setattr(forkserver, "FAILED", {})
    forkserver.warm(("envelope_test_broken_module", "envelope_test_missing_module"))
    assert set(forkserver.FAILED) == {"envelope_test_broken_module",
                                      "envelope_test_missing_module"}
    assert isinstance(forkserver.FAILED["envelope_test_broken_module"], RuntimeError)
    assert isinstance(forkserver.FAILED["envelope_test_missing_module"], ImportError)


@pytest.mark.parametrize("why", ["no fork server", "another Python", "another system"])
def test_without_a_fork_server_the_workers_are_spawned(why: str,
                                                       monkeypatch: pytest.MonkeyPatch) -> None:
    """As on Windows (no "forkserver" start method), on a Python whose
    multiprocessing the warm server was not written for, or on a system other than
    Linux: spawned workers, nothing to stop."""
    if why == "no fork server":
        monkeypatch.setattr(multiprocessing, "get_all_start_methods", lambda: ["spawn"])
    elif why == "another Python":
        monkeypatch.setattr(local, "FORK_SERVER_PYTHONS", ((3, 10),))
    else:  # macOS has a fork server, but forking after numpy has loaded is unsafe there
        monkeypatch.setattr(local, "FORK_SERVER_PLATFORMS", ("sunos",))
    start = _Start(True)
    assert start.context.get_start_method() == "spawn"
    facts = _one_worker_facts(start)
    assert facts["ppid"] == os.getpid() and facts["preload"] is False
    assert facts["sigint"] is True
