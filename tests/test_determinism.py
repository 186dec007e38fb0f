"""Deterministic outputs: the same input gives the same result files, value for value,
with the same schema and metadata, run after run; in a fresh process with another hash
seed, from another folder; and, since pyarrow writes Parquet deterministically for a
given version, byte for byte.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

from envelope.cli import main

from bad_inputs import doc

REPO = Path(__file__).resolve().parents[1]

#: A symmetric beam: many patterns tie for the largest value, so the governing
#: combination and pattern labels depend on how ties are broken.
SYMMETRIC = doc(
    header='units = "SI"\nid = "symmetric"\n',
    spans="[[spans]]\nlength = 6.0\n" * 4,
    supports='[[supports]]\ntype = "pinned"\n' * 5,
    loads='[[loads]]\ncase = "D"\ntype = "uniform"\nspans = "all"\nw = 10.0\n'
          '[[loads]]\ncase = "L"\ntype = "uniform"\nspans = "all"\nw = 10.0\n',
    combinations='[combinations]\nstrength = "asce7-lrfd"\nservice = "characteristic"\n'
                 '[[combinations.custom]]\nname = "same as 2"\nset = "strength"\n'
                 "factors = { D = 1.2, L = 1.6 }\n",
    extra='[patterning]\nmethod = "segments"\nsegments = 3\n[output]\nall_cases = true\n')

CASES = {
    "office": (REPO / "cases" / "office-4span-si.toml").read_text(encoding="utf-8"),
    "carpark": (REPO / "cases" / "carpark-3span-overhang-si.toml").read_text(encoding="utf-8"),
    "symmetric": SYMMETRIC,
}


def run(case: Path, out: Path) -> Path:
    result = CliRunner().invoke(main, ["run", str(case), "-o", str(out), "--no-plots", "-q",
                                       "--all-cases"])
    assert result.exit_code == 0, result.output
    (folder,) = out.iterdir()
    return folder


def files(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.glob("*.parquet"))}


@pytest.mark.parametrize("name", sorted(CASES))
def test_two_runs_give_identical_tables_schemas_and_bytes(name: str, tmp_path: Path) -> None:
    case = tmp_path / f"{name}.toml"
    case.write_text(CASES[name], encoding="utf-8")
    first, second = run(case, tmp_path / "one"), run(case, tmp_path / "two")
    a, b = files(first), files(second)
    assert set(a) == set(b) and "stations.parquet" in a
    for stem in a:
        ta, tb = pq.read_table(first / stem), pq.read_table(second / stem)
        assert ta.schema.equals(tb.schema, check_metadata=True), stem
        assert ta.equals(tb, check_metadata=True), stem
        assert a[stem] == b[stem], f"{stem}: same tables, different bytes"


def test_a_fresh_process_with_another_hash_seed_in_another_folder_writes_the_same_bytes(
        tmp_path: Path) -> None:
    """Nothing depends on set or dict ordering of strings (PYTHONHASHSEED), on the working
    folder or on where the case file lies: its bytes alone decide the result."""
    outputs = []
    for i, seed in enumerate(("0", "4242")):
        where = tmp_path / f"place{i}" / ("deep/er" if i else "")
        where.mkdir(parents=True, exist_ok=True)
        case = where / "symmetric.toml"
        case.write_text(SYMMETRIC, encoding="utf-8")
        out = tmp_path / f"out{i}"
        proc = subprocess.run(
            [sys.executable, "-m", "envelope.cli", "run", "symmetric.toml", "-o", str(out),
             "--no-plots", "-q"],
            cwd=where, env={**os.environ, "PYTHONHASHSEED": seed, "MPLBACKEND": "Agg"},
            capture_output=True, text=True, check=False)
        assert proc.returncode == 0, proc.stderr
        outputs.append(files(out / "symmetric"))
    assert outputs[0] == outputs[1]
    assert len(outputs[0]) == 5


def test_the_schema_does_not_depend_on_the_values(tmp_path: Path) -> None:
    """Two beams with the same options and cases but other numbers: the same columns,
    types and metadata keys in every file (only values differ)."""
    case = tmp_path / "a.toml"
    case.write_text(SYMMETRIC, encoding="utf-8")
    other = tmp_path / "b.toml"
    other.write_text(SYMMETRIC.replace("w = 10.0", "w = 3.25").replace("length = 6.0",
                                                                        "length = 4.5"),
                     encoding="utf-8")
    fa, fb = run(case, tmp_path / "a"), run(other, tmp_path / "b")
    for stem in files(fa):
        sa, sb = pq.read_schema(fa / stem), pq.read_schema(fb / stem)
        assert sa.equals(sb, check_metadata=False), stem
        assert set(sa.metadata) == set(sb.metadata), stem
