"""The influence-line table and figure: columns, units, the point's jump, the caution."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pyarrow.parquet as pq
import pytest

import envelope
from envelope.influence_files import write_influence

from tolerances import SOLVE

REPO = Path(__file__).resolve().parent.parent


def test_table_and_figure_of_the_demo_beam(tmp_path: Path) -> None:
    beam = envelope.load_case(REPO / "cases" / "office-4span-si.toml")
    paths = write_influence(beam, 1, 3.0, tmp_path)
    assert [p.name for p in paths] == ["influence-2-3.parquet", "influence-2-3.png"]
    assert paths[1].read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    table = pq.read_table(paths[0])
    names = table.column_names
    assert names[:5] == ["load_x", "shear", "moment", "rotation", "deflection"]
    assert names[5:] == [f"reaction_{j}" for j in range(1, 6)]
    units = {f.name: f.metadata[b"unit"].decode() for f in table.schema}
    assert units["moment"] == "m" and units["shear"] == "1"
    assert units["deflection"] == "mm/kN"
    meta = table.schema.metadata
    assert b"licensed engineer" in meta[b"envelope:caution"]
    x = table.column("load_x").to_numpy()
    at = float(beam.joint_x[1]) + 3.0
    jump = np.flatnonzero(np.isclose(x, at, rtol=0, atol=1e-12))
    v = table.column("shear").to_numpy()[jump]
    # the shear line right of the point jumps by the unit load (left piece first)
    assert v[1] - v[0] == pytest.approx(1.0, abs=SOLVE)
    # a reaction line is 1 with the load on its own support (common practice)
    r2 = table.column("reaction_2").to_numpy()
    on_support = np.isclose(x, float(beam.joint_x[1]), rtol=0, atol=1e-12)
    assert r2[on_support] == pytest.approx(1.0, abs=SOLVE)


def test_influence_command_writes_table_and_figure(tmp_path: Path) -> None:
    from click.testing import CliRunner

    from envelope.cli import main

    case = str(REPO / "cases" / "office-4span-si.toml")
    runner = CliRunner()
    done = runner.invoke(main, ["influence", case, "--at", "10.2 m", "-o", str(tmp_path)])
    assert done.exit_code == 0, done.output
    folder = tmp_path / "office-4span-si"
    assert sorted(p.suffix for p in folder.iterdir()) == [".parquet", ".png"]
    bad = runner.invoke(main, ["influence", case, "--at", "99", "-o", str(tmp_path)])
    assert bad.exit_code == 2 and "outside the beam" in bad.output
    bad_span = runner.invoke(main, ["influence", case, "--span", "9", "--at", "1"])
    assert bad_span.exit_code == 2 and "span 9" in bad_span.output
