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


# ---------------------------------------------------------------------------
# A fork server that dies while it starts a worker
# ---------------------------------------------------------------------------

#: Imported by the fork server after its preload (``ENVELOPE_TEST_SERVER_DIES`` =
#: "FOLDER:N:SERVERS"): each of the first SERVERS servers of the test kills itself
#: (SIGKILL) at its N-th fork, after the fork and before it writes the new worker's pid
#: back to the coordinator, and leaves "server child" in FOLDER/died-<i>.
_SERVER_DIES = textwrap.dedent("""
    import os, signal
    from multiprocessing import forkserver

    _folder, _n, _servers = os.environ["ENVELOPE_TEST_SERVER_DIES"].rsplit(":", 2)
    _write_signed = forkserver.write_signed
    _forks = [0]

    def write_signed(fd, n):
        _forks[0] += 1  # the first calls are the pids of new workers (none has ended)
        if _forks[0] == int(_n):
            for i in range(int(_servers)):
                try:
                    claim = os.open(os.path.join(_folder, f"died-{i}"),
                                    os.O_CREAT | os.O_EXCL | os.O_WRONLY)
                except FileExistsError:
                    continue
                os.write(claim, f"{os.getpid()} {n}".encode())
                os.close(claim)
                os.kill(os.getpid(), signal.SIGKILL)
        return _write_signed(fd, n)

    forkserver.write_signed = write_signed
""")


def _work_that_logs(tasks: Sequence[Task], out: str, plots: bool) -> list[Outcome]:
    """Stands in for run_chunk: each beam appends "pid ppid" of its worker to OUT/<id>."""
    results = []
    for _target, shown, beam_id, *_ in tasks:
        with open(os.path.join(out, beam_id or "none"), "a") as log:
            log.write(f"{os.getpid()} {os.getppid()}\n")
        time.sleep(0.01)
        results.append(Outcome(shown, beam_id or "", None, {"beam": beam_id}))
    return results


def _children() -> set[int]:
    """This process's children, from /proc (Linux), but multiprocessing's resource
    tracker (started once for the whole process)."""
    from multiprocessing import resource_tracker

    found = set()
    for entry in os.listdir("/proc"):
        if entry.isdigit():
            try:
                with open(f"/proc/{entry}/stat") as stat:
                    fields = stat.read().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[1]) == os.getpid():
                found.add(int(entry))
    return found - {getattr(resource_tracker._resource_tracker, "_pid", None)}


def _ended(pid: int, timeout: float = 20.0) -> bool:
    """Whether process ``pid`` is gone or a zombie within ``timeout`` seconds (/proc)."""
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        try:
            with open(f"/proc/{pid}/stat") as stat:
                if stat.read().rsplit(")", 1)[1].split()[0] == "Z":
                    return True
        except OSError:
            return True
        time.sleep(0.02)
    return False


@needs_forkserver
@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
@pytest.mark.parametrize("fork, servers", [(1, 1), (2, 1), (1, 2)],
                         ids=["first-worker", "second-worker", "twice"])
def test_a_server_that_dies_while_it_starts_a_worker_ends_no_batch(
        fork: int, servers: int, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """The server dies after it forked a worker and before it wrote the worker's pid
    back: the first worker of the batch (started again on a new server), the second
    (the first dies with the server, by its parent-death signal: the pool is broken and
    its tasks in flight run again on a new pool), or the first on two servers in a row
    (the rest spawned, with a note).  Every beam is reported once, none is lost, the
    child the dying server forked takes no task, and no process is left.  (Before, the
    launch's EOFError ended the batch, or the first worker's failure, taken for another
    engine's, left the batch on spawned workers.)"""
    (tmp_path / "envelope_test_server_dies.py").write_text(_SERVER_DIES)
    # the server's import path is a new interpreter's (PYTHONPATH), not this process's
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join(
        [str(tmp_path), *filter(None, [os.environ.get("PYTHONPATH")])]))
    folder, out = tmp_path / "died", tmp_path / "out"
    folder.mkdir()
    out.mkdir()
    monkeypatch.setenv("ENVELOPE_TEST_SERVER_DIES", f"{folder}:{fork}:{servers}")

    def context(plots: bool) -> forkserver.WarmContext:  # local._context's, and the test's
        warm = forkserver.WarmContext(["envelope.batch.preload",
                                       "envelope_test_server_dies"])
        warm.start()
        return warm

    monkeypatch.setattr(local, "_context", context)
    before = _children()
    tasks: list[Task] = [(f"t{i}", f"case-{i}.toml", f"b{i}", None, None) for i in range(12)]
    seen: list[Outcome] = []
    notes: list[str] = []
    run_local(tasks, str(out), False, 2, seen.extend, chunk=3, work=_work_that_logs,
              note=notes.append)
    assert sorted(o.path for o in seen) == sorted(t[1] for t in tasks)  # each once
    assert all(o.error is None for o in seen)
    runs = {f"b{i}": (out / f"b{i}").read_text().splitlines() for i in range(12)}
    if fork == 1:  # no worker had started: no beam was run twice
        assert all(len(lines) == 1 for lines in runs.values()), runs
    died = sorted(folder.iterdir())
    assert len(died) == servers
    for record in died:
        server, child = map(int, record.read_text().split())
        assert _ended(server) and _ended(child)
        assert not any(line.split()[0] == str(child) for lines in runs.values()
                       for line in lines)  # the dying server's child ran no beam
    parents = {line.split()[1] for lines in runs.values() for line in lines}
    if servers == 1:  # every beam still on workers forked from a (new) server
        assert str(os.getpid()) not in parents and notes == []
    else:  # the rest of the batch on spawned workers, and the user told so
        assert parents == {str(os.getpid())}
        assert len(notes) == 1 and "spawned" in notes[0] and "EOFError" in notes[0]
    assert _children() - before == set()


_WORKER_START = textwrap.dedent("""
    import os, sys
    from envelope.batch import forkserver, local

    forkserver.SERVER = int(sys.argv[1])  # as inherited from the server that forked it
    local._watch_parent(os.getppid())
    print("took tasks", flush=True)
""")


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="parent-death signal")
@pytest.mark.parametrize("alive", [True, False])
def test_a_worker_whose_server_has_died_ends_before_it_takes_a_task(alive: bool) -> None:
    """A worker forked from a server that died before the worker set its parent-death
    signal (a fork clears it) has been taken over by another parent: it ends in its
    start, where it would otherwise go on to take tasks from the pool's queue."""
    server = os.getpid() if alive else 1  # this test is the worker's parent
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [str(REPO), *filter(None, [os.environ.get("PYTHONPATH")])]))
    ran = subprocess.run([sys.executable, "-c", _WORKER_START, str(server)], env=env,
                         capture_output=True, text=True, timeout=120)
    assert (ran.returncode, ran.stdout) == ((0, "took tasks\n") if alive else (1, ""))
