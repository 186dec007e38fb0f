"""Every unit case's response at a few points (envelope.unitpoints, the design
search's evaluations) against the reference, envelope.recovery.evaluate_some: the same
numbers bit for bit on its numpy path (the same products summed in the same order), at
random points, both sides of every jump, span ends and supports, on the invented beams of
benchmarks/make_cases.py (every load type) and the demo cases, with the elastic and a
redistributed solution; where evaluate_some takes the numba kernel, its own numbers."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from envelope.casefile import load_case
from envelope.recovery import QUANTITIES, Points, evaluate_some, make_points, stations
from envelope.solved import Solved, solve_beam
from envelope.unitpoints import element_items, evaluate_points

from beams import beam_text, make_cases_module

REPO = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def beams(tmp_path_factory: pytest.TempPathFactory) -> list[Solved]:
    folder = tmp_path_factory.mktemp("beams")
    make_cases_module().make_cases(40, folder, seed=11)
    paths = sorted(folder.glob("*.toml")) + sorted((REPO / "cases").glob("*.toml"))
    # an invented beam with point forces and moments only (no distributed item)
    (folder / "points-only.toml").write_text(_POINTS_ONLY)
    return [solve_beam(load_case(p)) for p in [*paths, folder / "points-only.toml"]]


_POINTS_ONLY = beam_text(
    [5.0, 6.5], ["pinned"] * 3,
    [{"case": "D", "type": "point", "spans": 1, "P": 20.0, "at": 2.0},
     {"case": "L", "type": "point", "spans": "all", "P": 15.0, "at": 3.1},
     {"case": "L", "type": "moment", "spans": 2, "M": 8.0, "at": 1.2}],
    section={"E": 30000, "I": 4.0e9}, cases={"D": "dead", "L": "live"},
    combinations={"strength": "asce7-lrfd", "service": "characteristic"},
    top={"id": "points-only"})


def _points(s: Solved, rng: np.random.Generator) -> list[Points]:
    """The stations (ends, jumps with both sides, faces), and random points with random
    sides, a span's ends among them."""
    n = 25
    span = rng.integers(0, s.beam.n_spans, n)
    length = np.asarray(s.beam.geometry.span_length)[span]
    x = rng.random(n) * length
    x[:4] = [0.0, length[1], length[2], 0.0]
    return [stations(s.beam, s.mesh, s.unit_cases),
            make_points(s.beam, span, x, rng.random(n) < 0.5),
            make_points(s.beam, span[:1], x[:1])]


def test_responses_at_points_are_those_of_evaluate_some_bit_for_bit(
        beams: list[Solved]) -> None:
    rng = np.random.default_rng(7)
    for s in beams:
        items = element_items(s.unit_cases, s.mesh.n_elements)
        solutions = [s.solution]
        if len(s.beam.supports) > 2:  # a redistributed solution has its own arrays
            fraction = np.zeros(len(s.beam.supports))
            fraction[1:-1] = 0.1
            solutions.append(s.redistributed(fraction).solution_for("strength"))
        for sol in solutions:
            for pts in _points(s, rng):
                for names in (QUANTITIES, ("moment",), ("deflection", "shear")):
                    want = evaluate_some(s.mesh, s.unit_cases, sol, pts, names, kernel=False)
                    got = evaluate_points(s.mesh, s.unit_cases, items, sol, pts, names)
                    assert got.keys() == want.keys()
                    for q in names:
                        assert np.array_equal(got[q], want[q]), (s.beam.id, q)


def test_where_evaluate_some_takes_the_kernel_so_do_the_points(
        beams: list[Solved], monkeypatch: pytest.MonkeyPatch) -> None:
    s = beams[3]
    items = element_items(s.unit_cases, s.mesh.n_elements)
    pts = stations(s.beam, s.mesh, s.unit_cases)
    kernel = evaluate_some(s.mesh, s.unit_cases, s.solution, pts, QUANTITIES, kernel=True)
    got = evaluate_points(s.mesh, s.unit_cases, items, s.solution, pts, QUANTITIES,
                          kernel=True)
    for q in QUANTITIES:
        assert np.array_equal(got[q], kernel[q])
    monkeypatch.setattr("envelope.config.KERNEL_MIN_UNITS", 1)  # as evaluate_some decides
    auto = evaluate_points(s.mesh, s.unit_cases, items, s.solution, pts, QUANTITIES)
    for q in QUANTITIES:
        assert np.array_equal(auto[q], kernel[q])


def test_items_are_laid_out_element_by_element(
        beams: list[Solved]) -> None:
    s = beams[0]
    items = element_items(s.unit_cases, s.mesh.n_elements)
    assert items.width == int(np.diff(s.unit_cases.elem_first).max())
    assert items.valid.sum() == s.unit_cases.item_unit.size


def test_the_beams_have_items_of_either_kind_alone_and_both(beams: list[Solved]) -> None:
    # the terms of a kind of item the beam lacks are not made: each way is compared above
    kinds = set()
    for s in beams:
        items = element_items(s.unit_cases, s.mesh.n_elements)
        kinds.add((items.has_dist, items.has_point))
    assert kinds == {(True, True), (True, False), (False, True)}
