"""A batch survives any bad file, and nothing is written or deleted outside OUT.

Each test is one reproduction of a hostile input that once hung, crashed or reached
outside the output folder: FIFOs, devices, link loops and dangling links among the case
files; values nested thousands deep; a beam that runs too long; a figure that fails;
symbolic links at OUT/<id>, OUT/_all, OUT/_all/envelope and the lock file; a full disk
under `envelope run`.  The expectation is the contract's (../shared/case-format.md,
"Errors"): the bad file is that file's failure with a one-line message, the other beams
are written, and nothing half-written stands.
"""

from __future__ import annotations

import csv
import errno
import os
from pathlib import Path

import pytest
from click.testing import CliRunner

from envelope import api
from envelope.batch import discover, identify, run_beam
from envelope.batch.discovery import unreadable
from envelope.cli import main
from envelope.errors import OutputError

#: An invented two-span beam (SI), quick to analyse.
GOOD = """\
id = "{id}"
units = "SI"
[section]
E = 30000
I = 8.0e9
[[spans]]
length = 5.0
[[spans]]
length = 6.0
[[supports]]
type = "pinned"
[[supports]]
type = "pinned"
[[supports]]
type = "pinned"
[cases]
D = {{ kind = "dead" }}
L = {{ kind = "live" }}
[[loads]]
case = "D"
type = "uniform"
spans = "all"
w = 8.0
[[loads]]
case = "L"
type = "uniform"
spans = "all"
w = 5.0
[combinations]
strength = "asce7-lrfd"
service = "characteristic"
"""

needs_fifo = pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs FIFOs")


def good(folder: Path, beam_id: str) -> Path:
    path = folder / f"{beam_id}.toml"
    path.write_text(GOOD.format(id=beam_id), encoding="utf-8")
    return path


def batch(*args: str) -> tuple[int, str]:
    result = CliRunner().invoke(main, ["batch", *args])
    assert "Traceback" not in result.output
    return result.exit_code, result.stderr


def failures(out: Path) -> dict[str, str]:
    with open(out / "_all" / "failures.csv", newline="", encoding="utf-8") as fh:
        return {row["file"]: row["error"] for row in csv.DictReader(fh)}


def hostile_folder(folder: Path) -> dict[str, str]:
    """Two good beams among every kind of bad file; name -> phrase of its failure."""
    folder.mkdir()
    good(folder, "good-1")
    good(folder, "good-2")
    expected = {}
    os.mkfifo(folder / "fifo.toml")
    expected["fifo.toml"] = "not a regular file: a FIFO"
    os.symlink(os.devnull, folder / "device.toml")
    expected["device.toml"] = "not a regular file: a character device"
    os.symlink("loop-b.toml", folder / "loop-a.toml")
    os.symlink("loop-a.toml", folder / "loop-b.toml")
    expected["loop-a.toml"] = expected["loop-b.toml"] = "a symbolic link loop"
    os.symlink("missing.toml", folder / "dangling.toml")
    expected["dangling.toml"] = "a dangling symbolic link"
    (folder / "deep-array.toml").write_text("title = " + "[" * 5000 + "]" * 5000 + "\n")
    expected["deep-array.toml"] = "nested more than"
    (folder / "deep-table.toml").write_text("title = " + "{a=" * 3000 + "1" + "}" * 3000)
    expected["deep-table.toml"] = "nested more than"
    (folder / "letters.toml").write_text(GOOD.format(id="letters").replace(
        "length = 5.0", 'length = "1 ' + "m" * 30 + '!"'))
    expected["letters.toml"] = "cannot read"
    (folder / "control.toml").write_text(GOOD.format(id="control").replace(
        'units = "SI"', 'units = "SI"\ntitle = "a\\u0000b"'))
    expected["control.toml"] = "control character U+0000"
    # a folder loop: a link to a parent folder is not followed by the search
    os.symlink("..", folder / "up")
    return expected


@needs_fifo
def test_a_batch_with_every_kind_of_bad_file_completes_the_others(tmp_path: Path) -> None:
    """Regression: a FIFO was reported as "no such file", a link loop or 5000 nested
    arrays aborted the whole batch (exit 1, nothing run), repeated letters in a unit
    string stalled it for ever."""
    cases = tmp_path / "cases"
    expected = hostile_folder(cases)
    out = tmp_path / "out"
    code, stderr = batch(str(cases), "-o", str(out), "--workers", "1")
    assert code == 2, stderr
    assert (out / "good-1" / ".complete.json").is_file()
    assert (out / "good-2" / ".complete.json").is_file()
    listed = failures(out)
    assert {Path(p).name for p in listed} == set(expected)
    for path, error in listed.items():
        assert expected[Path(path).name] in error, error
        assert error.startswith(f"{path}: ") and "\n" not in error


@needs_fifo
def test_a_fifo_named_on_the_command_line_is_its_own_failure(tmp_path: Path) -> None:
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    ok = good(tmp_path, "fine")
    out = tmp_path / "out"
    code, _ = batch(str(fifo), str(ok), "-o", str(out))
    assert code == 2
    assert "not a regular file: a FIFO" in failures(out)[str(fifo)]
    assert (out / "fine" / ".complete.json").is_file()


@needs_fifo
def test_run_and_check_refuse_a_fifo_without_waiting(tmp_path: Path) -> None:
    """Regression: `envelope run fifo.toml` blocked for ever on the open."""
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    for args in (["run", str(fifo), "-o", str(tmp_path / "out")], ["check", str(fifo)]):
        result = CliRunner().invoke(main, args)
        assert result.exit_code == 2
        assert result.stderr == f"error: {fifo}: not a regular file: a FIFO (named pipe)\n"
    assert not (tmp_path / "out").exists()


def test_discovery_does_not_follow_a_folder_link_loop(tmp_path: Path) -> None:
    good(tmp_path, "a")
    (tmp_path / "sub").mkdir()
    good(tmp_path / "sub", "b")
    os.symlink("..", tmp_path / "sub" / "loop")
    assert [Path(p).name for p in discover([str(tmp_path)])] == ["a.toml", "b.toml"]


def test_the_quick_id_read_never_raises(tmp_path: Path) -> None:
    """Regression: the id pre-read of a file nested 5000 deep raised RecursionError and
    aborted the batch before any beam ran."""
    deep = tmp_path / "deep.toml"
    deep.write_text("title = " + "[" * 5000 + "]" * 5000 + "\n")
    entry = identify(0, str(deep))
    assert entry.beam_id is None and entry.sha256 is not None
    zero = tmp_path / "zero.toml"
    os.symlink("/dev/zero", zero)
    assert identify(1, str(zero)).sha256 is None
    assert unreadable(str(zero)) == "not a regular file: a character device"
    assert unreadable(str(deep)) is None


def test_a_beam_past_the_time_limit_is_stopped_and_the_batch_goes_on(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """The limit stops the beam where it is (here, a read that would take a minute) and
    records it as failed; nothing of it is written."""
    import time

    case = good(tmp_path, "slow")

    def slow_read(path: str, parsed: object = None) -> None:
        time.sleep(60)

    monkeypatch.setattr(api, "load_case", slow_read)
    outcome = run_beam((str(case), str(case), "slow", 0.2, None), str(tmp_path / "out"), False)
    assert outcome.error == f"{case}: stopped after the time limit of 0.2 s per beam " \
                           "(--time-limit)"
    assert not (tmp_path / "out").exists()


def test_the_time_limit_stops_a_beam_run_in_a_thread_as_on_a_cluster(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """A Dask worker runs beams in threads, where no interval timer can be set: the
    limit still stops the beam (at its next Python step) and records it as failed, and
    nothing is raised in the thread after the beam is done."""
    import threading
    import time

    case = good(tmp_path, "slow")

    def slow_read(path: str, parsed: object = None) -> None:
        for _ in range(6000):  # a minute of short steps
            time.sleep(0.01)

    outcomes: list[object] = []

    def run(limit: float, out: str) -> None:
        outcomes.append(run_beam((str(case), str(case), "slow", limit, None), out, False))
        time.sleep(0.3)  # past any limit: a late raise would end the thread here
        outcomes.append("after")

    monkeypatch.setattr(api, "load_case", slow_read)
    worker = threading.Thread(target=run, args=(0.2, str(tmp_path / "out")))
    worker.start()
    worker.join()
    assert outcomes[0].error == f"{case}: stopped after the time limit of 0.2 s per " \
                                "beam (--time-limit)"
    assert outcomes[1] == "after"
    assert not (tmp_path / "out").exists()
    from envelope.batch.worker import _time_limit

    def quick() -> None:  # a block done well inside its limit: no raise comes later
        with _time_limit(0.2):
            outcomes.append("done")
        time.sleep(0.4)
        outcomes.append("after")

    outcomes.clear()
    worker = threading.Thread(target=quick)
    worker.start()
    worker.join()
    assert outcomes == ["done", "after"]


def test_the_time_limit_option_fails_each_beam_that_exceeds_it(tmp_path: Path) -> None:
    """End to end on the local pool: no beam can be read, analysed and written in a
    microsecond, so every beam is stopped and listed; the batch still ends normally."""
    for name in ("t1", "t2"):
        good(tmp_path, name)
    out = tmp_path / "out"
    code, _ = batch(str(tmp_path / "t1.toml"), str(tmp_path / "t2.toml"), "-o", str(out),
                    "--workers", "1", "--time-limit", "0.000001")
    assert code == 2
    listed = failures(out)
    assert len(listed) == 2
    assert all("time limit of 1e-06 s" in e for e in listed.values())
    assert not any((out / name / ".complete.json").exists() for name in ("t1", "t2"))
    code, _ = batch(str(tmp_path / "t1.toml"), "-o", str(out), "--time-limit", "0")
    assert code == 2


def test_a_figure_failure_fails_the_beam_whole(tmp_path: Path,
                                               monkeypatch: pytest.MonkeyPatch) -> None:
    """Regression: a figure that could not be drawn left four Parquet files and no
    manifest.  Now the beam fails and its folder holds no results (not even those of an
    earlier complete run, which no longer match the input)."""
    from envelope import plots

    case = good(tmp_path, "fig")
    out = tmp_path / "out"
    first = run_beam((str(case), str(case), "fig", None, None), str(out), True)
    assert first.error is None and (out / "fig" / "envelope.png").is_file()

    def broken(*args: object, **kwargs: object) -> None:
        raise ValueError("cannot draw this text")

    monkeypatch.setattr(plots, "draw_results", broken)
    case.write_text(GOOD.format(id="fig").replace("w = 8.0", "w = 9.0"), encoding="utf-8")
    outcome = run_beam((str(case), str(case), "fig", None, None), str(out), True)
    assert outcome.error is not None and "cannot draw this text" in outcome.error
    assert sorted(p.name for p in (out / "fig").iterdir()) == []


def test_run_leaves_nothing_when_the_figure_fails(tmp_path: Path,
                                                  monkeypatch: pytest.MonkeyPatch) -> None:
    from envelope import plots

    def broken(*args: object, **kwargs: object) -> None:
        raise ValueError("cannot draw this text")

    monkeypatch.setattr(plots, "draw_results", broken)
    beam = api.load_case(good(tmp_path, "nofig"))
    with pytest.raises(ValueError):
        api.write(api.analyse(beam), tmp_path / "out", plots=True)
    assert not (tmp_path / "out").exists()


def test_run_removes_its_files_when_the_disk_is_full(tmp_path: Path,
                                                     monkeypatch: pytest.MonkeyPatch) -> None:
    """Regression: `envelope run` on a nearly full disk left envelope.parquet behind.
    The second Parquet file fails as a full disk does (ENOSPC); the first is removed
    and an earlier complete result in the folder is left as it was."""
    from envelope import store

    beam = api.load_case(good(tmp_path, "full"))
    result = api.analyse(beam)
    out = tmp_path / "out"
    api.write(result, out)
    before = {p.name: p.read_bytes() for p in (out / "full").iterdir()}
    real = store.write_parquet
    calls = []

    def filling(path: Path, table: object, *args: object, **kwargs: object) -> None:
        calls.append(path)
        if len(calls) == 2:
            raise OSError(errno.ENOSPC, "No space left on device")
        real(path, table, *args, **kwargs)

    monkeypatch.setattr(store, "write_parquet", filling)
    with pytest.raises(OutputError, match="No space left on device") as info:
        api.write(result, out)
    assert info.value.exit_code == 1
    assert {p.name: p.read_bytes() for p in (out / "full").iterdir()} == before
    fresh = tmp_path / "fresh"
    calls.clear()
    with pytest.raises(OutputError):
        api.write(result, fresh)
    assert not fresh.exists()


def _outside(tmp_path: Path) -> Path:
    """A folder outside OUT with the user's own files."""
    outside = tmp_path / "outside"
    (outside / "beam=someone").mkdir(parents=True)
    for name in ("envelope.parquet", "mine.png", "notes.txt"):
        (outside / name).write_text("the user's own file")
    return outside


def _untouched(outside: Path) -> None:
    names = sorted(p.name for p in outside.iterdir())
    assert names == ["beam=someone", "envelope.parquet", "mine.png", "notes.txt"]
    assert (outside / "envelope.parquet").read_text() == "the user's own file"


def test_a_linked_beam_folder_is_refused_and_its_target_untouched(tmp_path: Path) -> None:
    """Regression: with OUT/<id> a link, the batch wrote there and deleted the user's
    Parquet and PNG files."""
    outside = _outside(tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    os.symlink(outside, out / "linked")
    case = good(tmp_path, "linked")
    ok = good(tmp_path, "other")
    code, _ = batch(str(case), str(ok), "-o", str(out), "--plots")
    assert code == 2
    assert "is a symbolic link" in failures(out)[str(case)]
    assert (out / "other" / ".complete.json").is_file()
    _untouched(outside)
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(out)])
    assert result.exit_code == 2 and "is a symbolic link" in result.stderr
    _untouched(outside)


@pytest.mark.parametrize("link", ["_all", "_all/envelope"])
def test_a_linked_combined_folder_is_refused_before_anything_is_deleted(
        tmp_path: Path, link: str) -> None:
    """Regression: with OUT/_all/envelope a link, the batch deleted whatever it pointed
    to that was not a beam partition (a folder and a file outside OUT)."""
    outside = _outside(tmp_path)
    out = tmp_path / "out"
    (out / link).parent.mkdir(parents=True, exist_ok=True)
    os.symlink(outside, out / link)
    code, stderr = batch(str(good(tmp_path, "b1")), "-o", str(out))
    assert code == 2
    assert stderr.strip().endswith(f"{out / link}: is a symbolic link; results are never "
                                   "written or deleted through a link inside the output "
                                   "folder (remove the link or choose another output "
                                   "folder)")
    _untouched(outside)


def test_a_linked_lock_file_is_refused_and_nothing_is_created_outside(tmp_path: Path) -> None:
    """Regression: a symlinked lock file created a file outside OUT."""
    out = tmp_path / "out"
    out.mkdir()
    target = tmp_path / "elsewhere.lock"
    os.symlink(target, out / ".envelope-batch.lock")
    code, stderr = batch(str(good(tmp_path, "b1")), "-o", str(out))
    assert code == 2 and "the lock file is a symbolic link" in stderr
    assert not target.exists()
    assert not (out / "b1").exists()
