"""Safe outputs: ids cannot lead outside OUT, every file lands in OUT/<id>/, files are
written to a temporary name and renamed, and a crash at any moment leaves each result
file either old and complete or new and complete (outputs contract, ../shared/outputs.md:
"Files are written atomically ... a crash never leaves a half-written file under a
final name"; case-format contract, "Errors": nothing is written for a case that fails).
"""

from __future__ import annotations

import json
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import time
from collections.abc import Callable
from pathlib import Path

import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

import envelope.files
from envelope.cli import main
from envelope.files import write_atomic

from bad_inputs import doc
from beams import beam_text

RESULTS = {"envelope.parquet", "reactions.parquet", "design.parquet", "cases.parquet"}
TEMP = re.compile(r"^\.(?P<final>[^/]+)\.[^/]+\.tmp$")
#: The staging folder a beam's files are written in before they are moved into place.
STAGING = re.compile(r"^\.staging-[^/.]+\.tmp$")


def tree(root: Path) -> set[Path]:
    return {p.relative_to(root) for p in root.rglob("*")}


def with_id(beam_id: str) -> str:
    """The two-span beam of tests/bad_inputs.py with the given id (TOML-escaped)."""
    return doc(header=f'units = "SI"\nid = {json.dumps(beam_id)}\n')


# ---------------------------------------------------------------------------
# Ids and where files go
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("beam_id", ["a/b", "../x", "..", ".", "a\\b", "/tmp/abs",
                                     "x/../../y", "", "a b", "~", "C:\\x", "a\u0000b", "é",
                                     "x" * 65, "..\\..", "a\nb"])
def test_ids_that_could_name_another_folder_are_refused(beam_id: str, tmp_path: Path) -> None:
    case = tmp_path / "case.toml"
    case.write_text(with_id(beam_id), encoding="utf-8")
    out = tmp_path / "out"
    before = tree(tmp_path)
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(out), "--all-cases"])
    assert result.exit_code == 2, result.output
    lines = result.stderr.splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"error: {case}: id: "), result.stderr
    assert "is not a valid id" in lines[0]
    assert tree(tmp_path) == before


def test_a_file_name_that_is_not_a_valid_id_is_refused_when_no_id_is_given(
        tmp_path: Path) -> None:
    case = tmp_path / "..toml"  # stem "."
    case.write_text(doc(), encoding="utf-8")
    before = tree(tmp_path)
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(tmp_path / "out")])
    assert result.exit_code == 2
    assert "the file name '.' is not a valid id" in result.stderr
    assert tree(tmp_path) == before


@pytest.mark.parametrize("beam_id", ["a.b-c_d", "...", "-x", "1", "Beam.2.toml"])
def test_every_file_stays_inside_out_id(beam_id: str, tmp_path: Path,
                                        monkeypatch: pytest.MonkeyPatch) -> None:
    work = tmp_path / "work"
    work.mkdir()
    (work / "case.toml").write_text(with_id(beam_id), encoding="utf-8")
    monkeypatch.chdir(work)
    before = tree(tmp_path)
    result = CliRunner().invoke(main, ["run", "case.toml", "--all-cases"])  # default OUT
    assert result.exit_code == 0, result.output
    new = tree(tmp_path) - before
    folder = Path("work") / "results" / beam_id
    assert new == {Path("work") / "results", folder} | {
        folder / name for name in (*RESULTS, "stations.parquet", "envelope.png")}
    assert (work / "results" / beam_id).resolve().parent == (work / "results").resolve()


# ---------------------------------------------------------------------------
# Temporary names and renames
# ---------------------------------------------------------------------------

def test_each_file_is_complete_under_a_temporary_name_before_the_rename(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    renames: list[tuple[Path, Path]] = []
    synced: list[int] = []
    real_replace, real_fsync = os.replace, os.fsync

    def replace(src: str | os.PathLike[str], dst: str | os.PathLike[str]) -> None:
        src, dst = Path(src), Path(dst)
        if STAGING.match(src.parent.name) and dst.parent != src.parent:
            # a complete file moved out of the staging folder into place: a table under
            # its staged name (.<name>.tmp), the figure under its own
            assert src.name in (dst.name, f".{dst.name}.tmp"), (src, dst)
            assert src.parent.parent == dst.parent, (src, dst)
        else:
            match = TEMP.match(src.name)
            assert match and match["final"] == dst.name, (src, dst)
            assert src.parent == dst.parent
        assert synced, "renamed before the data was flushed to disk"
        if dst.suffix == ".parquet":
            pq.read_table(src)  # complete and readable before it gets its final name
        else:
            assert src.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
        renames.append((src, dst))
        real_replace(src, dst)

    def fsync(fd: int) -> None:
        synced.append(fd)
        real_fsync(fd)

    monkeypatch.setattr(envelope.files.os, "replace", replace)
    monkeypatch.setattr(envelope.files.os, "fsync", fsync)
    case = tmp_path / "case.toml"
    case.write_text(with_id("atomic"), encoding="utf-8")
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(tmp_path / "out"),
                                       "--all-cases"])
    assert result.exit_code == 0, result.output
    folder = tmp_path / "out" / "atomic"
    finals = {dst.name for _, dst in renames}
    assert finals == RESULTS | {"stations.parquet", "envelope.png"}
    assert {p.name for p in folder.iterdir()} == finals  # no temporary file left
    assert len(synced) >= len(finals)


@pytest.mark.parametrize("error", [OSError("disk full"), KeyboardInterrupt()])
def test_a_failed_write_keeps_the_old_file_and_leaves_no_temporary(
        error: BaseException, tmp_path: Path) -> None:
    path = tmp_path / "result.parquet"
    path.write_bytes(b"old complete file")

    def write(fh: object) -> None:
        fh.write(b"half of the new")  # type: ignore[attr-defined]
        raise error

    with pytest.raises(type(error)):
        write_atomic(path, write)
    assert path.read_bytes() == b"old complete file"
    assert [p.name for p in tmp_path.iterdir()] == ["result.parquet"]


def test_new_files_get_the_ordinary_file_mode(tmp_path: Path) -> None:
    """mkstemp makes 0600 files; results are meant to be readable like any other file."""
    path = tmp_path / "x.bin"
    write_atomic(path, lambda fh: fh.write(b"x"))
    mask = os.umask(0)
    os.umask(mask)
    assert path.stat().st_mode & 0o777 == 0o666 & ~mask


def test_a_run_refused_after_the_analysis_leaves_the_old_results_untouched(
        tmp_path: Path) -> None:
    """A table refused as non-finite (design.parquet: span_over_deflection = inf) must not
    leave the tables written before it: the old results stay as they were, byte for byte,
    and a fresh OUT gets no folder."""
    good = tmp_path / "good.toml"
    good.write_text(with_id("same"), encoding="utf-8")
    out = tmp_path / "out"
    assert CliRunner().invoke(main, ["run", str(good), "-o", str(out), "--no-plots"]
                              ).exit_code == 0
    folder = out / "same"
    old = {p.name: p.read_bytes() for p in folder.iterdir()}
    # deflections of 1e-313 m: length / deflection overflows to infinity in design.parquet
    bad = tmp_path / "bad.toml"
    bad.write_text(doc(header='units = "SI"\nid = "same"\n',
                       loads='[[loads]]\ncase = "D"\ntype = "uniform"\nspans = "all"\n'
                             "w = 1e-310\n",
                       combinations='[combinations]\nservice = "characteristic"\n'),
                   encoding="utf-8")
    result = CliRunner().invoke(main, ["run", str(bad), "-o", str(out), "--no-plots"])
    assert result.exit_code != 0
    assert {p.name: p.read_bytes() for p in folder.iterdir()} == old
    fresh = tmp_path / "fresh"
    assert CliRunner().invoke(main, ["run", str(bad), "-o", str(fresh)]).exit_code != 0
    assert not fresh.exists()


# ---------------------------------------------------------------------------
# SIGKILL at random moments
# ---------------------------------------------------------------------------

def big_case(w_live: float) -> str:
    """Three spans, 5000 stations a span, LRFD with code patterning: with --all-cases,
    stations.parquet has about 0.6 million rows, so writing takes a while."""
    return beam_text(
        [6.0, 7.0, 6.5], ["pinned", "pinned", "pinned", "fixed"],
        [{"case": "D", "type": "uniform", "spans": "all", "w": 12.0},
         {"case": "L", "type": "uniform", "spans": "all", "w": w_live}],
        section={"E": 30000, "I": 8.0e9}, cases={"D": "dead", "L": "live"},
        combinations={"strength": "asce7-lrfd", "service": "characteristic"},
        patterning={"method": "code"}, output={"stations_per_span": 5000},
        top={"id": "big"})


def command(case: Path, out: Path) -> list[str]:
    return [sys.executable, "-m", "envelope.cli", "run", str(case), "-o", str(out),
            "--all-cases", "--no-plots", "-q"]


ENV = {**os.environ, "MPLBACKEND": "Agg"}
FINALS = RESULTS | {"stations.parquet"}


def inode(path: Path) -> int | None:
    try:
        return path.stat().st_ino
    except FileNotFoundError:
        return None


def wait_until(proc: subprocess.Popen[bytes], ready: Callable[[], bool]) -> None:
    """Poll until ``ready()`` or the process ends (no time limit: the run is finite)."""
    while proc.poll() is None and not ready():
        time.sleep(0.001)


def read_folder(folder: Path) -> dict[str, pa.Table]:
    return {p.name: pq.read_table(p) for p in folder.glob("*.parquet")}


def test_sigkill_at_random_moments_leaves_only_complete_files(tmp_path: Path) -> None:
    cases = {}
    for name, w in (("a", 8.0), ("b", 9.5)):
        cases[name] = tmp_path / f"{name}.toml"
        cases[name].write_text(big_case(w), encoding="utf-8")
    # reference results, run to the end (both at once)
    procs = [subprocess.Popen(command(cases[n], tmp_path / f"ref-{n}"), env=ENV,
                              stderr=subprocess.PIPE) for n in ("a", "b")]
    started = time.monotonic()
    for p in procs:
        _, err = p.communicate()
        assert p.returncode == 0, err
    full = time.monotonic() - started  # only to spread the kill moments, never asserted
    refs: dict[bytes, dict[str, pa.Table]] = {}
    for n in ("a", "b"):
        tables = read_folder(tmp_path / f"ref-{n}" / "big")
        assert set(tables) == FINALS
        sha = {t.schema.metadata[b"envelope:input_sha256"] for t in tables.values()}
        assert len(sha) == 1
        refs[sha.pop()] = tables
    assert len(refs) == 2

    out = tmp_path / "out"
    shutil.copytree(tmp_path / "ref-a", out)  # the old, complete results of case a
    fresh = tmp_path / "fresh"
    rng = random.Random(20240611)
    killed = 0
    seen_in_out: set[bytes] = set()
    # kill moments: during start-up or the analysis, while a file is being written, just
    # after a given result file got its final name (api.write writes stations.parquet,
    # then envelope, reactions, design, cases), or at any moment of a whole run
    moments = ["start-up", "writing", "renamed:stations.parquet", "renamed:envelope.parquet",
               "renamed:reactions.parquet", "anytime", "writing", "renamed:envelope.parquet"]
    for trial, moment in enumerate(moments):
        target = fresh / str(trial) if trial >= 6 else out
        case = cases["b" if trial % 2 == 0 else "a"]
        folder = target / "big"
        old_temps = set(folder.glob(".*.tmp"))
        old_inode = {n: inode(folder / n) for n in FINALS}
        proc = subprocess.Popen(command(case, target), env=ENV, stderr=subprocess.DEVNULL)
        if moment == "start-up":
            time.sleep(rng.uniform(0.0, 0.3))
        elif moment == "anytime":
            time.sleep(rng.uniform(0.0, full))
        elif moment == "writing":
            wait_until(proc, lambda f=folder, o=old_temps: bool(set(f.glob(".*.tmp")) - o))
            time.sleep(rng.uniform(0.0, 0.2))
        else:
            name = moment.split(":")[1]
            wait_until(proc, lambda f=folder, n=name, o=old_inode: inode(f / n) != o[n])
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        killed += proc.returncode == -signal.SIGKILL
        names = {p.name for p in folder.iterdir()} if folder.exists() else set()
        staging = {n for n in names if STAGING.match(n)}
        for n in staging:  # a killed write's staging folder: only temporaries and finals
            inner = {p.name for p in (folder / n).iterdir()}
            assert all(TEMP.match(i) or i in FINALS | {"envelope.png"} for i in inner), inner
        temps = {n for n in names if TEMP.match(n)} - staging
        for n in temps:
            assert TEMP.match(n)["final"] in FINALS  # type: ignore[index]
        temps |= staging
        assert names - temps <= FINALS, names
        if target == out:
            assert names - temps == FINALS  # each file old or new, none missing
        for name, table in read_folder(folder).items():
            sha = table.schema.metadata[b"envelope:input_sha256"]
            assert sha in refs, name
            assert table.equals(refs[sha][name], check_metadata=True), name
            assert pq.ParquetFile(folder / name).metadata.num_rows == table.num_rows
            if target == out:
                seen_in_out.add(sha)
    assert killed >= 4, "the kills came too late to test anything"
    assert seen_in_out == set(refs), "no kill fell between two renames"

    # leftover temporaries are never taken for results: a new run and a redraw work
    result = subprocess.run(command(cases["a"], out), env=ENV, capture_output=True, text=True,
                            check=False)
    assert result.returncode == 0, result.stderr
    tables = read_folder(out / "big")
    assert set(tables) == FINALS
    for name, table in tables.items():
        assert table.equals(refs[table.schema.metadata[b"envelope:input_sha256"]][name])
    redraw = CliRunner().invoke(main, ["plot", str(out / "big"), "-o",
                                       str(tmp_path / "fig.png")])
    assert redraw.exit_code == 0, redraw.output


def test_a_staging_folder_left_by_a_killed_write_is_removed_and_nothing_else(
        tmp_path: Path) -> None:
    from envelope import api

    case = tmp_path / "b.toml"
    case.write_text(with_id("staged"), encoding="utf-8")
    beam = api.load_case(case)
    result = api.analyse(beam)
    folder = tmp_path / "out" / beam.id
    left = folder / ".staging-0123abcd.tmp"
    left.mkdir(parents=True)
    (left / "envelope.parquet").write_bytes(b"half")
    elsewhere = tmp_path / "keep"
    elsewhere.mkdir()
    (elsewhere / "x").write_text("kept")
    (folder / ".staging-link.tmp").symlink_to(elsewhere, target_is_directory=True)
    (folder / ".staging-file.tmp").write_text("a file, not a folder")
    (folder / ".staging-other").mkdir()  # not a staging name
    api.write(result, tmp_path / "out", plots=False)
    names = {p.name for p in folder.iterdir()}
    assert ".staging-0123abcd.tmp" not in names
    assert {".staging-link.tmp", ".staging-file.tmp", ".staging-other"} <= names
    assert (elsewhere / "x").read_text() == "kept"
    assert not [n for n in names if n.startswith(".staging-") and n.endswith(".tmp")
                and (folder / n).is_dir() and not (folder / n).is_symlink()]
