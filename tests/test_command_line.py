"""The command line follows the habits of the ecosystem: -h and --help, --version as
written into the files, -q/-v on every command, ``python -m envelope``, folders for
``check``, usage errors (exit 2) for a bad figure name, stale files removed, non-case
TOML files skipped, a quiet exit into a closed pipe, no "-0.0" in tables, and lazy
subcommands (no matplotlib with --no-plots)."""

from __future__ import annotations

import importlib
import os
import subprocess
import sys
from pathlib import Path

import click
import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

from envelope.cli import COMMANDS, main

ROOT = Path(__file__).resolve().parents[1]
CASES = sorted((ROOT / "cases").glob("*.toml"))
ENV = {**os.environ, "PYTHONPATH": str(ROOT), "MPLBACKEND": "Agg"}


def _python(*args: str, **kw: object) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, *args], capture_output=True, text=True,
                          check=False, env=ENV, cwd=kw.get("cwd", ROOT))  # type: ignore[arg-type]


def test_every_registered_command_imports_and_lists_its_registered_help() -> None:
    result = CliRunner().invoke(main, ["-h"])
    assert result.exit_code == 0
    for name, (target, short) in COMMANDS.items():
        module, _, attribute = target.partition(":")
        assert isinstance(getattr(importlib.import_module(module), attribute), click.Command)
        assert name in result.output and short[:40] in " ".join(result.output.split())


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_every_command_takes_h_q_and_v(name: str) -> None:
    result = CliRunner().invoke(main, [name, "-h"])
    assert result.exit_code == 0, result.output
    for option in ("-h, --help", "-q, --quiet", "-v, --verbose"):
        assert option in result.output, (name, option)


def test_version_is_the_version_written_into_the_files(tmp_path: Path) -> None:
    shown = CliRunner().invoke(main, ["--version"])
    assert shown.exit_code == 0
    assert CliRunner().invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path), "--no-plots",
                                     "-q"]).exit_code == 0
    (folder,) = tmp_path.iterdir()
    version = pq.read_schema(folder / "envelope.parquet").metadata[b"envelope:version"]
    assert shown.output.strip() == f"envelope {version.decode()}"


def test_python_dash_m_envelope_runs_the_command_line() -> None:
    proc = _python("-m", "envelope", "check", str(CASES[0]))
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.startswith("ok: ")


def test_quiet_run_prints_only_the_folder_and_verbose_check_counts(tmp_path: Path) -> None:
    result = CliRunner().invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path),
                                       "--no-plots", "-q"])
    assert result.exit_code == 0
    assert result.stdout.strip().splitlines() == [f"wrote {next(tmp_path.iterdir())}"]
    result = CliRunner().invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path),
                                       "--no-plots", "-v"])
    assert "spans, " in result.stdout and "envelope.parquet" in result.stdout
    result = CliRunner().invoke(main, ["check", "-v", *map(str, CASES)])
    assert f"check: {len(CASES)} case files, 0 bad" in result.stdout
    result = CliRunner().invoke(main, ["check", "-q", *map(str, CASES)])
    assert result.exit_code == 0 and result.stdout == ""


def test_quiet_prints_only_what_each_command_made(tmp_path: Path) -> None:
    """With -q every command prints the files it wrote and nothing else (the report's
    caution is in the report itself)."""
    runner = CliRunner()
    out = tmp_path / "out"
    case = str(CASES[0])
    result = runner.invoke(main, ["run", case, "-o", str(out), "--no-plots", "-q"])
    (folder,) = out.iterdir()
    commands = [["plot", str(folder), "-q"], ["report", str(folder), "--no-pdf", "-q"],
                ["export", str(folder), "-q"], ["new", str(tmp_path / "n.toml"), "-q"],
                ["influence", case, "--at", "1.0", "-o", str(out), "--no-plots", "-q"],
                ["schema", "-o", str(tmp_path / "s.json"), "-q"]]
    for args in commands:
        result = runner.invoke(main, args)
        assert result.exit_code == 0, (args, result.output)
        lines = result.stdout.strip().splitlines()
        assert lines and all(line.startswith("wrote ") for line in lines), (args, lines)
    result = runner.invoke(main, ["report", str(folder), "--no-pdf"])
    assert "licensed engineer" in result.stdout  # without -q the caution is printed


def test_check_takes_folders_and_skips_a_toml_file_that_is_not_a_case(tmp_path: Path) -> None:
    folder = tmp_path / "cases"
    folder.mkdir()
    for case in (ROOT / "cases").iterdir():  # with the sections table a case names
        (folder / case.name).write_bytes(case.read_bytes())
    (folder / "pyproject.toml").write_text('[project]\nname = "x"\n')
    result = CliRunner().invoke(main, ["check", str(folder)])
    assert result.exit_code == 0, result.output
    assert result.stdout.count("ok: ") == len(CASES)
    assert "skipped: " in result.stderr and "pyproject.toml" in result.stderr


def test_check_names_a_non_case_file_given_by_name_as_bad(tmp_path: Path) -> None:
    path = tmp_path / "pyproject.toml"
    path.write_text('[project]\nname = "x"\n')
    result = CliRunner().invoke(main, ["check", str(path)])
    assert result.exit_code == 2
    assert str(path) in result.stderr


def test_batch_of_a_folder_skips_pyproject_with_a_note(tmp_path: Path) -> None:
    folder = tmp_path / "cases"
    folder.mkdir()
    (folder / CASES[0].name).write_bytes(CASES[0].read_bytes())
    (folder / "pyproject.toml").write_text('[tool.x]\ny = 1\n')
    result = CliRunner().invoke(main, ["batch", str(folder), "-o", str(tmp_path / "out"),
                                       "--workers", "1"])
    assert result.exit_code == 0, result.output
    assert "1 case files: 1 written" in result.stdout
    assert "skipped: " in result.stderr and "pyproject.toml" in result.stderr


@pytest.mark.parametrize("name", ["fig.bmp", "fig", "fig.PNGX"])
def test_plot_to_an_unknown_format_is_a_usage_error(name: str, tmp_path: Path) -> None:
    assert CliRunner().invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path),
                                     "--no-plots", "-q"]).exit_code == 0
    (folder,) = tmp_path.iterdir()
    result = CliRunner().invoke(main, ["plot", str(folder), "-o", str(tmp_path / name)])
    assert result.exit_code == 2
    assert "unknown figure format" in result.stderr
    assert not (tmp_path / name).exists()


def test_plot_does_not_create_a_missing_folder(tmp_path: Path) -> None:
    assert CliRunner().invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path),
                                     "--no-plots", "-q"]).exit_code == 0
    (folder,) = tmp_path.iterdir()
    target = tmp_path / "missing" / "fig.svg"
    result = CliRunner().invoke(main, ["plot", str(folder), "-o", str(target)])
    assert result.exit_code == 2
    assert "does not exist" in result.stderr
    assert not target.parent.exists()


def test_a_rerun_removes_result_files_it_no_longer_writes(tmp_path: Path) -> None:
    runner = CliRunner()
    assert runner.invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path), "--all-cases",
                                "-q"]).exit_code == 0
    (folder,) = tmp_path.iterdir()
    assert (folder / "stations.parquet").exists() and (folder / "envelope.png").exists()
    (folder / "notes.txt").write_text("mine")
    assert runner.invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path), "--no-plots",
                                "-q"]).exit_code == 0
    assert not (folder / "stations.parquet").exists()
    assert not (folder / "envelope.png").exists()
    assert (folder / "notes.txt").read_text() == "mine"  # not a result file: kept


def test_a_rerun_removes_the_report_exports_and_influence_lines_of_earlier_results(
        tmp_path: Path) -> None:
    """Files made from earlier results (the report, a workbook or CSV export, influence
    lines, table and figure alike) must not stand beside new ones; a folder of the
    user's inside OUT/<id> is left alone."""
    from envelope import api

    runner = CliRunner()
    assert runner.invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path), "-q"]).exit_code == 0
    (folder,) = tmp_path.iterdir()
    assert runner.invoke(main, ["influence", str(CASES[0]), "--at", "1.0", "-o",
                                str(tmp_path), "-q"]).exit_code == 0
    assert runner.invoke(main, ["export", str(folder), "--format", "csv"]).exit_code == 0
    assert runner.invoke(main, ["export", str(folder)]).exit_code == 0
    made = {p.name for p in folder.iterdir()}
    assert {"csv", "results.xlsx"} <= made
    assert any(n.startswith("influence-") and n.endswith(".png") for n in made)
    for name in ("report.html", "report.pdf"):  # as `envelope report` leaves them
        (folder / name).write_text("earlier")
    (folder / "mine").mkdir()
    (folder / "mine" / "notes.csv").write_text("kept")
    api.write(envelope_analysis(CASES[0]), tmp_path)
    left = {p.name for p in folder.iterdir()}
    assert not any(n.startswith("influence-") for n in left), left
    assert not {"csv", "results.xlsx", "report.html", "report.pdf", "envelope.png"} & left
    assert (folder / "mine" / "notes.csv").read_text() == "kept"


def envelope_analysis(case: Path):  # type: ignore[no-untyped-def]
    import envelope

    return envelope.analyse(envelope.load_case(str(case)))


def test_output_into_a_closed_pipe_exits_without_a_traceback(tmp_path: Path) -> None:
    proc = subprocess.Popen([sys.executable, "-m", "envelope", "run", str(CASES[0]),
                             "-o", str(tmp_path), "--no-plots"], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, env=ENV, cwd=ROOT)
    assert proc.stdout is not None and proc.stderr is not None
    proc.stdout.readline()
    proc.stdout.close()  # as `| head -1` does
    err = proc.stderr.read().decode()
    proc.wait(timeout=120)
    assert "Traceback" not in err and "BrokenPipeError" not in err, err
    assert "internal error" not in err


@pytest.mark.parametrize("case", [*CASES, None], ids=[*(c.stem for c in CASES), "demo"])
def test_no_negative_zero_in_the_console_tables(case: Path | None, tmp_path: Path) -> None:
    given = [str(case)] if case else []  # None: the bundled demo
    result = CliRunner().invoke(main, ["run", *given, "-o", str(tmp_path), "--no-plots"])
    assert result.exit_code == 0
    assert all(word not in ("-0", "-0.0", "-0.00", "-0.000") for word in result.stdout.split())


def test_numbers_that_round_to_zero_print_without_a_sign() -> None:
    from envelope.sizing.table import _g, _n
    from envelope.summary import _num

    assert _num(-0.04) == "0.0" and _num(-0.004, 2) == "0.00" and _num(-0.0, 0) == "0"
    assert _n(-0.049) == "0.0" and _g(-0.0) == "0"
    assert _num(-0.05 - 1e-12) == "-0.1"


def test_run_without_plots_imports_only_what_a_plain_run_needs(tmp_path: Path) -> None:
    # a case with unit strings and without [design]: no figure, no batch machinery, no
    # sizing or report, no pint (the common spellings are in the built-in table), no
    # scipy or numba (a small beam), no influence lines (no moving loads), no [design]
    # readers or values, no pyarrow.compute, tempfile or shutil
    assert "[design" not in CASES[0].read_text() and '"' in CASES[0].read_text()
    code = ("import sys\nfrom envelope.cli import main\n"
            "try:\n"
            f"    main(['run', {str(CASES[0])!r}, '-o', {str(tmp_path)!r}, '--no-plots', '-q'])\n"
            "except SystemExit as e:\n    assert not e.code, e.code\n"
            "bad = [m for m in sys.modules if m.startswith(('matplotlib', 'envelope.batch',"
            " 'envelope.commands.plot', 'envelope.commands.check', 'envelope.sizing',"
            " 'envelope.report', 'envelope.influence', 'pint', 'scipy', 'numba', 'pandas',"
            " 'dask',"
            " 'pyarrow.compute')) or m in ('tempfile', 'shutil', 'envelope.design',"
            " 'envelope.casefile.design')]\n"
            "print(bad)\n")
    proc = _python("-c", code)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip().splitlines()[-1] == "[]"


def test_help_imports_no_subcommand() -> None:
    code = ("import sys\nfrom envelope.cli import main\n"
            "try:\n    main(['-h'])\nexcept SystemExit:\n    pass\n"
            "print([m for m in sys.modules if m.startswith(('envelope.commands.run',"
            " 'envelope.batch', 'matplotlib', 'pyarrow', 'numpy'))])\n")
    proc = _python("-c", code)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip().splitlines()[-1] == "[]"


@pytest.mark.parametrize("command", ["run", "check", "help"])
def test_collection_is_paused_only_while_modules_load_and_restored_after(
        command: str, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    import gc

    from envelope import api

    seen: list[bool] = []
    real = api.analyse

    def analyse(*args: object, **kwargs: object) -> object:
        seen.append(gc.isenabled())  # the analysis runs with collection on
        return real(*args, **kwargs)  # type: ignore[arg-type]

    monkeypatch.setattr(api, "analyse", analyse)
    args = {"run": ["run", str(CASES[0]), "-o", str(tmp_path), "--no-plots", "-q"],
            "check": ["check", str(CASES[0])], "help": ["-h"]}[command]
    assert gc.isenabled()
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    assert seen == ([True] if command == "run" else [])
    assert gc.isenabled() and gc.get_freeze_count() == 0  # as it was before
    gc.disable()  # a caller that keeps collection off keeps it off
    try:
        assert CliRunner().invoke(main, args).exit_code == 0
        assert not gc.isenabled()
    finally:
        gc.enable()


def test_run_as_the_program_leaves_the_loaded_objects_aside_to_the_exit(tmp_path: Path) -> None:
    code = ("import gc, sys\nfrom envelope.cli import main\n"
            f"sys.argv = ['envelope', 'run', {str(CASES[0])!r}, '-o', {str(tmp_path)!r},"
            " '--no-plots', '-q']\n"
            "try:\n    main()\nexcept SystemExit as e:\n    assert not e.code, e.code\n"
            "print(gc.isenabled(), gc.get_freeze_count() > 10000)\n")
    proc = _python("-c", code)
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip().splitlines()[-1] == "True True"
