"""`envelope batch`: many beams on a local pool or a dask cluster, resumable after a kill.

What is checked, and against what:

* each beam's folder is what `envelope run` writes for that file (same Parquet tables and
  metadata), and the combined tables in OUT/_all are the beams' own rows;
* one invented reference beam in the batch: a simply supported span under a uniform load
  has M = wL^2/8 at midspan and V = wL/2 at the ends (common practice, any handbook's
  beam table);
* a batch killed with SIGKILL at two moments and rerun ends with the outputs of a clean
  run, Parquet file by Parquet file; every Parquet file standing after a kill reads whole;
* the dask path (a real LocalCluster on loopback) gives the same outputs, also when a
  worker process is killed mid-batch;
* bad files are listed in failures.csv while the other beams go on; a beam that kills
  its worker process is a failure of its own; duplicate ids are refused before anything
  is written, and so is a cluster whose workers cannot run the batch; unchanged beams are
  skipped, changed ones rerun.
"""

from __future__ import annotations

import csv
import io
import json
import os
import shutil
import signal
import subprocess
import sys
import time
from collections.abc import Callable, Sequence
from pathlib import Path
from types import ModuleType

import pyarrow as pa
import pyarrow.dataset as ds
import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner, Result

from envelope import api, engine_version
from envelope.batch import (
    MANIFEST,
    BatchError,
    Outcome,
    Progress,
    Task,
    discover,
    run_local,
)
from envelope.batch.cluster import _check_cluster
from envelope.cli import main

from beams import beam_text, make_cases_module
from tolerances import SOLVE

REPO = Path(__file__).resolve().parents[1]
#: Guard against a hung subprocess or cluster (not a timing check).
HANG_GUARD = 300.0

# An invented one-span beam: 6 m, pinned both ends, dead load 10 kN/m, factor 1.0.
REFERENCE = beam_text(
    [6.0], ["pinned", "pinned"], [{"case": "D", "type": "uniform", "spans": "all", "w": 10.0}],
    section={"E": 30000, "I": 8.0e9},
    combinations={"custom": [{"name": "1.0D", "set": "strength", "factors": {"D": 1.0}},
                             {"name": "D", "set": "service", "factors": {"D": 1.0}}]},
    top={"id": "ref-simple", "title": "Reference: simple span, uniform load"})

#: Broken files: name -> (bytes, phrase the failure message must contain, id recorded).
BROKEN: dict[str, tuple[bytes, str, str]] = {
    "broken-toml.toml": (b'units = "SI"\n[[spans]\nlength = 6\n', "not valid TOML", ""),
    "not-utf8.toml": (b"\xff\xfeunits = 1\n", "not UTF-8", ""),
    "unknown-key.toml": (REFERENCE.replace('id = "ref-simple"\n', "")
                         .replace("length = 6.0", "lenght = 6.0").encode(),
                         "spans[1]", "unknown-key"),
    "unstable.toml": (REFERENCE.replace('id = "ref-simple"\n', "")
                      .replace('type = "pinned"', 'type = "free"').encode(),
                      "unstable", "unstable"),
    "reserved.toml": (REFERENCE.replace('"ref-simple"', '"_all"').encode(), "reserved",
                      "_all"),
}


def _make_cases_module() -> ModuleType:
    return make_cases_module()


make_cases = _make_cases_module().make_cases


def batch(*args: str) -> Result:
    return CliRunner().invoke(main, ["batch", *args])


def start_batch(*args: str) -> subprocess.Popen[str]:
    return subprocess.Popen([sys.executable, "-m", "envelope.cli", "batch", *args],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)


def manifests(out: Path) -> int:
    return len(list(out.glob(f"*/{MANIFEST}")))


def wait_until(condition: Callable[[], bool], what: str) -> None:
    deadline = time.monotonic() + HANG_GUARD
    while not condition():
        assert time.monotonic() < deadline, f"hung waiting for {what}"
        time.sleep(0.02)


def parquet_files(out: Path) -> dict[str, Path]:
    return {str(p.relative_to(out)): p for p in out.rglob("*.parquet")}


def temporaries(out: Path) -> list[Path]:
    return list(out.rglob(".*.tmp"))


def assert_same_outputs(clean: Path, other: Path) -> None:
    """Every Parquet file of ``clean`` is in ``other`` with equal contents and metadata,
    and nothing more; manifests are equal; no temporary file is left."""
    a, b = parquet_files(clean), parquet_files(other)
    assert sorted(a) == sorted(b)
    for rel, path in a.items():
        ta, tb = pq.ParquetFile(path).read(), pq.ParquetFile(b[rel]).read()
        assert ta.equals(tb, check_metadata=True), f"{rel} differs"
    for m in clean.glob(f"*/{MANIFEST}"):
        assert json.loads(m.read_text()) == \
            json.loads((other / m.parent.name / MANIFEST).read_text())
    assert not temporaries(other)


def summary_counts(stdout: str) -> dict[str, int]:
    """{"written": n, "skipped": n, "failed": n} from the summary line."""
    line = next(x for x in stdout.splitlines() if " case files: " in x)
    counts = line.split(" case files: ")[1]
    out = {}
    for part in counts.split(", "):
        number, word = part.split()[:2]
        out[word] = int(number)
    return out


# ---------------------------------------------------------------------------
# Shared inputs: 60 small generated beams and their clean local run
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def cases60(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("cases60")
    make_cases(60, folder, seed=24, max_spans=4)
    return folder


@pytest.fixture(scope="module")
def clean60(cases60: Path, tmp_path_factory: pytest.TempPathFactory) -> Path:
    out = tmp_path_factory.mktemp("clean60") / "out"
    result = batch(str(cases60), "-o", str(out), "--workers", "2")
    assert result.exit_code == 0, result.output
    assert summary_counts(result.stdout) == {"written": 60, "skipped": 0, "failed": 0}
    return out


# ---------------------------------------------------------------------------
# A building's worth: 200 generated beams, a reference beam and broken files
# ---------------------------------------------------------------------------


def test_200_beams_with_broken_files_complete_and_list_the_failures(tmp_path: Path) -> None:
    cases = tmp_path / "cases"
    make_cases(200, cases / "generated", seed=9, max_spans=2)
    (cases / "ref-simple.toml").write_text(REFERENCE)
    for name, (data, _, _) in BROKEN.items():
        (cases / "bad" / name).parent.mkdir(exist_ok=True)
        (cases / "bad" / name).write_bytes(data)
    out = tmp_path / "out"
    result = batch(str(cases), "-o", str(out), "--workers", "2")

    assert result.exit_code == 2, result.output
    assert summary_counts(result.stdout) == {"written": 201, "skipped": 0, "failed": 5}
    assert "failures.csv" in result.stdout
    # one "error:" line per failure on standard error, naming the file
    errors = [x for x in result.stderr.splitlines() if x.startswith("error: ")]
    assert len(errors) == 5
    with open(out / "_all" / "failures.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert [Path(r["file"]).name for r in rows] == sorted(BROKEN)  # discovery order
    for row in rows:
        _, phrase, beam_id = BROKEN[Path(row["file"]).name]
        assert phrase in row["error"], row
        assert row["file"] in row["error"], row
        assert row["id"] == beam_id
        assert "\n" not in row["error"]
    assert not (out / "_all" / "envelope" / "beam=_all").exists()

    good = sorted(p.name for p in out.iterdir() if (p / MANIFEST).exists())
    assert len(good) == 201 and "ref-simple" in good
    assert not temporaries(out)

    # the combined design table is the beams' own rows, one per span per beam
    design = pq.read_table(out / "_all" / "design.parquet")
    spans = sum(pq.read_metadata(out / b / "design.parquet").num_rows for b in good)
    assert design.num_rows == spans
    assert sorted(set(design.column("beam").to_pylist())) == good
    meta = design.schema.metadata
    assert b"envelope:units" in meta and meta[b"envelope:version"]
    assert len(meta[b"envelope:input_sha256"]) == 64
    for beam_id in ("ref-simple", good[0], good[-1]):
        own = pq.read_table(out / beam_id / "design.parquet")
        rows_of = design.filter(pa.compute.equal(design.column("beam"), beam_id))
        assert rows_of.drop_columns(["system"]).equals(own)

    # the partitioned envelope dataset reads in one go, the beam column from the path
    part = ds.partitioning(pa.schema([("beam", pa.string())]), flavor="hive")
    envelope = ds.dataset(out / "_all" / "envelope", partitioning=part).to_table()
    assert sorted(set(envelope.column("beam").to_pylist())) == good
    stations = sum(pq.read_metadata(out / b / "envelope.parquet").num_rows for b in good)
    assert envelope.num_rows == stations
    assert pq.read_table(out / "_all" / "envelope").num_rows == stations  # inferred schema

    # reference beam: M = wL^2/8 = 45 kN*m, V = wL/2 = 30 kN (common practice)
    ref = design.filter(pa.compute.equal(design.column("beam"), "ref-simple")).to_pylist()[0]
    assert ref["moment_pos"] == pytest.approx(10.0 * 6.0**2 / 8.0, rel=SOLVE)
    assert ref["moment_pos_x"] == pytest.approx(3.0, rel=1e-6)
    assert ref["shear_left"] == pytest.approx(30.0, rel=SOLVE)
    assert ref["system"] == "SI"

    # each beam's folder is exactly what `envelope run` writes
    single = tmp_path / "single"
    for name in ("beam-00000", "beam-00123", "beam-00199"):
        path = cases / "generated" / f"{name}.toml"
        run = CliRunner().invoke(main, ["run", str(path), "-o", str(single), "--no-plots", "-q"])
        assert run.exit_code == 0, run.output
        for stem in ("envelope", "reactions", "design", "cases"):
            a = pq.read_table(single / name / f"{stem}.parquet")
            b = pq.read_table(out / name / f"{stem}.parquet")
            assert a.equals(b, check_metadata=True), (name, stem)


# ---------------------------------------------------------------------------
# Crash safety and resume
# ---------------------------------------------------------------------------


def test_kill_and_resume_gives_the_outputs_of_a_clean_run(cases60: Path, clean60: Path,
                                                           tmp_path: Path) -> None:
    psutil = pytest.importorskip("psutil")
    out = tmp_path / "out"
    for threshold in (6, 30):
        proc = start_batch(str(cases60), "-o", str(out), "--workers", "2")
        wait_until(lambda t=threshold, p=proc: manifests(out) >= t or p.poll() is not None,
                   "beams to be written")
        assert proc.poll() is None, "the batch ended before it could be killed"
        children = psutil.Process(proc.pid).children(recursive=True)
        os.kill(proc.pid, signal.SIGKILL)
        proc.communicate()
        # the worker processes die with the batch (no orphan writes into the next run)
        _, alive = psutil.wait_procs(children, timeout=30)
        assert not alive
        for path in out.rglob("*.parquet"):  # nothing half-written under a final name
            pq.ParquetFile(path).read()
    assert 6 <= manifests(out) < 60
    final = start_batch(str(cases60), "-o", str(out), "--workers", "2")
    stdout, stderr = final.communicate(timeout=HANG_GUARD)
    assert final.returncode == 0, stderr
    counts = summary_counts(stdout)
    assert counts["skipped"] >= 30 and counts["written"] == 60 - counts["skipped"]
    assert_same_outputs(clean60, out)


def test_resume_skips_unchanged_beams_and_reruns_a_changed_one(tmp_path: Path) -> None:
    cases = tmp_path / "cases"
    paths = make_cases(4, cases, seed=11, max_spans=2)
    out = tmp_path / "out"
    assert batch(str(cases), "-o", str(out), "--workers", "2").exit_code == 0
    design_before = pq.read_table(out / "_all" / "design.parquet")

    def identities(folder: Path) -> dict[str, tuple[int, int]]:
        return {str(p.relative_to(out)): (p.stat().st_ino, p.stat().st_mtime_ns)
                for p in folder.rglob("*") if p.is_file()}

    unchanged = ["beam-00000", "beam-00002", "beam-00003"]
    before = {}
    for b in unchanged:
        before.update(identities(out / b))
        before.update(identities(out / "_all" / "envelope" / f"beam={b}"))

    text = paths[1].read_text()
    paths[1].write_text(text.replace("\nw = ", "\nw = 1", 1))  # a heavier first line load
    result = batch(str(cases), "-o", str(out), "--workers", "2")
    assert result.exit_code == 0, result.output
    assert summary_counts(result.stdout) == {"written": 1, "skipped": 3, "failed": 0}
    after = {}
    for b in unchanged:
        after.update(identities(out / b))
        after.update(identities(out / "_all" / "envelope" / f"beam={b}"))
    assert after == before  # not rewritten
    new_hash = api.load_case(paths[1]).input_sha256
    for name in ("envelope", "reactions", "design", "cases"):
        meta = pq.read_schema(out / "beam-00001" / f"{name}.parquet").metadata
        assert meta[b"envelope:input_sha256"] == new_hash.encode()
    part = out / "_all" / "envelope" / "beam=beam-00001" / "part-0.parquet"
    assert pq.read_schema(part).metadata[b"envelope:input_sha256"] == new_hash.encode()
    design_after = pq.read_table(out / "_all" / "design.parquet")
    changed = pa.compute.equal(design_after.column("beam"), "beam-00001")
    old = design_before.filter(pa.compute.equal(design_before.column("beam"), "beam-00001"))
    assert design_after.filter(changed).column("moment_pos") != old.column("moment_pos")

    forced = batch(str(cases), "-o", str(out), "--workers", "2", "--force")
    assert summary_counts(forced.stdout) == {"written": 4, "skipped": 0, "failed": 0}

    # a case file taken out of the batch leaves the combined results
    paths[3].unlink()
    result = batch(str(cases), "-o", str(out), "--workers", "1")
    assert summary_counts(result.stdout) == {"written": 0, "skipped": 3, "failed": 0}
    assert not (out / "_all" / "envelope" / "beam=beam-00003").exists()
    beams = set(pq.read_table(out / "_all" / "design.parquet").column("beam").to_pylist())
    assert beams == {"beam-00000", "beam-00001", "beam-00002"}


@pytest.mark.parametrize("units", [None, "US"])
def test_combined_tables_from_the_workers_equal_those_read_back(tmp_path: Path,
                                                                units: str | None) -> None:
    """The design, sizing and bars tables each worker returns with its outcome (Arrow
    IPC, the fast path) combine to the same bytes as the beams' Parquet files read back
    (the reference path, which a resumed batch takes for the beams it skips)."""
    from envelope.batch.combined import COMBINED_STEMS, combine
    from envelope.batch.runner import run_batch

    cases = tmp_path / "cases"
    make_cases(3, cases, seed=14, max_spans=3)
    for name in ("office-4span-si.toml", "mezzanine-us.toml"):  # sizing, bars
        shutil.copy(REPO / "cases" / name, cases / name)
    out = tmp_path / "out"
    summary = run_batch([str(cases)], out, workers=1, units=units)
    given = {o.beam_id: o.tables for o in summary.written}
    assert all(t is not None and "design" in t for t in given.values())
    assert any(t is not None and "bars" in t for t in given.values())
    fast = {stem: (out / "_all" / f"{stem}.parquet").read_bytes() for stem in COMBINED_STEMS}
    done = {o.beam_id: o.manifest for o in summary.written}
    assert all(m is not None for m in done.values())
    combine(out, done, units, fresh=set(done))  # nothing given: every table read back
    read_back = {stem: (out / "_all" / f"{stem}.parquet").read_bytes()
                 for stem in COMBINED_STEMS}
    assert fast == read_back


def test_the_worker_takes_the_quick_read_s_document_only_for_the_same_bytes(
        tmp_path: Path) -> None:
    """A batch parses each case file once: the worker's read of the file takes the
    document the coordinator's quick read parsed (the fast path) when the file still
    holds the same bytes, and the beam equals the one from parsing the file (the
    reference path); a file changed in between is parsed again."""
    from envelope.batch import identify
    from envelope.casefile import load_case

    cases = tmp_path / "cases"
    paths = make_cases(6, cases, seed=15)
    paths += [REPO / "cases" / n for n in ("office-4span-si.toml", "mezzanine-us.toml")]
    for path in paths:
        parsed = identify(0, str(path)).task()[5]
        assert parsed is not None
        assert load_case(path, parsed) == load_case(path)
    parsed = identify(0, str(paths[0])).task()[5]
    assert parsed is not None
    paths[0].write_text(paths[0].read_text().replace('title = "', 'title = "changed: ', 1))
    beam = load_case(paths[0], parsed)
    assert beam == load_case(paths[0]) and beam.title.startswith("changed: ")


def test_a_folder_s_case_files_are_parsed_once_and_identified_as_by_their_own_read(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """Case files found in a folder are parsed once, while they are told apart from other
    TOML files: the quick read takes that parse (the fast path) and gives the entries
    of reading each file afresh (the reference path); a file changed in between is
    parsed again and read as it is now."""
    import tomllib

    from envelope.batch import discovery

    cases = tmp_path / "cases"
    make_cases(5, cases, seed=16)
    (cases / "tool.toml").write_text('[tool]\nname = "not a case"\n')
    (cases / "empty.toml").write_text("")
    calls: list[int] = []
    real = tomllib.loads

    def counted(text: str) -> dict[str, object]:
        calls.append(1)
        return real(text)

    monkeypatch.setattr(discovery.tomllib, "loads", counted)
    parsed: discovery.Parsed = {}
    found = discover([str(cases)], [], parsed)
    fast = [discovery.identify(i, p, parsed=parsed) for i, p in enumerate(found)]
    assert len(calls) == 7 and len(found) == 6  # tool.toml left out
    reference = [discovery.identify(i, p) for i, p in enumerate(found)]
    assert len(calls) == 7 + 6
    assert fast == reference
    changed = Path(found[0])
    changed.write_text(changed.read_text().replace('id = "', 'id = "x', 1))
    again = discovery.identify(0, found[0], parsed=parsed)
    assert again == discovery.identify(0, found[0]) != fast[0]
    assert again.beam_id is not None and again.beam_id.startswith("x")


def test_a_folder_with_old_and_new_files_is_not_taken_as_done(tmp_path: Path) -> None:
    cases = tmp_path / "cases"
    make_cases(3, cases, seed=12, max_spans=2)
    out, clean = tmp_path / "out", tmp_path / "clean"
    for target in (out, clean):
        assert batch(str(cases), "-o", str(target), "--workers", "1").exit_code == 0
    # another input's file under a listed name, the manifest still in place
    shutil.copy(out / "beam-00001" / "design.parquet", out / "beam-00000" / "design.parquet")
    # a listed file missing
    (out / "beam-00002" / "cases.parquet").unlink()
    result = batch(str(cases), "-o", str(out), "--workers", "1")
    assert summary_counts(result.stdout) == {"written": 2, "skipped": 1, "failed": 0}
    assert_same_outputs(clean, out)
    # a beam folder whose manifest is gone (killed between the files and the manifest)
    (out / "beam-00001" / MANIFEST).unlink()
    result = batch(str(cases), "-o", str(out), "--workers", "1")
    assert summary_counts(result.stdout) == {"written": 1, "skipped": 2, "failed": 0}
    assert_same_outputs(clean, out)


def test_plots_are_drawn_on_request_and_count_for_completeness(tmp_path: Path) -> None:
    cases = tmp_path / "cases"
    make_cases(2, cases, seed=13, max_spans=2)
    out = tmp_path / "out"
    assert batch(str(cases), "-o", str(out), "--workers", "1").exit_code == 0
    assert not list(out.glob("*/envelope.png"))  # off by default in a batch
    result = batch(str(cases), "-o", str(out), "--workers", "1", "--plots")
    assert summary_counts(result.stdout)["written"] == 2
    for folder in (out / "beam-00000", out / "beam-00001"):
        assert (folder / "envelope.png").stat().st_size > 10_000
        assert "envelope.png" in json.loads((folder / MANIFEST).read_text())["files"]
    again = batch(str(cases), "-o", str(out), "--workers", "1")
    assert summary_counts(again.stdout)["skipped"] == 2


# ---------------------------------------------------------------------------
# Refusals and discovery
# ---------------------------------------------------------------------------


def test_duplicate_ids_are_refused_before_anything_runs(tmp_path: Path) -> None:
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    first, second = tmp_path / "a" / "one.toml", tmp_path / "b" / "two.toml"
    first.write_text(REFERENCE)
    second.write_text(REFERENCE.replace("w = 10.0", "w = 12.0"))
    out = tmp_path / "out"
    result = batch(str(tmp_path / "a"), str(tmp_path / "b"), "-o", str(out))
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and "'ref-simple'" in lines[0]
    assert str(first) in lines[0] and str(second) in lines[0]
    assert "Traceback" not in result.output
    assert not out.exists()


def test_discovery_of_files_folders_and_globs(tmp_path: Path) -> None:
    (tmp_path / "level1" / "deep").mkdir(parents=True)
    (tmp_path / "level1" / ".hidden").mkdir()
    for rel in ("level1/b.toml", "level1/a.toml", "level1/deep/c.toml",
                "level1/.hidden/skip.toml", "level2-x.toml", "level2-y.toml"):
        (tmp_path / rel).write_text("")
    (tmp_path / "level1" / "notes.txt").write_text("")
    t = str(tmp_path)
    found = discover([f"{t}/level1", f"{t}/level2-*.toml", f"{t}/level1/a.toml"])
    assert [Path(p).relative_to(tmp_path).as_posix() for p in found] == [
        "level1/a.toml", "level1/b.toml", "level1/deep/c.toml", "level2-x.toml",
        "level2-y.toml"]
    with pytest.raises(BatchError, match="no such file or folder"):
        discover([f"{t}/missing.toml"])
    with pytest.raises(BatchError, match="no file matches"):
        discover([f"{t}/nothing-*.toml"])
    result = batch(f"{t}/missing", "-o", str(tmp_path / "out"))
    assert result.exit_code == 2
    assert result.stderr.strip() == f"error: {t}/missing: no such file or folder"
    both = batch(f"{t}/level1", "-o", str(tmp_path / "out"), "--workers", "2",
                 "--scheduler", "tcp://127.0.0.1:1")
    assert both.exit_code == 2 and "--workers" in both.stderr


# ---------------------------------------------------------------------------
# A worker process that dies
# ---------------------------------------------------------------------------


def _work_that_crashes(tasks: Sequence[Task], out: str, plots: bool) -> list[Outcome]:
    """Stands in for run_chunk: the task named "crash" kills its worker process."""
    results = []
    for target, shown, beam_id, *_ in tasks:
        if target == "crash":
            os._exit(13)
        time.sleep(0.01)
        results.append(Outcome(shown, beam_id or "", None, {"beam": beam_id}))
    return results


def test_a_beam_that_kills_its_worker_is_a_failure_and_the_rest_go_on() -> None:
    tasks: list[Task] = [(f"t{i}", f"case-{i}.toml", f"b{i}", None, None) for i in range(14)]
    tasks[5] = ("crash", "case-5.toml", "b5", None, None)
    seen: list[Outcome] = []
    run_local(tasks, "unused", False, 2, seen.extend, chunk=3, work=_work_that_crashes)
    assert sorted(o.path for o in seen) == sorted(t[1] for t in tasks)  # each once
    failed = [o for o in seen if o.error is not None]
    assert [o.path for o in failed] == ["case-5.toml"]
    assert "worker process died" in str(failed[0].error)


def test_batch_survives_a_killed_local_worker(cases60: Path, clean60: Path,
                                              tmp_path: Path) -> None:
    psutil = pytest.importorskip("psutil")
    out = tmp_path / "out"
    proc = start_batch(str(cases60), "-o", str(out), "--workers", "2")
    wait_until(lambda: manifests(out) >= 6 or proc.poll() is not None, "beams to be written")
    # the pool's workers: forked by the batch's fork server (its children), or spawned;
    # not the resource tracker nor the server itself
    workers = [p for p in psutil.Process(proc.pid).children(recursive=True)
               if "resource_tracker" not in " ".join(p.cmdline()) and not p.children()]
    assert proc.poll() is None and workers, "the batch ended before a worker could be killed"
    workers[0].kill()
    stdout, stderr = proc.communicate(timeout=HANG_GUARD)
    assert proc.returncode == 0, stderr
    assert summary_counts(stdout) == {"written": 60, "skipped": 0, "failed": 0}
    assert_same_outputs(clean60, out)


# ---------------------------------------------------------------------------
# Progress
# ---------------------------------------------------------------------------


class _Clock:
    def __init__(self) -> None:
        self.now = 100.0

    def __call__(self) -> float:
        return self.now


def test_progress_bar_on_a_terminal_shows_count_rate_and_time_left() -> None:
    stream, clock = io.StringIO(), _Clock()
    bar = Progress(10, stream, tty=True, clock=clock, width=10)
    clock.now += 2.0
    bar.advance(4)
    shown = stream.getvalue().split("\r")[-1]
    assert shown.startswith("[####------] 4/10 beams, 2.0 beams/s, 0:03 left")
    bar.note("error: x.toml: spans[1].length: must be greater than zero")
    assert "\nerror: x.toml" in stream.getvalue().replace("\r", "\n")
    clock.now += 3.0
    bar.advance(6, failed=1)
    bar.close()
    assert stream.getvalue().rstrip("\n").split("\r")[-1].startswith(
        "[##########] 10/10 beams, 2.0 beams/s, 0:05 elapsed, 1 failed")


def test_progress_without_a_terminal_prints_plain_lines_now_and_then() -> None:
    stream, clock = io.StringIO(), _Clock()
    bar = Progress(100, stream, tty=False, clock=clock)
    for _ in range(50):
        clock.now += 0.1
        bar.advance(1)
    clock.now += 10.0
    bar.advance(1)
    bar.close()
    lines = stream.getvalue().splitlines()
    assert all(x.startswith("batch: ") and "\r" not in x for x in lines)
    assert len(lines) == 3  # the first beam, one after the interval, the end
    assert lines[1] == "batch: 51/100 beams, 3.4 beams/s, 0:14 left"


# ---------------------------------------------------------------------------
# The generator
# ---------------------------------------------------------------------------


def test_make_cases_is_deterministic_varied_and_valid(tmp_path: Path) -> None:
    a = make_cases(120, tmp_path / "a", seed=5)
    b = make_cases(120, tmp_path / "b", seed=5)
    c = make_cases(10, tmp_path / "c", seed=6)
    d = make_cases(10, tmp_path / "d", seed=5)
    assert [p.read_bytes() for p in a] == [p.read_bytes() for p in b]
    assert [p.read_bytes() for p in a[:10]] == [p.read_bytes() for p in d]
    assert [p.read_bytes() for p in a[:10]] != [p.read_bytes() for p in c]
    beams = [api.load_case(p) for p in a]  # every one valid and stable
    text = "".join(p.read_text() for p in a)
    assert {b.patterning.method for b in beams} == {"none", "code", "exhaustive", "segments"}
    assert {b.combinations.strength for b in beams} == {
        "asce7-lrfd", "asce7-asd", "en1990-6.10", "en1990-6.10ab", "none"}
    assert any(b.combinations.custom for b in beams)
    assert {b.combinations.service for b in beams} == {"characteristic", "none"}
    assert {ld.type for b in beams for ld in b.loads} == {
        "uniform", "linear", "point", "moment", "self_weight"}
    assert {s.kind for b in beams for s in b.supports} == {"pinned", "fixed", "free",
                                                             "spring"}
    assert any(b.supports[-1].kind == "free" for b in beams)  # cantilevers
    assert "columns = " in text and "[[spans.sections]]" in text
    assert {b.units.name for b in beams} == {"SI", "US"}
    assert min(b.n_spans for b in beams) == 1 and max(b.n_spans for b in beams) >= 8


def test_make_cases_command_line(tmp_path: Path) -> None:
    done = subprocess.run([sys.executable, str(REPO / "benchmarks" / "make_cases.py"), "3",
                           str(tmp_path / "x"), "--seed", "4"],
                          capture_output=True, text=True, check=True)
    assert "wrote 3 case files" in done.stdout
    assert sorted(p.name for p in (tmp_path / "x").iterdir()) == [
        "beam-00000.toml", "beam-00001.toml", "beam-00002.toml"]


# ---------------------------------------------------------------------------
# A dask.distributed cluster (skipped only when distributed is not installed)
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def cluster():  # type: ignore[no-untyped-def]
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as local, \
            distributed.Client(local) as client:
        yield local, client


def test_dask_cluster_gives_the_same_outputs(cluster, cases60: Path, clean60: Path,  # type: ignore[no-untyped-def]
                                            tmp_path: Path) -> None:
    local, _ = cluster
    out = tmp_path / "out"
    result = batch(str(cases60), "-o", str(out), "--scheduler", local.scheduler_address)
    assert result.exit_code == 0, result.output
    assert summary_counts(result.stdout) == {"written": 60, "skipped": 0, "failed": 0}
    assert_same_outputs(clean60, out)
    again = batch(str(cases60), "-o", str(out), "--scheduler", local.scheduler_address)
    assert summary_counts(again.stdout) == {"written": 0, "skipped": 60, "failed": 0}


def test_the_time_limit_stops_beams_on_a_dask_cluster(cluster, cases60: Path,  # type: ignore[no-untyped-def]
                                                      tmp_path: Path) -> None:
    """Dask runs beams in its workers' threads: --time-limit stops them there too (no
    beam is read, analysed and written in a microsecond), each listed as failed."""
    local, _ = cluster
    out = tmp_path / "out"
    chosen = sorted(cases60.glob("*.toml"))[:3]
    result = batch(*map(str, chosen), "-o", str(out), "--scheduler",
                   local.scheduler_address, "--time-limit", "0.000001")
    assert result.exit_code == 2, result.output
    assert summary_counts(result.stdout) == {"written": 0, "skipped": 0, "failed": 3}
    with (out / "_all" / "failures.csv").open() as fh:
        errors = [r["error"] for r in csv.DictReader(fh)]
    assert len(errors) == 3
    assert all("stopped after the time limit of 1e-06 s per beam" in e for e in errors)


def test_dask_batch_completes_when_a_worker_is_killed(cluster, cases60: Path,  # type: ignore[no-untyped-def]
                                                      clean60: Path, tmp_path: Path) -> None:
    local, client = cluster
    pids = client.run(os.getpid)
    out = tmp_path / "out"
    proc = start_batch(str(cases60), "-o", str(out), "--scheduler", local.scheduler_address)
    wait_until(lambda: manifests(out) >= 6 or proc.poll() is not None, "beams to be written")
    assert proc.poll() is None, "the batch ended before a worker could be killed"
    os.kill(next(iter(pids.values())), signal.SIGKILL)
    stdout, stderr = proc.communicate(timeout=HANG_GUARD)
    assert proc.returncode == 0, stderr
    assert summary_counts(stdout) == {"written": 60, "skipped": 0, "failed": 0}
    assert_same_outputs(clean60, out)
    client.wait_for_workers(2, timeout=HANG_GUARD)  # the nanny restarts the worker


class _FakeClient:
    """Answers as a dask Client would: ``run`` gives one result per worker address."""

    def __init__(self, answers: dict[str, dict[str, object]]) -> None:
        self.answers = answers  # function name -> {worker: result}

    def nthreads(self) -> dict[str, int]:
        return {w: 1 for w in self.answers["worker_engine_version"]}

    def run(self, function: Callable[..., object], *args: object,
            on_error: str = "raise") -> dict[str, object]:
        return dict(self.answers[function.__name__])


def test_a_cluster_that_cannot_run_the_batch_is_refused_naming_the_worker() -> None:
    good = {"worker_engine_version": {"tcp://a:1": engine_version(), "tcp://b:1": engine_version()},
            "isdir": {"tcp://a:1": True, "tcp://b:1": True},
            "isfile": {"tcp://a:1": True, "tcp://b:1": True}}
    assert _check_cluster(_FakeClient(good), "/out", "/cases/x.toml") == 2
    cases = [
        ({"worker_engine_version": {"tcp://a:1": engine_version(),
                             "tcp://b:1": ModuleNotFoundError("No module named 'envelope'")}},
         "worker tcp://b:1 cannot run envelope"),
        ({"worker_engine_version": {"tcp://a:1": "0.0.1", "tcp://b:1": engine_version()}},
         "worker tcp://a:1 runs envelope 0.0.1"),
        ({"isdir": {"tcp://a:1": True, "tcp://b:1": False}},
         "worker tcp://b:1 cannot see the output folder at /out"),
        ({"isfile": {"tcp://a:1": False, "tcp://b:1": True}},
         "worker tcp://a:1 cannot see the case files at /cases/x.toml"),
    ]
    for change, message in cases:
        with pytest.raises(BatchError, match=message):
            _check_cluster(_FakeClient({**good, **change}), "/out", "/cases/x.toml")
