"""stations.parquet (`all_cases`): every explicit case at every station, consistent with
cases.parquet and with each load case's own response (superposition by hand)."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pyarrow.parquet as pq
import pytest
from click.testing import CliRunner

from envelope.analysis import analyse
from envelope.casefile import load_case
from envelope.cli import main
from envelope.solved import case_responses

from tolerances import LONG_SUM, NEAR_ZERO

REPO = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("case", ["carpark-3span-overhang-si.toml", "office-4span-si.toml"])
def test_every_explicit_case_is_the_factored_sum_of_its_load_cases(case: str,
                                                                     tmp_path: Path) -> None:
    path = REPO / "cases" / case
    result = CliRunner().invoke(main, ["run", str(path), "-o", str(tmp_path), "--no-plots",
                                       "--all-cases", "-q"])
    assert result.exit_code == 0, result.output
    (folder,) = list(tmp_path.iterdir())
    stations = pq.read_table(folder / "stations.parquet").to_pydict()
    cases = pq.read_table(folder / "cases.parquet").to_pylist()
    beam = load_case(path)
    a = analyse(beam)
    per_case = case_responses(a.solved, a.stations)  # stations x load cases, all spans
    n_st = a.stations.n
    case_ids = np.asarray(stations["case"])
    assert {cases[i]["loaded"] for i in set(case_ids)} <= {"all", *[c["loaded"] for c in cases
                                                                    if c["loaded"] != "any"]}
    # rows with every span loaded are plain factored sums of the load cases (superposition)
    names = [c.name for c in beam.cases]
    for i in sorted(set(case_ids)):
        if cases[i]["loaded"] != "all":
            continue
        factors = json.loads(cases[i]["factors"])
        f = np.array([factors.get(n, 0.0) for n in names])
        rows = np.flatnonzero(case_ids == i)
        assert rows.size == n_st
        moment = np.asarray(stations["moment"])[rows]
        shear = np.asarray(stations["shear"])[rows]
        np.testing.assert_allclose(moment, per_case.moment @ f, rtol=LONG_SUM, atol=NEAR_ZERO)
        np.testing.assert_allclose(shear, per_case.shear @ f, rtol=LONG_SUM, atol=NEAR_ZERO)
        defl_mm = np.asarray(stations["deflection"])[rows]
        np.testing.assert_allclose(defl_mm, per_case.deflection @ f * 1000.0, rtol=LONG_SUM,
                                   atol=NEAR_ZERO)


def test_explicit_cases_bound_the_envelope_of_code_patterning(tmp_path: Path) -> None:
    """With `code` patterning the envelope is exactly the max/min over the explicit cases."""
    path = REPO / "cases" / "carpark-3span-overhang-si.toml"
    CliRunner().invoke(main, ["run", str(path), "-o", str(tmp_path), "--no-plots",
                              "--all-cases", "-q"])
    (folder,) = list(tmp_path.iterdir())
    table = pq.read_table(folder / "stations.parquet").to_pydict()
    cases = pq.read_table(folder / "cases.parquet").to_pylist()
    env = pq.read_table(folder / "envelope.parquet").to_pydict()
    n_st = len(env["x"])
    case_ids = np.asarray(table["case"])
    strength = [i for i, c in enumerate(cases) if c["set"] == "strength"]
    moment = np.asarray(table["moment"])
    by_case = np.stack([moment[case_ids == i] for i in strength], axis=1)
    assert by_case.shape == (n_st, len(strength))
    np.testing.assert_allclose(by_case.max(axis=1), env["moment_max"], rtol=LONG_SUM,
                               atol=NEAR_ZERO)
    np.testing.assert_allclose(by_case.min(axis=1), env["moment_min"], rtol=LONG_SUM,
                               atol=NEAR_ZERO)


def test_moving_cases_left_out_of_stations_are_said_so(tmp_path: Path) -> None:
    """A concentrated load has its worst position at each station, so it is no part of
    an explicit case: stations.parquet leaves it out and says so, in its metadata and
    on the console; the rows are the fixed cases of each combination."""
    import beams

    text = beams.beam_text(
        [6.0, 7.5], ["pinned"] * 3,
        [{"case": "D", "type": "uniform", "spans": "all", "w": 8.0},
         {"case": "Q", "type": "concentrated", "spans": "all", "P": 25.0}],
        section={"E": 30000, "I": 8.0e9}, cases={"D": "dead", "Q": "live"},
        combinations={"strength": "none", "service": "none", "custom": [
            {"name": "U", "set": "strength", "factors": {"D": 1.2, "Q": 1.6}}]},
        top={"id": "crane"})
    path = tmp_path / "crane.toml"
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["run", str(path), "-o", str(tmp_path / "out"),
                                       "--no-plots", "--all-cases", "-q"])
    assert result.exit_code == 0, result.output
    assert ("note: stations.parquet leaves out the moving case Q: a moving load's worst "
            "position differs at every station") in result.stderr
    table = pq.read_table(tmp_path / "out" / "crane" / "stations.parquet")
    assert json.loads(table.schema.metadata[b"envelope:left_out"]) == ["Q"]
    a = analyse(load_case(path))
    per_case = case_responses(a.solved, a.stations)
    names = [c.name for c in a.beam.cases]
    np.testing.assert_allclose(np.asarray(table.column("moment")),
                               per_case.moment[:, names.index("D")] * 1.2,
                               rtol=LONG_SUM, atol=NEAR_ZERO)
    # a beam without moving loads: nothing left out, nothing said
    fixed = tmp_path / "fixed.toml"
    fixed.write_text(text.replace('type = "concentrated"', 'type = "uniform"')
                     .replace("P = 25.0", "w = 2.0"), encoding="utf-8")
    result = CliRunner().invoke(main, ["run", str(fixed), "-o", str(tmp_path / "out2"),
                                       "--no-plots", "--all-cases", "-q"])
    assert result.exit_code == 0 and "leaves out" not in result.stderr
    table = pq.read_table(tmp_path / "out2" / "crane" / "stations.parquet")
    assert json.loads(table.schema.metadata[b"envelope:left_out"]) == []
