"""The command line: runs, writes the contract files, refuses bad input cleanly.

Every bad input of tests/bad_inputs.py must give one line on standard error naming
the file, the key path and the problem, exit status 2, no traceback, and no output
folder (contract: ../shared/case-format.md "Errors").
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

from envelope.cli import main

from bad_inputs import BAD_INPUTS

REPO = Path(__file__).resolve().parents[1]
CASES = sorted((REPO / "cases").glob("*.toml"))

ENVELOPE_COLUMNS = ["beam", "span", "x", "x_span"] + [
    f"{q}_{e}{s}" for q in ("moment", "shear", "deflection") for e in ("max", "min")
    for s in ("", "_combo", "_loaded")
]
REACTION_COLUMNS = ["beam", "support", "x", "reaction_max", "reaction_min",
                    "reaction_max_combo", "reaction_max_loaded", "reaction_min_combo",
                    "reaction_min_loaded", "service_reaction_max", "service_reaction_min",
                    "support_moment_max", "support_moment_min"]
DESIGN_COLUMNS = ["beam", "span", "length", "moment_pos", "moment_pos_x", "moment_neg_left",
                  "moment_neg_right", "moment_neg_left_face", "moment_neg_right_face",
                  "shear_left", "shear_right", "deflection_max", "deflection_live",
                  "span_over_deflection"]
CASES_COLUMNS = ["set", "combination", "loaded", "factors"]


def _contract_files(folder: Path) -> None:
    for stem, columns in (("envelope", ENVELOPE_COLUMNS), ("reactions", REACTION_COLUMNS),
                          ("design", DESIGN_COLUMNS), ("cases", CASES_COLUMNS)):
        table = pq.read_table(folder / f"{stem}.parquet")
        missing = [c for c in columns if c not in table.column_names]
        assert not missing, f"{stem}.parquet lacks {missing}"
        meta = table.schema.metadata
        assert b"envelope:units" in meta and b"envelope:version" in meta
        assert len(meta[b"envelope:input_sha256"]) == 64
    assert not list(folder.glob(".*.tmp")), "a temporary file was left behind"


def test_run_without_arguments_writes_the_bundled_demo(tmp_path: Path) -> None:
    result = CliRunner().invoke(main, ["run", "-o", str(tmp_path / "out")])
    assert result.exit_code == 0, result.output
    folders = list((tmp_path / "out").iterdir())
    assert len(folders) == 1
    _contract_files(folders[0])
    assert (folders[0] / "envelope.png").stat().st_size > 10_000
    assert "licensed engineer" in result.output.splitlines()[-1]  # the summary's last line


@pytest.mark.parametrize("case", CASES, ids=[c.stem for c in CASES])
def test_every_demo_case_writes_every_contract_column(case: Path, tmp_path: Path) -> None:
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(tmp_path), "--no-plots"])
    assert result.exit_code == 0, result.output
    (folder,) = list(tmp_path.iterdir())
    _contract_files(folder)
    assert not (folder / "envelope.png").exists()


def test_check_accepts_the_demo_cases() -> None:
    result = CliRunner().invoke(main, ["check", *map(str, CASES)])
    assert result.exit_code == 0, result.output
    assert result.output.count("ok: ") == len(CASES)


@pytest.mark.parametrize(("name", "text", "key", "phrase"), BAD_INPUTS,
                         ids=[row[0] for row in BAD_INPUTS])
def test_bad_input_gives_one_line_exit_2_and_writes_nothing(
        name: str, text: str | bytes, key: str, phrase: str, tmp_path: Path) -> None:
    path = tmp_path / "bad.toml"
    path.write_bytes(text if isinstance(text, bytes) else text.encode())
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["run", str(path), "-o", str(out)])
    assert result.exit_code == 2, result.output
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    assert str(path) in lines[0] and key in lines[0] and phrase in lines[0]
    assert "Traceback" not in result.output
    assert not out.exists()


def test_check_reports_each_bad_file_and_exits_2(tmp_path: Path) -> None:
    paths = []
    for name, text, _, _ in BAD_INPUTS[:3]:
        p = tmp_path / f"{name}.toml"
        p.write_bytes(text if isinstance(text, bytes) else text.encode())
        paths.append(str(p))
    result = CliRunner().invoke(main, ["check", *paths, str(CASES[0])])
    assert result.exit_code == 2
    assert len(result.stderr.strip().splitlines()) == 3
    assert "ok: " in result.stdout


def test_console_script_has_no_traceback_on_a_missing_file(tmp_path: Path) -> None:
    proc = subprocess.run([sys.executable, "-m", "envelope.cli", "run",
                           str(tmp_path / "absent.toml"), "-o", str(tmp_path / "o")],
                          capture_output=True, text=True, check=False)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr and "absent.toml" in proc.stderr
    assert not (tmp_path / "o").exists()


def test_plot_redraws_from_the_parquet_files_in_each_format(tmp_path: Path) -> None:
    runner = CliRunner()
    assert runner.invoke(main, ["run", str(CASES[0]), "-o", str(tmp_path),
                                "--no-plots", "-q"]).exit_code == 0
    (folder,) = [p for p in tmp_path.iterdir() if p.is_dir()]
    for suffix in (".png", ".svg", ".pdf"):
        target = tmp_path / f"fig{suffix}"
        result = runner.invoke(main, ["plot", str(folder), "-o", str(target)])
        assert result.exit_code == 0, result.output
        assert target.stat().st_size > 5_000


def test_plot_of_a_folder_without_results_exits_2(tmp_path: Path) -> None:
    result = CliRunner().invoke(main, ["plot", str(tmp_path)])
    assert result.exit_code == 2
    assert "not a result folder" in result.stderr
